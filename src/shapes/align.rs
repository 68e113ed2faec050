//! Each tap's own delay and each mode's reference phase.
//!
//! In a tap at point j struck `d` seconds after the onset the trigger saw,
//! mode k's amplitude at the onset is cₖ = φₖ(j)·Gₖ·e^{−sₖd}: the shape
//! value φₖ(j) is real, Gₖ = |Gₖ|e^{jθₖ} is the same for every tap. So
//! aₖ = cₖ·e^{sₖd}·e^{−jθₖ} is real for the right d and θ, positive or
//! negative. The delay and the phases are found together by making every
//! tap's aligned amplitudes as real as possible, jointly over the modes:
//! minimise Σₜ Σₖ wₖ·|cₜₖ|²·sin²(arg cₜₖ + ωₖdₜ − θₖ), with
//! wₖ = 1/Σₜ|cₜₖ|² so every mode counts alike. For fixed delays the best
//! θₖ is half the angle of Σₜ wₖ·(cₜₖe^{jωₖdₜ})² (the doubled angle: a
//! real amplitude of either sign squares to the same direction, which
//! settles the ±π ambiguity), and the cost is then
//! Σₖ wₖ(Σₜ|cₜₖ|² − |Σₜ(cₜₖe^{jωₖdₜ})²|), so the delays maximise
//! J = Σₖ wₖ|Σₜ(cₜₖe^{jωₖdₜ})²|. (The decay's factor e^{−αₖd} is left out
//! of the search and applied to the amplitudes at the end.) Taps are placed one by
//! one, strongest first, each at the delay (searched over a fine grid in
//! ±`search_s`, then refined) that best joins the sums so far; then every
//! tap is moved in turn against all the others until nothing moves —
//! alternating delays and reference phases. A shift of every delay by the
//! same amount only turns the phases, so the delays are centred on their
//! median.

use rustfft::num_complex::Complex64;

use super::poles::PassPole;

/// Delays and reference phases of a set of taps.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Alignment {
    /// Each tap's delay after its onset, s.
    pub delays_s: Vec<f64>,
    /// Each mode's reference phase θₖ, rad.
    pub phases_rad: Vec<f64>,
}

/// Sweeps of the one-tap-at-a-time improvement at most.
const MAX_SWEEPS: usize = 50;
/// A sweep that moves no delay by more than this ends the search, s.
const SETTLED_S: f64 = 1e-7;

/// Aligns the taps: `amplitudes[t][k]` is tap t's amplitude of mode k at
/// its onset.
pub(crate) fn align_taps(
    amplitudes: &[Vec<Complex64>],
    poles: &[PassPole],
    search_s: f64,
) -> Alignment {
    let modes = poles.len();
    let weights: Vec<f64> = (0..modes)
        .map(|k| {
            let total: f64 = amplitudes.iter().map(|a| a[k].norm_sqr()).sum();
            if total > 0.0 {
                1.0 / total
            } else {
                0.0
            }
        })
        .collect();
    let highest_hz = poles.iter().map(|p| p.frequency_hz).fold(1.0, f64::max);
    let step_s = (1.0 / (40.0 * highest_hz)).min(25e-6);
    let problem = Problem {
        amplitudes,
        poles,
        weights: &weights,
        search_s,
        step_s,
    };
    let mut order: Vec<usize> = (0..amplitudes.len()).collect();
    let strength = |t: usize| -> f64 {
        (0..modes)
            .map(|k| weights[k] * amplitudes[t][k].norm_sqr())
            .sum()
    };
    order.sort_by(|&a, &b| strength(b).total_cmp(&strength(a)));
    let mut delays = vec![0.0; amplitudes.len()];
    let mut sums = vec![Complex64::new(0.0, 0.0); modes];
    for (placed, &t) in order.iter().enumerate() {
        if placed > 0 {
            delays[t] = problem.best_delay(t, &sums);
        }
        problem.add(t, delays[t], &mut sums, 1.0);
    }
    for _ in 0..MAX_SWEEPS {
        let mut largest_move: f64 = 0.0;
        for &t in &order {
            problem.add(t, delays[t], &mut sums, -1.0);
            let best = problem.best_delay(t, &sums);
            largest_move = largest_move.max((best - delays[t]).abs());
            delays[t] = best;
            problem.add(t, delays[t], &mut sums, 1.0);
        }
        if largest_move < SETTLED_S {
            break;
        }
    }
    let centre = crate::analysis::aggregate::median(&delays);
    for d in &mut delays {
        *d -= centre;
    }
    let mut sums = vec![Complex64::new(0.0, 0.0); modes];
    for (t, &d) in delays.iter().enumerate() {
        problem.add(t, d, &mut sums, 1.0);
    }
    Alignment {
        delays_s: delays,
        phases_rad: sums.iter().map(|s| 0.5 * s.arg()).collect(),
    }
}

struct Problem<'a> {
    amplitudes: &'a [Vec<Complex64>],
    poles: &'a [PassPole],
    weights: &'a [f64],
    search_s: f64,
    step_s: f64,
}

