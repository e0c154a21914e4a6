//! Mixtures of pure fluids under one cubic model: van der Waals one-fluid mixing rules
//! with binary interaction parameters, bubble and dew points, glide, and the isothermal
//! flash (Michelsen's tangent-plane stability test, then Rachford-Rice).
//!
//! Mixing rules (Michelsen and Mollerup 2007, ch. 5):
//! `a = sum_i sum_j x_i x_j sqrt(a_i a_j) (1 - k_ij)`, `b = sum_i x_i b_i`.
//! Fugacity coefficient of component i in the generic cubic:
//! `ln phi_i = b_i/b (Z - 1) - ln(Z - B) - A/B (2 sum_j x_j a_ij / a - b_i/b) I`,
//! with `I = ln((Z + d1 B)/(Z + d2 B)) / (d1 - d2)` (or `B/Z` for van der Waals).

use std::sync::Arc;

use crate::curve::{BoundaryCurves, BoundaryKind, SolvePath};
use crate::eos::{PureEos, ReferenceState};
use crate::error::{Error, ErrorKind, positive};
use crate::fluid::GAS_CONSTANT as R;
use crate::model::Model;
use argmin::core::{CostFunction, Executor, State as _};
use argmin::solver::brent::BrentRoot;

const P_IDEAL_ORIGIN: f64 = 101_325.0;
/// Largest number of successive-substitution iterations of a bubble, dew or flash solve.
const MAX_ITERATIONS: usize = 500;

/// Which root of the cubic a phase takes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Root {
    Liquid,
    Vapor,
}

/// A mixture of known composition under one model.
#[derive(Debug, Clone)]
pub struct Mixture {
    components: Vec<PureEos>,
    /// Mole fractions, summing to 1.
    z: Vec<f64>,
    /// Binary interaction parameters, row-major n x n, symmetric, zero diagonal.
    kij: Vec<f64>,
    /// Index of the only component with a non-zero fraction, if there is one: then every
    /// answer is the pure fluid's, exactly.
    single: Option<usize>,
    reference: Option<(ReferenceState, f64, f64)>,
    /// Bubble and dew pressure at the minimum temperature: the low end of the pressure range
    /// of `bubble_at_pressure` and `dew_at_pressure`, found once on first use.
    lowest_pressures: [std::sync::OnceLock<f64>; 2],
    /// The precomputed bubble and dew lines, once attached (see [`BoundaryCurves`]); shared
    /// between mixtures that differ only in reference state.
    curves: Option<Arc<BoundaryCurves>>,
}

/// A bubble or dew point: the mixture at its composition in equilibrium with an incipient
/// phase.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseBoundaryPoint {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Pressure, Pa.
    pub pressure_pa: f64,
    /// Mole fractions of the incipient phase (vapor at a bubble point, liquid at a dew point).
    pub incipient_mole_fractions: Vec<f64>,
    /// Properties of the mixture's own phase at this point (liquid at a bubble point,
    /// vapor at a dew point).
    pub bulk: MixturePhase,
    /// [`SolvePath::Curve`] when the point's temperature came from the mixture's precomputed
    /// line (a point at a pressure: the temperature from the inverse curve, then one bubble- or
    /// dew-point solve at that temperature for the incipient composition and the pressure);
    /// [`SolvePath::FullSolve`] when it was solved for this call. A point at a temperature is
    /// always solved: the solve that gives the incipient composition gives the pressure too.
    /// A mixture of one component reports the pure fluid's path.
    pub path: SolvePath,
}

/// Properties of one mixture phase.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MixturePhase {
    /// Molar volume after volume translation, m^3/mol.
    pub molar_volume_m3_per_mol: f64,
    /// Mass density, kg/m^3.
    pub density_kg_per_m3: f64,
    /// Compressibility factor of the translated volume.
    pub compressibility: f64,
    /// Molar mass of the phase, kg/mol.
    pub molar_mass_kg_per_mol: f64,
    /// Absolute enthalpy in the mixture's reference state, J/mol (needs ideal-gas data of
    /// every component).
    pub enthalpy_j_per_mol: Option<f64>,
    /// Absolute entropy in the mixture's reference state, J/(mol K).
    pub entropy_j_per_mol_k: Option<f64>,
}

/// The result of an isothermal flash.
#[derive(Debug, Clone, PartialEq)]
pub struct Flash {
    /// Molar vapor fraction, 0..=1 (0 or 1 for a stable single phase).
    pub vapor_fraction: f64,
    /// Liquid mole fractions (equal to the feed for a single phase).
    pub liquid_mole_fractions: Vec<f64>,
    /// Vapor mole fractions (equal to the feed for a single phase).
    pub vapor_mole_fractions: Vec<f64>,
    /// Whether the feed is stable as one phase (tangent-plane test).
    pub single_phase: bool,
    /// Liquid properties (for a single phase: the feed's).
    pub liquid: MixturePhase,
    /// Vapor properties (for a single phase: the feed's).
    pub vapor: MixturePhase,
    /// Mixture enthalpy, J/mol, where available.
    pub enthalpy_j_per_mol: Option<f64>,
}

/// A mixture classified at (T, P), with its margins to the bubble and dew points.
#[derive(Debug, Clone, PartialEq)]
pub struct MixtureState {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Pressure, Pa.
    pub pressure_pa: f64,
    /// The phase: subcooled liquid below the bubble point, superheated vapor above the dew
    /// point, two-phase between them; above the critical region by Kay's pseudo-critical
    /// point (a pseudo-critical estimate, `common practice`).
    pub phase: crate::Phase,
    /// The flash at (T, P): vapor fraction and both phase compositions.
    pub flash: Flash,
    /// Bubble pressure at this temperature, Pa.
    pub bubble_pressure_pa: Option<f64>,
    /// Dew pressure at this temperature, Pa.
    pub dew_pressure_pa: Option<f64>,
    /// Bubble temperature at this pressure, K.
    pub bubble_temperature_k: Option<f64>,
    /// Dew temperature at this pressure, K.
    pub dew_temperature_k: Option<f64>,
    /// `T_bubble(P) - T`, K: positive for a subcooled liquid.
    pub subcooling_k: Option<f64>,
    /// `T - T_dew(P)`, K: positive for a superheated vapor.
    pub superheat_k: Option<f64>,
    /// `P - P_bubble(T)`, Pa: positive for a subcooled liquid.
    pub pressure_above_bubble_pa: Option<f64>,
    /// `P_dew(T) - P`, Pa: positive for a superheated vapor.
    pub pressure_below_dew_pa: Option<f64>,
    /// T over the pseudo-critical temperature (mole-fraction average of Tc, Kay's rule).
    pub reduced_temperature: f64,
    /// P over the pseudo-critical pressure (mole-fraction average of Pc).
    pub reduced_pressure: f64,
    /// Within 2 % of the pseudo-critical temperature and 10 % of its pressure.
    pub near_critical: bool,
    /// [`SolvePath::Curve`] when every bubble and dew value of the margins (and so the
    /// classification) came from the mixture's precomputed lines; [`SolvePath::FullSolve`]
    /// when any came from the solver (outside the lines' ranges, or a mixture without lines).
    /// Inside the two-phase region the split itself is always the flash.
    pub path: SolvePath,
}

