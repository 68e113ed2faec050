//! Plate outlines in millimetres: a rectangle, and a violin or a guitar
//! plate drawn from a simple radius function of our own, scaled to the
//! part's length and its upper-bout, waist and lower-bout widths.
//!
//! Coordinates: `x_mm` across the part, 0 on the centre line; `y_mm` along
//! it, 0 at the lower end (the tail) and `length_mm` at the upper end (the
//! neck). Every outline here is symmetric about the centre line and is cut
//! by each line across it in one piece, so it is fully described by its
//! half-width at each `y` ([`Outline::half_width_mm`]).
//!
//! The bouted outlines: the half-width is an elliptic arc from the lower
//! end (round, starting like √y) up to its widest at the lower-bout
//! station, a smooth step (3t² − 2t³, level at both ends) down to the
//! waist station, a smooth step up to the upper-bout station and an
//! elliptic arc closing at the upper end. Every piece meets the next with
//! the same (zero) slope, so the edge is smooth, and the widths at the
//! three stations are exactly the bout and waist widths asked for. The
//! stations (as shares of the length) are the family's proportions.

use serde::{Deserialize, Serialize};

use super::legendre::gauss_legendre;

/// Widths of a bouted plate (violin or guitar family), mm.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoutWidths {
    /// Length of the plate along its centre line, mm.
    pub length_mm: f64,
    /// Widest point of the upper bouts (towards the neck), mm.
    pub upper_bout_mm: f64,
    /// Narrowest point of the waist (the C-bouts), mm.
    pub waist_mm: f64,
    /// Widest point of the lower bouts, mm.
    pub lower_bout_mm: f64,
}

/// Which outline, and its size.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum OutlineShape {
    /// A rectangle (a test plate, a bar, a guitar brace blank).
    Rectangle {
        /// Along the part (y), mm.
        length_mm: f64,
        /// Across the part (x), mm.
        width_mm: f64,
    },
    /// A violin-family plate.
    Violin(BoutWidths),
    /// A guitar top or back.
    Guitar(BoutWidths),
}

impl OutlineShape {
    /// A full-size violin plate of typical size: 356 mm long, bouts 168 and
    /// 206 mm, waist 111 mm (common practice, no source).
    pub fn typical_violin() -> Self {
        OutlineShape::Violin(BoutWidths {
            length_mm: 356.0,
            upper_bout_mm: 168.0,
            waist_mm: 111.0,
            lower_bout_mm: 206.0,
        })
    }

    /// A classical guitar top of typical size: 490 mm long, bouts 285 and
    /// 365 mm, waist 235 mm (common practice, no source).
    pub fn typical_guitar() -> Self {
        OutlineShape::Guitar(BoutWidths {
            length_mm: 490.0,
            upper_bout_mm: 285.0,
            waist_mm: 235.0,
            lower_bout_mm: 365.0,
        })
    }

    /// Plain name for lists and files ("violin").
    pub fn kind_name(&self) -> &'static str {
        match self {
            OutlineShape::Rectangle { .. } => "rectangle",
            OutlineShape::Violin(_) => "violin",
            OutlineShape::Guitar(_) => "guitar",
        }
    }

    /// Length along the centre line, mm.
    pub fn length_mm(&self) -> f64 {
        match self {
            OutlineShape::Rectangle { length_mm, .. } => *length_mm,
            OutlineShape::Violin(b) | OutlineShape::Guitar(b) => b.length_mm,
        }
    }
}

/// Why an outline cannot be drawn.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum OutlineError {
    /// A size that must be a positive number is not.
    #[error("the outline's {what} is {value} mm; it must be a positive number")]
    NotPositive {
        /// Which size.
        what: &'static str,
        /// The value given.
        value: f64,
    },
    /// The waist is not narrower than both bouts.
    #[error(
        "the waist ({waist_mm} mm) must be narrower than both bouts ({upper_mm} and {lower_mm} mm)"
    )]
    WaistTooWide {
        /// The waist asked for.
        waist_mm: f64,
        /// The upper bout.
        upper_mm: f64,
        /// The lower bout.
        lower_mm: f64,
    },
    /// A bout wider than the plate is long.
    #[error("a bout of {width_mm} mm is wider than the plate is long ({length_mm} mm)")]
    TooWide {
        /// The bout width.
        width_mm: f64,
        /// The length.
        length_mm: f64,
    },
}

/// Where a family's widest and narrowest points lie, as shares of the
/// length from the lower end.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Stations {
    lower_bout: f64,
    waist: f64,
    upper_bout: f64,
}

/// Violin family (common practice, no source; an invented outline).
const VIOLIN_STATIONS: Stations = Stations {
    lower_bout: 0.24,
    waist: 0.53,
    upper_bout: 0.80,
};

