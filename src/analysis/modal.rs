//! Per-tap modal estimation: the frequency, Q and level of every mode in
//! one tap.
//!
//! 1. Candidate peaks come from the display spectrum (see `spectrum`).
//! 2. Strongest first, each candidate is estimated from three bins of the
//!    *unwindowed* DFT of the residual over a record matched to its decay
//!    (about three time constants). For a damped exponential that DFT is
//!    exactly a Lorentzian (Bertocco, Offelli & Petri, IEEE Trans. Instrum.
//!    Meas. 43(2), 1994), so 1/X[m] is linear in the bin's phasor and the
//!    pole z = exp((−α + jω)/fs) follows exactly from the bins (the
//!    first-order form of this is the complex ratio of Jacobsen &
//!    Kootsookos, IEEE SP Magazine 24(3), 2007). The negative-frequency
//!    image is removed by iteration. The fitted damped sinusoid is then
//!    subtracted so weaker modes are measured on what is left.
//! 3. A joint least-squares refinement (Levenberg–Marquardt on amplitude,
//!    phase, frequency and decay of every mode of a group of overlapping
//!    modes, in the time domain) takes the estimates to the maximum
//!    likelihood fit for white noise; groups are refined in turn against
//!    the residual of all the others.

use std::f64::consts::PI;

use rustfft::num_complex::Complex64;
use serde::{Deserialize, Serialize};

use super::linalg::solve_symmetric;
use super::pencil::{band_poles, Band, BandPole};
use super::spectrum::{DisplaySpectrum, SpectrumMaker};
use super::tap_finder::FoundTap;

/// What to look for in a tap.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AnalysisSettings {
    /// Lowest frequency of interest.
    pub band_low_hz: f64,
    /// Highest frequency of interest.
    pub band_high_hz: f64,
    /// At most this many modes per tap (the strongest).
    pub max_modes: usize,
    /// A candidate peak must stand this far above the median level of the band.
    pub min_above_floor_db: f64,
    /// A candidate peak must stand this far above the dips that separate it
    /// from higher peaks.
    pub min_prominence_db: f64,
    /// Modes with Q outside this range are dropped as artefacts.
    pub min_q: f64,
    pub max_q: f64,
}

impl Default for AnalysisSettings {
    fn default() -> Self {
        Self {
            band_low_hz: 40.0,
            band_high_hz: 4000.0,
            max_modes: 16,
            min_above_floor_db: 15.0,
            min_prominence_db: 6.0,
            min_q: 3.0,
            max_q: 3000.0,
        }
    }
}

/// One mode of one tap.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Mode {
    pub frequency_hz: f64,
    /// Quality factor Q = πf/α.
    pub q: f64,
    /// Decay rate α in 1/s (amplitude falls as exp(−αt)).
    pub decay_per_s: f64,
    /// Amplitude at the start of the analysed decay, full scale = 1.
    pub amplitude: f64,
    /// 20·log10(amplitude), dB full scale.
    pub level_db: f64,
    /// How far the mode's peak stands above the dips beside it in the
    /// display spectrum, dB.
    pub prominence_db: f64,
}

impl Mode {
    /// Half-power bandwidth in Hz (f/Q = α/π).
    pub fn bandwidth_hz(&self) -> f64 {
        self.decay_per_s / PI
    }
}

/// Everything measured on one tap.
#[derive(Clone, Debug, PartialEq)]
pub struct TapAnalysis {
    /// Modes sorted by frequency.
    pub modes: Vec<Mode>,
    pub spectrum: DisplaySpectrum,
    pub sample_rate_hz: f64,
}

/// A damped complex pole with its complex amplitude, in per-sample units:
/// x[n] = 2·Re(c·zⁿ).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Pole {
    z: Complex64,
    c: Complex64,
}

impl Pole {
    fn frequency_hz(&self, fs: f64) -> f64 {
        self.z.arg() * fs / (2.0 * PI)
    }
    fn decay_per_s(&self, fs: f64) -> f64 {
        -self.z.norm().ln() * fs
    }
    fn amplitude(&self) -> f64 {
        2.0 * self.c.norm()
    }
    /// Time constant in samples.
    fn tau_samples(&self) -> f64 {
        1.0 / (-self.z.norm().ln()).max(1e-9)
    }
}

/// What the matrix pencil says about the band of a mode that fits badly.
enum PencilVerdict {
    /// Two modes (or more; the two strongest), as starting values.
    Pair([Pole; 2]),
    /// One mode only: no split.
    Single,
    /// Nothing usable (too short, or no pole passed the tests).
    Failed,
}

#[derive(Clone, Copy, Debug)]
struct Candidate {
    frequency_hz: f64,
    power: f32,
    prominence_db: f64,
    /// Bin spacing of the spectrum it was found in.
    bin_hz: f64,
    /// Width of the peak where it stays above half its power.
    half_power_width_hz: f64,
}

/// The maker in `slot`, replaced if its FFT length is not `fft_len`.
fn maker_for(slot: &mut Option<SpectrumMaker>, fft_len: usize) -> &mut SpectrumMaker {
    if slot.as_ref().is_none_or(|m| m.fft_len() != fft_len) {
        *slot = Some(SpectrumMaker::new(fft_len));
    }
    slot.get_or_insert_with(|| SpectrumMaker::new(fft_len))
}

/// Two poles whose frequencies and decay rates differ by less than a tenth
/// of their decay rate (a twentieth of a bandwidth) are one pole.
fn coincide(a: &Pole, b: &Pole) -> bool {
    let (decay_a, decay_b) = (-a.z.norm().ln(), -b.z.norm().ln());
    let reach = COINCIDENT_DECAYS * decay_a.max(decay_b);
    (a.z.arg() - b.z.arg()).abs() < reach && (decay_a - decay_b).abs() < reach
}

/// See [`coincide`].
const COINCIDENT_DECAYS: f64 = 0.1;

/// A candidate within two bins of a mode already found is that mode again.
/// (Farther away, a peak left in the residual that keeps most of the
/// original power is a real mode the first fit missed — for example one of
/// a close pair fitted as a single broad mode — and gets its own estimate
/// and a joint refinement with its neighbour.)
fn near_existing(candidate: &Candidate, poles: &[(Pole, f64)], fs: f64, bin_hz: f64) -> bool {
    poles
        .iter()
        .any(|(p, _)| (p.frequency_hz(fs) - candidate.frequency_hz).abs() < 2.0 * bin_hz)
}

/// Measures taps. Keeps its FFT plan and buffers between taps.
#[derive(Debug)]
pub struct TapAnalyzer {
    settings: AnalysisSettings,
    sample_rate_hz: f64,
    display_maker: Option<SpectrumMaker>,
    candidate_maker: Option<SpectrumMaker>,
    residual: Vec<f64>,
    scratch: Vec<f32>,
    /// Amplitude below which a mode's tail is not worth adding or
    /// subtracting: 50 dB under the noise of the current record.
    tail_floor: f64,
}

impl TapAnalyzer {
    pub fn new(settings: AnalysisSettings, sample_rate_hz: f64) -> Self {
        Self {
            settings,
            sample_rate_hz,
            display_maker: None,
            candidate_maker: None,
            residual: Vec::new(),
            scratch: Vec::new(),
            tail_floor: 0.0,
        }
    }

    pub fn settings(&self) -> &AnalysisSettings {
        &self.settings
    }

    pub fn set_settings(&mut self, settings: AnalysisSettings) {
        self.settings = settings;
    }

    pub fn sample_rate_hz(&self) -> f64 {
        self.sample_rate_hz
    }

    /// Measures one tap found by the trigger.
    pub fn analyze(&mut self, tap: &FoundTap) -> TapAnalysis {
        self.analyze_record(&tap.samples, tap.onset_index)
    }

    /// Measures one record whose strike is at `onset_index`.
    pub fn analyze_record(&mut self, record: &[f32], onset_index: usize) -> TapAnalysis {
        let fs = self.sample_rate_hz;
        let spectrum = self.display_spectrum(record, onset_index);
        let start = decay_start(record, onset_index, fs);
        let offset = pre_trigger_mean(record, onset_index);
        self.residual.clear();
        self.residual.extend(
            record[start.min(record.len())..]
                .iter()
                .map(|&x| f64::from(x) - offset),
        );
        self.tail_floor = TAIL_BELOW_NOISE * noise_rms(record, onset_index, offset);
        let mut modes = if self.residual.len() < MIN_DECAY_SAMPLES {
            Vec::new()
        } else {
            let poles = self.estimate_poles(&spectrum);
            self.to_modes(&poles)
        };
        modes.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
        TapAnalysis {
            modes,
            spectrum,
            sample_rate_hz: fs,
        }
    }

