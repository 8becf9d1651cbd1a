//! What a build will cost, said before it runs: cells, output bytes, peak
//! memory and expected time; and the refusal of a build whose output would
//! not fit on the disk or whose memory would not fit in the machine.
//!
//! Owns: the model of the streamed build's memory (the slabs in flight, the
//! sampler's reduced array, the writer's chunk buffers, on top of what the
//! process holds once the background is solved), the model of the file's
//! size (whole chunks, grid datasets, metadata), the room left on the
//! machine (statvfs of the output folder, `MemAvailable`, a cgroup memory
//! limit) and the calibration of time by a short timed run of the actual
//! sampler and writer. Does not own the sampler, the writer or the pipeline.
//!
//! Two variables override the room measured, for tests and for planning a
//! build on another machine: `STILLPOINT_ASSUME_FREE_DISK` and
//! `STILLPOINT_ASSUME_FREE_MEMORY`, in bytes.

use std::fmt;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::fields::slab_ranges;
use crate::output::{chunk_shape, GroupPlan, H5Stream, Precision};
use crate::pipeline::{self, Built, Error, StreamOptions};
use crate::profile::Loaded;

/// Bytes of the file that are not field values: the unit record, the
/// attributes, the object headers and chunk indices (about 40 KiB measured
/// on the bundled profiles; common practice, no source, rounded up).
const FILE_OVERHEAD: u64 = 64 << 10;

/// Slabs the threaded build holds at most: one being sampled, one waiting
/// for the writer, one being written (see `Built::write_hdf5`).
const SLABS_IN_FLIGHT: u64 = 3;

/// How long the calibration samples for, at least (unless the whole grid
/// is done sooner).
const CALIBRATION: Duration = Duration::from_millis(60);

/// Field bytes written for the time calibration of the writer, at most.
const WRITE_CALIBRATION_BYTES: u64 = 16 << 20;

/// The size of a build, from the grid and fields alone (no solving).
#[derive(Clone, Debug, PartialEq)]
pub struct Plan {
    /// Cells along each axis.
    pub shape: Vec<usize>,
    /// Cells in all.
    pub cells: u64,
    /// Field datasets written.
    pub fields: usize,
    /// Bytes of one stored value (8 or 4).
    pub value_bytes: u64,
    /// Field datasets the file holds (links not counted).
    pub datasets: usize,
    /// Bytes of the field datasets of the file (without the grid).
    pub field_bytes: u64,
    /// Values of a field per cell (DG nodes or modes; 1 otherwise).
    pub per_cell: u64,
    /// Bytes of the node positions written for the XDMF file (0 when the
    /// mesh is rectilinear).
    pub node_bytes: u64,
    /// Bytes of the file.
    pub output_bytes: u64,
    /// Rows of the first axis per slab.
    pub slab_rows: usize,
    /// Slabs in the build.
    pub slabs: u64,
    /// Bytes of the field values of one slab (always f64 in memory).
    pub slab_bytes: u64,
    /// Bytes of the sampler's reduced array for one slab.
    pub reduced_bytes: u64,
    /// Slabs held at once.
    pub in_flight: u64,
    /// Bytes the streaming adds to what the process holds: slabs in
    /// flight, the reduced array, conversion and chunk buffers.
    pub stream_bytes: u64,
}

impl Plan {
    /// The plan of `loaded`'s build under `opts`, on `threads` threads.
    /// With the `sampler` (after solving) the reduced array is its own;
    /// without, every axis is taken as varying (an upper bound).
    pub fn new(
        loaded: &Loaded,
        opts: &StreamOptions,
        threads: usize,
        sampler: Option<&crate::sample::Sampler<'_>>,
    ) -> Plan {
        Plan::with_groups(loaded, opts, threads, sampler, None)
    }

