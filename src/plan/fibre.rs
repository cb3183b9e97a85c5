//! A torsion fibre: material, cross-section (round wire or thin ribbon) and free length, read from a TOML
//! table of `"value ± u unit"` strings, with its torsion constant and load-bearing area.
//!
//! Torsion constants (elastic torsion of a uniform bar): round wire of radius r,
//! `kappa = pi G_s r^4 / (2 l)` (common practice, no source); ribbon of width w and thickness t,
//! `kappa = k(w/t) G_s w t^3 / l` with Saint-Venant's coefficient `k` ([`super::rect_torsion`]), which is
//! 1/3 only for a very thin ribbon.

use crate::plan::materials::{self, Material};
use crate::plan::{FibreProblem, PlanError};
use crate::units::{parse_quantity, Dimension, Measured};
use std::collections::BTreeMap;
use std::f64::consts::PI;
use std::path::Path;

/// The fibre's cross-section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Section {
    /// Round wire of the given diameter, m.
    Round { diameter: Measured },
    /// Flat ribbon, m.
    Ribbon {
        width: Measured,
        thickness: Measured,
    },
}

/// A fibre as described in a setup or trial file, material values already overridden where asked.
#[derive(Debug, Clone, PartialEq)]
pub struct Fibre {
    /// Material name (from the table), for reports.
    pub material: String,
    pub section: Section,
    /// Free (twisting) length, m.
    pub length: Measured,
    /// Shear modulus, Pa.
    pub shear_modulus: Measured,
    /// Ultimate tensile strength, Pa.
    pub tensile_strength: f64,
    /// Density, kg m^-3.
    pub density: f64,
    /// Mass hung on the fibre if given (otherwise the caller uses the beam's mass), kg.
    pub load_mass: Option<Measured>,
    /// Which material values were overridden by the file.
    pub overridden: Vec<String>,
    /// Keys given without an uncertainty.
    pub without_uncertainty: Vec<String>,
}

/// Keys the fibre table accepts.
pub const FIBRE_KEYS: &[&str] = &[
    "material",
    "diameter",
    "width",
    "thickness",
    "length",
    "shear_modulus",
    "tensile_strength",
    "density",
    "load_mass",
];

/// Reads one fibre table's keys, naming the file and table in every refusal and noting the quantities
/// given without an uncertainty.
struct TableReader<'a> {
    path: &'a Path,
    table: &'a str,
    raw: &'a BTreeMap<String, toml::Value>,
    without_u: Vec<String>,
}

/// The material's values after the table's overrides.
struct MaterialValues {
    shear_modulus: Measured,
    tensile_strength: f64,
    density: f64,
    overridden: Vec<String>,
}

impl TableReader<'_> {
    fn err(&self, problem: FibreProblem) -> PlanError {
        PlanError::Fibre {
            path: self.path.to_path_buf(),
            table: self.table.to_string(),
            problem: Box::new(problem),
        }
    }
    fn text(&self, key: &str) -> Result<Option<&str>, PlanError> {
        match self.raw.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) => Ok(Some(s.as_str())),
            Some(other) => Err(self.err(FibreProblem::NotQuantityText {
                key: key.to_string(),
                got: other.clone(),
            })),
        }
    }
    fn quantity(&mut self, key: &str, dim: Dimension) -> Result<Option<Measured>, PlanError> {
        let Some(t) = self.text(key)?.map(str::to_string) else {
            return Ok(None);
        };
        let (m, has_u) = parse_quantity(&t, dim).map_err(|cause| {
            self.err(FibreProblem::Quantity {
                key: key.to_string(),
                cause,
            })
        })?;
        if !has_u {
            self.without_u.push(format!("{}.{key}", self.table));
        }
        if m.value <= 0.0 {
            return Err(self.err(FibreProblem::NotPositive {
                key: key.to_string(),
                text: t,
            }));
        }
        Ok(Some(m))
    }

    /// Refuse keys outside [`FIBRE_KEYS`] and `allowed_extra`.
    fn refuse_unknown_keys(&self, allowed_extra: &[&str]) -> Result<(), PlanError> {
        let known = |k: &str| FIBRE_KEYS.contains(&k) || allowed_extra.contains(&k);
        match self.raw.keys().find(|k| !known(k)) {
            None => Ok(()),
            Some(k) => Err(self.err(FibreProblem::UnknownKey {
                key: k.clone(),
                accepted: FIBRE_KEYS
                    .iter()
                    .chain(allowed_extra)
                    .map(|k| k.to_string())
                    .collect(),
            })),
        }
    }

    /// The named material from the built-in table.
    fn material(&self) -> Result<&'static Material, PlanError> {
        let name = self.text("material")?.ok_or_else(|| {
            self.err(FibreProblem::NoMaterial {
                known: materials::known_names(),
            })
        })?;
        materials::lookup(name).map_err(|e| self.err(FibreProblem::Material(e)))
    }

    /// Round wire (`diameter`) or ribbon (`width` and `thickness`), exactly one of them.
    fn section(&mut self) -> Result<Section, PlanError> {
        use Dimension::Length;
        let diameter = self.quantity("diameter", Length)?;
        let width = self.quantity("width", Length)?;
        let thickness = self.quantity("thickness", Length)?;
        match (diameter, width, thickness) {
            (Some(d), None, None) => Ok(Section::Round { diameter: d }),
            (None, Some(w), Some(t)) if t.value > w.value => {
                Err(self.err(FibreProblem::ThickerThanWide {
                    thickness_m: t.value,
                    width_m: w.value,
                }))
            }
            (None, Some(w), Some(t)) => Ok(Section::Ribbon {
                width: w,
                thickness: t,
            }),
            (Some(_), _, _) => Err(self.err(FibreProblem::RoundAndRibbon)),
            (None, Some(_), None) | (None, None, Some(_)) => {
                Err(self.err(FibreProblem::HalfARibbon))
            }
            (None, None, None) => Err(self.err(FibreProblem::NoSection)),
        }
    }

    /// The material's shear modulus, tensile strength and density, each overridden where the table
    /// gives it.
    fn material_values(&mut self, base: &Material) -> Result<MaterialValues, PlanError> {
        use Dimension::*;
        let mut overridden = Vec::new();
        let shear_modulus = match self.quantity("shear_modulus", Pressure)? {
            Some(g) => {
                overridden.push("shear_modulus".to_string());
                g
            }
            None => Measured::new(
                base.shear_modulus,
                base.shear_modulus * base.shear_modulus_rel_u,
            ),
        };
        let mut value_of = |key: &str, dim, default: f64| -> Result<f64, PlanError> {
            Ok(match self.quantity(key, dim)? {
                Some(s) => {
                    overridden.push(key.to_string());
                    s.value
                }
                None => default,
            })
        };
        let tensile_strength = value_of("tensile_strength", Pressure, base.tensile_strength)?;
        let density = value_of("density", Density, base.density)?;
        Ok(MaterialValues {
            shear_modulus,
            tensile_strength,
            density,
            overridden,
        })
    }
}

