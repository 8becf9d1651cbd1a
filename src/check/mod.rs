//! The balance check of design.md §3: is the background an equilibrium, how
//! exactly, and would a scheme without well-balancing hold it?
//!
//! * Closed-form pressure (derived rotation, or an audit of given laws): the
//!   residual is built from exact symbolic derivatives and is *identically
//!   zero* when it simplifies to 0 or vanishes at random points in 256-bit
//!   arithmetic, in every piece of a piecewise residual (probabilistic
//!   identity testing, Schwartz 1980, J. ACM 27, 701); otherwise its largest
//!   value relative to the largest term of the balance at that point is
//!   reported with where it occurs (`closed`).
//! * Integrated closures: the balance in integral form from the anchor to
//!   each check point, q(s) − q(anchor) − ∫ f ds with q = ln ρ, P or ln P:
//!   the stored values against an independent composite Gauss–Legendre rule
//!   (20 points per piece, split at switch points), relative to the integral
//!   of the largest term of the integrand along the path (`integral`).
//! * Jumps: at every switch point of a piecewise law, the left and right
//!   limits of each quantity the balance differentiates (`jumps`). A jump
//!   there is not an equilibrium, unless the profile lists the law in
//!   `balance.intended_jumps`.
//! * Positivity of ρ, P, c² (and v_φ² for disks) over the domain.
//! * The discrete imbalance of the sampled data under second-order centred
//!   differences at the grid's resolution (what an unbalanced scheme sees).
//!
//! Owns: the verdicts; the report text lives in `report`. Does not own:
//! solving or grids.

mod closed;
mod column;
mod integral;
pub mod jumps;
mod report;
pub use report::position;

pub use jumps::Jump;

use crate::background::{Background, Shape};
use crate::closure::existence::{self, Extent};
use crate::closure::{self, ClosureError, Domain, Laws};
use crate::formula::Expr;
use crate::model::Model;

/// The largest relative residual accepted by default (`check --tolerance`).
pub const DEFAULT_TOLERANCE: f64 = 1e-10;

/// How the balance holds.
#[derive(Clone, Debug, PartialEq)]
pub enum Verdict {
    /// The residual is zero as a formula.
    IdenticallyZero {
        /// How that was established.
        how: String,
    },
    /// The residual is within the tolerance (integrated backgrounds, or
    /// laws that balance only approximately).
    ZeroToTolerance {
        /// Largest relative residual.
        max: f64,
        /// Where it occurs.
        at: f64,
    },
    /// The laws do not balance.
    NotEquilibrium {
        /// Largest relative residual.
        max: f64,
        /// Where it occurs.
        at: f64,
    },
}

/// The whole report.
#[derive(Clone, Debug, PartialEq)]
pub struct Report {
    /// The background coordinate name.
    pub coordinate: String,
    /// The verdict on the continuous balance between switch points.
    pub verdict: Verdict,
    /// Jumps at switch points in quantities the balance differentiates.
    pub jumps: Vec<Jump>,
    /// The residual formula, when closed form.
    pub residual_formula: Option<String>,
    /// Each quantity that must be positive (or, for v_φ², not negative):
    /// its minimum, where, and the intervals where it fails.
    pub positivity: Vec<Extent>,
    /// Where the state is no equilibrium, in words (from `positivity`).
    pub no_equilibrium: Vec<String>,
    /// Largest relative imbalance of second-order centred differences of
    /// the sampled state at the grid's cell centres, and where.
    pub discrete: Option<(f64, f64)>,
    /// The tolerance used.
    pub tolerance: f64,
    /// A disk integrated up its columns: both balances against the
    /// reference, and the surface-density normalisation, in words.
    pub column: Vec<String>,
}

impl Report {
    /// True when the balance holds (identically or to tolerance), nothing
    /// jumps that is not declared intended, and every positive quantity is
    /// positive.
    pub fn passed(&self) -> bool {
        !matches!(self.verdict, Verdict::NotEquilibrium { .. })
            && self.jumps.iter().all(|j| j.intended)
            && self.positivity.iter().all(Extent::ok)
    }
}

