//! Point-pair calibration: agreement with a reference implementation, accuracy under pixel noise against
//! the expectation derived from that noise, outlier rejection, and bad input.

use nalgebra::{DMatrix, Matrix3, Vector3};
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use spotlever::calib::homography::{fit_all, fit_robust, PointPair, RobustOptions};
use spotlever::calib::pairs::{pairs_to_csv, parse_pairs};
use spotlever::calib::CalibError;
use spotlever::units::{PixelPoint, ScreenPoint};
use std::path::Path;

fn proj(g: &Matrix3<f64>, x: f64, y: f64) -> (f64, f64) {
    let v = g * Vector3::new(x, y, 1.0);
    (v.x / v.z, v.y / v.z)
}

/// Screen (mm, y up) to image (px, y down) for a pinhole camera tilted about x and y.
fn camera(f: f64, tilt_x_deg: f64, tilt_y_deg: f64, dist_mm: f64) -> Matrix3<f64> {
    let (ax, ay) = (tilt_x_deg.to_radians(), tilt_y_deg.to_radians());
    let rx = Matrix3::new(
        1.0,
        0.0,
        0.0,
        0.0,
        ax.cos(),
        -ax.sin(),
        0.0,
        ax.sin(),
        ax.cos(),
    );
    let ry = Matrix3::new(
        ay.cos(),
        0.0,
        ay.sin(),
        0.0,
        1.0,
        0.0,
        -ay.sin(),
        0.0,
        ay.cos(),
    );
    let r = ry * rx;
    let k = Matrix3::new(f, 0.0, 640.0, 0.0, f, 360.0, 0.0, 0.0, 1.0);
    let m = Matrix3::from_columns(&[
        r.column(0).into_owned(),
        -r.column(1).into_owned(),
        Vector3::new(3.0, -2.0, dist_mm),
    ]);
    let g = k * m;
    g / g[(2, 2)]
}

fn pairs_from(g: &Matrix3<f64>, mm: &[(f64, f64)], noise: &[(f64, f64)]) -> Vec<PointPair> {
    mm.iter()
        .zip(noise)
        .enumerate()
        .map(|(i, (&(x, y), &(nx, ny)))| {
            let (u, v) = proj(g, x, y);
            PointPair {
                pixel: PixelPoint {
                    x: u + nx,
                    y: v + ny,
                },
                screen: ScreenPoint { x_mm: x, y_mm: y },
                label: format!("line {}", i + 2),
            }
        })
        .collect()
}

#[derive(serde::Deserialize)]
struct RefFile {
    source: String,
    cases: Vec<RefCase>,
}

#[derive(serde::Deserialize)]
struct RefCase {
    name: String,
    pairs: Vec<[f64; 4]>,
    probe_mm: Vec<[f64; 2]>,
    probe_px: Vec<[f64; 2]>,
}

/// Check values from OpenCV `findHomography` (method 0), written by
/// tests/check-values/opencv_homography.py with the opencv-python-headless wheel.
#[test]
fn least_squares_fit_agrees_with_opencv_find_homography() {
    let text = include_str!("check-values/opencv_homography.json");
    let refs: RefFile = serde_json::from_str(text).unwrap();
    assert!(refs.source.contains("findHomography"));
    assert!(refs.cases.len() >= 4);
    for c in &refs.cases {
        let pairs: Vec<PointPair> = c
            .pairs
            .iter()
            .enumerate()
            .map(|(i, p)| PointPair {
                pixel: PixelPoint { x: p[0], y: p[1] },
                screen: ScreenPoint {
                    x_mm: p[2],
                    y_mm: p[3],
                },
                label: format!("pair {i}"),
            })
            .collect();
        let fit = fit_all(&pairs).unwrap();
        // Span of the mapped probe points sets the scale of "relative".
        let (mut lo, mut hi) = (f64::MAX, f64::MIN);
        for p in &c.probe_px {
            lo = lo.min(p[0]).min(p[1]);
            hi = hi.max(p[0]).max(p[1]);
        }
        let span = hi - lo;
        let mut worst: f64 = 0.0;
        for (q, want) in c.probe_mm.iter().zip(&c.probe_px) {
            let (u, v) = proj(&fit.h_inv, q[0], q[1]);
            worst = worst.max(((u - want[0]).powi(2) + (v - want[1]).powi(2)).sqrt() / span);
            // And the pixel-to-mm direction: the reference's pixel position maps back to the probe.
            let (x, y) = proj(&fit.h, want[0], want[1]);
            let mm_span = 200.0;
            worst = worst.max(((x - q[0]).powi(2) + (y - q[1]).powi(2)).sqrt() / mm_span);
        }
        eprintln!("{}: worst relative difference {worst:.2e}", c.name);
        assert!(worst < 1e-6, "{}: {worst:e}", c.name);
    }
}

