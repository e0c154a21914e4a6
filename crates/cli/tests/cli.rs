//! End-to-end tests of the `binodal` binary against the real server, started in-process on
//! `127.0.0.1:0` (see `util`).
//!
//! Check values for R-134a come from the R-134a saturated-liquid table matching the NIST Chemistry
//! WebBook export, kept in `crates/fluids/data/reference/r134a_saturated_liquid.csv` ("the R-134a
//! table" below). The file's own header gives its stated source: only a code comment
//! `# R-134a (NIST)` in the repository it was copied from; its columns and values match the
//! WebBook's saturation export (liquid side). Each row used is quoted beside the check as
//! (T/K, P/MPa). Tolerances are the model's recorded largest saturation-pressure deviation from
//! that same table, as the server reports it in the answer's `basis`, plus the table's own
//! rounding.

mod util;

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::process::{Command, Stdio};

use util::{
    TABLE_TEMPERATURE_ROUNDING_K, assert_close, binodal, finish, log_pressure_slope, number,
    pressure_between, recorded_max_deviation_percent, reference_rows, run, run_bare,
    saturation_temperature_tolerance, scratch, server_url, temperature_between,
};

/// 0 °C in kelvin (ISO 80000-5).
const CELSIUS_ZERO_K: f64 = 273.15;

/// R-134a at 25 °C and 12 bar(a): above the saturation pressure at 25 °C (0.665 MPa, the
/// R-134a table below), so a subcooled liquid.
const SUBCOOLED_R134A: [&str; 6] = [
    "state",
    "R-134a",
    "--temperature",
    "25C",
    "--pressure",
    "12bar",
];

// Rows (T/K, P/MPa) of the R-134a table (the saturated-liquid table matching the NIST Chemistry
// WebBook export, crates/fluids/data/reference/r134a_saturated_liquid.csv).
const R134A_298_05: (f64, f64) = (298.05, 0.66334);
const R134A_298_39: (f64, f64) = (298.39, 0.67011);
const R134A_273_01: (f64, f64) = (273.01, 0.29128);
const R134A_273_64: (f64, f64) = (273.64, 0.29804);
const R134A_274_26: (f64, f64) = (274.26, 0.30481);
const R134A_319_39: (f64, f64) = (319.39, 1.1978);
const R134A_319_61: (f64, f64) = (319.61, 1.2045);
const R134A_328_26: (f64, f64) = (328.26, 1.4954);
const R134A_328_44: (f64, f64) = (328.44, 1.5022);
const R134A_328_63: (f64, f64) = (328.63, 1.5089);

#[test]
fn saturation_at_a_temperature_in_table_json_and_csv() {
    // 25 °C = 298.15 K (ISO 80000-5).
    let answer = run(&["saturation", "R-134a", "--at", "25C", "--output", "json"]).json();
    assert_eq!(answer["fluid"], "r134a");
    assert_close(
        number(&answer, "saturation_temperature_k"),
        298.15,
        1e-6,
        "saturation temperature echoes --at 25C",
        "ISO 80000-5",
    );
    // R-134a table rows (298.05 K, 0.66334 MPa) and (298.39 K, 0.67011 MPa), ln P interpolated.
    let table_pa = pressure_between(R134A_298_05, R134A_298_39, 298.15) * 1.0e6;
    let slope = log_pressure_slope(R134A_298_05, R134A_298_39);
    let max_percent = recorded_max_deviation_percent(&answer);
    // The table's temperatures are rounded to 0.01 K: that is worth slope * 0.005 K in ln P.
    let tolerance_pa = table_pa * (max_percent / 100.0 + slope * TABLE_TEMPERATURE_ROUNDING_K);
    let model_pa = number(&answer, "saturation_pressure_pa");
    assert_close(
        model_pa,
        table_pa,
        tolerance_pa,
        "R-134a saturation pressure at 25 °C, Pa",
        "R-134a table; recorded max deviation of the model",
    );
    assert!(answer["glide_k"].is_null(), "a pure fluid has no glide");
    assert!(
        number(&answer, "liquid_density_kg_per_m3") > number(&answer, "vapor_density_kg_per_m3")
    );
    assert!(number(&answer, "latent_heat_j_per_kg") > 0.0);
    assert!(
        answer["caution"].is_null(),
        "R-134a (A1) at 6.6 bar(a) needs no caution"
    );
    assert!(
        answer["advisory"]
            .as_str()
            .is_some_and(|a| a.contains("advisory"))
    );

    // The table shows the same numbers in metric units (°C, bar).
    let table = run(&["saturation", "R-134a", "--at", "25C"]);
    let text = table.ok();
    assert!(text.contains("saturation temperature  25.00 °C"), "{text}");
    let bar = format!("{:.4} bar (abs)", model_pa / 1.0e5);
    assert!(text.contains(&bar), "table lacks {bar}:\n{text}");
    assert!(text.contains("Results are advisory"), "{text}");
    assert!(text.contains("model: Peng-Robinson"), "{text}");

    // CSV: a header with units and one row; remarks go to standard error.
    let csv_run = run(&["saturation", "R-134a", "--at", "25C", "--output", "csv"]);
    let mut reader = csv::Reader::from_reader(csv_run.ok().as_bytes());
    let headers = reader.headers().expect("CSV header").clone();
    let rows: Vec<csv::StringRecord> = reader.records().map(|r| r.expect("CSV row")).collect();
    assert_eq!(rows.len(), 1, "one CSV row");
    let column = |name: &str| {
        let index = headers
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no CSV column {name:?} in {headers:?}"));
        rows[0][index].to_string()
    };
    assert_eq!(column("saturation temperature (°C)"), "25.00");
    assert_eq!(
        column("saturation pressure (bar (abs))"),
        format!("{:.4}", model_pa / 1.0e5)
    );
    assert!(
        csv_run.stderr.contains("Results are advisory"),
        "{}",
        csv_run.stderr
    );
}

#[test]
fn saturation_at_a_gauge_pressure_reports_the_ambient_used() {
    // 1.9804 barg + 1.01325 bar (standard atmosphere, NIST SP 811 B.9) = 2.99365 bar(a).
    let answer = run(&[
        "saturation",
        "R-134a",
        "--at",
        "1.9804barg",
        "--output",
        "json",
    ])
    .json();
    assert_close(
        number(&answer, "saturation_pressure_pa"),
        1.9804e5 + 101_325.0,
        1e-6,
        "absolute pressure = gauge + ambient",
        "NIST SP 811 B.9: bar, atm",
    );
    assert_close(
        number(&answer, "ambient_pressure_pa"),
        101_325.0,
        1e-6,
        "default ambient",
        "ISO 2533:1975 sea level",
    );
    let source = answer["ambient_source"].as_str().expect("ambient source");
    assert!(source.contains("standard atmosphere at 0 m"), "{source}");
    assert!(source.contains("default"), "{source}");

    let text = run(&[
        "saturation",
        "R-134a",
        "--at",
        "1.9804barg",
        "--altitude",
        "350m",
    ]);
    let text = text.ok();
    assert!(
        text.contains("ISO 2533 standard atmosphere at 350 m"),
        "{text}"
    );
}

#[test]
fn superheat_against_the_tabulated_saturation_temperature() {
    // Kestrel Lane office chiller CH-2 suction: 2.9804 bar(a) and a line at 8 °C.
    // R-134a table row (273.64 K, 0.29804 MPa): saturation temperature 273.64 K at this pressure,
    // so the expected superheat is 281.15 K - 273.64 K = 7.51 K.
    let line_k = 8.0 + CELSIUS_ZERO_K;
    let answer = run(&[
        "superheat",
        "R-134a",
        "--pressure",
        "2.9804bar",
        "--temperature",
        "8C",
        "--output",
        "json",
    ])
    .json();
    let slope = log_pressure_slope(R134A_273_01, R134A_274_26);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "saturation_temperature_k"),
        R134A_273_64.0,
        tolerance,
        "saturation temperature at 0.29804 MPa, K",
        "R-134a table row (273.64 K, 0.29804 MPa)",
    );
    assert_close(
        number(&answer, "superheat_k"),
        line_k - R134A_273_64.0,
        tolerance,
        "superheat, K",
        "line temperature minus the R-134a table saturation temperature",
    );
    assert_eq!(answer["saturation_point"], "saturation");
    assert!(
        answer["ambient_pressure_pa"].is_null(),
        "absolute reading: no ambient"
    );

    let text = run(&[
        "superheat",
        "R-134a",
        "--pressure",
        "2.9804bar",
        "--temperature",
        "8C",
    ]);
    let text = text.ok();
    assert!(
        text.contains("saturation temperature at this pressure"),
        "{text}"
    );
    assert!(text.contains("superheat"), "{text}");
}

