//! `spotlever analyze`: a track file and the apparatus' setup to period, equilibria and G, written to
//! `angle.csv`, `segments.csv`, `result.json` and `report.svg`, with a one-screen summary.

use anyhow::Context;
use clap::Args;
use spotlever::analysis::{self, AnalysisOptions};
use spotlever::export::{angle_csv, report_svg, result_json, segments_csv};
use spotlever::physics::G_CODATA_2018;
use spotlever::setup::Setup;
use spotlever::track::read_track;
use std::path::{Path, PathBuf};

#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// Track file written by `spotlever track --calib ...` (needs the x_mm column).
    pub track: PathBuf,
    /// Apparatus description (TOML; every quantity "value ± u unit").
    #[arg(long)]
    pub setup: PathBuf,
    /// Segment starts, CSV with header `t_s,label` (one row per segment); found in the trace if absent.
    #[arg(long)]
    pub events: Option<PathBuf>,
    /// Output folder (created if needed).
    #[arg(long)]
    pub out: PathBuf,
    /// Do not fit a linear drift within each segment.
    #[arg(long)]
    pub no_drift: bool,
    /// Monte Carlo draws for the uncertainty propagation.
    #[arg(long, default_value_t = 200_000)]
    pub draws: usize,
}

pub fn run(args: AnalyzeArgs) -> anyhow::Result<()> {
    let setup = Setup::load(&args.setup)?;
    let track = read_track(&args.track)?;
    let lever = spotlever::lever::Lever::from_setup(&setup);
    let (samples, without_position) = analysis::samples_from_track(&track, &lever)
        .with_context(|| format!("{}", args.track.display()))?;
    let events = match &args.events {
        Some(p) => Some(analysis::read_events(p)?),
        None => None,
    };
    let opts = AnalysisOptions {
        fit_drift: !args.no_drift,
        mc_draws: args.draws.max(1000),
        ..Default::default()
    };
    let a = analysis::analyze(&samples, &setup, events.as_deref(), &opts)
        .with_context(|| format!("analysing {}", args.track.display()))?;
    write_outputs(&args.out, &samples, &a)?;
    print!("{}", summary(&a, without_position, track.truncated_tail));
    println!(
        "wrote angle.csv, segments.csv, result.json, report.svg in {}",
        args.out.display()
    );
    Ok(())
}

/// Write the analysis files (angle.csv, segments.csv, result.json, report.svg) into `out`.
pub fn write_outputs(
    out: &Path,
    samples: &[analysis::Sample],
    a: &analysis::Analysis,
) -> anyhow::Result<()> {
    std::fs::create_dir_all(out)
        .with_context(|| format!("{}: cannot create the output folder", out.display()))?;
    let p = |name: &str| out.join(name);
    angle_csv::write_angle_csv(&p("angle.csv"), samples, a)?;
    segments_csv::write_segments_csv(&p("segments.csv"), a)?;
    result_json::write_result_json(&p("result.json"), a)?;
    report_svg::write_report_svg(&p("report.svg"), samples, a)?;
    Ok(())
}

/// The one-screen human summary of an analysis.
pub fn summary(a: &analysis::Analysis, without_position: usize, truncated: bool) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{} samples ({} without a spot position), {} segments, moves {}",
        a.samples_used,
        without_position,
        a.segments.len(),
        if a.moves_from_events {
            "from the events file"
        } else {
            "found in the trace"
        }
    );
    let damping = if a.gamma.value > 0.0 {
        format!("{:.0} s", 1.0 / a.gamma.value)
    } else {
        "none seen".into()
    };
    let _ = writeln!(
        s,
        "period T0 = {:.3} ± {:.3} s (spectrum {:.2} s), damping time {damping}",
        a.period.value,
        a.period.u,
        a.spectrum.period()
    );
    let _ = writeln!(
        s,
        "I = {:.4e} ± {:.1e} kg m^2, kappa = {:.4e} ± {:.1e} N m/rad, beta = {:.4}",
        a.inertia.value, a.inertia.u, a.kappa.value, a.kappa.u, a.beta
    );
    let _ = writeln!(
        s,
        "  seg label     start      end   equilibrium (mrad)   period (s)  rest pts (mrad)"
    );
    for g in a.segments.iter().take(12) {
        let per = g.period.map_or("      -     ".into(), |p| {
            format!("{:8.3}±{:<5.3}", p.value, p.u)
        });
        let rest = g
            .turning_rest
            .map_or("-".into(), |m| format!("{:.4}", m.value * 1e3));
        let _ = writeln!(
            s,
            "  {:>3} {:<6} {:>8.0} {:>8.0}   {:>9.4} ± {:<7.4}  {per} {rest}",
            g.index,
            g.label.chars().take(6).collect::<String>(),
            g.start,
            g.end,
            g.equilibrium.value * 1e3,
            g.equilibrium.u * 1e3
        );
    }
    if a.segments.len() > 12 {
        let _ = writeln!(s, "  ... {} more in segments.csv", a.segments.len() - 12);
    }
    let d = &a.deflection;
    let _ = writeln!(
        s,
        "theta_G = {:.5} ± {:.5} mrad ({}{})",
        d.theta_g.value * 1e3,
        d.theta_g.u * 1e3,
        if d.triples {
            "A-B-A triples"
        } else {
            "one pair, drift not cancelled"
        },
        d.scatter
            .map_or(String::new(), |x| format!(", scatter {:.5} mrad", x * 1e3))
    );
    let _ = writeln!(
        s,
        "G (deflection)   = {:.5e} ± {:.2e} m^3 kg^-1 s^-2  (GUM; Monte Carlo {:.5e} ± {:.2e}, 95 % [{:.5e}, {:.5e}])",
        a.g.value, a.g.u, a.g_mc.mean, a.g_mc.u, a.g_mc.low95, a.g_mc.high95
    );
    if let Some(acc) = &a.acceleration {
        let r = acc.ratio_to_deflection;
        let _ = writeln!(
            s,
            "G (acceleration) = {:.5e} ± {:.2e} m^3 kg^-1 s^-2  (ratio to deflection {:.4} ± {:.4}, {:.1} sigma)",
            acc.g.value,
            acc.g.u,
            r.value,
            r.u,
            if r.u > 0.0 { (r.value - 1.0).abs() / r.u } else { 0.0 }
        );
    }
    let _ = writeln!(
        s,
        "CODATA 2018: G = {G_CODATA_2018:.5e}(15); relative difference {:+.3} %",
        a.codata_relative_difference * 100.0
    );
    let mut lines: Vec<_> = a.g.budget.iter().filter(|l| l.share > 0.0).collect();
    lines.sort_by(|x, y| y.share.total_cmp(&x.share));
    let top: Vec<String> = lines
        .iter()
        .take(4)
        .map(|l| format!("{} {:.0} %", l.input, l.share * 100.0))
        .collect();
    let _ = writeln!(s, "largest budget shares: {}", top.join(", "));
    let mut warnings = a.warnings.clone();
    if truncated {
        warnings.push("the track's last line was cut short and skipped".into());
    }
    for w in warnings.iter().take(5) {
        let _ = writeln!(s, "warning: {w}");
    }
    if warnings.len() > 5 {
        let _ = writeln!(s, "... {} more warnings in result.json", warnings.len() - 5);
    }
    s
}
