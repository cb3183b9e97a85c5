//! First-order propagation of uncorrelated standard uncertainties through a function of several inputs
//! (the GUM law of propagation, JCGM 100:2008 eq. 10), with the sensitivity coefficients found by central
//! differences.

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

/// Propagate `inputs` (name, measured value) through `f`.
pub fn propagate(inputs: &[(String, Measured)], f: impl Fn(&[f64]) -> f64) -> Propagated {
    let x: Vec<f64> = inputs.iter().map(|(_, m)| m.value).collect();
    let y = f(&x);
    let mut var = 0.0;
    let mut contributions = Vec::with_capacity(inputs.len());
    for (i, (name, m)) in inputs.iter().enumerate() {
        // Step: a small fraction of the value, or of the uncertainty for a zero value.
        let h = if m.value != 0.0 {
            1e-6 * m.value.abs()
        } else if m.u > 0.0 {
            1e-3 * m.u
        } else {
            contributions.push(Contribution {
                name: name.clone(),
                relative_sensitivity: 0.0,
                u_contribution: 0.0,
            });
            continue;
        };
        let mut xp = x.clone();
        let mut xm = x.clone();
        xp[i] += h;
        xm[i] -= h;
        let dy = (f(&xp) - f(&xm)) / (2.0 * h);
        let c = dy * m.u;
        var += c * c;
        let rel = if y != 0.0 && m.value != 0.0 {
            dy * m.value / y
        } else {
            0.0
        };
        contributions.push(Contribution {
            name: name.clone(),
            relative_sensitivity: rel,
            u_contribution: c.abs(),
        });
    }
    Propagated {
        value: Measured::new(y, var.sqrt()),
        contributions,
    }
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
        let p = propagate(&inputs, |x| 3.0 * x[0].powi(3) / x[1]);
        let rel: f64 = ((3.0_f64 * 0.01).powi(2) + 0.02_f64.powi(2)).sqrt();
        assert!((p.value.value - 4.8).abs() < 1e-12);
        assert!((p.value.relative() / rel - 1.0).abs() < 1e-6);
        assert!((p.contributions[0].relative_sensitivity - 3.0).abs() < 1e-6);
        assert!((p.contributions[1].relative_sensitivity + 1.0).abs() < 1e-6);
    }
}
