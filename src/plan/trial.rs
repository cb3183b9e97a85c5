//! Fibre trials: the torsion constant and shear modulus of a trial fibre from the period of a test body
//! of known moment of inertia hung on it (`kappa = I (2 pi / T)^2`, then `G_s = kappa l / factor` with the
//! section's torsion factor), with uncertainties.
//!
//! A trial file holds one `[[trial]]` table per fibre: the fibre keys of [`crate::plan::fibre`] plus
//! `name`, `inertia` (the test body about the fibre axis) and either `period` or `track` (a track CSV whose
//! swing is fitted for the period).

use crate::physics;
use crate::plan::error::MIN_TRACK_ROWS;
use crate::plan::fibre::{section_factor, Fibre};
use crate::plan::propagate::propagate;
use crate::plan::{FibreProblem, PlanError};
use crate::units::{parse_quantity, Dimension, Measured};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// One trial as read from the file.
#[derive(Debug, Clone, PartialEq)]
pub struct TrialInput {
    pub name: String,
    pub fibre: Fibre,
    /// Test body's moment of inertia about the fibre, kg m^2.
    pub inertia: Measured,
    pub period: PeriodSource,
}

/// Where a trial's period comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum PeriodSource {
    Given(Measured),
    /// A track CSV to fit (path resolved against the trial file's folder).
    Track(PathBuf),
}

/// A trial's result.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TrialResult {
    pub name: String,
    pub material: String,
    pub section: String,
    pub length_m: Measured,
    pub inertia_kg_m2: Measured,
    pub period_s: Measured,
    #[serde(rename = "kappa_N_m_per_rad")]
    pub kappa_n_m_per_rad: Measured,
    #[serde(rename = "shear_modulus_Pa")]
    pub shear_modulus_pa: Measured,
    /// Table (or overridden) shear modulus of the named material, Pa.
    #[serde(rename = "expected_shear_modulus_Pa")]
    pub expected_shear_modulus_pa: f64,
    /// Measured over expected shear modulus.
    pub ratio_to_table: f64,
    /// The fibre's stress under the trial's `load_mass` (absent when no load was given).
    pub stress: Option<crate::plan::stress::StressCheck>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTrials {
    trial: Vec<BTreeMap<String, toml::Value>>,
}

/// Read a trial file.
pub fn read_trials(path: &Path) -> Result<Vec<TrialInput>, PlanError> {
    let text = crate::textfile::read_text(path).map_err(|e| PlanError::TrialFileRead {
        path: e.path,
        cause: e.source,
    })?;
    parse_trials(&text, path)
}

/// Parse trial-file text; `path` names the file in messages and resolves track paths.
pub fn parse_trials(text: &str, path: &Path) -> Result<Vec<TrialInput>, PlanError> {
    let raw: RawTrials = toml::from_str(text).map_err(|e| PlanError::TrialFileSyntax {
        path: path.to_path_buf(),
        message: e.to_string().trim_end().to_string(),
    })?;
    if raw.trial.is_empty() {
        return Err(PlanError::NoTrials {
            path: path.to_path_buf(),
        });
    }
    let dir = path.parent().unwrap_or(Path::new("."));
    raw.trial
        .iter()
        .enumerate()
        .map(|(i, t)| {
            TrialKeys {
                path,
                table: format!("trial {}", i + 1),
                raw: t,
            }
            .read(dir)
        })
        .collect()
}

/// The keys of one `[[trial]]` table beyond the fibre's.
struct TrialKeys<'a> {
    path: &'a Path,
    /// `trial N`, for messages and as the default name.
    table: String,
    raw: &'a BTreeMap<String, toml::Value>,
}

