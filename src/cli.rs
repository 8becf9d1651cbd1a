//! The command line: argument definitions (clap) and one function per verb.
//! The binary only calls [`run`] and turns its error into an exit code.
//!
//! Owns: options, help texts with an example for every verb, what each verb
//! prints, and the refusal to overwrite files. Does not own: physics.

use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand};

use crate::check;
use crate::closure::derived_laws;
use crate::keys::Keyed;
use crate::output::{self, Document};
use crate::pipeline::{self, Error};
use crate::profile::{self, bundled, Loaded};
use crate::table;

/// Print a line on stdout. A closed pipe (`stillpoint table … | head -3`)
/// ends the process quietly instead of panicking.
macro_rules! say {
    ($($t:tt)*) => {{
        use std::io::Write;
        let mut out = std::io::stdout().lock();
        if let Err(e) = writeln!(out, $($t)*) {
            if e.kind() == std::io::ErrorKind::BrokenPipe {
                std::process::exit(0);
            }
        }
    }};
}

/// [`say!`] without the newline.
macro_rules! say_raw {
    ($($t:tt)*) => {{
        use std::io::Write;
        let mut out = std::io::stdout().lock();
        if let Err(e) = write!(out, $($t)*) {
            if e.kind() == std::io::ErrorKind::BrokenPipe {
                std::process::exit(0);
            }
        }
    }};
}