    fn display_spectrum(&mut self, record: &[f32], onset_index: usize) -> DisplaySpectrum {
        let fft_len = SpectrumMaker::fft_len_for(record.len());
        maker_for(&mut self.display_maker, fft_len).spectrum(
            record,
            onset_index,
            self.sample_rate_hz,
        )
    }

    /// Spectrum of the analysed decay (or of what is left of it), faded out
    /// from its start, for finding candidate peaks.
    fn residual_spectrum(&mut self) -> DisplaySpectrum {
        // Half a second holds what is left of any mode worth finding; a
        // longer residual is mostly noise and only costs a bigger FFT.
        let used = self.residual.len().min(RESIDUAL_SPECTRUM_SAMPLES);
        let fft_len = used.next_power_of_two().max(1024);
        self.scratch.clear();
        self.scratch
            .extend(self.residual[..used].iter().map(|&x| x as f32));
        maker_for(&mut self.candidate_maker, fft_len).spectrum(
            &self.scratch,
            0,
            self.sample_rate_hz,
        )
    }

    /// Steps 2 and 3 of the method, in rounds: find peaks, estimate each
    /// (strongest first) and subtract it, refine overlapping groups jointly;
    /// then look again in what is left for modes the stronger ones hid.
    fn estimate_poles(&mut self, original: &DisplaySpectrum) -> Vec<(Pole, f64)> {
        let mut poles: Vec<(Pole, f64)> = Vec::new();
        let mut candidates = find_candidates(original, None, &self.settings);
        for _round in 0..MAX_ROUNDS {
            let before = poles.len();
            for candidate in &candidates {
                self.add_candidate(candidate, &mut poles);
            }
            if poles.len() == before {
                break;
            }
            poles.sort_by(|a, b| a.0.z.arg().total_cmp(&b.0.z.arg()));
            for _sweep in 0..REFINE_SWEEPS {
                for group in overlapping_groups(&poles) {
                    self.refine_group(&mut poles[group]);
                }
            }
            if poles.len() >= self.settings.max_modes * 2 {
                break;
            }
            self.merge_coincident(&mut poles);
            let left = self.residual_spectrum();
            let split = self.split_misfits(&mut poles, &left);
            candidates = find_candidates(&left, Some(original), &self.settings);
            candidates.retain(|c| !near_existing(c, &poles, self.sample_rate_hz, left.bin_hz));
            if split && candidates.is_empty() {
                // Refine the new pairs with their neighbours once more.
                poles.sort_by(|a, b| a.0.z.arg().total_cmp(&b.0.z.arg()));
                for group in overlapping_groups(&poles) {
                    self.refine_group(&mut poles[group]);
                }
            }
        }
        self.reseed_close_groups(&mut poles);
        self.merge_coincident(&mut poles);
        poles
    }

    /// Two poles at nearly the same place are one mode whose amplitude is
    /// their sum. A joint fit (or the pencil on a beating peak) can drift
    /// into such a pair with large amplitudes that nearly cancel: an
    /// ill-conditioned fit, not two resonances. The pair is replaced by
    /// the stronger pole carrying the summed amplitude; if that is weak,
    /// the model-order test drops it later.
    fn merge_coincident(&mut self, poles: &mut Vec<(Pole, f64)>) {
        let mut i = 0;
        while i < poles.len() {
            let Some(j) = (i + 1..poles.len()).find(|&j| coincide(&poles[i].0, &poles[j].0)) else {
                i += 1;
                continue;
            };
            let (b, b_prominence_db) = poles.remove(j);
            let (a, a_prominence_db) = poles[i];
            let z = if a.c.norm() >= b.c.norm() { a.z } else { b.z };
            let merged = Pole { z, c: a.c + b.c };
            for old in [&a, &b] {
                add_pole(&mut self.residual, old, 1.0, self.tail_floor);
            }
            add_pole(&mut self.residual, &merged, -1.0, self.tail_floor);
            poles[i] = (merged, a_prominence_db.max(b_prominence_db));
        }
    }

    /// Modes closer than a few bandwidths can settle in the joint fit on a
    /// wrong pair (both near one frequency, large amplitudes that cancel).
    /// The matrix pencil on the group's band gives independent starting
    /// values; the refit from them replaces the group when it fits better.
    fn reseed_close_groups(&mut self, poles: &mut [(Pole, f64)]) {
        poles.sort_by(|a, b| a.0.z.arg().total_cmp(&b.0.z.arg()));
        for group in overlapping_groups(poles) {
            let members = &poles[group.clone()];
            let close = members.windows(2).any(|pair| {
                let (a, b) = (&pair[0].0, &pair[1].0);
                let widths = -a.z.norm().ln() - b.z.norm().ln();
                b.z.arg() - a.z.arg() < CLOSE_PAIR_BANDWIDTHS * widths
            });
            if close && members.len() <= MAX_PENCIL_GROUP {
                self.reseed_group(&mut poles[group]);
            }
        }
    }

    fn reseed_group(&mut self, group: &mut [(Pole, f64)]) {
        let longest_tau = group
            .iter()
            .map(|(p, _)| p.tau_samples())
            .fold(0.0, f64::max);
        let span = fit_length(PENCIL_TIME_CONSTANTS * longest_tau, self.residual.len());
        let mut signal = self.residual[..span].to_vec();
        for (pole, _) in group.iter() {
            add_pole(&mut signal, pole, 1.0, 0.0);
        }
        let (low, high) = (group[0].0.z.arg(), group[group.len() - 1].0.z.arg());
        let widest = group
            .iter()
            .map(|(p, _)| -p.z.norm().ln())
            .fold(0.0, f64::max);
        let band = Band {
            centre_rad: 0.5 * (low + high),
            half_width_rad: 0.5 * (high - low) + PENCIL_HALF_BANDWIDTHS * widest,
            span_samples: span,
        };
        let found = band_poles(&signal, &band, self.tail_floor / TAIL_BELOW_NOISE);
        if found.len() < group.len() {
            return;
        }
        let mut initial: Vec<Pole> = found[..group.len()]
            .iter()
            .map(|p| Pole { z: p.z, c: p.c })
            .collect();
        initial.sort_by(|a, b| a.z.arg().total_cmp(&b.z.arg()));
        let len = fit_length(
            initial
                .iter()
                .map(Pole::tau_samples)
                .fold(longest_tau, f64::max),
            span,
        );
        let old: Vec<f64> = group.iter().flat_map(|(p, _)| pole_to_params(p)).collect();
        let Some(new) = refine_poles(&signal[..len], &initial) else {
            return;
        };
        let new_params: Vec<f64> = new.iter().flat_map(pole_to_params).collect();
        if fit_cost(&signal[..len], &new_params) >= fit_cost(&signal[..len], &old) {
            return;
        }
        for ((slot, _), p) in group.iter_mut().zip(new) {
            add_pole(&mut self.residual, slot, 1.0, self.tail_floor);
            add_pole(&mut self.residual, &p, -1.0, self.tail_floor);
            *slot = p;
        }
    }

    /// A lone mode whose neighbourhood still stands well above the floor
    /// after its subtraction may be two modes closer than the record can
    /// show as two peaks. Fit two there; keep them if they halve the
    /// residual energy. Returns true if any mode was split.
    fn split_misfits(&mut self, poles: &mut Vec<(Pole, f64)>, left: &DisplaySpectrum) -> bool {
        let fs = self.sample_rate_hz;
        let (low, high) = (
            left.bin_of_hz(self.settings.band_low_hz),
            left.bin_of_hz(self.settings.band_high_hz),
        );
        if high <= low + 2 {
            return false;
        }
        let floor = median(&left.power[low..=high]);
        let threshold = floor * 10f32.powf((self.settings.min_above_floor_db / 10.0) as f32);
        let angles: Vec<f64> = poles.iter().map(|(p, _)| p.z.arg()).collect();
        let mut added = Vec::new();
        for (index, (pole, prominence_db)) in poles.iter_mut().enumerate() {
            let width_hz = (2.0 * pole.decay_per_s(fs) / PI).max(2.0 * left.bin_hz);
            let around = left.bin_of_hz(pole.frequency_hz(fs) - width_hz)
                ..=left.bin_of_hz(pole.frequency_hz(fs) + width_hz);
            let misfit = left.power[around].iter().any(|&p| p > threshold);
            if !misfit {
                continue;
            }
            let room_rad = angles
                .iter()
                .enumerate()
                .filter(|&(other, _)| other != index)
                .map(|(_, &angle)| (angle - pole.z.arg()).abs())
                .fold(f64::INFINITY, f64::min);
            if let Some((first, second)) = self.try_split(pole, room_rad) {
                *pole = first;
                added.push((second, *prominence_db));
            }
        }
        let split = !added.is_empty();
        poles.extend(added);
        split
    }

