//! `spotlever fibre`: torsion constant and shear modulus of trial fibres from the period of a test body.

use clap::Args;
use spotlever::outfile::Outputs;
use spotlever::plan::trial::{
    evaluate, period_from_track, read_trials, write_csv, PeriodSource, TRIALS_CSV_KIND,
};
use spotlever::plan::trial_table::TrialTable;
use std::path::PathBuf;

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
            PeriodSource::Track(path) => {
                let p = period_from_track(path)?;
                println!(
                    "{}: period fitted from {}: {:.3} ± {:.3} s",
                    t.name,
                    path.display(),
                    p.value,
                    p.u
                );
                p
            }
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
