//! Check values from outside the project: the damped-sinusoid fit against scipy.optimize.curve_fit and
//! the spectrum peak against numpy.fft, on the same committed trace. The reference numbers come from
//! tests/check-values/scipy_damped_fit.py and numpy_fft.py (committed with their outputs; each script
//! says how to install its dependencies and rerun it).

use spotlever::analysis::damped::fit_damped;
use spotlever::analysis::period::{spectrum, SpectrumOptions};
use spotlever::physics::G_CODATA_2018;

const DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/check-values");

fn trace() -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(format!("{DIR}/damped_trace.csv")).unwrap();
    text.lines()
        .skip(1)
        .map(|l| {
            let (a, b) = l.split_once(',').unwrap();
            (a.parse::<f64>().unwrap(), b.parse::<f64>().unwrap())
        })
        .unzip()
}

fn json(name: &str) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(format!("{DIR}/{name}")).unwrap()).unwrap()
}

#[test]
fn damped_fit_matches_scipy_curve_fit() {
    // Reference: scipy.optimize.curve_fit (scipy 1.17.1), pcov with absolute_sigma=False.
    let (t, y) = trace();
    let r = json("scipy_damped_fit.json");
    let p: Vec<f64> = r["params"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let u: Vec<f64> = r["u"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let t0 = r["t0"].as_f64().unwrap();
    let tm = r["t_mid"].as_f64().unwrap();
    let f = fit_damped(&t, &y, t0, tm, p[4] * 1.01, true).unwrap();
    for k in 0..6 {
        // Both find the same least-squares minimum: parameters agree to a thousandth of their
        // uncertainty, and the white-noise uncertainties (same formula) to 0.1 %. The trace's noise
        // is white, so any widening for correlated residuals stays within chance (a few percent).
        let white = f.white_cov[k][k].sqrt();
        assert!(
            (f.params[k] - p[k]).abs() <= 1e-3 * u[k],
            "param {k}: {} vs scipy {}",
            f.params[k],
            p[k]
        );
        assert!(
            (white / u[k] - 1.0).abs() <= 1e-3,
            "u {k}: {white} vs scipy {}",
            u[k]
        );
        assert!(
            (f.u(k) / u[k] - 1.0).abs() <= 0.1,
            "u {k} allowing for correlation: {} vs white {}",
            f.u(k),
            u[k]
        );
    }
}

#[test]
fn spectrum_peak_matches_numpy_fft() {
    // Reference: numpy.fft.rfft (numpy 2.4.6) with the same detrending, window and padding.
    let (t, y) = trace();
    let r = json("numpy_fft.json");
    let s = spectrum(&t, &y, &SpectrumOptions::default()).unwrap();
    let nfft = r["nfft"].as_u64().unwrap() as usize;
    assert_eq!(s.freq_hz.len(), nfft / 2 + 1);
    let peak = r["peak_hz"].as_f64().unwrap();
    assert!(
        (s.peak_hz / peak - 1.0).abs() < 1e-9,
        "{} vs numpy {peak}",
        s.peak_hz
    );
    let kb = r["peak_bin"].as_u64().unwrap() as usize;
    for (bin, key) in [(kb, "magnitude_at_peak_bin"), (100, "magnitude_at_bin_100")] {
        let m = r[key].as_f64().unwrap();
        assert!(
            (s.magnitude[bin] / m - 1.0).abs() < 1e-9,
            "bin {bin}: {} vs {m}",
            s.magnitude[bin]
        );
    }
    // And the interpolated peak lies within 1 % of the trace's true damped frequency 1/480 Hz
    // (the generating script's value).
    assert!((s.peak_hz * 480.0 - 1.0).abs() < 0.01, "{}", s.peak_hz);
}

#[test]
fn codata_2018_value_of_g() {
    // CODATA 2018 recommended value: G = 6.674 30(15) x 10^-11 m^3 kg^-1 s^-2.
    assert_eq!(G_CODATA_2018, 6.674_30e-11);
    assert_eq!(spotlever::physics::G_CODATA_2018_U, 0.000_15e-11);
}
