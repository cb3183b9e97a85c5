//! `--every` thinning: keep the first frame of each interval `[k·E, (k+1)·E)` of the frame time.
//!
//! The rule depends only on the frame times, so a decoder that skips frames (key frames only) keeps
//! exactly the frames a full decode would keep whenever the first frame of every interval is a key
//! frame; [`keyframes_suffice`] checks that from the stream's index before decoding.

use crate::units::Seconds;

/// Times within this of an interval boundary count as on it (guards against rounding of
/// tick-to-second conversions; common practice, no source).
const BOUNDARY_SLACK_S: f64 = 1e-6;

fn interval_of(t: f64, every: f64) -> i64 {
    ((t + BOUNDARY_SLACK_S) / every).floor() as i64
}

/// Decides, frame by frame in time order, which frames to keep.
#[derive(Debug, Clone)]
pub struct Thinner {
    every: Option<f64>,
    last: Option<i64>,
}

impl Thinner {
    pub fn new(every: Option<Seconds>) -> Self {
        Self {
            every: every.map(|s| s.0),
            last: None,
        }
    }
    /// Whether the frame at `t` is kept (the first one seen in its interval).
    pub fn keep(&mut self, t: Seconds) -> bool {
        let Some(e) = self.every else { return true };
        let k = interval_of(t.0, e);
        if self.last.is_some_and(|l| k <= l) {
            return false;
        }
        self.last = Some(k);
        true
    }
}

/// Given `(time, is_key_frame)` in presentation order, whether every kept frame is a key frame.
pub fn keyframes_suffice(
    frames: impl IntoIterator<Item = (Seconds, bool)>,
    every: Seconds,
) -> bool {
    let mut th = Thinner::new(Some(every));
    frames.into_iter().all(|(t, key)| !th.keep(t) || key)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_first_of_each_interval() {
        let mut th = Thinner::new(Some(Seconds(1.0)));
        let kept: Vec<usize> = (0..95)
            .filter(|&i| th.keep(Seconds(i as f64 / 30.0)))
            .collect();
        assert_eq!(kept, [0, 30, 60, 90]);
        let mut all = Thinner::new(None);
        assert!((0..5).all(|i| all.keep(Seconds(i as f64))));
    }

    #[test]
    fn key_frame_check() {
        let gop30 = (0..300).map(|i| (Seconds(i as f64 / 30.0), i % 30 == 0));
        assert!(keyframes_suffice(gop30.clone(), Seconds(1.0)));
        assert!(keyframes_suffice(gop30.clone(), Seconds(2.0)));
        assert!(!keyframes_suffice(gop30, Seconds(0.5)));
        let gop45 = (0..300).map(|i| (Seconds(i as f64 / 30.0), i % 45 == 0));
        assert!(!keyframes_suffice(gop45, Seconds(1.0)));
    }
}
