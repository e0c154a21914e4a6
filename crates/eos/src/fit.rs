//! Fitting a fluid's alpha function (and volume shift) to saturation data.
//!
//! The three alpha parameters minimise the mean squared relative error in vapor pressure,
//! `mean((ln Psat_model - ln P_ref)^2)`, plus the squared relative error in enthalpy of
//! vaporization (weight 0.05) where the data has it (below 0.95 Tc), with argmin's Nelder-Mead simplex
//! restarted once from its own result. The volume translation is then fitted by linear
//! least squares to the saturated-liquid molar volumes up to a chosen reduced temperature:
//! a constant Peneloux shift plus a smooth temperature dependence (see [`VolumeShift`]),
//! because one constant cannot follow the liquid volume of a polar fluid such as water. It
//! does not affect the vapor pressures.

use crate::alpha::Alpha;
use crate::eos::PureEos;
use crate::error::Error;
use crate::fluid::{FluidConstants, ModelFit, VolumeShift};
use crate::model::Model;
use argmin::core::{CostFunction, Executor, State};
use argmin::solver::neldermead::NelderMead;

/// One reference saturation point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReferencePoint {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Vapor pressure, Pa.
    pub pressure_pa: f64,
    /// Saturated-liquid density, kg/m^3, where known.
    pub liquid_density_kg_per_m3: Option<f64>,
    /// Enthalpy of vaporization, J/mol, where known. Points below 0.95 Tc that carry it
    /// join the fit with weight 0.05 relative to their vapor pressure.
    pub enthalpy_of_vaporization_j_per_mol: Option<f64>,
}

/// Which alpha form to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AlphaForm {
    /// Twu (1991), parameters L, M, N.
    Twu,
    /// Mathias-Copeman (1983), parameters c1, c2, c3.
    MathiasCopeman,
}

/// Deviation statistics of model against reference, in percent.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Deviation {
    /// Mean absolute relative deviation, %.
    pub mean_abs_percent: f64,
    /// Maximum absolute relative deviation, %.
    pub max_abs_percent: f64,
    /// Temperature of the maximum deviation, K.
    pub max_at_temperature_k: f64,
    /// Number of points compared.
    pub points: usize,
}

impl Deviation {
    /// Statistics over `(temperature, model, reference)` triples.
    pub fn from_triples(rows: impl IntoIterator<Item = (f64, f64, f64)>) -> Option<Deviation> {
        let mut sum = 0.0;
        let mut max = -1.0;
        let mut at = f64::NAN;
        let mut n = 0;
        for (t, model, reference) in rows {
            let dev = 100.0 * ((model - reference) / reference).abs();
            sum += dev;
            n += 1;
            if dev > max {
                max = dev;
                at = t;
            }
        }
        (n > 0).then(|| Deviation {
            mean_abs_percent: sum / n as f64,
            max_abs_percent: max,
            max_at_temperature_k: at,
            points: n,
        })
    }
}

/// The outcome of a fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitReport {
    /// The fitted parameters, ready to attach to [`FluidConstants::fits`].
    pub fit: ModelFit,
    /// Vapor-pressure deviation of the fitted model over the points used.
    pub vapor_pressure: Deviation,
    /// Saturated-liquid density deviation with the fitted shift, over points up to the
    /// density cut-off, if density data was given.
    pub liquid_density: Option<Deviation>,
    /// Nelder-Mead iterations used.
    pub iterations: u64,
}

struct VaporPressureCost<'a> {
    fluid: &'a FluidConstants,
    model: Model,
    form: AlphaForm,
    points: &'a [ReferencePoint],
}

fn alpha_from(form: AlphaForm, p: &[f64]) -> Alpha {
    match form {
        AlphaForm::Twu => Alpha::Twu {
            l: p[0],
            m: p[1],
            n: p[2],
        },
        AlphaForm::MathiasCopeman => Alpha::MathiasCopeman {
            c1: p[0],
            c2: p[1],
            c3: p[2],
        },
    }
}

fn with_fit(fluid: &FluidConstants, fit: ModelFit) -> FluidConstants {
    let mut f = fluid.clone();
    f.fits.retain(|x| x.model != fit.model);
    f.fits.push(fit);
    f
}

