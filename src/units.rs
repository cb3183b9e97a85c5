//! Quantities that carry their meaning: times, lengths, angles, and measured values with a standard
//! uncertainty, plus the parser for the setup files' `"14.6 ± 0.05 g"` notation.
//!
//! Everything inside the library is SI (seconds, metres, kilograms, radians) unless a type's name says
//! otherwise (`Millimetres` for screen coordinates, pixels for image coordinates).

use serde::{Deserialize, Serialize};
use std::fmt;
use thiserror::Error;

/// A time in seconds since the start of a run.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
pub struct Seconds(pub f64);

/// A length on the screen, in millimetres.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
pub struct Millimetres(pub f64);

/// An angle in radians.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
pub struct Radians(pub f64);

/// A point in image coordinates, pixels; x to the right, y down, pixel centres at integers.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct PixelPoint {
    pub x: f64,
    pub y: f64,
}

/// A point on the screen in millimetres, in the calibration's frame (x along the scale).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ScreenPoint {
    pub x_mm: f64,
    pub y_mm: f64,
}

/// A value with its standard uncertainty (one standard deviation, GUM "u"), in SI units.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Measured {
    pub value: f64,
    pub u: f64,
}

impl Measured {
    pub fn new(value: f64, u: f64) -> Self {
        Self { value, u }
    }
    /// A value given without an uncertainty.
    pub fn exact(value: f64) -> Self {
        Self { value, u: 0.0 }
    }
    /// Relative standard uncertainty u/|value| (infinite for a zero value).
    pub fn relative(&self) -> f64 {
        self.u / self.value.abs()
    }
}

impl fmt::Display for Measured {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} ± {}", self.value, self.u)
    }
}

/// The physical dimension a setup-file quantity must have.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dimension {
    Mass,
    Length,
    Time,
    /// Moment of inertia, kg m^2.
    Inertia,
    /// Stress or modulus, Pa.
    Pressure,
    /// Density, kg m^-3.
    Density,
    /// Torsion constant, N m rad^-1.
    TorsionConstant,
    Dimensionless,
}

impl Dimension {
    fn units(self) -> &'static [(&'static str, f64)] {
        match self {
            Dimension::Mass => &[("kg", 1.0), ("g", 1e-3), ("mg", 1e-6)],
            Dimension::Length => &[
                ("m", 1.0),
                ("cm", 1e-2),
                ("mm", 1e-3),
                ("um", 1e-6),
                ("µm", 1e-6),
            ],
            Dimension::Time => &[("s", 1.0), ("ms", 1e-3), ("min", 60.0), ("h", 3600.0)],
            Dimension::Inertia => &[
                ("kg m^2", 1.0),
                ("kg m2", 1.0),
                ("g cm^2", 1e-7),
                ("g mm^2", 1e-9),
                ("kg mm^2", 1e-6),
            ],
            Dimension::Pressure => &[("Pa", 1.0), ("kPa", 1e3), ("MPa", 1e6), ("GPa", 1e9)],
            Dimension::Density => &[
                ("kg m^-3", 1.0),
                ("kg/m^3", 1.0),
                ("g cm^-3", 1e3),
                ("g/cm^3", 1e3),
            ],
            Dimension::TorsionConstant => &[("N m/rad", 1.0), ("N m rad^-1", 1.0), ("N m", 1.0)],
            Dimension::Dimensionless => &[("", 1.0)],
        }
    }

    /// The accepted unit spellings, for error messages.
    pub fn unit_list(self) -> String {
        self.units()
            .iter()
            .map(|(u, _)| if u.is_empty() { "(none)" } else { u })
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// What was wrong with a quantity's text.
#[derive(Debug, Error, PartialEq)]
pub enum QuantityError {
    #[error(
        "cannot read a number in {text:?}: write it as \"14.6 ± 0.05 g\" (or \"14.6 +/- 0.05 g\")"
    )]
    NotANumber { text: String },
    #[error("unknown unit {unit:?} in {text:?}; accepted units: {accepted}")]
    UnknownUnit {
        text: String,
        unit: String,
        accepted: String,
    },
    #[error("the uncertainty in {text:?} is negative or not finite")]
    BadUncertainty { text: String },
}

