//! The [`Background`] seam: an equilibrium state that can be evaluated at any
//! coordinate. Closures build backgrounds; samplers, checks and tables read
//! them. This module owns the trait and the point state, not any solver.

use std::collections::HashMap;
use std::sync::Mutex;

/// Which one-dimensional balance a background satisfies, and so which
/// coordinate [`Background::at`] takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum Shape {
    /// Plane-parallel slab along `z`: dP/dz = −ρ dΦ/dz.
    Slab,
    /// Spherically symmetric hydrostatic balance along `r`: dP/dr = −ρ dΦ/dr.
    Spherical,
    /// Midplane of an axisymmetric rotating disk along `R`:
    /// v_φ²/R = ∂Φ/∂R + (1/ρ) ∂P/∂R.
    DiskMidplane,
}

impl Shape {
    /// The name of the background coordinate (`z`, `r` or `R`).
    pub fn coordinate(self) -> &'static str {
        match self {
            Shape::Slab => "z",
            Shape::Spherical => "r",
            Shape::DiskMidplane => "R",
        }
    }
}

impl crate::keys::Keyed for Shape {
    const KEYS: &'static [(Shape, &'static str)] = &[
        (Shape::Slab, "slab"),
        (Shape::Spherical, "sphere"),
        (Shape::DiskMidplane, "disk"),
    ];
}

/// The equilibrium at one point. Velocities other than the azimuthal
/// rotation are zero in every background built so far.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PointState {
    /// Mass density ρ (a surface density Σ for vertically integrated disks).
    pub density: f64,
    /// Pressure P (vertically integrated for vertically integrated disks).
    pub pressure: f64,
    /// Azimuthal velocity v_φ (zero for slabs and spheres).
    pub rotation: f64,
    /// Gravitational potential Φ.
    pub potential: f64,
}

impl PointState {
    /// Isothermal sound speed squared, c² = P/ρ.
    pub fn sound_speed_sq(&self) -> f64 {
        self.pressure / self.density
    }
}

/// An equilibrium state that can be evaluated at any coordinate inside the
/// domain it was built for.
///
/// ```
/// use stillpoint::background::{Background, PointState, Shape};
/// /// An isothermal slab ρ = e^(−z), P = ρ, Φ = z (g = c² = 1).
/// struct Slab;
/// impl Background for Slab {
///     fn shape(&self) -> Shape { Shape::Slab }
///     fn at(&self, z: f64) -> PointState {
///         let rho = (-z).exp();
///         PointState { density: rho, pressure: rho, rotation: 0.0, potential: z }
///     }
/// }
/// assert!((Slab.at(1.0).sound_speed_sq() - 1.0).abs() < 1e-15);
/// ```
pub trait Background: Sync {
    /// The balance this background satisfies.
    fn shape(&self) -> Shape;
    /// The state at coordinate `s` (`z`, `r` or `R`, see [`Shape::coordinate`]).
    /// Outside the domain the background was built for, fields may be NaN.
    fn at(&self, s: f64) -> PointState;
}

/// A background that remembers every state it has evaluated, keyed by the
/// exact coordinate. Grids repeat coordinates (every φ of a polar ring, the
/// mirror cells of a symmetric Cartesian box), so a background whose `at` is
/// costly — an integrated closure runs a quadrature per call — is evaluated
/// once per distinct coordinate. The cache is split into shards so that
/// parallel samplers rarely wait on one another.
pub struct Memoized<'a> {
    inner: &'a dyn Background,
    shards: Vec<Mutex<HashMap<u64, PointState>>>,
}

const SHARDS: usize = 64;

impl<'a> Memoized<'a> {
    /// Wrap a background.
    pub fn new(inner: &'a dyn Background) -> Memoized<'a> {
        Memoized {
            inner,
            shards: (0..SHARDS).map(|_| Mutex::default()).collect(),
        }
    }
}

impl Background for Memoized<'_> {
    fn shape(&self) -> Shape {
        self.inner.shape()
    }

    fn at(&self, s: f64) -> PointState {
        // +0.0 and −0.0 are the same point.
        let key = if s == 0.0 { 0 } else { s.to_bits() };
        // Mix the bits so that neighbouring coordinates spread over shards.
        let shard = &self.shards[(key.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 58) as usize];
        if let Some(st) = shard.lock().ok().and_then(|c| c.get(&key).copied()) {
            return st;
        }
        let st = self.inner.at(s);
        if let Ok(mut c) = shard.lock() {
            c.insert(key, st);
        }
        st
    }
}
