//! A part's commands (recording and removing passes, labels, targets) and
//! what it reports (forecasts, label histories, pass-to-pass changes), with
//! the checks every reading passes before it is kept.

use super::*;

impl Part {
    /// The part's name (unique within its build).
    pub fn name(&self) -> &str {
        &self.name
    }

    /// What the part is.
    pub fn kind(&self) -> &PartKind {
        &self.kind
    }

    /// The labels offered for this part: the preset set for its kind and the
    /// build's family, then any the maker added.
    pub fn labels(&self) -> &[String] {
        &self.labels
    }

    /// Target frequency per label, Hz.
    pub fn targets(&self) -> &BTreeMap<String, f64> {
        &self.targets
    }

    /// The passes, pass 1 first.
    pub fn passes(&self) -> &[Pass] {
        &self.passes
    }

    /// Pass number `number` (1-based).
    pub fn pass(&self, number: u32) -> Option<&Pass> {
        let index = usize::try_from(number).ok()?.checked_sub(1)?;
        self.passes.get(index)
    }

    /// Pass number `number`, to edit its time, mass, thickness, air, note or
    /// spectrum. Its number and modes change only through the part's
    /// commands. (`store::save` refuses a build whose values became invalid.)
    pub fn pass_mut(&mut self, number: u32) -> Option<&mut Pass> {
        let index = usize::try_from(number).ok()?.checked_sub(1)?;
        self.passes.get_mut(index)
    }

    /// The latest pass.
    pub fn latest_pass(&self) -> Option<&Pass> {
        self.passes.last()
    }

    /// Adds a label of the maker's own. Adding a label the part already has
    /// does nothing.
    pub fn add_label(&mut self, label: impl Into<String>) -> Result<(), LedgerError> {
        let label = label.into();
        if label.trim().is_empty() {
            return Err(LedgerError::EmptyName("a label"));
        }
        if !self.labels.contains(&label) {
            self.labels.push(label);
        }
        Ok(())
    }

    /// Records a new pass: checks the input, sorts its modes by frequency,
    /// carries the labels of earlier passes over to them (see
    /// `carry_over`), and appends it with the next number.
    pub fn record_pass(&mut self, input: PassInput) -> Result<PassOutcome, LedgerError> {
        let pass_number = self.next_pass_number()?;
        let where_ = format!("part \"{}\", new pass {pass_number}", self.name);
        check_pass_values(
            &where_,
            input.mass_g,
            &input.thickness,
            input.air_temp_c,
            input.relative_humidity_pct,
        )?;
        for mode in &input.modes {
            check_mode_values(&where_, mode)?;
        }
        if let Some(map) = &input.shape_map {
            map.validate(&where_, &self.labels)?;
        }
        let mut measured = input.modes;
        measured.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
        let frequencies: Vec<f64> = measured.iter().map(|m| m.frequency_hz).collect();
        let carry =
            carry_over::carry_labels(&self.passes, &self.labels, input.mass_g, &frequencies);
        let mut modes: Vec<PassModeRecord> = measured
            .iter()
            .map(|m| PassModeRecord {
                frequency_hz: m.frequency_hz,
                q: m.q,
                level_db: m.level_db,
                spread_hz: m.spread_hz,
                label: None,
            })
            .collect();
        for carried in &carry.carried {
            modes[carried.mode_index].label = Some(ModeLabel {
                name: carried.label.clone(),
                needs_confirmation: !carried.confident,
            });
        }
        self.passes.push(Pass {
            number: pass_number,
            time: input.time,
            mass_g: input.mass_g,
            thickness: input.thickness,
            air_temp_c: input.air_temp_c,
            relative_humidity_pct: input.relative_humidity_pct,
            note: input.note,
            modes,
            spectrum: input.spectrum,
            shape_map: input.shape_map,
        });
        let needs_confirmation = carry
            .carried
            .iter()
            .filter(|c| !c.confident)
            .map(|c| c.label.clone())
            .collect();
        Ok(PassOutcome {
            pass_number,
            carried: carry.carried,
            needs_confirmation,
            not_found: carry.not_found,
        })
    }

