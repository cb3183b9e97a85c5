//! The folder the hostile command lines work on: a copy of the committed clip, the demo screen image
//! and setup, small track files with a byte-order mark, a quoted header or a bad cell, PNGs whose
//! headers claim huge sizes, a replayable run folder, FIFOs, and scripts that stand in for a stalling
//! `ffmpeg` and a silent `ffprobe`.

use super::support;
use std::fs;
use std::path::{Path, PathBuf};

fn chunk(kind: &[u8], data: &[u8]) -> Vec<u8> {
    let mut out = (data.len() as u32).to_be_bytes().to_vec();
    out.extend_from_slice(kind);
    out.extend_from_slice(data);
    let mut crc_in = kind.to_vec();
    crc_in.extend_from_slice(data);
    out.extend_from_slice(&crc32(&crc_in).to_be_bytes());
    out
}

/// CRC-32 as PNG chunks use it (ISO 3309 polynomial, reflected; PNG specification, section 5.5).
fn crc32(bytes: &[u8]) -> u32 {
    let mut c = 0xffff_ffffu32;
    for &b in bytes {
        c ^= u32::from(b);
        for _ in 0..8 {
            c = if c & 1 == 1 {
                0xedb8_8320 ^ (c >> 1)
            } else {
                c >> 1
            };
        }
    }
    !c
}

/// A PNG whose header claims `w` x `h` grey pixels but whose data holds almost nothing.
fn lying_png(w: u32, h: u32) -> Vec<u8> {
    let mut ihdr = w.to_be_bytes().to_vec();
    ihdr.extend_from_slice(&h.to_be_bytes());
    ihdr.extend_from_slice(&[8, 0, 0, 0, 0]);
    // A stored (uncompressed) zlib stream of one filter byte and one pixel.
    let idat = [
        0x78, 0x01, 0x01, 0x02, 0x00, 0xfd, 0xff, 0x00, 0x10, 0x00, 0x12, 0x00, 0x11,
    ];
    let mut png = b"\x89PNG\r\n\x1a\n".to_vec();
    png.extend(chunk(b"IHDR", &ihdr));
    png.extend(chunk(b"IDAT", &idat));
    png.extend(chunk(b"IEND", &[]));
    png
}

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(name)
}

/// Everything the cases work on, in one folder.
pub struct Bench {
    pub dir: tempfile::TempDir,
}

