//! Opening outputs without destroying anything: every command lists its inputs and claims its outputs
//! here before it writes. A claim is refused when the output is one of the command's inputs (same
//! file by canonical path or by device and inode, so symlinks, hard links and `..` do not hide it),
//! when two outputs are the same file, or when the file already there is of another kind than the
//! output writes (a video or an image where a CSV would go) unless the user allowed that. Finished
//! results are written through [`write_whole`]: a temporary file in the same folder, renamed into
//! place when complete, so a crash leaves the old file or the new one, never half of one.

use std::fs::{self, File};
use std::io::{self, BufWriter, Read};
use std::path::{Component, Path, PathBuf};

/// What an output holds, for the check of the file it would replace. Each format's module names its
/// own kind (e.g. the track file's is text whose first KiB holds `frame`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// UTF-8 text, `what` for messages; an existing file is of this kind when its first KiB is text
    /// holding `mark` (any text when `mark` is empty).
    Text {
        what: &'static str,
        mark: &'static str,
    },
    /// A PNG image.
    Png,
    /// A folder the command fills.
    Folder,
}

impl Kind {
    fn name(self) -> &'static str {
        match self {
            Kind::Text { what, .. } => what,
            Kind::Png => "a PNG image",
            Kind::Folder => "a folder",
        }
    }
}

/// Why an output was refused.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    #[error("{output}: this output is the input {input}; writing it would destroy the input. Choose another output name")]
    IsInput { output: PathBuf, input: PathBuf },
    #[error(
        "{output}: given as two outputs ({first} and {second}); give each output its own file"
    )]
    Twice {
        output: PathBuf,
        first: &'static str,
        second: &'static str,
    },
    #[error("{path}: already exists and is {found}, not {kind}; not replacing it. Choose another name, or add --replace-any to replace it anyway")]
    OtherKind {
        path: PathBuf,
        found: String,
        kind: &'static str,
    },
    #[error("{path}: is {what}, not a regular file; give a file name for {role}")]
    NotAFile {
        path: PathBuf,
        what: &'static str,
        role: &'static str,
    },
    #[error(
        "{path}: is a file, not a folder; give {role} a folder name (it is created if needed)"
    )]
    NotAFolder { path: PathBuf, role: &'static str },
    #[error("{path}: cannot check this output: {source}")]
    Check {
        path: PathBuf,
        #[source]
        source: io::Error,
    },
}

/// A file's identity: its canonical path, and device and inode where the system has them.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Identity {
    canonical: PathBuf,
    inode: Option<(u64, u64)>,
}

impl Identity {
    fn same(&self, other: &Identity) -> bool {
        self.canonical == other.canonical || (self.inode.is_some() && self.inode == other.inode)
    }
}

#[cfg(unix)]
fn inode(meta: &fs::Metadata) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    Some((meta.dev(), meta.ino()))
}

#[cfg(not(unix))]
fn inode(_meta: &fs::Metadata) -> Option<(u64, u64)> {
    None
}

/// `path` made absolute and with `.`/`..` folded away, without touching the file system.
fn lexical(path: &Path) -> PathBuf {
    let abs = if path.is_absolute() {
        path.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(path)
    };
    let mut out = PathBuf::new();
    for c in abs.components() {
        match c {
            Component::ParentDir => {
                out.pop();
            }
            Component::CurDir => {}
            other => out.push(other),
        }
    }
    out
}

/// The identity of `path`, existing or not (a missing file is named by its folder's canonical path).
fn identity(path: &Path) -> Identity {
    if let (Ok(canonical), Ok(meta)) = (fs::canonicalize(path), fs::metadata(path)) {
        return Identity {
            canonical,
            inode: inode(&meta),
        };
    }
    let abs = lexical(path);
    let canonical = match (abs.parent(), abs.file_name()) {
        (Some(dir), Some(name)) => fs::canonicalize(dir)
            .map(|d| d.join(name))
            .unwrap_or_else(|_| abs.clone()),
        _ => abs.clone(),
    };
    Identity {
        canonical,
        inode: None,
    }
}

/// The inputs and outputs of one command, checked against each other as outputs are claimed.
#[derive(Debug, Default)]
pub struct Outputs {
    inputs: Vec<(PathBuf, Identity)>,
    claimed: Vec<(&'static str, Identity)>,
    replace_any: bool,
}

impl Outputs {
    /// A fresh list; with `replace_any`, an existing file of another kind may be replaced.
    pub fn new(replace_any: bool) -> Self {
        Outputs {
            replace_any,
            ..Self::default()
        }
    }

