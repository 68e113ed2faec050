//! Per-tap modal estimation: the frequency, Q and level of every mode in
//! one tap, by one model: the decay is a sum of exponentially damped
//! sinusoids plus room noise.
//!
//! 1. The decay (from just after the strike) is transformed once, with
//!    shorter prefixes of it (`bands`): N log N, the only step that grows
//!    with the record.
//! 2. Candidate peaks of the decay's unwindowed spectrum (`candidates`;
//!    for a damped sinusoid exactly a Lorentzian, and free of the quiet
//!    before the strike and of the strike's click), strongest first and
//!    bounded in number (those within `candidates::CANDIDATE_RANGE_DB` of
//!    the strongest, above the room noise), each centre a band. The band's span is
//!    matched to the peak's own width: [`SPAN_TIME_CONSTANTS`] time
//!    constants, so a fast-decaying wood mode gets a wide band over a short
//!    span and a ringing bar a narrow band over a long one, always the same
//!    number of decimated samples.
//! 3. In each band (`bands`: FFT-domain filtering and decimation), from
//!    the band's own envelope maximum on (where the free-decay model
//!    holds), the matrix pencil (`subspace`; Hua & Sarkar 1990) with its model order
//!    from the singular values against the band's measured noise, then
//!    backward elimination by the information criterion with the pencil's
//!    poles held fixed (linear least squares for the amplitudes) and one
//!    joint variable-projection refit of the poles that stay (`varpro`;
//!    Schwarz 1978, Golub & Pereyra 2003). Decay comes from the pole's magnitude,
//!    α = −ln|z|·fs.
//! 4. A band keeps only the poles it owns (those in its central quarter)
//!    that live longer than [`MIN_TAU_DECIMATED`] of its samples;
//!    where bands overlap, each frequency is judged by the band whose
//!    centre lies nearest it (where its taper is flat and its model
//!    closest to the data): a later band adds no pole nearer an earlier
//!    band's centre than its own, and a pole found twice is kept from the
//!    band where it lies nearer the centre. A candidate already explained
//!    by a kept pole gets no band of its own, nor does one in the owned
//!    part of a band already fitted at a like span; the band is refitted
//!    once if the decay it finds asks for a span more than twice longer or
//!    shorter. A tap uses at most `max_modes` + [`EXTRA_BANDS`] bands: its
//!    cost is bounded whatever the signal.
//! 5. A pole that makes no candidate peak of its own is listed only if its
//!    peak stands within [`RESOLVED_WITHIN_DB`] of the strongest pole of
//!    its band (a shoulder, the second of a close pair): weaker ones hidden
//!    under a stronger mode cannot be told from the band model's own error
//!    (early reflections, a decay that bends, reverberation).
//! 6. Every candidate peak within [`GUARANTEED_WITHIN_DB`] of the strongest
//!    is explained by a listed mode: if the band models missed it (pulled
//!    off it by what no sum of exponentials models: the strike's own
//!    sound, a decay that bends), the peak itself is read as peak picking
//!    reads it (frequency at the peak, decay from its half-power width,
//!    amplitude from its height) and replaces the pole that was pulled
//!    off it. No band is fitted for it.

use std::f64::consts::PI;

use rustfft::num_complex::Complex64;
use serde::{Deserialize, Serialize};

use super::bands::{BandRequest, BandSignal, DecaySpectra};
use super::candidates::{find_candidates, Candidate};
use super::model_order::{prune, BandNoise};
use super::noise::NoiseProfile;
pub use super::settings::AnalysisSettings;
use super::spectrum::{DisplaySpectrum, SpectrumMaker};
use super::subspace::{pencil_poles, MIN_PENCIL_SAMPLES};
use super::tap_finder::FoundTap;
use super::varpro::fit_amplitudes;

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
    /// decay's spectrum (the candidate peak its band was centred on), dB.
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

