//! The damped-sinusoid fit against the Cramér–Rao bound: over many white-noise traces the spread of the
//! fitted period and equilibrium must come within 15 % of the bound set by the model's Fisher
//! information (computed here from the model's own derivatives), and the fit's stated uncertainties
//! must match the observed spread within 15 %.
//!
//! For a model x(t; p) with white Gaussian noise of standard deviation sigma, the Fisher information is
//! F = J^T J / sigma^2 with J_ik = dx(t_i)/dp_k, and no unbiased estimator beats cov = F^-1
//! (Cramér–Rao bound; textbook statistics, e.g. Kay, "Fundamentals of Statistical Signal Processing",
//! vol. 1, ch. 3 — from memory). Least squares attains it asymptotically.

use nalgebra::{DMatrix, DVector};
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use spotlever::analysis::damped::{fit_damped, model, GAMMA, OMEGA, X_EQ};

const RUNS: usize = 300;

/// Analytic derivatives of the model with respect to [x_eq, a, b, gamma, omega, c].
fn jacobian(p: &[f64; 6], t: &[f64], t0: f64, tm: f64) -> DMatrix<f64> {
    let mut j = DMatrix::zeros(t.len(), 6);
    for (i, &tt) in t.iter().enumerate() {
        let s = tt - t0;
        let e = (-p[3] * s).exp();
        let (sn, cs) = (p[4] * s).sin_cos();
        j[(i, 0)] = 1.0;
        j[(i, 1)] = e * cs;
        j[(i, 2)] = e * sn;
        j[(i, 3)] = -s * e * (p[1] * cs + p[2] * sn);
        j[(i, 4)] = s * e * (-p[1] * sn + p[2] * cs);
        j[(i, 5)] = tt - tm;
    }
    j
}

fn std_dev(v: &[f64]) -> f64 {
    let m = v.iter().sum::<f64>() / v.len() as f64;
    (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len() as f64 - 1.0)).sqrt()
}

fn rms(v: &[f64]) -> f64 {
    (v.iter().map(|x| x * x).sum::<f64>() / v.len() as f64).sqrt()
}

#[test]
fn period_and_equilibrium_spread_meet_the_cramer_rao_bound() {
    // Three periods of 500 s sampled every 2 s, damping time 2000 s, a drift, noise 2 % of amplitude.
    let truth = [
        1.5e-3,
        2.0e-3,
        -1.0e-3,
        1.0 / 2000.0,
        2.0 * std::f64::consts::PI / 500.0,
        2e-9,
    ];
    let (t0, t_end, dt, sigma) = (0.0, 1500.0, 2.0, 5e-5);
    let t: Vec<f64> = (0..=((t_end - t0) / dt) as usize)
        .map(|k| t0 + k as f64 * dt)
        .collect();
    let tm = 0.5 * (t[0] + t[t.len() - 1]);
    let clean: Vec<f64> = t.iter().map(|&tt| model(&truth, t0, tm, tt)).collect();

    // Fisher information and the bounds.
    let j = jacobian(&truth, &t, t0, tm);
    let fisher = j.transpose() * &j / (sigma * sigma);
    let crb = fisher.try_inverse().expect("Fisher matrix invertible");
    let (g, w) = (truth[GAMMA], truth[OMEGA]);
    let w0 = (w * w + g * g).sqrt();
    // T0 = 2 pi / sqrt(w^2 + g^2): gradient with respect to (gamma, omega).
    let mut grad = DVector::zeros(6);
    grad[GAMMA] = -2.0 * std::f64::consts::PI * g / w0.powi(3);
    grad[OMEGA] = -2.0 * std::f64::consts::PI * w / w0.powi(3);
    let crb_period = (grad.transpose() * &crb * &grad)[(0, 0)].sqrt();
    let crb_eq = crb[(X_EQ, X_EQ)].sqrt();

    let normal = Normal::new(0.0, sigma).unwrap();
    let mut rng = StdRng::seed_from_u64(4242);
    let (mut periods, mut eqs, mut u_periods, mut u_eqs) = (vec![], vec![], vec![], vec![]);
    for _ in 0..RUNS {
        let y: Vec<f64> = clean.iter().map(|c| c + normal.sample(&mut rng)).collect();
        // Start 1 % off, as a spectrum's guess would be.
        let f = fit_damped(&t, &y, t0, tm, truth[OMEGA] * 1.01, true).expect("fit converges");
        let (w0f, uw0) = f.omega0();
        periods.push(2.0 * std::f64::consts::PI / w0f);
        u_periods.push(2.0 * std::f64::consts::PI * uw0 / (w0f * w0f));
        eqs.push(f.params[X_EQ]);
        u_eqs.push(f.u(X_EQ));
    }
    let (sp, se) = (std_dev(&periods), std_dev(&eqs));
    let (up, ue) = (rms(&u_periods), rms(&u_eqs));
    eprintln!(
        "period: spread {sp:.4e} s, CRB {crb_period:.4e} s, ratio {:.3}; stated/observed {:.3}",
        sp / crb_period,
        up / sp
    );
    eprintln!(
        "equilibrium: spread {se:.4e} rad, CRB {crb_eq:.4e} rad, ratio {:.3}; stated/observed {:.3}",
        se / crb_eq,
        ue / se
    );
    assert!(
        sp <= 1.15 * crb_period,
        "period spread {sp} vs bound {crb_period}"
    );
    assert!(
        se <= 1.15 * crb_eq,
        "equilibrium spread {se} vs bound {crb_eq}"
    );
    assert!(
        (up / sp - 1.0).abs() <= 0.15,
        "stated u(T) {up} vs spread {sp}"
    );
    assert!(
        (ue / se - 1.0).abs() <= 0.15,
        "stated u(eq) {ue} vs spread {se}"
    );
}
