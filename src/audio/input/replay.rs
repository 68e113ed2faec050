//! A recording played back as if it were coming in from a microphone.

use super::feeder::SampleGenerator;
use crate::audio::error::AudioError;
use crate::wav_io::MonoRecording;

/// Plays a [`MonoRecording`] from the start, once or over and over.
#[derive(Clone, Debug)]
pub struct ReplayGenerator {
    recording: MonoRecording,
    position: usize,
    looped: bool,
}

impl ReplayGenerator {
    /// A generator for `recording`; fails if it holds no samples.
    pub fn new(recording: MonoRecording, looped: bool) -> Result<Self, AudioError> {
        if recording.samples.is_empty() {
            return Err(AudioError::EmptySource {
                what: "recording".to_owned(),
            });
        }
        crate::audio::settings::check_sample_rate(recording.sample_rate_hz)?;
        Ok(Self {
            recording,
            position: 0,
            looped,
        })
    }
}

impl SampleGenerator for ReplayGenerator {
    fn description(&self) -> String {
        format!(
            "recording ({:.1} s{})",
            self.recording.duration_s(),
            if self.looped { ", looped" } else { "" }
        )
    }

    fn sample_rate_hz(&self) -> u32 {
        self.recording.sample_rate_hz
    }

    fn generate(&mut self, out: &mut [f32]) -> usize {
        let samples = &self.recording.samples;
        let mut written = 0;
        while written < out.len() {
            if self.position >= samples.len() {
                if !self.looped {
                    break;
                }
                self.position = 0;
            }
            let take = (out.len() - written).min(samples.len() - self.position);
            out[written..written + take]
                .copy_from_slice(&samples[self.position..self.position + take]);
            written += take;
            self.position += take;
        }
        written
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn loops_and_ends() {
        let recording = MonoRecording {
            sample_rate_hz: 48_000,
            samples: vec![1.0, 2.0, 3.0],
        };
        let mut once = ReplayGenerator::new(recording.clone(), false).expect("ok");
        let mut out = [0.0; 5];
        assert_eq!(once.generate(&mut out), 3);
        assert_eq!(once.generate(&mut out), 0);
        let mut looped = ReplayGenerator::new(recording, true).expect("ok");
        assert_eq!(looped.generate(&mut out), 5);
        assert_eq!(out, [1.0, 2.0, 3.0, 1.0, 2.0]);
    }

    #[test]
    fn empty_recording_is_refused() {
        let recording = MonoRecording {
            sample_rate_hz: 48_000,
            samples: Vec::new(),
        };
        assert!(ReplayGenerator::new(recording, false).is_err());
    }
}
