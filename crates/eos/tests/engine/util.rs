//! Shared helpers: the reference tables and the constants of the five test fluids.

use binodal_eos::{FluidConstants, IdealGasCp, ReferencePoint};

/// A table read from `tests/data/<name>`: `#` lines are its source header, then a header
/// row of column names and rows of numbers.
pub struct Table {
    columns: Vec<String>,
    rows: Vec<Vec<f64>>,
}

impl Table {
    pub fn load(name: &str) -> Table {
        let path = format!("{}/tests/data/{name}", env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
        let mut lines = text
            .lines()
            .filter(|l| !l.starts_with('#') && !l.trim().is_empty());
        let columns = lines
            .next()
            .expect("header row")
            .split(',')
            .map(str::to_string)
            .collect();
        let rows = lines
            .map(|l| {
                l.split(',')
                    .map(|v| v.trim().parse::<f64>().unwrap_or(f64::NAN))
                    .collect()
            })
            .collect();
        Table { columns, rows }
    }

    pub fn column(&self, name: &str) -> Vec<f64> {
        let i = self
            .columns
            .iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("{name}"));
        self.rows.iter().map(|r| r[i]).collect()
    }
}

/// One test fluid: its constants and its NIST Chemistry WebBook (SRD 69) saturation table.
pub struct TestFluid {
    pub constants: FluidConstants,
    /// (T K, P Pa, rho_liq kg/m3, hvap J/mol or NaN)
    pub table: Vec<(f64, f64, f64, f64)>,
}

impl TestFluid {
    pub fn points(&self) -> Vec<ReferencePoint> {
        self.table
            .iter()
            .map(|&(t, p, rho, h)| ReferencePoint {
                temperature_k: t,
                pressure_pa: p,
                liquid_density_kg_per_m3: Some(rho),
                enthalpy_of_vaporization_j_per_mol: h.is_finite().then_some(h),
            })
            .collect()
    }
}

fn fluid(name: &str, m: f64, tc: f64, pc: f64, omega: f64, triple: f64) -> FluidConstants {
    let mut f = FluidConstants::new(name, m, tc, pc, omega);
    f.triple_point_temperature_k = Some(triple);
    f
}

/// Tables with T in K, P in MPa, densities and enthalpies in kg/m3 and kJ/kg.
fn from_kelvin_table(file: &str, constants: FluidConstants) -> TestFluid {
    let t = Table::load(file);
    let m = constants.molar_mass_kg_per_mol;
    let hvap = if file.starts_with("r134a") {
        vec![f64::NAN; t.column("T_K").len()]
    } else {
        t.column("hvap_kJ_kg")
    };
    let table = t
        .column("T_K")
        .into_iter()
        .zip(t.column("P_MPa"))
        .zip(t.column("rho_liq_kg_m3"))
        .zip(hvap)
        .map(|(((tk, p), rho), h)| (tk, p * 1e6, rho, h * 1e3 * m))
        .collect();
    TestFluid { constants, table }
}

/// Water. Constants: IAPWS-95 critical point 647.096 K, 22.064 MPa and acentric factor
/// 0.3443, molar mass 18.015268 g/mol (the auxiliary data quoted in the header of
/// water_saturation.csv, NIST Chemistry WebBook SRD 69); triple point 273.16 K (ITS-90
/// defining point). Table: NIST Chemistry WebBook SRD 69 (IAPWS-95), 0.01-370 °C.
pub fn water() -> TestFluid {
    let constants = fluid("water", 0.018_015_268, 647.096, 22.064e6, 0.3443, 273.16);
    let t = Table::load("water_saturation.csv");
    let m = constants.molar_mass_kg_per_mol;
    let table = t
        .column("T_C")
        .into_iter()
        .zip(t.column("P_bar"))
        .zip(t.column("rho_liq_kg_m3"))
        .zip(t.column("hvap_kJ_kg"))
        // The 0 °C row is the triple point (273.16 K), as the file's header notes.
        .map(|(((tc, p), rho), h)| {
            (
                if tc == 0.0 { 273.16 } else { tc + 273.15 },
                p * 1e5,
                rho,
                h * 1e3 * m,
            )
        })
        .collect();
    TestFluid { constants, table }
}

/// Propane. Critical point 369.89 K, 4.2512 MPa, acentric factor 0.1521, triple point
/// 85.525 K: from memory (Lemmon, McLinden and Wagner 2009, J. Chem. Eng. Data 54, 3141,
/// the equation behind the WebBook table). Molar mass 44.097 g/mol (header of
/// propane_ideal_gas.csv). Table: NIST Chemistry WebBook SRD 69, 100-350 K.
pub fn propane() -> TestFluid {
    from_kelvin_table(
        "propane_saturation.csv",
        fluid("propane", 0.044_097, 369.89, 4.2512e6, 0.1521, 85.525),
    )
}

