//! Fields written only on request (`output.fields`): the accelerations a
//! well-balanced scheme subtracts and the diagnostic fields, computed at the
//! same points as every other field and sampled by the same rule.
//!
//! Owns: the catalogue of these quantities (names, dimensions, what each
//! needs), the formulas of those that take derivatives of the rotation law
//! (compiled once into one block program over the frame's coordinates) and
//! their values over a block of points. Does not own the background, the
//! loop over cells or the choice of which are requested (the profile's
//! `output.fields`, read by the pipeline).
//!
//! | field | value at a point | needs |
//! |---|---|---|
//! | `gravity_<c>` | −∇Φ, grid components | the background's accelerations |
//! | `pressure_acceleration_<c>` | −(1/ρ)∇P, grid components | the same |
//! | `vorticity_<c>` | ∇×v = −∂v_φ/∂z e_R + (1/R) ∂(R v_φ)/∂R e_z | v_φ(R, z) as a formula |
//! | `specific_angular_momentum` | ℓ = R v_φ | an axisymmetric frame |
//! | `epicyclic_frequency_sq` | κ² = R⁻³ ∂(R⁴Ω²)/∂R = 2v_φ²/R² + (1/R) ∂v_φ²/∂R | v_φ² as a formula |
//! | `bernoulli` | ½\|v\|² + γ/(γ−1) P/ρ + Φ | γ > 1 |
//! | `entropy` | ln(P ρ^(−γ)), s/c_v up to a constant | — |
//! | `mach_number` | \|v\|/√(P/ρ) (the isothermal sound speed of the file) | — |
//!
//! Derivatives are exact (symbolic, [`Expr::diff`]), never finite
//! differences. On a grid in the plane of the disk (`[R]`, `[R, phi]`,
//! `[x, y]`) the vorticity also gets its component across the plane,
//! `vorticity_z`, which the grid's own components do not hold.

use super::slots::Failure;
use crate::background::{Frame, StateBlock, LANES};
use crate::fields::{FieldSpec, Placement};
use crate::formula::{Expr, Kernel};
use crate::grid::{Coord, Embedding};
use crate::units::Dim;

/// A quantity that is sampled only on request.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Quantity {
    /// −∇Φ.
    Gravity,
    /// −(1/ρ)∇P.
    PressureAcceleration,
    /// ∇×v.
    Vorticity,
    /// ℓ = R v_φ.
    AngularMomentum,
    /// κ².
    EpicyclicSq,
    /// ½|v|² + γ/(γ−1) P/ρ + Φ.
    Bernoulli,
    /// ln(P ρ^(−γ)).
    Entropy,
    /// |v|/√(P/ρ).
    Mach,
}

impl Quantity {
    /// Every quantity, in file order.
    pub const ALL: [Quantity; 8] = [
        Quantity::Gravity,
        Quantity::PressureAcceleration,
        Quantity::Vorticity,
        Quantity::AngularMomentum,
        Quantity::EpicyclicSq,
        Quantity::Bernoulli,
        Quantity::Entropy,
        Quantity::Mach,
    ];

    /// The field name (vectors: the prefix before `_<component>`).
    pub fn name(self) -> &'static str {
        match self {
            Quantity::Gravity => "gravity",
            Quantity::PressureAcceleration => "pressure_acceleration",
            Quantity::Vorticity => "vorticity",
            Quantity::AngularMomentum => "specific_angular_momentum",
            Quantity::EpicyclicSq => "epicyclic_frequency_sq",
            Quantity::Bernoulli => "bernoulli",
            Quantity::Entropy => "entropy",
            Quantity::Mach => "mach_number",
        }
    }

    /// Whether it is a vector (one field per component).
    pub fn is_vector(self) -> bool {
        matches!(
            self,
            Quantity::Gravity | Quantity::PressureAcceleration | Quantity::Vorticity
        )
    }

    fn dim(self) -> Dim {
        match self {
            Quantity::Gravity | Quantity::PressureAcceleration => Dim::new(1, 0, -2, 0),
            Quantity::Vorticity => Dim::FREQUENCY,
            Quantity::AngularMomentum => Dim::new(2, 0, -1, 0),
            Quantity::EpicyclicSq => Dim::new(0, 0, -2, 0),
            Quantity::Bernoulli => Dim::VELOCITY_SQ,
            Quantity::Entropy | Quantity::Mach => Dim::NONE,
        }
    }

    /// Whether the quantity needs the rotation about the z axis.
    fn needs_rotation(self) -> bool {
        matches!(
            self,
            Quantity::Vorticity | Quantity::AngularMomentum | Quantity::EpicyclicSq
        )
    }

    /// Whether it needs a formula of v_φ (derivatives).
    fn needs_formula(self) -> bool {
        matches!(self, Quantity::Vorticity | Quantity::EpicyclicSq)
    }
}

