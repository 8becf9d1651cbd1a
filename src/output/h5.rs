//! The HDF5 writer (design §6), streaming: the file is created with every
//! dataset chunked and empty, each [`Slab`] of rows is written as a
//! hyperslab, and memory is bounded by the slab, whatever the grid.
//!
//! Owns: the layout of the file — `/grid/<axis>_centers` and
//! `/grid/<axis>_edges`, one group per field set (`/background`, `/state`,
//! …) with `<field>` datasets shaped by each field's placement (C order, axes
//! in the grid's order), or soft links to another group's datasets, and the
//! unit record `/scales` — and its attributes: on the root `profile`,
//! `command_line`, `generator`, `sampling`, `cautions` (lines joined by
//! newlines), `created` (UTC, ISO 8601; `command_line` and `created` are
//! left out of reproducible files) and the metadata's extra pairs; on every
//! dataset `units`, `placement` and (fields) `sampling` (the group's own,
//! [`GroupPlan::sampling`], for values at faces), `about` where the plan
//! gives one, `chunks` (the
//! chunk shape, `64 x 384`) and `filters` (`none`, `deflate 4`,
//! `shuffle, deflate 4`), and on field datasets `checksum` (see
//! [`super::checksum`]). Object time stamps
//! are off, so two builds of one profile give identical datasets. Does not
//! own the all-or-nothing placement of the file (see [`super::commit`]) nor
//! any physics.
//!
//! The unit record: the group `/scales` carries `system` (`code`, `si`,
//! `cgs` or `astro`) and `G` (the gravitational constant in the file's
//! units); in a physical system it holds one group per base dimension,
//! `/scales/length`, `/scales/mass`, `/scales/time`, `/scales/temperature`,
//! each with `symbol` (`au`), `cgs` (its value in cm, g, s, K) and `si`
//! (in m, kg, s, K).
//!
//! Grid coordinates are always written in double precision; only the fields
//! follow [`Precision`], converted slab by slab.

use std::error::Error;
use std::path::Path;
use std::time::{SystemTime, UNIX_EPOCH};

use hdf5::types::VarLenUnicode;
use hdf5::{Dataset, File, Group, Hyperslab, Location, SliceOrIndex};

use super::{axis_units, Document, OutputError, Precision, SINGLE_PRECISION_CAUTION};
use crate::fields::{FieldSpec, Slab};
use crate::grid::Grid;
use crate::keys::Keyed;

type H5Result<T = ()> = Result<T, Box<dyn Error>>;

#[cfg(feature = "mpi")]
pub use super::h5_mpi::Parallel;

/// How a file is shared by MPI ranks: without the `mpi` feature, never.
#[cfg(not(feature = "mpi"))]
#[derive(Clone, Debug)]
pub enum Parallel {}

/// Root attribute names the writer sets itself; `extra` may not reuse them.
const RESERVED: [&str; 6] = [
    "profile",
    "command_line",
    "generator",
    "sampling",
    "cautions",
    "created",
];

/// Target size of one chunk of a field dataset, in bytes.
const CHUNK_BYTES: usize = 1 << 20;

/// One group of fields in a file: written from slabs, or soft links to the
/// same-named datasets of another group.
#[derive(Clone, Debug, PartialEq)]
pub struct GroupPlan {
    /// Group name (`background`, `state`, …).
    pub name: String,
    /// The fields, in the order slabs hold them.
    pub fields: Vec<FieldSpec>,
    /// When set, the group holds links to this group's datasets and takes
    /// no slabs.
    pub link_to: Option<String>,
    /// The `sampling` attribute of its datasets when it is not the file's
    /// (values at faces, say).
    pub sampling: Option<String>,
    /// An `about` attribute for some of its datasets: (field, text).
    pub about: Vec<(String, String)>,
}

/// An HDF5 file being written slab by slab. Create it with
/// [`H5Stream::create`], hand it every slab of every written group, then
/// [`H5Stream::finish`] it.
pub struct H5Stream {
    file: File,
    path: std::path::PathBuf,
    groups: Vec<(String, Vec<(FieldSpec, Dataset)>)>,
    /// The running checksum of each dataset of `groups`.
    sums: Vec<Vec<super::checksum::Running>>,
    n0: usize,
    precision: Precision,
    sampling: String,
    /// A file shared by MPI ranks: slabs are written collectively.
    #[cfg_attr(not(feature = "mpi"), allow(dead_code))]
    collective: bool,
    /// The creation time every rank records (rank 0's), for a shared file.
    created: Option<String>,
}

