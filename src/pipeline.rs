//! The build pipeline shared by the commands: profile → model → background
//! → sampled fields → document, with the cautions a user must see.
//!
//! Owns: choosing the domain and knots from the grid, running the closure
//! and sampler, the stability cautions, and assembling the metadata. Does
//! not own: command-line parsing or file formats.

mod faces;
pub use faces::{group_name as face_group, STAGGERED};

use std::path::Path;

use crate::background::{Background, Frame, Shape};
use crate::closure::{self, show, ClosureError, Domain, Solved};
use crate::fields::{slab_ranges, FieldSet, FieldSpec, Slab};
use crate::grid::{Grid, Layout};
use crate::keys::Keyed;
use crate::output::{GroupPlan, H5Stream, Metadata, OutputError, Precision};
use crate::perturb::report::{alone_json, Alone, Peaks};
use crate::perturb::Perturbations;
use crate::profile::{Loaded, ProfileError};
use crate::sample::{self, Cuts, GasConstants, SampleError, Sampler, SamplingRule};
use crate::torus::Torus;

/// Anything that can stop a command.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// The profile is wrong.
    #[error("{0}")]
    Profile(#[from] ProfileError),
    /// No equilibrium, or laws missing.
    #[error("{source_label}: {error}")]
    Closure {
        source_label: String,
        error: ClosureError,
    },
    /// Sampling met a bad value.
    #[error("{source_label}: {error}")]
    Sample {
        source_label: String,
        error: SampleError,
    },
    /// A perturbation cannot be set up.
    #[error("{source_label}: {error}")]
    Perturb {
        source_label: String,
        error: crate::perturb::PerturbError,
    },
    /// Writing failed.
    #[error("{0}")]
    Output(#[from] OutputError),
    /// Anything else the user got wrong on the command line.
    #[error("{0}")]
    Usage(String),
    /// A build that would not fit on the disk or in memory, refused before
    /// it starts (see [`crate::estimate`]).
    #[error("{0}")]
    Refused(String),
}

impl Error {
    /// A closure error, labelled with the profile it came from.
    pub fn closure(loaded: &Loaded, error: ClosureError) -> Error {
        Error::Closure {
            source_label: loaded.source.clone(),
            error,
        }
    }
}

/// The domain the background must cover for a grid holding a state of
/// `frame`: the range of the frame's line coordinate, with the cell edges
/// along it as knots.
pub fn domain_for(grid: &Grid, frame: Frame) -> Domain {
    let (lo, hi) = grid.background_range(frame);
    let along = line_axis(grid, frame);
    let knots = match along {
        Some(a) => grid.axes()[a].edges.clone(),
        None => {
            let n = 2 * grid.shape().iter().copied().max().unwrap_or(1);
            (0..=n)
                .map(|i| lo + (hi - lo) * i as f64 / n as f64)
                .collect()
        }
    };
    // The axis R = 0 (or the centre r = 0) may bound or cross the grid, but
    // no cell centre or Gauss point lies on it.
    let axis_at_lo = lo <= 0.0 && frame != Frame::Slab;
    Domain {
        lo,
        hi,
        knots,
        axis_at_lo,
        height: grid.height_range(frame),
    }
}

/// The grid axis that runs along the frame's line coordinate itself, if any
/// (the slab axis, the r axis of a spherical grid holding a sphere, the R
/// axis of a cylindrical grid holding a disk).
fn line_axis(grid: &Grid, frame: Frame) -> Option<usize> {
    match (frame, grid.layout()) {
        (Frame::Slab, _) => Some(grid.slab_axis()),
        (_, Layout::Line(_) | Layout::Polar | Layout::Meridional | Layout::Cylindrical) => Some(0),
        (Frame::Spherical, Layout::SphericalMeridional | Layout::Spherical) => Some(0),
        _ => None,
    }
}

/// Cell centres along the frame's line coordinate (for tables and the
/// discrete imbalance): the centres of the axis that runs along it, else
/// the positive centres of the first axis (x on a Cartesian grid, r on a
/// spherical grid holding a disk).
pub fn centres_for(grid: &Grid, frame: Frame) -> Vec<f64> {
    match line_axis(grid, frame) {
        Some(a) => grid.axes()[a].centers(),
        None => grid
            .natural_axis(0)
            .centers()
            .into_iter()
            .filter(|x| *x > 0.0)
            .collect(),
    }
}

/// Solve the profile's closure over its grid, refusing a state that is no
/// equilibrium somewhere (for `build`).
pub fn solve(loaded: &Loaded) -> Result<(Solved, Domain), Error> {
    let domain = domain_for(&loaded.grid, loaded.model.shape.frame());
    let bg = closure::solve(&loaded.model, &domain).map_err(|e| Error::closure(loaded, e))?;
    Ok((bg, domain))
}

/// Solve the profile's closure over its grid without refusing a state that
/// is no equilibrium somewhere, so that `check` can report where and `table`
/// can print the rows that exist.
pub fn solve_unverified(loaded: &Loaded) -> Result<(Solved, Domain), Error> {
    let domain = domain_for(&loaded.grid, loaded.model.shape.frame());
    let bg =
        closure::solve_unverified(&loaded.model, &domain).map_err(|e| Error::closure(loaded, e))?;
    Ok((bg, domain))
}

/// What rounding to float32 does to the balance: the discrete imbalance
/// at the cell centres (as `check` computes it) from the values as a
/// float32 file holds them, against the same from float64. Rounding that
/// raises it more than twofold destroys the balance the file should carry.
fn single_precision_caution(loaded: &Loaded, bg: &dyn Background) -> String {
    let shape = loaded.model.shape;
    let centres = centres_for(&loaded.grid, shape.frame());
    let double = crate::check::discrete_imbalance(shape, bg, &centres);
    let single = crate::check::discrete_imbalance_single(shape, bg, &centres);
    let s = loaded.model.coordinate();
    match (double, single) {
        (Some((d, _)), Some((f, at))) if f.is_finite() && d.is_finite() && f > 2.0 * d => format!(
            "{}: rounding to float32 raises the discrete imbalance of the balance from {d:.3e} \
             (float64) to {f:.3e} (largest at {s} = {}): the rounding destroys the balance, and a \
             scheme without well-balancing sees it as a spurious force {:.0}x its own truncation \
             error; write double precision (output.precision: \"double\") to keep the balance",
            crate::output::SINGLE_PRECISION_CAUTION,
            crate::closure::show(at),
            f / d.max(f64::MIN_POSITIVE)
        ),
        (Some((d, _)), Some((f, _))) => format!(
            "{}: here rounding to float32 leaves the discrete imbalance at {f:.3e} against \
             {d:.3e} in float64 (the discretisation error dominates)",
            crate::output::SINGLE_PRECISION_CAUTION
        ),
        _ => crate::output::SINGLE_PRECISION_CAUTION.to_string(),
    }
}

/// Each perturbation of the profile bound alone to `bg` and sampled at the
/// cell centres, with its peaks relative to the background (see
/// [`Peaks`]): what `check` prints and a build records beside the discrete
/// imbalance. Memory is bounded by a slab of about 65 536 cells; an error
/// (a perturbation that cannot be bound, a non-positive ρ or P) is that
/// perturbation's entry.
pub fn perturbations_alone(loaded: &Loaded, bg: &dyn Background) -> Vec<Result<Alone, Error>> {
    let gas = gas_constants(loaded);
    let gamma = loaded.model.gamma;
    let grid = &loaded.grid;
    let shape = grid.shape();
    let per_row: usize = shape[1..].iter().product::<usize>().max(1);
    let rows = (65_536 / per_row).max(1);
    let label = |e| Error::Sample {
        source_label: loaded.source.clone(),
        error: e,
    };
    loaded
        .perturbations
        .iter()
        .map(|p| {
            let one = Perturbations::bind(std::slice::from_ref(p), &loaded.model, grid, bg)
                .map_err(|error| Error::Perturb {
                    source_label: loaded.source.clone(),
                    error,
                })?;
            let sampler = Sampler::new(bg, grid, &sample::SamplingRule::Center, &gas)
                .map_err(label)?
                .perturbed(&one);
            let groups = sampler.groups();
            let (nb, ns) = (groups[0].1.len(), groups[1].1.len());
            let mut peaks = Peaks::new(gamma);
            for r in slab_ranges(shape[0], rows) {
                let slab = sampler.slab(r).map_err(label)?;
                peaks.update(
                    &groups[0].1,
                    &slab.data[..nb],
                    &groups[2].1,
                    &slab.data[nb + ns..],
                );
            }
            Ok(Alone {
                origin: p.origin.clone(),
                kind: p.kind_name(),
                peaks,
            })
        })
        .collect()
}

/// The drift forecast of the background on the profile's grid and rule
/// (see [`crate::drift`]), against `amplitude` when given, else against the
/// largest peak of the profile's perturbations (each sampled alone).
/// `in_build`: the forecast a build records, bounded to a small part of the
/// build's cost on a plane or box.
pub fn drift_forecast(
    loaded: &Loaded,
    bg: &dyn Background,
    domain: &Domain,
    amplitude: Option<f64>,
    alone: &[Alone],
    in_build: bool,
) -> Result<crate::drift::Drift, crate::drift::DriftError> {
    let at = domain
        .switches(&loaded.model)
        .iter()
        .map(|w| w.at)
        .collect();
    forecast_with(
        loaded,
        bg,
        at,
        &loaded.sampling,
        amplitude,
        alone,
        in_build,
        None,
    )
}

/// The drift forecast of a torus (see [`drift_forecast`]): cells whose
/// stencil reaches the floor are left out. Cell averages to a tolerance
/// are taken at the points the file's grid resolves them to (`resolved`,
/// else resolved here): the torus's surface is a kink no switch point
/// marks, and resolving it again on every refined grid is slow.
pub fn torus_drift_forecast(
    loaded: &Loaded,
    torus: &crate::torus::Torus,
    amplitude: Option<f64>,
    alone: &[Alone],
    in_build: bool,
    resolved: Option<usize>,
) -> Result<crate::drift::Drift, crate::drift::DriftError> {
    let outside = |r: f64, z: f64| torus.floored(r, z);
    let rule = match loaded.sampling {
        SamplingRule::AverageTo { tolerance, start } => SamplingRule::Average {
            points: match resolved {
                Some(p) => p,
                None => {
                    let cuts = Cuts {
                        coordinate: loaded.model.shape.coordinate().to_string(),
                        at: Vec::new(),
                    };
                    let gas = gas_constants(loaded);
                    sample::resolve_tolerance_with(
                        torus,
                        &loaded.grid,
                        tolerance,
                        start,
                        &gas,
                        &cuts,
                        None,
                    )?
                    .points
                }
            },
        },
        rule => rule,
    };
    forecast_with(
        loaded,
        torus,
        Vec::new(),
        &rule,
        amplitude,
        alone,
        in_build,
        Some(&outside),
    )
}

#[allow(clippy::too_many_arguments)]
fn forecast_with(
    loaded: &Loaded,
    bg: &dyn Background,
    switches: Vec<f64>,
    rule: &SamplingRule,
    amplitude: Option<f64>,
    alone: &[Alone],
    in_build: bool,
    outside: Option<&(dyn Fn(f64, f64) -> bool + Sync)>,
) -> Result<crate::drift::Drift, crate::drift::DriftError> {
    let cuts = Cuts {
        coordinate: loaded.model.shape.coordinate().to_string(),
        at: switches,
    };
    let amplitude = match amplitude {
        Some(a) => Some((a, "--amplitude".to_string())),
        None => alone
            .iter()
            .map(|a| {
                (
                    a.peaks.largest(),
                    format!("the largest peak of {} ({})", a.origin, a.kind),
                )
            })
            .filter(|a| a.0.is_finite() && a.0 > 0.0)
            .max_by(|a, b| a.0.total_cmp(&b.0)),
    };
    let forcing = crate::forcing::Forcing::of(&loaded.model).ok().flatten();
    let inputs = crate::drift::Inputs {
        model: &loaded.model,
        bg,
        grid: &loaded.grid,
        rule,
        gas: gas_constants(loaded),
        cuts: &cuts,
        forcing: forcing.as_ref().map(|f| f as &dyn Background),
        in_build,
        outside,
    };
    crate::drift::forecast(&inputs, amplitude)
}

/// The caution of a forecast whose scheme drifts by more than the
/// perturbation, None otherwise.
pub fn drift_caution(d: &crate::drift::Drift) -> Option<String> {
    match d {
        crate::drift::Drift::Covered(f) if f.drifts() == Some(true) => Some(format!(
            "a scheme without well-balancing drifts by more than the perturbation amplitude \
             (drift forecast): {}",
            f.verdicts().join("; ")
        )),
        _ => None,
    }
}

/// The gas constants the sampler needs.
pub fn gas_constants(loaded: &Loaded) -> GasConstants {
    GasConstants {
        gamma: loaded.model.gamma,
        temperature_per_c2: loaded.model.temperature_per_c2(),
        vertically_integrated: loaded.model.vertically_integrated,
    }
}

/// How `build` streams its output.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct StreamOptions {
    /// Width of the field datasets.
    pub precision: Precision,
    /// Rows of the first grid axis per slab; None chooses about
    /// [`SLAB_BYTES`] of field values per slab.
    pub slab_rows: Option<usize>,
}

