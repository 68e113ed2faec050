//! Where to carve: how a small, even thinning of one part of the plate
//! moves a mode, from the mode's shape. A first-order guide for small,
//! even removals, not a rule.
//!
//! By Rayleigh's quotient ω² = U/T (U the bending energy, T the kinetic
//! energy per ω² of the mode's shape), and the shape itself does not
//! change to first order (Fox & Kapoor, AIAA J. 6(12), 1968: the
//! sensitivity of an eigenvalue is the change of the quotient at the fixed
//! eigenvector). Thinning a region R by a fraction ε scales its bending
//! stiffness by (1 − ε)³ (D ∝ h³) and its mass by (1 − ε), so
//! δU = −3ε·U_R and δT = −ε·T_R, and
//!
//!   δf/f = ½(δU/U − δT/T) = −½(3·U_R/U − T_R/T)·ε.
//!
//! Where the plate bends much and moves little (near a nodal line, where
//! curvature is high), thinning lowers the mode; where it moves much and
//! bends little (at an antinode, near a free edge), thinning can raise it
//! (less mass to move for little lost stiffness). Thinning everything
//! gives U_R = U and T_R = T: δf/f = −ε, as it must for a plate whose
//! frequencies scale with thickness. The plate is taken as even in
//! thickness and material across the region mapped; the stiffness ratios
//! (along, across, twist) set how curvature along and across counts. The
//! plate is taken as flat: in an arched plate part of the stiffness is
//! stretching, which scales with h (not h³), so thinning lowers its modes
//! less than the guide says (references.md: arched plates fall more
//! slowly).

use super::basis::Derivatives;
use super::outline::Outline;
use super::plate::BendingStiffness;
use super::surface::{Raster, ShapeSurface};

/// The wording that belongs beside every display of the carving guide.
pub const CARVING_CAUTION: &str =
    "A first-order guide for small, even removals, not a rule. Carving tools are sharp and wood dust is a health hazard: follow your workshop's safety rules.";

/// How a small thinning moves one mode, cell by cell over a raster.
#[derive(Clone, Debug, PartialEq)]
pub struct CarvingMap {
    /// The raster the map is computed on (its `values` are the mode's
    /// surface; `inside` marks the nodes the map covers).
    pub raster: Raster,
    /// Per node (cell around it) inside the outline: δf/f per unit ε when
    /// only that cell is thinned by the fraction ε; 0 outside. The sum over
    /// all cells is −1.
    pub change_per_cell: Vec<f64>,
    /// Per node inside the outline: the same per unit area, relative to the
    /// plate's average, so a uniform thinning is −1 everywhere: −2.5 means
    /// thinning here moves the mode 2.5 times as much as thinning the whole
    /// plate evenly by the same fraction, per area. NaN outside.
    pub relative_density: Vec<f64>,
    /// Bending (curvature) energy share per node (sums to 1).
    pub bending_share: Vec<f64>,
    /// Kinetic energy share per node (sums to 1).
    pub kinetic_share: Vec<f64>,
}

/// How far past the outermost tap points a map's carving guide reaches,
/// as a share of the median distance between neighbouring points.
pub const COVERAGE_REACH: f64 = 0.5;

impl CarvingMap {
    /// The guide for one mode's surface over the whole of `outline`,
    /// sampled every `step_mm`, with the plate's bending stiffnesses (only
    /// their ratios matter). For a surface known everywhere (a model's
    /// mode); for a map, see [`CarvingMap::over_points`].
    pub fn new(
        outline: &Outline,
        surface: &dyn ShapeSurface,
        stiffness: &BendingStiffness,
        step_mm: f64,
    ) -> Self {
        Self::build(outline, surface, stiffness, step_mm, |_, _| true)
    }

    /// The guide for a surface fitted through tap points, over the area
    /// the points cover: inside their convex hull, or within
    /// [`COVERAGE_REACH`] of the points' spacing outside it. Beyond that
    /// (the band between the outermost points and the edge, the round
    /// ends) a surface through the points says little about curvature, so
    /// that band is left out of the map and of the energies: shares and
    /// predictions are of the mapped area.
    pub fn over_points(
        outline: &Outline,
        surface: &dyn ShapeSurface,
        stiffness: &BendingStiffness,
        step_mm: f64,
        points: &[[f64; 2]],
    ) -> Self {
        let reach = COVERAGE_REACH * median_spacing_mm(points);
        let hull = convex_hull(points);
        Self::build(outline, surface, stiffness, step_mm, |x, y| {
            within_hull(&hull, [x, y], reach)
        })
    }

