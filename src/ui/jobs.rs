//! The window's one runner of background work. Whatever must not hold up
//! a frame runs here: file dialogs (they block their thread until the
//! maker answers), reading and analysing a recording, saving builds, files
//! and the build report, listing devices, opening the capture source and
//! the drive output.
//!
//! Each user keeps an [`Inbox`] typed with its own answers (the shell, the
//! Ledger area, the Drive area); [`Inbox::spawn`] runs one job on its own
//! thread, which sends its answer back and wakes the window, so an idle
//! window does not repaint. [`Jobs::running`] counts the answers not yet
//! taken, over every inbox: the window is busy while it is above zero.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::{self, Receiver, Sender};
use std::sync::{Arc, Mutex, OnceLock};

use eframe::egui;

/// The runner: cheap to clone, shared by the shell and the areas.
#[derive(Clone, Default)]
pub struct Jobs {
    shared: Arc<Shared>,
}

#[derive(Default)]
struct Shared {
    /// Answers expected and not yet taken, over all inboxes.
    running: AtomicUsize,
    /// The window to wake when an answer arrives (set at the first frame).
    window: OnceLock<egui::Context>,
}

impl std::fmt::Debug for Jobs {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Jobs")
            .field("running", &self.running())
            .finish_non_exhaustive()
    }
}

impl Jobs {
    /// Gives the runner the window to wake (the first call counts).
    pub fn set_context(&self, ctx: &egui::Context) {
        let _ = self.shared.window.set(ctx.clone());
    }

    /// Answers not yet taken, over every inbox.
    pub fn running(&self) -> usize {
        self.shared.running.load(Ordering::Acquire)
    }

    /// A new inbox for answers of type `T`.
    pub fn inbox<T: Send + 'static>(&self) -> Inbox<T> {
        let (sender, receiver) = mpsc::channel();
        Inbox {
            jobs: self.clone(),
            sender,
            receiver,
            waiting: 0,
        }
    }

    /// Runs `work` on its own thread with no answer (closing a drive output
    /// waits for its fade-out). If no thread can start, it runs here.
    pub fn detach(&self, name: &str, work: impl FnOnce() + Send + 'static) {
        run_on_thread(name, work);
    }

    fn wake(&self) {
        if let Some(ctx) = self.shared.window.get() {
            ctx.request_repaint();
        }
    }

    fn expect(&self, answers: usize) {
        self.shared.running.fetch_add(answers, Ordering::AcqRel);
    }

    fn answered(&self, answers: usize) {
        // Never below zero, whatever a worker reports.
        let _ = self
            .shared
            .running
            .fetch_update(Ordering::AcqRel, Ordering::Acquire, |n| {
                Some(n.saturating_sub(answers))
            });
    }
}

/// Where the answers of one user's jobs arrive. Dropping it forgets the
/// answers still expected (a job that finishes later drops its answer on
/// its own thread).
pub struct Inbox<T> {
    jobs: Jobs,
    sender: Sender<T>,
    receiver: Receiver<T>,
    waiting: usize,
}

impl<T> std::fmt::Debug for Inbox<T> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Inbox")
            .field("waiting", &self.waiting)
            .finish_non_exhaustive()
    }
}

impl<T: Send + 'static> Inbox<T> {
    /// Runs `work` on a thread named `tapwright-<name>`; its answer comes
    /// back through [`Self::drain`]. If no thread can start, `work` runs
    /// here and its answer is waiting at once.
    pub fn spawn(&mut self, name: &str, work: impl FnOnce() -> T + Send + 'static) {
        self.expect_answer();
        let reply = self.reply_address();
        run_on_thread(name, move || reply.send(work()));
    }

    /// Answers expected and not yet taken.
    pub fn waiting(&self) -> usize {
        self.waiting
    }

    /// The answers that have arrived, each answering one job.
    pub fn drain(&mut self) -> Vec<T> {
        self.drain_answering(|_| 1)
    }

    /// The answers that have arrived; `answers` says how many requests
    /// each one answers (a worker of one's own may answer several at once).
    pub fn drain_answering(&mut self, answers: impl Fn(&T) -> usize) -> Vec<T> {
        let arrived: Vec<T> = self.receiver.try_iter().collect();
        let answered: usize = arrived.iter().map(answers).sum::<usize>().min(self.waiting);
        self.waiting -= answered;
        self.jobs.answered(answered);
        arrived
    }

    /// One more answer is expected from a worker of one's own (see
    /// [`Self::reply_address`]).
    pub fn expect_answer(&mut self) {
        self.waiting += 1;
        self.jobs.expect(1);
    }

    /// An answer that was expected will not come (the worker could not be
    /// reached).
    pub fn forget_answer(&mut self) {
        if self.waiting > 0 {
            self.waiting -= 1;
            self.jobs.answered(1);
        }
    }

    /// Where a worker of one's own (a thread that answers many requests,
    /// such as the build saver) sends its answers.
    pub fn reply_address(&self) -> Reply<T> {
        Reply {
            sender: self.sender.clone(),
            jobs: self.jobs.clone(),
        }
    }
}

