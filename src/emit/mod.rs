//! `stillpoint emit`: the background as source code — a self-contained
//! function in C99, Fortran or Python (NumPy) evaluating ρ, P, Φ, the
//! velocity and the gravitational and pressure-gradient accelerations at
//! any point of the frame's own coordinates, the profile's parameters baked
//! in as named constants.
//!
//! Owns: what is emitted (the closure's formulas, and for integrated
//! closures a piecewise Chebyshev interpolant of the integrated quantity,
//! verified against the solved background before anything is written) and
//! the refusals. Does not own: the formulas (the closure table and
//! [`crate::closure::accelerations`]), printing a formula (one walker,
//! [`crate::formula::code`]) or the file layouts of each language (`lang`).

pub mod chebyshev;
mod lang;

use crate::background::Background;
use crate::closure::{self, Integrated, Laws};
use crate::formula::{Cond, Expr, Func};
use crate::keys::Keyed;
use crate::model::Unknown;
use crate::perturb::rng::Stream;
use crate::profile::Loaded;
use chebyshev::Piece;

/// The name emitted formulas use for the interpolated integral (not an
/// identifier, so no parameter can take it).
pub(crate) const INTEGRAL: &str = "@integral";

/// Random points added to the check points of an interpolant.
pub const RANDOM_POINTS: usize = 4000;

/// Seed of the random check points (any fixed value: the check is
/// repeatable).
const SEED: u64 = 0x5711_1907;

/// A target language.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Lang {
    /// C99 (compiles as CUDA or HIP device code with `STILLPOINT_FN`).
    C,
    /// Fortran 2008.
    Fortran,
    /// Python 3 with NumPy.
    Python,
}

/// Why nothing could be emitted.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum EmitError {
    /// The profile's background cannot be written as code.
    #[error("{0}")]
    Refused(String),
    /// The interpolant did not reach its bound.
    #[error("{0}")]
    Bound(String),
}

/// The interpolant of an integrated closure, with its verification.
#[derive(Clone, Debug)]
pub struct Interpolant {
    /// What is interpolated (`ln P`), for comments.
    pub quantity: &'static str,
    /// The field whose relative error is bounded (`P`).
    pub field: &'static str,
    /// Pieces in order; piece i spans breaks[i]..breaks[i+1].
    pub pieces: Vec<Piece>,
    /// The bound asked for.
    pub target: f64,
    /// The largest relative error measured.
    pub achieved: f64,
    /// Where it was measured: all points, of which random.
    pub points: usize,
    pub random: usize,
}

impl Interpolant {
    /// The piece boundaries.
    pub fn breaks(&self) -> Vec<f64> {
        let mut b: Vec<f64> = self.pieces.iter().map(|p| p.a).collect();
        b.extend(self.pieces.last().map(|p| p.b));
        b
    }

    /// The piece that holds `s` (found as the emitted code finds it: by
    /// bisection of the breaks, the right piece at an inner break), or None
    /// outside the range.
    pub fn piece(&self, s: f64) -> Option<&Piece> {
        let breaks = self.breaks();
        let n = self.pieces.len();
        if !(s >= breaks[0] && s <= breaks[n]) {
            return None;
        }
        let (mut lo, mut hi) = (0usize, n);
        while hi - lo > 1 {
            let m = (lo + hi) / 2;
            if s < breaks[m] {
                hi = m;
            } else {
                lo = m;
            }
        }
        Some(&self.pieces[lo])
    }

    /// The interpolated quantity at `s` (NaN outside the range).
    pub fn eval(&self, s: f64) -> f64 {
        self.piece(s).map_or(f64::NAN, |p| p.eval(s))
    }
}

