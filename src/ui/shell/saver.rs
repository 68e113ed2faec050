//! The build saver: one thread that writes the window's builds one at a
//! time, in the order asked, skipping a snapshot when a newer one of the
//! same file is already waiting, and keeping the fingerprint of the file it
//! last read or wrote, so it refuses to write over another writer's
//! changes. It answers through an [`Inbox`] of the window's job runner.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{self, Receiver, Sender};

use crate::ledger::store::{DiskFingerprint, StoreError};
use crate::ledger::Build;
use crate::text::error_sentence;
use crate::ui::jobs::{Inbox, Jobs, Reply};

/// Which snapshot of which open build a save wrote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SaveStamp {
    /// Counts the builds opened or started in the window.
    pub document: u64,
    /// Counts the changes to that build.
    pub generation: u64,
}

/// Why a save did not happen.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SaveProblem {
    /// The file changed on disk since this window read or wrote it; the
    /// sentence to show.
    ChangedOnDisk(String),
    /// Anything else (no permission, disk full, invalid build ...).
    Failed(String),
}

/// How a save treats a file that changed on disk.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SaveCheck {
    /// Refuse if the file is not what this window last read or wrote.
    IfUnchanged,
    /// Write over whatever is there (the maker chose to).
    Overwrite,
}

/// A save finished: to `path`, of the snapshot stamped `stamp`; `handled`
/// counts the requests this answers (older snapshots of the same file
/// still queued were skipped in favour of this one).
#[derive(Debug)]
pub struct SaveDone {
    pub path: PathBuf,
    pub stamp: SaveStamp,
    pub handled: usize,
    pub result: Result<(), SaveProblem>,
}

/// What the build saver is told, in order.
enum SaverMessage {
    /// The window now holds `path` as it was read (fingerprint), or holds
    /// no file (None).
    Track(Option<(PathBuf, DiskFingerprint)>),
    /// Save this snapshot.
    Save {
        path: PathBuf,
        build: Box<Build>,
        stamp: SaveStamp,
        check: SaveCheck,
    },
}

/// The window's side of the build saver; the thread starts with the first
/// message and ends when this is dropped.
#[derive(Debug)]
pub struct BuildSaver {
    answers: Inbox<SaveDone>,
    saver: Option<Sender<SaverMessage>>,
}

impl BuildSaver {
    /// A saver answering through `jobs`.
    pub fn new(jobs: &Jobs) -> Self {
        Self {
            answers: jobs.inbox(),
            saver: None,
        }
    }

    /// Queues a save of `build` to `path`; the answer comes back through
    /// [`Self::finished`].
    pub fn save(&mut self, path: PathBuf, build: Build, stamp: SaveStamp, check: SaveCheck) {
        self.answers.expect_answer();
        let message = SaverMessage::Save {
            path,
            build: Box::new(build),
            stamp,
            check,
        };
        if let Err(mpsc::SendError(SaverMessage::Save { path, stamp, .. })) = self.send(message) {
            self.answers.forget_answer();
            self.answers.reply_address().send(SaveDone {
                path,
                stamp,
                handled: 0,
                result: Err(SaveProblem::Failed(
                    "Could not start the background task that saves builds.".to_owned(),
                )),
            });
        }
    }

    /// Tells the saver which file the window holds now and what was in it
    /// (after opening a build), or that it holds none.
    pub fn track(&mut self, file: Option<(PathBuf, DiskFingerprint)>) {
        let _ = self.send(SaverMessage::Track(file));
    }

    /// The saves that have finished.
    pub fn finished(&mut self) -> Vec<SaveDone> {
        self.answers.drain_answering(|done| done.handled)
    }

    fn send(&mut self, message: SaverMessage) -> Result<(), mpsc::SendError<SaverMessage>> {
        if self.saver.is_none() {
            let (sender, receiver) = mpsc::channel();
            let reply = self.answers.reply_address();
            let started = std::thread::Builder::new()
                .name("tapwright-build-saver".to_owned())
                .spawn(move || run_build_saver(&receiver, &reply));
            if started.is_err() {
                return Err(mpsc::SendError(message));
            }
            self.saver = Some(sender);
        }
        match &self.saver {
            Some(saver) => saver.send(message),
            None => Err(mpsc::SendError(message)),
        }
    }
}

/// The build saver's loop: takes every message waiting, then works through
/// them in order. A save is skipped (counted into the answer of the newer
/// one) when a newer save of the same file is in the same batch, so the
/// newest snapshot is the one left on disk. Ends when the window drops its
/// side of the channel.
fn run_build_saver(receiver: &Receiver<SaverMessage>, reply: &Reply<SaveDone>) {
    let mut known: Option<(PathBuf, DiskFingerprint)> = None;
    while let Ok(first) = receiver.recv() {
        let mut batch: Vec<SaverMessage> =
            std::iter::once(first).chain(receiver.try_iter()).collect();
        let mut skipped: Vec<(PathBuf, usize, bool)> = Vec::new();
        for index in 0..batch.len() {
            let newer_save_waiting = match &batch[index] {
                SaverMessage::Save { path, .. } => batch[index + 1..]
                    .iter()
                    .any(|m| matches!(m, SaverMessage::Save { path: p, .. } if p == path)),
                SaverMessage::Track(_) => false,
            };
            let message = std::mem::replace(&mut batch[index], SaverMessage::Track(None));
            match message {
                SaverMessage::Track(file) => known = file,
                SaverMessage::Save { path, check, .. } if newer_save_waiting => {
                    // Remember that the maker chose to overwrite, for the
                    // newer snapshot that replaces this one.
                    let overwrite = check == SaveCheck::Overwrite;
                    match skipped.iter_mut().find(|(p, ..)| *p == path) {
                        Some(entry) => {
                            entry.1 += 1;
                            entry.2 |= overwrite;
                        }
                        None => skipped.push((path, 1, overwrite)),
                    }
                }
                SaverMessage::Save {
                    path,
                    build,
                    stamp,
                    check,
                } => {
                    let (earlier, overwrite) = match skipped.iter().position(|(p, ..)| *p == path) {
                        Some(at) => {
                            let (_, count, overwrite) = skipped.remove(at);
                            (count, overwrite)
                        }
                        None => (0, false),
                    };
                    let check = if overwrite {
                        SaveCheck::Overwrite
                    } else {
                        check
                    };
                    let result = save_one_build(&path, &build, check, &mut known);
                    reply.send(SaveDone {
                        path,
                        stamp,
                        handled: earlier + 1,
                        result,
                    });
                }
            }
        }
    }
}

/// One save by the build saver. With [`SaveCheck::IfUnchanged`] and the
/// file the window last read or wrote, the save is refused if the file
/// changed since; saving to another file (Save as…) does not look, as the
/// dialog already asked about replacing it.
fn save_one_build(
    path: &Path,
    build: &Build,
    check: SaveCheck,
    known: &mut Option<(PathBuf, DiskFingerprint)>,
) -> Result<(), SaveProblem> {
    let expected = match (check, &*known) {
        (SaveCheck::IfUnchanged, Some((known_path, fingerprint))) if known_path == path => {
            Some(fingerprint.clone())
        }
        _ => None,
    };
    match crate::ledger::store::save_checked(path, build, expected.as_ref()) {
        Ok(fingerprint) => {
            *known = Some((path.to_path_buf(), fingerprint));
            Ok(())
        }
        Err(error @ StoreError::ChangedOnDisk { .. }) => {
            Err(SaveProblem::ChangedOnDisk(error_sentence(error)))
        }
        Err(error) => Err(SaveProblem::Failed(error_sentence(error))),
    }
}
