//! `spotlever analyze`.

use clap::Args;

#[derive(Debug, Args)]
pub struct AnalyzeArgs {}

pub fn run(_args: AnalyzeArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever analyze' is not built yet")
}
