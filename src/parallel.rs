//! A build across MPI ranks (cargo feature `mpi`, under `mpirun -n K`):
//! every rank solves the profile (the same arithmetic, so the same
//! background), rank 0 verifies it once and tells the others, each rank
//! samples its own block of rows of the first axis (whole rows, as even as
//! the grid allows), and all write one HDF5 file collectively through
//! MPI-IO. The bytes of every dataset are those of a serial build: each
//! cell's sum has one order whatever the rows around it.
//!
//! Owns: the split, the agreement between ranks (checks and verification
//! on rank 0, broadcast; a failure on any rank stops every rank at the
//! next round), and the atomic commit: rank 0 names the temporary file,
//! every rank closes it, then rank 0 renames it (or removes it on failure).
//! Does not own sampling, the file layout or the verification itself.

use std::ops::Range;
use std::path::{Path, PathBuf};

use mpi::collective::SystemOperation;
use mpi::raw::AsRaw;
use mpi::topology::SimpleCommunicator;
use mpi::traits::*;

use crate::fields::slab_ranges;
use crate::output::{H5Stream, Metadata, Parallel};
use crate::pipeline::{self, Error, StreamOptions};
use crate::profile::Loaded;

/// Whether this process was started by an MPI launcher (`mpirun`,
/// `mpiexec`, `srun`): only then does a build with the `mpi` feature
/// initialise MPI.
pub fn launched() -> bool {
    ["OMPI_COMM_WORLD_SIZE", "PMI_SIZE", "PMIX_RANK", "PMI_RANK"]
        .iter()
        .any(|v| std::env::var_os(v).is_some())
}

/// Threads each rank samples with when `--threads` is not given: the
/// cores shared by the ranks on this node (`OMPI_COMM_WORLD_LOCAL_SIZE`),
/// at least one.
pub fn threads_per_rank() -> Option<usize> {
    if !launched() {
        return None;
    }
    let local: usize = std::env::var("OMPI_COMM_WORLD_LOCAL_SIZE")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1);
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    Some((cores / local.max(1)).max(1))
}

/// Rows of the first axis of rank `rank` of `ranks`: whole rows, the first
/// `n0 mod ranks` ranks one more.
pub fn block(n0: usize, rank: usize, ranks: usize) -> Range<usize> {
    let (base, extra) = (n0 / ranks, n0 % ranks);
    let start = rank * base + rank.min(extra);
    start..start + base + usize::from(rank < extra)
}

/// What a parallel build returns: the metadata written on rank 0, None on
/// the other ranks (which print nothing).
pub type Written = Option<Metadata>;