#[test]
fn margins_refuse_absolute_zero_and_flag_a_line_below_the_triple_point() {
    let run_margin = |margin: &str, temperature: &str| {
        run(&[
            margin,
            "R-134a",
            "--pressure",
            "0.5bar",
            "--temperature",
            temperature,
            "--output",
            "json",
        ])
    };
    let refused = run_margin("superheat", "0K");
    let stderr = refused.failed();
    assert!(stderr.contains("--temperature"), "{stderr}");
    assert!(stderr.contains("absolute zero"), "{stderr}");
    // -150 °C = 123.15 K (ISO 80000-5), below R-134a's triple point, 169.86 K (NIST Chemistry
    // WebBook, as cited in the catalogue): answered, with a note that says so.
    let answer = run_margin("subcooling", "-150C").json();
    let notes = answer["notes"].to_string();
    assert!(notes.contains("below the triple point"), "{notes}");
}

#[test]
fn subcooling_from_a_gauge_reading_against_the_tabulated_saturation_temperature() {
    // CH-2 liquid line: 1400.875 kPa(g) with a stated ambient of 101.325 kPa is 1.5022 MPa(a);
    // R-134a table row (328.44 K, 1.5022 MPa). Line at 50 °C = 323.15 K: subcooling 5.29 K.
    let line_k = 50.0 + CELSIUS_ZERO_K;
    let args = [
        "subcooling",
        "R-134a",
        "--pressure",
        "1400.875kPag",
        "--ambient",
        "101.325kPa",
        "--temperature",
        "50C",
    ];
    let mut json_args = args.to_vec();
    json_args.extend(["--output", "json"]);
    let answer = run(&json_args).json();
    assert_close(
        number(&answer, "pressure_pa"),
        R134A_328_44.1 * 1.0e6,
        1e-6,
        "absolute line pressure, Pa",
        "gauge + stated ambient",
    );
    let slope = log_pressure_slope(R134A_328_26, R134A_328_63);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "subcooling_k"),
        R134A_328_44.0 - line_k,
        tolerance,
        "subcooling, K",
        "R-134a table row (328.44 K, 1.5022 MPa) minus the line temperature",
    );
    assert_close(
        number(&answer, "ambient_pressure_pa"),
        101_325.0,
        1e-6,
        "ambient used",
        "--ambient 101.325kPa",
    );
    let source = answer["ambient_source"].as_str().expect("ambient source");
    assert!(source.contains("given"), "{source}");

    let text = run(&args);
    let text = text.ok();
    let ambient = format!(
        "ambient pressure (added to the gauge reading)  {:.4} bar (abs)",
        101_325.0 / 1.0e5
    );
    assert!(text.contains(&ambient), "table lacks {ambient}:\n{text}");
    assert!(text.contains("subcooling"), "{text}");
}

#[test]
fn state_in_table_json_and_csv() {
    // Subcooled (see `SUBCOOLED_R134A`). Saturation temperature at 1.2 MPa from the table rows
    // (319.39 K, 1.1978 MPa) and (319.61 K, 1.2045 MPa), ln P interpolated.
    let answer = run(&[&SUBCOOLED_R134A[..], &["--output", "json"]].concat()).json();
    assert_eq!(answer["phase"], "subcooled-liquid");
    let table_t = temperature_between(R134A_319_39, R134A_319_61, 1.2);
    let slope = log_pressure_slope(R134A_319_39, R134A_319_61);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "saturation_temperature_k"),
        table_t,
        tolerance,
        "saturation temperature at 1.2 MPa, K",
        "R-134a table rows (319.39 K, 1.1978 MPa), (319.61 K, 1.2045 MPa)",
    );
    assert_close(
        number(&answer, "subcooling_k"),
        table_t - 298.15,
        tolerance,
        "subcooling at 25 °C and 1.2 MPa, K",
        "R-134a table saturation temperature minus 298.15 K",
    );
    assert!(answer["superheat_k"].as_f64().is_some_and(|s| s < 0.0));
    // A compressed liquid is denser than the saturated liquid at the same temperature
    // (mechanical stability, dP/drho > 0 along an isotherm).
    let saturated = run(&["saturation", "R-134a", "--at", "25C", "--output", "json"]).json();
    assert!(
        number(&answer, "density_kg_per_m3") > number(&saturated, "liquid_density_kg_per_m3"),
        "compressed liquid {answer} vs saturated {saturated}"
    );
    for key in [
        "enthalpy_j_per_kg",
        "entropy_j_per_kg_k",
        "reduced_temperature",
    ] {
        assert!(answer[key].is_f64(), "{key} missing in {answer}");
    }
    assert_eq!(answer["estimated"], false);

    let text = run(&SUBCOOLED_R134A);
    let text = text.ok();
    assert!(text.contains("phase"), "{text}");
    assert!(text.contains("subcooled-liquid"), "{text}");
    let density = format!("{:.3} kg/m3", number(&answer, "density_kg_per_m3"));
    assert!(text.contains(&density), "table lacks {density}:\n{text}");

    let csv_run = run(&[&SUBCOOLED_R134A[..], &["--output", "csv", "--units", "si"]].concat());
    let mut reader = csv::Reader::from_reader(csv_run.ok().as_bytes());
    let headers = reader.headers().expect("header").clone();
    let row = reader.records().next().expect("one row").expect("CSV row");
    let at = |name: &str| {
        headers
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no column {name:?} in {headers:?}"))
    };
    assert_eq!(&row[at("phase")], "subcooled-liquid");
    assert_eq!(&row[at("temperature (K)")], "298.15");
    assert_eq!(&row[at("pressure (Pa (abs))")], "1200000");
}

#[test]
fn the_chosen_model_is_the_one_used() {
    for model in ["soave-redlich-kwong", "peng-robinson-1976"] {
        let answer = run(&[
            "saturation",
            "R-134a",
            "--at",
            "25C",
            "--model",
            model,
            "--output",
            "json",
        ])
        .json();
        assert_eq!(answer["basis"]["model"], model, "{answer}");
    }
    let stderr = run(&[
        "saturation",
        "R-134a",
        "--at",
        "25C",
        "--model",
        "peng-robinson",
    ]);
    assert!(
        stderr.failed().contains("peng-robinson-1978"),
        "{}",
        stderr.stderr
    );
}

#[test]
fn cautions_for_high_pressure_and_toxic_fluids() {
    // CO2-RK2 receiver at 45 bar(g): above the 25 bar(a) threshold (common practice).
    let text = run(&[
        "state",
        "R-744",
        "--temperature",
        "12C",
        "--pressure",
        "45barg",
    ]);
    let text = text.ok();
    let caution = text
        .lines()
        .find(|line| line.starts_with("caution: "))
        .unwrap_or_else(|| panic!("no caution line:\n{text}"));
    assert!(caution.contains("above 25 bar(a)"), "{caution}");
    let answer = run(&[
        "state",
        "R-744",
        "--temperature",
        "12C",
        "--pressure",
        "45barg",
        "--output",
        "json",
    ])
    .json();
    assert!(
        answer["caution"]
            .as_str()
            .is_some_and(|c| c.contains("above 25 bar(a)")),
        "{answer}"
    );
    // NH3-P101: ammonia is ASHRAE 34 class B2L (higher toxicity, lower flammability).
    let answer = run(&["saturation", "R-717", "--at", "-10C", "--output", "json"]).json();
    assert!(
        answer["caution"]
            .as_str()
            .is_some_and(|c| c.contains("B2L")),
        "{answer}"
    );
}

#[test]
fn saturation_table_over_temperatures() {
    // -10 °C to 10 °C in 5 K steps: 5 rows.
    let answer = run(&[
        "table", "R-134a", "--from", "-10C", "--to", "10C", "--step", "5C", "--output", "json",
    ])
    .json();
    let rows = answer["rows"].as_array().expect("rows");
    assert_eq!(rows.len(), 5);
    let temperatures: Vec<f64> = rows
        .iter()
        .map(|r| number(r, "saturation_temperature_k"))
        .collect();
    for (row, expected) in temperatures
        .iter()
        .zip([263.15, 268.15, 273.15, 278.15, 283.15])
    {
        assert_close(*row, expected, 1e-9, "row temperature", "ISO 80000-5");
    }
    let pressures: Vec<f64> = rows
        .iter()
        .map(|r| number(r, "saturation_pressure_pa"))
        .collect();
    assert!(pressures.windows(2).all(|w| w[1] > w[0]), "{pressures:?}");
    // R-134a table row (273.01 K, 0.29128 MPa) and (273.64 K, 0.29804 MPa) bracket 0 °C.
    let table_pa = pressure_between(R134A_273_01, R134A_273_64, 273.15) * 1.0e6;
    let slope = log_pressure_slope(R134A_273_01, R134A_273_64);
    let max_percent = recorded_max_deviation_percent(&answer);
    assert_close(
        pressures[2],
        table_pa,
        table_pa * (max_percent / 100.0 + slope * TABLE_TEMPERATURE_ROUNDING_K),
        "R-134a saturation pressure at 0 °C, Pa",
        "R-134a table; recorded max deviation of the model",
    );

    let csv_run = run(&[
        "table", "R-134a", "--from", "-10C", "--to", "10C", "--step", "5C", "--output", "csv",
    ]);
    let csv_text = csv_run.ok();
    let mut lines = csv_text.lines();
    let header = lines.next().expect("header");
    assert!(
        header.starts_with("saturation temperature (°C),saturation pressure (bar (abs))"),
        "{header}"
    );
    assert!(
        !header.contains("bubble"),
        "pure fluid: no bubble/dew columns: {header}"
    );
    let first: Vec<&str> = lines.next().expect("first row").split(',').collect();
    assert_eq!(first[0], "-10.00");
    assert_eq!(lines.count(), 4);

    let text = run(&[
        "table", "R-134a", "--from", "-10C", "--to", "10C", "--step", "5C",
    ]);
    assert!(text.ok().contains("-10.00"), "{}", text.stdout);
}

