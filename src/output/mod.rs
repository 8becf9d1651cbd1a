//! Writers: turn a grid, sampled fields and a record of how they were built
//! into files.
//!
//! Owns: the [`Document`] handed to every writer, the [`Metadata`] recorded in
//! files, the typed [`OutputError`], and [`commit`], which makes every write
//! all-or-nothing (temporary file, then rename). The formats live in
//! submodules: [`write_hdf5`] (the primary output, layout in design §6) and
//! [`write_csv`] (1D grids), [`write_npy`] and [`write_raw`] (folders of
//! plain arrays with a JSON description), [`write_xdmf`] (the XDMF description beside
//! every HDF5 file). A writer never computes physics: it only
//! arranges numbers it is given and writes their units.

pub mod arrays;
pub mod checksum;
mod csv;
mod h5;
#[cfg(feature = "mpi")]
mod h5_mpi;
pub mod partial;
pub mod xdmf;

use std::fs;
use std::path::{Path, PathBuf};

use thiserror::Error;

use crate::fields::FieldSet;
use crate::grid::{Axis, Grid};
use crate::units::{Dim, UnitSystem};

pub use arrays::{commit_dir, write_csv_record, write_npy, write_raw, RawFormat};
pub use csv::{number as csv_number, write_csv};
pub use h5::{chunk_shape, utc_now, write_hdf5, GroupPlan, H5Stream, Parallel};
pub use xdmf::write_xdmf;

/// The caution added to a file written in single precision.
pub const SINGLE_PRECISION_CAUTION: &str = "written in single precision: relative rounding of \
    ~6e-8 can exceed the balance of the background; a scheme without well-balancing will see \
    it as a perturbation";

/// What a file records about how it was built.
#[derive(Clone, Debug, PartialEq)]
pub struct Metadata {
    /// The profile the state was built from (after overrides), as JSON text.
    pub profile_json: String,
    /// The command line that produced the file.
    pub command_line: String,
    /// Name and version of the generator, e.g. "stillpoint 0.1.0".
    pub generator: String,
    /// The unit system of every number in the file.
    pub units: UnitSystem,
    /// Warnings the user should read before using the file, one per entry.
    pub cautions: Vec<String>,
    /// Further (name, value) pairs written as root attributes.
    pub extra: Vec<(String, String)>,
    /// Leave out what varies between two builds of one profile (the
    /// creation time and the command line), so that files compare equal.
    pub reproducible: bool,
}

impl Metadata {
    /// The default generator string: the crate name and version.
    pub fn generator_name() -> String {
        format!("{} {}", env!("CARGO_PKG_NAME"), env!("CARGO_PKG_VERSION"))
    }
}

/// Everything one output file holds.
#[derive(Clone, Copy, Debug)]
pub struct Document<'a> {
    /// The grid the fields live on.
    pub grid: &'a Grid,
    /// The equilibrium alone.
    pub background: &'a FieldSet,
    /// The initial condition: equilibrium plus perturbations.
    pub state: &'a FieldSet,
    /// The record of how it was built.
    pub metadata: &'a Metadata,
}

impl Document<'_> {
    /// Checks that both field sets have the grid's shape and that every field
    /// holds one value per cell.
    fn check(&self, path: &Path) -> Result<(), OutputError> {
        let shape = self.grid.shape();
        for (group, set) in [("background", self.background), ("state", self.state)] {
            let fail = |message: String| {
                Err(OutputError::Inconsistent {
                    path: path.to_path_buf(),
                    message,
                })
            };
            if set.shape != shape {
                return fail(format!(
                    "{group} fields have shape {:?}, the grid {shape:?}",
                    set.shape
                ));
            }
            for field in &set.fields {
                let want: usize = field.placement.shape(&shape).iter().product();
                if field.data.len() != want {
                    let needs = if field.placement == crate::fields::Placement::cell() {
                        format!("the grid has {want} cells")
                    } else {
                        format!("its placement on the grid needs {want}")
                    };
                    return fail(format!(
                        "{group} field `{}` holds {} values, {needs}",
                        field.name,
                        field.data.len(),
                    ));
                }
            }
        }
        Ok(())
    }
}

/// The unit string of an axis coordinate: `rad` for angles, else a length.
fn axis_units(axis: &Axis, units: UnitSystem) -> String {
    if axis.coord.is_angle() {
        "rad".to_string()
    } else {
        units.unit_string(Dim::LENGTH)
    }
}

/// The HDF5 filters of the field datasets: none by default.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub struct Filters {
    /// Deflate (zlib) level 1 to 9.
    pub deflate: Option<u8>,
    /// The byte shuffle before deflate (often compresses floats better).
    pub shuffle: bool,
}

impl Filters {
    /// A description for files: `none`, `deflate 4`, `shuffle, deflate 4`.
    pub fn describe(&self) -> String {
        match (self.deflate, self.shuffle) {
            (None, _) => "none".into(),
            (Some(l), false) => format!("deflate {l}"),
            (Some(l), true) => format!("shuffle, deflate {l}"),
        }
    }
}

