//! Finding taps in a stream of samples.
//!
//! [`TapTrigger`] is a streaming state machine (armed → recording →
//! settling → armed) fed with any number of samples at a time; the capture
//! worker feeds it live input and [`find_taps`] feeds it a whole recording,
//! so a file and the microphone are judged by the same rules:
//!
//! - envelope: RMS over blocks of about 1 ms;
//! - noise floor: running median of the block levels over about 1 s, updated
//!   only while armed, first given after 100 ms, never learned from digital
//!   silence (`trigger_levels`);
//! - trigger when a block rises `margin_db` above the floor; the strike is
//!   put where its rise leaves the noise (a change point, sample-accurate,
//!   so a slow rise is not placed late); the record keeps `pre_trigger_ms`
//!   before that block and runs `record_ms` after the strike; a block
//!   louder by the margin within the first 5 ms starts the record again
//!   there (what fired the trigger was the strike's precursor);
//! - before anything else, a DC blocker (two first-order high-pass stages at
//!   5 Hz, started on the first sample) takes out any constant or drifting
//!   offset of the input, so records, levels and the analysis see only
//!   sound; clipping is judged on the raw input, where the converter
//!   clipped;
//! - reject, with the reason: clipped (two or more consecutive samples at
//!   ≥ 99 % of full scale), double strike (sound that the decay so far does
//!   not foretell arrives during the record; see `onset`: a beating pair
//!   rises and falls but stays foretold, a second strike does not), too
//!   quiet (a rise that clears half the margin but never the margin, and
//!   no strike within the 10 ms after it: a pre-echo belongs to its strike), too
//!   short (the record ends before `min_record_ms`, or the ringing dies
//!   within `min_ring_ms`);
//! - re-arm only after `refractory_ms` and once the envelope is back within
//!   `settle_db` of the floor (or a new strike clearly starts).

use std::collections::VecDeque;

pub use super::found_tap::{FoundTap, RejectReason, TriggerEvent, TriggerSettings};
use super::onset::{NoveltyDetector, SecondStrikeWatch};
use super::trigger_levels::{power_to_db, strike_start, DcBlocker, FloorTracker};

/// Lowest level the floor may take: digital silence must not make the
/// trigger fire on rounding noise.
const FLOOR_MIN_DBFS: f64 = -100.0;
/// Noise heard before the trigger arms for the first time: the length of
/// the quiet a record keeps before its strike. A decoder's start-up (the
/// priming of raw AAC, a fade in from near silence 20–50 ms long) is then
/// less than half of what the first floor is the median of, and is not
/// taken for the room.
const WARM_UP_MS: f64 = 100.0;
/// A block below this is digital silence (exact zeros, or the rounding of
/// a decoder's priming), far under any real room (a 24-bit converter's own
/// noise is near −140 dBFS over the audio band, a quiet room through a
/// microphone −90 or above; from memory): it is not room noise, and the
/// floor is not learned from it (while nothing else has been heard, the
/// floor is the lowest it may be).
const DIGITAL_SILENCE_DBFS: f64 = -130.0;
/// A rise that stays under the margin is only reported as too quiet once
/// this long has passed without a strike: an encoder's pre-echo (AAC, MP3)
/// rises 1–4 ms before the strike it belongs to, and is part of it.
const QUIET_CONFIRM_MS: f64 = 10.0;
/// The start of a strike is looked for this far back from the block that
/// crossed the margin (a slow rise takes a few milliseconds to clear it).
const RISE_SEARCH_MS: f64 = 30.0;
/// ... and from this long before the last block that was still at the
/// noise, so that the search sees noise before the rise.
const RISE_SEARCH_PAD_MS: f64 = 3.0;
/// In the first milliseconds of a record (before [`NEW_SOUND_GUARD_MS`]),
/// a block louder than the one that started it by the trigger margin is
/// the real strike, and what started the record was its precursor (an
/// encoder's pre-echo, a brush of the mallet): the record starts again
/// there.
const RESTART_WITHIN_MS: f64 = NEW_SOUND_GUARD_MS;
/// ... provided the sound paused or fell back in between (no block since
/// the trigger more than this above the one that fired it): a strike's
/// own rise, which can climb 20 dB within a few milliseconds after its
/// first block barely cleared the margin, keeps rising.
const PRECURSOR_PAUSE_DB: f64 = 3.0;
/// Time after the envelope peak during which the strike itself is still
/// going on, so rises are not double strikes.
const CONTACT_MS: f64 = 4.0;
/// A sub-margin rise that lasts longer than this is a swell (a voice, a
/// door), not a weak tap, and is not reported.
const QUIET_RISE_MS: f64 = 300.0;
/// Full-scale fraction that counts as clipped.
const CLIP_LEVEL: f32 = 0.99;
/// The search for new sound starts this long after the trigger, when the
/// first strike's contact is over and only its free decay is left.
const NEW_SOUND_GUARD_MS: f64 = 5.0;
/// The strike's excitation is over once the decay envelope has made no new
/// maximum for this long (see `onset::SecondStrikeWatch`).
const EXCITATION_GAP_MS: f64 = 2.0;
/// Averaging time of the slow envelope used to follow the decay: 10 ms
/// averages the power of any mode above 40 Hz to within about 1 dB
/// (sin² repeats every half period), where the 1 ms trigger envelope of a
/// low mode swings with every cycle.
const DECAY_ENVELOPE_MS: f64 = 10.0;

