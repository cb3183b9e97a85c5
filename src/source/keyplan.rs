//! Key-frames-only decoding for `--every`, shared by the video sources that read a container's
//! packet index: planning which frames a full decode would keep (from the packets' timestamps and
//! key flags, without decoding), and matching the pictures a key-frames-only decoder returns to
//! that plan.

use super::thin::Thinner;
use super::Delivery;
use crate::units::Seconds;
use std::cmp::Reverse;
use std::collections::{BinaryHeap, VecDeque};
use std::path::Path;

/// Packets held back to put decode order into presentation order (H.264 and HEVC reorder by at
/// most 16 frames; common practice, no source).
const REORDER_WINDOW: usize = 64;

/// Seconds of a timestamp in ticks of `time_base` (numerator, denominator), counted from `start`.
pub(super) fn seconds(pts: i64, start: i64, time_base: (i64, i64)) -> Seconds {
    Seconds((pts - start) as f64 * time_base.0 as f64 / time_base.1 as f64)
}

/// What the index says of one packet of the video stream, in file order.
#[derive(Debug, Clone, Copy)]
pub(super) struct PacketFacts {
    /// Presentation timestamp; `None` when the container has none.
    pub pts: Option<i64>,
    pub dts: Option<i64>,
    pub key: bool,
    /// Marked to be discarded (decoded for reference only, never shown).
    pub discard: bool,
}

/// What a key-frame-only decode will do.
#[derive(Debug)]
pub(super) struct KeyFramePlan {
    /// Frames it keeps, `(pts, index in presentation order)`.
    pub kept: VecDeque<(i64, u64)>,
    /// Whether packets arrive out of presentation order (B-frames).
    pub reorders: bool,
    /// Packets in the file (a short count against the container's frame count means the file
    /// ends early).
    pub packets: u64,
}

/// Plan a key-frame-only decode from the stream's packets, the stream's first timestamp and time
/// base; `None` when some interval's first frame is not a key frame (or timestamps are missing), so
/// a full decode is needed.
pub(super) fn plan(
    packets: impl IntoIterator<Item = PacketFacts>,
    start_pts: i64,
    time_base: (i64, i64),
    every: Seconds,
) -> Option<KeyFramePlan> {
    let mut heap: BinaryHeap<Reverse<(i64, bool)>> = BinaryHeap::new();
    let mut thin = Thinner::new(Some(every));
    let mut kept = VecDeque::new();
    let mut index = 0u64;
    let mut ok = true;
    let mut reorders = false;
    let mut visit = |pts: i64, key: bool, ok: &mut bool| {
        if thin.keep(seconds(pts, start_pts, time_base)) {
            if !key {
                *ok = false;
            }
            kept.push_back((pts, index));
        }
        index += 1;
    };
    let mut count = 0u64;
    for p in packets {
        count += 1;
        reorders |= p.pts != p.dts;
        if p.discard {
            continue;
        }
        let Some(pts) = p.pts else {
            ok = false;
            break;
        };
        heap.push(Reverse((pts, p.key)));
        if heap.len() > REORDER_WINDOW {
            if let Some(Reverse((t, k))) = heap.pop() {
                visit(t, k, &mut ok);
            }
        }
        if !ok {
            break;
        }
    }
    while ok {
        let Some(Reverse((t, k))) = heap.pop() else {
            break;
        };
        visit(t, k, &mut ok);
    }
    ok.then_some(KeyFramePlan {
        kept,
        reorders,
        packets: count,
    })
}

/// Match a decoded picture at `ticks` to the plan: planned key frames before it that the decoder
/// returned no picture for are queued on `pending` as unreadable, and the picture's frame index is
/// returned, or `None` when it is not a planned frame (then it is not delivered).
fn match_planned(
    plan: &mut VecDeque<(i64, u64)>,
    ticks: i64,
    start_pts: i64,
    time_base: (i64, i64),
    path: &Path,
    pending: &mut VecDeque<Delivery>,
) -> Option<u64> {
    while plan.front().is_some_and(|&(p, _)| p < ticks) {
        if let Some((p, i)) = plan.pop_front() {
            pending.push_back(Delivery::Unreadable {
                index: i,
                t: seconds(p, start_pts, time_base),
                origin: format!("frame {i} of {}", path.display()),
                reason: "the decoder returned no picture for this key frame".into(),
            });
        }
    }
    match plan.front() {
        Some(&(p, i)) if p == ticks => {
            plan.pop_front();
            Some(i)
        }
        _ => None,
    }
}

/// Which decoded pictures a video source delivers, and as which frame: with a plan, the planned key
/// frames (skipped ones reported as unreadable); without, every frame `--every` thinning keeps,
/// counted in presentation order.
#[derive(Debug)]
pub(super) struct Picker {
    thin: Thinner,
    plan: Option<VecDeque<(i64, u64)>>,
    start_pts: i64,
    time_base: (i64, i64),
    /// Frames accounted for so far: decoded, in a full decode; one past the last planned frame
    /// matched, with a plan.
    pub decoded: u64,
    /// Time of the last of them, s.
    pub last_t: f64,
}

impl Picker {
    pub fn new(
        every: Option<Seconds>,
        plan: Option<VecDeque<(i64, u64)>>,
        start_pts: i64,
        time_base: (i64, i64),
    ) -> Self {
        Self {
            thin: Thinner::new(every),
            plan,
            start_pts,
            time_base,
            decoded: 0,
            last_t: 0.0,
        }
    }

