//! Command-line definition: one file per subcommand, each with its `clap` arguments and a `run` that
//! wires library stages together.

use clap::{Parser, Subcommand};
use spotlever::outfile::Outputs;

mod analyze;
mod calibrate;
mod demo;
mod fibre;
mod plan;
mod record;
mod track;

/// Optical-lever spot tracking and torsion-balance analysis.
#[derive(Debug, Parser)]
#[command(name = "spotlever", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
    /// Let an output replace an existing file of another kind (e.g. a video where a CSV would be
    /// written). Inputs of the command are never replaced.
    #[arg(long, global = true)]
    pub replace_any: bool,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Run the whole chain on the bundled demo data.
    Demo(demo::DemoArgs),
    /// Follow the laser spot through an image sequence or a video file.
    Track(track::TrackArgs),
    /// Fit the pixel-to-millimetre mapping of the screen.
    Calibrate(calibrate::CalibrateArgs),
    /// Turn a track into period, equilibria and G with an uncertainty budget.
    Analyze(analyze::AnalyzeArgs),
    /// Record a live run from a camera (or replay a recording).
    Record(record::RecordArgs),
    /// Predict what an apparatus design will show.
    Plan(plan::PlanArgs),
    /// Torsion constant and shear modulus of trial fibres.
    Fibre(fibre::FibreArgs),
}

pub fn run(cli: Cli) -> anyhow::Result<()> {
    let outputs = Outputs::new(cli.replace_any);
    match cli.command {
        Command::Demo(a) => demo::run(a, outputs),
        Command::Track(a) => track::run(a, outputs),
        Command::Calibrate(a) => calibrate::run(a, outputs),
        Command::Analyze(a) => analyze::run(a, outputs),
        Command::Record(a) => record::run(a, outputs),
        Command::Plan(a) => plan::run(a),
        Command::Fibre(a) => fibre::run(a, outputs),
    }
}
