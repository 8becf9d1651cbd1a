//! `check` and `build` for a profile with `balance.torus`: the torus from
//! the model and the grid, its report (edges, density maximum, balance
//! residuals in both directions inside, the floored cells where balance is
//! given up) and its file metadata (the floor and the floored fraction).
//! A torus is built, sampled and written like any other background
//! (`pipeline::build`), perturbations and every output included.
//!
//! Owns: the glue from a loaded profile to a [`Torus`] and the torus
//! report's text. Does not own the torus formulas (`torus`), sampling or
//! the HDF5 format.

use std::fmt::Write as _;

use crate::closure::{show, ClosureError};
use crate::output::Metadata;
use crate::pipeline::Error;
use crate::profile::Loaded;
use crate::torus::{Torus, TorusSpec};

/// The torus of a profile with `balance.torus`, its edges searched for
/// between 10⁻⁶ and 10³ times the grid's largest radius.
pub fn torus(loaded: &Loaded) -> Result<Torus, Error> {
    let m = &loaded.model;
    let fail = |msg: String| Error::closure(loaded, ClosureError::NoEquilibrium(msg));
    let (Some(t), Some(b)) = (&m.torus, &m.barotrope) else {
        return Err(fail("balance.torus and gas.barotropic are required".into()));
    };
    let look = |e: &crate::formula::Expr| e.eval(&|n| m.lookup(n)).unwrap_or(f64::NAN);
    let mut names = m.parameters.clone();
    names.extend(crate::model::Model::builtin_names(m.units));
    let hi = loaded
        .grid
        .background_range(crate::background::Frame::Axisymmetric)
        .1;
    Torus::new(TorusSpec {
        potential: m.potential_field.expr.clone(),
        k: look(&b.constant),
        gamma: b.exponent_value,
        rotation: t.rotation,
        edge: t.edge,
        floor_density: t.floor.0,
        floor_pressure: t.floor.1,
        search: (hi * 1e-6, hi * 1e3),
        names,
    })
    .map_err(|e| fail(e.to_string()))
}

/// The frame coordinates (R, z) of every cell centre of the grid.
fn centres(loaded: &Loaded) -> Vec<[f64; 2]> {
    let grid = &loaded.grid;
    let Some(embed) = grid.embedding(crate::background::Frame::Axisymmetric) else {
        return Vec::new();
    };
    let axes: Vec<Vec<f64>> = grid.axes().iter().map(|a| a.centers()).collect();
    let shape = grid.shape();
    let n = grid.len();
    let mut cols = vec![Vec::with_capacity(n); axes.len()];
    for i in 0..n {
        let mut rest = i;
        for a in (0..axes.len()).rev() {
            cols[a].push(axes[a][rest % shape[a]]);
            rest /= shape[a];
        }
    }
    let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
    let mut out = vec![vec![0.0; n], vec![0.0; n]];
    embed.to_frame(&refs, n, &mut out);
    (0..n).map(|i| [out[0][i], out[1][i]]).collect()
}

/// What the torus report found.
pub struct Verdict {
    /// The report text.
    pub text: String,
    /// Balance within tolerance inside the torus.
    pub passed: bool,
    /// Cautions for the file and the screen.
    pub cautions: Vec<String>,
    /// Floored cells, all cells.
    pub floored: (usize, usize),
}

