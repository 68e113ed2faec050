//! The part, its outline and the grid of tap points: a small form in the
//! maker's length unit. A violin or guitar outline is scaled to the part's
//! length and widths; when a part is chosen, its recorded outline length
//! and width fill the form (the waist and the upper bout keep the family's
//! proportions until the maker types their own).

use eframe::egui;

use crate::ledger::{Build, Family, Part};
use crate::shapes::{tap_grid, BoutWidths, Outline, OutlineError, OutlineShape, TapPoint};
use crate::text::units::{convert_typed, parse_in};
use crate::text::{number_text, LengthUnit};

/// Why the outline cannot be drawn, in one sentence with its sizes in the
/// maker's unit (the core's own message gives them in mm).
fn outline_problem(problem: &OutlineError, unit: LengthUnit) -> String {
    let size = |mm: f64| unit.size_text(mm);
    match problem {
        OutlineError::NotPositive { what, value } => format!(
            "The outline's {what} is {}; it must be a positive number.",
            size(*value)
        ),
        OutlineError::WaistTooWide {
            waist_mm,
            upper_mm,
            lower_mm,
        } => format!(
            "The waist ({}) must be narrower than both bouts ({} and {}).",
            size(*waist_mm),
            size(*upper_mm),
            size(*lower_mm)
        ),
        OutlineError::TooWide {
            width_mm,
            length_mm,
        } => format!(
            "A bout of {} is wider than the plate is long ({}).",
            size(*width_mm),
            size(*length_mm)
        ),
    }
}

/// Which outline the form describes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OutlineKind {
    Rectangle,
    Violin,
    Guitar,
}

impl OutlineKind {
    const ALL: [OutlineKind; 3] = [
        OutlineKind::Violin,
        OutlineKind::Guitar,
        OutlineKind::Rectangle,
    ];

    fn name(self) -> &'static str {
        match self {
            OutlineKind::Rectangle => "rectangle",
            OutlineKind::Violin => "violin outline",
            OutlineKind::Guitar => "guitar outline",
        }
    }

    /// The kind that suits a family's plates.
    fn for_family(family: Family) -> Self {
        match family {
            Family::Guitar | Family::Ukulele => OutlineKind::Guitar,
            Family::Violin | Family::Viola | Family::Cello => OutlineKind::Violin,
            _ => OutlineKind::Rectangle,
        }
    }

    /// The typical outline of this kind (a rectangle as long and wide as
    /// a violin plate).
    fn typical(self) -> OutlineShape {
        match self {
            OutlineKind::Violin => OutlineShape::typical_violin(),
            OutlineKind::Guitar => OutlineShape::typical_guitar(),
            OutlineKind::Rectangle => OutlineShape::Rectangle {
                length_mm: 356.0,
                width_mm: 206.0,
            },
        }
    }
}

/// The form: part, outline, grid and taps per point, as typed.
#[derive(Clone, Debug)]
pub struct SetupForm {
    /// The part of the open build the map is for.
    pub part: Option<String>,
    pub kind: OutlineKind,
    /// Sizes as typed, in the length unit shown.
    length: String,
    width: String,
    upper_bout: String,
    waist: String,
    lower_bout: String,
    /// The unit the sizes were typed in.
    unit: LengthUnit,
    columns: String,
    rows: String,
    /// Good taps wanted at each point (2 to 4).
    pub taps_per_point: usize,
}

impl Default for SetupForm {
    fn default() -> Self {
        let mut form = Self {
            part: None,
            kind: OutlineKind::Violin,
            length: String::new(),
            width: String::new(),
            upper_bout: String::new(),
            waist: String::new(),
            lower_bout: String::new(),
            unit: LengthUnit::Millimetre,
            columns: "5".to_owned(),
            rows: "9".to_owned(),
            taps_per_point: 2,
        };
        form.set_outline(OutlineShape::typical_violin(), LengthUnit::Millimetre);
        form
    }
}

impl SetupForm {
    /// Fills the size fields from an outline, in `unit`.
    pub fn set_outline(&mut self, shape: OutlineShape, unit: LengthUnit) {
        // Rounded as sizes are shown (0.1 mm, 0.01 in): scaled widths
        // would otherwise fill the fields with digits nobody measured.
        let text = |mm: f64| {
            let scale = 10f64.powi(unit.size_decimals() as i32);
            number_text((unit.from_mm(mm) * scale).round() / scale)
        };
        self.unit = unit;
        match shape {
            OutlineShape::Rectangle {
                length_mm,
                width_mm,
            } => {
                self.kind = OutlineKind::Rectangle;
                self.length = text(length_mm);
                self.width = text(width_mm);
            }
            OutlineShape::Violin(b) | OutlineShape::Guitar(b) => {
                self.kind = if matches!(shape, OutlineShape::Violin(_)) {
                    OutlineKind::Violin
                } else {
                    OutlineKind::Guitar
                };
                self.length = text(b.length_mm);
                self.upper_bout = text(b.upper_bout_mm);
                self.waist = text(b.waist_mm);
                self.lower_bout = text(b.lower_bout_mm);
                self.width = text(b.lower_bout_mm);
            }
        }
    }