impl Problem<'_> {
    /// wₖ·(cₜₖ·e^{jωₖd})². Only the phase turns with the delay here: the
    /// decay's factor e^{−αₖd} (about 1 % per millisecond) would reward
    /// longer or shorter delays for their size alone; it is applied to the
    /// amplitudes afterwards.
    fn squared(&self, t: usize, delay_s: f64, k: usize) -> Complex64 {
        let omega = 2.0 * std::f64::consts::PI * self.poles[k].frequency_hz;
        let aligned = self.amplitudes[t][k] * Complex64::from_polar(1.0, omega * delay_s);
        self.weights[k] * aligned * aligned
    }

    fn add(&self, t: usize, delay_s: f64, sums: &mut [Complex64], sign: f64) {
        for (k, sum) in sums.iter_mut().enumerate() {
            *sum += sign * self.squared(t, delay_s, k);
        }
    }

    /// J with tap t at `delay_s` added to the other taps' `sums`.
    fn joined(&self, t: usize, delay_s: f64, sums: &[Complex64]) -> f64 {
        sums.iter()
            .enumerate()
            .map(|(k, sum)| (sum + self.squared(t, delay_s, k)).norm())
            .sum()
    }

    /// The delay of tap t that best joins `sums`: a grid over ±search,
    /// then golden-section refinement within one grid step.
    fn best_delay(&self, t: usize, sums: &[Complex64]) -> f64 {
        let steps = (self.search_s / self.step_s).ceil() as i64;
        let mut best = (f64::NEG_INFINITY, 0.0);
        for i in -steps..=steps {
            let d = i as f64 * self.step_s;
            let value = self.joined(t, d, sums);
            if value > best.0 {
                best = (value, d);
            }
        }
        let (mut a, mut b) = (best.1 - self.step_s, best.1 + self.step_s);
        let ratio = (5f64.sqrt() - 1.0) / 2.0;
        for _ in 0..30 {
            let c = b - ratio * (b - a);
            let d = a + ratio * (b - a);
            if self.joined(t, c, sums) > self.joined(t, d, sums) {
                b = d;
            } else {
                a = c;
            }
        }
        let refined = 0.5 * (a + b);
        if self.joined(t, refined, sums) >= best.0 {
            refined
        } else {
            best.1
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::NoiseGenerator;
    use crate::shapes::amplitudes::pole_phasor;

    fn pole(frequency_hz: f64) -> PassPole {
        PassPole {
            frequency_hz,
            q: 60.0,
            decay_per_s: std::f64::consts::PI * frequency_hz / 60.0,
            points_seen: 10,
        }
    }

    #[test]
    fn random_delays_and_phases_are_undone_up_to_a_common_shift() {
        let poles: Vec<PassPole> = [80.0, 150.0, 190.0, 260.0, 330.0].map(pole).to_vec();
        let mut random = NoiseGenerator::new(11);
        let phases: Vec<f64> = (0..poles.len())
            .map(|_| std::f64::consts::TAU * random.uniform())
            .collect();
        let taps = 40;
        let shapes: Vec<Vec<f64>> = (0..taps)
            .map(|_| {
                (0..poles.len())
                    .map(|_| 2.0 * random.uniform() - 1.0)
                    .collect()
            })
            .collect();
        let delays: Vec<f64> = (0..taps)
            .map(|_| 0.9e-3 * (2.0 * random.uniform() - 1.0))
            .collect();
        let amplitudes: Vec<Vec<Complex64>> = (0..taps)
            .map(|t| {
                (0..poles.len())
                    .map(|k| {
                        shapes[t][k]
                            * Complex64::from_polar(1.0, phases[k])
                            * pole_phasor(&poles[k], -delays[t])
                    })
                    .collect()
            })
            .collect();
        let found = align_taps(&amplitudes, &poles, 2.0e-3);
        // Delays agree after removing the common shift.
        let differences: Vec<f64> = (0..taps).map(|t| found.delays_s[t] - delays[t]).collect();
        let shift = crate::analysis::aggregate::median(&differences);
        for (t, (found_s, true_s)) in found.delays_s.iter().zip(&delays).enumerate() {
            assert!(
                (found_s - true_s - shift).abs() < 1e-6,
                "tap {t}: {} vs {true_s}",
                found_s - shift
            );
        }
        // Every aligned amplitude is real and has the true sign, up to one
        // sign per mode.
        for k in 0..poles.len() {
            let mut sign = 0.0;
            for t in 0..taps {
                let a = amplitudes[t][k]
                    * pole_phasor(&poles[k], found.delays_s[t])
                    * Complex64::from_polar(1.0, -found.phases_rad[k]);
                assert!(a.im.abs() < 1e-6 * (1.0 + a.re.abs()), "{a}");
                if sign == 0.0 {
                    sign = (a.re * shapes[t][k]).signum();
                }
                assert_eq!((a.re * shapes[t][k]).signum(), sign, "mode {k} tap {t}");
            }
        }
    }
}