/// Check the torus at the grid's cell centres: residuals inside, floored
/// cells outside.
pub fn verdict(loaded: &Loaded, t: &Torus, tolerance: f64) -> Result<Verdict, Error> {
    let res = t
        .residuals()
        .map_err(|e| Error::closure(loaded, ClosureError::NoEquilibrium(e.to_string())))?;
    let pts = centres(loaded);
    let (mut worst, mut at) = ([0.0f64; 2], [[f64::NAN; 2]; 2]);
    let mut floored = 0;
    for p in &pts {
        if t.floored(p[0], p[1]) {
            floored += 1;
            continue;
        }
        let r = res(p[0], p[1]);
        for k in 0..2 {
            if r[k] >= worst[k] || r[k].is_nan() {
                worst[k] = r[k];
                at[k] = *p;
            }
        }
    }
    let passed = worst.iter().all(|w| *w <= tolerance);
    let (fd, fp) = t.floor();
    let mut s = String::new();
    let _ = writeln!(
        s,
        "torus (barotropic, Bernoulli relation h(rho) + Phi + Phi_rot = C)"
    );
    let _ = writeln!(s, "  Bernoulli C  {:e}", t.bernoulli);
    let _ = writeln!(s, "  inner edge   R = {} (midplane)", show(t.inner));
    let _ = writeln!(s, "  outer edge   R = {} (midplane)", show(t.outer));
    let _ = writeln!(
        s,
        "  density max  {:e} at R = {} (pressure maximum)",
        t.density_max,
        show(t.centre)
    );
    let _ = writeln!(
        s,
        "balance inside the torus (exact derivatives of rho and P, at the cell centres)"
    );
    for (k, name) in ["radial", "vertical"].iter().enumerate() {
        let _ = writeln!(
            s,
            "  {name:<12} max {:.1e} (relative) at (R, z) = ({}, {}), tolerance {tolerance:.1e}",
            worst[k],
            show(at[k][0]),
            show(at[k][1])
        );
    }
    let kappa = t
        .epicyclic_sq(257)
        .map_err(|e| Error::closure(loaded, ClosureError::NoEquilibrium(e.to_string())))?;
    let lo = kappa
        .iter()
        .copied()
        .fold((f64::NAN, f64::INFINITY), |a, k| {
            if k.1 < a.1 {
                (k.0, k.1)
            } else {
                a
            }
        });
    let hi = kappa.iter().map(|k| k.1).fold(f64::NEG_INFINITY, f64::max);
    let scale = kappa.iter().map(|k| k.2).fold(0.0, f64::max);
    let _ = writeln!(s, "stability (midplane, inner to outer edge)");
    let _ = writeln!(
        s,
        "  kappa^2      min {:.6e} at R = {}, max {hi:.6e}  (Rayleigh: R^-3 d(R^4 Omega^2)/dR > 0 is \
         stable to axisymmetric perturbations; for a barotrope rotating on cylinders this is \
         Solberg-Hoiland)",
        lo.1,
        show(lo.0)
    );
    let mut stability = Vec::new();
    if lo.1 < -1e-12 * scale {
        stability.push(format!(
            "the torus is unstable by Rayleigh's criterion: kappa^2 = {:e} < 0 at R = {} \
             (angular momentum falls outward); it still builds, but it will not stay put",
            lo.1,
            show(lo.0)
        ));
    } else if hi.abs() <= 1e-12 * scale {
        stability.push(
            "constant specific angular momentum: kappa^2 = 0 everywhere, so the torus is only \
             marginally stable to axisymmetric perturbations, and such tori are unstable to \
             non-axisymmetric modes (Papaloizou & Pringle 1984)"
                .to_string(),
        );
    }
    let frac = floored as f64 / pts.len().max(1) as f64;
    let _ = writeln!(s, "floor (outside the torus, at rest)");
    let _ = writeln!(s, "  density      {fd:e}");
    let _ = writeln!(s, "  pressure     {fp:e}");
    let _ = writeln!(
        s,
        "  floored      {floored} of {} cells ({:.2}%)",
        pts.len(),
        100.0 * frac
    );
    let _ = write!(s, "result         {}", if passed { "PASS" } else { "FAIL" });
    let mut cautions = stability;
    if floored > 0 {
        cautions.push(format!(
            "balance is given up outside the torus: {floored} of {} cells ({:.2}%) hold the floor \
             (density {fd:e}, pressure {fp:e}) at rest, where gravity is not opposed and the \
             floor falls in; only the torus itself is an equilibrium",
            pts.len(),
            100.0 * frac
        ));
    }
    Ok(Verdict {
        text: s,
        passed,
        cautions,
        floored: (floored, pts.len()),
    })
}

/// The file metadata of a torus.
pub fn metadata(
    loaded: &Loaded,
    t: &Torus,
    v: &Verdict,
    argv: &str,
    reproducible: bool,
) -> Metadata {
    let (fd, fp) = t.floor();
    let m = &loaded.model;
    let e = |x: f64| format!("{x:e}");
    Metadata {
        profile_json: loaded.json_text.clone(),
        command_line: argv.to_string(),
        generator: format!("stillpoint {}", env!("CARGO_PKG_VERSION")),
        units: m.units,
        cautions: v.cautions.clone(),
        extra: vec![
            ("balance".into(), "barotropic torus".into()),
            ("solved_for".into(), "density".into()),
            ("gamma".into(), format!("{}", m.gamma)),
            ("gas_law".into(), "barotropic".into()),
            ("torus_bernoulli_constant".into(), e(t.bernoulli)),
            ("torus_inner_edge".into(), e(t.inner)),
            ("torus_outer_edge".into(), e(t.outer)),
            ("torus_density_max".into(), e(t.density_max)),
            ("floor_density".into(), e(fd)),
            ("floor_pressure".into(), e(fp)),
            (
                "floored_fraction".into(),
                e(v.floored.0 as f64 / v.floored.1.max(1) as f64),
            ),
        ],
        reproducible,
    }
}
