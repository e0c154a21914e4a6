//! Every required fluid is in the catalogue and resolves by each of its name forms.

use binodal_fluids::{Catalogue, LookupError, MAX_NAME_BYTES};

/// The fluids the catalogue must hold, each with name forms a user may type: the ASHRAE 34
/// refrigerant number with and without the dash, the trade family prefix (HFC-, HCFC-,
/// HFO-), the chemical name and the CAS Registry Number (ASHRAE Standard 34 designations
/// and CAS numbers: common practice; chemical names per IUPAC nomenclature).
const REQUIRED: [(&str, &[&str]); 37] = [
    (
        "r32",
        &["R-32", "r32", "HFC-32", "difluoromethane", "75-10-5"],
    ),
    (
        "r125",
        &["R-125", "HFC-125", "pentafluoroethane", "354-33-6"],
    ),
    (
        "r134a",
        &[
            "r134a",
            "R-134a",
            "HFC-134a",
            "1,1,1,2-tetrafluoroethane",
            "811-97-2",
            "R 134A",
        ],
    ),
    (
        "r143a",
        &["R-143a", "HFC-143a", "1,1,1-trifluoroethane", "420-46-2"],
    ),
    (
        "r152a",
        &["R-152a", "HFC-152a", "1,1-difluoroethane", "75-37-6"],
    ),
    (
        "r23",
        &[
            "R-23",
            "HFC-23",
            "trifluoromethane",
            "fluoroform",
            "75-46-7",
        ],
    ),
    (
        "r227ea",
        &[
            "R-227ea",
            "HFC-227ea",
            "1,1,1,2,3,3,3-heptafluoropropane",
            "431-89-0",
        ],
    ),
    (
        "r245fa",
        &[
            "R-245fa",
            "HFC-245fa",
            "1,1,1,3,3-pentafluoropropane",
            "460-73-1",
        ],
    ),
    (
        "r22",
        &["R-22", "HCFC-22", "chlorodifluoromethane", "75-45-6"],
    ),
    (
        "r1234yf",
        &[
            "R-1234yf",
            "HFO-1234yf",
            "2,3,3,3-tetrafluoropropene",
            "754-12-1",
        ],
    ),
    (
        "r1234ze",
        &["R-1234ze(E)", "R-1234ze", "HFO-1234ze(E)", "29118-24-9"],
    ),
    (
        "r1233zd",
        &["R-1233zd(E)", "HCFO-1233zd(E)", "R1233zd", "102687-65-0"],
    ),
    ("propane", &["R-290", "R290", "propane", "74-98-6"]),
    ("butane", &["R-600", "n-butane", "butane", "106-97-8"]),
    (
        "isobutane",
        &["R-600a", "R600a", "isobutane", "2-methylpropane", "75-28-5"],
    ),
    ("propylene", &["R-1270", "propylene", "propene", "115-07-1"]),
    ("ethane", &["R-170", "ethane", "74-84-0"]),
    ("methane", &["R-50", "methane", "74-82-8"]),
    ("pentane", &["R-601", "n-pentane", "109-66-0"]),
    ("hexane", &["n-hexane", "hexane", "110-54-3"]),
    ("heptane", &["n-heptane", "heptane", "142-82-5"]),
    ("cyclopentane", &["cyclopentane", "287-92-3"]),
    (
        "carbondioxide",
        &["R-744", "R744", "carbon dioxide", "CO2", "124-38-9"],
    ),
    ("ammonia", &["R-717", "R717", "ammonia", "NH3", "7664-41-7"]),
    ("water", &["R-718", "water", "H2O", "7732-18-5"]),
    ("nitrogen", &["R-728", "nitrogen", "N2", "7727-37-9"]),
    ("oxygen", &["R-732", "oxygen", "O2", "7782-44-7"]),
    ("argon", &["R-740", "argon", "7440-37-1"]),
    (
        "hydrogensulfide",
        &["hydrogen sulfide", "hydrogen sulphide", "H2S", "7783-06-4"],
    ),
    (
        "sulfurdioxide",
        &["R-764", "sulfur dioxide", "SO2", "7446-09-5"],
    ),
    ("carbonmonoxide", &["carbon monoxide", "630-08-0"]),
    ("methanol", &["methanol", "methyl alcohol", "67-56-1"]),
    ("ethanol", &["ethanol", "ethyl alcohol", "64-17-5"]),
    ("acetone", &["acetone", "propan-2-one", "67-64-1"]),
    ("benzene", &["benzene", "71-43-2"]),
    ("toluene", &["toluene", "methylbenzene", "108-88-3"]),
    (
        "dimethylether",
        &[
            "R-E170",
            "dimethyl ether",
            "DME",
            "methoxymethane",
            "115-10-6",
        ],
    ),
];