/// stillpoint: exact equilibrium states and initial conditions for
/// gas-dynamics simulations.
#[derive(Debug, Parser)]
#[command(name = "stillpoint", version, about, long_about = None)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The verbs.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Build the equilibrium on the profile's grid and write it (HDF5, and CSV for 1D grids).
    #[command(
        after_help = "Example:\n  stillpoint build profiles/quiet-slab.json -o slab.h5 --set g0=2"
    )]
    Build {
        #[command(flatten)]
        common: Common,
        /// Output HDF5 file (default: the profile's output.file, else NAME.h5).
        #[arg(short, long, value_name = "FILE")]
        output: Option<PathBuf>,
        /// Also write a CSV table beside the HDF5 file (1D grids only).
        #[arg(long)]
        csv: bool,
        #[command(flatten)]
        arrays: ArrayArgs,
        /// Overwrite existing output files.
        #[arg(long)]
        force: bool,
        /// Leave out of the file what differs between two builds of one
        /// profile (the creation time and the command line), so that the
        /// files are identical byte for byte.
        #[arg(long)]
        reproducible: bool,
        /// Print what the build would cost — cells, output bytes, peak
        /// memory and expected time (calibrated by a short timed run of
        /// the sampler and the writer) — and write nothing.
        #[arg(long)]
        estimate: bool,
        /// Draw no progress bar (it is drawn on standard error, when that is
        /// a terminal, for builds that take longer than about a second).
        #[arg(long, short)]
        quiet: bool,
        #[command(flatten)]
        stream: StreamArgs,
    },
    /// Check the balance with exact symbolic derivatives; exits non-zero when it fails.
    #[command(
        after_help = "Stability diagnostics, section `stability` (from exact derivatives; each \
                      with its minimum, maximum and where it fails; an unstable background still \
                      builds, with a caution, and the exit status is that of the balance):\n  \
                      kappa^2      Rayleigh's epicyclic frequency R^-3 d(R^4 Omega^2)/dR of disks \
                      (stratified disks: over (R, z)) and tori: < 0 is unstable to axisymmetric \
                      perturbations; a torus of constant specific angular momentum (kappa^2 = 0) \
                      is marginal\n  \
                      SH 1, SH 2   the Solberg-Hoiland criteria of stratified disks (with \
                      j = R v_phi, S = ln(P rho^-gamma)); skipped for gamma = 1\n  \
                      N^2          buoyancy frequency of slabs and spheres (Schwarzschild, with \
                      gas.gamma): N^2 < 0 is convectively unstable; skipped for gamma = 1\n  \
                      N_z^2        the vertical buoyancy frequency of stratified disks\n  \
                      R dOmega/dz  the vertical shear of stratified disks, with the growth time \
                      of the vertical-shear instability in local orbits (needs fast cooling)\n  \
                      Toomre Q     c kappa/(pi G Sigma), c = sqrt(P/Sigma), for vertically \
                      integrated disks: < 1 is gravitationally unstable if the simulation has \
                      self-gravity\n\n\
                      A torus (balance.torus) also reports its edges, density maximum, both \
                      balance residuals inside and the floored cells where balance is given \
                      up.\n\n\
                      Example:\n  stillpoint check profiles/powerlaw-disk.json --tolerance 1e-12"
    )]
    Check {
        #[command(flatten)]
        common: Common,
        /// Largest relative residual accepted (positive; double-precision
        /// rounding alone leaves residuals of 1e-16 to 1e-13).
        #[arg(long, value_name = "T", default_value = "1e-10", value_parser = positive_tolerance)]
        tolerance: f64,
        /// Relative amplitude of the perturbation the drift forecast compares
        /// with (positive; default: the largest peak of the profile's
        /// perturbations).
        #[arg(long, value_name = "ETA", value_parser = positive_tolerance)]
        amplitude: Option<f64>,
    },
    /// Print the background along its coordinate (rotation curve for disks).
    #[command(
        after_help = "Examples:\n  stillpoint table profiles/powerlaw-disk.json --points 8\n  stillpoint table profiles/quiet-slab.json --at 0,1,2.5 --csv"
    )]
    Table {
        #[command(flatten)]
        common: Common,
        /// Number of evenly spaced points over the grid's range, both ends
        /// included (at least 2; default 11).
        #[arg(long, value_name = "N", conflicts_with = "at",
              value_parser = clap::value_parser!(u32).range(2..))]
        points: Option<u32>,
        /// Comma-separated coordinates (numbers or formulas of parameters;
        /// negative values are accepted, e.g. `--at -1,0,1`).
        #[arg(long, value_name = "LIST", allow_hyphen_values = true)]
        at: Option<String>,
        /// Print CSV instead of aligned text.
        #[arg(long)]
        csv: bool,
    },
    /// Confirm a written HDF5 file: every field dataset against its recorded
    /// checksum, then a rebuild of the profile it records compared dataset
    /// by dataset; exits 1 when anything differs.
    #[command(
        after_help = "Checksums are SHA-256 of each field dataset's values as stored (C order, \
                      little-endian, the file's precision), in its attribute `checksum`. The \
                      creation time and the command line are not compared.\n\n\
                      Examples:\n  stillpoint confirm quiet-slab.h5\n  stillpoint confirm disk.h5 --no-rebuild"
    )]
    Confirm {
        /// The HDF5 file.
        file: PathBuf,
        /// Only compare the checksums; do not build the profile again.
        #[arg(long)]
        no_rebuild: bool,
    },
    /// Print the derived laws and the derivatives used, as formulas.
    #[command(after_help = "Example:\n  stillpoint derive profiles/ring-disk.json --latex")]
    Derive {
        #[command(flatten)]
        common: Common,
        /// Print LaTeX instead of plain text.
        #[arg(long)]
        latex: bool,
    },
    /// Write the background as source code: a self-contained function (C99, Fortran or
    /// Python with NumPy) that evaluates it at any point, parameters baked in.
    #[command(
        after_help = "Closed-form backgrounds are emitted as formulas; integrated ones carry a \
                      piecewise Chebyshev interpolant of the integrated quantity whose largest \
                      error is measured against stillpoint's own background before anything is \
                      written. Perturbations are not part of the background and are left out; \
                      a torus is refused.\n\n\
                      Examples:\n  stillpoint emit profiles/powerlaw-disk.json --lang c -o disk.h\n  \
                      stillpoint emit layered-atmosphere --lang python -o atmosphere.py"
    )]
    Emit {
        #[command(flatten)]
        common: Common,
        /// The language.
        #[arg(long, value_enum)]
        lang: LangArg,
        /// Output file (default: standard output, the summary then on standard error).
        #[arg(short, long, value_name = "FILE")]
        output: Option<PathBuf>,
        /// Overwrite an existing output file.
        #[arg(long)]
        force: bool,
        /// Largest relative error of an interpolated field (P or rho) accepted.
        #[arg(long, value_name = "T", default_value = "1e-12", value_parser = positive_tolerance)]
        tolerance: f64,
    },
    /// List the bundled profiles, a line each; with a NAME, print that
    /// profile's JSON (save it, edit it, build it).
    #[command(
        after_help = "Examples:\n  stillpoint profiles\n  stillpoint profiles powerlaw-disk > my-disk.json"
    )]
    Profiles {
        /// A bundled profile whose JSON to print.
        name: Option<String>,
    },
    /// Draw a profile as PNG or SVG: its curves along the balance
    /// coordinate, a slice of its grid, or the residual of its balance.
    #[command(after_help = "Kinds (--what):\n  \
                      curves    density, pressure, temperature (or c^2) along the balance \
                      coordinate; for disks also v_phi/v_K, 1 - v_phi/v_K and H/R\n  \
                      slice     one field (--field, default density) on the plane of a 2D grid, \
                      or on the meridional plane phi = first cell (cylindrical and spherical \
                      grids) or the plane of z nearest 0 (Cartesian boxes) of a 3D grid, with \
                      contours\n  \
                      residual  the relative residual of the balance along the balance \
                      coordinate, from exact derivatives, against the check tolerance\n\n\
                      Examples:\n  stillpoint plot powerlaw-disk -o disk.png\n  \
                      stillpoint plot flared-disk-spherical -o slice.svg --what slice --field \
                      velocity_phi\n  stillpoint plot quiet-slab -o residual.png --what residual \
                      --set g0=2")]
    Plot {
        #[command(flatten)]
        common: Common,
        /// The image file: .png or .svg.
        #[arg(short, long, value_name = "FILE")]
        output: PathBuf,
        /// What to draw.
        #[arg(long, value_enum, default_value = "curves")]
        what: PlotWhat,
        /// The field a slice shows (a dataset name of the built file, e.g.
        /// density, pressure, velocity_phi).
        #[arg(long, value_name = "NAME")]
        field: Option<String>,
        /// Image size in pixels, WIDTHxHEIGHT.
        #[arg(long, value_name = "WxH", default_value = "1000x750", value_parser = parse_size)]
        size: (u32, u32),
        /// Overwrite an existing image.
        #[arg(long)]
        force: bool,
    },
    /// Print a shell completion script for SHELL on stdout.
    #[command(
        after_help = "Examples:\n  stillpoint completions bash > ~/.local/share/bash-completion/completions/stillpoint\n  stillpoint completions zsh > ~/.zfunc/_stillpoint"
    )]
    Completions {
        /// The shell.
        #[arg(value_enum)]
        shell: clap_complete::Shell,
    },
    /// Print the manual page (roff) on stdout.
    #[command(after_help = "Example:\n  stillpoint manual > stillpoint.1 && man ./stillpoint.1")]
    Manual,
}

