//! First-order propagation of uncorrelated standard uncertainties through a function of several inputs
//! (the GUM law of propagation, JCGM 100:2008 eq. 10, computed by [`crate::analysis::uncertainty::gum`]),
//! reported with each input's relative sensitivity d ln y / d ln x.

use crate::analysis::uncertainty::{gum, Input};
use crate::plan::PlanError;
use crate::units::Measured;

/// One input's share of an output's uncertainty.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Contribution {
    pub name: String,
    /// d ln y / d ln x: the relative change of the output per relative change of this input.
    pub relative_sensitivity: f64,
    /// |dy/dx| u(x), in the output's units.
    pub u_contribution: f64,
}

/// The output's value and standard uncertainty plus each input's contribution.
#[derive(Debug, Clone, PartialEq)]
pub struct Propagated {
    pub value: Measured,
    pub contributions: Vec<Contribution>,
}

/// Propagate `inputs` (name, measured value) through `f` with the analyzer's first-order GUM
/// propagation, adding each input's relative sensitivity.
pub fn propagate(
    inputs: &[(String, Measured)],
    f: impl Fn(&[f64]) -> f64,
) -> Result<Propagated, PlanError> {
    let list: Vec<Input> = inputs
        .iter()
        .map(|(n, m)| Input::new(n, m.value, m.u, ""))
        .collect();
    let g = gum(&list, f).map_err(PlanError::Propagation)?;
    let contributions = g
        .budget
        .iter()
        .map(|l| Contribution {
            name: l.input.clone(),
            relative_sensitivity: if g.value != 0.0 && l.value != 0.0 {
                l.sensitivity * l.value / g.value
            } else {
                0.0
            },
            u_contribution: l.contribution,
        })
        .collect();
    Ok(Propagated {
        value: Measured::new(g.value, g.u),
        contributions,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn product_of_powers_follows_the_relative_rule() {
        // JCGM 100:2008 eq. 12: for y = c x1^p1 x2^p2, (u_y/y)^2 = sum (p_i u_i / x_i)^2.
        let inputs = vec![
            ("a".to_string(), Measured::new(2.0, 0.02)),
            ("b".to_string(), Measured::new(5.0, 0.1)),
        ];
        let p = propagate(&inputs, |x| 3.0 * x[0].powi(3) / x[1]).unwrap();
        let rel: f64 = ((3.0_f64 * 0.01).powi(2) + 0.02_f64.powi(2)).sqrt();
        assert!((p.value.value - 4.8).abs() < 1e-12);
        assert!((p.value.relative() / rel - 1.0).abs() < 1e-6);
        assert!((p.contributions[0].relative_sensitivity - 3.0).abs() < 1e-6);
        assert!((p.contributions[1].relative_sensitivity + 1.0).abs() < 1e-6);
    }
}