#[derive(Clone, Debug, PartialEq)]
enum State {
    Armed,
    /// A rise above half the margin that has not reached the margin yet.
    Rising {
        blocks: usize,
        peak_db: f64,
    },
    Recording(Recording),
    Settling {
        blocks: usize,
        min_db: f64,
    },
}

#[derive(Clone, Debug, PartialEq)]
struct Recording {
    start_sample: u64,
    onset_index: usize,
    samples: Vec<f32>,
    target_len: usize,
    floor_db: f64,
    peak_db: f64,
    blocks_since_peak: usize,
    /// Loudest decay envelope so far (never frozen, unlike `peak_db`) and
    /// the envelope blocks since it: while the sound still rises to new
    /// maxima, the strike's own excitation is going on.
    loudest_db: f64,
    blocks_since_loudest: usize,
    /// Block index (since onset) at which the envelope first fell back to
    /// the floor, if it has.
    died_after_blocks: Option<usize>,
    blocks: usize,
    /// Fast envelope level of the block that started the record.
    trigger_level_db: f64,
    /// Quietest fast level since that block (a precursor falls back or
    /// pauses before its strike; a strike's own rise does not).
    quietest_since_trigger_db: f64,
    clipped: bool,
    /// The search for a second strike in this record.
    watch: SecondStrikeWatch,
}

/// Streaming tap finder. Feed it samples with [`TapTrigger::push`]; call
/// [`TapTrigger::finish`] at the end of a recording.
#[derive(Clone, Debug)]
pub struct TapTrigger {
    settings: TriggerSettings,
    sample_rate_hz: f64,
    dc_blocker: DcBlocker,
    /// Consecutive raw samples at the clip level, and the stream position
    /// of the last sample of a run of two or more.
    clip_run: usize,
    last_clip_at: Option<u64>,
    novelty: NoveltyDetector,
    new_sound_guard: usize,
    block_len: usize,
    block_sum_sq: f64,
    block_fill: usize,
    /// The last `pre_len + block_len` samples, for the pre-trigger.
    history: VecDeque<f32>,
    pre_len: usize,
    position: u64,
    floor: FloorTracker,
    state: State,
    /// A too-quiet rise waiting for [`QUIET_CONFIRM_MS`] to pass without
    /// a strike, and the blocks left to wait.
    pending_quiet: Option<(FoundTap, usize)>,
    /// Fast envelope levels of the last blocks, newest last (for the
    /// search of a strike's start).
    recent_levels: VecDeque<f64>,
    /// Blocks heard, and those of them that were room noise (not digital
    /// silence).
    blocks_heard: usize,
    noise_blocks: usize,
    /// The last block powers, for the slow envelope.
    recent_powers: VecDeque<f64>,
    recent_sum: f64,
    recent_len: usize,
}