/// Everything a language writer needs.
#[derive(Clone, Debug)]
pub struct Emission {
    /// Identifier stem (`stillpoint_quiet_slab`).
    pub ident: String,
    /// Input coordinates, in order.
    pub coords: Vec<&'static str>,
    /// The basis of the vectors (`R`, `phi`, `z`).
    pub basis: [&'static str; 3],
    /// ρ, P, Φ.
    pub density: Expr,
    pub pressure: Expr,
    pub potential: Expr,
    /// Velocity, gravity −∇Φ and −∇P/ρ, in the basis.
    pub velocity: [Expr; 3],
    pub gravity: [Expr; 3],
    pub pressure_accel: [Expr; 3],
    /// Parameters the formulas use, with their values.
    pub constants: Vec<(String, f64)>,
    /// The interpolant of an integrated closure.
    pub integral: Option<Interpolant>,
    /// The manufactured force density of an audit (`solve_for: nothing`),
    /// in the basis (see [`crate::forcing`]).
    pub forcing: Option<[Expr; 3]>,
    /// The comment block, a line each (no comment markers).
    pub comment: Vec<String>,
}

/// The source text and what to tell the user.
#[derive(Clone, Debug)]
pub struct Emitted {
    pub code: String,
    /// Lines for the terminal.
    pub summary: Vec<String>,
    /// The emission itself (for tests and callers).
    pub emission: Emission,
}

/// Emit the profile's background in `lang`; an integrated closure's
/// interpolant is verified to relative error `tolerance` first.
pub fn emit(
    loaded: &Loaded,
    lang: Lang,
    tolerance: f64,
) -> Result<Emitted, crate::pipeline::Error> {
    let e = prepare(loaded, tolerance)?;
    let code = lang::write(&e, lang).map_err(crate::pipeline::Error::Usage)?;
    let mut summary = vec![format!(
        "{}: {} of ρ, P, Φ, velocity, gravity and pressure-gradient acceleration in ({})",
        loaded.model.name,
        match lang {
            Lang::C => "C99 function",
            Lang::Fortran => "Fortran module",
            Lang::Python => "Python (NumPy) function",
        },
        e.coords.join(", ")
    )];
    match &e.integral {
        None => summary.push("closed form: every field is a formula of the coordinates".into()),
        Some(i) => summary.push(format!(
            "{} as a piecewise Chebyshev interpolant on [{}, {}]: {} piece(s); largest relative \
             error of {} {:.2e} at {} points ({} random), bound {:.0e} verified",
            i.quantity,
            i.breaks()[0],
            i.breaks()[i.pieces.len()],
            i.pieces.len(),
            i.field,
            i.achieved,
            i.points,
            i.random,
            i.target
        )),
    }
    if !loaded.perturbations.is_empty() {
        summary.push(
            "note: the profile's perturbations are not part of the background and are left out"
                .into(),
        );
    }
    if loaded.model.unknown == Unknown::Nothing {
        summary.push(
            "caution: the profile audits its laws (solve_for: nothing): nothing was solved, so \
             the emitted state need not be in balance (`stillpoint check` shows its residual)"
                .into(),
        );
    }
    Ok(Emitted {
        code,
        summary,
        emission: e,
    })
}

fn refused(loaded: &Loaded, why: String) -> crate::pipeline::Error {
    crate::pipeline::Error::Usage(format!("{}: {}", loaded.source, EmitError::Refused(why)))
}

/// Collect what is emitted.
pub fn prepare(loaded: &Loaded, tolerance: f64) -> Result<Emission, crate::pipeline::Error> {
    let m = &loaded.model;
    if m.torus.is_some() {
        return Err(refused(
            loaded,
            "balance.torus: a torus is built by its own solver (edges, floor), not from the \
             closure's formulas, and cannot be emitted as code yet"
                .into(),
        ));
    }
    let (bg, domain) = crate::pipeline::solve(loaded)?;
    let laws = Laws::build(m).map_err(|e| crate::pipeline::Error::closure(loaded, e))?;
    let kind = closure::closure_of(m)
        .map_err(|e| crate::pipeline::Error::closure(loaded, e))?
        .integrates;
    let vars = m.shape.variables();
    let s = vars[0];
    let q = Expr::name(INTEGRAL);
    let nan = || Expr::num(f64::NAN);
    let c2 = laws.sound_speed_sq.clone();
    let times = |a: Expr, b: Option<Expr>| b.map_or_else(nan, |b| (a * b).simplify());
    let (density, pressure) = match kind {
        None => {
            let rho = laws.density.clone().unwrap_or_else(nan);
            let p = match (&laws.pressure, &c2) {
                (Some(p), _) => p.clone(),
                (None, Some(c2)) => (c2.clone() * rho.clone()).simplify(),
                (None, None) => nan(),
            };
            (rho, p)
        }
        Some(Integrated::LogDensity) => {
            let rho = Expr::call(Func::Exp, vec![q]);
            (rho.clone(), times(rho, c2))
        }
        Some(Integrated::Pressure) => (laws.density.clone().unwrap_or_else(nan), q),
        Some(Integrated::LogPressure) => {
            let p = Expr::call(Func::Exp, vec![q]);
            let rho = c2.map_or_else(nan, |c2| p.clone() / c2);
            (rho, p)
        }
    };
    let mut potential = laws.potential.clone();
    if let Some(
        closure::axis::Approach::Regular { value }
        | closure::axis::Approach::SingularGradient { value },
    ) = closure::axis_approach(m, &domain)
    {
        // The law is 0/0 at the axis or centre: its limit there, as the
        // background gives it.
        potential = Expr::If(
            Box::new(Cond::Cmp(
                crate::formula::CmpOp::Le,
                Expr::name(s),
                Expr::num(domain.lo),
            )),
            Box::new(Expr::num(value)),
            Box::new(potential),
        );
    }
    let zero = || Expr::num(0.0);
    let [g, a] = closure::accelerations(&laws, kind, s);
    let mut velocity = [zero(), zero(), zero()];
    if m.shape.is_disk() {
        velocity[1] = match (&laws.rotation, &laws.rotation_sq) {
            (Some(v), _) => v.clone(),
            (None, Some(v2)) => Expr::call(Func::Sqrt, vec![v2.clone()]),
            (None, None) => nan(),
        };
    }
    let mut gravity = [g, zero(), zero()];
    let mut pressure_accel = [a, zero(), zero()];
    if let Some([gz, az]) = closure::vertical_accelerations(&laws, m.shape) {
        // The vertical components by exact derivatives, the formulas the
        // background itself evaluates.
        gravity[2] = gz;
        pressure_accel[2] = az;
    }
    let integral = match kind {
        None => None,
        Some(kind) => Some(interpolate(loaded, &bg, &domain, kind, tolerance)?),
    };
    let forcing =
        crate::forcing::formulas(m).map_err(|e| crate::pipeline::Error::closure(loaded, e))?;
    let mut names = std::collections::BTreeSet::new();
    for e in [&density, &pressure, &potential]
        .into_iter()
        .chain(&velocity)
        .chain(&gravity)
        .chain(&pressure_accel)
        .chain(forcing.iter().flatten())
    {
        names.extend(e.names());
    }
    let mut constants = Vec::new();
    for n in names {
        if vars.contains(&n.as_str()) || n == INTEGRAL {
            continue;
        }
        let v = m.lookup(&n).ok_or_else(|| {
            refused(
                loaded,
                format!("the formulas use `{n}`, which is no parameter of the profile"),
            )
        })?;
        constants.push((n, v));
    }
    let ident = format!(
        "stillpoint_{}",
        m.name
            .chars()
            .map(|c| if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            })
            .collect::<String>()
    );
    let mut e = Emission {
        ident,
        coords: vars.to_vec(),
        basis: m.shape.frame().basis(),
        density,
        pressure,
        potential,
        velocity,
        gravity,
        pressure_accel,
        constants,
        integral,
        forcing,
        comment: Vec::new(),
    };
    e.comment = comment(loaded, &e, &domain);
    Ok(e)
}

