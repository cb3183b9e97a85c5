//! Cost of the live loop: time per 1280x720 frame (spot finding, track row, every 30th frame kept as
//! JPEG), and resident memory sampled at the start, middle and end of a replayed 30-minute run (54 000
//! frames at 30 fps, read from memory at full speed through the whole recording session).
//!
//! `cargo bench --bench live`. Environment: SPOTLEVER_LIVE_FRAMES (default 54000) and
//! SPOTLEVER_LIVE_SIZE (WxH of the long run, default 640x360), SPOTLEVER_LIVE_SKIP_MEMORY=1 to skip it.

use criterion::{criterion_group, Criterion};
use spotlever::frame::{Channel, Frame, Plane};
use spotlever::record::feed::{OnFault, Opener};
use spotlever::record::input::Controls;
use spotlever::record::keep::FrameKeeper;
use spotlever::record::live::{LiveLoop, LiveSetup, TimeBase};
use spotlever::record::run_dir::Existing;
use spotlever::record::session::{record, Display, SessionConfig};
use spotlever::source::replay::{Pace, ReplaySource};
use spotlever::source::{Delivery, FrameSource, SourceError, SourceInfo};
use spotlever::spot::SpotConfig;
use spotlever::synth::{render_flat_spot, FlatSpot, Sensor};
use spotlever::track::TrackWriter;
use spotlever::units::{PixelPoint, Seconds};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

const FPS: f64 = 30.0;

/// `k` frames of a spot swinging by ±15 px (about 3 px per frame, a brisk swing; the cycle wraps
/// smoothly so the tracker follows it as it would a real run).
fn frames(w: usize, h: usize, k: usize) -> Vec<Plane> {
    (0..k)
        .map(|i| {
            let a = i as f64 / k as f64 * std::f64::consts::TAU;
            render_flat_spot(
                &FlatSpot {
                    width: w,
                    height: h,
                    centre: PixelPoint {
                        x: w as f64 * 0.5 + 15.0 * a.sin(),
                        y: h as f64 * 0.5 + 3.3,
                    },
                    peak_dn: 160.0,
                    background_dn: 25.0,
                    sigma_px: 3.0,
                    sensor: Sensor::default(),
                },
                i as u64 + 1,
            )
            .expect("valid synthetic spot")
        })
        .collect()
}

