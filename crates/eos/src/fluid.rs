//! Fluid constants: what the engine needs to know about one pure fluid.

use crate::alpha::Alpha;
use crate::error::{Error, positive};
use crate::model::Model;

/// Molar gas constant, J/(mol K): exact since the 2019 SI redefinition
/// (CODATA 2018: N_A k = 8.314462618... J/(mol K)).
pub const GAS_CONSTANT: f64 = 8.314_462_618_153_24;

/// Ideal-gas isobaric heat capacity as a polynomial: `cp/R = a0 + a1 T + a2 T^2 + a3 T^3 + a4 T^4`
/// (the form of Poling, Prausnitz and O'Connell, *The Properties of Gases and Liquids*,
/// 5th ed., 2001, Appendix A), valid from `t_min_k` to `t_max_k`.
#[derive(Debug, Clone, PartialEq)]
pub struct IdealGasCp {
    /// Coefficients a0..a4 of `cp/R`, T in kelvin.
    pub coefficients: [f64; 5],
    /// Lowest temperature of the correlation's stated range, K.
    pub t_min_k: f64,
    /// Highest temperature of the correlation's stated range, K.
    pub t_max_k: f64,
}

impl IdealGasCp {
    /// `cp/R` at `t` (clamped into the correlation's range: outside it the heat capacity
    /// is held at its end value; callers flag such results as extrapolated).
    pub fn cp_over_r(&self, t: f64) -> f64 {
        let t = t.clamp(self.t_min_k, self.t_max_k);
        let a = &self.coefficients;
        a[0] + t * (a[1] + t * (a[2] + t * (a[3] + t * a[4])))
    }

    /// `integral of cp/R dT` from `t0` to `t`, K.
    pub fn enthalpy_over_r(&self, t0: f64, t: f64) -> f64 {
        self.h_antiderivative(t) - self.h_antiderivative(t0)
    }

    /// `integral of cp/(R T) dT` from `t0` to `t`, dimensionless.
    pub fn entropy_over_r(&self, t0: f64, t: f64) -> f64 {
        self.s_antiderivative(t) - self.s_antiderivative(t0)
    }

    /// Whether `t` lies inside the correlation's stated range.
    pub fn covers(&self, t: f64) -> bool {
        t >= self.t_min_k && t <= self.t_max_k
    }

    /// Antiderivative of the clamped `cp/R`: the polynomial's own inside the range,
    /// a constant heat capacity outside it; continuous at both ends.
    fn h_antiderivative(&self, x: f64) -> f64 {
        let (lo, hi) = (self.t_min_k, self.t_max_k);
        let a = &self.coefficients;
        let y = x.clamp(lo, hi);
        let inner =
            y * (a[0] + y * (a[1] / 2.0 + y * (a[2] / 3.0 + y * (a[3] / 4.0 + y * a[4] / 5.0))));
        inner + self.cp_over_r(y) * (x - y)
    }

    /// Antiderivative of the clamped `cp/(R T)`, built like [`Self::h_antiderivative`].
    fn s_antiderivative(&self, x: f64) -> f64 {
        let (lo, hi) = (self.t_min_k, self.t_max_k);
        let a = &self.coefficients;
        let y = x.clamp(lo, hi);
        let inner =
            a[0] * y.ln() + y * (a[1] + y * (a[2] / 2.0 + y * (a[3] / 3.0 + y * a[4] / 4.0)));
        if x == y {
            // Inside the range: no constant-heat-capacity tail (and no second logarithm).
            return inner;
        }
        inner + self.cp_over_r(y) * (x / y).ln()
    }
}

/// Fitted, fluid-specific parameters for one model.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelFit {
    /// The model the parameters were fitted with; they are not valid for another.
    pub model: Model,
    /// The fitted alpha function.
    pub alpha: Alpha,
    /// Volume translation `c(T)`: reported volume = `V_eos - c(T)`.
    pub volume_shift: VolumeShift,
}

