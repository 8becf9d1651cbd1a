//! The [`Background`] seam: an equilibrium state evaluated at points given in
//! the named coordinates of its [`Frame`], a block of points at a time.
//! Closures build backgrounds; samplers, checks and tables read them.
//!
//! Owns: the frames (which coordinates a background takes and in which basis
//! it returns vectors), the point state [`State`], the block of states
//! [`StateBlock`] and the trait. Does not own any solver, grid or sampling
//! rule: a grid maps its own points to frame coordinates and rotates the
//! frame's vectors into its own components (see [`crate::grid`]).

/// The most points a block holds. Samplers hand backgrounds blocks of at
/// most this many points; a compiled program runs each instruction over the
/// block's lanes.
pub const LANES: usize = 256;

/// The coordinates a background is evaluated in, and the orthonormal basis
/// of the vectors it returns.
///
/// | frame | coordinates | vector basis |
/// |---|---|---|
/// | `Slab` | the slab coordinate `s` (named `z` in laws) | (e_s, –, –) |
/// | `Spherical` | `r` | (e_r, e_θ, e_φ) |
/// | `Axisymmetric` | `R`, `z` | (e_R, e_φ, e_z) |
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Frame {
    /// Plane-parallel: one coordinate across the layers.
    Slab,
    /// Spherically symmetric about the origin.
    Spherical,
    /// Axisymmetric about the z axis (disks, tori, rotating envelopes).
    Axisymmetric,
}

impl Frame {
    /// The names of the frame's coordinates, in the order [`Background::at`]
    /// takes them.
    pub fn coordinates(self) -> &'static [&'static str] {
        match self {
            Frame::Slab => &["z"],
            Frame::Spherical => &["r"],
            Frame::Axisymmetric => &["R", "z"],
        }
    }

    /// How many coordinates the frame has.
    pub fn dims(self) -> usize {
        self.coordinates().len()
    }

    /// The names of the three basis vectors (`-` where unused).
    pub fn basis(self) -> [&'static str; 3] {
        match self {
            Frame::Slab => ["z", "-", "-"],
            Frame::Spherical => ["r", "theta", "phi"],
            Frame::Axisymmetric => ["R", "phi", "z"],
        }
    }
}

/// Which balance a model solves (the profile's `balance.shape`), and so the
/// coordinate its laws are written in.
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
    /// An axisymmetric disk with its vertical structure, laws in R and z:
    /// v_φ²/R = ∂Φ/∂R + (1/ρ) ∂P/∂R and 0 = ∂Φ/∂z + (1/ρ) ∂P/∂z.
    StratifiedDisk,
}

impl Shape {
    /// The name of the balance coordinate (`z`, `r` or `R`).
    pub fn coordinate(self) -> &'static str {
        match self {
            Shape::Slab => "z",
            Shape::Spherical => "r",
            Shape::DiskMidplane | Shape::StratifiedDisk => "R",
        }
    }

    /// The coordinates its laws may be written in, in the order compiled
    /// programs take them: the balance coordinate, and z for a stratified
    /// disk.
    pub fn variables(self) -> &'static [&'static str] {
        match self {
            Shape::StratifiedDisk => &["R", "z"],
            _ => std::slice::from_ref(match self {
                Shape::Slab => &"z",
                Shape::Spherical => &"r",
                _ => &"R",
            }),
        }
    }

    /// Whether it is a rotating disk (midplane or stratified).
    pub fn is_disk(self) -> bool {
        matches!(self, Shape::DiskMidplane | Shape::StratifiedDisk)
    }

    /// The frame a background of this balance is evaluated in.
    pub fn frame(self) -> Frame {
        match self {
            Shape::Slab => Frame::Slab,
            Shape::Spherical => Frame::Spherical,
            Shape::DiskMidplane | Shape::StratifiedDisk => Frame::Axisymmetric,
        }
    }
}

impl crate::keys::Keyed for Shape {
    const KEYS: &'static [(Shape, &'static str)] = &[
        (Shape::Slab, "slab"),
        (Shape::Spherical, "sphere"),
        (Shape::DiskMidplane, "disk"),
        (Shape::StratifiedDisk, "stratified_disk"),
    ];
}

