//! Forecasts: how much more mass (and thickness) to remove for a labelled
//! mode to reach its target.
//!
//! Model: the mode's frequency follows a power of the part's mass,
//! `f = C·m^k`, i.e. the line `ln f = a + k·ln m`.
//!
//! * With three or more passes that have the label and a spread of masses,
//!   `a` and `k` are fitted by least squares. The forecast starts from the
//!   latest pass with the label (`m_now`, `f_now`, both measured):
//!   `m_target = m_now·(f_target/f_now)^(1/k)`.
//!   Uncertainty: the standard error of `k`, `se_k = s/√Sxx` with the residual
//!   scatter `s² = SSR/(n−2)`, and the scatter `s` of the starting frequency
//!   itself, are propagated to `ln m_target`:
//!   `σ² = (ln(f_target/f_now)·se_k/k²)² + (s/k)²`; the band is `±2σ` (about
//!   95 % for normal errors; with few passes it is narrower than a Student-t
//!   band would be — read it as a guide).
//! * With fewer than three passes (or no mass spread, or a fitted slope that
//!   does not fall with mass), the uniform-thinning rule `k = 1` is used:
//!   for a thin plate thinned evenly, bending frequency ∝ thickness
//!   (Leissa, Vibration of Plates, NASA SP-160, 1969; Fletcher & Rossing,
//!   The Physics of Musical Instruments, 2nd ed., 1998, ch. 3) and mass ∝
//!   thickness, so f ∝ m. Arched plates fall more slowly because of membrane
//!   stiffness (DEVELOPERS.md, "Sources"), so more wood must go than k = 1 says; the
//!   band runs from k = 1 to k = 0.5 (the lower bound is a design choice,
//!   from memory: violin plates typically show k of about 0.4–0.8).
//!
//! Thickness: evenly thinned, mean thickness scales with mass, so
//! `h_target = h_now·m_target/m_now` when the starting pass has readings.
//!
//! Warning: the forecast extrapolates when `m_target` lies outside the
//! masses of the history by more than the history's own mass span.

/// Fallback exponent: uniform thinning of a thin plate, f ∝ h ∝ m.
pub const UNIFORM_THINNING_EXPONENT: f64 = 1.0;
/// Lower end of the exponent band used with the fallback (arched plates).
pub const FALLBACK_LOW_EXPONENT: f64 = 0.5;
/// Fewest passes for a fitted exponent.
pub const MIN_PASSES_FOR_FIT: usize = 3;
/// Fitted exponents below this are treated as "does not fall with mass".
const MIN_FITTED_EXPONENT: f64 = 0.05;
/// Smallest spread of ln m (≈ 0.5 % of mass) that can support a fit.
const MIN_LN_MASS_SPREAD: f64 = 0.005;
/// Width of the band in standard deviations.
const BAND_SIGMAS: f64 = 2.0;

/// One pass where the label appears.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HistoryPoint {
    /// Pass number.
    pub pass_number: u32,
    /// Mass, g.
    pub mass_g: f64,
    /// The labelled mode's frequency, Hz.
    pub frequency_hz: f64,
    /// Mean of the pass's thickness readings, mm.
    pub mean_thickness_mm: Option<f64>,
}

/// How the exponent k of f ∝ m^k was found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ForecastMethod {
    /// Least-squares fit of ln f against ln m over the part's passes.
    FittedExponent {
        /// Fitted k.
        exponent: f64,
        /// Standard error of k.
        exponent_std_error: f64,
        /// Passes in the fit.
        passes_used: usize,
    },
    /// The uniform-thinning rule k = 1 (thin-plate theory).
    UniformThinning {
        /// Why no fit was used.
        reason: FallbackReason,
    },
}

/// Why a forecast fell back to uniform thinning.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FallbackReason {
    /// The label appears in fewer than three passes.
    FewerThanThreePasses {
        /// How many passes have it.
        passes: usize,
    },
    /// The passes' masses are (nearly) all the same.
    NoMassSpread,
    /// The fitted exponent does not describe a mode falling with mass.
    FitDoesNotFall {
        /// The rejected slope.
        fitted_exponent: f64,
    },
}

/// Something the maker should know before trusting a forecast.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ForecastWarning {
    /// The target mass lies outside the history's masses by more than the
    /// history's own span.
    ExtrapolatesBeyondHistory {
        /// How far outside the history's mass range, g.
        outside_g: f64,
        /// The history's mass span (max − min), g.
        history_span_g: f64,
    },
    /// The target is above the mode's frequency; removing wood lowers it.
    TargetAboveCurrent,
    /// The latest pass of the part does not have this label; the forecast
    /// starts from an earlier pass.
    StartsFromEarlierPass {
        /// The part's latest pass.
        latest_pass: u32,
    },
}

