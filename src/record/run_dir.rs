//! The run folder: its file names, the rules for starting, continuing (`--append`) and replacing
//! (`--force`) a run, and the metadata file `run.toml`.
//!
//! `run.toml` holds the tool version and one `[[session]]` table per recording session (a new run has
//! one; every `--append` adds one): wall-clock start, source, image size, channel, calibration, how
//! many frames were kept, and, once the session closed cleanly, its end and counts. It is rewritten
//! whole through a temporary file and a rename, so a kill leaves either the old or the new version.

use super::RecordError;
use crate::outfile::Kind;
use crate::track::read_track;
use serde::{Deserialize, Serialize};
use std::fs::{self, OpenOptions};
use std::io::{Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};

/// Name of the metadata file inside a run folder.
pub const META_FILE: &str = "run.toml";
pub const TRACK_FILE: &str = "track.csv";
pub const EVENTS_FILE: &str = "events.csv";
pub const FRAMES_DIR: &str = "frames";

/// What a run folder holds that a session writes: checked as outputs before a session starts.
pub const RUN_FILES: &[(&str, Kind)] = &[
    (
        META_FILE,
        Kind::Text {
            what: "run metadata",
            mark: "spotlever",
        },
    ),
    (TRACK_FILE, crate::track::TRACK_KIND),
    (
        EVENTS_FILE,
        Kind::Text {
            what: "an events table",
            mark: "t_s",
        },
    ),
    (FRAMES_DIR, Kind::Folder),
];

/// What to do when the run folder already exists.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Existing {
    /// Refuse (an empty folder is fine).
    Refuse,
    /// Continue the run: rows, events and kept frames are added, times continue.
    Append,
    /// Delete the old run's files and start again (only if it is a run folder; only the files a
    /// session writes are deleted, anything else in the folder is left where it is).
    Replace,
}

/// One recording session's description.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct SessionMeta {
    /// Wall-clock start, RFC 3339 UTC.
    pub started_utc: String,
    /// Wall-clock start as seconds since the Unix epoch (sub-second).
    pub started_unix_s: f64,
    /// "camera" or "replay".
    pub source_kind: String,
    /// Camera name or replayed path.
    pub source: String,
    /// What the source said about itself.
    pub source_description: String,
    pub width: usize,
    pub height: usize,
    /// Frame rate asked of the camera, if any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fps_requested: Option<f64>,
    pub channel: String,
    /// Calibration file used for the millimetre columns, if any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub calibration: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub calibration_rms_mm: Option<f64>,
    /// Every how many frames one is kept under frames/ (0: none).
    pub keep_every: u64,
    /// Frame number of this session's first row.
    pub first_frame: u64,
    /// Seconds added to the source's times to get the run's times.
    pub t_offset_s: f64,
    /// Filled in when the session closes cleanly.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ended_utc: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frames: Option<u64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub duration_s: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stopped_by: Option<String>,
}

/// The whole metadata file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct RunMeta {
    /// "spotlever X.Y.Z" of the last writer.
    pub tool: String,
    #[serde(default, rename = "session")]
    pub sessions: Vec<SessionMeta>,
}

/// Where the previous sessions of a continued run ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resume {
    /// Frame number for the next row.
    pub next_frame: u64,
    /// Time of the last row, if there is one.
    pub last_t: Option<f64>,
    /// Spacing of the last two rows (a typical frame interval), s.
    pub step_s: f64,
    /// Wall-clock start of the first session, seconds since the Unix epoch.
    pub first_start_unix_s: f64,
    /// Whether the existing track has millimetre columns.
    pub has_mm: bool,
}

/// A prepared run folder.
#[derive(Debug, Clone)]
pub struct RunDir {
    pub root: PathBuf,
    pub meta: RunMeta,
    /// Set when continuing an existing run.
    pub resume: Option<Resume>,
}

impl RunDir {
    pub fn track_path(&self) -> PathBuf {
        self.root.join(TRACK_FILE)
    }
    pub fn meta_path(&self) -> PathBuf {
        self.root.join(META_FILE)
    }
    pub fn events_path(&self) -> PathBuf {
        self.root.join(EVENTS_FILE)
    }
    pub fn frames_dir(&self) -> PathBuf {
        self.root.join(FRAMES_DIR)
    }