/// Guitar (common practice, no source; an invented outline).
const GUITAR_STATIONS: Stations = Stations {
    lower_bout: 0.27,
    waist: 0.55,
    upper_bout: 0.80,
};

/// A bouted outline's radius function (see the module documentation).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Bouts {
    widths: BoutWidths,
    stations: Stations,
}

impl Bouts {
    /// Positions of the lower bout, waist and upper bout, mm.
    fn station_positions_mm(&self) -> [f64; 3] {
        let length = self.widths.length_mm;
        [
            self.stations.lower_bout * length,
            self.stations.waist * length,
            self.stations.upper_bout * length,
        ]
    }

    fn half_width_at(&self, y_mm: f64) -> f64 {
        let length = self.widths.length_mm;
        let [lower_y, waist_y, upper_y] = self.station_positions_mm();
        let lower = self.widths.lower_bout_mm / 2.0;
        let waist = self.widths.waist_mm / 2.0;
        let upper = self.widths.upper_bout_mm / 2.0;
        let arc = |half: f64, u: f64| half * (1.0 - u * u).max(0.0).sqrt();
        let step = |t: f64| t * t * (3.0 - 2.0 * t);
        if !(0.0..=length).contains(&y_mm) {
            0.0
        } else if y_mm <= lower_y {
            arc(lower, (y_mm - lower_y) / lower_y)
        } else if y_mm <= waist_y {
            lower + (waist - lower) * step((y_mm - lower_y) / (waist_y - lower_y))
        } else if y_mm <= upper_y {
            waist + (upper - waist) * step((y_mm - waist_y) / (upper_y - waist_y))
        } else {
            arc(upper, (y_mm - upper_y) / (length - upper_y))
        }
    }
}

/// A plate outline, ready for point tests, drawing and integration.
#[derive(Clone, Debug, PartialEq)]
pub struct Outline {
    shape: OutlineShape,
    bouts: Option<Bouts>,
    max_half_width_mm: f64,
}

impl Outline {
    /// Draws the outline; fails with one sentence on sizes that cannot make
    /// a plate.
    pub fn new(shape: OutlineShape) -> Result<Self, OutlineError> {
        match shape {
            OutlineShape::Rectangle {
                length_mm,
                width_mm,
            } => {
                check_positive("length", length_mm)?;
                check_positive("width", width_mm)?;
                Ok(Self {
                    shape,
                    bouts: None,
                    max_half_width_mm: width_mm / 2.0,
                })
            }
            OutlineShape::Violin(widths) => Self::bouted(shape, widths, VIOLIN_STATIONS),
            OutlineShape::Guitar(widths) => Self::bouted(shape, widths, GUITAR_STATIONS),
        }
    }

    fn bouted(
        shape: OutlineShape,
        widths: BoutWidths,
        stations: Stations,
    ) -> Result<Self, OutlineError> {
        check_bout_widths(&widths)?;
        let bouts = Bouts { widths, stations };
        let max_half_width_mm = widths.upper_bout_mm.max(widths.lower_bout_mm) / 2.0;
        Ok(Self {
            shape,
            bouts: Some(bouts),
            max_half_width_mm,
        })
    }

    /// What was asked for.
    pub fn shape(&self) -> OutlineShape {
        self.shape
    }

    /// Length along the centre line, mm.
    pub fn length_mm(&self) -> f64 {
        self.shape.length_mm()
    }

    /// Half of the widest width, mm.
    pub fn max_half_width_mm(&self) -> f64 {
        self.max_half_width_mm
    }

    /// Half the width of the outline at `y_mm` (0 outside the length).
    pub fn half_width_mm(&self, y_mm: f64) -> f64 {
        if !(0.0..=self.length_mm()).contains(&y_mm) {
            return 0.0;
        }
        match &self.bouts {
            None => self.max_half_width_mm,
            Some(bouts) => bouts.half_width_at(y_mm),
        }
    }

    /// True if the point lies inside the outline or on its edge.
    pub fn contains(&self, x_mm: f64, y_mm: f64) -> bool {
        x_mm.abs() <= self.half_width_mm(y_mm) && (0.0..=self.length_mm()).contains(&y_mm)
    }