/// Bands span this many time constants of the peak's mode: past four the
/// Fisher information on frequency (weighted by t²·e^{−2αt}) gains under
/// 2 % (Kay 1993, ch. 3, for one damped sinusoid), and a longer span
/// mostly adds what follows the mode: reverberation and noise.
pub const SPAN_TIME_CONSTANTS: f64 = 4.0;
/// Candidate peaks this close to the strongest (in the decay's spectrum)
/// are always explained by a listed mode. The guarantee a maker is given
/// is 20 dB in the strike's own spectrum; the decay's spectrum starts
/// after the strike's loudest instant, where a mode that dies in a few
/// milliseconds has lost up to a few dB against one that rings (2.5 dB
/// for a xylophone partial of the corpus), hence 4 dB of margin
/// (tapwright's choice, no source).
pub const GUARANTEED_WITHIN_DB: f64 = 24.0;
/// A pole that makes no candidate peak of its own must stand within this
/// of the strongest pole of its band (peak heights, dB); see step 5. A
/// shoulder between two body modes (Q 22 between Q 30 and 40, 65 Hz
/// apart) stands 10.5 dB down and the second of a close pair a few dB;
/// what real bars and wood leave beside a mode (a decay that bends, the
/// resonator's share) mostly lies further down (tapwright's rule, no
/// source: set from the synthetic tests and the real corpus).
pub const RESOLVED_WITHIN_DB: f64 = 14.0;
/// [`RESOLVED_WITHIN_DB`] as an amplitude ratio.
const RESOLVED_WITHIN: f64 = 0.2;
/// A pole whose time constant is shorter than this many of its band's
/// decimated samples is not listed from that band: it lives in the first
/// few samples only, where it soaks up what is not a free decay (the
/// strike's contact, early reflections arriving while the span starts).
/// The band was matched to a mode 16 samples long; a mode four times
/// faster than that would make its own, wider peak and band.
const MIN_TAU_DECIMATED: f64 = 4.0;
/// Bands fitted per tap (every band: a candidate's or its refit at
/// another span), beyond one per listed mode
/// (`max_modes`): the candidates are taken strongest first, and these few
/// spare bands cover candidates whose band finds nothing to list (a hump
/// of the strike's own sound, a skirt). This caps the cost of a tap
/// whatever the signal (tapwright's choice, no source).
const EXTRA_BANDS: usize = 4;
/// A band is refitted when the decay it finds asks for a span more than
/// this factor longer or shorter than the one it had.
const SPAN_MISMATCH: f64 = 2.0;
/// A peak read as a mode (step 6) is at least this many of the decay's
/// resolutions (fs/L) wide at half its own power: twice a steady tone's
/// width (tapwright's choice, no source).
const RESOLVED_DECAY_WIDTHS: f64 = 2.0;
/// Records shorter than this after the strike give no modes.
const MIN_DECAY_SAMPLES: usize = 256;
/// A mode must fall by at least this much over the analysed decay: slower
/// cannot be told from a steady tone (hum, a fan, a held note) and its Q
/// would be a guess (common practice, no source).
const MIN_DECAY_OVER_RECORD_DB: f64 = 3.0;

/// A pole found in a band: x[n] = 2·Re(c·zⁿ) from the decay's start.
#[derive(Clone, Copy, Debug)]
struct Found {
    z: Complex64,
    c: Complex64,
    /// Distance from its band's centre over the band's owned half-width.
    centrality: f64,
    /// Full-rate span of the band it came from.
    span: usize,
    /// Peak height of the strongest pole of that band.
    band_peak: f64,
    prominence_db: f64,
}

impl Found {
    fn frequency_hz(&self, fs: f64) -> f64 {
        self.z.arg() * fs / (2.0 * PI)
    }

    /// Decay per sample, −ln|z|.
    fn decay(&self) -> f64 {
        -self.z.norm().ln()
    }

    /// Height of its peak in an unwindowed spectrum of `len` samples, in
    /// amplitude per sample: |c|/α, or |c|·len for a mode slower than that.
    fn peak_height(&self, len: usize) -> f64 {
        self.c.norm() / self.decay().max(1.0 / len.max(1) as f64)
    }
}

/// Measures taps. Keeps its FFT plans and buffers between taps.
#[derive(Debug)]
pub struct TapAnalyzer {
    settings: AnalysisSettings,
    sample_rate_hz: f64,
    display_maker: Option<SpectrumMaker>,
    spectra: DecaySpectra,
    noise: NoiseProfile,
    decay: Vec<f32>,
    /// The bands fitted to the current tap.
    covers: Vec<BandCover>,
    /// Bands the current tap may still use (every band counts: a
    /// candidate's or its refit at another span).
    bands_left: usize,
}

/// Where a fitted band lies: what it owns and the span it had.
#[derive(Clone, Copy, Debug)]
struct BandCover {
    centre_hz: f64,
    owned_half_width_hz: f64,
    span: usize,
}