/// `plot --what`.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum PlotWhat {
    /// Profiles along the balance coordinate.
    Curves,
    /// A field on a plane of a 2D or 3D grid.
    Slice,
    /// The relative residual of the balance.
    Residual,
}

fn parse_size(text: &str) -> Result<(u32, u32), String> {
    let bad = || format!("expected WIDTHxHEIGHT in pixels (each 200 to 8000), found `{text}`");
    let (w, h) = text.split_once(['x', 'X']).ok_or_else(bad)?;
    let w: u32 = w.trim().parse().map_err(|_| bad())?;
    let h: u32 = h.trim().parse().map_err(|_| bad())?;
    if !(200..=8000).contains(&w) || !(200..=8000).contains(&h) {
        return Err(bad());
    }
    Ok((w, h))
}

/// Plain-array outputs beside the HDF5 file.
#[derive(Debug, Args)]
pub struct ArrayArgs {
    /// Also write a folder NAME-npy/ of NumPy .npy files, one per field and
    /// axis, with metadata.json.
    #[arg(long)]
    pub npy: bool,
    /// Also write a folder NAME-raw/ of raw binary files, one per field and
    /// axis, with metadata.json giving dtype, byte order, order and shape.
    #[arg(long)]
    pub raw: bool,
    /// Value type of the raw field files (default: the profile's
    /// output.precision; axes are always float64).
    #[arg(long, value_enum, value_name = "TYPE", requires = "raw")]
    pub raw_dtype: Option<RawDtype>,
    /// Byte order of the raw files.
    #[arg(long, value_enum, default_value = "little", requires = "raw")]
    pub byte_order: ByteOrderArg,
    /// Order of the values of a raw field: c (last axis fastest, as in the
    /// HDF5 file) or fortran (first axis fastest).
    #[arg(long, value_enum, default_value = "c", requires = "raw")]
    pub array_order: ArrayOrderArg,
}

/// `emit --lang`.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum LangArg {
    /// C99 (also CUDA/HIP device code through STILLPOINT_FN).
    C,
    /// Fortran 2008.
    Fortran,
    /// Python 3 with NumPy (vectorised).
    Python,
}

/// `--raw-dtype`.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum RawDtype {
    /// 64-bit floats.
    Float64,
    /// 32-bit floats (adds the single-precision caution).
    Float32,
}

/// `--byte-order`.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum ByteOrderArg {
    /// Least significant byte first.
    Little,
    /// Most significant byte first.
    Big,
}

/// `--array-order`.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum ArrayOrderArg {
    /// Last index fastest.
    C,
    /// First index fastest.
    Fortran,
}

impl ArrayArgs {
    fn raw_format(&self, precision: output::Precision) -> output::RawFormat {
        use output::arrays::{ArrayOrder, ByteOrder, RawType};
        output::RawFormat {
            dtype: match (self.raw_dtype, precision) {
                (Some(RawDtype::Float64), _) => RawType::F64,
                (Some(RawDtype::Float32), _) => RawType::F32,
                (None, output::Precision::Double) => RawType::F64,
                (None, output::Precision::Single) => RawType::F32,
            },
            byte_order: match self.byte_order {
                ByteOrderArg::Little => ByteOrder::Little,
                ByteOrderArg::Big => ByteOrder::Big,
            },
            order: match self.array_order {
                ArrayOrderArg::C => ArrayOrder::C,
                ArrayOrderArg::Fortran => ArrayOrder::Fortran,
            },
        }
    }
}

/// How a build uses the machine. Neither changes a single value in the
/// file.
#[derive(Debug, Args)]
pub struct StreamArgs {
    /// Threads to sample with (default: every core).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..))]
    pub threads: Option<u32>,
    /// Rows of the first grid axis sampled and written at a time (default:
    /// about 8 MiB of values); memory is bounded by it.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub slab_rows: Option<u64>,
}

