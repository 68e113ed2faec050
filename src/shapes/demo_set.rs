//! The bundled roving-tap demo set: an invented violin top (nobody's real
//! instrument), free, arched 11 mm, of ordinary spruce graduated from
//! 3.1 mm in the middle to 2.6 mm at the rim and thinner towards the neck,
//! tapped twice at each point of a 5 × 9 grid with the microphone fixed.
//! Its modes 1 (twisting), 2 (the X) and 5 (the ring) come out at about 90,
//! 151 and 333 Hz, inside the ranges makers quote for a finished top
//! (references.md: mode 2 about 150–180 Hz, mode 5 about 320–370 Hz,
//! mode 5 near an octave above mode 2).
//!
//! [`roving_demo_set`] makes the points file and one recording per point in
//! memory; `tests/shapes_demo_set.rs` checks that the files in
//! `assets/roving_violin_top/` are exactly what it makes (and rewrites them
//! when `TAPWRIGHT_REGENERATE_ASSETS=1` is set). Short taps, 11 025 Hz,
//! 16-bit mono: the whole set is about 2 MB.

use std::fmt::Write as _;

use super::arching::Arch;
use super::grid::{tap_grid, TapPoint};
use super::outline::{Outline, OutlineShape};
use super::plate::{Edges, PlateError, PlateMaterial, PlateModel};
use super::synthetic::{synthesize_roving_taps, HeardMode, RovingTapSettings};

/// The set's folder under `assets/`.
pub const DEMO_SET_FOLDER: &str = "roving_violin_top";
/// The points file's name in that folder.
pub const DEMO_POINTS_FILE: &str = "points.csv";
/// Sample rate of the recordings.
pub const DEMO_SET_SAMPLE_RATE_HZ: u32 = 11_025;
/// Grid: columns across, rows along.
pub const DEMO_GRID: (usize, usize) = (5, 9);
/// Modes heard in the taps (the plate's lowest).
pub const DEMO_MODES_HEARD: usize = 8;
/// Each mode's Q (wood, invented).
const DEMO_QS: [f64; DEMO_MODES_HEARD] = [40.0, 50.0, 45.0, 55.0, 60.0, 50.0, 55.0, 60.0];
/// How each mode reaches the microphone (invented): the ring mode, which
/// moves the most air, loudest; the twisting mode, which moves little net
/// air, soft.
const DEMO_COUPLINGS: [f64; DEMO_MODES_HEARD] = [0.35, -0.7, 0.45, -0.4, 1.0, 0.5, -0.45, 0.35];
/// Degree of the plate model.
const DEMO_MODEL_DEGREE: usize = 14;
const DEMO_SEED: u64 = 0x5A_0020_0001;

/// The invented plate, solved.
#[derive(Clone, Debug)]
pub struct DemoPlate {
    pub outline: Outline,
    pub model: PlateModel,
    /// The tap points, in visiting order, positions rounded to 0.1 mm.
    pub grid: Vec<TapPoint>,
}

impl DemoPlate {
    /// Mode k's shape at the grid points, largest magnitude 1.
    pub fn shape_on_grid(&self, mode: usize) -> Vec<f64> {
        let values: Vec<f64> = self
            .grid
            .iter()
            .map(|p| self.model.shape_at(mode, p.x_mm, p.y_mm))
            .collect();
        let peak = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        values
            .iter()
            .map(|v| if peak > 0.0 { v / peak } else { 0.0 })
            .collect()
    }

    /// The modes as the microphone hears them.
    pub fn heard_modes(&self) -> Vec<HeardMode> {
        (0..DEMO_MODES_HEARD.min(self.model.modes().len()))
            .map(|k| HeardMode {
                frequency_hz: self.model.modes()[k].frequency_hz,
                q: DEMO_QS[k],
                coupling: DEMO_COUPLINGS[k],
            })
            .collect()
    }
}

