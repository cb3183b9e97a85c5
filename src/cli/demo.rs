//! `spotlever demo`.

use clap::Args;

#[derive(Debug, Args)]
pub struct DemoArgs {}

pub fn run(_args: DemoArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever demo' is not built yet")
}
