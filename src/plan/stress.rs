//! The tensile stress a hung load puts on a fibre, against the fibre's safe working limit.
//!
//! The load's weight plus the fibre's own weight, over the load-bearing cross-section, at the standard
//! acceleration of gravity. The safe limit is [`MAX_LOAD_FRACTION`] of the material's tensile strength
//! (common practice, no source: a factor of two below the breaking stress, since drawn fibres vary
//! along their length, kinks and clamps concentrate stress, and a fibre that breaks drops the beam).

use crate::plan::fibre::{section_area, Fibre};
pub use crate::plan::predict::{MAX_LOAD_FRACTION, STANDARD_GRAVITY};

/// What a load does to a fibre.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct StressCheck {
    /// Total mass hanging from the top clamp (load plus the fibre itself), kg.
    pub load_kg: f64,
    /// Tensile stress at the top of the fibre, Pa.
    #[serde(rename = "stress_Pa")]
    pub stress_pa: f64,
    /// The material's tensile strength (table or overridden), Pa.
    #[serde(rename = "tensile_strength_Pa")]
    pub tensile_strength_pa: f64,
    /// Tensile strength over stress.
    pub safety_factor: f64,
    /// The stress is above the safe working limit.
    pub overloaded: bool,
}

/// The stress of `hung_kg` (everything below the fibre) plus the fibre's own mass.
pub fn check_load(fibre: &Fibre, hung_kg: f64) -> StressCheck {
    let area = section_area(&fibre.section.values());
    let load_kg = hung_kg + fibre.density * area * fibre.length.value;
    let stress_pa = load_kg * STANDARD_GRAVITY / area;
    StressCheck {
        load_kg,
        stress_pa,
        tensile_strength_pa: fibre.tensile_strength,
        safety_factor: fibre.tensile_strength / stress_pa,
        overloaded: stress_pa > MAX_LOAD_FRACTION * fibre.tensile_strength,
    }
}

impl StressCheck {
    /// The warning to print when the load is above the safe limit, naming the trial or fibre.
    pub fn warning(&self, name: &str) -> Option<String> {
        self.overloaded.then(|| {
            format!(
                "{name}: FIBRE OVERLOADED: {:.1} g pulls {:.0} MPa, more than {:.0} % of the tensile strength ({:.0} MPa, safety factor {:.2}); the fibre may break and drop the load: use a thicker fibre or a lighter load",
                self.load_kg * 1e3,
                self.stress_pa / 1e6,
                MAX_LOAD_FRACTION * 100.0,
                self.tensile_strength_pa / 1e6,
                self.safety_factor
            )
        })
    }
}