    /// Two-mode fit in place of `pole` (already subtracted from the
    /// residual); applied to the residual and returned when it is clearly
    /// better than what was there. The starting values come from the
    /// matrix pencil on the mode's band (`pencil_pair`; `room_rad` is the
    /// distance to the nearest other mode); if the pencil finds no pair
    /// there, from two guesses either side of the mode.
    fn try_split(&mut self, pole: &Pole, room_rad: f64) -> Option<(Pole, Pole)> {
        let pencil_span = fit_length(
            PENCIL_TIME_CONSTANTS * pole.tau_samples(),
            self.residual.len(),
        );
        let mut signal = self.residual[..pencil_span].to_vec();
        add_pole(&mut signal, pole, 1.0, 0.0);
        let offset = (-pole.z.norm().ln()).max(PI / pencil_span as f64);
        let initial = match self.pencil_pair(pole, &signal, room_rad) {
            PencilVerdict::Pair(pair) => pair,
            PencilVerdict::Single => return None,
            PencilVerdict::Failed => {
                let rotate = |p: &Pole, d_omega: f64, gain: Complex64| Pole {
                    z: p.z * Complex64::from_polar(1.0, d_omega),
                    c: p.c * gain,
                };
                [
                    rotate(pole, -offset, Complex64::new(0.7, 0.0)),
                    rotate(pole, offset, Complex64::new(0.0, 0.5)),
                ]
            }
        };
        let longest_tau = initial
            .iter()
            .map(Pole::tau_samples)
            .fold(pole.tau_samples(), f64::max);
        let len = fit_length(longest_tau, pencil_span);
        let signal = &signal[..len];
        let single_cost: f64 = self.residual[..len].iter().map(|x| x * x).sum();
        let pair = refine_poles(signal, &initial)?;
        let pair_cost = fit_cost(
            signal,
            &pair.iter().flat_map(pole_to_params).collect::<Vec<_>>(),
        );
        let sensible = pair
            .iter()
            .all(|p| p.z.norm() < 1.0 && p.amplitude() < 3.0 * pole.amplitude())
            && (pair[0].z.arg() - pair[1].z.arg()).abs() > 0.2 * offset;
        if !(sensible && pair_cost < SPLIT_GAIN * single_cost) {
            return None;
        }
        add_pole(&mut self.residual, pole, 1.0, self.tail_floor);
        for p in &pair {
            add_pole(&mut self.residual, p, -1.0, self.tail_floor);
        }
        Some((pair[0], pair[1]))
    }

    /// The two strongest poles the matrix pencil finds in a band a few
    /// bandwidths wide around `pole`, on `signal` (the residual with the
    /// mode put back). A single mode fitted to a pair can settle with a Q
    /// well above the pair's, between the two or beside one of them, so
    /// that the other lies at the edge of that band: if the pencil sees
    /// one mode there, it looks again in a band twice as wide, but never
    /// past half way to the nearest other mode (`room_rad` away), whose
    /// leftovers would make a false pair.
    fn pencil_pair(&self, pole: &Pole, signal: &[f64], room_rad: f64) -> PencilVerdict {
        let decay = -pole.z.norm().ln();
        let narrow_rad = (PENCIL_HALF_BANDWIDTHS * decay).max(8.0 * PI / signal.len() as f64);
        let wide_rad = (2.0 * narrow_rad).min(0.5 * room_rad);
        match self.pencil_in_band(pole.z.arg(), narrow_rad, signal) {
            PencilVerdict::Single if wide_rad > narrow_rad => {
                match self.pencil_in_band(pole.z.arg(), wide_rad, signal) {
                    pair @ PencilVerdict::Pair(_) => pair,
                    _ => PencilVerdict::Single,
                }
            }
            verdict => verdict,
        }
    }

    fn pencil_in_band(
        &self,
        centre_rad: f64,
        half_width_rad: f64,
        signal: &[f64],
    ) -> PencilVerdict {
        let band = Band {
            centre_rad,
            half_width_rad,
            span_samples: signal.len(),
        };
        let noise_rms = self.tail_floor / TAIL_BELOW_NOISE;
        let found = band_poles(signal, &band, noise_rms);
        match found.as_slice() {
            [] => PencilVerdict::Failed,
            [_] => PencilVerdict::Single,
            [first, second, ..] => {
                let to_pole = |p: &BandPole| Pole { z: p.z, c: p.c };
                PencilVerdict::Pair([to_pole(first), to_pole(second)])
            }
        }
    }

    /// Estimates one candidate on the residual and subtracts it, if the
    /// estimate is a plausible decaying mode near the candidate.
    fn add_candidate(&mut self, candidate: &Candidate, poles: &mut Vec<(Pole, f64)>) {
        let fs = self.sample_rate_hz;
        let omega = 2.0 * PI * candidate.frequency_hz / fs;
        // A mode's peak in a windowed spectrum is never narrower than its
        // own bandwidth α/π; an estimate far broader than the peak it came
        // from is the three-bin estimate misled by two modes beating in
        // one peak, and is left to the pencil.
        let widest_hz =
            BROADER_THAN_PEAK * candidate.half_power_width_hz.max(2.0 * candidate.bin_hz);
        let plausible = |pole: &Pole| {
            let moved_hz = (pole.frequency_hz(fs) - candidate.frequency_hz).abs();
            let bandwidth_hz = pole.decay_per_s(fs) / PI;
            pole.z.norm() < 1.0
                && pole.z.arg() > 0.0
                && bandwidth_hz <= widest_hz
                && moved_hz < 4.0 * candidate.bin_hz.max(bandwidth_hz)
        };
        match initial_estimate(&self.residual, omega) {
            Some(pole) if plausible(&pole) => {
                add_pole(&mut self.residual, &pole, -1.0, self.tail_floor);
                poles.push((pole, candidate.prominence_db));
            }
            _ => {
                // Two modes beating inside one peak can make the three-bin
                // estimate grow instead of decay: ask the pencil instead.
                for pole in self.pencil_candidate(omega, candidate.bin_hz) {
                    if plausible(&pole) {
                        add_pole(&mut self.residual, &pole, -1.0, self.tail_floor);
                        poles.push((pole, candidate.prominence_db));
                    }
                }
            }
        }
    }

    /// The (at most two) strongest poles the matrix pencil finds within
    /// a few display bins of `omega` in the residual.
    fn pencil_candidate(&self, omega: f64, bin_hz: f64) -> Vec<Pole> {
        let span = self.residual.len().min(RESIDUAL_SPECTRUM_SAMPLES);
        let band = Band {
            centre_rad: omega,
            half_width_rad: 2.0 * PI * PENCIL_CANDIDATE_BINS * bin_hz / self.sample_rate_hz,
            span_samples: span,
        };
        band_poles(&self.residual, &band, self.tail_floor / TAIL_BELOW_NOISE)
            .iter()
            .take(2)
            .map(|p| Pole { z: p.z, c: p.c })
            .collect()
    }

    fn refine_group(&mut self, group: &mut [(Pole, f64)]) {
        if let [(pole, _)] = group {
            self.refine_single(pole);
            return;
        }
        for (pole, _) in group.iter() {
            add_pole(&mut self.residual, pole, 1.0, self.tail_floor);
        }
        let longest_tau = group
            .iter()
            .map(|(p, _)| p.tau_samples())
            .fold(0.0, f64::max);
        let len = fit_length(longest_tau, self.residual.len());
        let initial: Vec<Pole> = group.iter().map(|(p, _)| *p).collect();
        let refined = refine_poles(&self.residual[..len], &initial);
        for ((slot, _), new) in group.iter_mut().zip(refined.unwrap_or(initial)) {
            *slot = new;
            add_pole(&mut self.residual, slot, -1.0, self.tail_floor);
        }
    }

    /// An isolated mode: its three-bin estimate on the residual with its own
    /// model put back is unbiased once its neighbours are subtracted, and
    /// costs a fraction of a joint fit.
    fn refine_single(&mut self, pole: &mut Pole) {
        let old = *pole;
        // The estimate sees the residual with this mode's model put back.
        let new = matched_estimate(&self.residual, &old);
        if let Some(new) = new {
            let moved = (new.z.arg() - old.z.arg()).abs();
            if new.z.norm() < 1.0 && moved < 3.0 * (-old.z.norm().ln()).max(1e-4) {
                replace_pole(&mut self.residual, &old, &new, self.tail_floor);
                *pole = new;
            }
        }
    }

