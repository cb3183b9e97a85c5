//! The table of hostile command lines, by what they try: clobbering an input, a limit (size, count),
//! a message, and a stalled decoder.

use super::bench::{fifo, stalling_ffmpeg, Bench};
use super::{case, support, Case};
use std::path::Path;
use std::time::Duration;

pub fn clobber_cases(b: &Bench) -> Vec<Case> {
    let (clip, screen, out) = (b.p("clip.mp4"), b.p("screen.png"), b.p("out.csv"));
    vec![
        case(
            "track onto its video",
            &[&"track", &clip, &"--out", &clip],
            1,
        )
        .keep(&[&clip])
        .says(&["this output is the input", "clip.mp4"]),
        case(
            "track onto its video through ..",
            &[&"track", &clip, &"--out", &b.p("sub/../clip.mp4")],
            1,
        )
        .keep(&[&clip])
        .says(&["this output is the input"]),
        case(
            "track onto a symlink to its video",
            &[&"track", &clip, &"--out", &b.p("clip-link.csv")],
            1,
        )
        .keep(&[&clip])
        .says(&["this output is the input"]),
        case(
            "track onto another video",
            &[&"track", &clip, &"--out", &b.p("video.csv")],
            1,
        )
        .keep(&[&clip, &b.p("video.csv")])
        .says(&["a video", "not a track file", "--replace-any"]),
        case(
            "track onto a frame of its sequence",
            &[
                &"track",
                &b.p("seq"),
                &"--fps",
                &"1",
                &"--out",
                &b.p("seq/f000.png"),
            ],
            1,
        )
        .keep(&[&b.p("seq/f000.png"), &b.p("seq/f001.png")])
        .says(&["this output is the input"]),
        case(
            "calibrate onto its image",
            &[&"calibrate", &screen, &"--grid", &"10", &"--out", &screen],
            1,
        )
        .keep(&[&screen])
        .says(&["this output is the input", "screen.png"]),
        case(
            "calibrate overlay onto its image",
            &[
                &"calibrate",
                &screen,
                &"--grid",
                &"10",
                &"--out",
                &b.p("c.toml"),
                &"--overlay",
                &screen,
            ],
            1,
        )
        .keep(&[&screen])
        .says(&["this output is the input"]),
        case(
            "calibrate with both outputs one file",
            &[
                &"calibrate",
                &screen,
                &"--grid",
                &"10",
                &"--out",
                &b.p("c.png"),
                &"--overlay",
                &b.p("c.png"),
            ],
            1,
        )
        .keep(&[&screen])
        .says(&["given as two outputs", "--out", "--overlay"]),
        case(
            "analyze into the folder of its input",
            &[
                &"analyze",
                &b.p("res/angle.csv"),
                &"--setup",
                &b.p("setup.toml"),
                &"--out",
                &b.p("res"),
            ],
            1,
        )
        .keep(&[&b.p("res/angle.csv"), &b.p("setup.toml")])
        .says(&["this output is the input", "angle.csv"]),
        case(
            "fibre table onto the track",
            &[&"fibre", &b.p("trials.toml"), &"--csv", &b.p("swing.csv")],
            1,
        )
        .keep(&[&b.p("trials.toml"), &b.p("swing.csv")])
        .says(&["this output is the input", "swing.csv"]),
        case(
            "record --force over the frames it replays",
            &[
                &"record",
                &"--source",
                &b.p("run/frames"),
                &"--speed",
                &"max",
                &"--out",
                &b.p("run"),
                &"--force",
            ],
            1,
        )
        .keep(&[
            &b.p("run/frames/frame_000000000.jpg"),
            &b.p("run/frames/times.csv"),
            &b.p("run/run.toml"),
            &b.p("run/track.csv"),
        ])
        .says(&["this output is the input", "frames"]),
        case(
            "track into a fresh file still works",
            &[&"track", &clip, &"--out", &out],
            0,
        )
        .keep(&[&clip]),
    ]
}

