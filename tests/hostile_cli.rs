//! The binary against hostile command lines, one table row per way a run could destroy a user's file,
//! hang, take all memory, panic or say something unclear: each row checks the exit code, that every
//! input file is byte-identical afterwards, what the message says (and, where it matters, what it
//! must not say, or that a cause appears once), and for the hang cases that the run ended in time.

mod support;

use std::fs;
use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};
use support::cli::{bin, run};

#[path = "hostile_cli/bench.rs"]
mod bench;
#[path = "hostile_cli/cases.rs"]
mod cases;

use bench::{stalling_ffmpeg, Bench};
use cases::{clobber_cases, limit_cases, message_cases, stall_cases};

/// One hostile command line and what must come of it.
struct Case {
    name: &'static str,
    args: Vec<String>,
    env: Vec<(&'static str, String)>,
    code: i32,
    /// Files that must be byte-identical after the run.
    keep: Vec<PathBuf>,
    says: Vec<&'static str>,
    /// Text that must appear exactly once in standard error.
    once: Vec<&'static str>,
    not: Vec<&'static str>,
    /// The run must end within this long.
    within: Duration,
}

fn case(name: &'static str, args: &[&dyn AsRef<Path>], code: i32) -> Case {
    Case {
        name,
        args: args
            .iter()
            .map(|a| a.as_ref().to_string_lossy().into_owned())
            .collect(),
        env: Vec::new(),
        code,
        keep: Vec::new(),
        says: Vec::new(),
        once: Vec::new(),
        not: Vec::new(),
        within: Duration::from_secs(60),
    }
}

impl Case {
    fn keep(mut self, files: &[&Path]) -> Self {
        self.keep = files.iter().map(|p| p.to_path_buf()).collect();
        self
    }
    fn says(mut self, needles: &[&'static str]) -> Self {
        self.says = needles.to_vec();
        self
    }
    fn once(mut self, needles: &[&'static str]) -> Self {
        self.once = needles.to_vec();
        self
    }
    fn not(mut self, needles: &[&'static str]) -> Self {
        self.not = needles.to_vec();
        self
    }
    fn env(mut self, k: &'static str, v: impl Into<String>) -> Self {
        self.env.push((k, v.into()));
        self
    }
    fn within(mut self, d: Duration) -> Self {
        self.within = d;
        self
    }
}

fn check(c: &Case) {
    let before: Vec<Vec<u8>> = c.keep.iter().map(|p| fs::read(p).unwrap()).collect();
    let mut cmd = bin();
    cmd.args(&c.args).stdin(Stdio::null());
    for (k, v) in &c.env {
        cmd.env(k, v);
    }
    let start = Instant::now();
    let ran = run(&mut cmd);
    let took = start.elapsed();
    let e = &ran.stderr;
    assert_eq!(
        ran.code(),
        Some(c.code),
        "{}: exit code; stderr:\n{e}",
        c.name
    );
    assert!(!e.contains("panicked"), "{}: panic: {e}", c.name);
    assert!(
        took <= c.within,
        "{}: took {took:?}, limit {:?}",
        c.name,
        c.within
    );
    for (p, old) in c.keep.iter().zip(&before) {
        assert!(
            &fs::read(p).unwrap() == old,
            "{}: {} changed",
            c.name,
            p.display()
        );
    }
    for n in &c.says {
        assert!(e.contains(n), "{}: missing {n:?} in: {e}", c.name);
    }
    for n in &c.once {
        assert_eq!(
            e.matches(n).count(),
            1,
            "{}: {n:?} not once in: {e}",
            c.name
        );
    }
    for n in &c.not {
        assert!(!e.contains(n), "{}: {n:?} should not be in: {e}", c.name);
    }
}

#[test]
fn hostile_command_lines() {
    let b = Bench::new();
    let mut cases = clobber_cases(&b);
    cases.extend(limit_cases(&b));
    cases.extend(message_cases(&b));
    cases.extend(stall_cases(&b));
    for c in &cases {
        check(c);
    }
}

#[test]
fn a_stalled_ffmpeg_keeps_the_first_row() {
    if !support::ffmpeg_or_skip("a_stalled_ffmpeg_keeps_the_first_row") {
        return;
    }
    let b = Bench::new();
    let fake = stalling_ffmpeg(b.dir.path());
    let mut dirs = vec![fake];
    dirs.extend(std::env::split_paths(&std::env::var_os("PATH").unwrap()));
    let out = b.p("stall.csv");
    let ran = run(bin()
        .args(["track", "--decoder", "ffmpeg", "--out"])
        .arg(&out)
        .arg(b.p("clip.mp4"))
        .env("PATH", std::env::join_paths(dirs).unwrap())
        .env("SPOTLEVER_FFMPEG_STALL_S", "4")
        .stdin(Stdio::null()));
    assert_eq!(ran.code(), Some(1), "{}", ran.stderr);
    assert!(
        ran.stderr.contains("after 1 frames"),
        "the run should stop on the stall after its first frame:\n{}",
        ran.stderr
    );
    let text = fs::read_to_string(&out)
        .unwrap_or_else(|e| panic!("{}: {e}\nstderr:\n{}", out.display(), ran.stderr));
    let rows: Vec<&str> = text.lines().skip(1).collect();
    assert_eq!(rows.len(), 1, "{text}");
    assert!(rows[0].starts_with("0,"), "{text}");
}

#[test]
fn replace_any_lets_an_output_replace_another_kind() {
    let b = Bench::new();
    let target = b.p("video.csv");
    let ran = run(bin()
        .args(["--replace-any", "track"])
        .arg(b.p("clip.mp4"))
        .arg("--out")
        .arg(&target)
        .stdin(Stdio::null()));
    ran.assert_ok();
    assert!(fs::read_to_string(&target)
        .unwrap()
        .starts_with("frame,t_s"));
}

#[test]
fn record_force_leaves_what_it_did_not_write() {
    let b = Bench::new();
    let kept = b.write("run/clip.mp4", fs::read(support::committed_clip()).unwrap());
    let note = b.write("run/frames/notes.txt", "screen at 2.1 m");
    let ran = run(bin()
        .args([
            "record",
            "--speed",
            "max",
            "--force",
            "--keep-every",
            "0",
            "--source",
        ])
        .arg(&kept)
        .arg("--out")
        .arg(b.p("run"))
        .stdin(Stdio::null()));
    ran.assert_ok();
    assert_eq!(
        fs::read(&kept).unwrap(),
        fs::read(support::committed_clip()).unwrap()
    );
    assert_eq!(fs::read_to_string(&note).unwrap(), "screen at 2.1 m");
    assert!(!b.p("run/frames/frame_000000000.jpg").exists());
    assert!(b.p("run/track.csv").is_file());
}