impl TapTrigger {
    pub fn new(settings: TriggerSettings, sample_rate_hz: f64) -> Self {
        let sample_rate_hz = if sample_rate_hz.is_finite() && sample_rate_hz > 0.0 {
            sample_rate_hz
        } else {
            48_000.0
        };
        let block_len = ms_to_samples(settings.envelope_ms, sample_rate_hz).max(1);
        let pre_len = ms_to_samples(settings.pre_trigger_ms, sample_rate_hz);
        let floor_blocks =
            (settings.floor_window_ms / settings.envelope_ms.max(0.1)).round() as usize;
        let recent_len =
            ((DECAY_ENVELOPE_MS / settings.envelope_ms.max(0.1)).round() as usize).max(1);
        Self {
            dc_blocker: DcBlocker::new(sample_rate_hz),
            clip_run: 0,
            last_clip_at: None,
            novelty: NoveltyDetector::new(sample_rate_hz),
            new_sound_guard: ms_to_samples(NEW_SOUND_GUARD_MS, sample_rate_hz),
            recent_powers: VecDeque::with_capacity(recent_len + 1),
            recent_sum: 0.0,
            recent_len,
            block_len,
            pre_len,
            history: VecDeque::with_capacity(pre_len + block_len + 1),
            floor: FloorTracker::new(floor_blocks),
            settings,
            sample_rate_hz,
            block_sum_sq: 0.0,
            block_fill: 0,
            position: 0,
            state: State::Armed,
            pending_quiet: None,
            recent_levels: VecDeque::new(),
            blocks_heard: 0,
            noise_blocks: 0,
        }
    }

    pub fn settings(&self) -> &TriggerSettings {
        &self.settings
    }

    pub fn sample_rate_hz(&self) -> f64 {
        self.sample_rate_hz
    }

    /// Changes the settings while running. The noise floor is kept; a record
    /// under way finishes with the new length.
    pub fn set_settings(&mut self, settings: TriggerSettings) {
        let floor = std::mem::replace(&mut self.floor, FloorTracker::new(1));
        let state = std::mem::replace(&mut self.state, State::Armed);
        let position = self.position;
        let dc_blocker = self.dc_blocker.clone();
        let (clip_run, last_clip_at) = (self.clip_run, self.last_clip_at);
        let history = std::mem::take(&mut self.history);
        let pending_quiet = self.pending_quiet.take();
        let recent_levels = std::mem::take(&mut self.recent_levels);
        let (blocks_heard, noise_blocks) = (self.blocks_heard, self.noise_blocks);
        *self = Self::new(settings, self.sample_rate_hz);
        self.pending_quiet = pending_quiet;
        self.recent_levels = recent_levels;
        (self.blocks_heard, self.noise_blocks) = (blocks_heard, noise_blocks);
        self.floor = floor;
        self.position = position;
        self.dc_blocker = dc_blocker;
        (self.clip_run, self.last_clip_at) = (clip_run, last_clip_at);
        self.history = history;
        while self.history.len() > self.pre_len + self.block_len {
            self.history.pop_front();
        }
        self.state = match state {
            State::Recording(mut rec) => {
                rec.target_len =
                    rec.onset_index + ms_to_samples(self.settings.record_ms, self.sample_rate_hz);
                State::Recording(rec)
            }
            other => other,
        };
    }

    /// Current noise floor estimate in dB full scale (None while warming up).
    pub fn floor_dbfs(&self) -> Option<f64> {
        let warm_up_blocks = (WARM_UP_MS / self.block_ms()).round() as usize;
        if self.blocks_heard < warm_up_blocks.max(1) {
            return None;
        }
        // Nothing but digital silence so far (a clean 8-bit file, a gated
        // input): the lowest floor, so that a strike still fires.
        Some(if self.noise_blocks == 0 {
            FLOOR_MIN_DBFS
        } else {
            self.floor.median_db().max(FLOOR_MIN_DBFS)
        })
    }

    /// True while a strike is being recorded.
    pub fn is_recording(&self) -> bool {
        matches!(self.state, State::Recording(_))
    }

    /// Samples seen so far.
    pub fn position(&self) -> u64 {
        self.position
    }

