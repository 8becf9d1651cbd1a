//! The HDF5 writer (design §6).
//!
//! Owns: the layout of the file — `/grid/<axis>_centers` and
//! `/grid/<axis>_edges`, `/background/<field>` and `/state/<field>` shaped like
//! the grid (C order, axes in the grid's order), and the unit record
//! `/scales` — and its attributes: on the root `profile`, `command_line`,
//! `generator`, `sampling`, `cautions` (lines joined by newlines), `created`
//! (UTC, ISO 8601) and the metadata's extra pairs; on every dataset `units`
//! and (fields) `sampling`. Does not own the all-or-nothing placement of the
//! file (see [`super::commit`]) nor any physics.
//!
//! The unit record: the group `/scales` carries `system` (`code`, `si`,
//! `cgs` or `astro`) and `G` (the gravitational constant in the file's
//! units); in a physical system it holds one group per base dimension,
//! `/scales/length`, `/scales/mass`, `/scales/time`, `/scales/temperature`,
//! each with `symbol` (`au`), `cgs` (its value in cm, g, s, K) and `si`
//! (in m, kg, s, K).
//!
//! Grid coordinates are always written in double precision; only the fields
//! follow [`Precision`].

use std::error::Error;
use std::path::Path;
use std::time::{SystemTime, UNIX_EPOCH};

use hdf5::types::VarLenUnicode;
use hdf5::{File, Group, Location};

use super::{axis_units, Document, OutputError, Precision, SINGLE_PRECISION_CAUTION};
use crate::fields::FieldSet;
use crate::keys::Keyed;

type H5Result = Result<(), Box<dyn Error>>;

/// Root attribute names the writer sets itself; `extra` may not reuse them.
const RESERVED: [&str; 6] = [
    "profile",
    "command_line",
    "generator",
    "sampling",
    "cautions",
    "created",
];

/// Writes `doc` to a new HDF5 file at `path` (replacing any file there; use
/// [`super::commit`] for a safe replacement). With [`Precision::Single`] the
/// fields are written as 32-bit floats and [`SINGLE_PRECISION_CAUTION`] is
/// added to the `cautions` attribute.
pub fn write_hdf5(doc: &Document, path: &Path, precision: Precision) -> Result<(), OutputError> {
    doc.check(path)?;
    for (name, _) in &doc.metadata.extra {
        if RESERVED.contains(&name.as_str()) {
            return Err(OutputError::Inconsistent {
                path: path.to_path_buf(),
                message: format!("extra attribute `{name}` collides with a reserved name"),
            });
        }
    }
    write(doc, path, precision).map_err(|e| OutputError::Hdf5 {
        path: path.to_path_buf(),
        message: e.to_string(),
    })
}

fn write(doc: &Document, path: &Path, precision: Precision) -> H5Result {
    let file = File::create(path)?;
    let meta = doc.metadata;
    let units = meta.units;
    string_attr(&file, "profile", &meta.profile_json)?;
    string_attr(&file, "command_line", &meta.command_line)?;
    string_attr(&file, "generator", &meta.generator)?;
    write_scales(&file, units)?;
    string_attr(&file, "sampling", &doc.state.sampling)?;
    let mut cautions = meta.cautions.clone();
    if precision == Precision::Single && !cautions.iter().any(|c| c == SINGLE_PRECISION_CAUTION) {
        cautions.push(SINGLE_PRECISION_CAUTION.to_string());
    }
    string_attr(&file, "cautions", &cautions.join("\n"))?;
    string_attr(&file, "created", &utc_now())?;
    for (name, value) in &meta.extra {
        string_attr(&file, name, value)?;
    }

    let grid = file.create_group("grid")?;
    for axis in doc.grid.axes() {
        let unit = axis_units(axis, units);
        for (suffix, values) in [("centers", axis.centers()), ("edges", axis.edges.clone())] {
            let ds = grid
                .new_dataset::<f64>()
                .shape(values.len())
                .create(format!("{}_{suffix}", axis.coord.name()).as_str())?;
            ds.write_raw(values.as_slice())?;
            string_attr(&ds, "units", &unit)?;
        }
    }
    write_fields(
        &file.create_group("background")?,
        doc.background,
        doc,
        precision,
    )?;
    write_fields(&file.create_group("state")?, doc.state, doc, precision)?;
    file.flush()?;
    Ok(())
}

/// The unit record `/scales` (see the module documentation).
fn write_scales(file: &File, units: crate::units::UnitSystem) -> H5Result {
    let scales = file.create_group("scales")?;
    string_attr(&scales, "system", units.key())?;
    number_attr(&scales, "G", units.constants().g)?;
    for base in units.base_units().into_iter().flatten() {
        let g = scales.create_group(base.dimension)?;
        string_attr(&g, "symbol", base.symbol)?;
        number_attr(&g, "cgs", base.cgs)?;
        number_attr(&g, "si", base.si)?;
    }
    Ok(())
}

