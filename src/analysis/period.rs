//! The oscillation's frequency from the spectrum, as the starting guess for the damped fits.
//!
//! Steps: resample evenly (linear interpolation at the median sample spacing; gaps are bridged here
//! only, never in the fits), remove a straight line from each stretch between `breaks` (so the steps of
//! the equilibrium at mass moves do not leak into the spectrum), optionally take the first difference
//! (which favours the oscillation over the steps when the breaks are not known yet), apply a Hann
//! window to each stretch, zero-pad to at least `pad` times the longest stretch (next power of two),
//! add the stretches' FFT powers (rustfft), and interpolate the highest peak with a parabola through the logarithms of the three
//! bins around it (exact for a Gaussian peak; a common practice for Hann-windowed spectra, no source).

use rustfft::{num_complex::Complex, FftPlanner};

/// How to prepare the series before the FFT.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumOptions {
    /// Times at which the series' equilibrium may jump (mass moves); a line is removed from each stretch.
    pub breaks: Vec<f64>,
    /// Take the first difference before windowing.
    pub differentiate: bool,
    /// Zero padding: the FFT length is the next power of two at or above `pad` x the series length.
    pub pad: usize,
    /// Peaks below this many cycles per longest stretch are not looked at (the window's leakage of
    /// what detrending left sits there).
    pub min_cycles: f64,
}

impl Default for SpectrumOptions {
    fn default() -> Self {
        Self {
            breaks: Vec::new(),
            differentiate: false,
            pad: 8,
            min_cycles: 1.5,
        }
    }
}

/// An amplitude spectrum and its highest peak.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Spectrum {
    /// Bin frequencies, Hz (from 0 to Nyquist).
    pub freq_hz: Vec<f64>,
    /// |FFT| at each bin (arbitrary units).
    pub magnitude: Vec<f64>,
    /// Interpolated peak frequency, Hz.
    pub peak_hz: f64,
    /// Spacing of the resampled series, s.
    pub dt: f64,
}

impl Spectrum {
    /// Period of the peak, s.
    pub fn period(&self) -> f64 {
        1.0 / self.peak_hz
    }
}

/// Why no spectrum could be taken.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum SpectrumError {
    #[error("only {0} samples: at least 16 are needed for a spectrum")]
    TooShort(usize),
    #[error("sample times do not increase at sample {0}")]
    Unordered(usize),
    #[error("the spectrum has no peak above the lowest bins: the trace shows no oscillation")]
    NoPeak,
}

/// Evenly resample `(t, y)` at the median spacing by linear interpolation. Returns `(t0, dt, values)`.
pub fn resample(t: &[f64], y: &[f64]) -> Result<(f64, f64, Vec<f64>), SpectrumError> {
    let n = t.len().min(y.len());
    if n < 16 {
        return Err(SpectrumError::TooShort(n));
    }
    let mut d: Vec<f64> = Vec::with_capacity(n - 1);
    for k in 1..n {
        let s = t[k] - t[k - 1];
        if s.is_nan() || s <= 0.0 {
            return Err(SpectrumError::Unordered(k));
        }
        d.push(s);
    }
    d.sort_by(f64::total_cmp);
    let dt = d[d.len() / 2];
    let m = ((t[n - 1] - t[0]) / dt).floor() as usize + 1;
    let mut out = Vec::with_capacity(m);
    let mut j = 0;
    for k in 0..m {
        let tk = t[0] + k as f64 * dt;
        while j + 2 < n && t[j + 1] < tk {
            j += 1;
        }
        let w = ((tk - t[j]) / (t[j + 1] - t[j])).clamp(0.0, 1.0);
        out.push(y[j] + w * (y[j + 1] - y[j]));
    }
    Ok((t[0], dt, out))
}

/// Remove a least-squares straight line from `y[lo..hi]` (uniform spacing).
fn detrend(y: &mut [f64]) {
    let n = y.len();
    if n < 2 {
        if let Some(v) = y.first_mut() {
            *v = 0.0;
        }
        return;
    }
    let xm = (n as f64 - 1.0) / 2.0;
    let ym = y.iter().sum::<f64>() / n as f64;
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for (k, v) in y.iter().enumerate() {
        let x = k as f64 - xm;
        sxy += x * (v - ym);
        sxx += x * x;
    }
    let slope = sxy / sxx;
    for (k, v) in y.iter_mut().enumerate() {
        *v -= ym + slope * (k as f64 - xm);
    }
}

/// The amplitude spectrum of `(t, y)` prepared as `opts` says, with its interpolated peak.
pub fn spectrum(t: &[f64], y: &[f64], opts: &SpectrumOptions) -> Result<Spectrum, SpectrumError> {
    let (t0, dt, v) = resample(t, y)?;
    let cuts = break_indices(&opts.breaks, t0, dt, v.len());
    let v = prepare(v, &cuts, opts.differentiate);
    let n = v.len();
    if n < 16 {
        return Err(SpectrumError::TooShort(n));
    }
    let (power, nfft, longest) = stretch_power(&v, &cuts, opts.pad);
    let n = longest;
    let half = nfft / 2 + 1;
    let df = 1.0 / (nfft as f64 * dt);
    let freq_hz: Vec<f64> = (0..half).map(|k| k as f64 * df).collect();
    let magnitude: Vec<f64> = power.iter().map(|p| p.sqrt()).collect();
    // Skip the bins below `min_cycles` cycles per record (the window's leakage of what detrending
    // left).
    let kmin = ((opts.min_cycles / (n as f64 * dt)) / df).ceil() as usize;
    let kmin = kmin.max(1);
    let peak_bin = peak_bin(&magnitude, half, kmin)?;
    Ok(Spectrum {
        freq_hz,
        magnitude,
        peak_hz: peak_bin * df,
        dt,
    })
}

