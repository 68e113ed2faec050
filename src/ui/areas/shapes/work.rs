//! The Shapes area's background work, on the window's job runner: the file
//! dialog for a points file, reading a recorded set, and turning taps into
//! a map ready to draw (estimation, fitted surfaces, nodal lines and the
//! carving guide of every mode), so the window never waits for it.

use std::path::{Path, PathBuf};

use crate::analysis::RejectReason;
use crate::roving_set::{default_band_hz, read_roving_set, shape_settings};
use crate::shapes::demo_set::{DEMO_POINTS_FILE, DEMO_SET_FOLDER};
use crate::shapes::{
    estimate_shapes, CarvingMap, ModeDrawing, ModeShape, Outline, PlateMaterial, PointTaps,
    ShapeMap, TapPoint,
};
use crate::text::one_sentence;
use crate::ui::dialogs::FileDialog;
use crate::ui::jobs::{Inbox, Jobs};

/// Open a points file (Shapes).
pub const OPEN_POINTS: FileDialog = FileDialog {
    title: "Open a roving-tap set (points file)",
    filter: "Points file (CSV)",
    extensions: &["csv", "CSV"],
};

/// About this many raster steps along the plate's length (2.4 mm on a
/// violin plate): fine enough for smooth nodal lines, quick to fit.
const RASTER_STEPS_ALONG: f64 = 150.0;
/// The carving guide's plate: only the ratios of the stiffnesses matter
/// (along, across, twist); ordinary spruce 3 mm thick.
const CARVING_THICKNESS_MM: f64 = 3.0;

/// Where a map came from.
#[derive(Clone, Debug, PartialEq)]
pub enum MapSource {
    /// A points file and its recordings.
    Set(PathBuf),
    /// The bundled demo set.
    DemoSet,
    /// A grid tapped live.
    Live,
}

impl MapSource {
    /// For the heading ("the demo set", "points.csv").
    pub fn describe(&self) -> String {
        match self {
            MapSource::Set(path) => path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| path.display().to_string()),
            MapSource::DemoSet => "the demo set (an invented violin top)".to_owned(),
            MapSource::Live => "the grid tapped here".to_owned(),
        }
    }
}

/// One mode of a map, ready to draw.
#[derive(Clone, Debug)]
pub struct DrawnMode {
    /// The estimate (frequency, Q, values, spreads, uncertainties, quality).
    pub shape: ModeShape,
    /// The fitted surface, its raster and nodal lines, or why the surface
    /// could not be fitted.
    pub drawing: Result<ModeDrawing, String>,
    /// The carving guide over the area the points cover.
    pub carving: Option<CarvingMap>,
}

/// A whole map, ready to draw.
#[derive(Clone, Debug)]
pub struct DrawnMap {
    pub source: MapSource,
    pub outline: Outline,
    pub points: Vec<TapPoint>,
    /// Taps used at each point.
    pub taps_used: Vec<usize>,
    /// Taps left out at each point, with the trigger's reasons.
    pub rejected: Vec<Vec<RejectReason>>,
    pub modes: Vec<DrawnMode>,
    pub sample_rate_hz: u32,
}

impl DrawnMap {
    /// Points that lie outside the outline (a points file made for another
    /// outline or size).
    pub fn points_outside(&self) -> usize {
        self.points
            .iter()
            .filter(|p| !self.outline.contains(p.x_mm, p.y_mm))
            .count()
    }
}

/// The answers of the area's jobs.
#[derive(Debug)]
pub enum ShapesJob {
    /// A points file was chosen (None: the dialog was cancelled).
    FileChosen(Option<PathBuf>),
    /// A map was made (or not). `request` tells stale answers from the
    /// latest one.
    Mapped {
        request: u64,
        result: Result<Box<DrawnMap>, String>,
    },
}

/// The area's jobs.
#[derive(Debug, Default)]
pub struct ShapesWork {
    inbox: Option<Inbox<ShapesJob>>,
    /// The latest map asked for.
    request: u64,
    /// What that map is being made from, while it is.
    pub mapping: Option<String>,
}

impl ShapesWork {
    fn spawn(&mut self, jobs: &Jobs, work: impl FnOnce() -> ShapesJob + Send + 'static) {
        self.inbox
            .get_or_insert_with(|| jobs.inbox())
            .spawn("shapes", work);
    }

    /// Shows the dialog for a points file.
    pub fn choose_points_file(&mut self, jobs: &Jobs) {
        self.spawn(jobs, || ShapesJob::FileChosen(OPEN_POINTS.pick()));
    }

    /// Reads a recorded set and maps it over `outline`.
    pub fn map_set(&mut self, jobs: &Jobs, source: MapSource, path: PathBuf, outline: Outline) {
        self.request += 1;
        let request = self.request;
        self.mapping = Some(source.describe());
        self.spawn(jobs, move || ShapesJob::Mapped {
            request,
            result: map_recorded_set(source, &path, outline).map(Box::new),
        });
    }