#[test]
fn table_errors_name_the_options() {
    let stderr = run(&[
        "table", "R-134a", "--from", "-10C", "--to", "5bar", "--step", "5C",
    ]);
    let stderr = stderr.failed();
    assert!(stderr.contains("both be temperatures"), "{stderr}");
    // R-134a's critical temperature is 374.21 K = 101.06 °C (the R-134a table, last row).
    let stderr = run(&[
        "table", "R-134a", "--from", "90C", "--to", "110C", "--step", "5C",
    ]);
    let stderr = stderr.failed();
    assert!(stderr.contains("--to"), "{stderr}");
    assert!(stderr.contains("critical temperature"), "{stderr}");
    let stderr = run(&[
        "table", "R-134a", "--from", "1bar", "--to", "2bar", "--step", "0.1barg",
    ]);
    let stderr = stderr.failed();
    assert!(stderr.contains("--step"), "{stderr}");
}

/// The `(x, y)` attributes of an SVG element, as plotters writes them.
fn attribute(element: &str, name: &str) -> Option<f64> {
    let start = element.find(&format!(" {name}=\""))? + name.len() + 3;
    let end = element[start..].find('"')? + start;
    element[start..end].parse().ok()
}

/// Asserts that each operating point in `marks` is drawn: its label as typed, and a filled circle
/// where the label is anchored (the label is drawn 9 px right of and 18 px above the point's
/// centre). Returns the centres in pixels, in the order of `marks`.
fn marked_points(svg: &str, marks: &[&str]) -> Vec<(f64, f64)> {
    let circles: Vec<(f64, f64)> = svg
        .split("<circle")
        .skip(1)
        .filter_map(|e| Some((attribute(e, "cx")?, attribute(e, "cy")?)))
        .collect();
    marks
        .iter()
        .map(|mark| {
            let text_start = svg
                .find(&format!(">\n{mark}\n</text>"))
                .or_else(|| svg.find(&format!(">{mark}</text>")))
                .unwrap_or_else(|| panic!("label {mark} not in the SVG"));
            let element_start = svg[..text_start].rfind("<text").expect("text element");
            let element = &svg[element_start..text_start];
            let (x, y) = (
                attribute(element, "x").expect("x"),
                attribute(element, "y").expect("y"),
            );
            let centre = (x - 9.0, y + 18.0);
            assert!(
                circles.contains(&centre),
                "no circle under the label {mark} at ({x}, {y}); circles {circles:?}"
            );
            centre
        })
        .collect()
}

#[test]
fn a_diagram_mark_outside_the_model_range_is_refused() {
    let out = scratch("diagram-refused").join("r134a.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    for kind in ["pt", "ph"] {
        let refused = run(&[
            "diagram",
            "R-134a",
            "--kind",
            kind,
            "--out",
            out_text,
            "--mark",
            "1e300C,1e300MPa",
        ]);
        let stderr = refused.failed();
        assert!(stderr.contains("--mark"), "{kind}: {stderr}");
        assert!(stderr.contains("valid"), "{kind}: {stderr}");
    }
}

#[test]
fn pressure_temperature_diagram_as_svg() {
    let out = scratch("diagram-svg").join("co2-rk2.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let marks = ["-8C,26barg", "12C,45barg"];
    let run = run(&[
        "diagram",
        "R-744",
        "--kind",
        "pt",
        "--out",
        out_text,
        &format!("--mark={}", marks[0]),
        "--mark",
        marks[1],
        "--output",
        "json",
    ]);
    let answer = run.json();
    // The catalogue has carbon dioxide's triple point and heat of fusion (CRC Handbook, 95th
    // ed., as cited there), so the server sends its estimated solid boundaries.
    assert_eq!(answer["solid_boundaries_drawn"], true);
    assert!(number(&answer, "curve_points") >= 40.0, "{answer}");
    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    assert!(svg.starts_with("<svg"), "not an SVG");
    // The saturation curve: a polyline with many points.
    let longest = svg
        .split("<polyline")
        .skip(1)
        .filter_map(|element| attribute_text(element, "points"))
        .map(|points| points.split_whitespace().count())
        .max()
        .unwrap_or(0);
    assert!(
        longest >= 40,
        "no curve polyline with 40+ points (longest {longest})"
    );
    // Each marked point: its label, and a circle where the label is anchored.
    marked_points(&svg, &marks);
    for label in [
        "critical point",
        "triple point",
        "saturation curve",
        "estimated melting line",
        "estimated sublimation curve",
    ] {
        assert!(svg.contains(label), "legend lacks {label}");
    }
}

/// Number of `<polyline>` elements stroked in `color` (`#RRGGBB`, as plotters writes it): the
/// dashes of a dashed series are one short polyline each.
fn dashes(svg: &str, color: &str) -> usize {
    svg.split("<polyline")
        .skip(1)
        .filter(|element| attribute_text(element, "stroke") == Some(color))
        .count()
}

/// The start of the note on a P-T diagram without solid boundaries.
const SOLID_NOT_DRAWN: &str = "solid boundaries (melting line, sublimation curve) are not drawn";

#[test]
fn water_pressure_temperature_diagram_draws_the_estimated_solid_boundaries() {
    let out = scratch("diagram-water").join("water.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let answer = run(&[
        "diagram", "water", "--kind", "pt", "--out", out_text, "--output", "json",
    ])
    .json();
    assert_eq!(answer["solid_boundaries_drawn"], true, "{answer}");
    let notes = answer["notes"].to_string();
    assert!(!notes.contains(SOLID_NOT_DRAWN), "{notes}");
    assert!(notes.contains("estimates, not measured data"), "{notes}");
    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    for label in [
        "estimated melting line",
        "estimated sublimation curve",
        "estimated solid boundaries",
    ] {
        assert!(svg.contains(label), "the SVG lacks {label:?}");
    }
    // Both curves are dashed: many short segments in their own colours.
    for (curve, color) in [
        ("melting line", "#800080"),
        ("sublimation curve", "#008080"),
    ] {
        let count = dashes(&svg, color);
        assert!(count >= 10, "the {curve} has {count} dashes");
    }

    // R-134a: the catalogue records no heat of fusion (crates/fluids/data/hfc.toml), so there is
    // nothing to draw and the note says why.
    let out = scratch("diagram-r134a").join("ch2.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let answer = run(&[
        "diagram", "R-134a", "--kind", "pt", "--out", out_text, "--output", "json",
    ])
    .json();
    assert_eq!(answer["solid_boundaries_drawn"], false, "{answer}");
    let notes = answer["notes"].to_string();
    assert!(notes.contains(SOLID_NOT_DRAWN), "{notes}");
    assert!(notes.contains("heat of fusion"), "{notes}");
    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    assert!(!svg.contains("estimated melting line"));
}

/// The raw text of an attribute.
fn attribute_text<'a>(element: &'a str, name: &str) -> Option<&'a str> {
    let start = element.find(&format!(" {name}=\""))? + name.len() + 3;
    let end = element[start..].find('"')? + start;
    Some(&element[start..end])
}

#[test]
fn pressure_enthalpy_diagram_as_png() {
    let out = scratch("diagram-png").join("ch2.png");
    let out_text = out.to_str().expect("UTF-8 path");
    run(&[
        "diagram",
        "R-134a",
        "--kind",
        "ph",
        "--out",
        out_text,
        "--mark",
        "5C,2.5bar",
        "--mark",
        "45C,11bar",
    ])
    .ok();
    let png = std::fs::read(&out).expect("the PNG was written");
    // PNG signature and IHDR size (ISO/IEC 15948:2004, sections 5.2 and 11.2.2).
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(&png[12..16], b"IHDR");
    let width = u32::from_be_bytes(png[16..20].try_into().expect("width"));
    let height = u32::from_be_bytes(png[20..24].try_into().expect("height"));
    assert_eq!((width, height), (1000, 700));
    // A blank 1000 x 700 picture compresses to a few kilobytes; curves, grid and text do not.
    assert!(
        png.len() > 20_000,
        "PNG suspiciously small: {} bytes",
        png.len()
    );
}

#[test]
fn health_is_zero_when_serving() {
    let run = run(&["health"]);
    assert!(run.ok().contains("serving"), "{}", run.stdout);
    let answer = self::run(&["health", "--output", "json"]).json();
    assert_eq!(answer["status"], "serving");
    assert_eq!(answer["service"], "binodal.v1.PhaseService");
}