/// Why a requested quantity cannot be sampled for this build.
#[derive(Clone, Debug, PartialEq)]
pub struct Refusal {
    /// The quantity.
    pub quantity: Quantity,
    /// Why, and what to do instead.
    pub why: String,
}

/// The field names of `q` on a grid with velocity components `comps` in
/// `frame`.
pub fn component_names(q: Quantity, frame: Frame, comps: &[Coord]) -> Vec<String> {
    if !q.is_vector() {
        return vec![q.name().to_string()];
    }
    let mut names: Vec<String> = comps
        .iter()
        .map(|c| format!("{}_{}", q.name(), c.name()))
        .collect();
    if across_plane(q, frame, comps) {
        names.push(format!("{}_z", q.name()));
    }
    names
}

/// Whether `q` gets a `_z` component the grid's components lack: the
/// vorticity of a disk on a grid in its plane.
fn across_plane(q: Quantity, frame: Frame, comps: &[Coord]) -> bool {
    q == Quantity::Vorticity
        && frame == Frame::Axisymmetric
        && !comps.iter().any(|c| matches!(c, Coord::Z | Coord::Theta))
}

/// Every optional field name a grid could have (for the error that lists
/// the fields of a build).
pub fn optional_names(frame: Frame, comps: &[Coord]) -> Vec<String> {
    Quantity::ALL
        .iter()
        .flat_map(|q| component_names(*q, frame, comps))
        .collect()
}

/// The quantities requested by a list of field names: those with at least
/// one of their fields in `wanted`, in file order.
pub fn requested(wanted: &[String], frame: Frame, comps: &[Coord]) -> Vec<Quantity> {
    Quantity::ALL
        .iter()
        .copied()
        .filter(|q| {
            component_names(*q, frame, comps)
                .iter()
                .any(|n| wanted.contains(n))
        })
        .collect()
}

/// The requested quantities of one build, ready to be sampled.
pub struct Extras {
    quantities: Vec<Quantity>,
    frame: Frame,
    gamma: f64,
    /// ω_R, ω_z and κ² over the frame's coordinates (R, z), when asked for.
    kernel: Option<Kernel>,
}

/// Buffers one thread reuses.
pub(super) struct Buffers {
    ws: crate::formula::Workspace,
    outs: Vec<Vec<f64>>,
    frame_vec: [Vec<f64>; 3],
    grid_vec: Vec<Vec<f64>>,
}

