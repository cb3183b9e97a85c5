//! `spotlever track`.

use clap::Args;

#[derive(Debug, Args)]
pub struct TrackArgs {}

pub fn run(_args: TrackArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever track' is not built yet")
}