/// Run the check of the model's background over the domain. `centres` are
/// the background coordinates of the grid's cell centres along its radial or
/// vertical axis, for the discrete imbalance.
pub fn run(
    model: &Model,
    bg: &dyn Background,
    domain: &Domain,
    centres: &[f64],
    tolerance: f64,
) -> Result<Report, ClosureError> {
    let laws = Laws::build(model)?;
    let found = domain.switches(model);
    let switches: Vec<f64> = found.iter().map(|w| w.at).collect();
    let jumps = find_jumps(model, &laws, domain, &found, tolerance)?;
    let vertical = laws.vertical_residual(model);
    let mut column_lines = Vec::new();
    let (verdict, formula) = match (&laws.integrand, laws.residual(model)) {
        _ if laws.column.is_some() => {
            let cl = laws.column.as_ref().expect("matched");
            let c = column::column_form(model, cl, bg, domain, tolerance)?;
            column_lines = c.lines;
            (c.verdict, None)
        }
        (None, Some((res, terms))) if vertical.is_some() => {
            let (vres, vterms) = vertical.unwrap_or((Expr::num(0.0), Vec::new()));
            let height = domain.height.unwrap_or((0.0, 0.0));
            let list = [
                ("radial", &res, &terms[..]),
                ("vertical", &vres, &vterms[..]),
            ];
            let v = closed::closed_form_field(model, domain, height, &list, tolerance)?;
            (v, Some(format!("radial: {res}; vertical: {vres}")))
        }
        (None, Some((res, terms))) => {
            closed::closed_form(model, domain, &switches, (&res, &terms), tolerance)?
        }
        (Some(_), _) => {
            let v = integral::integral_form(model, &laws, bg, domain, &switches, tolerance)?;
            (v, None)
        }
        (None, None) => {
            return Err(ClosureError::Incomplete(
                "nothing to check: no pressure law".into(),
            ))
        }
    };
    let pts = domain.scan_points_with(&switches);
    let v2 = match (&laws.rotation_sq, model.shape) {
        (Some(v2), shape) if shape.is_disk() => Some(closure::compile(model, v2, "rotation")?),
        _ => None,
    };
    let v2_at = |x: f64| v2.as_ref().map_or(0.0, |p| p.eval(&[x]));
    let rotation: Option<&dyn Fn(f64) -> f64> = v2.as_ref().map(|_| &v2_at as _);
    let positivity = existence::survey(bg, rotation, &pts);
    let law = closure::rotation_law_name(model);
    let mut no_equilibrium = existence::failures(&positivity, model.coordinate(), law);
    if !no_equilibrium.is_empty() {
        if let Some(cause) = closure::root_cause(model, &positivity) {
            no_equilibrium.push(cause);
        }
    }
    let discrete = discrete_imbalance(model.shape, bg, centres);
    Ok(Report {
        coordinate: model.coordinate().to_string(),
        verdict,
        jumps,
        residual_formula: formula,
        positivity,
        no_equilibrium,
        discrete,
        tolerance,
        column: column_lines,
    })
}

/// The jumps of the quantities the balance differentiates at the switch
/// points inside the domain (and on the way to an anchor outside it, which
/// an integral crosses), each marked intended when one of the laws that
/// switch there is listed in `balance.intended_jumps`.
fn find_jumps(
    model: &Model,
    laws: &Laws,
    domain: &Domain,
    switches: &[closure::switches::Switch],
    tolerance: f64,
) -> Result<Vec<Jump>, ClosureError> {
    let programs = laws
        .watched
        .iter()
        .map(|(name, e)| Ok((name.as_str(), closure::compile(model, e, name)?)))
        .collect::<Result<Vec<_>, ClosureError>>()?;
    let evals: Vec<_> = programs
        .iter()
        .map(|(_, p)| move |x: f64| p.eval(&[x]))
        .collect();
    let quantities: Vec<(&str, &dyn Fn(f64) -> f64)> = programs
        .iter()
        .zip(&evals)
        .map(|((name, _), f)| (*name, f as &dyn Fn(f64) -> f64))
        .collect();
    let range = domain.range_with_anchor(model);
    let mut jumps = jumps::find(&quantities, switches, range, tolerance);
    for j in &mut jumps {
        j.intended = j.laws.iter().any(|l| model.intended_jumps.contains(l));
    }
    Ok(jumps)
}

