//! What the person at the recorder can do while it runs, and the stop signals.
//!
//! On a terminal: `m` marks a mass move, `q` (or Esc, or Ctrl-C) stops cleanly. Without a terminal
//! (output redirected, or driven by a script) commands are read as lines from standard input:
//! `m [LABEL]` or `mark [LABEL]` marks an event, `q` or `quit` stops. SIGINT and SIGTERM stop cleanly
//! in both cases.

use crossterm::event::{self, Event, KeyCode, KeyEvent, KeyEventKind, KeyModifiers};
use std::io::BufRead;
use std::sync::atomic::{AtomicI32, Ordering};
use std::sync::mpsc::{channel, Receiver};
use std::time::Duration;

/// Label of an event marked with the key or with `m` alone.
pub const DEFAULT_LABEL: &str = "move";

/// Something asked of the recorder.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Command {
    /// Mark this moment in events.csv with a label.
    Mark(String),
    /// Stop cleanly.
    Quit,
}

/// The command for a key press, if it is one.
pub fn command_for_key(key: &KeyEvent) -> Option<Command> {
    if key.kind == KeyEventKind::Release {
        return None;
    }
    match key.code {
        KeyCode::Char('c') if key.modifiers.contains(KeyModifiers::CONTROL) => Some(Command::Quit),
        KeyCode::Char('m') | KeyCode::Char('M') => Some(Command::Mark(DEFAULT_LABEL.into())),
        KeyCode::Char('q') | KeyCode::Char('Q') | KeyCode::Esc => Some(Command::Quit),
        _ => None,
    }
}

/// The command written on one line of standard input. `Err` says what was not understood.
pub fn command_for_line(line: &str) -> Result<Option<Command>, String> {
    let t = line.trim();
    if t.is_empty() {
        return Ok(None);
    }
    let (word, rest) = t.split_once(char::is_whitespace).unwrap_or((t, ""));
    match word.to_ascii_lowercase().as_str() {
        "q" | "quit" | "stop" => Ok(Some(Command::Quit)),
        "m" | "mark" => {
            let label = rest.trim();
            Ok(Some(Command::Mark(if label.is_empty() {
                DEFAULT_LABEL.into()
            } else {
                label.to_string()
            })))
        }
        _ => Err(format!(
            "not a command: {t:?}; type 'm [LABEL]' to mark a mass move or 'q' to stop"
        )),
    }
}

/// Where commands come from.
pub enum Controls {
    /// Key presses on the terminal (raw mode must be on).
    Keys,
    /// Lines from standard input, read by a helper thread.
    Lines(Receiver<String>),
    /// Nothing (library use).
    Nothing,
}

impl Controls {
    /// Start reading standard input lines in a helper thread.
    pub fn stdin_lines() -> Self {
        let (tx, rx) = channel();
        let spawned = std::thread::Builder::new()
            .name("spotlever-stdin".into())
            .spawn(move || {
                let stdin = std::io::stdin();
                for line in stdin.lock().lines() {
                    match line {
                        Ok(l) => {
                            if tx.send(l).is_err() {
                                return;
                            }
                        }
                        Err(_) => return,
                    }
                }
            });
        match spawned {
            Ok(_) => Controls::Lines(rx),
            Err(_) => Controls::Nothing,
        }
    }

    /// Commands waiting now; problems with typed lines go to `warn`.
    pub fn poll(&mut self, warn: &mut dyn FnMut(String)) -> Vec<Command> {
        let mut out = Vec::new();
        match self {
            Controls::Keys => {
                while let Ok(true) = event::poll(Duration::ZERO) {
                    match event::read() {
                        Ok(Event::Key(k)) => out.extend(command_for_key(&k)),
                        Ok(_) => {}
                        Err(_) => break,
                    }
                }
            }
            Controls::Lines(rx) => {
                while let Ok(line) = rx.try_recv() {
                    match command_for_line(&line) {
                        Ok(c) => out.extend(c),
                        Err(e) => warn(e),
                    }
                }
            }
            Controls::Nothing => {}
        }
        out
    }
}

/// The signal that asked to stop (0: none yet).
static STOP_SIGNAL: AtomicI32 = AtomicI32::new(0);

extern "C" fn on_stop_signal(sig: libc::c_int) {
    // Only an atomic store: safe inside a signal handler.
    STOP_SIGNAL.store(sig, Ordering::SeqCst);
}

/// Make SIGINT and SIGTERM set a flag instead of killing the process, so the loop can close the run.
/// Returns false if the handlers could not be installed.
pub fn install_stop_signals() -> bool {
    let mut ok = true;
    for sig in [libc::SIGINT, libc::SIGTERM] {
        // SAFETY: a zeroed sigaction with a handler that only stores to an atomic is valid; the
        // pointers passed are to live locals.
        unsafe {
            let mut action: libc::sigaction = std::mem::zeroed();
            action.sa_sigaction = on_stop_signal as extern "C" fn(libc::c_int) as usize;
            action.sa_flags = libc::SA_RESTART;
            libc::sigemptyset(&mut action.sa_mask);
            ok &= libc::sigaction(sig, &action, std::ptr::null_mut()) == 0;
        }
    }
    ok
}

/// The name of the stop signal received, if one was.
pub fn stop_signal() -> Option<&'static str> {
    match STOP_SIGNAL.load(Ordering::SeqCst) {
        0 => None,
        libc::SIGINT => Some("SIGINT"),
        libc::SIGTERM => Some("SIGTERM"),
        _ => Some("a signal"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_map_to_commands() {
        let k = |c, m| KeyEvent::new(c, m);
        assert_eq!(
            command_for_key(&k(KeyCode::Char('m'), KeyModifiers::NONE)),
            Some(Command::Mark("move".into()))
        );
        assert_eq!(
            command_for_key(&k(KeyCode::Char('q'), KeyModifiers::NONE)),
            Some(Command::Quit)
        );
        assert_eq!(
            command_for_key(&k(KeyCode::Char('c'), KeyModifiers::CONTROL)),
            Some(Command::Quit)
        );
        assert_eq!(
            command_for_key(&k(KeyCode::Char('c'), KeyModifiers::NONE)),
            None
        );
    }

    #[test]
    fn lines_map_to_commands() {
        assert_eq!(command_for_line("  "), Ok(None));
        assert_eq!(
            command_for_line("m"),
            Ok(Some(Command::Mark("move".into())))
        );
        assert_eq!(
            command_for_line("mark masses to far side"),
            Ok(Some(Command::Mark("masses to far side".into())))
        );
        assert_eq!(command_for_line("Q"), Ok(Some(Command::Quit)));
        let e = command_for_line("jump").unwrap_err();
        assert!(e.contains("'m [LABEL]'"), "{e}");
    }
}
