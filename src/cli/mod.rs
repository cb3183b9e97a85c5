//! Command-line definition: one file per subcommand, each with its `clap` arguments and a `run` that
//! wires library stages together.

use clap::{Parser, Subcommand};

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
    match cli.command {
        Command::Demo(a) => demo::run(a),
        Command::Track(a) => track::run(a),
        Command::Calibrate(a) => calibrate::run(a),
        Command::Analyze(a) => analyze::run(a),
        Command::Record(a) => record::run(a),
        Command::Plan(a) => plan::run(a),
        Command::Fibre(a) => fibre::run(a),
    }
}
