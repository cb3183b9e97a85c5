//! `spotlever plan`: predict what an apparatus design will show, from its setup file's `[fibre]` table.

use anyhow::Context;
use clap::Args;
use spotlever::plan::cautions::CAUTIONS;
use spotlever::plan::fibre::Fibre;
use spotlever::plan::predict::{predict, Damping, PlanOptions, Prediction, TrackerNoise};
use spotlever::setup::Setup;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Setup file with a [fibre] table (material, diameter or width and thickness, length).
    pub setup: PathBuf,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
    /// Amplitude damping time (1/e) of the swing, seconds.
    #[arg(long, value_name = "SECONDS", conflicts_with = "quality_factor")]
    pub damping_time: Option<f64>,
    /// Quality factor of the swing (instead of --damping-time).
    #[arg(long, value_name = "Q")]
    pub quality_factor: Option<f64>,
    /// Tracker noise on the screen, mm (one standard deviation).
    #[arg(long, value_name = "MM", conflicts_with = "noise_px")]
    pub noise_mm: Option<f64>,
    /// Tracker noise in the image, px (needs --calibration).
    #[arg(long, value_name = "PX", requires = "calibration")]
    pub noise_px: Option<f64>,
    /// Camera calibration file: also give the spot travel in camera pixels.
    #[arg(long, value_name = "FILE")]
    pub calibration: Option<PathBuf>,
}

pub fn run(args: PlanArgs) -> anyhow::Result<()> {
    let setup = Setup::load(&args.setup)?;
    let fibre = Fibre::from_setup(&setup)?;
    let options = PlanOptions {
        damping: match (args.damping_time, args.quality_factor) {
            (Some(t), _) => Some(Damping::Time(t)),
            (None, Some(q)) => Some(Damping::Quality(q)),
            (None, None) => None,
        },
        noise: match (args.noise_mm, args.noise_px) {
            (Some(n), _) => Some(TrackerNoise::Millimetres(n)),
            (None, Some(p)) => Some(TrackerNoise::Pixels(p)),
            (None, None) => None,
        },
        calibration: args
            .calibration
            .as_deref()
            .map(spotlever::calib::Calibration::load)
            .transpose()?,
    };
    let p = predict(&setup, &fibre, &options)?;
    if args.json {
        let mut v = serde_json::to_value(&p).context("encoding the prediction")?;
        if let Some(o) = v.as_object_mut() {
            o.insert("fibre".into(), fibre_json(&fibre));
            o.insert("cautions".into(), serde_json::json!(CAUTIONS));
        }
        println!("{}", serde_json::to_string_pretty(&v)?);
    } else {
        print!("{}", report(&setup, &fibre, &p));
    }
    Ok(())
}

fn fibre_json(f: &Fibre) -> serde_json::Value {
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

fn pm(m: spotlever::units::Measured, scale: f64, digits: usize) -> String {
    format!(
        "{:.*} ± {:.*}",
        digits,
        m.value * scale,
        digits,
        m.u * scale
    )
}

/// The text report.
pub fn report(setup: &Setup, f: &Fibre, p: &Prediction) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(s, "Design: {}", setup.path.display());
    let _ = writeln!(
        s,
        "Fibre: {}, {}, free length {:.1} mm, shear modulus {:.1} GPa{}",
        f.material,
        f.section.describe(),
        f.length.value * 1e3,
        f.shear_modulus.value / 1e9,
        if f.overridden.is_empty() {
            String::new()
        } else {
            format!(" (overridden: {})", f.overridden.join(", "))
        }
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "  gravitational torque   {:>28} N m", sci(p.torque_n_m));
    let _ = writeln!(
        s,
        "  torsion constant       {:>28} N m/rad",
        sci(p.kappa_n_m_per_rad)
    );
    let _ = writeln!(
        s,
        "  moment of inertia      {:>28} kg m^2",
        sci(p.inertia_kg_m2)
    );
    let _ = writeln!(
        s,
        "  period                 {:>28} s",
        pm(p.period_s, 1.0, 1)
    );
    let _ = writeln!(
        s,
        "  deflection theta_G     {:>28} mrad",
        pm(p.theta_rad, 1e3, 4)
    );
    let _ = writeln!(
        s,
        "  spot travel, flat      {:>28} mm",
        pm(p.spot_travel_flat_mm, 1.0, 3)
    );
    let _ = writeln!(
        s,
        "  spot travel, curved    {:>28} mm",
        pm(p.spot_travel_curved_mm, 1.0, 3)
    );
    if let Some(px) = p.spot_travel_px {
        let _ = writeln!(s, "  spot travel in camera  {px:>28.1} px");
    }
    let _ = writeln!(
        s,
        "  tracker noise          {:>28.4} mm",
        p.tracker_noise_mm
    );
    match (p.damping_time_s, p.quality_factor) {
        (Some(t), Some(q)) => {
            let _ = writeln!(
                s,
                "  damping time, Q        {:>28}",
                format!("{t:.0} s, Q = {q:.1}")
            );
            if let (Some(a), Some(b)) = (p.settling_1pct_s, p.settling_to_noise_s) {
                let _ = writeln!(
                    s,
                    "  settling               {:>28}",
                    format!("{a:.0} s to 1 %, {b:.0} s to noise")
                );
            }
        }
        _ => {
            let _ = writeln!(
                s,
                "  settling               (give --damping-time or --quality-factor)"
            );
        }
    }
    let _ = writeln!(
        s,
        "  fibre stress           {:>28}",
        format!(
            "{:.0} MPa of {:.0} MPa (safety factor {:.1})",
            p.stress_pa / 1e6,
            p.tensile_strength_pa / 1e6,
            p.safety_factor
        )
    );
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Sensitivity of theta_G (d ln theta / d ln x; its relative uncertainty contribution):"
    );
    for c in &p.theta_sensitivity {
        let _ = writeln!(
            s,
            "  {:<18} {:>+8.3}   {:>6.2} %",
            c.name,
            c.relative_sensitivity,
            100.0 * c.u_contribution / p.theta_rad.value
        );
    }
    if let Some(top) = p
        .theta_sensitivity
        .iter()
        .find(|c| c.name != "G (CODATA 2018)")
    {
        let dir = if top.relative_sensitivity < 0.0 {
            "smaller"
        } else {
            "larger"
        };
        let _ = writeln!(
            s,
            "  Most effective change: a 1 % {dir} {} changes theta_G by {:.1} %.",
            top.name,
            top.relative_sensitivity.abs()
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
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
    );
    for w in &p.warnings {
        let _ = writeln!(s, "  note: {w}");
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Safety:");
    for c in CAUTIONS {
        let _ = writeln!(s, "  - {c}");
    }
    s
}

fn sci(m: spotlever::units::Measured) -> String {
    format!("{:.4e} ± {:.1e}", m.value, m.u)
}
