//! The display spectrum of a tap: the record from just before the strike to
//! its end, faded out with the falling half of a Hann window (the quiet
//! pre-trigger part needs no fade-in), zero-padded, power per bin. Used for
//! the plots, for averaging taps into a pass and for finding candidate
//! peaks; never for the final frequency and Q.

use std::sync::Arc;

use realfft::{RealFftPlanner, RealToComplex};
use rustfft::num_complex::Complex32;
use serde::{Deserialize, Serialize};

/// Power spectrum on a linear frequency grid from 0 Hz, `bin_hz` apart.
/// Power is scaled so that a steady sinusoid of amplitude A over the whole
/// record would read A² (0 dB for full scale).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DisplaySpectrum {
    pub bin_hz: f64,
    pub power: Vec<f32>,
}

impl DisplaySpectrum {
    /// Frequency of bin `index`.
    pub fn frequency_hz(&self, index: usize) -> f64 {
        index as f64 * self.bin_hz
    }

    /// Level of bin `index` in dB.
    pub fn level_db(&self, index: usize) -> f64 {
        power_to_db(self.power.get(index).copied().unwrap_or(0.0))
    }

    /// Level at a frequency (nearest bin) in dB.
    pub fn level_db_at_hz(&self, frequency_hz: f64) -> f64 {
        self.level_db(self.bin_of_hz(frequency_hz))
    }

    /// Nearest bin to a frequency, clamped to the spectrum.
    pub fn bin_of_hz(&self, frequency_hz: f64) -> usize {
        let bin = (frequency_hz / self.bin_hz).round();
        if bin.is_finite() && bin > 0.0 {
            (bin as usize).min(self.power.len().saturating_sub(1))
        } else {
            0
        }
    }

    /// Power average of several spectra of the same grid; spectra on another
    /// grid are skipped. None when there is nothing to average.
    pub fn power_average<'a>(
        spectra: impl IntoIterator<Item = &'a DisplaySpectrum>,
    ) -> Option<Self> {
        let mut sum: Option<(f64, Vec<f64>)> = None;
        let mut count = 0usize;
        for spectrum in spectra {
            let (bin_hz, acc) =
                sum.get_or_insert_with(|| (spectrum.bin_hz, vec![0.0; spectrum.power.len()]));
            if acc.len() != spectrum.power.len()
                || (*bin_hz - spectrum.bin_hz).abs() > 1e-9 * *bin_hz
            {
                continue;
            }
            for (a, &p) in acc.iter_mut().zip(&spectrum.power) {
                *a += f64::from(p);
            }
            count += 1;
        }
        let (bin_hz, acc) = sum?;
        (count > 0).then(|| Self {
            bin_hz,
            power: acc.into_iter().map(|p| (p / count as f64) as f32).collect(),
        })
    }

    /// About `points` log-spaced points between `low_hz` and `high_hz`, each
    /// the loudest bin of its stretch (so narrow peaks survive), as
    /// (frequency Hz, level dB). Used for plots and for storing a pass.
    pub fn log_spaced_db(&self, low_hz: f64, high_hz: f64, points: usize) -> Vec<(f64, f64)> {
        let last = self.power.len().saturating_sub(1);
        let low_bin = self.bin_of_hz(low_hz).max(1);
        let high_bin = self.bin_of_hz(high_hz).min(last);
        if points < 2 || high_bin <= low_bin {
            return Vec::new();
        }
        let ratio = (high_bin as f64 / low_bin as f64).powf(1.0 / (points - 1) as f64);
        let mut out = Vec::with_capacity(points);
        let mut start = low_bin;
        let mut edge = low_bin as f64;
        while start <= high_bin {
            edge *= ratio;
            let end = (edge.round() as usize).clamp(start, high_bin);
            let (best, power) =
                (start..=end)
                    .map(|i| (i, self.power[i]))
                    .fold(
                        (start, f32::MIN),
                        |acc, x| if x.1 > acc.1 { x } else { acc },
                    );
            out.push((self.frequency_hz(best), power_to_db(power)));
            start = end + 1;
        }
        out
    }
}

/// Weight `n` of a Hann window of `len` samples, sampled at the centres
/// of the samples ((n + ½)/len of the way along), so it is symmetric and
/// never exactly zero at the ends.
pub(super) fn hann_weight(n: usize, len: usize) -> f64 {
    let x = (n as f64 + 0.5) / len.max(1) as f64;
    0.5 - 0.5 * (2.0 * std::f64::consts::PI * x).cos()
}

/// dB of a power, floored at -200 dB.
pub fn power_to_db(power: f32) -> f64 {
    10.0 * (f64::from(power).max(1e-20)).log10()
}