    /// [`Plan::new`], with the output's size taken from the groups as the
    /// file will hold them (`groups`: the fields `output.fields` keeps,
    /// nodes, modes and faces in their own shapes, links not counted).
    /// Without them every field is counted with the rule's values per cell.
    pub fn with_groups(
        loaded: &Loaded,
        opts: &StreamOptions,
        threads: usize,
        sampler: Option<&crate::sample::Sampler<'_>>,
        groups: Option<&[GroupPlan]>,
    ) -> Plan {
        let gas = pipeline::gas_constants(loaded);
        // Every field of every group the sampler writes (a perturbed build
        // writes the state and the perturbation beside the background).
        let specs = match sampler {
            Some(s) => s.fields(),
            None => crate::sample::field_specs(&loaded.grid, &gas),
        };
        let shape = loaded.grid.shape();
        let cells = shape.iter().map(|n| *n as u64).product::<u64>();
        let value_bytes = match opts.precision {
            Precision::Double => 8,
            Precision::Single => 4,
        };
        let slab_rows = pipeline::slab_rows(&shape, specs.len(), opts).min(shape[0]);
        let row_cells = shape[1..].iter().map(|n| *n as u64).product::<u64>();
        let slab_bytes = 8 * specs.len() as u64 * slab_rows as u64 * row_cells;
        let slots = 7 + 2 * loaded.grid.velocity_components().len() as u64;
        let reduced_bytes = 8 * match sampler {
            Some(s) => s.reduced_len(slab_rows) as u64,
            None => slab_rows as u64 * slots * row_cells,
        };
        let slabs = shape[0].div_ceil(slab_rows.max(1)) as u64;
        let in_flight = if threads > 1 {
            SLABS_IN_FLIGHT.min(slabs)
        } else {
            1
        };
        let chunk = chunk_shape(&shape, value_bytes as usize);
        let grid_bytes: u64 = shape.iter().map(|n| 8 * (2 * *n as u64 + 1)).sum();
        // The Cartesian position of every node, for the XDMF file.
        let node_bytes = if crate::output::xdmf::rectilinear(&loaded.grid) {
            0
        } else {
            3 * 8
                * crate::output::xdmf::node_shape(&loaded.grid)
                    .iter()
                    .map(|n| *n as u64)
                    .product::<u64>()
        };
        let per_cell = match loaded.sampling {
            crate::sample::SamplingRule::Nodes { points, .. } => points,
            crate::sample::SamplingRule::Modes { modes, .. } => modes,
            _ => 1,
        };
        // Stored whole chunks: a partial chunk at the end of an axis takes
        // the room of a whole one.
        let whole = |s: &[usize]| -> u64 {
            let c = chunk_shape(s, value_bytes as usize);
            s.iter()
                .zip(&c)
                .map(|(n, c)| (n.div_ceil(*c) * c) as u64)
                .product::<u64>()
                * value_bytes
        };
        let field_bytes = match groups {
            Some(groups) => groups
                .iter()
                .filter(|g| g.link_to.is_none())
                .flat_map(|g| &g.fields)
                .map(|f| whole(&f.placement.shape(&shape)))
                .sum(),
            None => {
                // The placements a build of this rule and face request
                // writes (see `Sampler::faces` for the face layouts).
                use crate::fields::{Location, Placement};
                let d = shape.len();
                let trailing = |n: usize, k: usize| if n > 1 { vec![n; k] } else { Vec::new() };
                let cell = Placement {
                    location: Location::Cell,
                    extra: trailing(per_cell, d),
                };
                let mut bytes = specs.len() as u64 * whole(&cell.shape(&shape));
                for axis in 0..d {
                    let location = Location::Face { axis };
                    if let Some(nodes) = loaded.faces.values {
                        let at = Placement {
                            location,
                            extra: trailing(nodes.unwrap_or(1), d - 1),
                        };
                        bytes += specs.len() as u64 * whole(&at.shape(&shape));
                    }
                    if loaded.faces.staggered {
                        let at = Placement {
                            location,
                            extra: Vec::new(),
                        };
                        bytes += whole(&at.shape(&shape));
                    }
                }
                bytes
            }
        };
        let output_bytes =
            field_bytes + grid_bytes + node_bytes + loaded.json_text.len() as u64 + FILE_OVERHEAD;
        // The writer converts one field of a slab at a time to f32, and
        // the library may hold a chunk per dataset.
        let convert = match opts.precision {
            Precision::Double => 0,
            Precision::Single => slab_bytes / specs.len().max(1) as u64 / 2,
        };
        let chunk_bytes = specs.len() as u64 * value_bytes * chunk.iter().product::<usize>() as u64;
        let stream_bytes = in_flight * slab_bytes + reduced_bytes + convert + chunk_bytes;
        Plan {
            shape,
            cells,
            fields: specs.len(),
            value_bytes,
            per_cell: (per_cell as u64).pow(loaded.grid.shape().len() as u32),
            field_bytes,
            datasets: groups.map_or(specs.len(), |g| {
                g.iter()
                    .filter(|g| g.link_to.is_none())
                    .map(|g| g.fields.len())
                    .sum()
            }),
            node_bytes,
            output_bytes,
            slab_rows,
            slabs,
            slab_bytes,
            reduced_bytes,
            in_flight,
            stream_bytes,
        }
    }
}

