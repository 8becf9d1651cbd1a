//! The HDF5 writer across MPI ranks (cargo feature `mpi`): one file opened
//! by every rank of a communicator through the MPI-IO driver, each field
//! written collectively, every rank handing in its own rows (or none).
//!
//! Owns: the parallel file access, the collective transfer of a block of
//! rows (`H5Dwrite` with `H5FD_MPIO_COLLECTIVE`; a rank without rows in a
//! round selects nothing, as collective calls need every rank), and what
//! must be the same on every rank (the creation time chosen by rank 0).
//! Does not own the layout (see `h5`), the split of the grid or the commit.

use std::ffi::c_void;
use std::ops::Range;

use hdf5::Dataset;
use hdf5_sys::h5::hsize_t;
use hdf5_sys::h5d::{H5Dget_space, H5Dget_type, H5Dwrite};
use hdf5_sys::h5p::{H5FD_mpio_xfer_t, H5Pclose, H5Pcreate, H5Pset_dxpl_mpio};
use hdf5_sys::h5s::{
    H5S_seloper_t, H5Sclose, H5Screate_simple, H5Sselect_hyperslab, H5Sselect_none,
};
use hdf5_sys::h5t::H5Tclose;

use super::Precision;

/// How a file is shared by the ranks of a communicator.
#[derive(Clone, Debug)]
pub struct Parallel {
    /// The communicator every rank opened the file with.
    pub comm: mpi_sys::MPI_Comm,
    /// Whether this rank writes what only one rank writes (the grid).
    pub root: bool,
    /// The creation time recorded, rank 0's, the same on every rank.
    pub created: String,
}

impl Parallel {
    /// The file access list of the MPI-IO driver on this communicator.
    pub(super) fn access(&self, fapl: &mut hdf5::plist::FileAccessBuilder) {
        fapl.mpio(self.comm, None);
    }
}

/// Write `rows` of the dataset (None: nothing, this round) collectively;
/// `data` holds the rows, C-ordered, as f64.
pub(super) fn write_rows(
    ds: &Dataset,
    rows: Option<Range<usize>>,
    data: &[f64],
    precision: Precision,
) -> Result<(), Box<dyn std::error::Error>> {
    let shape: Vec<hsize_t> = ds.shape().iter().map(|n| *n as hsize_t).collect();
    let single: Vec<f32>;
    let buf: *const c_void = match precision {
        Precision::Double => data.as_ptr().cast(),
        Precision::Single => {
            single = data.iter().map(|&v| v as f32).collect();
            single.as_ptr().cast()
        }
    };
    let rows = rows.filter(|r| !r.is_empty());
    if let Some(r) = &rows {
        let want: usize = r.len() * ds.shape()[1..].iter().product::<usize>();
        if data.len() != want {
            return Err(
                format!("the slab holds {} values, its rows need {want}", data.len()).into(),
            );
        }
    }
    let status = hdf5::sync::sync(|| unsafe {
        // SAFETY: every id is created here and closed below; the buffer
        // holds the selected values in the dataset's own type.
        let fspace = H5Dget_space(ds.id());
        let mspace = match &rows {
            Some(r) => {
                let mut start = vec![0 as hsize_t; shape.len()];
                start[0] = r.start as hsize_t;
                let mut count = shape.clone();
                count[0] = r.len() as hsize_t;
                H5Sselect_hyperslab(
                    fspace,
                    H5S_seloper_t::H5S_SELECT_SET,
                    start.as_ptr(),
                    std::ptr::null(),
                    count.as_ptr(),
                    std::ptr::null(),
                );
                H5Screate_simple(count.len() as i32, count.as_ptr(), std::ptr::null())
            }
            None => {
                H5Sselect_none(fspace);
                let one = [1 as hsize_t];
                let m = H5Screate_simple(1, one.as_ptr(), std::ptr::null());
                H5Sselect_none(m);
                m
            }
        };
        let dxpl = H5Pcreate(*hdf5::globals::H5P_DATASET_XFER);
        H5Pset_dxpl_mpio(dxpl, H5FD_mpio_xfer_t::H5FD_MPIO_COLLECTIVE);
        let ftype = H5Dget_type(ds.id());
        let status = H5Dwrite(ds.id(), ftype, mspace, fspace, dxpl, buf);
        H5Tclose(ftype);
        H5Pclose(dxpl);
        H5Sclose(mspace);
        H5Sclose(fspace);
        status
    });
    if status < 0 {
        return Err(format!("collective write of {} failed", ds.name()).into());
    }
    Ok(())
}