    /// Feeds samples; finished taps are appended to `events`.
    pub fn push(&mut self, samples: &[f32], events: &mut Vec<TriggerEvent>) {
        for &sample in samples {
            self.push_sample(sample, events);
        }
    }

    /// Ends the stream: a record under way is finished as it is (and
    /// rejected as too short if it is shorter than `min_record_ms`).
    pub fn finish(&mut self, events: &mut Vec<TriggerEvent>) {
        if let Some((quiet, _)) = self.pending_quiet.take() {
            events.push(TriggerEvent::Tap(quiet));
        }
        if let State::Recording(rec) = std::mem::replace(&mut self.state, State::Armed) {
            events.push(TriggerEvent::Tap(self.close_record(rec)));
        }
    }

    fn push_sample(&mut self, raw: f32, events: &mut Vec<TriggerEvent>) {
        self.position += 1;
        self.note_clipping(raw);
        let sample = self.dc_blocker.filter(raw);
        if self.history.len() >= self.pre_len + self.block_len {
            self.history.pop_front();
        }
        self.history.push_back(sample);
        let block_ms = self.block_ms();
        if let State::Recording(rec) = &mut self.state {
            rec.samples.push(sample);
            rec.clipped |= self.clip_run >= 2;
            if rec.samples.len() > rec.onset_index + self.new_sound_guard {
                let still_rising = rec.blocks_since_loudest as f64 * block_ms < EXCITATION_GAP_MS;
                rec.watch.push(
                    &mut self.novelty,
                    (&rec.samples, rec.onset_index),
                    self.new_sound_guard,
                    10f64.powf(self.settings.margin_db / 20.0),
                    still_rising,
                );
            }
        }
        self.block_sum_sq += f64::from(sample) * f64::from(sample);
        self.block_fill += 1;
        if self.block_fill == self.block_len {
            let power = self.block_sum_sq / self.block_len as f64;
            self.block_sum_sq = 0.0;
            self.block_fill = 0;
            let slow_db = self.slow_envelope_db(power);
            self.on_block(power_to_db(power), slow_db, events);
        }
    }

    /// Counts raw samples at the clip level: two in a row clip.
    fn note_clipping(&mut self, raw: f32) {
        if raw.abs() >= CLIP_LEVEL {
            self.clip_run += 1;
            if self.clip_run >= 2 {
                self.last_clip_at = Some(self.position);
            }
        } else {
            self.clip_run = 0;
        }
    }

    fn slow_envelope_db(&mut self, power: f64) -> f64 {
        self.recent_powers.push_back(power);
        self.recent_sum += power;
        if self.recent_powers.len() > self.recent_len {
            if let Some(old) = self.recent_powers.pop_front() {
                self.recent_sum -= old;
            }
        }
        power_to_db(self.recent_sum.max(0.0) / self.recent_powers.len() as f64)
    }

    /// `level_db` is the fast (trigger) envelope, `slow_db` the decay envelope.
    fn on_block(&mut self, level_db: f64, slow_db: f64, events: &mut Vec<TriggerEvent>) {
        self.recent_levels.push_back(level_db);
        let search_blocks = (RISE_SEARCH_MS / self.block_ms()).ceil() as usize + 1;
        while self.recent_levels.len() > search_blocks {
            self.recent_levels.pop_front();
        }
        let Some(floor_db) = self.floor_dbfs() else {
            self.learn_floor(level_db);
            return;
        };
        let was_recording = self.is_recording();
        self.next_state(level_db, slow_db, floor_db, events);
        self.confirm_quiet_rise(!was_recording && self.is_recording(), events);
    }

    /// Room noise for the floor; digital silence is not.
    fn learn_floor(&mut self, level_db: f64) {
        self.blocks_heard += 1;
        if level_db > DIGITAL_SILENCE_DBFS {
            self.floor.push(level_db);
            self.noise_blocks += 1;
        }
    }