/// The build of `loaded` into `h5` across the ranks of the world. Errors
/// are returned on every rank; only rank 0's are meant to be printed
/// ([`quiet`] says so for the others).
pub fn build(
    loaded: &Loaded,
    h5: &Path,
    force: bool,
    reproducible: bool,
    opts: &StreamOptions,
    argv: &str,
) -> Result<Written, Error> {
    let universe =
        mpi::initialize().ok_or_else(|| Error::Usage("MPI is already initialised".into()))?;
    let world = universe.world();
    let (rank, ranks) = (world.rank() as usize, world.size() as usize);
    if rank != 0 {
        QUIET.store(true, std::sync::atomic::Ordering::Relaxed);
    }
    // The whole build; on failure rank 0 prints the error before any rank
    // returns (a rank that exits first with a failure status makes the
    // launcher stop the job, and rank 0's message could be lost).
    let outcome = (|| -> Result<Written, Error> {
        // Checks on rank 0 (the file system is shared): no overwrite without
        // --force, room for the output and the memory of one rank.
        let xmf = h5.with_extension("xmf");
        agree(&world, rank, || {
            for p in [h5, xmf.as_path()] {
                if p.exists() && !force {
                    return Err(Error::Usage(format!(
                        "{}: the file exists; pass --force to overwrite it",
                        p.display()
                    )));
                }
            }
            let dir = crate::estimate::folder_of(h5);
            if !dir.is_dir() {
                return Err(Error::Usage(format!(
                    "{}: {}",
                    h5.display(),
                    crate::output::missing_folder(&dir)
                )));
            }
            let plan = crate::estimate::Plan::new(loaded, opts, rayon::current_num_threads(), None);
            crate::estimate::refuse_if_too_big(&plan, crate::estimate::resident(), &dir)?;
            Ok(Vec::new())
        })?;
        let built = pipeline::build(loaded, argv, reproducible)?;
        // Verification once, on rank 0: its cautions and the attributes it
        // adds (each perturbation alone against the discrete imbalance) go to
        // every rank, as one JSON text (attributes are written collectively,
        // so every rank must hold the same).
        let verified = agree(&world, rank, || {
            let m = built.verify()?;
            Ok(vec![
                serde_json::json!({ "cautions": m.cautions, "extra": m.extra }).to_string(),
            ])
        })?;
        let mut meta = built.metadata.clone();
        let v: serde_json::Value = verified
            .first()
            .and_then(|t| serde_json::from_str(t).ok())
            .unwrap_or_default();
        meta.cautions = v["cautions"]
            .as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|c| c.as_str().map(str::to_string))
                    .collect()
            })
            .unwrap_or_default();
        meta.extra = v["extra"]
            .as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|p| Some((p[0].as_str()?.to_string(), p[1].as_str()?.to_string())))
                    .collect()
            })
            .unwrap_or_else(|| meta.extra.clone());
        let created = agree(&world, rank, || Ok(vec![crate::output::utc_now()]))?;
        let temp = temp_name(&world, rank, h5)?;
        if rank == 0 {
            crate::output::partial::remove_stale(h5);
        }
        let _pending = crate::output::partial::register(&temp);
        let result = write(
            &world, rank, ranks, &built, loaded, &temp, &meta, opts, created,
        );
        // Everyone has closed the file (or failed): rank 0 adds the checksums
        // and commits it; every rank waits for that before it returns.
        let ok = all_ok(&world, result.is_ok());
        let mut committed: Result<(), Error> = Ok(());
        if rank == 0 {
            if ok {
                committed = crate::output::checksum::add_to_file(&temp)
                    .and_then(|()| {
                        crate::output::partial::flush(&temp)
                            .and_then(|()| std::fs::rename(&temp, h5))
                            .map_err(|e| crate::output::OutputError::io(h5, e))
                    })
                    .map_err(Error::from);
                if committed.is_ok() {
                    crate::output::partial::flush_parent(h5);
                    // The XDMF description beside it, as a serial build writes
                    // it (the same text: it depends on the grid and the fields
                    // alone), committed the same way.
                    committed = built.groups().and_then(|groups| {
                        crate::output::commit(&xmf, force, |tmp| {
                            crate::output::write_xdmf(
                                tmp,
                                h5,
                                &loaded.grid,
                                &groups,
                                opts.precision,
                                &loaded.model.name,
                            )
                        })
                        .map_err(Error::from)
                    });
                }
            }
            if !ok || committed.is_err() {
                let _ = std::fs::remove_file(&temp);
            }
        }
        world.barrier();
        committed?;
        match (result, ok) {
            (Err(e), _) => Err(e),
            (Ok(()), false) => Err(Error::Usage(
                "another rank failed; nothing was written".into(),
            )),
            (Ok(()), true) => Ok((rank == 0).then_some(meta)),
        }
    })();
    if let Err(e) = &outcome {
        if rank == 0 {
            eprintln!("error: {e}");
            QUIET.store(true, std::sync::atomic::Ordering::Relaxed);
        }
    }
    world.barrier();
    outcome
}

static QUIET: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// Whether this process prints no error of a parallel build: a rank other
/// than 0 (rank 0 speaks for all), or rank 0 once it has printed it.
pub fn quiet() -> bool {
    QUIET.load(std::sync::atomic::Ordering::Relaxed)
}

/// Run `f` on rank 0 and give every rank its outcome: the strings it
/// returned, or its error (as a message on the other ranks).
fn agree(
    world: &SimpleCommunicator,
    rank: usize,
    f: impl FnOnce() -> Result<Vec<String>, Error>,
) -> Result<Vec<String>, Error> {
    let root = world.process_at_rank(0);
    let (mut ok, mut text, local) = if rank == 0 {
        match f() {
            Ok(v) => (1u8, v.join("\u{0}").into_bytes(), Ok(v)),
            Err(e) => (0u8, e.to_string().into_bytes(), Err(e)),
        }
    } else {
        (0, Vec::new(), Ok(Vec::new()))
    };
    let mut len = text.len() as u64;
    root.broadcast_into(&mut ok);
    root.broadcast_into(&mut len);
    text.resize(len as usize, 0);
    if len > 0 {
        root.broadcast_into(&mut text[..]);
    }
    if rank == 0 {
        return local;
    }
    let text = String::from_utf8_lossy(&text).into_owned();
    match ok {
        1 if text.is_empty() => Ok(Vec::new()),
        1 => Ok(text.split('\u{0}').map(str::to_string).collect()),
        _ => Err(Error::Usage(text)),
    }
}

