//! Zero lines of a sampled surface: marching squares on a [`Raster`], the
//! pieces joined into polylines, cut at the outline's edge.
//!
//! Each square of four nodes is crossed by the zero line where the signs
//! of its corners differ, at the linearly interpolated point of each edge
//! with a sign change; where opposite corners share a sign (a saddle) the
//! mean of the four corners decides which pair of crossings belongs
//! together. Crossings are named by the edge they lie on, so the segments
//! of neighbouring squares meet exactly and join into polylines.

use std::collections::HashMap;

use super::outline::Outline;
use super::surface::Raster;

/// A line in mm, as a list of points.
pub type Polyline = Vec<[f64; 2]>;

/// The zero lines of `raster` inside `outline`.
pub fn zero_lines(raster: &Raster, outline: &Outline) -> Vec<Polyline> {
    let lines = contour_lines(raster, 0.0);
    lines
        .into_iter()
        .flat_map(|line| clip_to_outline(&line, outline))
        .filter(|line| line.len() >= 2)
        .collect()
}

/// Where a contour crosses an edge between two nodes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
struct EdgeId {
    column: usize,
    row: usize,
    /// Along x (to the next column) or along y (to the next row).
    along_x: bool,
}

/// The `level` contour lines of the whole raster (inside the outline or
/// not), in mm.
pub fn contour_lines(raster: &Raster, level: f64) -> Vec<Polyline> {
    let mut segments: Vec<[EdgeId; 2]> = Vec::new();
    for row in 0..raster.rows.saturating_sub(1) {
        for column in 0..raster.columns.saturating_sub(1) {
            square_segments(raster, column, row, level, &mut segments);
        }
    }
    join(&segments)
        .into_iter()
        .map(|ids| ids.iter().map(|id| crossing(raster, *id, level)).collect())
        .collect()
}

fn value(raster: &Raster, column: usize, row: usize) -> f64 {
    raster.values[row * raster.columns + column]
}

/// The segments crossing one square (0, 1 or 2).
fn square_segments(
    raster: &Raster,
    column: usize,
    row: usize,
    level: f64,
    out: &mut Vec<[EdgeId; 2]>,
) {
    let corners = [
        value(raster, column, row),
        value(raster, column + 1, row),
        value(raster, column + 1, row + 1),
        value(raster, column, row + 1),
    ];
    if corners.iter().any(|v| !v.is_finite()) {
        return;
    }
    let above: Vec<bool> = corners.iter().map(|&v| v > level).collect();
    // Edges: 0 bottom (c0–c1), 1 right (c1–c2), 2 top (c3–c2), 3 left (c0–c3).
    let edge = |e: usize| match e {
        0 => EdgeId {
            column,
            row,
            along_x: true,
        },
        1 => EdgeId {
            column: column + 1,
            row,
            along_x: false,
        },
        2 => EdgeId {
            column,
            row: row + 1,
            along_x: true,
        },
        _ => EdgeId {
            column,
            row,
            along_x: false,
        },
    };
    let crossed: Vec<usize> = [(0, 1, 0), (1, 2, 1), (3, 2, 2), (0, 3, 3)]
        .iter()
        .filter(|(a, b, _)| above[*a] != above[*b])
        .map(|&(_, _, e)| e)
        .collect();
    match crossed.len() {
        2 => out.push([edge(crossed[0]), edge(crossed[1])]),
        4 => {
            // A saddle: corners 0 and 2 alike, 1 and 3 alike. If the
            // centre sides with corner 0, the lines cut off corners 1
            // and 3; otherwise corners 0 and 2.
            let centre_above = corners.iter().sum::<f64>() / 4.0 > level;
            if centre_above == above[0] {
                out.push([edge(0), edge(1)]);
                out.push([edge(2), edge(3)]);
            } else {
                out.push([edge(3), edge(0)]);
                out.push([edge(1), edge(2)]);
            }
        }
        _ => {}
    }
}

/// The point where the contour crosses an edge, mm.
fn crossing(raster: &Raster, id: EdgeId, level: f64) -> [f64; 2] {
    let (c2, r2) = if id.along_x {
        (id.column + 1, id.row)
    } else {
        (id.column, id.row + 1)
    };
    let (a, b) = (value(raster, id.column, id.row), value(raster, c2, r2));
    let t = if a != b {
        ((level - a) / (b - a)).clamp(0.0, 1.0)
    } else {
        0.5
    };
    let [x1, y1] = raster.node_mm(id.column, id.row);
    let [x2, y2] = raster.node_mm(c2, r2);
    [x1 + t * (x2 - x1), y1 + t * (y2 - y1)]
}

