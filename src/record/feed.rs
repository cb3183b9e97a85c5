//! The reading thread: opens the source, reads it, and hands deliveries to the live loop over a short
//! bounded queue, so a slow disk or a redraw never stalls the driver and a stalled driver never stalls
//! the display.
//!
//! With [`OnFault::Retry`] (cameras) a read error or an end of frames is reported as a fault and the
//! source is reopened every retry interval until it delivers again; frame numbers go on from where they
//! stopped. With [`OnFault::Stop`] (replays) an error ends the run and the end of frames ends it
//! cleanly.

use crate::source::{Delivery, FrameSource, SourceError, SourceInfo};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{sync_channel, Receiver, RecvTimeoutError, SyncSender};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Opens (and, after a fault, reopens) the source inside the reading thread.
pub type Opener = Box<dyn FnMut() -> Result<Box<dyn FrameSource>, SourceError> + Send>;

/// What to do when the source fails or ends.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum OnFault {
    /// End the run (replays).
    Stop,
    /// Reopen every `every` until frames come again (cameras).
    Retry { every: Duration },
}

/// What the reading thread reports.
#[derive(Debug)]
pub enum Feed {
    /// The source opened for the first time.
    Opened(SourceInfo),
    /// A frame (numbered continuously across reopenings) and when it arrived.
    Delivery(Delivery, Instant),
    /// The source stopped delivering; it is being reopened.
    Fault(String),
    /// The source opened again after a fault.
    Reopened,
    /// The source has no more frames.
    End,
    /// The source cannot be used.
    Fatal(SourceError),
}

/// The live loop's end of the reading thread.
pub struct FeedHandle {
    rx: Receiver<Feed>,
    stop: Arc<AtomicBool>,
    thread: Option<JoinHandle<()>>,
}

impl FeedHandle {
    /// Next report, waiting at most `timeout`; `None` on timeout or when the thread is gone.
    pub fn next(&self, timeout: Duration) -> Option<Feed> {
        match self.rx.recv_timeout(timeout) {
            Ok(f) => Some(f),
            Err(RecvTimeoutError::Timeout) => None,
            Err(RecvTimeoutError::Disconnected) => Some(Feed::End),
        }
    }

    /// A report if one is waiting.
    pub fn try_next(&self) -> Option<Feed> {
        self.rx.try_recv().ok()
    }

    /// Ask the thread to stop. It is not waited for: a driver call may block for a long time, and
    /// the thread ends with the process.
    pub fn stop(mut self) {
        self.stop.store(true, Ordering::SeqCst);
        drop(self.thread.take());
    }

    /// Ask the thread to stop and wait until it has (for sources that never block for long).
    pub fn stop_and_join(mut self) {
        self.stop.store(true, Ordering::SeqCst);
        // Unblock a pending send.
        while self.rx.try_recv().is_ok() {}
        if let Some(t) = self.thread.take() {
            let rx = &self.rx;
            while !t.is_finished() {
                while rx.try_recv().is_ok() {}
                std::thread::sleep(Duration::from_millis(2));
            }
            let _ = t.join();
        }
    }
}

/// Start reading in a new thread; at most `queue` reports wait unread. (Should the thread fail to
/// start, the handle reports the end at once.)
pub fn spawn(opener: Opener, on_fault: OnFault, queue: usize) -> FeedHandle {
    let (tx, rx) = sync_channel(queue.max(1));
    let stop = Arc::new(AtomicBool::new(false));
    let stop_t = Arc::clone(&stop);
    let thread = std::thread::Builder::new()
        .name("spotlever-feed".into())
        .spawn(move || read_loop(opener, on_fault, &tx, &stop_t))
        .ok();
    FeedHandle { rx, stop, thread }
}

fn sleep_unless_stopped(d: Duration, stop: &AtomicBool) {
    let until = Instant::now() + d;
    while !stop.load(Ordering::SeqCst) {
        let now = Instant::now();
        if now >= until {
            return;
        }
        std::thread::sleep((until - now).min(Duration::from_millis(50)));
    }
}

/// The reading thread's state across reopenings.
struct Reader<'a> {
    opener: Opener,
    on_fault: OnFault,
    tx: &'a SyncSender<Feed>,
    stop: &'a AtomicBool,
    /// Added to the source's frame numbers, so they go on across reopenings.
    base: u64,
    opened_once: bool,
    fault_reported: bool,
}

/// How one opening of the source ended.
enum Pass {
    /// It stopped delivering (retries only): why, and the frame number to go on from.
    Fault { reason: String, next_base: u64 },
    /// The thread is done: the run ended, failed, was stopped, or nobody listens any more.
    Done,
}

fn read_loop(opener: Opener, on_fault: OnFault, tx: &SyncSender<Feed>, stop: &AtomicBool) {
    let mut reader = Reader {
        opener,
        on_fault,
        tx,
        stop,
        base: 0,
        opened_once: false,
        fault_reported: false,
    };
    reader.run();
}

impl Reader<'_> {
    fn run(&mut self) {
        while !self.stop.load(Ordering::SeqCst) {
            let mut source = match (self.opener)() {
                Ok(s) => s,
                Err(e) => match self.on_fault {
                    // A source that never opened is a setup error, not a fault.
                    OnFault::Retry { every } if self.opened_once => {
                        if !self.fault_reported {
                            self.fault_reported = self.tx.send(Feed::Fault(e.to_string())).is_ok();
                        }
                        sleep_unless_stopped(every, self.stop);
                        continue;
                    }
                    _ => {
                        let _ = self.tx.send(Feed::Fatal(e));
                        return;
                    }
                },
            };
            let first = if self.opened_once {
                Feed::Reopened
            } else {
                Feed::Opened(source.info().clone())
            };
            self.opened_once = true;
            if self.tx.send(first).is_err() {
                return;
            }
            let Pass::Fault { reason, next_base } = self.read(source.as_mut()) else {
                return;
            };
            drop(source);
            self.base = next_base;
            if let OnFault::Retry { every } = self.on_fault {
                if !self.fault_reported {
                    self.fault_reported = true;
                    if self.tx.send(Feed::Fault(reason)).is_err() {
                        return;
                    }
                }
                sleep_unless_stopped(every, self.stop);
            }
        }
    }

    /// Read one opening of the source until it stops, renumbering its frames after `base`.
    fn read(&mut self, source: &mut dyn FrameSource) -> Pass {
        let mut next_base = self.base;
        loop {
            if self.stop.load(Ordering::SeqCst) {
                return Pass::Done;
            }
            match source.next_delivery() {
                Some(Ok(mut d)) => {
                    let idx = match &mut d {
                        Delivery::Frame(f) => &mut f.index,
                        Delivery::Unreadable { index, .. } => index,
                    };
                    *idx += self.base;
                    next_base = next_base.max(*idx + 1);
                    self.fault_reported = false;
                    if self.tx.send(Feed::Delivery(d, Instant::now())).is_err() {
                        return Pass::Done;
                    }
                }
                Some(Err(e)) => match self.on_fault {
                    OnFault::Stop => {
                        let _ = self.tx.send(Feed::Fatal(e));
                        return Pass::Done;
                    }
                    OnFault::Retry { .. } => {
                        return Pass::Fault {
                            reason: e.to_string(),
                            next_base,
                        }
                    }
                },
                None => match self.on_fault {
                    OnFault::Stop => {
                        let _ = self.tx.send(Feed::End);
                        return Pass::Done;
                    }
                    OnFault::Retry { .. } => {
                        return Pass::Fault {
                            reason: "the source stopped delivering frames".into(),
                            next_base,
                        }
                    }
                },
            }
        }
    }
}
