//! `binodal diagram NAME --kind pt|ph --out FILE [--mark T,P ...]`: a pressure-temperature or a
//! pressure-enthalpy diagram, drawn with plotters to SVG or PNG.
//!
//! The saturation curve is sampled with GetSaturation from the triple point (or, when the
//! catalogue has none, from a reduced temperature of 0.5) towards the critical point; points that
//! the server refuses as out of its range (the near-critical band) are left out and counted. The
//! P-T diagram marks the triple point and the critical point; the P-h diagram draws the two-phase
//! dome from the saturated liquid and vapor enthalpies. Pressure axes are logarithmic.
//!
//! The P-T diagram also draws the estimated solid boundaries that DescribeFluid reports: the
//! melting line and the sublimation curve, which the server estimates from the triple point and
//! the heat of fusion with Clausius-Clapeyron relations under its default equation of state.
//! They are dashed, labelled as estimates in the legend and the footnote, and clipped to the
//! plotted range; the pressure axis reaches down at most [`SUBLIMATION_DECADES`] decades below
//! the saturation curve's lowest pressure to show the sublimation curve. Blends, and fluids whose
//! catalogue entry lacks the triple point or the heat of fusion, have none: a note says so and
//! `solid_boundaries_drawn` is false.
//!
//! Text is rendered with an embedded DejaVu Sans font (the `dejavu` crate) through plotters'
//! pure-Rust `ab_glyph` support, so no system font library is needed for PNG output.

use std::path::Path;
use std::sync::Once;

use anyhow::{Context as _, anyhow, bail};
use binodal_proto::v1::{
    EquationOfState, FluidDescription, GetSaturationRequest, GetStateRequest, GetStateResponse,
    Phase, PressureTemperaturePoint, get_saturation_request,
};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::FontStyle;

use crate::cli::DiagramKind;
use crate::client::{Service, ServiceError};
use crate::commands::{connect, is_blend, model, progress_bar, selector};
use crate::config::Settings;
use crate::reading::Mark;
use crate::report::{Body, Document, Field, Value, caution, model_label};
use crate::units::{Quantity, UnitSystem, convert, fmt_temperature, unit_label};

/// Number of temperatures sampled along the saturation curve.
const CURVE_SAMPLES: usize = 80;
/// Reduced temperature where the curve starts when the catalogue has no triple point.
/// `common practice`: cubic models are usually fitted from about this reduced temperature up.
const START_REDUCED_TEMPERATURE: f64 = 0.5;
/// Picture size in pixels.
const SIZE: (u32, u32) = (1000, 700);
/// How many decades below the lowest pressure of the saturation curve (and of the triple point
/// and marked points) the pressure axis may reach to show the estimated sublimation curve. A
/// drawing choice: enough to show the curve's shape without squeezing the liquid-vapor part.
const SUBLIMATION_DECADES: i32 = 3;

/// Output file format, from the extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Format {
    Svg,
    Png,
}

fn format_of(out: &Path) -> anyhow::Result<Format> {
    let extension = out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    match extension.as_deref() {
        Some("svg") => Ok(Format::Svg),
        Some("png") => Ok(Format::Png),
        _ => bail!(
            "--out {}: the file name must end in .svg or .png (the extension sets the format)",
            out.display()
        ),
    }
}

/// One sampled saturation point: the liquid (bubble) side and the vapor (dew) side.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Sample {
    liquid_t: f64,
    liquid_p: f64,
    liquid_h: Option<f64>,
    vapor_t: f64,
    vapor_p: f64,
    vapor_h: Option<f64>,
}

/// A marked operating point, resolved to SI.
#[derive(Debug, Clone)]
struct Point {
    label: String,
    t: f64,
    p: f64,
    h: Option<f64>,
}

/// Everything a picture shows, in SI.
#[derive(Debug, Clone)]
struct Picture {
    kind: DiagramKind,
    title: String,
    samples: Vec<Sample>,
    blend: bool,
    critical: (f64, f64),
    triple: Option<(f64, f64)>,
    /// Estimated melting line as (T, P), by rising pressure; empty when not drawn.
    melting: Vec<(f64, f64)>,
    /// Estimated sublimation curve as (T, P), by rising temperature; empty when not drawn.
    sublimation: Vec<(f64, f64)>,
    points: Vec<Point>,
    footnote: String,
}