impl Plan {
    /// ` x N values per cell` for DG nodes or modes, else nothing.
    fn per_cell_text(&self) -> String {
        if self.per_cell > 1 {
            format!(" x {} values per cell", self.per_cell)
        } else {
            String::new()
        }
    }

    /// `, and N of node positions` when they are written, else nothing.
    fn nodes_text(&self) -> String {
        if self.node_bytes > 0 {
            format!(", and {} of node positions", bytes(self.node_bytes))
        } else {
            String::new()
        }
    }
}

/// Room on the machine for a build.
#[derive(Clone, Debug, PartialEq)]
pub struct Room {
    /// Bytes free for this user in the output folder.
    pub disk: u64,
    /// Where the disk figure came from.
    pub disk_source: String,
    /// Bytes of memory a new allocation can have.
    pub memory: u64,
    /// Where the memory figure came from.
    pub memory_source: String,
}

/// The room for a build writing into `dir`.
pub fn room(dir: &Path) -> Result<Room, Error> {
    let (disk, disk_source) = match assumed("STILLPOINT_ASSUME_FREE_DISK")? {
        Some(v) => (v, "STILLPOINT_ASSUME_FREE_DISK".to_string()),
        None => (
            free_disk(dir)?,
            format!("free space in {}", shown_dir(dir).display()),
        ),
    };
    let (memory, memory_source) = match assumed("STILLPOINT_ASSUME_FREE_MEMORY")? {
        Some(v) => (v, "STILLPOINT_ASSUME_FREE_MEMORY".to_string()),
        None => free_memory(),
    };
    Ok(Room {
        disk,
        disk_source,
        memory,
        memory_source,
    })
}

fn shown_dir(dir: &Path) -> PathBuf {
    std::fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf())
}

fn assumed(var: &str) -> Result<Option<u64>, Error> {
    match std::env::var(var) {
        Ok(text) => text.trim().parse::<u64>().map(Some).map_err(|_| {
            Error::Usage(format!("{var}: expected a number of bytes, found `{text}`"))
        }),
        Err(_) => Ok(None),
    }
}

/// Bytes an unprivileged writer may still use in `dir` (statvfs: available
/// blocks × fragment size).
fn free_disk(dir: &Path) -> Result<u64, Error> {
    use std::os::unix::ffi::OsStrExt;
    let c = std::ffi::CString::new(dir.as_os_str().as_bytes())
        .map_err(|_| Error::Usage(format!("{}: not a folder name", dir.display())))?;
    let mut s: libc::statvfs = unsafe { std::mem::zeroed() };
    // SAFETY: `c` is a valid C string and `s` a writable statvfs.
    if unsafe { libc::statvfs(c.as_ptr(), &mut s) } != 0 {
        return Err(Error::Usage(format!(
            "{}: cannot measure the free space: {}",
            dir.display(),
            std::io::Error::last_os_error()
        )));
    }
    Ok((s.f_bavail as u64).saturating_mul(s.f_frsize as u64))
}