    /// A pending too-quiet rise is dropped when a strike starts (it was the
    /// strike's precursor), and reported once its wait is over.
    fn confirm_quiet_rise(&mut self, strike_started: bool, events: &mut Vec<TriggerEvent>) {
        if strike_started {
            self.pending_quiet = None;
            return;
        }
        if let Some((_, blocks_left)) = &mut self.pending_quiet {
            *blocks_left = blocks_left.saturating_sub(1);
            if *blocks_left == 0 {
                if let Some((quiet, _)) = self.pending_quiet.take() {
                    events.push(TriggerEvent::Tap(quiet));
                }
            }
        }
    }

    fn next_state(
        &mut self,
        level_db: f64,
        slow_db: f64,
        floor_db: f64,
        events: &mut Vec<TriggerEvent>,
    ) {
        let margin = self.settings.margin_db;
        let state = std::mem::replace(&mut self.state, State::Armed);
        self.state = match state {
            State::Armed => {
                if level_db > floor_db + margin {
                    self.start_record(floor_db, slow_db, events)
                } else if level_db > floor_db + margin / 2.0 {
                    State::Rising {
                        blocks: 1,
                        peak_db: level_db,
                    }
                } else {
                    self.learn_floor(level_db);
                    State::Armed
                }
            }
            State::Rising { blocks, peak_db } => {
                if level_db > floor_db + margin {
                    self.start_record(floor_db, slow_db, events)
                } else if level_db > floor_db + margin / 2.0 {
                    State::Rising {
                        blocks: blocks + 1,
                        peak_db: peak_db.max(level_db),
                    }
                } else if self.blocks_to_ms(blocks) <= QUIET_RISE_MS {
                    let wait = (QUIET_CONFIRM_MS / self.block_ms()).ceil() as usize;
                    let quiet = self.quiet_tap(blocks, floor_db, peak_db);
                    if let Some((earlier, _)) = self.pending_quiet.replace((quiet, wait.max(1))) {
                        events.push(TriggerEvent::Tap(earlier));
                    }
                    State::Settling {
                        blocks: 0,
                        min_db: slow_db,
                    }
                } else {
                    // A slow swell (a voice, a door): not a tap at all.
                    State::Armed
                }
            }
            State::Recording(rec) => self.continue_record(rec, (level_db, slow_db), events),
            State::Settling { blocks, min_db } => {
                self.continue_settling(blocks, min_db, (level_db, slow_db), floor_db, events)
            }
        };
    }

    fn start_record(
        &mut self,
        floor_db: f64,
        slow_db: f64,
        events: &mut Vec<TriggerEvent>,
    ) -> State {
        let samples: Vec<f32> = self.history.iter().copied().collect();
        let onset_index = self.rise_start(&samples, floor_db);
        let start_sample = self.position - samples.len() as u64;
        let trigger_level_db = self.recent_levels.back().copied().unwrap_or(slow_db);
        let record_len = ms_to_samples(self.settings.record_ms, self.sample_rate_hz);
        let mut all = Vec::with_capacity(onset_index + record_len + self.block_len);
        all.extend_from_slice(&samples);
        let clipped = self.last_clip_at.is_some_and(|at| at > start_sample);
        self.novelty.reset();
        self.novelty.set_noise_power(10f64.powf(floor_db / 10.0));
        events.push(TriggerEvent::Started {
            onset_sample: start_sample + onset_index as u64,
        });
        State::Recording(Recording {
            start_sample,
            onset_index,
            samples: all,
            target_len: onset_index + record_len,
            floor_db,
            peak_db: slow_db,
            blocks_since_peak: 0,
            loudest_db: slow_db,
            blocks_since_loudest: 0,
            died_after_blocks: None,
            blocks: 1,
            trigger_level_db,
            quietest_since_trigger_db: f64::INFINITY,
            clipped,
            watch: SecondStrikeWatch::default(),
        })
    }