/// Parameter Jacobian (8 free entries, corner fixed at 1) of the image positions of `mm`, by central
/// differences — independent of the fitting code's analytic derivatives.
fn jacobian(g: &Matrix3<f64>, mm: &[(f64, f64)]) -> DMatrix<f64> {
    let g = g / g[(2, 2)];
    let mut j = DMatrix::zeros(2 * mm.len(), 8);
    for k in 0..8 {
        let (r, c) = (k / 3, k % 3);
        let h = 1e-6 * g[(r, c)].abs().max(1e-6);
        let (mut gp, mut gm) = (g, g);
        gp[(r, c)] += h;
        gm[(r, c)] -= h;
        for (i, &(x, y)) in mm.iter().enumerate() {
            let (a, b) = (proj(&gp, x, y), proj(&gm, x, y));
            j[(2 * i, k)] = (a.0 - b.0) / (2.0 * h);
            j[(2 * i + 1, k)] = (a.1 - b.1) / (2.0 * h);
        }
    }
    j
}

/// With pixel noise sigma = 0.3 px the fit reaches the accuracy that noise allows.
///
/// Expectation by first-order propagation of the maximum-likelihood fit: the parameter covariance is
/// sigma^2 (J^T J)^-1, so (a) the summed squared error of the fitted image positions of the n fit points
/// is sigma^2 tr(hat matrix) = 8 sigma^2 (8 free parameters), the residual sum of squares is
/// (2n - 8) sigma^2 (standard least-squares results; the same figures appear as the estimation and
/// residual errors of homography fitting in "Multiple View Geometry in Computer Vision", ch. 5, from
/// memory), and (b) a screen point q read through the inverse map errs by A^-1 J_q dtheta, A = dG/dq,
/// whose mean squared size over a probe area we compute here. Monte Carlo over seeded noise checks the
/// fit against both, within 4 standard errors of the Monte Carlo mean.
#[test]
fn noisy_pairs_reach_the_accuracy_expected_from_the_noise() {
    let sigma = 0.3;
    let g = camera(2000.0, 30.0, -12.0, 500.0);
    let mm: Vec<(f64, f64)> = (0..4)
        .flat_map(|i| (0..3).map(move |j| (-60.0 + 40.0 * i as f64, -40.0 + 40.0 * j as f64)))
        .collect();
    let n = mm.len();
    let probes: Vec<(f64, f64)> = (0..7)
        .flat_map(|i| (0..5).map(move |j| (-60.0 + 20.0 * i as f64, -40.0 + 20.0 * j as f64)))
        .collect();
    // First-order expectation of the mean squared mm error over the probes.
    let j = jacobian(&g, &mm);
    let cov = (j.transpose() * &j).try_inverse().unwrap() * (sigma * sigma);
    let jp = jacobian(&g, &probes);
    let mut expect_mm2 = 0.0;
    for (i, &(x, y)) in probes.iter().enumerate() {
        let jq = jp.rows(2 * i, 2);
        let s_px = jq * &cov * jq.transpose();
        let d = 1e-4;
        let (a, b) = (proj(&g, x + d, y), proj(&g, x - d, y));
        let (c, e) = (proj(&g, x, y + d), proj(&g, x, y - d));
        let a_q = nalgebra::Matrix2::new(
            (a.0 - b.0) / (2.0 * d),
            (c.0 - e.0) / (2.0 * d),
            (a.1 - b.1) / (2.0 * d),
            (c.1 - e.1) / (2.0 * d),
        );
        let ai = a_q.try_inverse().unwrap();
        let s_px2 = nalgebra::Matrix2::new(s_px[(0, 0)], s_px[(0, 1)], s_px[(1, 0)], s_px[(1, 1)]);
        expect_mm2 += (ai * s_px2 * ai.transpose()).trace() / probes.len() as f64;
    }
    let trials = 300;
    let mut rng = rand::rngs::StdRng::seed_from_u64(7);
    let normal = Normal::new(0.0, sigma).unwrap();
    let (mut est, mut res, mut mm2) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..trials {
        let noise: Vec<(f64, f64)> = (0..n)
            .map(|_| (normal.sample(&mut rng), normal.sample(&mut rng)))
            .collect();
        let pairs = pairs_from(&g, &mm, &noise);
        let fit = fit_robust(&pairs, &RobustOptions::default()).unwrap();
        assert_eq!(fit.used.len(), n, "no pair is rejected at 0.3 px noise");
        let mut e = 0.0;
        for &(x, y) in &mm {
            let (a, b) = (proj(&fit.h_inv, x, y), proj(&g, x, y));
            e += (a.0 - b.0).powi(2) + (a.1 - b.1).powi(2);
        }
        est.push(e);
        res.push(fit.residual_px.iter().map(|r| r * r).sum::<f64>());
        let mut m = 0.0;
        for &(x, y) in &probes {
            let p = proj(&g, x, y);
            let back = proj(&fit.h, p.0, p.1);
            m += ((back.0 - x).powi(2) + (back.1 - y).powi(2)) / probes.len() as f64;
        }
        mm2.push(m);
    }
    let stats = |v: &[f64]| {
        let k = v.len() as f64;
        let mean = v.iter().sum::<f64>() / k;
        let sd = (v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (k - 1.0)).sqrt();
        (mean, sd / k.sqrt())
    };
    let s2 = sigma * sigma;
    let (m_est, se_est) = stats(&est);
    let (m_res, se_res) = stats(&res);
    let (m_mm, se_mm) = stats(&mm2);
    eprintln!(
        "estimation: {m_est:.4} (expect {:.4}) px^2; residual: {m_res:.4} (expect {:.4}) px^2; \
         probe mm^2: {m_mm:.3e} (expect {expect_mm2:.3e}); RMS mm over probes {:.4} (expect {:.4})",
        8.0 * s2,
        (2 * n - 8) as f64 * s2,
        m_mm.sqrt(),
        expect_mm2.sqrt()
    );
    assert!(
        (m_est - 8.0 * s2).abs() < 4.0 * se_est,
        "{m_est} vs {}",
        8.0 * s2
    );
    assert!((m_res - (2 * n - 8) as f64 * s2).abs() < 4.0 * se_res);
    assert!(
        (m_mm - expect_mm2).abs() < 4.0 * se_mm,
        "{m_mm} vs {expect_mm2}"
    );
}

