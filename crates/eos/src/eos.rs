//! [`PureEos`]: one fluid under one model, with every constant precomputed, and the
//! properties of a phase from its compressibility root.

use crate::alpha::Alpha;
use crate::cubic::{
    CubicRoots, Extreme, compressibility_cubic, solve_cubic, solve_cubic_extreme,
    solve_cubic_extremes,
};
use crate::error::{Error, ErrorKind, positive};
use crate::fluid::{FluidConstants, GAS_CONSTANT as R, IdealGasCp, VolumeShift};
use crate::model::{CubicConstants, Model};

/// Temperature of the ideal-gas enthalpy and entropy integrals' lower end, K.
const T_IDEAL_ORIGIN: f64 = 298.15;
/// Pressure of the ideal-gas entropy origin, Pa.
const P_IDEAL_ORIGIN: f64 = 101_325.0;

/// The convention that fixes absolute enthalpy and entropy. Both are conventions of the
/// refrigeration trade (`common practice`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ReferenceState {
    /// h = 200 kJ/kg and s = 1 kJ/(kg K) for saturated liquid at 0 °C (273.15 K).
    /// Needs a critical temperature above 273.15 K.
    LiquidAtZeroCelsius,
    /// h = 0 and s = 0 for saturated liquid at the model's normal boiling point (101 325 Pa).
    LiquidAtNormalBoilingPoint,
}

impl ReferenceState {
    /// A stable identifier, e.g. `liquid-at-zero-celsius`.
    pub fn id(self) -> &'static str {
        match self {
            ReferenceState::LiquidAtZeroCelsius => "liquid-at-zero-celsius",
            ReferenceState::LiquidAtNormalBoilingPoint => "liquid-at-normal-boiling-point",
        }
    }
}

/// Properties of one phase at (T, P).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhaseProperties {
    /// Molar volume after volume translation, m^3/mol.
    pub molar_volume_m3_per_mol: f64,
    /// Mass density after volume translation, kg/m^3.
    pub density_kg_per_m3: f64,
    /// Compressibility factor `P V / (R T)` of the translated volume.
    pub compressibility: f64,
    /// Natural logarithm of the fugacity coefficient (see
    /// [`PhaseProperties::fugacity_coefficient`]).
    pub ln_fugacity_coefficient: f64,
    /// Residual (departure) enthalpy, J/mol.
    pub residual_enthalpy_j_per_mol: f64,
    /// Residual (departure) entropy at (T, P), J/(mol K).
    pub residual_entropy_j_per_mol_k: f64,
    /// Absolute enthalpy in the chosen reference state, J/mol (needs ideal-gas data).
    pub enthalpy_j_per_mol: Option<f64>,
    /// Absolute entropy in the chosen reference state, J/(mol K) (needs ideal-gas data).
    pub entropy_j_per_mol_k: Option<f64>,
    /// Isobaric heat capacity, J/(mol K) (needs ideal-gas data).
    pub isobaric_heat_capacity_j_per_mol_k: Option<f64>,
    /// Isochoric heat capacity, J/(mol K) (needs ideal-gas data; from the untranslated volume).
    pub isochoric_heat_capacity_j_per_mol_k: Option<f64>,
}

impl PhaseProperties {
    /// Fugacity coefficient (the exponential of `ln_fugacity_coefficient`, computed on
    /// request: state and batch answers do not need it).
    pub fn fugacity_coefficient(&self) -> f64 {
        self.ln_fugacity_coefficient.exp()
    }
}

/// Residual quantities of one root, cheap to compute.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Residual {
    pub ln_phi: f64,
    pub h_res: f64,
    pub s_res: f64,
}

/// The temperature-dependent terms of one evaluation at `t`, computed once and shared by the
/// root solve and every property at that temperature: `R T`, `a(T)` with its first two
/// temperature derivatives, and the volume translation `c(T)` with its.
#[derive(Debug, Clone, Copy)]
pub(crate) struct AtTemperature {
    pub t: f64,
    pub rt: f64,
    /// `(a, da/dT, d2a/dT2)`.
    pub attraction: (f64, f64, f64),
    /// `(c, dc/dT, d2c/dT2)`.
    pub shift: (f64, f64, f64),
}

