//! The grid's repeat in the image: the two shortest lattice vectors of a patch, read from the peaks of
//! its 2-D autocorrelation (computed by FFT). A square grid of lines gives peaks at the lattice vectors
//! +-u, +-v; their strength says whether there is a grid at all.

use super::Gray;
use rustfft::num_complex::Complex;
use rustfft::FftPlanner;

/// The lattice vectors found in a patch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Period {
    pub u: (f64, f64),
    pub v: (f64, f64),
    /// Normalised autocorrelation at u and v (1 = perfect repeat, about 0 = none).
    pub strength: f64,
}

fn fft2(data: &mut [Complex<f64>], n: usize, inverse: bool) {
    let mut planner = FftPlanner::new();
    let fft = if inverse {
        planner.plan_fft_inverse(n)
    } else {
        planner.plan_fft_forward(n)
    };
    for row in data.chunks_mut(n) {
        fft.process(row);
    }
    let mut col = vec![Complex::new(0.0, 0.0); n];
    for c in 0..n {
        for r in 0..n {
            col[r] = data[r * n + c];
        }
        fft.process(&mut col);
        for r in 0..n {
            data[r * n + c] = col[r];
        }
    }
}

/// Autocorrelation lattice of the `n` x `n` patch centred at (cx, cy), with lags up to `n / 4`.
/// Returns None when no repeat stands out.
pub fn lattice(img: &Gray, cx: f64, cy: f64, n: usize) -> Option<Period> {
    let half = n as f64 / 2.0;
    let x0 = (cx - half)
        .round()
        .clamp(0.0, (img.w.saturating_sub(n)) as f64) as usize;
    let y0 = (cy - half)
        .round()
        .clamp(0.0, (img.h.saturating_sub(n)) as f64) as usize;
    let (nw, nh) = (n.min(img.w), n.min(img.h));
    let (data, m) = correlate(img, (x0, y0), (nw, nh), n);
    let zero = data[0].re;
    if zero.is_nan() || zero <= 0.0 {
        return None;
    }
    let l = (n / 4) as i64;
    let ac = normalised_lags(&data, m, zero, l, (nw, nh));
    let peaks = local_maxima(&ac, l);
    shortest_pair(&peaks)
}

/// Hann window weight of sample `k` of `len`.
fn hann(k: usize, len: usize) -> f64 {
    0.5 - 0.5 * (2.0 * std::f64::consts::PI * (k as f64 + 0.5) / len as f64).cos()
}

/// Circular autocorrelation of the mean-removed, windowed `nw` x `nh` patch at (x0, y0), zero padded
/// to `m = 2n` square (against wrap-around): the values and `m`.
fn correlate(
    img: &Gray,
    (x0, y0): (usize, usize),
    (nw, nh): (usize, usize),
    n: usize,
) -> (Vec<Complex<f64>>, usize) {
    let mut mean = 0.0;
    for y in 0..nh {
        for x in 0..nw {
            mean += img.at(x0 + x, y0 + y) as f64;
        }
    }
    mean /= (nw * nh) as f64;
    // Hann window against edge effects, zero padding to twice the size against wrap-around.
    let m = 2 * n;
    let mut data = vec![Complex::new(0.0, 0.0); m * m];
    for y in 0..nh {
        for x in 0..nw {
            let v = (img.at(x0 + x, y0 + y) as f64 - mean) * hann(x, nw) * hann(y, nh);
            data[y * m + x] = Complex::new(v, 0.0);
        }
    }
    fft2(&mut data, m, false);
    for d in data.iter_mut() {
        *d = Complex::new(d.norm_sqr(), 0.0);
    }
    fft2(&mut data, m, true);
    (data, m)
}

/// Share of the window's energy that overlaps itself shifted by `d` samples.
fn overlap(d: i64, len: usize) -> f64 {
    let mut s = 0.0;
    let mut s0 = 0.0;
    for k in 0..len {
        let w = hann(k, len);
        s0 += w * w;
        let k2 = k as i64 + d;
        if k2 >= 0 && (k2 as usize) < len {
            s += w * hann(k2 as usize, len);
        }
    }
    s / s0
}

