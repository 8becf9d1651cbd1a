//! Each kind of perturbation over a block of points: its dimensionless
//! shape (pulse, noise, mode, formula), scaled and deposited on its field,
//! or its own change of several fields (sound wave, planet).
//!
//! Owns: the formulas of each kind and the frame-basis weights of a
//! velocity direction. Does not own the profile schema or the sampler.

use std::f64::consts::{PI, TAU};

use super::rng::Stream;
use super::{Distribution, Field, Keep, Kind, PerturbError, Perturbation, Points, Scale, Scratch};
use super::{Softening, Target, COORDS};
use crate::background::{Background, Frame, StateBlock};
use crate::formula::Kernel;
use crate::grid::{Coord, Grid};
use crate::model::Model;

/// The directions a velocity perturbation may point along on `grid`: those
/// that lie, at every point of the grid, in the span of the velocity
/// components the file writes (so nothing asked for is dropped by the
/// projection onto them). A line writes its own direction (an `R` line
/// `phi` too; the points of an `R` or `r` line lie on the x axis, where
/// e_x = e_R = e_r); a plane `[R, phi]` or `[x, y]` the
/// directions in the midplane; a section `[x, z]` those in the plane y = 0;
/// every grid with three components any direction.
pub fn velocity_directions(grid: &Grid) -> Vec<Coord> {
    use crate::grid::Layout;
    use Coord::*;
    match grid.layout() {
        Layout::Line(Coord::R) => vec![R, Phi, X, Y],
        Layout::Line(Coord::Sph) => vec![Sph, X, R],
        Layout::Line(c) => vec![c],
        Layout::Polar | Layout::Cartesian => vec![R, Phi, X, Y, Sph],
        Layout::Section => vec![X, Z, R, Sph, Theta],
        _ => Coord::ALL.to_vec(),
    }
}

/// The frame's three basis vectors as coordinate directions (see
/// [`Frame::basis`]); a slab's are its axis across the layers, then the
/// grid's other axes in order (None where the grid has none).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Basis {
    slots: [Option<Coord>; 3],
}

impl Basis {
    pub(super) fn new(frame: Frame, grid: &Grid) -> Basis {
        let slots = match frame {
            Frame::Axisymmetric => [Some(Coord::R), Some(Coord::Phi), Some(Coord::Z)],
            Frame::Spherical => [Some(Coord::Sph), Some(Coord::Theta), Some(Coord::Phi)],
            Frame::Slab => {
                // The other axes in the layout's natural order, as the
                // embedding projects them (whatever the grid's nesting).
                let axes: Vec<&crate::grid::Axis> = (0..grid.axes().len())
                    .map(|k| grid.natural_axis(k))
                    .collect();
                let stored = grid.slab_axis().min(axes.len() - 1);
                let s = grid
                    .natural_order()
                    .iter()
                    .position(|a| *a == stored)
                    .unwrap_or(0);
                let mut slots = [None; 3];
                slots[0] = Some(axes[s].coord);
                let others = axes.iter().enumerate().filter(|(k, _)| *k != s);
                for (slot, (_, a)) in slots[1..].iter_mut().zip(others) {
                    *slot = Some(a.coord);
                }
                slots
            }
        };
        Basis { slots }
    }

    /// The unit vector along direction `c` at point `i` of `pts` in the
    /// frame's basis: exactly a basis vector where `c` is one, else the
    /// dot products of the Cartesian unit vectors.
    pub(super) fn weights(&self, c: Coord, pts: &Points, i: usize) -> [f64; 3] {
        let mut w = [0.0; 3];
        if let Some(k) = self.slots.iter().position(|s| *s == Some(c)) {
            w[k] = 1.0;
            return w;
        }
        let e = unit(c, pts, i);
        for (w, s) in w.iter_mut().zip(self.slots) {
            if let Some(s) = s {
                let b = unit(s, pts, i);
                *w = e[0] * b[0] + e[1] * b[1] + e[2] * b[2];
            }
        }
        w
    }
}