impl Bench {
    pub fn p(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    pub fn write(&self, name: &str, bytes: impl AsRef<[u8]>) -> PathBuf {
        let p = self.p(name);
        fs::create_dir_all(p.parent().unwrap()).unwrap();
        fs::write(&p, bytes).unwrap();
        p
    }

    pub fn new() -> Bench {
        let b = Bench {
            dir: tempfile::tempdir().unwrap(),
        };
        fs::copy(support::committed_clip(), b.p("clip.mp4")).unwrap();
        fs::copy(data("sample-frames/screen.png"), b.p("screen.png")).unwrap();
        fs::copy(data("sample-frames/setup.toml"), b.p("setup.toml")).unwrap();
        fs::create_dir(b.p("sub")).unwrap();
        #[cfg(unix)]
        std::os::unix::fs::symlink(b.p("clip.mp4"), b.p("clip-link.csv")).unwrap();
        let head = "frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status";
        b.write("track.csv", format!("{head}\n0,0.0,1,2,3,4,5,0,6,ok\n"));
        b.write("res/angle.csv", format!("{head}\n0,0.0,1,2,3,4,5,0,6,ok\n"));
        b.write(
            "bom.csv",
            format!("\u{feff}{head}\n0,0.0,1,2,3,4,5,0,6,ok\n"),
        );
        let quoted: Vec<String> = head.split(',').map(|c| format!("\"{c}\"")).collect();
        b.write(
            "quoted.csv",
            format!("{}\n0,0.0,1,2,3,4,5,0,6,ok\n", quoted.join(",")),
        );
        b.write(
            "badline.csv",
            format!("{head}\n# comment\n0,0.0,1,2,3,4,5,0,6,ok\n1,zero,1,2,3,4,5,0,6,ok\n"),
        );
        b.write("swing.csv", format!("{head}\n"));
        b.write(
            "unordered.csv",
            format!("{head}\n0,5.0,1,2,3,4,5,0,6,ok\n# c\n1,4.0,1,2,3,4,5,0,6,ok\n"),
        );
        b.write(
            "trials.toml",
            "[[trial]]\nname = \"W50\"\nmaterial = \"tungsten\"\ndiameter = \"50 um\"\nlength = \"300 mm\"\ninertia = \"1e-5 kg m^2\"\ntrack = \"swing.csv\"\n",
        );
        b.write("huge.png", lying_png(20_000, 20_000));
        b.write("seq/f000.png", lying_png(1, 1));
        b.write("seq/f001.png", lying_png(100_000, 100_000));
        b.write("video.csv", fs::read(support::committed_clip()).unwrap());
        b.write("big-setup.toml", "# padding\n".repeat(120_000));
        b.write("run/run.toml", "tool = \"spotlever\"\n");
        b.write("run/track.csv", format!("{head}\n"));
        b.write(
            "run/frames/frame_000000000.jpg",
            b"\xff\xd8\xff\xe0 not a real picture",
        );
        b.write("run/frames/times.csv", "file,t_s\nframe_000000000.jpg,0\n");
        b
    }
}

#[cfg(unix)]
pub fn fifo(path: &Path) {
    let c = std::ffi::CString::new(path.to_str().unwrap()).unwrap();
    // SAFETY: mkfifo with a NUL-terminated path we own.
    assert_eq!(unsafe { libc::mkfifo(c.as_ptr(), 0o644) }, 0, "mkfifo");
}

/// A folder with `ffmpeg` and `ffprobe` scripts: ffprobe passes through to the real one, ffmpeg
/// decodes only the first frame and then holds its pipes open without writing (a stalled decoder).
/// Its `slowprobe/` holds an ffprobe that never answers, `slowlist/` one that answers the stream
/// questions but never lists the packets.
pub fn stalling_ffmpeg(dir: &Path) -> PathBuf {
    let bin_dir = dir.join("fake-bin");
    fs::create_dir_all(&bin_dir).unwrap();
    let real = |name: &str| {
        std::env::split_paths(&std::env::var_os("PATH").unwrap())
            .map(|d| d.join(name))
            .find(|p| p.is_file())
            .unwrap()
    };
    let scripts = [
        (
            "ffprobe",
            format!("#!/bin/sh\nexec '{}' \"$@\"\n", real("ffprobe").display()),
        ),
        (
            "ffmpeg",
            format!(
                "#!/bin/bash\nargs=(\"$@\")\nlast=\"${{args[-1]}}\"\nunset 'args[-1]'\n\
                 '{}' \"${{args[@]}}\" -frames:v 1 \"$last\"\nexec sleep 60\n",
                real("ffmpeg").display()
            ),
        ),
        (
            "slowprobe/ffprobe",
            "#!/bin/sh\nexec sleep 60\n".to_string(),
        ),
        (
            "slowlist/ffprobe",
            format!(
                "#!/bin/sh\ncase \"$*\" in *packet=*) exec sleep 60;; esac\nexec '{}' \"$@\"\n",
                real("ffprobe").display()
            ),
        ),
    ];
    for (name, text) in scripts {
        let p = bin_dir.join(name);
        fs::create_dir_all(p.parent().unwrap()).unwrap();
        fs::write(&p, text).unwrap();
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            fs::set_permissions(&p, fs::Permissions::from_mode(0o755)).unwrap();
        }
    }
    warm_up(&real("ffprobe"), &real("ffmpeg"), &dir.join("clip.mp4"));
    bin_dir
}

/// Run the real ffprobe and ffmpeg once on `clip`, so that the timed cases do not also time a cold
/// start (on a fresh machine the first start reads the programs' libraries from disk, which can take
/// longer than the short stall limits the cases set).
fn warm_up(ffprobe: &Path, ffmpeg: &Path, clip: &Path) {
    let quiet = |c: &mut std::process::Command| {
        c.stdin(std::process::Stdio::null())
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .status()
            .map(|s| s.success())
            .unwrap_or(false)
    };
    let probed = quiet(std::process::Command::new(ffprobe).arg(clip));
    let decoded = quiet(
        std::process::Command::new(ffmpeg)
            .args(["-v", "error", "-i"])
            .arg(clip)
            .args(["-frames:v", "1", "-f", "null", "-"]),
    );
    assert!(
        probed && decoded,
        "the real ffprobe/ffmpeg failed on {}",
        clip.display()
    );
}
