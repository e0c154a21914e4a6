//! Saturation of a pure fluid: vapor pressure at a temperature and saturation
//! temperature at a pressure, solved with argmin's `BrentRoot` on brackets that are
//! proven to hold the root, then polished with Newton steps.
//!
//! At a temperature below Tc the isotherm `P(V)` has a local minimum (liquid spinodal)
//! and a local maximum (vapor spinodal); between their pressures the cubic has three
//! roots, and the fugacity gap `F(ln P) = ln phi_L - ln phi_V` falls monotonically
//! (`dF/d ln P = Z_L - Z_V < 0`) from positive to negative. Its zero is the vapor pressure.

use crate::curve::SolvePath;
use crate::eos::{AtTemperature, PhaseProperties, PureEos};
use crate::error::{Error, ErrorKind};
use crate::fluid::GAS_CONSTANT as R;
use crate::model::Model;
use argmin::core::{CostFunction, Executor, State};
use argmin::solver::brent::BrentRoot;

/// Relative width of the band below the critical temperature (and pressure) where
/// saturation is not solved: `T > Tc (1 - NEAR_CRITICAL_BAND)` is refused with
/// [`ErrorKind::NearCritical`]. At `1 - Tr = 1e-6` the two saturated densities still
/// differ by about 0.5 %, and the solve converges to full precision (tested).
pub const NEAR_CRITICAL_BAND: f64 = 1e-6;

/// The two coexisting phases of a pure fluid at one temperature and pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Saturation {
    /// Saturation temperature, K.
    pub temperature_k: f64,
    /// Saturation (vapor) pressure, Pa.
    pub pressure_pa: f64,
    /// Saturated liquid.
    pub liquid: PhaseProperties,
    /// Saturated vapor.
    pub vapor: PhaseProperties,
    /// Enthalpy of vaporization `h_vapor - h_liquid`, J/mol; condensation releases the same
    /// amount (its enthalpy change carries the opposite sign).
    pub enthalpy_of_vaporization_j_per_mol: f64,
    /// Entropy of vaporization `s_vapor - s_liquid = dh_vap / T`, J/(mol K).
    pub entropy_of_vaporization_j_per_mol_k: f64,
    /// The model that produced this result.
    pub model: Model,
    /// Whether the saturation pressure (or temperature) came from the engine's precomputed
    /// curve or from the full solver.
    pub path: SolvePath,
}

/// The raw result of a vapor-pressure solve.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SatPoint {
    pub pressure: f64,
    pub z_liquid: f64,
    pub z_vapor: f64,
}

/// `F(ln P)` at one temperature, for argmin.
struct FugacityGap<'a> {
    eos: &'a PureEos,
    at: &'a AtTemperature,
}

impl CostFunction for FugacityGap<'_> {
    type Param = f64;
    type Output = f64;

    fn cost(&self, ln_p: &f64) -> Result<f64, argmin::core::Error> {
        Ok(self.eos.fugacity_gap(self.at, ln_p.exp()).0)
    }
}

/// `ln P - ln Psat(1/x)` as a function of `x = 1/T`, for argmin.
struct PressureGap<'a> {
    eos: &'a PureEos,
    ln_p: f64,
}

impl CostFunction for PressureGap<'_> {
    type Param = f64;
    type Output = f64;

    fn cost(&self, inv_t: &f64) -> Result<f64, argmin::core::Error> {
        let sat = self.eos.solve_saturation_pressure_unchecked(1.0 / inv_t)?;
        Ok(self.ln_p - sat.pressure.ln())
    }
}