/// Options every profile verb takes.
#[derive(Debug, Args)]
pub struct Common {
    /// A profile file, or the name of a bundled profile.
    pub profile: String,
    /// Override a parameter: NAME=VALUE (a number or a formula); repeatable.
    #[arg(long = "set", value_name = "NAME=VALUE", value_parser = profile::parse_override)]
    pub set: Vec<(String, String)>,
}

impl Common {
    fn load(&self) -> Result<Loaded, Error> {
        Ok(profile::load(&self.profile, &self.set)?)
    }
}

/// What a verb asks the process to do at exit.
#[derive(Debug, PartialEq, Eq)]
pub enum Outcome {
    /// Success.
    Ok,
    /// The verb ran but its verdict is negative (a failed check).
    Failed,
}

/// Run a parsed command line, printing to stdout. `argv` is recorded in files.
pub fn run(cli: Cli, argv: &str) -> Result<Outcome, Error> {
    match cli.command {
        Command::Build {
            common,
            output,
            csv,
            arrays,
            force,
            reproducible,
            estimate,
            quiet,
            stream,
        } => {
            let flags = BuildFlags {
                csv,
                arrays: &arrays,
                force,
                reproducible,
                estimate,
                quiet,
            };
            let run = || build(&common, output, &flags, &stream, argv);
            let threads = stream.threads.map(|n| n as usize);
            #[cfg(feature = "mpi")]
            let threads = threads.or_else(crate::parallel::threads_per_rank);
            match threads {
                None => run(),
                Some(n) => rayon::ThreadPoolBuilder::new()
                    .num_threads(n)
                    .build()
                    .map_err(|e| Error::Usage(format!("--threads: {e}")))?
                    .install(run),
            }
        }
        Command::Check {
            common,
            tolerance,
            amplitude,
        } => {
            let loaded = common.load()?;
            if loaded.model.torus.is_some() {
                return check_torus(&loaded, tolerance, amplitude);
            }
            let (bg, domain) = pipeline::solve_unverified(&loaded)?;
            let centres = pipeline::centres_for(&loaded.grid, loaded.model.shape.frame());
            let report = check::run(&loaded.model, &bg, &domain, &centres, tolerance)
                .map_err(|e| Error::closure(&loaded, e))?;
            say!("{} ({})", loaded.model.name, loaded.source);
            say!("{report}");
            match crate::criteria::section(&loaded.model, &bg, &domain, Some(&loaded.grid)) {
                Ok(sec) => say!("{sec}"),
                Err(e) => say!("stability\n  not evaluated: {e}"),
            }
            let mut more = Vec::new();
            let mut alone = Vec::new();
            if !loaded.perturbations.is_empty() {
                let discrete = report.discrete.map(|d| d.0);
                say!("perturbations (each alone at the cell centres; peak relative to the background)");
                for a in pipeline::perturbations_alone(&loaded, &bg) {
                    match a {
                        Ok(a) => {
                            let [peaks, verdict] = a.lines(discrete);
                            say!("  {peaks}");
                            say!("    {verdict}");
                            more.extend(a.caution(discrete));
                            if loaded.output.precision == output::Precision::Single {
                                more.extend(a.single_precision_caution());
                            }
                            alone.push(a);
                        }
                        Err(e) => say!("  cannot be sampled alone: {e}"),
                    }
                }
            }
            say_forecast(
                pipeline::drift_forecast(&loaded, &bg, &domain, amplitude, &alone, false),
                &mut more,
            );
            for c in pipeline::cautions(&loaded, &bg, &domain)
                .into_iter()
                .chain(more)
            {
                say!("caution: {c}");
            }
            Ok(if report.passed() {
                Outcome::Ok
            } else {
                Outcome::Failed
            })
        }
        Command::Table {
            common,
            points,
            at,
            csv,
        } => {
            let loaded = common.load()?;
            let (bg, domain) = pipeline::solve_unverified(&loaded)?;
            let xs = match at {
                Some(list) => parse_list(&loaded, &list)?,
                None => {
                    // Evenly spaced like the grid's radial or vertical axis:
                    // logarithmically when that axis is.
                    let n = points.unwrap_or(11) as usize;
                    if n > MAX_TABLE_ROWS {
                        return Err(Error::Usage(format!(
                            "--points {n}: a table has at most {MAX_TABLE_ROWS} rows; for more \
                             values build the profile on a 1D grid (`--csv`)"
                        )));
                    }
                    let log = loaded.grid.axes()[0].spacing == crate::grid::Spacing::Log
                        && domain.lo > 0.0;
                    crate::closure::spaced(domain.lo, domain.hi, n, log)
                }
            };
            let t =
                table::tabulate(&loaded.model, &bg, &xs).map_err(|e| Error::closure(&loaded, e))?;
            say_raw!("{}", if csv { t.to_csv() } else { t.to_text() });
            let s = loaded.model.coordinate();
            for x in xs.iter().filter(|x| **x < domain.lo || **x > domain.hi) {
                eprintln!(
                    "caution: {s} = {x} lies outside the grid [{}, {}]: the laws are extrapolated there",
                    domain.lo, domain.hi
                );
            }
            Ok(Outcome::Ok)
        }
        Command::Confirm { file, no_rebuild } => {
            let report = crate::confirm::confirm(&file, !no_rebuild, rebuild_into)?;
            say!("{}", file.display());
            say!("{report}");
            Ok(if report.passed() {
                Outcome::Ok
            } else {
                Outcome::Failed
            })
        }
        Command::Derive { common, latex } => {
            let loaded = common.load()?;
            let m = &loaded.model;
            let laws = derived_laws(m).map_err(|e| Error::closure(&loaded, e))?;
            let show = |e: &crate::formula::Expr| if latex { e.to_latex() } else { e.to_string() };
            let lhs = |n: &str| {
                if latex {
                    crate::formula::latex_lhs(n)
                } else {
                    n.to_string()
                }
            };
            let shape = pipeline::balance_description(m);
            say!(
                "{} ({}): {shape} balance, solved for {}",
                m.name,
                loaded.source,
                m.unknown.key()
            );
            say!("given");
            say!("  {} = {}", lhs("Phi"), show(&m.potential_field.expr));
            if m.potential_field.expr != m.potential.expr {
                let at = if latex { "\\Phi|_{z=0}" } else { "Phi(z = 0)" };
                say!("  {at} = {}", show(&m.potential.expr));
            }
            for (n, l) in [
                ("rho", &m.density),
                ("c^2", &m.sound_speed_sq),
                ("v_phi", &m.rotation),
                ("P", &m.pressure),
            ] {
                if let Some(l) = l {
                    say!("  {} = {}", lhs(n), show(&l.expr));
                }
            }
            say!("derived");
            for d in laws {
                say!("  {} = {}", lhs(&d.name), show(&d.expr));
                say!("      ({})", d.note);
            }
            Ok(Outcome::Ok)
        }
        Command::Emit {
            common,
            lang,
            output,
            force,
            tolerance,
        } => {
            let loaded = common.load()?;
            let lang = match lang {
                LangArg::C => crate::emit::Lang::C,
                LangArg::Fortran => crate::emit::Lang::Fortran,
                LangArg::Python => crate::emit::Lang::Python,
            };
            if let Some(path) = &output {
                if path.exists() && !force {
                    return Err(Error::Usage(format!(
                        "{}: the file exists; pass --force to overwrite it",
                        path.display()
                    )));
                }
            }
            let emitted = crate::emit::emit(&loaded, lang, tolerance)?;
            match &output {
                Some(path) => {
                    output::commit(path, force, |tmp| {
                        std::fs::write(tmp, &emitted.code)
                            .map_err(|e| Error::Usage(format!("{}: {e}", path.display())))
                    })?;
                    for l in &emitted.summary {
                        say!("{l}");
                    }
                    say!("wrote {}", path.display());
                }
                None => {
                    say_raw!("{}", emitted.code);
                    for l in &emitted.summary {
                        eprintln!("{l}");
                    }
                }
            }
            Ok(Outcome::Ok)
        }
        Command::Profiles { name: None } => {
            for (name, text) in bundled::BUNDLED {
                say!("{name:<24} {}", bundled::about(text));
            }
            Ok(Outcome::Ok)
        }
        Command::Profiles { name: Some(name) } => match bundled::find(&name) {
            Some(text) => {
                say_raw!("{text}");
                Ok(Outcome::Ok)
            }
            None => {
                let names: Vec<&str> = bundled::BUNDLED.iter().map(|(n, _)| *n).collect();
                let hint = profile::closest(&name, &names)
                    .map(|n| format!(" (did you mean `{n}`?)"))
                    .unwrap_or_default();
                Err(Error::Usage(format!(
                    "`{name}` is not a bundled profile{hint}; they are {}",
                    names.join(", ")
                )))
            }
        },
        Command::Plot {
            common,
            output,
            what,
            field,
            size,
            force,
        } => plot(&common, &output, what, field.as_deref(), size, force),
        Command::Completions { shell } => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            let mut out = Vec::new();
            clap_complete::generate(shell, &mut cmd, "stillpoint", &mut out);
            say_raw!("{}", String::from_utf8_lossy(&out));
            Ok(Outcome::Ok)
        }
        Command::Manual => {
            let cmd = <Cli as clap::CommandFactory>::command();
            let mut out = Vec::new();
            clap_mangen::Man::new(cmd)
                .render(&mut out)
                .map_err(|e| Error::Usage(format!("manual: {e}")))?;
            say_raw!("{}", String::from_utf8_lossy(&out));
            Ok(Outcome::Ok)
        }
    }
}