/// Field values held per slab when the slab size is not given, in bytes.
pub const SLAB_BYTES: usize = 8 << 20;

/// Rows of the first axis per slab for a grid of `shape` holding `fields`
/// fields: the option, else about [`SLAB_BYTES`] a slab in whole chunk rows
/// of the datasets, so that every chunk is written whole by one slab.
pub fn slab_rows(shape: &[usize], fields: usize, opts: &StreamOptions) -> usize {
    opts.slab_rows.unwrap_or_else(|| {
        let row_bytes = 8 * fields * shape[1..].iter().product::<usize>();
        let chunk = crate::output::chunk_shape(shape, 8)[0];
        let fit = SLAB_BYTES / row_bytes.max(1);
        (fit / chunk).max(1) * chunk
    })
}

/// A solved background ready to be sampled and written: what `build` writes.
pub struct Built<'a> {
    loaded: &'a Loaded,
    solution: Solution,
    perturbations: Perturbations,
    /// A rule to a tolerance, resolved the first time a sampler is made
    /// (resolving samples the grid twice per step; every sampler of the
    /// build uses the same rule).
    resolved: std::sync::OnceLock<sample::Resolved>,
    /// The accelerations and diagnostic fields `output.fields` asks for.
    extras: sample::Extras,
    /// File metadata, without cautions: they come with the verification
    /// ([`Built::verify`], which [`Built::write_hdf5`] runs).
    pub metadata: Metadata,
    /// The manufactured forcing of an audit (`solve_for: nothing`).
    forcing: Option<crate::forcing::Forcing>,
}