/// Thickness now and at the forecast target.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThicknessForecast {
    /// Mean thickness at the starting pass, mm.
    pub mean_now_mm: f64,
    /// Mean thickness forecast at the target, mm.
    pub mean_target_mm: f64,
    /// Change, mm (negative: thinner).
    pub change_mm: f64,
    /// Band of the change, mm (low, high).
    pub change_range_mm: (f64, f64),
}

/// A forecast for one labelled mode of one part.
#[derive(Clone, Debug, PartialEq)]
pub struct Forecast {
    /// The label.
    pub label: String,
    /// Target frequency, Hz.
    pub target_hz: f64,
    /// The pass the forecast starts from (latest with the label).
    pub from_pass: u32,
    /// Frequency at that pass, Hz.
    pub now_hz: f64,
    /// Mass at that pass, g.
    pub now_mass_g: f64,
    /// Mass forecast at the target, g.
    pub target_mass_g: f64,
    /// Band of the target mass, g (low, high).
    pub target_mass_range_g: (f64, f64),
    /// Mass still to remove, g (negative if the target needs more mass).
    pub mass_to_remove_g: f64,
    /// Band of the mass to remove, g (low, high).
    pub mass_to_remove_range_g: (f64, f64),
    /// Thickness forecast, if the starting pass has thickness readings.
    pub thickness: Option<ThicknessForecast>,
    /// How k was found.
    pub method: ForecastMethod,
    /// The exponent used.
    pub exponent: f64,
    /// Cautions.
    pub warnings: Vec<ForecastWarning>,
}

/// A least-squares line ln f = a + k·ln m.
#[derive(Clone, Copy, Debug, PartialEq)]
struct LogFit {
    exponent: f64,
    exponent_std_error: f64,
    residual_scatter: f64,
}

/// Forecasts for `label` with target `target_hz` from the passes where the
/// label appears (`history`, in pass order). `latest_pass` is the part's
/// latest pass number. `None` if the history is empty or the numbers are not
/// positive.
pub fn forecast(
    label: &str,
    target_hz: f64,
    history: &[HistoryPoint],
    latest_pass: u32,
) -> Option<Forecast> {
    let now = *history.last()?;
    let usable =
        target_hz.is_finite() && target_hz > 0.0 && now.mass_g > 0.0 && now.frequency_hz > 0.0;
    if !usable {
        return None;
    }
    let choice = choose_method(history, target_hz / now.frequency_hz);
    let exponent = choice.exponent;
    let ln_mass_change = (target_hz / now.frequency_hz).ln() / exponent;
    let target_mass_g = now.mass_g * ln_mass_change.exp();
    let (ln_low, ln_high) = choice.ln_mass_change_range;
    let target_mass_range_g = (now.mass_g * ln_low.exp(), now.mass_g * ln_high.exp());
    let mass_to_remove_range_g = (
        now.mass_g - target_mass_range_g.1,
        now.mass_g - target_mass_range_g.0,
    );
    let thickness = now.mean_thickness_mm.map(|h| ThicknessForecast {
        mean_now_mm: h,
        mean_target_mm: h * target_mass_g / now.mass_g,
        change_mm: h * (target_mass_g / now.mass_g - 1.0),
        change_range_mm: (
            h * (target_mass_range_g.0 / now.mass_g - 1.0),
            h * (target_mass_range_g.1 / now.mass_g - 1.0),
        ),
    });
    let warnings = warnings(history, target_hz, target_mass_g, latest_pass);
    Some(Forecast {
        label: label.to_string(),
        target_hz,
        from_pass: now.pass_number,
        now_hz: now.frequency_hz,
        now_mass_g: now.mass_g,
        target_mass_g,
        target_mass_range_g,
        mass_to_remove_g: now.mass_g - target_mass_g,
        mass_to_remove_range_g,
        thickness,
        method: choice.method,
        exponent,
        warnings,
    })
}

/// The exponent chosen and the band of ln(m_target/m_now).
struct Choice {
    method: ForecastMethod,
    exponent: f64,
    ln_mass_change_range: (f64, f64),
}

