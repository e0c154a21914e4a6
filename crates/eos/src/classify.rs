//! Phase classification at (T, P) with margins to saturation and to freezing.
//!
//! The solid region is an estimate: the cubic models know no solid, so its boundary is
//! drawn from the triple point with Clausius-Clapeyron-type relations: a sublimation
//! curve below the triple-point temperature, `ln(P/Ptp) = -dH_sub/R (1/T - 1/Ttp)` with
//! `dH_sub = dH_fus + dH_vap(Ttp)`, and a melting line above it from Clapeyron's
//! equation with constant `dH_fus / dV_fus`, `P = Ptp + dH_fus/dV_fus ln(T/Ttp)`.
//! Results in or near the solid region are flagged as estimated.

use crate::cubic::Extreme;
use crate::curve::SolvePath;
use crate::eos::{PhaseProperties, PureEos};
use crate::error::{Error, positive};
use crate::fluid::GAS_CONSTANT as R;
use crate::model::Model;

/// Relative pressure tolerance within which a state counts as saturated.
pub const SATURATION_TOLERANCE: f64 = 1e-6;

/// Lowest pressure at which a state is computed, Pa: far below the best laboratory vacuum
/// (about 1e-10 Pa, common practice), and far enough above zero that the molar volume
/// `Z R T / P` stays a finite number (at 1.8e-308 Pa it overflowed to infinity, found by the
/// property tests).
pub const MIN_STATE_PRESSURE_PA: f64 = 1e-12;

/// The phase of a pure fluid at (T, P).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Phase {
    /// Liquid below its critical temperature at a pressure above its vapor pressure.
    SubcooledLiquid,
    /// Vapor at a pressure below its vapor pressure (or below the sublimation pressure).
    SuperheatedVapor,
    /// On the saturation curve within [`SATURATION_TOLERANCE`].
    Saturated,
    /// Above both the critical temperature and the critical pressure.
    SupercriticalFluid,
    /// Above the critical temperature but below the critical pressure.
    GasAboveCriticalTemperature,
    /// In the estimated solid region (see the module documentation).
    SolidEstimated,
    /// A mixture between its bubble and dew points, split into liquid and vapor.
    TwoPhase,
}

impl Phase {
    /// A stable identifier, e.g. `subcooled-liquid`.
    pub fn id(self) -> &'static str {
        match self {
            Phase::SubcooledLiquid => "subcooled-liquid",
            Phase::SuperheatedVapor => "superheated-vapor",
            Phase::Saturated => "saturated",
            Phase::SupercriticalFluid => "supercritical-fluid",
            Phase::GasAboveCriticalTemperature => "gas-above-critical-temperature",
            Phase::SolidEstimated => "solid-estimated",
            Phase::TwoPhase => "two-phase",
        }
    }
}

/// How far a state is from changing phase.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Margins {
    /// Vapor pressure at this temperature, Pa (where the temperature is in the two-phase range).
    pub saturation_pressure_pa: Option<f64>,
    /// Saturation temperature at this pressure, K (where the pressure is in the two-phase range).
    pub saturation_temperature_k: Option<f64>,
    /// `T - Tsat(P)`, K: positive is superheat, negative is subcooling.
    pub temperature_margin_k: Option<f64>,
    /// Subcooling `Tsat(P) - T` for a liquid, K.
    pub subcooling_k: Option<f64>,
    /// Superheat `T - Tsat(P)` for a vapor, K.
    pub superheat_k: Option<f64>,
    /// `P - Psat(T)`, Pa: positive on the liquid side (margin to boiling), negative on the
    /// vapor side (margin to condensation).
    pub pressure_margin_pa: Option<f64>,
    /// `T - T_solid(P)`, K: distance above the estimated freezing (or deposition) temperature.
    pub freezing_margin_k: Option<f64>,
}

/// A classified state with its properties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct State {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Pressure, Pa.
    pub pressure_pa: f64,
    /// The phase.
    pub phase: Phase,
    /// Properties of the fluid phase (for a solid estimate: of the metastable fluid,
    /// since the models have no solid; flagged by `estimated`).
    pub properties: PhaseProperties,
    /// Margins to phase change.
    pub margins: Margins,
    /// `T / Tc`.
    pub reduced_temperature: f64,
    /// `P / Pc`.
    pub reduced_pressure: f64,
    /// The phase rests on the estimated solid boundary (the freezing margin always does).
    pub estimated: bool,
    /// Within 2 % of Tc and 10 % of Pc, where cubic models are least accurate
    /// (`common practice`).
    pub near_critical: bool,
    /// h, s or cp used the ideal-gas heat capacity outside its correlation's range.
    pub ideal_gas_extrapolated: bool,
    /// The model that produced this result.
    pub model: Model,
    /// [`SolvePath::Curve`] when the saturation pressure and temperature of the margins came
    /// from the engine's precomputed curve; [`SolvePath::FullSolve`] when any came from the
    /// full solver, or when the state needed none (above the saturation line's range).
    pub path: SolvePath,
}

