//! Integration tests of binodal-eos against published reference data.
//!
//! Modules:
//! - `util`: the reference tables (NIST Chemistry WebBook SRD 69, copied into tests/data
//!   with their source headers) and the constants of the five test fluids.
//! - `accuracy`: generalized and fitted models against the tables and IAPWS-IF97.
//! - `saturation`: coverage, round trips, the near-critical band, volume translation.
//! - `phases`: classification and margins.
//! - `curve`: precomputed saturation curves against the full solver.
//! - `errors`: bad input gives precise typed errors.
//! - `properties`: property-based tests over random fluids and states.
//! - `mixtures`: bubble and dew points, flash, the k_ij fit.

mod accuracy;
mod curve;
mod errors;
mod mixtures;
mod phases;
mod properties;
mod saturation;
mod util;
