//! Replay: plays any frame source back at its recorded pace times a factor, or as fast as frames can be
//! read, so the live loop can be driven by a recording instead of a camera.
//!
//! Frames keep the source's own times; only the moment of delivery is paced. The pace clock starts
//! when the first frame is delivered, so a source whose first frame is at t = 5 s does not wait 5 s.

use super::{Delivery, FrameSource, SourceError, SourceInfo};
use crate::units::Seconds;
use std::fmt;
use std::str::FromStr;
use std::time::{Duration, Instant};
use thiserror::Error;

/// How fast a replay runs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pace {
    /// Recorded pace times this factor (2.0 plays twice as fast).
    Factor(f64),
    /// As fast as frames can be read.
    Max,
}

impl Default for Pace {
    fn default() -> Self {
        Pace::Factor(1.0)
    }
}

impl fmt::Display for Pace {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Pace::Factor(x) => write!(f, "{x}x"),
            Pace::Max => write!(f, "max"),
        }
    }
}

/// A pace that could not be read.
#[derive(Debug, Error, PartialEq)]
#[error("speed {text:?} is not valid: give a positive factor such as 1, 0.5 or 10, or 'max' for as fast as possible")]
pub struct PaceError {
    pub text: String,
}

impl FromStr for Pace {
    type Err = PaceError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let t = s.trim();
        if t.eq_ignore_ascii_case("max") {
            return Ok(Pace::Max);
        }
        let t_num = t.strip_suffix(['x', 'X']).unwrap_or(t);
        match t_num.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 => Ok(Pace::Factor(v)),
            _ => Err(PaceError {
                text: s.to_string(),
            }),
        }
    }
}

/// Wraps a source and paces its deliveries.
pub struct ReplaySource {
    inner: Box<dyn FrameSource>,
    pace: Pace,
    /// When the first frame was handed out, and its source time.
    anchor: Option<(Instant, f64)>,
    info: SourceInfo,
}

impl ReplaySource {
    pub fn new(inner: Box<dyn FrameSource>, pace: Pace) -> Self {
        let mut info = inner.info().clone();
        info.description = format!("replay of {} at {pace}", info.description);
        Self {
            inner,
            pace,
            anchor: None,
            info,
        }
    }

    /// How long to wait before delivering a frame with source time `t`, seen at `now`.
    fn wait_for(&mut self, t: Seconds, now: Instant) -> Duration {
        let factor = match self.pace {
            Pace::Max => return Duration::ZERO,
            Pace::Factor(f) => f,
        };
        let (start, t0) = *self.anchor.get_or_insert((now, t.0));
        let due = (t.0 - t0) / factor;
        if !due.is_finite() || due <= 0.0 {
            return Duration::ZERO;
        }
        let due = start + Duration::from_secs_f64(due);
        due.saturating_duration_since(now)
    }
}

fn delivery_time(d: &Delivery) -> Seconds {
    match d {
        Delivery::Frame(f) => f.t,
        Delivery::Unreadable { t, .. } => *t,
    }
}

impl FrameSource for ReplaySource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        let item = self.inner.next_delivery()?;
        if let Ok(d) = &item {
            let wait = self.wait_for(delivery_time(d), Instant::now());
            if !wait.is_zero() {
                std::thread::sleep(wait);
            }
        }
        Some(item)
    }

    fn recycle(&mut self, frame: crate::frame::Frame) {
        self.inner.recycle(frame);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frame::{Frame, Plane};

    struct Ticks {
        info: SourceInfo,
        times: Vec<f64>,
        next: usize,
    }

    impl FrameSource for Ticks {
        fn info(&self) -> &SourceInfo {
            &self.info
        }
        fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
            let t = *self.times.get(self.next)?;
            let index = self.next as u64;
            self.next += 1;
            Some(Ok(Delivery::Frame(Frame {
                index,
                t: Seconds(t),
                plane: Plane::from_u8(2, 2, &[0; 4]),
                origin: format!("tick {index}"),
            })))
        }
    }

    fn ticks(times: &[f64]) -> Box<dyn FrameSource> {
        Box::new(Ticks {
            info: SourceInfo {
                description: "ticks".into(),
                ..Default::default()
            },
            times: times.to_vec(),
            next: 0,
        })
    }

    #[test]
    fn pace_text() {
        assert_eq!("max".parse::<Pace>(), Ok(Pace::Max));
        assert_eq!("2".parse::<Pace>(), Ok(Pace::Factor(2.0)));
        assert_eq!("0.5x".parse::<Pace>(), Ok(Pace::Factor(0.5)));
        for bad in ["0", "-1", "fast", "nan", "inf", ""] {
            let e = bad.parse::<Pace>().unwrap_err().to_string();
            assert!(e.contains("positive factor"), "{bad}: {e}");
        }
    }

    #[test]
    fn waits_follow_source_times_over_factor() {
        let mut r = ReplaySource::new(ticks(&[]), Pace::Factor(4.0));
        let now = Instant::now();
        // The first frame anchors the clock: no wait, whatever its time.
        assert_eq!(r.wait_for(Seconds(5.0), now), Duration::ZERO);
        // 2 s of source time later at 4x is 0.5 s of wall time.
        assert_eq!(r.wait_for(Seconds(7.0), now), Duration::from_millis(500));
        let later = now + Duration::from_millis(200);
        assert_eq!(r.wait_for(Seconds(7.0), later), Duration::from_millis(300));
        // Late frames go out at once.
        assert_eq!(r.wait_for(Seconds(5.1), later), Duration::ZERO);
        let mut m = ReplaySource::new(ticks(&[]), Pace::Max);
        assert_eq!(m.wait_for(Seconds(100.0), now), Duration::ZERO);
    }

    #[test]
    fn delivers_everything_in_order_with_source_times() {
        let times = [0.0, 0.02, 0.04, 0.06];
        let mut r = ReplaySource::new(ticks(&times), Pace::Factor(1.0));
        assert!(r.info().description.contains("replay of ticks"));
        let start = Instant::now();
        let mut got = Vec::new();
        while let Some(d) = r.next_delivery() {
            match d.unwrap() {
                Delivery::Frame(f) => got.push(f.t.0),
                other => panic!("unexpected {other:?}"),
            }
        }
        assert_eq!(got, times);
        // The last frame is due 60 ms after the first; sleeping never ends early.
        assert!(start.elapsed() >= Duration::from_millis(60));
    }
}