    /// Removes the latest pass (to undo a recording); returns it.
    pub fn remove_latest_pass(&mut self) -> Option<Pass> {
        self.passes.pop()
    }

    /// Puts `label` on mode `mode_index` of pass `pass_number` (confirmed),
    /// taking it off any other mode of that pass; `None` clears the mode's
    /// label. The label must be one of [`Part::labels`].
    pub fn set_label(
        &mut self,
        pass_number: u32,
        mode_index: usize,
        label: Option<&str>,
    ) -> Result<(), LedgerError> {
        if let Some(name) = label {
            self.check_known_label(name)?;
        }
        let part_name = self.name.clone();
        let pass = self.pass_mut(pass_number).ok_or(LedgerError::NoSuchPass {
            part: part_name,
            pass: pass_number,
        })?;
        if mode_index >= pass.modes.len() {
            return Err(LedgerError::NoSuchMode {
                pass: pass_number,
                index: mode_index,
            });
        }
        if let Some(name) = label {
            for mode in &mut pass.modes {
                if mode.label_name() == Some(name) {
                    mode.label = None;
                }
            }
        }
        pass.modes[mode_index].label = label.map(|name| ModeLabel {
            name: name.to_string(),
            needs_confirmation: false,
        });
        Ok(())
    }

    /// Marks the label on mode `mode_index` of pass `pass_number` as
    /// confirmed. Fails if there is no such mode or it has no label.
    pub fn confirm_label(
        &mut self,
        pass_number: u32,
        mode_index: usize,
    ) -> Result<(), LedgerError> {
        let part_name = self.name.clone();
        let pass = self.pass_mut(pass_number).ok_or(LedgerError::NoSuchPass {
            part: part_name,
            pass: pass_number,
        })?;
        match pass
            .modes
            .get_mut(mode_index)
            .and_then(|m| m.label.as_mut())
        {
            Some(label) => {
                label.needs_confirmation = false;
                Ok(())
            }
            None => Err(LedgerError::NoSuchMode {
                pass: pass_number,
                index: mode_index,
            }),
        }
    }

    /// Sets (or with `None` clears) the target frequency of a label, Hz.
    pub fn set_target(&mut self, label: &str, target_hz: Option<f64>) -> Result<(), LedgerError> {
        self.check_known_label(label)?;
        match target_hz {
            Some(hz) => {
                check_positive(&format!("target of \"{label}\""), "Hz", hz)?;
                self.targets.insert(label.to_string(), hz);
            }
            None => {
                self.targets.remove(label);
            }
        }
        Ok(())
    }

    /// Forecast of the mass (and thickness) still to remove for `label` to
    /// reach its target; `None` without a target or without a pass where the
    /// label appears. See `forecast` for the method.
    pub fn forecast(&self, label: &str) -> Option<Forecast> {
        let target_hz = *self.targets.get(label)?;
        let history: Vec<HistoryPoint> = self
            .passes
            .iter()
            .filter_map(|pass| {
                let mode = pass.mode_labelled(label)?;
                Some(HistoryPoint {
                    pass_number: pass.number,
                    mass_g: pass.mass_g,
                    frequency_hz: mode.frequency_hz,
                    mean_thickness_mm: pass.mean_thickness_mm(),
                })
            })
            .collect();
        let latest_pass = self.passes.last().map_or(0, |p| p.number);
        forecast::forecast(label, target_hz, &history, latest_pass)
    }

    /// Forecasts for every label with a target and a history.
    pub fn forecasts(&self) -> Vec<Forecast> {
        self.targets
            .keys()
            .filter_map(|l| self.forecast(l))
            .collect()
    }

    /// Where `label` stood in each pass that has it.
    pub fn label_history(&self, label: &str) -> Vec<LabelPoint> {
        self.passes
            .iter()
            .filter_map(|pass| {
                pass.mode_labelled(label).map(|mode| LabelPoint {
                    pass_number: pass.number,
                    mass_g: pass.mass_g,
                    frequency_hz: mode.frequency_hz,
                })
            })
            .collect()
    }