/// Temperatures for the curve: denser towards the critical point, where the curve bends most.
fn curve_temperatures(start: f64, critical: f64, count: usize) -> Vec<f64> {
    (0..count)
        .map(|i| {
            let s = i as f64 / count as f64;
            start + (critical - start) * (1.0 - (1.0 - s) * (1.0 - s))
        })
        .collect()
}

/// Draws the diagram and reports what was drawn.
pub async fn run(
    settings: &Settings,
    name: &str,
    kind: DiagramKind,
    out: &Path,
    marks: &[Mark],
) -> anyhow::Result<Document> {
    let format = format_of(out)?;
    let units = settings.units;
    let mut readings = Vec::with_capacity(marks.len());
    for mark in marks {
        let pressure = mark
            .pressure
            .to_absolute(settings.ambient.ambient)
            .with_context(|| format!("--mark {mark}"))?;
        readings.push((mark, pressure));
    }

    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    let critical = (fluid.critical_temperature_k, fluid.critical_pressure_pa);
    if !(critical.0 > 0.0 && critical.1 > 0.0) {
        bail!(
            "the server gave no critical point for {}; the diagram cannot be drawn",
            fluid.display_name
        );
    }
    let mut notes = Vec::new();
    let start = match fluid.triple_point_temperature_k {
        Some(t) if t > 0.0 && t < critical.0 => t,
        _ => {
            notes.push(format!(
                "the catalogue records no triple point for {}: the curve starts at {} \
                 (reduced temperature {START_REDUCED_TEMPERATURE})",
                fluid.display_name,
                fmt_temperature(START_REDUCED_TEMPERATURE * critical.0, units)
            ));
            START_REDUCED_TEMPERATURE * critical.0
        }
    };

    let (samples, skipped, used_model) =
        sample_curve(&service, settings, &fluid, start, critical.0).await?;
    if skipped > 0 {
        notes.push(format!(
            "{skipped} of {CURVE_SAMPLES} curve temperatures were outside the range the server \
             answers (near the critical point the cubic models are not used) and are not drawn"
        ));
    }
    let blend = samples
        .iter()
        .any(|s| (s.liquid_p - s.vapor_p).abs() > 1e-9 * s.liquid_p.max(1.0));

    let triple = match (
        fluid.triple_point_temperature_k,
        fluid.triple_point_pressure_pa,
    ) {
        _ if kind == DiagramKind::Ph => None,
        (Some(t), Some(p)) => Some((t, p)),
        (Some(t), None) if (samples.first().map(|s| s.liquid_t) == Some(t)) => {
            notes.push(
                "the catalogue records no triple-point pressure: the triple point is drawn at \
                 the model's saturation pressure"
                    .to_string(),
            );
            samples.first().map(|s| (t, s.liquid_p))
        }
        _ => None,
    };

    if kind == DiagramKind::Ph
        && samples
            .iter()
            .any(|s| s.liquid_h.is_none() || s.vapor_h.is_none())
    {
        bail!(
            "the server reports no enthalpy for {} (the catalogue has no ideal-gas heat capacity \
             for it), so the P-h diagram cannot be drawn; --kind pt works",
            fluid.display_name
        );
    }

    let mut points = Vec::with_capacity(readings.len());
    for (mark, pressure) in &readings {
        // Every mark goes to the server, which refuses one outside the model's range.
        let state = state_at(
            &service,
            settings,
            &fluid,
            mark.temperature.kelvin(),
            pressure.value_pa,
        )
        .await
        .with_context(|| format!("--mark {mark}"))?;
        let h = match kind {
            DiagramKind::Pt => None,
            DiagramKind::Ph => {
                let h = enthalpy_of(state, &fluid).with_context(|| format!("--mark {mark}"))?;
                if h.is_none() {
                    notes.push(format!(
                        "--mark {mark} lies on the saturation line, where temperature and \
                         pressure do not fix the enthalpy: it is not drawn on the P-h diagram"
                    ));
                    continue;
                }
                h
            }
        };
        points.push(Point {
            label: mark.text.clone(),
            t: mark.temperature.kelvin(),
            p: pressure.value_pa,
            h,
        });
    }

    let (melting, sublimation) = match kind {
        DiagramKind::Pt => (
            curve_points(&fluid.estimated_melting_curve),
            curve_points(&fluid.estimated_sublimation_curve),
        ),
        DiagramKind::Ph => (Vec::new(), Vec::new()),
    };
    if kind == DiagramKind::Pt {
        if melting.is_empty() && sublimation.is_empty() {
            notes.push(format!(
                "solid boundaries (melting line, sublimation curve) are not drawn: {}",
                if is_blend(&fluid) {
                    "the service estimates them for pure fluids only".to_string()
                } else {
                    format!(
                        "the catalogue lacks the triple point or the heat of fusion of {} that \
                         they are estimated from",
                        fluid.display_name
                    )
                }
            ));
        }
    } else {
        let top = samples.last().map_or(critical.0, |s| s.liquid_t);
        notes.push(format!(
            "the dome is drawn up to {}, the highest sampled temperature below the critical \
             point; the critical enthalpy is not reported, so the top of the dome is left open",
            fmt_temperature(top, units)
        ));
    }

    let picture = Picture {
        kind,
        title: format!(
            "{}: {}",
            fluid.display_name,
            match kind {
                DiagramKind::Pt => "pressure-temperature diagram",
                DiagramKind::Ph => "pressure-enthalpy diagram",
            }
        ),
        samples,
        blend,
        critical,
        triple,
        melting,
        sublimation,
        points,
        footnote: format!(
            "Cubic equation of state ({}). Advisory only: defer to local codes and licensed \
             practice.",
            model_label(used_model),
        ),
    };
    let solid_drawn = draw(&picture, format, out, units)?;
    if solid_drawn {
        notes.push(
            "the dashed melting line and sublimation curve are estimates, not measured data: \
             the server draws them from the triple point and the heat of fusion with \
             Clausius-Clapeyron relations under its default equation of state"
                .to_string(),
        );
    } else if !(picture.melting.is_empty() && picture.sublimation.is_empty()) {
        notes.push(
            "the estimated solid boundaries lie outside the plotted range and are not drawn"
                .to_string(),
        );
    }

    let highest_mark = picture
        .points
        .iter()
        .map(|p| p.p)
        .fold(None, |acc: Option<f64>, p| {
            Some(acc.map_or(p, |a| a.max(p)))
        });
    let mut document = Document::new(
        Some(fluid.fluid_id.clone()),
        Body::Record(vec![
            Field::text("file", "file", out.display().to_string()),
            Field::text(
                "kind",
                "diagram",
                match kind {
                    DiagramKind::Pt => "pt",
                    DiagramKind::Ph => "ph",
                },
            ),
            Field {
                key: "curve_points",
                label: "curve points drawn",
                value: Value::Count(picture.samples.len() as u64),
            },
            Field {
                key: "marked_points",
                label: "operating points marked",
                value: Value::List(picture.points.iter().map(|p| p.label.clone()).collect()),
            },
            Field::quantity(
                "critical_temperature_k",
                if picture.blend {
                    "pseudo-critical temperature (Kay's rule)"
                } else {
                    "critical temperature"
                },
                Quantity::Temperature,
                critical.0,
            ),
            Field::quantity(
                "critical_pressure_pa",
                if picture.blend {
                    "pseudo-critical pressure (Kay's rule)"
                } else {
                    "critical pressure"
                },
                Quantity::Pressure,
                critical.1,
            ),
            Field::maybe(
                "triple_point_temperature_k",
                "triple-point temperature",
                Quantity::Temperature,
                triple.map(|t| t.0),
            ),
            Field::maybe(
                "triple_point_pressure_pa",
                "triple-point pressure",
                Quantity::Pressure,
                triple.map(|t| t.1),
            ),
            Field::flag(
                "solid_boundaries_drawn",
                "solid boundaries drawn",
                solid_drawn,
            ),
        ]),
    );
    document.notes = notes;
    document.caution = caution(&fluid, highest_mark, units);
    Ok(document)
}