/// What a build samples: a closure of the table solved on the grid's
/// domain, or a barotropic torus (solved in (R, z), not on a line; its
/// report was made, and a failing one refused, when it was built).
enum Solution {
    Closure {
        background: Box<Solved>,
        domain: Domain,
    },
    Torus {
        torus: Box<Torus>,
        cautions: Vec<String>,
    },
}

impl Solution {
    fn background(&self) -> &dyn Background {
        match self {
            Solution::Closure { background, .. } => background.as_ref(),
            Solution::Torus { torus, .. } => torus.as_ref(),
        }
    }
}

/// Solve and describe; verification and sampling happen as the output is
/// written (see [`Built::write_hdf5`]). A torus (`balance.torus`) is
/// solved and checked here: a torus that fails its balance is refused.
pub fn build<'a>(
    loaded: &'a Loaded,
    command_line: &str,
    reproducible: bool,
) -> Result<Built<'a>, Error> {
    let (solution, mut metadata) = if loaded.model.torus.is_some() {
        let torus = crate::torus_run::torus(loaded)?;
        let v = crate::torus_run::verdict(loaded, &torus, crate::check::DEFAULT_TOLERANCE)?;
        if !v.passed {
            return Err(Error::Usage(format!(
                "{}: the torus fails its balance check; `stillpoint check` shows where",
                loaded.source
            )));
        }
        let metadata = crate::torus_run::metadata(loaded, &torus, &v, command_line, reproducible);
        let cautions = metadata.cautions.clone();
        let torus = Box::new(torus);
        (Solution::Torus { torus, cautions }, metadata)
    } else {
        let (background, domain) = solve(loaded)?;
        let mut metadata = Metadata {
            profile_json: loaded.json_text.clone(),
            command_line: command_line.to_string(),
            generator: format!("stillpoint {}", env!("CARGO_PKG_VERSION")),
            units: loaded.model.units,
            cautions: Vec::new(),
            extra: vec![
                ("balance".into(), balance_description(&loaded.model).into()),
                ("solved_for".into(), loaded.model.unknown.key().into()),
                ("gamma".into(), format!("{}", loaded.model.gamma)),
                ("gas_law".into(), gas_law(loaded.model.gamma).into()),
            ],
            reproducible,
        };
        metadata.extra.extend(
            crate::closure::column::metadata(&loaded.model, &background, &domain)
                .map_err(|e| Error::closure(loaded, e))?,
        );
        let background = Box::new(background);
        (Solution::Closure { background, domain }, metadata)
    };
    metadata.cautions.clear();
    let grid = &loaded.grid;
    if grid.halo().iter().any(|n| *n > 0) {
        // Ghost layers: the grid datasets include them; say how many.
        let per_axis: Vec<String> = grid
            .axes()
            .iter()
            .zip(grid.halo())
            .map(|(a, n)| format!("{}: {n}", a.coord.name()))
            .collect();
        metadata.extra.push((
            "halo".into(),
            format!(
                "ghost layers per side, included in the grid and every field: {}",
                per_axis.join(", ")
            ),
        ));
    }
    let perturbations = Perturbations::bind(
        &loaded.perturbations,
        &loaded.model,
        &loaded.grid,
        solution.background(),
    )
    .map_err(|error| Error::Perturb {
        source_label: loaded.source.clone(),
        error,
    })?;
    let forcing = match &solution {
        Solution::Closure { .. } => {
            crate::forcing::Forcing::of(&loaded.model).map_err(|e| Error::closure(loaded, e))?
        }
        Solution::Torus { .. } => None,
    };
    if let Some(f) = &forcing {
        metadata.extra.push(("forcing".into(), f.json()));
    }
    if !perturbations.is_empty() {
        metadata.extra.push((
            "perturbations".into(),
            crate::perturb::report::parameters_json(&perturbations.parameters()),
        ));
    }
    let extras = extras(loaded, &solution)?;
    Ok(Built {
        loaded,
        solution,
        perturbations,
        resolved: std::sync::OnceLock::new(),
        extras,
        metadata,
        forcing,
    })
}

/// The optional fields `output.fields` asks for, prepared for sampling;
/// an error at `output.fields` for one that cannot be computed exactly.
fn extras(loaded: &Loaded, solution: &Solution) -> Result<sample::Extras, Error> {
    use sample::extras::{component_names, requested, Extras};
    let model = &loaded.model;
    let frame = model.shape.frame();
    let comps = loaded.grid.velocity_components();
    let wanted = loaded.output.fields.clone().unwrap_or_default();
    let quantities = requested(&wanted, frame, &comps);
    let rotation = match solution {
        // Nothing asked for: the laws are not rebuilt.
        _ if quantities.is_empty() => Err(String::new()),
        // Inside (h > 0) the rotation law, outside the floor at rest: the
        // same choice the torus makes at every point.
        Solution::Torus { torus, .. } => {
            let f = torus.formulas();
            let get = |n: &str| f.iter().find(|(m, _)| *m == n).map(|(_, e)| (*e).clone());
            match (get("h"), get("v")) {
                (Some(h), Some(v)) => Ok(crate::formula::Expr::If(
                    Box::new(crate::formula::Cond::Cmp(
                        crate::formula::CmpOp::Gt,
                        h,
                        crate::formula::Expr::num(0.0),
                    )),
                    Box::new(v),
                    Box::new(crate::formula::Expr::num(0.0)),
                )),
                _ => Err("the torus has no rotation law formula".to_string()),
            }
        }
        Solution::Closure { .. } => {
            let laws = closure::Laws::build(model).map_err(|e| Error::closure(loaded, e))?;
            if laws.column.is_some() {
                Err(
                    "a disk integrated up its columns (balance.vertical \"quadrature\" or a \
                     surface density) has no closed-form v_phi(R, z): its derivatives would \
                     need R-derivatives of the column integrals; give c^2(R) for the \
                     closed-form disk"
                        .to_string(),
                )
            } else {
                match (laws.rotation, laws.rotation_sq) {
                    (Some(v), _) => Ok(v),
                    (None, Some(v2)) => Ok(crate::formula::Expr::call(
                        crate::formula::Func::Sqrt,
                        vec![v2],
                    )),
                    (None, None) => Err("this background has no rotation law".to_string()),
                }
            }
        }
    };
    let lookup = |n: &str| model.lookup(n);
    Extras::new(quantities, frame, model.gamma, rotation, &lookup).map_err(|r| {
        ProfileError::at(
            &loaded.source,
            "output.fields",
            format!(
                "`{}` cannot be written: {}",
                component_names(r.quantity, frame, &comps)
                    .into_iter()
                    .find(|n| wanted.contains(n))
                    .unwrap_or_else(|| r.quantity.name().to_string()),
                r.why
            ),
        )
        .into()
    })
}

