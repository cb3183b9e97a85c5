//! `spotlever calibrate`.

use clap::Args;

#[derive(Debug, Args)]
pub struct CalibrateArgs {}

pub fn run(_args: CalibrateArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever calibrate' is not built yet")
}