fn h5_error(path: &Path) -> impl Fn(Box<dyn Error>) -> OutputError + '_ {
    move |e| OutputError::Hdf5 {
        path: path.to_path_buf(),
        message: e.to_string(),
    }
}

impl H5Stream {
    /// Create the file at `path` (replacing any file there; use
    /// [`super::commit`] for a safe replacement) with the grid, the unit
    /// record and an empty chunked dataset for every field of every group;
    /// the root attributes are written by [`H5Stream::finish`], when every
    /// caution is known. With [`Precision::Single`] the fields are 32-bit
    /// floats and [`SINGLE_PRECISION_CAUTION`] is added to the cautions.
    pub fn create(
        path: &Path,
        grid: &Grid,
        meta: &super::Metadata,
        sampling: &str,
        groups: &[GroupPlan],
        precision: Precision,
    ) -> Result<H5Stream, OutputError> {
        Self::create_filtered(
            path,
            grid,
            meta,
            sampling,
            groups,
            precision,
            super::Filters::default(),
        )
    }

    /// [`H5Stream::create`] with HDF5 filters on the field datasets.
    pub fn create_filtered(
        path: &Path,
        grid: &Grid,
        meta: &super::Metadata,
        sampling: &str,
        groups: &[GroupPlan],
        precision: Precision,
        filters: super::Filters,
    ) -> Result<H5Stream, OutputError> {
        for (name, _) in &meta.extra {
            if RESERVED.contains(&name.as_str()) {
                return Err(OutputError::Inconsistent {
                    path: path.to_path_buf(),
                    message: format!("extra attribute `{name}` collides with a reserved name"),
                });
            }
        }
        Self::open(
            path,
            grid,
            meta,
            sampling,
            groups,
            (precision, filters),
            None,
        )
        .map_err(h5_error(path))
    }

    /// [`H5Stream::create`] by every rank of an MPI communicator at once
    /// (collective): one file, the grid written by the root rank, each
    /// slab written collectively by [`H5Stream::write_collective`].
    pub fn create_parallel(
        path: &Path,
        grid: &Grid,
        meta: &super::Metadata,
        sampling: &str,
        groups: &[GroupPlan],
        precision: Precision,
        parallel: Parallel,
    ) -> Result<H5Stream, OutputError> {
        Self::open(
            path,
            grid,
            meta,
            sampling,
            groups,
            (precision, super::Filters::default()),
            Some(parallel),
        )
        .map_err(h5_error(path))
    }

    fn open(
        path: &Path,
        grid: &Grid,
        meta: &super::Metadata,
        sampling: &str,
        groups: &[GroupPlan],
        (precision, filters): (Precision, super::Filters),
        parallel: Option<Parallel>,
    ) -> H5Result<H5Stream> {
        let mut builder = File::with_options();
        builder.with_fcpl(|p| p.obj_track_times(false));
        #[cfg(feature = "mpi")]
        if let Some(p) = &parallel {
            builder.with_fapl(|f| {
                p.access(f);
                f
            });
        }
        let file = builder.create(path)?;
        let root = is_root(parallel.as_ref());
        let units = meta.units;
        write_scales(&file, units)?;
        let g = file.create_group("grid")?;
        for axis in grid.axes() {
            let unit = axis_units(axis, units);
            for (suffix, values) in [("centers", axis.centers()), ("edges", axis.edges.clone())] {
                let ds = g
                    .new_dataset::<f64>()
                    .shape(values.len())
                    .create(format!("{}_{suffix}", axis.coord.name()).as_str())?;
                if root {
                    ds.write_raw(values.as_slice())?;
                }
                string_attr(&ds, "units", &unit)?;
            }
        }
        if !super::xdmf::rectilinear(grid) {
            write_nodes(&g, grid, &units.unit_string(crate::units::Dim::LENGTH))?;
        }
        let names: Vec<&str> = grid.axes().iter().map(|a| a.coord.name()).collect();
        let cells = grid.shape();
        let mut written = Vec::new();
        for plan in groups {
            let group = file.create_group(&plan.name)?;
            if let Some(target) = &plan.link_to {
                for f in &plan.fields {
                    group.link_soft(&format!("/{target}/{}", f.name), &f.name)?;
                }
                continue;
            }
            let mut sets = Vec::new();
            for f in &plan.fields {
                let ds = create_field(&group, f, &cells, precision, filters)?;
                string_attr(&ds, "units", &units.unit_string(f.dim))?;
                string_attr(
                    &ds,
                    "sampling",
                    plan.sampling.as_deref().unwrap_or(sampling),
                )?;
                string_attr(&ds, "placement", &f.placement.describe(&names))?;
                if let Some((_, text)) = plan.about.iter().find(|(n, _)| *n == f.name) {
                    string_attr(&ds, "about", text)?;
                }
                sets.push((f.clone(), ds));
            }
            written.push((plan.name.clone(), sets));
        }
        let sums = written
            .iter()
            .map(|(_, sets)| {
                sets.iter()
                    .map(|_| super::checksum::Running::new())
                    .collect()
            })
            .collect();
        Ok(H5Stream {
            file,
            path: path.to_path_buf(),
            groups: written,
            sums,
            n0: cells[0],
            precision,
            sampling: sampling.to_string(),
            collective: parallel.is_some(),
            created: created_of(parallel.as_ref()),
        })
    }