/// One fluid under one model, ready to compute. Build once, use many times.
#[derive(Debug, Clone)]
pub struct PureEos {
    name: String,
    model: Model,
    cubic: CubicConstants,
    alpha: Alpha,
    alpha_fitted: bool,
    tc: f64,
    pc: f64,
    omega: f64,
    molar_mass: f64,
    a_c: f64,
    b: f64,
    shift: VolumeShift,
    t_min: f64,
    /// Reduced co-volume at the critical point, `Vc / b = Zc / Omega_b`.
    pub(crate) v_c_reduced: f64,
    ideal: Option<IdealGasCp>,
    reference: Option<(ReferenceState, f64, f64)>,
    pub(crate) triple_t: Option<f64>,
    pub(crate) heat_of_fusion: Option<f64>,
    pub(crate) melting_dv_fraction: f64,
    pub(crate) saturation_range: (f64, f64),
    pub(crate) solid: Option<crate::classify::SolidBoundary>,
    /// The precomputed saturation curve, once one is attached (see `crate::curve`).
    pub(crate) curve: Option<std::sync::Arc<crate::curve::SaturationCurve>>,
}

impl PureEos {
    /// Prepares `fluid` under `model`. A fitted alpha function and volume shift are used when
    /// the fluid has a fit for this model; otherwise the model's generalized alpha and no shift.
    pub fn new(fluid: &FluidConstants, model: Model) -> Result<PureEos, Error> {
        fluid.validate()?;
        let cubic = model.constants();
        let fit = fluid.fit_for(model);
        let (alpha, alpha_fitted, shift) = match fit {
            Some(f) => (f.alpha, true, f.volume_shift),
            None => (
                model.generalized_alpha(fluid.acentric_factor),
                false,
                VolumeShift::default(),
            ),
        };
        let tc = fluid.critical_temperature_k;
        let pc = fluid.critical_pressure_pa;
        let b = cubic.omega_b * R * tc / pc;
        if shift.largest_magnitude() >= b {
            return Err(Error::invalid(
                "volume_shift",
                shift.largest_magnitude(),
                format!(
                    "|c(T)| must stay smaller than the co-volume b = {b:.6e} m^3/mol at every \
                     temperature"
                ),
            ));
        }
        let mut eos = PureEos {
            name: fluid.name.clone(),
            model,
            cubic,
            alpha,
            alpha_fitted,
            tc,
            pc,
            omega: fluid.acentric_factor,
            molar_mass: fluid.molar_mass_kg_per_mol,
            a_c: cubic.omega_a * R * R * tc * tc / pc,
            b,
            shift,
            t_min: fluid.minimum_temperature_k(),
            v_c_reduced: cubic.critical_compressibility() / cubic.omega_b,
            ideal: fluid.ideal_gas_cp.clone(),
            reference: None,
            triple_t: fluid.triple_point_temperature_k,
            heat_of_fusion: fluid.heat_of_fusion_j_per_mol,
            melting_dv_fraction: fluid.melting_volume_change_fraction.unwrap_or(0.10),
            saturation_range: (f64::NAN, f64::NAN),
            solid: None,
            curve: None,
        };
        eos.saturation_range = eos.compute_saturation_range()?;
        eos.solid = crate::classify::SolidBoundary::estimate(&eos)?;
        Ok(eos)
    }