    /// The outline the form describes, or one sentence on what is wrong.
    pub fn outline(&self) -> Result<Outline, String> {
        let unit = self.unit;
        let symbol = unit.symbol();
        let size = |what: &str, text: &str| -> Result<f64, String> {
            parse_in(unit, &format!("The {what} ({symbol})"), text)
        };
        let shape = match self.kind {
            OutlineKind::Rectangle => OutlineShape::Rectangle {
                length_mm: size("length", &self.length)?,
                width_mm: size("width", &self.width)?,
            },
            OutlineKind::Violin | OutlineKind::Guitar => {
                let widths = BoutWidths {
                    length_mm: size("length", &self.length)?,
                    upper_bout_mm: size("upper bout", &self.upper_bout)?,
                    waist_mm: size("waist", &self.waist)?,
                    lower_bout_mm: size("lower bout", &self.lower_bout)?,
                };
                if self.kind == OutlineKind::Violin {
                    OutlineShape::Violin(widths)
                } else {
                    OutlineShape::Guitar(widths)
                }
            }
        };
        Outline::new(shape).map_err(|e| outline_problem(&e, unit))
    }

    /// The grid's columns and rows, or one sentence on what is wrong.
    pub fn grid_size(&self) -> Result<(usize, usize), String> {
        let count = |what: &str, text: &str| -> Result<usize, String> {
            text.trim().parse::<usize>().map_err(|_| {
                format!(
                    "The number of {what} \"{}\" is not a whole number.",
                    text.trim()
                )
            })
        };
        Ok((count("columns", &self.columns)?, count("rows", &self.rows)?))
    }

    /// The outline and its tap points in visiting order, or one sentence.
    pub fn outline_and_grid(&self) -> Result<(Outline, Vec<TapPoint>), String> {
        let outline = self.outline()?;
        let (columns, rows) = self.grid_size()?;
        let grid =
            tap_grid(&outline, columns, rows).map_err(|e| crate::text::sentence(&e.to_string()))?;
        Ok((outline, grid))
    }

    /// Shows the sizes in `unit` if they were typed in another.
    fn follow_unit(&mut self, unit: LengthUnit) {
        if unit == self.unit {
            return;
        }
        for field in [
            &mut self.length,
            &mut self.width,
            &mut self.upper_bout,
            &mut self.waist,
            &mut self.lower_bout,
        ] {
            convert_typed(field, self.unit, unit);
        }
        self.unit = unit;
    }

    /// Takes the outline from a part: its family's kind, its recorded
    /// length and width (the widest bout); the waist and upper bout in the
    /// typical proportions of the family.
    fn take_from_part(&mut self, part: &Part, family: Family, unit: LengthUnit) {
        let kind = OutlineKind::for_family(family);
        let typical = kind.typical();
        let shape = match (typical, part.outline_length_mm, part.outline_width_mm) {
            (
                OutlineShape::Rectangle {
                    length_mm,
                    width_mm,
                },
                l,
                w,
            ) => OutlineShape::Rectangle {
                length_mm: l.unwrap_or(length_mm),
                width_mm: w.unwrap_or(width_mm),
            },
            (OutlineShape::Violin(b) | OutlineShape::Guitar(b), l, w) => {
                let scaled = scaled_bouts(b, l, w);
                if kind == OutlineKind::Violin {
                    OutlineShape::Violin(scaled)
                } else {
                    OutlineShape::Guitar(scaled)
                }
            }
        };
        self.set_outline(shape, unit);
    }
}

/// Typical bouts scaled to a part's length and widest width (each given
/// or not): along by the length, across by the width.
fn scaled_bouts(typical: BoutWidths, length_mm: Option<f64>, width_mm: Option<f64>) -> BoutWidths {
    let along = length_mm.map_or(1.0, |l| l / typical.length_mm);
    let widest = typical.lower_bout_mm.max(typical.upper_bout_mm);
    let across = width_mm.map_or(along, |w| w / widest);
    BoutWidths {
        length_mm: typical.length_mm * along,
        upper_bout_mm: typical.upper_bout_mm * across,
        waist_mm: typical.waist_mm * across,
        lower_bout_mm: typical.lower_bout_mm * across,
    }
}