impl CostFunction for VaporPressureCost<'_> {
    type Param = Vec<f64>;
    type Output = f64;

    fn cost(&self, p: &Vec<f64>) -> Result<f64, argmin::core::Error> {
        const PENALTY: f64 = 1e6;
        // Vapor pressure leads; enthalpy of vaporization only steers among near-equal fits.
        const HVAP_WEIGHT: f64 = 0.05;
        // Twu parameters must keep alpha positive and decreasing (L >= 0, M > 0, N > 0,
        // Le Guennec et al. 2016, Fluid Phase Equilib. 427, 513).
        if self.form == AlphaForm::Twu && (p[0] < 0.0 || p[1] <= 0.0 || p[2] <= 0.0) {
            return Ok(PENALTY);
        }
        let fit = ModelFit {
            model: self.model,
            alpha: alpha_from(self.form, p),
            volume_shift: VolumeShift::default(),
        };
        let Ok(eos) = PureEos::new(&with_fit(self.fluid, fit), self.model) else {
            return Ok(PENALTY);
        };
        let mut sum = 0.0;
        let tc = self.fluid.critical_temperature_k;
        for pt in self.points {
            match eos.saturation_at_temperature(pt.temperature_k) {
                Ok(sat) => {
                    sum += (sat.pressure_pa / pt.pressure_pa).ln().powi(2);
                    if let Some(h) = pt.enthalpy_of_vaporization_j_per_mol
                        && pt.temperature_k <= 0.95 * tc
                    {
                        sum += HVAP_WEIGHT
                            * (sat.enthalpy_of_vaporization_j_per_mol / h - 1.0).powi(2);
                    }
                }
                Err(_) => return Ok(PENALTY),
            }
        }
        Ok(sum / self.points.len() as f64)
    }
}

/// Fits `form` for `model` to `points`, and the volume shift to the liquid densities at
/// reduced temperatures up to `density_max_reduced_temperature`. Points outside the
/// model's saturation range are rejected with an error naming them.
pub fn fit_saturation(
    fluid: &FluidConstants,
    model: Model,
    form: AlphaForm,
    points: &[ReferencePoint],
    density_max_reduced_temperature: f64,
) -> Result<FitReport, Error> {
    fluid.validate()?;
    if points.len() < 3 {
        return Err(Error::invalid(
            "points",
            points.len() as f64,
            "a fit needs at least 3 points",
        ));
    }
    let generalized = PureEos::new(
        &FluidConstants {
            fits: Vec::new(),
            ..fluid.clone()
        },
        model,
    )?;
    for pt in points {
        generalized.saturation_pressure(pt.temperature_k)?;
        crate::error::positive("pressure_pa", pt.pressure_pa)?;
    }
    let start: Vec<f64> = match (form, model.generalized_alpha(fluid.acentric_factor)) {
        (AlphaForm::MathiasCopeman, Alpha::Soave { m }) => vec![m, 0.0, 0.0],
        (AlphaForm::MathiasCopeman, _) => vec![0.5, 0.0, 0.0],
        // A Twu start close to the generalized Soave-type curve over 0.5 < Tr < 1.
        (AlphaForm::Twu, _) => vec![0.4, 0.9, 2.0],
    };
    let mut best = start;
    let mut iterations = 0;
    for _ in 0..2 {
        let simplex: Vec<Vec<f64>> = (0..=3)
            .map(|i| {
                let mut v = best.clone();
                if i > 0 {
                    let step = if v[i - 1].abs() > 1e-3 {
                        0.1 * v[i - 1]
                    } else {
                        0.1
                    };
                    v[i - 1] += step;
                }
                v
            })
            .collect();
        let solver = NelderMead::new(simplex)
            .with_sd_tolerance(1e-14)
            .map_err(|e| Error::no_convergence("alpha fit", e.to_string()))?;
        let cost = VaporPressureCost {
            fluid,
            model,
            form,
            points,
        };
        let result = Executor::new(cost, solver)
            .configure(|s| s.max_iters(2000))
            .run()
            .map_err(|e| Error::no_convergence("alpha fit", e.to_string()))?;
        let state = result.state();
        best = state
            .get_best_param()
            .cloned()
            .ok_or_else(|| Error::no_convergence("alpha fit", "no parameters"))?;
        iterations += state.get_iter();
    }
    let alpha = alpha_from(form, &best);

    let unshifted = PureEos::new(
        &with_fit(
            fluid,
            ModelFit {
                model,
                alpha,
                volume_shift: VolumeShift::default(),
            },
        ),
        model,
    )?;
    let tc = fluid.critical_temperature_k;
    let mut volumes = Vec::new();
    for pt in points {
        if let Some(rho) = pt.liquid_density_kg_per_m3
            && pt.temperature_k / tc <= density_max_reduced_temperature
        {
            let sat = unshifted.saturation_at_temperature(pt.temperature_k)?;
            let v_ref = fluid.molar_mass_kg_per_mol / rho;
            volumes.push((pt.temperature_k, sat.liquid.molar_volume_m3_per_mol, v_ref));
        }
    }
    let fit = ModelFit {
        model,
        alpha,
        volume_shift: fit_volume_shift(&volumes, tc, unshifted.co_volume()),
    };
    let fitted = PureEos::new(&with_fit(fluid, fit.clone()), model)?;

    let mut p_rows = Vec::new();
    let mut d_rows = Vec::new();
    for pt in points {
        let sat = fitted.saturation_at_temperature(pt.temperature_k)?;
        p_rows.push((pt.temperature_k, sat.pressure_pa, pt.pressure_pa));
        if let Some(rho) = pt.liquid_density_kg_per_m3
            && pt.temperature_k / tc <= density_max_reduced_temperature
        {
            d_rows.push((pt.temperature_k, sat.liquid.density_kg_per_m3, rho));
        }
    }
    Ok(FitReport {
        fit,
        vapor_pressure: Deviation::from_triples(p_rows).expect("at least 3 points"),
        liquid_density: Deviation::from_triples(d_rows),
        iterations,
    })
}

