//! Plain arrays for codes and scripts that read no HDF5: a folder of NumPy
//! `.npy` files (one per field and per axis), or of raw binary files in a
//! chosen dtype, byte order and array order, each folder with a JSON file
//! that describes every array (`metadata.json`), and the JSON record beside
//! a CSV table.
//!
//! Owns: the `.npy` format (version 1.0 of NumPy's format, NEP 1: magic,
//! header dictionary padded to a multiple of 64 bytes, then the values), the
//! raw layout and its JSON description, and [`commit_dir`], the
//! all-or-nothing placement of a folder. Field files are named
//! `<field>.npy` / `<field>.bin` for the state (the initial condition), axis
//! files `<axis>_centers` and `<axis>_edges`, always in double precision.
//! Does not own any physics: it arranges the numbers of a [`Document`].

use std::fs;
use std::path::Path;

use serde_json::{json, Value};

use super::{axis_units, Document, OutputError, Precision};
use crate::keys::Keyed;

/// The width of the values in a raw file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RawType {
    /// 64-bit IEEE 754 (`float64`).
    F64,
    /// 32-bit IEEE 754 (`float32`).
    F32,
}

/// Byte order of a raw file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ByteOrder {
    /// Least significant byte first (x86, most ARM).
    Little,
    /// Most significant byte first.
    Big,
}

/// Order of the values of a multi-dimensional array in a raw file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ArrayOrder {
    /// Last index fastest (C, NumPy's default; the HDF5 file's order).
    C,
    /// First index fastest (Fortran, Julia, MATLAB).
    Fortran,
}

/// How a raw folder stores its values.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RawFormat {
    /// Value type of the fields (axes are always `float64`).
    pub dtype: RawType,
    /// Byte order of every file.
    pub byte_order: ByteOrder,
    /// Order of the values of the fields.
    pub order: ArrayOrder,
}

/// NumPy's type string: `<f8`, `>f4`, …
fn descr(dtype: RawType, order: ByteOrder) -> String {
    let e = match order {
        ByteOrder::Little => '<',
        ByteOrder::Big => '>',
    };
    match dtype {
        RawType::F64 => format!("{e}f8"),
        RawType::F32 => format!("{e}f4"),
    }
}

/// The values as bytes in the given type and byte order.
fn bytes(values: &[f64], dtype: RawType, order: ByteOrder) -> Vec<u8> {
    let mut out = Vec::with_capacity(values.len() * 8);
    for &v in values {
        match (dtype, order) {
            (RawType::F64, ByteOrder::Little) => out.extend(v.to_le_bytes()),
            (RawType::F64, ByteOrder::Big) => out.extend(v.to_be_bytes()),
            (RawType::F32, ByteOrder::Little) => out.extend((v as f32).to_le_bytes()),
            (RawType::F32, ByteOrder::Big) => out.extend((v as f32).to_be_bytes()),
        }
    }
    out
}

/// C-ordered `values` of `shape` reordered first index fastest.
fn to_fortran(values: &[f64], shape: &[usize]) -> Vec<f64> {
    let mut out = vec![0.0; values.len()];
    let mut idx = vec![0; shape.len()];
    for (c, &v) in values.iter().enumerate() {
        // Decompose c into indices (last fastest), recompose first fastest.
        let mut rest = c;
        let mut f = 0;
        for a in (0..shape.len()).rev() {
            idx[a] = rest % shape[a];
            rest /= shape[a];
        }
        let mut mult = 1;
        for a in 0..shape.len() {
            f += idx[a] * mult;
            mult *= shape[a];
        }
        out[f] = v;
    }
    out
}

/// A `.npy` file (format version 1.0) of `values` in C order.
pub fn npy_bytes(values: &[f64], shape: &[usize], dtype: RawType) -> Vec<u8> {
    let dims: Vec<String> = shape.iter().map(|n| n.to_string()).collect();
    let shape_text = match dims.len() {
        1 => format!("({},)", dims[0]),
        _ => format!("({})", dims.join(", ")),
    };
    let mut header = format!(
        "{{'descr': '{}', 'fortran_order': False, 'shape': {shape_text}, }}",
        descr(dtype, ByteOrder::Little)
    );
    // Magic (6) + version (2) + length (2) + header, padded with spaces and
    // ended by a newline to a multiple of 64 bytes.
    let total = (10 + header.len() + 1).div_ceil(64) * 64;
    while 10 + header.len() + 1 < total {
        header.push(' ');
    }
    header.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend((header.len() as u16).to_le_bytes());
    out.extend(header.as_bytes());
    out.extend(bytes(values, dtype, ByteOrder::Little));
    out
}