    fn to_modes(&self, poles: &[(Pole, f64)]) -> Vec<Mode> {
        let fs = self.sample_rate_hz;
        let s = &self.settings;
        let mut modes: Vec<Mode> = poles
            .iter()
            .map(|(pole, prominence_db)| {
                let frequency_hz = pole.frequency_hz(fs);
                let decay_per_s = pole.decay_per_s(fs);
                let amplitude = pole.amplitude();
                Mode {
                    frequency_hz,
                    q: PI * frequency_hz / decay_per_s,
                    decay_per_s,
                    amplitude,
                    level_db: 20.0 * amplitude.max(1e-12).log10(),
                    prominence_db: *prominence_db,
                }
            })
            .filter(|m| {
                m.frequency_hz >= s.band_low_hz
                    && m.frequency_hz <= s.band_high_hz
                    && m.q.is_finite()
                    && m.q >= s.min_q
                    && m.q <= s.max_q
                    && !is_strike_sound(m)
                    && self.decays_within_record(m)
                    && self.explains_more_than_noise(m)
            })
            .collect();
        drop_duplicates_and_buried(&mut modes);
        drop_skirts(&mut modes);
        modes.sort_by(|a, b| b.amplitude.total_cmp(&a.amplitude));
        modes.truncate(s.max_modes);
        modes
    }
}

impl TapAnalyzer {
    /// A decay is only measured if the record sees it: a "mode" that falls
    /// by less than 3 dB over the whole analysed decay cannot be told from
    /// a steady tone (hum, a fan, a held note) and its Q would be a guess
    /// (common practice, no source). At 1 s this keeps Q up to about 450 at
    /// 50 Hz and 2700 at 300 Hz.
    fn decays_within_record(&self, mode: &Mode) -> bool {
        let duration_s = self.residual.len() as f64 / self.sample_rate_hz;
        mode.decay_per_s * duration_s
            >= MIN_DECAY_OVER_RECORD_DB / (20.0 * std::f64::consts::LOG10_E)
    }

    /// Model-order test: a mode is kept only if the energy it accounts for
    /// in the analysed decay is more than four free parameters (amplitude,
    /// phase, frequency, decay) would soak up from the noise alone, by the
    /// Bayesian information criterion: ΔRSS > 4·ln(N)·σ² (G. Schwarz,
    /// "Estimating the dimension of a model", Ann. Statist. 6(2), 1978).
    fn explains_more_than_noise(&self, mode: &Mode) -> bool {
        let samples = self.residual.len().max(2) as f64;
        let noise_power = (self.tail_floor / TAIL_BELOW_NOISE).powi(2);
        let decay_per_sample = mode.decay_per_s / self.sample_rate_hz;
        let kept_fraction = 1.0 - (-2.0 * decay_per_sample * samples).exp();
        let mode_energy =
            mode.amplitude.powi(2) / 2.0 * kept_fraction / (1.0 - (-2.0 * decay_per_sample).exp());
        mode_energy > 4.0 * samples.ln() * noise_power
    }
}

/// A mode must fall by at least this much over the analysed decay.
const MIN_DECAY_OVER_RECORD_DB: f64 = 3.0;
/// The residual is searched again over at most this many samples.
const RESIDUAL_SPECTRUM_SAMPLES: usize = 32_768;
/// Records shorter than this after the strike give no modes.
const MIN_DECAY_SAMPLES: usize = 256;
/// Tails weaker than this fraction of the noise RMS (−26 dB) are neither
/// added nor subtracted: they are invisible under the noise, and a mode's
/// own re-estimate looks only three time constants (26 dB) into its decay.
const TAIL_BELOW_NOISE: f64 = 0.05;
/// Two modes replace one only if they leave at most this fraction of the
/// one-mode residual energy.
const SPLIT_GAIN: f64 = 0.5;
/// The matrix pencil looks at this many time constants of a mode that fits
/// badly (a close pair decays more slowly than the one broad mode fitted
/// to it).
const PENCIL_TIME_CONSTANTS: f64 = 8.0;
/// The pencil's band reaches this many decay rates (half-bandwidths in
/// rad/sample) either side of the mode.
const PENCIL_HALF_BANDWIDTHS: f64 = 8.0;
/// Neighbours closer than this many summed half-power bandwidths get a
/// second joint fit started from the matrix pencil.
const CLOSE_PAIR_BANDWIDTHS: f64 = 5.0;
/// A candidate the three-bin estimate cannot measure is searched by the
/// pencil over this many display bins either side.
const PENCIL_CANDIDATE_BINS: f64 = 16.0;
/// An estimate may be at most this many times broader than the peak it
/// was found in.
const BROADER_THAN_PEAK: f64 = 2.0;
/// Groups of at most this many modes are given to the pencil.
const MAX_PENCIL_GROUP: usize = 3;
/// Passes of group refinement per round.
const REFINE_SWEEPS: usize = 2;
/// Rounds of looking again in the residual.
const MAX_ROUNDS: usize = 3;
/// A peak left after subtraction must keep at least this fraction of the
/// original power at its frequency (−10 dB) to count as a hidden mode.
const GHOST_RATIO: f32 = 0.1;
/// Modes closer than this many summed half-power bandwidths are refined
/// together.
const GROUP_BANDWIDTHS: f64 = 6.0;
/// At most this many modes in one joint fit.
const MAX_GROUP: usize = 8;
/// Records for the three-bin estimate span this many time constants.
const RECORD_TIME_CONSTANTS: f64 = 3.0;
/// Joint fits span this many time constants of the slowest mode.
const FIT_TIME_CONSTANTS: f64 = 5.0;

/// The analysed decay starts at the loudest sample of the first 10 ms after
/// the strike, plus 1 ms so that the mallet has left the plate.
fn decay_start(record: &[f32], onset_index: usize, fs: f64) -> usize {
    let onset = onset_index.min(record.len());
    let search = ((0.010 * fs) as usize).max(1);
    let guard = (0.001 * fs) as usize;
    let end = (onset + search).min(record.len());
    let loudest = record[onset..end]
        .iter()
        .enumerate()
        .fold((0, 0.0f32), |best, (i, &x)| {
            if x.abs() > best.1 {
                (i, x.abs())
            } else {
                best
            }
        })
        .0;
    if onset_index == 0 {
        // A bare decay (synthetic or cut by hand): use it from the start.
        0
    } else {
        onset + loudest + guard
    }
}

/// RMS of the noise: the quiet part before the strike, or, for a bare decay,
/// the last tenth of the record.
fn noise_rms(record: &[f32], onset_index: usize, offset: f64) -> f64 {
    let quiet = if onset_index >= 32 {
        &record[..onset_index.min(record.len())]
    } else {
        &record[record.len() - record.len() / 10..]
    };
    if quiet.is_empty() {
        return 0.0;
    }
    let power = quiet
        .iter()
        .map(|&x| (f64::from(x) - offset).powi(2))
        .sum::<f64>()
        / quiet.len() as f64;
    power.sqrt()
}

/// Mean of the quiet part before the strike: the DC offset of the input.
fn pre_trigger_mean(record: &[f32], onset_index: usize) -> f64 {
    let pre = &record[..onset_index.min(record.len())];
    if pre.len() < 32 {
        return 0.0;
    }
    pre.iter().map(|&x| f64::from(x)).sum::<f64>() / pre.len() as f64
}

/// Local maxima of a spectrum in the band that stand clear of the floor and
/// of their neighbours, loudest first. When searching what is left after
/// subtraction, `original` is the spectrum before it: a real hidden mode
/// leaves most of its power behind, while the small misfit of a strong
/// mode leaves a ghost far below the original level, which is skipped.
fn find_candidates(
    spectrum: &DisplaySpectrum,
    original: Option<&DisplaySpectrum>,
    settings: &AnalysisSettings,
) -> Vec<Candidate> {
    let power = &spectrum.power;
    if power.len() < 8 {
        return Vec::new();
    }
    let low = spectrum.bin_of_hz(settings.band_low_hz).max(2);
    let high = spectrum
        .bin_of_hz(settings.band_high_hz)
        .min(power.len() - 3);
    if high <= low {
        return Vec::new();
    }
    let floor = median(&power[low..=high]);
    let threshold = floor * 10f32.powf((settings.min_above_floor_db / 10.0) as f32);
    let mut found: Vec<Candidate> = (low..=high)
        .filter(|&k| power[k] > threshold && power[k] >= power[k - 1] && power[k] > power[k + 1])
        .filter(|&k| {
            original.is_none_or(|o| {
                power[k] >= o.power[o.bin_of_hz(k as f64 * spectrum.bin_hz)] * GHOST_RATIO
            })
        })
        .filter_map(|k| {
            let prominence_db = prominence_db(power, k);
            (prominence_db >= settings.min_prominence_db).then(|| Candidate {
                frequency_hz: interpolated_peak_bin(power, k) * spectrum.bin_hz,
                power: power[k],
                prominence_db,
                bin_hz: spectrum.bin_hz,
                half_power_width_hz: half_power_width_bins(power, k) as f64 * spectrum.bin_hz,
            })
        })
        .collect();
    found.sort_by(|a, b| b.power.total_cmp(&a.power));
    found.truncate(settings.max_modes * 2 + 4);
    found
}

