//! Safety notes printed with every plan (and in the README).

/// The cautions, one paragraph each.
pub const CAUTIONS: &[&str] = &[
    "Laser: use a Class 2 (or lower) laser. Never look into the beam or its reflections (the mirror sends it across the room); keep the whole beam path below eye level and block it beyond the screen.",
    "Heavy masses: kilogram spheres are a crush hazard for fingers and feet. Secure them on a stable mount that cannot tip or roll, move them slowly, and keep them clear of the fibre.",
    "Lead: wear gloves when handling lead spheres, wash your hands afterwards, and keep food and drink away from the bench.",
    "These notes do not replace your local safety rules: follow them and work under qualified supervision.",
];