    fn build(
        outline: &Outline,
        surface: &dyn ShapeSurface,
        stiffness: &BendingStiffness,
        step_mm: f64,
        covered: impl Fn(f64, f64) -> bool,
    ) -> Self {
        let mut derivatives: Vec<Derivatives> = Vec::new();
        let mut raster = Raster::sample_with(outline, step_mm, |x, y| {
            let d = surface.derivatives_at(x, y);
            derivatives.push(d);
            d.value
        });
        for row in 0..raster.rows {
            for column in 0..raster.columns {
                let [x, y] = raster.node_mm(column, row);
                let i = row * raster.columns + column;
                raster.inside[i] = raster.inside[i] && covered(x, y);
            }
        }
        let bending: Vec<f64> = derivatives
            .iter()
            .zip(&raster.inside)
            .map(|(d, &inside)| {
                if inside {
                    stiffness.energy_density(d)
                } else {
                    0.0
                }
            })
            .collect();
        let kinetic: Vec<f64> = derivatives
            .iter()
            .zip(&raster.inside)
            .map(|(d, &inside)| if inside { 0.5 * d.value * d.value } else { 0.0 })
            .collect();
        let bending_share = shares(&bending);
        let kinetic_share = shares(&kinetic);
        let change_per_cell: Vec<f64> = bending_share
            .iter()
            .zip(&kinetic_share)
            .map(|(u, t)| -0.5 * (3.0 * u - t))
            .collect();
        let cells = raster.inside.iter().filter(|&&i| i).count().max(1) as f64;
        let relative_density = change_per_cell
            .iter()
            .zip(&raster.inside)
            .map(|(c, &inside)| if inside { c * cells } else { f64::NAN })
            .collect();
        Self {
            raster,
            change_per_cell,
            relative_density,
            bending_share,
            kinetic_share,
        }
    }

    /// δf/f predicted for thinning each point of the plate by the fraction
    /// `thinning(x_mm, y_mm)` (0 where nothing is removed, 0.02 for 2 %).
    pub fn predicted_change(&self, thinning: impl Fn(f64, f64) -> f64) -> f64 {
        self.sum_over(|x, y, c| c * thinning(x, y), &self.change_per_cell)
    }

    /// Share of the bending energy in the region where `inside_region` is true.
    pub fn bending_share_in(&self, inside_region: impl Fn(f64, f64) -> bool) -> f64 {
        self.sum_over(
            |x, y, u| if inside_region(x, y) { u } else { 0.0 },
            &self.bending_share,
        )
    }

    fn sum_over(&self, term: impl Fn(f64, f64, f64) -> f64, per_node: &[f64]) -> f64 {
        let mut sum = 0.0;
        for row in 0..self.raster.rows {
            for column in 0..self.raster.columns {
                let i = row * self.raster.columns + column;
                if self.raster.inside[i] {
                    let [x, y] = self.raster.node_mm(column, row);
                    sum += term(x, y, per_node[i]);
                }
            }
        }
        sum
    }
}