fn resolves_to(name: &str) -> String {
    Catalogue::builtin()
        .get(name)
        .unwrap_or_else(|e| panic!("`{name}`: {e}"))
        .id
        .clone()
}

#[test]
fn every_required_fluid_resolves_by_its_name_forms() {
    let catalogue = Catalogue::builtin();
    assert_eq!(catalogue.fluids().len(), REQUIRED.len());
    for (id, forms) in REQUIRED {
        assert_eq!(resolves_to(id), id);
        for form in forms {
            assert_eq!(resolves_to(form), id, "`{form}`");
            assert_eq!(
                resolves_to(&form.to_uppercase()),
                id,
                "`{form}` in capitals"
            );
        }
    }
}

/// Each fluid's recorded names (id, display name, ASHRAE number, chemical name, CAS number,
/// aliases) resolve to it as written, in capitals and with punctuation removed.
#[test]
fn every_recorded_name_resolves_to_its_fluid() {
    for fluid in Catalogue::builtin().fluids() {
        let mut names = vec![fluid.id.clone(), fluid.name.clone()];
        names.extend(fluid.ashrae_number.clone());
        names.extend(fluid.chemical_name.clone());
        names.extend(fluid.cas.clone());
        names.extend(fluid.aliases.iter().cloned());
        for name in names {
            let stripped: String = name.chars().filter(|c| c.is_alphanumeric()).collect();
            for form in [name.clone(), name.to_uppercase(), stripped] {
                assert_eq!(resolves_to(&form), fluid.id, "`{form}`");
            }
        }
    }
}

/// Formulas are not lookup keys: isomers share them (e.g. C4H10 is both butane and
/// isobutane, common practice). R-134a's structural formula CH2FCF3 does not resolve.
#[test]
fn formulas_are_not_names() {
    assert!(matches!(
        Catalogue::builtin().get("CH2FCF3"),
        Err(LookupError::Unknown { .. })
    ));
}

#[test]
fn unknown_names_come_with_three_suggestions() {
    let catalogue = Catalogue::builtin();
    for (typed, meant) in [
        ("R-134", "r134a"),
        ("amonia", "ammonia"),
        ("propan", "propane"),
        ("R1234z", "r1234ze"),
    ] {
        match catalogue.get(typed) {
            Err(LookupError::Unknown { name, suggestions }) => {
                assert_eq!(name, typed);
                assert_eq!(suggestions.len(), 3, "{suggestions:?}");
                // The closest suggestion names the fluid that was meant, and the three
                // suggestions name three different fluids.
                assert_eq!(
                    resolves_to(&suggestions[0]),
                    meant,
                    "{typed}: {suggestions:?}"
                );
                let mut ids: Vec<String> = suggestions.iter().map(|s| resolves_to(s)).collect();
                ids.sort();
                ids.dedup();
                assert_eq!(ids.len(), 3, "{suggestions:?}");
                let message = catalogue.get(typed).unwrap_err().to_string();
                assert!(message.contains(&suggestions[0]), "{message}");
            }
            other => panic!("{typed}: {other:?}"),
        }
    }
    assert_eq!(
        catalogue.get(" -- ").unwrap_err(),
        LookupError::Empty {
            name: " -- ".to_string()
        }
    );
    // A name longer than any the catalogue could hold is refused before any comparison, and
    // not echoed back.
    let long = "x".repeat(3_000_000);
    assert_eq!(
        catalogue.get(&long).unwrap_err(),
        LookupError::TooLong {
            length: 3_000_000,
            max: MAX_NAME_BYTES
        }
    );
    // Every spelling the catalogue gives stays far below the limit.
    let longest = catalogue
        .fluids()
        .iter()
        .flat_map(|f| {
            [Some(&f.id), Some(&f.name), f.chemical_name.as_ref()]
                .into_iter()
                .flatten()
                .chain(&f.aliases)
        })
        .map(String::len)
        .max()
        .expect("fluids");
    assert!(longest < MAX_NAME_BYTES / 2, "longest name {longest} bytes");
}
