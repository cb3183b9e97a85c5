//! The reference harness's window into the library: reads a JSON request naming one operation and its
//! inputs, runs the library function on them and writes the answer as JSON, so the Python side can put
//! spotlever's numbers beside numpy's and scipy's on exactly the same samples.
//!
//! Usage: `reference_probe REQUEST.json ANSWER.json`. Operations: see [`run`].

use serde_json::{json, Value};
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
        "echo" => Ok(json!({ "t": numbers(req, "t")? })),
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
