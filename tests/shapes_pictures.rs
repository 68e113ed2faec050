//! Pictures of the demo plate's modes, the map found from the bundled
//! roving taps, and carving guides, for looking at by eye (not checks):
//! `TAPWRIGHT_SHAPE_PICTURES=<folder> cargo test --test shapes_pictures --
//! --ignored`. Each picture is a PPM file (convert it to PNG with any
//! image tool). Red is one sign, blue the other, black the zero line;
//! black dots are tap points with a certain sign, grey ones uncertain.

use std::path::{Path, PathBuf};

use tapwright::shapes::demo_set::{demo_material, demo_plate, demo_thickness_mm, DEMO_SET_FOLDER};
use tapwright::shapes::{
    estimate_shapes, roving_trigger_settings, taps_in_recording, CarvingMap, ModeDrawing, Outline,
    PointTaps, ShapeSettings, ShapeSurface, TwoModeGuide,
};
use tapwright::wav_io::read_mono;

/// Pixels per mm.
const SCALE: f64 = 1.2;

fn picture_folder() -> Option<PathBuf> {
    std::env::var_os("TAPWRIGHT_SHAPE_PICTURES").map(PathBuf::from)
}

/// One tile: a field over the outline and dots (x, y, certain).
struct Tile<'a> {
    field: Box<dyn Fn(f64, f64) -> f64 + 'a>,
    dots: Vec<(f64, f64, bool)>,
}

fn render(outline: &Outline, tiles: &[Tile]) -> Vec<u8> {
    let half = outline.max_half_width_mm();
    let (tile_w, tile_h) = (
        (2.0 * half * SCALE).ceil() as usize + 8,
        (outline.length_mm() * SCALE).ceil() as usize + 8,
    );
    let width = tile_w * tiles.len();
    let mut pixels = vec![[235u8, 235, 235]; width * tile_h];
    let to_mm = |px: usize, py: usize| {
        (
            (px as f64 - 4.0) / SCALE - half,
            outline.length_mm() - (py as f64 - 4.0) / SCALE,
        )
    };
    for (t, tile) in tiles.iter().enumerate() {
        let mut values = vec![f64::NAN; tile_w * tile_h];
        let mut peak = 0.0f64;
        for py in 0..tile_h {
            for px in 0..tile_w {
                let (x, y) = to_mm(px, py);
                if outline.contains(x, y) {
                    let v = (tile.field)(x, y);
                    values[py * tile_w + px] = v;
                    if v.is_finite() {
                        peak = peak.max(v.abs());
                    }
                }
            }
        }
        for py in 0..tile_h {
            for px in 0..tile_w {
                let v = values[py * tile_w + px];
                if !v.is_finite() {
                    continue;
                }
                let s = (v / peak).clamp(-1.0, 1.0);
                let fade = (255.0 * (1.0 - s.abs())) as u8;
                let mut colour = if s >= 0.0 {
                    [255, fade, fade]
                } else {
                    [fade, fade, 255]
                };
                let right = values
                    .get(py * tile_w + px + 1)
                    .copied()
                    .unwrap_or(f64::NAN);
                let below = values
                    .get((py + 1) * tile_w + px)
                    .copied()
                    .unwrap_or(f64::NAN);
                if (right.is_finite() && right.signum() != v.signum())
                    || (below.is_finite() && below.signum() != v.signum())
                {
                    colour = [0, 0, 0];
                }
                pixels[py * width + t * tile_w + px] = colour;
            }
        }
        for &(x, y, certain) in &tile.dots {
            let cx = ((x + half) * SCALE + 4.0) as i64;
            let cy = ((outline.length_mm() - y) * SCALE + 4.0) as i64;
            for dy in -2..=2i64 {
                for dx in -2..=2i64 {
                    let (px, py) = (cx + dx, cy + dy);
                    if px >= 0 && py >= 0 && (px as usize) < tile_w && (py as usize) < tile_h {
                        pixels[py as usize * width + t * tile_w + px as usize] =
                            if certain { [0, 0, 0] } else { [150, 150, 150] };
                    }
                }
            }
        }
    }
    let mut ppm = format!("P6\n{width} {tile_h}\n255\n").into_bytes();
    for p in pixels {
        ppm.extend_from_slice(&p);
    }
    ppm
}

