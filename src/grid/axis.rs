//! One axis of a grid: a coordinate and the strictly increasing edges of its
//! cells.
//!
//! Owns: building edges (uniform, logarithmic, explicit, or read from a text
//! file), checking them, and the cell centres. Does not own which axes form a
//! grid (see the parent module).

use std::path::Path;

use super::{Coord, GridError};

/// How the edges of an axis were chosen (recorded for the user; the edges
/// themselves are the truth).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Spacing {
    /// Equal cell widths.
    Uniform,
    /// Equal ratios of successive edges.
    Log,
    /// Edges given one by one (inline or from a file).
    Explicit,
}

/// One axis of a grid: a coordinate and the edges of its cells.
#[derive(Clone, Debug, PartialEq)]
pub struct Axis {
    /// The coordinate the axis runs along.
    pub coord: Coord,
    /// Cell edges, strictly increasing; `cells() + 1` of them.
    pub edges: Vec<f64>,
    /// How the edges were chosen.
    pub spacing: Spacing,
}

/// `from < to`, so that a reversed or empty range is reported as such rather
/// than as edges that fail to increase.
fn check_range(coord: Coord, from: f64, to: f64) -> Result<(), GridError> {
    if from < to {
        Ok(())
    } else {
        Err(GridError::EmptyRange { coord, from, to })
    }
}

impl Axis {
    /// `cells` equal cells from `from` to `to`.
    pub fn uniform(coord: Coord, from: f64, to: f64, cells: usize) -> Result<Axis, GridError> {
        if cells == 0 {
            return Err(GridError::NoCells { coord });
        }
        check_range(coord, from, to)?;
        let h = (to - from) / cells as f64;
        let mut edges: Vec<f64> = (0..=cells).map(|i| from + h * i as f64).collect();
        edges[cells] = to; // the last edge exactly as given
        Axis::checked(coord, edges, Spacing::Uniform)
    }

    /// `cells` cells from `from` to `to` with a constant ratio between
    /// successive edges; needs `from > 0`.
    pub fn log(coord: Coord, from: f64, to: f64, cells: usize) -> Result<Axis, GridError> {
        if cells == 0 {
            return Err(GridError::NoCells { coord });
        }
        if from.is_nan() || from <= 0.0 {
            return Err(GridError::LogNonPositive { coord, from });
        }
        check_range(coord, from, to)?;
        let step = (to / from).ln() / cells as f64;
        let mut edges: Vec<f64> = (0..=cells)
            .map(|i| from * (step * i as f64).exp())
            .collect();
        edges[0] = from;
        edges[cells] = to;
        Axis::checked(coord, edges, Spacing::Log)
    }

    /// Edges given explicitly: at least 2, finite, strictly increasing.
    pub fn explicit(coord: Coord, edges: Vec<f64>) -> Result<Axis, GridError> {
        Axis::checked(coord, edges, Spacing::Explicit)
    }