/// The usable points of an estimated solid boundary as (T, P): finite, positive temperature and
/// pressure (the pressure axis is logarithmic).
fn curve_points(curve: &[PressureTemperaturePoint]) -> Vec<(f64, f64)> {
    curve
        .iter()
        .map(|c| (c.temperature_k, c.pressure_pa))
        .filter(|&(t, p)| t.is_finite() && t > 0.0 && p.is_finite() && p > 0.0)
        .collect()
}

/// Samples the saturation curve; returns the points and how many temperatures were refused.
async fn sample_curve(
    service: &Service,
    settings: &Settings,
    fluid: &FluidDescription,
    start: f64,
    critical_t: f64,
) -> anyhow::Result<(Vec<Sample>, usize, EquationOfState)> {
    let temperatures = curve_temperatures(start, critical_t, CURVE_SAMPLES);
    let progress = progress_bar(
        temperatures.len(),
        format!("saturation curve of {}", fluid.display_name),
    );
    let mut samples = Vec::with_capacity(temperatures.len());
    let mut skipped = 0;
    let mut used_model = EquationOfState::Unspecified;
    for t in temperatures {
        let request = GetSaturationRequest {
            fluid: selector(&fluid.fluid_id),
            equation_of_state: model(settings).into(),
            reference_state: 0,
            condition: Some(get_saturation_request::Condition::TemperatureK(t)),
        };
        let answer = service.phase().get_saturation(request).await;
        progress.inc(1);
        let response = match answer {
            Ok(response) => response.into_inner(),
            Err(status) => match service.error(status) {
                ServiceError::Refused { .. } => {
                    skipped += 1;
                    continue;
                }
                other => {
                    progress.finish_and_clear();
                    return Err(anyhow!(other).context(format!(
                        "saturation curve at {}",
                        fmt_temperature(t, UnitSystem::Si)
                    )));
                }
            },
        };
        if let Some(basis) = &response.basis {
            used_model = basis.equation_of_state();
        }
        let (Some(liquid), Some(vapor)) = (&response.liquid, &response.vapor) else {
            skipped += 1;
            continue;
        };
        let (Some(lp), Some(vp)) = (&liquid.properties, &vapor.properties) else {
            skipped += 1;
            continue;
        };
        samples.push(Sample {
            liquid_t: liquid.temperature_k,
            liquid_p: liquid.pressure_pa,
            liquid_h: lp.enthalpy_j_per_kg,
            vapor_t: vapor.temperature_k,
            vapor_p: vapor.pressure_pa,
            vapor_h: vp.enthalpy_j_per_kg,
        });
    }
    progress.finish_and_clear();
    if samples.len() < 2 {
        bail!(
            "the server answered only {} of {CURVE_SAMPLES} points of the saturation curve of {}; \
             nothing to draw",
            samples.len(),
            fluid.display_name
        );
    }
    Ok((samples, skipped, used_model))
}

