//! Manufactured forcing: for laws that do not balance (`solve_for:
//! nothing`), the force density f that makes the given state steady — the
//! method of manufactured solutions (Roache 2002, *Code Verification by the
//! Method of Manufactured Solutions*, J. Fluids Eng. 124, 4), so any state
//! a user invents becomes a steady benchmark for their scheme.
//!
//! With f added to the momentum equation, the steady state obeys
//! 0 = −∇P − ρ∇Φ + ρ v_φ²/R e_R + f, so, from exact symbolic derivatives of
//! the laws,
//!
//! * slab and sphere: f_s = dP/ds + ρ dΦ/ds;
//! * disk (midplane or stratified): f_R = ∂P/∂R + ρ ∂Φ/∂R − ρ v_φ²/R, and
//!   for a stratified disk f_z = ∂P/∂z + ρ ∂Φ/∂z.
//!
//! The energy source is zero and not written: the velocity is v_φ e_φ (or
//! zero) and the state is axisymmetric, so (E + P)v has no divergence,
//! ρ v·∇Φ = 0 and the work of the forcing v·f = 0 (f has no φ component).
//!
//! Owns: the forcing formulas, their evaluation as a [`Background`] whose
//! velocity is the force density (so the sampler takes it under every rule
//! and rotates it into the grid's components), and its record. Does not
//! own: the laws, sampling or files.

use crate::background::{Background, Frame, Shape, State};
use crate::closure::{ClosureError, Laws};
use crate::formula::{Expr, Program};
use crate::model::{Model, Unknown};

/// The group of the file holding the forcing.
pub const GROUP: &str = "forcing";

/// The forcing of a model: its components in the frame's basis.
#[derive(Clone, Debug)]
pub struct Forcing {
    frame: Frame,
    /// f in the frame's basis ((e_s), (e_r, e_θ, e_φ), (e_R, e_φ, e_z)).
    pub components: [Expr; 3],
    programs: [Option<Program>; 3],
    /// Frame coordinates the laws take (1, or 2 for a stratified disk).
    vars: usize,
}

/// The force density formulas in the frame's basis, None unless the model
/// audits its laws (`solve_for: nothing`).
pub fn formulas(model: &Model) -> Result<Option<[Expr; 3]>, ClosureError> {
    if model.unknown != Unknown::Nothing || model.torus.is_some() {
        return Ok(None);
    }
    let laws = Laws::build(model)?;
    let (Some(rho), Some(p)) = (laws.density.clone(), laws.pressure.clone()) else {
        return Ok(None);
    };
    let s = model.coordinate();
    let along = |c: &str| (p.diff(c) + rho.clone() * laws.potential.diff(c)).simplify();
    let zero = || Expr::num(0.0);
    Ok(Some(match model.shape {
        Shape::Slab | Shape::Spherical => [along(s), zero(), zero()],
        Shape::DiskMidplane | Shape::StratifiedDisk => {
            let Some(v2) = laws.rotation_sq.clone() else {
                return Ok(None);
            };
            let f_r = (along(s) - rho.clone() * v2 / Expr::name(s)).simplify();
            let f_z = if model.shape == Shape::StratifiedDisk {
                along("z")
            } else {
                zero()
            };
            [f_r, zero(), f_z]
        }
    }))
}

impl Forcing {
    /// The forcing of the model, None unless it audits its laws.
    pub fn of(model: &Model) -> Result<Option<Forcing>, ClosureError> {
        let Some(components) = formulas(model)? else {
            return Ok(None);
        };
        let mut programs: [Option<Program>; 3] = [None, None, None];
        for (k, e) in components.iter().enumerate() {
            if e.as_number().is_none_or(|v| v != 0.0) {
                programs[k] = Some(crate::closure::compile(model, e, "forcing")?);
            }
        }
        Ok(Some(Forcing {
            frame: model.shape.frame(),
            components,
            programs,
            vars: model.shape.variables().len(),
        }))
    }

    /// The record written into files: each component's formula, the
    /// basis, what it means and the energy source.
    pub fn json(&self) -> String {
        let basis = self.frame.basis();
        let mut comps = serde_json::Map::new();
        for (k, e) in self.components.iter().enumerate() {
            if basis[k] != "-" {
                comps.insert(basis[k].to_string(), e.to_string().into());
            }
        }
        serde_json::json!({
            "meaning": "force density f added to the momentum equation that makes the given \
                        state steady: 0 = -grad P - rho grad Phi + rho v_phi^2/R e_R + f \
                        (method of manufactured solutions, Roache 2002)",
            "formulas": comps,
            "energy_source": "0 (not written): v = v_phi e_phi is perpendicular to f and to \
                              grad Phi, and the axisymmetric flux (E+P)v has no divergence",
        })
        .to_string()
    }
}

impl Background for Forcing {
    fn frame(&self) -> Frame {
        self.frame
    }

    /// Density and pressure 1, the force density as the velocity (so cell
    /// averages of it are plain volume averages).
    fn at(&self, x: &[f64]) -> State {
        let mut s = State::at_rest(1.0, 1.0, 0.0);
        let args: Vec<f64> = match self.vars {
            1 => vec![x[0]],
            _ => vec![x[0], x.get(1).copied().unwrap_or(0.0)],
        };
        for (k, p) in self.programs.iter().enumerate() {
            s.velocity[k] = p.as_ref().map_or(0.0, |p| p.eval(&args));
        }
        s
    }
}