/// Which parts of a state a caller needs: accelerations cost extra work and
/// are computed only when asked for.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Want {
    /// The gravitational acceleration −∇Φ and the pressure-gradient
    /// acceleration −∇P/ρ.
    pub accelerations: bool,
}

/// The equilibrium at one point. Vectors are in the frame's basis
/// ([`Frame::basis`]).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct State {
    /// Mass density ρ (a surface density Σ for vertically integrated disks).
    pub density: f64,
    /// Pressure P (vertically integrated for vertically integrated disks).
    pub pressure: f64,
    /// Gravitational potential Φ.
    pub potential: f64,
    /// Velocity.
    pub velocity: [f64; 3],
    /// Gravitational acceleration −∇Φ (NaN when not asked for or not known).
    pub gravity: [f64; 3],
    /// Pressure-gradient acceleration −∇P/ρ (NaN when not asked for or not
    /// known).
    pub pressure_accel: [f64; 3],
}

impl State {
    /// Isothermal sound speed squared, c² = P/ρ.
    pub fn sound_speed_sq(&self) -> f64 {
        self.pressure / self.density
    }

    /// The azimuthal velocity v_φ of an axisymmetric state (the second basis
    /// vector), zero otherwise.
    pub fn rotation(&self) -> f64 {
        self.velocity[1]
    }

    /// A state of density, pressure and potential at rest; accelerations are
    /// not known.
    pub fn at_rest(density: f64, pressure: f64, potential: f64) -> State {
        State {
            density,
            pressure,
            potential,
            velocity: [0.0; 3],
            gravity: [f64::NAN; 3],
            pressure_accel: [f64::NAN; 3],
        }
    }

    /// An axisymmetric state rotating with v_φ; accelerations are not known.
    pub fn rotating(density: f64, pressure: f64, potential: f64, v_phi: f64) -> State {
        State {
            velocity: [0.0, v_phi, 0.0],
            ..State::at_rest(density, pressure, potential)
        }
    }
}

/// States at up to [`LANES`] points, one array per quantity (structure of
/// arrays), so that a compiled program writes each quantity as a slice.
/// Allocated once per thread and reused.
#[derive(Clone, Debug)]
pub struct StateBlock {
    /// Number of points held (≤ [`LANES`]).
    pub len: usize,
    /// ρ.
    pub density: Vec<f64>,
    /// P.
    pub pressure: Vec<f64>,
    /// Φ.
    pub potential: Vec<f64>,
    /// Velocity components in the frame basis.
    pub velocity: [Vec<f64>; 3],
    /// −∇Φ in the frame basis (filled when [`Want::accelerations`]).
    pub gravity: [Vec<f64>; 3],
    /// −∇P/ρ in the frame basis (filled when [`Want::accelerations`]).
    pub pressure_accel: [Vec<f64>; 3],
}

impl Default for StateBlock {
    fn default() -> Self {
        StateBlock::new()
    }
}

impl StateBlock {
    /// An empty block with room for [`LANES`] points.
    pub fn new() -> StateBlock {
        let v = || vec![0.0; LANES];
        StateBlock {
            len: 0,
            density: v(),
            pressure: v(),
            potential: v(),
            velocity: [v(), v(), v()],
            gravity: [v(), v(), v()],
            pressure_accel: [v(), v(), v()],
        }
    }

    /// Store `s` as the state of lane `i`.
    pub fn set(&mut self, i: usize, s: &State) {
        self.density[i] = s.density;
        self.pressure[i] = s.pressure;
        self.potential[i] = s.potential;
        for c in 0..3 {
            self.velocity[c][i] = s.velocity[c];
            self.gravity[c][i] = s.gravity[c];
            self.pressure_accel[c][i] = s.pressure_accel[c];
        }
    }

    /// The state of lane `i`.
    pub fn get(&self, i: usize) -> State {
        let pick = |v: &[Vec<f64>; 3]| [v[0][i], v[1][i], v[2][i]];
        State {
            density: self.density[i],
            pressure: self.pressure[i],
            potential: self.potential[i],
            velocity: pick(&self.velocity),
            gravity: pick(&self.gravity),
            pressure_accel: pick(&self.pressure_accel),
        }
    }
}