impl Extras {
    /// Prepare `quantities` for a background in `frame` with adiabatic index
    /// `gamma`. `rotation` is v_φ(R, z) as a formula (None when the
    /// background has none in closed form: `why_not` says why), `lookup`
    /// gives parameter values. Refuses what cannot be computed exactly.
    pub fn new(
        quantities: Vec<Quantity>,
        frame: Frame,
        gamma: f64,
        rotation: Result<Expr, String>,
        lookup: &dyn Fn(&str) -> Option<f64>,
    ) -> Result<Extras, Refusal> {
        let refuse = |q: Quantity, why: String| Refusal { quantity: q, why };
        let mut list: Vec<(&str, Expr)> = Vec::new();
        for &q in &quantities {
            if q.needs_rotation() && frame != Frame::Axisymmetric {
                return Err(refuse(
                    q,
                    "this background is at rest (a slab or a sphere): there is no rotation \
                     about an axis to take it from; ask for it with a disk or a torus"
                        .into(),
                ));
            }
            if q == Quantity::Bernoulli && crate::physics::is_isothermal(gamma) {
                return Err(refuse(
                    q,
                    "the Bernoulli function ½|v|² + γ/(γ−1) P/ρ + Φ needs gas.gamma > 1 \
                     (an isothermal gas, γ = 1, has no enthalpy of that form)"
                        .into(),
                ));
            }
            if !q.needs_formula() {
                continue;
            }
            let v = rotation.clone().map_err(|why| refuse(q, why))?;
            let r = Expr::name("R");
            match q {
                Quantity::Vorticity => {
                    list.push(("w_R", (-v.diff("z")).simplify()));
                    list.push(("w_z", (v.diff("R") + v.clone() / r).simplify()));
                }
                _ => {
                    let v2 = (v.clone() * v).simplify();
                    let k2 =
                        Expr::num(2.0) * v2.clone() / (r.clone() * r.clone()) + v2.diff("R") / r;
                    list.push(("k2", k2.simplify()));
                }
            }
        }
        let kernel = if list.is_empty() {
            None
        } else {
            let refs: Vec<(&str, &Expr)> = list.iter().map(|(n, e)| (*n, e)).collect();
            Some(
                Kernel::compile(&refs, &["R", "z"], lookup).map_err(|e| Refusal {
                    quantity: Quantity::Vorticity,
                    why: format!("the derivatives of the rotation law do not compile: {e}"),
                })?,
            )
        };
        Ok(Extras {
            quantities,
            frame,
            gamma,
            kernel,
        })
    }

    /// Whether nothing is requested.
    pub fn is_empty(&self) -> bool {
        self.quantities.is_empty()
    }

    /// Whether the background's accelerations are needed.
    pub(super) fn needs_accelerations(&self) -> bool {
        self.quantities
            .iter()
            .any(|q| matches!(q, Quantity::Gravity | Quantity::PressureAcceleration))
    }

    /// The fields, in order, each with its slot offset from the first.
    pub(super) fn specs(&self, comps: &[Coord], placement: &Placement) -> Vec<FieldSpec> {
        self.quantities
            .iter()
            .flat_map(|q| {
                component_names(*q, self.frame, comps)
                    .into_iter()
                    .map(|name| FieldSpec {
                        name,
                        dim: q.dim(),
                        placement: placement.clone(),
                    })
            })
            .collect()
    }

    pub(super) fn buffers(&self, ncomp: usize) -> Buffers {
        let lanes = |k: usize| (0..k).map(|_| vec![0.0; LANES]).collect::<Vec<_>>();
        Buffers {
            ws: self
                .kernel
                .as_ref()
                .map_or_else(crate::formula::Workspace::new, Kernel::workspace),
            outs: lanes(self.kernel.as_ref().map_or(0, |k| k.outputs().len())),
            frame_vec: [vec![0.0; LANES], vec![0.0; LANES], vec![0.0; LANES]],
            grid_vec: lanes(ncomp),
        }
    }

