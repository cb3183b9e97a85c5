//! Running the `spotlever` binary as a user would, with its exit status and both output streams kept
//! as text for the assertions.

use std::ffi::OsStr;
use std::process::{Command, ExitStatus, Output};

/// The binary cargo built for these tests, ready for arguments.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_spotlever"))
}

/// Run a prepared command to its end (standard input inherited unless the command says otherwise).
pub fn run(cmd: &mut Command) -> Ran {
    Ran::from(cmd.output().expect("run spotlever"))
}

/// `spotlever ARGS...` run to its end.
pub fn spotlever<I, S>(args: I) -> Ran
where
    I: IntoIterator<Item = S>,
    S: AsRef<OsStr>,
{
    run(bin().args(args))
}

/// How one run of the binary ended: its exit status and what it wrote.
pub struct Ran {
    pub status: ExitStatus,
    pub stdout: String,
    pub stderr: String,
}

impl From<Output> for Ran {
    fn from(o: Output) -> Self {
        Ran {
            status: o.status,
            stdout: String::from_utf8_lossy(&o.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
        }
    }
}

impl Ran {
    /// Whether the run exited with success.
    pub fn ok(&self) -> bool {
        self.status.success()
    }

    /// The exit code (`None` when a signal ended the run).
    pub fn code(&self) -> Option<i32> {
        self.status.code()
    }

    /// Fails the test, showing both streams, unless the run succeeded.
    pub fn assert_ok(&self) {
        assert!(
            self.ok(),
            "spotlever failed ({})\nstdout:\n{}\nstderr:\n{}",
            self.status,
            self.stdout,
            self.stderr
        );
    }

    /// Fails the test unless the run failed; returns what it wrote to standard error.
    pub fn failed(&self) -> &str {
        assert!(!self.ok(), "should fail: {}", self.stderr);
        &self.stderr
    }

    /// Fails the test unless the run failed without a panic and its standard error holds every one
    /// of `needles`.
    pub fn fails_with(&self, needles: &[&str]) {
        let e = self.failed();
        assert!(!e.contains("panicked"), "panic: {e}");
        for n in needles {
            assert!(e.contains(n), "missing {n:?} in: {e}");
        }
    }
}