pub fn limit_cases(b: &Bench) -> Vec<Case> {
    let setup = b.p("setup.toml");
    vec![
        case(
            "calibrate on an image claiming 20000x20000",
            &[
                &"calibrate",
                &b.p("huge.png"),
                &"--grid",
                &"10",
                &"--out",
                &b.p("c.toml"),
            ],
            1,
        )
        .keep(&[&b.p("huge.png")])
        .says(&["20000x20000", "limit of 64 Mpx", "SPOTLEVER_MAX_IMAGE_MPX"]),
        case(
            "a sequence frame claiming 100000x100000",
            &[
                &"track",
                &b.p("seq"),
                &"--fps",
                &"1",
                &"--out",
                &b.p("seq.csv"),
            ],
            1,
        )
        .keep(&[&b.p("seq/f000.png"), &b.p("seq/f001.png")])
        .says(&["f001.png", "100000x100000"]),
        case(
            "a device as setup",
            &[
                &"analyze",
                &b.p("track.csv"),
                &"--setup",
                &"/dev/zero",
                &"--out",
                &b.p("o1"),
            ],
            1,
        )
        .keep(&[&b.p("track.csv")])
        .says(&["/dev/zero", "is a device"]),
        case(
            "a device as calibration",
            &[
                &"track",
                &b.p("clip.mp4"),
                &"--calib",
                &"/dev/zero",
                &"--out",
                &b.p("o2.csv"),
            ],
            1,
        )
        .keep(&[&b.p("clip.mp4")])
        .says(&["/dev/zero", "is a device"]),
        case(
            "a device as track",
            &[
                &"analyze",
                &"/dev/zero",
                &"--setup",
                &setup,
                &"--out",
                &b.p("o3"),
            ],
            1,
        )
        .keep(&[&setup])
        .says(&["/dev/zero", "is a device"]),
        case(
            "a setup over the size cap",
            &[
                &"analyze",
                &b.p("track.csv"),
                &"--setup",
                &b.p("big-setup.toml"),
                &"--out",
                &b.p("o4"),
            ],
            1,
        )
        .env("SPOTLEVER_MAX_TEXT_MB", "1")
        .keep(&[&b.p("big-setup.toml"), &b.p("track.csv")])
        .says(&["big-setup.toml", "1 MiB limit", "SPOTLEVER_MAX_TEXT_MB"]),
        case(
            "--draws at the largest integer",
            &[
                &"analyze",
                &b.p("track.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o5"),
                &"--draws",
                &"18446744073709551615",
            ],
            2,
        )
        .keep(&[&b.p("track.csv"), &setup])
        .says(&["--draws", "1000..=10000000"]),
        case(
            "--draws in exponent form",
            &[
                &"analyze",
                &b.p("track.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o6"),
                &"--draws",
                &"1e10",
            ],
            2,
        )
        .says(&["--draws", "1e10"]),
        case(
            "--draws 0",
            &[
                &"analyze",
                &b.p("track.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o7"),
                &"--draws",
                &"0",
            ],
            2,
        )
        .says(&["--draws", "1000..=10000000"]),
    ]
}