    /// Fixes absolute enthalpy and entropy to `reference`. Needs ideal-gas heat-capacity data.
    pub fn with_reference(mut self, reference: ReferenceState) -> Result<PureEos, Error> {
        if self.ideal.is_none() {
            return Err(Error::new(ErrorKind::MissingData {
                what: format!(
                    "{} has no ideal-gas heat capacity, so absolute enthalpy and entropy \
                     (reference state {}) cannot be computed",
                    self.name,
                    reference.id()
                ),
            }));
        }
        self.reference = None;
        let (t_ref, h_target, s_target) = match reference {
            ReferenceState::LiquidAtZeroCelsius => {
                let t0 = 273.15;
                if t0 >= self.tc * (1.0 - crate::saturation::NEAR_CRITICAL_BAND) {
                    return Err(Error::invalid(
                        "reference_state",
                        t0,
                        format!(
                            "liquid at 0 °C needs a critical temperature above 273.15 K; {} has \
                             Tc = {} K: use liquid-at-normal-boiling-point",
                            self.name, self.tc
                        ),
                    ));
                }
                // 200 kJ/kg and 1 kJ/(kg K), converted to molar units.
                (t0, 200e3 * self.molar_mass, 1e3 * self.molar_mass)
            }
            ReferenceState::LiquidAtNormalBoilingPoint => (
                self.saturation_temperature_unchecked(P_IDEAL_ORIGIN)?,
                0.0,
                0.0,
            ),
        };
        let sat = self.solve_saturation_pressure_unchecked(t_ref)?;
        let liquid = self.residual(t_ref, sat.pressure, sat.z_liquid);
        let ideal = self.ideal.as_ref().expect("checked above");
        let h_ig = R * ideal.enthalpy_over_r(T_IDEAL_ORIGIN, t_ref);
        let s_ig = R * ideal.entropy_over_r(T_IDEAL_ORIGIN, t_ref)
            - R * (sat.pressure / P_IDEAL_ORIGIN).ln();
        let liquid = self.translated(t_ref, sat.pressure, liquid);
        let h_offset = h_target - (h_ig + liquid.h_res);
        let s_offset = s_target - (s_ig + liquid.s_res);
        self.reference = Some((reference, h_offset, s_offset));
        Ok(self)
    }

    /// The fluid's name.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The model in use.
    pub fn model(&self) -> Model {
        self.model
    }

    /// The alpha function in use.
    pub fn alpha(&self) -> Alpha {
        self.alpha
    }

    /// Whether the alpha function came from a fit to reference data (else generalized).
    pub fn alpha_is_fitted(&self) -> bool {
        self.alpha_fitted
    }

    /// The volume translation in use.
    pub fn volume_shift(&self) -> VolumeShift {
        self.shift
    }

    /// `(c, dc/dT, d2c/dT2)` of the volume translation at `t` (m^3/mol, per K, per K^2).
    pub fn volume_shift_at(&self, t: f64) -> (f64, f64, f64) {
        self.shift.at(t, self.tc)
    }

    /// Residual quantities of the translated fluid from those of the untranslated cubic:
    /// translation multiplies every phase's fugacity coefficient by `exp(-cP/RT)`, adds
    /// `T P dc/dT - P c` to the enthalpy and `P dc/dT` to the entropy.
    pub(crate) fn translated(&self, t: f64, p: f64, res: Residual) -> Residual {
        self.translated_with(t, R * t, self.volume_shift_at(t), p, res)
    }

    /// [`Self::translated`] with `R T` and the translation `(c, dc/dT, d2c/dT2)` at `t`
    /// already computed.
    fn translated_with(
        &self,
        t: f64,
        rt: f64,
        (c, dc, _): (f64, f64, f64),
        p: f64,
        res: Residual,
    ) -> Residual {
        Residual {
            ln_phi: res.ln_phi - c * p / rt,
            h_res: res.h_res + (t * dc - c) * p,
            s_res: res.s_res + p * dc,
        }
    }

    /// The reference state in use, if absolute h and s are available.
    pub fn reference_state(&self) -> Option<ReferenceState> {
        self.reference.map(|r| r.0)
    }

    /// Critical temperature, K.
    pub fn critical_temperature_k(&self) -> f64 {
        self.tc
    }

