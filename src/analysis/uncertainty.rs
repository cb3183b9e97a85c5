//! Propagation of uncertainty through a measurement model `y = f(x_1, ..., x_N)` with independent
//! inputs, two ways:
//! - first order, JCGM 100:2008 (GUM) section 5.1.2: `u_c^2(y) = sum (c_i u(x_i))^2` with sensitivity
//!   coefficients `c_i = df/dx_i` (here by central differences of step `u(x_i) / 100`, or a relative
//!   1e-6 for exact inputs, 1e-9 in SI units for exact zeros), reported as a budget (contribution `|c_i| u(x_i)` and share of `u_c^2`);
//! - Monte Carlo, JCGM 101:2008: `M` draws of Gaussian inputs pushed through `f`, reporting the mean,
//!   standard deviation and the probabilistically symmetric 95 % coverage interval (section 7.7).

use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, StandardNormal};

/// One input quantity of the model.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Input {
    pub name: String,
    pub value: f64,
    /// Standard uncertainty (Gaussian), same unit as `value`.
    pub u: f64,
    pub unit: String,
}

impl Input {
    pub fn new(name: &str, value: f64, u: f64, unit: &str) -> Self {
        Self {
            name: name.to_string(),
            value,
            u,
            unit: unit.to_string(),
        }
    }
}

/// A row of the uncertainty budget.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BudgetLine {
    pub input: String,
    pub value: f64,
    pub u: f64,
    pub unit: String,
    /// Sensitivity coefficient `df/dx`.
    pub sensitivity: f64,
    /// `|c| u`, in the output's unit.
    pub contribution: f64,
    /// Fraction of the combined variance, 0 to 1.
    pub share: f64,
}

/// The first-order result.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Gum {
    pub value: f64,
    pub u: f64,
    pub budget: Vec<BudgetLine>,
}

/// The Monte Carlo result.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MonteCarlo {
    pub draws: usize,
    pub mean: f64,
    pub u: f64,
    /// 2.5 % and 97.5 % quantiles.
    pub low95: f64,
    pub high95: f64,
    /// Draws for which the model gave a non-finite value (left out).
    pub rejected: usize,
}

/// Why a propagation failed.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum PropagationError {
    #[error("the model is not finite at the input values")]
    NotFinite,
    #[error("input {0} has a negative or non-finite uncertainty")]
    BadInput(String),
    #[error("fewer than half of the Monte Carlo draws gave a finite value")]
    MostlyRejected,
}

/// First-order propagation (GUM).
pub fn gum(inputs: &[Input], f: impl Fn(&[f64]) -> f64) -> Result<Gum, PropagationError> {
    for i in inputs {
        if !(i.u >= 0.0 && i.u.is_finite() && i.value.is_finite()) {
            return Err(PropagationError::BadInput(i.name.clone()));
        }
    }
    let x: Vec<f64> = inputs.iter().map(|i| i.value).collect();
    let y = f(&x);
    if !y.is_finite() {
        return Err(PropagationError::NotFinite);
    }
    let mut lines = Vec::with_capacity(inputs.len());
    let mut var = 0.0;
    for (k, inp) in inputs.iter().enumerate() {
        let h = if inp.u > 0.0 {
            inp.u / 100.0
        } else if inp.value != 0.0 {
            1e-6 * inp.value.abs()
        } else {
            1e-9
        };
        let mut xp = x.clone();
        xp[k] += h;
        let mut xm = x.clone();
        xm[k] -= h;
        let c = (f(&xp) - f(&xm)) / (2.0 * h);
        if !c.is_finite() {
            return Err(PropagationError::NotFinite);
        }
        let contribution = (c * inp.u).abs();
        var += contribution * contribution;
        lines.push(BudgetLine {
            input: inp.name.clone(),
            value: inp.value,
            u: inp.u,
            unit: inp.unit.clone(),
            sensitivity: c,
            contribution,
            share: 0.0,
        });
    }
    for l in &mut lines {
        l.share = if var > 0.0 {
            l.contribution * l.contribution / var
        } else {
            0.0
        };
    }
    Ok(Gum {
        value: y,
        u: var.sqrt(),
        budget: lines,
    })
}

/// Monte Carlo propagation (JCGM 101) with `draws` Gaussian draws, reproducible from `seed`.
pub fn monte_carlo(
    inputs: &[Input],
    f: impl Fn(&[f64]) -> f64,
    draws: usize,
    seed: u64,
) -> Result<MonteCarlo, PropagationError> {
    let mut rng = StdRng::seed_from_u64(seed);
    let mut ys = Vec::with_capacity(draws);
    let mut x = vec![0.0; inputs.len()];
    for _ in 0..draws {
        for (xi, inp) in x.iter_mut().zip(inputs) {
            let z: f64 = StandardNormal.sample(&mut rng);
            *xi = inp.value + inp.u * z;
        }
        let y = f(&x);
        if y.is_finite() {
            ys.push(y);
        }
    }
    let rejected = draws - ys.len();
    if ys.len() < draws.div_ceil(2) || ys.len() < 2 {
        return Err(PropagationError::MostlyRejected);
    }
    let n = ys.len() as f64;
    let mean = ys.iter().sum::<f64>() / n;
    let u = (ys.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    ys.sort_by(f64::total_cmp);
    let q = |p: f64| ys[((p * n).round() as usize).min(ys.len() - 1)];
    Ok(MonteCarlo {
        draws,
        mean,
        u,
        low95: q(0.025),
        high95: q(0.975),
        rejected,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn product_model_matches_the_gum_rule_for_products() {
        // JCGM 100:2008, 5.1.6: for y = x1 x2 / x3, (u_c/y)^2 = sum (u_i/x_i)^2.
        let inputs = [
            Input::new("a", 2.0, 0.02, ""),
            Input::new("b", 5.0, 0.1, ""),
            Input::new("c", 4.0, 0.04, ""),
        ];
        let f = |x: &[f64]| x[0] * x[1] / x[2];
        let g = gum(&inputs, f).unwrap();
        let rel = (0.01f64.powi(2) + 0.02f64.powi(2) + 0.01f64.powi(2)).sqrt();
        assert!((g.u / g.value / rel - 1.0).abs() < 1e-6);
        assert!((g.budget.iter().map(|l| l.share).sum::<f64>() - 1.0).abs() < 1e-12);
        let mc = monte_carlo(&inputs, f, 100_000, 7).unwrap();
        // Standard error of a standard deviation from 1e5 draws is about 0.2 %; allow 1 %.
        assert!((mc.u / g.u - 1.0).abs() < 0.01, "{} {}", mc.u, g.u);
        assert!(mc.low95 < g.value && g.value < mc.high95);
    }
}
