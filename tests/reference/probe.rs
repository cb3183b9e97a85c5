//! The reference harness's window into the library: reads a JSON request naming one operation and its
//! inputs, runs the library function on them and writes the answer as JSON, so the Python side can put
//! spotlever's numbers beside numpy's and scipy's on exactly the same samples.
//!
//! Usage: `reference_probe REQUEST.json ANSWER.json`. Operations: see [`run`].

use clap::ValueEnum;
use serde_json::{json, Value};
use spotlever::analysis::{damped, period};
use spotlever::source::{self, Delivery, VideoDecoder};
use std::process::ExitCode;

type Failure = Box<dyn std::error::Error>;

fn numbers(req: &Value, key: &str) -> Result<Vec<f64>, Failure> {
    req.get(key)
        .and_then(Value::as_array)
        .ok_or_else(|| format!("request has no array '{key}'"))?
        .iter()
        .enumerate()
        .map(|(i, v)| {
            v.as_f64()
                .ok_or_else(|| format!("'{key}'[{i}] is not a number").into())
        })
        .collect()
}

/// Dispatch one request.
fn run(req: &Value) -> Result<Value, Failure> {
    let op = req
        .get("op")
        .and_then(Value::as_str)
        .ok_or("request has no string 'op'")?;
    match op {
        // The spectrum's interpolated peak: {"t": [..], "y": [..], "pad": 8} -> {"peak_hz": ..}.
        "spectrum" => {
            let opts = period::SpectrumOptions {
                pad: req.get("pad").and_then(Value::as_u64).unwrap_or(8) as usize,
                ..Default::default()
            };
            let s = period::spectrum(&numbers(req, "t")?, &numbers(req, "y")?, &opts)?;
            Ok(json!({ "peak_hz": s.peak_hz }))
        }
        // The damped-sine fit without drift, started from the spectrum's peak, over the whole series:
        // {"t": [..], "y": [..]} -> {"equilibrium", "gamma", "omega", their "u_*"}.
        "damped_fit" => {
            let (t, y) = (numbers(req, "t")?, numbers(req, "y")?);
            let (first, last) = match (t.first(), t.last()) {
                (Some(a), Some(b)) => (*a, *b),
                _ => return Err("empty series".into()),
            };
            let s = period::spectrum(&t, &y, &period::SpectrumOptions::default())?;
            let omega_guess = 2.0 * std::f64::consts::PI * s.peak_hz;
            let f = damped::fit_damped(&t, &y, first, 0.5 * (first + last), omega_guess, false)?;
            Ok(json!({
                "equilibrium": f.params[damped::X_EQ],
                "gamma": f.params[damped::GAMMA],
                "omega": f.params[damped::OMEGA],
                "u_equilibrium": f.u(damped::X_EQ),
                "u_gamma": f.u(damped::GAMMA),
                "u_omega": f.u(damped::OMEGA),
            }))
        }
        // Decoding alone, for the speed floor: every frame of a video read by spotlever's own source
        // with the given decoder and thrown away (buffers recycled as the tracker's loop does):
        // {"path": "clip.mp4", "decoder": "auto"|"linked"|"ffmpeg"|"builtin"} -> {"frames": ..}.
        "decode" => {
            let path = req
                .get("path")
                .and_then(Value::as_str)
                .ok_or("request has no string 'path'")?;
            let name = req.get("decoder").and_then(Value::as_str).unwrap_or("auto");
            let decoder = VideoDecoder::from_str(name, true)?;
            let mut src = source::open(
                std::path::Path::new(path),
                &source::OpenOptions {
                    decoder,
                    ..Default::default()
                },
            )?;
            let mut frames = 0u64;
            while let Some(d) = src.next_delivery() {
                if let Delivery::Frame(f) = d? {
                    frames += 1;
                    src.recycle(f);
                }
            }
            Ok(json!({ "frames": frames, "source": src.info().description }))
        }
        other => Err(format!("operation '{other}' is not available in this build").into()),
    }
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 3 {
        eprintln!("usage: reference_probe REQUEST.json ANSWER.json");
        return ExitCode::from(2);
    }
    let result = std::fs::read_to_string(&args[1])
        .map_err(|e| -> Failure { format!("{}: {e}", args[1]).into() })
        .and_then(|text| {
            serde_json::from_str::<Value>(&text).map_err(|e| format!("{}: {e}", args[1]).into())
        })
        .and_then(|req| run(&req))
        .and_then(|answer| {
            std::fs::write(&args[2], answer.to_string())
                .map_err(|e| format!("{}: {e}", args[2]).into())
        });
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}