fn choose_method(history: &[HistoryPoint], frequency_ratio: f64) -> Choice {
    let ln_ratio = frequency_ratio.ln();
    let fallback = |reason| {
        let central = ln_ratio / UNIFORM_THINNING_EXPONENT;
        let arched = ln_ratio / FALLBACK_LOW_EXPONENT;
        Choice {
            method: ForecastMethod::UniformThinning { reason },
            exponent: UNIFORM_THINNING_EXPONENT,
            ln_mass_change_range: (central.min(arched), central.max(arched)),
        }
    };
    if history.len() < MIN_PASSES_FOR_FIT {
        return fallback(FallbackReason::FewerThanThreePasses {
            passes: history.len(),
        });
    }
    let Some(fit) = fit_log_line(history) else {
        return fallback(FallbackReason::NoMassSpread);
    };
    if !(fit.exponent.is_finite() && fit.exponent >= MIN_FITTED_EXPONENT) {
        return fallback(FallbackReason::FitDoesNotFall {
            fitted_exponent: fit.exponent,
        });
    }
    let k = fit.exponent;
    let slope_term = ln_ratio * fit.exponent_std_error / (k * k);
    let start_term = fit.residual_scatter / k;
    let sigma = slope_term.hypot(start_term);
    let centre = ln_ratio / k;
    Choice {
        method: ForecastMethod::FittedExponent {
            exponent: k,
            exponent_std_error: fit.exponent_std_error,
            passes_used: history.len(),
        },
        exponent: k,
        ln_mass_change_range: (centre - BAND_SIGMAS * sigma, centre + BAND_SIGMAS * sigma),
    }
}

/// Least squares of ln f on ln m; `None` without a spread of masses.
fn fit_log_line(history: &[HistoryPoint]) -> Option<LogFit> {
    let points: Vec<(f64, f64)> = history
        .iter()
        .map(|p| (p.mass_g.ln(), p.frequency_hz.ln()))
        .collect();
    let n = points.len() as f64;
    let mean_x = points.iter().map(|p| p.0).sum::<f64>() / n;
    let mean_y = points.iter().map(|p| p.1).sum::<f64>() / n;
    let (lo, hi) = points.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
        (lo.min(p.0), hi.max(p.0))
    });
    if hi - lo < MIN_LN_MASS_SPREAD {
        return None;
    }
    let sxx: f64 = points.iter().map(|p| (p.0 - mean_x).powi(2)).sum();
    let sxy: f64 = points.iter().map(|p| (p.0 - mean_x) * (p.1 - mean_y)).sum();
    let k = sxy / sxx;
    let a = mean_y - k * mean_x;
    let ssr: f64 = points.iter().map(|p| (p.1 - a - k * p.0).powi(2)).sum();
    let residual_scatter = (ssr / (n - 2.0)).sqrt();
    Some(LogFit {
        exponent: k,
        exponent_std_error: residual_scatter / sxx.sqrt(),
        residual_scatter,
    })
}

fn warnings(
    history: &[HistoryPoint],
    target_hz: f64,
    target_mass_g: f64,
    latest_pass: u32,
) -> Vec<ForecastWarning> {
    let mut warnings = Vec::new();
    let (min_g, max_g) = history.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
        (lo.min(p.mass_g), hi.max(p.mass_g))
    });
    let span_g = max_g - min_g;
    let outside_g = (min_g - target_mass_g).max(target_mass_g - max_g).max(0.0);
    if outside_g > span_g {
        warnings.push(ForecastWarning::ExtrapolatesBeyondHistory {
            outside_g,
            history_span_g: span_g,
        });
    }
    if history
        .last()
        .is_some_and(|now| target_hz > now.frequency_hz)
    {
        warnings.push(ForecastWarning::TargetAboveCurrent);
    }
    if history
        .last()
        .is_some_and(|now| now.pass_number != latest_pass)
    {
        warnings.push(ForecastWarning::StartsFromEarlierPass { latest_pass });
    }
    warnings
}

#[cfg(test)]
mod tests {
    use super::*;

