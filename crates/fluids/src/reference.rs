//! Reference saturation data compiled into the crate: the NIST Chemistry WebBook (SRD 69)
//! tables of `data/reference/*_saturation.csv` and `r134a_saturated_liquid.csv`, the VDI Heat
//! Atlas tables of `data/reference/<id>_vdi_saturation.csv`, and the check points from
//! published correlations in `data/reference/<id>_vapor_pressure.csv`. Each file's `#` header
//! names its source; see `tools/catalogue/make_reference_points.py`.
//!
//! The fits of `data/fits.toml` and the figures of `data/accuracy.toml` are computed against
//! these points by `catalogue-tool` (see the crate documentation).

use crate::error::CatalogueError;
use crate::record::FluidRecord;
use binodal_eos::ReferencePoint;

/// Highest reduced temperature `T/Tc` of the points handed out: the range the fits and the
/// accuracy records cover.
pub const MAX_REDUCED_TEMPERATURE: f64 = 0.99;

/// What kind of reference a data set is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReferenceKind {
    /// A tabulated saturation table (NIST Chemistry WebBook SRD 69, or the VDI Heat Atlas
    /// saturated-state tables), with saturated-liquid densities.
    Table,
    /// Points evaluated from published vapor-pressure and enthalpy-of-vaporization
    /// correlations (no densities).
    Correlation,
}

/// Saturation points of one fluid from one file.
#[derive(Debug, Clone, PartialEq)]
pub struct ReferenceData {
    /// The file, relative to `crates/fluids/data/`.
    pub file: &'static str,
    /// Table or correlation.
    pub kind: ReferenceKind,
    /// The file and the published source its header states.
    pub citation: String,
    /// The points from the fluid's minimum temperature (its triple point) to
    /// [`MAX_REDUCED_TEMPERATURE`] Tc, in rising temperature, in SI units (K, Pa, kg/m^3,
    /// J/mol).
    pub points: Vec<ReferencePoint>,
    /// Rows in the file, including any outside that range.
    pub rows_in_file: usize,
}

struct Embedded {
    fluid: &'static str,
    file: &'static str,
    text: &'static str,
    /// The file's first row is the triple point though labelled 0 °C (water: its header
    /// says "first row labelled 0 C is the WebBook triple-point row ... treat as 0.01 C").
    first_row_is_triple_point: bool,
}

macro_rules! embed {
    ($fluid:literal, $file:literal) => {
        embed!($fluid, $file, false)
    };
    ($fluid:literal, $file:literal, $triple:literal) => {
        Embedded {
            fluid: $fluid,
            file: concat!("reference/", $file),
            text: include_str!(concat!("../data/reference/", $file)),
            first_row_is_triple_point: $triple,
        }
    };
}

/// Saturation tables, in order of preference for a fluid: R-134a's WebBook table (374 rows)
/// comes before its VDI Heat Atlas table (10 rows, which adds enthalpies of vaporization).
const TABLES: [Embedded; 7] = [
    embed!("water", "water_saturation.csv", true),
    embed!("propane", "propane_saturation.csv"),
    embed!("isobutane", "isobutane_saturation.csv"),
    embed!("nitrogen", "nitrogen_saturation.csv"),
    embed!("r134a", "r134a_saturated_liquid.csv"),
    embed!("r134a", "r134a_vdi_saturation.csv"),
    embed!("r125", "r125_vdi_saturation.csv"),
];

const CORRELATIONS: [Embedded; 32] = [
    embed!("acetone", "acetone_vapor_pressure.csv"),
    embed!("ammonia", "ammonia_vapor_pressure.csv"),
    embed!("argon", "argon_vapor_pressure.csv"),
    embed!("benzene", "benzene_vapor_pressure.csv"),
    embed!("butane", "butane_vapor_pressure.csv"),
    embed!("carbondioxide", "carbondioxide_vapor_pressure.csv"),
    embed!("carbonmonoxide", "carbonmonoxide_vapor_pressure.csv"),
    embed!("cyclopentane", "cyclopentane_vapor_pressure.csv"),
    embed!("dimethylether", "dimethylether_vapor_pressure.csv"),
    embed!("ethane", "ethane_vapor_pressure.csv"),
    embed!("ethanol", "ethanol_vapor_pressure.csv"),
    embed!("heptane", "heptane_vapor_pressure.csv"),
    embed!("hexane", "hexane_vapor_pressure.csv"),
    embed!("hydrogensulfide", "hydrogensulfide_vapor_pressure.csv"),
    embed!("isobutane", "isobutane_vapor_pressure.csv"),
    embed!("methane", "methane_vapor_pressure.csv"),
    embed!("methanol", "methanol_vapor_pressure.csv"),
    embed!("nitrogen", "nitrogen_vapor_pressure.csv"),
    embed!("oxygen", "oxygen_vapor_pressure.csv"),
    embed!("pentane", "pentane_vapor_pressure.csv"),
    embed!("propane", "propane_vapor_pressure.csv"),
    embed!("propylene", "propylene_vapor_pressure.csv"),
    embed!("r125", "r125_vapor_pressure.csv"),
    embed!("r134a", "r134a_vapor_pressure.csv"),
    embed!("r143a", "r143a_vapor_pressure.csv"),
    embed!("r152a", "r152a_vapor_pressure.csv"),
    embed!("r22", "r22_vapor_pressure.csv"),
    embed!("r23", "r23_vapor_pressure.csv"),
    embed!("r32", "r32_vapor_pressure.csv"),
    embed!("sulfurdioxide", "sulfurdioxide_vapor_pressure.csv"),
    embed!("toluene", "toluene_vapor_pressure.csv"),
    embed!("water", "water_vapor_pressure.csv"),
];

