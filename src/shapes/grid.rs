//! Tap points: a grid over an outline and the order to visit it.
//!
//! Rows run across the part, evenly spaced along it from near the upper
//! end (row 1) to near the lower end; within a row the points are spread
//! evenly over the outline's width at that row, inset from the edge, so
//! every point lies on the plate however it narrows. Columns are lettered
//! from the side with negative `x` (A, B, C ...), so "3B" is row 3,
//! column B. The visiting order snakes: row 1 from A, row 2 back from the
//! last column, and so on, so the maker's hand moves one step at a time.

use serde::{Deserialize, Serialize};

use super::outline::Outline;

/// One point where the maker taps, in mm (see `outline` for the axes).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TapPoint {
    /// Short name ("3B").
    pub name: String,
    /// Across the part, mm (0 on the centre line).
    pub x_mm: f64,
    /// Along the part, mm (0 at the lower end).
    pub y_mm: f64,
}

impl TapPoint {
    /// A point with a name and a position.
    pub fn new(name: impl Into<String>, x_mm: f64, y_mm: f64) -> Self {
        Self {
            name: name.into(),
            x_mm,
            y_mm,
        }
    }
}

/// Most columns and rows a grid may have (26 letters; a maker taps a few
/// hundred points at most).
pub const MAX_COLUMNS: usize = 26;
/// See [`MAX_COLUMNS`].
pub const MAX_ROWS: usize = 40;

/// Share of the length left free at each end before the first and last rows.
const END_MARGIN: f64 = 0.06;
/// Share of the half-width the outermost columns reach.
const SIDE_INSET: f64 = 0.8;

/// Why a grid cannot be laid out.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum GridError {
    /// Columns or rows outside what a grid may have.
    #[error("a grid has 1 to {MAX_COLUMNS} columns and 1 to {MAX_ROWS} rows and at least two points; {columns} × {rows} is not possible")]
    Size {
        /// Columns asked for.
        columns: usize,
        /// Rows asked for.
        rows: usize,
    },
}

/// The grid of `columns` × `rows` tap points over `outline`, in the order
/// to visit them.
pub fn tap_grid(
    outline: &Outline,
    columns: usize,
    rows: usize,
) -> Result<Vec<TapPoint>, GridError> {
    let size_ok = (1..=MAX_COLUMNS).contains(&columns)
        && (1..=MAX_ROWS).contains(&rows)
        && columns * rows >= 2;
    if !size_ok {
        return Err(GridError::Size { columns, rows });
    }
    let length = outline.length_mm();
    let mut points = Vec::with_capacity(columns * rows);
    for row in 0..rows {
        let share = if rows == 1 {
            0.5
        } else {
            1.0 - END_MARGIN - (1.0 - 2.0 * END_MARGIN) * row as f64 / (rows - 1) as f64
        };
        let y_mm = length * share;
        let reach = SIDE_INSET * outline.half_width_mm(y_mm);
        let mut row_points: Vec<TapPoint> = (0..columns)
            .map(|column| {
                let x_mm = if columns == 1 {
                    0.0
                } else {
                    reach * (2.0 * column as f64 / (columns - 1) as f64 - 1.0)
                };
                let letter = char::from(b'A' + column as u8);
                TapPoint::new(format!("{}{letter}", row + 1), x_mm, y_mm)
            })
            .collect();
        if row % 2 == 1 {
            row_points.reverse();
        }
        points.extend(row_points);
    }
    Ok(points)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::outline::OutlineShape;

    #[test]
    fn a_violin_grid_lies_inside_and_snakes() {
        let outline = Outline::new(OutlineShape::typical_violin()).unwrap();
        let grid = tap_grid(&outline, 5, 9).unwrap();
        assert_eq!(grid.len(), 45);
        assert!(grid.iter().all(|p| outline.contains(p.x_mm, p.y_mm)));
        let names: Vec<&str> = grid.iter().map(|p| p.name.as_str()).collect();
        assert_eq!(&names[..7], &["1A", "1B", "1C", "1D", "1E", "2E", "2D"]);
        // Row 1 is near the upper end, row 9 near the lower end.
        assert!(grid[0].y_mm > 0.9 * outline.length_mm());
        assert!(grid[44].y_mm < 0.1 * outline.length_mm());
        // Each step of the walk is to a neighbour: never farther than a
        // row's spacing or a column's spacing at the widest bout.
        for pair in grid.windows(2) {
            let step = ((pair[1].x_mm - pair[0].x_mm).powi(2)
                + (pair[1].y_mm - pair[0].y_mm).powi(2))
            .sqrt();
            assert!(step < 50.0, "{pair:?}");
        }
        // The centre column is on the centre line; the outer ones keep a
        // margin from the edge.
        for p in &grid {
            let edge = outline.half_width_mm(p.y_mm);
            assert!(p.x_mm.abs() <= 0.8 * edge + 1e-9);
        }
        assert!(grid
            .iter()
            .filter(|p| p.name.ends_with('C'))
            .all(|p| p.x_mm == 0.0));
    }

    #[test]
    fn impossible_grids_are_refused() {
        let outline = Outline::new(OutlineShape::typical_guitar()).unwrap();
        for (columns, rows) in [(0, 5), (5, 0), (1, 1), (27, 3), (3, 41)] {
            let error = tap_grid(&outline, columns, rows).unwrap_err();
            assert!(error.to_string().contains(&format!("{columns} × {rows}")));
        }
        assert_eq!(tap_grid(&outline, 1, 2).unwrap().len(), 2);
    }
}