impl Built<'_> {
    /// The background as solved.
    pub fn background(&self) -> &dyn Background {
        self.solution.background()
    }

    /// The verification `stillpoint check` runs (jumps, the closed- or
    /// integral-form balance) at the default tolerance: an error for a
    /// state that fails it — except an audit (`solve_for: nothing`) and
    /// jumps the profile declares intended, which are cautions — and the
    /// metadata with every caution (those first, then the stability and
    /// the other cautions of [`cautions`]).
    pub fn verify(&self) -> Result<Metadata, Error> {
        let loaded = self.loaded;
        let mut meta = self.metadata.clone();
        let discrete = match &self.solution {
            Solution::Closure { background, domain } => {
                let centres = centres_for(&loaded.grid, loaded.model.shape.frame());
                let report = crate::check::run(
                    &loaded.model,
                    background.as_ref(),
                    domain,
                    &centres,
                    crate::check::DEFAULT_TOLERANCE,
                )
                .map_err(|e| Error::closure(loaded, e))?;
                meta.cautions = verdict_cautions(loaded, &report)?;
                meta.cautions
                    .extend(cautions(loaded, background.as_ref(), domain));
                report.discrete.map(|d| d.0)
            }
            // The torus was checked when it was built.
            Solution::Torus { cautions, .. } => {
                meta.cautions = cautions.clone();
                None
            }
        };
        let mut alone_list = Vec::new();
        if !loaded.perturbations.is_empty() {
            let mut alone = Vec::new();
            for a in perturbations_alone(loaded, self.background()) {
                match a {
                    Ok(a) => {
                        meta.cautions.extend(a.caution(discrete));
                        if loaded.output.precision == crate::output::Precision::Single {
                            meta.cautions.extend(a.single_precision_caution());
                        }
                        alone.push(a);
                    }
                    Err(e) => meta
                        .cautions
                        .push(format!("a perturbation could not be sampled alone: {e}")),
                }
            }
            meta.extra
                .push(("perturbations_alone".into(), alone_json(&alone, discrete)));
            alone_list = alone;
        }
        let d = match &self.solution {
            Solution::Closure { background, domain } => {
                drift_forecast(loaded, background.as_ref(), domain, None, &alone_list, true)
            }
            Solution::Torus { torus, .. } => {
                if matches!(loaded.sampling, SamplingRule::AverageTo { .. }) {
                    self.background_sampler()?;
                }
                let points = self.resolved.get().map(|r| r.points);
                torus_drift_forecast(loaded, torus, None, &alone_list, true, points)
            }
        };
        {
            let record = match d {
                Ok(d) => {
                    meta.cautions.extend(drift_caution(&d));
                    d.json()
                }
                Err(e) => serde_json::json!({ "not_evaluated": e.to_string() }).to_string(),
            };
            meta.extra.push(("drift_forecast".into(), record));
        }
        Ok(meta)
    }

    /// The sampler of the state (background and perturbations) on the
    /// profile's grid and rule.
    pub fn sampler(&self) -> Result<Sampler<'_>, Error> {
        Ok(self
            .background_sampler()?
            .perturbed(&self.perturbations)
            .with_extras(&self.extras))
    }

    /// The sampler of the background alone; a rule to a tolerance is
    /// resolved once per build.
    fn background_sampler(&self) -> Result<Sampler<'_>, Error> {
        let (grid, gas, cuts) = (&self.loaded.grid, gas_constants(self.loaded), self.cuts());
        let sampler = match &self.loaded.sampling {
            SamplingRule::AverageTo { tolerance, start } => {
                let resolved = match self.resolved.get() {
                    Some(r) => r,
                    None => {
                        let r = sample::resolve_tolerance_with(
                            self.background(),
                            grid,
                            *tolerance,
                            *start,
                            &gas,
                            &cuts,
                            Some(&self.extras),
                        )
                        .map_err(|e| self.sample_error(e))?;
                        self.resolved.get_or_init(|| r)
                    }
                };
                resolved.sampler(self.background(), grid, &gas, &cuts)
            }
            rule => Sampler::with_cuts(self.background(), grid, rule, &gas, &cuts),
        };
        sampler.map_err(|e| self.sample_error(e))
    }

    /// The switch points of the piecewise laws, in the balance coordinate:
    /// cell averages are split there on grid axes of that coordinate.
    pub fn cuts(&self) -> Cuts {
        let model = &self.loaded.model;
        Cuts {
            coordinate: model.shape.coordinate().to_string(),
            at: match &self.solution {
                Solution::Closure { domain, .. } => {
                    domain.switches(model).iter().map(|w| w.at).collect()
                }
                Solution::Torus { .. } => Vec::new(),
            },
        }
    }

    /// The perturbations bound to this background.
    pub fn perturbations(&self) -> &Perturbations {
        &self.perturbations
    }

    /// A sampling error, labelled with the profile.
    pub fn sample_error(&self, error: SampleError) -> Error {
        Error::Sample {
            source_label: self.loaded.source.clone(),
            error,
        }
    }

    /// The state — the initial condition: the background plus every
    /// perturbation — on the whole grid in memory, the fields
    /// `output.fields` keeps (CSV tables, plain arrays). Sampled slab by
    /// slab, as the HDF5 file is, and the same numbers as its `/state`
    /// (sampling does not depend on the slab size); `report` hears of each
    /// slab.
    pub fn sample_state_all(&self, report: &dyn Fn(Progress)) -> Result<FieldSet, Error> {
        let sampler = self.sampler()?;
        let split = self.split(&sampler)?;
        let sampler = sampler.keeping(&split.keep);
        let forcing = self.forcing_sampler()?;
        let grid = &self.loaded.grid;
        let shape = grid.shape();
        let total = grid.len();
        let row_cells: usize = shape[1..].iter().product();
        let rows = (65_536 / row_cells.max(1)).max(1);
        let state = usize::from(split.perturbed());
        let mut peaks = Peaks::new(self.loaded.model.gamma);
        let mut data: Vec<Vec<f64>> = Vec::new();
        for r in slab_ranges(shape[0], rows) {
            let cells = r.end * row_cells;
            let slab = self.produce(&sampler, forcing.as_ref(), r, Vec::new())?;
            let part = split.parts(slab, &mut peaks).swap_remove(state);
            if data.is_empty() {
                data = part.data;
            } else {
                for (d, p) in data.iter_mut().zip(part.data) {
                    d.extend(p);
                }
            }
            report(Progress { cells, total });
        }
        let fields = split.groups[state]
            .1
            .iter()
            .zip(data)
            .map(|(spec, data)| crate::fields::Field {
                name: spec.name.clone(),
                dim: spec.dim,
                data,
                placement: spec.placement.clone(),
            })
            .collect();
        Ok(FieldSet {
            shape,
            sampling: sampler.sampling().to_string(),
            fields,
        })
    }

    /// Every field on the whole grid (those `output.fields` keeps), in
    /// memory (small grids, CSV tables, plain arrays).
    pub fn sample_all(&self) -> Result<FieldSet, Error> {
        let groups = self.groups()?;
        let mut set = self.sample_every_field()?;
        set.fields
            .retain(|f| groups[0].fields.iter().any(|g| g.name == f.name));
        if let Some(fs) = self.forcing_sampler()? {
            let all =
                sample::sample_whole(&fs, &self.loaded.grid).map_err(|e| self.sample_error(e))?;
            let kept = self.kept_groups(&self.sampler()?)?;
            let wanted = kept.iter().find(|g| g.0 == crate::forcing::GROUP);
            for (spec, k) in self.forcing_fields(&fs) {
                if wanted.is_some_and(|g| g.1.iter().any(|f| f.name == spec.name)) {
                    let mut f = all.fields[k].clone();
                    f.name = spec.name;
                    f.dim = spec.dim;
                    set.fields.push(f);
                }
            }
        }
        Ok(set)
    }

    /// The sampler of the manufactured forcing (an audit only), under the
    /// build's rule (a rule to a tolerance at the points it resolved to).
    pub(crate) fn forcing_sampler(&self) -> Result<Option<Sampler<'_>>, Error> {
        let Some(f) = &self.forcing else {
            return Ok(None);
        };
        let rule = match &self.loaded.sampling {
            SamplingRule::AverageTo { .. } => {
                self.background_sampler()?;
                let points = self.resolved.get().map_or(4, |r| r.points);
                SamplingRule::Average { points }
            }
            rule => *rule,
        };
        let gas = gas_constants(self.loaded);
        Sampler::with_cuts(f, &self.loaded.grid, &rule, &gas, &self.cuts())
            .map(Some)
            .map_err(|e| self.sample_error(e))
    }

    /// The forcing fields (`forcing_<component>`, a force density) and the
    /// position of each in the forcing sampler's slabs (its velocity
    /// components).
    fn forcing_fields(&self, fs: &Sampler<'_>) -> Vec<(FieldSpec, usize)> {
        let m = &self.loaded.model;
        let mass = if m.vertically_integrated {
            crate::units::Dim::SURFACE_DENSITY
        } else {
            crate::units::Dim::DENSITY
        };
        let dim = mass.times(crate::units::Dim::new(1, 0, -2, 0));
        fs.fields()
            .into_iter()
            .enumerate()
            .filter_map(|(k, f)| {
                let c = f.name.strip_prefix("velocity_")?.to_string();
                Some((
                    FieldSpec {
                        name: format!("forcing_{c}"),
                        dim,
                        placement: f.placement,
                    },
                    k,
                ))
            })
            .collect()
    }

    /// The sampler's groups and, for an audit, the forcing group.
    fn all_groups(
        &self,
        sampler: &Sampler<'_>,
    ) -> Result<Vec<(&'static str, Vec<FieldSpec>)>, Error> {
        let mut groups = sampler.groups();
        if let Some(fs) = self.forcing_sampler()? {
            let specs = self.forcing_fields(&fs).into_iter().map(|f| f.0).collect();
            groups.push((crate::forcing::GROUP, specs));
        }
        groups.extend(Self::face_groups(&self.face_parts()?));
        Ok(groups)
    }

    /// A slab of the state and, for an audit, the forcing fields of the
    /// same rows after it.
    pub(crate) fn produce(
        &self,
        sampler: &Sampler<'_>,
        forcing: Option<&Sampler<'_>>,
        rows: std::ops::Range<usize>,
        reuse: Vec<Vec<f64>>,
    ) -> Result<Slab, Error> {
        let mut slab = sampler
            .slab_into(rows.clone(), reuse)
            .map_err(|e| self.sample_error(e))?;
        if let Some(fs) = forcing {
            let extra = fs.slab(rows.clone()).map_err(|e| self.sample_error(e))?;
            let picks: Vec<usize> = self.forcing_fields(fs).into_iter().map(|f| f.1).collect();
            let mut data: Vec<Option<Vec<f64>>> = extra.data.into_iter().map(Some).collect();
            for k in picks {
                slab.data.push(data[k].take().unwrap_or_default());
            }
        }
        if self.loaded.faces.any() {
            self.face_slabs(&self.face_parts()?, rows, &mut slab.data)?;
        }
        Ok(slab)
    }

    fn sample_every_field(&self) -> Result<FieldSet, Error> {
        sample::sample_whole(
            &self.background_sampler()?.with_extras(&self.extras),
            &self.loaded.grid,
        )
        .map_err(|e| self.sample_error(e))
    }

    /// The groups of the file: `/background` with the sampled fields, and
    /// `/state` linked to it when nothing perturbs the state, else `/state`
    /// (the sum) and `/perturbation` (the perturbation alone) of their own.
    pub fn groups(&self) -> Result<Vec<GroupPlan>, Error> {
        let sampler = self.sampler()?;
        let kept = self.kept_groups(&sampler)?;
        let fields = kept[0].1.clone();
        let perturbed = kept.iter().any(|g| g.0 == "state");
        let own = self.face_sampling()?;
        let mut groups: Vec<GroupPlan> = kept
            .into_iter()
            .map(|(name, f)| GroupPlan {
                name: name.to_string(),
                fields: f,
                link_to: None,
                sampling: own.iter().find(|g| g.0 == name).map(|g| g.1.clone()),
                about: Vec::new(),
            })
            .collect();
        // The fields on request are the background's: say so on each.
        let optional = sample::extras::optional_names(
            self.loaded.model.shape.frame(),
            &self.loaded.grid.velocity_components(),
        );
        if let Some(bg) = groups.iter_mut().find(|g| g.name == "background") {
            bg.about = bg
                .fields
                .iter()
                .filter(|f| optional.contains(&f.name))
                .map(|f| (f.name.clone(), BACKGROUND_ONLY.to_string()))
                .collect();
        }
        if !perturbed {
            // Nothing perturbs the state: /state links to /background.
            groups.insert(
                1,
                GroupPlan {
                    name: "state".into(),
                    fields,
                    link_to: Some("background".into()),
                    sampling: None,
                    about: Vec::new(),
                },
            );
        }
        Ok(groups)
    }

    /// The sampler's groups holding only the fields `output.fields` keeps
    /// (all of them when it is not given); an unknown name is an error
    /// naming the key and the closest field.
    fn kept_groups(
        &self,
        sampler: &Sampler<'_>,
    ) -> Result<Vec<(&'static str, Vec<FieldSpec>)>, Error> {
        let mut groups = self.all_groups(sampler)?;
        if let Some(wanted) = &self.loaded.output.fields {
            let mut names: Vec<&str> = Vec::new();
            for f in groups.iter().flat_map(|(_, f)| f) {
                if !names.contains(&f.name.as_str()) {
                    names.push(f.name.as_str());
                }
            }
            let optional = sample::extras::optional_names(
                self.loaded.model.shape.frame(),
                &self.loaded.grid.velocity_components(),
            );
            if let Some(bad) = wanted.iter().find(|w| !names.contains(&w.as_str())) {
                return Err(crate::profile::ProfileError::at(
                    &self.loaded.source,
                    "output.fields",
                    format!(
                        "`{bad}` is not a field of this build{}; its fields are {}; on request \
                         also {}",
                        crate::profile::closest(bad, &names)
                            .map(|n| format!(" (did you mean `{n}`?)"))
                            .unwrap_or_default(),
                        names.join(", "),
                        optional.join(", ")
                    ),
                )
                .into());
            }
            for (name, f) in &mut groups {
                // The staggered components are asked for by their own key.
                if *name != STAGGERED {
                    f.retain(|f| wanted.contains(&f.name));
                }
            }
        }
        Ok(groups)
    }

    /// How `sampler`'s slabs become the file's groups (see [`Split`]).
    pub fn split(&self, sampler: &Sampler<'_>) -> Result<Split, Error> {
        Ok(Split::new(
            &self.all_groups(sampler)?,
            &self.kept_groups(sampler)?,
        ))
    }

    /// Verify, sample slab by slab and stream into a new HDF5 file at
    /// `path`: `/background` holds the fields and `/state` links to them
    /// (nothing perturbs the state yet). With more than one thread in the
    /// caller's pool, three things run at once: the verification, the
    /// sampling of the next slab (on the pool) and the writing of the last
    /// one; memory holds at most three slabs. With one thread (`--threads
    /// 1`) the three take turns on it. A failed verification stops the sampling
    /// and is the error (the caller's [`crate::output::commit`] removes the
    /// partial file). Returns the metadata written, cautions included.
    pub fn write_hdf5(&self, path: &Path, opts: &StreamOptions) -> Result<Metadata, Error> {
        self.write_hdf5_reporting(path, opts, &|_| {})
    }

    /// [`Built::write_hdf5`], calling `report` after each slab is written
    /// (from the writing thread) with the cells written so far.
    pub fn write_hdf5_reporting(
        &self,
        path: &Path,
        opts: &StreamOptions,
        report: &(dyn Fn(Progress) + Sync),
    ) -> Result<Metadata, Error> {
        let sampler = self.sampler()?;
        let fields = sampler.fields();
        let grid = &self.loaded.grid;
        let groups = self.groups()?;
        let split = self.split(&sampler)?;
        let sampler = sampler.keeping(&split.keep);
        let create = || {
            H5Stream::create_filtered(
                path,
                grid,
                &self.metadata,
                sampler.sampling(),
                &groups,
                opts.precision,
                self.loaded.output.filters,
            )
        };
        let forcing = self.forcing_sampler()?;
        let shape = grid.shape();
        let rows = slab_rows(&shape, fields.len(), opts);
        let gamma = self.loaded.model.gamma;
        let row_cells: usize = shape[1..].iter().product();
        let total = grid.len();
        if rayon::current_num_threads() == 1 {
            // One thread: verify (a refused state stops before any work),
            // then sample and write in turn.
            let meta = self.verify()?;
            let mut out = create()?;
            let mut reuse = Vec::new();
            let mut peaks = Peaks::new(gamma);
            for r in slab_ranges(shape[0], rows) {
                let cells = r.end * row_cells;
                let slab = self.produce(&sampler, forcing.as_ref(), r, reuse)?;
                reuse = split.write(&mut out, slab, &mut peaks)?;
                report(Progress { cells, total });
            }
            let meta = split.with_peaks(meta, &peaks);
            out.finish(&meta)?;
            return Ok(meta);
        }
        let refused = std::sync::atomic::AtomicBool::new(false);
        let (out, meta) = std::thread::scope(|scope| {
            let verifier = scope.spawn(|| {
                let v = self.verify();
                if v.is_err() {
                    refused.store(true, std::sync::atomic::Ordering::Relaxed);
                }
                v
            });
            let mut out = create()?;
            let (tx, rx) = std::sync::mpsc::sync_channel::<Slab>(1);
            // Written slabs come back, so their arrays are reused.
            let (back, spent) = std::sync::mpsc::channel::<Vec<Vec<f64>>>();
            let split = &split;
            let writer = scope.spawn(move || -> Result<(H5Stream, Peaks), OutputError> {
                let mut peaks = Peaks::new(gamma);
                for slab in rx {
                    let cells = slab.rows.end * row_cells;
                    let data = split.write(&mut out, slab, &mut peaks)?;
                    report(Progress { cells, total });
                    let _ = back.send(data);
                }
                Ok((out, peaks))
            });
            let sampled = (|| {
                for r in slab_ranges(shape[0], rows) {
                    if refused.load(std::sync::atomic::Ordering::Relaxed) {
                        break; // the verifier's error is reported
                    }
                    let reuse = spent.try_recv().unwrap_or_default();
                    let slab = self.produce(&sampler, forcing.as_ref(), r, reuse)?;
                    if tx.send(slab).is_err() {
                        break; // the writer stopped: its error is reported
                    }
                }
                Ok::<(), Error>(())
            })();
            drop(tx);
            let written = writer
                .join()
                .unwrap_or_else(|p| std::panic::resume_unwind(p));
            let meta = verifier
                .join()
                .unwrap_or_else(|p| std::panic::resume_unwind(p))?;
            sampled?;
            Ok::<_, Error>((written?, meta))
        })?;
        let (out, peaks) = out;
        let meta = split.with_peaks(meta, &peaks);
        out.finish(&meta)?;
        Ok(meta)
    }
}