    /// One envelope block of a record under way; `slow_db` is the decay
    /// envelope (10 ms), which follows low modes without swinging per cycle.
    /// (Double strikes are found sample by sample, in `push_sample`.)
    fn continue_record(
        &mut self,
        mut rec: Recording,
        (level_db, slow_db): (f64, f64),
        events: &mut Vec<TriggerEvent>,
    ) -> State {
        rec.blocks += 1;
        if self.blocks_to_ms(rec.blocks) <= RESTART_WITHIN_MS
            && level_db > rec.trigger_level_db + self.settings.margin_db
            && rec.quietest_since_trigger_db <= rec.trigger_level_db + PRECURSOR_PAUSE_DB
        {
            self.restart_record(&mut rec, level_db, slow_db);
        } else {
            rec.quietest_since_trigger_db = rec.quietest_since_trigger_db.min(level_db);
        }
        if slow_db > rec.loudest_db {
            rec.loudest_db = slow_db;
            rec.blocks_since_loudest = 0;
        } else {
            rec.blocks_since_loudest += 1;
        }
        if slow_db > rec.peak_db && !self.past_contact(rec.blocks_since_peak, rec.blocks) {
            rec.peak_db = slow_db;
            rec.blocks_since_peak = 0;
        } else {
            rec.blocks_since_peak += 1;
        }
        if rec.died_after_blocks.is_none() && slow_db < rec.floor_db + self.settings.settle_db {
            rec.died_after_blocks = Some(rec.blocks);
        }
        if rec.samples.len() >= rec.target_len {
            rec.samples.truncate(rec.target_len);
            events.push(TriggerEvent::Tap(self.close_record(rec)));
            State::Settling {
                blocks: 0,
                min_db: slow_db,
            }
        } else {
            State::Recording(rec)
        }
    }

    fn continue_settling(
        &mut self,
        blocks: usize,
        min_db: f64,
        (level_db, slow_db): (f64, f64),
        floor_db: f64,
        events: &mut Vec<TriggerEvent>,
    ) -> State {
        let blocks = blocks + 1;
        let min_db = min_db.min(slow_db);
        if self.pending_quiet.is_some() && level_db > floor_db + self.settings.margin_db {
            // The strike that a quiet rise came just before.
            return self.start_record(floor_db, slow_db, events);
        }
        if self.blocks_to_ms(blocks) < self.settings.refractory_ms {
            return State::Settling { blocks, min_db };
        }
        let new_strike = level_db > floor_db + self.settings.margin_db
            && level_db
                > min_db + self.settings.double_strike_rise_db + self.settings.margin_db / 2.0;
        if new_strike {
            self.start_record(floor_db, slow_db, events)
        } else if slow_db < floor_db + self.settings.settle_db {
            State::Armed
        } else {
            State::Settling { blocks, min_db }
        }
    }

    /// Where the strike whose block just crossed the margin starts in
    /// `samples` (the pre-trigger history, ending with that block): the
    /// change point out of the room noise ([`strike_start`]), searched from
    /// a little before the last block that was still near the noise, out of
    /// the level there (the noise, or a tail just above it). When the
    /// sound before never fell back to the noise within [`RISE_SEARCH_MS`]
    /// (a strike on a decay that has not died), the start of the block.
    fn rise_start(&self, samples: &[f32], floor_db: f64) -> usize {
        let block_start = samples.len().saturating_sub(self.block_len);
        let quiet_back = self
            .recent_levels
            .iter()
            .rev()
            .position(|&level| level <= floor_db + self.settings.settle_db);
        let Some(blocks_back) = quiet_back else {
            return block_start;
        };
        let pad = ms_to_samples(RISE_SEARCH_PAD_MS, self.sample_rate_hz);
        let from = samples
            .len()
            .saturating_sub((blocks_back + 1) * self.block_len + pad);
        // What the rise rises out of: the room noise, or the tail of an
        // earlier tap that is still a little above it (the change point is
        // then where the sound clearly rises over that tail).
        let quiet_end = (samples.len() - (blocks_back * self.block_len)).max(from);
        let quiet = &samples[from..quiet_end];
        let quiet_power =
            quiet.iter().map(|&x| f64::from(x).powi(2)).sum::<f64>() / quiet.len().max(1) as f64;
        let noise_power = 10f64.powf(floor_db / 10.0).max(quiet_power);
        strike_start(&samples[from..], noise_power).map_or(block_start, |at| from + at)
    }