impl Fibre {
    /// Read a fibre from a TOML table; `path` and `table` only name the place in messages.
    /// Keys outside `allowed_extra` and [`FIBRE_KEYS`] are refused.
    pub fn from_table(
        raw: &BTreeMap<String, toml::Value>,
        path: &Path,
        table: &str,
        allowed_extra: &[&str],
    ) -> Result<Self, PlanError> {
        let mut r = TableReader {
            path,
            table,
            raw,
            without_u: Vec::new(),
        };
        r.refuse_unknown_keys(allowed_extra)?;
        let base = r.material()?;
        let section = r.section()?;
        let length = r
            .quantity("length", Dimension::Length)?
            .ok_or_else(|| r.err(FibreProblem::NoLength))?;
        let values = r.material_values(base)?;
        let load_mass = r.quantity("load_mass", Dimension::Mass)?;
        Ok(Fibre {
            material: base.name.to_string(),
            section,
            length,
            shear_modulus: values.shear_modulus,
            tensile_strength: values.tensile_strength,
            density: values.density,
            load_mass,
            overridden: values.overridden,
            without_uncertainty: r.without_u,
        })
    }

    /// The `[fibre]` table of a setup file.
    pub fn from_setup(setup: &crate::setup::Setup) -> Result<Self, PlanError> {
        let raw = setup.fibre.as_ref().ok_or_else(|| PlanError::NoFibre {
            path: setup.path.clone(),
        })?;
        Self::from_table(raw, &setup.path, "fibre", &[])
    }

    /// Cross-section area, m^2.
    pub fn area(&self) -> f64 {
        section_area(&self.section.values())
    }

    /// Torsion constant from the given shear modulus, N m/rad.
    pub fn kappa(&self) -> f64 {
        kappa_of(
            self.shear_modulus.value,
            &self.section.values(),
            self.length.value,
        )
    }
}

/// Nominal cross-section dimensions: `[d]` for round wire, `[w, t]` for a ribbon.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SectionValues {
    Round(f64),
    Ribbon(f64, f64),
}

impl Section {
    pub fn values(&self) -> SectionValues {
        match self {
            Section::Round { diameter } => SectionValues::Round(diameter.value),
            Section::Ribbon { width, thickness } => {
                SectionValues::Ribbon(width.value, thickness.value)
            }
        }
    }
    /// Dimension names and measured values, for uncertainty budgets.
    pub fn inputs(&self) -> Vec<(&'static str, Measured)> {
        match self {
            Section::Round { diameter } => vec![("fibre diameter", *diameter)],
            Section::Ribbon { width, thickness } => {
                vec![("fibre width", *width), ("fibre thickness", *thickness)]
            }
        }
    }
    /// Rebuild nominal values from the numbers in the order of [`Section::inputs`].
    pub fn with_values(&self, v: &[f64]) -> SectionValues {
        match self {
            Section::Round { .. } => SectionValues::Round(v[0]),
            Section::Ribbon { .. } => SectionValues::Ribbon(v[0], v[1]),
        }
    }
    pub fn describe(&self) -> String {
        match self {
            Section::Round { diameter } => {
                format!("round wire, diameter {:.1} um", diameter.value * 1e6)
            }
            Section::Ribbon { width, thickness } => format!(
                "ribbon, {:.1} um x {:.1} um",
                width.value * 1e6,
                thickness.value * 1e6
            ),
        }
    }
}

/// Cross-section area, m^2.
pub fn section_area(s: &SectionValues) -> f64 {
    match *s {
        SectionValues::Round(d) => PI * d * d / 4.0,
        SectionValues::Ribbon(w, t) => w * t,
    }
}

/// Torsion constant `pi G r^4 / (2 l)` (round) or `k(w/t) G w t^3 / l` (ribbon), N m/rad.
pub fn kappa_of(shear_modulus: f64, s: &SectionValues, length: f64) -> f64 {
    shear_modulus * section_factor(s) / length
}

/// The section's torsion factor: `kappa = G_s * factor / l` (`pi r^4 / 2`, or Saint-Venant's
/// `k(w/t) w t^3` for a ribbon), m^4.
pub fn section_factor(s: &SectionValues) -> f64 {
    match *s {
        SectionValues::Round(d) => {
            let r = d / 2.0;
            PI * r.powi(4) / 2.0
        }
        SectionValues::Ribbon(w, t) => super::rect_torsion::torsion_constant(w, t),
    }
}