/// The convex hull of the points, counter-clockwise (Andrew's monotone
/// chain).
fn convex_hull(points: &[[f64; 2]]) -> Vec<[f64; 2]> {
    let mut sorted: Vec<[f64; 2]> = points.to_vec();
    sorted.sort_by(|a, b| a[0].total_cmp(&b[0]).then(a[1].total_cmp(&b[1])));
    sorted.dedup();
    if sorted.len() < 3 {
        return sorted;
    }
    let cross = |o: [f64; 2], a: [f64; 2], b: [f64; 2]| {
        (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
    };
    let mut hull: Vec<[f64; 2]> = Vec::with_capacity(2 * sorted.len());
    for pass in 0..2 {
        let start = hull.len();
        let iter: Box<dyn Iterator<Item = &[f64; 2]>> = if pass == 0 {
            Box::new(sorted.iter())
        } else {
            Box::new(sorted.iter().rev())
        };
        for &p in iter {
            while hull.len() >= start + 2
                && cross(hull[hull.len() - 2], hull[hull.len() - 1], p) <= 0.0
            {
                hull.pop();
            }
            hull.push(p);
        }
        hull.pop();
    }
    hull
}

/// True if `p` lies inside the convex polygon `hull` (counter-clockwise)
/// or within `reach` of its edge.
fn within_hull(hull: &[[f64; 2]], p: [f64; 2], reach: f64) -> bool {
    if hull.is_empty() {
        return false;
    }
    let n = hull.len();
    let mut inside = n >= 3;
    let mut nearest = f64::INFINITY;
    for i in 0..n {
        let (a, b) = (hull[i], hull[(i + 1) % n]);
        let (ex, ey) = (b[0] - a[0], b[1] - a[1]);
        if ex * (p[1] - a[1]) - ey * (p[0] - a[0]) < 0.0 {
            inside = false;
        }
        let length2 = ex * ex + ey * ey;
        let t = if length2 > 0.0 {
            (((p[0] - a[0]) * ex + (p[1] - a[1]) * ey) / length2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let (dx, dy) = (p[0] - a[0] - t * ex, p[1] - a[1] - t * ey);
        nearest = nearest.min((dx * dx + dy * dy).sqrt());
    }
    inside || nearest <= reach
}

/// The median distance from each point to its nearest neighbour, mm (1 mm
/// for fewer than two points).
fn median_spacing_mm(points: &[[f64; 2]]) -> f64 {
    if points.len() < 2 {
        return 1.0;
    }
    let nearest: Vec<f64> = points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            points
                .iter()
                .enumerate()
                .filter(|&(j, _)| j != i)
                .map(|(_, q)| ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt())
                .fold(f64::INFINITY, f64::min)
        })
        .collect();
    crate::analysis::aggregate::median(&nearest)
}

/// Each value's share of the total (all zeros stay zeros).
fn shares(values: &[f64]) -> Vec<f64> {
    let total: f64 = values.iter().sum();
    if total > 0.0 {
        values.iter().map(|v| v / total).collect()
    } else {
        vec![0.0; values.len()]
    }
}

/// Where thinning moves one mode and spares another (e.g. lower mode 5,
/// keep mode 2).
///
/// The design: both modes' maps on the same raster, `move_density` (a)
/// and `spare_density` (b), in the plate-average units of
/// [`CarvingMap::relative_density`]. Per node:
///
/// - `selective` = a·max(0, 1 − |b|/|a|): the part of a's shift that comes
///   without moving b. It equals a where b does not notice thinning, falls
///   to zero where b moves as much as a (or more), and keeps a's sign, so
///   its most negative places are where thinning lowers mode a and leaves
///   mode b where it is. Thinning there changes a, not b.
/// - `ratio_change` = a − b: how the ratio f_a/f_b moves (δ ln(f_a/f_b)
///   per unit ε and area), for a maker who cares about the interval
///   between the two modes more than about either alone.
#[derive(Clone, Debug, PartialEq)]
pub struct TwoModeGuide {
    /// The raster (shared by both modes' maps).
    pub raster: Raster,
    /// Mode a's relative density (the mode to move).
    pub move_density: Vec<f64>,
    /// Mode b's relative density (the mode to spare).
    pub spare_density: Vec<f64>,
    /// See the type's documentation. NaN outside the outline.
    pub selective: Vec<f64>,
    /// See the type's documentation. NaN outside the outline.
    pub ratio_change: Vec<f64>,
}

impl TwoModeGuide {
    /// Combines two modes' maps; `None` if they were not made on the same
    /// raster.
    pub fn new(move_mode: &CarvingMap, spare_mode: &CarvingMap) -> Option<Self> {
        let same = move_mode.raster.columns == spare_mode.raster.columns
            && move_mode.raster.rows == spare_mode.raster.rows
            && move_mode.raster.step_mm == spare_mode.raster.step_mm;
        if !same {
            return None;
        }
        let a = &move_mode.relative_density;
        let b = &spare_mode.relative_density;
        let selective = a
            .iter()
            .zip(b)
            .map(|(&a, &b)| {
                if !(a.is_finite() && b.is_finite()) {
                    f64::NAN
                } else if a == 0.0 {
                    0.0
                } else {
                    a * (1.0 - b.abs() / a.abs()).max(0.0)
                }
            })
            .collect();
        let ratio_change = a.iter().zip(b).map(|(a, b)| a - b).collect();
        Some(Self {
            raster: move_mode.raster.clone(),
            move_density: a.clone(),
            spare_density: b.clone(),
            selective,
            ratio_change,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::outline::OutlineShape;

    #[test]
    fn the_hull_of_a_grid_and_its_reach() {
        let points: Vec<[f64; 2]> = (0..3)
            .flat_map(|i| (0..4).map(move |j| [10.0 * i as f64, 10.0 * j as f64]))
            .collect();
        let hull = convex_hull(&points);
        assert_eq!(hull.len(), 4, "{hull:?}");
        assert!(within_hull(&hull, [15.0, 25.0], 0.0));
        assert!(within_hull(&hull, [20.0, 15.0], 0.0));
        assert!(!within_hull(&hull, [23.0, 15.0], 2.0));
        assert!(within_hull(&hull, [23.0, 15.0], 5.0));
        assert!(!within_hull(&hull, [-4.0, -4.0], 5.0));
        assert_eq!(median_spacing_mm(&points), 10.0);
    }

    struct Field<F: Fn(f64, f64) -> Derivatives>(F);
    impl<F: Fn(f64, f64) -> Derivatives> ShapeSurface for Field<F> {
        fn derivatives_at(&self, x: f64, y: f64) -> Derivatives {
            (self.0)(x, y)
        }
    }

    #[test]
    fn shares_sum_to_one_and_thinning_everything_gives_minus_epsilon() {
        let outline = Outline::new(OutlineShape::Rectangle {
            length_mm: 300.0,
            width_mm: 200.0,
        })
        .unwrap();
        let surface = Field(|x: f64, y: f64| Derivatives {
            value: x * y / 1e4,
            dx: y / 1e4,
            dy: x / 1e4,
            dxx: 0.0,
            dyy: 0.0,
            dxy: 1e-4,
        });
        let stiffness = crate::shapes::PlateMaterial::typical_spruce().bending_stiffness(3.0);
        let map = CarvingMap::new(&outline, &surface, &stiffness, 5.0);
        let u: f64 = map.bending_share.iter().sum();
        let t: f64 = map.kinetic_share.iter().sum();
        assert!((u - 1.0).abs() < 1e-12 && (t - 1.0).abs() < 1e-12);
        assert!((map.predicted_change(|_, _| 0.01) + 0.01).abs() < 1e-12);
        // Pure twist: the bending energy is even over the plate, the
        // kinetic energy is at the corners, so thinning the middle lowers
        // the mode and thinning the corners raises it.
        let centre = map.predicted_change(|x, y| {
            if x.abs() < 30.0 && (y - 150.0).abs() < 30.0 {
                0.01
            } else {
                0.0
            }
        });
        let corner = map.predicted_change(|x, y| if x > 70.0 && y > 270.0 { 0.01 } else { 0.0 });
        assert!(centre < 0.0 && corner > 0.0, "{centre} {corner}");
    }

    #[test]
    fn the_two_mode_guide_keeps_only_what_spares_the_other_mode() {
        let outline = Outline::new(OutlineShape::Rectangle {
            length_mm: 100.0,
            width_mm: 100.0,
        })
        .unwrap();
        let stiffness =
            crate::shapes::PlateMaterial::isotropic(1000.0, 1e9, 0.3).bending_stiffness(2.0);
        // Mode a bends only where x < 0, mode b everywhere evenly.
        let a = Field(|x: f64, _| Derivatives {
            value: 0.0,
            dxx: if x < 0.0 { 1.0 } else { 0.0 },
            ..Default::default()
        });
        let b = Field(|_, _| Derivatives {
            value: 0.0,
            dxx: 1.0,
            ..Default::default()
        });
        let map_a = CarvingMap::new(&outline, &a, &stiffness, 2.0);
        let map_b = CarvingMap::new(&outline, &b, &stiffness, 2.0);
        let guide = TwoModeGuide::new(&map_a, &map_b).unwrap();
        // a: −3 per area where x < 0 (all its bending there, half the
        // area, no kinetic energy), 0 elsewhere; b: −1.5 everywhere.
        // Selective: −3·(1 − 1.5/3) = −1.5 where x < 0, 0 elsewhere.
        for row in 0..guide.raster.rows {
            for column in 0..guide.raster.columns {
                let i = row * guide.raster.columns + column;
                if !guide.raster.inside[i] {
                    continue;
                }
                let [x, _] = guide.raster.node_mm(column, row);
                if x < -1.0 {
                    assert!(
                        (guide.selective[i] + 1.5).abs() < 0.1,
                        "{}",
                        guide.selective[i]
                    );
                } else if x > 1.0 {
                    assert_eq!(guide.selective[i], 0.0);
                    assert!((guide.ratio_change[i] - 1.5).abs() < 0.1);
                }
            }
        }
    }
}
