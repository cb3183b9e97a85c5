//! `spotlever fibre`.

use clap::Args;

#[derive(Debug, Args)]
pub struct FibreArgs {}

pub fn run(_args: FibreArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever fibre' is not built yet")
}