pub fn message_cases(b: &Bench) -> Vec<Case> {
    let setup = b.p("setup.toml");
    let mut cases = vec![
        case(
            "a missing track names its cause once",
            &[
                &"analyze",
                &b.p("nothere.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o8"),
            ],
            1,
        )
        .keep(&[&setup])
        .says(&["nothere.csv"])
        .once(&["os error 2"]),
        case(
            "damping shown as its option",
            &[&"plan", &setup, &"--damping-time=-5"],
            1,
        )
        .keep(&[&setup])
        .says(&["--damping-time -5 s"])
        .not(&["Time("]),
        case(
            "a track with a byte-order mark",
            &[
                &"analyze",
                &b.p("bom.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o9"),
            ],
            1,
        )
        .keep(&[&b.p("bom.csv")])
        .says(&["no screen positions"])
        .not(&["missing column"]),
        case(
            "a track with a quoted header",
            &[
                &"analyze",
                &b.p("quoted.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o10"),
            ],
            1,
        )
        .keep(&[&b.p("quoted.csv")])
        .says(&["no screen positions"])
        .not(&["missing column"]),
        case(
            "a bad cell names the line an editor shows",
            &[
                &"analyze",
                &b.p("badline.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o11"),
            ],
            1,
        )
        .keep(&[&b.p("badline.csv")])
        .says(&["badline.csv, line 4", "\"zero\""]),
        case(
            "rows out of time order name the file's line",
            &[
                &"analyze",
                &b.p("unordered.csv"),
                &"--setup",
                &setup,
                &"--out",
                &b.p("o14"),
            ],
            1,
        )
        .keep(&[&b.p("unordered.csv")])
        .says(&["unordered.csv, line 4", "not later than 5 on line 2"]),
        case(
            "calibrate without a mode names both",
            &[&"calibrate", &b.p("screen.png"), &"--out", &b.p("c2.toml")],
            2,
        )
        .keep(&[&b.p("screen.png")])
        .says(&["--points", "--grid"]),
    ];
    #[cfg(unix)]
    {
        fifo(&b.p("pipe"));
        cases.push(
            case(
                "a FIFO as video",
                &[&"track", &b.p("pipe"), &"--out", &b.p("o12.csv")],
                1,
            )
            .says(&["FIFO"])
            .not(&["no such file"])
            .within(Duration::from_secs(20)),
        );
        cases.push(
            case(
                "a FIFO as setup",
                &[
                    &"analyze",
                    &b.p("track.csv"),
                    &"--setup",
                    &b.p("pipe"),
                    &"--out",
                    &b.p("o13"),
                ],
                1,
            )
            .keep(&[&b.p("track.csv")])
            .says(&["FIFO"])
            .within(Duration::from_secs(20)),
        );
    }
    cases
}

pub fn stall_cases(b: &Bench) -> Vec<Case> {
    if !support::ffmpeg_or_skip("stall_cases") {
        return Vec::new();
    }
    let fake = stalling_ffmpeg(b.dir.path());
    let path = |first: &Path| {
        let rest = std::env::var_os("PATH").unwrap();
        let mut dirs = vec![first.to_path_buf()];
        dirs.extend(std::env::split_paths(&rest));
        std::env::join_paths(dirs)
            .unwrap()
            .to_string_lossy()
            .into_owned()
    };
    let clip = b.p("clip.mp4");
    vec![
        case(
            "ffmpeg stalls after one frame",
            &[
                &"track",
                &clip,
                &"--decoder",
                &"ffmpeg",
                &"--out",
                &b.p("stall.csv"),
            ],
            1,
        )
        .env("PATH", path(&fake))
        .env("SPOTLEVER_FFMPEG_STALL_S", "2")
        .keep(&[&clip])
        .says(&[
            "ffmpeg sent nothing for 2 s",
            "after 1 frames",
            "SPOTLEVER_FFMPEG_STALL_S",
        ])
        .within(Duration::from_secs(4)),
        case(
            "ffprobe never answers",
            &[
                &"track",
                &clip,
                &"--decoder",
                &"ffmpeg",
                &"--out",
                &b.p("stall2.csv"),
            ],
            1,
        )
        .env("PATH", path(&fake.join("slowprobe")))
        .env("SPOTLEVER_FFMPEG_STALL_S", "2")
        .keep(&[&clip])
        .says(&["ffprobe gave no answer within 2 s"])
        .within(Duration::from_secs(4)),
        case(
            "ffprobe never lists the packets",
            &[
                &"track",
                &clip,
                &"--decoder",
                &"ffmpeg",
                &"--every",
                &"1",
                &"--out",
                &b.p("stall3.csv"),
            ],
            1,
        )
        .env("PATH", path(&fake.join("slowlist")))
        .env("SPOTLEVER_FFMPEG_STALL_S", "2")
        .keep(&[&clip])
        .says(&["ffprobe sent nothing for 2 s while listing the packets"])
        .within(Duration::from_secs(4)),
    ]
}