    /// Whether only planned key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.plan.is_some()
    }

    /// Whether planned frames are still waiting for their pictures.
    pub fn planned_left(&self) -> bool {
        self.plan.as_ref().is_some_and(|p| !p.is_empty())
    }

    /// The timestamps of the planned frames (none without a plan).
    #[cfg(feature = "linked-ffmpeg")]
    pub fn planned_ticks(&self) -> impl Iterator<Item = i64> + '_ {
        self.plan.iter().flat_map(|p| p.iter().map(|&(pts, _)| pts))
    }

    /// The time of a picture at `ticks` (of the stream's time base), and its frame index when it is
    /// delivered (`None`: it is not); planned key frames the decoder gave no picture for are
    /// queued on `pending` as unreadable.
    pub fn pick(
        &mut self,
        ticks: i64,
        path: &Path,
        pending: &mut VecDeque<Delivery>,
    ) -> (Seconds, Option<u64>) {
        let t = seconds(ticks, self.start_pts, self.time_base);
        let index = match self.plan.as_mut() {
            None => {
                let i = self.decoded;
                self.decoded += 1;
                self.last_t = t.0;
                self.thin.keep(t).then_some(i)
            }
            Some(plan) => {
                let i = match_planned(plan, ticks, self.start_pts, self.time_base, path, pending);
                if let Some(i) = i {
                    self.decoded = i + 1;
                    self.last_t = t.0;
                }
                i
            }
        };
        (t, index)
    }
}

/// What to say when the container's index lists `nb_frames` frames but only `packets` packets are in
/// the file (a key-frames-only decode never reads the missing end, so only the index tells).
pub(super) fn short_file(nb_frames: Option<u64>, packets: u64) -> Option<String> {
    nb_frames
        .filter(|&n| packets < n)
        .map(|n| format!("the file's index lists {n} frames but only {packets} are in the file"))
}

/// The number of frames a source expects to deliver, for the progress bar: the plan's, else the
/// intervals in the duration, else the stream's frame count or duration times frame rate.
pub(super) fn expected_frames(
    planned: Option<usize>,
    every: Option<Seconds>,
    duration_s: Option<f64>,
    nb_frames: Option<u64>,
    fps: Option<f64>,
) -> Option<u64> {
    match (planned, every) {
        (Some(n), _) => Some(n as u64),
        (None, Some(e)) => duration_s.map(|d| (d / e.0).ceil() as u64),
        (None, None) => nb_frames.or_else(|| Some((duration_s? * fps?).round() as u64)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn facts(list: &[(i64, i64, bool)]) -> Vec<PacketFacts> {
        list.iter()
            .map(|&(pts, dts, key)| PacketFacts {
                pts: Some(pts),
                dts: Some(dts),
                key,
                discard: false,
            })
            .collect()
    }

    #[test]
    fn key_frame_at_every_interval_start_gives_a_plan() {
        // 10 fps in ticks of 1/10 s, key frames every 10 frames, one kept per second.
        let p: Vec<_> = (0..30).map(|i| (i, i, i % 10 == 0)).collect();
        let plan = plan(facts(&p), 0, (1, 10), Seconds(1.0)).expect("plan");
        assert_eq!(plan.kept, VecDeque::from(vec![(0, 0), (10, 10), (20, 20)]));
        assert!(!plan.reorders);
        assert_eq!(plan.packets, 30);
    }

    #[test]
    fn sparse_key_frames_need_a_full_decode() {
        let p: Vec<_> = (0..30).map(|i| (i, i, i % 15 == 0)).collect();
        assert!(plan(facts(&p), 0, (1, 10), Seconds(1.0)).is_none());
    }

    #[test]
    fn packets_in_decode_order_are_planned_in_presentation_order() {
        // I P B B pattern: pts 0 3 1 2 | 4 7 5 6, key frames at 0 and 4, 2 fps intervals of 4 ticks.
        let p = [
            (0, -1, true),
            (3, 0, false),
            (1, 1, false),
            (2, 2, false),
            (4, 3, true),
            (7, 4, false),
            (5, 5, false),
            (6, 6, false),
        ];
        let plan = plan(facts(&p), 0, (1, 4), Seconds(1.0)).expect("plan");
        assert!(plan.reorders);
        assert_eq!(plan.kept, VecDeque::from(vec![(0, 0), (4, 4)]));
    }

    #[test]
    fn missing_timestamps_need_a_full_decode() {
        let mut p = facts(&[(0, 0, true), (1, 1, false)]);
        p[1].pts = None;
        assert!(plan(p, 0, (1, 10), Seconds(1.0)).is_none());
    }

    #[test]
    fn skipped_key_frames_are_reported_and_others_matched() {
        let mut plan = VecDeque::from(vec![(0, 0), (10, 10), (20, 20)]);
        let mut pending = VecDeque::new();
        let path = Path::new("clip.mp4");
        assert_eq!(
            match_planned(&mut plan, 0, 0, (1, 10), path, &mut pending),
            Some(0)
        );
        // The picture at 10 never came; the one at 20 did.
        assert_eq!(
            match_planned(&mut plan, 20, 0, (1, 10), path, &mut pending),
            Some(20)
        );
        assert_eq!(pending.len(), 1);
        assert!(matches!(
            pending[0],
            Delivery::Unreadable { index: 10, t, .. } if (t.0 - 1.0).abs() < 1e-12
        ));
        // An unplanned picture is not delivered.
        assert_eq!(
            match_planned(&mut plan, 25, 0, (1, 10), path, &mut pending),
            None
        );
    }
}
