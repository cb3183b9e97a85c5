//! Video files decoded inside this process by ffmpeg's libraries, linked in by the optional
//! `linked-ffmpeg` feature (building it needs their development packages, pkg-config and libclang;
//! see the README, "Video input").
//!
//! Nothing crosses a pipe: each picture's luma plane is copied once, straight from the decoder's
//! buffer into the frame's (only the `--roi` rectangle when one is given), while the decoder's
//! frame threads decode the next pictures. In every other way it behaves as the `ffmpeg` program's
//! source: presentation times are the decoder's own timestamps counted from the stream's first one,
//! studio-range luma is kept as decoded, formats whose first plane is not 8-bit luma (and the colour
//! channels) go through ffmpeg's scaler, and with `--every` only the key frames are decoded when the
//! packet index shows that a full decode would keep exactly those.
//!
//! [`open`] opens the file and the decoder, [`decoding`] runs the decoder's loop, [`picture`] turns
//! each picture into a plane, [`error`] names what can stop it.

mod decoding;
mod error;
mod open;
mod picture;

use super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo};
use crate::error::IoError;
use crate::frame::Frame;
use decoding::Decoding;
use open::decode_error;
use std::path::Path;
use std::sync::mpsc::{channel, sync_channel, Receiver, Sender};
use std::thread::JoinHandle;

/// Decoded pictures waiting for the tracker: enough that the decoder's threads never wait for it
/// while it works on one picture, few enough that memory does not grow with the run.
const QUEUED_PICTURES: usize = 3;

/// A video file decoded by ffmpeg's libraries inside this process. Decoding runs on its own
/// thread, a few pictures ahead, so the decoder's frame threads keep working while a picture is
/// tracked (the decoder starts a picture only when it is handed the next packet).
pub struct LinkedSource {
    info: SourceInfo,
    key_frames_only: bool,
    deliveries: Option<Receiver<Option<Result<Delivery, SourceError>>>>,
    spare: Sender<Vec<u8>>,
    worker: Option<JoinHandle<()>>,
}

impl LinkedSource {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        let (opened_tx, opened_rx) = channel();
        let (deliveries_tx, deliveries_rx) = sync_channel(QUEUED_PICTURES);
        let (spare_tx, spare_rx) = channel();
        let (path_owned, opts) = (path.to_path_buf(), opts.clone());
        // The libraries' objects are made, used and dropped on this one thread.
        let worker = std::thread::Builder::new()
            .name("video decoding".into())
            .spawn(move || match Decoding::open(&path_owned, &opts) {
                Ok(d) => {
                    let facts = (d.info.clone(), d.pick.key_frames_only());
                    if opened_tx.send(Ok(facts)).is_ok() {
                        d.run(deliveries_tx, spare_rx);
                    }
                }
                Err(e) => {
                    let _ = opened_tx.send(Err(e));
                }
            })
            .map_err(|e| {
                SourceError::Io(IoError {
                    path: path.to_path_buf(),
                    source: e,
                })
            })?;
        let (info, key_frames_only) = match opened_rx.recv() {
            Ok(r) => r?,
            Err(_) => {
                let _ = worker.join();
                return Err(decode_error(
                    path,
                    "the decoding thread stopped while opening the file".into(),
                ));
            }
        };
        Ok(Self {
            info,
            key_frames_only,
            deliveries: Some(deliveries_rx),
            spare: spare_tx,
            worker: Some(worker),
        })
    }

    /// Whether only key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.key_frames_only
    }
}

impl FrameSource for LinkedSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        let got = self.deliveries.as_ref()?.recv();
        match got {
            Ok(Some(d)) => Some(d),
            // The end, or a decoding thread that has gone (after its last word).
            Ok(None) | Err(_) => {
                self.deliveries = None;
                None
            }
        }
    }

    fn recycle(&mut self, frame: Frame) {
        if let Some(bytes) = frame.plane.into_u8_vec() {
            let _ = self.spare.send(bytes);
        }
    }
}

impl Drop for LinkedSource {
    fn drop(&mut self) {
        // Hanging up first ends a decoding thread that is waiting to hand over a picture.
        self.deliveries = None;
        if let Some(w) = self.worker.take() {
            let _ = w.join();
        }
    }
}