/// Isobutane. Critical point 407.81 K, 3.629 MPa (VDI Heat Atlas values in the handbook
/// compilation critical_constants.csv: 407.81 K, 36.29 bar), acentric factor 0.184
/// (same compilation, ref. 1/2), triple point 113.73 K (from memory, Buecker and Wagner
/// 2006). Molar mass 58.1222 g/mol (header of isobutane_ideal_gas.csv). Table: NIST
/// Chemistry WebBook SRD 69, 200-350 K.
pub fn isobutane() -> TestFluid {
    from_kelvin_table(
        "isobutane_saturation.csv",
        fluid("isobutane", 0.058_122_2, 407.81, 3.629e6, 0.184, 113.73),
    )
}

/// Nitrogen. Critical point 126.192 K, 3.3958 MPa, acentric factor 0.0372, triple point
/// 63.151 K: from memory (Span et al. 2000, J. Phys. Chem. Ref. Data 29, 1361). Molar mass
/// 28.0134 g/mol (header of nitrogen_ideal_gas.csv). Table: NIST Chemistry WebBook SRD 69,
/// 65-120 K.
pub fn nitrogen() -> TestFluid {
    from_kelvin_table(
        "nitrogen_saturation.csv",
        fluid("nitrogen", 0.028_013_4, 126.192, 3.3958e6, 0.0372, 63.151),
    )
}

/// R-134a. Critical point 374.21 K, 4.0591 MPa (last row of r134a_saturated_liquid.csv,
/// NIST Chemistry WebBook SRD 69), acentric factor 0.32684 and molar mass 102.032 g/mol
/// (from memory, Tillner-Roth and Baehr 1994, J. Phys. Chem. Ref. Data 23, 657), triple
/// point 169.85 K (first row of the same table, 169.86 K, rounded down). Liquid side only.
pub fn r134a() -> TestFluid {
    let mut f = from_kelvin_table(
        "r134a_saturated_liquid.csv",
        fluid("R-134a", 0.102_032, 374.21, 4.0591e6, 0.32684, 169.85),
    );
    // The table's last row is the critical point itself.
    f.table.retain(|&(t, ..)| t < 374.21);
    f
}

/// All five, by name.
pub fn all() -> Vec<TestFluid> {
    vec![water(), propane(), isobutane(), nitrogen(), r134a()]
}

/// Ideal-gas heat capacity of propane as cp/R polynomial coefficients, fitted here to the
/// NIST Chemistry WebBook ideal-gas table propane_ideal_gas.csv by least squares.
#[allow(dead_code)]
pub fn propane_ideal_gas_from_table() -> IdealGasCp {
    let t = Table::load("propane_ideal_gas.csv");
    let temps = t.column("T_K");
    let cps: Vec<f64> = t
        .column("cp_J_gK")
        .iter()
        .map(|c| c * 1e3 * 0.044_097 / binodal_eos::GAS_CONSTANT)
        .collect();
    let coefficients = least_squares_quartic(&temps, &cps);
    IdealGasCp {
        coefficients,
        t_min_k: temps[0],
        t_max_k: *temps.last().unwrap(),
    }
}

/// Least-squares quartic through (x, y), in scaled x for conditioning.
#[allow(clippy::needless_range_loop)]
pub fn least_squares_quartic(x: &[f64], y: &[f64]) -> [f64; 5] {
    let s = 1000.0;
    let mut ata = [[0.0; 5]; 5];
    let mut aty = [0.0; 5];
    for (&xi, &yi) in x.iter().zip(y) {
        let u = xi / s;
        let pw = [1.0, u, u * u, u * u * u, u * u * u * u];
        for i in 0..5 {
            aty[i] += pw[i] * yi;
            for j in 0..5 {
                ata[i][j] += pw[i] * pw[j];
            }
        }
    }
    // Gaussian elimination with partial pivoting.
    for col in 0..5 {
        let piv = (col..5)
            .max_by(|&a, &b| ata[a][col].abs().total_cmp(&ata[b][col].abs()))
            .unwrap();
        ata.swap(col, piv);
        aty.swap(col, piv);
        for row in col + 1..5 {
            let f = ata[row][col] / ata[col][col];
            for k in col..5 {
                ata[row][k] -= f * ata[col][k];
            }
            aty[row] -= f * aty[col];
        }
    }
    let mut c = [0.0; 5];
    for i in (0..5).rev() {
        let mut v = aty[i];
        for k in i + 1..5 {
            v -= ata[i][k] * c[k];
        }
        c[i] = v / ata[i][i];
    }
    [
        c[0],
        c[1] / s,
        c[2] / (s * s),
        c[3] / (s * s * s),
        c[4] / (s * s * s * s),
    ]
}