impl TrialKeys<'_> {
    fn err(&self, problem: FibreProblem) -> PlanError {
        PlanError::Fibre {
            path: self.path.to_path_buf(),
            table: self.table.clone(),
            problem: Box::new(problem),
        }
    }
    fn text(&self, key: &str) -> Result<Option<String>, PlanError> {
        match self.raw.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) => Ok(Some(s.clone())),
            Some(v) => Err(self.err(FibreProblem::NotText {
                key: key.to_string(),
                got: v.clone(),
            })),
        }
    }
    fn positive(&self, key: &str, dim: Dimension) -> Result<Option<Measured>, PlanError> {
        let Some(s) = self.text(key)? else {
            return Ok(None);
        };
        let (m, _) = parse_quantity(&s, dim).map_err(|cause| {
            self.err(FibreProblem::Quantity {
                key: key.to_string(),
                cause,
            })
        })?;
        if m.value <= 0.0 {
            return Err(self.err(FibreProblem::TrialNotPositive {
                key: key.to_string(),
                text: s,
            }));
        }
        Ok(Some(m))
    }

    /// The whole trial; track paths are resolved against `dir`.
    fn read(&self, dir: &Path) -> Result<TrialInput, PlanError> {
        let fibre = Fibre::from_table(
            self.raw,
            self.path,
            &self.table,
            &["name", "inertia", "period", "track"],
        )?;
        let name = self.text("name")?.unwrap_or_else(|| self.table.clone());
        let inertia = self
            .positive("inertia", Dimension::Inertia)?
            .ok_or_else(|| self.err(FibreProblem::NoInertia))?;
        let period = match (
            self.positive("period", Dimension::Time)?,
            self.text("track")?,
        ) {
            (Some(p), None) => PeriodSource::Given(p),
            (None, Some(track)) => PeriodSource::Track(dir.join(track)),
            (Some(_), Some(_)) => return Err(self.err(FibreProblem::PeriodAndTrack)),
            (None, None) => return Err(self.err(FibreProblem::NoPeriod)),
        };
        Ok(TrialInput {
            name,
            fibre,
            inertia,
            period,
        })
    }
}

/// Evaluate one trial given its period.
pub fn evaluate(input: &TrialInput, period: Measured) -> Result<TrialResult, PlanError> {
    if !(period.value > 0.0 && period.value.is_finite()) {
        return Err(PlanError::BadPeriod {
            trial: input.name.clone(),
            period_s: period.value,
        });
    }
    let f = &input.fibre;
    let mut inputs: Vec<(String, Measured)> = vec![
        ("inertia".into(), input.inertia),
        ("period".into(), period),
        ("length".into(), f.length),
    ];
    for (n, m) in f.section.inputs() {
        inputs.push((n.into(), m));
    }
    let kappa_of = |x: &[f64]| physics::torsion_constant(x[0], 2.0 * std::f64::consts::PI / x[1]);
    let kappa = propagate(&inputs, kappa_of)?.value;
    let section = f.section;
    let g = propagate(&inputs, |x| {
        kappa_of(x) * x[2] / section_factor(&section.with_values(&x[3..]))
    })?
    .value;
    Ok(TrialResult {
        name: input.name.clone(),
        material: f.material.clone(),
        section: f.section.describe(),
        length_m: f.length,
        inertia_kg_m2: input.inertia,
        period_s: period,
        kappa_n_m_per_rad: kappa,
        shear_modulus_pa: g,
        expected_shear_modulus_pa: f.shear_modulus.value,
        ratio_to_table: g.value / f.shear_modulus.value,
        stress: f
            .load_mass
            .map(|m| crate::plan::stress::check_load(f, m.value)),
    })
}

/// What the trial table is, for the check of a file it would replace.
pub const TRIALS_CSV_KIND: crate::outfile::Kind = crate::outfile::Kind::Text {
    what: "a fibre trial table",
    mark: "name,material",
};