impl TapAnalyzer {
    pub fn new(settings: AnalysisSettings, sample_rate_hz: f64) -> Self {
        Self {
            settings,
            sample_rate_hz,
            display_maker: None,
            spectra: DecaySpectra::new(sample_rate_hz),
            noise: NoiseProfile::default(),
            decay: Vec::new(),
            covers: Vec::new(),
            bands_left: 0,
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
        let start = decay_start(record, onset_index, fs).min(record.len());
        let offset = pre_trigger_mean(record, onset_index) as f32;
        self.decay.clear();
        self.decay
            .extend(record[start..].iter().map(|&x| x - offset));
        let mut modes = if self.decay.len() < MIN_DECAY_SAMPLES {
            Vec::new()
        } else {
            self.measure_noise(record, onset_index, offset);
            self.spectra.transform(&self.decay);
            // White noise of variance σ² reads 4σ²/L in the decay's
            // spectrum of L samples (its scale: a sinusoid of amplitude A
            // reads A²).
            let per_bin = 4.0 / self.decay.len() as f64;
            let noise = &self.noise;
            let noise_power = |hz: f64| (per_bin * noise.density_at(hz)) as f32;
            let candidates =
                find_candidates(&self.spectra.decay_power(), &self.settings, noise_power);
            let found = self.estimate(&candidates);
            self.to_modes(found)
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
        if self
            .display_maker
            .as_ref()
            .is_none_or(|m| m.fft_len() != fft_len)
        {
            self.display_maker = Some(SpectrumMaker::new(fft_len));
        }
        self.display_maker
            .get_or_insert_with(|| SpectrumMaker::new(fft_len))
            .spectrum(record, onset_index, self.sample_rate_hz)
    }

    /// The noise: the quiet part before the strike, or, for a bare decay,
    /// the last tenth of the record.
    fn measure_noise(&mut self, record: &[f32], onset_index: usize, offset: f32) {
        let quiet: Vec<f32> = if onset_index >= 32 {
            record[..onset_index.min(record.len())]
                .iter()
                .map(|&x| x - offset)
                .collect()
        } else {
            self.decay[self.decay.len() - self.decay.len() / 10..].to_vec()
        };
        self.noise.measure(&quiet, self.sample_rate_hz);
    }

    /// Steps 2 to 5 of the method.
    fn estimate(&mut self, candidates: &[Candidate]) -> Vec<Found> {
        let fs = self.sample_rate_hz;
        let len = self.decay.len();
        let mut kept: Vec<Found> = Vec::new();
        self.covers.clear();
        self.bands_left = self.settings.max_modes + EXTRA_BANDS;
        for candidate in candidates {
            if kept.iter().any(|f| explains(f, candidate, fs)) {
                continue;
            }
            if self.bands_left == 0 {
                break;
            }
            if self.covered(candidate) {
                continue;
            }
            for found in self.fit_candidate(candidate) {
                merge(&mut kept, found);
            }
        }
        kept.retain(|f| {
            candidates.iter().any(|c| explains(f, c, fs))
                || f.peak_height(len) >= f.band_peak * RESOLVED_WITHIN
        });
        let strongest = candidates.iter().map(|c| c.power).fold(0.0f32, f32::max);
        let guaranteed = strongest * 10f32.powf(-(GUARANTEED_WITHIN_DB / 10.0) as f32);
        for candidate in candidates.iter().filter(|c| c.power >= guaranteed) {
            let listed = kept
                .iter()
                .any(|f| explains(f, candidate, fs) && self.is_mode(&self.to_mode(f)));
            if !listed {
                if let Some(found) = self.peak_reading(candidate) {
                    // A pole whose half-power band holds the peak it did
                    // not explain is the band model's try at that peak,
                    // pulled off it: the reading replaces it.
                    kept.retain(|f| !holds(f, candidate, fs));
                    merge(&mut kept, found);
                }
            }
        }
        kept
    }

    /// A band already fitted serves a candidate that lies in its owned
    /// part and whose own width asks for a span within [`SPAN_MISMATCH`]
    /// of the band's: its poles there are already in the list (a peak
    /// they leave unexplained gets the peak reading of step 6).
    fn covered(&self, candidate: &Candidate) -> bool {
        let fs = self.sample_rate_hz;
        let width_hz = candidate.half_power_width_hz.max(2.0 * candidate.bin_hz);
        let wanted = self.span_for(PI * width_hz / fs) as f64;
        self.covers.iter().any(|cover| {
            let ratio = wanted / cover.span as f64;
            (candidate.frequency_hz - cover.centre_hz).abs() <= cover.owned_half_width_hz
                && (1.0 / SPAN_MISMATCH..=SPAN_MISMATCH).contains(&ratio)
        })
    }

    /// The band of one candidate, refitted once if its main pole's decay
    /// asks for a span far from the one it had.
    fn fit_candidate(&mut self, candidate: &Candidate) -> Vec<Found> {
        let fs = self.sample_rate_hz;
        let width_hz = candidate.half_power_width_hz.max(2.0 * candidate.bin_hz);
        let span = self.span_for(PI * width_hz / fs);
        let mut found = self.fit_band(candidate, span).unwrap_or_default();
        let main = found
            .iter()
            .filter(|f| explains(f, candidate, fs))
            .max_by(|a, b| a.peak_height(span).total_cmp(&b.peak_height(span)));
        if let Some(main) = main {
            let wanted = self.span_for(main.decay());
            let ratio = wanted as f64 / span as f64;
            if !(1.0 / SPAN_MISMATCH..=SPAN_MISMATCH).contains(&ratio) {
                if let Some(again) = self.fit_band(candidate, wanted) {
                    found = again;
                }
            }
        }
        found
    }

    /// Span for a decay per sample, at most the whole decay.
    fn span_for(&self, decay_per_sample: f64) -> usize {
        let span = SPAN_TIME_CONSTANTS / decay_per_sample.max(1e-9);
        (span.min(self.decay.len() as f64) as usize).max(1)
    }

    /// The band around a centre, while the tap's budget of bands lasts.
    fn band(&mut self, centre_hz: f64, span: usize) -> Option<BandSignal> {
        self.bands_left = self.bands_left.checked_sub(1)?;
        let noise = &self.noise;
        self.spectra.band(
            BandRequest {
                centre_hz,
                span_samples: span,
            },
            |low, high| noise.density(low, high),
        )
    }

    /// The poles a band owns, with their full-rate amplitudes.
    fn fit_band(&mut self, candidate: &Candidate, span: usize) -> Option<Vec<Found>> {
        let fs = self.sample_rate_hz;
        let band = self.band(candidate.frequency_hz, span)?;
        self.covers.push(BandCover {
            centre_hz: candidate.frequency_hz,
            owned_half_width_hz: band.owned_half_width_rad * fs / (2.0 * PI),
            span,
        });
        // The model holds from the band's own envelope maximum on: before
        // it, the mode is still being fed (a soft mallet, a bar's
        // resonator, early reflections adding copies of it), and fitting
        // that rise would take spare poles.
        let start = envelope_peak(&band.samples);
        let samples = &band.samples[start..];
        let initial = pencil_poles(samples, band.noise_var);
        if initial.is_empty() {
            return Some(Vec::new());
        }
        // Amplitudes for the pencil's poles; order and the final poles
        // from `prune` (elimination with the poles fixed, then one refit).
        let fit = fit_amplitudes(samples, &initial)?;
        let noise = BandNoise {
            variance: band.noise_var,
            taper_fill: band.taper_fill,
            observations: self.decay.len(),
        };
        let fit = prune(samples, fit, &noise);
        let len = self.decay.len();
        let owned: Vec<Found> = fit
            .poles
            .iter()
            .zip(&fit.amplitudes)
            .filter(|(w, _)| w.norm() < 1.0 && -w.norm().ln() < 1.0 / MIN_TAU_DECIMATED)
            .filter_map(|(&w, &b)| {
                let z = band.to_full_rate(w);
                let offset = (z.arg() - band.centre_rad).abs();
                (offset <= band.owned_half_width_rad).then(|| Found {
                    z,
                    // b is the amplitude at samples[start]; back to the
                    // band's first sample, then to the full rate.
                    c: b * w.powi(-(start as i32)) / band.gain(z),
                    centrality: offset / band.owned_half_width_rad,
                    span: band.span_samples(),
                    band_peak: 0.0,
                    prominence_db: candidate.prominence_db,
                })
            })
            .collect();
        // Where an earlier band lies nearer, that band's model holds: it
        // saw the region closer to its centre, where the taper is flat.
        let earlier = &self.covers[..self.covers.len() - 1];
        let owned: Vec<Found> = owned
            .into_iter()
            .filter(|f| !nearer_elsewhere(earlier, f.frequency_hz(fs), candidate.frequency_hz))
            .collect();

        let owned = merge_unresolved(owned, len);
        let band_peak = owned.iter().map(|f| f.peak_height(len)).fold(0.0, f64::max);
        Some(
            owned
                .into_iter()
                .map(|f| Found { band_peak, ..f })
                .collect(),
        )
    }

    /// The stand-in for a peak that the band models left unexplained: the
    /// peak itself, read as peak picking reads it (D. J. Ewins, Modal
    /// Testing, 2nd ed., 2000, §4.3): the mode at the interpolated peak,
    /// its decay from the half-power width (for the unwindowed spectrum
    /// of a damped sinusoid, a Lorentzian, the full width at half power
    /// is α/π Hz), its amplitude from the peak's height (|c|/α per
    /// sample). Where a band model is pulled off a peak by what no sum of
    /// exponentials models (the strike's own sound, a decay that bends),
    /// the spectrum still shows where the peak is.
    fn peak_reading(&self, candidate: &Candidate) -> Option<Found> {
        let fs = self.sample_rate_hz;
        let len = self.decay.len() as f64;
        // A steady tone's peak in the unwindowed spectrum of L samples is
        // 0.89·fs/L wide at half power: a peak not clearly wider than that
        // does not show a decay (a hum, a held note), and is read as no mode.
        let width_hz = candidate.own_half_power_width_hz;
        if width_hz < RESOLVED_DECAY_WIDTHS * fs / len {
            return None;
        }
        let decay = PI * width_hz / fs;
        let z = Complex64::from_polar((-decay).exp(), 2.0 * PI * candidate.frequency_hz / fs);
        // The decay's spectrum reads (2/L)²·|X|², and |X| = |c|/α at the peak.
        let amplitude = f64::from(candidate.own_power).sqrt() * decay * len / 2.0;
        Some(Found {
            z,
            c: Complex64::new(amplitude, 0.0),
            centrality: 0.0,
            span: self.span_for(decay),
            band_peak: 0.0,
            prominence_db: candidate.prominence_db,
        })
    }

    fn to_mode(&self, found: &Found) -> Mode {
        let fs = self.sample_rate_hz;
        let frequency_hz = found.frequency_hz(fs);
        let decay_per_s = found.decay() * fs;
        let amplitude = 2.0 * found.c.norm();
        Mode {
            frequency_hz,
            q: PI * frequency_hz / decay_per_s,
            decay_per_s,
            amplitude,
            level_db: 20.0 * amplitude.max(1e-12).log10(),
            prominence_db: found.prominence_db,
        }
    }

    /// In the band of interest, Q in the allowed range, and decaying by at
    /// least [`MIN_DECAY_OVER_RECORD_DB`] over the analysed decay.
    fn is_mode(&self, mode: &Mode) -> bool {
        let s = &self.settings;
        let duration_s = self.decay.len() as f64 / self.sample_rate_hz;
        let falls = mode.decay_per_s * duration_s
            >= MIN_DECAY_OVER_RECORD_DB / (20.0 * std::f64::consts::LOG10_E);
        mode.frequency_hz >= s.band_low_hz
            && mode.frequency_hz <= s.band_high_hz
            && mode.q.is_finite()
            && mode.q >= s.min_q
            && mode.q <= s.max_q
            && falls
    }

    /// The listed modes: the strongest peaks (height in the spectrum) that
    /// pass [`TapAnalyzer::is_mode`], at most `max_modes`.
    fn to_modes(&self, mut found: Vec<Found>) -> Vec<Mode> {
        let len = self.decay.len();
        found.sort_by(|a, b| b.peak_height(len).total_cmp(&a.peak_height(len)));
        found
            .iter()
            .map(|f| self.to_mode(f))
            .filter(|m| self.is_mode(m))
            .take(self.settings.max_modes)
            .collect()
    }
}

/// Where the free decay of a band starts: its largest sample within the
/// first [`RISE_SEARCH_FRACTION`] of the band (a mode fed for 20–50 ms by
/// a soft mallet or a resonator; the rest of the span is left to fit).
fn envelope_peak(samples: &[Complex64]) -> usize {
    let search = (samples.len() / RISE_SEARCH_FRACTION)
        .min(samples.len().saturating_sub(MIN_FITTED_SAMPLES))
        .max(1);
    samples[..search.min(samples.len())]
        .iter()
        .enumerate()
        .fold((0, 0.0), |best, (i, v)| {
            if v.norm_sqr() > best.1 {
                (i, v.norm_sqr())
            } else {
                best
            }
        })
        .0
}

/// See [`envelope_peak`]: a third of the band at most is searched, so two
/// thirds, and at least [`MIN_FITTED_SAMPLES`], are always fitted
/// (tapwright's choice, no source).
const RISE_SEARCH_FRACTION: usize = 3;
/// What the subspace stage needs at its largest order.
const MIN_FITTED_SAMPLES: usize = MIN_PENCIL_SAMPLES;

/// A pole explains a candidate peak when it lies within the peak's half
/// width (or one and a half bins) of it.
fn explains(found: &Found, candidate: &Candidate, fs: f64) -> bool {
    let reach_hz = (0.5 * candidate.half_power_width_hz).max(1.5 * candidate.bin_hz);
    (found.frequency_hz(fs) - candidate.frequency_hz).abs() <= reach_hz
}

/// A pole's half-power band (±α/2π Hz) holds the candidate's peak.
fn holds(found: &Found, candidate: &Candidate, fs: f64) -> bool {
    let half_width_hz = found.decay() * fs / (2.0 * PI);
    (found.frequency_hz(fs) - candidate.frequency_hz).abs() <= half_width_hz
}

/// Two poles of one band closer than both one's half-power bandwidths
/// (|Δθ| < α of the narrower, per sample) make one peak whose decay bends:
/// the band model spent two poles on it, with large amplitudes that partly
/// cancel. They are one mode, at the pole with the higher peak, with the
/// sum of their amplitudes (what the two give at the start of the decay).
fn merge_unresolved(mut poles: Vec<Found>, len: usize) -> Vec<Found> {
    poles.sort_by(|a, b| b.peak_height(len).total_cmp(&a.peak_height(len)));
    let mut merged: Vec<Found> = Vec::with_capacity(poles.len());
    for pole in poles {
        let twin = merged
            .iter_mut()
            .find(|m| (m.z.arg() - pole.z.arg()).abs() < m.decay().min(pole.decay()));
        match twin {
            Some(stronger) => stronger.c += pole.c,
            None => merged.push(pole),
        }
    }
    merged
}

/// True when a band in `covers` owns `frequency_hz` and lies nearer to it
/// than the centre `centre_hz` of the band asking.
fn nearer_elsewhere(covers: &[BandCover], frequency_hz: f64, centre_hz: f64) -> bool {
    let distance = (frequency_hz - centre_hz).abs();
    covers.iter().any(|cover| {
        let other = (frequency_hz - cover.centre_hz).abs();
        other <= cover.owned_half_width_hz && other < distance
    })
}

/// Adds a pole to the kept ones; a pole already there (closer than both
/// one's half-power half-width, or than the finer band's resolution) is
/// kept from the band where it lies nearer the centre.
fn merge(kept: &mut Vec<Found>, new: Found) {
    let same = kept.iter().position(|k| {
        let reach = k
            .decay()
            .min(new.decay())
            .max(PI / k.span.min(new.span).max(1) as f64);
        (k.z.arg() - new.z.arg()).abs() < reach
    });
    match same {
        Some(i) if new.centrality < kept[i].centrality => kept[i] = new,
        Some(_) => {}
        None => kept.push(new),
    }
}

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

/// Mean of the quiet part before the strike: the DC offset of the input.
fn pre_trigger_mean(record: &[f32], onset_index: usize) -> f64 {
    let pre = &record[..onset_index.min(record.len())];
    if pre.len() < 32 {
        return 0.0;
    }
    pre.iter().map(|&x| f64::from(x)).sum::<f64>() / pre.len() as f64
}

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
    fn finds_isolated_mode() {
        let truth = SynthMode::new(345.6, 60.0, 0.3);
        let x = damped_modes(FS, 48_000, &[truth], 1e-4, &mut NoiseGenerator::new(2));
        let found = analyze(&x);
        assert_eq!(found.modes.len(), 1, "{:?}", found.modes);
        let m = &found.modes[0];
        assert!((m.frequency_hz - 345.6).abs() < 0.01, "{m:?}");
        assert!((m.q / 60.0 - 1.0).abs() < 0.01, "{m:?}");
        assert!((m.amplitude / 0.3 - 1.0).abs() < 0.01, "{m:?}");
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

    #[test]
    fn silence_has_no_modes() {
        assert!(analyze(&vec![0.0; 48_000]).modes.is_empty());
        assert!(analyze(&vec![0.0; 100]).modes.is_empty());
    }
}
