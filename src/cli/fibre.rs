//! `spotlever fibre`: torsion constant and shear modulus of trial fibres from the period of a test body.

use clap::Args;
use spotlever::plan::trial::{
    evaluate, period_from_track, read_trials, write_csv, PeriodSource, TrialResult,
};
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

pub fn run(args: FibreArgs) -> anyhow::Result<()> {
    let inputs = read_trials(&args.trials)?;
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
        results.push(evaluate(t, period)?);
    }
    print!("{}", table(&results));
    if let Some(csv) = &args.csv {
        write_csv(csv, &results)?;
        println!("wrote {}", csv.display());
    }
    Ok(())
}

/// Trials side by side, one column each.
pub fn table(results: &[TrialResult]) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let row = |s: &mut String, label: &str, f: &dyn Fn(&TrialResult) -> String| {
        let _ = write!(s, "{label:<26}");
        for r in results {
            let _ = write!(s, " {:>26}", f(r));
        }
        let _ = writeln!(s);
    };
    row(&mut s, "trial", &|r| r.name.clone());
    row(&mut s, "material", &|r| r.material.clone());
    row(&mut s, "section", &|r| r.section.clone());
    row(&mut s, "length (mm)", &|r| {
        format!("{:.1} ± {:.1}", r.length_m.value * 1e3, r.length_m.u * 1e3)
    });
    row(&mut s, "inertia (kg m^2)", &|r| {
        format!("{:.4e} ± {:.1e}", r.inertia_kg_m2.value, r.inertia_kg_m2.u)
    });
    row(&mut s, "period (s)", &|r| {
        format!("{:.2} ± {:.2}", r.period_s.value, r.period_s.u)
    });
    row(&mut s, "kappa (N m/rad)", &|r| {
        format!(
            "{:.4e} ± {:.1e}",
            r.kappa_n_m_per_rad.value, r.kappa_n_m_per_rad.u
        )
    });
    row(&mut s, "shear modulus (GPa)", &|r| {
        format!(
            "{:.2} ± {:.2}",
            r.shear_modulus_pa.value / 1e9,
            r.shear_modulus_pa.u / 1e9
        )
    });
    row(&mut s, "table value (GPa)", &|r| {
        format!("{:.1}", r.expected_shear_modulus_pa / 1e9)
    });
    row(&mut s, "measured / table", &|r| {
        format!("{:.3}", r.ratio_to_table)
    });
    s
}