fn median(values: &[f32]) -> f32 {
    let mut sorted = values.to_vec();
    let mid = sorted.len() / 2;
    let (_, m, _) = sorted.select_nth_unstable_by(mid, f32::total_cmp);
    *m
}

/// Bins from the last one above half of `power[k]` on the left to the last
/// one on the right (at most `MAX_WIDTH_BINS` either side).
fn half_power_width_bins(power: &[f32], k: usize) -> usize {
    let half = power[k] / 2.0;
    let above = |i: &usize| power[*i] > half;
    let right = (k + 1..power.len().min(k + 1 + MAX_WIDTH_BINS))
        .take_while(above)
        .count();
    let left = (k.saturating_sub(MAX_WIDTH_BINS)..k)
        .rev()
        .take_while(above)
        .count();
    left + right + 1
}

/// See [`half_power_width_bins`].
const MAX_WIDTH_BINS: usize = 128;

/// Topographic prominence of the peak at `k`: its height above the higher of
/// the two lowest points that separate it from higher ground on either side
/// (searched over ±10 % of the frequency, at least ±32 bins).
fn prominence_db(power: &[f32], k: usize) -> f64 {
    let reach = (k / 10).max(32);
    let peak = power[k];
    let side_min = |indices: &mut dyn Iterator<Item = usize>| {
        let mut lowest = peak;
        for i in indices {
            if power[i] > peak {
                break;
            }
            lowest = lowest.min(power[i]);
        }
        lowest
    };
    let left = side_min(&mut (k.saturating_sub(reach)..k).rev());
    let right = side_min(&mut (k + 1..(k + reach + 1).min(power.len())));
    let base = left.max(right).max(1e-30);
    10.0 * f64::from(peak / base).log10()
}

/// Parabolic interpolation of the peak on the dB scale, in bins.
fn interpolated_peak_bin(power: &[f32], k: usize) -> f64 {
    let db = |i: usize| 10.0 * f64::from(power[i].max(1e-30)).log10();
    let (a, b, c) = (db(k - 1), db(k), db(k + 1));
    let denom = a - 2.0 * b + c;
    let offset = if denom.abs() > 1e-12 {
        0.5 * (a - c) / denom
    } else {
        0.0
    };
    k as f64 + offset.clamp(-0.5, 0.5)
}

/// Record length for a time constant: a few τ, at least 32 cycles' worth of
/// bins to resolve neighbours, never more than the data.
fn fit_length(tau_samples: f64, available: usize) -> usize {
    let wanted = (FIT_TIME_CONSTANTS * tau_samples).round();
    (wanted as usize).clamp(MIN_DECAY_SAMPLES.min(available), available)
}

/// Three-bin estimate of the strongest pole near `omega` (rad/sample),
/// repeated with the record cut to about three time constants.
/// Re-estimates a mode on `signal` plus its own model, starting from a
/// record already matched to its decay.
fn matched_estimate(signal: &[f64], own: &Pole) -> Option<Pole> {
    let min_len = min_record_len(own.z.arg(), signal.len());
    let wanted = (RECORD_TIME_CONSTANTS * own.tau_samples()).round() as usize;
    three_bin_pole(
        signal,
        wanted.clamp(min_len, signal.len()),
        own.z.arg(),
        Some(own),
    )
}

/// At least eight periods and `MIN_DECAY_SAMPLES`, at most the data.
fn min_record_len(omega: f64, available: usize) -> usize {
    ((8.0 * 2.0 * PI / omega.max(1e-6)) as usize)
        .max(MIN_DECAY_SAMPLES)
        .min(available)
}

/// Three-bin estimate of a new candidate: first over 64 periods, then over
/// about three time constants of what that found, until the length settles.
fn initial_estimate(signal: &[f64], omega: f64) -> Option<Pole> {
    let min_len = min_record_len(omega, signal.len());
    let periods_64 = (64.0 * 2.0 * PI / omega.max(1e-6)) as usize;
    let mut len = periods_64.clamp(min_len, signal.len());
    let mut pole = three_bin_pole(signal, len, omega, None)?;
    for _ in 0..3 {
        let wanted = (RECORD_TIME_CONSTANTS * pole.tau_samples()).round() as usize;
        let new_len = wanted.clamp(min_len, signal.len());
        if new_len.abs_diff(len) * 10 < len {
            break;
        }
        len = new_len;
        pole = three_bin_pole(signal, len, pole.z.arg().max(omega * 0.5), None)?;
    }
    Some(pole)
}

/// Exact pole from three DFT bins of `signal[..len]` around `omega`.
///
/// For x[n] = c·zⁿ + conj, the L-point DFT is
/// X[m] = c(1 − z^L)/(1 − zρ^m) + image, with ρ = exp(−j2π/L); so for the
/// positive part 1/X[m] = p − q·ρ^m with z = q/p. p and q are fitted by
/// weighted least squares over the three bins; the image term is removed
/// with the current estimate and the fit repeated.
fn three_bin_pole(signal: &[f64], len: usize, omega: f64, own: Option<&Pole>) -> Option<Pole> {
    let k = (omega * len as f64 / (2.0 * PI)).round() as i64;
    if k < 2 || (k + 2) as usize > len / 2 {
        return None;
    }
    let bins = [k - 1, k, k + 1];
    let rho = |m: i64| Complex64::from_polar(1.0, -2.0 * PI * m as f64 / len as f64);
    let measured = dft_bins(&signal[..len], bins, own);
    let mut image = [Complex64::new(0.0, 0.0); 3];
    let mut pole = None;
    for _ in 0..4 {
        let positive: Vec<Complex64> = measured.iter().zip(&image).map(|(x, i)| x - i).collect();
        let (p, q) = fit_inverse_line(&positive, &bins.map(rho))?;
        let z = q / p;
        let z_len = z.powu(len as u32);
        let gain = Complex64::new(1.0, 0.0) - z_len;
        if gain.norm() < 1e-12 || !z.is_finite() {
            return None;
        }
        let c = (Complex64::new(1.0, 0.0) / p) / gain;
        for (slot, &m) in image.iter_mut().zip(&bins) {
            *slot = c.conj() * gain.conj() / (Complex64::new(1.0, 0.0) - z.conj() * rho(m));
        }
        pole = Some(Pole { z, c });
    }
    pole
}

/// Weighted least squares for 1/X[m] ≈ p − q·ρ_m, weights |X|⁴ (the
/// variance of 1/X grows as 1/|X|⁴).
fn fit_inverse_line(x: &[Complex64], rho: &[Complex64; 3]) -> Option<(Complex64, Complex64)> {
    let mut s_w = 0.0;
    let mut s_rho = Complex64::new(0.0, 0.0);
    let mut s_a = Complex64::new(0.0, 0.0);
    let mut s_rho_a = Complex64::new(0.0, 0.0);
    for (xm, rm) in x.iter().zip(rho) {
        if xm.norm_sqr() < 1e-300 {
            return None;
        }
        let a = Complex64::new(1.0, 0.0) / xm;
        let w = xm.norm_sqr().powi(2);
        s_w += w;
        s_rho += w * rm;
        s_a += w * a;
        s_rho_a += w * rm.conj() * a;
    }
    // Normal equations for basis u = 1, v = −ρ:
    // [s_w, −s_rho; −conj(s_rho), s_w] [p; q] = [s_a; −s_rho_a]
    let det = s_w * s_w - s_rho.norm_sqr();
    if det.abs() < 1e-300 * s_w * s_w {
        return None;
    }
    let p = (s_w * s_a - s_rho * s_rho_a) / det;
    let q = (-s_w * s_rho_a + s_rho.conj() * s_a) / det;
    Some((p, q))
}

/// Three DFT bins (integers on the `signal.len()` grid) of the signal, plus
/// the model of `own` if given.
///
/// Goertzel's recurrence s[n] = x[n] + 2cos(ω)·s[n−1] − s[n−2] gives, over
/// a stretch of L samples, e^{jω}·s[L−1] − s[L−2] = Σ x[i]·e^{jω(L−i)}. The
/// signal is cut into four segments run side by side (twelve independent
/// recurrences instead of three, so the loop is not bound by the latency
/// of one chain), and each segment's sum is turned back to the record's
/// time origin: X = Σ_seg e^{−jω·end_seg}·(e^{jω}·s1 − s2). The model's
/// own DFT is added in closed form (`model_bin`).
fn dft_bins(signal: &[f64], bins: [i64; 3], own: Option<&Pole>) -> [Complex64; 3] {
    let len = signal.len();
    let omegas = bins.map(|m| 2.0 * PI * m as f64 / len as f64);
    let state = goertzel_segments(signal, omegas);
    let ends = segment_ends(len);
    [0, 1, 2].map(|b| {
        let measured: Complex64 = (0..SEGMENTS)
            .map(|s| {
                let (s1, s2) = (state.s1[b][s], state.s2[b][s]);
                let sum = Complex64::from_polar(1.0, omegas[b]) * s1 - s2;
                Complex64::from_polar(1.0, -omegas[b] * ends[s] as f64) * sum
            })
            .sum();
        measured + own.map_or(Complex64::new(0.0, 0.0), |p| model_bin(p, len, omegas[b]))
    })
}

