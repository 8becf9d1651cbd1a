//! Dataset checksums: every field dataset of a file carries the attribute
//! `checksum`, `sha256:` and the SHA-256 digest (NIST FIPS 180-4) of its
//! values as stored — C order, little-endian, in the file's precision
//! (8 bytes a value for float64, 4 for float32) — the bytes
//! `numpy.ascontiguousarray(ds[()], dtype=ds.dtype.newbyteorder('<')).tobytes()`
//! gives in h5py. Field datasets are those of every group but `/grid` and
//! `/scales`, reached by hard links (a soft link of `/state` to
//! `/background` is the same dataset). A serial build hashes the values as
//! its slabs are written, in row order; a parallel build (whose ranks write
//! blocks of their own) has rank 0 read the closed file back and add the
//! attributes before the file is renamed into place.

use std::path::Path;

use hdf5::{Dataset, File, Hyperslab, SliceOrIndex};
use sha2::{Digest, Sha256};

use super::{OutputError, Precision};

/// The dataset attribute holding the checksum.
pub const ATTRIBUTE: &str = "checksum";

/// Groups that hold no field datasets.
const NOT_FIELDS: [&str; 2] = ["grid", "scales"];

/// Values hashed per call when reading back (bounded memory).
const BLOCK_VALUES: usize = 1 << 20;

/// A digest being computed from the rows of a dataset written in order.
pub(super) struct Running {
    hasher: Sha256,
    /// The next dataset row expected; None once rows came out of order.
    next: Option<usize>,
}

impl Running {
    pub(super) fn new() -> Running {
        Running {
            hasher: Sha256::new(),
            next: Some(0),
        }
    }

    /// Adds the values of dataset rows `rows` (written in that order).
    pub(super) fn rows(&mut self, rows: std::ops::Range<usize>, data: &[f64], p: Precision) {
        match self.next {
            Some(n) if n == rows.start => {
                hash_values(&mut self.hasher, data, p);
                self.next = Some(rows.end);
            }
            _ => self.next = None,
        }
    }

    /// The checksum text, when every one of `rows` rows was hashed in order.
    pub(super) fn finish(self, rows: usize) -> Option<String> {
        (self.next == Some(rows)).then(|| text(self.hasher))
    }
}

fn text(hasher: Sha256) -> String {
    let digest = hasher.finalize();
    let hex: String = digest.iter().map(|b| format!("{b:02x}")).collect();
    format!("sha256:{hex}")
}

/// Hashes values as the file stores them in precision `p`, little-endian.
fn hash_values(hasher: &mut Sha256, data: &[f64], p: Precision) {
    // On a little-endian machine float64 values are their stored bytes.
    #[cfg(target_endian = "little")]
    if p == Precision::Double {
        for chunk in data.chunks(1 << 16) {
            // SAFETY: f64 has no padding and every byte pattern is a valid
            // u8; the slice covers exactly the chunk's memory.
            let bytes = unsafe {
                std::slice::from_raw_parts(
                    chunk.as_ptr().cast::<u8>(),
                    std::mem::size_of_val(chunk),
                )
            };
            hasher.update(bytes);
        }
        return;
    }
    let mut buf = Vec::with_capacity(8 * 4096);
    for chunk in data.chunks(4096) {
        buf.clear();
        match p {
            Precision::Double => chunk
                .iter()
                .for_each(|v| buf.extend_from_slice(&v.to_le_bytes())),
            Precision::Single => chunk
                .iter()
                .for_each(|v| buf.extend_from_slice(&(*v as f32).to_le_bytes())),
        }
        hasher.update(&buf);
    }
}