/// The components' attraction terms at one temperature, which the mixing rules need at every
/// fugacity evaluation: computed once per temperature by the solves.
struct AttractionAt {
    /// `a_i(T)`.
    a: Vec<f64>,
    /// `d a_i / d T`.
    da: Vec<f64>,
    /// `sqrt(a_i a_j)`, row-major n x n.
    sq: Vec<f64>,
}

struct MixParams {
    a: f64,
    da: f64,
    b: f64,
    /// `sum_j x_j a_ij` per component.
    a_row: Vec<f64>,
}

impl Mixture {
    /// A mixture of `components` (all prepared under the same model) with mole fractions
    /// `mole_fractions` and interaction parameters `kij` (n x n, symmetric; `None` = all 0).
    pub fn new(
        components: Vec<PureEos>,
        mole_fractions: Vec<f64>,
        kij: Option<Vec<Vec<f64>>>,
    ) -> Result<Mixture, Error> {
        let n = components.len();
        if n == 0 {
            return Err(Error::invalid(
                "components",
                0.0,
                "a mixture needs at least one component",
            ));
        }
        if mole_fractions.len() != n {
            return Err(Error::invalid(
                "mole_fractions",
                mole_fractions.len() as f64,
                format!("needs one fraction per component ({n})"),
            ));
        }
        let model = components[0].model();
        if components.iter().any(|c| c.model() != model) {
            return Err(Error::invalid(
                "components",
                n as f64,
                "all components need the same model",
            ));
        }
        let mut sum = 0.0;
        for &x in &mole_fractions {
            if !x.is_finite() {
                return Err(Error::non_finite("mole_fractions"));
            }
            if x < 0.0 {
                return Err(Error::invalid(
                    "mole_fractions",
                    x,
                    "fractions must be 0 or more",
                ));
            }
            sum += x;
        }
        if (sum - 1.0).abs() > 1e-9 {
            return Err(Error::invalid(
                "mole_fractions",
                sum,
                "fractions must sum to 1 (within 1e-9)",
            ));
        }
        let mut k = vec![0.0; n * n];
        if let Some(rows) = kij {
            if rows.len() != n || rows.iter().any(|r| r.len() != n) {
                return Err(Error::invalid(
                    "kij",
                    rows.len() as f64,
                    format!("must be {n} x {n}"),
                ));
            }
            for i in 0..n {
                for j in 0..n {
                    let v = rows[i][j];
                    if !v.is_finite() || v.abs() >= 1.0 || (v - rows[j][i]).abs() > 1e-15 {
                        return Err(Error::invalid(
                            "kij",
                            v,
                            "must be finite, symmetric, within (-1, 1)",
                        ));
                    }
                    k[i * n + j] = if i == j { 0.0 } else { v };
                }
            }
        }
        let nonzero: Vec<usize> = (0..n).filter(|&i| mole_fractions[i] > 0.0).collect();
        let single = (nonzero.len() == 1).then(|| nonzero[0]);
        let z = mole_fractions.iter().map(|x| x / sum).collect();
        Ok(Mixture {
            components,
            z,
            kij: k,
            single,
            reference: None,
            lowest_pressures: Default::default(),
            curves: None,
        })
    }

    /// Mole fractions from mass fractions and the components' molar masses.
    pub fn mole_fractions_from_mass(components: &[PureEos], mass: &[f64]) -> Vec<f64> {
        let moles: Vec<f64> = components
            .iter()
            .zip(mass)
            .map(|(c, w)| w / c.molar_mass_kg_per_mol())
            .collect();
        let total: f64 = moles.iter().sum();
        moles.iter().map(|m| m / total).collect()
    }

    /// The model shared by every component.
    pub fn model(&self) -> Model {
        self.components[0].model()
    }

    /// The components.
    pub fn components(&self) -> &[PureEos] {
        &self.components
    }

    /// The feed mole fractions.
    pub fn mole_fractions(&self) -> &[f64] {
        &self.z
    }

    /// Molar mass of the feed, kg/mol.
    pub fn molar_mass_kg_per_mol(&self) -> f64 {
        self.molar_mass(&self.z)
    }

    /// The reference state of absolute h and s, if set.
    pub fn reference_state(&self) -> Option<ReferenceState> {
        self.reference.map(|r| r.0)
    }

    fn molar_mass(&self, x: &[f64]) -> f64 {
        self.components
            .iter()
            .zip(x)
            .map(|(c, xi)| xi * c.molar_mass_kg_per_mol())
            .sum()
    }

    /// Lowest temperature at which every component is within its range, K.
    pub fn minimum_temperature_k(&self) -> f64 {
        self.components
            .iter()
            .zip(&self.z)
            .filter(|(_, x)| **x > 0.0)
            .map(|(c, _)| c.minimum_temperature_k())
            .fold(0.0, f64::max)
    }

    /// Fixes absolute h and s for the mixture as a whole: the saturated liquid (bubble
    /// point) at 0 °C has h = 200 kJ/kg and s = 1 kJ/(kg K), or the bubble point at
    /// 101 325 Pa has h = 0 and s = 0. Needs ideal-gas data for every component.
    pub fn with_reference(mut self, reference: ReferenceState) -> Result<Mixture, Error> {
        if let Some(i) = self.single {
            let eos = self.components[i].clone().with_reference(reference)?;
            self.components[i] = eos;
            self.reference = Some((reference, 0.0, 0.0));
            return Ok(self);
        }
        self.reference = None;
        let m = self.molar_mass_kg_per_mol();
        let (point, h_target, s_target) = match reference {
            ReferenceState::LiquidAtZeroCelsius => {
                (self.bubble_at_temperature(273.15)?, 200e3 * m, 1e3 * m)
            }
            ReferenceState::LiquidAtNormalBoilingPoint => {
                (self.bubble_at_pressure(P_IDEAL_ORIGIN)?, 0.0, 0.0)
            }
        };
        let (h, s) = self
            .absolute_terms(
                point.temperature_k,
                point.pressure_pa,
                &self.z.clone(),
                Root::Liquid,
            )
            .ok_or_else(|| {
                Error::new(ErrorKind::MissingData {
                    what:
                        "a mixture component has no ideal-gas heat capacity, so absolute h and s \
                       cannot be computed"
                            .into(),
                })
            })?;
        self.reference = Some((reference, h_target - h, s_target - s));
        Ok(self)
    }