/// Joins segments that share crossings into chains (closed loops repeat
/// their first point at the end).
fn join(segments: &[[EdgeId; 2]]) -> Vec<Vec<EdgeId>> {
    let mut at: HashMap<EdgeId, Vec<usize>> = HashMap::new();
    for (i, segment) in segments.iter().enumerate() {
        for id in segment {
            at.entry(*id).or_default().push(i);
        }
    }
    let mut used = vec![false; segments.len()];
    let mut chains = Vec::new();
    // Open chains start at a crossing used by one segment only; then
    // whatever is left are closed loops.
    let ends: Vec<usize> = (0..segments.len())
        .filter(|&i| segments[i].iter().any(|id| at[id].len() == 1))
        .collect();
    for start in ends.into_iter().chain(0..segments.len()) {
        if used[start] {
            continue;
        }
        let [a, b] = segments[start];
        let first = if at[&a].len() == 1 { a } else { b };
        let mut chain = vec![first];
        let mut current = start;
        let mut tip = if first == a { b } else { a };
        loop {
            used[current] = true;
            chain.push(tip);
            let next = at[&tip].iter().copied().find(|&s| !used[s]);
            match next {
                Some(s) => {
                    let [c, d] = segments[s];
                    tip = if c == tip { d } else { c };
                    current = s;
                }
                None => break,
            }
        }
        chains.push(chain);
    }
    chains
}

/// The parts of a polyline inside the outline, each cut where it leaves
/// or enters (the crossing found by bisection along the segment).
fn clip_to_outline(line: &Polyline, outline: &Outline) -> Vec<Polyline> {
    let inside = |p: &[f64; 2]| outline.contains(p[0], p[1]);
    let mut pieces = Vec::new();
    let mut current: Polyline = Vec::new();
    for (i, point) in line.iter().enumerate() {
        let now_inside = inside(point);
        if i > 0 {
            let previous = line[i - 1];
            if now_inside != inside(&previous) {
                let edge = edge_crossing(previous, *point, outline);
                current.push(edge);
                if !now_inside {
                    pieces.push(std::mem::take(&mut current));
                }
            }
        }
        if now_inside {
            current.push(*point);
        }
    }
    if !current.is_empty() {
        pieces.push(current);
    }
    pieces
}

fn edge_crossing(a: [f64; 2], b: [f64; 2], outline: &Outline) -> [f64; 2] {
    let a_inside = outline.contains(a[0], a[1]);
    let (mut low, mut high) = (0.0, 1.0);
    let at = |t: f64| [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
    for _ in 0..40 {
        let middle = 0.5 * (low + high);
        let p = at(middle);
        if outline.contains(p[0], p[1]) == a_inside {
            low = middle;
        } else {
            high = middle;
        }
    }
    at(0.5 * (low + high))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::outline::OutlineShape;

    fn square(size_mm: f64) -> Outline {
        Outline::new(OutlineShape::Rectangle {
            length_mm: size_mm,
            width_mm: size_mm,
        })
        .unwrap()
    }

    #[test]
    fn a_circle_is_one_closed_line_at_the_right_radius() {
        let outline = square(200.0);
        let raster = Raster::sample_with(&outline, 2.0, |x, y| {
            x * x + (y - 100.0).powi(2) - 60.0 * 60.0
        });
        let lines = zero_lines(&raster, &outline);
        assert_eq!(lines.len(), 1);
        let line = &lines[0];
        assert_eq!(line.first(), line.last(), "closed");
        for p in line {
            let r = (p[0] * p[0] + (p[1] - 100.0).powi(2)).sqrt();
            // Linear interpolation along an edge of a 2 mm square cuts a
            // chord: within step²/(8r) plus the curvature of x² + y².
            assert!((r - 60.0).abs() < 0.05, "{r}");
        }
        assert!(line.len() > 100);
    }

    #[test]
    fn lines_are_cut_at_the_edge_and_saddles_stay_apart() {
        // A saddle xy with its zero lines the two axes through the centre,
        // over a violin: four lines from the centre to the edge... joined
        // at the saddle into two lines that touch there. Each ends on the
        // outline.
        let outline = Outline::new(OutlineShape::typical_violin()).unwrap();
        let centre_y = 178.0;
        let raster = Raster::sample_with(&outline, 3.0, |x, y| (x - 0.7) * (y - centre_y - 0.9));
        let lines = zero_lines(&raster, &outline);
        let mut ends = 0;
        for line in &lines {
            for p in [line[0], line[line.len() - 1]] {
                let on_edge = (p[0].abs() - outline.half_width_mm(p[1])).abs() < 0.01
                    || p[1] < 0.01
                    || p[1] > outline.length_mm() - 0.01;
                if on_edge {
                    ends += 1;
                }
            }
            // Every point is on one of the two axes and inside.
            for p in line {
                assert!(
                    (p[0] - 0.7).abs() < 1e-6 || (p[1] - centre_y - 0.9).abs() < 1e-6,
                    "{p:?}"
                );
                assert!(
                    outline.contains(p[0], p[1])
                        || (p[0].abs() - outline.half_width_mm(p[1])).abs() < 0.01
                );
            }
        }
        assert_eq!(ends, 4, "{lines:?}");
        // A level plane has no zero line.
        let flat = Raster::sample_with(&outline, 3.0, |_, _| 1.0);
        assert!(zero_lines(&flat, &outline).is_empty());
    }
}