/// The volume translation that best matches saturated-liquid volumes
/// `(T, V_eos, V_ref)`: minimises `sum(((V_eos - c(T)) - V_ref) / V_ref)^2` by linear least
/// squares. With four or more points spread in temperature it fits the three coefficients
/// of [`VolumeShift`] from the lowest temperature; with fewer, or when the fitted shift would
/// reach the co-volume `b` somewhere, the constant Peneloux shift.
fn fit_volume_shift(volumes: &[(f64, f64, f64)], tc: f64, b: f64) -> VolumeShift {
    let weighted = |v_ref: f64| 1.0 / (v_ref * v_ref);
    let (mut num, mut den) = (0.0, 0.0);
    for &(_, v_eos, v_ref) in volumes {
        num += weighted(v_ref) * (v_eos - v_ref);
        den += weighted(v_ref);
    }
    let constant = VolumeShift::constant(if den > 0.0 { num / den } else { 0.0 });
    let from = volumes.iter().map(|v| v.0).fold(f64::INFINITY, f64::min);
    if volumes.len() < 4 || from >= 0.999 * tc {
        return constant;
    }
    // Normal equations in the basis (1, s, s^2), s the blend of `VolumeShift`.
    let basis = |t: f64| {
        let blend = VolumeShift {
            constant_m3_per_mol: 0.0,
            temperature_terms_m3_per_mol: [1.0, 0.0],
            from_temperature_k: from,
        };
        let s = blend.at(t, tc).0;
        [1.0, s, s * s]
    };
    let mut normal = [[0.0; 3]; 3];
    let mut rhs = [0.0; 3];
    for &(t, v_eos, v_ref) in volumes {
        let phi = basis(t);
        let w = weighted(v_ref);
        for i in 0..3 {
            rhs[i] += w * phi[i] * (v_eos - v_ref);
            for j in 0..3 {
                normal[i][j] += w * phi[i] * phi[j];
            }
        }
    }
    let Some([c0, c1, c2]) = solve3(normal, rhs) else {
        return constant;
    };
    let shift = VolumeShift {
        constant_m3_per_mol: c0,
        temperature_terms_m3_per_mol: [c1, c2],
        from_temperature_k: from,
    };
    if shift.largest_magnitude() < 0.5 * b {
        shift
    } else {
        constant
    }
}

/// Solves a 3x3 linear system by Gaussian elimination with partial pivoting; `None` when
/// it is singular.
fn solve3(mut a: [[f64; 3]; 3], mut r: [f64; 3]) -> Option<[f64; 3]> {
    for col in 0..3 {
        let pivot = (col..3).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[pivot][col].abs() < 1e-300 {
            return None;
        }
        a.swap(col, pivot);
        r.swap(col, pivot);
        for row in col + 1..3 {
            let f = a[row][col] / a[col][col];
            let pivot_row = a[col];
            for (value, above) in a[row].iter_mut().zip(pivot_row).skip(col) {
                *value -= f * above;
            }
            r[row] -= f * r[col];
        }
    }
    let mut x = [0.0; 3];
    for i in (0..3).rev() {
        let tail: f64 = (i + 1..3).map(|k| a[i][k] * x[k]).sum();
        x[i] = (r[i] - tail) / a[i][i];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}