    /// This mixture with its bubble and dew lines tabulated and verified against its solver
    /// (see [`BoundaryCurves`]): bubble and dew values and classification then read the lines
    /// where they are valid. Fails if a line cannot be tabulated (its solver fails at the
    /// minimum temperature, or the curve cannot meet [`crate::CURVE_TOLERANCE`]); keep the
    /// mixture without lines then.
    ///
    /// A mixture of one component answers as that pure fluid: it gets the fluid's saturation
    /// curve instead ([`PureEos::with_saturation_curve`]), and no [`BoundaryCurves`].
    pub fn with_boundary_curves(mut self) -> Result<Mixture, Error> {
        if let Some(i) = self.single {
            let eos = self.components[i].clone().with_saturation_curve()?;
            self.components[i] = eos;
            return Ok(self);
        }
        let curves = BoundaryCurves::build(&self)?;
        Ok(self.with_shared_boundary_curves(Arc::new(curves)))
    }

    /// This mixture using `curves`, which must have been built for a mixture of the same
    /// components, composition, interaction parameters and model (mixtures that differ only
    /// in reference state share one set).
    pub fn with_shared_boundary_curves(mut self, curves: Arc<BoundaryCurves>) -> Mixture {
        self.curves = Some(curves);
        self
    }

    /// Index of the only component with a non-zero fraction, if there is one.
    pub(crate) fn single_component(&self) -> Option<usize> {
        self.single
    }

    /// The bubble and dew lines, if this mixture has them.
    pub fn boundary_curves(&self) -> Option<&Arc<BoundaryCurves>> {
        self.curves.as_ref()
    }

    /// One of the attached lines.
    #[inline]
    fn line(&self, kind: BoundaryKind) -> Option<&crate::SaturationCurve> {
        self.curves.as_deref().map(|c| c.line(kind))
    }

    /// The components' attraction terms at `t`.
    fn attraction_at(&self, t: f64) -> AttractionAt {
        let n = self.components.len();
        let mut a = Vec::with_capacity(n);
        let mut da = Vec::with_capacity(n);
        for c in &self.components {
            let (ai, dai, _) = c.attraction(t);
            a.push(ai);
            da.push(dai);
        }
        let mut sq = vec![0.0; n * n];
        for i in 0..n {
            for j in 0..n {
                sq[i * n + j] = (a[i] * a[j]).sqrt();
            }
        }
        AttractionAt { a, da, sq }
    }

    /// The mixing rules for composition `x` with the attraction terms of one temperature.
    fn params_at(&self, at: &AttractionAt, x: &[f64]) -> MixParams {
        let n = self.components.len();
        let (ai, dai) = (&at.a, &at.da);
        let mut b = 0.0;
        for (c, xi) in self.components.iter().zip(x) {
            b += xi * c.co_volume();
        }
        let mut a_mix = 0.0;
        let mut da_mix = 0.0;
        let mut a_row = vec![0.0; n];
        for i in 0..n {
            for j in 0..n {
                let kij = 1.0 - self.kij[i * n + j];
                let sq = at.sq[i * n + j];
                let aij = sq * kij;
                a_row[i] += x[j] * aij;
                a_mix += x[i] * x[j] * aij;
                if sq > 0.0 {
                    da_mix += x[i] * x[j] * kij * 0.5 * sq * (dai[i] / ai[i] + dai[j] / ai[j]);
                }
            }
        }
        MixParams {
            a: a_mix,
            da: da_mix,
            b,
            a_row,
        }
    }

    fn constants(&self) -> (f64, f64) {
        let c = self.model().constants();
        (c.delta1, c.delta2)
    }

    fn log_term(&self, z: f64, big_b: f64) -> f64 {
        let (d1, d2) = self.constants();
        if (d1 - d2).abs() < 1e-12 {
            big_b / z
        } else {
            ((z + d1 * big_b) / (z + d2 * big_b)).ln() / (d1 - d2)
        }
    }

    /// Compressibility of composition `x` on the given root at (T, P), and the mixture
    /// parameters there.
    fn root(&self, t: f64, p: f64, x: &[f64], which: Root) -> (f64, MixParams) {
        self.root_at(&self.attraction_at(t), t, p, x, which)
    }

    /// [`Mixture::root`] with the attraction terms of `t` computed already.
    fn root_at(
        &self,
        at: &AttractionAt,
        t: f64,
        p: f64,
        x: &[f64],
        which: Root,
    ) -> (f64, MixParams) {
        let mp = self.params_at(at, x);
        let rt = R * t;
        let (big_a, big_b) = (mp.a * p / (rt * rt), mp.b * p / rt);
        let (d1, d2) = self.constants();
        let [c2, c1, c0] = crate::cubic::compressibility_cubic(big_a, big_b, d1, d2);
        let roots = crate::cubic::solve_cubic(c2, c1, c0);
        // The smallest (liquid) or largest (vapor) root above B; the largest root if none is.
        let mut physical = roots.as_slice().iter().copied().filter(|&z| z > big_b);
        let z = match which {
            Root::Liquid => physical.next(),
            Root::Vapor => physical.next_back(),
        }
        .unwrap_or_else(|| roots.largest());
        (z, mp)
    }

    /// ln(phi_i) of composition `x` on root `which`, with the attraction terms of `t` computed
    /// already (the solves evaluate fugacities many times at one temperature); returns the
    /// compressibility too.
    fn ln_phi_at(
        &self,
        at: &AttractionAt,
        t: f64,
        p: f64,
        x: &[f64],
        which: Root,
        out: &mut [f64],
    ) -> f64 {
        let (z, mp) = self.root_at(at, t, p, x, which);
        let rt = R * t;
        let (big_a, big_b) = (mp.a * p / (rt * rt), mp.b * p / rt);
        let i_term = self.log_term(z, big_b);
        let ln_zb = (z - big_b).ln();
        for (k, c) in self.components.iter().enumerate() {
            let bi = c.co_volume() / mp.b;
            out[k] =
                bi * (z - 1.0) - ln_zb - big_a / big_b * (2.0 * mp.a_row[k] / mp.a - bi) * i_term;
        }
        z
    }

    /// Residual Gibbs energy over RT of composition `x` on a root, to pick the stable root.
    fn gibbs_residual(&self, at: &AttractionAt, t: f64, p: f64, x: &[f64], which: Root) -> f64 {
        let mut lp = vec![0.0; x.len()];
        self.ln_phi_at(at, t, p, x, which, &mut lp);
        x.iter().zip(&lp).map(|(xi, l)| xi * l).sum()
    }

    fn stable_root_for(&self, t: f64, p: f64, x: &[f64]) -> Root {
        let at = self.attraction_at(t);
        if self.gibbs_residual(&at, t, p, x, Root::Liquid)
            <= self.gibbs_residual(&at, t, p, x, Root::Vapor)
        {
            Root::Liquid
        } else {
            Root::Vapor
        }
    }