/// What the interpolated quantity is, and its field.
fn quantity(kind: Integrated) -> (&'static str, &'static str) {
    match kind {
        Integrated::LogDensity => ("ln rho", "rho"),
        Integrated::Pressure => ("P", "P"),
        Integrated::LogPressure => ("ln P", "P"),
    }
}

/// The field from the interpolated quantity.
fn field(kind: Integrated, q: f64) -> f64 {
    match kind {
        Integrated::Pressure => q,
        _ => q.exp(),
    }
}

/// The state's own value of the bounded field.
fn own_field(kind: Integrated, st: &crate::background::State) -> f64 {
    match kind {
        Integrated::LogDensity => st.density,
        _ => st.pressure,
    }
}

/// Fit the integrated quantity between the switch points (and the anchor)
/// and verify it: at every piece's check points and at [`RANDOM_POINTS`]
/// random points, against the solved background. The fit aims at a
/// hundredth of the bound first; a bound that the random points break is
/// tightened (twice) before the interpolant is refused.
fn interpolate(
    loaded: &Loaded,
    bg: &closure::Solved,
    domain: &closure::Domain,
    kind: Integrated,
    target: f64,
) -> Result<Interpolant, crate::pipeline::Error> {
    let m = &loaded.model;
    let (lo, hi) = domain.range_with_anchor(m);
    let at = |s: f64| bg.on_line(s);
    let f = |s: f64| kind.of(&at(s));
    let rel = |fit: f64, exact: f64| {
        let (a, b) = (field(kind, fit), field(kind, exact));
        ((a - b) / b).abs()
    };
    let mut cuts: Vec<f64> = domain.switches(m).iter().map(|w| w.at).collect();
    cuts.extend(m.anchor.map(|a| a.at));
    cuts.retain(|c| *c > lo && *c < hi);
    cuts.push(lo);
    cuts.push(hi);
    cuts.sort_by(f64::total_cmp);
    cuts.dedup_by(|a, b| (*a - *b).abs() <= 1e-14 * a.abs().max(b.abs()));
    let (quantity, field_name) = quantity(kind);
    let stream = Stream::new(SEED, 0);
    let random: Vec<f64> = (0..RANDOM_POINTS)
        .map(|i| lo + (hi - lo) * (stream.bits(i as u64, 0) >> 11) as f64 / (1u64 << 53) as f64)
        .collect();
    // A margin first (a hundredth of the bound, where the background's own
    // accuracy allows it), then the bound itself, then tighter when the
    // random points break it.
    let tries = [
        (target * 0.01).max(target.min(1e-14)),
        target,
        target * 0.1,
        target * 0.01,
    ];
    for (attempt, fit_target) in tries.into_iter().enumerate() {
        let mut pieces = Vec::new();
        let mut margin_failed = false;
        for w in cuts.windows(2) {
            let fitted = chebyshev::fit_to(&f, &rel, w[0], w[1], fit_target, &mut pieces);
            if attempt == 0 && fitted.is_err() {
                margin_failed = true;
                break;
            }
            fitted.map_err(|(a, b, e)| {
                crate::pipeline::Error::Usage(format!(
                    "{}: {}",
                    loaded.source,
                    EmitError::Bound(format!(
                        "{quantity} cannot be interpolated to a relative error of {target:e} \
                             on [{}, {}] (best {e:.2e}) with at most {} pieces none shorter \
                             than 1e-9 of the range; ask for a looser bound with --tolerance",
                        closure_show(a),
                        closure_show(b),
                        chebyshev::MAX_PIECES
                    ))
                ))
            })?;
        }
        if margin_failed {
            continue;
        }
        let mut interp = Interpolant {
            quantity,
            field: field_name,
            pieces,
            target,
            achieved: 0.0,
            points: 0,
            random: random.len(),
        };
        let mut points: Vec<f64> = interp
            .pieces
            .iter()
            .flat_map(|p| chebyshev::check_points(p.a, p.b, p.coefficients.len() - 1))
            .collect();
        points.extend(&random);
        let worst = points
            .iter()
            .map(|&s| {
                let exact = own_field(kind, &at(s));
                ((field(kind, interp.eval(s)) - exact) / exact).abs()
            })
            .fold(
                0.0f64,
                |a, b| if b.is_nan() { f64::INFINITY } else { a.max(b) },
            );
        interp.achieved = worst;
        interp.points = points.len();
        if worst <= target {
            return Ok(interp);
        }
    }
    Err(crate::pipeline::Error::Usage(format!(
        "{}: {}",
        loaded.source,
        EmitError::Bound(format!(
            "{quantity}: the interpolant does not hold a relative error of {target:e} at the \
             random check points; ask for a looser bound with --tolerance"
        ))
    )))
}