#[test]
fn unknown_fluid_fails_with_suggestions() {
    let run = run(&["saturation", "R-134", "--at", "25C"]);
    let stderr = run.failed();
    assert_eq!(run.status.code(), Some(1));
    assert!(stderr.contains("unknown fluid"), "{stderr}");
    assert!(stderr.contains("R-134a"), "no suggestion: {stderr}");
    assert_eq!(
        stderr.matches("error:").count(),
        1,
        "error printed once: {stderr}"
    );
}

#[test]
fn a_bare_number_fails_with_the_accepted_forms() {
    let run = run(&["saturation", "R-134a", "--at", "25"]);
    let stderr = run.failed();
    assert!(stderr.contains("`25`"), "{stderr}");
    assert!(stderr.contains("25C"), "{stderr}");
    assert!(stderr.contains("8.2barg"), "{stderr}");
    let run = self::run(&[
        "state",
        "R-134a",
        "--temperature",
        "25C",
        "--pressure",
        "12",
    ]);
    let stderr = run.failed();
    assert!(stderr.contains("a pressure needs a unit"), "{stderr}");
    assert!(stderr.contains("--pressure"), "{stderr}");
}

#[test]
fn an_unreachable_server_is_named() {
    // A port that was just free: bind, read it, release it.
    let port = std::net::TcpListener::bind("127.0.0.1:0")
        .expect("bind")
        .local_addr()
        .expect("address")
        .port();
    let url = format!("http://127.0.0.1:{port}");
    let run = run_bare(&["--server", &url, "health"]);
    let stderr = run.failed();
    assert!(stderr.contains(&url), "{stderr}");
    assert!(stderr.contains("cannot reach"), "{stderr}");
    let run = run_bare(&["--server", "127.0.0.1:50051", "health"]);
    assert!(run.failed().contains("http://HOST:PORT"), "{}", run.stderr);
    // A port out of range is refused, not taken for none (which would call port 80).
    let run = run_bare(&["--server", "http://127.0.0.1:99999", "health"]);
    let stderr = run.failed();
    assert!(stderr.contains("port `99999`"), "{stderr}");
    assert!(!stderr.contains("cannot reach"), "{stderr}");
}

#[test]
fn server_from_the_environment_and_defaults_from_the_configuration_file() {
    let dir = scratch("config");
    let file = dir.join("binodal.toml");
    std::fs::write(&file, "units = \"us\"\noutput = \"json\"\n").expect("write configuration");
    let mut command = binodal();
    command
        .env("BINODAL_SERVER", server_url())
        .env("BINODAL_CONFIG", &file)
        .args(["saturation", "R-134a", "--at", "77F"]);
    let answer = finish(command.spawn().expect("start")).json();
    // 77 °F = 298.15 K (NIST SP 811 B.9); JSON stays SI whatever the units.
    assert_close(
        number(&answer, "saturation_temperature_k"),
        298.15,
        1e-9,
        "77F in K",
        "NIST SP 811 B.9",
    );
    let mut command = binodal();
    command
        .env("BINODAL_SERVER", server_url())
        .env("BINODAL_CONFIG", &file)
        .args(["saturation", "R-134a", "--at", "77F", "--output", "table"]);
    let run = finish(command.spawn().expect("start"));
    assert!(run.ok().contains("77.00 °F"), "{}", run.stdout);
    assert!(run.stdout.contains("psia"), "{}", run.stdout);
}

#[test]
fn a_closed_pipe_is_not_an_error() {
    let mut command = binodal();
    command.arg("--server").arg(server_url()).args([
        "table", "R-134a", "--from", "-40C", "--to", "40C", "--step", "1C",
    ]);
    let mut child = command.spawn().expect("start binodal");
    // Close our end at once: the reader has gone before the first row is written.
    drop(child.stdout.take());
    let run = finish(child);
    assert!(
        run.status.success(),
        "exit {:?}, stderr {}",
        run.status,
        run.stderr
    );
    assert!(!run.stderr.contains("error"), "{}", run.stderr);
}

#[test]
fn a_closed_standard_error_is_not_an_error() {
    // CSV output puts the basis and caution on standard error; a reader that closed it has
    // stopped reading, as with a closed standard output.
    let mut command = binodal();
    command
        .arg("--server")
        .arg(server_url())
        .args(["--output", "csv"])
        .args(SUBCOOLED_R134A);
    let mut child = command.spawn().expect("start binodal");
    drop(child.stderr.take());
    let run = finish(child);
    assert!(run.status.success(), "exit {:?}", run.status);
    // A subcooled liquid (see `SUBCOOLED_R134A`).
    assert!(run.stdout.contains("subcooled"), "{}", run.stdout);
}

#[test]
fn completions_and_help() {
    let script = run_bare(&["completions", "bash"]);
    let script = script.ok();
    assert!(script.contains("binodal"), "{script}");
    assert!(script.contains("saturation"), "{script}");
    let help = run_bare(&["--help"]);
    let help = help.ok();
    assert!(help.contains("Harrowgate Cold Store"), "{help}");
    assert!(help.contains("NH3-P101"), "{help}");
}

#[test]
fn blend_superheat_and_subcooling_use_the_dew_and_bubble_points() {
    // Harrowgate Cold Store, a chiller loop on R-407C (zeotropic): superheat is read against
    // the dew point and subcooling against the bubble point (the practice of the trade for
    // blends with glide, common practice). The two points differ by the glide, several
    // kelvin for R-407C (common practice), so the two answers must use different points.
    let suction = run(&[
        "superheat",
        "R-407C",
        "--pressure",
        "4barg",
        "--temperature",
        "10C",
        "--output",
        "json",
    ])
    .json();
    assert_eq!(suction["saturation_point"], "dew");
    let liquid = run(&[
        "subcooling",
        "R-407C",
        "--pressure",
        "4barg",
        "--temperature",
        "-10C",
        "--output",
        "json",
    ])
    .json();
    assert_eq!(liquid["saturation_point"], "bubble");
    let dew = number(&suction, "saturation_temperature_k");
    let bubble = number(&liquid, "saturation_temperature_k");
    let glide = dew - bubble;
    assert!(
        (4.0..8.0).contains(&glide),
        "R-407C glide at 4 bar(g): {glide} K"
    );
    let line_k = 10.0 + CELSIUS_ZERO_K;
    assert!((number(&suction, "superheat_k") - (line_k - dew)).abs() < 1e-9);
}

// ---------------------------------------------------------------------------------------------
// The catalogue: `binodal fluids` and `binodal fluid NAME`.
// ---------------------------------------------------------------------------------------------

/// The `fluid_id` of each row of a `fluids` answer.
fn listed_ids(answer: &serde_json::Value) -> BTreeSet<String> {
    answer["rows"]
        .as_array()
        .unwrap_or_else(|| panic!("no rows in {answer}"))
        .iter()
        .map(|row| row["fluid_id"].as_str().expect("fluid_id").to_string())
        .collect()
}

/// The data rows of a readable row table (between the header rule `╞═...` and the bottom
/// border), each split at whitespace without the side borders.
fn table_rows(text: &str) -> Vec<Vec<String>> {
    text.lines()
        .skip_while(|line| !line.starts_with('╞'))
        .skip(1)
        .take_while(|line| line.starts_with('│'))
        .map(|line| {
            line.trim_matches('│')
                .split_whitespace()
                .map(str::to_string)
                .collect()
        })
        .collect()
}