    /// Critical pressure, Pa.
    pub fn critical_pressure_pa(&self) -> f64 {
        self.pc
    }

    /// Acentric factor.
    pub fn acentric_factor(&self) -> f64 {
        self.omega
    }

    /// Molar mass, kg/mol.
    pub fn molar_mass_kg_per_mol(&self) -> f64 {
        self.molar_mass
    }

    /// Lowest temperature accepted (the triple point, or 0.3 Tc if unknown), K.
    pub fn minimum_temperature_k(&self) -> f64 {
        self.t_min
    }

    /// Whether the ideal-gas heat-capacity correlation covers `t` (else h, s, cp are
    /// computed with the heat capacity held at the correlation's end value).
    pub fn ideal_gas_covers(&self, t: f64) -> bool {
        self.ideal.as_ref().is_some_and(|c| c.covers(t))
    }

    /// Ideal-gas `(h, s at 101 325 Pa)` from 298.15 K to `t`, J/mol and J/(mol K), where the
    /// fluid has ideal-gas data (used by mixtures).
    pub(crate) fn ideal_gas_terms(&self, t: f64) -> Option<(f64, f64)> {
        self.ideal.as_ref().map(|c| {
            (
                R * c.enthalpy_over_r(T_IDEAL_ORIGIN, t),
                R * c.entropy_over_r(T_IDEAL_ORIGIN, t),
            )
        })
    }

    /// Co-volume b, m^3/mol.
    pub fn co_volume(&self) -> f64 {
        self.b
    }

    /// a(T) and its first two temperature derivatives.
    pub(crate) fn attraction(&self, t: f64) -> (f64, f64, f64) {
        let al = self.alpha.eval(t / self.tc);
        (
            self.a_c * al.value,
            self.a_c * al.d1 / self.tc,
            self.a_c * al.d2 / (self.tc * self.tc),
        )
    }

    /// The temperature terms of an evaluation at `t` (see [`AtTemperature`]).
    #[inline]
    pub(crate) fn at_temperature(&self, t: f64) -> AtTemperature {
        AtTemperature {
            t,
            rt: R * t,
            attraction: self.attraction(t),
            shift: self.volume_shift_at(t),
        }
    }

    /// `q = a / (b R T)`, the only temperature-dependent group of the reduced isotherm.
    pub(crate) fn q(&self, t: f64) -> f64 {
        self.attraction(t).0 / (self.b * R * t)
    }

    /// The compressibility cubic's coefficients `(c2, c1, c0)` and B at pressure `p`, for
    /// the attraction `a_t = a(T)` and `rt = R T`.
    fn cubic_coefficients(&self, a_t: f64, rt: f64, p: f64) -> ([f64; 3], f64) {
        let (a, b) = (a_t * p / (rt * rt), self.b * p / rt);
        let coefficients = compressibility_cubic(a, b, self.cubic.delta1, self.cubic.delta2);
        (coefficients, b)
    }

    /// Real compressibility roots at (T, P) that lie above B (V > b), ascending.
    /// Always returns at least one root for T > 0, P > 0.
    pub fn compressibility_roots(&self, t: f64, p: f64) -> CubicRoots {
        self.compressibility_roots_with(self.attraction(t).0, R * t, p)
    }

    /// [`Self::compressibility_roots`] with `a(T)` and `R T` already computed.
    pub(crate) fn compressibility_roots_with(&self, a_t: f64, rt: f64, p: f64) -> CubicRoots {
        let ([c2, c1, c0], b) = self.cubic_coefficients(a_t, rt, p);
        let roots = solve_cubic(c2, c1, c0);
        if roots.count() == 3 && roots.smallest() <= b {
            // A spurious root at or below the co-volume: only the largest is physical.
            return CubicRoots::single(roots.largest());
        }
        roots
    }