/// Makes display spectra of records of one length, reusing the FFT plan and
/// buffers.
pub struct SpectrumMaker {
    fft: Arc<dyn RealToComplex<f32>>,
    fft_len: usize,
    input: Vec<f32>,
    output: Vec<Complex32>,
    scratch: Vec<Complex32>,
    /// The fade-out of the last call, kept for records of the same shape,
    /// and its sum (the window's gain without the flat pre-trigger part).
    fade: Vec<f32>,
    fade_sum: f64,
}

impl std::fmt::Debug for SpectrumMaker {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SpectrumMaker")
            .field("fft_len", &self.fft_len)
            .finish()
    }
}

impl SpectrumMaker {
    /// FFT length for records of `record_len` samples: the next power of two
    /// (zero-padding by 1–2×), at least 1024.
    pub fn fft_len_for(record_len: usize) -> usize {
        record_len.max(1).next_power_of_two().max(1024)
    }

    pub fn new(fft_len: usize) -> Self {
        let fft = RealFftPlanner::<f32>::new().plan_fft_forward(fft_len);
        let input = fft.make_input_vec();
        let output = fft.make_output_vec();
        let scratch = fft.make_scratch_vec();
        Self {
            fft,
            fft_len,
            input,
            output,
            scratch,
            fade: Vec::new(),
            fade_sum: 0.0,
        }
    }

    pub fn fft_len(&self) -> usize {
        self.fft_len
    }

    /// Display spectrum of a record whose strike is at `onset_index`.
    /// Samples past the FFT length are ignored.
    pub fn spectrum(
        &mut self,
        record: &[f32],
        onset_index: usize,
        sample_rate_hz: f64,
    ) -> DisplaySpectrum {
        let used = record.len().min(self.fft_len);
        let onset = onset_index.min(used);
        let fade_len = used - onset;
        if self.fade.len() != fade_len {
            self.fade = (0..fade_len)
                .map(|i| {
                    (std::f32::consts::FRAC_PI_2 * i as f32 / fade_len as f32)
                        .cos()
                        .powi(2)
                })
                .collect();
            self.fade_sum = self.fade.iter().map(|&w| f64::from(w)).sum();
        }
        self.input.fill(0.0);
        self.input[..onset].copy_from_slice(&record[..onset]);
        for ((slot, &x), &w) in self.input[onset..used]
            .iter_mut()
            .zip(&record[onset..used])
            .zip(&self.fade)
        {
            *slot = x * w;
        }
        let window_sum = onset as f64 + self.fade_sum;
        let mut power = vec![0.0f32; self.output.len()];
        // The lengths match by construction, so the FFT cannot fail.
        if self
            .fft
            .process_with_scratch(&mut self.input, &mut self.output, &mut self.scratch)
            .is_ok()
        {
            let scale = (2.0 / window_sum.max(1e-12)).powi(2) as f32;
            for (p, c) in power.iter_mut().zip(&self.output) {
                *p = c.norm_sqr() * scale;
            }
        }
        DisplaySpectrum {
            bin_hz: sample_rate_hz / self.fft_len as f64,
            power,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steady_sine_reads_its_amplitude() {
        let fs = 48_000.0;
        let n = 48_000;
        let mut maker = SpectrumMaker::new(SpectrumMaker::fft_len_for(n));
        // A sine exactly on bin 1365 (about 1 kHz) at amplitude 0.5, onset
        // at 0: the fade halves the window's mean and the scale undoes it,
        // so expect 20·log10(0.5) ≈ −6.02 dB.
        let f = 1365.0 * fs / maker.fft_len() as f64;
        let record: Vec<f32> = (0..n)
            .map(|i| (0.5 * (2.0 * std::f64::consts::PI * f * i as f64 / fs).sin()) as f32)
            .collect();
        let spectrum = maker.spectrum(&record, 0, fs);
        let peak = spectrum.level_db(1365);
        assert!((peak - -6.02).abs() < 0.05, "peak {peak}");
        assert!(spectrum.level_db_at_hz(3000.0) < peak - 60.0);
    }

    #[test]
    fn average_and_log_points() {
        let a = DisplaySpectrum {
            bin_hz: 1.0,
            power: vec![1.0; 1000],
        };
        let b = DisplaySpectrum {
            bin_hz: 1.0,
            power: vec![3.0; 1000],
        };
        let avg = DisplaySpectrum::power_average([&a, &b]).expect("two spectra");
        assert!(avg.power.iter().all(|&p| (p - 2.0).abs() < 1e-6));
        let points = avg.log_spaced_db(10.0, 900.0, 50);
        assert!(points.len() >= 40 && points.len() <= 51, "{}", points.len());
        assert!(points.windows(2).all(|w| w[0].0 < w[1].0));
    }
}
