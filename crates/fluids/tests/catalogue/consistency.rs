//! Consistency of the catalogue's constants with each other and with the reference data.

use binodal_eos::{GAS_CONSTANT, Model, ReferencePoint};
use binodal_fluids::generate::ONE_ATMOSPHERE_PA;
use binodal_fluids::{Catalogue, reference};

use crate::gaps;

/// ln P at `t` interpolated in 1/T between the two reference points around `t` (the
/// integrated Clausius-Clapeyron equation with constant enthalpy of vaporization).
fn ln_p_linear(points: &[ReferencePoint], t: f64) -> Option<f64> {
    points.windows(2).find_map(|w| {
        let (a, b) = (w[0], w[1]);
        (a.temperature_k <= t && t <= b.temperature_k).then(|| {
            let f =
                (1.0 / t - 1.0 / a.temperature_k) / (1.0 / b.temperature_k - 1.0 / a.temperature_k);
            a.pressure_pa.ln() + f * (b.pressure_pa.ln() - a.pressure_pa.ln())
        })
    })
}

/// ln P at `t` from the quadratic in 1/T through the three reference points nearest to `t`
/// (Lagrange form), or None outside the data's range.
fn ln_p_quadratic(points: &[ReferencePoint], t: f64) -> Option<f64> {
    let (first, last) = (points.first()?.temperature_k, points.last()?.temperature_k);
    if points.len() < 3 || t < first || t > last {
        return None;
    }
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|&a, &b| {
        let da = (points[a].temperature_k - t).abs();
        let db = (points[b].temperature_k - t).abs();
        da.total_cmp(&db)
    });
    let near: Vec<(f64, f64)> = order[..3]
        .iter()
        .map(|&i| (1.0 / points[i].temperature_k, points[i].pressure_pa.ln()))
        .collect();
    let x = 1.0 / t;
    let mut sum = 0.0;
    for (j, &(xj, yj)) in near.iter().enumerate() {
        let mut basis = 1.0;
        for (k, &(xk, _)) in near.iter().enumerate() {
            if k != j {
                basis *= (x - xk) / (xj - xk);
            }
        }
        sum += yj * basis;
    }
    Some(sum)
}

/// The model's vapor pressure at the catalogue's normal boiling point is 101 325 Pa within
/// what the accuracy record allows: by the triangle inequality,
/// `|ln(Pm(Tb)/Patm)| <= |ln(Pm(Tb)/Pref(Tb))| + |ln(Pref(Tb)/Patm)|`. The first term is the
/// model's deviation from the reference, bounded by the recorded maximum x
/// (`-ln(1 - x)`); the second is the disagreement between the reference data and the
/// catalogue's normal boiling point (which come from different sources: CRC Handbook or
/// reference-equation papers, see the TOML), with the reference interpolated to Tb by a
/// quadratic in 1/T; to it is added the interpolation uncertainty, estimated as the
/// difference between the quadratic and the linear interpolant (common practice). The
/// recorded maximum covers only the data's temperature range; every fluid's normal boiling
/// point lies inside its data (R-125's since its VDI Heat Atlas table, 200-330 K, replaced
/// the 248-322 K correlation points), so every fluid with data and a normal boiling point
/// is checked.
#[test]
fn model_boiling_points_agree_within_recorded_deviation() {
    let mut checked = 0;
    let mut outside = Vec::new();
    let mut skipped = Vec::new();
    for fluid in Catalogue::builtin().fluids() {
        let Some(tb) = fluid.normal_boiling_point_k else {
            skipped.push(fluid.id.as_str());
            continue;
        };
        let Some(data) = reference::reference_data(fluid).unwrap() else {
            skipped.push(fluid.id.as_str());
            continue;
        };
        let (Some(quadratic), Some(linear)) = (
            ln_p_quadratic(&data.points, tb),
            ln_p_linear(&data.points, tb),
        ) else {
            outside.push(fluid.id.as_str());
            continue;
        };
        let margin = (quadratic - ONE_ATMOSPHERE_PA.ln()).abs() + (quadratic - linear).abs();
        for model in Model::ALL {
            let record = fluid.accuracy_for(model).expect("every model has a record");
            let recorded = record
                .vapor_pressure
                .expect("fluids with data have psat figures");
            let p = fluid.eos(model).unwrap().saturation_pressure(tb).unwrap();
            let deviation = (p / ONE_ATMOSPHERE_PA).ln().abs();
            // |Pm/Pref - 1| <= x gives |ln(Pm/Pref)| <= -ln(1 - x); a deviation of 100 % or
            // more (van der Waals at low temperature) bounds nothing below.
            let x = recorded.max_abs_percent / 100.0;
            let allowed = if x < 1.0 {
                -(1.0 - x).ln() + margin
            } else {
                f64::INFINITY
            };
            assert!(
                deviation <= allowed,
                "{} {model}: |ln(Psat({tb} K)/101325 Pa)| = {deviation:.5} exceeds recorded max \
                 {:.3} % plus reference margin {margin:.5}",
                fluid.id,
                recorded.max_abs_percent
            );
            checked += 1;
        }
    }
    assert!(
        outside.is_empty(),
        "fluids whose normal boiling point lies outside their data: {outside:?}"
    );
    // Not checked: carbon dioxide (no normal boiling point: it sublimes at one atmosphere)
    // and the fluids without reference data (gaps::NO_REFERENCE_DATA, reason there).
    let mut expected: Vec<&str> = ["carbondioxide"]
        .into_iter()
        .chain(gaps::NO_REFERENCE_DATA)
        .collect();
    expected.sort_unstable();
    skipped.sort_unstable();
    assert_eq!(skipped, expected);
    // 37 fluids - 6 skipped = 31, x 5 models.
    assert_eq!(checked, 155);
}