    /// Ideal-gas plus residual h and s of composition `x` (without the reference offsets).
    fn absolute_terms(&self, t: f64, p: f64, x: &[f64], which: Root) -> Option<(f64, f64)> {
        let (z, mp) = self.root(t, p, x, which);
        let rt = R * t;
        let big_b = mp.b * p / rt;
        let i_term = self.log_term(z, big_b);
        let h_res = rt * (z - 1.0) + (t * mp.da - mp.a) / mp.b * i_term;
        let s_res = R * (z - big_b).ln() + mp.da / mp.b * i_term;
        let mut h = h_res;
        let mut s = s_res - R * (p / P_IDEAL_ORIGIN).ln();
        for (c, &xi) in self.components.iter().zip(x) {
            let (hi, si) = c.ideal_gas_terms(t)?;
            let (shift, dshift, _) = c.volume_shift_at(t);
            h += xi * (hi + (t * dshift - shift) * p);
            s += xi * (si + p * dshift);
            if xi > 0.0 {
                s -= R * xi * xi.ln();
            }
        }
        Some((h, s))
    }

    fn phase(&self, t: f64, p: f64, x: &[f64], which: Root) -> MixturePhase {
        let (z, _) = self.root(t, p, x, which);
        let shift: f64 = self
            .components
            .iter()
            .zip(x)
            .map(|(c, xi)| xi * c.volume_shift_at(t).0)
            .sum();
        let v = z * R * t / p - shift;
        let m = self.molar_mass(x);
        let (h, s) = match (self.reference, self.absolute_terms(t, p, x, which)) {
            (Some((_, h_off, s_off)), Some((h, s))) => (Some(h + h_off), Some(s + s_off)),
            _ => (None, None),
        };
        MixturePhase {
            molar_volume_m3_per_mol: v,
            density_kg_per_m3: m / v,
            compressibility: p * v / (R * t),
            molar_mass_kg_per_mol: m,
            enthalpy_j_per_mol: h,
            entropy_j_per_mol_k: s,
        }
    }

    fn pure_point(&self, i: usize, sat: crate::Saturation, bubble: bool) -> PhaseBoundaryPoint {
        let n = self.components.len();
        let mut incipient = vec![0.0; n];
        incipient[i] = 1.0;
        let props = if bubble { sat.liquid } else { sat.vapor };
        PhaseBoundaryPoint {
            path: sat.path,
            temperature_k: sat.temperature_k,
            pressure_pa: sat.pressure_pa,
            incipient_mole_fractions: incipient,
            bulk: MixturePhase {
                molar_volume_m3_per_mol: props.molar_volume_m3_per_mol,
                density_kg_per_m3: props.density_kg_per_m3,
                compressibility: props.compressibility,
                molar_mass_kg_per_mol: self.components[i].molar_mass_kg_per_mol(),
                enthalpy_j_per_mol: props.enthalpy_j_per_mol,
                entropy_j_per_mol_k: props.entropy_j_per_mol_k,
            },
        }
    }

    fn wilson_factor(c: &PureEos, t: f64) -> f64 {
        // Wilson (1968): K_i = Pc_i / P exp(5.373 (1 + w_i)(1 - Tc_i / T)).
        c.critical_pressure_pa()
            * (5.373 * (1.0 + c.acentric_factor()) * (1.0 - c.critical_temperature_k() / t)).exp()
    }

    fn check_t(&self, t: f64) -> Result<f64, Error> {
        let t = positive("temperature_k", t)?;
        let t_min = self.minimum_temperature_k();
        let t_max = self
            .components
            .iter()
            .map(|c| c.critical_temperature_k())
            .fold(0.0, f64::max);
        if t < t_min || t >= t_max {
            return Err(Error::out_of_range("temperature_k", t, t_min, t_max, "K"));
        }
        Ok(t)
    }

    /// Bubble point at temperature `t`: the pressure at which the liquid of feed composition
    /// first forms vapor, and that vapor's composition.
    pub fn bubble_at_temperature(&self, t: f64) -> Result<PhaseBoundaryPoint, Error> {
        if let Some(i) = self.single {
            return Ok(self.pure_point(i, self.components[i].saturation_at_temperature(t)?, true));
        }
        let t = self.check_t(t)?;
        self.boundary_pressure(t, true)
    }

    /// Dew point at temperature `t`: the pressure at which the vapor of feed composition first
    /// forms liquid, and that liquid's composition.
    pub fn dew_at_temperature(&self, t: f64) -> Result<PhaseBoundaryPoint, Error> {
        if let Some(i) = self.single {
            return Ok(self.pure_point(i, self.components[i].saturation_at_temperature(t)?, false));
        }
        let t = self.check_t(t)?;
        self.boundary_pressure(t, false)
    }

    /// Successive substitution for the bubble (or dew) pressure at `t`: the reference solve
    /// of the mixture's lines (never reads them).
    pub(crate) fn boundary_pressure(
        &self,
        t: f64,
        bubble: bool,
    ) -> Result<PhaseBoundaryPoint, Error> {
        let n = self.z.len();
        let wf: Vec<f64> = self
            .components
            .iter()
            .map(|c| Self::wilson_factor(c, t))
            .collect();
        let mut p = if bubble {
            self.z.iter().zip(&wf).map(|(x, f)| x * f).sum::<f64>()
        } else {
            1.0 / self.z.iter().zip(&wf).map(|(y, f)| y / f).sum::<f64>()
        };
        let mut other: Vec<f64> = (0..n)
            .map(|i| {
                if bubble {
                    self.z[i] * wf[i] / p
                } else {
                    self.z[i] * p / wf[i]
                }
            })
            .collect();
        normalize(&mut other);
        let (mut lf, mut lo) = (vec![0.0; n], vec![0.0; n]);
        let (feed_root, other_root) = if bubble {
            (Root::Liquid, Root::Vapor)
        } else {
            (Root::Vapor, Root::Liquid)
        };
        let at = self.attraction_at(t);
        let mut next = vec![0.0; n];
        for _ in 0..MAX_ITERATIONS {
            self.ln_phi_at(&at, t, p, &self.z, feed_root, &mut lf);
            self.ln_phi_at(&at, t, p, &other, other_root, &mut lo);
            // K_i = y_i / x_i = phi_L / phi_V.
            let mut s = 0.0;
            let mut trivial = true;
            for i in 0..n {
                let k = if bubble {
                    (lf[i] - lo[i]).exp()
                } else {
                    (lo[i] - lf[i]).exp()
                };
                if (k - 1.0).abs() > 1e-6 {
                    trivial = false;
                }
                next[i] = if bubble { k * self.z[i] } else { self.z[i] / k };
                s += next[i];
            }
            if trivial {
                return Err(self.no_boundary(t, bubble));
            }
            for v in next.iter_mut() {
                *v /= s;
            }
            let change = next
                .iter()
                .zip(&other)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            p = if bubble { p * s } else { p / s };
            // `next` becomes the incipient phase; its old buffer is overwritten next time.
            std::mem::swap(&mut other, &mut next);
            if !p.is_finite() || p <= 0.0 {
                return Err(self.no_boundary(t, bubble));
            }
            if (s - 1.0).abs() < 1e-12 && change < 1e-12 {
                let bulk = self.phase(t, p, &self.z, feed_root);
                return Ok(PhaseBoundaryPoint {
                    temperature_k: t,
                    pressure_pa: p,
                    incipient_mole_fractions: other,
                    bulk,
                    path: SolvePath::FullSolve,
                });
            }
        }
        Err(Error::no_convergence(
            if bubble {
                "bubble pressure"
            } else {
                "dew pressure"
            },
            format!("no convergence at T = {t} K within {MAX_ITERATIONS} iterations"),
        ))
    }