fn bench_live(c: &mut Criterion) {
    let planes = frames(1280, 720, 30);
    let dir = tempfile::tempdir().expect("temporary folder");
    let track = TrackWriter::create(&dir.path().join("track.csv"), false).expect("track file");
    let keeper = FrameKeeper::open(&dir.path().join("frames"), 30).expect("frames folder");
    let mut live = LiveLoop::new(LiveSetup {
        spot: SpotConfig::default(),
        calibration: None,
        track,
        keeper: Some(keeper),
        frame_base: 0,
        time_base: TimeBase::Offset(0.0),
        frame_interval_s: Some(1.0 / FPS),
        history_s: 300.0,
    });
    let mut i = 0u64;
    let start = Instant::now();
    c.bench_function("live_frame_1280x720_keep_every_30", |b| {
        // CPU time of this thread in the loop's work only (the frame's copy is made outside), so the
        // figure does not depend on how busy the machine is.
        b.iter_custom(|iters| {
            let mut spent = Duration::ZERO;
            for _ in 0..iters {
                let d = Delivery::Frame(Frame {
                    index: i,
                    t: Seconds(i as f64 / FPS),
                    plane: planes[(i % 30) as usize].clone(),
                    origin: String::new(),
                });
                i += 1;
                let c0 = thread_cpu();
                live.handle(d, start.elapsed().as_secs_f64())
                    .expect("frame handled");
                spent += thread_cpu().saturating_sub(c0);
            }
            spent
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30);
    targets = bench_live
}

/// CPU time used by the calling thread.
fn thread_cpu() -> Duration {
    // SAFETY: clock_gettime fills the struct we own.
    unsafe {
        let mut ts: libc::timespec = std::mem::zeroed();
        if libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut ts) != 0 {
            return Duration::ZERO;
        }
        Duration::new(ts.tv_sec as u64, ts.tv_nsec as u32)
    }
}

/// Resident set size of this process, kB, from /proc/self/status.
fn rss_kb() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmRSS:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// CPU time (user + system) of this process so far, s.
fn cpu_s() -> f64 {
    // SAFETY: getrusage fills the struct we own.
    unsafe {
        let mut u: libc::rusage = std::mem::zeroed();
        if libc::getrusage(libc::RUSAGE_SELF, &mut u) != 0 {
            return f64::NAN;
        }
        let tv = |t: libc::timeval| t.tv_sec as f64 + t.tv_usec as f64 * 1e-6;
        tv(u.ru_utime) + tv(u.ru_stime)
    }
}

/// An in-memory source: `n` frames cycling through `planes`, sampling RSS at given frames.
struct Memory {
    info: SourceInfo,
    planes: Arc<Vec<Plane>>,
    n: u64,
    next: u64,
    samples: Arc<Mutex<Vec<(u64, u64)>>>,
}

impl FrameSource for Memory {
    fn info(&self) -> &SourceInfo {
        &self.info
    }
    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        if self.next >= self.n {
            return None;
        }
        let i = self.next;
        self.next += 1;
        if i == 0 || i == 1000 || i == self.n / 2 || i + 1 == self.n {
            if let (Some(kb), Ok(mut s)) = (rss_kb(), self.samples.lock()) {
                s.push((i, kb));
            }
        }
        Some(Ok(Delivery::Frame(Frame {
            index: i,
            t: Seconds(i as f64 / FPS),
            plane: self.planes[(i % self.planes.len() as u64) as usize].clone(),
            origin: String::new(),
        })))
    }
}

fn memory_over_long_replay() {
    let n: u64 = std::env::var("SPOTLEVER_LIVE_FRAMES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(54_000);
    let (w, h) = std::env::var("SPOTLEVER_LIVE_SIZE")
        .ok()
        .and_then(|v| {
            let (a, b) = v.split_once('x')?;
            Some((a.parse().ok()?, b.parse().ok()?))
        })
        .unwrap_or((640usize, 360usize));
    let planes = Arc::new(frames(w, h, 30));
    let samples = Arc::new(Mutex::new(Vec::new()));
    let dir = tempfile::tempdir().expect("temporary folder");
    let (p, s) = (Arc::clone(&planes), Arc::clone(&samples));
    let opener: Opener = Box::new(move || {
        let m = Memory {
            info: SourceInfo {
                description: "frames in memory".into(),
                width: w,
                height: h,
                expected_frames: Some(n),
                crop: None,
            },
            planes: Arc::clone(&p),
            n,
            next: 0,
            samples: Arc::clone(&s),
        };
        Ok(Box::new(ReplaySource::new(Box::new(m), Pace::Max)) as Box<dyn FrameSource>)
    });
    let cpu0 = cpu_s();
    let t0 = Instant::now();
    let summary = record(
        SessionConfig {
            out: dir.path().join("run"),
            existing: Existing::Refuse,
            source_kind: "replay".into(),
            source_name: "memory".into(),
            fps_requested: None,
            frame_interval_s: None,
            channel: Channel::Luma,
            calibration: None,
            spot: SpotConfig::default(),
            keep_every: 30,
            display: Display::Silent,
            controls: Controls::Nothing,
            duration_s: None,
            on_fault: OnFault::Stop,
            stall_after: std::time::Duration::from_secs(5),
            run_per_wall: 0.0,
            clock_times: false,
        },
        opener,
    )
    .expect("replayed run");
    let wall = t0.elapsed().as_secs_f64();
    let cpu = cpu_s() - cpu0;
    println!(
        "long replay: {} frames of {w}x{h} ({:.1} min at 30 fps) in {wall:.1} s, {} kept, {:.2} ms CPU per frame (all threads)",
        summary.rows,
        summary.rows as f64 / FPS / 60.0,
        summary.kept,
        cpu * 1e3 / summary.rows.max(1) as f64
    );
    for (i, kb) in samples.lock().map(|s| s.clone()).unwrap_or_default() {
        println!("  RSS at frame {i:>6}: {kb} kB");
    }
}

fn main() {
    benches();
    let bench_mode = std::env::args().any(|a| a == "--bench");
    if bench_mode && std::env::var_os("SPOTLEVER_LIVE_SKIP_MEMORY").is_none() {
        memory_over_long_replay();
    }
    Criterion::default().configure_from_args().final_summary();
}
