//! The CSV writer, for 1D grids.
//!
//! Owns: a plain-text table of the state: one header line of
//! `name [units]` columns (no comment lines: the record of the build is the
//! JSON file beside the table, see [`super::arrays::write_csv_record`]) — the cell-centre coordinate first, then every
//! state field — and one row per cell with numbers in Rust's shortest
//! round-trip form (`{:e}`), so reading them back gives the same f64. Does
//! not own placement of the file (see [`super::commit`]) or any physics.

use std::path::Path;

use super::{axis_units, Document, OutputError};
use crate::grid::Layout;

/// Writes the state of a 1D `doc` as CSV to `path` (replacing any file there;
/// use [`super::commit`] for a safe replacement). Grids with more than one
/// axis are refused with a message pointing to HDF5.
pub fn write_csv(doc: &Document, path: &Path) -> Result<(), OutputError> {
    doc.check(path)?;
    let axis = match (doc.grid.layout(), doc.grid.axes()) {
        (Layout::Line(_), [axis]) => axis,
        (_, axes) => {
            let names: Vec<&str> = axes.iter().map(|a| a.coord.name()).collect();
            return Err(OutputError::Unsupported {
                path: path.to_path_buf(),
                message: format!(
                    "CSV output holds 1D grids only; this grid has axes [{}]: write HDF5 instead",
                    names.join(", ")
                ),
            });
        }
    };
    if let Some(f) = doc
        .state
        .fields
        .iter()
        .find(|f| f.placement.per_location() != 1)
    {
        return Err(OutputError::Unsupported {
            path: path.to_path_buf(),
            message: format!(
                "CSV output holds one value per cell; `{}` has {} per cell (nodes): write HDF5 instead",
                f.name,
                f.placement.per_location()
            ),
        });
    }
    let units = doc.metadata.units;
    // One header line and the rows: `#` lines would be taken for the header
    // by numpy.genfromtxt(names=True) and for rows by pandas.read_csv. The
    // record of the build goes in the JSON file beside the table.
    let mut text = String::new();
    let mut header = vec![format!(
        "{} [{}]",
        axis.coord.name(),
        axis_units(axis, units)
    )];
    for field in &doc.state.fields {
        header.push(format!("{} [{}]", field.name, units.unit_string(field.dim)));
    }
    text.push_str(&header.join(","));
    text.push('\n');
    for (i, x) in axis.centers().iter().enumerate() {
        text.push_str(&number(*x));
        for field in &doc.state.fields {
            text.push(',');
            text.push_str(&number(field.data[i]));
        }
        text.push('\n');
    }
    std::fs::write(path, text).map_err(|e| OutputError::Io {
        path: path.to_path_buf(),
        message: e.to_string(),
    })
}

/// A value in the table: Rust's shortest round-trip form (`{:e}`); a value
/// that is not finite (what the text table prints as `-`: undefined, as Ω
/// on the axis) is an empty cell, which `numpy.genfromtxt` and
/// `pandas.read_csv` read as NaN and astropy's `Table.read` as a masked
/// value.
pub fn number(v: f64) -> String {
    if v.is_finite() {
        format!("{v:e}")
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fields::FieldSet;
    use crate::grid::{Axis, Coord, Grid};
    use crate::output::tests::document_parts;

    #[test]
    fn table_round_trips_numbers() {
        let mut parts = document_parts();
        parts.set.fields[0].data[1] = 0.1 + 0.2; // not a short decimal
        let doc = parts.doc();
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        write_csv(&doc, &path).unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        let mut lines = text.lines();
        assert_eq!(lines.next(), Some("z [cm],density [g cm^-3]"));
        let row: Vec<f64> = lines
            .nth(1)
            .unwrap()
            .split(',')
            .map(|s| s.parse().unwrap())
            .collect();
        assert_eq!(row.len(), 2);
        assert_eq!(
            row[1].to_bits(),
            (0.1f64 + 0.2).to_bits(),
            "shortest round-trip form"
        );
        assert!(!text.contains('#'), "no comment lines");
        assert_eq!(number(f64::NAN), "");
        assert_eq!(number(f64::NEG_INFINITY), "");
    }

    #[test]
    fn refuses_two_dimensional_grids() {
        let mut parts = document_parts();
        let r = Axis::uniform(Coord::R, 1.0, 2.0, 2).unwrap();
        let phi = Axis::uniform(Coord::Phi, 0.0, 1.0, 2).unwrap();
        parts.grid = Grid::new(vec![r, phi]).unwrap();
        parts.set = FieldSet {
            shape: vec![2, 2],
            sampling: String::new(),
            fields: vec![],
        };
        let doc = parts.doc();
        let e = write_csv(&doc, Path::new("disk.csv")).unwrap_err();
        assert_eq!(
            e.to_string(),
            "disk.csv: CSV output holds 1D grids only; this grid has axes [R, phi]: write HDF5 instead"
        );
    }
}