    /// Make `root` ready for a session according to `existing`.
    pub fn prepare(root: &Path, existing: Existing) -> Result<RunDir, RecordError> {
        let exists = root.exists();
        if exists && !root.is_dir() {
            return Err(RecordError::Metadata {
                path: root.to_path_buf(),
                message: "is a file, not a folder; choose another --out".into(),
            });
        }
        let empty = exists && is_empty_dir(root)?;
        let is_run = root.join(META_FILE).is_file();
        match existing {
            Existing::Append => return Self::continue_run(root),
            Existing::Refuse if exists && !empty => {
                return Err(RecordError::RunExists {
                    path: root.to_path_buf(),
                })
            }
            Existing::Replace if exists && !empty => {
                if !is_run {
                    return Err(RecordError::NotARunFolder {
                        path: root.to_path_buf(),
                    });
                }
                remove_run_files(root)?;
            }
            _ => {}
        }
        fs::create_dir_all(root).map_err(RecordError::io(root))?;
        Ok(RunDir {
            root: root.to_path_buf(),
            meta: RunMeta {
                tool: tool_version(),
                sessions: Vec::new(),
            },
            resume: None,
        })
    }

    fn continue_run(root: &Path) -> Result<RunDir, RecordError> {
        let nothing = |reason: &str| RecordError::NothingToAppend {
            path: root.to_path_buf(),
            reason: reason.to_string(),
        };
        if !root.is_dir() {
            return Err(nothing("no such folder"));
        }
        let meta_path = root.join(META_FILE);
        if !meta_path.is_file() {
            return Err(nothing("no run.toml"));
        }
        let track_path = root.join(TRACK_FILE);
        if !track_path.is_file() {
            return Err(nothing("no track.csv"));
        }
        let meta = read_meta(&meta_path)?;
        let first_start_unix_s = meta
            .sessions
            .first()
            .map(|s| s.started_unix_s)
            .ok_or_else(|| nothing("run.toml lists no session"))?;
        // A row cut short by a kill would otherwise be glued to the first new row.
        for name in [TRACK_FILE, EVENTS_FILE, "frames/times.csv"] {
            let p = root.join(name);
            if p.is_file() {
                drop_partial_last_line(&p)?;
            }
        }
        // Reading the whole track once at the start is the simplest way to find its end with the
        // shared parser; it is not kept.
        let track = read_track(&track_path)?;
        let last = track.rows.last();
        let step_s = match track.rows.len() {
            n if n >= 2 => {
                let d = track.rows[n - 1].t.0 - track.rows[n - 2].t.0;
                if d.is_finite() && d > 0.0 {
                    d
                } else {
                    1e-3
                }
            }
            _ => 1e-3,
        };
        let resume = Resume {
            next_frame: last.map_or(0, |r| r.frame + 1),
            last_t: last.map(|r| r.t.0),
            step_s,
            first_start_unix_s,
            has_mm: track.has_mm,
        };
        Ok(RunDir {
            root: root.to_path_buf(),
            meta: RunMeta {
                tool: tool_version(),
                sessions: meta.sessions,
            },
            resume: Some(resume),
        })
    }

    /// Write `run.toml` (whole, through a temporary file and a rename).
    pub fn save_meta(&self) -> Result<(), RecordError> {
        let path = self.meta_path();
        let text = toml::to_string(&self.meta).map_err(|e| RecordError::Metadata {
            path: path.clone(),
            message: format!("cannot encode the metadata: {e}"),
        })?;
        let tmp = self.root.join(".run.toml.part");
        let header = "# spotlever run: one [[session]] per recording session; times in track.csv are\n# seconds on the run's clock (monotonic since the first session's start, or the replayed source's times)\n";
        fs::write(&tmp, format!("{header}{text}")).map_err(RecordError::io(&tmp))?;
        fs::rename(&tmp, &path).map_err(RecordError::io(&path))?;
        Ok(())
    }
}