/// DFT at ω = 2πm/L (integer m) of the L samples 2·Re(c·zⁿ), n < L:
/// c(1 − z^L)/(1 − z·e^{−jω}) + c̄(1 − z̄^L)/(1 − z̄·e^{−jω}).
fn model_bin(pole: &Pole, len: usize, omega: f64) -> Complex64 {
    let one = Complex64::new(1.0, 0.0);
    let rho = Complex64::from_polar(1.0, -omega);
    let z_len = pole.z.powu(len as u32);
    pole.c * (one - z_len) / (one - pole.z * rho)
        + pole.c.conj() * (one - z_len.conj()) / (one - pole.z.conj() * rho)
}

/// Segments the Goertzel passes run side by side.
const SEGMENTS: usize = 4;

/// Final Goertzel states (s[L−1], s[L−2]) per bin and segment.
struct GoertzelState {
    s1: [[f64; SEGMENTS]; 3],
    s2: [[f64; SEGMENTS]; 3],
}

/// Where each segment ends: equal segments, the last one taking the
/// remainder.
fn segment_ends(len: usize) -> [usize; SEGMENTS] {
    let segment = len / SEGMENTS;
    std::array::from_fn(|s| {
        if s + 1 == SEGMENTS {
            len
        } else {
            segment * (s + 1)
        }
    })
}

/// The Goertzel recurrences of `dft_bins`.
fn goertzel_segments(signal: &[f64], omegas: [f64; 3]) -> GoertzelState {
    let segment = signal.len() / SEGMENTS;
    let coeffs = omegas.map(|w| 2.0 * w.cos());
    let mut s1 = [[0.0f64; SEGMENTS]; 3];
    let mut s2 = [[0.0f64; SEGMENTS]; 3];
    let parts: [&[f64]; SEGMENTS] = std::array::from_fn(|s| &signal[s * segment..][..segment]);
    // One index walks the four segments side by side.
    #[allow(clippy::needless_range_loop)]
    for i in 0..segment {
        let x: [f64; SEGMENTS] = std::array::from_fn(|s| parts[s][i]);
        for b in 0..3 {
            for s in 0..SEGMENTS {
                let s0 = x[s] + coeffs[b] * s1[b][s] - s2[b][s];
                s2[b][s] = s1[b][s];
                s1[b][s] = s0;
            }
        }
    }
    // The last segment goes on alone over the remainder (fewer than
    // SEGMENTS samples).
    let last = SEGMENTS - 1;
    for &x in &signal[SEGMENTS * segment..] {
        for b in 0..3 {
            let s0 = x + coeffs[b] * s1[b][last] - s2[b][last];
            s2[b][last] = s1[b][last];
            s1[b][last] = s0;
        }
    }
    GoertzelState { s1, s2 }
}

/// Adds `sign`·2·Re(c·zⁿ) to the signal, stopping once the mode has died
/// away below 1e-7 (−140 dB) of its start or below `floor` (an amplitude
/// far under the noise, where the tail no longer matters).
fn add_pole(signal: &mut [f64], pole: &Pole, sign: f64, floor: f64) {
    let start = pole.c * (2.0 * sign);
    let limit = (start.norm() * 1e-7).max(floor);
    let len = envelope_len(start.norm(), pole.z.norm(), limit).min(signal.len());
    add_damped_cosine(&mut signal[..len], start, pole.z);
}

/// Samples until a|z|ⁿ falls below `limit` (all of them if it never does).
fn envelope_len(start_amplitude: f64, radius: f64, limit: f64) -> usize {
    if start_amplitude <= limit {
        0
    } else if radius >= 1.0 || !radius.is_finite() {
        usize::MAX
    } else {
        let samples = (limit / start_amplitude).ln() / radius.ln();
        // Non-negative by construction; the cast saturates a huge count.
        samples.ceil() as usize
    }
}

/// Samples a damped cosine runs as a second-order recurrence before it is
/// re-started from the exact phasor, so rounding errors cannot build up
/// (the recurrence amplifies them near 0 and π).
const RECURRENCE_BLOCK_STEPS: usize = 256;
/// Adds Re(a·zⁿ) for n = 0, 1, … to every sample of the signal, as
/// interleaved lanes of a real recurrence (see `damped_cosine_lanes`):
/// 8 lanes in SSE2 registers, or 16 where the processor has AVX, whose
/// wider registers hold twice as many independent lanes.
fn add_damped_cosine(signal: &mut [f64], a: Complex64, z: Complex64) {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx") {
        // SAFETY: the processor has just been found to support AVX, the
        // only feature the function is compiled for.
        unsafe { add_damped_cosine_avx(signal, a, z) };
        return;
    }
    damped_cosine_lanes::<8>(signal, a, z);
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx")]
unsafe fn add_damped_cosine_avx(signal: &mut [f64], a: Complex64, z: Complex64) {
    damped_cosine_lanes::<16>(signal, a, z);
}

/// Each of the L lanes holds vₖ = Re(a·z^(l+Lk)), which obeys the real
/// recurrence vₖ₊₁ = 2Re(w)·vₖ − |w|²·vₖ₋₁ with w = z^L: two
/// multiplications a sample instead of a complex product's four, and the
/// lanes do not wait on each other.
#[inline(always)]
fn damped_cosine_lanes<const LANES: usize>(signal: &mut [f64], a: Complex64, z: Complex64) {
    let w = z.powu(LANES as u32);
    let (two_re_w, norm_sqr_w) = (2.0 * w.re, w.norm_sqr());
    let block_step = w.powu(RECURRENCE_BLOCK_STEPS as u32);
    let mut anchors = [a; LANES];
    for lane in 1..LANES {
        anchors[lane] = anchors[lane - 1] * z;
    }
    for block in signal.chunks_mut(LANES * RECURRENCE_BLOCK_STEPS) {
        // Two steps at a time, so that each state is updated in place:
        // `even` holds vₖ and `odd` vₖ₊₁ for even k.
        let mut even: [f64; LANES] = std::array::from_fn(|l| anchors[l].re);
        let mut odd: [f64; LANES] = std::array::from_fn(|l| (anchors[l] * w).re);
        let mut pairs = block.chunks_exact_mut(2 * LANES);
        for pair in pairs.by_ref() {
            let (first, second) = pair.split_at_mut(LANES);
            for lane in 0..LANES {
                first[lane] += even[lane];
                even[lane] = two_re_w * odd[lane] - norm_sqr_w * even[lane];
                second[lane] += odd[lane];
                odd[lane] = two_re_w * even[lane] - norm_sqr_w * odd[lane];
            }
        }
        let rest = pairs.into_remainder();
        let tail = even.iter().chain(&odd);
        for (x, v) in rest.iter_mut().zip(tail) {
            *x += v;
        }
        for anchor in &mut anchors {
            *anchor *= block_step;
        }
    }
}

/// Checkpoint spacing, in samples, when looking for where the change from
/// one fitted mode to another has died away.
const SETTLE_CHECK_SAMPLES: usize = 256;

/// Replaces one fitted mode by another in the residual: adds
/// 2·Re(c_old·z_oldⁿ) − 2·Re(c_new·z_newⁿ) until the difference is below
/// 1e-7 of the larger mode or below `floor`.
fn replace_pole(signal: &mut [f64], old: &Pole, new: &Pole, floor: f64) {
    let len = settled_len(old, new, floor, signal.len());
    add_damped_cosine(&mut signal[..len], old.c * 2.0, old.z);
    add_damped_cosine(&mut signal[..len], new.c * -2.0, new.z);
}

/// Length over which replacing `old` by `new` changes the signal: the
/// difference of two close damped exponentials is rⁿ times a term linear
/// in n, so it peaks near one time constant and only falls after two.
/// Past that it is checked every few hundred samples, and the length ends
/// at the first two checkpoints in a row below the limit (or where both
/// modes have died away, or at `available`, whichever is sooner).
fn settled_len(old: &Pole, new: &Pole, floor: f64, available: usize) -> usize {
    let (a_old, a_new) = (old.c * 2.0, new.c * 2.0);
    let limit = (a_old.norm().max(a_new.norm()) * 1e-7).max(floor);
    let both_died = envelope_len(a_old.norm(), old.z.norm(), 0.5 * limit)
        .max(envelope_len(a_new.norm(), new.z.norm(), 0.5 * limit))
        .min(available);
    let settled_after = 2.0 * old.tau_samples().max(new.tau_samples());
    let first = (settled_after.ceil() as usize)
        .min(both_died)
        .next_multiple_of(SETTLE_CHECK_SAMPLES);
    let step = SETTLE_CHECK_SAMPLES as u32;
    let (step_old, step_new) = (old.z.powu(step), new.z.powu(step));
    let (mut p_old, mut p_new) = (
        a_old * old.z.powf(first as f64),
        a_new * new.z.powf(first as f64),
    );
    let (mut n, mut below) = (first, 0);
    while n < both_died && below < 2 {
        below = if (p_old - p_new).norm() < limit {
            below + 1
        } else {
            0
        };
        p_old *= step_old;
        p_new *= step_new;
        n += SETTLE_CHECK_SAMPLES;
    }
    n.min(both_died)
}

