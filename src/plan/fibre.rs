//! A torsion fibre: material, cross-section (round wire or thin ribbon) and free length, read from a TOML
//! table of `"value ± u unit"` strings, with its torsion constant and load-bearing area.
//!
//! Torsion constants (common practice, no source; elastic torsion of a uniform bar):
//! round wire of radius r: `kappa = pi G_s r^4 / (2 l)`; thin ribbon of width w and thickness t (w >> t):
//! `kappa = G_s w t^3 / (3 l)`.

use crate::plan::materials::{self, Material};
use crate::plan::PlanError;
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

struct TableReader<'a> {
    path: &'a Path,
    table: &'a str,
    raw: &'a BTreeMap<String, toml::Value>,
    without_u: Vec<String>,
}

impl TableReader<'_> {
    fn err(&self, message: String) -> PlanError {
        PlanError::Fibre {
            path: self.path.to_path_buf(),
            table: self.table.to_string(),
            message,
        }
    }
    fn text(&self, key: &str) -> Result<Option<&str>, PlanError> {
        match self.raw.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) => Ok(Some(s.as_str())),
            Some(other) => Err(self.err(format!(
                "{key} must be a quoted string such as \"30 ± 1 um\" (got {other})"
            ))),
        }
    }
    fn quantity(&mut self, key: &str, dim: Dimension) -> Result<Option<Measured>, PlanError> {
        let Some(t) = self.text(key)?.map(str::to_string) else {
            return Ok(None);
        };
        let t = t.as_str();
        let (m, has_u) = parse_quantity(t, dim).map_err(|e| self.err(format!("{key}: {e}")))?;
        if !has_u {
            self.without_u.push(format!("{}.{key}", self.table));
        }
        if m.value <= 0.0 {
            return Err(self.err(format!(
                "{key} must be greater than zero (got {t:?}); dimensions and material values are positive"
            )));
        }
        Ok(Some(m))
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
        if let Some(k) = raw
            .keys()
            .find(|k| !FIBRE_KEYS.contains(&k.as_str()) && !allowed_extra.contains(&k.as_str()))
        {
            let mut all: Vec<&str> = FIBRE_KEYS.to_vec();
            all.extend_from_slice(allowed_extra);
            return Err(r.err(format!(
                "unknown key {k:?}; accepted keys: {}",
                all.join(", ")
            )));
        }
        let name = r
            .text("material")?
            .ok_or_else(|| {
                r.err(format!(
                    "material is missing; known materials: {}",
                    materials::known_names()
                ))
            })?
            .to_string();
        let base: &Material = materials::lookup(&name).map_err(|e| r.err(e.to_string()))?;
        use Dimension::*;
        let diameter = r.quantity("diameter", Length)?;
        let width = r.quantity("width", Length)?;
        let thickness = r.quantity("thickness", Length)?;
        let section = match (diameter, width, thickness) {
            (Some(d), None, None) => Section::Round { diameter: d },
            (None, Some(w), Some(t)) => {
                if t.value > w.value {
                    return Err(r.err(format!(
                        "a ribbon's thickness ({:.3e} m) is larger than its width ({:.3e} m); swap them",
                        t.value, w.value
                    )));
                }
                Section::Ribbon {
                    width: w,
                    thickness: t,
                }
            }
            (Some(_), _, _) => {
                return Err(r.err(
                    "give either diameter (round wire) or width and thickness (ribbon), not both"
                        .into(),
                ))
            }
            (None, Some(_), None) | (None, None, Some(_)) => {
                return Err(r.err("a ribbon needs both width and thickness".into()))
            }
            (None, None, None) => {
                return Err(r.err(
                    "the cross-section is missing: give diameter (round wire) or width and thickness (ribbon)"
                        .into(),
                ))
            }
        };
        let length = r
            .quantity("length", Length)?
            .ok_or_else(|| r.err("length (the free, twisting length) is missing".into()))?;
        let mut overridden = Vec::new();
        let shear_modulus = match r.quantity("shear_modulus", Pressure)? {
            Some(g) => {
                overridden.push("shear_modulus".to_string());
                g
            }
            None => Measured::new(
                base.shear_modulus,
                base.shear_modulus * base.shear_modulus_rel_u,
            ),
        };
        let tensile_strength = match r.quantity("tensile_strength", Pressure)? {
            Some(s) => {
                overridden.push("tensile_strength".to_string());
                s.value
            }
            None => base.tensile_strength,
        };
        let density = match r.quantity("density", Density)? {
            Some(s) => {
                overridden.push("density".to_string());
                s.value
            }
            None => base.density,
        };
        let load_mass = r.quantity("load_mass", Mass)?;
        Ok(Fibre {
            material: base.name.to_string(),
            section,
            length,
            shear_modulus,
            tensile_strength,
            density,
            load_mass,
            overridden,
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

/// Torsion constant `pi G r^4 / (2 l)` (round) or `G w t^3 / (3 l)` (thin ribbon), N m/rad.
pub fn kappa_of(shear_modulus: f64, s: &SectionValues, length: f64) -> f64 {
    shear_modulus * section_factor(s) / length
}

/// The section's torsion factor: `kappa = G_s * factor / l` (`pi r^4 / 2` or `w t^3 / 3`), m^4.
pub fn section_factor(s: &SectionValues) -> f64 {
    match *s {
        SectionValues::Round(d) => {
            let r = d / 2.0;
            PI * r.powi(4) / 2.0
        }
        SectionValues::Ribbon(w, t) => w * t.powi(3) / 3.0,
    }
}