/// Every reference data set the crate has for `fluid` (matched by id; user fluids have
/// none): the WebBook table first where there is one, then the correlation points.
pub fn reference_sets(fluid: &FluidRecord) -> Result<Vec<ReferenceData>, CatalogueError> {
    if fluid.user_supplied {
        return Ok(Vec::new());
    }
    TABLES
        .iter()
        .map(|e| (e, ReferenceKind::Table))
        .chain(CORRELATIONS.iter().map(|e| (e, ReferenceKind::Correlation)))
        .filter(|(e, _)| e.fluid == fluid.id)
        .map(|(e, kind)| parse(e, kind, fluid))
        .collect()
}

/// The reference data the fits and accuracy records use for `fluid`: the first saturation
/// table where there is one (the WebBook table before the VDI Heat Atlas table), else the
/// correlation points, else none.
pub fn reference_data(fluid: &FluidRecord) -> Result<Option<ReferenceData>, CatalogueError> {
    Ok(reference_sets(fluid)?.into_iter().next())
}

/// The data the accuracy records compare enthalpies of vaporization with: the set of
/// [`reference_data`] where it has any, else the first other set of the fluid that has
/// them (R-134a: its WebBook table has none, its VDI Heat Atlas table has), else none.
pub fn enthalpy_data(fluid: &FluidRecord) -> Result<Option<ReferenceData>, CatalogueError> {
    Ok(reference_sets(fluid)?.into_iter().find(|d| {
        d.points
            .iter()
            .any(|p| p.enthalpy_of_vaporization_j_per_mol.is_some())
    }))
}

/// Column positions and unit factors of one file.
struct Columns {
    t: usize,
    t_offset: f64,
    p: usize,
    p_factor: f64,
    rho: Option<usize>,
    hvap: Option<(usize, f64)>,
}

fn columns(header: &str, molar_mass: f64) -> Result<Columns, String> {
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    let find = |n: &str| names.iter().position(|c| *c == n);
    let (t, t_offset) = match (find("T_K"), find("T_C")) {
        (Some(i), _) => (i, 0.0),
        (None, Some(i)) => (i, 273.15),
        _ => return Err(format!("no T_K or T_C column in `{header}`")),
    };
    let (p, p_factor) = match (find("P_Pa"), find("P_MPa"), find("P_bar")) {
        (Some(i), ..) => (i, 1.0),
        (None, Some(i), _) => (i, 1e6),
        (None, None, Some(i)) => (i, 1e5),
        _ => return Err(format!("no P_Pa, P_MPa or P_bar column in `{header}`")),
    };
    let hvap = match (find("hvap_J_per_mol"), find("hvap_kJ_kg")) {
        (Some(i), _) => Some((i, 1.0)),
        (None, Some(i)) => Some((i, 1e3 * molar_mass)),
        _ => None,
    };
    Ok(Columns {
        t,
        t_offset,
        p,
        p_factor,
        rho: find("rho_liq_kg_m3"),
        hvap,
    })
}

fn header_value<'a>(text: &'a str, prefix: &str) -> Option<&'a str> {
    text.lines()
        .find_map(|l| l.strip_prefix(prefix))
        .map(str::trim)
}

/// The source named by a header's coefficients line, without the coefficient values (they
/// are in the file) or what follows the first `;`: e.g. `VDI Heat Atlas, 2nd ed. (Springer
/// 2010), PPDS vapour-pressure coefficients`.
fn source_only(line: &str) -> String {
    let first = line.split("; ").next().unwrap_or(line);
    let mut out = String::new();
    let mut rest = first;
    while let Some(open) = rest.find(" (") {
        let Some(close) = rest[open..].find(')').map(|c| open + c) else {
            break;
        };
        let group = &rest[open..=close];
        out.push_str(&rest[..open]);
        if !group.contains(" = ") {
            out.push_str(group);
        }
        rest = &rest[close + 1..];
    }
    out.push_str(rest);
    out
}