    fn no_boundary(&self, t: f64, bubble: bool) -> Error {
        Error::outside_envelope(
            "temperature_k",
            t,
            format!(
                "no {} point at this temperature: the mixture is near or above its critical \
                 region (valid from {} K up to below the mixture's critical region)",
                if bubble { "bubble" } else { "dew" },
                self.minimum_temperature_k()
            ),
        )
    }

    /// Bubble point at pressure `p`: the temperature at which the liquid of feed composition
    /// first boils. Where the mixture's bubble line covers `p`, the temperature comes from the
    /// line and one bubble-point solve at that temperature gives the incipient vapor, the bulk
    /// liquid and the pressure (equal to `p` within the line's recorded inverse deviation);
    /// elsewhere the temperature is solved for.
    pub fn bubble_at_pressure(&self, p: f64) -> Result<PhaseBoundaryPoint, Error> {
        if let Some(i) = self.single {
            return Ok(self.pure_point(i, self.components[i].saturation_at_pressure(p)?, true));
        }
        self.point_at_pressure(p, BoundaryKind::Bubble)
    }

    /// Dew point at pressure `p`: the temperature at which the vapor of feed composition
    /// first condenses. Uses the mixture's dew line as [`Mixture::bubble_at_pressure`] uses
    /// the bubble line.
    pub fn dew_at_pressure(&self, p: f64) -> Result<PhaseBoundaryPoint, Error> {
        if let Some(i) = self.single {
            return Ok(self.pure_point(i, self.components[i].saturation_at_pressure(p)?, false));
        }
        self.point_at_pressure(p, BoundaryKind::Dew)
    }

    fn point_at_pressure(&self, p: f64, kind: BoundaryKind) -> Result<PhaseBoundaryPoint, Error> {
        let bubble = kind == BoundaryKind::Bubble;
        let p = self.check_boundary_pressure(p, bubble)?;
        if let Some(t) = self.line(kind).and_then(|c| c.temperature_k(p))
            && let Ok(mut point) = self.boundary_pressure(t, bubble)
        {
            point.path = SolvePath::Curve;
            return Ok(point);
        }
        self.boundary_temperature(p, bubble)
    }

    /// Checks `p` against the low end of the bubble (or dew) line: the line's pressure at the
    /// minimum temperature, solved once on first use.
    fn check_boundary_pressure(&self, p: f64, bubble: bool) -> Result<f64, Error> {
        let p = positive("pressure_pa", p)?;
        let t_min = self.minimum_temperature_k();
        let cell = &self.lowest_pressures[usize::from(bubble)];
        let p_low = match cell.get() {
            Some(&p) => p,
            None => {
                // The line's low end is the mixture's own limit, not the caller's temperature:
                // a failure there is reported against the pressure asked for.
                let lowest = self.boundary_pressure(t_min, bubble).map_err(|e| {
                    // A solver failure stays what it is (a defect to report).
                    if !matches!(
                        e.kind(),
                        ErrorKind::OutOfRange { .. }
                            | ErrorKind::NearCritical { .. }
                            | ErrorKind::OutsideEnvelope { .. }
                    ) {
                        return e;
                    }
                    let line = if bubble { "bubble" } else { "dew" };
                    Error::outside_envelope(
                        "pressure_pa",
                        p,
                        format!(
                            "the mixture's {line} line cannot be found at its lowest temperature, \
                             {t_min} K, so no {line} temperature can be given for a pressure ({e})"
                        ),
                    )
                })?;
                *cell.get_or_init(|| lowest.pressure_pa)
            }
        };
        if p < p_low {
            return Err(Error::outside_envelope(
                "pressure_pa",
                p,
                format!("below the mixture's range: the lowest is {p_low} Pa at {t_min} K"),
            ));
        }
        Ok(p)
    }

    /// Bubble pressure at `t`, Pa, and the path that produced it: from the mixture's bubble
    /// line where it has one that covers `t`, else from the solver (the same solve as
    /// [`Mixture::bubble_at_temperature`], without the incipient composition). Same range
    /// and refusals as `bubble_at_temperature`.
    pub fn bubble_pressure(&self, t: f64) -> Result<(f64, SolvePath), Error> {
        self.line_pressure(t, BoundaryKind::Bubble)
    }

    /// Dew pressure at `t`, Pa, and the path that produced it (see
    /// [`Mixture::bubble_pressure`]).
    pub fn dew_pressure(&self, t: f64) -> Result<(f64, SolvePath), Error> {
        self.line_pressure(t, BoundaryKind::Dew)
    }

    /// Bubble temperature at `p`, K, and the path that produced it: from the inverse of the
    /// mixture's bubble line where it has one that covers `p`, else from the solver (as
    /// [`Mixture::bubble_at_pressure`]). Same range and refusals as `bubble_at_pressure`.
    pub fn bubble_temperature(&self, p: f64) -> Result<(f64, SolvePath), Error> {
        self.line_temperature(p, BoundaryKind::Bubble)
    }

    /// Dew temperature at `p`, K, and the path that produced it (see
    /// [`Mixture::bubble_temperature`]).
    pub fn dew_temperature(&self, p: f64) -> Result<(f64, SolvePath), Error> {
        self.line_temperature(p, BoundaryKind::Dew)
    }

    fn line_pressure(&self, t: f64, kind: BoundaryKind) -> Result<(f64, SolvePath), Error> {
        if let Some(i) = self.single {
            let eos = &self.components[i];
            let p = eos.saturation_pressure(t)?;
            return Ok((p, Self::pure_path(eos.curve_pressure(t).is_some())));
        }
        let t = self.check_t(t)?;
        if let Some(p) = self.line(kind).and_then(|c| c.pressure_pa(t)) {
            return Ok((p, SolvePath::Curve));
        }
        let point = self.boundary_pressure(t, kind == BoundaryKind::Bubble)?;
        Ok((point.pressure_pa, SolvePath::FullSolve))
    }

