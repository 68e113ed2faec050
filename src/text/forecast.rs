//! A forecast in words, the same in the window's Ledger area, the build
//! report and `tapwright ledger`: what to remove, the thickness it means,
//! how the forecast was made, and the cautions. The numbers come from
//! `ledger::forecast`; only the wording is here.

use crate::ledger::{FallbackReason, Forecast, ForecastMethod, ForecastWarning};

use super::numbers::{num, signed};
use super::units::{LengthUnit, MassUnit, Units};

/// Closer than this to its target, a mode counts as there (a few cents is
/// within what a pass of taps repeats to; common practice, no source).
pub const AT_TARGET_CENTS: f64 = 3.0;

/// The sentences of one forecast, headline first, each with whether it is
/// a caution: the headline, the thickness (when the pass has readings),
/// "How: …", then one "Caution: …" per warning; masses and thicknesses
/// in `units`.
pub fn forecast_lines(f: &Forecast, units: Units) -> Vec<(String, bool)> {
    let mut lines = vec![(headline(f, units.mass), false)];
    if let Some(thickness) = thickness_text(f, units.length) {
        lines.push((thickness, false));
    }
    lines.push((
        format!("How: {}", method_text(&f.method, f.from_pass)),
        false,
    ));
    for warning in &f.warnings {
        lines.push((caution_text(warning, units.mass), true));
    }
    lines
}

/// What to do: remove about so much, nothing more, or nothing at all.
pub fn headline(f: &Forecast, mass: MassUnit) -> String {
    let (low, high) = f.mass_to_remove_range_g;
    let off_cents = 1200.0 * (f.now_hz / f.target_hz).log2();
    if off_cents.abs() < AT_TARGET_CENTS {
        format!(
            "{}: at its target ({} Hz against {} Hz); no more wood needs to come off for this mode.",
            f.label,
            num(f.now_hz, 1),
            num(f.target_hz, 1)
        )
    } else if f.mass_to_remove_g >= 0.0 {
        let decimals = mass.estimate_decimals();
        format!(
            "{}: remove about {} (between {} and {} {}) to go from {} Hz to {} Hz; the part would weigh about {}.",
            f.label,
            mass.estimate_text(f.mass_to_remove_g),
            num(mass.from_g(low.max(0.0)), decimals),
            num(mass.from_g(high.max(0.0)), decimals),
            mass.symbol(),
            num(f.now_hz, 1),
            num(f.target_hz, 1),
            mass.estimate_text(f.target_mass_g)
        )
    } else {
        format!(
            "{}: already {} Hz below its target ({} Hz against {} Hz); taking wood off lowers it further.",
            f.label,
            num(f.target_hz - f.now_hz, 1),
            num(f.now_hz, 1),
            num(f.target_hz, 1)
        )
    }
}

/// The mean thickness now and at the target, when the starting pass has
/// thickness readings.
pub fn thickness_text(f: &Forecast, length: LengthUnit) -> Option<String> {
    let t = f.thickness.as_ref()?;
    let decimals = length.thickness_decimals();
    let unit = length.symbol();
    let change = |mm: f64| signed(length.from_mm(mm), decimals);
    Some(format!(
        "Mean thickness from {} to about {} ({} {unit}, between {} and {} {unit}).",
        length.thickness_text(t.mean_now_mm),
        length.thickness_text(t.mean_target_mm),
        change(t.change_mm),
        change(t.change_range_mm.0),
        change(t.change_range_mm.1)
    ))
}

/// How the forecast was made, starting in lower case ("fitted to this
/// part's own 7 passes …"), for after "How:" or "method:".
pub fn method_text(method: &ForecastMethod, from_pass: u32) -> String {
    match method {
        ForecastMethod::FittedExponent {
            exponent,
            exponent_std_error,
            passes_used,
        } => format!(
            "fitted to this part's own {passes_used} passes (frequency follows mass to the power k, k = {} ± {}), starting from pass {from_pass}.",
            num(*exponent, 2),
            num(*exponent_std_error, 2)
        ),
        ForecastMethod::UniformThinning { reason } => format!(
            "the uniform-thinning rule (frequency falls in proportion to mass, as for an evenly thinned flat plate), because {}. Arched plates usually need more wood off than this says, so the band reaches further.",
            fallback_text(reason)
        ),
    }
}