    fn noise(seed: &mut u64) -> f64 {
        *seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (*seed >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
    }

    /// Passes following f = C·m^k, frequencies scattered by up to
    /// ±`noise_fraction`.
    fn series(k: f64, masses_g: &[f64], noise_fraction: f64, seed: u64) -> Vec<HistoryPoint> {
        let mut seed = seed;
        masses_g
            .iter()
            .enumerate()
            .map(|(i, &m)| HistoryPoint {
                pass_number: i as u32 + 1,
                mass_g: m,
                frequency_hz: 380.0
                    * (m / 85.0).powf(k)
                    * (1.0 + noise_fraction * noise(&mut seed)),
                mean_thickness_mm: Some(3.0 * m / 85.0),
            })
            .collect()
    }

    #[test]
    fn fitted_forecast_is_within_two_percent_of_the_true_mass() {
        // The check: a synthetic f ∝ m^k series with known k and noise.
        let masses = [85.0, 83.0, 80.5, 78.0, 76.0, 73.5, 71.0];
        for k in [0.4, 0.6, 0.9, 1.3] {
            for seed in 1..=20 {
                let history = series(k, &masses, 0.002, seed);
                let true_target_mass = 66.0;
                let target_hz = 380.0 * (true_target_mass / 85.0f64).powf(k);
                let f = forecast("mode 5", target_hz, &history, 7).unwrap();
                let error = f.target_mass_g / true_target_mass - 1.0;
                assert!(error.abs() < 0.02, "k {k} seed {seed}: error {error}");
                assert!(matches!(
                    f.method,
                    ForecastMethod::FittedExponent { passes_used: 7, .. }
                ));
                assert!(
                    (f.exponent - k).abs() < 0.25 * k,
                    "k {k}: fitted {}",
                    f.exponent
                );
                let (low, high) = f.target_mass_range_g;
                assert!(low <= f.target_mass_g && f.target_mass_g <= high);
                assert!((f.mass_to_remove_g - (f.now_mass_g - f.target_mass_g)).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn noiseless_series_recovers_the_exponent_and_mass_exactly() {
        let history = series(0.55, &[85.0, 82.0, 79.0, 76.0], 0.0, 0);
        let target_hz = 380.0 * (70.0f64 / 85.0).powf(0.55);
        let f = forecast("mode 5", target_hz, &history, 4).unwrap();
        assert!((f.exponent - 0.55).abs() < 1e-9);
        assert!((f.target_mass_g - 70.0).abs() < 1e-9);
        // Uniform thinning: thickness scales with mass.
        let thickness = f.thickness.unwrap();
        assert!((thickness.mean_target_mm - 3.0 * 70.0 / 85.0).abs() < 1e-9);
    }

    #[test]
    fn fewer_than_three_passes_fall_back_to_thin_plate_scaling() {
        // Thin-plate theory: bending frequency ∝ thickness, and mass ∝
        // thickness for even thinning, so f ∝ m (Leissa, Vibration of Plates,
        // NASA SP-160, 1969; Fletcher & Rossing 1998, ch. 3). Lowering the
        // frequency by 5 % then takes 5 % of the mass and 5 % of the thickness.
        let history = series(0.5, &[80.0, 78.0], 0.0, 0);
        let now = history[1];
        let f = forecast("mode 5", now.frequency_hz * 0.95, &history, 2).unwrap();
        assert_eq!(
            f.method,
            ForecastMethod::UniformThinning {
                reason: FallbackReason::FewerThanThreePasses { passes: 2 }
            }
        );
        assert!((f.target_mass_g - 0.95 * now.mass_g).abs() < 1e-9);
        let thickness = f.thickness.unwrap();
        assert!((thickness.mean_target_mm / thickness.mean_now_mm - 0.95).abs() < 1e-12);
        // The band reaches to the slower fall of an arched plate (k = 0.5).
        let (low, high) = f.target_mass_range_g;
        assert!((low - now.mass_g * 0.95f64.powi(2)).abs() < 1e-9);
        assert!((high - 0.95 * now.mass_g).abs() < 1e-9);
    }

    #[test]
    fn far_extrapolation_and_a_rising_target_are_flagged() {
        let history = series(0.5, &[80.0, 79.0, 78.0], 0.0, 0);
        let far = forecast("mode 5", history[2].frequency_hz * 0.9, &history, 3).unwrap();
        assert!(far
            .warnings
            .iter()
            .any(|w| matches!(w, ForecastWarning::ExtrapolatesBeyondHistory { .. })));
        let near = forecast("mode 5", history[2].frequency_hz * 0.995, &history, 3).unwrap();
        assert!(near.warnings.is_empty(), "{:?}", near.warnings);
        let up = forecast("mode 5", history[2].frequency_hz * 1.01, &history, 4).unwrap();
        assert!(up.warnings.contains(&ForecastWarning::TargetAboveCurrent));
        assert!(up
            .warnings
            .contains(&ForecastWarning::StartsFromEarlierPass { latest_pass: 4 }));
        assert!(up.mass_to_remove_g < 0.0);
    }

    #[test]
    fn a_slope_that_does_not_fall_uses_the_fallback() {
        // Frequencies rise while mass falls.
        let rising: Vec<HistoryPoint> = [(80.0, 300.0), (78.0, 310.0), (76.0, 320.0)]
            .iter()
            .enumerate()
            .map(|(i, &(mass_g, frequency_hz))| HistoryPoint {
                pass_number: i as u32 + 1,
                mass_g,
                frequency_hz,
                mean_thickness_mm: None,
            })
            .collect();
        let f = forecast("x", 300.0, &rising, 3).unwrap();
        assert!(matches!(
            f.method,
            ForecastMethod::UniformThinning {
                reason: FallbackReason::FitDoesNotFall { .. }
            }
        ));
        let same_mass: Vec<HistoryPoint> = rising
            .iter()
            .map(|p| HistoryPoint { mass_g: 80.0, ..*p })
            .collect();
        let f = forecast("x", 300.0, &same_mass, 3).unwrap();
        assert_eq!(
            f.method,
            ForecastMethod::UniformThinning {
                reason: FallbackReason::NoMassSpread
            }
        );
    }
}