    /// The smallest (`Extreme::Smallest`) or largest physical compressibility root at `p` and
    /// the temperature of `at`: the same root as [`Self::compressibility_roots`]'s
    /// `smallest()` or `largest()`, without polishing the roots not asked for.
    pub(crate) fn extreme_root(&self, at: &AtTemperature, p: f64, which: Extreme) -> f64 {
        let ([c2, c1, c0], b) = self.cubic_coefficients(at.attraction.0, at.rt, p);
        match which {
            Extreme::Largest => solve_cubic_extreme(c2, c1, c0, Extreme::Largest),
            Extreme::Smallest => {
                let z = solve_cubic_extreme(c2, c1, c0, Extreme::Smallest);
                if z > b {
                    z
                } else {
                    // At or below the co-volume the smallest root is spurious, and the
                    // largest is the only physical one (as in `compressibility_roots`).
                    solve_cubic_extreme(c2, c1, c0, Extreme::Largest)
                }
            }
        }
    }

    /// `I = 1/(delta1 - delta2) ln((Z + delta1 B)/(Z + delta2 B))`, or `B/Z` when
    /// delta1 = delta2 (van der Waals).
    fn log_term(&self, z: f64, b: f64) -> f64 {
        let d = self.cubic.delta1 - self.cubic.delta2;
        if d.abs() < 1e-12 {
            b / (z + self.cubic.delta1 * b)
        } else {
            ((z + self.cubic.delta1 * b) / (z + self.cubic.delta2 * b)).ln() / d
        }
    }

    /// ln(phi), residual h and residual s of the root `z` at (T, P), untranslated.
    pub(crate) fn residual(&self, t: f64, p: f64, z: f64) -> Residual {
        self.residual_with(t, R * t, self.attraction(t), p, z).0
    }

    /// [`Self::residual`] with `R T` and `(a, da/dT, d2a/dT2)` at `t` already computed; also
    /// returns the log term `I` (algebraically the same at this root whether written in Z and
    /// B or in v/b; the two forms agree to rounding, about 1e-13 relative where the
    /// logarithm's argument is near 1).
    pub(crate) fn residual_with(
        &self,
        t: f64,
        rt: f64,
        (a, da, _): (f64, f64, f64),
        p: f64,
        z: f64,
    ) -> (Residual, f64) {
        let big_a = a * p / (rt * rt);
        let big_b = self.b * p / rt;
        let i = self.log_term(z, big_b);
        let ln_z_minus_b = (z - big_b).ln();
        let ln_phi = z - 1.0 - ln_z_minus_b - big_a / big_b * i;
        let h_res = rt * (z - 1.0) + (t * da - a) / self.b * i;
        let s_res = R * ln_z_minus_b + da / self.b * i;
        (
            Residual {
                ln_phi,
                h_res,
                s_res,
            },
            i,
        )
    }

    /// Full properties of the phase with compressibility root `z` at (T, P).
    pub fn phase_properties(&self, t: f64, p: f64, z: f64) -> PhaseProperties {
        self.phase_properties_at(&self.at_temperature(t), p, z)
    }