    /// Record `path` as an input of the command. A glob pattern adds every file it matches.
    pub fn input(&mut self, path: &Path) -> &mut Self {
        let text = path.to_string_lossy();
        if !path.exists() && text.contains(['*', '?', '[']) {
            if let Ok(found) = glob::glob(&text) {
                for p in found.flatten() {
                    self.inputs.push((p.clone(), identity(&p)));
                }
            }
            return self;
        }
        self.inputs.push((path.to_path_buf(), identity(path)));
        // A folder input (an image sequence) brings its files with it.
        if let Ok(entries) = fs::read_dir(path) {
            for p in entries.flatten().map(|e| e.path()) {
                if p.is_file() {
                    self.inputs.push((p.clone(), identity(&p)));
                }
            }
        }
        self
    }

    /// Claim `path` as the output `role` (an option name such as `--out`) holding `kind`.
    pub fn claim(
        &mut self,
        path: &Path,
        kind: Kind,
        role: &'static str,
    ) -> Result<(), OutputError> {
        let id = identity(path);
        for (input, iid) in &self.inputs {
            if id.same(iid) {
                return Err(OutputError::IsInput {
                    output: path.to_path_buf(),
                    input: input.clone(),
                });
            }
        }
        if let Some((first, _)) = self.claimed.iter().find(|(_, c)| c.same(&id)) {
            return Err(OutputError::Twice {
                output: path.to_path_buf(),
                first,
                second: role,
            });
        }
        self.check_existing(path, kind, role)?;
        self.claimed.push((role, id));
        Ok(())
    }

    /// Claim the files `names` inside the output folder `dir` (claimed itself as a folder).
    pub fn claim_in(
        &mut self,
        dir: &Path,
        names: &[(&str, Kind)],
        role: &'static str,
    ) -> Result<(), OutputError> {
        self.claim(dir, Kind::Folder, role)?;
        for (name, kind) in names {
            self.claim(&dir.join(name), *kind, role)?;
        }
        Ok(())
    }