    /// The edge as a closed polygon (first point not repeated),
    /// counter-clockwise, with about `points_per_side` points up each side
    /// (denser near the ends, where the edge turns fastest).
    pub fn boundary(&self, points_per_side: usize) -> Vec<[f64; 2]> {
        let length = self.length_mm();
        if self.bouts.is_none() {
            let w = self.max_half_width_mm;
            return vec![[-w, 0.0], [w, 0.0], [w, length], [-w, length]];
        }
        let n = points_per_side.max(8);
        let ys: Vec<f64> = (0..=n)
            .map(|i| length * (1.0 - (std::f64::consts::PI * i as f64 / n as f64).cos()) / 2.0)
            .collect();
        let mut polygon: Vec<[f64; 2]> = ys.iter().map(|&y| [self.half_width_mm(y), y]).collect();
        polygon.extend(
            ys.iter()
                .rev()
                .skip(1)
                .take(n - 1)
                .map(|&y| [-self.half_width_mm(y), y]),
        );
        polygon
    }

    /// Area, mm².
    pub fn area_mm2(&self) -> f64 {
        self.quadrature(4).iter().map(|p| p.weight_mm2).sum()
    }

    /// Points and weights that integrate over the outline: exact for a
    /// rectangle and polynomials of degree up to 2·`degree` + 5 in each
    /// coordinate; for bouted outlines Gauss–Legendre across at each of the
    /// Gauss points of a cosine substitution along (which smooths the
    /// square-root ends).
    pub(crate) fn quadrature(&self, degree: usize) -> Vec<QuadraturePoint> {
        let (x_nodes, x_weights) = gauss_legendre(degree + 3);
        let length = self.length_mm();
        let along: Vec<(f64, f64)> = if self.bouts.is_none() {
            let (nodes, weights) = gauss_legendre(degree + 3);
            nodes
                .iter()
                .zip(&weights)
                .map(|(t, w)| (length * (1.0 + t) / 2.0, w * length / 2.0))
                .collect()
        } else {
            let stations = self.bouts.map(|b| b.station_positions_mm());
            cosine_rule(
                length,
                stations.as_ref().map_or(&[], |s| &s[..]),
                degree + 8,
            )
        };
        let mut points = Vec::with_capacity(along.len() * x_nodes.len());
        for (y_mm, y_weight) in along {
            let half = self.half_width_mm(y_mm);
            if half <= 0.0 {
                continue;
            }
            for (t, w) in x_nodes.iter().zip(&x_weights) {
                points.push(QuadraturePoint {
                    x_mm: half * t,
                    y_mm,
                    weight_mm2: y_weight * w * half,
                });
            }
        }
        points
    }
}

/// One integration point over an outline.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct QuadraturePoint {
    pub x_mm: f64,
    pub y_mm: f64,
    pub weight_mm2: f64,
}

/// A rule over [0, length] in y = length·(1 − cos θ)/2, θ in [0, π]:
/// composite Gauss–Legendre in θ, `per_panel` points in each of two panels
/// between consecutive breaks (the ends and the `breaks_mm`, where the
/// radius function changes piece), so each panel integrates a smooth
/// function.
fn cosine_rule(length_mm: f64, breaks_mm: &[f64], per_panel: usize) -> Vec<(f64, f64)> {
    let (nodes, weights) = gauss_legendre(per_panel);
    let to_theta = |y: f64| (1.0 - 2.0 * y / length_mm).clamp(-1.0, 1.0).acos();
    let mut edges: Vec<f64> = vec![0.0];
    edges.extend(breaks_mm.iter().map(|&y| to_theta(y)));
    edges.push(std::f64::consts::PI);
    let mut rule = Vec::new();
    for pair in edges.windows(2) {
        let middle = 0.5 * (pair[0] + pair[1]);
        for (start, end) in [(pair[0], middle), (middle, pair[1])] {
            let width = end - start;
            for (t, w) in nodes.iter().zip(&weights) {
                let theta = start + width * (1.0 + t) / 2.0;
                let y = length_mm * (1.0 - theta.cos()) / 2.0;
                let dy_dtheta = length_mm * theta.sin() / 2.0;
                rule.push((y, w * width / 2.0 * dy_dtheta));
            }
        }
    }
    rule
}

fn check_positive(what: &'static str, value: f64) -> Result<(), OutlineError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(OutlineError::NotPositive { what, value })
    }
}

