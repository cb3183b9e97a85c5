//! The one-screen human summary of an analysis: samples and segments, period and beam constants, the
//! per-segment table (first twelve), `theta_G`, G both ways against CODATA 2018, the largest budget
//! shares and the first warnings.

use super::Analysis;
use crate::physics::G_CODATA_2018;
use std::fmt;

/// What the summary shows: the analysis, the track rows left out for want of a spot position, and
/// whether the track's last line was cut short.
#[derive(Debug, Clone, Copy)]
pub struct Summary<'a> {
    pub analysis: &'a Analysis,
    pub without_position: usize,
    pub truncated: bool,
}

impl<'a> Summary<'a> {
    pub fn new(analysis: &'a Analysis, without_position: usize, truncated: bool) -> Self {
        Self {
            analysis,
            without_position,
            truncated,
        }
    }

    /// Samples and segments, the period and the beam's constants.
    fn header(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let a = self.analysis;
        writeln!(
            f,
            "{} samples ({} without a spot position), {} segments, moves {}",
            a.samples_used,
            self.without_position,
            a.segments.len(),
            if a.moves_from_events {
                "from the events file"
            } else {
                "found in the trace"
            }
        )?;
        let damping = if a.gamma.value > 0.0 {
            format!("{:.0} s", 1.0 / a.gamma.value)
        } else {
            "none seen".into()
        };
        writeln!(
            f,
            "period T0 = {:.3} ± {:.3} s (spectrum {:.2} s), damping time {damping}",
            a.period.value,
            a.period.u,
            a.spectrum.period()
        )?;
        writeln!(
            f,
            "I = {:.4e} ± {:.1e} kg m^2, kappa = {:.4e} ± {:.1e} N m/rad, beta = {:.4}",
            a.inertia.value, a.inertia.u, a.kappa.value, a.kappa.u, a.beta
        )?;
        writeln!(
            f,
            "pull on the rod: +{:.2} % of the small spheres' torque; spheres' stiffness: -{:.3} % of the torque",
            100.0 * a.pull.rod,
            100.0 * a.pull.stiffness
        )
    }

    /// The first twelve segments, one line each.
    fn segment_table(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let a = self.analysis;
        writeln!(
            f,
            "  seg label     start      end   equilibrium (mrad)   period (s)  rest pts (mrad)"
        )?;
        for g in a.segments.iter().take(12) {
            let per = g.period.map_or("      -     ".into(), |p| {
                format!("{:8.3}±{:<5.3}", p.value, p.u)
            });
            let rest = g
                .turning_rest
                .map_or("-".into(), |m| format!("{:.4}", m.value * 1e3));
            writeln!(
                f,
                "  {:>3} {:<6} {:>8.0} {:>8.0}   {:>9.4} ± {:<7.4}  {per} {rest}",
                g.index,
                g.label.chars().take(6).collect::<String>(),
                g.start,
                g.end,
                g.equilibrium.value * 1e3,
                g.equilibrium.u * 1e3
            )?;
        }
        if a.segments.len() > 12 {
            writeln!(f, "  ... {} more in segments.csv", a.segments.len() - 12)?;
        }
        for r in &a.refused {
            writeln!(f, "  refused: {}", r.reason)?;
        }
        if a.outliers > 0 {
            writeln!(
                f,
                "  {} stray samples left out of the fits (see the segments' outliers)",
                a.outliers
            )?;
        }
        Ok(())
    }

    /// `theta_G`, G by deflection and by acceleration, and the comparison with CODATA 2018.
    fn results(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let a = self.analysis;
        let d = &a.deflection;
        writeln!(
            f,
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
        )?;
        writeln!(
            f,
            "G (deflection)   = {:.5e} ± {:.2e} m^3 kg^-1 s^-2  (GUM; Monte Carlo {:.5e} ± {:.2e}, 95 % [{:.5e}, {:.5e}])",
            a.g.value, a.g.u, a.g_mc.mean, a.g_mc.u, a.g_mc.low95, a.g_mc.high95
        )?;
        if let Some(acc) = &a.acceleration {
            let r = acc.ratio_to_deflection;
            writeln!(
                f,
                "G (acceleration) = {:.5e} ± {:.2e} m^3 kg^-1 s^-2  (ratio to deflection {:.4} ± {:.4}, {:.1} sigma)",
                acc.g.value,
                acc.g.u,
                r.value,
                r.u,
                if r.u > 0.0 { (r.value - 1.0).abs() / r.u } else { 0.0 }
            )?;
        }
        writeln!(
            f,
            "CODATA 2018: G = {G_CODATA_2018:.5e}(15); relative difference {:+.3} %",
            a.codata_relative_difference * 100.0
        )
    }

    /// The four largest shares of G's budget and the first five warnings.
    fn budget_and_warnings(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let a = self.analysis;
        let mut lines: Vec<_> = a.g.budget.iter().filter(|l| l.share > 0.0).collect();
        lines.sort_by(|x, y| y.share.total_cmp(&x.share));
        let top: Vec<String> = lines
            .iter()
            .take(4)
            .map(|l| format!("{} {:.0} %", l.input, l.share * 100.0))
            .collect();
        writeln!(f, "largest budget shares: {}", top.join(", "))?;
        let mut warnings = a.warnings.clone();
        if self.truncated {
            warnings.push("the track's last line was cut short and skipped".into());
        }
        for w in warnings.iter().take(5) {
            writeln!(f, "warning: {w}")?;
        }
        if warnings.len() > 5 {
            writeln!(f, "... {} more warnings in result.json", warnings.len() - 5)?;
        }
        Ok(())
    }
}

impl fmt::Display for Summary<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.header(f)?;
        self.segment_table(f)?;
        self.results(f)?;
        self.budget_and_warnings(f)
    }
}
