//! DescribeFluid's estimated solid boundaries (sublimation curve and melting line): the same
//! numbers as the engine's own estimate under the server's default model, checked against
//! published points of water and carbon dioxide, and absent where the catalogue lacks the data.

use binodal_eos::{Model, ReferenceState};
use binodal_proto::v1 as pb;

use super::{assert_same, engine, phase_client};
use crate::util::TestServer;

/// The server's default model (`Settings::default`).
const DEFAULT_MODEL: Model = Model::PengRobinson1978;

/// One standard atmosphere, Pa (ISO 2533 / CGPM 1954 definition).
const ATMOSPHERE_PA: f64 = 101_325.0;

/// The description of `name` from a running server.
async fn describe(server: &TestServer, name: &str) -> pb::FluidDescription {
    phase_client(server)
        .await
        .describe_fluid(pb::DescribeFluidRequest {
            fluid: name.to_owned(),
        })
        .await
        .unwrap_or_else(|e| panic!("describe {name}: {e:?}"))
        .into_inner()
        .fluid
        .expect("a description")
}

/// The curve's temperature at pressure `p`, interpolated linearly in `ln p` between the two
/// points that bracket it (the curve must be ordered by rising pressure).
fn temperature_at_pressure(curve: &[pb::PressureTemperaturePoint], p: f64) -> f64 {
    let pair = curve
        .windows(2)
        .find(|w| w[0].pressure_pa <= p && p <= w[1].pressure_pa)
        .unwrap_or_else(|| panic!("no pair of points brackets {p} Pa"));
    let (a, b) = (&pair[0], &pair[1]);
    let share = (p / a.pressure_pa).ln() / (b.pressure_pa / a.pressure_pa).ln();
    a.temperature_k + share * (b.temperature_k - a.temperature_k)
}

/// The curve's pressure at temperature `t`, interpolated linearly in `ln p` between the two
/// points that bracket it (the curve must be ordered by rising temperature).
fn pressure_at_temperature(curve: &[pb::PressureTemperaturePoint], t: f64) -> f64 {
    let pair = curve
        .windows(2)
        .find(|w| w[0].temperature_k <= t && t <= w[1].temperature_k)
        .unwrap_or_else(|| panic!("no pair of points brackets {t} K"));
    let (a, b) = (&pair[0], &pair[1]);
    let share = (t - a.temperature_k) / (b.temperature_k - a.temperature_k);
    (a.pressure_pa.ln() + share * (b.pressure_pa / a.pressure_pa).ln()).exp()
}

/// Both curves of `described` are the engine's own estimate for `name` under the default model,
/// point by point, and span what the API promises: the sublimation curve from 0.6 Ttp to Ttp,
/// the melting line from the triple-point pressure to min(100 Pc, 1 GPa).
fn check_against_engine(name: &str, described: &pb::FluidDescription) {
    let eos = engine(name, DEFAULT_MODEL, ReferenceState::LiquidAtZeroCelsius);
    let solid = eos
        .solid_boundary()
        .expect("the engine has a solid estimate");
    let sublimation = &described.estimated_sublimation_curve;
    let melting = &described.estimated_melting_curve;
    assert!(
        sublimation.len() >= 20,
        "{name}: {} points",
        sublimation.len()
    );
    assert!(melting.len() >= 20, "{name}: {} points", melting.len());
    let tt = solid.triple_temperature_k;
    let first = sublimation.first().expect("points");
    let last = sublimation.last().expect("points");
    assert_same("sublimation curve start, K", first.temperature_k, 0.6 * tt);
    assert_same("sublimation curve end, K", last.temperature_k, tt);
    assert!(
        sublimation
            .windows(2)
            .all(|w| w[1].temperature_k > w[0].temperature_k
                && w[1].pressure_pa > w[0].pressure_pa),
        "{name}: the sublimation pressure rises with temperature"
    );
    for point in sublimation {
        assert_same(
            "sublimation pressure, Pa",
            point.pressure_pa,
            solid.sublimation_pressure_pa(point.temperature_k),
        );
    }
    let top = (100.0 * eos.critical_pressure_pa()).min(1.0e9);
    assert_same(
        "melting line start, Pa",
        melting[0].pressure_pa,
        solid.triple_pressure_pa,
    );
    assert_same(
        "melting line end, Pa",
        melting.last().expect("points").pressure_pa,
        top,
    );
    assert!(
        melting
            .windows(2)
            .all(|w| w[1].pressure_pa > w[0].pressure_pa),
        "{name}: the melting line is ordered by rising pressure"
    );
    for point in melting {
        assert_same(
            "melting temperature, K",
            point.temperature_k,
            solid.solid_temperature_k(point.pressure_pa),
        );
    }
}