/// The server's state at (T, P): the check that a marked point lies in the model's range.
async fn state_at(
    service: &Service,
    settings: &Settings,
    fluid: &FluidDescription,
    t: f64,
    p: f64,
) -> anyhow::Result<GetStateResponse> {
    let request = GetStateRequest {
        fluid: selector(&fluid.fluid_id),
        equation_of_state: model(settings).into(),
        reference_state: 0,
        temperature_k: t,
        pressure_pa: p,
    };
    Ok(service
        .phase()
        .get_state(request)
        .await
        .map_err(|status| service.error(status))?
        .into_inner())
}

/// The specific enthalpy of a state, or `None` on the saturation line, where T and P do not fix
/// it.
fn enthalpy_of(
    response: GetStateResponse,
    fluid: &FluidDescription,
) -> anyhow::Result<Option<f64>> {
    if response.phase() == Phase::Saturated {
        return Ok(None);
    }
    match response.properties.and_then(|p| p.enthalpy_j_per_kg) {
        Some(h) => Ok(Some(h)),
        None => bail!(
            "the server reports no enthalpy for {} at this point",
            fluid.display_name
        ),
    }
}

// ---------------------------------------------------------------------------------------------
// Drawing.
// ---------------------------------------------------------------------------------------------

static FONT: Once = Once::new();

/// Registers the embedded font for plotters' text (once per process).
fn register_font() -> anyhow::Result<()> {
    let mut ok = true;
    FONT.call_once(|| {
        ok = plotters::style::register_font(
            "sans-serif",
            FontStyle::Normal,
            dejavu::sans::regular(),
        )
        .is_ok();
    });
    if ok {
        Ok(())
    } else {
        bail!("the embedded font could not be loaded")
    }
}

/// Draws the picture to `out`; returns whether any estimated solid boundary was drawn.
fn draw(picture: &Picture, format: Format, out: &Path, units: UnitSystem) -> anyhow::Result<bool> {
    register_font()?;
    let drawing = |e: String| anyhow!("cannot draw {}: {e}", out.display());
    let solid_drawn = match format {
        Format::Svg => {
            let root = SVGBackend::new(out, SIZE).into_drawing_area();
            let solid_drawn = plot(picture, &root, units).map_err(drawing)?;
            root.present()
                .map_err(|e| drawing(e.to_string()))
                .with_context(|| format!("cannot write {}", out.display()))?;
            solid_drawn
        }
        Format::Png => {
            let root = BitMapBackend::new(out, SIZE).into_drawing_area();
            let solid_drawn = plot(picture, &root, units).map_err(drawing)?;
            root.present()
                .map_err(|e| drawing(e.to_string()))
                .with_context(|| format!("cannot write {}", out.display()))?;
            solid_drawn
        }
    };
    Ok(solid_drawn)
}

