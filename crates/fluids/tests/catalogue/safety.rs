//! Safety information and provenance of the built-in fluids.

use binodal_fluids::{Catalogue, SafetyClass};

use crate::gaps;

/// Every fluid with an ASHRAE 34 number has a safety class, except oxygen, which
/// ASHRAE 34 lists without one (from memory, as recorded in data/inorganic.toml); every
/// fluid has a caution, and the caution states the hazard its class names.
#[test]
fn numbered_fluids_have_a_class_and_every_fluid_a_caution() {
    for fluid in Catalogue::builtin().fluids() {
        assert!(
            !fluid.caution.trim().is_empty(),
            "{}: empty caution",
            fluid.id
        );
        match (&fluid.ashrae_number, fluid.safety_class) {
            (Some(_), None) => assert_eq!(fluid.id, "oxygen", "{} has no safety class", fluid.id),
            (None, Some(class)) => panic!("{}: class {class} without an ASHRAE number", fluid.id),
            _ => {}
        }
        if let Some(class) = fluid.safety_class {
            let caution = fluid.caution.to_lowercase();
            if class.is_flammable() {
                assert!(
                    caution.contains("flammable"),
                    "{} ({class}): {caution}",
                    fluid.id
                );
            }
            if class.is_higher_toxicity() {
                assert!(
                    caution.contains("toxic"),
                    "{} ({class}): {caution}",
                    fluid.id
                );
            }
            assert!(
                fluid
                    .citation("safety_class")
                    .unwrap()
                    .contains("ASHRAE Standard 34")
            );
        }
    }
    // Oxygen's caution names its hazard: it is a strong oxidiser (common practice).
    let oxygen = Catalogue::builtin().get("R-732").unwrap();
    assert!(
        oxygen.caution.to_lowercase().contains("oxidi"),
        "{}",
        oxygen.caution
    );
}

/// Classes as recorded from ASHRAE Standard 34 (from memory, source `ashrae34-memory` in
/// the data files): the hydrocarbon refrigerants and dimethyl ether are A3, ammonia is
/// B2L, R-245fa and sulfur dioxide are B1, the HFOs R-1234yf and R-1234ze(E) are A2L.
#[test]
fn safety_filters_select_by_class() {
    let catalogue = Catalogue::builtin();
    let ids = |fluids: Vec<&binodal_fluids::FluidRecord>| {
        let mut v: Vec<String> = fluids.into_iter().map(|f| f.id.clone()).collect();
        v.sort();
        v
    };
    assert_eq!(
        ids(catalogue.with_safety_class(SafetyClass::A3)),
        [
            "butane",
            "dimethylether",
            "ethane",
            "isobutane",
            "methane",
            "pentane",
            "propane",
            "propylene"
        ]
    );
    assert_eq!(
        ids(catalogue.higher_toxicity()),
        ["ammonia", "r245fa", "sulfurdioxide"]
    );
    let flammable = ids(catalogue.flammable());
    for id in ["ammonia", "r1234yf", "r1234ze", "r32", "propane"] {
        assert!(flammable.contains(&id.to_string()), "{id} is flammable");
    }
    for id in ["r134a", "carbondioxide", "water"] {
        assert!(!flammable.contains(&id.to_string()), "{id} is class 1");
    }
    let unclassified = ids(catalogue.unclassified());
    assert!(unclassified.contains(&"hydrogensulfide".to_string()));
    assert_eq!(
        catalogue.fluids().len(),
        unclassified.len()
            + SafetyClass::ALL
                .iter()
                .map(|c| catalogue.with_safety_class(*c).len())
                .sum::<usize>()
    );
    assert_eq!("a2l".parse::<SafetyClass>(), Ok(SafetyClass::A2L));
    assert!("C9".parse::<SafetyClass>().unwrap_err().contains("A1, A2L"));
}

/// Every value a built-in fluid carries has a citation (the data files resolve every
/// `source` key in their `[sources]` table; the loader keeps the text). The triple-point
/// pressure, heat of fusion and enthalpy of vaporization at the normal boiling point are
/// required of every fluid except the known gaps of `gaps::LISTED` (each with its reason),
/// and each gap is named in a comment above the fluid in its data file.
#[test]
fn every_value_has_a_citation() {
    for fluid in Catalogue::builtin().fluids() {
        let c = &fluid.constants;
        let mut present = vec![
            "molar_mass_kg_per_mol",
            "critical_temperature_k",
            "critical_pressure_pa",
            "acentric_factor",
            "critical_density_kg_per_m3",
            "triple_point_temperature_k",
            "ideal_gas_cp",
        ];
        let has_nbp = fluid.normal_boiling_point_k.is_some();
        // Carbon dioxide has no normal boiling point (it sublimes at one atmosphere: its
        // triple-point pressure is 0.518 MPa, Staveley et al. 1981), hence no enthalpy of
        // vaporization there.
        assert_eq!(has_nbp, fluid.id != "carbondioxide", "{}", fluid.id);
        let listed = [
            (
                "triple_point_pressure_pa",
                fluid.triple_point_pressure_pa.is_some(),
                true,
            ),
            (
                "heat_of_fusion_j_per_mol",
                c.heat_of_fusion_j_per_mol.is_some(),
                true,
            ),
            (
                "enthalpy_of_vaporization_at_nbp_j_per_mol",
                fluid.enthalpy_of_vaporization_at_nbp_j_per_mol.is_some(),
                has_nbp,
            ),
        ];
        let mut gaps_here = Vec::new();
        for (field, has, applies) in listed {
            let known_gap = gaps::LISTED
                .iter()
                .find(|(f, _)| *f == field)
                .is_some_and(|(_, ids)| ids.contains(&fluid.id.as_str()));
            if has {
                present.push(field);
            } else if applies {
                gaps_here.push(field.to_string());
            }
            assert_eq!(
                has,
                applies && !known_gap,
                "{} {field}: present {has}, listed as a known gap {known_gap}",
                fluid.id
            );
        }
        assert_eq!(
            gaps::commented_gaps(&fluid.id),
            gaps_here,
            "{}: the data file's gap comment",
            fluid.id
        );
        if has_nbp {
            present.push("normal_boiling_point_k");
        }
        if c.melting_volume_change_fraction.is_some() {
            present.push("melting_volume_change_fraction");
        }
        for field in present {
            let text = fluid
                .citation(field)
                .unwrap_or_else(|| panic!("{}: no citation for {field}", fluid.id));
            assert!(text.len() > 20, "{} {field}: `{text}`", fluid.id);
        }
        // A triple-point pressure derived from a vapor-pressure correlation says so and names
        // the catalogue triple-point temperature it was evaluated at.
        if let (Some(text), Some(tt)) = (
            fluid.citation("triple_point_pressure_pa"),
            c.triple_point_temperature_k,
        ) && text.starts_with("DERIVED")
        {
            assert!(
                text.contains(&format!(
                    "evaluated at the catalogue triple-point temperature T = {tt} K"
                )),
                "{}: {text}",
                fluid.id
            );
        }
        for fit in &c.fits {
            assert!(
                fluid.citation(&format!("fit.{}", fit.model)).is_some(),
                "{}",
                fluid.id
            );
        }
    }
    // Water's melting volume change is marked as recalled, not cited to a page.
    let water = Catalogue::builtin().get("water").unwrap();
    assert!(
        water
            .citation("melting_volume_change_fraction")
            .unwrap()
            .contains("from memory")
    );
}