/// Memory available to this process: `MemAvailable` of /proc/meminfo, or
/// the room left under a cgroup limit when that is smaller.
fn free_memory() -> (u64, String) {
    let meminfo = std::fs::read_to_string("/proc/meminfo").unwrap_or_default();
    let avail = meminfo
        .lines()
        .find_map(|l| l.strip_prefix("MemAvailable:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok())
        .map(|kib| kib * 1024);
    let mut best = (
        avail.unwrap_or(u64::MAX),
        "MemAvailable in /proc/meminfo".to_string(),
    );
    if let Some((room, source)) = cgroup_room() {
        if room < best.0 {
            best = (room, source);
        }
    }
    best
}

/// Limit minus usage of this process's memory cgroup (v2 `memory.max`, or
/// v1 `memory.limit_in_bytes`), when a limit is set.
fn cgroup_room() -> Option<(u64, String)> {
    let text = std::fs::read_to_string("/proc/self/cgroup").ok()?;
    let read = |p: &str| -> Option<u64> { std::fs::read_to_string(p).ok()?.trim().parse().ok() };
    for line in text.lines() {
        let mut parts = line.splitn(3, ':');
        let (_, controllers, path) = (parts.next()?, parts.next()?, parts.next()?);
        let candidates = if controllers.is_empty() {
            [
                format!("/sys/fs/cgroup{path}"),
                "/sys/fs/cgroup".to_string(),
            ]
            .map(|d| (format!("{d}/memory.max"), format!("{d}/memory.current")))
        } else if controllers.split(',').any(|c| c == "memory") {
            [
                format!("/sys/fs/cgroup/memory{path}"),
                "/sys/fs/cgroup/memory".to_string(),
            ]
            .map(|d| {
                (
                    format!("{d}/memory.limit_in_bytes"),
                    format!("{d}/memory.usage_in_bytes"),
                )
            })
        } else {
            continue;
        };
        for (limit, usage) in candidates {
            // "max" (v2) or a huge number (v1) means no limit.
            if let Some(l) = read(&limit).filter(|l| *l < 1 << 60) {
                let used = read(&usage).unwrap_or(0);
                return Some((l.saturating_sub(used), format!("cgroup limit {limit}")));
            }
        }
    }
    None
}

/// Peak resident memory of this process so far (`VmHWM`), in bytes.
pub fn peak_resident() -> u64 {
    status_kib("VmHWM:")
}

/// Resident memory of this process now (`VmRSS`), in bytes.
pub fn resident() -> u64 {
    status_kib("VmRSS:")
}

fn status_kib(key: &str) -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find_map(|l| l.strip_prefix(key))
                .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok())
        })
        .map_or(0, |kib| kib * 1024)
}

/// Refuse a build of `plan` into `dir` that would not fit, with the
/// numbers; `held` is the memory the process holds besides the streaming.
pub fn refuse_if_too_big(plan: &Plan, held: u64, dir: &Path) -> Result<(), Error> {
    let room = room(dir)?;
    let peak = held + plan.stream_bytes;
    if plan.output_bytes > room.disk {
        return Err(Error::Refused(format!(
            "the output would take {} ({} cells x {} fields x {} bytes{}, in whole chunks{}) \
             but only {} are free ({}); nothing was written",
            bytes(plan.output_bytes),
            plan.cells,
            plan.fields,
            plan.value_bytes,
            plan.per_cell_text(),
            plan.nodes_text(),
            bytes(room.disk),
            room.disk_source
        )));
    }
    if peak > room.memory {
        return Err(Error::Refused(format!(
            "the build would need about {} of memory ({} slabs of {} rows, {} each, a reduced \
             array of {}, and {} the process holds) but only {} are available ({}); lower \
             --slab-rows or use fewer threads; nothing was written",
            bytes(peak),
            plan.in_flight,
            plan.slab_rows,
            bytes(plan.slab_bytes),
            bytes(plan.reduced_bytes),
            bytes(held),
            bytes(room.memory),
            room.memory_source
        )));
    }
    Ok(())
}

/// A full estimate: the plan, the memory it needs and the time, calibrated.
#[derive(Clone, Debug)]
pub struct Estimate {
    /// What is built and written.
    pub plan: Plan,
    /// The output file.
    pub path: PathBuf,
    /// Room on the machine.
    pub room: Room,
    /// Memory the process holds once solved and verified.
    pub held: u64,
    /// Peak memory expected.
    pub peak: u64,
    /// Threads sampling.
    pub threads: usize,
    /// Time to read the profile and solve (measured).
    pub solve: Duration,
    /// Time of the verification (measured).
    pub verify: Duration,
    /// Time to sample the grid (calibrated).
    pub sample: Duration,
    /// Time to write the file (calibrated).
    pub write: Duration,
    /// Rows sampled and field bytes written to calibrate.
    pub calibrated_on: (usize, u64),
}

impl Estimate {
    /// Expected wall time of the build: solving, then the verification,
    /// the sampling and the writing. They run side by side, but when the
    /// sampling threads take every core (the default) they compete for
    /// them, so the times are added (measured on the bundled profiles,
    /// this is the closer figure); with cores to spare, the verification
    /// runs beside the sampling and writing.
    pub fn total(&self) -> Duration {
        let stream = self.sample + self.write;
        let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
        self.solve
            + if self.threads > 1 && cores > self.threads {
                stream.max(self.verify)
            } else {
                stream + self.verify
            }
    }
}

