//! The committed accuracy record is what the code computes, and the fits are attached.

use binodal_eos::Model;
use binodal_fluids::generate::{self, FITTED_MODELS};
use binodal_fluids::{ACCURACY_TOML, Catalogue, FITS_TOML, reference};

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

/// Every fluid has one record per model; fluids with reference data have vapor-pressure
/// figures and a fitted alpha for the fitted models; the others are generalized and say
/// that only the normal boiling point was checked.
#[test]
fn every_fluid_has_a_record_per_model() {
    for fluid in Catalogue::builtin().fluids() {
        let data = reference::reference_data(fluid).unwrap();
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
            match &data {
                Some(d) => {
                    assert_eq!(record.checked_against, d.citation);
                    assert_eq!(record.vapor_pressure.unwrap().points, d.points.len());
                }
                None => {
                    assert!(record.vapor_pressure.is_none());
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
            let base = generate::accuracy_of(&generalized, Some(&data), model).unwrap();
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