/// The Cartesian unit vector along coordinate direction `c` at point `i`
/// (e_R = (cos φ, sin φ, 0), e_φ = (−sin φ, cos φ, 0), e_r and e_θ the
/// spherical unit vectors, e.g. Arfken & Weber, Mathematical Methods for
/// Physicists, §2.5).
fn unit(c: Coord, pts: &Points, i: usize) -> [f64; 3] {
    let (sp, cp) = pts.col(4)[i].sin_cos();
    let (st, ct) = pts.col(6)[i].sin_cos();
    match c {
        Coord::X => [1.0, 0.0, 0.0],
        Coord::Y => [0.0, 1.0, 0.0],
        Coord::Z => [0.0, 0.0, 1.0],
        Coord::R => [cp, sp, 0.0],
        Coord::Phi => [-sp, cp, 0.0],
        Coord::Sph => [st * cp, st * sp, ct],
        Coord::Theta => [ct * cp, ct * sp, -st],
    }
}

/// What every kind reads while it is applied to a block.
pub(super) struct Ctx<'a> {
    pub basis: Basis,
    pub gamma: f64,
    pub pts: &'a Points,
    pub cells: &'a [u64],
    pub bg: &'a StateBlock,
}

/// A perturbation ready to apply: compiled formulas, resolved lengths.
pub(super) struct Bound {
    spec: Perturbation,
    kernel: Option<Kernel>,
    /// A planet's softening length.
    eps: f64,
    /// Stride and count of the azimuthal axis of the grid, for keys of
    /// band-limited noise that leave φ out.
    azimuth: Option<(u64, u64)>,
    /// On a grid with x or y axes and no φ axis: the keys of band-limited
    /// noise are rings of this width in R (the smallest cell width in x
    /// and y) and the cells of the other axes.
    rings: Option<Rings>,
}

/// How band-limited noise keys its coefficients on a Cartesian grid: a
/// ring ⌊R/width⌋ and the indices of the axes that are neither x nor y.
#[derive(Clone, Debug)]
struct Rings {
    width: f64,
    /// Per grid axis (C order): its cell count and whether it is x or y.
    axes: Vec<(u64, bool)>,
}

impl Rings {
    fn key(&self, cell: u64, big_r: f64) -> u64 {
        let ring = (big_r / self.width).floor().max(0.0) as u64;
        let mut rest = cell;
        let mut idx = vec![0u64; self.axes.len()];
        for (a, (n, _)) in self.axes.iter().enumerate().rev() {
            idx[a] = rest % n;
            rest /= n;
        }
        self.axes
            .iter()
            .zip(idx)
            .filter(|((_, xy), _)| !xy)
            .fold(ring, |key, ((n, _), i)| key * n + i)
    }
}

