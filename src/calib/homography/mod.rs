//! Fitting the homography between screen millimetres and image pixels from point pairs.
//!
//! The screen positions (ruler readings, grid intersections) are taken as exact and the pixel positions as
//! measured, so the fitted map G: screen mm -> pixels minimises the sum of squared pixel distances
//! |G(mm_i) - px_i|^2 (the maximum-likelihood fit for isotropic Gaussian pixel noise). The start comes from
//! the Hartley-normalised direct linear transform (DLT) solved by SVD, and Levenberg–Marquardt then
//! minimises the pixel error. The calibration's pixel-to-mm homography is the inverse of G.
//!
//! [`fit_robust`] (`robust.rs`) adds a consensus search over 4-pair subsets (all of them when few, else
//! a seeded random draw) and names the pairs it leaves out.

mod robust;

pub use robust::{fit_robust, RobustOptions};

use super::CalibError;
use crate::units::{PixelPoint, ScreenPoint};
use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::storage::Owned;
use nalgebra::{DMatrix, DVector, Dyn, Matrix3, OMatrix, OVector, Vector3, U8};

/// One correspondence: where a known screen point appears in the image.
#[derive(Debug, Clone, PartialEq)]
pub struct PointPair {
    pub pixel: PixelPoint,
    pub screen: ScreenPoint,
    /// Where it came from, for messages ("line 7", "grid (3, -2)").
    pub label: String,
}

/// A fitted homography and how well it fits.
#[derive(Debug, Clone, PartialEq)]
pub struct HomographyFit {
    /// Pixels to screen millimetres, scaled so `h[(2, 2)] = 1` where possible.
    pub h: Matrix3<f64>,
    /// Screen millimetres to pixels.
    pub h_inv: Matrix3<f64>,
    /// Indices (into the input) of the pairs used.
    pub used: Vec<usize>,
    /// Indices of the pairs left out as inconsistent with the rest.
    pub rejected: Vec<usize>,
    /// Per used pair: pixel error |G(mm) - px| and screen error |H(px) - mm|.
    pub residual_px: Vec<f64>,
    pub residual_mm: Vec<f64>,
}

impl HomographyFit {
    pub fn rms_px(&self) -> f64 {
        rms(&self.residual_px)
    }
    pub fn rms_mm(&self) -> f64 {
        rms(&self.residual_mm)
    }
    pub fn max_px(&self) -> f64 {
        self.residual_px.iter().cloned().fold(0.0, f64::max)
    }
    pub fn max_mm(&self) -> f64 {
        self.residual_mm.iter().cloned().fold(0.0, f64::max)
    }
}

fn rms(v: &[f64]) -> f64 {
    if v.is_empty() {
        0.0
    } else {
        (v.iter().map(|x| x * x).sum::<f64>() / v.len() as f64).sqrt()
    }
}

pub(crate) fn project(g: &Matrix3<f64>, x: f64, y: f64) -> (f64, f64) {
    let v = g * Vector3::new(x, y, 1.0);
    (v.x / v.z, v.y / v.z)
}

/// Hartley's normalising similarity: centroid to the origin, mean distance sqrt(2).
fn normaliser(pts: &[(f64, f64)]) -> Matrix3<f64> {
    let n = pts.len() as f64;
    let (cx, cy) = pts
        .iter()
        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n));
    let d = pts
        .iter()
        .map(|p| ((p.0 - cx).powi(2) + (p.1 - cy).powi(2)).sqrt())
        .sum::<f64>()
        / n;
    let s = if d > 0.0 {
        std::f64::consts::SQRT_2 / d
    } else {
        1.0
    };
    Matrix3::new(s, 0.0, -s * cx, 0.0, s, -s * cy, 0.0, 0.0, 1.0)
}

fn scale_to_unit_corner(m: Matrix3<f64>) -> Matrix3<f64> {
    let c = m[(2, 2)];
    if c.abs() > 1e-12 * m.abs().max() {
        m / c
    } else {
        m / m.norm()
    }
}

