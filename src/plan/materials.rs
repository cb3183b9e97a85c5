//! Fibre materials: shear modulus, tensile strength and density of the usual torsion-fibre materials.
//!
//! Every value here is **from memory** of typical room-temperature handbook figures for drawn wire or
//! fibre (not checked against a printed table while writing). Real fibres differ: fine drawn wire is
//! much stronger than bulk metal, annealing lowers strength, and polymers creep and change with humidity.
//! The stated relative uncertainties say how far a given spool may plausibly differ; measure your own
//! fibre with `spotlever fibre` and override the values in the setup file when you can.

use thiserror::Error;

/// One material's properties, SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Material {
    /// The name used in setup files (lower case, underscores).
    pub name: &'static str,
    /// Shear modulus, Pa.
    pub shear_modulus: f64,
    /// Relative standard uncertainty of the shear modulus for an unmeasured spool.
    pub shear_modulus_rel_u: f64,
    /// Ultimate tensile strength, Pa.
    pub tensile_strength: f64,
    /// Density, kg m^-3.
    pub density: f64,
    /// Where the values come from.
    pub source: &'static str,
}

const FROM_MEMORY: &str =
    "from memory (typical handbook values, not checked against a printed table)";

/// The built-in table.
pub const MATERIALS: &[Material] = &[
    Material {
        name: "tungsten",
        shear_modulus: 161e9,
        shear_modulus_rel_u: 0.03,
        // Drawn fine wire; bulk tungsten is far weaker (about 1 GPa).
        tensile_strength: 2.5e9,
        density: 19_300.0,
        source: FROM_MEMORY,
    },
    Material {
        name: "music_wire",
        shear_modulus: 80e9,
        shear_modulus_rel_u: 0.03,
        tensile_strength: 2.2e9,
        density: 7_850.0,
        source: FROM_MEMORY,
    },
    Material {
        name: "phosphor_bronze",
        shear_modulus: 42e9,
        shear_modulus_rel_u: 0.05,
        tensile_strength: 0.7e9,
        density: 8_860.0,
        source: FROM_MEMORY,
    },
    Material {
        name: "copper",
        shear_modulus: 46e9,
        shear_modulus_rel_u: 0.05,
        // Hard-drawn; annealed copper is about 0.22 GPa.
        tensile_strength: 0.35e9,
        density: 8_960.0,
        source: FROM_MEMORY,
    },
    Material {
        name: "fused_silica",
        shear_modulus: 31e9,
        shear_modulus_rel_u: 0.03,
        // Practical drawn fibre with surface flaws; pristine fibre is several times stronger.
        tensile_strength: 1.0e9,
        density: 2_200.0,
        source: FROM_MEMORY,
    },
    Material {
        name: "nylon_monofilament",
        shear_modulus: 1.0e9,
        shear_modulus_rel_u: 0.3,
        tensile_strength: 0.6e9,
        density: 1_140.0,
        source: FROM_MEMORY,
    },
];

/// The names of the built-in materials, comma separated.
pub fn known_names() -> String {
    MATERIALS
        .iter()
        .map(|m| m.name)
        .collect::<Vec<_>>()
        .join(", ")
}

/// A material name the built-in table does not hold.
#[derive(Debug, Clone, PartialEq, Error)]
#[error("unknown fibre material {name:?}; known materials: {known} (or give shear_modulus and tensile_strength yourself with one of these as the base)")]
pub struct UnknownMaterial {
    /// The name as written.
    pub name: String,
    /// The known names, comma separated.
    pub known: String,
}

/// Look a material up by name (case-insensitive; spaces and dashes count as underscores).
pub fn lookup(name: &str) -> Result<&'static Material, UnknownMaterial> {
    let key = name.trim().to_lowercase().replace([' ', '-'], "_");
    MATERIALS
        .iter()
        .find(|m| m.name == key)
        .ok_or_else(|| UnknownMaterial {
            name: name.to_string(),
            known: known_names(),
        })
}