/// The description shared by every folder and the CSV record: generator,
/// profile, units, sampling, cautions, and one entry per axis and field.
/// `file` gives the file name of an array (None: the array is not written
/// as a file, as in a CSV's record).
pub fn description(
    doc: &Document,
    precision: Precision,
    file: &dyn Fn(&str) -> Option<String>,
) -> Value {
    let meta = doc.metadata;
    let units = meta.units;
    let profile: Value = serde_json::from_str(&meta.profile_json)
        .unwrap_or(Value::String(meta.profile_json.clone()));
    let axes: Vec<Value> = doc
        .grid
        .axes()
        .iter()
        .map(|a| {
            let n = a.coord.name();
            json!({
                "name": n,
                "units": axis_units(a, units),
                "cells": a.cells(),
                "centers": file(&format!("{n}_centers")),
                "edges": file(&format!("{n}_edges")),
            })
        })
        .collect();
    let names: Vec<&str> = doc.grid.axes().iter().map(|a| a.coord.name()).collect();
    let cells = doc.grid.shape();
    let fields: Vec<Value> = doc
        .state
        .fields
        .iter()
        .map(|f| {
            json!({
                "name": f.name,
                "file": file(&f.name),
                "units": units.unit_string(f.dim),
                "shape": f.placement.shape(&cells),
                "placement": f.placement.describe(&names),
            })
        })
        .collect();
    let mut cautions = meta.cautions.clone();
    if precision == Precision::Single
        && !cautions
            .iter()
            .any(|c| c.starts_with(super::SINGLE_PRECISION_CAUTION))
    {
        cautions.push(super::SINGLE_PRECISION_CAUTION.to_string());
    }
    let mut out = json!({
        "generator": meta.generator,
        "scales": { "system": units.key(), "G": units.constants().g },
        "sampling": doc.state.sampling,
        "axis_order": names,
        "axes": axes,
        "fields": fields,
        "cautions": cautions,
        "profile": profile,
    });
    if !meta.reproducible {
        out["command_line"] = Value::String(meta.command_line.clone());
    }
    for (k, v) in &meta.extra {
        out[k] = match super::number_attribute(k, v).and_then(serde_json::Number::from_f64) {
            Some(n) => Value::Number(n),
            None => Value::String(v.clone()),
        };
    }
    out
}

fn write(path: &Path, data: &[u8]) -> Result<(), OutputError> {
    fs::write(path, data).map_err(|e| OutputError::io(path, e))
}

fn write_json(path: &Path, v: &Value) -> Result<(), OutputError> {
    let mut text = serde_json::to_string_pretty(v).unwrap_or_default();
    text.push('\n');
    write(path, text.as_bytes())
}

/// Writes the state of `doc` into the new folder `dir` as `.npy` files
/// (fields in `precision`, axes in double) and `metadata.json`.
pub fn write_npy(doc: &Document, dir: &Path, precision: Precision) -> Result<(), OutputError> {
    doc.check(dir)?;
    fs::create_dir(dir).map_err(|e| OutputError::io(dir, e))?;
    let dtype = match precision {
        Precision::Double => RawType::F64,
        Precision::Single => RawType::F32,
    };
    for a in doc.grid.axes() {
        let n = a.coord.name();
        let c = a.centers();
        write(
            &dir.join(format!("{n}_centers.npy")),
            &npy_bytes(&c, &[c.len()], RawType::F64),
        )?;
        let e = &a.edges;
        write(
            &dir.join(format!("{n}_edges.npy")),
            &npy_bytes(e, &[e.len()], RawType::F64),
        )?;
    }
    let cells = doc.grid.shape();
    for f in &doc.state.fields {
        let shape = f.placement.shape(&cells);
        write(
            &dir.join(format!("{}.npy", f.name)),
            &npy_bytes(&f.data, &shape, dtype),
        )?;
    }
    let mut d = description(doc, precision, &|n| Some(format!("{n}.npy")));
    d["format"] = json!({
        "kind": "npy",
        "read_with": "numpy.load(file)",
        "fields_dtype": descr(dtype, ByteOrder::Little),
    });
    write_json(&dir.join("metadata.json"), &d)
}