/// "spotlever" and the crate version.
pub fn tool_version() -> String {
    format!("spotlever {}", env!("CARGO_PKG_VERSION"))
}

/// Read a `run.toml`.
pub fn read_meta(path: &Path) -> Result<RunMeta, RecordError> {
    let text = crate::textfile::read_text(path).map_err(|e| RecordError::io(path)(e.source))?;
    toml::from_str(&text).map_err(|e| RecordError::Metadata {
        path: path.to_path_buf(),
        message: format!("not a valid run metadata file: {e}"),
    })
}

/// Delete what sessions write in a run folder: `run.toml`, `track.csv`, `events.csv`, and under
/// `frames/` the kept images (`frame_NNNNNNNNN.jpg`, with their `.part` leftovers) and `times.csv`.
/// The `frames` folder is removed only when nothing else is left in it.
fn remove_run_files(root: &Path) -> Result<(), RecordError> {
    let remove = |p: &Path| match fs::remove_file(p) {
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(RecordError::io(p)(e)),
        _ => Ok(()),
    };
    for name in [META_FILE, TRACK_FILE, EVENTS_FILE, ".run.toml.part"] {
        remove(&root.join(name))?;
    }
    let frames = root.join(FRAMES_DIR);
    if !frames.is_dir() {
        return Ok(());
    }
    for entry in fs::read_dir(&frames).map_err(RecordError::io(&frames))? {
        let p = entry.map_err(RecordError::io(&frames))?.path();
        let name = p.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if name == super::keep::TIMES_FILE || is_kept_frame_name(name) {
            remove(&p)?;
        }
    }
    if is_empty_dir(&frames)? {
        fs::remove_dir(&frames).map_err(RecordError::io(&frames))?;
    }
    Ok(())
}

/// Whether `name` is one [`super::keep::FrameKeeper`] writes (`frame_` + 9 digits + `.jpg`, or its
/// temporary `.jpg.part`).
fn is_kept_frame_name(name: &str) -> bool {
    let stem = name
        .strip_suffix(".jpg.part")
        .or_else(|| name.strip_suffix(".jpg"));
    stem.and_then(|s| s.strip_prefix("frame_"))
        .is_some_and(|d| d.len() == 9 && d.bytes().all(|b| b.is_ascii_digit()))
}

fn is_empty_dir(p: &Path) -> Result<bool, RecordError> {
    Ok(fs::read_dir(p)
        .map_err(RecordError::io(p))?
        .next()
        .is_none())
}