#[tokio::test]
async fn water_melting_line_passes_the_ice_point_and_falls_with_pressure() {
    let server = TestServer::start().await;
    let water = describe(&server, "water").await;
    check_against_engine("water", &water);
    let melting = &water.estimated_melting_curve;
    // The ice point: ice and air-saturated water in equilibrium at one standard atmosphere,
    // 273.15 K (ITS-90). 0.05 K covers the estimate's anchor, the catalogue's triple point of
    // 273.16 K (IAPWS-95 via NIST SRD 69), minus the Clapeyron slope of about 0.0074 K per
    // 0.1 MPa. Measured: 273.153 K.
    let ice_point = temperature_at_pressure(melting, ATMOSPHERE_PA);
    assert!(
        (ice_point - 273.15).abs() <= 0.05,
        "estimated melting temperature of water at 101325 Pa: {ice_point} K"
    );
    // Ice melts under pressure: ice is less dense than liquid water, so by Clapeyron's equation
    // the melting temperature falls as pressure rises (common practice).
    assert!(
        melting
            .windows(2)
            .all(|w| w[1].temperature_k < w[0].temperature_k),
        "water's melting temperature falls with pressure: {melting:?}"
    );
    server.stop().await;
}

#[tokio::test]
async fn carbon_dioxide_sublimes_near_one_atmosphere_at_its_sublimation_point() {
    let server = TestServer::start().await;
    let co2 = describe(&server, "R-744").await;
    check_against_engine("carbondioxide", &co2);
    // Normal sublimation point of carbon dioxide: -78.5 °C = 194.65 K (CRC Handbook of Chemistry
    // and Physics, from memory). The estimate holds the heat of sublimation at its triple-point
    // value (heat of fusion plus the model's heat of vaporization) across the 22 K below the
    // triple point; ln(Ptp / 1 atm) is about 1.63 there, so 15 % in pressure allows the
    // effective heat of sublimation to be off by about 8.5 % (ln 1.15 / 1.63): the size of
    // error expected from taking it constant over such a span (common practice).
    // Measured under Peng-Robinson 1978 (the default): about 111 kPa, +10 %.
    let t_sublimation = 273.15 - 78.5;
    let p = pressure_at_temperature(&co2.estimated_sublimation_curve, t_sublimation);
    let deviation = (p - ATMOSPHERE_PA).abs() / ATMOSPHERE_PA;
    assert!(
        deviation <= 0.15,
        "estimated sublimation pressure of CO2 at {t_sublimation} K: {p} Pa ({:.1} % off)",
        100.0 * deviation
    );
    // Carbon dioxide expands on melting (catalogue default): its melting temperature rises
    // with pressure (common practice).
    assert!(
        co2.estimated_melting_curve
            .windows(2)
            .all(|w| w[1].temperature_k > w[0].temperature_k),
        "CO2's melting temperature rises with pressure"
    );
    server.stop().await;
}

#[tokio::test]
async fn no_solid_boundaries_without_the_data_or_for_blends() {
    let server = TestServer::start().await;
    // R-134a: the catalogue records no heat of fusion for it.
    let r134a = describe(&server, "R-134a").await;
    let record = binodal_fluids::Catalogue::builtin()
        .get("r134a")
        .expect("R-134a in the catalogue");
    assert_eq!(record.constants.heat_of_fusion_j_per_mol, None);
    assert!(r134a.estimated_sublimation_curve.is_empty());
    assert!(r134a.estimated_melting_curve.is_empty());
    // A blend: the estimate is for pure fluids only.
    let blend = describe(&server, "R-410A").await;
    assert_eq!(blend.kind, pb::FluidKind::Blend as i32);
    assert!(blend.estimated_sublimation_curve.is_empty());
    assert!(blend.estimated_melting_curve.is_empty());
    server.stop().await;
}
