//! Fixed-size summaries of the recent run for the display: the trace of the last minutes in time bins
//! (min, max and mean per bin) and the recent frame rate. Their memory does not grow with run length.

use std::collections::VecDeque;

/// One time bin of the trace.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bin {
    /// Start of the bin, s.
    pub t0: f64,
    pub min: f64,
    pub max: f64,
    pub sum: f64,
    pub n: u32,
}

impl Bin {
    pub fn mean(&self) -> f64 {
        self.sum / self.n as f64
    }
}

/// The last `span_s` seconds of one value, in `bins` equal bins.
#[derive(Debug, Clone)]
pub struct TraceHistory {
    bin_s: f64,
    capacity: usize,
    bins: VecDeque<Bin>,
}

impl TraceHistory {
    pub fn new(span_s: f64, bins: usize) -> Self {
        let capacity = bins.max(2);
        Self {
            bin_s: (span_s / capacity as f64).max(1e-6),
            capacity,
            bins: VecDeque::with_capacity(capacity + 1),
        }
    }

    /// The time covered, s.
    pub fn span_s(&self) -> f64 {
        self.bin_s * self.capacity as f64
    }

    /// Add one sample; non-finite values are ignored.
    pub fn push(&mut self, t: f64, v: f64) {
        if !(t.is_finite() && v.is_finite()) {
            return;
        }
        let t0 = (t / self.bin_s).floor() * self.bin_s;
        match self.bins.back_mut() {
            Some(b) if (b.t0 - t0).abs() < self.bin_s * 0.5 => {
                b.min = b.min.min(v);
                b.max = b.max.max(v);
                b.sum += v;
                b.n += 1;
            }
            _ => {
                self.bins.push_back(Bin {
                    t0,
                    min: v,
                    max: v,
                    sum: v,
                    n: 1,
                });
            }
        }
        // Drop bins older than the span (also after a jump in time).
        while let Some(front) = self.bins.front() {
            if front.t0 < t0 - self.span_s() + self.bin_s * 0.5 || self.bins.len() > self.capacity {
                self.bins.pop_front();
            } else {
                break;
            }
        }
    }

    pub fn bins(&self) -> impl Iterator<Item = &Bin> {
        self.bins.iter()
    }

    pub fn is_empty(&self) -> bool {
        self.bins.is_empty()
    }

    /// Smallest and largest value held, if any.
    pub fn range(&self) -> Option<(f64, f64)> {
        let lo = self.bins.iter().map(|b| b.min).reduce(f64::min)?;
        let hi = self.bins.iter().map(|b| b.max).reduce(f64::max)?;
        Some((lo, hi))
    }
}

/// Frames per second over the last few seconds, from arrival times.
#[derive(Debug, Clone)]
pub struct RateMeter {
    window_s: f64,
    times: VecDeque<f64>,
    cap: usize,
}

impl RateMeter {
    /// Rate over the last `window_s` seconds; at most `cap` arrivals are held.
    pub fn new(window_s: f64, cap: usize) -> Self {
        Self {
            window_s,
            times: VecDeque::with_capacity(cap),
            cap: cap.max(2),
        }
    }

    pub fn tick(&mut self, now_s: f64) {
        self.times.push_back(now_s);
        while self.times.len() > self.cap {
            self.times.pop_front();
        }
        while let Some(&f) = self.times.front() {
            if f < now_s - self.window_s {
                self.times.pop_front();
            } else {
                break;
            }
        }
    }

    /// Frames per second, `None` until two arrivals are known.
    pub fn rate(&self) -> Option<f64> {
        let (first, last) = (*self.times.front()?, *self.times.back()?);
        let n = self.times.len();
        (n >= 2 && last > first).then(|| (n - 1) as f64 / (last - first))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bins_summarise_and_old_ones_go() {
        let mut h = TraceHistory::new(10.0, 10);
        for i in 0..100 {
            let t = i as f64 * 0.1;
            h.push(t, t);
        }
        assert_eq!(h.bins().count(), 10);
        let first = h.bins().next().unwrap();
        assert_eq!(first.n, 10);
        assert!((first.mean() - 0.45).abs() < 1e-9);
        // Ten more seconds: only the newest bins remain, memory bounded.
        for i in 100..200 {
            let t = i as f64 * 0.1;
            h.push(t, -t);
        }
        assert_eq!(h.bins().count(), 10);
        let (lo, hi) = h.range().unwrap();
        assert!(
            (lo + 19.9).abs() < 1e-9 && (hi + 10.0).abs() < 1e-9,
            "{lo} {hi}"
        );
        h.push(f64::NAN, 1.0);
        assert_eq!(h.bins().count(), 10);
        // A long jump forward leaves one bin.
        h.push(1000.0, 3.0);
        assert_eq!(h.bins().count(), 1);
    }

    #[test]
    fn rate_from_arrivals() {
        let mut r = RateMeter::new(2.0, 1000);
        assert_eq!(r.rate(), None);
        for i in 0..=300 {
            r.tick(i as f64 / 30.0);
        }
        let fps = r.rate().unwrap();
        assert!((fps - 30.0).abs() < 1e-6, "{fps}");
    }
}