/// Scratch memory a background may use while evaluating a block (register
/// files of compiled programs, node buffers of tabulated integrals).
/// Allocated once per thread by [`Background::workspace`] and reused.
#[derive(Debug, Default)]
pub struct Workspace {
    /// Scratch buffers, used as the background sees fit (outputs of
    /// compiled programs, node buffers, …).
    pub buffers: Vec<Vec<f64>>,
    /// Register files of compiled programs.
    pub kernels: Vec<crate::formula::Workspace>,
}

/// An equilibrium state that can be evaluated at any point inside the domain
/// it was built for, in the coordinates of its [`Frame`].
///
/// Implement [`Background::at`]; the block method has a default that calls
/// it point by point. Backgrounds built from compiled formulas override
/// [`Background::eval`] to run each instruction over the whole block, and
/// implement `at` with the same program on one lane, so that both agree to
/// the bit.
///
/// ```
/// use stillpoint::background::{Background, Frame, State};
/// /// An isothermal slab ρ = e^(−z), P = ρ, Φ = z (g = c² = 1).
/// struct Slab;
/// impl Background for Slab {
///     fn frame(&self) -> Frame { Frame::Slab }
///     fn at(&self, x: &[f64]) -> State {
///         let rho = (-x[0]).exp();
///         State::at_rest(rho, rho, x[0])
///     }
/// }
/// assert!((Slab.at(&[1.0]).sound_speed_sq() - 1.0).abs() < 1e-15);
/// ```
pub trait Background: Sync {
    /// The frame whose coordinates [`Background::at`] takes.
    fn frame(&self) -> Frame;

    /// The state at one point, `x` holding the frame's coordinates in the
    /// order of [`Frame::coordinates`]. Outside the domain the background was
    /// built for, fields may be NaN.
    fn at(&self, x: &[f64]) -> State;

    /// Which frame coordinates the state depends on (all, unless the
    /// background says otherwise): a sampler does not evaluate along an axis
    /// that maps only to coordinates the state ignores.
    fn depends_on(&self) -> [bool; 2] {
        [true, self.frame().dims() > 1]
    }

    /// Scratch memory for [`Background::eval`] on one thread.
    fn workspace(&self) -> Workspace {
        Workspace::default()
    }

    /// The states at `coords[0].len()` points (at most [`LANES`]): `coords`
    /// holds one slice per frame coordinate. Fills `out` (and sets
    /// `out.len`); accelerations only when `want` asks for them.
    fn eval(&self, coords: &[&[f64]], want: Want, out: &mut StateBlock, ws: &mut Workspace) {
        let _ = (want, ws);
        let n = coords[0].len();
        let mut x = [0.0; 2];
        for i in 0..n {
            for (k, c) in coords.iter().enumerate() {
                x[k] = c[i];
            }
            out.set(i, &self.at(&x[..coords.len()]));
        }
        out.len = n;
    }

    /// The state on the frame's first coordinate line (the radial or vertical
    /// line; the midplane z = 0 of an axisymmetric frame).
    fn on_line(&self, s: f64) -> State {
        match self.frame().dims() {
            1 => self.at(&[s]),
            _ => self.at(&[s, 0.0]),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Disk;
    impl Background for Disk {
        fn frame(&self) -> Frame {
            Frame::Axisymmetric
        }
        fn at(&self, x: &[f64]) -> State {
            State::rotating(
                1.0 / x[0],
                0.1 / x[0],
                -1.0 / x[0].hypot(x[1]),
                x[0].powf(-0.5),
            )
        }
    }

    #[test]
    fn default_block_path_is_the_point_path() {
        let r = [0.5, 1.0, 2.0];
        let z = [0.0, 0.1, -0.2];
        let mut out = StateBlock::new();
        let mut ws = Disk.workspace();
        Disk.eval(&[&r, &z], Want::default(), &mut out, &mut ws);
        assert_eq!(out.len, 3);
        for i in 0..3 {
            let s = Disk.at(&[r[i], z[i]]);
            assert_eq!(out.get(i).density.to_bits(), s.density.to_bits());
            assert_eq!(out.get(i).rotation().to_bits(), s.rotation().to_bits());
        }
        assert!((Disk.on_line(2.0).potential + 0.5).abs() < 1e-15);
        assert_eq!(Frame::Axisymmetric.basis()[1], "phi");
        assert_eq!(Disk.depends_on(), [true, true]);
    }
}