/// The `about` attribute of the fields written on request (accelerations
/// and diagnostics): they are the background's, also when perturbations
/// make `/state` differ.
pub const BACKGROUND_ONLY: &str = "of the background (the equilibrium) only: when \
     perturbations make /state differ it is not written there (when nothing perturbs, /state links \
     here). The accelerations are what a well-balanced scheme subtracts, the background's by \
     definition; the diagnostics are exact functions of the laws and their derivatives, which \
     perturbations (noise, say) do not have";

/// How far a streamed build has come (see [`Built::write_hdf5_reporting`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Progress {
    /// Cells written so far.
    pub cells: usize,
    /// Cells of the grid.
    pub total: usize,
}

/// How a sampler's slab becomes the file's groups: the fields
/// `output.fields` keeps, cut into background (or background, state and
/// perturbation), with the perturbation's peaks gathered on the way. The
/// one split of serial builds and of builds across MPI ranks.
pub struct Split {
    /// Per field of the sampler's slabs, whether `output.fields` keeps it.
    keep: Vec<bool>,
    /// The written groups and their kept fields, in slab order.
    groups: Vec<(String, Vec<FieldSpec>)>,
}

impl Split {
    fn new(
        all: &[(&'static str, Vec<FieldSpec>)],
        kept: &[(&'static str, Vec<FieldSpec>)],
    ) -> Split {
        let keep = all
            .iter()
            .zip(kept)
            .flat_map(|((_, all), (_, kept))| {
                all.iter()
                    .map(|f| kept.iter().any(|g| g.name == f.name))
                    .collect::<Vec<_>>()
            })
            .collect();
        Split {
            keep,
            groups: kept
                .iter()
                .map(|(n, f)| (n.to_string(), f.clone()))
                .collect(),
        }
    }

    /// Per field of the sampler's slabs, whether `output.fields` keeps it
    /// (what [`Sampler::keeping`] takes).
    pub fn keep(&self) -> &[bool] {
        &self.keep
    }

    /// Whether the groups are background, state and perturbation (the
    /// first three; a forcing group may follow).
    pub fn perturbed(&self) -> bool {
        self.groups.get(2).is_some_and(|g| g.0 == "perturbation")
    }

    /// The names of the written groups, in slab order.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.groups.iter().map(|(n, _)| n.as_str())
    }

    /// The kept fields of `slab`, one slab per group in the order of
    /// [`Split::names`]; the perturbation's peaks are folded into `peaks`.
    pub fn parts(&self, slab: Slab, peaks: &mut Peaks) -> Vec<Slab> {
        let Slab { rows, data } = slab;
        let mut data: Vec<Vec<f64>> = if self.keep.iter().all(|k| *k) {
            data
        } else {
            data.into_iter()
                .zip(&self.keep)
                .filter_map(|(d, k)| k.then_some(d))
                .collect()
        };
        if self.perturbed() {
            let (nb, ns) = (self.groups[0].1.len(), self.groups[1].1.len());
            peaks.update(
                &self.groups[0].1,
                &data[..nb],
                &self.groups[2].1,
                &data[nb + ns..],
            );
        }
        let mut parts = Vec::with_capacity(self.groups.len());
        for (_, fields) in &self.groups {
            let rest = data.split_off(fields.len());
            parts.push(Slab {
                rows: rows.clone(),
                data,
            });
            data = rest;
        }
        parts
    }

    /// Write every group of `slab`; returns its arrays for reuse.
    fn write(
        &self,
        out: &mut H5Stream,
        slab: Slab,
        peaks: &mut Peaks,
    ) -> Result<Vec<Vec<f64>>, OutputError> {
        let mut back = Vec::new();
        for (name, part) in self.names().zip(self.parts(slab, peaks)) {
            out.write(name, &part)?;
            back.extend(part.data);
        }
        Ok(back)
    }

    /// The metadata with the perturbation's peaks, when there is one.
    pub fn with_peaks(&self, mut meta: Metadata, peaks: &Peaks) -> Metadata {
        if self.perturbed() {
            meta.extra
                .push(("perturbation_peaks".into(), peaks.describe()));
        }
        meta
    }
}

/// The groups of a file nothing perturbs: `/background` with the fields and
/// `/state` linking to it.
pub fn unperturbed_groups(fields: &[crate::fields::FieldSpec]) -> [GroupPlan; 2] {
    [
        GroupPlan {
            name: "background".into(),
            fields: fields.to_vec(),
            link_to: None,
            sampling: None,
            about: Vec::new(),
        },
        GroupPlan {
            name: "state".into(),
            fields: fields.to_vec(),
            link_to: Some("background".into()),
            sampling: None,
            about: Vec::new(),
        },
    ]
}

impl crate::output::AtPath for Error {
    fn at_path(&mut self, path: &Path) {
        if let Error::Output(e) = self {
            e.at_path(path);
        }
    }
}

/// Plain-language cautions: instability of the equilibrium (see
/// [`crate::stability`]), an unbounded force at the axis, single precision,
/// and an anchor outside the grid.
pub fn cautions(loaded: &Loaded, bg: &dyn Background, domain: &Domain) -> Vec<String> {
    let m = &loaded.model;
    let s = m.coordinate();
    let mut out = crate::stability::cautions(m, bg, domain);
    if m.shape == crate::background::Shape::StratifiedDisk || m.vertically_integrated {
        if let Ok(sec) = crate::criteria::section(m, bg, domain, Some(&loaded.grid)) {
            out.extend(sec.cautions());
        }
    }
    out.extend(plausibility(m, bg, domain));
    if let Some(crate::closure::axis::Approach::SingularGradient { .. }) =
        closure::axis_approach(m, domain)
    {
        out.push(format!(
            "the gravity dPhi/d{s} grows without bound towards {s} = {} (the potential itself is \
             finite there): the cells next to the {} feel an unbounded force; start the grid off \
             the {} to avoid it",
            domain.lo,
            closure::axis_word(m),
            closure::axis_word(m)
        ));
    }
    if loaded.output.precision == crate::output::Precision::Single {
        out.push(single_precision_caution(loaded, bg));
    }
    if let Some(a) = m.anchor {
        if a.at < domain.lo || a.at > domain.hi {
            out.push(format!(
                "the anchor {s} = {} lies outside the grid [{}, {}]: the laws are used beyond the \
                 domain to reach it",
                a.at, domain.lo, domain.hi
            ));
        }
    }
    out
}

/// The equation of state in a word, as files record it: `isothermal` for
/// γ = 1 (P = ρc², no energy field), else `ideal` (energy P/(γ − 1) + ½ρ|v|²).
pub fn gas_law(gamma: f64) -> &'static str {
    if crate::physics::is_isothermal(gamma) {
        "isothermal"
    } else {
        "ideal"
    }
}

/// The balance in words, as `derive` prints it and files record it:
/// `slab`, `sphere`, `disk midplane` or `vertically integrated disk` (where
/// the density is a surface density and the pressure is integrated in z).
pub fn balance_description(m: &crate::model::Model) -> &'static str {
    match m.shape {
        Shape::DiskMidplane if m.vertically_integrated => "vertically integrated disk",
        Shape::DiskMidplane => "disk midplane",
        other => other.key(),
    }
}

/// What the verification means for a build: an error for a jump that is
/// not intended and for a solved state that misses the tolerance; cautions
/// for intended jumps and for an audit (`solve_for: nothing`) whose laws do
/// not balance — nothing was solved, so nothing else says that the state
/// will move. `check` reports the same as its verdict.
fn verdict_cautions(loaded: &Loaded, report: &crate::check::Report) -> Result<Vec<String>, Error> {
    let m = &loaded.model;
    let s = m.coordinate();
    let refuse =
        |message: String| Err(Error::closure(loaded, ClosureError::NoEquilibrium(message)));
    let unintended: Vec<_> = report.jumps.iter().filter(|j| !j.intended).collect();
    if let Some(j) = unintended.first() {
        let more = match unintended.len() {
            1 => String::new(),
            n => format!(" (and {} more: `stillpoint check` lists them)", n - 1),
        };
        return refuse(format!(
            "{}{more}, and the balance differentiates it. Make the switch smooth over a few \
             cells (a step from A to B as A + (B - A)*0.5*(1 + tanh(({s} - {})/w)) with w about \
             two cells) or, if the jump is intended, list the law in balance.intended_jumps",
            j.describe(s),
            show(j.at)
        ));
    }
    let mut out: Vec<String> = report
        .jumps
        .iter()
        .map(|j| {
            format!(
                "{}, intended by balance.intended_jumps: the state is not an equilibrium there \
                 and will move from the first step",
                j.describe(s)
            )
        })
        .collect();
    if let crate::check::Verdict::NotEquilibrium { max, at } = report.verdict {
        if m.unknown != crate::model::Unknown::Nothing {
            return refuse(format!(
                "the solved state misses the balance: the largest relative residual is {max:.3e} \
                 at {s} = {} (tolerance {:.1e}); nothing was written",
                show(at),
                report.tolerance
            ));
        }
        out.push(format!(
            "the given laws are not an equilibrium (balance.solve_for is nothing): the largest \
             relative residual is {max:.3e} at {s} = {}; the state will move from the first \
             step (run `stillpoint check` for details)",
            crate::check::position(at)
        ));
    }
    Ok(out)
}

/// The speed of light, m/s (exact by definition, SI 2019).
const LIGHT_SI: f64 = 299_792_458.0;

/// Values far outside what the unit system makes plausible, each with the
/// likely cause (a value in the wrong units): a radial axis below zero, a
/// disk thicker than it is wide (H/R > 1), rotation faster than a tenth of
/// the speed of light (a mass in grams under astronomical units gives
/// 1e17 au/yr), a central mass outside 1e19–1e42 kg, a density outside
/// 1e-30–1e5 kg m^-3 (a surface density outside 1e-12–1e9 kg m^-2). The
/// thresholds are common practice, no source.
pub fn plausibility(m: &crate::model::Model, bg: &dyn Background, domain: &Domain) -> Vec<String> {
    let s = m.coordinate();
    let mut out = Vec::new();
    if (s == "R" || s == "r") && domain.lo < 0.0 {
        out.push(format!(
            "the grid reaches {s} = {} < 0, but {s} is a distance and never negative: a bound \
             in the wrong place or the wrong sign? (a Cartesian axis x, y or z takes negative values)",
            closure::show(domain.lo)
        ));
    }
    if !(m.shape.is_disk() && domain.lo.is_finite() && domain.hi > domain.lo) {
        return out;
    }
    let n = 64;
    let log = domain.lo > 0.0 && domain.hi / domain.lo > 100.0;
    let xs: Vec<f64> = crate::closure::spaced(domain.lo, domain.hi, n, log);
    let Ok(t) = crate::table::tabulate(m, bg, &xs) else {
        return out;
    };
    let col = |name: &str| t.names.iter().position(|c| c == name);
    let largest = |k: Option<usize>| {
        k.and_then(|k| {
            t.rows
                .iter()
                .zip(&xs)
                .map(|(r, x)| (r[k].abs(), *x))
                .filter(|(v, _)| v.is_finite())
                .max_by(|a, b| a.0.total_cmp(&b.0))
        })
    };
    if let Some((h, x)) = largest(col("H/R")).filter(|(h, _)| *h > 1.0) {
        out.push(format!(
            "H/R reaches {} at {s} = {}: a disk thicker than it is wide is no thin disk, and the \
             midplane laws do not describe it; is the sound speed (or temperature) or the central \
             mass in the wrong units?",
            closure::show(h),
            closure::show(x)
        ));
    }
    if let Some(base) = m.units.base_units() {
        let (l, mass) = (base[0].si, base[1].si);
        let t_si = base[2].si;
        // The central mass from v_K² = GM/R at the first point, in kg.
        if let Some(k) = col("v_K") {
            let (x, v) = (xs[0], t.rows[0][k]);
            let m_kg = x * l * (v * l / t_si).powi(2) / crate::units::G_SI;
            if m_kg.is_finite() && m_kg > 0.0 && !(1e19..=1e42).contains(&m_kg) {
                out.push(format!(
                    "the central mass is {} kg ({} solar masses), far from any star, planet or \
                     black hole (1e19 to 1e42 kg): is it in the wrong units? (units: {} takes \
                     masses in {})",
                    closure::show(m_kg),
                    closure::show(m_kg / crate::units::M_SUN_SI),
                    crate::keys::Keyed::key(m.units),
                    base[1].symbol
                ));
            }
        }
        // The density (or surface density) far from that of any gas the
        // tool is for.
        let (dim_l, lo, hi, what) = if m.vertically_integrated {
            (2, 1e-12, 1e9, "surface density")
        } else {
            (3, 1e-30, 1e5, "density")
        };
        if let Some((rho, x)) = largest(col("rho")) {
            let si = rho * mass / l.powi(dim_l);
            if si > 0.0 && !(lo..=hi).contains(&si) {
                out.push(format!(
                    "the {what} reaches {} {} at {s} = {}, that is {} kg m^-{dim_l}, outside \
                     {lo:e} to {hi:e} kg m^-{dim_l} (thin interstellar gas to a planet's deep \
                     interior): is it in the wrong units? (a value in g cm^-{dim_l} under units: \
                     astro is one way to get there)",
                    closure::show(rho),
                    m.units.unit_string(if m.vertically_integrated {
                        crate::units::Dim::SURFACE_DENSITY
                    } else {
                        crate::units::Dim::DENSITY
                    }),
                    closure::show(x),
                    closure::show(si)
                ));
            }
        }
        // The speed of light in the file's units.
        let (l, t_unit) = match m.units {
            crate::units::UnitSystem::Si => (1.0, 1.0),
            crate::units::UnitSystem::Cgs => (0.01, 1.0),
            crate::units::UnitSystem::Astro => (crate::units::AU_SI, crate::units::YEAR_SI),
            crate::units::UnitSystem::Code => (f64::NAN, f64::NAN),
        };
        let light = LIGHT_SI * t_unit / l;
        for name in ["v_phi", "v_K"] {
            if let Some((v, x)) = largest(col(name)).filter(|(v, _)| *v > 0.1 * light) {
                out.push(format!(
                    "{name} reaches {} {} at {s} = {}, {} times the speed of light: no gas \
                     rotates so fast; is the central mass (or a length) in the wrong units? (a \
                     mass in grams under units: astro, where masses are in solar masses, gives \
                     such speeds)",
                    closure::show(v),
                    m.units.unit_string(crate::units::Dim::VELOCITY),
                    closure::show(x),
                    closure::show(v / light)
                ));
                break;
            }
        }
    }
    out
}
