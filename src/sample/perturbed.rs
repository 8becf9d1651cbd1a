//! The perturbed state inside the sampler: at every quadrature point the
//! perturbations add to the background before the cell's sum, so a cell
//! average of the perturbed state is the average of the perturbed state.
//!
//! Owns: the slots of the perturbed state (the same catalogue as the
//! background, after it) and of the perturbation alone (δρ, δP, δΦ, δ of
//! momentum and velocity, extra fields such as a planet's potential), the
//! global cell index of each point, and the velocity of the perturbation
//! from the averaged momenta. Does not own the perturbations themselves
//! (see [`crate::perturb`]) or the loop over cells (see `stream`).

use super::slots::{self, Entry, Slots, RHO};
use super::GasConstants;
use crate::background::{StateBlock, LANES};
use crate::fields::{FieldSpec, Placement};
use crate::grid::{Coord, Embedding, Grid};
use crate::perturb::{Perturbations, Points, Scratch};
use crate::units::Dim;

/// Perturbations prepared for one sampler.
pub(super) struct Perturbed<'a> {
    p: &'a Perturbations,
    axes: Vec<Coord>,
    /// C-order strides of the grid's axes.
    pub strides: Vec<u64>,
    /// On a grid stored out of its natural order: per stored axis, its cell
    /// count and its stride in the natural order.
    renumber: Option<Vec<(u64, u64)>>,
    /// Value slots of one state (the background's catalogue).
    vol: usize,
    slots: Slots,
}

/// Buffers one thread reuses.
pub(super) struct Buffers {
    pts: Points,
    cells: Vec<u64>,
    delta: StateBlock,
    sum: StateBlock,
    extras: Vec<Vec<f64>>,
    vel: Vec<Vec<f64>>,
    dvel: Vec<Vec<f64>>,
    scratch: Scratch,
    bad: Vec<(usize, slots::Failure)>,
}