    /// The values of `n` points into `values[k][..n]`, one slot per field
    /// of [`Extras::specs`]: `grid` and `frame` are the points' coordinates,
    /// `st` the background's states there (accelerations filled when
    /// [`Extras::needs_accelerations`]). A value that is not finite is
    /// listed in `bad` (merged, in lane order).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn fill(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        st: &StateBlock,
        n: usize,
        embed: &Embedding,
        b: &mut Buffers,
        values: &mut [Vec<f64>],
        bad: &mut Vec<(usize, Failure)>,
    ) {
        if let Some(k) = &self.kernel {
            let rz: Vec<&[f64]> = frame.iter().map(|c| &c[..n]).collect();
            let mut outs: Vec<&mut [f64]> = b.outs.iter_mut().map(|o| &mut o[..n]).collect();
            k.run(&rz, &mut outs, &mut b.ws);
        }
        let comps = embed.components();
        let nc = comps.len();
        let mut slot = 0;
        let mut kernel_out = 0;
        let g = self.gamma;
        for &q in &self.quantities {
            let from_frame = |b: &mut Buffers, v: &[Vec<f64>; 3], values: &mut [Vec<f64>]| {
                embed.project(grid, frame, v, n, &mut b.grid_vec);
                for c in 0..nc {
                    values[slot + c][..n].copy_from_slice(&b.grid_vec[c][..n]);
                }
            };
            match q {
                Quantity::Gravity => from_frame(b, &st.gravity, values),
                Quantity::PressureAcceleration => from_frame(b, &st.pressure_accel, values),
                Quantity::Vorticity => {
                    let (w_r, w_z) = (kernel_out, kernel_out + 1);
                    kernel_out += 2;
                    let mut fv = std::mem::take(&mut b.frame_vec);
                    fv[0][..n].copy_from_slice(&b.outs[w_r][..n]);
                    fv[1][..n].fill(0.0);
                    fv[2][..n].copy_from_slice(&b.outs[w_z][..n]);
                    from_frame(b, &fv, values);
                    if across_plane(q, self.frame, comps) {
                        values[slot + nc][..n].copy_from_slice(&fv[2][..n]);
                    }
                    b.frame_vec = fv;
                }
                Quantity::AngularMomentum => {
                    for i in 0..n {
                        values[slot][i] = frame[0][i] * st.velocity[1][i];
                    }
                }
                Quantity::EpicyclicSq => {
                    values[slot][..n].copy_from_slice(&b.outs[kernel_out][..n]);
                    kernel_out += 1;
                }
                Quantity::Bernoulli => {
                    for (i, o) in values[slot][..n].iter_mut().enumerate() {
                        let vv = speed_sq(st, i);
                        *o = 0.5 * vv
                            + g / (g - 1.0) * (st.pressure[i] / st.density[i])
                            + st.potential[i];
                    }
                }
                Quantity::Entropy => {
                    for (i, o) in values[slot][..n].iter_mut().enumerate() {
                        *o = st.pressure[i].ln() - g * st.density[i].ln();
                    }
                }
                Quantity::Mach => {
                    for (i, o) in values[slot][..n].iter_mut().enumerate() {
                        *o = (speed_sq(st, i) / (st.pressure[i] / st.density[i])).sqrt();
                    }
                }
            }
            let count = component_names(q, self.frame, comps).len();
            for v in &values[slot..slot + count] {
                for (i, x) in v[..n].iter().enumerate() {
                    if !x.is_finite() && !bad.iter().any(|(j, _)| *j == i) {
                        bad.push((i, (q.name(), *x, false)));
                    }
                }
            }
            slot += count;
        }
        bad.sort_by_key(|(i, _)| *i);
    }
}

/// |v|² of lane `i`.
fn speed_sq(st: &StateBlock, i: usize) -> f64 {
    let [a, b, c] = &st.velocity;
    a[i] * a[i] + b[i] * b[i] + c[i] * c[i]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_follow_the_grid_components() {
        let polar = [Coord::R, Coord::Phi];
        let names = optional_names(Frame::Axisymmetric, &polar);
        assert!(names.contains(&"gravity_R".to_string()));
        assert!(names.contains(&"vorticity_z".to_string()));
        assert!(!names.contains(&"gravity_z".to_string()));
        let meridional = [Coord::R, Coord::Z, Coord::Phi];
        let wanted = vec!["vorticity_phi".to_string(), "mach_number".to_string()];
        assert_eq!(
            requested(&wanted, Frame::Axisymmetric, &meridional),
            vec![Quantity::Vorticity, Quantity::Mach]
        );
    }

    #[test]
    fn refuses_rotation_of_a_slab_and_bernoulli_of_an_isothermal_gas() {
        let look = |_: &str| None;
        let e = Extras::new(
            vec![Quantity::AngularMomentum],
            Frame::Slab,
            1.4,
            Err("no".into()),
            &look,
        );
        assert!(e.err().unwrap().why.contains("at rest"));
        let e = Extras::new(
            vec![Quantity::Bernoulli],
            Frame::Axisymmetric,
            1.0,
            Err("no".into()),
            &look,
        );
        assert!(e.err().unwrap().why.contains("gas.gamma > 1"));
    }
}