/// Converts an SI value to the display unit.
fn shown(quantity: Quantity, si: f64, units: UnitSystem) -> f64 {
    convert(quantity, si, units).0
}

/// A range around `values` with margins of `left` and `right` of the span (the right one leaves
/// room for the labels of marked points).
fn padded(values: impl Iterator<Item = f64>, left: f64, right: f64) -> (f64, f64) {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
        (lo.min(v), hi.max(v))
    });
    let span = (hi - lo).max(hi.abs().max(1.0) * 1e-3);
    (lo - left * span, hi + right * span)
}

/// The part `(t0, t1)` of the segment from `a` to `b` (as fractions of its length) inside the
/// rectangle `x` by `y` (Liang-Barsky clipping); `None` when it misses the rectangle.
fn clip_segment(a: (f64, f64), b: (f64, f64), x: (f64, f64), y: (f64, f64)) -> Option<(f64, f64)> {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let (mut t0, mut t1) = (0.0_f64, 1.0_f64);
    for (p, q) in [
        (-dx, a.0 - x.0),
        (dx, x.1 - a.0),
        (-dy, a.1 - y.0),
        (dy, y.1 - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else if p < 0.0 {
            t0 = t0.max(q / p);
        } else {
            t1 = t1.min(q / p);
        }
        if t0 > t1 {
            return None;
        }
    }
    Some((t0, t1))
}

/// The parts of a polyline (display units, positive y) inside `x` by `y`, each with at least
/// two points. Where the line crosses an edge, the crossing is interpolated linearly in x and in
/// `ln y`, as the pressure axis is logarithmic.
fn clip_log_y(points: &[(f64, f64)], x: (f64, f64), y: (f64, f64)) -> Vec<Vec<(f64, f64)>> {
    let log_y = (y.0.ln(), y.1.ln());
    // The point a fraction `t` along the segment from `a` to `b` (in x and ln y), back in y.
    let at = |a: (f64, f64), b: (f64, f64), t: f64| {
        (a.0 + t * (b.0 - a.0), (a.1 + t * (b.1 - a.1)).exp())
    };
    let finish = |current: &mut Vec<(f64, f64)>, parts: &mut Vec<Vec<(f64, f64)>>| {
        if current.len() >= 2 {
            parts.push(std::mem::take(current));
        } else {
            current.clear();
        }
    };
    let mut parts = Vec::new();
    let mut current = Vec::new();
    for pair in points.windows(2) {
        let (a, b) = ((pair[0].0, pair[0].1.ln()), (pair[1].0, pair[1].1.ln()));
        match clip_segment(a, b, x, log_y) {
            None => finish(&mut current, &mut parts),
            Some((t0, t1)) => {
                // Entering the range (or starting): a new part begins at the crossing.
                if t0 > 0.0 || current.is_empty() {
                    finish(&mut current, &mut parts);
                    current.push(at(a, b, t0));
                }
                current.push(at(a, b, t1));
                // Leaving the range: the part ends at the crossing.
                if t1 < 1.0 {
                    finish(&mut current, &mut parts);
                }
            }
        }
    }
    finish(&mut current, &mut parts);
    parts
}

/// Draws one estimated solid boundary, dashed, with its legend entry; returns whether any part
/// of it lay inside the plotted range.
fn draw_estimate<DB: DrawingBackend, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    parts: Vec<Vec<(f64, f64)>>,
    label: &str,
    style: ShapeStyle,
) -> Result<bool, DrawingAreaErrorKind<DB::ErrorType>>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    let drawn = !parts.is_empty();
    for (i, part) in parts.into_iter().enumerate() {
        let series = chart.draw_series(DashedLineSeries::new(part, 8, 5, style))?;
        if i == 0 {
            series.label(label).legend(move |(x, y)| {
                DashedPathElement::new(vec![(x, y), (x + 20, y)], 5, 3, style)
            });
        }
    }
    Ok(drawn)
}