    fn line_temperature(&self, p: f64, kind: BoundaryKind) -> Result<(f64, SolvePath), Error> {
        if let Some(i) = self.single {
            let eos = &self.components[i];
            let t = eos.saturation_temperature(p)?;
            return Ok((t, Self::pure_path(eos.curve_temperature(p).is_some())));
        }
        let bubble = kind == BoundaryKind::Bubble;
        let p = self.check_boundary_pressure(p, bubble)?;
        if let Some(t) = self.line(kind).and_then(|c| c.temperature_k(p)) {
            return Ok((t, SolvePath::Curve));
        }
        Ok((
            self.boundary_temperature(p, bubble)?.temperature_k,
            SolvePath::FullSolve,
        ))
    }

    fn pure_path(from_curve: bool) -> SolvePath {
        if from_curve {
            SolvePath::Curve
        } else {
            SolvePath::FullSolve
        }
    }

    /// The full solve of a bubble (or dew) point at `p`: Brent on the temperature, each step a
    /// bubble- (or dew-) pressure solve.
    fn boundary_temperature(&self, p: f64, bubble: bool) -> Result<PhaseBoundaryPoint, Error> {
        let p = self.check_boundary_pressure(p, bubble)?;
        let t_min = self.minimum_temperature_k();
        let t_max = self
            .components
            .iter()
            .map(|c| c.critical_temperature_k())
            .fold(0.0, f64::max);
        // The pressure range: between the boundary pressure at the lowest temperature and
        // the highest temperature at which the boundary still exists.
        let p_low = *self.lowest_pressures[usize::from(bubble)]
            .get()
            .expect("set by the check");
        // Bracket around the Wilson (1968) estimate, widening in steps of 2 % of the range.
        let estimate = self.wilson_temperature(p, bubble, t_min, t_max);
        let step = 0.02 * (t_max - t_min);
        let envelope_end = |_| {
            Error::outside_envelope(
                "pressure_pa",
                p,
                format!(
                    "above the mixture's two-phase region: valid from {p_low} Pa up to the \
                     mixture's critical region"
                ),
            )
        };
        let below = |t: f64| {
            self.boundary_pressure(t, bubble)
                .map(|pt| pt.pressure_pa < p)
                .map_err(envelope_end)
        };
        let mut lo = (estimate - step).max(t_min);
        while !below(lo)? {
            if lo <= t_min {
                break;
            }
            lo = (lo - step).max(t_min);
        }
        let mut hi = (estimate + step).min(t_max);
        loop {
            match below(hi) {
                Ok(false) => break,
                Ok(true) if hi + step < t_max => hi += step,
                _ => {
                    // The boundary ends (mixture critical region) before reaching p: find
                    // how far it goes for the message.
                    let p_top = self
                        .boundary_pressure(lo, bubble)
                        .map_err(envelope_end)?
                        .pressure_pa;
                    return Err(Error::outside_envelope(
                        "pressure_pa",
                        p,
                        format!(
                            "above the mixture's two-phase region: valid {p_low} Pa to at \
                             least {p_top} Pa, below the mixture's critical region"
                        ),
                    ));
                }
            }
        }
        let gap = BoundaryGap {
            mixture: self,
            ln_p: p.ln(),
            bubble,
        };
        let t = Executor::new(gap, BrentRoot::new(lo, hi, 1e-11))
            .configure(|s| s.max_iters(200))
            .run()
            .map_err(|e| Error::no_convergence("bubble/dew temperature", e.to_string()))?
            .state()
            .get_best_param()
            .copied()
            .ok_or_else(|| Error::no_convergence("bubble/dew temperature", "no result"))?;
        let mut point = self.boundary_pressure(t, bubble)?;
        point.pressure_pa = point.pressure_pa.max(0.0);
        Ok(point)
    }