/// A temperature-dependent volume translation (Peneloux et al. 1982 extended in temperature):
///
/// `c(T) = c0 + c1 s + c2 s^2`, with `s = 10 u^3 - 15 u^4 + 6 u^5` and
/// `u = (T - T_from) / (Tc - T_from)` clipped to [0, 1].
///
/// The blend `s` rises from 0 at `T_from` (the lowest fitted liquid density) to 1 at the
/// critical temperature with zero first and second derivatives at both ends, so `c`, `dc/dT`
/// and `d2c/dT2` are continuous everywhere and `c` is constant below `T_from` and above `Tc`.
/// With `c1 = c2 = 0` it is the constant Peneloux shift. Translation leaves phase equilibrium
/// unchanged; enthalpy and entropy get the consistent terms `T P dc/dT - P c` and `P dc/dT`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct VolumeShift {
    /// `c0`, m^3/mol.
    pub constant_m3_per_mol: f64,
    /// `[c1, c2]`, m^3/mol.
    pub temperature_terms_m3_per_mol: [f64; 2],
    /// `T_from`, K: below it the shift is `c0`. Unused when `c1 = c2 = 0`.
    pub from_temperature_k: f64,
}

impl VolumeShift {
    /// A constant shift `c` (m^3/mol).
    pub fn constant(c: f64) -> VolumeShift {
        VolumeShift {
            constant_m3_per_mol: c,
            ..VolumeShift::default()
        }
    }

    /// Whether the shift varies with temperature.
    pub fn depends_on_temperature(&self) -> bool {
        self.temperature_terms_m3_per_mol != [0.0, 0.0]
    }

    /// `(c, dc/dT, d2c/dT2)` at `t` for a fluid with critical temperature `tc`.
    pub fn at(&self, t: f64, tc: f64) -> (f64, f64, f64) {
        let c0 = self.constant_m3_per_mol;
        if !self.depends_on_temperature() {
            return (c0, 0.0, 0.0);
        }
        let [c1, c2] = self.temperature_terms_m3_per_mol;
        let span = tc - self.from_temperature_k;
        let u = (t - self.from_temperature_k) / span;
        if u <= 0.0 {
            return (c0, 0.0, 0.0);
        }
        if u >= 1.0 {
            return (c0 + c1 + c2, 0.0, 0.0);
        }
        let s = u * u * u * (10.0 + u * (-15.0 + 6.0 * u));
        let ds = 30.0 * u * u * (1.0 - u) * (1.0 - u) / span;
        let d2s = 60.0 * u * (1.0 - u) * (1.0 - 2.0 * u) / (span * span);
        let dc_ds = c1 + 2.0 * c2 * s;
        (
            c0 + s * (c1 + c2 * s),
            dc_ds * ds,
            dc_ds * d2s + 2.0 * c2 * ds * ds,
        )
    }

    /// The largest `|c(T)|` over all temperatures.
    pub fn largest_magnitude(&self) -> f64 {
        let c0 = self.constant_m3_per_mol;
        let [c1, c2] = self.temperature_terms_m3_per_mol;
        let value = |s: f64| (c0 + s * (c1 + c2 * s)).abs();
        let mut largest = value(0.0).max(value(1.0));
        if c2 != 0.0 {
            let vertex = -c1 / (2.0 * c2);
            if vertex > 0.0 && vertex < 1.0 {
                largest = largest.max(value(vertex));
            }
        }
        largest
    }
}

