//! `spotlever fibre`: torsion constant and shear modulus of trial fibres from the period of a test body.

use clap::Args;
use spotlever::outfile::Outputs;
use spotlever::plan::segment_periods::periods_from_track;
use spotlever::plan::trial::{evaluate, read_trials, write_csv, PeriodSource, TRIALS_CSV_KIND};
use spotlever::plan::trial_table::TrialTable;
use spotlever::units::Measured;
use std::path::{Path, PathBuf};

#[derive(Debug, Args)]
pub struct FibreArgs {
    /// Trial file: one [[trial]] table per fibre (name, material, diameter or width and thickness,
    /// length, inertia, and period or track).
    pub trials: PathBuf,
    /// Also write the comparison table as CSV here.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
}

pub fn run(args: FibreArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    let inputs = read_trials(&args.trials)?;
    outputs.input(&args.trials);
    for t in &inputs {
        if let PeriodSource::Track(p) = &t.period {
            outputs.input(p);
        }
    }
    if let Some(csv) = &args.csv {
        outputs.claim(csv, TRIALS_CSV_KIND, "--csv")?;
    }
    let mut results = Vec::new();
    for t in &inputs {
        let period = match &t.period {
            PeriodSource::Given(p) => *p,
            PeriodSource::Track(path) => track_period(&t.name, path)?,
        };
        let r = evaluate(t, period)?;
        match &r.stress {
            Some(s) => match s.warning(&t.name) {
                Some(w) => eprintln!("warning: {w}"),
                None => println!(
                    "{}: fibre stress {:.0} MPa of {:.0} MPa tensile strength (safety factor {:.1})",
                    t.name,
                    s.stress_pa / 1e6,
                    s.tensile_strength_pa / 1e6,
                    s.safety_factor
                ),
            },
            None => println!(
                "{}: no load_mass given, so the fibre's stress is not checked; add load_mass (the test body's mass) to the trial",
                t.name
            ),
        }
        results.push(r);
    }
    print!("{}", TrialTable(&results));
    if let Some(csv) = &args.csv {
        write_csv(csv, &results)?;
        println!("wrote {}", csv.display());
    }
    Ok(())
}

/// The period of a trial's track: one per segment between the moves found in it, printed, with a
/// warning when segments disagree; the trial uses their weighted mean.
fn track_period(name: &str, path: &Path) -> anyhow::Result<Measured> {
    let p = periods_from_track(path)?;
    for (i, s) in p.segments.iter().enumerate() {
        match &s.period {
            Ok(m) => println!(
                "{name}: segment {} ({:.0}-{:.0} s) of {}: period {:.3} ± {:.3} s",
                i + 1,
                s.start_s,
                s.end_s,
                path.display(),
                m.value,
                m.u
            ),
            Err(why) => println!(
                "{name}: segment {} ({:.0}-{:.0} s) not fitted: {why}",
                i + 1,
                s.start_s,
                s.end_s
            ),
        }
    }
    for &(i, j) in &p.disagreeing {
        eprintln!(
            "warning: {name}: the periods of segments {} and {} of {} disagree by more than twice their combined uncertainty; the body may have been disturbed or the fibre is still relaxing: check the track, or give the period of one segment",
            i + 1,
            j + 1,
            path.display()
        );
    }
    if p.segments.len() > 1 {
        println!(
            "{name}: period used (weighted mean of the segments): {:.3} ± {:.3} s",
            p.period.value, p.period.u
        );
    }
    Ok(p.period)
}