fn closure_show(x: f64) -> String {
    format!("{x:.6e}")
}

/// The comment block: provenance, parameters, formulas, validity.
fn comment(loaded: &Loaded, e: &Emission, domain: &closure::Domain) -> Vec<String> {
    let m = &loaded.model;
    let mut c = vec![
        format!(
            "Background of the profile `{}` ({}), written by stillpoint {} (`stillpoint emit`).",
            m.name,
            loaded.source,
            env!("CARGO_PKG_VERSION")
        ),
        m.about.clone(),
        format!(
            "Balance: {}, solved for {}. Inputs: {} (the frame's own coordinates); vectors in \
             the basis ({}).",
            crate::pipeline::balance_description(m),
            m.unknown.key(),
            e.coords.join(", "),
            if e.basis[1] == "-" {
                format!("e_{}; components 2 and 3 are 0", e.basis[0])
            } else {
                format!("e_{}, e_{}, e_{}", e.basis[0], e.basis[1], e.basis[2])
            }
        ),
        if m.vertically_integrated {
            "Vertically integrated disk: density is the surface density Sigma and pressure \
             the integral of P over z."
                .into()
        } else {
            String::new()
        },
        String::new(),
        "Parameters (after overrides), as given and as baked in:".into(),
    ];
    for (n, v) in &m.parameters {
        let text = m
            .parameter_text
            .iter()
            .find(|(k, _)| k == n)
            .map(|(_, t)| t.as_str())
            .unwrap_or("");
        c.push(format!("  {n} = {text}  ->  {v:?}"));
    }
    for (n, v) in &e.constants {
        if !m.parameters.iter().any(|(k, _)| k == n) {
            c.push(format!(
                "  {n} = {v:?}  (built-in constant, {} units)",
                m.units.key()
            ));
        }
    }
    c.push(String::new());
    c.push("Formulas (stillpoint's text form):".into());
    let show = |x: &Expr| x.to_string().replace(INTEGRAL, "Q");
    let mut rows: Vec<(String, &Expr)> = vec![
        ("rho".into(), &e.density),
        ("P".into(), &e.pressure),
        ("Phi".into(), &e.potential),
    ];
    for (what, v) in [
        ("v", &e.velocity),
        ("g", &e.gravity),
        ("a_P", &e.pressure_accel),
    ] {
        for (k, x) in v.iter().enumerate() {
            rows.push((format!("{what}_{}", e.basis[k]), x));
        }
    }
    for (n, x) in rows {
        if e.basis.contains(&"-") && n.ends_with("_-") {
            continue;
        }
        c.push(format!("  {n} = {}", show(x)));
    }
    c.push(
        "  (g = -grad Phi, a_P = -(1/rho) grad P; NaN where the closure has no such law)".into(),
    );
    match &e.integral {
        None => c.push(format!(
            "Closed form: valid wherever the laws are; the profile's grid spans {} in [{}, {}].",
            e.coords[0], domain.lo, domain.hi
        )),
        Some(i) => {
            let b = i.breaks();
            c.push(format!(
                "Q = {} is {} integrated from the anchor, emitted as a piecewise Chebyshev \
                 interpolant",
                i.quantity,
                match i.quantity {
                    "P" => "dP/ds",
                    "ln P" => "d ln P/ds",
                    _ => "d ln rho/ds",
                }
            ));
            c.push(format!(
                "  on [{}, {}] ({} piece(s), Clenshaw evaluation; Trefethen 2013, ATAP, ch. 3); \
                 NaN outside.",
                b[0],
                b[i.pieces.len()],
                i.pieces.len()
            ));
            c.push(format!(
                "  Largest relative error of {}: {:.2e}, measured against stillpoint's own \
                 background at {} points ({} random); bound {:.0e}.",
                i.field, i.achieved, i.points, i.random, i.target
            ));
        }
    }
    if !loaded.perturbations.is_empty() {
        c.push("The profile's perturbations are not part of the background: left out.".into());
    }
    if m.unknown == Unknown::Nothing {
        c.push("Caution: an audit (solve_for: nothing); this state need not be in balance.".into());
    }
    if let Some(f) = &e.forcing {
        c.push(
            "Manufactured forcing (Roache 2002, J. Fluids Eng. 124, 4): the force density f that \
             makes this state steady, 0 = -grad P - rho grad Phi + rho v_phi^2/R e_R + f; add it \
             to the momentum equation (the energy source is 0: v is perpendicular to f):"
                .into(),
        );
        for (k, x) in f.iter().enumerate() {
            if e.basis[k] != "-" {
                c.push(format!("  f_{} = {}", e.basis[k], show(x)));
            }
        }
    }
    c.dedup_by(|a, b| a.is_empty() && b.is_empty());
    c
}
