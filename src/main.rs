//! The `spotlever` command: parses arguments and hands them to the library's stages.

mod cli;

use clap::Parser;

/// The error and its causes as one line, each cause once: a cause whose text the message before it
/// already contains (library errors that show their source in their own text and also return it as
/// `source()`) is not repeated.
fn error_text(e: &anyhow::Error) -> String {
    let mut text = e.to_string();
    for cause in e.chain().skip(1) {
        let c = cause.to_string();
        if !c.is_empty() && !text.contains(&c) {
            text.push_str(": ");
            text.push_str(&c);
        }
    }
    text
}

fn main() -> std::process::ExitCode {
    let args = cli::Cli::parse();
    match cli::run(args) {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {}", error_text(&e));
            std::process::ExitCode::FAILURE
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, thiserror::Error)]
    #[error("track.csv: {source}")]
    struct Shows {
        #[source]
        source: std::io::Error,
    }

    #[test]
    fn every_cause_appears_once() {
        let io = std::io::Error::new(std::io::ErrorKind::NotFound, "no such file (os error 2)");
        let e = anyhow::Error::new(Shows { source: io }).context("analysing the run");
        assert_eq!(
            error_text(&e),
            "analysing the run: track.csv: no such file (os error 2)"
        );
        let plain = anyhow::anyhow!("outer").context("top");
        assert_eq!(error_text(&plain), "top: outer");
    }
}