    /// How `label` moved in pass `pass_number` against the previous and the
    /// first pass that have it; `None` if that pass lacks the label.
    pub fn change(&self, label: &str, pass_number: u32) -> Option<PassChange> {
        let history = self.label_history(label);
        let position = history.iter().position(|p| p.pass_number == pass_number)?;
        let now = history[position];
        let against = |earlier: &LabelPoint| {
            FrequencyChange::between(earlier.pass_number, earlier.frequency_hz, now.frequency_hz)
        };
        Some(PassChange {
            label: label.to_string(),
            pass_number,
            frequency_hz: now.frequency_hz,
            vs_previous: position.checked_sub(1).map(|i| against(&history[i])),
            vs_first: (position > 0).then(|| against(&history[0])),
        })
    }

    /// What [`Part::change`] gives for every labelled mode of every pass,
    /// in one walk over the passes (linear in their number, where calling
    /// `change` for each would be quadratic): one list per pass, in pass
    /// order, its labelled modes in mode order.
    pub fn all_changes(&self) -> Vec<Vec<PassChange>> {
        let mut first: std::collections::HashMap<&str, (u32, f64)> = Default::default();
        let mut previous: std::collections::HashMap<&str, (u32, f64)> = Default::default();
        let mut all = Vec::with_capacity(self.passes.len());
        for pass in &self.passes {
            let mut changes = Vec::new();
            for mode in &pass.modes {
                let Some(label) = mode.label_name() else {
                    continue;
                };
                let now_hz = mode.frequency_hz;
                let against = |(from_pass, from_hz): (u32, f64)| {
                    FrequencyChange::between(from_pass, from_hz, now_hz)
                };
                let before = previous.get(label).copied();
                changes.push(PassChange {
                    label: label.to_string(),
                    pass_number: pass.number,
                    frequency_hz: now_hz,
                    vs_previous: before.map(against),
                    vs_first: before.and(first.get(label).copied()).map(against),
                });
                previous.insert(label, (pass.number, now_hz));
                first.entry(label).or_insert((pass.number, now_hz));
            }
            all.push(changes);
        }
        all
    }

    /// The labels used in any pass, in the order of [`Part::labels`].
    pub fn labels_in_use(&self) -> Vec<&str> {
        self.labels
            .iter()
            .filter(|l| self.passes.iter().any(|p| p.mode_labelled(l).is_some()))
            .map(String::as_str)
            .collect()
    }

    fn next_pass_number(&self) -> Result<u32, LedgerError> {
        u32::try_from(self.passes.len() + 1)
            .map_err(|_| LedgerError::Invalid("too many passes".into()))
    }

    fn check_known_label(&self, label: &str) -> Result<(), LedgerError> {
        if self.labels.iter().any(|l| l == label) {
            Ok(())
        } else {
            Err(LedgerError::UnknownLabel {
                part: self.name.clone(),
                label: label.to_string(),
            })
        }
    }

    pub(super) fn validate(&self) -> Result<(), LedgerError> {
        let where_part = format!("part \"{}\"", self.name);
        for (what, value) in [
            ("outline length", self.outline_length_mm),
            ("outline width", self.outline_width_mm),
        ] {
            if let Some(mm) = value {
                check_positive(&format!("{where_part}: {what}"), "mm", mm)?;
            }
        }
        for (index, label) in self.labels.iter().enumerate() {
            if label.trim().is_empty() {
                return Err(LedgerError::EmptyName("a label"));
            }
            if self.labels[..index].contains(label) {
                return Err(LedgerError::Invalid(format!(
                    "{where_part}: label \"{label}\" is listed twice"
                )));
            }
        }
        for (label, &hz) in &self.targets {
            self.check_known_label(label)?;
            check_positive(&format!("{where_part}: target of \"{label}\""), "Hz", hz)?;
        }
        for (index, pass) in self.passes.iter().enumerate() {
            if usize::try_from(pass.number).ok() != Some(index + 1) {
                return Err(LedgerError::Invalid(format!(
                    "{where_part}: pass {} is stored in place {}; passes must be numbered 1, 2, 3 ... in order",
                    pass.number,
                    index + 1
                )));
            }
            self.validate_pass(pass)?;
        }
        Ok(())
    }