impl Bound {
    pub(super) fn new(
        p: &Perturbation,
        model: &Model,
        grid: &Grid,
        bg: &dyn Background,
    ) -> Result<Bound, PerturbError> {
        let err = |m: String| PerturbError {
            origin: p.origin.clone(),
            message: m,
        };
        let compile = |e: &crate::formula::Expr| {
            Kernel::compile(&[("s", e)], &COORDS, &|n| model.lookup(n))
                .map_err(|e| err(format!("cannot compile the formula: {e}")))
        };
        let kernel = match &p.kind {
            Kind::Formula { expr, .. } => Some(compile(expr)?),
            Kind::Mode {
                radial, vertical, ..
            } => match (radial, vertical) {
                (None, None) => None,
                (Some(e), None) | (None, Some(e)) => Some(compile(e)?),
                (Some(a), Some(b)) => Some(compile(&(a.clone() * b.clone()))?),
            },
            _ => None,
        };
        let mut eps = 0.0;
        if let Kind::Planet {
            radius,
            softening,
            central_gm,
            ..
        } = &p.kind
        {
            if bg.frame() != Frame::Axisymmetric {
                return Err(err("a planet needs a disk (balance.shape \"disk\")".into()));
            }
            eps = match *softening {
                Softening::Length(l) => l,
                Softening::ScaleHeights(f) => {
                    let s = bg.at(&[*radius, 0.0]);
                    let omega = (central_gm / radius.powi(3)).sqrt();
                    let h = s.sound_speed_sq().sqrt() / omega;
                    if !h.is_finite() || h <= 0.0 {
                        return Err(err(format!(
                            "the scale height at the orbit R = {radius} is {h}: the background has no positive c² = P/ρ there; give softening as a length"
                        )));
                    }
                    f * h
                }
            };
        }
        let shape = grid.shape();
        let azimuth = grid
            .axes()
            .iter()
            .position(|a| a.coord == Coord::Phi)
            .map(|a| {
                let stride: usize = shape[a + 1..].iter().product();
                (stride as u64, shape[a] as u64)
            });
        // Cells are keyed in the layout's natural order (see the sampler).
        let axes: Vec<&crate::grid::Axis> = (0..grid.axes().len())
            .map(|k| grid.natural_axis(k))
            .collect();
        let shape: Vec<usize> = axes.iter().map(|a| a.cells()).collect();
        let xy = |c: Coord| c == Coord::X || c == Coord::Y;
        let rings = (azimuth.is_none() && axes.iter().any(|a| xy(a.coord))).then(|| Rings {
            width: axes
                .iter()
                .filter(|a| xy(a.coord))
                .flat_map(|a| a.edges.windows(2).map(|w| (w[1] - w[0]).abs()))
                .fold(f64::INFINITY, f64::min),
            axes: axes
                .iter()
                .zip(&shape)
                .map(|(a, n)| (*n as u64, xy(a.coord)))
                .collect(),
        });
        Ok(Bound {
            spec: p.clone(),
            kernel,
            eps,
            azimuth,
            rings,
        })
    }

    pub(super) fn is_planet(&self) -> bool {
        matches!(self.spec.kind, Kind::Planet { .. })
    }

    pub(super) fn parameters(&self) -> super::Record {
        let v = |n: &str, x: f64| (n.to_string(), x);
        let target = |t: &Target| vec![v("amplitude", t.amplitude)];
        let list = match &self.spec.kind {
            Kind::Pulse { target: t, axes } => {
                let mut l = target(t);
                for (c, centre, width) in axes {
                    l.push(v(&format!("centre_{}", COORDS[*c]), *centre));
                    l.push(v(&format!("width_{}", COORDS[*c]), *width));
                }
                l
            }
            Kind::Planet {
                mass_ratio,
                radius,
                azimuth,
                indirect,
                central_gm,
                ..
            } => vec![
                v("mass_ratio", *mass_ratio),
                v("orbit_radius", *radius),
                v("azimuth", *azimuth),
                v("softening_length", self.eps),
                v("indirect", f64::from(u8::from(*indirect))),
                v("central_GM", *central_gm),
            ],
            Kind::Noise {
                target: t,
                seed,
                band,
                ..
            } => {
                let mut l = target(t);
                l.push(v("seed", *seed as f64));
                if let Some((a, b)) = band {
                    l.push(v("m_min", f64::from(*a)));
                    l.push(v("m_max", f64::from(*b)));
                }
                l
            }
            Kind::Mode {
                target: t,
                m,
                phase,
                ..
            } => {
                let mut l = target(t);
                l.push(v("m", f64::from(*m)));
                l.push(v("phase", *phase));
                l
            }
            Kind::SoundWave {
                amplitude,
                k,
                phase,
            } => vec![
                v("amplitude", *amplitude),
                v("k_x", k[0]),
                v("k_y", k[1]),
                v("k_z", k[2]),
                v("phase", *phase),
            ],
            Kind::Formula { .. } => Vec::new(),
        };
        super::Record {
            origin: self.spec.origin.clone(),
            kind: self.spec.kind_name(),
            values: list,
        }
    }