/// The invented plate's material: ordinary spruce (`typical_spruce`).
pub fn demo_material() -> PlateMaterial {
    PlateMaterial::typical_spruce()
}

/// The invented plate's thickness at (x, y), mm: 3.1 in the middle, 2.6 at
/// the rim of the bouts, 0.5 mm less again towards the neck.
pub fn demo_thickness_mm(outline: &Outline, x_mm: f64, y_mm: f64) -> f64 {
    let length = outline.length_mm();
    let across = x_mm / outline.max_half_width_mm();
    let along = 2.0 * y_mm / length - 1.0;
    let r2 = (across * across + along * along).min(1.0);
    3.1 - 0.5 * r2 - 0.5 * (y_mm / length).powi(2)
}

/// The arch of the invented plate.
pub const DEMO_ARCH: Arch = Arch { height_mm: 11.0 };

/// Solves the invented plate and lays out its grid.
pub fn demo_plate() -> Result<DemoPlate, PlateError> {
    let outline = Outline::new(OutlineShape::typical_violin())
        .map_err(|_| PlateError::NotPositive("outline"))?;
    let thickness = |x: f64, y: f64| demo_thickness_mm(&outline, x, y);
    let model = PlateModel::solve_arched(
        &outline,
        &demo_material(),
        &thickness,
        Some(&DEMO_ARCH),
        Edges::Free,
        DEMO_MODEL_DEGREE,
    )?;
    let grid = tap_grid(&outline, DEMO_GRID.0, DEMO_GRID.1)
        .map_err(|_| PlateError::NotPositive("grid"))?
        .into_iter()
        .map(|p| {
            let round = |v: f64| (v * 10.0).round() / 10.0;
            TapPoint::new(p.name, round(p.x_mm), round(p.y_mm))
        })
        .collect();
    Ok(DemoPlate {
        outline,
        model,
        grid,
    })
}

/// How the demo taps are made.
pub fn demo_tap_settings() -> RovingTapSettings {
    RovingTapSettings {
        sample_rate_hz: f64::from(DEMO_SET_SAMPLE_RATE_HZ),
        taps_per_point: 2,
        lead_s: 0.25,
        tap_interval_s: 0.8,
        tail_s: 0.3,
        // A quiet workshop: at the points where the plate barely sounds
        // (near the nodal lines of the loud modes) the taps still clear
        // the trigger's 20 dB margin.
        noise_below_peak_db: 50.0,
        click_level: 0.02,
        seed: DEMO_SEED,
        ..RovingTapSettings::default()
    }
}

/// One recording of the set.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoRecording {
    /// File name in the set's folder ("3B.wav").
    pub file_name: String,
    /// Mono samples, full scale = 1.
    pub samples: Vec<f32>,
}

/// The whole set in memory.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoSet {
    /// The text of `points.csv`.
    pub points_csv: String,
    /// One recording per point, in the file's order.
    pub recordings: Vec<DemoRecording>,
    /// Samples per second.
    pub sample_rate_hz: u32,
}

/// Makes the demo set from the plate.
pub fn roving_demo_set(plate: &DemoPlate) -> DemoSet {
    let modes = plate.heard_modes();
    let shapes: Vec<Vec<f64>> = (0..modes.len()).map(|k| plate.shape_on_grid(k)).collect();
    let taps = synthesize_roving_taps(&modes, &shapes, &demo_tap_settings());
    let mut points_csv = String::from("point,x_mm,y_mm,file\n");
    let mut recordings = Vec::with_capacity(plate.grid.len());
    for (point, samples) in plate.grid.iter().zip(taps.recordings) {
        let file_name = format!("{}.wav", point.name);
        let _ = writeln!(
            points_csv,
            "{},{:.1},{:.1},{file_name}",
            point.name, point.x_mm, point.y_mm
        );
        recordings.push(DemoRecording { file_name, samples });
    }
    DemoSet {
        points_csv,
        recordings,
        sample_rate_hz: DEMO_SET_SAMPLE_RATE_HZ,
    }
}