fn positive_tolerance(text: &str) -> Result<f64, String> {
    match text.parse::<f64>() {
        Ok(t) if t.is_finite() && t > 0.0 => Ok(t),
        _ => Err(format!("expected a positive number, found `{text}`")),
    }
}

/// Rows of one `table` (common practice, no source: far more than a
/// screen, few enough to hold in memory on any machine).
const MAX_TABLE_ROWS: usize = 1_000_000;

fn parse_list(loaded: &Loaded, list: &str) -> Result<Vec<f64>, Error> {
    list.split(',')
        .map(|item| {
            let item = item.trim();
            let e = profile::formula_for(&loaded.model, item).map_err(|e| {
                let shown: String = e
                    .render(item)
                    .lines()
                    .take(2)
                    .map(|l| format!("\n    {l}"))
                    .collect();
                Error::Usage(format!(
                    "--at: {e}; give numbers or formulas of the parameters, separated by commas{shown}"
                ))
            })?;
            let x = e
                .eval(&|n| loaded.model.lookup(n))
                .map_err(|e| Error::Usage(format!("--at: {e}")))?;
            let s = loaded.model.coordinate();
            if !x.is_finite() {
                return Err(Error::Usage(format!("--at: `{item}` is {x}, not a point")));
            }
            if x < 0.0 && (s == "R" || s == "r") {
                return Err(Error::Usage(format!(
                    "--at: {s} = {x} is not a point of this {}: {s} is a distance from the {} and \
                     never negative; give {s} ≥ 0 (the table runs along the {})",
                    if s == "R" { "disk" } else { "sphere" },
                    if s == "R" { "axis" } else { "centre" },
                    if s == "R" { "midplane, φ = 0" } else { "radius" }
                )));
            }
            Ok(x)
        })
        .collect()
}

