//! `spotlever plan`.

use clap::Args;

#[derive(Debug, Args)]
pub struct PlanArgs {}

pub fn run(_args: PlanArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever plan' is not built yet")
}
