//! `stillpoint confirm FILE`: is a written file intact, and does its
//! recorded profile still give the same numbers? Each field dataset's
//! values are hashed again and compared with the checksum it records
//! (`output::checksum`); then, unless asked not to, the profile recorded in
//! the file (after its overrides) is built again into a temporary file
//! and every field dataset compared, checksum against checksum. What a
//! build records that is not a dataset (the creation time, the command
//! line) is not compared.

use std::path::{Path, PathBuf};

use crate::output::{checksum, partial, OutputError};
use crate::pipeline::Error;

/// One field dataset's findings.
pub struct Finding {
    /// Its path in the file (`/background/density`).
    pub path: String,
    /// The checksum the file records, if any.
    pub recorded: Option<String>,
    /// The checksum of the values in the file now.
    pub computed: String,
    /// The checksum of the rebuilt dataset, when rebuilt (None if the
    /// rebuild has no such dataset).
    pub rebuilt: Option<Option<String>>,
}

impl Finding {
    /// The values match the recorded checksum.
    pub fn intact(&self) -> bool {
        self.recorded.as_deref() == Some(self.computed.as_str())
    }

    /// The rebuild gave the same values (true when not rebuilt).
    pub fn reproduced(&self) -> bool {
        match &self.rebuilt {
            None => true,
            Some(r) => r.as_deref() == Some(self.computed.as_str()),
        }
    }
}

/// What `confirm` found.
pub struct Report {
    /// The file's `generator` attribute.
    pub generator: String,
    /// The profile's name, as recorded.
    pub name: String,
    /// Each field dataset of the file, and of the rebuild.
    pub findings: Vec<Finding>,
    /// Datasets of the rebuild the file does not have.
    pub missing: Vec<String>,
    /// Whether the profile was rebuilt.
    pub rebuilt: bool,
}

impl Report {
    /// Every checksum matches, and the rebuild (if any) reproduced every dataset.
    pub fn passed(&self) -> bool {
        self.missing.is_empty() && self.findings.iter().all(|f| f.intact() && f.reproduced())
    }
}

fn h5err(path: &Path) -> impl Fn(hdf5::Error) -> Error + '_ {
    move |e| {
        Error::Output(OutputError::Hdf5 {
            path: path.to_path_buf(),
            message: e.to_string(),
        })
    }
}

fn string_attr(file: &hdf5::File, name: &str) -> Option<String> {
    file.attr(name)
        .ok()?
        .read_scalar::<hdf5::types::VarLenUnicode>()
        .ok()
        .map(|s| s.as_str().to_string())
}

/// Checksums of the field datasets of the HDF5 file at `path`.
fn sums(path: &Path) -> Result<Vec<(String, Option<String>, String)>, Error> {
    let file = hdf5::File::open(path).map_err(h5err(path))?;
    checksum::field_datasets(&file)
        .map_err(h5err(path))?
        .into_iter()
        .map(|f| {
            let now = checksum::of_dataset(&f.dataset).map_err(h5err(path))?;
            Ok((f.path, checksum::recorded(&f.dataset), now))
        })
        .collect()
}

/// Confirm the file at `path`; `rebuild` builds its recorded profile again
/// (into a temporary file in the system's temporary folder, removed after)
/// with `write`, the build a verb runs for a loaded profile.
pub fn confirm(
    path: &Path,
    rebuild: bool,
    write: impl FnOnce(&crate::profile::Loaded, &Path) -> Result<(), Error>,
) -> Result<Report, Error> {
    if !path.is_file() {
        return Err(Error::Usage(format!(
            "{}: no such file (give an HDF5 file written by `stillpoint build`)",
            path.display()
        )));
    }
    let file = hdf5::File::open(path).map_err(|e| {
        Error::Usage(format!(
            "{}: not an HDF5 file stillpoint can read ({e})",
            path.display()
        ))
    })?;
    let Some(profile_text) = string_attr(&file, "profile") else {
        return Err(Error::Usage(format!(
            "{}: records no profile (attribute `profile`); it was not written by `stillpoint build`",
            path.display()
        )));
    };
    let generator = string_attr(&file, "generator").unwrap_or_default();
    drop(file);
    let mut findings: Vec<Finding> = sums(path)?
        .into_iter()
        .map(|(path, recorded, computed)| Finding {
            path,
            recorded,
            computed,
            rebuilt: None,
        })
        .collect();
    let label = format!("{} (its recorded profile)", path.display());
    let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let loaded = crate::profile::from_text(&label, &profile_text, &dir, &[])?;
    let name = loaded.model.name.clone();
    let mut missing = Vec::new();
    if rebuild {
        let target: PathBuf =
            std::env::temp_dir().join(format!("stillpoint-confirm-{}.h5", std::process::id()));
        let temp = partial::temp_path(&target, std::process::id());
        let _pending = partial::register(&temp);
        let result = write(&loaded, &temp).and_then(|()| sums(&temp));
        let _ = std::fs::remove_file(&temp);
        let again = result?;
        for f in &mut findings {
            f.rebuilt = Some(
                again
                    .iter()
                    .find(|(p, _, _)| *p == f.path)
                    .map(|(_, _, c)| c.clone()),
            );
        }
        missing = again
            .iter()
            .filter(|(p, _, _)| !findings.iter().any(|f| f.path == *p))
            .map(|(p, _, _)| p.clone())
            .collect();
    }
    Ok(Report {
        generator,
        name,
        findings,
        missing,
        rebuilt: rebuild,
    })
}

impl std::fmt::Display for Report {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let ours = format!("stillpoint {}", env!("CARGO_PKG_VERSION"));
        writeln!(f, "profile {} written by {}", self.name, self.generator)?;
        if self.rebuilt && self.generator != ours {
            writeln!(
                f,
                "note: rebuilt by {ours}, not by the version that wrote the file; a difference may come from the version"
            )?;
        }
        for x in &self.findings {
            let sum = match &x.recorded {
                None => "no checksum recorded".to_string(),
                Some(_) if x.intact() => "matches its checksum".to_string(),
                Some(r) => format!(
                    "DIFFERS from its checksum (recorded {r}, now {})",
                    x.computed
                ),
            };
            let again = match &x.rebuilt {
                None => String::new(),
                Some(None) => "; the rebuild has no such dataset".to_string(),
                Some(Some(_)) if x.reproduced() => "; rebuilt identical".to_string(),
                Some(Some(c)) => format!("; the rebuild DIFFERS ({c})"),
            };
            writeln!(f, "  {:<32} {sum}{again}", x.path)?;
        }
        for m in &self.missing {
            writeln!(f, "  {m:<32} in the rebuild only: the file lacks it")?;
        }
        let n = self.findings.len();
        let intact = self.findings.iter().filter(|x| x.intact()).count();
        if self.rebuilt {
            let same = self.findings.iter().filter(|x| x.reproduced()).count();
            write!(
                f,
                "{intact} of {n} field datasets match their checksums; {same} of {n} rebuilt identical to the bit"
            )?;
        } else {
            write!(
                f,
                "{intact} of {n} field datasets match their checksums (not rebuilt)"
            )?;
        }
        if self.passed() {
            write!(
                f,
                "\nverdict: intact{}",
                if self.rebuilt {
                    ", and reproduced by its profile"
                } else {
                    ""
                }
            )
        } else {
            write!(f, "\nverdict: NOT CONFIRMED")
        }
    }
}