/// The estimated solid boundary, anchored at the model's own triple point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolidBoundary {
    /// Triple-point temperature, K.
    pub triple_temperature_k: f64,
    /// Vapor pressure of the model at the triple-point temperature, Pa.
    pub triple_pressure_pa: f64,
    /// Heat of fusion, J/mol.
    pub heat_of_fusion_j_per_mol: f64,
    /// Heat of sublimation = fusion + the model's vaporization at the triple point, J/mol.
    pub heat_of_sublimation_j_per_mol: f64,
    /// Volume change on melting, m^3/mol (negative for water).
    pub melting_volume_change_m3_per_mol: f64,
}

impl SolidBoundary {
    pub(crate) fn estimate(eos: &PureEos) -> Result<Option<SolidBoundary>, Error> {
        let (Some(tt), Some(hfus)) = (eos.triple_t, eos.heat_of_fusion) else {
            return Ok(None);
        };
        let sat = eos.solve_saturation_pressure_unchecked(tt)?;
        let s = eos.saturation_from_point(tt, sat);
        Ok(Some(SolidBoundary {
            triple_temperature_k: tt,
            triple_pressure_pa: sat.pressure,
            heat_of_fusion_j_per_mol: hfus,
            heat_of_sublimation_j_per_mol: hfus + s.enthalpy_of_vaporization_j_per_mol,
            melting_volume_change_m3_per_mol: eos.melting_dv_fraction
                * s.liquid.molar_volume_m3_per_mol,
        }))
    }

    /// Estimated sublimation pressure below the triple point, Pa.
    pub fn sublimation_pressure_pa(&self, t: f64) -> f64 {
        let tt = self.triple_temperature_k;
        self.triple_pressure_pa
            * (-self.heat_of_sublimation_j_per_mol / R * (1.0 / t - 1.0 / tt)).exp()
    }

    /// Estimated melting pressure at `t`, Pa.
    pub fn melting_pressure_pa(&self, t: f64) -> f64 {
        self.triple_pressure_pa
            + self.heat_of_fusion_j_per_mol / self.melting_volume_change_m3_per_mol
                * (t / self.triple_temperature_k).ln()
    }

    /// Estimated temperature below which the fluid is solid at pressure `p`, K.
    pub fn solid_temperature_k(&self, p: f64) -> f64 {
        let tt = self.triple_temperature_k;
        if p >= self.triple_pressure_pa {
            tt * (self.melting_volume_change_m3_per_mol * (p - self.triple_pressure_pa)
                / self.heat_of_fusion_j_per_mol)
                .exp()
        } else {
            1.0 / (1.0 / tt
                - R * (p / self.triple_pressure_pa).ln() / self.heat_of_sublimation_j_per_mol)
        }
    }

    /// Whether (T, P) lies in the estimated solid region.
    pub fn is_solid(&self, t: f64, p: f64) -> bool {
        let tt = self.triple_temperature_k;
        let expands_on_melting = self.melting_volume_change_m3_per_mol > 0.0;
        if t < tt {
            p >= self.sublimation_pressure_pa(t)
                && (expands_on_melting || p <= self.melting_pressure_pa(t))
        } else {
            expands_on_melting && p >= self.melting_pressure_pa(t)
        }
    }
}

impl PureEos {
    /// The estimated solid boundary, where triple point and heat of fusion are known.
    pub fn solid_boundary(&self) -> Option<&SolidBoundary> {
        self.solid.as_ref()
    }

    /// Valid temperature range of [`PureEos::state`], K: from half the triple-point
    /// temperature (where a solid estimate exists; else from the minimum temperature) to
    /// the larger of 5 Tc and 1500 K.
    pub fn state_temperature_range_k(&self) -> (f64, f64) {
        let lo = match &self.solid {
            Some(s) => 0.5 * s.triple_temperature_k,
            None => self.minimum_temperature_k(),
        };
        (lo, (5.0 * self.critical_temperature_k()).max(1500.0))
    }

    /// Valid pressure range of [`PureEos::state`], Pa: [`MIN_STATE_PRESSURE_PA`] to 100 Pc.
    pub fn state_pressure_range_pa(&self) -> (f64, f64) {
        (MIN_STATE_PRESSURE_PA, 100.0 * self.critical_pressure_pa())
    }