/// A scalar double attribute.
fn number_attr(loc: &Location, name: &str, value: f64) -> H5Result {
    loc.new_attr::<f64>().create(name)?.write_scalar(&value)?;
    Ok(())
}

fn write_fields(group: &Group, set: &FieldSet, doc: &Document, precision: Precision) -> H5Result {
    for field in &set.fields {
        let ds = match precision {
            Precision::Double => {
                let ds = group
                    .new_dataset::<f64>()
                    .shape(set.shape.clone())
                    .create(field.name.as_str())?;
                ds.write_raw(field.data.as_slice())?;
                ds
            }
            Precision::Single => {
                let data: Vec<f32> = field.data.iter().map(|&v| v as f32).collect();
                let ds = group
                    .new_dataset::<f32>()
                    .shape(set.shape.clone())
                    .create(field.name.as_str())?;
                ds.write_raw(data.as_slice())?;
                ds
            }
        };
        string_attr(&ds, "units", &doc.metadata.units.unit_string(field.dim))?;
        string_attr(&ds, "sampling", &set.sampling)?;
    }
    Ok(())
}

/// A scalar variable-length UTF-8 string attribute.
fn string_attr(loc: &Location, name: &str, value: &str) -> H5Result {
    let value: VarLenUnicode = value
        .parse()
        .map_err(|e| format!("attribute `{name}` cannot be stored: {e}"))?;
    loc.new_attr::<VarLenUnicode>()
        .create(name)?
        .write_scalar(&value)?;
    Ok(())
}

/// The current UTC time as `YYYY-MM-DDThh:mm:ssZ`.
fn utc_now() -> String {
    let secs = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0, |d| d.as_secs());
    iso_utc(secs)
}

/// Seconds since 1970-01-01T00:00:00Z as an ISO 8601 UTC time. The date uses
/// the days-to-civil algorithm of H. Hinnant, "chrono-Compatible Low-Level
/// Date Algorithms" (proleptic Gregorian calendar).
fn iso_utc(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        rem % 3600 / 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::output::tests::document_parts;

    #[test]
    fn iso_dates() {
        // Reference instants: the Unix epoch; 2000-02-29 (leap day) 12:34:56
        // UTC = 951827696 s; 2026-12-01T00:00:00Z = 1796083200 s (from
        // `date -u -d @…`).
        assert_eq!(iso_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(iso_utc(951_827_696), "2000-02-29T12:34:56Z");
        assert_eq!(iso_utc(1_796_083_200), "2026-12-01T00:00:00Z");
    }

    #[test]
    fn writes_layout_and_attributes() {
        let parts = document_parts();
        let doc = parts.doc();
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.h5");
        write_hdf5(&doc, &path, Precision::Single).unwrap();
        let file = File::open(&path).unwrap();
        let rho = file.dataset("state/density").unwrap();
        assert_eq!(rho.shape(), vec![3]);
        assert_eq!(rho.dtype().unwrap().size(), 4, "single precision");
        let values: Vec<f32> = rho.read_raw().unwrap();
        assert!((f64::from(values[2]) - 3.0).abs() < 1e-6);
        let edges: Vec<f64> = file.dataset("grid/z_edges").unwrap().read_raw().unwrap();
        assert_eq!(edges.len(), 4);
        let read = |loc: &Location, name: &str| -> String {
            loc.attr(name)
                .unwrap()
                .read_scalar::<VarLenUnicode>()
                .unwrap()
                .as_str()
                .to_string()
        };
        assert_eq!(read(&rho, "units"), "g cm^-3");
        let scales = file.group("scales").unwrap();
        assert_eq!(read(&scales, "system"), "cgs");
        assert_eq!(read(&file.group("scales/length").unwrap(), "symbol"), "cm");
        assert!(read(&file, "cautions").contains("single precision"));
        assert_eq!(read(&file, "generator"), "stillpoint 0.1.0");
        let mass = file.group("scales/mass").unwrap();
        let cgs: f64 = mass.attr("cgs").unwrap().read_scalar().unwrap();
        let si: f64 = mass.attr("si").unwrap().read_scalar().unwrap();
        assert!((cgs - 1.0).abs() < 1e-15 && (si - 1e-3).abs() < 1e-18);
        let g: f64 = scales.attr("G").unwrap().read_scalar().unwrap();
        assert!(
            (g / 6.674_30e-8 - 1.0).abs() < 1e-15,
            "CODATA 2018 G in cgs"
        );
        assert!(file.attr("unit_system").is_err());
        assert!(read(&file, "created").ends_with('Z'));
    }

    #[test]
    fn extra_may_not_shadow_reserved_attributes() {
        let mut parts = document_parts();
        parts.meta.extra.push(("profile".into(), "x".into()));
        let doc = parts.doc();
        let dir = tempfile::tempdir().unwrap();
        let e = write_hdf5(&doc, &dir.path().join("x.h5"), Precision::Double).unwrap_err();
        assert!(e.to_string().contains("`profile` collides"), "{e}");
    }
}