/// Parse `"value [± u] unit"` (also `+/-`) into SI units of `dim`.
///
/// Returns the measured value and whether an uncertainty was written (a missing one is zero, and the
/// caller should warn about it).
pub fn parse_quantity(text: &str, dim: Dimension) -> Result<(Measured, bool), QuantityError> {
    let t = text.trim();
    let t_norm = t.replace("+/-", "±").replace("+-", "±");
    let (num_part, unit_part, has_u, u_txt) = if let Some((a, b)) = t_norm.split_once('±') {
        let b = b.trim();
        let split = b
            .find(|c: char| {
                !(c.is_ascii_digit() || c == '.' || c == 'e' || c == 'E' || c == '-' || c == '+')
            })
            .unwrap_or(b.len());
        let (u_txt, unit) = b.split_at(split);
        (
            a.trim().to_string(),
            unit.trim().to_string(),
            true,
            u_txt.trim().to_string(),
        )
    } else {
        let split = t_norm
            .find(|c: char| {
                !(c.is_ascii_digit() || c == '.' || c == 'e' || c == 'E' || c == '-' || c == '+')
            })
            .unwrap_or(t_norm.len());
        let (n, unit) = t_norm.split_at(split);
        (
            n.trim().to_string(),
            unit.trim().to_string(),
            false,
            String::new(),
        )
    };
    let value: f64 = num_part
        .parse()
        .ok()
        .filter(|v: &f64| v.is_finite())
        .ok_or_else(|| QuantityError::NotANumber {
            text: t.to_string(),
        })?;
    let u: f64 = if has_u {
        let u: f64 = u_txt.parse().map_err(|_| QuantityError::NotANumber {
            text: t.to_string(),
        })?;
        if !(u.is_finite() && u >= 0.0) {
            return Err(QuantityError::BadUncertainty {
                text: t.to_string(),
            });
        }
        u
    } else {
        0.0
    };
    let unit_norm = unit_part.split_whitespace().collect::<Vec<_>>().join(" ");
    let factor = dim
        .units()
        .iter()
        .find(|(name, _)| *name == unit_norm)
        .map(|(_, f)| *f)
        .ok_or_else(|| QuantityError::UnknownUnit {
            text: t.to_string(),
            unit: unit_norm.clone(),
            accepted: dim.unit_list(),
        })?;
    Ok((Measured::new(value * factor, u * factor), has_u))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_value_uncertainty_unit() {
        let (m, has_u) = parse_quantity("14.6 ± 0.05 g", Dimension::Mass).unwrap();
        assert!((m.value - 0.0146).abs() < 1e-15 && (m.u - 5e-5).abs() < 1e-15 && has_u);
        let (m, _) = parse_quantity("46.5 +/- 0.1 mm", Dimension::Length).unwrap();
        assert!((m.value - 0.0465).abs() < 1e-15 && (m.u - 1e-4).abs() < 1e-15);
        let (m, has_u) = parse_quantity("1.5 kg", Dimension::Mass).unwrap();
        assert_eq!((m.value, m.u, has_u), (1.5, 0.0, false));
        let (m, _) = parse_quantity("2 min", Dimension::Time).unwrap();
        assert_eq!(m.value, 120.0);
        let (m, _) = parse_quantity("1.2e-7 ± 1e-9 kg m^2", Dimension::Inertia).unwrap();
        assert_eq!(m.value, 1.2e-7);
    }

    #[test]
    fn rejects_bad_text_and_units() {
        assert!(matches!(
            parse_quantity("abc g", Dimension::Mass),
            Err(QuantityError::NotANumber { .. })
        ));
        let e = parse_quantity("3 furlongs", Dimension::Length).unwrap_err();
        assert!(e.to_string().contains("furlongs") && e.to_string().contains("mm"));
        assert!(parse_quantity("3 ± -1 g", Dimension::Mass).is_err());
        assert!(parse_quantity("NaN g", Dimension::Mass).is_err());
    }
}