#[test]
#[ignore = "writes pictures for looking at; set TAPWRIGHT_SHAPE_PICTURES"]
fn demo_plate_map_and_carving_guides() {
    let Some(folder) = picture_folder() else {
        return;
    };
    let plate = demo_plate().unwrap();
    for (k, mode) in plate.model.modes().iter().take(8).enumerate() {
        println!("model mode {}: {:.1} Hz", k + 1, mode.frequency_hz);
    }
    let model = &plate.model;
    let model_tiles: Vec<Tile> = (0..8)
        .map(|k| Tile {
            field: Box::new(move |x, y| model.shape_at(k, x, y)),
            dots: plate.grid.iter().map(|p| (p.x_mm, p.y_mm, true)).collect(),
        })
        .collect();
    std::fs::write(
        folder.join("demo_model.ppm"),
        render(&plate.outline, &model_tiles),
    )
    .unwrap();

    let set = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("assets")
        .join(DEMO_SET_FOLDER);
    let mut rate = 0.0;
    let points: Vec<PointTaps> = plate
        .grid
        .iter()
        .map(|point| {
            let recording = read_mono(&set.join(format!("{}.wav", point.name))).unwrap();
            rate = f64::from(recording.sample_rate_hz);
            let found = taps_in_recording(&recording.samples, rate, &roving_trigger_settings());
            PointTaps {
                point: point.clone(),
                taps: found.accepted,
            }
        })
        .collect();
    let map = estimate_shapes(&points, rate, &ShapeSettings::default()).unwrap();
    let drawings: Vec<ModeDrawing> = map
        .modes
        .iter()
        .map(|m| {
            ModeDrawing::new(
                &plate.outline,
                &plate.grid,
                &m.values,
                &m.uncertainties,
                2.0,
            )
            .unwrap()
        })
        .collect();
    let map_tiles: Vec<Tile> = drawings
        .iter()
        .zip(&map.modes)
        .take(8)
        .map(|(d, m)| Tile {
            field: Box::new(move |x, y| d.surface.derivatives_at(x, y).value),
            dots: plate
                .grid
                .iter()
                .enumerate()
                .map(|(i, p)| (p.x_mm, p.y_mm, !m.is_uncertain(i)))
                .collect(),
        })
        .collect();
    for m in &map.modes {
        println!("map mode {:.1} Hz quality {:.3}", m.frequency_hz, m.quality);
    }
    std::fs::write(
        folder.join("demo_map.ppm"),
        render(&plate.outline, &map_tiles),
    )
    .unwrap();

    // Carving guides from the map: modes 2 and 5 (the X and the ring),
    // and where thinning lowers mode 5 and spares mode 2.
    let centre_mm = demo_thickness_mm(&plate.outline, 0.0, 0.5 * plate.outline.length_mm());
    let stiffness = demo_material().bending_stiffness(centre_mm);
    let positions: Vec<[f64; 2]> = plate.grid.iter().map(|p| [p.x_mm, p.y_mm]).collect();
    let guide = |k: usize| {
        CarvingMap::over_points(
            &plate.outline,
            &drawings[k].surface,
            &stiffness,
            3.0,
            &positions,
        )
    };
    let (x_mode, ring) = (guide(1), guide(4));
    let two = TwoModeGuide::new(&ring, &x_mode).unwrap();
    let lookup = |raster: &tapwright::shapes::Raster, values: &[f64], x: f64, y: f64| {
        let column = ((x - raster.x0_mm) / raster.step_mm).round() as usize;
        let row = ((y - raster.y0_mm) / raster.step_mm).round() as usize;
        values
            .get(row * raster.columns + column)
            .copied()
            .unwrap_or(f64::NAN)
    };
    let carving_tiles = vec![
        Tile {
            field: Box::new(|x, y| lookup(&x_mode.raster, &x_mode.relative_density, x, y)),
            dots: Vec::new(),
        },
        Tile {
            field: Box::new(|x, y| lookup(&ring.raster, &ring.relative_density, x, y)),
            dots: Vec::new(),
        },
        Tile {
            field: Box::new(|x, y| lookup(&two.raster, &two.selective, x, y)),
            dots: Vec::new(),
        },
        Tile {
            field: Box::new(|x, y| lookup(&two.raster, &two.ratio_change, x, y)),
            dots: Vec::new(),
        },
    ];
    std::fs::write(
        folder.join("demo_carving.ppm"),
        render(&plate.outline, &carving_tiles),
    )
    .unwrap();
}