fn parse(
    e: &Embedded,
    kind: ReferenceKind,
    fluid: &FluidRecord,
) -> Result<ReferenceData, CatalogueError> {
    let fail = |line: usize, message: String| CatalogueError::Reference {
        file: e.file.to_string(),
        line,
        message,
    };
    let citation = match kind {
        ReferenceKind::Table => {
            let stated = header_value(e.text, "# stated published source:")
                .ok_or_else(|| fail(1, "no '# stated published source:' header line".into()))?;
            format!("{} (saturation table; stated source: {stated})", e.file)
        }
        ReferenceKind::Correlation => {
            let vp = header_value(e.text, "# vapor pressure coefficients:")
                .ok_or_else(|| fail(1, "no '# vapor pressure coefficients:' header line".into()))?;
            let evaluated = vp
                .split("; ")
                .find(|s| s.starts_with("evaluated with"))
                .ok_or_else(|| {
                    fail(
                        1,
                        "the coefficients line does not say how they were evaluated".into(),
                    )
                })?;
            let vp = source_only(vp);
            match header_value(e.text, "# enthalpy of vaporization coefficients:") {
                Some(hv) => format!(
                    "{} (points from published correlations, {evaluated}): vapor pressure from \
                     {vp}; enthalpy of vaporization from {}",
                    e.file,
                    source_only(hv)
                ),
                None => format!(
                    "{} (points from a published correlation, {evaluated}): vapor pressure from {vp}",
                    e.file
                ),
            }
        }
    };
    let constants = &fluid.constants;
    let mut lines = e
        .text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.starts_with('#') && !l.trim().is_empty());
    let (header_line, header) = lines
        .next()
        .ok_or_else(|| fail(1, "no header row".into()))?;
    let cols =
        columns(header, constants.molar_mass_kg_per_mol).map_err(|m| fail(header_line + 1, m))?;
    let t_min = constants.minimum_temperature_k();
    let t_max = MAX_REDUCED_TEMPERATURE * constants.critical_temperature_k;
    let mut points = Vec::new();
    let mut rows_in_file = 0;
    for (i, line) in lines {
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        let cell = |c: usize, what: &str| -> Result<f64, CatalogueError> {
            let text = cells.get(c).copied().unwrap_or("");
            text.parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| fail(i + 1, format!("{what} `{text}` is not a number")))
        };
        let mut t = cell(cols.t, "temperature")? + cols.t_offset;
        if rows_in_file == 0 && e.first_row_is_triple_point {
            t = constants.triple_point_temperature_k.ok_or_else(|| {
                fail(
                    i + 1,
                    "the first row is the triple point but the fluid has none".into(),
                )
            })?;
        }
        rows_in_file += 1;
        let p = cell(cols.p, "pressure")? * cols.p_factor;
        let rho = cols.rho.map(|c| cell(c, "liquid density")).transpose()?;
        let hvap = match cols.hvap {
            Some((c, factor)) if cells.get(c).is_some_and(|s| !s.is_empty()) => {
                Some(cell(c, "enthalpy of vaporization")? * factor)
            }
            _ => None,
        };
        if p <= 0.0 || rho.is_some_and(|r| r <= 0.0) || hvap.is_some_and(|h| h <= 0.0) {
            return Err(fail(
                i + 1,
                "pressure, density and enthalpy must be positive".into(),
            ));
        }
        if let Some(last) = points.last().map(|p: &ReferencePoint| p.temperature_k)
            && t <= last
        {
            return Err(fail(i + 1, "temperatures must rise row by row".into()));
        }
        if t < t_min || t > t_max {
            continue;
        }
        points.push(ReferencePoint {
            temperature_k: t,
            pressure_pa: p,
            liquid_density_kg_per_m3: rho,
            enthalpy_of_vaporization_j_per_mol: hvap,
        });
    }
    Ok(ReferenceData {
        file: e.file,
        kind,
        citation,
        points,
        rows_in_file,
    })
}

#[cfg(test)]
mod tests {
    use super::source_only;

    #[test]
    fn coefficient_values_are_dropped_from_citations() {
        let line = "VDI Heat Atlas, 2nd ed. (Springer 2010), PPDS vapour-pressure coefficients \
                    (Tc = 508.1 K, A = -7.67033); evaluated with the chemicals Python library 1.5.2";
        assert_eq!(
            source_only(line),
            "VDI Heat Atlas, 2nd ed. (Springer 2010), PPDS vapour-pressure coefficients"
        );
    }
}
