//! What the sampler computes at each point and which fields it writes.
//!
//! Owns: the accumulator slots of a point (density, pressure, potential,
//! sound speed, temperature, energy, momentum and velocity components), the
//! finiteness and positivity checks of a state with the message naming the
//! point, and the catalogue of fields (names, dimensions, slots). Does not
//! own the quadrature or the loop over cells (see `stream`).

use super::{GasConstants, SampleError};
use crate::background::StateBlock;
use crate::fields::{FieldSpec, Placement};
use crate::grid::{Coord, Grid, Layout};
use crate::units::Dim;

/// Slot numbers of the per-point values.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Slots {
    /// Velocity components written (1 to 3).
    pub ncomp: usize,
}

pub(super) const RHO: usize = 0;
pub(super) const PRES: usize = 1;
pub(super) const POT: usize = 2;
pub(super) const CS: usize = 3;
pub(super) const TEMP: usize = 4;
pub(super) const ENERGY: usize = 5;
const FIRST_VECTOR: usize = 6;

impl Slots {
    /// The first momentum slot.
    pub fn mom(self) -> usize {
        FIRST_VECTOR
    }
    /// The first velocity slot.
    pub fn vel(self) -> usize {
        FIRST_VECTOR + self.ncomp
    }
    /// The slot holding the weight (cell volume) of averages.
    pub fn volume(self) -> usize {
        FIRST_VECTOR + 2 * self.ncomp
    }
    /// Slots per point, the volume slot included.
    pub fn len(self) -> usize {
        self.volume() + 1
    }
}

/// One named field and the slot it is read from.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Entry {
    pub spec: FieldSpec,
    pub slot: usize,
}

/// The fields written for a grid and gas, in file order: density, pressure,
/// velocity components, momentum components, energy (not for an
/// isothermal gas), sound speed, temperature (with a conversion), potential.
pub(super) fn catalogue(grid: &Grid, gas: &GasConstants, comps: &[Coord]) -> Vec<Entry> {
    let slots = Slots { ncomp: comps.len() };
    let (density, pressure) = if gas.vertically_integrated {
        (Dim::SURFACE_DENSITY, Dim::new(0, 1, -2, 0))
    } else {
        (Dim::DENSITY, Dim::new(-1, 1, -2, 0))
    };
    let _ = grid;
    let entry = |name: String, dim: Dim, slot: usize| Entry {
        spec: FieldSpec {
            name,
            dim,
            placement: Placement::cell(),
        },
        slot,
    };
    let mut out = vec![
        entry("density".into(), density, RHO),
        entry("pressure".into(), pressure, PRES),
    ];
    for (c, coord) in comps.iter().enumerate() {
        out.push(entry(
            format!("velocity_{}", coord.name()),
            Dim::VELOCITY,
            slots.vel() + c,
        ));
    }
    for (c, coord) in comps.iter().enumerate() {
        out.push(entry(
            format!("momentum_{}", coord.name()),
            density.times(Dim::VELOCITY),
            slots.mom() + c,
        ));
    }
    if !crate::physics::is_isothermal(gas.gamma) {
        out.push(entry("energy".into(), pressure, ENERGY));
    }
    out.push(entry("sound_speed".into(), Dim::VELOCITY, CS));
    if gas.temperature_per_c2.is_some() {
        out.push(entry("temperature".into(), Dim::TEMPERATURE, TEMP));
    }
    out.push(entry("potential".into(), Dim::VELOCITY_SQ, POT));
    out
}

