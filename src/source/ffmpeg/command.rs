//! The `ffmpeg` command lines, built from plain data so they can be checked without running
//! anything: the decoder's arguments (where its input comes from, the filter chain with the crop,
//! the raw output format) and, for the key-frame path, the demuxer that feeds it.

use super::super::pixfmt::Transfer;
use crate::frame::Roi;
use std::ffi::OsString;
use std::path::Path;

/// Where the decoding ffmpeg reads its packets and which frames it decodes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Input {
    /// The file itself, every frame.
    WholeFile,
    /// The file itself, decoding key frames only (streams that reorder frames: their times do not
    /// survive a copy through another container).
    KeyFramesOfFile,
    /// The key-frame packets a demuxer ffmpeg ([`demuxer_args`]) passes on through stdin.
    KeyFramePackets,
}

/// The filter chain and output pixel format given to ffmpeg, cutting each picture to `crop`.
pub(super) fn filter_chain(transfer: Transfer, crop: Option<Roi>) -> (String, &'static str) {
    // showinfo prints each frame's exact timestamp; its checksums are not needed. The picture is
    // put in its output format inside the chain, so the crop after it is exact to the pixel even
    // where chroma is subsampled (ffmpeg's crop only moves plane pointers; the muxer copies the
    // rectangle out).
    let (chain, pix_fmt) = match transfer {
        Transfer::LumaPlane { .. } => ("showinfo=checksum=0,extractplanes=y", "gray"),
        Transfer::Gray => ("showinfo=checksum=0,format=gray", "gray"),
        Transfer::Rgb => ("showinfo=checksum=0,format=rgb24", "rgb24"),
    };
    let chain = match crop {
        Some(r) => format!("{chain},crop={}:{}:{}:{}", r.width, r.height, r.x, r.y),
        None => chain.to_string(),
    };
    (chain, pix_fmt)
}

fn os<'a>(args: &'a [&str]) -> impl Iterator<Item = OsString> + 'a {
    args.iter().map(OsString::from)
}

/// The decoding ffmpeg's arguments: read `path` as `input` says, send raw pictures of `transfer`
/// (cut to `crop`) to stdout and every frame's timestamp to stderr.
pub(super) fn decoder_args(
    path: &Path,
    input: Input,
    transfer: Transfer,
    crop: Option<Roi>,
) -> Vec<OsString> {
    let mut args: Vec<OsString> =
        os(&["-hide_banner", "-nostdin", "-nostats", "-loglevel", "info"]).collect();
    match input {
        Input::KeyFramesOfFile => {
            args.extend(os(&["-skip_frame", "nokey", "-noautorotate", "-i"]));
            args.push(path.into());
        }
        Input::KeyFramePackets => {
            args.extend(os(&["-skip_frame", "nokey", "-f", "nut", "-i", "pipe:0"]));
        }
        Input::WholeFile => {
            args.extend(os(&["-noautorotate", "-i"]));
            args.push(path.into());
        }
    }
    let (filters, pix_fmt) = filter_chain(transfer, crop);
    // `-copyts`: the times showinfo reports are the file's own, so they count from the stream's
    // first timestamp as ffprobe reported it, wherever the file starts.
    args.extend(os(&[
        "-copyts",
        "-map",
        "0:v:0",
        "-an",
        "-sn",
        "-dn",
        "-vf",
        &filters,
        "-vsync",
        "passthrough",
        "-f",
        "rawvideo",
        "-pix_fmt",
        pix_fmt,
        "pipe:1",
    ]));
    args
}

/// The demuxing ffmpeg's arguments: pass only the key-frame packets of `path`'s first video
/// stream, undecoded, to stdout.
pub(super) fn demuxer_args(path: &Path) -> Vec<OsString> {
    let mut args: Vec<OsString> = os(&[
        "-hide_banner",
        "-nostdin",
        "-nostats",
        "-loglevel",
        "error",
        "-discard",
        "nokey",
        "-noautorotate",
        "-i",
    ])
    .collect();
    args.push(path.into());
    args.extend(os(&[
        "-map", "0:v:0", "-c", "copy", "-copyts", "-f", "nut", "pipe:1",
    ]));
    args
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(args: &[OsString]) -> String {
        let words: Vec<_> = args.iter().map(|a| a.to_string_lossy()).collect();
        words.join(" ")
    }

    const ROI: Roi = Roi {
        x: 10,
        y: 20,
        width: 64,
        height: 48,
    };

    #[test]
    fn filter_chains_per_transfer_with_and_without_crop() {
        let luma = Transfer::LumaPlane { widen: true };
        assert_eq!(
            filter_chain(luma, None),
            ("showinfo=checksum=0,extractplanes=y".into(), "gray")
        );
        assert_eq!(
            filter_chain(Transfer::Gray, None),
            ("showinfo=checksum=0,format=gray".into(), "gray")
        );
        assert_eq!(
            filter_chain(Transfer::Rgb, Some(ROI)),
            (
                "showinfo=checksum=0,format=rgb24,crop=64:48:10:20".into(),
                "rgb24"
            )
        );
        assert_eq!(
            filter_chain(luma, Some(ROI)).0,
            "showinfo=checksum=0,extractplanes=y,crop=64:48:10:20"
        );
    }

    #[test]
    fn whole_file_decode_reads_the_file_and_writes_raw_pictures() {
        let args = decoder_args(Path::new("a b.mp4"), Input::WholeFile, Transfer::Gray, None);
        assert_eq!(
            line(&args),
            "-hide_banner -nostdin -nostats -loglevel info -noautorotate -i a b.mp4 -copyts \
             -map 0:v:0 -an -sn -dn -vf showinfo=checksum=0,format=gray -vsync passthrough \
             -f rawvideo -pix_fmt gray pipe:1"
        );
        assert_eq!(args[7], "a b.mp4", "the path is one argument");
    }

    #[test]
    fn key_frame_decodes_skip_other_frames() {
        let luma = Transfer::LumaPlane { widen: false };
        let own = line(&decoder_args(
            Path::new("v.mkv"),
            Input::KeyFramesOfFile,
            luma,
            Some(ROI),
        ));
        assert!(own.starts_with(
            "-hide_banner -nostdin -nostats -loglevel info -skip_frame nokey -noautorotate -i v.mkv -copyts"
        ));
        assert!(own.ends_with(
            "-vf showinfo=checksum=0,extractplanes=y,crop=64:48:10:20 -vsync passthrough -f rawvideo -pix_fmt gray pipe:1"
        ));
        let piped = line(&decoder_args(
            Path::new("v.mkv"),
            Input::KeyFramePackets,
            Transfer::Rgb,
            None,
        ));
        assert!(piped.contains("-skip_frame nokey -f nut -i pipe:0 -copyts"));
        assert!(!piped.contains("v.mkv"));
        assert!(piped.ends_with("-pix_fmt rgb24 pipe:1"));
    }

    #[test]
    fn demuxer_copies_key_frame_packets_to_its_stdout() {
        assert_eq!(
            line(&demuxer_args(Path::new("v.mkv"))),
            "-hide_banner -nostdin -nostats -loglevel error -discard nokey -noautorotate -i v.mkv \
             -map 0:v:0 -c copy -copyts -f nut pipe:1"
        );
    }
}
