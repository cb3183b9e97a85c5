//! The setup file (TOML) describing an apparatus: every quantity written as `"value ± u unit"`.
//!
//! ```toml
//! [beam]
//! small_mass = "14.6 ± 0.05 g"   # each small sphere
//! small_radius = "7.5 ± 0.05 mm"
//! arm = "50.0 ± 0.1 mm"           # rotation axis to small-sphere centre (R)
//! rod_mass = "10 ± 0.5 g"
//! rod_length = "100 ± 1 mm"       # optional, default 2 x arm
//! extra_inertia = "1e-6 ± 1e-7 kg m^2"  # optional: mirror, clamps
//! rod_height = "0 mm"              # optional: the rod's height above the spheres' centre plane
//! [sources]
//! large_mass = "1.50 ± 0.01 kg"
//! large_radius = "32 ± 0.5 mm"    # optional; used to refuse overlapping spheres
//! separation = "46.5 ± 0.2 mm"    # centre-to-centre at equilibrium (d)
//! [lever]
//! screen_distance = "2.50 ± 0.005 m"  # mirror to screen (L)
//! zero = "0 ± 0.5 mm"             # scale reading of the foot point
//! scale = "flat"                  # or "curved"
//! ```
//! An optional `[fibre]` table is read by the planner (see [`crate::plan`]).
//! Unknown keys and units are errors naming the key; physically impossible values are refused.

use crate::error::IoError;
use crate::units::{parse_quantity, Dimension, Measured, QuantityError};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Shape of the scale the spot falls on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ScaleShape {
    /// A flat screen perpendicular to the undeflected beam.
    Flat,
    /// A scale curved on a circle of radius L centred on the mirror.
    Curved,
}

/// The beam (the hanging part).
#[derive(Debug, Clone, PartialEq)]
pub struct Beam {
    pub small_mass: Measured,
    pub small_radius: Measured,
    pub arm: Measured,
    pub rod_mass: Measured,
    pub rod_length: Measured,
    pub extra_inertia: Measured,
    /// The rod's height above (negative: below) the spheres' centre plane, m (default 0).
    pub rod_height: Measured,
}

/// The large (source) spheres.
#[derive(Debug, Clone, PartialEq)]
pub struct Sources {
    pub large_mass: Measured,
    pub large_radius: Option<Measured>,
    pub separation: Measured,
}

/// The optical lever.
#[derive(Debug, Clone, PartialEq)]
pub struct LeverSetup {
    pub screen_distance: Measured,
    /// Scale reading of the foot point, metres.
    pub zero: Measured,
    pub scale: ScaleShape,
}

/// A whole apparatus.
#[derive(Debug, Clone, PartialEq)]
pub struct Setup {
    pub beam: Beam,
    pub sources: Sources,
    pub lever: LeverSetup,
    /// The `[fibre]` table's raw entries, for the planner to interpret.
    pub fibre: Option<BTreeMap<String, toml::Value>>,
    /// Keys given without an uncertainty (counted as exact; the caller should warn).
    pub without_uncertainty: Vec<String>,
    /// The file it was read from, for messages.
    pub path: PathBuf,
}

