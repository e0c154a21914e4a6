//! User fluid files: a valid file loads; bad files report every problem and load nothing.

use binodal_eos::{Model, VolumeShift};
use binodal_fluids::{Catalogue, CatalogueError, Problem};

/// Isopentane, which the built-in catalogue lacks, as the Harrowgate Cold Store's
/// engineers might add it for a solvent-recovery study. Constants: Poling, Prausnitz and
/// O'Connell 2001, Appendix A (from memory): M = 72.150 g/mol, Tc = 460.4 K, Pc = 3.38 MPa,
/// omega = 0.227. The fit parameters are invented for the test; only their round trip is
/// checked.
const VALID: &str = r#"
[sources]
poling-appA = "Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), Appendix A"

[[fluid]]
id = "isopentane"
name = "Isopentane"
ashrae_number = "R-601a"
aliases = ["2-methylbutane", "HCS solvent IP-1"]
caution = "Highly flammable liquid; vapour is heavier than air."
safety_class = "A3"
molar_mass_kg_per_mol = { value = 0.07215, source = "poling-appA" }
critical_temperature_k = { value = 460.4, source = "poling-appA" }
critical_pressure_pa = { value = 3.38e6, source = "Harrowgate lab note HCS-17 (copied from Poling App. A)" }
acentric_factor = 0.227
fit = [{ model = "peng-robinson-1978", alpha = "mathias-copeman-1983", parameters = [0.72, -0.05, 0.3], volume_shift_m3_per_mol = 1.0e-6 }]

[[fluid]]
id = "hcsminimal"
name = "HCS minimal fluid"
molar_mass_kg_per_mol = 0.07215
critical_temperature_k = 460.4
critical_pressure_pa = 3.38e6
acentric_factor = 0.227
"#;

#[test]
fn a_valid_file_loads() {
    let builtin = Catalogue::builtin();
    let catalogue = builtin.with_user_toml(VALID, "harrowgate.toml").unwrap();
    assert_eq!(catalogue.fluids().len(), builtin.fluids().len() + 2);
    assert_eq!(
        builtin.fluids().len(),
        37,
        "the built-in catalogue is unchanged"
    );

    let isopentane = catalogue.get("R 601A").unwrap();
    assert_eq!(isopentane.id, "isopentane");
    assert!(isopentane.user_supplied);
    assert_eq!(catalogue.get("hcs solvent ip-1").unwrap().id, "isopentane");
    assert_eq!(isopentane.constants.critical_temperature_k, 460.4);
    assert_eq!(
        isopentane.safety_class,
        Some(binodal_fluids::SafetyClass::A3)
    );
    assert!(
        isopentane
            .citation("molar_mass_kg_per_mol")
            .unwrap()
            .starts_with("Poling, Prausnitz")
    );
    assert_eq!(
        isopentane.citation("critical_pressure_pa"),
        Some("Harrowgate lab note HCS-17 (copied from Poling App. A)")
    );
    assert!(
        isopentane
            .citation("acentric_factor")
            .unwrap()
            .contains("harrowgate.toml; no source given")
    );
    let fit = isopentane
        .constants
        .fit_for(Model::PengRobinson1978)
        .unwrap();
    assert_eq!(fit.volume_shift, VolumeShift::constant(1.0e-6));
    let eos = isopentane.eos(Model::PengRobinson1978).unwrap();
    assert!(eos.alpha_is_fitted());
    assert!(
        !isopentane
            .eos(Model::SoaveRedlichKwong)
            .unwrap()
            .alpha_is_fitted()
    );
    assert!(
        isopentane.accuracy.is_empty(),
        "user fluids have no accuracy record"
    );

    // The minimal fluid gets the user-fluid caution, so results still carry a warning.
    let minimal = catalogue.get("hcsminimal").unwrap();
    assert!(
        minimal.caution.contains("safety data sheet"),
        "{}",
        minimal.caution
    );
    assert!(minimal.eos(Model::PengRobinson1976).is_ok());

    // The same file from disk.
    let path =
        std::env::temp_dir().join(format!("binodal-fluids-test-{}.toml", std::process::id()));
    std::fs::write(&path, VALID).unwrap();
    let from_disk = builtin.with_user_file(&path).unwrap();
    std::fs::remove_file(&path).unwrap();
    assert_eq!(from_disk.fluids().len(), catalogue.fluids().len());
    assert!(
        from_disk
            .get("isopentane")
            .unwrap()
            .citation("acentric_factor")
            .unwrap()
            .contains(&*path.to_string_lossy())
    );
}