    fn check_existing(
        &self,
        path: &Path,
        kind: Kind,
        role: &'static str,
    ) -> Result<(), OutputError> {
        let meta = match fs::metadata(path) {
            Ok(m) => m,
            Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(()),
            Err(source) => {
                return Err(OutputError::Check {
                    path: path.to_path_buf(),
                    source,
                })
            }
        };
        if kind == Kind::Folder {
            if meta.is_dir() {
                return Ok(());
            }
            return Err(OutputError::NotAFolder {
                path: path.to_path_buf(),
                role,
            });
        }
        if !meta.is_file() {
            return Err(OutputError::NotAFile {
                path: path.to_path_buf(),
                what: file_type_name(&meta),
                role,
            });
        }
        if self.replace_any || meta.len() == 0 {
            return Ok(());
        }
        let head = read_head(path).map_err(|source| OutputError::Check {
            path: path.to_path_buf(),
            source,
        })?;
        match found_kind(&head, kind) {
            None => Ok(()),
            Some(found) => Err(OutputError::OtherKind {
                path: path.to_path_buf(),
                found,
                kind: kind.name(),
            }),
        }
    }
}

/// What kind of thing a non-regular path is, for messages.
pub fn file_type_name(meta: &fs::Metadata) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let t = meta.file_type();
        if t.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if meta.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

fn read_head(path: &Path) -> io::Result<Vec<u8>> {
    let mut head = Vec::with_capacity(1024);
    File::open(path)?.take(1024).read_to_end(&mut head)?;
    Ok(head)
}

/// `None` when `head` (the first bytes of an existing file) fits `kind`, otherwise what it looks like.
fn found_kind(head: &[u8], kind: Kind) -> Option<String> {
    let text = !head.contains(&0)
        && match std::str::from_utf8(head) {
            Ok(_) => true,
            Err(e) => e.error_len().is_none(),
        };
    let is_png = head.starts_with(b"\x89PNG\r\n\x1a\n");
    let marked =
        |mark: &str| mark.is_empty() || head.windows(mark.len()).any(|w| w == mark.as_bytes());
    let fits = match kind {
        Kind::Png => is_png,
        Kind::Folder => false,
        Kind::Text { mark, .. } => text && marked(mark),
    };
    if fits {
        return None;
    }
    Some(
        if is_png {
            "a PNG image"
        } else if head.starts_with(b"\xff\xd8\xff") {
            "a JPEG image"
        } else if head.get(4..8) == Some(b"ftyp") {
            "a video (MP4/MOV)"
        } else if head.starts_with(b"\x1a\x45\xdf\xa3") {
            "a video (Matroska/WebM)"
        } else if text {
            "other text"
        } else {
            "binary data"
        }
        .to_string(),
    )
}

/// Write `path` whole: `fill` writes into a temporary file beside it, which is synced and renamed over
/// `path` only when complete. On any error the temporary file is removed and `path` is untouched.
pub fn write_whole(
    path: &Path,
    fill: impl FnOnce(&mut BufWriter<File>) -> io::Result<()>,
) -> io::Result<()> {
    let name = path
        .file_name()
        .ok_or_else(|| io::Error::other("the output path names no file"))?;
    let tmp = path.with_file_name(format!(
        ".{}.partial-{}",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| {
        let mut out = BufWriter::new(File::create(&tmp)?);
        fill(&mut out)?;
        let file = out.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        drop(file);
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;

    const CSV: Kind = Kind::Text {
        what: "a track file",
        mark: "frame",
    };
    const TOML: Kind = Kind::Text {
        what: "a calibration",
        mark: "",
    };

    #[test]
    fn an_input_reached_through_dots_or_a_link_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let clip = dir.path().join("clip.mp4");
        fs::write(&clip, b"\0\0\0\x18ftypmp42").unwrap();
        fs::create_dir(dir.path().join("sub")).unwrap();
        let mut o = Outputs::new(false);
        o.input(&clip);
        let dotted = dir.path().join("sub/../clip.mp4");
        let e = o.claim(&dotted, CSV, "--out").unwrap_err();
        assert!(matches!(e, OutputError::IsInput { .. }), "{e}");
        #[cfg(unix)]
        {
            let link = dir.path().join("link.csv");
            std::os::unix::fs::symlink(&clip, &link).unwrap();
            let e = o.claim(&link, CSV, "--out").unwrap_err();
            assert!(matches!(e, OutputError::IsInput { .. }), "{e}");
        }
    }

    #[test]
    fn two_outputs_on_one_file_and_other_kinds_are_refused() {
        let dir = tempfile::tempdir().unwrap();
        let mut o = Outputs::new(false);
        let a = dir.path().join("a.toml");
        o.claim(&a, TOML, "--out").unwrap();
        let e = o.claim(&a, Kind::Png, "--overlay").unwrap_err().to_string();
        assert!(e.contains("--out") && e.contains("--overlay"), "{e}");
        let video = dir.path().join("v.csv");
        fs::write(&video, b"\0\0\0\x18ftypisom\0\0").unwrap();
        let e = o.claim(&video, CSV, "--out").unwrap_err().to_string();
        assert!(e.contains("a video") && e.contains("--replace-any"), "{e}");
        Outputs::new(true).claim(&video, CSV, "--out").unwrap();
        let e = o
            .claim(&video, Kind::Folder, "--out")
            .unwrap_err()
            .to_string();
        assert!(e.contains("is a file, not a folder"), "{e}");
        let e = o.claim(dir.path(), TOML, "--out").unwrap_err().to_string();
        assert!(e.contains("is a folder, not a regular file"), "{e}");
        let text = dir.path().join("old.csv");
        fs::write(&text, "frame,t_s\n").unwrap();
        o.claim(&text, CSV, "--csv").unwrap();
        let notes = dir.path().join("notes.csv");
        fs::write(&notes, "shopping list\n").unwrap();
        let e = o.claim(&notes, CSV, "--out").unwrap_err().to_string();
        assert!(e.contains("other text, not a track file"), "{e}");
    }

    #[test]
    fn a_failed_whole_write_leaves_the_old_file() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("r.json");
        fs::write(&p, "old").unwrap();
        let e = write_whole(&p, |w| {
            w.write_all(b"half")?;
            Err(io::Error::other("stopped"))
        });
        assert!(e.is_err());
        assert_eq!(fs::read_to_string(&p).unwrap(), "old");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
        write_whole(&p, |w| w.write_all(b"new")).unwrap();
        assert_eq!(fs::read_to_string(&p).unwrap(), "new");
    }
}