/// Writes the state of `doc` into the new folder `dir` as raw files in
/// `format` (axes in `float64`, in the same byte order) and
/// `metadata.json`, which gives each file's dtype, shape and order and the
/// NumPy call that reads it.
pub fn write_raw(
    doc: &Document,
    dir: &Path,
    precision: Precision,
    format: RawFormat,
) -> Result<(), OutputError> {
    doc.check(dir)?;
    fs::create_dir(dir).map_err(|e| OutputError::io(dir, e))?;
    for a in doc.grid.axes() {
        let n = a.coord.name();
        let c = a.centers();
        write(
            &dir.join(format!("{n}_centers.bin")),
            &bytes(&c, RawType::F64, format.byte_order),
        )?;
        write(
            &dir.join(format!("{n}_edges.bin")),
            &bytes(&a.edges, RawType::F64, format.byte_order),
        )?;
    }
    let cells = doc.grid.shape();
    for f in &doc.state.fields {
        let shape = f.placement.shape(&cells);
        let values = match format.order {
            ArrayOrder::C => f.data.clone(),
            ArrayOrder::Fortran => to_fortran(&f.data, &shape),
        };
        write(
            &dir.join(format!("{}.bin", f.name)),
            &bytes(&values, format.dtype, format.byte_order),
        )?;
    }
    let field_dtype = descr(format.dtype, format.byte_order);
    let order = match format.order {
        ArrayOrder::C => "C",
        ArrayOrder::Fortran => "F",
    };
    let mut d = description(doc, precision, &|n| Some(format!("{n}.bin")));
    d["format"] = json!({
        "kind": "raw",
        "fields_dtype": field_dtype,
        "axes_dtype": descr(RawType::F64, format.byte_order),
        "byte_order": match format.byte_order { ByteOrder::Little => "little", ByteOrder::Big => "big" },
        "array_order": order,
        "header_bytes": 0,
        "read_with": format!(
            "numpy.fromfile(file, dtype='{field_dtype}').reshape(shape, order='{order}')"
        ),
    });
    if format.dtype == RawType::F32 && precision == Precision::Double {
        let c = super::SINGLE_PRECISION_CAUTION.to_string();
        if let Some(list) = d["cautions"].as_array_mut() {
            if !list.iter().any(|v| v.as_str() == Some(c.as_str())) {
                list.push(Value::String(c));
            }
        }
    }
    write_json(&dir.join("metadata.json"), &d)
}

/// Writes the JSON record of a CSV table (everything but the numbers: the
/// CSV itself holds one header line and the rows).
pub fn write_csv_record(doc: &Document, path: &Path, csv_name: &str) -> Result<(), OutputError> {
    let mut d = description(doc, Precision::Double, &|_| None);
    d["format"] = json!({
        "kind": "csv",
        "file": csv_name,
        "header": "one line of `name [units]` columns; the cell-centre coordinate first",
        "non_finite": "nan, inf, -inf",
    });
    write_json(path, &d)
}

/// Places a folder all-or-nothing, as [`super::commit`] places a file:
/// refuses an existing `path` unless `force` (then replaces it), lets
/// `write` create and fill a temporary folder beside it, removes that
/// folder if `write` fails, and renames it onto `path` on success.
pub fn commit_dir<E: super::AtPath + From<OutputError>>(
    path: &Path,
    force: bool,
    write: impl FnOnce(&Path) -> Result<(), E>,
) -> Result<(), E> {
    if !force && fs::symlink_metadata(path).is_ok() {
        return Err(OutputError::Exists {
            path: path.to_path_buf(),
        }
        .into());
    }
    super::partial::remove_stale(path);
    let temp = super::partial::temp_path(path, std::process::id());
    let _ = fs::remove_dir_all(&temp);
    let _pending = super::partial::register(&temp);
    if let Err(mut e) = write(&temp) {
        let _ = fs::remove_dir_all(&temp);
        e.at_path(path);
        return Err(e);
    }
    if let Err(e) = super::partial::flush(&temp) {
        let _ = fs::remove_dir_all(&temp);
        return Err(OutputError::io(path, e).into());
    }
    if force && path.is_dir() {
        fs::remove_dir_all(path).map_err(|e| OutputError::io(path, e))?;
    } else if force && path.exists() {
        fs::remove_file(path).map_err(|e| OutputError::io(path, e))?;
    }
    fs::rename(&temp, path).map_err(|e| {
        let _ = fs::remove_dir_all(&temp);
        OutputError::io(path, e).into()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn npy_header_is_aligned_and_describes_the_array() {
        let b = npy_bytes(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0], &[2, 3], RawType::F64);
        let len = u16::from_le_bytes([b[8], b[9]]) as usize;
        assert_eq!((10 + len) % 64, 0);
        let header = std::str::from_utf8(&b[10..10 + len]).unwrap();
        assert!(header.starts_with("{'descr': '<f8', 'fortran_order': False, 'shape': (2, 3), }"));
        assert!(header.ends_with('\n'));
        assert_eq!(b.len(), 10 + len + 48);
        assert_eq!(&b[10 + len..10 + len + 8], &1.0f64.to_le_bytes());
    }

    #[test]
    fn fortran_order_puts_the_first_index_fastest() {
        // C order of [[1, 2, 3], [4, 5, 6]] is 1..6; Fortran order 1 4 2 5 3 6.
        let f = to_fortran(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0], &[2, 3]);
        assert_eq!(
            f.iter().map(|v| *v as i32).collect::<Vec<_>>(),
            [1, 4, 2, 5, 3, 6]
        );
    }
}