    /// The datasets of the written group `group`, checked against the
    /// number of fields of a slab.
    fn sets(
        &self,
        group: &str,
        fields: Option<usize>,
    ) -> Result<&[(FieldSpec, Dataset)], OutputError> {
        let Some((_, sets)) = self.groups.iter().find(|(n, _)| n == group) else {
            return Err(OutputError::Inconsistent {
                path: self.path.clone(),
                message: format!("no written group `{group}`"),
            });
        };
        match fields {
            Some(n) if n != sets.len() => Err(OutputError::Inconsistent {
                path: self.path.clone(),
                message: format!("group `{group}` has {} fields, the slab {n}", sets.len()),
            }),
            _ => Ok(sets),
        }
    }

    /// Write one slab of the written group `group` (by name).
    pub fn write(&mut self, group: &str, slab: &Slab) -> Result<(), OutputError> {
        let err = h5_error(&self.path);
        self.sets(group, Some(slab.data.len()))?;
        let g = self
            .groups
            .iter()
            .position(|(n, _)| n == group)
            .expect("sets found the group");
        let (n0, precision) = (self.n0, self.precision);
        let (sets, sums) = (&self.groups[g].1, &mut self.sums[g]);
        // The checksums are computed on a thread of their own while this
        // one writes (the HDF5 library is used from one thread at a time).
        std::thread::scope(|scope| {
            scope.spawn(|| {
                for ((spec, _), (sum, data)) in sets.iter().zip(sums.iter_mut().zip(&slab.data)) {
                    sum.rows(spec.placement.rows(slab.rows.clone(), n0), data, precision);
                }
            });
            for ((spec, ds), data) in sets.iter().zip(&slab.data) {
                write_rows(ds, spec, slab.rows.clone(), n0, data, precision).map_err(&err)?;
            }
            Ok(())
        })
    }

    /// Write one round of a parallel file: this rank's slab of the written
    /// group `group`, or None when it has no rows this round (every rank
    /// takes part in every round). A serial file writes the slab as
    /// [`H5Stream::write`] does.
    pub fn write_collective(
        &mut self,
        group: &str,
        slab: Option<&Slab>,
    ) -> Result<(), OutputError> {
        #[cfg(feature = "mpi")]
        if self.collective {
            let err = h5_error(&self.path);
            let sets = self.sets(group, slab.map(|s| s.data.len()))?;
            for (k, (spec, ds)) in sets.iter().enumerate() {
                let rows = slab.map(|s| spec.placement.rows(s.rows.clone(), self.n0));
                let data = slab.map_or(&[][..], |s| &s.data[k][..]);
                super::h5_mpi::write_rows(ds, rows, data, self.precision).map_err(&err)?;
            }
            return Ok(());
        }
        match slab {
            Some(s) => self.write(group, s),
            None => Ok(()),
        }
    }

    /// Write the root attributes from `meta`, then flush and close the file.
    pub fn finish(mut self, meta: &super::Metadata) -> Result<(), OutputError> {
        for (name, _) in &meta.extra {
            if RESERVED.contains(&name.as_str()) {
                return Err(OutputError::Inconsistent {
                    path: self.path.clone(),
                    message: format!("extra attribute `{name}` collides with a reserved name"),
                });
            }
        }
        let created = self.created.clone().unwrap_or_else(utc_now);
        root_attributes(&self.file, meta, &self.sampling, self.precision, &created)
            .map_err(h5_error(&self.path))?;
        // Checksums of a serial file: from the rows as written, or read
        // back where they did not come in order. A shared file gets them
        // from rank 0 after it is closed (`checksum::add_to_file`).
        if !self.collective {
            let sums = std::mem::take(&mut self.sums);
            for ((_, sets), sums) in self.groups.iter().zip(sums) {
                for ((_, ds), sum) in sets.iter().zip(sums) {
                    let text = match sum.finish(ds.shape().first().copied().unwrap_or(1)) {
                        Some(t) => t,
                        None => super::checksum::of_dataset(ds)
                            .map_err(|e| h5_error(&self.path)(Box::new(e)))?,
                    };
                    string_attr(ds, super::checksum::ATTRIBUTE, &text)
                        .map_err(h5_error(&self.path))?;
                }
            }
        }
        // Every dataset is closed before the file (a shared file refuses
        // to close with objects open).
        self.groups.clear();
        self.file
            .flush()
            .map_err(|e| h5_error(&self.path)(Box::new(e)))?;
        self.file
            .close()
            .map_err(|e| h5_error(&self.path)(Box::new(e)))
    }
}