#[test]
fn fluid_list_filters_by_safety_class() {
    let all = run(&["fluids", "--output", "json"]).json();
    let class_of: BTreeMap<String, String> = all["rows"]
        .as_array()
        .expect("rows")
        .iter()
        .map(|row| {
            (
                row["fluid_id"].as_str().expect("fluid_id").to_string(),
                row["safety_class"]
                    .as_str()
                    .expect("safety_class")
                    .to_string(),
            )
        })
        .collect();
    let with_class = |classes: &[&str]| -> BTreeSet<String> {
        class_of
            .iter()
            .filter(|(_, class)| classes.contains(&class.as_str()))
            .map(|(id, _)| id.clone())
            .collect()
    };
    // ASHRAE Standard 34 safety groups: A3 for R-290 propane and R-600a isobutane, B2L for R-717
    // ammonia, A1 for R-134a (as recorded in the catalogue, marked there `from memory`).
    for (id, class) in [
        ("propane", "A3"),
        ("isobutane", "A3"),
        ("ammonia", "B2L"),
        ("r134a", "A1"),
    ] {
        assert_eq!(class_of.get(id).map(String::as_str), Some(class), "{id}");
    }

    let a3 = run(&["fluids", "--class", "A3", "--output", "json"]).json();
    let rows = a3["rows"].as_array().expect("rows");
    assert!(
        rows.iter().all(|row| row["safety_class"] == "A3"),
        "a row of another class: {a3}"
    );
    let found = listed_ids(&a3);
    assert_eq!(
        found,
        with_class(&["A3"]),
        "the A3 list is every A3 fluid of the full list"
    );
    for (id, number) in [("propane", "R-290"), ("isobutane", "R-600a")] {
        let row = rows
            .iter()
            .find(|row| row["fluid_id"] == id)
            .unwrap_or_else(|| panic!("A3 list lacks {id}: {found:?}"));
        assert_eq!(row["ashrae_number"], number, "{row}");
        assert_eq!(row["kind"], "pure", "{row}");
    }
    assert!(!found.contains("r134a"), "R-134a is A1, not A3: {found:?}");
    assert!(
        !found.contains("ammonia"),
        "R-717 is B2L, not A3: {found:?}"
    );

    // Classes are case-insensitive and comma-separated; the list is their union.
    let either = run(&["fluids", "--class", "a3,B2L", "--output", "json"]).json();
    let either = listed_ids(&either);
    assert_eq!(either, with_class(&["A3", "B2L"]));
    assert!(either.contains("ammonia") && either.contains("propane"));

    // `none`: the fluids without an ASHRAE 34 class.
    let none = run(&["fluids", "--class", "none", "--output", "json"]).json();
    assert_eq!(listed_ids(&none), with_class(&["none"]));

    // The readable table: one line per fluid, the class in the column before the kind.
    let text = run(&["fluids", "--class", "A3"]);
    let text = text.ok();
    let lines = table_rows(text);
    assert_eq!(lines.len(), found.len(), "{text}");
    for line in &lines {
        assert_eq!(line[line.len() - 2], "A3", "{line:?}");
        assert!(found.contains(&line[0]), "{line:?} not in {found:?}");
    }
    let propane = lines
        .iter()
        .find(|line| line[0] == "propane")
        .unwrap_or_else(|| panic!("no propane line:\n{text}"));
    assert!(propane.contains(&"R-290".to_string()), "{propane:?}");
    assert!(!text.contains("R-134a"), "{text}");

    // CSV: a header and one record per fluid.
    let csv_run = run(&["fluids", "--class", "A3", "--output", "csv"]);
    let mut reader = csv::Reader::from_reader(csv_run.ok().as_bytes());
    let headers = reader.headers().expect("CSV header").clone();
    assert_eq!(
        headers.iter().collect::<Vec<_>>(),
        ["id", "name", "number", "chemical name", "class", "kind"]
    );
    let records: Vec<csv::StringRecord> = reader.records().map(|r| r.expect("CSV row")).collect();
    assert!(records.iter().all(|r| &r[4] == "A3"), "{records:?}");
    let csv_ids: BTreeSet<String> = records.iter().map(|r| r[0].to_string()).collect();
    assert_eq!(csv_ids, found);

    // Nothing matches an invented site name: an empty list and a note that says so.
    let empty = run(&["fluids", "--search", "Harrowgate", "--output", "json"]).json();
    assert!(listed_ids(&empty).is_empty(), "{empty}");
    assert!(
        empty["notes"].to_string().contains("no fluid matches"),
        "{empty}"
    );
}

#[test]
fn one_fluid_shows_constants_class_caution_and_recorded_accuracy() {
    let answer = run(&["fluid", "R-290", "--output", "json"]).json();
    assert_eq!(answer["fluid"], "propane");
    assert_eq!(answer["ashrae_number"], "R-290");
    assert_eq!(answer["kind"], "pure");
    assert!(answer["blend_components"].is_null(), "{answer}");
    // CAS Registry Number of propane (NIST Chemistry WebBook, propane).
    assert_eq!(answer["cas_number"], "74-98-6");
    // ASHRAE Standard 34: R-290 is A3 (catalogue entry marked `from memory`).
    assert_eq!(answer["safety_class"], "A3");
    // Molar mass of C3H8 from the IUPAC 2005 standard atomic weights, C 12.0107 and H 1.00794
    // g/mol (the basis the catalogue states).
    assert_close(
        number(&answer, "molar_mass_kg_per_mol"),
        (3.0 * 12.0107 + 8.0 * 1.00794) / 1000.0,
        1e-12,
        "molar mass of propane, kg/mol",
        "IUPAC 2005 standard atomic weights",
    );
    // Critical point 369.89 K and 4.2512 MPa: Lemmon, McLinden, Wagner, J. Chem. Eng. Data 54
    // (2009) 3141 (as recorded in the catalogue, marked there `from memory`).
    assert_close(
        number(&answer, "critical_temperature_k"),
        369.89,
        1e-9,
        "critical temperature of propane, K",
        "Lemmon, McLinden, Wagner 2009",
    );
    assert_close(
        number(&answer, "critical_pressure_pa"),
        4.2512e6,
        1e-6,
        "critical pressure of propane, Pa",
        "Lemmon, McLinden, Wagner 2009",
    );
    // Triple point 85.468 K: Staveley, Lobo, Calado, Cryogenics 21 (1981) 131 (ITS-90).
    assert_close(
        number(&answer, "triple_point_temperature_k"),
        85.468,
        1e-9,
        "triple-point temperature of propane, K",
        "Staveley, Lobo, Calado 1981",
    );
    // Normal boiling point 231.04 K: CRC Handbook of Chemistry and Physics, 95th ed.
    assert_close(
        number(&answer, "normal_boiling_point_k"),
        231.04,
        1e-9,
        "normal boiling point of propane, K",
        "CRC Handbook, 95th ed.",
    );
    // Acentric factor 0.152: Yaws, Thermophysical Properties of Chemicals and Hydrocarbons,
    // 2nd ed. (2014).
    assert_close(
        number(&answer, "acentric_factor"),
        0.152,
        1e-12,
        "acentric factor of propane",
        "Yaws 2014",
    );
    let sources = answer["sources"].to_string();
    for (key, source) in [
        ("critical_temperature_k", "Lemmon"),
        ("triple_point_temperature_k", "Staveley"),
        ("safety_class", "ASHRAE Standard 34"),
    ] {
        assert!(
            sources.contains(&format!("{key}: ")) && sources.contains(source),
            "sources lack {key} ({source}): {sources}"
        );
    }

    // The caution: ASHRAE 34 class 3 is "higher flammability" (ASHRAE Standard 34 flammability
    // classes), followed by the catalogue's own hazards.
    let caution = answer["caution"]
        .as_str()
        .expect("a caution for an A3 fluid");
    assert!(caution.contains("higher flammability"), "{caution}");
    assert!(caution.contains("A3"), "{caution}");
    let hazards = answer["catalogue_caution"].as_str().expect("hazards");
    assert!(hazards.contains("flammable"), "{hazards}");

    // The recorded accuracy: one entry per model, each checked against the NIST Chemistry
    // WebBook propane saturation table (crates/fluids/data/reference/propane_saturation.csv,
    // stated source: the WebBook's tab-delimited export, retrieved 2014-09-30), over all of its
    // rows (100 K to 350 K, below 0.99 Tc).
    let table = reference_rows("propane_saturation.csv");
    let models = answer["models"].as_array().expect("models");
    let names: BTreeSet<&str> = models
        .iter()
        .map(|m| m["model"].as_str().expect("model"))
        .collect();
    assert_eq!(
        names,
        BTreeSet::from([
            "van-der-waals",
            "redlich-kwong",
            "soave-redlich-kwong",
            "peng-robinson-1976",
            "peng-robinson-1978",
        ])
    );
    for model in models {
        let deviation = &model["recorded_deviation"];
        assert!(
            deviation["reference"]
                .as_str()
                .is_some_and(|r| r.contains("propane_saturation.csv")),
            "{model}"
        );
        assert_eq!(deviation["checked_points"], table.len(), "{model}");
        assert_close(
            number(deviation, "checked_from_k"),
            table[0][0],
            1e-9,
            "first checked temperature, K",
            "propane_saturation.csv, first row",
        );
        assert_close(
            number(deviation, "checked_to_k"),
            table[table.len() - 1][0],
            1e-9,
            "last checked temperature, K",
            "propane_saturation.csv, last row",
        );
        for key in [
            "saturation_pressure_mean_percent",
            "saturation_pressure_max_percent",
            "enthalpy_of_vaporization_mean_percent",
            "enthalpy_of_vaporization_max_percent",
        ] {
            assert!(number(deviation, key) >= 0.0, "{key} in {model}");
        }
    }
    let default_model = models
        .iter()
        .find(|m| m["model"] == "peng-robinson-1978")
        .expect("the server's default model");
    let recorded = &default_model["recorded_deviation"];

    // A saturation answer carries the same record as its basis, and the record holds: the
    // WebBook row at 280 K (propane_saturation.csv: 0.58173 MPa, h_vap - h_liq = 582.60 - 217.38
    // = 365.22 kJ/kg) is met within the recorded largest deviations plus the table's rounding
    // (half of the pressure's last digit, 0.000005 MPa; h_vap and h_liq are each given to
    // 0.01 kJ/kg, so their difference to +-0.01 kJ/kg).
    let saturation = run(&["saturation", "R-290", "--at", "280K", "--output", "json"]).json();
    assert_eq!(saturation["basis"]["model"], "peng-robinson-1978");
    assert_eq!(&saturation["basis"]["recorded_deviation"], recorded);
    let row = table
        .iter()
        .find(|row| row[0] == 280.0)
        .expect("the 280 K row");
    let (published_pa, published_hvap) = (row[1] * 1.0e6, row[6] * 1.0e3);
    assert_close(
        number(&saturation, "saturation_pressure_pa"),
        published_pa,
        published_pa * number(recorded, "saturation_pressure_max_percent") / 100.0 + 5.0,
        "propane saturation pressure at 280 K, Pa",
        "NIST Chemistry WebBook propane table (propane_saturation.csv, 280 K)",
    );
    assert_close(
        number(&saturation, "latent_heat_j_per_kg"),
        published_hvap,
        published_hvap * number(recorded, "enthalpy_of_vaporization_max_percent") / 100.0 + 10.0,
        "propane enthalpy of vaporization at 280 K, J/kg",
        "NIST Chemistry WebBook propane table (propane_saturation.csv, 280 K)",
    );

    // A fluid checked only at its normal boiling point says so, with no NaN figures.
    let text = run(&["fluid", "R-1234yf"]);
    let text = text.ok();
    assert!(!text.contains("NaN"), "{text}");
    assert!(
        text.contains(
            "Peng-Robinson (1978 alpha): saturation pressure and enthalpy of vaporization not \
             checked; normal boiling point"
        ),
        "{text}"
    );

    // The readable form shows the same: constants in metric units, the class, each model's
    // recorded deviation and the caution line.
    let text = run(&["fluid", "R-290"]);
    let text = text.ok();
    let line = |label: &str| {
        text.lines()
            .find(|line| line.starts_with(label))
            .unwrap_or_else(|| panic!("no `{label}` line:\n{text}"))
    };
    assert!(line("safety class (ASHRAE 34)").ends_with(" A3"), "{text}");
    // 369.89 K - 273.15 K = 96.74 °C (ISO 80000-5); 4.2512 MPa = 42.512 bar (NIST SP 811 B.9).
    assert!(
        line("critical temperature").ends_with(" 96.74 °C"),
        "{text}"
    );
    assert!(
        line("critical pressure").ends_with(" 42.5120 bar (abs)"),
        "{text}"
    );
    assert!(text.contains("models and recorded deviation:"), "{text}");
    let accuracy = format!(
        "  Peng-Robinson (1978 alpha): saturation pressure mean {:.2} %, max {:.2} %",
        number(recorded, "saturation_pressure_mean_percent"),
        number(recorded, "saturation_pressure_max_percent")
    );
    assert!(
        text.lines().any(|line| line.starts_with(&accuracy)),
        "no `{accuracy}` line:\n{text}"
    );
    assert_eq!(line("caution: "), format!("caution: {caution}"));
    assert!(text.contains("Results are advisory"), "{text}");

    // R-717 ammonia is B2L (ASHRAE Standard 34, catalogue entry marked `from memory`): higher
    // toxicity and lower flammability. R-134a is A1: no caution without a pressure.
    let ammonia = run(&["fluid", "R-717", "--output", "json"]).json();
    assert_eq!(ammonia["safety_class"], "B2L");
    let caution = ammonia["caution"].as_str().expect("a caution for B2L");
    assert!(
        caution.contains("higher toxicity and lower flammability"),
        "{caution}"
    );
    let r134a = run(&["fluid", "R-134a", "--output", "json"]).json();
    assert_eq!(r134a["safety_class"], "A1");
    assert!(r134a["caution"].is_null(), "{r134a}");
}

