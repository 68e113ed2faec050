//! The capture worker thread and the handle the window (or `listen`) holds.
//!
//! The worker opens the source, reads it block by block through the
//! [`TapPipeline`], and sends [`CaptureEvent`]s over a bounded channel.
//! Commands (new settings, stop) come back over a small channel that the
//! worker polls between blocks; nothing here can make the audio callback
//! wait. When a live source is lost (an error from the system, or a second
//! without sound) the worker says so and reopens it with back-off until it
//! is told to stop.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{
    self, Receiver, RecvTimeoutError, Sender, SyncSender, TryRecvError, TrySendError,
};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use super::device_source::DeviceOpener;
use super::events::{CaptureEvent, InputLevel};
use super::feeder::FedOpener;
use super::pipeline::TapPipeline;
use super::replay::ReplayGenerator;
use super::source::{OpenSource, SampleSource, SourceRead};
use super::synthetic::SyntheticGenerator;
use crate::audio::error::AudioError;
use crate::audio::settings::{CaptureSettings, SourceChoice, SILENCE_LIMIT};

/// Called after each event is sent, e.g. to ask the window to repaint.
pub type Notify = Arc<dyn Fn() + Send + Sync>;

/// Events waiting for the consumer before the worker holds back.
const EVENT_CHANNEL_LEN: usize = 256;
/// Largest block the worker takes from the source at once.
const READ_CHUNK: usize = 2048;
/// Longest wait for the source before the worker looks at its commands.
const READ_WAIT: Duration = Duration::from_millis(5);
/// Pause while the event channel is full.
const FULL_CHANNEL_SLEEP: Duration = Duration::from_millis(1);
/// Waits before each attempt to reopen a lost source; the last repeats.
const RETRY_DELAYS_MS: [u64; 5] = [250, 500, 1000, 2000, 5000];

enum Command {
    Settings(CaptureSettings),
    Stop,
}

/// A running capture: the worker thread, its event channel and its
/// command channel. Dropping the handle stops the worker and waits for it.
pub struct CaptureHandle {
    events: Receiver<CaptureEvent>,
    commands: Sender<Command>,
    stop: Arc<AtomicBool>,
    thread: Option<JoinHandle<()>>,
    description: String,
    sample_rate_hz: u32,
}

impl std::fmt::Debug for CaptureHandle {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("CaptureHandle")
            .field("description", &self.description)
            .field("sample_rate_hz", &self.sample_rate_hz)
            .field("running", &self.is_running())
            .finish_non_exhaustive()
    }
}

impl CaptureHandle {
    /// Opens `source` and starts the worker. Returns once the source is
    /// open (or has failed to open: no device, busy, not found … as one
    /// sentence). `notify` is called after each event is sent.
    pub fn start(
        source: SourceChoice,
        settings: CaptureSettings,
        notify: Option<Notify>,
    ) -> Result<CaptureHandle, AudioError> {
        let opener = opener_for(source)?;
        let (event_sender, events) = mpsc::sync_channel(EVENT_CHANNEL_LEN);
        let (commands, command_receiver) = mpsc::channel();
        let (ready_sender, ready) = mpsc::channel();
        let stop = Arc::new(AtomicBool::new(false));
        let outlet = EventOutlet {
            sender: event_sender,
            notify,
            stop: Arc::clone(&stop),
        };
        let thread = std::thread::Builder::new()
            .name("tapwright-capture".to_owned())
            .spawn(move || run_worker(opener, settings, command_receiver, outlet, ready_sender))
            .map_err(|e| AudioError::Thread {
                detail: e.to_string(),
            })?;
        let opened = ready.recv();
        match opened {
            Ok(Ok((description, sample_rate_hz))) => Ok(CaptureHandle {
                events,
                commands,
                stop,
                thread: Some(thread),
                description,
                sample_rate_hz,
            }),
            Ok(Err(error)) => {
                let _ = thread.join();
                Err(error)
            }
            Err(_) => {
                let _ = thread.join();
                Err(AudioError::WorkerGone)
            }
        }
    }

    /// The event channel, for blocking waits (`recv_timeout`).
    pub fn events(&self) -> &Receiver<CaptureEvent> {
        &self.events
    }

