//! `binodal table NAME --from A --to B --step S`: a saturation table over temperatures or
//! pressures.

use anyhow::{Context as _, bail};
use binodal_proto::v1::get_saturation_request;

use crate::commands::{
    check_below_critical_pressure, check_below_critical_temperature, connect, get_saturation,
    highest_pressure, progress_bar, saturation_fields,
};
use crate::config::Settings;
use crate::reading::{Condition, PressureStep, Reading, parse_temperature_step};
use crate::report::{Basis, Body, Document, caution};
use crate::units::{fmt_pressure, fmt_temperature};

/// Most rows in one table.
pub const MAX_ROWS: usize = 2000;

/// The values of the rows: `from`, `from ± step`, ... up to and including `to` (when it falls on
/// a step). Errors name the option and the valid range.
pub fn row_values(from: f64, to: f64, step: f64) -> anyhow::Result<Vec<f64>> {
    if !(step > 0.0 && step.is_finite()) {
        bail!("--step must be greater than zero");
    }
    let span = (to - from).abs();
    // A relative allowance of 1e-9 steps keeps `--to` when it is a whole number of steps away
    // despite rounding in the unit conversions.
    let intervals = (span / step + 1e-9).floor();
    let rows = intervals + 1.0;
    if rows > MAX_ROWS as f64 {
        // A tiny step gives a row count beyond any integer type: show it in powers of ten.
        let rows = if rows < 1e12 {
            format!("{rows:.0}")
        } else if rows.is_finite() {
            format!("{rows:.1e}")
        } else {
            "more than 1e308".to_string()
        };
        bail!(
            "--from, --to and --step give {rows} rows; a table has at most {MAX_ROWS} rows: use a \
             larger --step or a narrower range"
        );
    }
    let direction = if to >= from { 1.0 } else { -1.0 };
    Ok((0..=intervals as usize)
        .map(|i| from + direction * step * i as f64)
        .collect())
}

/// Builds the table.
pub async fn run(
    settings: &Settings,
    name: &str,
    from: Reading,
    to: Reading,
    step: &str,
) -> anyhow::Result<Document> {
    let units = settings.units;
    let ambient = settings.ambient.ambient;
    let from = Condition::from_reading(from, ambient).context("--from")?;
    let to = Condition::from_reading(to, ambient).context("--to")?;
    let (values, by_temperature) = match (from, to) {
        (Condition::Temperature(a), Condition::Temperature(b)) => {
            let step = parse_temperature_step(step)
                .context("--step (a temperature difference, as --from is a temperature)")?;
            (row_values(a.kelvin(), b.kelvin(), step.kelvin())?, true)
        }
        (Condition::Pressure(a), Condition::Pressure(b)) => {
            let step = PressureStep::parse(step)
                .context("--step (a pressure difference, as --from is a pressure)")?;
            (row_values(a.value_pa, b.value_pa, step.pascal())?, false)
        }
        _ => bail!(
            "--from and --to must both be temperatures (e.g. -40C and 40C) or both pressures \
             (e.g. 1bar and 12bar)"
        ),
    };

    let service = connect(settings).await?;
    let fluid = service.describe(name).await?;
    for (option, value) in [("--from", values[0]), ("--to", values[values.len() - 1])] {
        if by_temperature {
            check_below_critical_temperature(&fluid, value, option, units)?;
        } else {
            check_below_critical_pressure(&fluid, value, option, units)?;
        }
    }

    let progress = progress_bar(
        values.len(),
        format!("saturation table of {}", fluid.display_name),
    );

    let mut rows = Vec::with_capacity(values.len());
    let mut basis = None;
    let mut highest = 0.0_f64;
    for value in &values {
        let (condition, shown) = if by_temperature {
            (
                get_saturation_request::Condition::TemperatureK(*value),
                fmt_temperature(*value, units),
            )
        } else {
            (
                get_saturation_request::Condition::PressurePa(*value),
                fmt_pressure(*value, units),
            )
        };
        let response = match get_saturation(&service, settings, &fluid, condition).await {
            Ok(response) => response,
            Err(e) => {
                progress.finish_and_clear();
                return Err(e.context(format!("row at {shown}")));
            }
        };
        highest = highest.max(highest_pressure(&response));
        if basis.is_none() {
            basis = response.basis.as_ref().map(Basis::from_proto);
        }
        rows.push(saturation_fields(&response));
        progress.inc(1);
    }
    progress.finish_and_clear();

    let mut document = Document::new(Some(fluid.fluid_id.clone()), Body::Rows(rows));
    document.basis = basis;
    let gauge = [from, to].iter().find_map(|c| match c {
        Condition::Pressure(p) => p.ambient,
        Condition::Temperature(_) => None,
    });
    if let Some(used) = gauge {
        document.notes.push(format!(
            "gauge readings converted with ambient {} ({})",
            fmt_pressure(used.pressure_pa, units),
            settings.ambient.source_text(&used)
        ));
    }
    document.caution = caution(&fluid, Some(highest), units);
    Ok(document)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_run_from_the_first_value_towards_the_last() {
        // -40 °C to 40 °C in 5 K steps is 17 rows (233.15 K to 313.15 K; ISO 80000-5).
        let rows = row_values(233.15, 313.15, 5.0).expect("rows");
        assert_eq!(rows.len(), 17);
        assert!((rows[16] - 313.15).abs() < 1e-9);
        let down = row_values(313.15, 233.15, 5.0).expect("descending rows");
        assert_eq!(down.len(), 17);
        assert!((down[1] - 308.15).abs() < 1e-9);
        // The last row stops short of --to when --to is not on a step.
        let short = row_values(0.0, 10.0, 4.0).expect("rows");
        assert_eq!(short, [0.0, 4.0, 8.0]);
        assert_eq!(row_values(5.0, 5.0, 1.0).expect("one row"), [5.0]);
    }

    #[test]
    fn too_many_rows_name_the_options_and_the_limit() {
        let message = row_values(0.0, 10_000.0, 1.0)
            .expect_err("too many")
            .to_string();
        assert!(message.contains("10001 rows"), "{message}");
        assert!(message.contains("at most 2000"), "{message}");
        // A step so small that the row count passes every integer type: an error, not a panic.
        let message = row_values(233.15, 313.15, 1e-300)
            .expect_err("too many")
            .to_string();
        assert!(message.contains("8.0e301 rows"), "{message}");
    }
}