// ---------------------------------------------------------------------------------------------
// A saturation table over pressures, and its progress bar.
// ---------------------------------------------------------------------------------------------

/// 1 bar = 100 000 Pa (NIST SP 811 B.9).
const BAR_PA: f64 = 1.0e5;

/// The rows' pressures of the table from 1 bar to 12 bar in 0.5 bar steps: (12 - 1) / 0.5 + 1 =
/// 23 rows, Pa.
fn one_to_twelve_bar() -> Vec<f64> {
    (0..23)
        .map(|i| (1.0 + 0.5 * f64::from(i)) * BAR_PA)
        .collect()
}

/// The arguments of that table.
const ONE_TO_TWELVE_BAR: [&str; 8] = [
    "table", "R-134a", "--from", "1bar", "--to", "12bar", "--step", "0.5bar",
];

/// The progress bar's message for the R-134a table (its start, as drawn on a terminal).
const TABLE_BAR: &str = "saturation table of R-134a [";

#[test]
fn saturation_table_over_pressures() {
    let mut json_args = ONE_TO_TWELVE_BAR.to_vec();
    json_args.extend(["--output", "json"]);
    let json_run = run(&json_args);
    // Standard error is a pipe here, not a terminal: no progress bar.
    assert!(!json_run.stderr.contains(TABLE_BAR), "{}", json_run.stderr);
    let answer = json_run.json();
    let rows = answer["rows"].as_array().expect("rows");
    let pressures = one_to_twelve_bar();
    assert_eq!(rows.len(), pressures.len(), "{answer}");

    // Each row against the R-134a table: the saturation temperature at the row's pressure, ln P
    // interpolated between the two rows that bracket it, within the model's recorded largest
    // deviation from that same table (the answer's basis names it) plus the table's rounding.
    let recorded = &answer["basis"]["recorded_deviation"];
    assert!(
        recorded["reference"]
            .as_str()
            .is_some_and(|r| r.contains("r134a_saturated_liquid.csv")),
        "{answer}"
    );
    let max_percent = recorded_max_deviation_percent(&answer);
    let table: Vec<(f64, f64)> = reference_rows("r134a_saturated_liquid.csv")
        .iter()
        .map(|row| (row[0], row[1]))
        .collect();
    let mut temperatures = Vec::new();
    for (row, pressure_pa) in rows.iter().zip(&pressures) {
        // The row is at its pressure to the printed precision of the tables (0.0001 bar).
        assert_close(
            number(row, "saturation_pressure_pa"),
            *pressure_pa,
            0.00005 * BAR_PA,
            "row pressure, Pa",
            "--from 1bar --step 0.5bar",
        );
        let p_mpa = pressure_pa / 1.0e6;
        let (lower, upper) = table
            .windows(2)
            .map(|w| (w[0], w[1]))
            .find(|(lower, upper)| lower.1 <= p_mpa && p_mpa <= upper.1)
            .unwrap_or_else(|| panic!("the R-134a table does not reach {p_mpa} MPa"));
        let temperature = number(row, "saturation_temperature_k");
        assert_close(
            temperature,
            temperature_between(lower, upper, p_mpa),
            saturation_temperature_tolerance(max_percent, log_pressure_slope(lower, upper)),
            &format!("R-134a saturation temperature at {p_mpa} MPa, K"),
            &format!("R-134a table rows {lower:?}, {upper:?}"),
        );
        assert!(row["glide_k"].is_null(), "a pure fluid has no glide");
        assert!(number(row, "latent_heat_j_per_kg") > 0.0, "{row}");
        temperatures.push(temperature);
    }
    assert!(
        temperatures.windows(2).all(|w| w[1] > w[0]),
        "saturation temperature rises with pressure: {temperatures:?}"
    );

    // The readable table: the same rows, in °C and bar.
    let text = run(&ONE_TO_TWELVE_BAR);
    let text = text.ok();
    let lines = table_rows(text);
    assert_eq!(lines.len(), pressures.len(), "{text}");
    for ((line, pressure_pa), temperature) in lines.iter().zip(&pressures).zip(&temperatures) {
        assert_eq!(
            line[0],
            format!("{:.2}", temperature - CELSIUS_ZERO_K),
            "{line:?}"
        );
        assert_eq!(line[1], format!("{:.4}", pressure_pa / BAR_PA), "{line:?}");
    }
    assert!(text.contains("recorded deviation:"), "{text}");

    // CSV, from gauge readings: 0 bar(g) to 11 bar(g) over a stated ambient of 1 bar is the same
    // 1 bar to 12 bar (absolute = gauge + ambient), so the same rows; the note names the ambient.
    let csv_run = run(&[
        "table",
        "R-134a",
        "--from",
        "0barg",
        "--to",
        "11barg",
        "--step",
        "0.5bar",
        "--ambient",
        "1bar",
        "--output",
        "csv",
    ]);
    let mut reader = csv::Reader::from_reader(csv_run.ok().as_bytes());
    let headers = reader.headers().expect("CSV header").clone();
    assert_eq!(&headers[0], "saturation temperature (°C)");
    assert_eq!(&headers[1], "saturation pressure (bar (abs))");
    let records: Vec<csv::StringRecord> = reader.records().map(|r| r.expect("CSV row")).collect();
    assert_eq!(records.len(), pressures.len());
    for (record, line) in records.iter().zip(&lines) {
        assert_eq!(&record[0], line[0], "{record:?}");
        assert_eq!(&record[1], line[1], "{record:?}");
    }
    assert!(
        csv_run
            .stderr
            .contains("gauge readings converted with ambient 1.0000 bar (abs)"),
        "{}",
        csv_run.stderr
    );
}