/// Write trial results as CSV (one row per trial), values SI with their standard uncertainties.
pub fn write_csv(path: &Path, results: &[TrialResult]) -> Result<(), PlanError> {
    let io = |cause: csv::Error| PlanError::CsvWrite {
        path: path.to_path_buf(),
        cause,
    };
    let mut text = csv::Writer::from_writer(Vec::new());
    let w = &mut text;
    w.write_record([
        "name",
        "material",
        "section",
        "length_m",
        "u_length_m",
        "inertia_kg_m2",
        "u_inertia_kg_m2",
        "period_s",
        "u_period_s",
        "kappa_N_m_per_rad",
        "u_kappa_N_m_per_rad",
        "shear_modulus_Pa",
        "u_shear_modulus_Pa",
        "table_shear_modulus_Pa",
        "ratio_to_table",
    ])
    .map_err(io)?;
    for r in results {
        let mut rec = vec![r.name.clone(), r.material.clone(), r.section.clone()];
        for m in [
            r.length_m,
            r.inertia_kg_m2,
            r.period_s,
            r.kappa_n_m_per_rad,
            r.shear_modulus_pa,
        ] {
            rec.push(format!("{:e}", m.value));
            rec.push(format!("{:e}", m.u));
        }
        rec.push(format!("{:e}", r.expected_shear_modulus_pa));
        rec.push(format!("{:.6}", r.ratio_to_table));
        w.write_record(&rec).map_err(io)?;
    }
    let bytes = text.into_inner().map_err(|e| io(e.into_error().into()))?;
    crate::outfile::write_whole(path, |out| std::io::Write::write_all(out, &bytes))
        .map_err(|e| io(e.into()))
}

/// The natural period of a free swing recorded in a track CSV: the spot's position along the scale
/// (`x_mm` when the track has screen positions, otherwise the image's `x_px`; the period does not
/// depend on the scale) goes through the analyzer's spectrum for a starting frequency and its damped
/// sinusoid fit, `T_0 = 2 pi / omega_0`. A linear drift is fitted alongside.
pub fn period_from_track(path: &Path) -> Result<Measured, PlanError> {
    let at = || path.to_path_buf();
    let track = crate::track::read_track(path)
        .map_err(|cause| PlanError::TrackRead { path: at(), cause })?;
    let (t, y) = swing_of(&track);
    fit_period(path, &t, &y)
}

/// The natural period of the free swing `(t, y)` (one stretch of a track, `path` names it in
/// messages): the spectrum's starting frequency, then the damped sinusoid fit.
pub(crate) fn fit_period(path: &Path, t: &[f64], y: &[f64]) -> Result<Measured, PlanError> {
    use crate::analysis::{damped, period};
    let at = || path.to_path_buf();
    if t.len() < MIN_TRACK_ROWS {
        return Err(PlanError::TrackTooFewRows {
            path: at(),
            rows: t.len(),
        });
    }
    let spec = period::spectrum(t, y, &period::SpectrumOptions::default())
        .map_err(|cause| PlanError::TrackSpectrum { path: at(), cause })?;
    let (t0, t1) = (t[0], t[t.len() - 1]);
    if t1 - t0 < 1.5 * spec.period() {
        return Err(PlanError::TrackTooShort {
            path: at(),
            span_s: t1 - t0,
            period_s: spec.period(),
        });
    }
    let fit = damped::fit_damped(
        t,
        y,
        t0,
        0.5 * (t0 + t1),
        2.0 * std::f64::consts::PI / spec.period(),
        true,
    )
    .map_err(|cause| PlanError::TrackFit { path: at(), cause })?;
    let (w0, uw) = fit.omega0();
    let period = 2.0 * std::f64::consts::PI / w0;
    if !(period.is_finite() && period > 0.0) {
        return Err(PlanError::TrackNoFrequency { path: at() });
    }
    Ok(Measured::new(period, period * uw / w0))
}

/// Times and positions along the scale of the rows with a finite spot position: `x_mm` when the track
/// has screen positions, otherwise the image's `x_px`.
pub(crate) fn swing_of(track: &crate::track::TrackFile) -> (Vec<f64>, Vec<f64>) {
    let mut t = Vec::new();
    let mut y = Vec::new();
    for r in &track.rows {
        if !r.fix.status.has_position() {
            continue;
        }
        let v = match (track.has_mm, r.screen, r.fix.position) {
            (true, Some(s), _) => s.x_mm,
            (_, _, Some(p)) => p.x,
            _ => continue,
        };
        if v.is_finite() && r.t.0.is_finite() {
            t.push(r.t.0);
            y.push(v);
        }
    }
    (t, y)
}