    /// A much louder block soon after the trigger: the record starts again
    /// at the rise out of what started it.
    fn restart_record(&mut self, rec: &mut Recording, level_db: f64, slow_db: f64) {
        let from = rec.onset_index.min(rec.samples.len());
        let before_power = 10f64.powf(rec.trigger_level_db / 10.0);
        let block_start = rec.samples.len().saturating_sub(self.block_len);
        rec.onset_index =
            strike_start(&rec.samples[from..], before_power).map_or(block_start, |at| from + at);
        rec.target_len =
            rec.onset_index + ms_to_samples(self.settings.record_ms, self.sample_rate_hz);
        rec.trigger_level_db = level_db;
        rec.quietest_since_trigger_db = f64::INFINITY;
        rec.blocks = 1;
        rec.peak_db = slow_db;
        rec.blocks_since_peak = 0;
        rec.loudest_db = slow_db;
        rec.blocks_since_loudest = 0;
        rec.watch = SecondStrikeWatch::default();
        self.novelty.reset();
        self.novelty
            .set_noise_power(10f64.powf(rec.floor_db / 10.0));
    }

    fn block_ms(&self) -> f64 {
        self.block_len as f64 * 1000.0 / self.sample_rate_hz
    }

    fn past_contact(&self, blocks_since_peak: usize, blocks: usize) -> bool {
        self.blocks_to_ms(blocks_since_peak) > CONTACT_MS && self.blocks_to_ms(blocks) > CONTACT_MS
    }

    fn close_record(&self, rec: Recording) -> FoundTap {
        let after_onset = rec.samples.len().saturating_sub(rec.onset_index);
        let too_short_record =
            after_onset < ms_to_samples(self.settings.min_record_ms, self.sample_rate_hz);
        let died_at_once = rec
            .died_after_blocks
            .is_some_and(|blocks| self.blocks_to_ms(blocks) < self.settings.min_ring_ms);
        let rejected = if rec.clipped {
            Some(RejectReason::Clipped)
        } else if rec.watch.found_second_strike() {
            Some(RejectReason::DoubleStrike)
        } else if too_short_record || died_at_once {
            Some(RejectReason::TooShort)
        } else {
            None
        };
        FoundTap {
            start_sample: rec.start_sample,
            onset_index: rec.onset_index,
            samples: rec.samples,
            peak_dbfs: rec.peak_db,
            floor_dbfs: rec.floor_db,
            rejected,
        }
    }

    fn quiet_tap(&self, blocks: usize, floor_db: f64, peak_db: f64) -> FoundTap {
        let samples: Vec<f32> = self.history.iter().copied().collect();
        let span = (blocks * self.block_len).min(samples.len());
        FoundTap {
            start_sample: self.position - samples.len() as u64,
            onset_index: samples.len() - span,
            samples,
            peak_dbfs: peak_db,
            floor_dbfs: floor_db,
            rejected: Some(RejectReason::TooQuiet),
        }
    }

    fn blocks_to_ms(&self, blocks: usize) -> f64 {
        blocks as f64 * self.block_len as f64 * 1000.0 / self.sample_rate_hz
    }
}

/// Finds every tap in a whole recording.
pub fn find_taps(
    samples: &[f32],
    sample_rate_hz: f64,
    settings: &TriggerSettings,
) -> Vec<FoundTap> {
    let mut trigger = TapTrigger::new(settings.clone(), sample_rate_hz);
    let mut events = Vec::new();
    trigger.push(samples, &mut events);
    trigger.finish(&mut events);
    events
        .into_iter()
        .filter_map(|event| match event {
            TriggerEvent::Tap(tap) => Some(tap),
            TriggerEvent::Started { .. } => None,
        })
        .collect()
}