/// Quotes `text` for a POSIX shell: in single quotes, an embedded quote closed, escaped and
/// reopened.
fn shell_quote(text: &str) -> String {
    format!("'{}'", text.replace('\'', r"'\''"))
}

/// Why a command cannot be run on a pseudo-terminal here, if it cannot: the util-linux `script`
/// command is missing (or another `script`), or it cannot open a pseudo-terminal.
fn no_pseudo_terminal() -> Option<&'static str> {
    let version = Command::new("script")
        .arg("--version")
        .stdin(Stdio::null())
        .output();
    if !version.is_ok_and(|out| {
        out.status.success() && String::from_utf8_lossy(&out.stdout).contains("util-linux")
    }) {
        return Some("the util-linux `script` command is not installed");
    }
    let probe = Command::new("script")
        .args(["-qec", "true", "/dev/null"])
        .env("SHELL", "/bin/sh")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn();
    if !probe.is_ok_and(|child| finish(child).status.success()) {
        return Some("`script` cannot open a pseudo-terminal here");
    }
    None
}

/// Runs `binodal --server <test server> ARGS > STDOUT_FILE` under util-linux `script`, so that
/// standard error is a pseudo-terminal (with `TERM` set to `term`) while standard output goes to
/// a file. The run's `stdout` is what the terminal showed; its exit status is binodal's (`-e`).
/// Bounded by [`util::RUN_GUARD`].
fn run_on_terminal(args: &[&str], stdout_file: &Path, term: &str) -> util::Run {
    let mut words = vec![
        shell_quote(env!("CARGO_BIN_EXE_binodal")),
        "--server".to_string(),
        shell_quote(&server_url()),
    ];
    words.extend(args.iter().map(|arg| shell_quote(arg)));
    let line = format!(
        "{} > {}",
        words.join(" "),
        shell_quote(stdout_file.to_str().expect("UTF-8 path"))
    );
    let mut command = Command::new("script");
    command
        .args(["-qec", &line, "/dev/null"])
        .env_remove("BINODAL_SERVER")
        .env_remove("BINODAL_CONFIG")
        .env("XDG_CONFIG_HOME", scratch("empty-config-home"))
        .env("SHELL", "/bin/sh")
        .env("TERM", term)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    finish(command.spawn().expect("start script"))
}

/// The positions `N` of every `] N/TOTAL` a progress bar drew.
fn bar_positions(shown: &str, total: usize) -> Vec<usize> {
    let end = format!("/{total}");
    let pieces: Vec<&str> = shown.split(&end).collect();
    pieces[..pieces.len().saturating_sub(1)]
        .iter()
        .filter_map(|piece| {
            let digits = piece.len() - piece.trim_end_matches(|c: char| c.is_ascii_digit()).len();
            let (before, number) = piece.split_at(piece.len() - digits);
            if before.ends_with("] ") {
                number.parse().ok()
            } else {
                None
            }
        })
        .collect()
}

#[test]
fn long_tables_show_a_progress_bar_on_a_terminal() {
    if let Some(reason) = no_pseudo_terminal() {
        println!("skipped: {reason}, so binodal cannot be run with a terminal on standard error");
        return;
    }
    let dir = scratch("progress");
    let mut long = ONE_TO_TWELVE_BAR.to_vec();
    long.extend(["--output", "csv"]);

    // 23 rows (more than 20) with standard error on a terminal: the bar is drawn there.
    let csv_file = dir.join("long.csv");
    let terminal = run_on_terminal(&long, &csv_file, "xterm");
    let shown = terminal.ok();
    assert!(shown.contains(TABLE_BAR), "no progress bar:\n{shown:?}");
    let positions = bar_positions(shown, 23);
    assert!(!positions.is_empty(), "no `N/23` drawn:\n{shown:?}");
    assert!(
        positions.windows(2).all(|w| w[1] >= w[0]) && positions.iter().all(|n| *n <= 23),
        "positions {positions:?}"
    );
    // The bar is erased when the table is done (ECMA-48 EL, `CSI 2 K`: erase the whole line,
    // from memory), before the remarks that follow on standard error.
    let last_bar = shown.rfind(TABLE_BAR).expect("the bar");
    let advisory = shown
        .rfind("Results are advisory")
        .unwrap_or_else(|| panic!("no advisory on the terminal:\n{shown:?}"));
    assert!(last_bar < advisory, "{shown:?}");
    assert!(
        shown[last_bar..advisory].contains("\u{1b}[2K"),
        "the bar is not cleared:\n{shown:?}"
    );
    // The table itself is complete on standard output and untouched by the bar.
    let csv_text = std::fs::read_to_string(&csv_file).expect("the table was written");
    assert!(!csv_text.contains('\u{1b}'), "{csv_text:?}");
    assert!(!csv_text.contains(TABLE_BAR), "{csv_text:?}");
    let mut reader = csv::Reader::from_reader(csv_text.as_bytes());
    let pressures: Vec<String> = reader
        .records()
        .map(|r| r.expect("CSV row")[1].to_string())
        .collect();
    let expected: Vec<String> = one_to_twelve_bar()
        .iter()
        .map(|p| format!("{:.4}", p / BAR_PA))
        .collect();
    assert_eq!(pressures, expected);

    // A dumb terminal cannot erase a line: no bar, the same table.
    let dumb_file = dir.join("dumb.csv");
    let dumb = run_on_terminal(&long, &dumb_file, "dumb");
    let shown = dumb.ok();
    assert!(!shown.contains(TABLE_BAR), "{shown:?}");
    assert!(shown.contains("Results are advisory"), "{shown:?}");
    let dumb_csv = std::fs::read_to_string(&dumb_file).expect("the table was written");
    assert_eq!(dumb_csv, csv_text);

    // 20 rows or fewer: no bar, even on a terminal. 1 bar to 3 bar in 0.5 bar steps: 5 rows.
    let short_file = dir.join("short.csv");
    let short = run_on_terminal(
        &[
            "table", "R-134a", "--from", "1bar", "--to", "3bar", "--step", "0.5bar", "--output",
            "csv",
        ],
        &short_file,
        "xterm",
    );
    let shown = short.ok();
    assert!(!shown.contains(TABLE_BAR), "{shown:?}");
    let short_csv = std::fs::read_to_string(&short_file).expect("the table was written");
    assert_eq!(short_csv.lines().count(), 1 + 5, "{short_csv}");
}

// ---------------------------------------------------------------------------------------------
// Pressure-enthalpy diagrams as SVG.
// ---------------------------------------------------------------------------------------------

/// Stroke of the saturated-liquid (bubble) line, as the diagram code sets it (plotters' BLUE).
const LIQUID_STROKE: &str = "#0000FF";
/// Stroke of the saturated-vapor (dew) line, as the diagram code sets it (RGB 0, 140, 70).
const VAPOR_STROKE: &str = "#008C46";

/// The texts of the SVG's `<text>` elements, trimmed.
fn svg_texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|element| {
            let start = element.find('>')? + 1;
            let end = element.find("</text>")?;
            Some(element[start..end].trim().to_string())
        })
        .collect()
}

/// The longest `<polyline>` stroked in `color`, as pixel points: a drawn curve (its legend
/// sample is a two-point line).
fn curve(svg: &str, color: &str) -> Vec<(f64, f64)> {
    svg.split("<polyline")
        .skip(1)
        .filter(|element| attribute_text(element, "stroke") == Some(color))
        .filter_map(|element| attribute_text(element, "points"))
        .map(|points| {
            points
                .split_whitespace()
                .map(|pair| {
                    let (x, y) = pair.split_once(',').expect("x,y");
                    (
                        x.parse().expect("x in pixels"),
                        y.parse().expect("y in pixels"),
                    )
                })
                .collect::<Vec<(f64, f64)>>()
        })
        .max_by_key(Vec::len)
        .unwrap_or_default()
}

/// Where a curve crosses the pixel row `y`, by linear interpolation between its points.
fn x_at(curve: &[(f64, f64)], y: f64) -> Option<f64> {
    curve.windows(2).find_map(|w| {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        if y0 == y1 {
            (y0 == y).then_some(x0)
        } else if (y0 - y) * (y1 - y) <= 0.0 {
            Some(x0 + (y - y0) / (y1 - y0) * (x1 - x0))
        } else {
            None
        }
    })
}

/// Asserts that the operating point drawn at `centre` lies on the liquid side of the dome
/// (left of the liquid line) or the vapor side (right of the vapor line) at its pressure.
fn assert_side(centre: (f64, f64), phase: &str, liquid: &[(f64, f64)], vapor: &[(f64, f64)]) {
    let (x, y) = centre;
    match phase {
        "subcooled-liquid" => {
            let edge = x_at(liquid, y).expect("the liquid line reaches the point's pressure");
            assert!(x < edge, "liquid point at x {x}, liquid line at {edge}");
        }
        "superheated-vapor" => {
            let edge = x_at(vapor, y).expect("the vapor line reaches the point's pressure");
            assert!(x > edge, "vapor point at x {x}, vapor line at {edge}");
        }
        other => panic!("unexpected phase {other}"),
    }
}