/// Estimate the build of `built` into `path`: verify (timed), sample a few
/// rows of the grid in the middle of the first axis until
/// `CALIBRATION` has passed (timed), and write up to
/// `WRITE_CALIBRATION_BYTES` of them into a scratch file beside `path`
/// (timed, then removed). `solve` is the time already spent.
pub fn estimate(
    built: &Built<'_>,
    loaded: &Loaded,
    path: &Path,
    opts: &StreamOptions,
    solve: Duration,
) -> Result<Estimate, Error> {
    let threads = rayon::current_num_threads();
    let t = Instant::now();
    built.verify()?;
    let verify = t.elapsed();
    let sampler = built.sampler()?;
    let n0 = loaded.grid.shape()[0];
    let groups = built.groups()?;
    let plan = Plan::with_groups(loaded, opts, threads, Some(&sampler), Some(&groups));
    let held = peak_resident();
    // Sample k rows from the middle, k growing until the time is long
    // enough to measure, after one row to warm up (the threads' buffers).
    sampler
        .slab(n0 / 2..n0 / 2 + 1)
        .map_err(|e| built.sample_error(e))?;
    let mut k = 1usize;
    let (rows, slab, took) = loop {
        let start = (n0 - k) / 2;
        let t = Instant::now();
        let slab = sampler
            .slab(start..start + k)
            .map_err(|e| built.sample_error(e))?;
        let took = t.elapsed();
        if took >= CALIBRATION || k == n0 {
            break (k, slab, took);
        }
        let grow = (CALIBRATION.as_secs_f64() / took.as_secs_f64().max(1e-6) * 1.2).min(8.0);
        k = ((k as f64 * grow.max(2.0)) as usize).min(n0);
    };
    let sample = took.mul_f64(n0 as f64 / rows as f64);
    let (written, write_took, created) = calibrate_write(built, loaded, path, opts, &slab, &plan)?;
    // The file with its grid, then the build's field bytes at the rate the
    // calibration wrote them.
    let write = created + write_took.mul_f64(plan.field_bytes as f64 / written.max(1) as f64);
    let dir = folder_of(path);
    Ok(Estimate {
        peak: held + plan.stream_bytes,
        plan,
        path: path.to_path_buf(),
        room: room(&dir)?,
        held,
        threads,
        solve,
        verify,
        sample,
        write,
        calibrated_on: (rows, written),
    })
}

/// The folder a file is written in.
pub fn folder_of(path: &Path) -> PathBuf {
    path.parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
        .to_path_buf()
}