/// Normalised DLT for dst ~ G src. Returns G, or None when the pairs do not fix a unique homography.
fn dlt(src: &[(f64, f64)], dst: &[(f64, f64)]) -> Option<Matrix3<f64>> {
    let n = src.len();
    let ts = normaliser(src);
    let td = normaliser(dst);
    // At least 9 rows so that the SVD returns the full 9x9 right factor (extra rows are zero).
    let rows = (2 * n).max(9);
    let mut a = DMatrix::<f64>::zeros(rows, 9);
    for i in 0..n {
        let (x, y) = project(&ts, src[i].0, src[i].1);
        let (u, v) = project(&td, dst[i].0, dst[i].1);
        let r = 2 * i;
        let row0 = [-x, -y, -1.0, 0.0, 0.0, 0.0, u * x, u * y, u];
        let row1 = [0.0, 0.0, 0.0, -x, -y, -1.0, v * x, v * y, v];
        for j in 0..9 {
            a[(r, j)] = row0[j];
            a[(r + 1, j)] = row1[j];
        }
    }
    let svd = a.svd(false, true);
    let vt = svd.v_t?;
    let sv = &svd.singular_values;
    // Order of singular values is not guaranteed: find the smallest and the second smallest.
    let mut idx: Vec<usize> = (0..sv.len()).collect();
    idx.sort_by(|&i, &j| sv[i].total_cmp(&sv[j]));
    let (k0, k1) = (idx[0], idx[1]);
    if sv[k1].is_nan() || sv[k1] <= 1e-10 * sv[idx[sv.len() - 1]] {
        return None;
    }
    let hn = Matrix3::from_fn(|i, j| vt[(k0, 3 * i + j)]);
    let g = td.try_inverse()? * hn * ts;
    if g.iter().any(|v| !v.is_finite()) || g.determinant().abs() < 1e-300 {
        return None;
    }
    Some(scale_to_unit_corner(g))
}

/// The pixel-error problem in normalised coordinates, with G's corner element fixed at 1.
struct Reprojection {
    src: Vec<(f64, f64)>,
    dst: Vec<(f64, f64)>,
    p: OVector<f64, U8>,
}

impl Reprojection {
    fn matrix(&self) -> Matrix3<f64> {
        let p = &self.p;
        Matrix3::new(p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], 1.0)
    }
}

impl LeastSquaresProblem<f64, Dyn, U8> for Reprojection {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, U8>;
    type ParameterStorage = Owned<f64, U8>;

    fn set_params(&mut self, x: &OVector<f64, U8>) {
        self.p.copy_from(x);
    }
    fn params(&self) -> OVector<f64, U8> {
        self.p
    }
    fn residuals(&self) -> Option<DVector<f64>> {
        let g = self.matrix();
        let mut r = DVector::zeros(2 * self.src.len());
        for (i, (s, d)) in self.src.iter().zip(&self.dst).enumerate() {
            let (u, v) = project(&g, s.0, s.1);
            r[2 * i] = u - d.0;
            r[2 * i + 1] = v - d.1;
        }
        r.iter().all(|v| v.is_finite()).then_some(r)
    }
    fn jacobian(&self) -> Option<OMatrix<f64, Dyn, U8>> {
        let p = &self.p;
        let mut j = OMatrix::<f64, Dyn, U8>::zeros(2 * self.src.len());
        for (i, &(x, y)) in self.src.iter().enumerate() {
            let w = p[6] * x + p[7] * y + 1.0;
            if w.abs() < 1e-300 {
                return None;
            }
            let u = (p[0] * x + p[1] * y + p[2]) / w;
            let v = (p[3] * x + p[4] * y + p[5]) / w;
            let r0 = [x / w, y / w, 1.0 / w, 0.0, 0.0, 0.0, -u * x / w, -u * y / w];
            let r1 = [0.0, 0.0, 0.0, x / w, y / w, 1.0 / w, -v * x / w, -v * y / w];
            for k in 0..8 {
                j[(2 * i, k)] = r0[k];
                j[(2 * i + 1, k)] = r1[k];
            }
        }
        Some(j)
    }
}