/// Constants of one pure fluid, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct FluidConstants {
    /// Name used in messages.
    pub name: String,
    /// Molar mass, kg/mol.
    pub molar_mass_kg_per_mol: f64,
    /// Critical temperature, K.
    pub critical_temperature_k: f64,
    /// Critical pressure, Pa.
    pub critical_pressure_pa: f64,
    /// Pitzer acentric factor.
    pub acentric_factor: f64,
    /// Triple-point temperature, K. Also the lower end of the model's temperature range.
    pub triple_point_temperature_k: Option<f64>,
    /// Heat of fusion at the triple point, J/mol (for the estimated solid boundaries).
    pub heat_of_fusion_j_per_mol: Option<f64>,
    /// Volume change on melting at the triple point as a fraction of the liquid volume
    /// (positive when the liquid is less dense than the solid, as for most substances;
    /// negative for water). When absent the solid boundary uses +0.10 (from memory:
    /// a typical molecular solid expands by about a tenth on melting).
    pub melting_volume_change_fraction: Option<f64>,
    /// Ideal-gas heat capacity; without it only residual h and s are available.
    pub ideal_gas_cp: Option<IdealGasCp>,
    /// Fitted parameters, at most one per model.
    pub fits: Vec<ModelFit>,
}

impl FluidConstants {
    /// A fluid from the three corresponding-states constants and molar mass, with no
    /// optional data and no fits.
    pub fn new(
        name: impl Into<String>,
        molar_mass_kg_per_mol: f64,
        critical_temperature_k: f64,
        critical_pressure_pa: f64,
        acentric_factor: f64,
    ) -> FluidConstants {
        FluidConstants {
            name: name.into(),
            molar_mass_kg_per_mol,
            critical_temperature_k,
            critical_pressure_pa,
            acentric_factor,
            triple_point_temperature_k: None,
            heat_of_fusion_j_per_mol: None,
            melting_volume_change_fraction: None,
            ideal_gas_cp: None,
            fits: Vec::new(),
        }
    }

    /// The fit for `model`, if one exists.
    pub fn fit_for(&self, model: Model) -> Option<&ModelFit> {
        self.fits.iter().find(|f| f.model == model)
    }

    /// Lowest temperature the engine accepts for this fluid: the triple point, or
    /// 0.3 Tc when the triple point is unknown.
    pub fn minimum_temperature_k(&self) -> f64 {
        self.triple_point_temperature_k
            .unwrap_or(0.3 * self.critical_temperature_k)
    }

    /// Checks every constant and returns the first problem with its field and valid range.
    pub fn validate(&self) -> Result<(), Error> {
        positive("molar_mass_kg_per_mol", self.molar_mass_kg_per_mol)?;
        check_range(
            "molar_mass_kg_per_mol",
            self.molar_mass_kg_per_mol,
            1e-3,
            2.0,
            "kg/mol",
        )?;
        let tc = positive("critical_temperature_k", self.critical_temperature_k)?;
        check_range("critical_temperature_k", tc, 1.0, 2000.0, "K")?;
        let pc = positive("critical_pressure_pa", self.critical_pressure_pa)?;
        check_range("critical_pressure_pa", pc, 1e4, 1e9, "Pa")?;
        check_range("acentric_factor", self.acentric_factor, -0.5, 2.0, "")?;
        if let Some(tt) = self.triple_point_temperature_k {
            positive("triple_point_temperature_k", tt)?;
            check_range("triple_point_temperature_k", tt, 0.0, 0.99 * tc, "K")?;
        }
        if let Some(h) = self.heat_of_fusion_j_per_mol {
            positive("heat_of_fusion_j_per_mol", h)?;
        }
        if let Some(f) = self.melting_volume_change_fraction {
            check_range("melting_volume_change_fraction", f, -0.5, 0.5, "")?;
        }
        if let Some(cp) = &self.ideal_gas_cp {
            for c in cp.coefficients {
                if !c.is_finite() {
                    return Err(Error::non_finite("ideal_gas_cp.coefficients"));
                }
            }
            positive("ideal_gas_cp.t_min_k", cp.t_min_k)?;
            if cp.t_max_k <= cp.t_min_k {
                return Err(Error::invalid(
                    "ideal_gas_cp.t_max_k",
                    cp.t_max_k,
                    format!("must exceed t_min_k = {}", cp.t_min_k),
                ));
            }
        }
        for fit in &self.fits {
            let shift = &fit.volume_shift;
            if !shift.constant_m3_per_mol.is_finite() {
                return Err(Error::non_finite("volume_shift.constant_m3_per_mol"));
            }
            if !shift
                .temperature_terms_m3_per_mol
                .iter()
                .all(|c| c.is_finite())
            {
                return Err(Error::non_finite(
                    "volume_shift.temperature_terms_m3_per_mol",
                ));
            }
            if shift.depends_on_temperature() {
                check_range(
                    "volume_shift.from_temperature_k",
                    shift.from_temperature_k,
                    0.0,
                    0.999 * self.critical_temperature_k,
                    "K",
                )?;
            }
        }
        Ok(())
    }
}

