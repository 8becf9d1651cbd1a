//! Named arrays of numbers on a grid: what each field is, where it lives and
//! how many values it has per cell, and the containers samplers fill and
//! writers read — a whole [`FieldSet`] in memory, or one [`Slab`] of rows at
//! a time when streaming.
//!
//! Owns: [`FieldSpec`], [`Placement`] (cell, face or node set, values per
//! cell, the dataset shape it implies), [`Field`], [`FieldSet`] and
//! [`Slab`]. Does not own how the numbers are computed (see
//! [`crate::sample`]) nor how they are written (see [`crate::output`]).

use std::ops::Range;

use crate::units::Dim;

/// Where a field's values live on the grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum Location {
    /// One set of values per cell.
    #[default]
    Cell,
    /// On the faces normal to grid axis `axis`: one more along that axis
    /// than there are cells.
    Face {
        /// The grid axis the faces are normal to.
        axis: usize,
    },
}

/// A field's layout: where it lives and how many values it has there.
/// Values of one location are stored as trailing dimensions of the dataset,
/// `per_location` of them, so the dataset shape is the location's shape
/// followed by `extra`.
#[derive(Clone, Debug, PartialEq, Eq, Default)]
pub struct Placement {
    /// Cell or face.
    pub location: Location,
    /// Trailing dimensions per location (empty for one value): `[n, n]` for
    /// n × n nodes of a 2D cell, say.
    pub extra: Vec<usize>,
}

impl Placement {
    /// One value per cell.
    pub fn cell() -> Placement {
        Placement::default()
    }

    /// Values per location (the product of `extra`, 1 when empty).
    pub fn per_location(&self) -> usize {
        self.extra.iter().product()
    }

    /// The dataset shape on a grid with `cells` cells per axis.
    pub fn shape(&self, cells: &[usize]) -> Vec<usize> {
        let mut s = cells.to_vec();
        if let Location::Face { axis } = self.location {
            s[axis] += 1;
        }
        s.extend(&self.extra);
        s
    }

    /// The rows of the dataset's first dimension that belong to the cells
    /// `rows` of the grid's first axis (of `n0` cells): the same rows, plus
    /// the closing face for faces normal to axis 0 in the last slab.
    pub fn rows(&self, rows: Range<usize>, n0: usize) -> Range<usize> {
        match self.location {
            Location::Face { axis: 0 } if rows.end == n0 => rows.start..rows.end + 1,
            _ => rows,
        }
    }

    /// A description for files, e.g. "cell" or "faces normal to axis 1, 3
    /// values each".
    pub fn describe(&self, axis_names: &[&str]) -> String {
        let base = match self.location {
            Location::Cell => "cell".to_string(),
            Location::Face { axis } => format!(
                "faces normal to {}",
                axis_names.get(axis).copied().unwrap_or("?")
            ),
        };
        match self.per_location() {
            1 => base,
            n => format!("{base}, {n} values each"),
        }
    }
}

/// What a field is: its name in files, its dimension and its placement.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldSpec {
    /// Name as written in files: `density`, `velocity_phi`, …
    pub name: String,
    /// Physical dimension, turned into a unit string by the writer.
    pub dim: Dim,
    /// Where its values live.
    pub placement: Placement,
}

/// One named array on a grid, held whole in memory.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// Name as written in files: `density`, `velocity_phi`, …
    pub name: String,
    /// Physical dimension, turned into a unit string by the writer.
    pub dim: Dim,
    /// Values, C-ordered in the dataset shape ([`Placement::shape`]).
    pub data: Vec<f64>,
    /// Where the values live.
    pub placement: Placement,
}

impl Field {
    /// A cell field.
    pub fn cell(name: impl Into<String>, dim: Dim, data: Vec<f64>) -> Field {
        Field {
            name: name.into(),
            dim,
            data,
            placement: Placement::cell(),
        }
    }

    /// What the field is, without its values.
    pub fn spec(&self) -> FieldSpec {
        FieldSpec {
            name: self.name.clone(),
            dim: self.dim,
            placement: self.placement.clone(),
        }
    }
}

/// The fields sampled on one grid under one sampling rule, held in memory.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldSet {
    /// Cells along each grid axis.
    pub shape: Vec<usize>,
    /// Human description of the sampling rule, e.g. "cell-centre point values".
    pub sampling: String,
    /// The fields, in the order they are written.
    pub fields: Vec<Field>,
}

impl FieldSet {
    /// The field with this name, if present.
    pub fn get(&self, name: &str) -> Option<&Field> {
        self.fields.iter().find(|f| f.name == name)
    }

    /// The number of cells (product of the shape).
    pub fn cells(&self) -> usize {
        self.shape.iter().product()
    }
}

/// The values of every field of a stream for the cells `rows` of the grid's
/// first axis: `data[f]` holds field f's dataset rows
/// ([`Placement::rows`]), C-ordered.
#[derive(Clone, Debug, PartialEq)]
pub struct Slab {
    /// The cells of the first axis this slab covers.
    pub rows: Range<usize>,
    /// One array per field, in the order of the stream's specs.
    pub data: Vec<Vec<f64>>,
}

/// Consecutive ranges of `rows_per_slab` rows (the last may be shorter)
/// covering `0..n0`.
pub fn slab_ranges(n0: usize, rows_per_slab: usize) -> impl Iterator<Item = Range<usize>> {
    let step = rows_per_slab.max(1);
    (0..n0)
        .step_by(step)
        .map(move |start| start..(start + step).min(n0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn get_by_name() {
        let set = FieldSet {
            shape: vec![2],
            sampling: "cell-centre point values".into(),
            fields: vec![Field::cell("density", Dim::DENSITY, vec![1.0, 2.0])],
        };
        assert_eq!(set.get("density").map(|f| f.data.len()), Some(2));
        assert!(set.get("pressure").is_none());
        assert_eq!(set.cells(), 2);
    }

    #[test]
    fn placements_have_shapes_and_rows() {
        let faces = Placement {
            location: Location::Face { axis: 0 },
            extra: vec![],
        };
        assert_eq!(faces.shape(&[4, 3]), vec![5, 3]);
        assert_eq!(faces.rows(0..2, 4), 0..2);
        assert_eq!(faces.rows(2..4, 4), 2..5);
        let nodes = Placement {
            location: Location::Cell,
            extra: vec![3, 3],
        };
        assert_eq!(nodes.shape(&[4, 2]), vec![4, 2, 3, 3]);
        assert_eq!(nodes.per_location(), 9);
        assert_eq!(nodes.describe(&["x", "y"]), "cell, 9 values each");
        assert_eq!(faces.describe(&["x", "y"]), "faces normal to x");
        let r: Vec<_> = slab_ranges(10, 4).collect();
        assert_eq!(r, vec![0..4, 4..8, 8..10]);
    }
}