/// Write slabs of the build's size, made of the rows of `slab` repeated,
/// into a scratch file beside `path` with the build's own writer until
/// about `WRITE_CALIBRATION_BYTES` (at least one slab) or the whole grid
/// is written; the file is removed. Returns the field bytes written, the
/// time they took, and the time creating the file (with the grid) took.
fn calibrate_write(
    built: &Built<'_>,
    loaded: &Loaded,
    path: &Path,
    opts: &StreamOptions,
    slab: &crate::fields::Slab,
    plan: &Plan,
) -> Result<(u64, Duration, Duration), Error> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let scratch = folder_of(path).join(format!(".{name}.estimate-{}", std::process::id()));
    struct Remove(PathBuf);
    impl Drop for Remove {
        fn drop(&mut self) {
            let _ = std::fs::remove_file(&self.0);
        }
    }
    let _guard = Remove(scratch.clone());
    // Every group the sampler fills (a perturbed build has three), as
    // written: the slab holds their fields in this order.
    let groups: Vec<GroupPlan> = built
        .sampler()?
        .groups()
        .into_iter()
        .map(|(name, fields)| GroupPlan {
            name: name.to_string(),
            fields,
            link_to: None,
            sampling: None,
            about: Vec::new(),
        })
        .collect();
    let n0 = plan.shape[0];
    // Bytes of one row of the first axis as the slab holds it (every
    // field, with its nodes, modes or faces).
    let row_bytes = plan.value_bytes * slab.data.iter().map(|d| d.len() as u64).sum::<u64>()
        / slab.rows.len().max(1) as u64;
    let rows = plan.slab_rows.min(n0);
    let want = (WRITE_CALIBRATION_BYTES / row_bytes.max(1)).max(rows as u64) as usize;
    // One slab of the build's size from the calibration rows.
    let have = slab.rows.len();
    let per_row = slab.data.first().map_or(0, |d| d.len() / have.max(1));
    let tiled: Vec<Vec<f64>> = slab
        .data
        .iter()
        .map(|d| {
            d.chunks(per_row.max(1))
                .cycle()
                .take(rows)
                .flatten()
                .copied()
                .collect()
        })
        .collect();
    let t = Instant::now();
    let mut out = H5Stream::create(
        &scratch,
        &loaded.grid,
        &built.metadata,
        "calibration",
        &groups,
        opts.precision,
    )?;
    // Creating the file writes the whole grid (and its node positions)
    // once, as the build does: timed apart, not scaled.
    let created = t.elapsed();
    let t = Instant::now();
    let mut written = 0u64;
    for r in slab_ranges(n0.min(want), rows) {
        let mut from = 0;
        for g in &groups {
            let part = crate::fields::Slab {
                data: tiled[from..from + g.fields.len()]
                    .iter()
                    .map(|d| d[..per_row * r.len()].to_vec())
                    .collect(),
                rows: r.clone(),
            };
            out.write(&g.name, &part)?;
            from += g.fields.len();
        }
        written += r.len() as u64 * row_bytes;
    }
    // Closing (which flushes the scratch file to the disk) is left out:
    // the writes are timed into the page cache, as documented.
    let took = t.elapsed();
    out.finish(&built.metadata)?;
    Ok((written, took, created))
}

/// Bytes in binary units, three significant figures.
pub fn bytes(n: u64) -> String {
    const UNITS: [&str; 6] = ["B", "KiB", "MiB", "GiB", "TiB", "PiB"];
    let mut v = n as f64;
    let mut u = 0;
    while v >= 1024.0 && u + 1 < UNITS.len() {
        v /= 1024.0;
        u += 1;
    }
    if u == 0 {
        format!("{n} B")
    } else {
        format!("{v:.3} {}", UNITS[u])
    }
}

fn secs(d: Duration) -> String {
    let s = d.as_secs_f64();
    if s >= 3600.0 {
        format!("{:.2} h", s / 3600.0)
    } else if s >= 60.0 {
        format!("{:.1} min", s / 60.0)
    } else {
        format!("{s:.3} s")
    }
}

impl fmt::Display for Estimate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let p = &self.plan;
        let shape: Vec<String> = p.shape.iter().map(|n| n.to_string()).collect();
        writeln!(f, "cells          {} ({})", p.cells, shape.join(" x "))?;
        writeln!(
            f,
            "output bytes   {} ({}; {} datasets of {}-byte values{} in whole chunks{}); {} free ({})",
            p.output_bytes,
            bytes(p.output_bytes),
            p.datasets,
            p.value_bytes,
            p.per_cell_text(),
            p.nodes_text(),
            bytes(self.room.disk),
            self.room.disk_source
        )?;
        writeln!(
            f,
            "peak memory    {} ({}: {} held once solved and verified, {} slab{} of {} rows at {} \
             each, reduced array {}); {} available ({})",
            self.peak,
            bytes(self.peak),
            bytes(self.held),
            p.in_flight,
            if p.in_flight == 1 { "" } else { "s" },
            p.slab_rows,
            bytes(p.slab_bytes),
            bytes(p.reduced_bytes),
            bytes(self.room.memory),
            self.room.memory_source
        )?;
        writeln!(
            f,
            "expected time  {:.3} s ({}: solving {}, verification {}, sampling {}, writing {}; \
             {} thread{})",
            self.total().as_secs_f64(),
            secs(self.total()),
            secs(self.solve),
            secs(self.verify),
            secs(self.sample),
            secs(self.write),
            self.threads,
            if self.threads == 1 { "" } else { "s" }
        )?;
        write!(
            f,
            "basis          sampling timed on {} of {} rows of the first axis; writing timed on {} \
             into {}; a file larger than the free memory is written at the disk's own rate, \
             which can be slower",
            self.calibrated_on.0,
            p.shape[0],
            bytes(self.calibrated_on.1),
            shown_dir(&folder_of(&self.path)).display()
        )
    }
}