/// Floating-point width of the field datasets.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Precision {
    /// 64-bit floats (the default; keeps the balance to rounding level).
    Double,
    /// 32-bit floats; adds [`SINGLE_PRECISION_CAUTION`] to the file.
    Single,
}

/// Errors of the writers; each names the file.
#[derive(Clone, Debug, Error, PartialEq)]
#[non_exhaustive]
pub enum OutputError {
    /// The output exists and overwriting was not asked for.
    #[error("{} already exists; refusing to overwrite it (pass --force to replace it)", path.display())]
    Exists {
        /// The output file.
        path: PathBuf,
    },
    /// A file-system error.
    #[error("{}: {message}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The system's message.
        message: String,
    },
    /// An error reported by the HDF5 library.
    #[error("{}: HDF5 error: {message}", path.display())]
    Hdf5 {
        /// The file.
        path: PathBuf,
        /// The library's message.
        message: String,
    },
    /// A format that cannot hold this grid.
    #[error("{}: {message}", path.display())]
    Unsupported {
        /// The file.
        path: PathBuf,
        /// What cannot be written and what to use instead.
        message: String,
    },
    /// A document whose parts do not fit together (a bug in the caller).
    #[error("{}: cannot write an inconsistent document: {message}", path.display())]
    Inconsistent {
        /// The file.
        path: PathBuf,
        /// What does not fit.
        message: String,
    },
}

impl OutputError {
    /// A file-system error on `path`.
    pub(crate) fn io(path: &Path, e: std::io::Error) -> OutputError {
        OutputError::Io {
            path: path.to_path_buf(),
            message: e.to_string(),
        }
    }

    fn path_mut(&mut self) -> &mut PathBuf {
        match self {
            OutputError::Exists { path }
            | OutputError::Io { path, .. }
            | OutputError::Hdf5 { path, .. }
            | OutputError::Unsupported { path, .. }
            | OutputError::Inconsistent { path, .. } => path,
        }
    }
}

/// Writes an output all-or-nothing: refuses to replace an existing `path`
/// unless `force`, removes temporary files of `path` left by builds that
/// were killed ([`partial::remove_stale`]), lets `write` fill a temporary
/// file `.<name>.partial-<pid>` in the same directory (registered so that
/// a stopping signal removes it, [`partial::stop_on_signals`]), removes it
/// if `write` fails, flushes it to the disk and renames it onto `path` on
/// success. Errors from `write` are reported against `path`.
pub fn commit<E: AtPath + From<OutputError>>(
    path: &Path,
    force: bool,
    write: impl FnOnce(&Path) -> Result<(), E>,
) -> Result<(), E> {
    let io = |e| OutputError::io(path, e);
    if !force && fs::symlink_metadata(path).is_ok() {
        return Err(OutputError::Exists {
            path: path.to_path_buf(),
        }
        .into());
    }
    if path.is_dir() {
        return Err(OutputError::Io {
            path: path.to_path_buf(),
            message: format!(
                "is a folder; name the output file inside it (for instance {})",
                path.join("out.h5").display()
            ),
        }
        .into());
    }
    if path.file_name().is_none() {
        return Err(OutputError::Io {
            path: path.to_path_buf(),
            message: "not a file name".to_string(),
        }
        .into());
    }
    // Say plainly when the folder is missing, rather than let the writer
    // fail on the temporary file's name.
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if !dir.is_dir() {
        return Err(OutputError::Io {
            path: path.to_path_buf(),
            message: missing_folder(dir),
        }
        .into());
    }
    if let Some(why) = unwritable_folder(dir) {
        return Err(OutputError::Io {
            path: path.to_path_buf(),
            message: why,
        }
        .into());
    }
    partial::remove_stale(path);
    let temp = partial::temp_path(path, std::process::id());
    let _pending = partial::register(&temp);
    if let Err(mut e) = write(&temp) {
        let _ = fs::remove_file(&temp);
        e.at_path(path);
        return Err(e);
    }
    if let Err(e) = partial::flush(&temp) {
        let _ = fs::remove_file(&temp);
        return Err(OutputError::io(path, e).into());
    }
    let placed = if force {
        fs::rename(&temp, path).map_err(io)
    } else {
        // A hard link fails if `path` appeared meanwhile: never clobber it.
        match fs::hard_link(&temp, path) {
            Ok(()) => fs::remove_file(&temp).map_err(io),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => Err(OutputError::Exists {
                path: path.to_path_buf(),
            }),
            // File systems without hard links: fall back to a rename.
            Err(_) => fs::rename(&temp, path).map_err(io),
        }
    };
    if placed.is_err() {
        let _ = fs::remove_file(&temp);
    } else {
        partial::flush_parent(path);
    }
    placed.map_err(E::from)
}

/// An error that may name a file: [`commit`] points it at the final path
/// instead of the temporary file the writer saw.
pub trait AtPath {
    /// Name `path` as the file at fault, if the error names a file.
    fn at_path(&mut self, path: &Path);
}

impl AtPath for OutputError {
    fn at_path(&mut self, path: &Path) {
        *self.path_mut() = path.to_path_buf();
    }
}

