//! stillpoint: exact equilibrium states and initial conditions for
//! astrophysical gas-dynamics simulations.
//!
//! The library follows one data flow (see `DEVELOPERS.md`):
//!
//! ```text
//! profile (JSON) ─▶ model ─▶ background ─▶ sampler ─▶ fields ─▶ writers
//!                     │          └─▶ checks / tables
//!                     └─▶ derive (formulas)
//! ```
//!
//! * [`formula`] — our own symbolic engine: parse, differentiate, simplify,
//!   compile, print. It knows nothing of physics.
//! * [`units`] — unit systems and physical constants with their sources.
//! * [`physics`] — gravity (potentials) and the ideal-gas sound speed, as formulas.
//! * [`model`] — the resolved description of one equilibrium problem.
//! * [`closure`] — solvers that turn given laws into a [`background::Background`].
//! * [`grid`] and [`sample`] — axes, cells and sampling rules that turn a
//!   background into arrays of numbers ([`fields`]).
//! * [`output`] — writers (HDF5, CSV); a writer never computes physics.
//! * [`perturb`] — pulses, planets, noise, modes, sound waves and formulas
//!   added to the equilibrium, point by point.
//! * [`torus`] — a barotropic torus (Bernoulli relation, edges by root
//!   finding, a floor outside), a background of the (R, z) frame.
//! * [`check`], [`table`] — the symbolic balance check and rotation tables.
//! * [`stability`] — Schwarzschild and Rayleigh criteria from exact derivatives.
//! * [`criteria`] — the stability section of `check` (κ², Solberg–Høiland,
//!   N², vertical shear, Toomre Q), each with its extremes and failures.
//! * [`profile`] — the JSON profile schema with exact error paths.
//! * [`estimate`] — what a build will cost, and the refusal of one that
//!   would not fit.
//! * [`plot`] — pictures of a profile (curves, slices, the residual) as
//!   PNG or SVG; [`progress`] — the progress bar of a build.
//! * [`cli`] — the command line (the binary is a thin shell around it).
#![deny(clippy::float_cmp)]

pub mod background;
pub mod check;
pub mod cli;
pub mod closure;
pub mod confirm;
pub mod criteria;
pub mod drift;
pub mod emit;
pub mod estimate;
pub mod fields;
pub mod forcing;
pub mod formula;
pub mod grid;
pub mod keys;
pub mod model;
pub mod output;
#[cfg(feature = "mpi")]
pub mod parallel;
pub mod perturb;
pub mod physics;
pub mod pipeline;
pub mod plot;
pub mod profile;
pub mod progress;
pub mod sample;
pub mod stability;
pub mod table;
pub mod torus;
pub mod torus_run;
pub mod units;