/// The resampled series' indices (first point at `t0`, spacing `dt`, `len` points) nearest to the
/// `breaks`, inside the series, sorted and without repeats.
fn break_indices(breaks: &[f64], t0: f64, dt: f64, len: usize) -> Vec<usize> {
    let mut cuts: Vec<usize> = breaks
        .iter()
        .map(|b| ((b - t0) / dt).round())
        .filter(|k| *k > 0.0 && *k < len as f64)
        .map(|k| k as usize)
        .collect();
    cuts.sort_unstable();
    cuts.dedup();
    cuts
}

/// A straight line removed from each stretch between `cuts`; then, when `differentiate`, the first
/// difference, zeroed across the cuts.
fn prepare(mut v: Vec<f64>, cuts: &[usize], differentiate: bool) -> Vec<f64> {
    let mut lo = 0;
    for &c in cuts.iter().chain(std::iter::once(&v.len())) {
        detrend(&mut v[lo..c]);
        lo = c;
    }
    if differentiate {
        let d: Vec<f64> = v.windows(2).map(|w| w[1] - w[0]).collect();
        v = d;
        // Zero the differences across the breaks, where the steps would sit.
        for &c in cuts {
            if c >= 1 && c - 1 < v.len() {
                v[c - 1] = 0.0;
            }
        }
    }
    v
}

/// The FFT powers of the stretches of `v` between `cuts` (those over eight points), each with its own
/// Hann window, added up; the FFT length is the next power of two at or above `pad` x the longest
/// stretch. Returns the powers (bins 0 to Nyquist), the FFT length and the longest stretch's length.
fn stretch_power(v: &[f64], cuts: &[usize], pad: usize) -> (Vec<f64>, usize, usize) {
    let n = v.len();
    // Each stretch gets its own Hann window and FFT, and their powers add (phases restart at each
    // move, so one transform over all of them would split the peak into sidebands).
    let mut stretches: Vec<(usize, usize)> = Vec::new();
    let mut lo = 0;
    for &c in cuts.iter().chain(std::iter::once(&n)) {
        let c = c.min(n);
        if c > lo + 8 {
            stretches.push((lo, c));
        }
        lo = c;
    }
    let longest = stretches.iter().map(|(a, b)| b - a).max().unwrap_or(n);
    let nfft = (pad.max(1) * longest).next_power_of_two();
    let mut power = vec![0.0; nfft / 2 + 1];
    let fft = FftPlanner::new().plan_fft_forward(nfft);
    for &(a, b) in &stretches {
        let m = b - a;
        let mut buf: Vec<Complex<f64>> = vec![Complex::new(0.0, 0.0); nfft];
        for (k, x) in v[a..b].iter().enumerate() {
            // Hann window.
            let w = 0.5 - 0.5 * (2.0 * std::f64::consts::PI * k as f64 / (m as f64 - 1.0)).cos();
            buf[k].re = x * w;
        }
        fft.process(&mut buf);
        for (p, c) in power.iter_mut().zip(&buf) {
            *p += c.norm_sqr();
        }
    }
    (power, nfft, longest)
}

/// The highest peak of `magnitude[kmin..half - 1]`, as a fractional bin interpolated by a parabola
/// through the logarithms of the three bins around it.
fn peak_bin(magnitude: &[f64], half: usize, kmin: usize) -> Result<f64, SpectrumError> {
    if kmin + 2 >= half {
        return Err(SpectrumError::NoPeak);
    }
    let (kbest, _) =
        magnitude[kmin..half - 1]
            .iter()
            .enumerate()
            .fold((kmin, f64::MIN), |(bk, bv), (i, &m)| {
                if m > bv {
                    (kmin + i, m)
                } else {
                    (bk, bv)
                }
            });
    if kbest == kmin || magnitude[kbest].is_nan() || magnitude[kbest] <= 0.0 {
        return Err(SpectrumError::NoPeak);
    }
    let (a, b, c) = (
        magnitude[kbest - 1].max(f64::MIN_POSITIVE).ln(),
        magnitude[kbest].ln(),
        magnitude[kbest + 1].max(f64::MIN_POSITIVE).ln(),
    );
    let denom = a - 2.0 * b + c;
    let delta = if denom < 0.0 {
        (0.5 * (a - c) / denom).clamp(-0.5, 0.5)
    } else {
        0.0
    };
    Ok(kbest as f64 + delta)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_a_sine_through_a_step() {
        let t: Vec<f64> = (0..4000).map(|k| k as f64).collect();
        let f0 = 1.0 / 437.0;
        let y: Vec<f64> = t
            .iter()
            .map(|&t| {
                (2.0 * std::f64::consts::PI * f0 * t).sin() * 1e-4
                    + if t > 2000.0 { 3e-4 } else { 0.0 }
            })
            .collect();
        let s = spectrum(
            &t,
            &y,
            &SpectrumOptions {
                breaks: vec![2000.0],
                ..Default::default()
            },
        )
        .unwrap();
        assert!((s.peak_hz / f0 - 1.0).abs() < 2e-3, "{}", s.period());
        let s = spectrum(
            &t,
            &y,
            &SpectrumOptions {
                differentiate: true,
                ..Default::default()
            },
        )
        .unwrap();
        assert!((s.peak_hz / f0 - 1.0).abs() < 5e-3, "{}", s.period());
    }
}