    pub(super) fn apply(
        &self,
        ctx: &Ctx,
        delta: &mut StateBlock,
        extras: &mut [Vec<f64>],
        sc: &mut Scratch,
    ) {
        let n = ctx.pts.len;
        let phi = ctx.pts.col(4);
        match &self.spec.kind {
            Kind::Pulse { target, axes } => {
                let s = &mut sc.shape[..n];
                s.fill(0.0);
                for &(c, centre, width) in axes {
                    let q = ctx.pts.col(c);
                    for (s, q) in s.iter_mut().zip(q) {
                        let mut d = q - centre;
                        if c == 4 {
                            d = (d + PI).rem_euclid(TAU) - PI;
                        }
                        *s += d * d / (2.0 * width * width);
                    }
                }
                for s in s.iter_mut() {
                    *s = (-*s).exp();
                }
                deposit(ctx, target, s, delta);
            }
            Kind::Noise {
                target,
                distribution,
                seed,
                band,
            } => {
                let stream = Stream::new(*seed, target.field.stream());
                let draw = |i: u64, d: u64| match distribution {
                    Distribution::Uniform => stream.uniform(i, d),
                    Distribution::Gaussian => stream.normal(i, d),
                };
                let s = &mut sc.shape[..n];
                for (k, s) in s.iter_mut().enumerate() {
                    let cell = ctx.cells[k];
                    *s = match band {
                        None => draw(cell, 0),
                        Some((m1, m2)) => {
                            let key = match (self.azimuth, &self.rings) {
                                (Some((stride, count)), _) => {
                                    (cell / (stride * count)) * stride + cell % stride
                                }
                                (None, Some(rings)) => rings.key(cell, ctx.pts.col(3)[k]),
                                (None, None) => cell,
                            };
                            let mut t = 0.0;
                            for m in *m1..=*m2 {
                                let (sn, cs) = (f64::from(m) * phi[k]).sin_cos();
                                let m = u64::from(m);
                                t += draw(key, 2 * m) * cs + draw(key, 2 * m + 1) * sn;
                            }
                            t / f64::from(m2 - m1 + 1).sqrt()
                        }
                    };
                }
                deposit(ctx, target, s, delta);
            }
            Kind::Mode {
                target, m, phase, ..
            } => {
                self.envelope(ctx, sc);
                let s = &mut sc.shape[..n];
                for ((s, e), p) in s.iter_mut().zip(&sc.env[..n]).zip(phi) {
                    *s = e * (f64::from(*m) * p - phase).cos();
                }
                deposit(ctx, target, s, delta);
            }
            Kind::Formula { target, .. } => {
                self.envelope(ctx, sc);
                deposit(ctx, target, &sc.env[..n], delta);
            }
            Kind::SoundWave {
                amplitude,
                k,
                phase,
            } => sound_wave(ctx, *amplitude, k, *phase, delta),
            Kind::Planet {
                mass_ratio,
                radius,
                azimuth,
                indirect,
                central_gm,
                in_potential,
                ..
            } => {
                let gm = central_gm * mass_ratio;
                let (sp, cp) = azimuth.sin_cos();
                let (xp, yp) = (radius * cp, radius * sp);
                let (x, y, z) = (ctx.pts.col(0), ctx.pts.col(1), ctx.pts.col(2));
                let a3 = radius.powi(3);
                let e2 = self.eps * self.eps;
                for i in 0..n {
                    let (dx, dy) = (x[i] - xp, y[i] - yp);
                    let mut p = -gm / (dx * dx + dy * dy + z[i] * z[i] + e2).sqrt();
                    if *indirect {
                        p += gm * (x[i] * xp + y[i] * yp) / a3;
                    }
                    extras[0][i] += p;
                    if *in_potential {
                        delta.potential[i] += p;
                    }
                }
            }
        }
    }