impl<T> Drop for Inbox<T> {
    fn drop(&mut self) {
        self.jobs.answered(self.waiting);
    }
}

/// Sends answers to an [`Inbox`] from another thread and wakes the window.
pub struct Reply<T> {
    sender: Sender<T>,
    jobs: Jobs,
}

impl<T> Reply<T> {
    /// Sends `answer` (dropped here if the inbox is gone) and wakes the
    /// window.
    pub fn send(&self, answer: T) {
        let _ = self.sender.send(answer);
        self.jobs.wake();
    }
}

/// Runs `work` on a new thread named `tapwright-<name>`, or here if no
/// thread can start.
fn run_on_thread(name: &str, work: impl FnOnce() + Send + 'static) {
    let slot = Arc::new(Mutex::new(Some(work)));
    let theirs = Arc::clone(&slot);
    let started = std::thread::Builder::new()
        .name(format!("tapwright-{name}"))
        .spawn(move || {
            if let Some(work) = take(&theirs) {
                work();
            }
        });
    if started.is_err() {
        if let Some(work) = take(&slot) {
            work();
        }
    }
}

fn take<F>(slot: &Mutex<Option<F>>) -> Option<F> {
    slot.lock().ok().and_then(|mut work| work.take())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::{Duration, Instant};

    fn wait_for<T: Send + 'static>(inbox: &mut Inbox<T>) -> Vec<T> {
        let deadline = Instant::now() + Duration::from_secs(10);
        loop {
            let arrived = inbox.drain();
            if !arrived.is_empty() {
                return arrived;
            }
            assert!(Instant::now() < deadline, "no answer");
            std::thread::sleep(Duration::from_millis(2));
        }
    }

    #[test]
    fn a_job_answers_in_its_inbox_and_the_count_follows() {
        let jobs = Jobs::default();
        let mut numbers = jobs.inbox::<u32>();
        let mut words = jobs.inbox::<&'static str>();
        numbers.spawn("test-number", || 7);
        words.spawn("test-word", || "seven");
        assert_eq!(jobs.running(), 2);
        assert_eq!(wait_for(&mut numbers), vec![7]);
        assert_eq!(jobs.running(), 1);
        assert_eq!(wait_for(&mut words), vec!["seven"]);
        assert_eq!(jobs.running(), 0);
    }

    #[test]
    fn a_dropped_inbox_no_longer_counts() {
        let jobs = Jobs::default();
        let mut inbox = jobs.inbox::<u32>();
        inbox.spawn("test-slow", || {
            std::thread::sleep(Duration::from_millis(50));
            1
        });
        assert_eq!(jobs.running(), 1);
        drop(inbox);
        assert_eq!(jobs.running(), 0);
    }

    #[test]
    fn one_answer_may_answer_several_requests() {
        let jobs = Jobs::default();
        let mut inbox = jobs.inbox::<usize>();
        inbox.expect_answer();
        inbox.expect_answer();
        inbox.expect_answer();
        inbox.reply_address().send(2);
        let arrived = inbox.drain_answering(|n| *n);
        assert_eq!(arrived, vec![2]);
        assert_eq!(inbox.waiting(), 1);
        assert_eq!(jobs.running(), 1);
        inbox.forget_answer();
        assert_eq!(jobs.running(), 0);
    }
}
