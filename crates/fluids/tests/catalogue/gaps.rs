//! The catalogue's known data gaps, by fluid id, with the reason. Each is a value for which
//! no published source was found in the chemicals Python library 1.5.2 (the library the
//! data files were built from); the data files say so in a comment above the fluid
//! ("Values left out for <id>: ...", written by tools/catalogue/build_catalogue.py). The
//! tests require every value not listed here, so a new gap must be named here on purpose.

/// No reference vapor-pressure data, so no fitted alpha function and an accuracy record that
/// checks only the normal boiling point: chemicals 1.5.2 carries no published vapor-pressure
/// correlation (VDI Heat Atlas PPDS, Poling et al. 2001 Wagner and Antoine, McGarry 1983,
/// Perry's Handbook Table 2-8) and no VDI Heat Atlas saturation table for these fluids (see
/// tools/catalogue/make_reference_points.py).
pub const NO_REFERENCE_DATA: [&str; 5] = ["r1234yf", "r1234ze", "r1233zd", "r227ea", "r245fa"];

/// No triple-point pressure: no tabulated value (Staveley et al. 1981, NIST WebBook, VDI Heat
/// Atlas tables) and, for the same reason as [`NO_REFERENCE_DATA`], no vapor-pressure
/// correlation to derive one from.
pub const NO_TRIPLE_POINT_PRESSURE: [&str; 5] = NO_REFERENCE_DATA;

/// No heat of fusion: none in the CRC Handbook heat-of-fusion table, the NIST WebBook or
/// Wikidata as tabulated in chemicals 1.5.2; the library's only entry for these fluids is a
/// Joback group-contribution estimate, which the catalogue does not use.
pub const NO_HEAT_OF_FUSION: [&str; 10] = [
    "r32",
    "r125",
    "r134a",
    "r152a",
    "r227ea",
    "r245fa",
    "r1234yf",
    "r1234ze",
    "r1233zd",
    "sulfurdioxide",
];

/// No enthalpy of vaporization at the normal boiling point: none in the CRC Handbook table,
/// the handbook compilation (data/reference/critical_constants_compilation.csv) or a VDI
/// Heat Atlas table row at the normal boiling point (R-134a's table has a row at 1 bar, not
/// at 1 atm). Carbon dioxide, which has no normal boiling point, is not listed.
pub const NO_HVAP_AT_NBP: [&str; 6] =
    ["r134a", "r227ea", "r245fa", "r1234yf", "r1234ze", "r1233zd"];

/// The fields that may be left out of a built-in fluid only as listed above.
pub const LISTED: [(&str, &[&str]); 3] = [
    ("triple_point_pressure_pa", &NO_TRIPLE_POINT_PRESSURE),
    ("heat_of_fusion_j_per_mol", &NO_HEAT_OF_FUSION),
    ("enthalpy_of_vaporization_at_nbp_j_per_mol", &NO_HVAP_AT_NBP),
];

/// The built-in data files' text, to check the gap comments.
pub const DATA_FILES: [&str; 5] = [
    include_str!("../../data/hfc.toml"),
    include_str!("../../data/hcfc_hfo.toml"),
    include_str!("../../data/hydrocarbons.toml"),
    include_str!("../../data/inorganic.toml"),
    include_str!("../../data/oxygenates_aromatics.toml"),
];

/// The fields named in the "Values left out for `id`" comment above the fluid's table in the
/// data files (empty if there is no such comment).
pub fn commented_gaps(id: &str) -> Vec<String> {
    let head = format!("# Values left out for {id}:");
    let Some(text) = DATA_FILES.iter().find(|t| t.contains(&head)) else {
        return Vec::new();
    };
    let start = text.find(&head).expect("found above");
    let block = &text[start..];
    let block = &block[..block.find("[[fluid]]").unwrap_or(block.len())];
    // The comment must sit directly above this fluid's table.
    let after = &text[start + block.len()..];
    assert!(
        after.starts_with(&format!("[[fluid]]\nid = \"{id}\"")),
        "the gap comment for {id} is not directly above its [[fluid]] table"
    );
    block
        .lines()
        .filter_map(|l| l.strip_prefix("# - "))
        .filter_map(|l| l.split(':').next())
        .map(str::to_string)
        .collect()
}
