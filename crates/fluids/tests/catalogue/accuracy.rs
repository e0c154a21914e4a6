//! The committed accuracy record is what the code computes, and the fits are attached.

use binodal_eos::Model;
use binodal_fluids::generate::{self, FITTED_MODELS};
use binodal_fluids::{ACCURACY_TOML, Catalogue, FITS_TOML, reference};

use crate::gaps;

/// Recomputes every model of every fluid against its reference data and compares the
/// result with `data/accuracy.toml`, line by line, at the printed precision (3 decimals).
/// A difference means the data, the fits or the engine changed without rerunning
/// `cargo run --release -p binodal-fluids --bin catalogue-tool -- accuracy`.
#[test]
fn accuracy_file_matches_a_recomputation() {
    let entries = generate::accuracy_all(Catalogue::builtin()).unwrap();
    let recomputed = generate::render_accuracy(&entries);
    let mut fluid = "";
    let mut differences = Vec::new();
    for (line, (new, old)) in recomputed.lines().zip(ACCURACY_TOML.lines()).enumerate() {
        if let Some(id) = new.strip_prefix("fluid = ") {
            fluid = id;
        }
        if new != old {
            differences.push(format!(
                "line {}: {fluid}: committed `{old}`, recomputed `{new}`",
                line + 1
            ));
        }
    }
    assert!(
        differences.is_empty(),
        "data/accuracy.toml differs from a recomputation in {} lines; the first:\n{}",
        differences.len(),
        differences[..differences.len().min(10)].join("\n")
    );
    assert_eq!(
        recomputed.lines().count(),
        ACCURACY_TOML.lines().count(),
        "line count"
    );
    assert_eq!(recomputed, ACCURACY_TOML);
}

/// Every fluid has one record per model. Every fluid has reference data except those listed
/// in `gaps::NO_REFERENCE_DATA` (with the reason there); those with data have vapor-pressure
/// and enthalpy-of-vaporization figures and a fitted alpha for the fitted models; the listed
/// ones are generalized and say that only the normal boiling point was checked.
#[test]
fn every_fluid_has_a_record_per_model() {
    let mut without_data = Vec::new();
    for fluid in Catalogue::builtin().fluids() {
        let data = reference::reference_data(fluid).unwrap();
        let enthalpy = reference::enthalpy_data(fluid).unwrap();
        if data.is_none() {
            without_data.push(fluid.id.as_str());
        }
        assert_eq!(fluid.accuracy.len(), Model::ALL.len(), "{}", fluid.id);
        for model in Model::ALL {
            let record = fluid.accuracy_for(model).unwrap();
            let fitted = data.is_some() && FITTED_MODELS.contains(&model);
            let expected_alpha = if fitted {
                "mathias-copeman-1983 (fitted)"
            } else {
                "generalized"
            };
            assert_eq!(record.alpha, expected_alpha, "{} {model}", fluid.id);
            assert_eq!(
                fluid.constants.fit_for(model).is_some(),
                fitted,
                "{} {model}",
                fluid.id
            );
            match (&data, &enthalpy) {
                (Some(d), Some(h)) => {
                    assert_eq!(record.vapor_pressure.unwrap().points, d.points.len());
                    let hvap = record
                        .enthalpy_of_vaporization
                        .unwrap_or_else(|| panic!("{} {model}: no hvap figures", fluid.id));
                    let below = |p: &&binodal_eos::ReferencePoint| {
                        p.enthalpy_of_vaporization_j_per_mol.is_some()
                            && p.temperature_k / fluid.constants.critical_temperature_k
                                <= generate::HVAP_MAX_REDUCED_TEMPERATURE
                    };
                    assert_eq!(hvap.points, h.points.iter().filter(below).count());
                    if h.file == d.file {
                        assert_eq!(record.checked_against, d.citation);
                    } else {
                        // R-134a: WebBook table for the vapor pressure, VDI Heat Atlas table
                        // for the enthalpy of vaporization; the record names both.
                        assert_eq!(
                            record.checked_against,
                            format!(
                                "{}; enthalpy of vaporization checked against {}",
                                d.citation, h.citation
                            )
                        );
                    }
                }
                (Some(_), None) => panic!(
                    "{}: reference data without enthalpies of vaporization; every fluid with \
                     data now has them",
                    fluid.id
                ),
                (None, _) => {
                    assert!(record.vapor_pressure.is_none());
                    assert!(record.enthalpy_of_vaporization.is_none());
                    assert!(
                        record
                            .checked_against
                            .contains("only the normal boiling point")
                    );
                }
            }
            assert_eq!(
                record.normal_boiling_point.is_some(),
                fluid.normal_boiling_point_k.is_some()
            );
        }
    }
    let mut expected = gaps::NO_REFERENCE_DATA.to_vec();
    expected.sort_unstable();
    without_data.sort_unstable();
    assert_eq!(without_data, expected, "fluids without reference data");
}

