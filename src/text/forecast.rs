//! A forecast in words, the same in the window's Ledger area, the build
//! report and `tapwright ledger`: what to remove, the thickness it means,
//! how the forecast was made, and the cautions. The numbers come from
//! `ledger::forecast`; only the wording is here.

use crate::ledger::{FallbackReason, Forecast, ForecastMethod, ForecastWarning};

use super::numbers::{num, signed};

/// Closer than this to its target, a mode counts as there (a few cents is
/// within what a pass of taps repeats to; common practice, no source).
pub const AT_TARGET_CENTS: f64 = 3.0;

/// The sentences of one forecast, headline first, each with whether it is
/// a caution: the headline, the thickness (when the pass has readings),
/// "How: …", then one "Caution: …" per warning.
pub fn forecast_lines(f: &Forecast) -> Vec<(String, bool)> {
    let mut lines = vec![(headline(f), false)];
    if let Some(thickness) = thickness_text(f) {
        lines.push((thickness, false));
    }
    lines.push((
        format!("How: {}", method_text(&f.method, f.from_pass)),
        false,
    ));
    for warning in &f.warnings {
        lines.push((caution_text(warning), true));
    }
    lines
}

/// What to do: remove about so much, nothing more, or nothing at all.
pub fn headline(f: &Forecast) -> String {
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
        format!(
            "{}: remove about {} g (between {} and {} g) to go from {} Hz to {} Hz; the part would weigh about {} g.",
            f.label,
            num(f.mass_to_remove_g, 1),
            num(low.max(0.0), 1),
            num(high.max(0.0), 1),
            num(f.now_hz, 1),
            num(f.target_hz, 1),
            num(f.target_mass_g, 1)
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
pub fn thickness_text(f: &Forecast) -> Option<String> {
    let t = f.thickness.as_ref()?;
    Some(format!(
        "Mean thickness from {} mm to about {} mm ({} mm, between {} and {} mm).",
        num(t.mean_now_mm, 2),
        num(t.mean_target_mm, 2),
        signed(t.change_mm, 2),
        signed(t.change_range_mm.0, 2),
        signed(t.change_range_mm.1, 2)
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

/// A warning as the sentence after "Caution:" ("the target is above …").
pub fn warning_text(warning: &ForecastWarning) -> String {
    match warning {
        ForecastWarning::ExtrapolatesBeyondHistory {
            outside_g,
            history_span_g,
        } => format!(
            "the forecast reaches {} g beyond the masses measured so far (which span only {} g); treat it as a rough guide and measure again on the way.",
            num(*outside_g, 1),
            num(*history_span_g, 1)
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
pub fn caution_text(warning: &ForecastWarning) -> String {
    format!("Caution: {}", warning_text(warning))
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
        let lines = forecast_lines(&fallback_forecast());
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
        let lines = forecast_lines(&f);
        assert!(
            lines[0]
                .0
                .starts_with("mode 5: already 5.0 Hz below its target"),
            "{}",
            lines[0].0
        );
        f.now_hz = 340.2;
        f.mass_to_remove_g = 0.04;
        let lines = forecast_lines(&f);
        assert!(lines[0].0.contains("at its target"), "{}", lines[0].0);
    }
}