/// The switches of `build`.
struct BuildFlags<'a> {
    csv: bool,
    arrays: &'a ArrayArgs,
    force: bool,
    reproducible: bool,
    estimate: bool,
    quiet: bool,
}

fn build(
    common: &Common,
    output: Option<PathBuf>,
    flags: &BuildFlags<'_>,
    stream: &StreamArgs,
    argv: &str,
) -> Result<Outcome, Error> {
    let started = std::time::Instant::now();
    let &BuildFlags {
        csv,
        arrays,
        force,
        reproducible,
        estimate,
        quiet,
    } = flags;
    let loaded = common.load()?;
    let h5 = output
        .or_else(|| loaded.output.file.clone())
        .unwrap_or_else(|| PathBuf::from(format!("{}.h5", loaded.model.name)));
    let want_csv = csv || loaded.output.csv;
    let csv_path = want_csv.then(|| h5.with_extension("csv"));
    if h5.is_dir() {
        return Err(Error::Usage(format!(
            "{}: is a folder; name the output file inside it (for instance {})",
            h5.display(),
            h5.join(format!("{}.h5", loaded.model.name)).display()
        )));
    }
    let xmf = h5.with_extension("xmf");
    if [Some("xmf"), Some("csv"), Some("json")].contains(&h5.extension().and_then(|e| e.to_str())) {
        return Err(Error::Usage(format!(
            "{}: the HDF5 output needs another extension (.h5): the XDMF, CSV and JSON files \
             are named after it",
            h5.display()
        )));
    }
    let record = csv_path.as_ref().map(|c| c.with_extension("csv.json"));
    let folder = |suffix: &str| {
        let stem = h5.file_stem().unwrap_or_default().to_string_lossy();
        h5.with_file_name(format!("{stem}-{suffix}"))
    };
    let npy = arrays.npy.then(|| folder("npy"));
    let raw = arrays.raw.then(|| folder("raw"));
    let outputs = [
        Some(&h5),
        Some(&xmf),
        csv_path.as_ref(),
        record.as_ref(),
        npy.as_ref(),
        raw.as_ref(),
    ];
    let opts = pipeline::StreamOptions {
        precision: loaded.output.precision,
        slab_rows: stream.slab_rows.map(|n| n as usize),
    };
    #[cfg(feature = "mpi")]
    if !estimate && crate::parallel::launched() {
        if want_csv || npy.is_some() || raw.is_some() {
            return Err(Error::Usage(
                "--csv, --npy, --raw: a parallel build writes the HDF5 file only; build the \
                 CSV table and the plain arrays serially"
                    .into(),
            ));
        }
        let written = crate::parallel::build(&loaded, &h5, force, reproducible, &opts, argv)?;
        if let Some(meta) = written {
            // The HDF5 file and its XDMF description, as a serial build.
            report_written(
                &loaded,
                &[h5.clone(), h5.with_extension("xmf")],
                &meta.cautions,
            );
        }
        return Ok(Outcome::Ok);
    }
    let dir = crate::estimate::folder_of(&h5);
    if dir.is_dir() {
        if let Some(why) = crate::output::unwritable_folder(&dir) {
            return Err(Error::Usage(format!("{}: {why}", h5.display())));
        }
    }
    if estimate {
        if !dir.is_dir() {
            return Err(Error::Usage(format!(
                "{}: {}",
                h5.display(),
                crate::output::missing_folder(&dir)
            )));
        }
        return print_estimate(&loaded, &h5, &opts, reproducible, argv, started);
    }
    // Before anything is solved or written: would it fit?
    if dir.is_dir() {
        let plan = crate::estimate::Plan::new(&loaded, &opts, rayon::current_num_threads(), None);
        crate::estimate::refuse_if_too_big(&plan, crate::estimate::resident(), &dir)?;
    }
    for p in outputs.into_iter().flatten() {
        if p.exists() && !force {
            return Err(Error::Usage(format!(
                "{}: the file exists; pass --force to overwrite it",
                p.display()
            )));
        }
    }
    // Name what asked for the CSV table: the flag, or the profile's key.
    let csv_asker = if csv {
        "--csv".to_string()
    } else {
        format!("{}: output.csv", loaded.source)
    };
    let csv_fix = if csv {
        "leave out --csv"
    } else {
        "remove output.csv or set it to false"
    };
    if want_csv && loaded.grid.axes().len() != 1 {
        return Err(Error::Usage(format!(
            "{csv_asker}: a CSV table is written for 1D grids only, and this grid has {} axes; {csv_fix} (the HDF5 file, --npy or --raw hold any grid)",
            loaded.grid.axes().len()
        )));
    }
    if want_csv
        && matches!(
            loaded.sampling,
            crate::sample::SamplingRule::Nodes { .. } | crate::sample::SamplingRule::Modes { .. }
        )
    {
        // Refused before anything is written, not after the HDF5 file.
        return Err(Error::Usage(format!(
            "{csv_asker}: a CSV table holds one value per cell, and sampling.rule gives several \
             per cell (nodes or modes); {csv_fix} (the HDF5 file, --npy or --raw hold them)"
        )));
    }
    let built = pipeline::build(&loaded, argv, reproducible)?;
    let mut metadata = None;
    let bar = crate::progress::Bar::new(loaded.grid.len(), quiet);
    let written = output::commit(&h5, force, |tmp| {
        metadata = Some(built.write_hdf5_reporting(tmp, &opts, &|p| bar.update(p))?);
        Ok::<(), Error>(())
    });
    bar.finish();
    written?;
    let metadata = match metadata {
        Some(m) => m,
        None => built.verify()?,
    };
    let groups = built.groups()?;
    output::commit(&xmf, force, |tmp| {
        output::write_xdmf(
            tmp,
            &h5,
            &loaded.grid,
            &groups,
            opts.precision,
            &loaded.model.name,
        )
    })?;
    let mut written = vec![h5.clone(), xmf.clone()];
    if csv_path.is_some() || npy.is_some() || raw.is_some() {
        // The state, the same numbers as the HDF5 file's `/state`:
        // sampling does not depend on the slab size.
        let bar = crate::progress::Bar::labelled(loaded.grid.len(), quiet, "arrays: ");
        let set = built.sample_state_all(&|p| bar.update(p));
        bar.finish();
        let set = set?;
        let doc = Document {
            grid: &loaded.grid,
            background: &set,
            state: &set,
            metadata: &metadata,
        };
        if let (Some(c), Some(r)) = (&csv_path, &record) {
            output::commit(c, force, |tmp| output::write_csv(&doc, tmp))?;
            let name = c.file_name().unwrap_or_default().to_string_lossy();
            output::commit(r, force, |tmp| output::write_csv_record(&doc, tmp, &name))?;
            written.extend([c.clone(), r.clone()]);
        }
        if let Some(dir) = &npy {
            output::commit_dir(dir, force, |tmp| {
                output::write_npy(&doc, tmp, opts.precision)
            })?;
            written.push(dir.clone());
        }
        if let Some(dir) = &raw {
            let format = arrays.raw_format(opts.precision);
            output::commit_dir(dir, force, |tmp| {
                output::write_raw(&doc, tmp, opts.precision, format)
            })?;
            written.push(dir.clone());
        }
    }
    report_written(&loaded, &written, &metadata.cautions);
    Ok(Outcome::Ok)
}