fn problems(result: Result<Catalogue, CatalogueError>) -> Vec<Problem> {
    match result {
        Err(CatalogueError::Invalid { problems, .. }) => problems,
        Err(other) => panic!("expected a list of problems, got {other}"),
        Ok(_) => panic!("a bad file loaded"),
    }
}

fn find<'a>(problems: &'a [Problem], fluid: &str, field: &str) -> &'a Problem {
    problems
        .iter()
        .find(|p| p.fluid == fluid && p.field == field)
        .unwrap_or_else(|| panic!("no problem for {fluid}.{field} in {problems:#?}"))
}

/// One file with a good fluid and two bad ones: every bad field is reported with the
/// fluid, the field, the value and the valid range, and nothing is loaded, not even the
/// good fluid. Ranges: the engine's own (binodal_eos::FluidConstants::validate).
#[test]
fn every_bad_field_is_reported_and_nothing_loads() {
    let text = r#"
[[fluid]]
id = "kestrelgood"
name = "Kestrel Lane good fluid"
molar_mass_kg_per_mol = 0.1
critical_temperature_k = 400.0
critical_pressure_pa = 4.0e6
acentric_factor = 0.25

[[fluid]]
id = "kestrelbad"
name = "Kestrel Lane CH-2 test fluid"
molar_mass_kg_per_mol = -0.1
critical_temperature_k = "hot"
acentric_factor = 3.5
critcal_density_kg_per_m3 = 500.0
safety_class = "C9"
cas = "811-97-3"
aliases = ["R-744"]
fit = [{ model = "bwr", alpha = "mathias-copeman-1983", parameters = [1.0, 2.0] }]

[[fluid]]
name = "no id"
molar_mass_kg_per_mol = 0.05
critical_temperature_k = 300.0
critical_pressure_pa = 5.0e6
acentric_factor = 0.1
triple_point_temperature_k = 350.0
"#;
    let found = problems(Catalogue::builtin().with_user_toml(text, "kestrel.toml"));
    let bad = "kestrelbad";
    let p = find(&found, bad, "molar_mass_kg_per_mol");
    assert_eq!(
        (p.value.as_str(), p.expected.as_str()),
        ("-0.1", "a number in [0.001, 2] kg/mol")
    );
    let p = find(&found, bad, "critical_temperature_k");
    assert_eq!(
        (p.value.as_str(), p.expected.as_str()),
        ("\"hot\"", "a number in [1, 2000] K")
    );
    let p = find(&found, bad, "critical_pressure_pa");
    assert_eq!(
        (p.value.as_str(), p.expected.as_str()),
        ("(missing)", "a number in [10000, 1000000000] Pa")
    );
    let p = find(&found, bad, "acentric_factor");
    assert_eq!(
        (p.value.as_str(), p.expected.as_str()),
        ("3.5", "a number in [-0.5, 2]")
    );
    assert!(
        find(&found, bad, "critcal_density_kg_per_m3")
            .expected
            .contains("critical_density_kg_per_m3")
    );
    assert!(
        find(&found, bad, "safety_class")
            .expected
            .contains("A1, A2L, A2, A3, B1, B2L, B2, B3")
    );
    assert!(find(&found, bad, "cas").expected.contains("check digit"));
    assert!(
        find(&found, bad, "fit[0].model")
            .expected
            .contains("peng-robinson-1978")
    );
    assert!(
        find(&found, bad, "fit[0].parameters")
            .expected
            .contains("3 numbers")
    );
    // A name clash is reported with the other problems, not instead of them.
    assert!(
        find(&found, bad, "aliases[0]")
            .expected
            .contains("`carbondioxide`")
    );
    // The third fluid has no id, so it is named by its position; its triple point lies
    // above 0.99 Tc.
    assert!(
        find(&found, "fluid #3", "id")
            .expected
            .contains("lowercase")
    );
    assert!(
        find(&found, "fluid #3", "triple_point_temperature_k")
            .expected
            .contains("below 0.99 Tc")
    );
    assert_eq!(found.len(), 12, "exactly the bad fields: {found:#?}");
    assert!(found.iter().all(|p| p.fluid != "kestrelgood"));

    // The message lists them all, and says nothing was loaded.
    let message = Catalogue::builtin()
        .with_user_toml(text, "kestrel.toml")
        .unwrap_err()
        .to_string();
    assert!(
        message.contains("kestrel.toml: 12 problem(s), nothing was loaded"),
        "{message}"
    );
    assert!(
        message
            .contains("kestrelbad: field `acentric_factor` = 3.5: expected a number in [-0.5, 2]")
    );
    assert!(Catalogue::builtin().get("kestrelgood").is_err());
}

