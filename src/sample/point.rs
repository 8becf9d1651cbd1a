//! What the sampler computes at one point of the grid, and how the per-cell
//! results become named fields.
//!
//! Owns: the accumulator slots (density, pressure, potential, sound speed,
//! temperature, energy, momentum and velocity components), the evaluation of
//! a [`Background`] at a grid point with its positivity and finiteness checks,
//! and the names and dimensions of the fields written. Does not own the
//! quadrature or the loop over cells (see the parent module).

use super::{GasConstants, SampleError};
use crate::background::Background;
use crate::fields::Field;
use crate::grid::{Grid, Layout};
use crate::units::Dim;

// Slots of the per-point and per-cell accumulators.
pub(super) const RHO: usize = 0;
pub(super) const PRES: usize = 1;
pub(super) const POT: usize = 2;
pub(super) const CS: usize = 3;
pub(super) const TEMP: usize = 4;
pub(super) const ENERGY: usize = 5;
pub(super) const MOM: usize = 6; // MOM, MOM + 1: momentum components
pub(super) const VEL: usize = 8; // VEL, VEL + 1: velocity components
pub(super) const SLOTS: usize = 10;

/// Evaluates the pointwise quantities (the accumulator slots) at one point.
pub(super) struct PointSampler<'a> {
    pub(super) bg: &'a dyn Background,
    pub(super) grid: &'a Grid,
    pub(super) gas: &'a GasConstants,
    pub(super) ncomp: usize,
}

impl PointSampler<'_> {
    pub(super) fn at(&self, point: &[f64], out: &mut [f64; SLOTS]) -> Result<(), SampleError> {
        let s = self.grid.background_coordinate(point);
        let st = self.bg.at(s);
        let check = |field: &'static str, value: f64, positive: bool| {
            if !value.is_finite() {
                Err(SampleError::NonFinite {
                    field,
                    value,
                    at: self.describe(point),
                })
            } else if positive && value <= 0.0 {
                Err(SampleError::NonPositive {
                    field,
                    value,
                    at: self.describe(point),
                })
            } else {
                Ok(())
            }
        };
        check("density", st.density, true)?;
        check("pressure", st.pressure, true)?;
        check("rotation velocity", st.rotation, false)?;
        check("potential", st.potential, false)?;
        let c2 = st.pressure / st.density;
        let mut e_phi = [0.0; 2];
        self.grid.azimuthal_unit(point, &mut e_phi[..self.ncomp]);
        out[RHO] = st.density;
        out[PRES] = st.pressure;
        out[POT] = st.potential;
        out[CS] = c2.sqrt();
        out[TEMP] = self.gas.temperature_per_c2.map_or(0.0, |k| k * c2);
        // An isothermal gas has no energy field (see `assemble`).
        out[ENERGY] = if crate::physics::is_isothermal(self.gas.gamma) {
            0.0
        } else {
            st.pressure / (self.gas.gamma - 1.0) + 0.5 * st.density * st.rotation * st.rotation
        };
        for c in 0..self.ncomp {
            let v = st.rotation * e_phi[c];
            out[VEL + c] = v;
            out[MOM + c] = st.density * v;
        }
        Ok(())
    }

    /// "R = 1.5, phi = 0.2", with the background coordinate added on a
    /// Cartesian grid.
    fn describe(&self, point: &[f64]) -> String {
        let mut parts: Vec<String> = self
            .grid
            .axes()
            .iter()
            .zip(point)
            .map(|(a, x)| format!("{} = {x}", a.coord.name()))
            .collect();
        if self.grid.layout() == Layout::Cartesian {
            let last = parts.pop().unwrap_or_default();
            parts.push(format!(
                "{last} (R = {})",
                self.grid.background_coordinate(point)
            ));
        }
        parts.join(", ")
    }
}

/// Turns the accumulator columns into named fields with their dimensions.
pub(super) fn assemble(grid: &Grid, gas: &GasConstants, mut columns: Vec<Vec<f64>>) -> Vec<Field> {
    let (density, pressure) = if gas.vertically_integrated {
        (Dim::SURFACE_DENSITY, Dim::new(0, 1, -2, 0))
    } else {
        (Dim::DENSITY, Dim::new(-1, 1, -2, 0))
    };
    let mut take = |slot: usize| std::mem::take(&mut columns[slot]);
    let field = |name: String, dim: Dim, data: Vec<f64>| Field { name, dim, data };
    let comps = grid.velocity_components();
    let mut fields = vec![
        field("density".into(), density, take(RHO)),
        field("pressure".into(), pressure, take(PRES)),
    ];
    for (c, coord) in comps.iter().enumerate() {
        fields.push(field(
            format!("velocity_{}", coord.name()),
            Dim::VELOCITY,
            take(VEL + c),
        ));
    }
    for (c, coord) in comps.iter().enumerate() {
        let dim = density.times(Dim::VELOCITY);
        fields.push(field(
            format!("momentum_{}", coord.name()),
            dim,
            take(MOM + c),
        ));
    }
    if !crate::physics::is_isothermal(gas.gamma) {
        fields.push(field("energy".into(), pressure, take(ENERGY)));
    }
    fields.push(field("sound_speed".into(), Dim::VELOCITY, take(CS)));
    if gas.temperature_per_c2.is_some() {
        fields.push(field("temperature".into(), Dim::TEMPERATURE, take(TEMP)));
    }
    fields.push(field("potential".into(), Dim::VELOCITY_SQ, take(POT)));
    fields
}