fn root_attributes(
    file: &File,
    meta: &super::Metadata,
    sampling: &str,
    precision: Precision,
    created: &str,
) -> H5Result {
    string_attr(file, "profile", &meta.profile_json)?;
    if !meta.reproducible {
        string_attr(file, "command_line", &meta.command_line)?;
    }
    string_attr(file, "generator", &meta.generator)?;
    string_attr(file, "sampling", sampling)?;
    let mut cautions = meta.cautions.clone();
    if precision == Precision::Single
        && !cautions
            .iter()
            .any(|c| c.starts_with(SINGLE_PRECISION_CAUTION))
    {
        cautions.push(SINGLE_PRECISION_CAUTION.to_string());
    }
    string_attr(file, "cautions", &cautions.join("\n"))?;
    if !meta.reproducible {
        string_attr(file, "created", created)?;
    }
    for (name, value) in &meta.extra {
        match super::number_attribute(name, value) {
            Some(v) => number_attr(file, name, v)?,
            None => string_attr(file, name, value)?,
        }
    }
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

/// The Cartesian node positions `/grid/node_x`, `node_y`, `node_z` (see
/// [`super::xdmf`]; not written for a grid the XDMF describes as a
/// rectilinear mesh), written in blocks of rows so that memory stays bounded.
fn write_nodes(g: &Group, grid: &Grid, unit: &str) -> H5Result {
    let shape = super::xdmf::node_shape(grid);
    let inner: usize = shape[1..].iter().product();
    let sets = super::xdmf::NODE_DATASETS
        .iter()
        .map(|name| {
            let ds = g
                .new_dataset::<f64>()
                .shape(shape.clone())
                .chunk(chunk_shape(&shape, 8))
                .create(*name)?;
            string_attr(&ds, "units", unit)?;
            string_attr(
                &ds,
                "about",
                "Cartesian position of each node (cell corner), for the XDMF description",
            )?;
            Ok(ds)
        })
        .collect::<H5Result<Vec<Dataset>>>()?;
    let step = (CHUNK_BYTES / (8 * inner.max(1))).max(1);
    let mut start = 0;
    while start < shape[0] {
        let rows = start..(start + step).min(shape[0]);
        let mut block = shape.clone();
        block[0] = rows.len();
        let values = super::xdmf::node_rows(grid, rows.clone());
        for (ds, v) in sets.iter().zip(&values) {
            let mut sel: Vec<SliceOrIndex> = vec![rows.clone().into()];
            sel.extend((1..shape.len()).map(|_| SliceOrIndex::from(..)));
            let view = ndarray::ArrayViewD::from_shape(ndarray::IxDyn(&block), v.as_slice())?;
            ds.write_slice(view, Hyperslab::from(sel))?;
        }
        start = rows.end;
    }
    Ok(())
}

/// A scalar double attribute.
fn number_attr(loc: &Location, name: &str, value: f64) -> H5Result {
    loc.new_attr::<f64>().create(name)?.write_scalar(&value)?;
    Ok(())
}

/// The chunk shape of a dataset: whole trailing dimensions while they fit in
/// [`CHUNK_BYTES`], then as many rows of the next dimension as fit, then 1.
/// It depends on the dataset alone, never on how it is written.
pub fn chunk_shape(shape: &[usize], bytes_per_value: usize) -> Vec<usize> {
    let mut chunk = vec![1; shape.len()];
    let mut size = bytes_per_value;
    for a in (0..shape.len()).rev() {
        let fit = (CHUNK_BYTES / size).max(1);
        chunk[a] = shape[a].min(fit).max(1);
        size *= chunk[a];
        if chunk[a] < shape[a] {
            break;
        }
    }
    chunk
}

fn create_field(
    group: &Group,
    f: &FieldSpec,
    cells: &[usize],
    precision: Precision,
    filters: super::Filters,
) -> H5Result<Dataset> {
    let shape = f.placement.shape(cells);
    let (b, ds) = match precision {
        Precision::Double => (8, group.new_dataset::<f64>()),
        Precision::Single => (4, group.new_dataset::<f32>()),
    };
    let chunk = chunk_shape(&shape, b);
    let mut ds = ds.shape(shape.clone()).chunk(chunk.clone());
    if filters.shuffle {
        ds = ds.shuffle();
    }
    if let Some(level) = filters.deflate {
        ds = ds.deflate(level);
    }
    let ds = ds.create(f.name.as_str())?;
    let text: Vec<String> = chunk.iter().map(|n| n.to_string()).collect();
    string_attr(&ds, "chunks", &text.join(" x "))?;
    string_attr(&ds, "filters", &filters.describe())?;
    Ok(ds)
}

fn write_rows(
    ds: &Dataset,
    spec: &FieldSpec,
    rows: std::ops::Range<usize>,
    n0: usize,
    data: &[f64],
    precision: Precision,
) -> H5Result {
    let shape = ds.shape();
    let rows = spec.placement.rows(rows, n0);
    let mut slab_shape = shape.clone();
    slab_shape[0] = rows.len();
    let want: usize = slab_shape.iter().product();
    if data.len() != want {
        return Err(format!(
            "field `{}`: the slab holds {} values, its rows need {want}",
            spec.name,
            data.len()
        )
        .into());
    }
    let mut sel: Vec<SliceOrIndex> = vec![rows.into()];
    sel.extend((1..shape.len()).map(|_| SliceOrIndex::from(..)));
    let sel = Hyperslab::from(sel);
    let dims = ndarray::IxDyn(&slab_shape);
    match precision {
        Precision::Double => {
            ds.write_slice(ndarray::ArrayViewD::from_shape(dims, data)?, sel)?;
        }
        Precision::Single => {
            let single: Vec<f32> = data.iter().map(|&v| v as f32).collect();
            ds.write_slice(ndarray::ArrayViewD::from_shape(dims, &single)?, sel)?;
        }
    }
    Ok(())
}

/// Writes `doc` to a new HDF5 file at `path` in one slab (replacing any file
/// there; use [`super::commit`] for a safe replacement). When the state is
/// the background itself (the same field set), `/state` holds links to
/// `/background`.
pub fn write_hdf5(doc: &Document, path: &Path, precision: Precision) -> Result<(), OutputError> {
    doc.check(path)?;
    let specs = |set: &crate::fields::FieldSet| set.fields.iter().map(|f| f.spec()).collect();
    let linked = std::ptr::eq(doc.background, doc.state);
    let groups = [
        GroupPlan {
            name: "background".into(),
            fields: specs(doc.background),
            link_to: None,
            sampling: None,
            about: Vec::new(),
        },
        GroupPlan {
            name: "state".into(),
            fields: specs(doc.state),
            link_to: linked.then(|| "background".to_string()),
            sampling: None,
            about: Vec::new(),
        },
    ];
    let mut out = H5Stream::create(
        path,
        doc.grid,
        doc.metadata,
        &doc.state.sampling,
        &groups,
        precision,
    )?;
    let n0 = doc.grid.shape()[0];
    let slab = |set: &crate::fields::FieldSet| Slab {
        rows: 0..n0,
        data: set.fields.iter().map(|f| f.data.clone()).collect(),
    };
    out.write("background", &slab(doc.background))?;
    if !linked {
        out.write("state", &slab(doc.state))?;
    }
    out.finish(doc.metadata)
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

/// Whether this process writes what one process writes (the grid): always,
/// unless it is a rank other than the root of a parallel file.
fn is_root(parallel: Option<&Parallel>) -> bool {
    match parallel {
        #[cfg(feature = "mpi")]
        Some(p) => p.root,
        _ => true,
    }
}

/// The creation time a shared file records, chosen by rank 0.
fn created_of(parallel: Option<&Parallel>) -> Option<String> {
    match parallel {
        #[cfg(feature = "mpi")]
        Some(p) => Some(p.created.clone()),
        _ => None,
    }
}

/// The current UTC time as `YYYY-MM-DDThh:mm:ssZ`.
pub fn utc_now() -> String {
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
        // The unit record is the group /scales, not root attributes.
        let names = file.attr_names().unwrap();
        assert!(names.iter().all(|n| !n.starts_with("unit")), "{names:?}");
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