/// Draws the picture; returns whether any estimated solid boundary was drawn.
fn plot<DB: DrawingBackend>(
    picture: &Picture,
    root: &DrawingArea<DB, Shift>,
    units: UnitSystem,
) -> Result<bool, String> {
    use Quantity as Q;
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    root.fill(&WHITE).map_err(err)?;
    let (footer, body) = (
        root.clone().shrink((0, SIZE.1 - 28), (SIZE.0, 28)),
        root.clone().shrink((0, 0), (SIZE.0, SIZE.1 - 28)),
    );

    let p = |si: f64| shown(Q::Pressure, si, units);
    let mut pressures: Vec<f64> = picture
        .samples
        .iter()
        .flat_map(|s| [s.liquid_p, s.vapor_p])
        .chain(picture.points.iter().map(|m| m.p))
        .collect();
    if picture.kind == DiagramKind::Pt {
        pressures.push(picture.critical.1);
        if let Some(triple) = picture.triple {
            pressures.push(triple.1);
        }
    }
    let p_lo = pressures
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min)
        .max(1e-6);
    // Room below for the estimated sublimation curve, at most SUBLIMATION_DECADES decades.
    let p_lo = match picture.sublimation.iter().map(|s| s.1).reduce(f64::min) {
        Some(lowest) => p_lo
            .min(lowest.max(p_lo * 10f64.powi(-SUBLIMATION_DECADES)))
            .max(1e-6),
        None => p_lo,
    };
    let p_hi = pressures.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let y_range = (p(p_lo) / 1.5)..(p(p_hi) * 1.5);
    let y_bounds = (y_range.start, y_range.end);
    let mut solid_drawn = false;
    let y_desc = format!("pressure, {} (log scale)", unit_label(Q::Pressure, units));

    let curve_style = ShapeStyle::from(&BLUE).stroke_width(2);
    let dew_style = ShapeStyle::from(&RGBColor(0, 140, 70)).stroke_width(2);
    let mark_style = ShapeStyle::from(&RGBColor(230, 120, 0)).filled();
    let melting_style = ShapeStyle::from(&RGBColor(128, 0, 128)).stroke_width(2);
    let sublimation_style = ShapeStyle::from(&RGBColor(0, 128, 128)).stroke_width(2);

    match picture.kind {
        DiagramKind::Pt => {
            let t = |si: f64| shown(Q::Temperature, si, units);
            let displayed = |curve: &[(f64, f64)]| -> Vec<(f64, f64)> {
                curve.iter().map(|&(ts, ps)| (t(ts), p(ps))).collect()
            };
            let melting = displayed(&picture.melting);
            let sublimation = displayed(&picture.sublimation);
            // The part of the sublimation curve inside the pressure range widens the
            // temperature range; the melting line is only clipped.
            let any_t = (f64::NEG_INFINITY, f64::INFINITY);
            let sublimation_shown = clip_log_y(&sublimation, any_t, y_bounds);
            let (x_lo, x_hi) = padded(
                picture
                    .samples
                    .iter()
                    .flat_map(|s| [s.liquid_t, s.vapor_t])
                    .chain([picture.critical.0])
                    .chain(picture.points.iter().map(|m| m.t))
                    .map(t)
                    .chain(sublimation_shown.iter().flatten().map(|point| point.0)),
                0.04,
                0.08,
            );
            let x_bounds = (x_lo, x_hi);
            let x_desc = format!("temperature, {}", unit_label(Q::Temperature, units));
            let mut chart = chart_on(&body, &picture.title, x_lo..x_hi, y_range, x_desc, &y_desc)
                .map_err(err)?;
            let liquid: Vec<(f64, f64)> = picture
                .samples
                .iter()
                .map(|s| (t(s.liquid_t), p(s.liquid_p)))
                .collect();
            let label = if picture.blend {
                "bubble curve"
            } else {
                "saturation curve"
            };
            draw_line(&mut chart, liquid, label, curve_style).map_err(err)?;
            if picture.blend {
                let vapor: Vec<(f64, f64)> = picture
                    .samples
                    .iter()
                    .map(|s| (t(s.vapor_t), p(s.vapor_p)))
                    .collect();
                draw_line(&mut chart, vapor, "dew curve", dew_style).map_err(err)?;
            }
            solid_drawn |= draw_estimate(
                &mut chart,
                clip_log_y(&melting, x_bounds, y_bounds),
                "estimated melting line",
                melting_style,
            )
            .map_err(err)?;
            solid_drawn |= draw_estimate(
                &mut chart,
                clip_log_y(&sublimation, x_bounds, y_bounds),
                "estimated sublimation curve",
                sublimation_style,
            )
            .map_err(err)?;
            let critical = (t(picture.critical.0), p(picture.critical.1));
            chart
                .draw_series(std::iter::once(Circle::new(critical, 6, RED.filled())))
                .map_err(err)?
                .label(if picture.blend {
                    "pseudo-critical point (Kay's rule)"
                } else {
                    "critical point"
                })
                .legend(|(x, y)| Circle::new((x + 10, y), 5, RED.filled()));
            if let Some((tt, pt)) = picture.triple {
                chart
                    .draw_series(std::iter::once(TriangleMarker::new(
                        (t(tt), p(pt)),
                        8,
                        BLACK.filled(),
                    )))
                    .map_err(err)?
                    .label("triple point")
                    .legend(|(x, y)| TriangleMarker::new((x + 10, y), 6, BLACK.filled()));
            }
            let marks: Vec<((f64, f64), String)> = picture
                .points
                .iter()
                .map(|m| ((t(m.t), p(m.p)), m.label.clone()))
                .collect();
            draw_marks(&mut chart, marks, mark_style).map_err(err)?;
            draw_legend(&mut chart, SeriesLabelPosition::UpperLeft).map_err(err)?;
        }
        DiagramKind::Ph => {
            let h = |si: f64| shown(Q::SpecificEnergy, si, units);
            let (x_lo, x_hi) = padded(
                picture
                    .samples
                    .iter()
                    .flat_map(|s| [s.liquid_h, s.vapor_h])
                    .flatten()
                    .chain(picture.points.iter().filter_map(|m| m.h))
                    .map(h),
                0.06,
                0.15,
            );
            let x_desc = format!(
                "specific enthalpy, {}",
                unit_label(Q::SpecificEnergy, units)
            );
            let mut chart = chart_on(&body, &picture.title, x_lo..x_hi, y_range, x_desc, &y_desc)
                .map_err(err)?;
            let liquid: Vec<(f64, f64)> = picture
                .samples
                .iter()
                .filter_map(|s| s.liquid_h.map(|hl| (h(hl), p(s.liquid_p))))
                .collect();
            let vapor: Vec<(f64, f64)> = picture
                .samples
                .iter()
                .filter_map(|s| s.vapor_h.map(|hv| (h(hv), p(s.vapor_p))))
                .collect();
            let (liquid_label, vapor_label) = if picture.blend {
                ("saturated liquid (bubble)", "saturated vapor (dew)")
            } else {
                ("saturated liquid", "saturated vapor")
            };
            draw_line(&mut chart, liquid, liquid_label, curve_style).map_err(err)?;
            draw_line(&mut chart, vapor, vapor_label, dew_style).map_err(err)?;
            let marks: Vec<((f64, f64), String)> = picture
                .points
                .iter()
                .filter_map(|m| m.h.map(|hm| ((h(hm), p(m.p)), m.label.clone())))
                .collect();
            draw_marks(&mut chart, marks, mark_style).map_err(err)?;
            draw_legend(&mut chart, SeriesLabelPosition::LowerMiddle).map_err(err)?;
        }
    }
    let footnote = match picture.kind {
        DiagramKind::Pt if solid_drawn => {
            format!("{} Dashed: estimated solid boundaries.", picture.footnote)
        }
        DiagramKind::Pt => format!("{} Solid boundaries not drawn.", picture.footnote),
        DiagramKind::Ph => picture.footnote.clone(),
    };
    footer
        .draw(&Text::new(
            footnote,
            (16, 6),
            ("sans-serif", 14).into_font().color(&BLACK),
        ))
        .map_err(err)?;
    Ok(solid_drawn)
}