/// The phase the `state` command gives for an operating point typed as `T,P`.
fn phase_of(fluid: &str, mark: &str) -> serde_json::Value {
    let (temperature, pressure) = mark.split_once(',').expect("T,P");
    run(&[
        "state",
        fluid,
        &format!("--temperature={temperature}"),
        "--pressure",
        pressure,
        "--output",
        "json",
    ])
    .json()
}

// Rows of the R-134a table (see the top of this file) bracketing 0.25 MPa and 1.1 MPa.
const R134A_268_21: (f64, f64) = (268.21, 0.24392);
const R134A_268_94: (f64, f64) = (268.94, 0.25069);
const R134A_315_99: (f64, f64) = (315.99, 1.0963);
const R134A_316_22: (f64, f64) = (316.22, 1.1031);

#[test]
fn pressure_enthalpy_diagram_as_svg_draws_the_dome_and_the_marks() {
    // Kestrel Lane office chiller CH-2 on R-134a: a suction point (5 °C at 2.5 bar(a)) and a
    // liquid-line point (30 °C at 11 bar(a)).
    let (suction, liquid_line) = ("5C,2.5bar", "30C,11bar");
    // The R-134a table puts saturation at 0.25 MPa near 268.87 K (-4.28 °C) and at 1.1 MPa near
    // 316.12 K (42.97 °C), so the suction point is superheated vapor and the liquid-line point
    // subcooled liquid, by margins well beyond the model's recorded deviation (turned into
    // temperature as in the checks above); the `state` command agrees.
    let suction_state = phase_of("R-134a", suction);
    let liquid_state = phase_of("R-134a", liquid_line);
    let max_percent = recorded_max_deviation_percent(&suction_state);
    let suction_saturation = temperature_between(R134A_268_21, R134A_268_94, 0.25);
    let liquid_saturation = temperature_between(R134A_315_99, R134A_316_22, 1.1);
    assert!(
        (5.0 + CELSIUS_ZERO_K) - suction_saturation
            > saturation_temperature_tolerance(
                max_percent,
                log_pressure_slope(R134A_268_21, R134A_268_94)
            )
    );
    assert!(
        liquid_saturation - (30.0 + CELSIUS_ZERO_K)
            > saturation_temperature_tolerance(
                max_percent,
                log_pressure_slope(R134A_315_99, R134A_316_22)
            )
    );
    assert_eq!(suction_state["phase"], "superheated-vapor");
    assert_eq!(liquid_state["phase"], "subcooled-liquid");

    let out = scratch("diagram-ph-svg").join("ch2.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let answer = run(&[
        "diagram",
        "R-134a",
        "--kind",
        "ph",
        "--out",
        out_text,
        "--mark",
        suction,
        "--mark",
        liquid_line,
        "--output",
        "json",
    ])
    .json();
    assert_eq!(answer["kind"], "ph");
    assert_eq!(
        answer["marked_points"],
        serde_json::json!([suction, liquid_line])
    );
    assert!(answer["triple_point_temperature_k"].is_null(), "{answer}");
    // No critical point on a P-h diagram: the critical enthalpy is not reported, so the dome is
    // left open at the top (README, Diagrams) and a note says so.
    assert!(
        answer["notes"].to_string().contains("left open"),
        "{answer}"
    );

    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    assert!(svg.starts_with("<svg"), "not an SVG");
    let texts = svg_texts(&svg);
    for label in [
        "R-134a: pressure-enthalpy diagram",
        "saturated liquid",
        "saturated vapor",
        "operating point",
        "specific enthalpy, kJ/kg",
        "pressure, bar (abs) (log scale)",
    ] {
        assert!(
            texts.iter().any(|t| t == label),
            "no text {label:?} in {texts:?}"
        );
    }
    assert!(
        !texts.iter().any(|t| t.contains("critical point")),
        "{texts:?}"
    );

    // The two lines of the dome, one point per sampled temperature. A pure fluid boils at one
    // pressure, so the liquid and vapor points of a sample share their height, and the vapor
    // lies to the right by the latent heat (h_vapor > h_liquid).
    let liquid = curve(&svg, LIQUID_STROKE);
    let vapor = curve(&svg, VAPOR_STROKE);
    let points = number(&answer, "curve_points") as usize;
    assert!(points >= 40, "{answer}");
    assert_eq!(liquid.len(), points, "liquid line");
    assert_eq!(vapor.len(), points, "vapor line");
    for (l, v) in liquid.iter().zip(&vapor) {
        assert_eq!(
            l.1, v.1,
            "liquid {l:?} and vapor {v:?} at different pressures"
        );
        assert!(v.0 > l.0, "vapor {v:?} not right of liquid {l:?}");
    }
    // Pressure rises along the line (up the picture) as the temperature does.
    assert!(liquid.windows(2).all(|w| w[1].1 <= w[0].1), "{liquid:?}");
    assert!(liquid[points - 1].1 < liquid[0].1);

    // Both operating points are drawn, each on its own side of the dome.
    let centres = marked_points(&svg, &[suction, liquid_line]);
    assert_side(centres[0], "superheated-vapor", &liquid, &vapor);
    assert_side(centres[1], "subcooled-liquid", &liquid, &vapor);
}

#[test]
fn blend_diagrams_draw_bubble_and_dew_lines() {
    // Harrowgate Cold Store chiller loop on R-407C (zeotropic, R-32/R-125/R-134a 23/25/52 by
    // mass, ASHRAE Standard 34 as in the catalogue): a suction point and a liquid-line point at
    // 4 bar(g). Which side of the dome each lies on is what the `state` command says.
    let (suction, liquid_line) = ("10C,4barg", "-10C,4barg");
    let out = scratch("diagram-blend").join("r407c-ph.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let answer = run(&[
        "diagram",
        "R-407C",
        "--kind",
        "ph",
        "--out",
        out_text,
        "--mark",
        suction,
        &format!("--mark={liquid_line}"),
        "--output",
        "json",
    ])
    .json();
    assert_eq!(answer["fluid"], "r407c");
    assert_eq!(
        answer["marked_points"],
        serde_json::json!([suction, liquid_line])
    );
    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    let texts = svg_texts(&svg);
    for label in [
        "saturated liquid (bubble)",
        "saturated vapor (dew)",
        "operating point",
    ] {
        assert!(
            texts.iter().any(|t| t == label),
            "no text {label:?} in {texts:?}"
        );
    }
    // At one temperature a zeotropic blend starts to boil (bubble point) at a higher pressure
    // than it finishes (dew point) (common practice): each bubble point is drawn above its dew
    // point (smaller y), and to the left (lower enthalpy).
    let bubble = curve(&svg, LIQUID_STROKE);
    let dew = curve(&svg, VAPOR_STROKE);
    let points = number(&answer, "curve_points") as usize;
    assert!(points >= 40, "{answer}");
    assert_eq!((bubble.len(), dew.len()), (points, points));
    for (b, d) in bubble.iter().zip(&dew) {
        assert!(b.1 < d.1, "bubble {b:?} not above dew {d:?}");
        assert!(b.0 < d.0, "bubble {b:?} not left of dew {d:?}");
    }
    let centres = marked_points(&svg, &[suction, liquid_line]);
    for (centre, mark) in centres.into_iter().zip([suction, liquid_line]) {
        let state = phase_of("R-407C", mark);
        assert_side(
            centre,
            state["phase"].as_str().expect("phase"),
            &bubble,
            &dew,
        );
    }

    // The P-T diagram of the blend: bubble and dew curves, bubble above dew; no triple point
    // (the catalogue records none for a blend) and no solid boundaries (pure fluids only).
    let out = scratch("diagram-blend").join("r407c-pt.svg");
    let out_text = out.to_str().expect("UTF-8 path");
    let answer = run(&[
        "diagram", "R-407C", "--kind", "pt", "--out", out_text, "--output", "json",
    ])
    .json();
    assert_eq!(answer["solid_boundaries_drawn"], false, "{answer}");
    assert!(answer["triple_point_temperature_k"].is_null(), "{answer}");
    assert!(
        answer["notes"].to_string().contains("pure fluids only"),
        "{answer}"
    );
    let svg = std::fs::read_to_string(&out).expect("the SVG was written");
    let texts = svg_texts(&svg);
    for label in ["bubble curve", "dew curve"] {
        assert!(
            texts.iter().any(|t| t == label),
            "no text {label:?} in {texts:?}"
        );
    }
    assert!(
        !texts
            .iter()
            .any(|t| t == "saturation curve" || t == "triple point"),
        "{texts:?}"
    );
    let bubble = curve(&svg, LIQUID_STROKE);
    let dew = curve(&svg, VAPOR_STROKE);
    assert_eq!(bubble.len(), number(&answer, "curve_points") as usize);
    assert_eq!(dew.len(), bubble.len());
    for (b, d) in bubble.iter().zip(&dew) {
        assert!(b.1 < d.1, "bubble {b:?} not above dew {d:?}");
    }
}
