//! The run's own spot strength: the median light of the spots found lately, against which a frame's
//! "spot" is judged too weak to be the laser's (a blocked or mostly blocked beam, a stray reflection).
//!
//! The light of a real spot varies from frame to frame: fully developed speckle integrated over a
//! spot of M grains has a relative spread of 1/sqrt(M) (the integrated intensity is close to
//! gamma-distributed with shape M: Goodman, *Speckle Phenomena in Optics*, ch. 3, cited from
//! memory), a printed line across the spot takes part of it, the camera's exposure drifts. A few
//! grains (M = 4) give P(integral < 0.1 x mean) = P(Gamma(4, 1) < 0.4)
//! = 1 - exp(-0.4) (1 + 0.4 + 0.4^2/2 + 0.4^3/6) = 7.8e-4, so a frame keeps its spot unless its light
//! falls under a tenth of the run's median. What a blocked beam leaves (scattered room light, the
//! edge of a shadow) is a few percent of it.

use std::collections::VecDeque;

/// How many of the latest found spots the median is taken over: long enough that a few dim frames
/// do not move it, short enough to follow a laser that slowly dims (common practice, no source).
const REMEMBERED: usize = 31;
/// Spots found before any is judged: the median of fewer is not yet the run's.
const BEFORE_JUDGING: usize = 5;
/// A spot with less light than this fraction of the median is weak (see the module's text).
pub(crate) const WEAK_FRACTION: f64 = 0.1;

/// The integrals of the latest found spots.
#[derive(Debug, Clone, Default)]
pub(crate) struct RunStrength {
    recent: VecDeque<f64>,
}

impl RunStrength {
    /// The median integral of the remembered spots, once there are enough of them.
    pub(crate) fn typical(&self) -> Option<f64> {
        if self.recent.len() < BEFORE_JUDGING {
            return None;
        }
        let mut v: Vec<f64> = self.recent.iter().copied().collect();
        v.sort_by(f64::total_cmp);
        let n = v.len();
        Some(if n % 2 == 1 {
            v[n / 2]
        } else {
            0.5 * (v[n / 2 - 1] + v[n / 2])
        })
    }

    /// Whether a spot of `integral` DN is too weak to be the run's spot.
    pub(crate) fn is_weak(&self, integral: f64) -> bool {
        self.typical()
            .is_some_and(|t| integral.is_nan() || integral < WEAK_FRACTION * t)
    }

    /// Remember a spot that was kept.
    pub(crate) fn learn(&mut self, integral: f64) {
        if integral.is_finite() && integral > 0.0 {
            if self.recent.len() == REMEMBERED {
                self.recent.pop_front();
            }
            self.recent.push_back(integral);
        }
    }

    /// Forget the run (the pictures changed size, so their light is another run's).
    pub(crate) fn reset(&mut self) {
        self.recent.clear();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nothing_is_weak_before_the_run_has_a_median() {
        let mut s = RunStrength::default();
        for _ in 0..BEFORE_JUDGING - 1 {
            s.learn(1000.0);
        }
        assert!(!s.is_weak(1.0));
        s.learn(1000.0);
        assert!(s.is_weak(99.0));
        assert!(!s.is_weak(101.0));
        assert!(s.is_weak(f64::NAN));
    }

    #[test]
    fn the_median_follows_a_slowly_dimming_laser_and_ignores_a_few_outliers() {
        let mut s = RunStrength::default();
        for i in 0..200 {
            s.learn(1000.0 * 0.99f64.powi(i));
        }
        let t = s.typical().unwrap();
        let last = 1000.0 * 0.99f64.powi(199);
        assert!((t / last - 1.0).abs() < 0.2, "median {t}, latest {last}");
        for _ in 0..10 {
            s.learn(1e9);
        }
        assert!(s.typical().unwrap() < 2.0 * last);
    }
}