    /// Classifies (T, P) and computes the properties and margins there.
    pub fn state(&self, temperature_k: f64, pressure_pa: f64) -> Result<State, Error> {
        let t = positive("temperature_k", temperature_k)?;
        let p = positive("pressure_pa", pressure_pa)?;
        let (t_lo, t_hi) = self.state_temperature_range_k();
        if t < t_lo || t > t_hi {
            return Err(Error::out_of_range("temperature_k", t, t_lo, t_hi, "K"));
        }
        let (p_lo, p_hi) = self.state_pressure_range_pa();
        if p < p_lo || p > p_hi {
            return Err(Error::out_of_range("pressure_pa", p, p_lo, p_hi, "Pa"));
        }
        let tc = self.critical_temperature_k();
        let pc = self.critical_pressure_pa();
        let (tr, pr) = (t / tc, p / pc);
        let mut margins = Margins::default();
        let mut estimated = false;

        if let Some(solid) = &self.solid {
            margins.freezing_margin_k = Some(t - solid.solid_temperature_k(p));
        }

        // Saturation margins where the temperature and pressure are in the two-phase range:
        // from the curve where the engine has one that covers them, else from the solver.
        let (mut from_curve, mut from_solver) = (false, false);
        let t_top = self.saturation_temperature_limit_k();
        let in_sat_t = t >= self.minimum_temperature_k() && t <= t_top;
        if in_sat_t {
            let psat = match self.curve_pressure(t) {
                Some(psat) => {
                    from_curve = true;
                    psat
                }
                None => {
                    from_solver = true;
                    self.solve_saturation_pressure_unchecked(t)?.pressure
                }
            };
            margins.saturation_pressure_pa = Some(psat);
            margins.pressure_margin_pa = Some(p - psat);
        }
        let (sp_lo, sp_hi) = self.saturation_pressure_range_pa();
        if p >= sp_lo && p <= sp_hi {
            let tsat = match self.curve_temperature(p) {
                Some(tsat) => {
                    from_curve = true;
                    tsat
                }
                None => {
                    from_solver = true;
                    self.saturation_temperature_unchecked(p)?
                }
            };
            margins.saturation_temperature_k = Some(tsat);
            margins.temperature_margin_k = Some(t - tsat);
        }
        let path = if from_curve && !from_solver {
            SolvePath::Curve
        } else {
            SolvePath::FullSolve
        };

        let phase = if self.solid.as_ref().is_some_and(|s| s.is_solid(t, p)) {
            estimated = true;
            Phase::SolidEstimated
        } else if t >= tc {
            if p >= pc {
                Phase::SupercriticalFluid
            } else {
                Phase::GasAboveCriticalTemperature
            }
        } else if let Some(psat) = margins.saturation_pressure_pa {
            if ((p - psat) / psat).abs() <= SATURATION_TOLERANCE {
                Phase::Saturated
            } else if p > psat {
                Phase::SubcooledLiquid
            } else {
                Phase::SuperheatedVapor
            }
        } else if t > t_top {
            // Inside the near-critical band: the vapor pressure is within a few parts per
            // million of Pc; compare with Pc.
            if p >= pc {
                Phase::SubcooledLiquid
            } else {
                Phase::SuperheatedVapor
            }
        } else {
            // Below the minimum temperature and not solid: vapor below the sublimation curve,
            // or (for a fluid that contracts on melting) compressed liquid.
            match &self.solid {
                Some(s) if p >= s.sublimation_pressure_pa(t) => Phase::SubcooledLiquid,
                _ => Phase::SuperheatedVapor,
            }
        };
        match phase {
            Phase::SubcooledLiquid => {
                margins.subcooling_k = margins.temperature_margin_k.map(|m| -m)
            }
            Phase::SuperheatedVapor => margins.superheat_k = margins.temperature_margin_k,
            _ => {}
        }

        // The temperature terms once for the root and the properties; only the root the
        // phase needs is polished.
        let at = self.at_temperature(t);
        let z = match phase {
            Phase::SubcooledLiquid | Phase::SolidEstimated => {
                self.extreme_root(&at, p, Extreme::Smallest)
            }
            Phase::SuperheatedVapor => self.extreme_root(&at, p, Extreme::Largest),
            _ => self.stable_root_at(&at, p),
        };
        let properties = self.phase_properties_at(&at, p, z);
        Ok(State {
            temperature_k: t,
            pressure_pa: p,
            phase,
            properties,
            margins,
            reduced_temperature: tr,
            reduced_pressure: pr,
            estimated,
            near_critical: (tr - 1.0).abs() <= 0.02 && (pr - 1.0).abs() <= 0.10,
            ideal_gas_extrapolated: !self.ideal_gas_covers(t),
            model: self.model(),
            path,
        })
    }
}