/// Largest relative residual of the balance under second-order centred
/// differences at the cell centres: slab/sphere (P₊ − P₋)/(s₊ − s₋) + ρΦ_s,
/// disk ρv²/R − ρΦ_R − P_R (on the midplane of a stratified disk), each
/// relative to its largest term.
pub(crate) fn discrete_imbalance(
    shape: Shape,
    bg: &dyn Background,
    centres: &[f64],
) -> Option<(f64, f64)> {
    imbalance_of(shape, bg, centres, |v| v)
}

/// [`discrete_imbalance`] of the values rounded to single precision, as a
/// float32 file holds them (the centres themselves stay exact: grids are
/// written in double precision).
pub fn discrete_imbalance_single(
    shape: Shape,
    bg: &dyn Background,
    centres: &[f64],
) -> Option<(f64, f64)> {
    imbalance_of(shape, bg, centres, |v| f64::from(v as f32))
}

fn imbalance_of(
    shape: Shape,
    bg: &dyn Background,
    centres: &[f64],
    round: impl Fn(f64) -> f64,
) -> Option<(f64, f64)> {
    if centres.len() < 3 {
        return None;
    }
    let st: Vec<_> = centres
        .iter()
        .map(|&x| {
            let mut s = bg.on_line(x);
            s.pressure = round(s.pressure);
            s.potential = round(s.potential);
            s.density = round(s.density);
            for v in s.velocity.iter_mut() {
                *v = round(*v);
            }
            s
        })
        .collect();
    let (mut max, mut at) = (0.0f64, centres[0]);
    for i in 1..centres.len() - 1 {
        let ds = centres[i + 1] - centres[i - 1];
        let dp = (st[i + 1].pressure - st[i - 1].pressure) / ds;
        let dphi = (st[i + 1].potential - st[i - 1].potential) / ds;
        let rho = st[i].density;
        let cen = if shape.is_disk() {
            rho * st[i].rotation().powi(2) / centres[i]
        } else {
            0.0
        };
        let r = cen - rho * dphi - dp;
        let scale = cen.abs().max((rho * dphi).abs()).max(dp.abs());
        let rel = if scale > 0.0 {
            r.abs() / scale
        } else {
            r.abs()
        };
        // A value that is not a number is reported, not skipped as a zero.
        if rel > max || rel.is_nan() {
            max = rel;
            at = centres[i];
        }
    }
    Some((max, at))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::background::{Frame, State};

    /// An isothermal slab ρ = P = e^(−z), Φ = z (g = c² = 1), whose density
    /// is not a number at z = 0.5.
    struct Holed;
    impl Background for Holed {
        fn frame(&self) -> Frame {
            Frame::Slab
        }
        fn at(&self, x: &[f64]) -> State {
            let z = x[0];
            let rho = if (z - 0.5).abs() < 1e-12 {
                f64::NAN
            } else {
                (-z).exp()
            };
            State::at_rest(rho, (-z).exp(), z)
        }
    }

    #[test]
    fn discrete_imbalance_reports_a_value_that_is_not_a_number() {
        let centres: Vec<f64> = (0..11).map(|i| 0.1 * i as f64).collect();
        let (max, at) = discrete_imbalance(Shape::Slab, &Holed, &centres).unwrap();
        assert!(max.is_nan() && (at - 0.5).abs() < 1e-12, "{max} at {at}");
    }
}