    /// Temperature at which the Wilson K-values put the feed at its bubble (or dew) point.
    fn wilson_temperature(&self, p: f64, bubble: bool, t_min: f64, t_max: f64) -> f64 {
        let gap = |t: f64| {
            let s: f64 = if bubble {
                self.components
                    .iter()
                    .zip(&self.z)
                    .map(|(c, x)| x * Self::wilson_factor(c, t) / p)
                    .sum()
            } else {
                1.0 / self
                    .components
                    .iter()
                    .zip(&self.z)
                    .map(|(c, y)| y * p / Self::wilson_factor(c, t))
                    .sum::<f64>()
            };
            s - 1.0
        };
        let (mut lo, mut hi) = (t_min, t_max);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if gap(mid) < 0.0 { lo = mid } else { hi = mid }
        }
        0.5 * (lo + hi)
    }

    /// Temperature glide at pressure `p`: dew temperature minus bubble temperature, K (from
    /// the mixture's lines where they cover `p`, see [`Mixture::bubble_temperature`]).
    pub fn glide_at_pressure(&self, p: f64) -> Result<f64, Error> {
        Ok(self.dew_temperature(p)?.0 - self.bubble_temperature(p)?.0)
    }

    /// Michelsen's tangent-plane test of the feed at (T, P): `Some(K-values)` of an
    /// unstable trial phase if the feed splits, `None` if it is stable as one phase.
    fn stability(&self, t: f64, p: f64) -> Option<Vec<f64>> {
        let n = self.z.len();
        let feed_root = self.stable_root_for(t, p, &self.z);
        let at = self.attraction_at(t);
        let mut lz = vec![0.0; n];
        self.ln_phi_at(&at, t, p, &self.z, feed_root, &mut lz);
        let d: Vec<f64> = (0..n)
            .map(|i| {
                if self.z[i] > 0.0 {
                    self.z[i].ln() + lz[i]
                } else {
                    f64::NEG_INFINITY
                }
            })
            .collect();
        let wilson: Vec<f64> = self
            .components
            .iter()
            .map(|c| Self::wilson_factor(c, t) / p)
            .collect();
        let mut lw = vec![0.0; n];
        for trial in [Root::Vapor, Root::Liquid] {
            let mut w: Vec<f64> = (0..n)
                .map(|i| {
                    if trial == Root::Vapor {
                        self.z[i] * wilson[i]
                    } else {
                        self.z[i] / wilson[i]
                    }
                })
                .collect();
            for _ in 0..MAX_ITERATIONS {
                let total: f64 = w.iter().sum();
                let x: Vec<f64> = w.iter().map(|v| v / total).collect();
                self.ln_phi_at(&at, t, p, &x, trial, &mut lw);
                let next: Vec<f64> = (0..n).map(|i| (d[i] - lw[i]).exp()).collect();
                let change = next
                    .iter()
                    .zip(&w)
                    .map(|(a, b)| (a.ln() - b.ln()).abs())
                    .filter(|v| v.is_finite())
                    .fold(0.0, f64::max);
                w = next;
                if change < 1e-10 {
                    break;
                }
            }
            let total: f64 = w.iter().sum();
            let x: Vec<f64> = w.iter().map(|v| v / total).collect();
            let distance = x
                .iter()
                .zip(&self.z)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            // Tangent-plane distance (modified): 1 - sum W < 0 means an unstable feed.
            if total > 1.0 + 1e-8 && distance > 1e-6 {
                let k = (0..n)
                    .map(|i| {
                        // The unnormalised trial amounts: sum z K != 1, so Rachford-Rice
                        // has a root inside (0, 1).
                        if trial == Root::Vapor {
                            w[i] / self.z[i].max(1e-300)
                        } else {
                            self.z[i] / w[i].max(1e-300)
                        }
                    })
                    .collect();
                return Some(k);
            }
        }
        None
    }

    /// Isothermal flash of the feed at (T, P): stability test, then Rachford-Rice with
    /// successive substitution of the K-values.
    pub fn flash(&self, t: f64, p: f64) -> Result<Flash, Error> {
        let t = positive("temperature_k", t)?;
        let p = positive("pressure_pa", p)?;
        let single = |me: &Mixture, root: Root, beta: f64| me.one_phase(t, p, root, beta);
        let Some(mut k) = self.stability(t, p) else {
            return Ok(self.stable_one_phase(t, p));
        };
        let n = self.z.len();
        let (mut lx, mut ly) = (vec![0.0; n], vec![0.0; n]);
        let at = self.attraction_at(t);
        for _ in 0..MAX_ITERATIONS {
            let beta = rachford_rice(&self.z, &k)?;
            if beta <= 0.0 || beta >= 1.0 {
                let root = if beta <= 0.0 {
                    Root::Liquid
                } else {
                    Root::Vapor
                };
                return Ok(single(self, root, beta.clamp(0.0, 1.0)));
            }
            let x: Vec<f64> = (0..n)
                .map(|i| self.z[i] / (1.0 + beta * (k[i] - 1.0)))
                .collect();
            let y: Vec<f64> = (0..n).map(|i| k[i] * x[i]).collect();
            self.ln_phi_at(&at, t, p, &x, Root::Liquid, &mut lx);
            self.ln_phi_at(&at, t, p, &y, Root::Vapor, &mut ly);
            let next: Vec<f64> = (0..n).map(|i| (lx[i] - ly[i]).exp()).collect();
            let change = next
                .iter()
                .zip(&k)
                .map(|(a, b)| (a.ln() - b.ln()).abs())
                .fold(0.0, f64::max);
            k = next;
            if change < 1e-12 {
                break;
            }
        }
        let beta = rachford_rice(&self.z, &k)?.clamp(0.0, 1.0);
        let mut x: Vec<f64> = (0..n)
            .map(|i| self.z[i] / (1.0 + beta * (k[i] - 1.0)))
            .collect();
        let mut y: Vec<f64> = (0..n).map(|i| k[i] * x[i]).collect();
        normalize(&mut x);
        normalize(&mut y);
        let liquid = self.phase(t, p, &x, Root::Liquid);
        let vapor = self.phase(t, p, &y, Root::Vapor);
        let enthalpy = match (liquid.enthalpy_j_per_mol, vapor.enthalpy_j_per_mol) {
            (Some(hl), Some(hv)) => Some((1.0 - beta) * hl + beta * hv),
            _ => None,
        };
        Ok(Flash {
            vapor_fraction: beta,
            liquid_mole_fractions: x,
            vapor_mole_fractions: y,
            single_phase: false,
            liquid,
            vapor,
            enthalpy_j_per_mol: enthalpy,
        })
    }
}

impl Mixture {
    /// The feed as one phase on `root`, with vapor fraction `beta`.
    fn one_phase(&self, t: f64, p: f64, root: Root, beta: f64) -> Flash {
        let props = self.phase(t, p, &self.z, root);
        Flash {
            vapor_fraction: beta,
            liquid_mole_fractions: self.z.clone(),
            vapor_mole_fractions: self.z.clone(),
            single_phase: true,
            liquid: props,
            vapor: props,
            enthalpy_j_per_mol: props.enthalpy_j_per_mol,
        }
    }

    /// The flash result of a feed that is stable as one phase: on its stable root.
    fn stable_one_phase(&self, t: f64, p: f64) -> Flash {
        let root = self.stable_root_for(t, p, &self.z);
        self.one_phase(t, p, root, if root == Root::Vapor { 1.0 } else { 0.0 })
    }

    /// Pseudo-critical temperature and pressure (Kay's rule).
    pub fn pseudo_critical(&self) -> (f64, f64) {
        self.components
            .iter()
            .zip(&self.z)
            .fold((0.0, 0.0), |(t, p), (c, x)| {
                (
                    t + x * c.critical_temperature_k(),
                    p + x * c.critical_pressure_pa(),
                )
            })
    }