/// Why `dir` cannot take an output: it is a file, or it does not exist.
pub fn missing_folder(dir: &Path) -> String {
    if dir.exists() {
        format!(
            "{} is a file, not a folder; name the output inside a folder (or move the file away)",
            dir.display()
        )
    } else {
        format!(
            "the folder {} does not exist (create it first)",
            dir.display()
        )
    }
}

/// Why the existing folder `dir` cannot take an output, if it cannot: a
/// file is created there and removed at once (permission bits do not tell,
/// for root or on a read-only or virtual file system).
pub fn unwritable_folder(dir: &Path) -> Option<String> {
    let probe = dir.join(format!(".stillpoint-probe-{}", std::process::id()));
    match fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(_) => {
            let _ = fs::remove_file(&probe);
            None
        }
        Err(e) => Some(format!(
            "the folder {} is not writable ({}); choose a folder you can write to",
            dir.display(),
            e.kind().to_string().to_lowercase()
        )),
    }
}

/// The metadata pairs that are numbers (the adiabatic index `gamma`): written
/// as number attributes, not as text, so that readers get a float.
pub const NUMBER_ATTRIBUTES: [&str; 1] = ["gamma"];

/// `value` as a number when `name` is one of [`NUMBER_ATTRIBUTES`].
pub fn number_attribute(name: &str, value: &str) -> Option<f64> {
    NUMBER_ATTRIBUTES
        .contains(&name)
        .then(|| value.parse::<f64>().ok())
        .flatten()
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::fields::Field;
    use crate::grid::Coord;

    /// A small consistent document: 3 cells in z, one density field.
    pub(crate) struct Parts {
        pub grid: Grid,
        pub set: FieldSet,
        pub meta: Metadata,
    }

    impl Parts {
        /// The document with the same fields as background and state.
        pub fn doc(&self) -> Document<'_> {
            Document {
                grid: &self.grid,
                background: &self.set,
                state: &self.set,
                metadata: &self.meta,
            }
        }
    }

    /// A writer for `commit` that puts `text` in the file it is given.
    fn text_writer(text: &str) -> impl FnOnce(&Path) -> Result<(), OutputError> + '_ {
        move |p| fs::write(p, text).map_err(|e| OutputError::io(p, e))
    }

    pub(crate) fn document_parts() -> Parts {
        let grid = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 3.0, 3).unwrap()]).unwrap();
        let set = FieldSet {
            shape: vec![3],
            sampling: "cell-centre point values".into(),
            fields: vec![Field::cell("density", Dim::DENSITY, vec![1.0, 2.0, 3.0])],
        };
        let meta = Metadata {
            profile_json: "{}".into(),
            command_line: "stillpoint build test.json".into(),
            generator: Metadata::generator_name(),
            units: UnitSystem::Cgs,
            cautions: vec![],
            extra: vec![],
            reproducible: false,
        };
        Parts { grid, set, meta }
    }

    #[test]
    fn inconsistent_documents_are_refused() {
        let mut parts = document_parts();
        parts.set.fields[0].data.pop();
        let doc = parts.doc();
        let e = doc.check(Path::new("a.h5")).unwrap_err().to_string();
        assert!(
            e.contains("`density` holds 2 values, the grid has 3 cells"),
            "{e}"
        );
    }

    #[test]
    fn commit_refuses_to_overwrite_without_force() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.txt");
        fs::write(&path, "old").unwrap();
        let e = commit(&path, false, text_writer("new")).unwrap_err();
        assert_eq!(e, OutputError::Exists { path: path.clone() });
        assert!(e.to_string().contains("pass --force"));
        assert_eq!(fs::read_to_string(&path).unwrap(), "old");
        commit(&path, true, text_writer("new")).unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "new");
        assert_eq!(
            fs::read_dir(dir.path()).unwrap().count(),
            1,
            "no temporary file left"
        );
    }

    #[test]
    fn failing_writer_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.h5");
        let e = commit(&path, false, |p| -> Result<(), OutputError> {
            fs::write(p, "half").unwrap();
            Err(OutputError::Hdf5 {
                path: p.into(),
                message: "disk full".into(),
            })
        })
        .unwrap_err();
        assert_eq!(
            e,
            OutputError::Hdf5 {
                path: path.clone(),
                message: "disk full".into()
            }
        );
        assert_eq!(
            fs::read_dir(dir.path()).unwrap().count(),
            0,
            "no output, no temporary file"
        );
    }

    #[test]
    fn missing_folder_is_named() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("absent").join("out.h5");
        let e = commit(&path, false, text_writer("x")).unwrap_err();
        assert!(
            e.to_string()
                .ends_with("absent does not exist (create it first)"),
            "{e}"
        );
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 0);
    }

    #[test]
    fn commit_creates_a_new_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("new.txt");
        let mut seen = PathBuf::new();
        commit(&path, false, |p| {
            seen = p.to_path_buf();
            text_writer("x")(p)
        })
        .unwrap();
        assert!(seen
            .file_name()
            .unwrap()
            .to_string_lossy()
            .starts_with(".new.txt.partial-"));
        assert_eq!(fs::read_to_string(&path).unwrap(), "x");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
    }
}
