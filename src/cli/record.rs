//! `spotlever record`.

use clap::Args;

#[derive(Debug, Args)]
pub struct RecordArgs {}

pub fn run(_args: RecordArgs) -> anyhow::Result<()> {
    anyhow::bail!("'spotlever record' is not built yet")
}