    /// Classifies the feed at (T, P) and computes its margins to the bubble and dew points.
    ///
    /// The four bubble and dew values come from the mixture's lines where it has them and they
    /// cover (T, P), else from the solver ([`MixtureState::path`]). Where a line says the feed
    /// lies outside the two-phase region (above the bubble pressure or below the dew pressure
    /// at T), the feed is one phase and the flash's stability test is skipped: the properties
    /// are those of the feed on its stable root, as the flash gives for a stable feed. Between
    /// the lines, and without them, the flash decides.
    pub fn state(&self, temperature_k: f64, pressure_pa: f64) -> Result<MixtureState, Error> {
        let t = positive("temperature_k", temperature_k)?;
        let p = positive("pressure_pa", pressure_pa)?;
        let (tc, pc) = self.pseudo_critical();
        // The same range as a pure fluid's state, about the pseudo-critical point.
        let (t_min, t_max) = (self.minimum_temperature_k(), (5.0 * tc).max(1500.0));
        if !(t_min..=t_max).contains(&t) {
            return Err(Error::out_of_range("temperature_k", t, t_min, t_max, "K"));
        }
        if !(crate::classify::MIN_STATE_PRESSURE_PA..=100.0 * pc).contains(&p) {
            return Err(Error::out_of_range(
                "pressure_pa",
                p,
                crate::classify::MIN_STATE_PRESSURE_PA,
                100.0 * pc,
                "Pa",
            ));
        }
        let lines = [
            self.bubble_pressure(t),
            self.dew_pressure(t),
            self.bubble_temperature(p),
            self.dew_temperature(p),
        ];
        let path = if lines.iter().all(|v| matches!(v, Ok((_, SolvePath::Curve)))) {
            SolvePath::Curve
        } else {
            SolvePath::FullSolve
        };
        // One phase by the lines: above the bubble line or below the dew line.
        let one_phase = match &lines[..2] {
            [Ok((pb, SolvePath::Curve)), _] if p > *pb => true,
            [_, Ok((pd, SolvePath::Curve))] if p < *pd => true,
            _ => false,
        };
        let [bubble_p, dew_p, bubble_t, dew_t] = lines.map(|v| v.ok().map(|(x, _)| x));
        let flash = if one_phase {
            self.stable_one_phase(t, p)
        } else {
            self.flash(t, p)?
        };
        use crate::Phase;
        let phase = if !flash.single_phase {
            Phase::TwoPhase
        } else if bubble_p.is_some_and(|pb| p >= pb) {
            Phase::SubcooledLiquid
        } else if dew_p.is_some_and(|pd| p <= pd) {
            Phase::SuperheatedVapor
        } else if t >= tc {
            if p >= pc {
                Phase::SupercriticalFluid
            } else {
                Phase::GasAboveCriticalTemperature
            }
        } else if flash.vapor_fraction >= 1.0 {
            Phase::SuperheatedVapor
        } else {
            Phase::SubcooledLiquid
        };
        let (tr, pr) = (t / tc, p / pc);
        Ok(MixtureState {
            temperature_k: t,
            pressure_pa: p,
            phase,
            flash,
            bubble_pressure_pa: bubble_p,
            dew_pressure_pa: dew_p,
            bubble_temperature_k: bubble_t,
            dew_temperature_k: dew_t,
            subcooling_k: bubble_t.map(|tb| tb - t),
            superheat_k: dew_t.map(|td| t - td),
            pressure_above_bubble_pa: bubble_p.map(|pb| p - pb),
            pressure_below_dew_pa: dew_p.map(|pd| pd - p),
            reduced_temperature: tr,
            reduced_pressure: pr,
            near_critical: (tr - 1.0).abs() <= 0.02 && (pr - 1.0).abs() <= 0.10,
            path,
        })
    }
}

/// Rachford-Rice: the vapor fraction `beta` with `sum z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0`,
/// solved with argmin's `BrentRoot` between the asymptotes. Returns a value <= 0 or >= 1
/// when the feed lies outside the two-phase region for these K-values.
pub fn rachford_rice(z: &[f64], k: &[f64]) -> Result<f64, Error> {
    let f = |beta: f64| -> f64 {
        z.iter()
            .zip(k)
            .map(|(zi, ki)| zi * (ki - 1.0) / (1.0 + beta * (ki - 1.0)))
            .sum()
    };
    if f(0.0) <= 0.0 {
        return Ok(0.0);
    }
    if f(1.0) >= 0.0 {
        return Ok(1.0);
    }
    struct Rr<'a> {
        z: &'a [f64],
        k: &'a [f64],
    }
    impl CostFunction for Rr<'_> {
        type Param = f64;
        type Output = f64;
        fn cost(&self, beta: &f64) -> Result<f64, argmin::core::Error> {
            Ok(self
                .z
                .iter()
                .zip(self.k)
                .map(|(zi, ki)| zi * (ki - 1.0) / (1.0 + beta * (ki - 1.0)))
                .sum())
        }
    }
    Executor::new(Rr { z, k }, BrentRoot::new(0.0, 1.0, 1e-14))
        .configure(|s| s.max_iters(200))
        .run()
        .map_err(|e| Error::no_convergence("Rachford-Rice", e.to_string()))?
        .state()
        .get_best_param()
        .copied()
        .ok_or_else(|| Error::no_convergence("Rachford-Rice", "no result"))
}

struct BoundaryGap<'a> {
    mixture: &'a Mixture,
    ln_p: f64,
    bubble: bool,
}

impl CostFunction for BoundaryGap<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, t: &f64) -> Result<f64, argmin::core::Error> {
        let point = self.mixture.boundary_pressure(*t, self.bubble)?;
        Ok(point.pressure_pa.ln() - self.ln_p)
    }
}

fn normalize(v: &mut [f64]) {
    let s: f64 = v.iter().sum();
    for x in v.iter_mut() {
        *x /= s;
    }
}

/// One measured bubble point of a binary mixture.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BinaryBubblePoint {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Liquid mole fraction of the first component.
    pub x1: f64,
    /// Measured bubble pressure, Pa.
    pub pressure_pa: f64,
}

struct KijCost<'a> {
    pair: &'a [PureEos; 2],
    data: &'a [BinaryBubblePoint],
}

impl KijCost<'_> {
    fn deviations(&self, kij: f64) -> Result<Vec<(f64, f64, f64)>, Error> {
        let k = vec![vec![0.0, kij], vec![kij, 0.0]];
        self.data
            .iter()
            .map(|d| {
                let mix =
                    Mixture::new(self.pair.to_vec(), vec![d.x1, 1.0 - d.x1], Some(k.clone()))?;
                let p = mix.bubble_at_temperature(d.temperature_k)?.pressure_pa;
                Ok((d.temperature_k, p, d.pressure_pa))
            })
            .collect()
    }
}

impl CostFunction for KijCost<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, kij: &f64) -> Result<f64, argmin::core::Error> {
        let rows = self.deviations(*kij)?;
        Ok(rows
            .iter()
            .map(|(_, m, r)| (m / r).ln().powi(2))
            .sum::<f64>()
            / rows.len() as f64)
    }
}

/// Fits the binary interaction parameter `k_12` of a pair to measured bubble pressures,
/// minimising the mean squared relative error with argmin's Brent minimiser on
/// `-0.3 < k_12 < 0.3`. Returns `k_12` and the deviation of the fitted model.
pub fn fit_kij(
    pair: &[PureEos; 2],
    data: &[BinaryBubblePoint],
) -> Result<(f64, crate::Deviation), Error> {
    if data.is_empty() {
        return Err(Error::invalid(
            "data",
            0.0,
            "a k_ij fit needs at least one bubble point",
        ));
    }
    let cost = KijCost { pair, data };
    let solver = argmin::solver::brent::BrentOpt::new(-0.3, 0.3).set_tolerance(1.5e-8, 1e-9);
    let kij = Executor::new(KijCost { pair, data }, solver)
        .configure(|s| s.max_iters(100))
        .run()
        .map_err(|e| Error::no_convergence("k_ij fit", e.to_string()))?
        .state()
        .get_best_param()
        .copied()
        .ok_or_else(|| Error::no_convergence("k_ij fit", "no result"))?;
    let deviation = crate::Deviation::from_triples(cost.deviations(kij)?)
        .ok_or_else(|| Error::no_convergence("k_ij fit", "no points"))?;
    Ok((kij, deviation))
}
