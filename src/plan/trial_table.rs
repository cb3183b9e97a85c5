//! Fibre trials side by side as the user reads them: one row per quantity, one column per trial.

use crate::plan::trial::TrialResult;
use std::fmt::{self, Display, Formatter};

/// Trial results printed as a table (a [`Display`]).
#[derive(Debug, Clone, Copy)]
pub struct TrialTable<'a>(pub &'a [TrialResult]);

impl TrialTable<'_> {
    /// One row: the label, then each trial's cell.
    fn row(
        &self,
        f: &mut Formatter<'_>,
        label: &str,
        cell: impl Fn(&TrialResult) -> String,
    ) -> fmt::Result {
        write!(f, "{label:<26}")?;
        for r in self.0 {
            write!(f, " {:>26}", cell(r))?;
        }
        writeln!(f)
    }
}

impl Display for TrialTable<'_> {
    fn fmt(&self, f: &mut Formatter<'_>) -> fmt::Result {
        self.row(f, "trial", |r| r.name.clone())?;
        self.row(f, "material", |r| r.material.clone())?;
        self.row(f, "section", |r| r.section.clone())?;
        self.row(f, "length (mm)", |r| {
            format!("{:.1} ± {:.1}", r.length_m.value * 1e3, r.length_m.u * 1e3)
        })?;
        self.row(f, "inertia (kg m^2)", |r| {
            format!("{:.4e} ± {:.1e}", r.inertia_kg_m2.value, r.inertia_kg_m2.u)
        })?;
        self.row(f, "period (s)", |r| {
            format!("{:.2} ± {:.2}", r.period_s.value, r.period_s.u)
        })?;
        self.row(f, "kappa (N m/rad)", |r| {
            format!(
                "{:.4e} ± {:.1e}",
                r.kappa_n_m_per_rad.value, r.kappa_n_m_per_rad.u
            )
        })?;
        self.row(f, "shear modulus (GPa)", |r| {
            format!(
                "{:.2} ± {:.2}",
                r.shear_modulus_pa.value / 1e9,
                r.shear_modulus_pa.u / 1e9
            )
        })?;
        self.row(f, "table value (GPa)", |r| {
            format!("{:.1}", r.expected_shear_modulus_pa / 1e9)
        })?;
        self.row(f, "measured / table", |r| {
            format!("{:.3}", r.ratio_to_table)
        })
    }
}