    /// Edges read from a text file: numbers separated by white space or new
    /// lines; everything after `#` on a line is a comment.
    pub fn from_edges_file(coord: Coord, path: &Path) -> Result<Axis, GridError> {
        let shown = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| GridError::FileRead {
            path: shown.clone(),
            message: e.to_string(),
        })?;
        let mut edges = Vec::new();
        for (n, line) in text.lines().enumerate() {
            let content = line.split('#').next().unwrap_or("");
            for word in content.split_whitespace() {
                let value: f64 = word.parse().map_err(|_| GridError::FileEntry {
                    path: shown.clone(),
                    line: n + 1,
                    message: format!("`{word}` is not a number"),
                })?;
                if !value.is_finite() {
                    return Err(GridError::FileEntry {
                        path: shown.clone(),
                        line: n + 1,
                        message: format!("edge `{word}` is not finite"),
                    });
                }
                edges.push(value);
            }
        }
        Axis::explicit(coord, edges).map_err(|e| match e {
            GridError::TooFewEdges { .. } | GridError::NotIncreasing { .. } => {
                GridError::FileRead {
                    path: shown,
                    message: e.to_string(),
                }
            }
            other => other,
        })
    }

    fn checked(coord: Coord, edges: Vec<f64>, spacing: Spacing) -> Result<Axis, GridError> {
        let axis = Axis {
            coord,
            edges,
            spacing,
        };
        axis.validate()?;
        Ok(axis)
    }

    /// Checks that the edges are at least 2, finite and strictly increasing.
    pub fn validate(&self) -> Result<(), GridError> {
        let coord = self.coord;
        if self.edges.len() < 2 {
            return Err(GridError::TooFewEdges {
                coord,
                found: self.edges.len(),
            });
        }
        for (index, &value) in self.edges.iter().enumerate() {
            if !value.is_finite() {
                return Err(GridError::NonFinite {
                    coord,
                    index,
                    value,
                });
            }
            if index > 0 {
                let previous = self.edges[index - 1];
                if value <= previous {
                    return Err(GridError::NotIncreasing {
                        coord,
                        index,
                        value,
                        previous,
                    });
                }
            }
        }
        Ok(())
    }

    /// The number of cells.
    pub fn cells(&self) -> usize {
        self.edges.len() - 1
    }

    /// Cell centres, the arithmetic midpoints of the edges (also on
    /// logarithmic axes, where this is not the geometric centre).
    pub fn centers(&self) -> Vec<f64> {
        self.edges.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect()
    }

    /// The first and last edge.
    pub fn range(&self) -> (f64, f64) {
        (self.edges[0], self.edges[self.edges.len() - 1])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_and_log_axes() {
        let a = Axis::uniform(Coord::Z, -1.0, 1.0, 4).unwrap();
        assert_eq!(a.cells(), 4);
        let c = a.centers();
        assert!((c[0] + 0.75).abs() < 1e-15 && (c[3] - 0.75).abs() < 1e-15);
        let l = Axis::log(Coord::R, 1.0, 100.0, 2).unwrap();
        assert!((l.edges[1] - 10.0).abs() < 1e-13);
        assert!((l.centers()[0] - 5.5).abs() < 1e-13, "arithmetic midpoint");
        assert_eq!(
            Axis::log(Coord::R, 0.0, 1.0, 3),
            Err(GridError::LogNonPositive {
                coord: Coord::R,
                from: 0.0
            })
        );
        assert_eq!(
            Axis::uniform(Coord::Z, 0.0, 1.0, 0),
            Err(GridError::NoCells { coord: Coord::Z })
        );
    }
    #[test]
    fn reversed_or_empty_ranges_name_from_and_to() {
        for axis in [
            Axis::uniform(Coord::Z, 9.0, 8.0, 4),
            Axis::log(Coord::R, 2.0, 2.0, 4),
        ] {
            let e = axis.unwrap_err().to_string();
            assert!(e.contains("must exceed `from`"), "{e}");
        }
        let e = Axis::uniform(Coord::Z, 9.0, 8.0, 4).unwrap_err();
        assert_eq!(e.to_string(), "axis z: `to` (8) must exceed `from` (9)");
    }

    #[test]
    fn explicit_edges_are_checked() {
        let e = Axis::explicit(Coord::Z, vec![0.0, 1.0, 2.0, 2.5, 2.5]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "axis z: edges must increase strictly: edge 4 (2.5) ≤ edge 3 (2.5)"
        );
        let e = Axis::explicit(Coord::Z, vec![0.0, f64::NAN]).unwrap_err();
        assert!(e.to_string().contains("edge 1 is not finite"), "{e}");
        let e = Axis::explicit(Coord::Z, vec![1.0]).unwrap_err();
        assert_eq!(
            e,
            GridError::TooFewEdges {
                coord: Coord::Z,
                found: 1
            }
        );
    }
    #[test]
    fn edges_file_with_comments_and_errors() {
        let dir = tempfile::tempdir().unwrap();
        let good = dir.path().join("edges.txt");
        std::fs::write(&good, "# radii\n0.5 1.0\n2.0 # outer\n\n4.0\n").unwrap();
        let a = Axis::from_edges_file(Coord::R, &good).unwrap();
        assert_eq!(a.cells(), 3);
        assert_eq!(a.spacing, Spacing::Explicit);
        let bad = dir.path().join("bad.txt");
        std::fs::write(&bad, "1\n2\nthree\n").unwrap();
        let e = Axis::from_edges_file(Coord::R, &bad)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("bad.txt, line 3: `three` is not a number"),
            "{e}"
        );
        let missing = Axis::from_edges_file(Coord::R, &dir.path().join("none.txt")).unwrap_err();
        assert!(matches!(missing, GridError::FileRead { .. }));
    }
}