/// A chart with a linear x axis and pressure on a log scale.
type LogPressureChart<'a, DB> =
    ChartContext<'a, DB, Cartesian2d<plotters::coord::types::RangedCoordf64, LogCoord<f64>>>;

/// The diagram's chart: title, axes with their descriptions, pressure on a log scale.
fn chart_on<'a, DB: DrawingBackend>(
    body: &'a DrawingArea<DB, Shift>,
    title: &str,
    x_range: std::ops::Range<f64>,
    y_range: std::ops::Range<f64>,
    x_desc: String,
    y_desc: &str,
) -> Result<LogPressureChart<'a, DB>, DrawingAreaErrorKind<DB::ErrorType>> {
    let mut chart = ChartBuilder::on(body)
        .caption(title, ("sans-serif", 24))
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(80)
        .build_cartesian_2d(x_range, y_range.log_scale())?;
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .draw()?;
    Ok(chart)
}

/// One labelled line of the diagram.
fn draw_line<DB: DrawingBackend, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    points: Vec<(f64, f64)>,
    label: &str,
    style: ShapeStyle,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    chart
        .draw_series(LineSeries::new(points, style))?
        .label(label)
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], style));
    Ok(())
}

/// The legend box at `position`.
fn draw_legend<'a, DB: DrawingBackend + 'a, X, Y>(
    chart: &mut ChartContext<'a, DB, Cartesian2d<X, Y>>,
    position: SeriesLabelPosition,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
}