/// `plot`: draw in memory, then commit the file (never half-written, never
/// over an existing file without --force).
fn plot(
    common: &Common,
    output: &Path,
    what: PlotWhat,
    field: Option<&str>,
    size: (u32, u32),
    force: bool,
) -> Result<Outcome, Error> {
    use crate::plot::{Format, Kind, Request};
    let Some(format) = Format::of(output) else {
        return Err(Error::Usage(format!(
            "{}: the image needs the extension .png or .svg",
            output.display()
        )));
    };
    let kind = match what {
        PlotWhat::Curves => Kind::Curves,
        PlotWhat::Slice => Kind::Slice,
        PlotWhat::Residual => Kind::Residual,
    };
    if field.is_some() && kind != Kind::Slice {
        return Err(Error::Usage(
            "--field: only --what slice shows a field".into(),
        ));
    }
    if output.exists() && !force {
        return Err(Error::Usage(format!(
            "{}: the file exists; pass --force to overwrite it",
            output.display()
        )));
    }
    let loaded = common.load()?;
    let req = Request {
        kind,
        field,
        size,
        format,
        overrides: &common.set,
    };
    let bytes = crate::plot::render(&loaded, &req)?;
    output::commit(output, force, |tmp| {
        std::fs::write(tmp, &bytes).map_err(|e| Error::Output(output::OutputError::io(tmp, e)))
    })?;
    say!("wrote {}", output.display());
    Ok(Outcome::Ok)
}

