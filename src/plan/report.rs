//! The plan as the user reads it: the text report (a [`Display`](std::fmt::Display) on [`PlanReport`])
//! and the JSON object (the prediction plus the fibre and the cautions).

use crate::plan::cautions::CAUTIONS;
use crate::plan::fibre::Fibre;
use crate::plan::predict::{Prediction, G_INPUT};
use crate::setup::Setup;
use crate::units::Measured;
use std::fmt::{self, Display, Formatter};

/// One design's plan, ready to print.
#[derive(Debug, Clone, Copy)]
pub struct PlanReport<'a> {
    pub setup: &'a Setup,
    pub fibre: &'a Fibre,
    pub prediction: &'a Prediction,
}

impl Display for PlanReport<'_> {
    fn fmt(&self, f: &mut Formatter<'_>) -> fmt::Result {
        let p = self.prediction;
        write_design(f, self.setup, self.fibre)?;
        writeln!(f)?;
        write_quantities(f, p)?;
        write_settling(f, p)?;
        write_stress(f, p)?;
        writeln!(f)?;
        write_sensitivity(f, p)?;
        writeln!(f)?;
        write_verdict(f, p)?;
        writeln!(f)?;
        writeln!(f, "Safety:")?;
        for c in CAUTIONS {
            writeln!(f, "  - {c}")?;
        }
        Ok(())
    }
}

/// The plan as one JSON object: the prediction's fields plus `fibre` and `cautions`.
pub fn plan_json(fibre: &Fibre, p: &Prediction) -> serde_json::Result<serde_json::Value> {
    let mut v = serde_json::to_value(p)?;
    if let Some(o) = v.as_object_mut() {
        o.insert("fibre".into(), fibre_json(fibre));
        o.insert("cautions".into(), serde_json::json!(CAUTIONS));
    }
    Ok(v)
}

/// The fibre as the JSON object shows it.
pub fn fibre_json(f: &Fibre) -> serde_json::Value {
    serde_json::json!({
        "material": f.material,
        "section": f.section.describe(),
        "length_m": f.length,
        "shear_modulus_Pa": f.shear_modulus,
        "tensile_strength_Pa": f.tensile_strength,
        "density_kg_m3": f.density,
        "overridden": f.overridden,
    })
}

/// `value ± u`, both scaled and with `digits` decimals.
fn pm(m: Measured, scale: f64, digits: usize) -> String {
    format!(
        "{:.*} ± {:.*}",
        digits,
        m.value * scale,
        digits,
        m.u * scale
    )
}

/// `value ± u` in scientific notation.
fn sci(m: Measured) -> String {
    format!("{:.4e} ± {:.1e}", m.value, m.u)
}

fn write_design(f: &mut Formatter<'_>, setup: &Setup, fibre: &Fibre) -> fmt::Result {
    writeln!(f, "Design: {}", setup.path.display())?;
    writeln!(
        f,
        "Fibre: {}, {}, free length {:.1} mm, shear modulus {:.1} GPa{}",
        fibre.material,
        fibre.section.describe(),
        fibre.length.value * 1e3,
        fibre.shear_modulus.value / 1e9,
        if fibre.overridden.is_empty() {
            String::new()
        } else {
            format!(" (overridden: {})", fibre.overridden.join(", "))
        }
    )
}

fn write_quantities(f: &mut Formatter<'_>, p: &Prediction) -> fmt::Result {
    writeln!(f, "  gravitational torque   {:>28} N m", sci(p.torque_n_m))?;
    writeln!(
        f,
        "  torsion constant       {:>28} N m/rad",
        sci(p.kappa_n_m_per_rad)
    )?;
    writeln!(
        f,
        "  moment of inertia      {:>28} kg m^2",
        sci(p.inertia_kg_m2)
    )?;
    writeln!(
        f,
        "  period                 {:>28} s",
        pm(p.period_s, 1.0, 1)
    )?;
    writeln!(
        f,
        "  deflection theta_G     {:>28} mrad",
        pm(p.theta_rad, 1e3, 4)
    )?;
    writeln!(
        f,
        "  spot travel, flat      {:>28} mm",
        pm(p.spot_travel_flat_mm, 1.0, 3)
    )?;
    writeln!(
        f,
        "  spot travel, curved    {:>28} mm",
        pm(p.spot_travel_curved_mm, 1.0, 3)
    )?;
    if let Some(px) = p.spot_travel_px {
        writeln!(f, "  spot travel in camera  {px:>28.1} px")?;
    }
    writeln!(
        f,
        "  tracker noise          {:>28.4} mm",
        p.tracker_noise_mm
    )
}

fn write_settling(f: &mut Formatter<'_>, p: &Prediction) -> fmt::Result {
    match (p.damping_time_s, p.quality_factor) {
        (Some(t), Some(q)) => {
            writeln!(
                f,
                "  damping time, Q        {:>28}",
                format!("{t:.0} s, Q = {q:.1}")
            )?;
            if let (Some(a), Some(b)) = (p.settling_1pct_s, p.settling_to_noise_s) {
                writeln!(
                    f,
                    "  settling               {:>28}",
                    format!("{a:.0} s to 1 %, {b:.0} s to noise")
                )?;
            }
            Ok(())
        }
        _ => writeln!(
            f,
            "  settling               (give --damping-time or --quality-factor)"
        ),
    }
}

fn write_stress(f: &mut Formatter<'_>, p: &Prediction) -> fmt::Result {
    writeln!(
        f,
        "  fibre stress           {:>28}",
        format!(
            "{:.0} MPa of {:.0} MPa (safety factor {:.1})",
            p.stress_pa / 1e6,
            p.tensile_strength_pa / 1e6,
            p.safety_factor
        )
    )
}

fn write_sensitivity(f: &mut Formatter<'_>, p: &Prediction) -> fmt::Result {
    writeln!(
        f,
        "Sensitivity of theta_G (d ln theta / d ln x; its relative uncertainty contribution):"
    )?;
    for c in &p.theta_sensitivity {
        writeln!(
            f,
            "  {:<18} {:>+8.3}   {:>6.2} %",
            c.name,
            c.relative_sensitivity,
            100.0 * c.u_contribution / p.theta_rad.value
        )?;
    }
    // G is not a design choice, so it is never offered as the change to make.
    if let Some(top) = p.theta_sensitivity.iter().find(|c| c.name != G_INPUT) {
        let dir = if top.relative_sensitivity < 0.0 {
            "smaller"
        } else {
            "larger"
        };
        writeln!(
            f,
            "  Most effective change: a 1 % {dir} {} changes theta_G by {:.1} %.",
            top.name,
            top.relative_sensitivity.abs()
        )?;
    }
    Ok(())
}

fn write_verdict(f: &mut Formatter<'_>, p: &Prediction) -> fmt::Result {
    writeln!(
        f,
        "Verdict: {}; {}",
        if p.measurable {
            "measurable"
        } else {
            "NOT measurable"
        },
        if p.overloaded {
            "fibre OVERLOADED"
        } else {
            "fibre load fine"
        }
    )?;
    for w in &p.warnings {
        writeln!(f, "  note: {w}")?;
    }
    Ok(())
}
