//! Independent oracles for the reference tests of the Bandwright core.
//!
//! Nothing here calls the core's MNA code: the oracles compute responses by other routes, so that
//! a test comparing the two can catch a fault in either.
//!
//! - [`abcd`] computes the response of a ladder (a cascade of series impedances and shunt
//!   admittances between a Thevenin source and a load) by multiplying ABCD (chain) matrices.
//! - [`prototype`] gives the normalised low-pass prototype element values (g-values) of the
//!   Butterworth and Chebyshev responses from their closed forms, and denormalises them into a
//!   doubly terminated ladder.
//!
//! The only contact with the core is writing the same ladder as a [`bandwright::Circuit`] so that
//! the core can solve it ([`abcd::Ladder::to_circuit`], [`prototype::ladder_circuit`]); that only
//! adds parts to a builder.
//!
//! Conventions follow the core: SI units, e^{jωt}, ω in rad/s, H = V(load) / EMF.

pub mod abcd;
pub mod prototype;