/// Draws the form. `locked` greys it out while a grid is being tapped.
pub fn setup_form(
    ui: &mut egui::Ui,
    form: &mut SetupForm,
    build: Option<&Build>,
    unit: LengthUnit,
    locked: bool,
) {
    form.follow_unit(unit);
    ui.add_enabled_ui(!locked, |ui| {
        part_choice(ui, form, build, unit);
        let before = form.kind;
        egui::ComboBox::from_label("Outline")
            .selected_text(form.kind.name())
            .show_ui(ui, |ui| {
                for kind in OutlineKind::ALL {
                    ui.selectable_value(&mut form.kind, kind, kind.name());
                }
            });
        if form.kind != before {
            form.set_outline(form.kind.typical(), unit);
        }
        let symbol = unit.symbol();
        egui::Grid::new("shapes outline sizes")
            .num_columns(2)
            .spacing([8.0, 4.0])
            .show(ui, |ui| {
                size_field(ui, &format!("Length ({symbol})"), &mut form.length);
                match form.kind {
                    OutlineKind::Rectangle => {
                        size_field(ui, &format!("Width ({symbol})"), &mut form.width)
                    }
                    OutlineKind::Violin | OutlineKind::Guitar => {
                        size_field(ui, &format!("Upper bout ({symbol})"), &mut form.upper_bout);
                        size_field(ui, &format!("Waist ({symbol})"), &mut form.waist);
                        size_field(ui, &format!("Lower bout ({symbol})"), &mut form.lower_bout);
                    }
                }
                size_field(ui, "Columns across", &mut form.columns);
                size_field(ui, "Rows along", &mut form.rows);
            });
        ui.horizontal(|ui| {
            ui.label("Good taps per point");
            for count in crate::shapes::survey::TAPS_PER_POINT {
                ui.radio_value(&mut form.taps_per_point, count, count.to_string());
            }
        });
    });
}

fn size_field(ui: &mut egui::Ui, label: &str, text: &mut String) {
    let label = ui.label(label);
    ui.add(egui::TextEdit::singleline(text).desired_width(64.0))
        .labelled_by(label.id);
    ui.end_row();
}

fn part_choice(ui: &mut egui::Ui, form: &mut SetupForm, build: Option<&Build>, unit: LengthUnit) {
    let Some(build) = build else {
        ui.weak("No build is open: the map can be made and looked at, and kept once a build with a part is open (Ledger).");
        form.part = None;
        return;
    };
    if form
        .part
        .as_deref()
        .is_some_and(|name| build.part(name).is_none())
    {
        form.part = None;
    }
    let before = form.part.clone();
    egui::ComboBox::from_label("Part")
        .selected_text(form.part.as_deref().unwrap_or("choose a part"))
        .show_ui(ui, |ui| {
            for part in build.parts() {
                ui.selectable_value(&mut form.part, Some(part.name().to_owned()), part.name());
            }
        });
    if form.part != before {
        if let Some(part) = form.part.as_deref().and_then(|name| build.part(name)) {
            form.take_from_part(part, build.family(), unit);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_form_reads_sizes_in_the_unit_shown_and_names_a_bad_one() {
        let mut form = SetupForm::default();
        let outline = form.outline().expect("test value");
        assert_eq!(outline.shape(), OutlineShape::typical_violin());
        form.follow_unit(LengthUnit::Inch);
        // 356 mm is 14.015748 in (1 in = 25.4 mm exactly): the fewest
        // decimals that turn back into the same 356 mm.
        assert_eq!(form.length, "14.01575");
        assert!((form.outline().expect("test value").length_mm() - 356.0).abs() < 1e-4);
        form.follow_unit(LengthUnit::Millimetre);
        assert_eq!(form.length, "356");
        form.follow_unit(LengthUnit::Inch);
        // 9 in is 228.6 mm, wider than the bouts: said in inches.
        form.waist = "9".to_owned();
        let problem = form.outline().unwrap_err();
        assert!(
            problem.starts_with("The waist (9.00 in) must be narrower than both bouts ("),
            "{problem}"
        );
        assert!(!problem.contains("mm"), "{problem}");
        form.waist = "four".to_owned();
        assert_eq!(
            form.outline().unwrap_err(),
            "The waist (in) \"four\" is not a number."
        );
        form.columns = "5.5".to_owned();
        assert!(form.grid_size().unwrap_err().contains("columns"));
    }

    #[test]
    fn a_part_s_length_and_width_scale_the_family_outline() {
        let typical = match OutlineShape::typical_violin() {
            OutlineShape::Violin(b) => b,
            _ => unreachable!(),
        };
        // A viola-sized plate: 410 mm long, 240 mm at the lower bout.
        let scaled = scaled_bouts(typical, Some(410.0), Some(240.0));
        assert!((scaled.length_mm - 410.0).abs() < 1e-9);
        assert!((scaled.lower_bout_mm - 240.0).abs() < 1e-9);
        assert!((scaled.waist_mm - 111.0 * 240.0 / 206.0).abs() < 1e-9);
        // Only a length: the width follows in proportion.
        let scaled = scaled_bouts(typical, Some(178.0), None);
        assert!((scaled.lower_bout_mm - 103.0).abs() < 1e-9);
    }
}