/// Draws the operating points: a filled circle and the point as typed.
fn draw_marks<DB: DrawingBackend, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    marks: Vec<((f64, f64), String)>,
    style: ShapeStyle,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    if marks.is_empty() {
        return Ok(());
    }
    chart
        .draw_series(marks.into_iter().map(move |(at, label)| {
            EmptyElement::at(at)
                + Circle::new((0, 0), 6, style)
                + Text::new(label, (9, -18), ("sans-serif", 15).into_font())
        }))?
        .label("operating point")
        .legend(move |(x, y)| Circle::new((x + 10, y), 5, style));
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn curve_temperatures_start_at_the_triple_point_and_stay_below_critical() {
        // R-134a triple and critical temperatures of the tabulated saturation data matching the
        // NIST Chemistry WebBook export: 169.86 K and 374.21 K
        // (crates/fluids/data/reference/r134a_saturated_liquid.csv).
        let temperatures = curve_temperatures(169.86, 374.21, CURVE_SAMPLES);
        assert_eq!(temperatures.len(), CURVE_SAMPLES);
        assert!((temperatures[0] - 169.86).abs() < 1e-12);
        assert!(temperatures.windows(2).all(|w| w[1] > w[0]));
        assert!(*temperatures.last().expect("samples") < 374.21);
        // Denser near the critical point: the last step is shorter than the first.
        let first = temperatures[1] - temperatures[0];
        let last = temperatures[CURVE_SAMPLES - 1] - temperatures[CURVE_SAMPLES - 2];
        assert!(last < first / 10.0, "first {first}, last {last}");
    }

    #[test]
    fn clipping_cuts_at_the_edges_in_log_pressure() {
        let close = |a: (f64, f64), b: (f64, f64)| {
            (a.0 - b.0).abs() < 1e-12 && (a.1 - b.1).abs() < 1e-9 * b.1
        };
        // From (0, 1) to (2, 100), cut at x = 1: halfway in x, so halfway in ln y, at y = 10
        // (the geometric mean of 1 and 100).
        let parts = clip_log_y(&[(0.0, 1.0), (2.0, 100.0)], (0.0, 1.0), (1.0, 1000.0));
        assert_eq!(parts.len(), 1, "{parts:?}");
        assert!(close(parts[0][0], (0.0, 1.0)), "{parts:?}");
        assert!(close(parts[0][1], (1.0, 10.0)), "{parts:?}");
        // Out through the top and back in: two parts, each ending or starting at y = 1000,
        // two thirds of the way from 10 to 10 000 in ln y.
        let parts = clip_log_y(
            &[(0.0, 10.0), (3.0, 1.0e4), (6.0, 10.0)],
            (0.0, 6.0),
            (1.0, 1000.0),
        );
        assert_eq!(parts.len(), 2, "{parts:?}");
        assert!(close(parts[0][1], (2.0, 1000.0)), "{parts:?}");
        assert!(close(parts[1][0], (4.0, 1000.0)), "{parts:?}");
        assert!(close(parts[1][1], (6.0, 10.0)), "{parts:?}");
        // Wholly outside: nothing.
        assert!(clip_log_y(&[(0.0, 1.0e5), (1.0, 1.0e6)], (0.0, 1.0), (1.0, 1000.0)).is_empty());
    }

    #[test]
    fn the_extension_sets_the_format() {
        assert_eq!(format_of(Path::new("ch2.svg")).expect("svg"), Format::Svg);
        assert_eq!(format_of(Path::new("CH2.PNG")).expect("png"), Format::Png);
        let message = format_of(Path::new("ch2.jpg"))
            .expect_err("jpg")
            .to_string();
        assert!(message.contains(".svg or .png"), "{message}");
    }
}