/// The checksum of a dataset's values, read back in blocks of rows.
pub fn of_dataset(ds: &Dataset) -> hdf5::Result<String> {
    let shape = ds.shape();
    let single = ds.dtype()?.size() == 4;
    let mut hasher = Sha256::new();
    let n0 = shape.first().copied().unwrap_or(1);
    let inner: usize = shape.iter().skip(1).product();
    let step = (BLOCK_VALUES / inner.max(1)).max(1);
    if shape.is_empty() {
        let v: Vec<f64> = ds.read_raw()?;
        hash_values(&mut hasher, &v, Precision::Double);
        return Ok(text(hasher));
    }
    let mut start = 0;
    while start < n0 {
        let end = (start + step).min(n0);
        let mut sel: Vec<SliceOrIndex> = vec![(start..end).into()];
        sel.extend((1..shape.len()).map(|_| SliceOrIndex::from(..)));
        let sel = Hyperslab::from(sel);
        if single {
            let v: Vec<f32> = ds
                .read_slice::<f32, _, ndarray::IxDyn>(sel)?
                .into_raw_vec_and_offset()
                .0;
            let wide: Vec<f64> = v.iter().map(|x| f64::from(*x)).collect();
            hash_values(&mut hasher, &wide, Precision::Single);
        } else {
            let v: Vec<f64> = ds
                .read_slice::<f64, _, ndarray::IxDyn>(sel)?
                .into_raw_vec_and_offset()
                .0;
            hash_values(&mut hasher, &v, Precision::Double);
        }
        start = end;
    }
    Ok(text(hasher))
}

/// A field dataset of a file, by its path (`/background/density`).
pub struct FieldDataset {
    /// Its path in the file.
    pub path: String,
    /// The dataset.
    pub dataset: Dataset,
}

/// Every field dataset of `file` reached by a hard link, group by group
/// in name order.
pub fn field_datasets(file: &File) -> hdf5::Result<Vec<FieldDataset>> {
    let mut out = Vec::new();
    let mut groups = file.member_names()?;
    groups.sort();
    for g in groups.iter().filter(|g| !NOT_FIELDS.contains(&g.as_str())) {
        let Ok(group) = file.group(g) else { continue };
        let mut hard = Vec::new();
        group.iter_visit_default(|name, info| {
            if info.link_type == hdf5::LinkType::Hard {
                hard.push(name.to_string());
            }
            Ok(())
        })?;
        hard.sort();
        for name in hard {
            if let Ok(ds) = group.dataset(&name) {
                out.push(FieldDataset {
                    path: format!("/{g}/{name}"),
                    dataset: ds,
                });
            }
        }
    }
    Ok(out)
}

/// The checksum a dataset records, if any.
pub fn recorded(ds: &Dataset) -> Option<String> {
    let a = ds.attr(ATTRIBUTE).ok()?;
    a.read_scalar::<hdf5::types::VarLenUnicode>()
        .ok()
        .map(|s| s.as_str().to_string())
}

/// Reads the closed file at `path` back and gives each field dataset its
/// checksum attribute (a parallel build's rank 0 does this before the file
/// is renamed into place).
pub fn add_to_file(path: &Path) -> Result<(), OutputError> {
    let err = |e: hdf5::Error| OutputError::Hdf5 {
        path: path.to_path_buf(),
        message: e.to_string(),
    };
    let file = File::open_rw(path).map_err(err)?;
    for f in field_datasets(&file).map_err(err)? {
        let sum = of_dataset(&f.dataset).map_err(err)?;
        if f.dataset.attr(ATTRIBUTE).is_ok() {
            continue;
        }
        let v: hdf5::types::VarLenUnicode = sum.parse().map_err(|_| OutputError::Hdf5 {
            path: path.to_path_buf(),
            message: "checksum text".into(),
        })?;
        f.dataset
            .new_attr::<hdf5::types::VarLenUnicode>()
            .create(ATTRIBUTE)
            .and_then(|a| a.write_scalar(&v))
            .map_err(err)?;
    }
    file.close().map_err(err)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// FIPS 180-4 example (NIST's published test vector for "abc").
    #[test]
    fn sha256_of_abc_is_the_published_vector() {
        let mut h = Sha256::new();
        h.update(b"abc");
        assert_eq!(
            text(h),
            "sha256:ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn rows_out_of_order_give_no_running_checksum() {
        let mut r = Running::new();
        r.rows(0..2, &[1.0, 2.0], Precision::Double);
        r.rows(3..4, &[4.0], Precision::Double);
        assert!(r.finish(4).is_none());
        let mut r = Running::new();
        r.rows(0..2, &[1.0, 2.0], Precision::Double);
        assert!(r.finish(3).is_none(), "a missing row is no checksum");
    }
}