    /// The compiled formula (a mode's envelope, a free formula) over the
    /// block into `sc.env`; 1 when there is none.
    fn envelope(&self, ctx: &Ctx, sc: &mut Scratch) {
        let n = ctx.pts.len;
        match &self.kernel {
            Some(k) => k.run(&ctx.pts.columns(), &mut [&mut sc.env[..n]], &mut sc.ws),
            None => sc.env[..n].fill(1.0),
        }
    }
}

/// The adiabatic sound speed √(γP/ρ) of a background state.
fn sound_speed(gamma: f64, bg: &StateBlock, i: usize) -> f64 {
    (gamma * bg.pressure[i] / bg.density[i]).sqrt()
}

/// Add `target.amplitude × shape × scale` to the target field; for
/// pressure, the density change that keeps density, entropy or temperature.
fn deposit(ctx: &Ctx, target: &Target, shape: &[f64], delta: &mut StateBlock) {
    let (bg, a) = (ctx.bg, target.amplitude);
    for (i, s) in shape.iter().enumerate() {
        let w = match target.field {
            Field::Velocity(c) => ctx.basis.weights(c, ctx.pts, i),
            _ => [0.0; 3],
        };
        let scale = match target.scale {
            Scale::Absolute => 1.0,
            Scale::SoundSpeed => sound_speed(ctx.gamma, bg, i),
            Scale::Value => match target.field {
                Field::Density => bg.density[i],
                Field::Pressure => bg.pressure[i],
                Field::Potential => bg.potential[i],
                Field::Velocity(_) => (0..3).map(|k| w[k] * bg.velocity[k][i]).sum(),
            },
        };
        let d = a * s * scale;
        match target.field {
            Field::Density => delta.density[i] += d,
            Field::Potential => delta.potential[i] += d,
            Field::Pressure => {
                delta.pressure[i] += d;
                let (rho, p) = (bg.density[i], bg.pressure[i]);
                delta.density[i] += match target.keep {
                    Keep::Density => 0.0,
                    Keep::Temperature => rho * d / p,
                    // ρ((1 + δP/P)^(1/γ) − 1), accurate for small δP/P.
                    Keep::Entropy => rho * ((d / p).ln_1p() / ctx.gamma).exp_m1(),
                };
            }
            Field::Velocity(_) => {
                for (v, w) in delta.velocity.iter_mut().zip(w) {
                    v[i] += w * d;
                }
            }
        }
    }
}

/// The linear sound wave: δρ = Aρ cos θ, δP = c²δρ, δv = A c k̂ cos θ in
/// the frame basis, θ = k·x + phase, c² = γP/ρ of the local background.
fn sound_wave(ctx: &Ctx, amp: f64, k: &[f64; 3], phase: f64, delta: &mut StateBlock) {
    let (x, y, z) = (ctx.pts.col(0), ctx.pts.col(1), ctx.pts.col(2));
    let kn = (k[0] * k[0] + k[1] * k[1] + k[2] * k[2]).sqrt();
    let khat = [k[0] / kn, k[1] / kn, k[2] / kn];
    let bg = ctx.bg;
    for i in 0..ctx.pts.len {
        let c = sound_speed(ctx.gamma, bg, i);
        let wave = amp * (k[0] * x[i] + k[1] * y[i] + k[2] * z[i] + phase).cos();
        let drho = bg.density[i] * wave;
        delta.density[i] += drho;
        delta.pressure[i] += c * c * drho;
        let u = c * wave;
        // k̂ in the frame basis: its Cartesian components along e_x, e_y, e_z.
        for (comp, kc) in [Coord::X, Coord::Y, Coord::Z].into_iter().zip(khat) {
            if kc.abs() > 0.0 {
                let w = ctx.basis.weights(comp, ctx.pts, i);
                for (v, w) in delta.velocity.iter_mut().zip(w) {
                    v[i] += w * kc * u;
                }
            }
        }
    }
}
