//! Named arrays of numbers on a grid, with their physical dimension.
//!
//! Owns: the [`Field`] and [`FieldSet`] containers that samplers fill and
//! writers read. Does not own how the numbers are computed (see
//! [`crate::sample`]) nor how they are written (see [`crate::output`]).

use crate::units::Dim;

/// One named array on a grid.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// Name as written in files: `density`, `velocity_phi`, …
    pub name: String,
    /// Physical dimension, turned into a unit string by the writer.
    pub dim: Dim,
    /// Values, C-ordered in the grid's axis order (last axis fastest).
    pub data: Vec<f64>,
}

/// The fields sampled on one grid under one sampling rule.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldSet {
    /// Cells along each grid axis; every field holds their product values.
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

    /// The number of values each field holds (product of the shape).
    pub fn cells(&self) -> usize {
        self.shape.iter().product()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn get_by_name() {
        let set = FieldSet {
            shape: vec![2],
            sampling: "cell-centre point values".into(),
            fields: vec![Field {
                name: "density".into(),
                dim: Dim::DENSITY,
                data: vec![1.0, 2.0],
            }],
        };
        assert_eq!(set.get("density").map(|f| f.data.len()), Some(2));
        assert!(set.get("pressure").is_none());
        assert_eq!(set.cells(), 2);
    }
}