/// Index ranges of poles (sorted by frequency) whose peaks overlap.
fn overlapping_groups(poles: &[(Pole, f64)]) -> Vec<std::ops::Range<usize>> {
    let mut groups = Vec::new();
    let mut start = 0;
    for i in 1..=poles.len() {
        let ends = i == poles.len() || i - start >= MAX_GROUP || {
            let (a, b) = (&poles[i - 1].0, &poles[i].0);
            let gap = b.z.arg() - a.z.arg();
            let widths = -a.z.norm().ln() - b.z.norm().ln();
            gap > GROUP_BANDWIDTHS * widths
        };
        if ends {
            if i > start {
                groups.push(start..i);
            }
            start = i;
        }
    }
    groups
}

/// Levenberg–Marquardt fit of damped sinusoids to `signal`, starting from
/// `initial`. Parameters per mode: a, b (x = e^{−dn}(a cos wn + b sin wn)),
/// w (rad/sample), d (1/sample). Returns None if the fit fails to improve
/// or wanders off.
fn refine_poles(signal: &[f64], initial: &[Pole]) -> Option<Vec<Pole>> {
    let mut params: Vec<f64> = initial.iter().flat_map(pole_to_params).collect();
    let mut cost = fit_cost(signal, &params);
    let mut lambda = 1e-3;
    for _ in 0..12 {
        let (jtj, jtr) = normal_equations(signal, &params);
        let mut improved = false;
        for _ in 0..6 {
            let mut damped = jtj.clone();
            let n = params.len();
            for i in 0..n {
                damped[i * n + i] += lambda * jtj[i * n + i].max(1e-30);
            }
            let Some(step) = solve_symmetric(&damped, &jtr, n) else {
                lambda *= 10.0;
                continue;
            };
            let trial: Vec<f64> = params.iter().zip(&step).map(|(p, s)| p + s).collect();
            let trial_cost = fit_cost(signal, &trial);
            if trial_cost < cost
                && trial
                    .chunks(4)
                    .all(|m| m[3] > 0.0 && m[2] > 0.0 && m[2] < PI)
            {
                let relative = (cost - trial_cost) / cost.max(1e-300);
                params = trial;
                cost = trial_cost;
                lambda = (lambda * 0.3).max(1e-9);
                improved = relative > 1e-10;
                break;
            }
            lambda *= 10.0;
        }
        if !improved {
            break;
        }
    }
    let refined: Vec<Pole> = params.chunks(4).map(params_to_pole).collect();
    let stayed = refined.iter().zip(initial).all(|(new, old)| {
        let width = (-old.z.norm().ln()).max(2.0 * PI / signal.len() as f64);
        (new.z.arg() - old.z.arg()).abs() < 3.0 * width && new.z.norm() < 1.0
    });
    stayed.then_some(refined)
}

fn pole_to_params(pole: &Pole) -> [f64; 4] {
    // 2·Re(c·zⁿ) = e^{−dn}(2c_re cos wn − 2c_im sin wn)
    [
        2.0 * pole.c.re,
        -2.0 * pole.c.im,
        pole.z.arg(),
        -pole.z.norm().ln(),
    ]
}

fn params_to_pole(m: &[f64]) -> Pole {
    Pole {
        z: Complex64::from_polar((-m[3]).exp(), m[2]),
        c: Complex64::new(m[0] / 2.0, -m[1] / 2.0),
    }
}

/// Sum of squared residuals of the model.
fn fit_cost(signal: &[f64], params: &[f64]) -> f64 {
    let mut model = vec![0.0; signal.len()];
    for m in params.chunks(4) {
        add_pole(&mut model, &params_to_pole(m), 1.0, 0.0);
    }
    signal
        .iter()
        .zip(&model)
        .map(|(y, f)| (y - f).powi(2))
        .sum()
}

/// JᵀJ (row-major, n×n) and Jᵀr of the model at `params`.
fn normal_equations(signal: &[f64], params: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let n = params.len();
    let modes = n / 4;
    let steps: Vec<Complex64> = params
        .chunks(4)
        .map(|m| Complex64::from_polar((-m[3]).exp(), m[2]))
        .collect();
    let mut phasors = vec![Complex64::new(1.0, 0.0); modes];
    let mut jtj = vec![0.0; n * n];
    let mut jtr = vec![0.0; n];
    let mut grad = vec![0.0; n];
    for (t, &y) in signal.iter().enumerate() {
        let time = t as f64;
        let mut model = 0.0;
        for (i, m) in params.chunks(4).enumerate() {
            let (pr, pi) = (phasors[i].re, phasors[i].im);
            let value = m[0] * pr + m[1] * pi;
            model += value;
            grad[4 * i] = pr;
            grad[4 * i + 1] = pi;
            grad[4 * i + 2] = time * (-m[0] * pi + m[1] * pr);
            grad[4 * i + 3] = -time * value;
            phasors[i] *= steps[i];
        }
        let r = y - model;
        for i in 0..n {
            let gi = grad[i];
            jtr[i] += gi * r;
            for j in i..n {
                jtj[i * n + j] += gi * grad[j];
            }
        }
    }
    for i in 0..n {
        for j in 0..i {
            jtj[i * n + j] = jtj[j * n + i];
        }
    }
    (jtj, jtr)
}

/// Below this Q, a mode that also dies within [`STRIKE_SOUND_S`] is the
/// strike's own sound (the mallet's click, its first reflections), not a
/// resonance worth tracking: tapwright's rule, no source. Plate and body
/// modes a maker tracks ring longer (a body's A0 at 100 Hz with Q 10 has a
/// time constant of 32 ms; mode 5 of a plate, Q 40–80, of 40 ms or more).
const STRIKE_SOUND_MAX_Q: f64 = 15.0;
/// See [`STRIKE_SOUND_MAX_Q`]: a time constant shorter than this.
const STRIKE_SOUND_S: f64 = 0.015;

fn is_strike_sound(mode: &Mode) -> bool {
    mode.q < STRIKE_SOUND_MAX_Q && 1.0 / mode.decay_per_s < STRIKE_SOUND_S
}

/// A broad mode lying under the peak of a narrower, stronger one is the
/// fit's way of bending that mode's decay where it is not quite
/// exponential (early reflections from the room, a decay that changes
/// rate, the strike's own ringing): no resonance of the plate. It is
/// dropped when its Q is under half its neighbour's, its peak spectral
/// density A/α is the lower, and the neighbour lies within one and a half
/// of its bandwidths. (A genuine close pair has similar Q and is kept.)
fn drop_skirts(modes: &mut Vec<Mode>) {
    let density = |m: &Mode| m.amplitude / m.decay_per_s.max(1e-12);
    let is_skirt = |weak: &Mode| {
        modes.iter().any(|strong| {
            strong.q > 2.0 * weak.q
                && density(strong) > density(weak)
                && (strong.frequency_hz - weak.frequency_hz).abs() < 1.5 * weak.bandwidth_hz()
        })
    };
    let skirts: Vec<bool> = modes.iter().map(is_skirt).collect();
    let mut flags = skirts.into_iter();
    modes.retain(|_| !flags.next().unwrap_or(false));
}

/// Two modes within a tenth of a bandwidth are one mode found twice: keep
/// the stronger. A weaker mode whose own peak lies more than 20 dB under
/// a stronger mode's skirt (the stronger mode's spectral density |A/(α +
/// iΔω)|² at the weaker one's frequency, against the weaker one's |A/α|²)
/// is invisible in the spectrum: what the fit put there is the stronger
/// mode's small misfit or noise beside it, and a real mode so buried
/// could not be measured from one tap (tapwright's rule, no source). Real
/// close pairs of similar level stand above each other's skirts (3 Hz
/// apart at Q 80, amplitudes 4 : 3, by 3 dB: 23 dB from the limit) and are
/// kept.
fn drop_duplicates_and_buried(modes: &mut Vec<Mode>) {
    modes.sort_by(|a, b| b.amplitude.total_cmp(&a.amplitude));
    let mut kept: Vec<Mode> = Vec::with_capacity(modes.len());
    for mode in modes.drain(..) {
        let covered = kept.iter().any(|k| {
            let gap_hz = (k.frequency_hz - mode.frequency_hz).abs();
            let twin = gap_hz < DUPLICATE_BANDWIDTHS * k.bandwidth_hz().max(mode.bandwidth_hz());
            twin || skirt_over_peak(k, &mode) > BURIED_UNDER_SKIRT_RATIO
        });
        if !covered {
            kept.push(mode);
        }
    }
    *modes = kept;
}