/// Lags -L..=L, stored in a (2L+1)^2 square; normalised by the window overlap so that a perfect
/// repeat reads 1 at any lag.
fn normalised_lags(
    data: &[Complex<f64>],
    m: usize,
    zero: f64,
    l: i64,
    (nw, nh): (usize, usize),
) -> Vec<f64> {
    let side = (2 * l + 1) as usize;
    let mut ac = vec![0.0; side * side];
    let ox: Vec<f64> = (-l..=l).map(|d| overlap(d, nw)).collect();
    let oy: Vec<f64> = (-l..=l).map(|d| overlap(d, nh)).collect();
    for dy in -l..=l {
        for dx in -l..=l {
            let iy = dy.rem_euclid(m as i64) as usize;
            let ix = dx.rem_euclid(m as i64) as usize;
            let norm = ox[(dx + l) as usize] * oy[(dy + l) as usize];
            ac[((dy + l) as usize) * side + (dx + l) as usize] =
                data[iy * m + ix].re / zero / norm.max(1e-3);
        }
    }
    ac
}

/// Local maxima of the lags (stored as by [`normalised_lags`]) away from the central peak, each at
/// its parabolic subpixel position: (dx, dy, value).
fn local_maxima(ac: &[f64], l: i64) -> Vec<(f64, f64, f64)> {
    let side = (2 * l + 1) as usize;
    let at = |dx: i64, dy: i64| ac[((dy + l) as usize) * side + (dx + l) as usize];
    let mut peaks: Vec<(f64, f64, f64)> = Vec::new();
    for dy in -l + 1..l {
        for dx in -l + 1..l {
            if dx * dx + dy * dy < 4 {
                continue;
            }
            let c = at(dx, dy);
            let mut is_max = c > 0.0;
            for (ex, ey) in [
                (-1, -1),
                (0, -1),
                (1, -1),
                (-1, 0),
                (1, 0),
                (-1, 1),
                (0, 1),
                (1, 1),
            ] {
                if at(dx + ex, dy + ey) >= c {
                    is_max = false;
                }
            }
            if is_max {
                // Parabolic subpixel peak in each axis.
                let sx = sub(at(dx - 1, dy), c, at(dx + 1, dy));
                let sy = sub(at(dx, dy - 1), c, at(dx, dy + 1));
                peaks.push((dx as f64 + sx, dy as f64 + sy, c));
            }
        }
    }
    peaks
}

/// The lattice from the strong peaks: u the shortest, v the shortest more than 60 degrees off u's line.
fn shortest_pair(peaks: &[(f64, f64, f64)]) -> Option<Period> {
    let top = peaks.iter().map(|p| p.2).fold(0.0, f64::max);
    if top <= 0.0 {
        return None;
    }
    let strong: Vec<_> = peaks.iter().filter(|p| p.2 > 0.75 * top).collect();
    let len = |p: &(f64, f64, f64)| (p.0 * p.0 + p.1 * p.1).sqrt();
    let u = strong.iter().min_by(|a, b| len(a).total_cmp(&len(b)))?;
    let v = strong
        .iter()
        .filter(|p| {
            let cos = (p.0 * u.0 + p.1 * u.1) / (len(p) * len(u));
            cos.abs() < 0.5
        })
        .min_by(|a, b| len(a).total_cmp(&len(b)))?;
    Some(Period {
        u: (u.0, u.1),
        v: (v.0, v.1),
        strength: u.2.min(v.2),
    })
}

fn sub(a: f64, b: f64, c: f64) -> f64 {
    let d = a - 2.0 * b + c;
    if d < 0.0 {
        (0.5 * (a - c) / d).clamp(-0.5, 0.5)
    } else {
        0.0
    }
}