fn brent<P>(problem: P, lo: f64, hi: f64, tol: f64, what: &'static str) -> Result<f64, Error>
where
    P: CostFunction<Param = f64, Output = f64>,
{
    let result = Executor::new(problem, BrentRoot::new(lo, hi, tol))
        .configure(|state| state.max_iters(200))
        .run()
        .map_err(|e| Error::no_convergence(what, e.to_string()))?;
    let state = result.state();
    state
        .get_best_param()
        .copied()
        .filter(|x| x.is_finite())
        .ok_or_else(|| Error::no_convergence(what, "no finite result"))
}

impl PureEos {
    /// `(F, Z_L, Z_V)` at (T, P). Where only one root exists, F is +1 for a vapor-like
    /// root (pressure below the three-root region) and -1 for a liquid-like one.
    /// The temperature terms come precomputed: a solve evaluates them once, not per pressure.
    pub(crate) fn fugacity_gap(&self, at: &AtTemperature, p: f64) -> (f64, f64, f64) {
        let &AtTemperature {
            t, rt, attraction, ..
        } = at;
        let roots = self.compressibility_roots_with(attraction.0, rt, p);
        if roots.count() == 1 {
            let z = roots.largest();
            let v_reduced = z * R * t / (p * self.co_volume());
            return if v_reduced > self.v_c_reduced {
                (1.0, z, z)
            } else {
                (-1.0, z, z)
            };
        }
        let (zl, zv) = (roots.smallest(), roots.largest());
        let ln_phi = |z: f64| self.residual_with(t, rt, attraction, p, z).0.ln_phi;
        let f = ln_phi(zl) - ln_phi(zv);
        (f, zl, zv)
    }

    /// Liquid and vapor spinodal pressures at `t` (the local minimum and maximum of the
    /// isotherm), or an error if the isotherm has none (at or above the critical point).
    pub(crate) fn spinodal_pressures(&self, t: f64) -> Result<(f64, f64), Error> {
        let c = self.model().constants();
        let (u, w) = (c.delta1 + c.delta2, c.delta1 * c.delta2);
        let q = self.q(t);
        // g(v) > 0 where the isotherm falls, g < 0 where it rises (mechanically unstable).
        let g = |v: f64| {
            let s = v * v + u * v + w;
            let m = v - 1.0;
            let val = s * s - q * (2.0 * v + u) * m * m;
            let der = 2.0 * s * (2.0 * v + u) - q * (2.0 * m * m + (2.0 * v + u) * 2.0 * m);
            (val, der)
        };
        let vc = self.v_c_reduced;
        if g(vc).0 >= 0.0 {
            return Err(Error::no_convergence(
                "spinodal search",
                format!("no unstable region at T = {t} K (isotherm is monotonic)"),
            ));
        }
        let v_liq = bracketed_newton(g, 1.0, vc, true);
        let mut hi = 2.0 * vc;
        let mut guard = 0;
        while g(hi).0 < 0.0 {
            hi *= 2.0;
            guard += 1;
            if guard > 200 {
                return Err(Error::no_convergence(
                    "spinodal search",
                    "vapor spinodal not bracketed",
                ));
            }
        }
        let v_vap = bracketed_newton(g, vc, hi, false);
        let p_of = |v: f64| {
            R * t / self.co_volume() * (1.0 / (v - 1.0) - q / ((v + c.delta1) * (v + c.delta2)))
        };
        Ok((p_of(v_liq), p_of(v_vap)))
    }

    /// Vapor pressure at `t` without range checks (t must lie below Tc).
    pub(crate) fn solve_saturation_pressure_unchecked(&self, t: f64) -> Result<SatPoint, Error> {
        let (p_ls, p_vs) = self.spinodal_pressures(t)?;
        let mut hi = p_vs * (1.0 - 1e-12);
        let floor = if p_ls > 0.0 {
            p_ls * (1.0 + 1e-12)
        } else {
            0.0
        };
        // Start from the corresponding-states estimate, log10(P/Pc) = 7/3 (1+w)(1 - 1/Tr)
        // (Edmister 1958), and widen until the gap is positive.
        let tr = t / self.critical_temperature_k();
        let estimate = self.critical_pressure_pa()
            * 10f64.powf(7.0 / 3.0 * (1.0 + self.acentric_factor()) * (1.0 - 1.0 / tr));
        let mut lo = estimate.clamp(floor.max(f64::MIN_POSITIVE), hi);
        let at = self.at_temperature(t);
        let mut tries = 0;
        loop {
            let f = self.fugacity_gap(&at, lo).0;
            if f > 0.0 {
                break;
            }
            hi = lo;
            lo = (lo * 1e-3).max(floor);
            tries += 1;
            if tries > 100 || lo <= f64::MIN_POSITIVE * 1e3 {
                return Err(Error::no_convergence(
                    "vapor pressure",
                    format!("no positive fugacity gap below {hi} Pa at T = {t} K"),
                ));
            }
            if lo == floor {
                lo = floor * (1.0 + 1e-9);
            }
        }
        let ln_p = brent(
            FugacityGap { eos: self, at: &at },
            lo.ln(),
            hi.ln(),
            1e-7,
            "vapor pressure",
        )?;
        // Newton polish in ln P: dF/d ln P = Z_L - Z_V.
        let mut ln_p = ln_p;
        let (mut f, mut zl, mut zv) = self.fugacity_gap(&at, ln_p.exp());
        for _ in 0..3 {
            if f == 0.0 || zl == zv {
                break;
            }
            let next = ln_p - f / (zl - zv);
            let (f2, zl2, zv2) = self.fugacity_gap(&at, next.exp());
            if zl2 == zv2 || f2.abs() >= f.abs() {
                break;
            }
            (ln_p, f, zl, zv) = (next, f2, zl2, zv2);
        }
        if zl == zv {
            return Err(Error::no_convergence(
                "vapor pressure",
                format!("phases merged at T = {t} K"),
            ));
        }
        Ok(SatPoint {
            pressure: ln_p.exp(),
            z_liquid: zl,
            z_vapor: zv,
        })
    }

    /// Highest temperature at which saturation is solved: `Tc (1 - NEAR_CRITICAL_BAND)`.
    pub fn saturation_temperature_limit_k(&self) -> f64 {
        self.critical_temperature_k() * (1.0 - NEAR_CRITICAL_BAND)
    }

    fn check_saturation_temperature(&self, t: f64) -> Result<f64, Error> {
        let t = self.check_temperature("temperature_k", t)?;
        let (t_min, t_top, tc) = (
            self.minimum_temperature_k(),
            self.saturation_temperature_limit_k(),
            self.critical_temperature_k(),
        );
        if t < t_min || t >= tc {
            return Err(Error::out_of_range("temperature_k", t, t_min, t_top, "K"));
        }
        if t > t_top {
            return Err(Error::new(ErrorKind::NearCritical {
                field: "temperature_k",
                value: t,
                limit: t_top,
                critical: tc,
                unit: "K",
            }));
        }
        Ok(t)
    }

    /// Vapor pressure at `temperature_k`, Pa, from the triple point (or 0.3 Tc) to the
    /// near-critical band: from the engine's saturation curve where it has one that covers
    /// the temperature, else from the full solver.
    #[inline]
    pub fn saturation_pressure(&self, temperature_k: f64) -> Result<f64, Error> {
        // The curve's range (the minimum temperature to Tc (1 - CURVE_CRITICAL_BAND)) lies
        // inside the range the checks below accept, and NaN is in no range: a temperature the
        // curve covers needs no other check. Inlined into callers, so that a curve lookup
        // costs no call.
        if let Some(p) = self.curve_pressure(temperature_k) {
            return Ok(p);
        }
        self.saturation_pressure_solved(temperature_k)
    }

    /// [`Self::saturation_pressure`] where the curve does not answer: checks, then the solver.
    fn saturation_pressure_solved(&self, temperature_k: f64) -> Result<f64, Error> {
        let t = self.check_saturation_temperature(temperature_k)?;
        Ok(self.solve_saturation_pressure_unchecked(t)?.pressure)
    }

    /// Both saturated phases at `temperature_k`; `path` says whether the vapor pressure came
    /// from the engine's saturation curve or the full solver.
    pub fn saturation_at_temperature(&self, temperature_k: f64) -> Result<Saturation, Error> {
        let t = self.check_saturation_temperature(temperature_k)?;
        if let Some(sat) = self
            .curve_pressure(t)
            .and_then(|p| self.curve_saturation(t, p))
        {
            return Ok(sat);
        }
        let sat = self.solve_saturation_pressure_unchecked(t)?;
        Ok(self.saturation_from_point(t, sat))
    }

    pub(crate) fn saturation_from_point(&self, t: f64, sat: SatPoint) -> Saturation {
        let liquid = self.phase_properties(t, sat.pressure, sat.z_liquid);
        let vapor = self.phase_properties(t, sat.pressure, sat.z_vapor);
        let dh = vapor.residual_enthalpy_j_per_mol - liquid.residual_enthalpy_j_per_mol;
        Saturation {
            temperature_k: t,
            pressure_pa: sat.pressure,
            liquid,
            vapor,
            enthalpy_of_vaporization_j_per_mol: dh,
            entropy_of_vaporization_j_per_mol_k: dh / t,
            model: self.model(),
            path: SolvePath::FullSolve,
        }
    }

    /// The range of pressures for which a saturation temperature exists:
    /// (vapor pressure at the minimum temperature, vapor pressure at the near-critical limit).
    pub fn saturation_pressure_range_pa(&self) -> (f64, f64) {
        self.saturation_range
    }

    /// Computes [`Self::saturation_pressure_range_pa`] (done once, at construction).
    pub(crate) fn compute_saturation_range(&self) -> Result<(f64, f64), Error> {
        let lo = self
            .solve_saturation_pressure_unchecked(self.minimum_temperature_k())?
            .pressure;
        let hi = self
            .solve_saturation_pressure_unchecked(self.saturation_temperature_limit_k())?
            .pressure;
        Ok((lo, hi))
    }

    /// Saturation temperature at `p` without range checks beyond the bracket itself.
    pub(crate) fn saturation_temperature_unchecked(&self, p: f64) -> Result<f64, Error> {
        let t_lo = self.minimum_temperature_k();
        let t_hi = self.saturation_temperature_limit_k();
        let ln_p = p.ln();
        let inv_t = brent(
            PressureGap { eos: self, ln_p },
            1.0 / t_hi,
            1.0 / t_lo,
            1e-13,
            "saturation temperature",
        )?;
        // Newton polish with the Clausius-Clapeyron slope of the model itself:
        // d ln Psat / dT = dh_vap / (R T^2 (Z_V - Z_L)).
        let mut t = 1.0 / inv_t;
        for _ in 0..2 {
            let sat = self.solve_saturation_pressure_unchecked(t)?;
            let gap = ln_p - sat.pressure.ln();
            if gap == 0.0 {
                break;
            }
            let dh = self.residual(t, sat.pressure, sat.z_vapor).h_res
                - self.residual(t, sat.pressure, sat.z_liquid).h_res;
            let slope = dh / (R * t * t * (sat.z_vapor - sat.z_liquid));
            let next = t + gap / slope;
            if !(next > t_lo && next < t_hi) {
                break;
            }
            t = next;
        }
        Ok(t)
    }

    fn check_saturation_pressure(&self, p: f64) -> Result<f64, Error> {
        let p = crate::error::positive("pressure_pa", p)?;
        let (p_lo, p_hi) = self.saturation_pressure_range_pa();
        let pc = self.critical_pressure_pa();
        if p < p_lo || p >= pc {
            return Err(Error::out_of_range("pressure_pa", p, p_lo, p_hi, "Pa"));
        }
        if p > p_hi {
            return Err(Error::new(ErrorKind::NearCritical {
                field: "pressure_pa",
                value: p,
                limit: p_hi,
                critical: pc,
                unit: "Pa",
            }));
        }
        Ok(p)
    }

    /// Saturation temperature at `pressure_pa`, K: from the engine's saturation curve where
    /// it has one that covers the pressure, else from the full solver.
    pub fn saturation_temperature(&self, pressure_pa: f64) -> Result<f64, Error> {
        let p = self.check_saturation_pressure(pressure_pa)?;
        if let Some(t) = self.curve_temperature(p) {
            return Ok(t);
        }
        self.saturation_temperature_unchecked(p)
    }

    /// Both saturated phases at `pressure_pa`. The returned pressure is the vapor pressure
    /// at the returned temperature (from the same path), equal to `pressure_pa` within about
    /// 1e-12 relative on the full-solve path and within the curve's recorded inverse deviation
    /// on the curve path.
    pub fn saturation_at_pressure(&self, pressure_pa: f64) -> Result<Saturation, Error> {
        let p = self.check_saturation_pressure(pressure_pa)?;
        if let Some(sat) = self.curve_temperature(p).and_then(|t| {
            self.curve_pressure(t)
                .and_then(|p_t| self.curve_saturation(t, p_t))
        }) {
            return Ok(sat);
        }
        let t = self.saturation_temperature_unchecked(p)?;
        let sat = self.solve_saturation_pressure_unchecked(t)?;
        Ok(self.saturation_from_point(t, sat))
    }
}

/// Root of `f` in `[lo, hi]` (sign change guaranteed by the caller: `f(lo) > 0` when
/// `positive_at_lo`), by Newton steps kept inside a shrinking bisection bracket.
fn bracketed_newton(f: impl Fn(f64) -> (f64, f64), lo: f64, hi: f64, positive_at_lo: bool) -> f64 {
    let (mut lo, mut hi) = (lo, hi);
    let mut x = 0.5 * (lo + hi);
    for _ in 0..200 {
        let (val, der) = f(x);
        if val == 0.0 {
            return x;
        }
        if (val > 0.0) == positive_at_lo {
            lo = x;
        } else {
            hi = x;
        }
        let newton = x - val / der;
        let next = if der != 0.0 && newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
        if (next - x).abs() <= 1e-14 * x.abs() || hi - lo <= 1e-15 * hi {
            return next;
        }
        x = next;
    }
    x
}