    /// Maps the taps of a grid tapped live.
    pub fn map_taps(
        &mut self,
        jobs: &Jobs,
        points: Vec<PointTaps>,
        sample_rate_hz: u32,
        outline: Outline,
    ) {
        self.request += 1;
        let request = self.request;
        self.mapping = Some(MapSource::Live.describe());
        self.spawn(jobs, move || {
            let rejected = vec![Vec::new(); points.len()];
            ShapesJob::Mapped {
                request,
                result: draw_taps(MapSource::Live, &points, rejected, sample_rate_hz, outline)
                    .map(Box::new),
            }
        });
    }

    /// The answers that arrived; a map asked for before the latest one is
    /// dropped.
    pub fn take(&mut self) -> Vec<ShapesJob> {
        let arrived = self.inbox.as_mut().map(Inbox::drain).unwrap_or_default();
        let latest = self.request;
        let mut kept = Vec::with_capacity(arrived.len());
        for job in arrived {
            match job {
                ShapesJob::Mapped { request, .. } if request != latest => {}
                ShapesJob::Mapped { .. } => {
                    self.mapping = None;
                    kept.push(job);
                }
                other => kept.push(other),
            }
        }
        kept
    }
}

/// Where the bundled demo set is: beside the sources (a build from the
/// source tree) or in an `assets` folder next to the program or two levels
/// up (target/debug).
pub fn demo_set_path() -> Option<PathBuf> {
    let relative = Path::new("assets")
        .join(DEMO_SET_FOLDER)
        .join(DEMO_POINTS_FILE);
    let mut candidates = vec![Path::new(env!("CARGO_MANIFEST_DIR")).join(&relative)];
    if let Some(folder) = std::env::current_exe()
        .ok()
        .and_then(|p| p.parent().map(Path::to_path_buf))
    {
        candidates.push(folder.join(&relative));
        if let Some(up) = folder.parent().and_then(Path::parent) {
            candidates.push(up.join(&relative));
        }
    }
    candidates.into_iter().find(|p| p.is_file())
}

fn map_recorded_set(source: MapSource, path: &Path, outline: Outline) -> Result<DrawnMap, String> {
    let set = read_roving_set(path).map_err(|e| one_sentence(&e))?;
    draw_taps(
        source,
        &set.points,
        set.rejected,
        set.sample_rate_hz,
        outline,
    )
}

/// Estimates the shapes and draws every mode.
fn draw_taps(
    source: MapSource,
    points: &[PointTaps],
    rejected: Vec<Vec<RejectReason>>,
    sample_rate_hz: u32,
    outline: Outline,
) -> Result<DrawnMap, String> {
    let fs = f64::from(sample_rate_hz);
    let map = estimate_shapes(points, fs, &shape_settings(default_band_hz(fs)))
        .map_err(|e| crate::text::sentence(&format!("{}: {e}", source.describe())))?;
    Ok(draw_map(source, &map, rejected, sample_rate_hz, outline))
}

/// Fits and rasters every mode of `map` over `outline`.
fn draw_map(
    source: MapSource,
    map: &ShapeMap,
    rejected: Vec<Vec<RejectReason>>,
    sample_rate_hz: u32,
    outline: Outline,
) -> DrawnMap {
    let points: Vec<TapPoint> = map.points.iter().map(|p| p.point.clone()).collect();
    let positions: Vec<[f64; 2]> = points.iter().map(|p| [p.x_mm, p.y_mm]).collect();
    let step_mm = raster_step_mm(&outline);
    let stiffness = PlateMaterial::typical_spruce().bending_stiffness(CARVING_THICKNESS_MM);
    let modes = map
        .modes
        .iter()
        .map(|shape| {
            let drawing = ModeDrawing::new(
                &outline,
                &points,
                &shape.values,
                &shape.uncertainties,
                step_mm,
            )
            .map_err(|e| crate::text::sentence(&e.to_string()));
            let carving = drawing.as_ref().ok().map(|d| {
                CarvingMap::over_points(&outline, &d.surface, &stiffness, step_mm, &positions)
            });
            DrawnMode {
                shape: shape.clone(),
                drawing,
                carving,
            }
        })
        .collect();
    DrawnMap {
        source,
        outline,
        taps_used: map.points.iter().map(|p| p.taps_used()).collect(),
        points,
        rejected,
        modes,
        sample_rate_hz,
    }
}

/// The raster step for an outline: about [`RASTER_STEPS_ALONG`] steps
/// along its length, mm.
pub fn raster_step_mm(outline: &Outline) -> f64 {
    (outline.length_mm().max(2.0 * outline.max_half_width_mm()) / RASTER_STEPS_ALONG).max(0.5)
}