impl<'a> Perturbed<'a> {
    pub(super) fn new(p: &'a Perturbations, grid: &Grid, slots: Slots) -> Perturbed<'a> {
        let shape = grid.shape();
        let strides = (0..shape.len())
            .map(|a| shape[a + 1..].iter().product::<usize>() as u64)
            .collect();
        // Noise is keyed on the cell's index in the layout's natural order,
        // so a grid's nesting does not change the values it draws.
        let renumber = (!grid.is_natural_order()).then(|| {
            let natural = grid.natural_order();
            let nshape: Vec<usize> = natural.iter().map(|s| shape[*s]).collect();
            (0..shape.len())
                .map(|a| {
                    let k = natural.iter().position(|s| *s == a).unwrap_or(a);
                    (
                        shape[a] as u64,
                        nshape[k + 1..].iter().product::<usize>() as u64,
                    )
                })
                .collect()
        });
        Perturbed {
            p,
            axes: grid.axes().iter().map(|a| a.coord).collect(),
            renumber,
            strides,
            vol: slots.volume(),
            slots,
        }
    }

    fn delta0(&self) -> usize {
        2 * self.vol
    }

    /// Value slots beyond the background's: the perturbed state's, then the
    /// perturbation's.
    pub(super) fn extra_slots(&self) -> usize {
        self.vol + 3 + 2 * self.slots.ncomp + self.p.extra_fields().len()
    }

    /// The entries of the perturbed state (`state`) and of the perturbation
    /// alone (`perturbation`), given the background's.
    pub(super) fn entries(&self, background: &[Entry]) -> (Vec<Entry>, Vec<Entry>) {
        let state = background
            .iter()
            .map(|e| Entry {
                spec: e.spec.clone(),
                slot: e.slot + self.vol,
            })
            .collect();
        let dim = |name: &str| {
            background
                .iter()
                .find(|e| e.spec.name == name)
                .map_or(Dim::VELOCITY_SQ, |e| e.spec.dim)
        };
        let entry = |name: String, dim: Dim, slot: usize| Entry {
            spec: FieldSpec {
                name,
                dim,
                placement: Placement::cell(),
            },
            slot,
        };
        let d = self.delta0();
        let nc = self.slots.ncomp;
        let comps: Vec<String> = background
            .iter()
            .filter_map(|e| e.spec.name.strip_prefix("velocity_").map(str::to_string))
            .collect();
        let mut out = vec![
            entry("density".into(), dim("density"), d),
            entry("pressure".into(), dim("pressure"), d + 1),
            entry("potential".into(), dim("potential"), d + 2),
        ];
        for (c, name) in comps.iter().enumerate() {
            out.push(entry(
                format!("velocity_{name}"),
                Dim::VELOCITY,
                d + 3 + nc + c,
            ));
        }
        for (c, name) in comps.iter().enumerate() {
            let n = format!("momentum_{name}");
            out.push(entry(n.clone(), dim(&n), d + 3 + c));
        }
        for (k, name) in self.p.extra_fields().iter().enumerate() {
            out.push(entry(
                name.to_string(),
                dim("potential"),
                d + 3 + 2 * nc + k,
            ));
        }
        (state, out)
    }

    pub(super) fn buffers(&self) -> Buffers {
        let lanes = |k: usize| (0..k).map(|_| vec![0.0; LANES]).collect::<Vec<_>>();
        Buffers {
            pts: Points::new(),
            cells: vec![0; LANES],
            delta: StateBlock::new(),
            sum: StateBlock::new(),
            extras: lanes(self.p.extra_fields().len()),
            vel: lanes(self.slots.ncomp),
            dvel: lanes(self.slots.ncomp),
            scratch: Scratch::default(),
            bad: Vec::new(),
        }
    }

    /// The perturbed state's and the perturbation's slot values of `n`
    /// points with grid coordinates `grid`, frame coordinates `frame` and
    /// background states `st` (`velocity`: their grid components); `base` is
    /// the flat index of the points' cell off the lane axis, `lane` (axis,
    /// first cell, nodes per cell) says which lane cell each point is in.
    /// Failures of the perturbed state are merged into `bad`.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn block(
        &self,
        grid: &[&[f64]],
        frame: &[&[f64]],
        n: usize,
        (base, lane, first, pc): (u64, usize, usize, usize),
        st: &StateBlock,
        velocity: &[Vec<f64>],
        embed: &Embedding,
        gas: &GasConstants,
        b: &mut Buffers,
        values: &mut [Vec<f64>],
        bad: &mut Vec<(usize, slots::Failure)>,
    ) {
        b.pts.fill(&self.axes, grid, n);
        for (i, c) in b.cells[..n].iter_mut().enumerate() {
            *c = base + (first + i / pc) as u64 * self.strides[lane];
        }
        if let Some(re) = &self.renumber {
            for c in &mut b.cells[..n] {
                let (mut rest, mut nat) = (*c, 0u64);
                for (count, stride) in re.iter().rev() {
                    nat += (rest % count) * stride;
                    rest /= count;
                }
                *c = nat;
            }
        }
        self.p.apply(
            &b.pts,
            &b.cells[..n],
            st,
            &mut b.delta,
            &mut b.extras,
            &mut b.scratch,
        );
        let (s, d) = (&mut b.sum, &b.delta);
        s.len = n;
        for i in 0..n {
            s.density[i] = st.density[i] + d.density[i];
            s.pressure[i] = st.pressure[i] + d.pressure[i];
            s.potential[i] = st.potential[i] + d.potential[i];
            for c in 0..3 {
                s.velocity[c][i] = st.velocity[c][i] + d.velocity[c][i];
            }
        }
        embed.project(grid, frame, &s.velocity, n, &mut b.vel);
        embed.project(grid, frame, &d.velocity, n, &mut b.dvel);
        let vol = self.vol;
        slots::fill_block(
            s,
            &b.vel,
            n,
            gas,
            &mut values[vol..2 * vol],
            &mut b.bad,
            u64::MAX,
        );
        for &(i, e) in &b.bad {
            if !bad.iter().any(|(j, _)| *j == i) {
                bad.push((i, e));
            }
        }
        bad.sort_by_key(|(i, _)| *i);
        let d0 = self.delta0();
        let nc = self.slots.ncomp;
        values[d0][..n].copy_from_slice(&d.density[..n]);
        values[d0 + 1][..n].copy_from_slice(&d.pressure[..n]);
        values[d0 + 2][..n].copy_from_slice(&d.potential[..n]);
        for c in 0..nc {
            let (v, dv) = (&velocity[c], &b.dvel[c]);
            for i in 0..n {
                // δ(ρv) = δρ v + ρ δv + δρ δv, without the cancellation of
                // (ρ + δρ)(v + δv) − ρv.
                values[d0 + 3 + c][i] =
                    d.density[i] * v[i] + st.density[i] * dv[i] + d.density[i] * dv[i];
            }
            values[d0 + 3 + nc + c][..n].copy_from_slice(&dv[..n]);
        }
        for (k, e) in b.extras.iter().enumerate() {
            values[d0 + 3 + 2 * nc + k][..n].copy_from_slice(&e[..n]);
        }
    }

    /// After the division by the cell volume: the perturbed state's
    /// velocity from its momentum, and the perturbation's velocity
    /// δv̄ = (δm̄ ρ̄ − m̄ δρ̄)/(ρ̄' ρ̄) (the difference of the two mass-weighted
    /// velocities, without its cancellation). `acc` is slot-major over
    /// `ncells` cells.
    pub(super) fn normalise(&self, acc: &mut [f64], ncells: usize) {
        let (vol, nc) = (self.vol, self.slots.ncomp);
        let (mom, vel) = (self.slots.mom(), self.slots.vel());
        let d0 = self.delta0();
        let at = |s: usize, c: usize| s * ncells + c;
        for comp in 0..nc {
            for c in 0..ncells {
                let rho = acc[at(RHO, c)];
                let rho2 = acc[at(vol + RHO, c)];
                acc[at(vol + vel + comp, c)] = acc[at(vol + mom + comp, c)] / rho2;
                let (m, dm, drho) = (
                    acc[at(mom + comp, c)],
                    acc[at(d0 + 3 + comp, c)],
                    acc[at(d0, c)],
                );
                acc[at(d0 + 3 + nc + comp, c)] = (dm * rho - m * drho) / (rho2 * rho);
            }
        }
    }
}