/// The recorded normal-boiling-point deviation in kelvin agrees with the recorded model
/// temperature and the catalogue value it was computed from.
#[test]
fn recorded_boiling_point_checks_are_self_consistent() {
    for fluid in Catalogue::builtin().fluids() {
        for record in &fluid.accuracy {
            match (&record.normal_boiling_point, fluid.normal_boiling_point_k) {
                (Some(check), Some(tb)) => assert_eq!(check.catalogue_k, (tb * 1e3).round() / 1e3),
                (None, None) => {}
                other => panic!("{} {}: NBP record {other:?}", fluid.id, record.model),
            }
        }
    }
}

/// Pitzer's definition of the acentric factor, `omega = -1 - log10(Psat(0.7 Tc)/Pc)`
/// (Pitzer et al., J. Am. Chem. Soc. 77 (1955) 3433), is Edmister's relation
/// `log10(Pc/P) = (7/3)(1 + omega)(Tc/T - 1)` (Edmister, Petroleum Refiner 37 (1958) 173)
/// evaluated at T = 0.7 Tc, where the factor 7/3 makes the two identical. With the
/// catalogue's Tc and Pc and the reference vapor pressure at 0.7 Tc (quadratic
/// interpolation in 1/T), it must give the catalogue's omega within 0.01: tabulated
/// acentric factors of one fluid differ between handbooks by about that much
/// (crates/fluids/data/reference/critical_constants_compilation.csv: ammonia 0.250-0.256,
/// propylene 0.137-0.144, dimethyl ether 0.188-0.200, sulfur dioxide 0.244-0.256).
#[test]
fn acentric_factors_agree_with_the_vapor_pressure_data() {
    let mut checked = Vec::new();
    let mut unchecked = Vec::new();
    for fluid in Catalogue::builtin().fluids() {
        let c = &fluid.constants;
        let t = 0.7 * c.critical_temperature_k;
        // Any data set of the fluid that covers 0.7 Tc.
        let sets = reference::reference_sets(fluid).unwrap();
        let Some(ln_p) = sets.iter().find_map(|d| ln_p_quadratic(&d.points, t)) else {
            unchecked.push(fluid.id.as_str());
            continue;
        };
        let p = ln_p.exp();
        let omega = (3.0 / 7.0) * (c.critical_pressure_pa / p).log10()
            / (c.critical_temperature_k / t - 1.0)
            - 1.0;
        assert!(
            (omega - c.acentric_factor).abs() <= 0.01,
            "{}: omega from data {omega:.4}, catalogue {}",
            fluid.id,
            c.acentric_factor
        );
        checked.push(fluid.id.as_str());
    }
    // Every fluid except carbon dioxide (0.7 Tc = 213 K is below its triple point, 216.6 K)
    // and the fluids without reference data (gaps::NO_REFERENCE_DATA, reason there).
    let mut expected: Vec<&str> = ["carbondioxide"]
        .into_iter()
        .chain(gaps::NO_REFERENCE_DATA)
        .collect();
    expected.sort_unstable();
    unchecked.sort_unstable();
    assert_eq!(unchecked, expected);
    assert_eq!(checked.len(), 31, "{checked:?}");
}