pub(crate) fn check_range(
    field: &'static str,
    value: f64,
    min: f64,
    max: f64,
    unit: &'static str,
) -> Result<f64, Error> {
    if !value.is_finite() {
        return Err(Error::non_finite(field));
    }
    if value < min || value > max {
        return Err(Error::out_of_range(field, value, min, max, unit));
    }
    Ok(value)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// c(T) has the derivatives it reports, is continuous with its first two derivatives at
    /// both ends of the blend, and is constant outside it.
    #[test]
    fn volume_shift_is_smooth() {
        let shift = VolumeShift {
            constant_m3_per_mol: -3.0e-6,
            temperature_terms_m3_per_mol: [-1.3e-5, 1.5e-5],
            from_temperature_k: 273.16,
        };
        let tc = 647.096;
        let h = 1e-3;
        for t in [300.0, 450.0, 600.0] {
            let (_, dc, d2c) = shift.at(t, tc);
            let numeric_dc = (shift.at(t + h, tc).0 - shift.at(t - h, tc).0) / (2.0 * h);
            let numeric_d2c = (shift.at(t + h, tc).1 - shift.at(t - h, tc).1) / (2.0 * h);
            assert!((numeric_dc - dc).abs() <= 1e-6 * dc.abs() + 1e-18, "{t}");
            assert!((numeric_d2c - d2c).abs() <= 1e-5 * d2c.abs() + 1e-18, "{t}");
        }
        for edge in [273.16, tc] {
            let (below, above) = (shift.at(edge - 1e-6, tc), shift.at(edge + 1e-6, tc));
            assert!((below.0 - above.0).abs() < 1e-15);
            assert!(below.1.abs() < 1e-15 && above.1.abs() < 1e-15);
            assert!(below.2.abs() < 1e-12 && above.2.abs() < 1e-12);
        }
        assert_eq!(shift.at(100.0, tc), (-3.0e-6, 0.0, 0.0));
        assert_eq!(shift.at(900.0, tc).0, -3.0e-6 - 1.3e-5 + 1.5e-5);
    }

    /// The antiderivatives agree with numerical quadrature of the clamped heat capacity,
    /// inside the range and across both ends.
    #[test]
    fn integrals_match_quadrature() {
        let cp = IdealGasCp {
            coefficients: [3.5, 1e-3, -2e-6, 1e-9, -1e-13],
            t_min_k: 200.0,
            t_max_k: 800.0,
        };
        for (t0, t1) in [(250.0, 700.0), (100.0, 300.0), (500.0, 1200.0)] {
            let n = 20000;
            let dt = (t1 - t0) / n as f64;
            let (mut h, mut s) = (0.0, 0.0);
            for i in 0..n {
                let t = t0 + (i as f64 + 0.5) * dt;
                h += cp.cp_over_r(t) * dt;
                s += cp.cp_over_r(t) / t * dt;
            }
            assert!(
                (cp.enthalpy_over_r(t0, t1) - h).abs() < 1e-5 * h.abs(),
                "h {t0}-{t1}"
            );
            assert!(
                (cp.entropy_over_r(t0, t1) - s).abs() < 1e-5 * s.abs(),
                "s {t0}-{t1}"
            );
        }
    }
}