/// Milliseconds to a whole number of samples.
pub fn ms_to_samples(ms: f64, sample_rate_hz: f64) -> usize {
    if ms.is_finite() && ms > 0.0 {
        (ms * 1e-3 * sample_rate_hz).round() as usize
    } else {
        0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::{add_modes, to_f32_clipped, NoiseGenerator, SynthMode};

    const FS: f64 = 48_000.0;

    fn plate_modes(amplitude: f64) -> Vec<SynthMode> {
        vec![
            SynthMode::new(170.0, 40.0, amplitude * 0.6),
            SynthMode::new(345.0, 60.0, amplitude),
            SynthMode::new(520.0, 50.0, amplitude * 0.4),
        ]
    }

    fn recording(seconds: f64, strikes: &[(f64, f64)], noise_rms: f64, seed: u64) -> Vec<f32> {
        let len = (seconds * FS) as usize;
        let mut out = vec![0.0; len];
        for &(at_s, amplitude) in strikes {
            add_modes(&mut out, FS, (at_s * FS) as usize, &plate_modes(amplitude));
        }
        let mut noise = NoiseGenerator::new(seed);
        for x in &mut out {
            *x += noise_rms * noise.gaussian();
        }
        to_f32_clipped(&out)
    }

    #[test]
    fn finds_each_strike_once() {
        let strikes = [(0.5, 0.3), (2.0, 0.2), (3.6, 0.25)];
        let samples = recording(5.0, &strikes, 1e-4, 1);
        let taps = find_taps(&samples, FS, &TriggerSettings::default());
        assert_eq!(taps.len(), 3, "{taps:?}");
        for (tap, &(at_s, _)) in taps.iter().zip(&strikes) {
            assert_eq!(tap.rejected, None);
            let onset_s = tap.onset_sample() as f64 / FS;
            assert!((onset_s - at_s).abs() < 0.003, "onset {onset_s} vs {at_s}");
            assert_eq!(tap.samples.len(), tap.onset_index + 48_000);
        }
    }

    #[test]
    fn rejects_clipped_and_double() {
        let mut strikes = vec![(0.5, 0.3), (2.0, 2.5), (3.5, 0.3), (3.65, 0.3)];
        strikes.push((5.5, 0.2));
        let samples = recording(7.0, &strikes, 1e-4, 2);
        let taps = find_taps(&samples, FS, &TriggerSettings::default());
        let reasons: Vec<_> = taps.iter().map(|t| t.rejected).collect();
        assert_eq!(
            reasons,
            vec![
                None,
                Some(RejectReason::Clipped),
                Some(RejectReason::DoubleStrike),
                None
            ]
        );
    }

    #[test]
    fn quiet_tap_is_reported() {
        // Noise at -80 dBFS RMS; a tap whose first milliseconds stand about
        // 12 dB above it (half the 20 dB margin is 10 dB).
        let samples = recording(3.0, &[(1.5, 0.0004)], 1e-4, 3);
        let taps = find_taps(&samples, FS, &TriggerSettings::default());
        assert_eq!(taps.len(), 1, "{taps:?}");
        assert_eq!(taps[0].rejected, Some(RejectReason::TooQuiet));
    }

    #[test]
    fn tap_cut_off_by_end_is_too_short() {
        let samples = recording(1.05, &[(1.0, 0.3)], 1e-4, 4);
        let taps = find_taps(&samples, FS, &TriggerSettings::default());
        assert_eq!(taps.len(), 1);
        assert_eq!(taps[0].rejected, Some(RejectReason::TooShort));
    }

    #[test]
    fn silence_gives_no_taps() {
        assert!(find_taps(&vec![0.0; 96_000], FS, &TriggerSettings::default()).is_empty());
        let noise = recording(2.0, &[], 1e-3, 5);
        assert!(find_taps(&noise, FS, &TriggerSettings::default()).is_empty());
    }

    #[test]
    fn streaming_in_chunks_matches_whole() {
        let samples = recording(5.0, &[(0.5, 0.3), (2.5, 0.3)], 1e-4, 6);
        let whole = find_taps(&samples, FS, &TriggerSettings::default());
        let mut trigger = TapTrigger::new(TriggerSettings::default(), FS);
        let mut events = Vec::new();
        for chunk in samples.chunks(317) {
            trigger.push(chunk, &mut events);
        }
        trigger.finish(&mut events);
        let chunked: Vec<FoundTap> = events
            .into_iter()
            .filter_map(|e| match e {
                TriggerEvent::Tap(t) => Some(t),
                TriggerEvent::Started { .. } => None,
            })
            .collect();
        assert_eq!(whole, chunked);
    }
}
