//! The recorder's tests' pieces: a synthetic image sequence with known spot positions and times,
//! and `spotlever record` on it, run to its end or started with piped standard streams.

use super::cli::{bin, run, Ran};
use spotlever::synth::{render_flat_spot, FlatSpot, Sensor};
use spotlever::units::PixelPoint;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

pub const W: usize = 160;
pub const H: usize = 120;
/// Spot amplitude, background and noise of the test frames (DN).
pub const PEAK: f64 = 150.0;
pub const NOISE: f64 = 2.0;

/// Truth of frame `i` of a sequence at `fps`: a slow swing of the spot in x.
pub fn truth(i: usize, fps: f64) -> PixelPoint {
    let t = i as f64 / fps;
    PixelPoint {
        x: 80.0 + 25.0 * (2.0 * std::f64::consts::PI * t / 8.0).sin(),
        y: 60.3,
    }
}

/// Write `n` PNG frames at `fps` with a `times.csv` into `dir`; returns the frame times.
pub fn write_sequence(dir: &Path, n: usize, fps: f64) -> Vec<f64> {
    std::fs::create_dir_all(dir).unwrap();
    let mut times = String::from("file,t_s\n");
    let mut ts = Vec::new();
    for i in 0..n {
        let spot = FlatSpot {
            width: W,
            height: H,
            centre: truth(i, fps),
            peak_dn: PEAK,
            background_dn: 20.0,
            sigma_px: 2.5,
            sensor: Sensor {
                noise_dn: NOISE,
                ..Sensor::default()
            },
        };
        let plane = render_flat_spot(&spot, i as u64 + 1).unwrap();
        let bytes: Vec<u8> = plane.values().map(|v| v as u8).collect();
        let name = format!("img_{i:05}.png");
        image::GrayImage::from_raw(W as u32, H as u32, bytes)
            .unwrap()
            .save(dir.join(&name))
            .unwrap();
        let t = i as f64 / fps;
        times.push_str(&format!("{name},{t:.6}\n"));
        ts.push(t);
    }
    std::fs::write(dir.join("times.csv"), times).unwrap();
    ts
}

/// `spotlever record --source SEQ --out RUN` plus `extra`.
fn record_command(seq: &Path, out: &Path, extra: &[&str]) -> Command {
    let mut c = bin();
    c.arg("record")
        .arg("--source")
        .arg(seq)
        .arg("--out")
        .arg(out)
        .args(extra);
    c
}

/// `spotlever record --source SEQ --out RUN` plus `extra`, run to the end.
pub fn record_to_end(seq: &Path, out: &Path, extra: &[&str]) -> Ran {
    run(record_command(seq, out, extra).stdin(Stdio::null()))
}

/// Wait until `path` holds at least `rows` lines (header included), or panic after `limit`.
pub fn wait_for_lines(path: &Path, rows: usize, limit: Duration) {
    let start = Instant::now();
    loop {
        let n = std::fs::read_to_string(path)
            .map(|s| s.lines().count())
            .unwrap_or(0);
        if n >= rows {
            return;
        }
        assert!(
            start.elapsed() < limit,
            "{} has {n} lines after {limit:?}",
            path.display()
        );
        std::thread::sleep(Duration::from_millis(50));
    }
}

/// The run folder of a test: `TMP/run`.
pub fn run_dir(tmp: &Path) -> PathBuf {
    tmp.join("run")
}

/// Start `spotlever record --source SEQ --out RUN` plus `extra` with piped standard streams.
pub fn spawn_record(seq: &Path, out: &Path, extra: &[&str]) -> std::process::Child {
    record_command(seq, out, extra)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}
