//! Opening a video with ffmpeg's libraries: the stream's facts from the container, the decoder
//! with its frame threads, and with `--every` the key-frame plan from the packet index.

use super::super::keyplan::{self, PacketFacts, Picker};
use super::super::{OpenOptions, SourceError, SourceInfo};
use super::decoding::{Decoding, Stage};
use crate::frame::Roi;
use crate::units::Seconds;
use ffmpeg_next as av;
use std::collections::VecDeque;
use std::path::Path;

/// What the container says of the video stream before decoding.
struct StreamFacts {
    stream: usize,
    time_base: (i64, i64),
    start_pts: i64,
    nb_frames: Option<u64>,
    fps: Option<f64>,
    duration_s: Option<f64>,
    codec: String,
}

fn rational(r: av::Rational) -> (i64, i64) {
    (i64::from(r.numerator()), i64::from(r.denominator()))
}

pub(super) fn decode_error(path: &Path, message: String) -> SourceError {
    SourceError::Decode {
        origin: path.display().to_string(),
        message,
    }
}

/// The stream's packets as the index lists them, read one at a time without decoding.
fn packet_facts(
    path: &Path,
    stream: usize,
) -> Result<impl Iterator<Item = PacketFacts>, SourceError> {
    let mut input = av::format::input(path)
        .map_err(|e| decode_error(path, format!("cannot read its packet index ({e})")))?;
    let mut packet = av::Packet::empty();
    Ok(std::iter::from_fn(move || loop {
        packet.read(&mut input).ok()?;
        if packet.stream() == stream {
            return Some(PacketFacts {
                pts: packet.pts(),
                dts: packet.dts(),
                key: packet.is_key(),
                discard: packet.flags().bits() & av::ffi::AV_PKT_FLAG_DISCARD != 0,
            });
        }
    }))
}

/// Start the libraries (quietly) and open `path`'s container.
fn open_input(path: &Path) -> Result<av::format::context::Input, SourceError> {
    av::init().map_err(|e| SourceError::NeedsDecoder {
        path: path.display().to_string(),
        codec: "video".into(),
        advice: format!("ffmpeg's libraries did not start ({e}); try --decoder ffmpeg"),
    })?;
    // The libraries' own messages would run through the progress display; problems are
    // reported from their error codes instead.
    av::util::log::set_level(av::util::log::Level::Quiet);
    av::format::input(path).map_err(|e| {
        decode_error(
            path,
            format!("ffmpeg's libraries cannot read it ({e}); is it a video file?"),
        )
    })
}

/// The first video stream's facts and codec parameters.
fn stream_facts(
    path: &Path,
    input: &av::format::context::Input,
) -> Result<(StreamFacts, av::codec::Parameters), SourceError> {
    let st = input
        .streams()
        .find(|s| s.parameters().medium() == av::media::Type::Video)
        .ok_or_else(|| decode_error(path, "there is no video stream in this file".into()))?;
    let time_base = rational(st.time_base());
    let start_pts = match st.start_time() {
        av::ffi::AV_NOPTS_VALUE => 0,
        s => s,
    };
    let fps = {
        let r = st.avg_frame_rate();
        (r.numerator() > 0 && r.denominator() > 0).then(|| f64::from(r))
    };
    let duration_s = match st.duration() {
        d if d > 0 && d != av::ffi::AV_NOPTS_VALUE => {
            Some(d as f64 * time_base.0 as f64 / time_base.1 as f64)
        }
        _ => (input.duration() > 0)
            .then(|| input.duration() as f64 / f64::from(av::ffi::AV_TIME_BASE)),
    };
    let facts = StreamFacts {
        stream: st.index(),
        time_base,
        start_pts,
        nb_frames: u64::try_from(st.frames()).ok().filter(|&n| n > 0),
        fps,
        duration_s,
        codec: format!("{:?}", st.parameters().id()).to_lowercase(),
    };
    Ok((facts, st.parameters()))
}

