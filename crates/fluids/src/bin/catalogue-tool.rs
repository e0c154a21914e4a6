//! Maintains the generated catalogue data files.
//!
//! ```text
//! cargo run --release -p binodal-fluids --bin catalogue-tool -- fit
//! cargo run --release -p binodal-fluids --bin catalogue-tool -- accuracy
//! ```
//!
//! `fit` fits a Mathias-Copeman alpha function for Peng-Robinson (1978) and
//! Soave-Redlich-Kwong to every fluid's reference data and writes `data/fits.toml`.
//! `accuracy` measures every model of every fluid against the same data (with the fits
//! compiled into this binary) and writes `data/accuracy.toml`. Run `fit` first, then
//! `accuracy` as a separate command so that cargo rebuilds with the new fits.

use anyhow::{Context, Result, bail};
use binodal_fluids::{ACCURACY_TOML, Catalogue, FITS_TOML, generate};
use std::path::PathBuf;

fn data_path(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("data")
        .join(name)
}

fn write(name: &str, text: &str) -> Result<()> {
    let path = data_path(name);
    std::fs::write(&path, text).with_context(|| format!("writing {}", path.display()))?;
    eprintln!("wrote {}", path.display());
    Ok(())
}

fn fit() -> Result<()> {
    let catalogue = Catalogue::builtin();
    let entries = generate::fit_all(catalogue, |e| {
        let d = &e.record.vapor_pressure;
        eprintln!(
            "{:<16} {:<20} psat mean {:.3} % max {:.3} % ({} points)",
            e.fluid,
            e.fit.model.id(),
            d.mean_abs_percent,
            d.max_abs_percent,
            d.points
        );
    })?;
    write("fits.toml", &generate::render_fits(&entries))
}

fn accuracy() -> Result<()> {
    // The accuracy must be measured with the fits now on disk: refuse to run with stale ones.
    let on_disk =
        std::fs::read_to_string(data_path("fits.toml")).context("reading data/fits.toml")?;
    if on_disk != FITS_TOML {
        bail!(
            "data/fits.toml changed after this binary was built; run the command again so cargo rebuilds it"
        );
    }
    let entries = generate::accuracy_all(Catalogue::builtin())?;
    let text = generate::render_accuracy(&entries);
    if text == ACCURACY_TOML {
        eprintln!("data/accuracy.toml is up to date");
    }
    write("accuracy.toml", &text)
}

fn main() -> Result<()> {
    let command = std::env::args().nth(1).unwrap_or_default();
    match command.as_str() {
        "fit" => fit(),
        "accuracy" => accuracy(),
        other => bail!("unknown command `{other}`; valid commands: fit, accuracy"),
    }
}
