//! `spotlever analyze`: a track file and the apparatus' setup to period, equilibria and G, written to
//! `angle.csv`, `segments.csv`, `result.json` and `report.svg`, with a one-screen summary.

use anyhow::Context;
use clap::Args;
use spotlever::analysis::{self, AnalysisOptions, Summary};
use spotlever::export::{write_results, RESULT_FILES};
use spotlever::outfile::Outputs;
use spotlever::setup::Setup;
use spotlever::track::read_track;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// Track file written by `spotlever track --calib ...` (needs the x_mm column).
    pub track: PathBuf,
    /// Apparatus description (TOML; every quantity "value ± u unit").
    #[arg(long)]
    pub setup: PathBuf,
    /// Mass moves, CSV with header `t_s,label`: one row per move, the time and the position moved to
    /// (A, B, or `move` for "the other one"); a row at the track's start names the starting position.
    /// Found in the trace if absent.
    #[arg(long)]
    pub events: Option<PathBuf>,
    /// Time left out of the fits after each move while the masses come to rest, in periods.
    #[arg(long, default_value_t = 0.1, value_name = "PERIODS")]
    pub settle: f64,
    /// How far from its logged time a move is looked for in the data, in periods (0: use the logged
    /// times as they are).
    #[arg(long, default_value_t = 0.25, value_name = "PERIODS")]
    pub search: f64,
    /// Output folder (created if needed).
    #[arg(long)]
    pub out: PathBuf,
    /// Do not fit a linear drift within each segment.
    #[arg(long)]
    pub no_drift: bool,
    /// Monte Carlo draws for the uncertainty propagation (1000 to 10 000 000).
    #[arg(long, default_value_t = 200_000,
          value_parser = clap::value_parser!(u64).range(1000..=10_000_000))]
    pub draws: u64,
}

pub fn run(args: AnalyzeArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    for p in [&args.track, &args.setup].into_iter().chain(&args.events) {
        outputs.input(p);
    }
    outputs.claim_in(&args.out, RESULT_FILES, "--out")?;
    for (name, v, most) in [
        ("--settle", args.settle, 1.0),
        ("--search", args.search, 0.5),
    ] {
        if !(0.0..=most).contains(&v) {
            anyhow::bail!("{name} {v}: give a number of periods from 0 to {most}");
        }
    }
    let setup = Setup::load(&args.setup)?;
    let track = read_track(&args.track)?;
    track.check_time_order(&args.track)?;
    let lever = spotlever::lever::Lever::from_setup(&setup);
    let (samples, without_position) = analysis::samples_from_track(&track, &lever)
        .with_context(|| format!("{}", args.track.display()))?;
    let events = match &args.events {
        Some(p) => Some(analysis::read_events(p)?),
        None => None,
    };
    let opts = AnalysisOptions {
        fit_drift: !args.no_drift,
        settle_periods: args.settle,
        refine_reach_periods: args.search,
        events_file: args.events.as_ref().map(|p| p.display().to_string()),
        mc_draws: usize::try_from(args.draws)?,
        ..Default::default()
    };
    let a = analysis::analyze(&samples, &setup, events.as_deref(), &opts)
        .with_context(|| format!("analysing {}", args.track.display()))?;
    write_results(&args.out, &samples, &a)?;
    print!(
        "{}",
        Summary::new(&a, without_position, track.truncated_tail)
    );
    println!(
        "wrote angle.csv, segments.csv, result.json, report.svg in {}",
        args.out.display()
    );
    Ok(())
}