/// The decoder for `params`, with as many frame threads as the libraries choose.
fn open_decoder(
    path: &Path,
    params: av::codec::Parameters,
    codec: &str,
) -> Result<av::decoder::Video, SourceError> {
    let mut ctx = av::codec::context::Context::from_parameters(params)
        .map_err(|e| decode_error(path, format!("cannot set up its decoder ({e})")))?;
    // Frame threads, as many as the libraries choose (0): the next pictures decode while
    // this one is tracked.
    ctx.set_threading(av::codec::threading::Config {
        kind: av::codec::threading::Type::Frame,
        count: 0,
        ..Default::default()
    });
    ctx.decoder()
        .video()
        .map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: codec.to_string(),
            advice: format!(
                "the linked ffmpeg libraries cannot decode it ({e}); try --decoder ffmpeg"
            ),
        })
}

/// With `--every`: the key frames to decode (`None`: a full decode) and why the file ends before
/// its index says it does, when the index shows it.
type KeyPlan = (Option<VecDeque<(i64, u64)>>, Option<String>);

/// The key-frame plan for `every` (see [`KeyPlan`]).
fn key_frame_plan(
    path: &Path,
    s: &StreamFacts,
    every: Option<Seconds>,
) -> Result<KeyPlan, SourceError> {
    let Some(e) = every else {
        return Ok((None, None));
    };
    let facts = packet_facts(path, s.stream)?;
    Ok(match keyplan::plan(facts, s.start_pts, s.time_base, e) {
        // Decoding only key frames never reads the missing end of a cut-off file, so the index
        // is what tells.
        Some(k) => {
            let short = keyplan::short_file(s.nb_frames, k.packets);
            (Some(k.kept), short)
        }
        None => (None, None),
    })
}

/// The source's description and sizes.
fn source_info(
    path: &Path,
    s: &StreamFacts,
    size: (usize, usize),
    planned: Option<usize>,
    every: Option<Seconds>,
    crop: Option<Roi>,
) -> SourceInfo {
    SourceInfo {
        description: super::super::video_description(
            path,
            &s.codec,
            size,
            "in-process by ffmpeg's libraries",
            planned.is_some(),
            crop,
        ),
        width: size.0,
        height: size.1,
        expected_frames: keyplan::expected_frames(planned, every, s.duration_s, s.nb_frames, s.fps),
        crop,
    }
}

impl Decoding {
    pub(super) fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        if !path.is_file() {
            return Err(SourceError::Missing {
                path: path.display().to_string(),
            });
        }
        let input = open_input(path)?;
        let (s, params) = stream_facts(path, &input)?;
        let decoder = open_decoder(path, params, &s.codec)?;
        let (width, height) = (decoder.width() as usize, decoder.height() as usize);
        if width == 0 || height == 0 {
            return Err(decode_error(
                path,
                "its video stream does not say its picture size".into(),
            ));
        }
        let (plan, ends_early) = key_frame_plan(path, &s, opts.every)?;
        let crop = opts.crop.filter(|r| r.fits_in(width, height));
        let planned = plan.as_ref().map(VecDeque::len);
        let info = source_info(path, &s, (width, height), planned, opts.every, crop);
        let pick = Picker::new(opts.every, plan, s.start_pts, s.time_base);
        Ok(Self {
            info,
            path: path.to_path_buf(),
            input,
            stream: s.stream,
            decoder,
            channel: opts.channel,
            layout: None,
            picture: av::frame::Video::empty(),
            scaled: av::frame::Video::empty(),
            packet: av::Packet::empty(),
            wanted: pick.planned_ticks().collect(),
            pick,
            pending: VecDeque::new(),
            spare: Vec::new(),
            stage: Stage::Reading,
            packets: 0,
            nb_frames: s.nb_frames,
            ends_early,
            read_error: None,
            complaint: None,
            refused: 0,
        })
    }
}