/// Levenberg–Marquardt refinement of dst ~ G src from a start G0, minimising the dst-space error.
fn refine(src: &[(f64, f64)], dst: &[(f64, f64)], g0: &Matrix3<f64>) -> Matrix3<f64> {
    let ts = normaliser(src);
    let td = normaliser(dst);
    let (Some(ts_inv), Some(td_inv)) = (ts.try_inverse(), td.try_inverse()) else {
        return *g0;
    };
    let gn = td * g0 * ts_inv;
    if gn[(2, 2)].abs() < 1e-9 * gn.abs().max() {
        return *g0;
    }
    let gn = gn / gn[(2, 2)];
    let problem = Reprojection {
        src: src.iter().map(|p| project(&ts, p.0, p.1)).collect(),
        dst: dst.iter().map(|p| project(&td, p.0, p.1)).collect(),
        p: OVector::<f64, U8>::from_iterator(gn.transpose().iter().take(8).cloned()),
    };
    let (done, report) = LevenbergMarquardt::new()
        .with_ftol(1e-15)
        .with_xtol(1e-15)
        .with_gtol(1e-15)
        .minimize(problem);
    let g = td_inv * done.matrix() * ts;
    if report.termination.was_usage_issue()
        || g.iter().any(|v| !v.is_finite())
        || cost(src, dst, &g) > cost(src, dst, g0)
    {
        return *g0;
    }
    scale_to_unit_corner(g)
}

fn cost(src: &[(f64, f64)], dst: &[(f64, f64)], g: &Matrix3<f64>) -> f64 {
    src.iter()
        .zip(dst)
        .map(|(s, d)| {
            let (u, v) = project(g, s.0, s.1);
            (u - d.0).powi(2) + (v - d.1).powi(2)
        })
        .sum()
}

type Points = Vec<(f64, f64)>;

fn split(pairs: &[PointPair]) -> (Points, Points) {
    (
        pairs
            .iter()
            .map(|p| (p.screen.x_mm, p.screen.y_mm))
            .collect(),
        pairs.iter().map(|p| (p.pixel.x, p.pixel.y)).collect(),
    )
}

/// Relative area of a triangle: twice its area over its longest side squared (0 when collinear).
fn flatness(a: (f64, f64), b: (f64, f64), c: (f64, f64)) -> f64 {
    let cross = ((b.0 - a.0) * (c.1 - a.1) - (b.1 - a.1) * (c.0 - a.0)).abs();
    let d2 = |p: (f64, f64), q: (f64, f64)| (p.0 - q.0).powi(2) + (p.1 - q.1).powi(2);
    let l = d2(a, b).max(d2(b, c)).max(d2(a, c));
    if l == 0.0 {
        0.0
    } else {
        cross / l
    }
}

const COLLINEAR: f64 = 1e-6;

/// Does every triple of these points span a triangle (no three on a line)?
fn no_three_collinear(pts: &[(f64, f64)]) -> bool {
    let n = pts.len();
    for i in 0..n {
        for j in i + 1..n {
            for k in j + 1..n {
                if flatness(pts[i], pts[j], pts[k]) < COLLINEAR {
                    return false;
                }
            }
        }
    }
    true
}