    /// The events that have arrived, without waiting (drain once per frame).
    pub fn try_events(&self) -> mpsc::TryIter<'_, CaptureEvent> {
        self.events.try_iter()
    }

    /// Sends new settings; the worker applies them between blocks without
    /// restarting the stream. Fails only if the worker has ended.
    pub fn set_settings(&self, settings: CaptureSettings) -> Result<(), AudioError> {
        self.commands
            .send(Command::Settings(settings))
            .map_err(|_| AudioError::WorkerGone)
    }

    /// The source as it was opened at start (name and format).
    pub fn description(&self) -> &str {
        &self.description
    }

    /// The sample rate of the source at start (a reconnection may change
    /// it; [`CaptureEvent::SourceStarted`] says so).
    pub fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// False once the worker has ended (stopped, or its source ended).
    pub fn is_running(&self) -> bool {
        self.thread.as_ref().is_some_and(|t| !t.is_finished())
    }

    /// Stops the worker and waits for it (and the stream) to finish. Events
    /// already sent stay in the channel. Calling it twice is harmless.
    pub fn stop(&mut self) {
        self.stop.store(true, Ordering::Release);
        let _ = self.commands.send(Command::Stop);
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

impl Drop for CaptureHandle {
    fn drop(&mut self) {
        self.stop();
    }
}

fn opener_for(source: SourceChoice) -> Result<Box<dyn OpenSource>, AudioError> {
    Ok(match source {
        SourceChoice::Device(wanted) => Box::new(DeviceOpener { wanted }),
        SourceChoice::Replay {
            recording,
            pacing,
            looped,
        } => Box::new(FedOpener {
            generator: Some(Box::new(ReplayGenerator::new(recording, looped)?)),
            pacing,
            what: "recording",
        }),
        // Made here so that a bad schedule fails at start.
        SourceChoice::Synthetic { taps, pacing } => Box::new(FedOpener {
            generator: Some(Box::new(SyntheticGenerator::new(taps)?)),
            pacing,
            what: "synthetic tap schedule",
        }),
        SourceChoice::Custom(opener) => opener,
    })
}

/// The sending end of the event channel.
struct EventOutlet {
    sender: SyncSender<CaptureEvent>,
    notify: Option<Notify>,
    stop: Arc<AtomicBool>,
}

impl EventOutlet {
    fn notify(&self) {
        if let Some(notify) = &self.notify {
            notify();
        }
    }

    /// Sends if there is room, else drops (level readings). False if the
    /// handle is gone.
    fn send_droppable(&self, event: CaptureEvent) -> bool {
        match self.sender.try_send(event) {
            Ok(()) => {
                self.notify();
                true
            }
            Err(TrySendError::Full(_)) => true,
            Err(TrySendError::Disconnected(_)) => false,
        }
    }

    /// Sends, waiting for room for as long as it takes (meanwhile the ring
    /// fills and counts the overrun). False if told to stop or the handle
    /// is gone.
    fn send_reliable(&self, mut event: CaptureEvent) -> bool {
        loop {
            match self.sender.try_send(event) {
                Ok(()) => {
                    self.notify();
                    return true;
                }
                Err(TrySendError::Full(back)) => {
                    if self.stop.load(Ordering::Acquire) {
                        return false;
                    }
                    event = back;
                    std::thread::sleep(FULL_CHANNEL_SLEEP);
                }
                Err(TrySendError::Disconnected(_)) => return false,
            }
        }
    }
}

/// How reading one source ended.
enum Outcome {
    Stopped,
    Ended,
    Lost(String),
}

/// The worker thread's body.
fn run_worker(
    mut opener: Box<dyn OpenSource>,
    settings: CaptureSettings,
    commands: Receiver<Command>,
    outlet: EventOutlet,
    ready: Sender<Result<(String, u32), AudioError>>,
) {
    let mut source = match opener.open(settings.ring_capacity_s) {
        Ok(source) => source,
        Err(error) => {
            let _ = ready.send(Err(error));
            return;
        }
    };
    if ready
        .send(Ok((
            source.description().to_owned(),
            source.sample_rate_hz(),
        )))
        .is_err()
    {
        return;
    }
    let mut worker = Worker {
        settings,
        commands,
        outlet,
        taps_seen: 0,
        dropped_before: 0,
        dropped_reported: 0,
        last_level_sent: None,
    };
    loop {
        if !worker.announce(source.as_ref()) {
            return;
        }
        match worker.run_source(source.as_mut()) {
            Outcome::Stopped => return,
            Outcome::Ended => {
                worker.outlet.send_reliable(CaptureEvent::SourceEnded);
                return;
            }
            Outcome::Lost(message) => {
                worker.dropped_before += source.dropped_samples();
                drop(source);
                if !worker.outlet.send_reliable(CaptureEvent::DeviceLost {
                    message: message.clone(),
                }) {
                    return;
                }
                if !opener.can_reopen() {
                    worker.outlet.send_reliable(CaptureEvent::SourceEnded);
                    return;
                }
                match worker.reopen(opener.as_mut(), message) {
                    Some(reopened) => source = reopened,
                    None => return,
                }
            }
        }
    }
}

struct Worker {
    settings: CaptureSettings,
    commands: Receiver<Command>,
    outlet: EventOutlet,
    taps_seen: usize,
    /// Samples dropped by sources already closed.
    dropped_before: u64,
    dropped_reported: u64,
    /// The last level sent, and when: a level that has not moved is not
    /// sent again for a while, so an armed input in a quiet room does not
    /// wake the window five times a second.
    last_level_sent: Option<(InputLevel, Instant)>,
}

impl Worker {
    fn announce(&self, source: &dyn SampleSource) -> bool {
        self.outlet.send_reliable(CaptureEvent::SourceStarted {
            description: source.description().to_owned(),
            sample_rate_hz: source.sample_rate_hz(),
        })
    }

    /// Applies waiting commands; false when told to stop.
    fn apply_commands(&mut self, pipeline: &mut TapPipeline) -> bool {
        if self.outlet.stop.load(Ordering::Acquire) {
            return false;
        }
        loop {
            match self.commands.try_recv() {
                Ok(Command::Settings(settings)) => {
                    pipeline.set_settings(&settings);
                    self.settings = settings;
                }
                Ok(Command::Stop) | Err(TryRecvError::Disconnected) => return false,
                Err(TryRecvError::Empty) => return true,
            }
        }
    }

    /// Reads one source until it ends, is lost, or the worker is stopped.
    fn run_source(&mut self, source: &mut dyn SampleSource) -> Outcome {
        let mut pipeline =
            TapPipeline::new(&self.settings, source.sample_rate_hz(), self.taps_seen);
        let mut buffer = vec![0.0f32; READ_CHUNK];
        let mut pending: Vec<CaptureEvent> = Vec::with_capacity(8);
        let mut last_level = Instant::now();
        let mut last_data = Instant::now();
        loop {
            if !self.apply_commands(&mut pipeline) {
                return Outcome::Stopped;
            }
            let outcome = match source.read(&mut buffer, READ_WAIT) {
                SourceRead::Samples(n) => {
                    last_data = Instant::now();
                    pipeline.process(&buffer[..n.min(READ_CHUNK)], &mut pending);
                    None
                }
                SourceRead::Waiting if source.is_live() && last_data.elapsed() >= SILENCE_LIMIT => {
                    Some(Outcome::Lost(format!(
                        "no sound has arrived from {} for a second: it may have been unplugged or taken by another program",
                        source.description()
                    )))
                }
                SourceRead::Waiting => None,
                SourceRead::Notice(message) => {
                    pending.push(CaptureEvent::Status { message });
                    None
                }
                SourceRead::Ended => Some(Outcome::Ended),
                SourceRead::Lost(message) => Some(Outcome::Lost(message)),
            };
            if outcome.is_some() {
                pipeline.finish(&mut pending);
            }
            self.taps_seen = pipeline.taps_seen();
            if !self.flush(&mut pending) {
                return Outcome::Stopped;
            }
            if outcome.is_some() || last_level.elapsed() >= self.settings.level_interval() {
                last_level = Instant::now();
                if !self.report_level_and_overrun(&mut pipeline, source) {
                    return Outcome::Stopped;
                }
            }
            if let Some(outcome) = outcome {
                return outcome;
            }
        }
    }

    /// Sends the pending tap events in order; false if stopped.
    fn flush(&mut self, pending: &mut Vec<CaptureEvent>) -> bool {
        for event in pending.drain(..) {
            if !self.outlet.send_reliable(event) {
                return false;
            }
        }
        true
    }

    fn report_level_and_overrun(
        &mut self,
        pipeline: &mut TapPipeline,
        source: &dyn SampleSource,
    ) -> bool {
        if let Some(level) = pipeline.take_level() {
            let news = self
                .last_level_sent
                .as_ref()
                .is_none_or(|(last, at)| level_is_news(last, &level, at.elapsed()));
            if news {
                self.last_level_sent = Some((level.clone(), Instant::now()));
                if !self.outlet.send_droppable(CaptureEvent::Level(level)) {
                    return false;
                }
            }
        }
        let dropped = self.dropped_before + source.dropped_samples();
        if dropped > self.dropped_reported {
            self.dropped_reported = dropped;
            return self.outlet.send_reliable(CaptureEvent::Overrun {
                dropped_samples_total: dropped,
            });
        }
        true
    }

    /// Tries to open the source again, waiting longer after each failure,
    /// until it opens (Some) or the worker is stopped (None).
    fn reopen(
        &mut self,
        opener: &mut dyn OpenSource,
        first_reason: String,
    ) -> Option<Box<dyn SampleSource>> {
        let mut reason = first_reason;
        for attempt in 1u32.. {
            let index = (attempt as usize - 1).min(RETRY_DELAYS_MS.len() - 1);
            let delay_ms = RETRY_DELAYS_MS[index];
            let retrying = CaptureEvent::Retrying {
                attempt,
                delay_ms,
                reason: reason.clone(),
            };
            if !self.outlet.send_reliable(retrying) || !self.wait(Duration::from_millis(delay_ms)) {
                return None;
            }
            match opener.open(self.settings.ring_capacity_s) {
                Ok(source) => return Some(source),
                Err(error) => reason = error.to_string(),
            }
        }
        None
    }

    /// Waits, taking settings meanwhile; false when told to stop.
    fn wait(&mut self, duration: Duration) -> bool {
        let deadline = Instant::now() + duration;
        loop {
            if self.outlet.stop.load(Ordering::Acquire) {
                return false;
            }
            let now = Instant::now();
            if now >= deadline {
                return true;
            }
            match self.commands.recv_timeout(deadline - now) {
                Ok(Command::Settings(settings)) => self.settings = settings,
                Ok(Command::Stop) | Err(RecvTimeoutError::Disconnected) => return false,
                Err(RecvTimeoutError::Timeout) => {}
            }
        }
    }
}

/// A level reading worth sending: the meter would visibly move (RMS by
/// 1 dB or more, peak by 6 dB or more), clipping or recording changed, or
/// a second has passed since the last one.
fn level_is_news(last: &InputLevel, level: &InputLevel, since_last: Duration) -> bool {
    (level.rms_dbfs - last.rms_dbfs).abs() >= 1.0
        || (level.peak_dbfs - last.peak_dbfs).abs() >= 6.0
        || level.clipped
        || level.clipped != last.clipped
        || level.recording != last.recording
        || since_last >= Duration::from_secs(1)
}

#[cfg(test)]
mod level_news_tests {
    use super::*;

    fn level(rms_dbfs: f64, peak_dbfs: f64) -> InputLevel {
        InputLevel {
            rms_dbfs,
            peak_dbfs,
            clipped: false,
            floor_dbfs: Some(-70.0),
            recording: false,
        }
    }

    #[test]
    fn steady_noise_is_not_news_until_a_second_passes() {
        let quiet = level(-70.0, -58.0);
        let short = Duration::from_millis(200);
        assert!(!level_is_news(&quiet, &level(-70.4, -56.0), short));
        assert!(level_is_news(
            &quiet,
            &level(-70.4, -56.0),
            Duration::from_millis(1000)
        ));
        assert!(level_is_news(&quiet, &level(-40.0, -20.0), short));
        assert!(level_is_news(
            &quiet,
            &InputLevel {
                recording: true,
                ..quiet.clone()
            },
            short
        ));
    }
}