/// R-134a's and R-125's enthalpies of vaporization come from the VDI Heat Atlas tables
/// (data/reference/*_vdi_saturation.csv); R-125's vapor pressure too, since that table covers
/// 200-330 K (and the triple point) where the extended Antoine equation of its correlation
/// file is listed for 248.15-333.15 K only.
#[test]
fn vdi_tables_supply_the_refrigerant_enthalpies() {
    for (id, vapor_pressure_file) in [
        ("r134a", "reference/r134a_saturated_liquid.csv"),
        ("r125", "reference/r125_vdi_saturation.csv"),
    ] {
        let fluid = Catalogue::builtin().get(id).unwrap();
        let data = reference::reference_data(fluid).unwrap().unwrap();
        let enthalpy = reference::enthalpy_data(fluid).unwrap().unwrap();
        assert_eq!(data.file, vapor_pressure_file);
        assert_eq!(enthalpy.file, format!("reference/{id}_vdi_saturation.csv"));
        assert!(enthalpy.citation.contains("VDI Heat Atlas, 2nd ed."));
        for model in Model::ALL {
            let record = fluid.accuracy_for(model).unwrap();
            assert!(record.checked_against.contains(enthalpy.file));
            // The table's rows from the triple point to 0.95 Tc, less the triple-point row
            // itself (it lies 0.01-0.03 K below the catalogue triple point): R-134a 195-345 K,
            // R-125 200-320 K (VDI Heat Atlas tables, see the files).
            let hvap = record.enthalpy_of_vaporization.unwrap();
            let (from, to, points) = if id == "r134a" {
                (195.0, 345.0, 8)
            } else {
                (200.0, 320.0, 7)
            };
            assert_eq!(
                (hvap.t_min_k, hvap.t_max_k, hvap.points),
                (from, to, points)
            );
        }
    }
}

/// Each fit names the data it was fitted to (the same set the accuracy record uses), its
/// citation, and its own deviations; the fit's psat figures are no worse than the
/// generalized model's over the full data set (a fit that lost to its starting point would
/// be a failed fit). Volume shifts exist only where the data has liquid densities.
#[test]
fn fits_name_their_data_and_improve_on_the_generalized_model() {
    let catalogue = Catalogue::builtin();
    assert!(FITS_TOML.contains("GENERATED"));
    for fluid in catalogue.fluids() {
        let Some(data) = reference::reference_data(fluid).unwrap() else {
            assert!(fluid.fit_records.is_empty(), "{}", fluid.id);
            continue;
        };
        let mut generalized = fluid.clone();
        generalized.constants.fits.clear();
        for model in FITTED_MODELS {
            let record = fluid.fit_record_for(model).unwrap();
            assert_eq!(record.data_file, data.file);
            assert_eq!(record.data_citation, data.citation);
            assert!(
                fluid
                    .citation(&format!("fit.{model}"))
                    .unwrap()
                    .contains(data.file)
            );
            let fitted = fluid.accuracy_for(model).unwrap().vapor_pressure.unwrap();
            let base = generate::accuracy_of(&generalized, Some(&data), None, model).unwrap();
            let base = base.vapor_pressure.unwrap();
            assert!(
                fitted.mean_abs_percent <= base.mean_abs_percent,
                "{} {model}: fitted {} % vs generalized {} %",
                fluid.id,
                fitted.mean_abs_percent,
                base.mean_abs_percent
            );
            let shift = fluid.constants.fit_for(model).unwrap().volume_shift;
            let has_density = data
                .points
                .iter()
                .any(|p| p.liquid_density_kg_per_m3.is_some());
            assert_eq!(
                shift.constant_m3_per_mol != 0.0,
                has_density,
                "{} {model}: shift {shift:?}",
                fluid.id
            );
            assert_eq!(
                record.liquid_density.is_some(),
                has_density,
                "{} {model}",
                fluid.id
            );
        }
    }
}

/// Refitting every fluid reproduces `data/fits.toml` exactly (the fit is deterministic:
/// Nelder-Mead from the generalized alpha), so the committed fits are the output of
/// `catalogue-tool fit` on the committed data.
#[test]
fn fits_file_matches_a_refit() {
    let entries = generate::fit_all(Catalogue::builtin(), |_| {}).unwrap();
    let refit = generate::render_fits(&entries);
    for (line, (new, old)) in refit.lines().zip(FITS_TOML.lines()).enumerate() {
        assert_eq!(
            new,
            old,
            "data/fits.toml line {} differs from a refit",
            line + 1
        );
    }
    assert_eq!(refit, FITS_TOML);
}