/// Refuse pair sets that cannot fix a homography, saying which pairs are at fault.
pub fn check_pairs(pairs: &[PointPair], what: &str) -> Result<(), CalibError> {
    if pairs.len() < 4 {
        return Err(CalibError::TooFewPoints {
            what: what.to_string(),
            found: pairs.len(),
        });
    }
    for p in pairs {
        let v = [p.pixel.x, p.pixel.y, p.screen.x_mm, p.screen.y_mm];
        if v.iter().any(|x| !x.is_finite()) {
            return Err(CalibError::Degenerate {
                message: format!("{}: a coordinate is not a finite number", p.label),
            });
        }
    }
    let (src, dst) = split(pairs);
    let span = |pts: &[(f64, f64)]| {
        let (mut lo, mut hi) = ((f64::MAX, f64::MAX), (f64::MIN, f64::MIN));
        for p in pts {
            lo = (lo.0.min(p.0), lo.1.min(p.1));
            hi = (hi.0.max(p.0), hi.1.max(p.1));
        }
        (hi.0 - lo.0).max(hi.1 - lo.1)
    };
    for (pts, kind, unit) in [(&dst, "pixel", "px"), (&src, "screen", "mm")] {
        let tol = 1e-9 * span(pts).max(1e-300);
        for i in 0..pts.len() {
            for j in i + 1..pts.len() {
                if (pts[i].0 - pts[j].0).abs() <= tol && (pts[i].1 - pts[j].1).abs() <= tol {
                    return Err(CalibError::Degenerate {
                        message: format!(
                            "{} and {} have the same {kind} position ({}, {}) {unit}; \
                             each pair must be a different point",
                            pairs[i].label, pairs[j].label, pts[i].0, pts[i].1
                        ),
                    });
                }
            }
        }
        // All on one line: second singular value of the centred points is (nearly) zero.
        let n = pts.len() as f64;
        let (cx, cy) = pts
            .iter()
            .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n));
        let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
        for p in pts.iter() {
            sxx += (p.0 - cx).powi(2);
            sxy += (p.0 - cx) * (p.1 - cy);
            syy += (p.1 - cy).powi(2);
        }
        let tr = sxx + syy;
        let det = sxx * syy - sxy * sxy;
        let disc = ((tr * tr / 4.0) - det).max(0.0).sqrt();
        let (l1, l2) = (tr / 2.0 + disc, tr / 2.0 - disc);
        if l1 <= 0.0 || l2 / l1 < COLLINEAR * COLLINEAR {
            return Err(CalibError::Degenerate {
                message: format!(
                    "all {} {kind} positions lie on one line; a homography needs points spread over \
                     the screen in both directions",
                    pts.len()
                ),
            });
        }
        if pairs.len() == 4 && !no_three_collinear(pts) {
            return Err(CalibError::Degenerate {
                message: format!(
                    "three of the four {kind} positions ({}) lie on one line; with four pairs no three \
                     may be collinear — move one or add pairs",
                    pairs
                        .iter()
                        .map(|p| p.label.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            });
        }
    }
    Ok(())
}

fn finish(
    pairs: &[PointPair],
    g: Matrix3<f64>,
    used: Vec<usize>,
) -> Result<HomographyFit, CalibError> {
    let h = g
        .try_inverse()
        .map(scale_to_unit_corner)
        .ok_or_else(|| CalibError::Degenerate {
            message: "the fitted homography is singular; the pairs do not span the screen".into(),
        })?;
    let mut residual_px = Vec::with_capacity(used.len());
    let mut residual_mm = Vec::with_capacity(used.len());
    for &i in &used {
        let p = &pairs[i];
        let (u, v) = project(&g, p.screen.x_mm, p.screen.y_mm);
        residual_px.push(((u - p.pixel.x).powi(2) + (v - p.pixel.y).powi(2)).sqrt());
        let (x, y) = project(&h, p.pixel.x, p.pixel.y);
        residual_mm.push(((x - p.screen.x_mm).powi(2) + (y - p.screen.y_mm).powi(2)).sqrt());
    }
    let rejected = (0..pairs.len()).filter(|i| !used.contains(i)).collect();
    Ok(HomographyFit {
        h,
        h_inv: g,
        used,
        rejected,
        residual_px,
        residual_mm,
    })
}

fn lsq(src: &[(f64, f64)], dst: &[(f64, f64)]) -> Option<Matrix3<f64>> {
    let g0 = dlt(src, dst)?;
    Some(refine(src, dst, &g0))
}

/// Least-squares fit over all pairs (normalised DLT, then Levenberg–Marquardt on the pixel error).
pub fn fit_all(pairs: &[PointPair]) -> Result<HomographyFit, CalibError> {
    check_pairs(pairs, "the fit")?;
    let (src, dst) = split(pairs);
    let g = lsq(&src, &dst).ok_or_else(|| CalibError::Degenerate {
        message: "the pairs do not fix a unique homography (too many on one line?)".into(),
    })?;
    finish(pairs, g, (0..pairs.len()).collect())
}
