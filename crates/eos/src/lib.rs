//! # binodal-eos
//!
//! Cubic equations of state for pure fluids: vapor pressure, saturation temperature,
//! saturated densities, enthalpy and entropy of vaporization, and the phase of a fluid at
//! a temperature and pressure with its margins to boiling, condensing and freezing.
//!
//! The main types:
//! - [`Model`]: van der Waals, Redlich-Kwong, Soave-Redlich-Kwong, Peng-Robinson 1976 and
//!   1978, all in one generic two-parameter cubic form ([`CubicConstants`]).
//! - [`Alpha`]: the temperature function of the attraction parameter: each model's
//!   generalized form, or a fitted Twu (1991) or Mathias-Copeman (1983) form.
//! - [`FluidConstants`]: what the engine needs to know of a fluid.
//! - [`PureEos`]: one fluid under one model with constants precomputed; it answers
//!   [`PureEos::saturation_at_temperature`], [`PureEos::saturation_at_pressure`] and
//!   [`PureEos::state`].
//! - [`fit_saturation`]: fits alpha parameters and a volume shift to reference data.
//! - [`Mixture`]: several fluids under one model with one-fluid mixing rules and `k_ij`:
//!   bubble and dew points, glide, flash (Michelsen stability, Rachford-Rice), and the
//!   phase of a mixture at (T, P) with margins to its bubble and dew points; [`fit_kij`]
//!   fits an interaction parameter to bubble pressures.
//! - [`SaturationCurve`]: a precomputed, verified saturation curve; an engine given one with
//!   [`PureEos::with_saturation_curve`] reads it instead of solving, and every result says
//!   which path produced it ([`SolvePath`]). A mixture's bubble and dew lines are two such
//!   curves ([`BoundaryCurves`], [`Mixture::with_boundary_curves`]).
//!
//! The crate does no I/O and knows nothing of async runtimes or wire formats. Inputs are
//! SI (K, Pa, mol); every failure is a typed [`Error`] naming the field and valid range.
//!
//! ```
//! use binodal_eos::{FluidConstants, Model, PureEos};
//!
//! // Propane: Tc, Pc, acentric factor (Poling, Prausnitz and O'Connell 2001, App. A).
//! let propane = FluidConstants::new("propane", 0.044_097, 369.83, 4.248e6, 0.152);
//! let eos = PureEos::new(&propane, Model::PengRobinson1978).unwrap();
//! let sat = eos.saturation_at_temperature(273.15).unwrap();
//! // NIST Chemistry WebBook: 0.4745 MPa at 0 °C; generalized Peng-Robinson is within 2 %.
//! assert!((sat.pressure_pa / 0.4745e6 - 1.0).abs() < 0.02);
//! assert!(sat.enthalpy_of_vaporization_j_per_mol > 0.0);
//! ```
#![deny(missing_docs)]

mod alpha;
mod classify;
mod cubic;
mod curve;
mod eos;
mod error;
mod fit;
mod fluid;
mod mixture;
mod model;
mod saturation;

pub use alpha::{Alpha, AlphaValue};
pub use classify::{
    MIN_STATE_PRESSURE_PA, Margins, Phase, SATURATION_TOLERANCE, SolidBoundary, State,
};
pub use cubic::{CubicRoots, Extreme, solve_cubic, solve_cubic_extreme, solve_cubic_extremes};
pub use curve::{
    BOUNDARY_CURVE_BAND, BOUNDARY_LIMIT_RESOLUTION_K, BoundaryCurves, BoundaryKind,
    CURVE_BUILD_TARGET, CURVE_CRITICAL_BAND, CURVE_DEGREE, CURVE_TOLERANCE, CurveReport,
    MixtureBoundaryLine, PhaseBoundary, PureSaturationLine, SaturationCurve, SolvePath, clenshaw,
    estrin,
};
pub use eos::{PhaseProperties, PureEos, ReferenceState};
pub use error::{Error, ErrorKind};
pub use fit::{AlphaForm, Deviation, FitReport, ReferencePoint, fit_saturation};
pub use fluid::{FluidConstants, GAS_CONSTANT, IdealGasCp, ModelFit, VolumeShift};
pub use mixture::{
    BinaryBubblePoint, Flash, Mixture, MixturePhase, MixtureState, PhaseBoundaryPoint, fit_kij,
    rachford_rice,
};
pub use model::{CubicConstants, Model};
pub use saturation::{NEAR_CRITICAL_BAND, Saturation};
