//! Targets and forecasts of a part: a target frequency per label (set or
//! cleared through `Part::set_target`), and for each target the forecast in
//! plain sentences: the mass to remove with its band, the thickness change
//! when the pass has readings, the method, and any warning.

use eframe::egui;

use crate::ledger::{FallbackReason, Forecast, ForecastMethod, ForecastWarning, LedgerError, Part};

use super::super::commands::AreaContext;
use super::{num, parse_number, signed, try_edit, LedgerAreaState, Note};

/// Closer than this to its target, a mode counts as there (a few cents is
/// within what a pass of taps repeats to; common practice, no source).
const AT_TARGET_CENTS: f64 = 3.0;

/// The sentences of one forecast, first the headline.
pub fn forecast_lines(f: &Forecast) -> Vec<(String, bool)> {
    let mut lines = Vec::new();
    let (low, high) = f.mass_to_remove_range_g;
    let off_cents = 1200.0 * (f.now_hz / f.target_hz).log2();
    let headline = if off_cents.abs() < AT_TARGET_CENTS {
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
    };
    lines.push((headline, false));
    if let Some(t) = &f.thickness {
        lines.push((
            format!(
                "Mean thickness from {} mm to about {} mm ({} mm, between {} and {} mm).",
                num(t.mean_now_mm, 2),
                num(t.mean_target_mm, 2),
                signed(t.change_mm, 2),
                signed(t.change_range_mm.0, 2),
                signed(t.change_range_mm.1, 2)
            ),
            false,
        ));
    }
    lines.push((
        format!("How: {}", method_text(&f.method, f.from_pass)),
        false,
    ));
    for warning in &f.warnings {
        lines.push((warning_text(warning), true));
    }
    lines
}

fn method_text(method: &ForecastMethod, from_pass: u32) -> String {
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
        ForecastMethod::UniformThinning { reason } => {
            let why = match reason {
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
            };
            format!(
                "the uniform-thinning rule (frequency falls in proportion to mass, as for an evenly thinned flat plate), because {why}. Arched plates usually need more wood off than this says, so the band reaches further."
            )
        }
    }
}

fn warning_text(warning: &ForecastWarning) -> String {
    match warning {
        ForecastWarning::ExtrapolatesBeyondHistory {
            outside_g,
            history_span_g,
        } => format!(
            "Caution: the forecast reaches {} g beyond the masses measured so far (which span only {} g); treat it as a rough guide and measure again on the way.",
            num(*outside_g, 1),
            num(*history_span_g, 1)
        ),
        ForecastWarning::TargetAboveCurrent => {
            "Caution: the target is above the mode's frequency now; removing wood lowers it.".to_owned()
        }
        ForecastWarning::StartsFromEarlierPass { latest_pass } => format!(
            "Caution: pass {latest_pass} does not have this label, so the forecast starts from an earlier pass."
        ),
    }
}

/// The targets table and the forecasts.
pub fn targets_and_forecasts(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    ctx: &mut AreaContext,
) {
    ui.strong("Targets and forecasts");
    if part.labels().is_empty() {
        ui.weak("This part has no labels; targets are set per labelled mode.");
        return;
    }
    egui::Grid::new(("targets", part.name()))
        .num_columns(4)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            for label in part.labels() {
                target_row(ui, state, part, label, ctx);
                ui.end_row();
            }
        });
    if let Some(note) = &state.target_note {
        note.show(ui);
    }
    let forecasts = part.forecasts();
    if forecasts.is_empty() {
        if part.targets().is_empty() {
            ui.weak("Set a target to see how much more wood to take off.");
        } else {
            ui.weak("A forecast appears once a pass carries the label of a target.");
        }
        return;
    }
    for forecast in &forecasts {
        ui.add_space(4.0);
        for (text, is_warning) in forecast_lines(forecast) {
            let label = if is_warning {
                egui::Label::new(egui::RichText::new(text).color(ui.visuals().warn_fg_color))
            } else {
                egui::Label::new(text)
            };
            ui.add(label.wrap());
        }
    }
    ui.weak("Forecasts assume the part is thinned evenly; the band is a guide, not a promise.");
}

fn target_row(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    label: &str,
    ctx: &mut AreaContext,
) {
    ui.label(label);
    let key = (part.name().to_owned(), label.to_owned());
    let current = part.targets().get(label).copied();
    let text = state
        .target_text
        .entry(key.clone())
        .or_insert_with(|| current.map(|hz| num(hz, 1)).unwrap_or_default());
    let field = ui
        .add(
            egui::TextEdit::singleline(text)
                .hint_text("Hz")
                .desired_width(70.0),
        )
        .accessible_name(format!("Target for {label} (Hz)"));
    let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
    let set = ui
        .small_button("Set")
        .accessible_name(format!("Set the target for {label}"))
        .clicked()
        || entered;
    let clear = ui
        .add_enabled(current.is_some(), egui::Button::new("Clear").small())
        .accessible_name(format!("Clear the target for {label}"))
        .clicked();
    if set {
        let typed = text.clone();
        let result = match parse_number(&typed, &format!("The target for {label}")) {
            Ok(Some(hz)) => set_target(ctx, part, label, Some(hz)),
            Ok(None) => Err(format!("Type a target frequency for {label} in Hz first.")),
            Err(problem) => Err(problem),
        };
        state.target_note = result.err().map(Note::error);
    }
    if clear {
        state.target_text.insert(key, String::new());
        state.target_note = set_target(ctx, part, label, None).err().map(Note::error);
    }
    if let Some(hz) = current {
        ui.weak(format!("target {} Hz", num(hz, 1)));
    }
}

fn set_target(
    ctx: &mut AreaContext,
    part: &Part,
    label: &str,
    target_hz: Option<f64>,
) -> Result<(), String> {
    let (part_name, label) = (part.name().to_owned(), label.to_owned());
    try_edit(ctx, "setting a target", move |build| {
        let part = build
            .part_mut(&part_name)
            .ok_or_else(|| LedgerError::NoSuchPart(part_name.clone()))?;
        part.set_target(&label, target_hz)?;
        Ok(match target_hz {
            Some(hz) => format!("Target for {label} of \"{part_name}\": {} Hz.", num(hz, 1)),
            None => format!("Cleared the target for {label} of \"{part_name}\"."),
        })
    })
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