#[test]
fn a_wrong_pair_is_rejected_and_named_by_its_line() {
    let g = camera(2000.0, 20.0, 10.0, 500.0);
    let mm: Vec<(f64, f64)> = (0..3)
        .flat_map(|i| (0..3).map(move |j| (-50.0 + 50.0 * i as f64, -30.0 + 30.0 * j as f64)))
        .collect();
    let mut noise = vec![(0.0, 0.0); mm.len()];
    noise[4] = (12.0, -7.0);
    let pairs = pairs_from(&g, &mm, &noise);
    let text = pairs_to_csv(&pairs);
    let read = parse_pairs(&text, Path::new("p.csv")).unwrap();
    // The header is line 1, so the fifth pair is on line 6.
    assert_eq!(read[4].label, "line 6");
    let fit = fit_robust(&read, &RobustOptions::default()).unwrap();
    assert_eq!(fit.rejected, vec![4]);
    assert!(
        fit.rms_px() < 1e-6,
        "the others fit exactly: {}",
        fit.rms_px()
    );
}

#[test]
fn five_pairs_with_one_wrong_cannot_name_the_culprit_and_say_so() {
    let g = camera(2000.0, 20.0, 10.0, 500.0);
    let mm = [
        (-50.0, -30.0),
        (50.0, -30.0),
        (50.0, 30.0),
        (-50.0, 30.0),
        (5.0, 3.0),
    ];
    let mut noise = vec![(0.0, 0.0); 5];
    noise[2] = (20.0, 0.0);
    let e = fit_robust(&pairs_from(&g, &mm, &noise), &RobustOptions::default()).unwrap_err();
    assert!(e.to_string().contains("cannot tell which"), "{e}");
}

