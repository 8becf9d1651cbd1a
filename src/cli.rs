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
        #[command(flatten)]
        stream: StreamArgs,
    },
    /// Check the balance with exact symbolic derivatives; exits non-zero when it fails.
    #[command(
        after_help = "Example:\n  stillpoint check profiles/powerlaw-disk.json --tolerance 1e-12"
    )]
    Check {
        #[command(flatten)]
        common: Common,
        /// Largest relative residual accepted (positive; double-precision
        /// rounding alone leaves residuals of 1e-16 to 1e-13).
        #[arg(long, value_name = "T", default_value = "1e-10", value_parser = positive_tolerance)]
        tolerance: f64,
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
    /// Print the derived laws and the derivatives used, as formulas.
    #[command(after_help = "Example:\n  stillpoint derive profiles/ring-disk.json --latex")]
    Derive {
        #[command(flatten)]
        common: Common,
        /// Print LaTeX instead of plain text.
        #[arg(long)]
        latex: bool,
    },
    /// List the bundled profiles, a line each.
    #[command(after_help = "Example:\n  stillpoint profiles")]
    Profiles,
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
            force,
            reproducible,
            estimate,
            stream,
        } => {
            let flags = BuildFlags {
                csv,
                force,
                reproducible,
                estimate,
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
        Command::Check { common, tolerance } => {
            let loaded = common.load()?;
            let (bg, domain) = pipeline::solve_unverified(&loaded)?;
            let centres = pipeline::centres_for(&loaded.grid);
            let report = check::run(&loaded.model, &bg, &domain, &centres, tolerance)
                .map_err(|e| Error::closure(&loaded, e))?;
            say!("{} ({})", loaded.model.name, loaded.source);
            say!("{report}");
            for c in pipeline::cautions(&loaded, &bg, &domain) {
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
                    let log = loaded.grid.axes()[0].spacing == crate::grid::Spacing::Log
                        && domain.lo > 0.0;
                    (0..n)
                        .map(|i| {
                            let t = i as f64 / (n - 1) as f64;
                            if log {
                                domain.lo * (domain.hi / domain.lo).powf(t)
                            } else {
                                domain.lo + (domain.hi - domain.lo) * t
                            }
                        })
                        .collect()
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
        Command::Derive { common, latex } => {
            let loaded = common.load()?;
            let m = &loaded.model;
            let laws = derived_laws(m).map_err(|e| Error::closure(&loaded, e))?;
            let show = |e: &crate::formula::Expr| if latex { e.to_latex() } else { e.to_string() };
            let shape = pipeline::balance_description(m);
            say!(
                "{} ({}): {shape} balance, solved for {}",
                m.name,
                loaded.source,
                m.unknown.key()
            );
            say!("given");
            say!("  Phi = {}", show(&m.potential_field.expr));
            if m.potential_field.expr != m.potential.expr {
                say!("  Phi(z = 0) = {}", show(&m.potential.expr));
            }
            for (n, l) in [
                ("rho", &m.density),
                ("c^2", &m.sound_speed_sq),
                ("v_phi", &m.rotation),
                ("P", &m.pressure),
            ] {
                if let Some(l) = l {
                    say!("  {n} = {}", show(&l.expr));
                }
            }
            say!("derived");
            for d in laws {
                say!("  {} = {}", d.name, show(&d.expr));
                say!("      ({})", d.note);
            }
            Ok(Outcome::Ok)
        }
        Command::Profiles => {
            for (name, text) in bundled::BUNDLED {
                say!("{name:<24} {}", bundled::about(text));
            }
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

fn parse_list(loaded: &Loaded, list: &str) -> Result<Vec<f64>, Error> {
    list.split(',')
        .map(|item| {
            let item = item.trim();
            let e = profile::formula_for(&loaded.model, item)
                .map_err(|e| Error::Usage(format!("--at: {}", e.render(item))))?;
            e.eval(&|n| loaded.model.lookup(n))
                .map_err(|e| Error::Usage(format!("--at: {e}")))
        })
        .collect()
}

/// The switches of `build`.
struct BuildFlags {
    csv: bool,
    force: bool,
    reproducible: bool,
    estimate: bool,
}

fn build(
    common: &Common,
    output: Option<PathBuf>,
    flags: &BuildFlags,
    stream: &StreamArgs,
    argv: &str,
) -> Result<Outcome, Error> {
    let started = std::time::Instant::now();
    let &BuildFlags {
        csv,
        force,
        reproducible,
        estimate,
    } = flags;
    let loaded = common.load()?;
    let h5 = output
        .or_else(|| loaded.output.file.clone())
        .unwrap_or_else(|| PathBuf::from(format!("{}.h5", loaded.model.name)));
    let want_csv = csv || loaded.output.csv;
    let csv_path = want_csv.then(|| h5.with_extension("csv"));
    let opts = pipeline::StreamOptions {
        precision: loaded.output.precision,
        slab_rows: stream.slab_rows.map(|n| n as usize),
    };
    #[cfg(feature = "mpi")]
    if !estimate && crate::parallel::launched() {
        if want_csv {
            return Err(Error::Usage(
                "--csv: a parallel build writes the HDF5 file only; build the CSV table serially"
                    .into(),
            ));
        }
        let written = crate::parallel::build(&loaded, &h5, force, reproducible, &opts, argv)?;
        if let Some(meta) = written {
            report_written(&loaded, &h5, None, &meta.cautions);
        }
        return Ok(Outcome::Ok);
    }
    let dir = crate::estimate::folder_of(&h5);
    if estimate {
        if !dir.is_dir() {
            return Err(Error::Usage(format!(
                "{}: the folder {} does not exist (create it first)",
                h5.display(),
                dir.display()
            )));
        }
        return print_estimate(&loaded, &h5, &opts, reproducible, argv, started);
    }
    // Before anything is solved or written: would it fit?
    if dir.is_dir() {
        let plan = crate::estimate::Plan::new(&loaded, &opts, rayon::current_num_threads(), None);
        crate::estimate::refuse_if_too_big(&plan, crate::estimate::resident(), &dir)?;
    }
    for p in std::iter::once(&h5).chain(csv_path.as_ref()) {
        if p.exists() && !force {
            return Err(Error::Usage(format!(
                "{}: the file exists; pass --force to overwrite it",
                p.display()
            )));
        }
    }
    if want_csv && loaded.grid.axes().len() != 1 {
        return Err(Error::Usage(
            "--csv: a CSV table is written for 1D grids only".into(),
        ));
    }
    let built = pipeline::build(&loaded, argv, reproducible)?;
    let mut metadata = None;
    output::commit(&h5, force, |tmp| {
        metadata = Some(built.write_hdf5(tmp, &opts)?);
        Ok::<(), Error>(())
    })?;
    let metadata = match metadata {
        Some(m) => m,
        None => built.verify()?,
    };
    if let Some(c) = &csv_path {
        let set = built.sample_all()?;
        let doc = Document {
            grid: &loaded.grid,
            background: &set,
            state: &set,
            metadata: &metadata,
        };
        output::commit(c, force, |tmp| output::write_csv(&doc, tmp))?;
    }
    report_written(&loaded, &h5, csv_path.as_deref(), &metadata.cautions);
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

fn report_written(loaded: &Loaded, h5: &Path, csv: Option<&Path>, cautions: &[String]) {
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
    say!("wrote {}", h5.display());
    if let Some(c) = csv {
        say!("wrote {}", c.display());
    }
    for c in cautions {
        say!("caution: {c}");
    }
}