/// Cut a file back to its last complete line (the tail a killed writer may leave).
pub fn drop_partial_last_line(path: &Path) -> Result<(), RecordError> {
    let mut f = OpenOptions::new()
        .read(true)
        .write(true)
        .open(path)
        .map_err(RecordError::io(path))?;
    let len = f.metadata().map_err(RecordError::io(path))?.len();
    if len == 0 {
        return Ok(());
    }
    // Look back in blocks for the last newline.
    let mut end = len;
    let mut buf = vec![0u8; 4096];
    loop {
        let start = end.saturating_sub(buf.len() as u64);
        let n = (end - start) as usize;
        f.seek(SeekFrom::Start(start))
            .map_err(RecordError::io(path))?;
        f.read_exact(&mut buf[..n]).map_err(RecordError::io(path))?;
        if let Some(i) = buf[..n].iter().rposition(|&b| b == b'\n') {
            let keep = start + i as u64 + 1;
            if keep != len {
                f.set_len(keep).map_err(RecordError::io(path))?;
            }
            return Ok(());
        }
        if start == 0 {
            return f.set_len(0).map_err(RecordError::io(path));
        }
        end = start;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_existing_run_and_names_the_flags() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        // A fresh folder, then an empty existing one, are both fine.
        RunDir::prepare(&root, Existing::Refuse).unwrap();
        RunDir::prepare(&root, Existing::Refuse).unwrap();
        fs::write(root.join(TRACK_FILE), "frame,t_s\n").unwrap();
        let e = RunDir::prepare(&root, Existing::Refuse)
            .unwrap_err()
            .to_string();
        assert!(e.contains("--append") && e.contains("--force"), "{e}");
        // Not a run folder (no run.toml): --force will not delete it.
        let e = RunDir::prepare(&root, Existing::Replace)
            .unwrap_err()
            .to_string();
        assert!(e.contains("not a run folder"), "{e}");
        assert!(root.join(TRACK_FILE).exists());
    }

    #[test]
    fn replace_deletes_only_a_run_folder() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        let mut rd = RunDir::prepare(&root, Existing::Refuse).unwrap();
        rd.meta.sessions.push(SessionMeta {
            started_unix_s: 1.0,
            ..Default::default()
        });
        rd.save_meta().unwrap();
        fs::write(root.join(TRACK_FILE), "x").unwrap();
        fs::create_dir(root.join(FRAMES_DIR)).unwrap();
        fs::write(root.join("frames/frame_000000030.jpg"), "j").unwrap();
        fs::write(root.join("frames/times.csv"), "file,t_s\n").unwrap();
        // Files the session did not write stay: a video kept beside the run, a user's image.
        fs::write(root.join("clip.mp4"), "video").unwrap();
        fs::write(root.join("frames/screen.png"), "png").unwrap();
        let rd = RunDir::prepare(&root, Existing::Replace).unwrap();
        assert!(rd.meta.sessions.is_empty());
        assert!(!root.join(TRACK_FILE).exists());
        assert!(!root.join(META_FILE).exists());
        assert!(!root.join("frames/frame_000000030.jpg").exists());
        assert!(!root.join("frames/times.csv").exists());
        assert_eq!(fs::read_to_string(root.join("clip.mp4")).unwrap(), "video");
        assert_eq!(
            fs::read_to_string(root.join("frames/screen.png")).unwrap(),
            "png"
        );
    }

    #[test]
    fn append_finds_the_end_and_drops_a_cut_row() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        let e = RunDir::prepare(&root, Existing::Append)
            .unwrap_err()
            .to_string();
        assert!(e.contains("drop --append"), "{e}");
        let mut rd = RunDir::prepare(&root, Existing::Refuse).unwrap();
        rd.meta.sessions.push(SessionMeta {
            started_unix_s: 1234.5,
            channel: "red".into(),
            ..Default::default()
        });
        rd.save_meta().unwrap();
        let head = "frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status\n";
        let body = "0,0.0,1,2,3,4,5,0,6,ok\n# gap start\n1,0.5,1,2,3,4,5,0,6,ok\n2,0.75,,,0,0,0,0,0,lost\n";
        fs::write(root.join(TRACK_FILE), format!("{head}{body}3,1.0,1,2")).unwrap();
        let rd = RunDir::prepare(&root, Existing::Append).unwrap();
        let r = rd.resume.unwrap();
        assert_eq!(r.next_frame, 3);
        assert_eq!(r.last_t, Some(0.75));
        assert!((r.step_s - 0.25).abs() < 1e-12);
        assert_eq!(r.first_start_unix_s, 1234.5);
        assert!(!r.has_mm);
        assert_eq!(rd.meta.sessions.len(), 1);
        assert_eq!(rd.meta.sessions[0].channel, "red");
        assert_eq!(
            fs::read_to_string(root.join(TRACK_FILE)).unwrap(),
            format!("{head}{body}")
        );
    }

    #[test]
    fn partial_line_trim_handles_long_and_lineless_files() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("f");
        let long = "a".repeat(10_000);
        fs::write(&p, format!("first\n{long}")).unwrap();
        drop_partial_last_line(&p).unwrap();
        assert_eq!(fs::read_to_string(&p).unwrap(), "first\n");
        fs::write(&p, &long).unwrap();
        drop_partial_last_line(&p).unwrap();
        assert_eq!(fs::read_to_string(&p).unwrap(), "");
        fs::write(&p, "x\ny\n").unwrap();
        drop_partial_last_line(&p).unwrap();
        assert_eq!(fs::read_to_string(&p).unwrap(), "x\ny\n");
    }
}
