//! What the sampler computes at each point and which fields it writes.
//!
//! Owns: the accumulator slots of a point (density, pressure, potential,
//! sound speed, temperature, energy, momentum and velocity components), the
//! finiteness and positivity checks of a state with the message naming the
//! point, and the catalogue of fields (names, dimensions, slots). Does not
//! own the quadrature or the loop over cells (see `stream`).

use super::{GasConstants, SampleError};
use crate::background::State;
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

/// Checks a state (density and pressure positive, everything finite) and
/// writes its slot values: `velocity` holds the grid components already
/// rotated from the frame basis.
pub(super) fn fill(
    st: &State,
    velocity: &[f64],
    gas: &GasConstants,
    out: &mut [f64],
) -> Result<(), (&'static str, f64, bool)> {
    let check = |field: &'static str, value: f64, positive: bool| {
        if !value.is_finite() {
            Err((field, value, false))
        } else if positive && value <= 0.0 {
            Err((field, value, true))
        } else {
            Ok(())
        }
    };
    check("density", st.density, true)?;
    check("pressure", st.pressure, true)?;
    for v in &st.velocity {
        check("velocity", *v, false)?;
    }
    check("potential", st.potential, false)?;
    let c2 = st.pressure / st.density;
    out[RHO] = st.density;
    out[PRES] = st.pressure;
    out[POT] = st.potential;
    out[CS] = c2.sqrt();
    out[TEMP] = gas.temperature_per_c2.map_or(0.0, |k| k * c2);
    // An isothermal gas has no energy field (see `catalogue`).
    out[ENERGY] = if crate::physics::is_isothermal(gas.gamma) {
        0.0
    } else {
        let v2: f64 = st.velocity.iter().map(|v| v * v).sum();
        st.pressure / (gas.gamma - 1.0) + 0.5 * st.density * v2
    };
    let n = velocity.len();
    for (c, v) in velocity.iter().enumerate() {
        out[FIRST_VECTOR + n + c] = *v;
        out[FIRST_VECTOR + c] = st.density * v;
    }
    Ok(())
}

/// The error for a failed check at a grid point.
pub(super) fn point_error(
    (field, value, non_positive): (&'static str, f64, bool),
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
    if grid.layout() == Layout::Cartesian {
        let last = parts.pop().unwrap_or_default();
        parts.push(format!("{last} (R = {})", point[0].hypot(point[1])));
    }
    parts.join(", ")
}