    /// [`Self::phase_properties`] with the temperature terms already computed.
    pub(crate) fn phase_properties_at(
        &self,
        at: &AtTemperature,
        p: f64,
        z: f64,
    ) -> PhaseProperties {
        let t = at.t;
        let (untranslated, i) = self.residual_with(at.t, at.rt, at.attraction, p, z);
        let res = self.translated_with(at.t, at.rt, at.shift, p, untranslated);
        let v_eos = z * R * t / p;
        let v = v_eos - at.shift.0;
        let mut out = PhaseProperties {
            molar_volume_m3_per_mol: v,
            density_kg_per_m3: self.molar_mass / v,
            compressibility: p * v / (R * t),
            ln_fugacity_coefficient: res.ln_phi,
            residual_enthalpy_j_per_mol: res.h_res,
            residual_entropy_j_per_mol_k: res.s_res,
            enthalpy_j_per_mol: None,
            entropy_j_per_mol_k: None,
            isobaric_heat_capacity_j_per_mol_k: None,
            isochoric_heat_capacity_j_per_mol_k: None,
        };
        if let Some(ideal) = &self.ideal {
            let cp_ig = R * ideal.cp_over_r(t);
            let (cv, cp) = self.heat_capacities(at, p, v_eos, i, cp_ig);
            out.isobaric_heat_capacity_j_per_mol_k = Some(cp);
            out.isochoric_heat_capacity_j_per_mol_k = Some(cv);
            if let Some((_, h_off, s_off)) = self.reference {
                let h_ig = R * ideal.enthalpy_over_r(T_IDEAL_ORIGIN, t);
                let s_ig =
                    R * ideal.entropy_over_r(T_IDEAL_ORIGIN, t) - R * (p / P_IDEAL_ORIGIN).ln();
                out.enthalpy_j_per_mol = Some(h_ig + out.residual_enthalpy_j_per_mol + h_off);
                out.entropy_j_per_mol_k = Some(s_ig + res.s_res + s_off);
            }
        }
        out
    }

    /// (cv, cp) in J/(mol K) at the temperature of `at`, pressure `p` and untranslated molar
    /// volume `v`, where `i` is the log term of the root (`I` of `log_term` at Z and B,
    /// algebraically equal to it at v/b and 1; computed once per state). Translation adds `T P d2c/dT2` to cp, and cv follows from the
    /// translated `(dP/dT)_V = (dP/dT)_Veos + (dP/dVeos) dc/dT`.
    fn heat_capacities(
        &self,
        at: &AtTemperature,
        p: f64,
        v: f64,
        i: f64,
        cp_ig: f64,
    ) -> (f64, f64) {
        let (t, (a, da, d2a)) = (at.t, at.attraction);
        let b = self.b;
        let (d1, d2) = (self.cubic.delta1, self.cubic.delta2);
        let cv_res = t * d2a / b * i;
        let denom = (v + d1 * b) * (v + d2 * b);
        let dp_dt = R / (v - b) - da / denom;
        let dp_dv = -R * t / ((v - b) * (v - b)) + a * (2.0 * v + (d1 + d2) * b) / (denom * denom);
        let cv_eos = cp_ig - R + cv_res;
        let cp_eos = cv_eos - t * dp_dt * dp_dt / dp_dv;
        let (_, dc, d2c) = at.shift;
        if dc == 0.0 && d2c == 0.0 {
            return (cv_eos, cp_eos);
        }
        let cp = cp_eos + t * p * d2c;
        let dp_dt_translated = dp_dt + dp_dv * dc;
        let cv = cp + t * dp_dt_translated * dp_dt_translated / dp_dv;
        (cv, cp)
    }

    /// The stable root at (T, P): the only one, or of three the one with the lowest
    /// Gibbs energy (lowest fugacity coefficient).
    pub fn stable_root(&self, t: f64, p: f64) -> f64 {
        self.stable_root_at(&self.at_temperature(t), p)
    }

    /// [`Self::stable_root`] with the temperature terms already computed.
    pub(crate) fn stable_root_at(&self, at: &AtTemperature, p: f64) -> f64 {
        let ([c2, c1, c0], b) = self.cubic_coefficients(at.attraction.0, at.rt, p);
        let (zl, zv) = solve_cubic_extremes(c2, c1, c0);
        // One root, or a spurious one at or below the co-volume (as in
        // `compressibility_roots`): the largest is the only physical root.
        if zl == zv || zl <= b {
            return zv;
        }
        let ln_phi = |z| {
            self.residual_with(at.t, at.rt, at.attraction, p, z)
                .0
                .ln_phi
        };
        if ln_phi(zl) < ln_phi(zv) { zl } else { zv }
    }

    /// Checks a temperature input: finite and positive.
    pub(crate) fn check_temperature(&self, field: &'static str, t: f64) -> Result<f64, Error> {
        positive(field, t)
    }
}