/// Relative molar mass of a condensed formula such as `CH3(CH2)3CH3` or `CF3CF=CH2`, with
/// the IUPAC standard atomic weights (abridged values, common practice; the same table as
/// tools/catalogue/check_data.py).
fn formula_mass(formula: &str) -> f64 {
    let weight = |symbol: &str| match symbol {
        "H" => 1.00794,
        "C" => 12.0107,
        "N" => 14.0067,
        "O" => 15.9994,
        "F" => 18.998_403_2,
        "S" => 32.065,
        "Cl" => 35.453,
        "Ar" => 39.948,
        other => panic!("no atomic weight for {other} in {formula}"),
    };
    let chars: Vec<char> = formula.chars().collect();
    let mut stack = vec![0.0];
    let mut i = 0;
    let count = |i: &mut usize| {
        let start = *i;
        while *i < chars.len() && chars[*i].is_ascii_digit() {
            *i += 1;
        }
        let digits: String = chars[start..*i].iter().collect();
        if digits.is_empty() {
            1.0
        } else {
            digits.parse::<f64>().unwrap()
        }
    };
    while i < chars.len() {
        match chars[i] {
            '=' => i += 1,
            '(' => {
                stack.push(0.0);
                i += 1;
            }
            ')' => {
                i += 1;
                let group = stack.pop().unwrap() * count(&mut i);
                *stack.last_mut().unwrap() += group;
            }
            c if c.is_ascii_uppercase() => {
                let mut symbol = c.to_string();
                i += 1;
                if i < chars.len() && chars[i].is_ascii_lowercase() {
                    symbol.push(chars[i]);
                    i += 1;
                }
                let w = weight(&symbol);
                *stack.last_mut().unwrap() += w * count(&mut i);
            }
            other => panic!("unexpected {other} in {formula}"),
        }
    }
    assert_eq!(stack.len(), 1, "unbalanced parentheses in {formula}");
    stack[0] / 1000.0
}

/// Molar mass agrees with the formula to 1e-4 (the catalogue's values come from the same
/// atomic weights); the critical density is positive and gives a critical compressibility
/// `Zc = Pc M / (rho_c R Tc)` between 0.2 and 0.35, the range of real molecular fluids
/// (about 0.23 for water and methanol to 0.29 for argon and methane: Poling, Prausnitz and
/// O'Connell 2001, Appendix A, from memory; the bounds are those of
/// tools/catalogue/check_data.py). Ordering: triple point < normal boiling point < Tc, and
/// the triple-point pressure below one atmosphere where the fluid boils at one atmosphere
/// (phase-diagram topology, common practice).
#[test]
fn constants_are_positive_and_plausible() {
    for fluid in Catalogue::builtin().fluids() {
        let c = &fluid.constants;
        let m = c.molar_mass_kg_per_mol;
        let formula = fluid
            .formula
            .as_deref()
            .expect("built-in fluids have a formula");
        assert!(
            m > 0.0 && (formula_mass(formula) / m - 1.0).abs() < 1e-4,
            "{}: M = {m}",
            fluid.id
        );
        let rho_c = fluid
            .critical_density_kg_per_m3
            .expect("built-in fluids have rho_c");
        assert!(rho_c > 0.0, "{}", fluid.id);
        let zc = c.critical_pressure_pa * m / (rho_c * GAS_CONSTANT * c.critical_temperature_k);
        assert!((0.2..0.35).contains(&zc), "{}: Zc = {zc:.3}", fluid.id);
        let tt = c
            .triple_point_temperature_k
            .expect("built-in fluids have a triple point");
        assert!(tt < c.critical_temperature_k, "{}", fluid.id);
        if let Some(tb) = fluid.normal_boiling_point_k {
            assert!(
                tt < tb && tb < c.critical_temperature_k,
                "{}: {tt} {tb}",
                fluid.id
            );
            if let Some(pt) = fluid.triple_point_pressure_pa {
                assert!(
                    pt < ONE_ATMOSPHERE_PA,
                    "{}: triple-point pressure {pt}",
                    fluid.id
                );
            }
        } else {
            // Carbon dioxide: triple point 216.59 K at 0.518 MPa (Staveley et al. 1981,
            // Cryogenics 21, 131), so it sublimes at one atmosphere.
            assert_eq!(fluid.id, "carbondioxide");
            assert!(fluid.triple_point_pressure_pa.unwrap() > ONE_ATMOSPHERE_PA);
        }
    }
}

/// Every built-in fluid builds under every model (the accuracy test also does, through the
/// generator), and the engine accepts its constants.
#[test]
fn every_fluid_works_with_every_model() {
    for fluid in Catalogue::builtin().fluids() {
        fluid.constants.validate().unwrap();
        for model in Model::ALL {
            let eos = fluid
                .eos(model)
                .unwrap_or_else(|e| panic!("{} {model}: {e}", fluid.id));
            assert_eq!(
                eos.alpha_is_fitted(),
                fluid.constants.fit_for(model).is_some()
            );
        }
    }
}
