//! The material table against an independent relation between elastic constants.
//!
//! The table's values are from memory (see `src/plan/materials.rs`). As an outside check, for an
//! isotropic solid the shear modulus follows from Young's modulus and Poisson's ratio,
//! G = E / (2 (1 + nu)) (standard elasticity, common practice, no source); E and nu below are also
//! from memory of typical handbook figures, so each check allows 10 %.

use spotlever::plan::materials::{lookup, MATERIALS};

#[test]
fn shear_moduli_agree_with_young_modulus_and_poisson_ratio() {
    // (material, E in Pa, nu), from memory.
    let cases = [
        ("tungsten", 411e9, 0.28),
        ("music_wire", 207e9, 0.29),
        ("phosphor_bronze", 110e9, 0.34),
        ("copper", 120e9, 0.34),
        ("fused_silica", 72e9, 0.17),
    ];
    for (name, e, nu) in cases {
        let m = lookup(name).unwrap();
        let expected = e / (2.0 * (1.0 + nu));
        assert!(
            (m.shear_modulus / expected - 1.0).abs() < 0.10,
            "{name}: table {} vs E/(2(1+nu)) {expected}",
            m.shear_modulus
        );
    }
}

#[test]
fn densities_match_from_memory_values() {
    // From memory (g/cm^3): tungsten 19.3, steel 7.85, copper 8.96, fused silica 2.20, nylon 1.14.
    for (name, rho) in [
        ("tungsten", 19.3e3),
        ("music_wire", 7.85e3),
        ("copper", 8.96e3),
        ("fused_silica", 2.20e3),
        ("nylon_monofilament", 1.14e3),
    ] {
        assert!(
            (lookup(name).unwrap().density / rho - 1.0).abs() < 0.01,
            "{name}"
        );
    }
}

#[test]
fn every_material_is_sane_and_says_where_its_values_come_from() {
    for m in MATERIALS {
        assert!(
            m.shear_modulus > 1e8 && m.shear_modulus < 3e11,
            "{}",
            m.name
        );
        assert!(
            m.tensile_strength > 1e7 && m.tensile_strength < 1e10,
            "{}",
            m.name
        );
        assert!(m.density > 500.0 && m.density < 25_000.0, "{}", m.name);
        assert!(m.shear_modulus_rel_u > 0.0);
        assert!(!m.source.is_empty());
    }
    // Names are found however they are written.
    assert_eq!(lookup("Music Wire").unwrap().name, "music_wire");
    assert_eq!(lookup("fused-silica").unwrap().name, "fused_silica");
}