/// A user fluid may not take a name of another fluid: not an id, an alias, an ASHRAE
/// number or a CAS number, compared as lookups compare them.
#[test]
fn duplicate_names_are_rejected() {
    let fluid = |id: &str, extra: &str| {
        format!(
            "[[fluid]]\nid = \"{id}\"\nname = \"{id} test\"\nmolar_mass_kg_per_mol = 0.1\n\
             critical_temperature_k = 400.0\ncritical_pressure_pa = 4.0e6\nacentric_factor = 0.25\n{extra}\n"
        )
    };
    let builtin = Catalogue::builtin();

    let found = problems(builtin.with_user_toml(&fluid("r134a", ""), "dup.toml"));
    assert!(
        find(&found, "r134a", "id").expected.contains("`r134a`"),
        "{found:?}"
    );

    let found =
        problems(builtin.with_user_toml(&fluid("rackco2", "aliases = [\"R 744\"]"), "dup.toml"));
    let p = find(&found, "rackco2", "aliases[0]");
    assert_eq!(p.value, "\"R 744\"");
    assert!(p.expected.contains("`carbondioxide`"), "{p}");

    let found =
        problems(builtin.with_user_toml(&fluid("myfluid", "cas = \"811-97-2\""), "dup.toml"));
    assert!(find(&found, "myfluid", "cas").expected.contains("`r134a`"));

    // Two fluids of one file with the same id.
    let twice = format!("{}{}", fluid("nh3p101", ""), fluid("nh3p101", ""));
    let found = problems(builtin.with_user_toml(&twice, "dup.toml"));
    assert!(find(&found, "nh3p101", "id").expected.contains("`nh3p101`"));

    // A second user file may not reuse a name of the first.
    let first = builtin
        .with_user_toml(&fluid("co2rk2", ""), "first.toml")
        .unwrap();
    let found = problems(first.with_user_toml(&fluid("co2rk2", ""), "second.toml"));
    assert!(find(&found, "co2rk2", "id").expected.contains("`co2rk2`"));
}

#[test]
fn unreadable_and_malformed_files_are_errors() {
    let builtin = Catalogue::builtin();
    let missing = std::path::Path::new("/nonexistent/binodal/fluids.toml");
    match builtin.with_user_file(missing) {
        Err(CatalogueError::Io { path, .. }) => assert_eq!(path, missing),
        other => panic!("{other:?}"),
    }
    match builtin.with_user_toml("[[fluid]\nid = 1", "broken.toml") {
        Err(CatalogueError::Syntax { origin, message }) => {
            assert_eq!(origin, "broken.toml");
            assert!(message.contains("line 1"), "{message}");
        }
        other => panic!("{other:?}"),
    }
    let found = problems(builtin.with_user_toml("title = \"no fluids\"", "empty.toml"));
    assert!(
        found
            .iter()
            .any(|p| p.field == "fluid" && p.value == "(missing)")
    );
    assert!(found.iter().any(|p| p.field == "title"));
}

