//! The robust fit: the largest set of pairs one homography explains within a pixel threshold, found
//! from exact fits through 4-pair subsets, then refitted by least squares on that set.

use super::{dlt, finish, fit_all, lsq, no_three_collinear, project, split, PointPair};
use super::{CalibError, HomographyFit};
use nalgebra::Matrix3;
use rand::seq::index::sample;
use rand::SeedableRng;

/// Options of the robust fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RobustOptions {
    /// A pair whose pixel error exceeds this is inconsistent with the rest, px.
    pub threshold_px: f64,
    /// Seed of the subset draw when there are too many subsets to try them all.
    pub seed: u64,
    /// Number of 4-pair subsets tried.
    pub max_subsets: usize,
}

impl Default for RobustOptions {
    fn default() -> Self {
        Self {
            threshold_px: 3.0,
            seed: 0x5eed_ca11,
            max_subsets: 400,
        }
    }
}

fn inliers(
    src: &[(f64, f64)],
    dst: &[(f64, f64)],
    g: &Matrix3<f64>,
    thr: f64,
) -> (Vec<usize>, f64) {
    let mut set = Vec::new();
    let mut score = 0.0;
    for i in 0..src.len() {
        let (u, v) = project(g, src[i].0, src[i].1);
        let e2 = (u - dst[i].0).powi(2) + (v - dst[i].1).powi(2);
        if e2.is_finite() && e2 < thr * thr {
            set.push(i);
            score += e2;
        }
    }
    (set, score)
}

/// All 4-subsets of 0..n in order, or `max` seeded random ones when there are more than `max`.
fn subsets(n: usize, max: usize, seed: u64) -> Vec<[usize; 4]> {
    let total = n * (n - 1) * (n - 2) * (n - 3) / 24;
    let mut out = Vec::new();
    if total <= max {
        for a in 0..n {
            for b in a + 1..n {
                for c in b + 1..n {
                    for d in c + 1..n {
                        out.push([a, b, c, d]);
                    }
                }
            }
        }
    } else {
        let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
        for _ in 0..max {
            let s = sample(&mut rng, n, 4);
            out.push([s.index(0), s.index(1), s.index(2), s.index(3)]);
        }
    }
    out
}

/// Robust fit: with more than four pairs, find the largest set consistent within `threshold_px` by trying
/// exact fits through 4-pair subsets, refit by least squares on it, and report the rest as rejected.
pub fn fit_robust(pairs: &[PointPair], opts: &RobustOptions) -> Result<HomographyFit, CalibError> {
    super::check_pairs(pairs, "the fit")?;
    let n = pairs.len();
    if n == 4 {
        return fit_all(pairs);
    }
    let (src, dst) = split(pairs);
    // Fast path: if the least-squares fit of everything is consistent, keep everything.
    if let Some(g) = lsq(&src, &dst) {
        let (set, _) = inliers(&src, &dst, &g, opts.threshold_px);
        if set.len() == n {
            return finish(pairs, g, set);
        }
    }
    let (found, exhaustive) = subset_consensus(&src, &dst, opts);
    let set = best_consensus(pairs, &found, exhaustive, opts)?;
    let (g, set) = settle(&src, &dst, set, opts)?;
    finish(pairs, g, set)
}

/// For each 4-pair subset that spans a quadrilateral in both planes, the pairs its exact homography
/// explains and their summed squared error; also whether the search counts as complete (fewer
/// subsets than the limit, or at most 12 pairs).
fn subset_consensus(
    src: &[(f64, f64)],
    dst: &[(f64, f64)],
    opts: &RobustOptions,
) -> (Vec<(Vec<usize>, f64)>, bool) {
    let n = src.len();
    let tried = subsets(n, opts.max_subsets, opts.seed);
    let exhaustive = tried.len() < opts.max_subsets || n <= 12;
    let mut found: Vec<(Vec<usize>, f64)> = Vec::new();
    for s in tried {
        let ss: Vec<_> = s.iter().map(|&i| src[i]).collect();
        let dd: Vec<_> = s.iter().map(|&i| dst[i]).collect();
        if !no_three_collinear(&ss) || !no_three_collinear(&dd) {
            continue;
        }
        let Some(g) = dlt(&ss, &dd) else { continue };
        found.push(inliers(src, dst, &g, opts.threshold_px));
    }
    (found, exhaustive)
}

/// The largest consistent set (the one with the least error among equals); refused when it is not
/// most of the pairs, or when an exhaustive search found rival sets of that size.
fn best_consensus(
    pairs: &[PointPair],
    found: &[(Vec<usize>, f64)],
    exhaustive: bool,
    opts: &RobustOptions,
) -> Result<Vec<usize>, CalibError> {
    let n = pairs.len();
    let Some(max) = found.iter().map(|f| f.0.len()).max() else {
        return Err(CalibError::Degenerate {
            message: "no four of the pairs fix a homography (too many on one line?)".into(),
        });
    };
    if max < 4 || max * 2 < n {
        return Err(CalibError::Degenerate {
            message: format!(
                "the pairs disagree with each other: no homography fits more than {max} of {n} within {} px; \
                 check the pairs",
                opts.threshold_px
            ),
        });
    }
    let mut rivals: Vec<&Vec<usize>> = Vec::new();
    for (set, _) in found.iter().filter(|f| f.0.len() == max) {
        if !rivals.contains(&set) {
            rivals.push(set);
        }
    }
    if exhaustive && rivals.len() > 1 {
        let suspects: Vec<&str> = (0..n)
            .filter(|i| rivals.iter().any(|r| !r.contains(i)))
            .map(|i| pairs[i].label.as_str())
            .collect();
        return Err(CalibError::Degenerate {
            message: format!(
                "the pairs disagree by more than {} px, and these pairs cannot tell which is wrong; \
                 suspects: {}; check them or add more pairs",
                opts.threshold_px,
                suspects.join(", ")
            ),
        });
    }
    Ok(found
        .iter()
        .filter(|f| f.0.len() == max)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|f| f.0.clone())
        .unwrap_or_default())
}

/// Refit on the consensus set and let the set settle (at most four rounds).
fn settle(
    src: &[(f64, f64)],
    dst: &[(f64, f64)],
    mut set: Vec<usize>,
    opts: &RobustOptions,
) -> Result<(Matrix3<f64>, Vec<usize>), CalibError> {
    let mut g = Matrix3::identity();
    for _ in 0..4 {
        let ss: Vec<_> = set.iter().map(|&i| src[i]).collect();
        let dd: Vec<_> = set.iter().map(|&i| dst[i]).collect();
        g = lsq(&ss, &dd).ok_or_else(|| CalibError::Degenerate {
            message: "the consistent pairs do not fix a unique homography".into(),
        })?;
        let (next, _) = inliers(src, dst, &g, opts.threshold_px);
        if next == set || next.len() < 4 {
            break;
        }
        set = next;
    }
    Ok((g, set))
}