/// `build --estimate`: solve, then measure (see [`crate::estimate`]); the
/// build is refused as `build` would refuse it, and nothing is written.
fn print_estimate(
    loaded: &Loaded,
    h5: &Path,
    opts: &pipeline::StreamOptions,
    reproducible: bool,
    argv: &str,
    started: std::time::Instant,
) -> Result<Outcome, Error> {
    let built = pipeline::build(loaded, argv, reproducible)?;
    let est = crate::estimate::estimate(&built, loaded, h5, opts, started.elapsed())?;
    say!(
        "{} ({}): estimate for {}",
        loaded.model.name,
        loaded.source,
        h5.display()
    );
    say!("{est}");
    if h5.exists() {
        say!("note: {} exists; the build needs --force", h5.display());
    }
    crate::estimate::refuse_if_too_big(&est.plan, est.held, &crate::estimate::folder_of(h5))?;
    Ok(Outcome::Ok)
}

/// Print the drift forecast of `check` (or why there is none), its
/// cautions added to `more`.
fn say_forecast(d: Result<crate::drift::Drift, crate::drift::DriftError>, more: &mut Vec<String>) {
    match d {
        Ok(d) => {
            say!("{d}");
            more.extend(pipeline::drift_caution(&d));
        }
        Err(e) => say!("drift forecast\n  not evaluated: {e}"),
    }
}

/// `check` of a torus: its edges, balance inside and floor.
fn check_torus(loaded: &Loaded, tolerance: f64, amplitude: Option<f64>) -> Result<Outcome, Error> {
    let t = crate::torus_run::torus(loaded)?;
    let v = crate::torus_run::verdict(loaded, &t, tolerance)?;
    say!("{} ({})", loaded.model.name, loaded.source);
    say!("{}", v.text);
    let mut more = Vec::new();
    let mut alone = Vec::new();
    if !loaded.perturbations.is_empty() {
        // No discrete imbalance is computed for a torus: the peaks alone.
        say!("perturbations (each alone at the cell centres; peak relative to the background)");
        for a in pipeline::perturbations_alone(loaded, &t) {
            match a {
                Ok(a) => {
                    let [peaks, verdict] = a.lines(None);
                    say!("  {peaks}");
                    say!("    {verdict}");
                    if loaded.output.precision == output::Precision::Single {
                        more.extend(a.single_precision_caution());
                    }
                    alone.push(a);
                }
                Err(e) => say!("  cannot be sampled alone: {e}"),
            }
        }
    }
    say_forecast(
        pipeline::torus_drift_forecast(loaded, &t, amplitude, &alone, false, None),
        &mut more,
    );
    for c in v.cautions.iter().chain(&more) {
        say!("caution: {c}");
    }
    Ok(if v.passed {
        Outcome::Ok
    } else {
        Outcome::Failed
    })
}

/// Build `loaded` into the HDF5 file `path` (no XDMF, CSV or arrays), as
/// `build` would: what `confirm` compares a file with.
fn rebuild_into(loaded: &Loaded, path: &Path) -> Result<(), Error> {
    let opts = pipeline::StreamOptions {
        precision: loaded.output.precision,
        slab_rows: None,
    };
    pipeline::build(loaded, "", true)?
        .write_hdf5(path, &opts)
        .map(|_| ())
}

fn report_written(loaded: &Loaded, written: &[PathBuf], cautions: &[String]) {
    let shape: Vec<String> = loaded.grid.shape().iter().map(|n| n.to_string()).collect();
    say!(
        "{}: {} cells ({}), {}",
        loaded.model.name,
        shape.join(" x "),
        loaded
            .grid
            .axes()
            .iter()
            .map(|a| a.coord.name())
            .collect::<Vec<_>>()
            .join(", "),
        loaded.sampling.describe(&loaded.grid)
    );
    for p in written {
        let what = match p.extension().and_then(|e| e.to_str()) {
            Some("xmf") => " (XDMF: open it in ParaView or VisIt)",
            _ => "",
        };
        say!("wrote {}{what}", p.display());
    }
    if loaded.faces.any() {
        let mut groups: Vec<&str> = Vec::new();
        if loaded.faces.values.is_some() {
            groups.extend(
                loaded
                    .grid
                    .axes()
                    .iter()
                    .map(|a| pipeline::face_group(a.coord)),
            );
        }
        if loaded.faces.staggered {
            groups.push(pipeline::STAGGERED);
        }
        say!(
            "note: the values at faces (/{}) are in the HDF5 file only: the XDMF description \
             leaves them out (one value per cell there), and CSV, .npy and raw outputs hold the \
             cell fields",
            groups.join(", /")
        );
    }
    for c in cautions {
        say!("caution: {c}");
    }
}