/// What failed at a point: the field, its value, and whether it is not
/// positive (rather than not finite).
pub(super) type Failure = (&'static str, f64, bool);

/// Checks the states of `n` lanes (density and pressure positive, every
/// field finite) and writes their slot values, `values[slot][lane]`:
/// `velocity` holds the grid components already rotated from the frame
/// basis. Lanes that fail are listed in `bad` (lane, failure), in order;
/// their values are not meaningful. Only the slots whose bit `need` sets
/// are written (`u64::MAX`: all); the others keep what they held.
pub(super) fn fill_block(
    st: &StateBlock,
    velocity: &[Vec<f64>],
    n: usize,
    gas: &GasConstants,
    values: &mut [Vec<f64>],
    bad: &mut Vec<(usize, Failure)>,
    need: u64,
) {
    bad.clear();
    if !block_is_sound(st, n) {
        for i in 0..n {
            if let Err(e) = check(st, i) {
                bad.push((i, e));
            }
        }
    }
    let wanted = |slot: usize| need & (1 << slot) != 0;
    let (rho, p) = (&st.density[..n], &st.pressure[..n]);
    if wanted(RHO) {
        values[RHO][..n].copy_from_slice(rho);
    }
    if wanted(PRES) {
        values[PRES][..n].copy_from_slice(p);
    }
    if wanted(POT) {
        values[POT][..n].copy_from_slice(&st.potential[..n]);
    }
    if wanted(CS) {
        for ((c, p), r) in values[CS][..n].iter_mut().zip(p).zip(rho) {
            *c = (p / r).sqrt();
        }
    }
    if wanted(TEMP) {
        match gas.temperature_per_c2 {
            Some(k) => {
                for ((t, p), r) in values[TEMP][..n].iter_mut().zip(p).zip(rho) {
                    *t = k * (p / r);
                }
            }
            None => values[TEMP][..n].fill(0.0),
        }
    }
    // An isothermal gas has no energy field (see `catalogue`).
    if !wanted(ENERGY) {
    } else if crate::physics::is_isothermal(gas.gamma) {
        values[ENERGY][..n].fill(0.0);
    } else {
        let [v0, v1, v2] = &st.velocity;
        let (v0, v1, v2) = (&v0[..n], &v1[..n], &v2[..n]);
        let e = &mut values[ENERGY][..n];
        let k = gas.gamma - 1.0;
        for i in 0..n {
            let vv = v0[i] * v0[i] + v1[i] * v1[i] + v2[i] * v2[i];
            e[i] = p[i] / k + 0.5 * rho[i] * vv;
        }
    }
    let nc = velocity.len();
    for (c, v) in velocity.iter().enumerate() {
        let (mom, vel) = values[FIRST_VECTOR..].split_at_mut(nc);
        if wanted(FIRST_VECTOR + nc + c) {
            vel[c][..n].copy_from_slice(&v[..n]);
        }
        if wanted(FIRST_VECTOR + c) {
            for ((m, v), r) in mom[c][..n].iter_mut().zip(&v[..n]).zip(rho) {
                *m = r * v;
            }
        }
    }
}

/// True if every lane passes [`check`]: one pass without branches; the
/// lanes are checked one by one only when it is false.
fn block_is_sound(st: &StateBlock, n: usize) -> bool {
    let mut ok = true;
    for i in 0..n {
        let (d, p) = (st.density[i], st.pressure[i]);
        let v = st.velocity[0][i] + st.velocity[1][i] + st.velocity[2][i];
        // Positive and finite; a sum of finite values that is not finite
        // only fails the quick test (the lane check decides).
        ok &= (d > 0.0) & (d < f64::INFINITY) & (p > 0.0) & (p < f64::INFINITY);
        ok &= v.is_finite() & st.potential[i].is_finite();
    }
    ok
}

/// The check of one lane.
fn check(st: &StateBlock, i: usize) -> Result<(), Failure> {
    let test = |field: &'static str, value: f64, positive: bool| {
        if !value.is_finite() {
            Err((field, value, false))
        } else if positive && value <= 0.0 {
            Err((field, value, true))
        } else {
            Ok(())
        }
    };
    test("density", st.density[i], true)?;
    test("pressure", st.pressure[i], true)?;
    for v in &st.velocity {
        test("velocity", v[i], false)?;
    }
    test("potential", st.potential[i], false)
}

/// The error for a failed check at a grid point.
pub(super) fn point_error(
    (field, value, non_positive): Failure,
    grid: &Grid,
    point: &[f64],
) -> SampleError {
    let at = describe(grid, point);
    if non_positive {
        SampleError::NonPositive { field, value, at }
    } else {
        SampleError::NonFinite { field, value, at }
    }
}

/// "R = 1.5, phi = 0.2", with the distance from the axis added on a
/// Cartesian grid.
fn describe(grid: &Grid, point: &[f64]) -> String {
    let mut parts: Vec<String> = grid
        .axes()
        .iter()
        .zip(point)
        .map(|(a, x)| format!("{} = {x}", a.coord.name()))
        .collect();
    if matches!(grid.layout(), Layout::Cartesian | Layout::Box) {
        let last = parts.pop().unwrap_or_default();
        let (x, y) = (
            point[grid.natural_order()[0]],
            point[grid.natural_order()[1]],
        );
        let r = (x * x + y * y).sqrt();
        parts.push(format!("{last} (R = {r})"));
    }
    parts.join(", ")
}