    fn validate_pass(&self, pass: &Pass) -> Result<(), LedgerError> {
        let where_ = format!("part \"{}\", pass {}", self.name, pass.number);
        check_pass_values(
            &where_,
            pass.mass_g,
            &pass.thickness,
            pass.air_temp_c,
            pass.relative_humidity_pct,
        )?;
        for (index, mode) in pass.modes.iter().enumerate() {
            let measured = MeasuredMode {
                frequency_hz: mode.frequency_hz,
                q: mode.q,
                level_db: mode.level_db,
                spread_hz: mode.spread_hz,
            };
            check_mode_values(&where_, &measured)?;
            if let Some(name) = mode.label_name() {
                self.check_known_label(name)?;
                if pass.modes[..index]
                    .iter()
                    .any(|m| m.label_name() == Some(name))
                {
                    return Err(LedgerError::Invalid(format!(
                        "{where_}: label \"{name}\" is on two modes"
                    )));
                }
            }
        }
        if let Some(map) = &pass.shape_map {
            map.validate(&where_, &self.labels)?;
        }
        Ok(())
    }
}

pub(super) fn check_positive(
    what: &str,
    unit: &'static str,
    value: f64,
) -> Result<(), LedgerError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(LedgerError::NotPositive {
            what: what.to_string(),
            value,
            unit,
        })
    }
}

/// Thicker than any plate or body wall (a block of wood is not graduated).
pub(super) const MAX_THICKNESS_MM: f64 = 100.0;

/// Heavier than any part of a stringed instrument (a double bass body is a
/// few kilograms).
pub(super) const MAX_MASS_G: f64 = 100_000.0;

pub(super) fn check_at_most(
    what: &str,
    unit: &'static str,
    value: f64,
    most: f64,
) -> Result<(), LedgerError> {
    if value <= most {
        Ok(())
    } else {
        Err(LedgerError::Invalid(format!(
            "{what} is {value} {unit}; more than {most} {unit} cannot be a reading of a plate"
        )))
    }
}

pub(super) fn check_finite(what: &str, value: f64) -> Result<(), LedgerError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(LedgerError::Invalid(format!(
            "{what} is {value}, not a number"
        )))
    }
}

pub(super) fn check_pass_values(
    where_: &str,
    mass_g: f64,
    thickness: &[ThicknessReading],
    air_temp_c: Option<f64>,
    relative_humidity_pct: Option<f64>,
) -> Result<(), LedgerError> {
    check_positive(&format!("{where_}: mass"), "g", mass_g)?;
    check_at_most(&format!("{where_}: mass"), "g", mass_g, MAX_MASS_G)?;
    for (index, reading) in thickness.iter().enumerate() {
        let what = format!("{where_}: thickness at \"{}\"", reading.point);
        check_positive(&what, "mm", reading.thickness_mm)?;
        check_at_most(&what, "mm", reading.thickness_mm, MAX_THICKNESS_MM)?;
        if thickness[..index].iter().any(|r| r.point == reading.point) {
            return Err(LedgerError::Invalid(format!(
                "{where_}: thickness point \"{}\" is read twice",
                reading.point
            )));
        }
    }
    if let Some(temp_c) = air_temp_c {
        check_finite(&format!("{where_}: air temperature"), temp_c)?;
    }
    if let Some(rh) = relative_humidity_pct {
        if !(0.0..=100.0).contains(&rh) {
            return Err(LedgerError::Invalid(format!(
                "{where_}: relative humidity {rh} % is outside 0–100 %"
            )));
        }
    }
    Ok(())
}

pub(super) fn check_mode_values(where_: &str, mode: &MeasuredMode) -> Result<(), LedgerError> {
    check_positive(
        &format!("{where_}: mode frequency"),
        "Hz",
        mode.frequency_hz,
    )?;
    if !(mode.q.is_finite() && mode.q > 0.0) {
        return Err(LedgerError::Invalid(format!(
            "{where_}: mode Q is {}; a Q must be a positive number",
            mode.q
        )));
    }
    check_finite(&format!("{where_}: mode level"), mode.level_db)?;
    check_finite(&format!("{where_}: mode spread"), mode.spread_hz)
}