/// Whether `ok` holds on every rank.
fn all_ok(world: &SimpleCommunicator, ok: bool) -> bool {
    let mut all = 0u8;
    world.all_reduce_into(&u8::from(!ok), &mut all, SystemOperation::max());
    all == 0
}

/// The temporary file beside `h5`, named by rank 0 (its process id).
fn temp_name(world: &SimpleCommunicator, rank: usize, h5: &Path) -> Result<PathBuf, Error> {
    let mut pid = std::process::id();
    world.process_at_rank(0).broadcast_into(&mut pid);
    let _ = rank;
    if h5.file_name().is_none() {
        return Err(Error::Usage(format!("{}: not a file name", h5.display())));
    }
    Ok(crate::output::partial::temp_path(h5, pid))
}

/// Create the file on every rank, sample this rank's block slab by slab
/// and write each round collectively, then write the attributes and close.
#[allow(clippy::too_many_arguments)]
fn write(
    world: &SimpleCommunicator,
    rank: usize,
    ranks: usize,
    built: &pipeline::Built<'_>,
    loaded: &Loaded,
    temp: &Path,
    meta: &Metadata,
    opts: &StreamOptions,
    created: Vec<String>,
) -> Result<(), Error> {
    let sampler = built.sampler()?;
    let fields = sampler.fields();
    // The file's groups (a perturbed build has /background, /state and
    // /perturbation; `output.fields` keeps some fields), cut from the
    // sampler's slabs as a serial build cuts them.
    let groups = built.groups()?;
    let split = built.split(&sampler)?;
    let sampler = sampler.keeping(split.keep());
    let forcing = built.forcing_sampler()?;
    let mut peaks = crate::perturb::report::Peaks::new(loaded.model.gamma);
    let parallel = Parallel {
        comm: world.as_raw(),
        root: rank == 0,
        created: created.into_iter().next().unwrap_or_default(),
    };
    let mut out = H5Stream::create_parallel(
        temp,
        &loaded.grid,
        meta,
        sampler.sampling(),
        &groups,
        opts.precision,
        parallel,
    )?;
    let shape = loaded.grid.shape();
    let rows = pipeline::slab_rows(&shape, fields.len(), opts);
    let slabs = |r: usize| {
        let b = block(shape[0], r, ranks);
        slab_ranges(b.len(), rows)
            .map(move |s| b.start + s.start..b.start + s.end)
            .collect::<Vec<_>>()
    };
    let mine = slabs(rank);
    let rounds = (0..ranks).map(|r| slabs(r).len()).max().unwrap_or(0);
    for round in 0..rounds {
        let slab = mine
            .get(round)
            .map(|r| built.produce(&sampler, forcing.as_ref(), r.clone(), Vec::new()));
        let failed = matches!(slab, Some(Err(_)));
        if !all_ok(world, !failed) {
            // Every rank stops at the same round; the rank that failed
            // reports its error.
            return match slab {
                Some(Err(e)) => {
                    QUIET.store(false, std::sync::atomic::Ordering::Relaxed);
                    Err(e)
                }
                _ => Err(Error::Usage(
                    "another rank failed; nothing was written".into(),
                )),
            };
        }
        let parts = slab.transpose()?.map(|s| split.parts(s, &mut peaks));
        for (k, name) in split.names().enumerate() {
            out.write_collective(name, parts.as_ref().map(|p| &p[k]))?;
        }
    }
    // The peaks of the whole grid: every rank's, the largest of each.
    for r in 0..ranks {
        let mut text = if r == rank {
            peaks.to_json().into_bytes()
        } else {
            Vec::new()
        };
        let mut len = text.len() as u64;
        let root = world.process_at_rank(r as i32);
        root.broadcast_into(&mut len);
        text.resize(len as usize, 0);
        root.broadcast_into(&mut text[..]);
        if r != rank {
            if let Some(theirs) =
                crate::perturb::report::Peaks::from_json(&String::from_utf8_lossy(&text))
            {
                peaks.merge(&theirs);
            }
        }
    }
    let meta = split.with_peaks(meta.clone(), &peaks);
    out.finish(&meta)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_cover_the_rows_once_in_order() {
        for n0 in [1, 2, 7, 100, 101] {
            for ranks in 1..=5 {
                let mut next = 0;
                for r in 0..ranks {
                    let b = block(n0, r, ranks);
                    assert_eq!(b.start, next);
                    assert!(b.len() == n0 / ranks || b.len() == n0 / ranks + 1);
                    next = b.end;
                }
                assert_eq!(next, n0);
            }
        }
    }
}
