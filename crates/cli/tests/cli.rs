//! End-to-end tests of the `binodal` binary against the real server, started in-process on
//! `127.0.0.1:0` (see `util`).
//!
//! Check values for R-134a come from the NIST Chemistry WebBook (SRD 69) saturation table kept in
//! `crates/fluids/data/reference/r134a_saturated_liquid.csv`; each row used is quoted beside the
//! check as (T/K, P/MPa). Tolerances are the model's recorded largest saturation-pressure
//! deviation from that same table, as the server reports it in the answer's `basis`, plus the
//! table's own rounding.

mod util;

use std::io::Read as _;

use util::{
    TABLE_TEMPERATURE_ROUNDING_K, assert_close, binodal, finish, log_pressure_slope, number,
    pressure_between, recorded_max_deviation_percent, run, run_bare,
    saturation_temperature_tolerance, scratch, server_url, temperature_between,
};

/// 0 °C in kelvin (ISO 80000-5).
const CELSIUS_ZERO_K: f64 = 273.15;

// NIST Chemistry WebBook SRD 69, R-134a saturation table rows (T/K, P/MPa), from
// crates/fluids/data/reference/r134a_saturated_liquid.csv.
const NIST_298_05: (f64, f64) = (298.05, 0.66334);
const NIST_298_39: (f64, f64) = (298.39, 0.67011);
const NIST_273_01: (f64, f64) = (273.01, 0.29128);
const NIST_273_64: (f64, f64) = (273.64, 0.29804);
const NIST_274_26: (f64, f64) = (274.26, 0.30481);
const NIST_319_39: (f64, f64) = (319.39, 1.1978);
const NIST_319_61: (f64, f64) = (319.61, 1.2045);
const NIST_328_26: (f64, f64) = (328.26, 1.4954);
const NIST_328_44: (f64, f64) = (328.44, 1.5022);
const NIST_328_63: (f64, f64) = (328.63, 1.5089);

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
    // NIST SRD 69 rows (298.05 K, 0.66334 MPa) and (298.39 K, 0.67011 MPa), ln P interpolated.
    let nist_pa = pressure_between(NIST_298_05, NIST_298_39, 298.15) * 1.0e6;
    let slope = log_pressure_slope(NIST_298_05, NIST_298_39);
    let max_percent = recorded_max_deviation_percent(&answer);
    // The table's temperatures are rounded to 0.01 K: that is worth slope * 0.005 K in ln P.
    let tolerance_pa = nist_pa * (max_percent / 100.0 + slope * TABLE_TEMPERATURE_ROUNDING_K);
    let model_pa = number(&answer, "saturation_pressure_pa");
    assert_close(
        model_pa,
        nist_pa,
        tolerance_pa,
        "R-134a saturation pressure at 25 °C, Pa",
        "NIST SRD 69 table; recorded max deviation of the model",
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
fn superheat_against_the_nist_saturation_temperature() {
    // Kestrel Lane office chiller CH-2 suction: 2.9804 bar(a) and a line at 8 °C.
    // NIST SRD 69 row (273.64 K, 0.29804 MPa): saturation temperature 273.64 K at this pressure,
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
    let slope = log_pressure_slope(NIST_273_01, NIST_274_26);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "saturation_temperature_k"),
        NIST_273_64.0,
        tolerance,
        "saturation temperature at 0.29804 MPa, K",
        "NIST SRD 69 row (273.64 K, 0.29804 MPa)",
    );
    assert_close(
        number(&answer, "superheat_k"),
        line_k - NIST_273_64.0,
        tolerance,
        "superheat, K",
        "line temperature minus NIST SRD 69 saturation temperature",
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
fn subcooling_from_a_gauge_reading_against_the_nist_saturation_temperature() {
    // CH-2 liquid line: 1400.875 kPa(g) with a stated ambient of 101.325 kPa is 1.5022 MPa(a);
    // NIST SRD 69 row (328.44 K, 1.5022 MPa). Line at 50 °C = 323.15 K: subcooling 5.29 K.
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
        NIST_328_44.1 * 1.0e6,
        1e-6,
        "absolute line pressure, Pa",
        "gauge + stated ambient",
    );
    let slope = log_pressure_slope(NIST_328_26, NIST_328_63);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "subcooling_k"),
        NIST_328_44.0 - line_k,
        tolerance,
        "subcooling, K",
        "NIST SRD 69 row (328.44 K, 1.5022 MPa) minus the line temperature",
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
    // R-134a at 25 °C and 12 bar(a): above the saturation pressure at 25 °C (0.665 MPa, NIST
    // SRD 69), so a subcooled liquid. Saturation temperature at 1.2 MPa from NIST rows
    // (319.39 K, 1.1978 MPa) and (319.61 K, 1.2045 MPa), ln P interpolated.
    let answer = run(&[
        "state",
        "R-134a",
        "--temperature",
        "25C",
        "--pressure",
        "12bar",
        "--output",
        "json",
    ])
    .json();
    assert_eq!(answer["phase"], "subcooled-liquid");
    let nist_t = temperature_between(NIST_319_39, NIST_319_61, 1.2);
    let slope = log_pressure_slope(NIST_319_39, NIST_319_61);
    let tolerance =
        saturation_temperature_tolerance(recorded_max_deviation_percent(&answer), slope);
    assert_close(
        number(&answer, "saturation_temperature_k"),
        nist_t,
        tolerance,
        "saturation temperature at 1.2 MPa, K",
        "NIST SRD 69 rows (319.39 K, 1.1978 MPa), (319.61 K, 1.2045 MPa)",
    );
    assert_close(
        number(&answer, "subcooling_k"),
        nist_t - 298.15,
        tolerance,
        "subcooling at 25 °C and 1.2 MPa, K",
        "NIST SRD 69 saturation temperature minus 298.15 K",
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

    let text = run(&[
        "state",
        "R-134a",
        "--temperature",
        "25C",
        "--pressure",
        "12bar",
    ]);
    let text = text.ok();
    assert!(text.contains("phase"), "{text}");
    assert!(text.contains("subcooled-liquid"), "{text}");
    let density = format!("{:.3} kg/m3", number(&answer, "density_kg_per_m3"));
    assert!(text.contains(&density), "table lacks {density}:\n{text}");

    let csv_run = run(&[
        "state",
        "R-134a",
        "--temperature",
        "25C",
        "--pressure",
        "12bar",
        "--output",
        "csv",
        "--units",
        "si",
    ]);
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
    // NIST SRD 69 row (273.01 K, 0.29128 MPa) and (273.64 K, 0.29804 MPa) bracket 0 °C.
    let nist_pa = pressure_between(NIST_273_01, NIST_273_64, 273.15) * 1.0e6;
    let slope = log_pressure_slope(NIST_273_01, NIST_273_64);
    let max_percent = recorded_max_deviation_percent(&answer);
    assert_close(
        pressures[2],
        nist_pa,
        nist_pa * (max_percent / 100.0 + slope * TABLE_TEMPERATURE_ROUNDING_K),
        "R-134a saturation pressure at 0 °C, Pa",
        "NIST SRD 69 table; recorded max deviation of the model",
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
    // R-134a's critical temperature is 374.21 K = 101.06 °C (NIST SRD 69, last table row).
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
    // Each marked point: its label, and a circle where the label is anchored (label drawn 9 px
    // right and 18 px above the point's centre).
    let circles: Vec<(f64, f64)> = svg
        .split("<circle")
        .skip(1)
        .filter_map(|e| Some((attribute(e, "cx")?, attribute(e, "cy")?)))
        .collect();
    for mark in marks {
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
        assert!(
            circles
                .iter()
                .any(|(cx, cy)| *cx == x - 9.0 && *cy == y + 18.0),
            "no circle under the label {mark} at ({x}, {y}); circles {circles:?}"
        );
    }
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
    let mut stderr = String::new();
    let mut pipe = child.stderr.take().expect("stderr");
    let reader = std::thread::spawn(move || {
        pipe.read_to_string(&mut stderr).ok();
        stderr
    });
    let run = finish(child);
    let stderr = reader.join().expect("stderr reader");
    assert!(
        run.status.success(),
        "exit {:?}, stderr {stderr}",
        run.status
    );
    assert!(!stderr.contains("error"), "{stderr}");
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