/// The ratio of `strong`'s spectral power density at `weak`'s frequency
/// to `weak`'s own peak density (single-pole Lorentzians).
fn skirt_over_peak(strong: &Mode, weak: &Mode) -> f64 {
    let offset_rad_per_s = 2.0 * PI * (strong.frequency_hz - weak.frequency_hz);
    let skirt = strong.amplitude.powi(2) / (strong.decay_per_s.powi(2) + offset_rad_per_s.powi(2));
    let peak = (weak.amplitude / weak.decay_per_s.max(1e-12)).powi(2);
    skirt / peak.max(1e-300)
}

/// See [`drop_duplicates_and_buried`]: closer than this many bandwidths is one mode.
const DUPLICATE_BANDWIDTHS: f64 = 0.1;
/// See [`drop_duplicates_and_buried`]: a peak this far (20 dB) under a stronger
/// mode's skirt is buried.
const BURIED_UNDER_SKIRT_RATIO: f64 = 100.0;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::{damped_modes, NoiseGenerator, SynthMode};

    const FS: f64 = 48_000.0;

    fn analyze(samples: &[f64]) -> TapAnalysis {
        let record: Vec<f32> = samples.iter().map(|&x| x as f32).collect();
        TapAnalyzer::new(AnalysisSettings::default(), FS).analyze_record(&record, 0)
    }

    #[test]
    fn three_bin_pole_is_exact_without_noise() {
        let truth = SynthMode::new(312.3, 45.0, 0.5);
        let x = damped_modes(FS, 6000, &[truth], 0.0, &mut NoiseGenerator::new(1));
        let pole = three_bin_pole(&x, x.len(), 2.0 * PI * 312.3 / FS, None).expect("pole");
        assert!(
            (pole.frequency_hz(FS) - 312.3).abs() < 1e-6,
            "{}",
            pole.frequency_hz(FS)
        );
        assert!((pole.decay_per_s(FS) - truth.decay_per_s()).abs() < 1e-6);
        assert!((pole.amplitude() - 0.5).abs() < 1e-6);
    }

    #[test]
    fn finds_isolated_mode() {
        let truth = SynthMode::new(345.6, 60.0, 0.3);
        let x = damped_modes(FS, 48_000, &[truth], 1e-4, &mut NoiseGenerator::new(2));
        let found = analyze(&x);
        assert_eq!(found.modes.len(), 1, "{:?}", found.modes);
        let m = &found.modes[0];
        assert!((m.frequency_hz - 345.6).abs() < 0.01, "{m:?}");
        assert!((m.q / 60.0 - 1.0).abs() < 0.01, "{m:?}");
    }

    #[test]
    fn separates_overlapping_modes() {
        let truth = [
            SynthMode {
                phase_rad: 0.3,
                ..SynthMode::new(280.0, 18.0, 0.2)
            },
            SynthMode {
                phase_rad: 1.1,
                ..SynthMode::new(350.0, 30.0, 0.3)
            },
            SynthMode {
                phase_rad: 2.0,
                ..SynthMode::new(420.0, 25.0, 0.15)
            },
            SynthMode {
                phase_rad: 4.0,
                ..SynthMode::new(490.0, 40.0, 0.25)
            },
        ];
        let x = damped_modes(FS, 48_000, &truth, 1e-4, &mut NoiseGenerator::new(3));
        let found = analyze(&x);
        assert_eq!(found.modes.len(), 4, "{:?}", found.modes);
        for (m, t) in found.modes.iter().zip(&truth) {
            assert!(
                (m.frequency_hz - t.frequency_hz).abs() < 0.1,
                "{m:?} vs {t:?}"
            );
            assert!((m.q / t.q - 1.0).abs() < 0.1, "{m:?} vs {t:?}");
        }
    }

    /// The segmented Goertzel passes give the DFT by its definition,
    /// Σ x[n]·e^{−j2πmn/L} summed directly, with and without a mode's
    /// model added, for lengths that do and do not divide into segments.
    #[test]
    fn dft_bins_match_the_direct_sum() {
        let own = Pole {
            z: Complex64::from_polar(0.9995, 0.07),
            c: Complex64::new(0.2, -0.1),
        };
        let mut noise = NoiseGenerator::new(9);
        for len in [3usize, 4, 7, 64, 1001, 4099] {
            let x: Vec<f64> = (0..len).map(|_| noise.gaussian()).collect();
            let bins = [4, 5, 6].map(|m: i64| m.min(len as i64 / 2));
            for model in [None, Some(&own)] {
                let fast = dft_bins(&x, bins, model);
                for (b, &m) in bins.iter().enumerate() {
                    let direct: Complex64 = (0..len)
                        .map(|n| {
                            let value =
                                x[n] + model.map_or(0.0, |p| 2.0 * (p.c * p.z.powu(n as u32)).re);
                            value
                                * Complex64::from_polar(
                                    1.0,
                                    -2.0 * PI * (m * n as i64) as f64 / len as f64,
                                )
                        })
                        .sum();
                    let error = (fast[b] - direct).norm();
                    assert!(
                        error < 1e-9 * (1.0 + direct.norm()),
                        "len {len}, bin {m}, model {}: {} vs {}",
                        model.is_some(),
                        fast[b],
                        direct
                    );
                }
            }
        }
    }

    /// The recurrence against 2·Re(c·zⁿ) summed directly, at angles where a
    /// second-order recurrence is worst conditioned (w = z⁸ near 1 and −1),
    /// on lengths that are not multiples of the lanes or blocks. Near a
    /// double root rounding grows as k²·ε/2 over a block of k = 256 steps,
    /// about 4e-12 of the amplitude (common practice, no source), far below
    /// the 1e-7 the fit needs.
    #[test]
    fn added_poles_match_the_direct_sum() {
        let angles = [
            0.0,
            1e-4,
            0.07,
            PI / 8.0,
            PI / 4.0 + 1e-6,
            PI / 2.0,
            PI - 1e-3,
        ];
        for (i, &angle) in angles.iter().enumerate() {
            let pole = Pole {
                z: Complex64::from_polar(0.99995, angle),
                c: Complex64::from_polar(0.3, 0.4 + i as f64),
            };
            let len = 10_007 + i;
            let mut through_add_pole = vec![0.0; len];
            add_pole(&mut through_add_pole, &pole, 1.0, 0.0);
            // Both lane counts, whichever this processor dispatches to.
            let mut eight_lanes = vec![0.0; len];
            damped_cosine_lanes::<8>(&mut eight_lanes, pole.c * 2.0, pole.z);
            let mut sixteen_lanes = vec![0.0; len];
            damped_cosine_lanes::<16>(&mut sixteen_lanes, pole.c * 2.0, pole.z);
            for (n, x) in through_add_pole.iter().enumerate() {
                let direct = 2.0 * (pole.c * pole.z.powu(n as u32)).re;
                for (path, x) in [
                    ("add_pole", x),
                    ("8 lanes", &eight_lanes[n]),
                    ("16 lanes", &sixteen_lanes[n]),
                ] {
                    assert!(
                        (x - direct).abs() < 1e-10,
                        "{path}, angle {angle}, sample {n}: {x} vs {direct}"
                    );
                }
            }
        }
    }

    /// Replacing a mode by a slightly moved one leaves their difference
    /// wherever it is above the limit, and stops only after it has fallen.
    #[test]
    fn replaced_pole_matches_the_direct_difference() {
        let old = Pole {
            z: Complex64::from_polar(0.9995, 0.07),
            c: Complex64::new(0.2, -0.1),
        };
        let new = Pole {
            z: Complex64::from_polar(0.99949, 0.07001),
            c: Complex64::new(0.201, -0.099),
        };
        let mut fast = vec![0.0; 48_000];
        replace_pole(&mut fast, &old, &new, 0.0);
        let limit = 2.0 * old.c.norm() * 1e-7;
        for (n, &x) in fast.iter().enumerate() {
            let direct = 2.0 * (old.c * old.z.powu(n as u32) - new.c * new.z.powu(n as u32)).re;
            assert!((x - direct).abs() < limit, "sample {n}: {x} vs {direct}");
        }
        assert!(
            fast[40_000..].iter().all(|&x| x == 0.0),
            "stops once settled"
        );
    }

    #[test]
    fn silence_has_no_modes() {
        assert!(analyze(&vec![0.0; 48_000]).modes.is_empty());
        assert!(analyze(&vec![0.0; 100]).modes.is_empty());
    }
}