fn csv_err(text: &str) -> String {
    parse_pairs(text, Path::new("pairs.csv"))
        .map(|_| String::new())
        .unwrap_or_else(|e| e.to_string())
}

#[test]
fn bad_numbers_are_named_by_line() {
    let m = csv_err("x_px,y_px,x_mm,y_mm\n1,2,3,4\n5,abc,7,8\n");
    assert!(
        m.contains("pairs.csv:3") && m.contains("y_px") && m.contains("abc"),
        "{m}"
    );
    let m = csv_err("1,2,3,4\n# comment\n\n5,6,NaN,8\n");
    assert!(m.contains("pairs.csv:4") && m.contains("finite"), "{m}");
    let m = csv_err("1,2,3,4\n5,6,7\n");
    assert!(m.contains("pairs.csv:2") && m.contains("3 fields"), "{m}");
    let m = csv_err("x,y,a,b\n1,2,3,4\n");
    assert!(
        m.contains("pairs.csv:1") && m.contains("not a number"),
        "{m}"
    );
}

fn pp(v: &[(f64, f64, f64, f64)]) -> Vec<PointPair> {
    v.iter()
        .enumerate()
        .map(|(i, &(a, b, c, d))| PointPair {
            pixel: PixelPoint { x: a, y: b },
            screen: ScreenPoint { x_mm: c, y_mm: d },
            label: format!("line {}", i + 1),
        })
        .collect()
}

#[test]
fn too_few_duplicate_and_collinear_pairs_are_refused() {
    let e = fit_robust(
        &pp(&[
            (0.0, 0.0, 0.0, 0.0),
            (10.0, 0.0, 1.0, 0.0),
            (0.0, 10.0, 0.0, 1.0),
        ]),
        &RobustOptions::default(),
    )
    .unwrap_err();
    assert!(
        matches!(e, CalibError::TooFewPoints { found: 3, .. }),
        "{e}"
    );
    assert!(e.to_string().contains("at least 4"));

    let dup = pp(&[
        (0.0, 0.0, 0.0, 0.0),
        (100.0, 0.0, 10.0, 0.0),
        (100.0, 100.0, 10.0, 10.0),
        (0.0, 100.0, 0.0, 10.0),
        (100.0, 0.0, 10.0, 0.0),
    ]);
    let e = fit_robust(&dup, &RobustOptions::default()).unwrap_err();
    let m = e.to_string();
    assert!(matches!(e, CalibError::Degenerate { .. }));
    assert!(
        m.contains("degenerate") && m.contains("line 2") && m.contains("line 5"),
        "{m}"
    );

    let line = pp(&[
        (0.0, 0.0, 0.0, 0.0),
        (10.0, 10.0, 1.0, 1.0),
        (20.0, 20.0, 2.0, 2.0),
        (30.0, 30.0, 3.0, 3.0),
        (40.0, 40.0, 4.0, 4.0),
    ]);
    let m = fit_robust(&line, &RobustOptions::default())
        .unwrap_err()
        .to_string();
    assert!(m.contains("degenerate") && m.contains("one line"), "{m}");

    let three = pp(&[
        (0.0, 0.0, 0.0, 0.0),
        (50.0, 0.0, 5.0, 0.0),
        (100.0, 0.0, 10.0, 0.0),
        (0.0, 100.0, 0.0, 10.0),
    ]);
    let m = fit_all(&three).unwrap_err().to_string();
    assert!(m.contains("degenerate") && m.contains("three"), "{m}");
}