/// Checks a bouted outline's widths: positive, no bout wider than the
/// plate is long, the waist narrower than both bouts.
fn check_bout_widths(widths: &BoutWidths) -> Result<(), OutlineError> {
    check_positive("length", widths.length_mm)?;
    check_positive("upper bout width", widths.upper_bout_mm)?;
    check_positive("waist width", widths.waist_mm)?;
    check_positive("lower bout width", widths.lower_bout_mm)?;
    let widest = widths.upper_bout_mm.max(widths.lower_bout_mm);
    if widest > widths.length_mm {
        return Err(OutlineError::TooWide {
            width_mm: widest,
            length_mm: widths.length_mm,
        });
    }
    if widths.waist_mm >= widths.upper_bout_mm.min(widths.lower_bout_mm) {
        return Err(OutlineError::WaistTooWide {
            waist_mm: widths.waist_mm,
            upper_mm: widths.upper_bout_mm,
            lower_mm: widths.lower_bout_mm,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn measured_widths(outline: &Outline) -> (f64, f64, f64) {
        // Widest below and above the narrowest point between 20 % and 80 %.
        let length = outline.length_mm();
        let ys: Vec<f64> = (0..=4000).map(|i| length * i as f64 / 4000.0).collect();
        let widths: Vec<f64> = ys.iter().map(|&y| 2.0 * outline.half_width_mm(y)).collect();
        let (lo, hi) = (800, 3200);
        let waist_index = (lo..hi)
            .min_by(|&a, &b| widths[a].total_cmp(&widths[b]))
            .unwrap();
        let lower = widths[..waist_index].iter().cloned().fold(0.0, f64::max);
        let upper = widths[waist_index..].iter().cloned().fold(0.0, f64::max);
        (upper, widths[waist_index], lower)
    }

    #[test]
    fn violin_and_guitar_outlines_have_the_widths_asked_for() {
        for shape in [
            OutlineShape::typical_violin(),
            OutlineShape::typical_guitar(),
        ] {
            let outline = Outline::new(shape).unwrap();
            let (OutlineShape::Violin(asked) | OutlineShape::Guitar(asked)) = shape else {
                unreachable!()
            };
            let (upper, waist, lower) = measured_widths(&outline);
            assert!(
                (upper - asked.upper_bout_mm).abs() < 0.1,
                "{shape:?}: upper {upper}"
            );
            assert!(
                (waist - asked.waist_mm).abs() < 0.1,
                "{shape:?}: waist {waist}"
            );
            assert!(
                (lower - asked.lower_bout_mm).abs() < 0.1,
                "{shape:?}: lower {lower}"
            );
            // Closed at both ends, and the ends are round (the width grows
            // like √y near them, so at 1 % of the length it is already wide).
            assert_eq!(outline.half_width_mm(0.0), 0.0);
            assert!(outline.half_width_mm(outline.length_mm()) < 1e-9);
            assert!(outline.half_width_mm(0.01 * outline.length_mm()) > 0.08 * lower);
        }
    }

    #[test]
    fn point_test_and_area() {
        let rectangle = Outline::new(OutlineShape::Rectangle {
            length_mm: 300.0,
            width_mm: 200.0,
        })
        .unwrap();
        assert!(rectangle.contains(99.9, 0.1));
        assert!(!rectangle.contains(100.1, 150.0));
        assert!(!rectangle.contains(0.0, -0.1));
        assert!((rectangle.area_mm2() - 60_000.0).abs() < 1e-6);
        let violin = Outline::new(OutlineShape::typical_violin()).unwrap();
        assert!(violin.contains(0.0, 178.0));
        assert!(violin.contains(100.0, 85.0));
        assert!(!violin.contains(70.0, 190.0), "the waist is 111 mm wide");
        assert!(!violin.contains(0.0, 357.0));
        // The area lies between the inscribed and the circumscribed
        // shapes: more than a 111 mm wide strip, less than the bounding box.
        let area = violin.area_mm2();
        assert!(area > 356.0 * 111.0 && area < 356.0 * 206.0, "{area}");
        // Against the polygon's own area (shoelace), drawn finely.
        let polygon = violin.boundary(2000);
        let shoelace: f64 = (0..polygon.len())
            .map(|i| {
                let (a, b) = (polygon[i], polygon[(i + 1) % polygon.len()]);
                a[0] * b[1] - b[0] * a[1]
            })
            .sum::<f64>()
            / 2.0;
        assert!(
            (shoelace - area).abs() < 1e-4 * area,
            "{shoelace} vs {area}"
        );
    }

    #[test]
    fn impossible_outlines_are_refused() {
        let mut widths = BoutWidths {
            length_mm: 356.0,
            upper_bout_mm: 168.0,
            waist_mm: 180.0,
            lower_bout_mm: 206.0,
        };
        assert!(matches!(
            Outline::new(OutlineShape::Violin(widths)),
            Err(OutlineError::WaistTooWide { .. })
        ));
        widths.waist_mm = 111.0;
        widths.lower_bout_mm = 400.0;
        assert!(matches!(
            Outline::new(OutlineShape::Violin(widths)),
            Err(OutlineError::TooWide { .. })
        ));
        widths.lower_bout_mm = f64::NAN;
        let error = Outline::new(OutlineShape::Violin(widths)).unwrap_err();
        assert_eq!(
            error.to_string(),
            "the outline's lower bout width is NaN mm; it must be a positive number"
        );
    }
}