/// Why the uniform-thinning rule was used instead of a fit.
fn fallback_text(reason: &FallbackReason) -> String {
    match reason {
        FallbackReason::FewerThanThreePasses { passes } => format!(
            "only {passes} pass{} so far carry this label, too few for a fit (three are needed)",
            if *passes == 1 { "" } else { "es" }
        ),
        FallbackReason::NoMassSpread => {
            "the passes' masses are nearly the same, so no fit is possible".to_owned()
        }
        FallbackReason::FitDoesNotFall { fitted_exponent } => format!(
            "the fitted slope (k = {}) does not describe a mode that falls as wood comes off",
            num(*fitted_exponent, 2)
        ),
    }
}

/// A warning as the sentence after "Caution:" ("the target is above …"),
/// masses in `mass`.
pub fn warning_text(warning: &ForecastWarning, mass: MassUnit) -> String {
    match warning {
        ForecastWarning::ExtrapolatesBeyondHistory {
            outside_g,
            history_span_g,
        } => format!(
            "the forecast reaches {} beyond the masses measured so far (which span only {}); treat it as a rough guide and measure again on the way.",
            mass.estimate_text(*outside_g),
            mass.estimate_text(*history_span_g)
        ),
        ForecastWarning::TargetAboveCurrent => {
            "the target is above the mode's frequency now; removing wood lowers it.".to_owned()
        }
        ForecastWarning::StartsFromEarlierPass { latest_pass } => format!(
            "pass {latest_pass} does not have this label, so the forecast starts from an earlier pass."
        ),
    }
}

/// A warning as a whole sentence: "Caution: the target is above …".
pub fn caution_text(warning: &ForecastWarning, mass: MassUnit) -> String {
    format!("Caution: {}", warning_text(warning, mass))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fallback_forecast() -> Forecast {
        Forecast {
            label: "mode 5".into(),
            target_hz: 340.0,
            from_pass: 2,
            now_hz: 350.0,
            now_mass_g: 70.0,
            target_mass_g: 68.0,
            target_mass_range_g: (66.1, 68.0),
            mass_to_remove_g: 2.0,
            mass_to_remove_range_g: (2.0, 3.9),
            thickness: None,
            method: ForecastMethod::UniformThinning {
                reason: FallbackReason::FewerThanThreePasses { passes: 2 },
            },
            exponent: 1.0,
            warnings: vec![ForecastWarning::ExtrapolatesBeyondHistory {
                outside_g: 5.0,
                history_span_g: 1.5,
            }],
        }
    }

    #[test]
    fn a_fallback_forecast_says_why_and_warns_in_words() {
        let lines = forecast_lines(&fallback_forecast(), Units::metric());
        assert!(lines[0]
            .0
            .starts_with("mode 5: remove about 2.0 g (between 2.0 and 3.9 g)"));
        assert!(lines[1].0.contains("uniform-thinning rule"));
        assert!(lines[1].0.contains("only 2 passes"));
        assert!(lines[2].1, "the extrapolation line is a warning");
        assert!(lines[2].0.contains("5.0 g beyond"));
    }

    #[test]
    fn a_target_above_the_mode_or_reached_is_said_plainly() {
        let mut f = fallback_forecast();
        f.now_hz = 335.0;
        f.mass_to_remove_g = -1.5;
        let lines = forecast_lines(&f, Units::metric());
        assert!(
            lines[0]
                .0
                .starts_with("mode 5: already 5.0 Hz below its target"),
            "{}",
            lines[0].0
        );
        f.now_hz = 340.2;
        f.mass_to_remove_g = 0.04;
        let lines = forecast_lines(&f, Units::metric());
        assert!(lines[0].0.contains("at its target"), "{}", lines[0].0);
    }

    #[test]
    fn a_forecast_reads_in_ounces_and_inches() {
        let mut f = fallback_forecast();
        f.thickness = Some(crate::ledger::ThicknessForecast {
            mean_now_mm: 2.54,
            mean_target_mm: 2.286,
            change_mm: -0.254,
            change_range_mm: (-0.381, -0.254),
        });
        let lines = forecast_lines(&f, Units::imperial());
        // 2.0 g = 0.071 oz, 3.9 g = 0.138 oz, 68.0 g = 2.399 oz (1 oz =
        // 28.349523125 g); 2.54 mm = 0.100 in.
        assert!(
            lines[0].0.starts_with(
                "mode 5: remove about 0.071 oz (between 0.071 and 0.138 oz) to go from 350.0 Hz to 340.0 Hz; the part would weigh about 2.399 oz."
            ),
            "{}",
            lines[0].0
        );
        assert_eq!(
            lines[1].0,
            "Mean thickness from 0.100 in to about 0.090 in (\u{2212}0.010 in, between \u{2212}0.015 and \u{2212}0.010 in)."
        );
        assert!(lines[3].0.contains("0.176 oz beyond"), "{}", lines[3].0);
    }
}