/// Malformed ideal-gas heat capacity and fit entries are reported field by field.
#[test]
fn nested_tables_are_checked_field_by_field() {
    let text = r#"
[[fluid]]
id = "chiller"
name = "Kestrel Lane CH-2 charge"
molar_mass_kg_per_mol = 0.102
critical_temperature_k = 374.2
critical_pressure_pa = 4.06e6
acentric_factor = 0.327
ideal_gas_cp = { form = "shomate", coefficients = [3.0, 0.01], t_min_k = 500.0, t_max_k = 200.0 }
fit = [{ model = "pr78", alpha = "soave", parameters = [0.7, 0.0, 0.0], volume_shift_m3_per_mol = 1.0 }]
"#;
    let found = problems(Catalogue::builtin().with_user_toml(text, "ch2.toml"));
    for field in [
        "ideal_gas_cp.form",
        "ideal_gas_cp.coefficients",
        "ideal_gas_cp.t_max_k",
        "fit[0].alpha",
        "fit[0].volume_shift_m3_per_mol",
    ] {
        find(&found, "chiller", field);
    }
    // The co-volume of Peng-Robinson, b = 0.0778 R Tc / Pc (Peng and Robinson 1976), bounds
    // the shift: 0.0778 x 8.314 x 374.2 / 4.06e6 = 5.96e-5 m^3/mol.
    let shift = find(&found, "chiller", "fit[0].volume_shift_m3_per_mol");
    assert!(shift.expected.contains("5.96"), "{shift}");
    assert_eq!(found.len(), 5, "{found:#?}");
}

/// A temperature-dependent volume translation loads from its three keys; a partial one, a
/// start above the critical temperature, or one that reaches the co-volume are reported.
/// (Constants as in `nested_tables_are_checked_field_by_field`; shift values invented.)
#[test]
fn temperature_dependent_volume_shifts_are_checked() {
    let fluid = |fit: &str| {
        format!(
            r#"
[[fluid]]
id = "chillerloop"
name = "Chiller loop fluid"
molar_mass_kg_per_mol = 0.102
critical_temperature_k = 374.2
critical_pressure_pa = 4.06e6
acentric_factor = 0.327
fit = [{{ model = "pr78", alpha = "mathias-copeman-1983", parameters = [0.7, 0.0, 0.0], volume_shift_m3_per_mol = 1.0e-6, {fit} }}]
"#
        )
    };
    let good = fluid(
        "volume_shift_linear_m3_per_mol = -2.0e-6, volume_shift_quadratic_m3_per_mol = 3.0e-6, \
         volume_shift_from_k = 200.0",
    );
    let catalogue = Catalogue::builtin()
        .with_user_toml(&good, "loop.toml")
        .unwrap();
    let shift = catalogue
        .get("chillerloop")
        .unwrap()
        .constants
        .fit_for(Model::PengRobinson1978)
        .unwrap()
        .volume_shift;
    assert_eq!(
        shift,
        VolumeShift {
            constant_m3_per_mol: 1.0e-6,
            temperature_terms_m3_per_mol: [-2.0e-6, 3.0e-6],
            from_temperature_k: 200.0,
        }
    );

    let partial = fluid("volume_shift_linear_m3_per_mol = -2.0e-6");
    let found = problems(Catalogue::builtin().with_user_toml(&partial, "loop.toml"));
    let p = find(
        &found,
        "chillerloop",
        "fit[0].volume_shift_linear_m3_per_mol",
    );
    assert!(p.expected.contains("together"), "{p}");

    let above = fluid(
        "volume_shift_linear_m3_per_mol = 0.0, volume_shift_quadratic_m3_per_mol = 1.0e-6, \
         volume_shift_from_k = 400.0",
    );
    let found = problems(Catalogue::builtin().with_user_toml(&above, "loop.toml"));
    find(&found, "chillerloop", "fit[0].volume_shift_from_k");

    // b = 5.96e-5 m^3/mol (see above); c(Tc) = 1e-6 + 7e-5 reaches it.
    let large = fluid(
        "volume_shift_linear_m3_per_mol = 7.0e-5, volume_shift_quadratic_m3_per_mol = 0.0, \
         volume_shift_from_k = 200.0",
    );
    let found = problems(Catalogue::builtin().with_user_toml(&large, "loop.toml"));
    let p = find(&found, "chillerloop", "fit[0].volume_shift_m3_per_mol");
    assert!(p.expected.contains("5.96"), "{p}");
}