/// What was wrong with a setup file.
#[derive(Debug, Error)]
pub enum SetupError {
    #[error(transparent)]
    Io(#[from] IoError),
    #[error("{path}: {message}")]
    Syntax { path: PathBuf, message: String },
    #[error("{path}: [{table}] {key}: {source}")]
    Quantity {
        path: PathBuf,
        table: &'static str,
        key: &'static str,
        #[source]
        source: Box<QuantityError>,
    },
    #[error("{path}: {message}")]
    Impossible { path: PathBuf, message: String },
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSetup {
    beam: RawBeam,
    sources: RawSources,
    lever: RawLever,
    fibre: Option<BTreeMap<String, toml::Value>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBeam {
    small_mass: String,
    small_radius: String,
    arm: String,
    rod_mass: String,
    rod_length: Option<String>,
    extra_inertia: Option<String>,
    rod_height: Option<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSources {
    large_mass: String,
    large_radius: Option<String>,
    separation: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLever {
    screen_distance: String,
    zero: String,
    scale: ScaleShape,
}

struct Reader<'a> {
    path: &'a Path,
    without_u: Vec<String>,
}

impl Reader<'_> {
    fn q(
        &mut self,
        table: &'static str,
        key: &'static str,
        text: &str,
        dim: Dimension,
    ) -> Result<Measured, SetupError> {
        let (m, has_u) = parse_quantity(text, dim).map_err(|source| SetupError::Quantity {
            path: self.path.to_path_buf(),
            table,
            key,
            source: Box::new(source),
        })?;
        if !has_u {
            self.without_u.push(format!("{table}.{key}"));
        }
        Ok(m)
    }
    fn impossible(&self, message: String) -> SetupError {
        SetupError::Impossible {
            path: self.path.to_path_buf(),
            message,
        }
    }
    fn positive(&self, what: &str, m: Measured) -> Result<Measured, SetupError> {
        if m.value > 0.0 {
            Ok(m)
        } else {
            Err(self.impossible(format!(
                "{what} must be greater than zero (got {})",
                m.value
            )))
        }
    }

    /// The `[beam]` quantities (rod length defaults to twice the arm, extra inertia to none).
    fn beam(&mut self, raw: &RawBeam) -> Result<Beam, SetupError> {
        use Dimension::*;
        let small_mass = self.q("beam", "small_mass", &raw.small_mass, Mass)?;
        let small_radius = self.q("beam", "small_radius", &raw.small_radius, Length)?;
        let arm = self.q("beam", "arm", &raw.arm, Length)?;
        let rod_mass = self.q("beam", "rod_mass", &raw.rod_mass, Mass)?;
        let rod_length = match &raw.rod_length {
            Some(t) => self.q("beam", "rod_length", t, Length)?,
            None => Measured::new(2.0 * arm.value, 2.0 * arm.u),
        };
        let extra_inertia = match &raw.extra_inertia {
            Some(t) => self.q("beam", "extra_inertia", t, Inertia)?,
            None => Measured::exact(0.0),
        };
        let rod_height = match &raw.rod_height {
            Some(t) => self.q("beam", "rod_height", t, Length)?,
            None => Measured::exact(0.0),
        };
        Ok(Beam {
            small_mass,
            small_radius,
            arm,
            rod_mass,
            rod_length,
            extra_inertia,
            rod_height,
        })
    }

    /// The `[sources]` quantities.
    fn sources(&mut self, raw: &RawSources) -> Result<Sources, SetupError> {
        use Dimension::*;
        let large_mass = self.q("sources", "large_mass", &raw.large_mass, Mass)?;
        let large_radius = match &raw.large_radius {
            Some(t) => Some(self.q("sources", "large_radius", t, Length)?),
            None => None,
        };
        let separation = self.q("sources", "separation", &raw.separation, Length)?;
        Ok(Sources {
            large_mass,
            large_radius,
            separation,
        })
    }

    /// The `[lever]` quantities.
    fn lever(&mut self, raw: &RawLever) -> Result<LeverSetup, SetupError> {
        let screen_distance = self.q(
            "lever",
            "screen_distance",
            &raw.screen_distance,
            Dimension::Length,
        )?;
        let zero = self.q("lever", "zero", &raw.zero, Dimension::Length)?;
        Ok(LeverSetup {
            screen_distance,
            zero,
            scale: raw.scale,
        })
    }

    /// Refuse values no apparatus can have: non-positive sizes and masses, overlapping spheres.
    fn check(&self, b: &Beam, s: &Sources, l: &LeverSetup) -> Result<(), SetupError> {
        self.positive("beam.small_mass", b.small_mass)?;
        self.positive("beam.small_radius", b.small_radius)?;
        self.positive("beam.arm", b.arm)?;
        if b.rod_mass.value < 0.0 {
            self.positive("beam.rod_mass", b.rod_mass)?;
        }
        self.positive("beam.rod_length", b.rod_length)?;
        if b.extra_inertia.value < 0.0 {
            return Err(self.impossible("beam.extra_inertia cannot be negative".into()));
        }
        self.positive("sources.large_mass", s.large_mass)?;
        self.positive("sources.separation", s.separation)?;
        self.positive("lever.screen_distance", l.screen_distance)?;
        self.check_overlap(b, s)
    }

    /// The spheres must not overlap: large with small, and the two small ones at the axis.
    fn check_overlap(&self, b: &Beam, s: &Sources) -> Result<(), SetupError> {
        let (separation, small_radius) = (s.separation, b.small_radius);
        if let Some(lr) = s.large_radius {
            self.positive("sources.large_radius", lr)?;
            if separation.value <= lr.value + small_radius.value {
                return Err(self.impossible(format!(
                    "sources.separation ({:.1} mm) is not larger than the sum of the sphere radii ({:.1} mm): the spheres would overlap",
                    separation.value * 1e3,
                    (lr.value + small_radius.value) * 1e3
                )));
            }
        } else if separation.value <= small_radius.value {
            return Err(self.impossible("sources.separation is smaller than the small sphere's radius: the spheres would overlap".into()));
        }
        if 2.0 * small_radius.value >= 2.0 * b.arm.value {
            return Err(self.impossible("beam.small_radius is not smaller than beam.arm: the small spheres would overlap at the axis".into()));
        }
        Ok(())
    }
}

impl Setup {
    /// Read and check a setup file.
    pub fn load(path: &Path) -> Result<Self, SetupError> {
        let text = crate::textfile::read_text(path).map_err(SetupError::Io)?;
        Self::parse(&text, path)
    }

    /// Parse setup text; `path` is only used in messages.
    pub fn parse(text: &str, path: &Path) -> Result<Self, SetupError> {
        let raw: RawSetup = toml::from_str(text).map_err(|e| SetupError::Syntax {
            path: path.to_path_buf(),
            message: e.to_string().trim_end().to_string(),
        })?;
        let mut r = Reader {
            path,
            without_u: Vec::new(),
        };
        let beam = r.beam(&raw.beam)?;
        let sources = r.sources(&raw.sources)?;
        let lever = r.lever(&raw.lever)?;
        r.check(&beam, &sources, &lever)?;
        Ok(Setup {
            beam,
            sources,
            lever,
            fibre: raw.fibre,
            without_uncertainty: r.without_u,
            path: path.to_path_buf(),
        })
    }

    /// What the large spheres pull on (central values): small spheres, rod, and the spheres themselves.
    pub fn pull(&self) -> crate::physics::pull::BeamPull {
        let b = &self.beam;
        crate::physics::pull::BeamPull {
            small_mass: b.small_mass.value,
            arm: b.arm.value,
            rod_mass: b.rod_mass.value,
            rod_length: b.rod_length.value,
            rod_height: b.rod_height.value,
            large_mass: self.sources.large_mass.value,
            separation: self.sources.separation.value,
        }
    }

    /// Moment of inertia of the beam, kg m^2 (central value).
    pub fn inertia(&self) -> f64 {
        let b = &self.beam;
        crate::physics::beam_inertia(
            b.rod_mass.value,
            b.rod_length.value,
            b.small_mass.value,
            b.small_radius.value,
            b.arm.value,
            b.extra_inertia.value,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    pub const EXAMPLE: &str = r#"
[beam]
small_mass = "14.6 ± 0.05 g"
small_radius = "7.5 ± 0.05 mm"
arm = "50.0 ± 0.1 mm"
rod_mass = "10 ± 0.5 g"
[sources]
large_mass = "1.50 ± 0.01 kg"
large_radius = "32 ± 0.5 mm"
separation = "46.5 ± 0.2 mm"
[lever]
screen_distance = "2.50 ± 0.005 m"
zero = "0 mm"
scale = "flat"
"#;

    #[test]
    fn reads_the_example() {
        let s = Setup::parse(EXAMPLE, Path::new("x.toml")).unwrap();
        assert!((s.beam.small_mass.value - 0.0146).abs() < 1e-12);
        assert!((s.beam.rod_length.value - 0.1).abs() < 1e-12);
        assert_eq!(s.without_uncertainty, vec!["lever.zero".to_string()]);
        assert_eq!(s.lever.scale, ScaleShape::Flat);
    }

    #[test]
    fn unknown_and_missing_keys_are_named() {
        let e = Setup::parse(&EXAMPLE.replace("arm =", "arms ="), Path::new("x.toml"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("arms") && e.contains("x.toml"), "{e}");
        let e = Setup::parse(
            &EXAMPLE.replace("kg\"\nlarge_radius", "stone\"\nlarge_radius"),
            Path::new("x.toml"),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("large_mass") && e.contains("stone"), "{e}");
    }

    #[test]
    fn impossible_values_are_refused() {
        let e = Setup::parse(
            &EXAMPLE.replace("14.6 ± 0.05 g", "-1 g"),
            Path::new("x.toml"),
        )
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("small_mass") && e.contains("greater than zero"),
            "{e}"
        );
        let e = Setup::parse(
            &EXAMPLE.replace("46.5 ± 0.2 mm", "30 mm"),
            Path::new("x.toml"),
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("overlap"), "{e}");
    }
}
