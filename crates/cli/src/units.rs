//! Units layer of the `binodal` command line.
//!
//! Field engineers type readings with units (`25C`, `8.2barg`, `120psia`, `350m`). This module
//! turns that text into SI values, keeps gauge and absolute pressure apart, converts gauge readings
//! to absolute with a stated ambient pressure (given, or from the ISO 2533 standard atmosphere at
//! an altitude), and formats SI results in the user's chosen unit system.
//!
//! Conventions:
//! - Internally every value is SI: kelvin, pascal (absolute), J/kg, J/(kg K), kg/m3, metres.
//! - Units are case-insensitive and may be separated from the number by spaces (`25 C`, `8.2 bar (g)`).
//!   Because of that `mpa` means megapascal; millipascal is not a field unit and is not accepted.
//! - A bare `bar`, `mbar`, `psi`, `Pa`, `kPa` or `MPa` is ABSOLUTE. Gauge readings must say so:
//!   `barg`, `psig`, `kPag`, `MPag`, or the `(g)` suffix (`bar(g)`). A vacuum reading is a negative
//!   gauge reading (`-0.3barg`). `atm`, `mmHg` and `inHg` are absolute (barometric) only.
//! - Numbers use a decimal point; commas are rejected rather than guessed at.

use std::fmt;
use std::str::FromStr;

// ---------------------------------------------------------------------------------------------
// Conversion constants (exact definitions unless stated otherwise).
// ---------------------------------------------------------------------------------------------

/// Standard acceleration of gravity g_n, m/s^2. Exact by definition (NIST SP 811, 2008, B.9; ISO 80000-3).
pub const STANDARD_GRAVITY: f64 = 9.806_65;
/// International avoirdupois pound, kg. Exact (NIST SP 811, 2008, B.9).
pub const POUND_KG: f64 = 0.453_592_37;
/// International inch, m. Exact (NIST SP 811, 2008, B.9).
pub const INCH_M: f64 = 0.0254;
/// International foot, m. Exact (NIST SP 811, 2008, B.9).
pub const FOOT_M: f64 = 0.3048;
/// Pound-force per square inch, Pa: lb * g_n / in^2 = 6894.757293168361 Pa.
/// Derived from the exact pound, g_n and inch (NIST SP 811, 2008, B.9 lists 6.894 757 E+03).
pub const PSI_PA: f64 = POUND_KG * STANDARD_GRAVITY / (INCH_M * INCH_M);
/// Bar, Pa. Exact (ISO 80000-4; NIST SP 811, 2008, B.9).
pub const BAR_PA: f64 = 1.0e5;
/// Millibar, Pa. Exact (ISO 80000-4 bar with the SI prefix milli, ISO 80000-1).
pub const MBAR_PA: f64 = 100.0;
/// Standard atmosphere, Pa. Exact (NIST SP 811, 2008, B.9; ISO 2533:1975 sea-level pressure).
pub const ATM_PA: f64 = 101_325.0;
/// Conventional millimetre of mercury, Pa: 13 595.1 kg/m3 * g_n * 0.001 m = 133.322387415 Pa.
/// The 13 595.1 kg/m3 mercury density is the conventional value (NIST SP 811, 2008, B.9 lists
/// 1.333 224 E+02).
pub const MMHG_PA: f64 = 133.322_387_415;
/// Conventional inch of mercury, Pa: 25.4 conventional mmHg = 3386.388640341 Pa. NIST SP 811
/// (2008, B.9) lists this rounded to 3.386 389 E+03; the unrounded definition is kept here so that
/// 1 inHg is exactly 25.4 mmHg.
pub const INHG_PA: f64 = MMHG_PA * 25.4;
/// International Table British thermal unit, J: 2326 J/kg * 1 lb = 1055.05585262 J. Exact
/// (NIST SP 811, 2008, B.9: Btu_IT/lb = 2.326 E+03 J/kg exactly; IT calorie 4.1868 J, ISO 80000-5).
pub const BTU_IT_J: f64 = 1_055.055_852_62;
/// Kelvin value of 0 °C. Exact (ISO 80000-5: T/K = t/°C + 273.15).
pub const CELSIUS_ZERO_K: f64 = 273.15;
/// Rankine value of 0 °F. Exact (NIST SP 811, 2008, B.9: t/°F = T/K * 1.8 - 459.67).
pub const FAHRENHEIT_ZERO_R: f64 = 459.67;
/// Kelvin per rankine (and per Fahrenheit degree of difference). Exact (NIST SP 811, 2008, B.9).
pub const KELVIN_PER_RANKINE: f64 = 5.0 / 9.0;

/// Btu_IT/lb in J/kg (= 2326 exactly, NIST SP 811, 2008, B.9).
const BTU_PER_LB_IN_J_PER_KG: f64 = BTU_IT_J / POUND_KG;
/// Btu_IT/(lb °F) in J/(kg K) (= 4186.8 exactly, NIST SP 811, 2008, B.9).
const BTU_PER_LB_F_IN_J_PER_KG_K: f64 = BTU_IT_J / (POUND_KG * KELVIN_PER_RANKINE);
/// lb/ft3 in kg/m3 (NIST SP 811, 2008, B.9 lists 1.601 846 E+01); derived from the exact lb and ft.
const LB_PER_FT3_IN_KG_PER_M3: f64 = POUND_KG / (FOOT_M * FOOT_M * FOOT_M);

// ---------------------------------------------------------------------------------------------
// ISO 2533:1975 standard atmosphere (troposphere).
// ---------------------------------------------------------------------------------------------

/// Lowest altitude accepted for the standard atmosphere, m (ISO 2533:1975 tables start at -2000 m).
pub const ISO_ALTITUDE_MIN_M: f64 = -2_000.0;
/// Highest altitude accepted, m: top of the troposphere layer (ISO 2533:1975).
pub const ISO_ALTITUDE_MAX_M: f64 = 11_000.0;
/// Sea-level pressure, Pa (ISO 2533:1975).
const ISO_P0_PA: f64 = 101_325.0;
/// Sea-level temperature, K (ISO 2533:1975).
const ISO_T0_K: f64 = 288.15;
/// Tropospheric temperature lapse rate, K/m (ISO 2533:1975).
const ISO_LAPSE_K_PER_M: f64 = 0.0065;
/// Molar mass of dry air, kg/mol (ISO 2533:1975).
const ISO_MOLAR_MASS_KG_PER_MOL: f64 = 0.028_964_4;
/// Universal gas constant as used by ISO 2533:1975, J/(mol K).
const ISO_GAS_CONSTANT: f64 = 8.314_32;

/// Lowest ambient pressure accepted, Pa. `common practice` bound: below the ISO 2533 value at
/// 11 000 m (22 632 Pa) with margin for weather.
pub const AMBIENT_MIN_PA: f64 = 20_000.0;
/// Highest ambient pressure accepted, Pa. `common practice` bound: above the ISO 2533 value at
/// -2000 m (127 774 Pa) with margin for weather.
pub const AMBIENT_MAX_PA: f64 = 130_000.0;

/// Pressure of the ISO 2533:1975 standard atmosphere at a (geopotential) altitude in metres:
/// p = 101325 * (1 - 0.0065 h / 288.15)^(g0 M / (R L)).
///
/// Valid from -2000 m to 11 000 m; outside that range an [`UnitError::AltitudeOutOfRange`] is
/// returned (NaN and infinities included).
pub fn iso_standard_atmosphere_pa(altitude_m: f64) -> Result<f64, UnitError> {
    if !(ISO_ALTITUDE_MIN_M..=ISO_ALTITUDE_MAX_M).contains(&altitude_m) {
        return Err(UnitError::AltitudeOutOfRange { altitude_m });
    }
    let exponent =
        STANDARD_GRAVITY * ISO_MOLAR_MASS_KG_PER_MOL / (ISO_GAS_CONSTANT * ISO_LAPSE_K_PER_M);
    Ok(ISO_P0_PA * (1.0 - ISO_LAPSE_K_PER_M * altitude_m / ISO_T0_K).powf(exponent))
}

// ---------------------------------------------------------------------------------------------
// Errors.
// ---------------------------------------------------------------------------------------------

/// What kind of reading was being parsed; used to word error messages and help text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InputKind {
    /// A temperature (absolute scale).
    Temperature,
    /// A temperature difference (superheat, subcooling, approach).
    TemperatureDifference,
    /// A pressure, gauge or absolute.
    Pressure,
    /// A length (non-negative).
    Length,
    /// An altitude above mean sea level.
    Altitude,
}

impl InputKind {
    /// Noun with its article, e.g. "a temperature", "an altitude".
    pub fn with_article(self) -> &'static str {
        match self {
            InputKind::Temperature => "a temperature",
            InputKind::TemperatureDifference => "a temperature difference",
            InputKind::Pressure => "a pressure",
            InputKind::Length => "a length",
            InputKind::Altitude => "an altitude",
        }
    }

    /// The accepted forms, suitable for error messages and `--help` text.
    pub fn accepted_forms(self) -> &'static str {
        match self {
            InputKind::Temperature => {
                "25C, 77F, 298.15K, 491.67R (also 25 °C, 25degC; units are case-insensitive)"
            }
            InputKind::TemperatureDifference => {
                "5K, 9F (a difference: 9F = 5K; also 5C, 9R, 9ΔF; units are case-insensitive)"
            }
            InputKind::Pressure => {
                "8.2bar, 8.2barg, 120psia, 120psig, 850kPa, 850kPag, 1.2MPa, 1.2MPag, 101325Pa, \
                 1013mbar, 1.5atm, 750mmHg, 30inHg (a bare bar, mbar, psi, Pa, kPa or MPa is \
                 absolute: write psig or barg for gauge; bar(a) and bar(g) also work; a vacuum is \
                 a negative gauge reading such as -0.3barg)"
            }
            InputKind::Length | InputKind::Altitude => "350m, 1150ft",
        }
    }
}

impl fmt::Display for InputKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let noun = match self {
            InputKind::Temperature => "temperature",
            InputKind::TemperatureDifference => "temperature difference",
            InputKind::Pressure => "pressure",
            InputKind::Length => "length",
            InputKind::Altitude => "altitude",
        };
        f.write_str(noun)
    }
}

/// Everything that can go wrong while reading or converting units.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum UnitError {
    /// Nothing was typed.
    #[error("empty {kind}: expected a number with a unit, e.g. {}", .kind.accepted_forms())]
    Empty {
        /// What was being read.
        kind: InputKind,
    },
    /// The text does not start with a number.
    #[error("`{input}`: {} must start with a number, e.g. {}", .kind.with_article(), .kind.accepted_forms())]
    NotANumber {
        /// The text as typed.
        input: String,
        /// What was being read.
        kind: InputKind,
    },
    /// NaN, infinity, or a number too large to represent.
    #[error("`{input}`: not a finite number; {} must be a finite number with a unit, e.g. {}", .kind.with_article(), .kind.accepted_forms())]
    NotFinite {
        /// The text as typed.
        input: String,
        /// What was being read.
        kind: InputKind,
    },
    /// A comma inside the number (decimal comma or thousands separator).
    #[error("`{input}`: commas are not accepted in numbers; use a decimal point and no thousands separators, e.g. {}", .kind.accepted_forms())]
    Comma {
        /// The text as typed.
        input: String,
        /// What was being read.
        kind: InputKind,
    },
    /// A number without a unit.
    #[error("`{input}`: {} needs a unit: {}", .kind.with_article(), .kind.accepted_forms())]
    MissingUnit {
        /// The text as typed.
        input: String,
        /// What was being read.
        kind: InputKind,
    },
    /// A unit that is not accepted for this kind of reading.
    #[error("`{input}`: unknown {kind} unit `{unit}`; accepted forms: {}", .kind.accepted_forms())]
    UnknownUnit {
        /// The text as typed.
        input: String,
        /// The unit part as typed.
        unit: String,
        /// What was being read.
        kind: InputKind,
    },
    /// A temperature below 0 K.
    #[error(
        "`{input}` is below absolute zero ({kelvin:.2} K); a temperature must be at least 0 K (-273.15 °C, -459.67 °F, 0 R)"
    )]
    BelowAbsoluteZero {
        /// The text as typed.
        input: String,
        /// The converted value, K.
        kelvin: f64,
    },
    /// An absolute pressure below 0 Pa.
    #[error(
        "`{reading}` is a negative absolute pressure ({value_pa:.1} Pa); an absolute pressure must be at least 0 Pa; for a reading below atmospheric write it as gauge, e.g. -0.3barg"
    )]
    NegativeAbsolutePressure {
        /// The reading as typed (or as given in Pa).
        reading: String,
        /// The value, Pa.
        value_pa: f64,
    },
    /// A pressure reading that holds NaN or infinity.
    #[error("pressure reading {value_pa} Pa is not a finite number")]
    NonFiniteReading {
        /// The value, Pa.
        value_pa: f64,
    },
    /// A negative length.
    #[error("`{input}`: a length must be at least 0 m (got {} m)", short(*.metres))]
    NegativeLength {
        /// The text as typed.
        input: String,
        /// The converted value, m.
        metres: f64,
    },
    /// An altitude outside the ISO 2533 troposphere range used here.
    #[error(
        "altitude {} m is outside the range of the ISO 2533 standard atmosphere used here: -2000 m to 11000 m",
        short(*.altitude_m)
    )]
    AltitudeOutOfRange {
        /// The altitude, m.
        altitude_m: f64,
    },
    /// An ambient pressure that is not a plausible atmospheric pressure.
    #[error(
        "ambient pressure {} Pa is outside the accepted range 20000 Pa to 130000 Pa (absolute)",
        short(*.value_pa)
    )]
    AmbientOutOfRange {
        /// The ambient pressure, Pa.
        value_pa: f64,
    },
    /// An ambient pressure typed as a gauge reading.
    #[error(
        "`{input}`: an ambient pressure must be absolute, not gauge; write e.g. 101.3kPa, 1013mbar or 14.7psia"
    )]
    GaugeAmbient {
        /// The text as typed.
        input: String,
    },
    /// A gauge reading that would give a negative absolute pressure at the ambient used.
    #[error("gauge reading {gauge_pa:.1} Pa(g) ({:.4} barg) is below perfect vacuum at ambient {ambient}: it would be {absolute_pa:.1} Pa absolute; at this ambient a gauge reading must be at least -{:.1} Pa(g)", .gauge_pa / BAR_PA, .ambient.pressure_pa)]
    BelowVacuum {
        /// The gauge reading, Pa.
        gauge_pa: f64,
        /// The ambient pressure used and where it came from.
        ambient: AmbientUsed,
        /// The (negative) absolute pressure that would result, Pa.
        absolute_pa: f64,
    },
    /// An unknown output unit system.
    #[error("`{input}`: unknown unit system; accepted: si (K, Pa), metric (°C, bar), us (°F, psi)")]
    UnknownUnitSystem {
        /// The text as typed.
        input: String,
    },
}

/// A number for a message: at most one decimal, no trailing `.0` (`1000`, `350.5`, `NaN`); in
/// powers of ten from 1e15 up (`1e300`, not 301 digits).
fn short(value: f64) -> String {
    if value.abs() >= 1e15 && value.is_finite() {
        return format!("{value:e}");
    }
    let text = format!("{value:.1}");
    match text.strip_suffix(".0") {
        Some("-0") => "0".to_string(),
        Some(whole) => whole.to_string(),
        None => text,
    }
}

// ---------------------------------------------------------------------------------------------
// Splitting "number unit".
// ---------------------------------------------------------------------------------------------

/// A typed reading split into its number and unit.
#[derive(Debug)]
struct Split<'a> {
    /// The number, finite.
    number: f64,
    /// The unit normalised: whitespace removed, lower case, degree-sign look-alikes mapped to `°`.
    unit: String,
    /// The unit as typed (trimmed), for error messages.
    raw_unit: &'a str,
}

impl Split<'_> {
    fn unknown_unit(&self, input: &str, kind: InputKind) -> UnitError {
        UnitError::UnknownUnit {
            input: input.trim().to_string(),
            unit: self.raw_unit.to_string(),
            kind,
        }
    }
}

/// Splits typed text into a finite number and a non-empty unit.
fn split_reading(input: &str, kind: InputKind) -> Result<Split<'_>, UnitError> {
    let text = input.trim();
    if text.is_empty() {
        return Err(UnitError::Empty { kind });
    }
    let owned = || text.to_string();
    let bytes = text.as_bytes();
    let mut i = 0;
    if matches!(bytes.first(), Some(b'+' | b'-')) {
        i = 1;
    }
    let after_sign = text[i..].to_ascii_lowercase();
    if after_sign.starts_with("nan") || after_sign.starts_with("inf") {
        return Err(UnitError::NotFinite {
            input: owned(),
            kind,
        });
    }
    let mut digits = 0;
    while i < bytes.len() && bytes[i].is_ascii_digit() {
        i += 1;
        digits += 1;
    }
    if i < bytes.len() && bytes[i] == b'.' {
        i += 1;
        while i < bytes.len() && bytes[i].is_ascii_digit() {
            i += 1;
            digits += 1;
        }
    }
    if digits == 0 {
        return Err(UnitError::NotANumber {
            input: owned(),
            kind,
        });
    }
    if i < bytes.len() && bytes[i] == b',' {
        return Err(UnitError::Comma {
            input: owned(),
            kind,
        });
    }
    // Optional exponent: e/E, optional sign, at least one digit.
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        let exp_start = j;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_start {
            i = j;
        }
    }
    let number: f64 = text[..i].parse().map_err(|_| UnitError::NotANumber {
        input: owned(),
        kind,
    })?;
    if !number.is_finite() {
        return Err(UnitError::NotFinite {
            input: owned(),
            kind,
        });
    }
    let raw_unit = text[i..].trim();
    let unit: String = raw_unit
        .chars()
        .filter(|c| !c.is_whitespace())
        .map(|c| match c {
            // Masculine ordinal and ring above are often typed for the degree sign.
            'º' | '˚' => '°',
            other => other,
        })
        .collect::<String>()
        .to_lowercase();
    if unit.is_empty() {
        return Err(UnitError::MissingUnit {
            input: owned(),
            kind,
        });
    }
    Ok(Split {
        number,
        unit,
        raw_unit,
    })
}

fn finite_or_error(value: f64, input: &str, kind: InputKind) -> Result<f64, UnitError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(UnitError::NotFinite {
            input: input.trim().to_string(),
            kind,
        })
    }
}

/// Temperature scales accepted on input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Scale {
    Celsius,
    Fahrenheit,
    Kelvin,
    Rankine,
}

fn scale_of(unit: &str) -> Option<Scale> {
    match unit {
        "c" | "°c" | "degc" | "℃" => Some(Scale::Celsius),
        "f" | "°f" | "degf" | "℉" => Some(Scale::Fahrenheit),
        "k" => Some(Scale::Kelvin),
        "r" | "°r" | "degr" => Some(Scale::Rankine),
        _ => None,
    }
}

// ---------------------------------------------------------------------------------------------
// Temperature and temperature difference.
// ---------------------------------------------------------------------------------------------

/// A thermodynamic temperature, stored in kelvin, never below 0 K.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Temperature {
    kelvin: f64,
}

impl Temperature {
    /// Parses `25C`, `25 °C`, `25degC`, `77F`, `298.15K`, `491.67R` (case-insensitive).
    pub fn parse(input: &str) -> Result<Self, UnitError> {
        let kind = InputKind::Temperature;
        let split = split_reading(input, kind)?;
        let number = split.number;
        let kelvin = match scale_of(&split.unit).ok_or_else(|| split.unknown_unit(input, kind))? {
            Scale::Celsius => number + CELSIUS_ZERO_K,
            Scale::Fahrenheit => (number + FAHRENHEIT_ZERO_R) * KELVIN_PER_RANKINE,
            Scale::Kelvin => number,
            Scale::Rankine => number * KELVIN_PER_RANKINE,
        };
        let kelvin = finite_or_error(kelvin, input, kind)?;
        if kelvin < 0.0 {
            return Err(UnitError::BelowAbsoluteZero {
                input: input.trim().to_string(),
                kelvin,
            });
        }
        Ok(Temperature { kelvin })
    }

    /// The temperature in kelvin.
    pub fn kelvin(self) -> f64 {
        self.kelvin
    }
}

impl FromStr for Temperature {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Temperature::parse(s)
    }
}

/// A temperature difference, stored in kelvin (may be negative).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct TemperatureDifference {
    kelvin: f64,
}

impl TemperatureDifference {
    /// Parses a difference: `5K`, `5C` (a Celsius degree of difference is one kelvin), `9F`,
    /// `9°F`, `9R` (a Fahrenheit or Rankine degree of difference is 5/9 K). An optional `Δ` or
    /// `delta` prefix on the unit is accepted (`9ΔF`, `5 delta K`).
    pub fn parse(input: &str) -> Result<Self, UnitError> {
        let kind = InputKind::TemperatureDifference;
        let split = split_reading(input, kind)?;
        let number = split.number;
        let unit = split.unit.as_str();
        let bare = unit
            .strip_prefix("delta")
            .or_else(|| unit.strip_prefix('δ'))
            .unwrap_or(unit);
        let kelvin = match scale_of(bare).ok_or_else(|| split.unknown_unit(input, kind))? {
            Scale::Celsius | Scale::Kelvin => number,
            Scale::Fahrenheit | Scale::Rankine => number * KELVIN_PER_RANKINE,
        };
        let kelvin = finite_or_error(kelvin, input, kind)?;
        Ok(TemperatureDifference { kelvin })
    }

    /// The difference in kelvin.
    pub fn kelvin(self) -> f64 {
        self.kelvin
    }
}

impl FromStr for TemperatureDifference {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        TemperatureDifference::parse(s)
    }
}

// ---------------------------------------------------------------------------------------------
// Length and altitude.
// ---------------------------------------------------------------------------------------------

fn parse_metres(input: &str, kind: InputKind) -> Result<f64, UnitError> {
    let split = split_reading(input, kind)?;
    let metres = match split.unit.as_str() {
        "m" => split.number,
        "ft" => split.number * FOOT_M,
        _ => return Err(split.unknown_unit(input, kind)),
    };
    finite_or_error(metres, input, kind)
}

/// A length in metres, never negative.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Length {
    metres: f64,
}

impl Length {
    /// Parses `350m` or `1150ft` (case-insensitive).
    pub fn parse(input: &str) -> Result<Self, UnitError> {
        let metres = parse_metres(input, InputKind::Length)?;
        if metres < 0.0 {
            return Err(UnitError::NegativeLength {
                input: input.trim().to_string(),
                metres,
            });
        }
        Ok(Length { metres })
    }

    /// The length in metres.
    pub fn metres(self) -> f64 {
        self.metres
    }
}

impl FromStr for Length {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Length::parse(s)
    }
}

// ---------------------------------------------------------------------------------------------
// Pressure: gauge versus absolute.
// ---------------------------------------------------------------------------------------------

/// Whether a pressure reading is relative to ambient (gauge) or to vacuum (absolute).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PressureKind {
    /// Relative to the ambient (atmospheric) pressure; negative for vacuum.
    Gauge,
    /// Relative to perfect vacuum.
    Absolute,
}

/// A pressure as typed: its value in pascal and whether it is gauge or absolute.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PressureReading {
    /// The reading in Pa (gauge or absolute according to `kind`).
    pub value_pa: f64,
    /// Gauge or absolute.
    pub kind: PressureKind,
}

impl PressureReading {
    /// Parses a pressure. Absolute: `8.2bar`, `8.2bara`, `8.2bar(a)`, `120psi`, `120psia`,
    /// `1.2MPa`, `850kPa`, `101325Pa`, `1013mbar`, `1.5atm`, `750mmHg`, `30inHg`. Gauge: `8.2barg`,
    /// `8.2bar(g)`, `120psig`, `850kPag`, `850kPa(g)`, `1.2MPag`. A bare unit is absolute.
    /// A negative absolute pressure is an error; a negative gauge reading (vacuum) is accepted and
    /// checked against the ambient in [`PressureReading::to_absolute`].
    pub fn parse(input: &str) -> Result<Self, UnitError> {
        let kind = InputKind::Pressure;
        let split = split_reading(input, kind)?;
        // (unit name, Pa per unit, gauge allowed). Order matters only for shared prefixes, none of
        // which overlap here ("mpa", "mbar", "mmhg" are distinct).
        const BASES: [(&str, f64, bool); 9] = [
            ("mmhg", MMHG_PA, false),
            ("inhg", INHG_PA, false),
            ("atm", ATM_PA, false),
            ("mbar", MBAR_PA, true),
            ("bar", BAR_PA, true),
            ("kpa", 1.0e3, true),
            ("mpa", 1.0e6, true),
            ("pa", 1.0, true),
            ("psi", PSI_PA, true),
        ];
        let (scale, gauge_allowed, suffix) = BASES
            .iter()
            .find_map(|(name, scale, gauge)| {
                split.unit.strip_prefix(name).map(|s| (*scale, *gauge, s))
            })
            .ok_or_else(|| split.unknown_unit(input, kind))?;
        let pressure_kind = match suffix {
            "" | "a" | "(a)" | "(abs)" => PressureKind::Absolute,
            "g" | "(g)" if gauge_allowed => PressureKind::Gauge,
            _ => return Err(split.unknown_unit(input, kind)),
        };
        let value_pa = finite_or_error(split.number * scale, input, kind)?;
        if pressure_kind == PressureKind::Absolute && value_pa < 0.0 {
            return Err(UnitError::NegativeAbsolutePressure {
                reading: input.trim().to_string(),
                value_pa,
            });
        }
        Ok(PressureReading {
            value_pa,
            kind: pressure_kind,
        })
    }

    /// Converts to absolute pressure. The ambient is always validated (a bad altitude or ambient
    /// pressure is an error even for an absolute reading) but is only applied, and only reported
    /// in [`AbsolutePressure::ambient`], for a gauge reading.
    pub fn to_absolute(self, ambient: Ambient) -> Result<AbsolutePressure, UnitError> {
        if !self.value_pa.is_finite() {
            return Err(UnitError::NonFiniteReading {
                value_pa: self.value_pa,
            });
        }
        let used = ambient.resolve()?;
        match self.kind {
            PressureKind::Absolute => {
                if self.value_pa < 0.0 {
                    return Err(UnitError::NegativeAbsolutePressure {
                        reading: format!("{} Pa", self.value_pa),
                        value_pa: self.value_pa,
                    });
                }
                Ok(AbsolutePressure {
                    value_pa: self.value_pa,
                    reading: self,
                    ambient: None,
                })
            }
            PressureKind::Gauge => {
                let absolute_pa = self.value_pa + used.pressure_pa;
                if absolute_pa < 0.0 {
                    return Err(UnitError::BelowVacuum {
                        gauge_pa: self.value_pa,
                        ambient: used,
                        absolute_pa,
                    });
                }
                Ok(AbsolutePressure {
                    value_pa: absolute_pa,
                    reading: self,
                    ambient: Some(used),
                })
            }
        }
    }
}

impl FromStr for PressureReading {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        PressureReading::parse(s)
    }
}

/// How the ambient (atmospheric) pressure for gauge readings is obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Ambient {
    /// A measured or stated ambient pressure, Pa absolute (20 000 Pa to 130 000 Pa).
    Pressure(f64),
    /// An altitude in metres (-2000 m to 11 000 m); the ISO 2533 standard atmosphere is used.
    Altitude(f64),
}

impl Ambient {
    /// Parses an ambient pressure such as `101.3kPa`, `1013mbar`, `14.7psia`; it must be absolute
    /// and within 20 000 Pa to 130 000 Pa.
    pub fn parse_pressure(input: &str) -> Result<Self, UnitError> {
        let reading = PressureReading::parse(input)?;
        if reading.kind == PressureKind::Gauge {
            return Err(UnitError::GaugeAmbient {
                input: input.trim().to_string(),
            });
        }
        let ambient = Ambient::Pressure(reading.value_pa);
        ambient.resolve()?;
        Ok(ambient)
    }

    /// Parses a site altitude such as `350m` or `1150ft`; it must be within -2000 m to 11 000 m.
    pub fn parse_altitude(input: &str) -> Result<Self, UnitError> {
        let ambient = Ambient::Altitude(parse_metres(input, InputKind::Altitude)?);
        ambient.resolve()?;
        Ok(ambient)
    }

    /// Validates the ambient and returns the pressure it stands for, with its origin.
    pub fn resolve(self) -> Result<AmbientUsed, UnitError> {
        match self {
            Ambient::Pressure(value_pa) => {
                if !(AMBIENT_MIN_PA..=AMBIENT_MAX_PA).contains(&value_pa) {
                    return Err(UnitError::AmbientOutOfRange { value_pa });
                }
                Ok(AmbientUsed {
                    pressure_pa: value_pa,
                    source: AmbientSource::Given,
                })
            }
            Ambient::Altitude(altitude_m) => Ok(AmbientUsed {
                pressure_pa: iso_standard_atmosphere_pa(altitude_m)?,
                source: AmbientSource::StandardAtmosphere { altitude_m },
            }),
        }
    }
}

/// Where an ambient pressure came from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AmbientSource {
    /// Given directly by the user.
    Given,
    /// Computed from the ISO 2533:1975 standard atmosphere at this altitude, m.
    StandardAtmosphere {
        /// Altitude, m.
        altitude_m: f64,
    },
}

impl fmt::Display for AmbientSource {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            AmbientSource::Given => f.write_str("given"),
            AmbientSource::StandardAtmosphere { altitude_m } => {
                write!(
                    f,
                    "ISO 2533 standard atmosphere at {} m",
                    short(*altitude_m)
                )
            }
        }
    }
}

/// The ambient pressure actually used for a gauge conversion and how it was obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AmbientUsed {
    /// Ambient pressure, Pa absolute.
    pub pressure_pa: f64,
    /// How it was obtained.
    pub source: AmbientSource,
}

impl fmt::Display for AmbientUsed {
    /// E.g. `89874.6 Pa (ISO 2533 standard atmosphere at 1000 m)` or `101325.0 Pa (given)`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:.1} Pa ({})", self.pressure_pa, self.source)
    }
}

/// Result of converting a reading to absolute pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AbsolutePressure {
    /// Absolute pressure, Pa.
    pub value_pa: f64,
    /// The reading it came from.
    pub reading: PressureReading,
    /// The ambient added to a gauge reading; `None` when the reading was already absolute.
    pub ambient: Option<AmbientUsed>,
}

// ---------------------------------------------------------------------------------------------
// Output unit systems and formatting.
// ---------------------------------------------------------------------------------------------

/// Output unit system.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UnitSystem {
    /// K, Pa, J/kg, J/(kg K), kg/m3, m.
    Si,
    /// °C, bar, kJ/kg, kJ/(kg K), kg/m3, m; temperature differences in K.
    Metric,
    /// °F, psia, Btu/lb, Btu/(lb °F), lb/ft3, ft; temperature differences in Δ°F.
    Us,
}

impl UnitSystem {
    /// All systems, in the order they are listed in help text.
    pub const ALL: [UnitSystem; 3] = [UnitSystem::Si, UnitSystem::Metric, UnitSystem::Us];

    /// The name accepted on the command line: `si`, `metric` or `us`.
    pub fn name(self) -> &'static str {
        match self {
            UnitSystem::Si => "si",
            UnitSystem::Metric => "metric",
            UnitSystem::Us => "us",
        }
    }
}

impl fmt::Display for UnitSystem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for UnitSystem {
    type Err = UnitError;
    /// Parses `si`, `metric` or `us` (case-insensitive, surrounding spaces ignored).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim().to_ascii_lowercase().as_str() {
            "si" => Ok(UnitSystem::Si),
            "metric" => Ok(UnitSystem::Metric),
            "us" => Ok(UnitSystem::Us),
            _ => Err(UnitError::UnknownUnitSystem {
                input: s.trim().to_string(),
            }),
        }
    }
}

/// An output quantity; its SI unit is given on each variant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Temperature, K.
    Temperature,
    /// Temperature difference, K.
    TemperatureDifference,
    /// Absolute pressure, Pa.
    Pressure,
    /// Pressure difference (a margin or a step: neither gauge nor absolute), Pa.
    PressureDifference,
    /// Specific energy (enthalpy, internal energy, latent heat), J/kg.
    SpecificEnergy,
    /// Specific entropy or specific heat capacity, J/(kg K).
    SpecificEntropy,
    /// Density, kg/m3.
    Density,
    /// Length or altitude, m.
    Length,
}

/// Converts an SI value of `quantity` into `system`, returning the value and its unit label
/// (for CSV/JSON columns and tables).
pub fn convert(quantity: Quantity, si_value: f64, system: UnitSystem) -> (f64, &'static str) {
    use Quantity as Q;
    use UnitSystem as S;
    match (quantity, system) {
        (Q::Temperature, S::Si) => (si_value, "K"),
        (Q::Temperature, S::Metric) => (si_value - CELSIUS_ZERO_K, "°C"),
        (Q::Temperature, S::Us) => (si_value * 9.0 / 5.0 - FAHRENHEIT_ZERO_R, "°F"),
        (Q::TemperatureDifference, S::Si | S::Metric) => (si_value, "K"),
        (Q::TemperatureDifference, S::Us) => (si_value * 9.0 / 5.0, "Δ°F"),
        (Q::Pressure, S::Si) => (si_value, "Pa (abs)"),
        (Q::Pressure, S::Metric) => (si_value / BAR_PA, "bar (abs)"),
        (Q::Pressure, S::Us) => (si_value / PSI_PA, "psia"),
        (Q::PressureDifference, S::Si) => (si_value, "Pa"),
        (Q::PressureDifference, S::Metric) => (si_value / BAR_PA, "bar"),
        (Q::PressureDifference, S::Us) => (si_value / PSI_PA, "psi"),
        (Q::SpecificEnergy, S::Si) => (si_value, "J/kg"),
        (Q::SpecificEnergy, S::Metric) => (si_value / 1.0e3, "kJ/kg"),
        (Q::SpecificEnergy, S::Us) => (si_value / BTU_PER_LB_IN_J_PER_KG, "Btu/lb"),
        (Q::SpecificEntropy, S::Si) => (si_value, "J/(kg K)"),
        (Q::SpecificEntropy, S::Metric) => (si_value / 1.0e3, "kJ/(kg K)"),
        (Q::SpecificEntropy, S::Us) => (si_value / BTU_PER_LB_F_IN_J_PER_KG_K, "Btu/(lb °F)"),
        (Q::Density, S::Si | S::Metric) => (si_value, "kg/m3"),
        (Q::Density, S::Us) => (si_value / LB_PER_FT3_IN_KG_PER_M3, "lb/ft3"),
        (Q::Length, S::Si | S::Metric) => (si_value, "m"),
        (Q::Length, S::Us) => (si_value / FOOT_M, "ft"),
    }
}

/// The unit label of `quantity` in `system` (e.g. for a CSV header).
pub fn unit_label(quantity: Quantity, system: UnitSystem) -> &'static str {
    convert(quantity, 0.0, system).1
}

/// Decimal places shown for `quantity` in `system`: chosen so the last digit is finer than
/// field instrument resolution (`common practice`).
pub fn decimals(quantity: Quantity, system: UnitSystem) -> usize {
    use Quantity as Q;
    use UnitSystem as S;
    match (quantity, system) {
        (Q::Temperature | Q::TemperatureDifference, _) => 2,
        (Q::Pressure | Q::PressureDifference, S::Si) => 0,
        (Q::Pressure | Q::PressureDifference, S::Metric) => 4,
        (Q::Pressure | Q::PressureDifference, S::Us) => 3,
        (Q::SpecificEnergy, S::Si) => 0,
        (Q::SpecificEnergy, S::Metric | S::Us) => 2,
        (Q::SpecificEntropy, S::Si) => 2,
        (Q::SpecificEntropy, S::Metric | S::Us) => 4,
        (Q::Density, S::Si | S::Metric) => 3,
        (Q::Density, S::Us) => 4,
        (Q::Length, _) => 1,
    }
}

/// Formats an SI value of `quantity` in `system` as `"<value> <unit>"`, e.g. `"25.00 °C"`.
/// A value that rounds to zero is shown without a minus sign; an absolute pressure too small for
/// the fixed decimals (a triple-point pressure of a fraction of a pascal) is shown with four
/// significant digits instead, e.g. `"1.687e-9 bar (abs)"`, never as a zero.
pub fn format_quantity(quantity: Quantity, si_value: f64, system: UnitSystem) -> String {
    let (value, label) = convert(quantity, si_value, system);
    let places = decimals(quantity, system);
    let half_step = 0.5 * 10f64.powi(-(places as i32));
    if quantity == Quantity::Pressure && value > 0.0 && value < half_step {
        return format!("{value:.3e} {label}");
    }
    let value = if value.abs() < half_step { 0.0 } else { value };
    format!("{value:.places$} {label}")
}

/// Formats a temperature given in K, e.g. `fmt_temperature(298.15, Metric) == "25.00 °C"`.
pub fn fmt_temperature(kelvin: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::Temperature, kelvin, system)
}

/// Formats a temperature difference given in K: `"5.00 K"` (SI, metric) or `"9.00 Δ°F"` (US).
pub fn fmt_temperature_difference(kelvin: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::TemperatureDifference, kelvin, system)
}

/// Formats an absolute pressure given in Pa: `Pa (abs)`, `bar (abs)` or `psia`.
pub fn fmt_pressure(pa: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::Pressure, pa, system)
}

/// Formats a specific energy given in J/kg: `J/kg`, `kJ/kg` or `Btu/lb`.
pub fn fmt_specific_energy(j_per_kg: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::SpecificEnergy, j_per_kg, system)
}

/// Formats a specific entropy or heat capacity given in J/(kg K): `J/(kg K)`, `kJ/(kg K)` or
/// `Btu/(lb °F)`.
pub fn fmt_specific_entropy(j_per_kg_k: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::SpecificEntropy, j_per_kg_k, system)
}

/// Formats a density given in kg/m3: `kg/m3` or `lb/ft3`.
pub fn fmt_density(kg_per_m3: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::Density, kg_per_m3, system)
}

/// Formats a length given in m: `m` or `ft`.
pub fn fmt_length(metres: f64, system: UnitSystem) -> String {
    format_quantity(Quantity::Length, metres, system)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact definitions written out as literals, independent of the module's constants.
    const PSI_LITERAL: f64 = 6_894.757_293_168_361; // NIST SP 811 (2008) B.9: lb * g_n / in^2, exact inputs
    const MMHG_LITERAL: f64 = 133.322_387_415; // 13 595.1 kg/m3 * 9.80665 m/s2 * 1 mm, conventional (NIST SP 811 B.9)
    const INHG_LITERAL: f64 = 3_386.388_640_341; // 13 595.1 kg/m3 * 9.80665 m/s2 * 25.4 mm, conventional (NIST SP 811 B.9)

    /// Propane's triple-point pressure, 1.6869e-4 Pa (the catalogue's value, Staveley 1981),
    /// is shown with significant digits, not as zero; ordinary pressures keep fixed decimals.
    #[test]
    fn tiny_absolute_pressures_are_not_shown_as_zero() {
        let shown = format_quantity(Quantity::Pressure, 1.6869e-4, UnitSystem::Metric);
        assert_eq!(shown, "1.687e-9 bar (abs)");
        assert_eq!(
            format_quantity(Quantity::Pressure, 820_000.0, UnitSystem::Metric),
            "8.2000 bar (abs)"
        );
        assert_eq!(
            format_quantity(Quantity::TemperatureDifference, -1e-4, UnitSystem::Metric),
            "0.00 K"
        );
    }

    fn assert_close(actual: f64, expected: f64, tolerance: f64, what: &str, source: &str) {
        assert!(
            (actual - expected).abs() <= tolerance,
            "{what}: got {actual}, expected {expected} ± {tolerance} (source: {source})"
        );
    }

    fn assert_fragments(message: &str, fragments: &[&str], what: &str, source: &str) {
        for fragment in fragments {
            assert!(
                message.contains(fragment),
                "{what}: message `{message}` lacks `{fragment}` (source: {source})"
            );
        }
    }

    #[test]
    fn temperature_forms_parse_to_kelvin() {
        let c = "ISO 80000-5: T/K = t/°C + 273.15";
        let f = "NIST SP 811 (2008) B.9: T/K = (t/°F + 459.67)/1.8";
        let r = "NIST SP 811 (2008) B.9: T/K = (T/°R)/1.8";
        let k = "ISO 80000-5: kelvin";
        let rows: &[(&str, f64, &str)] = &[
            ("25C", 298.15, c),
            ("25 C", 298.15, c),
            ("25°C", 298.15, c),
            ("25 °C", 298.15, c),
            ("25degC", 298.15, c),
            ("25 deg C", 298.15, c),
            ("25ºC", 298.15, c),
            ("25℃", 298.15, c),
            ("25c", 298.15, c),
            ("25DEGC", 298.15, c),
            ("-5.5C", 267.65, c),
            ("+25C", 298.15, c),
            (" 25.00 °C ", 298.15, c),
            ("-273.15C", 0.0, c),
            ("77F", 298.15, f),
            ("77°F", 298.15, f),
            ("77 degF", 298.15, f),
            ("77f", 298.15, f),
            ("-40F", 233.15, f),
            ("-459.67F", 0.0, f),
            ("298.15K", 298.15, k),
            ("298.15 k", 298.15, k),
            ("2.9815e2K", 298.15, k),
            ("0K", 0.0, k),
            ("491.67R", 273.15, r),
            ("491.67°R", 273.15, r),
            ("491.67 r", 273.15, r),
        ];
        for (input, expected, source) in rows {
            let t = Temperature::parse(input)
                .unwrap_or_else(|e| panic!("`{input}` should parse ({source}): {e}"));
            assert_close(t.kelvin(), *expected, 1e-9, input, source);
            let via_from_str: Temperature = input.parse().expect("FromStr agrees with parse");
            assert_eq!(via_from_str, t, "{input}");
        }
    }

    #[test]
    fn temperature_bad_input_is_rejected_with_clear_messages() {
        let spec = "binodal units spec: temperature messages";
        let rows: &[(&str, &[&str], &str)] = &[
            (
                "25",
                &[
                    "`25`",
                    "a temperature needs a unit",
                    "25C, 77F, 298.15K, 491.67R",
                ],
                spec,
            ),
            ("-5.5", &["`-5.5`", "a temperature needs a unit"], spec),
            (
                "25X",
                &["`25X`", "unknown temperature unit `X`", "25C, 77F"],
                spec,
            ),
            ("25 kelvins", &["unknown temperature unit `kelvins`"], spec),
            ("25°K", &["unknown temperature unit `°K`"], spec),
            ("", &["empty temperature", "25C"], spec),
            ("   ", &["empty temperature"], spec),
            ("NaN C", &["`NaN C`", "not a finite number"], spec),
            ("nan", &["not a finite number"], spec),
            ("inf K", &["`inf K`", "not a finite number"], spec),
            ("-infinity F", &["not a finite number"], spec),
            ("1e400K", &["`1e400K`", "not a finite number"], spec),
            (
                "abc",
                &["`abc`", "a temperature must start with a number"],
                spec,
            ),
            ("°C", &["must start with a number"], spec),
            (
                "25,5C",
                &["`25,5C`", "commas are not accepted", "decimal point"],
                spec,
            ),
            (
                "-300C",
                &["`-300C`", "below absolute zero", "-26.85 K", "at least 0 K"],
                spec,
            ),
            ("-500F", &["`-500F`", "below absolute zero"], spec),
            ("-1K", &["`-1K`", "below absolute zero", "-1.00 K"], spec),
            ("-1R", &["below absolute zero"], spec),
        ];
        for (input, fragments, source) in rows {
            let err = Temperature::parse(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, source);
        }
    }

    #[test]
    fn error_variants_are_typed() {
        // binodal units spec: each failure has its own variant.
        assert!(matches!(
            Temperature::parse("25"),
            Err(UnitError::MissingUnit {
                kind: InputKind::Temperature,
                ..
            })
        ));
        assert!(matches!(
            Temperature::parse("25Q"),
            Err(UnitError::UnknownUnit { ref unit, .. }) if unit == "Q"
        ));
        assert!(matches!(
            Temperature::parse(""),
            Err(UnitError::Empty { .. })
        ));
        assert!(matches!(
            Temperature::parse("NaN"),
            Err(UnitError::NotFinite { .. })
        ));
        assert!(matches!(
            Temperature::parse("-300C"),
            Err(UnitError::BelowAbsoluteZero { .. })
        ));
        assert!(matches!(
            PressureReading::parse("8.2"),
            Err(UnitError::MissingUnit { .. })
        ));
        assert!(matches!(
            PressureReading::parse("-1bar"),
            Err(UnitError::NegativeAbsolutePressure { .. })
        ));
        assert!(matches!(
            "imperial".parse::<UnitSystem>(),
            Err(UnitError::UnknownUnitSystem { .. })
        ));
    }

    #[test]
    fn temperature_difference_forms_parse_to_kelvin() {
        let k = "ISO 80000-5: a kelvin and a Celsius degree are equal intervals";
        let f = "NIST SP 811 (2008) B.9: 1 °F (interval) = 5/9 K";
        let rows: &[(&str, f64, &str)] = &[
            ("5K", 5.0, k),
            ("5 K", 5.0, k),
            ("5C", 5.0, k),
            ("5°C", 5.0, k),
            ("5 delta K", 5.0, k),
            ("5ΔK", 5.0, k),
            ("-3K", -3.0, k),
            ("9F", 5.0, f),
            ("9°F", 5.0, f),
            ("9 Δ°F", 5.0, f),
            ("9 degF", 5.0, f),
            ("18R", 10.0, f),
            ("0.9f", 0.5, f),
        ];
        for (input, expected, source) in rows {
            let d = TemperatureDifference::parse(input)
                .unwrap_or_else(|e| panic!("`{input}` should parse ({source}): {e}"));
            assert_close(d.kelvin(), *expected, 1e-12, input, source);
        }
        let spec = "binodal units spec: temperature difference messages";
        let bad: &[(&str, &[&str], &str)] = &[
            (
                "5",
                &["`5`", "a temperature difference needs a unit", "5K, 9F"],
                spec,
            ),
            ("5X", &["unknown temperature difference unit `X`"], spec),
            ("", &["empty temperature difference"], spec),
            ("inf K", &["not a finite number"], spec),
        ];
        for (input, fragments, source) in bad {
            let err = TemperatureDifference::parse(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, source);
        }
    }

    #[test]
    fn pressure_forms_parse_with_gauge_or_absolute() {
        use PressureKind::{Absolute as A, Gauge as G};
        let bar = "NIST SP 811 (2008) B.9: bar = 1e5 Pa exactly";
        let psi = "NIST SP 811 (2008) B.9: psi from exact lb, g_n, inch";
        let si = "ISO 80000-1 SI prefixes: kPa = 1e3 Pa, MPa = 1e6 Pa";
        let atm = "NIST SP 811 (2008) B.9: atm = 101325 Pa exactly";
        let hg = "NIST SP 811 (2008) B.9: conventional mmHg and inHg";
        let rows: &[(&str, f64, PressureKind, &str)] = &[
            ("8.2bar", 820_000.0, A, bar),
            ("8.2bara", 820_000.0, A, bar),
            ("8.2bar(a)", 820_000.0, A, bar),
            ("8.2 bar (abs)", 820_000.0, A, bar),
            ("8.2 BAR", 820_000.0, A, bar),
            ("8.2barg", 820_000.0, G, bar),
            ("8.2bar(g)", 820_000.0, G, bar),
            ("8.2 bar g", 820_000.0, G, bar),
            ("8.2BARG", 820_000.0, G, bar),
            ("-0.3barg", -30_000.0, G, bar),
            ("1013.25mbar", 101_325.0, A, bar),
            ("25mbarg", 2_500.0, G, bar),
            ("120psi", 120.0 * PSI_LITERAL, A, psi),
            ("120psia", 120.0 * PSI_LITERAL, A, psi),
            ("120psi(a)", 120.0 * PSI_LITERAL, A, psi),
            ("120psig", 120.0 * PSI_LITERAL, G, psi),
            ("120 PSIG", 120.0 * PSI_LITERAL, G, psi),
            ("120psi(g)", 120.0 * PSI_LITERAL, G, psi),
            ("1.2MPa", 1.2e6, A, si),
            ("1.2mpa", 1.2e6, A, si),
            ("1.2MPag", 1.2e6, G, si),
            ("850kPa", 850_000.0, A, si),
            ("850kPaa", 850_000.0, A, si),
            ("850kPag", 850_000.0, G, si),
            ("850kPa(g)", 850_000.0, G, si),
            ("850 kpa (g)", 850_000.0, G, si),
            ("101325Pa", 101_325.0, A, si),
            ("1.01325e5Pa", 101_325.0, A, si),
            ("500Pag", 500.0, G, si),
            ("1.5atm", 151_987.5, A, atm),
            ("750mmHg", 750.0 * MMHG_LITERAL, A, hg),
            ("750 mmhg", 750.0 * MMHG_LITERAL, A, hg),
            ("30inHg", 30.0 * INHG_LITERAL, A, hg),
            ("0psia", 0.0, A, psi),
        ];
        for (input, expected, kind, source) in rows {
            let reading = PressureReading::parse(input)
                .unwrap_or_else(|e| panic!("`{input}` should parse ({source}): {e}"));
            assert_eq!(reading.kind, *kind, "{input} ({source})");
            assert_close(
                reading.value_pa,
                *expected,
                expected.abs() * 1e-12,
                input,
                source,
            );
        }
    }

    #[test]
    fn pressure_bad_input_is_rejected_with_clear_messages() {
        let spec = "binodal units spec: pressure messages";
        let rows: &[(&str, &[&str], &str)] = &[
            (
                "8.2",
                &[
                    "`8.2`",
                    "a pressure needs a unit",
                    "write psig or barg for gauge",
                ],
                spec,
            ),
            (
                "120",
                &["a pressure needs a unit", "8.2barg", "120psig"],
                spec,
            ),
            (
                "8.2 bars",
                &["`8.2 bars`", "unknown pressure unit `bars`", "barg"],
                spec,
            ),
            ("5psid", &["unknown pressure unit `psid`"], spec),
            ("1atmg", &["unknown pressure unit `atmg`", "1.5atm"], spec),
            ("29inHg(g)", &["unknown pressure unit `inHg(g)`"], spec),
            ("8.2bar(x)", &["unknown pressure unit `bar(x)`"], spec),
            ("8.2 torr", &["unknown pressure unit `torr`"], spec),
            (
                "",
                &["empty pressure", "write psig or barg for gauge"],
                spec,
            ),
            ("nan bar", &["`nan bar`", "not a finite number"], spec),
            ("inf psig", &["not a finite number"], spec),
            ("1e308MPa", &["`1e308MPa`", "not a finite number"], spec),
            (
                "-1bar",
                &[
                    "`-1bar`",
                    "negative absolute pressure",
                    "-100000.0 Pa",
                    "-0.3barg",
                ],
                spec,
            ),
            ("-14psia", &["negative absolute pressure"], spec),
            ("1,013bar", &["`1,013bar`", "commas are not accepted"], spec),
            (
                "bar",
                &["`bar`", "a pressure must start with a number"],
                spec,
            ),
        ];
        for (input, fragments, source) in rows {
            let err = PressureReading::parse(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, source);
        }
    }

    #[test]
    fn iso_standard_atmosphere_matches_table() {
        let table = "ISO 2533:1975 table (geopotential altitude)";
        let rows: &[(f64, f64, &str)] = &[
            (0.0, 101_325.0, table),
            (1_000.0, 89_874.6, table),
            (2_000.0, 79_495.2, table),
            (11_000.0, 22_632.1, "ISO 2533:1975 table, from memory"),
            (-2_000.0, 127_774.0, "ISO 2533:1975 table, from memory"),
        ];
        for (altitude, expected, source) in rows {
            let p = iso_standard_atmosphere_pa(*altitude).expect("in range");
            assert_close(p, *expected, 1.0, &format!("{altitude} m"), source);
        }
        let spec = "binodal units spec: ISO 2533 troposphere range -2000 m to 11000 m";
        for altitude in [-2_000.1, 11_000.1, 20_000.0, f64::NAN, f64::INFINITY] {
            let err = iso_standard_atmosphere_pa(altitude).expect_err("out of range");
            assert_fragments(&err.to_string(), &["-2000 m to 11000 m"], "altitude", spec);
        }
    }

    #[test]
    fn gauge_readings_use_the_standard_atmosphere_at_altitude() {
        let table = "ISO 2533:1975 table (geopotential altitude)";
        // (reading, altitude m, ambient from the table Pa, expected absolute Pa, source)
        let rows: &[(&str, f64, f64, f64, &str)] = &[
            ("0barg", 0.0, 101_325.0, 101_325.0, table),
            ("0barg", 1_000.0, 89_874.6, 89_874.6, table),
            ("0psig", 2_000.0, 79_495.2, 79_495.2, table),
            ("8.2barg", 1_000.0, 89_874.6, 820_000.0 + 89_874.6, table),
            ("850kPa(g)", 2_000.0, 79_495.2, 850_000.0 + 79_495.2, table),
            ("-0.5barg", 0.0, 101_325.0, 101_325.0 - 50_000.0, table),
        ];
        for (input, altitude, ambient, expected, source) in rows {
            let reading = PressureReading::parse(input).expect(input);
            let abs = reading
                .to_absolute(Ambient::Altitude(*altitude))
                .expect(input);
            assert_close(abs.value_pa, *expected, 1.0, input, source);
            let used = abs.ambient.expect("gauge reading reports its ambient");
            assert_eq!(
                used.source,
                AmbientSource::StandardAtmosphere {
                    altitude_m: *altitude
                }
            );
            assert_close(used.pressure_pa, *ambient, 1.0, input, source);
            assert_eq!(abs.reading, reading);
        }
        // The ambient is described for printing (binodal units spec).
        let abs = PressureReading::parse("0barg")
            .unwrap()
            .to_absolute(Ambient::Altitude(1_000.0))
            .unwrap();
        assert_eq!(
            abs.ambient.unwrap().to_string(),
            "89874.6 Pa (ISO 2533 standard atmosphere at 1000 m)" // ISO 2533:1975 table
        );
    }

    #[test]
    fn gauge_readings_with_an_explicit_ambient() {
        let bar = "NIST SP 811 (2008) B.9: bar = 1e5 Pa, atm = 101325 Pa";
        let psi = "NIST SP 811 (2008) B.9: psi from exact lb, g_n, inch";
        let rows: &[(&str, f64, f64, &str)] = &[
            ("8.2barg", 101_325.0, 921_325.0, bar),
            ("8.2bar(g)", 95_000.0, 915_000.0, bar),
            ("120psig", 101_325.0, 120.0 * PSI_LITERAL + 101_325.0, psi),
            ("850kPag", 98_000.0, 948_000.0, bar),
            ("-14.5psig", 101_325.0, 101_325.0 - 14.5 * PSI_LITERAL, psi),
        ];
        for (input, ambient, expected, source) in rows {
            let abs = PressureReading::parse(input)
                .unwrap()
                .to_absolute(Ambient::Pressure(*ambient))
                .unwrap_or_else(|e| panic!("{input}: {e}"));
            assert_close(abs.value_pa, *expected, expected * 1e-12, input, source);
            assert_eq!(
                abs.ambient,
                Some(AmbientUsed {
                    pressure_pa: *ambient,
                    source: AmbientSource::Given
                })
            );
        }
        // An absolute reading is not changed and reports no ambient (binodal units spec).
        let abs = PressureReading::parse("8.2bara")
            .unwrap()
            .to_absolute(Ambient::Pressure(90_000.0))
            .unwrap();
        let bar = "NIST SP 811 (2008) B.9: bar = 1e5 Pa";
        assert_close(abs.value_pa, 820_000.0, 1e-6, "8.2bara", bar);
        assert_eq!(abs.ambient, None);
        // Ambient typed by the user (NIST SP 811 B.9: mbar = 100 Pa, psi as above).
        assert_eq!(
            Ambient::parse_pressure("1013.25 mbar"),
            Ok(Ambient::Pressure(101_325.0))
        );
        match Ambient::parse_pressure("14.7psia") {
            Ok(Ambient::Pressure(pa)) => {
                assert_close(pa, 14.7 * PSI_LITERAL, 1e-9, "14.7psia", psi)
            }
            other => panic!("14.7psia: {other:?}"),
        }
        match Ambient::parse_altitude("1150ft") {
            // NIST SP 811 B.9: ft = 0.3048 m exactly
            Ok(Ambient::Altitude(m)) => assert_close(m, 350.52, 1e-9, "1150ft", "NIST SP 811 B.9"),
            other => panic!("1150ft: {other:?}"),
        }
    }

    #[test]
    fn gauge_below_vacuum_and_bad_ambients_are_errors() {
        let spec = "binodal units spec: gauge/ambient messages";
        let err = PressureReading::parse("-1.2barg")
            .unwrap()
            .to_absolute(Ambient::Altitude(1_000.0))
            .expect_err("below vacuum at 1000 m");
        assert_fragments(
            &err.to_string(),
            &[
                "-120000.0 Pa(g)",
                "-1.2000 barg",
                "below perfect vacuum",
                "89874.6 Pa (ISO 2533 standard atmosphere at 1000 m)",
                "-30125.4 Pa absolute",
                "at least -89874.6 Pa(g)",
            ],
            "-1.2barg at 1000 m",
            spec,
        );
        let err = PressureReading::parse("-15psig")
            .unwrap()
            .to_absolute(Ambient::Pressure(101_325.0))
            .expect_err("below vacuum at 1 atm");
        assert_fragments(&err.to_string(), &["101325.0 Pa (given)"], "-15psig", spec);

        // Exactly perfect vacuum is allowed: 0 Pa absolute.
        let edge = PressureReading {
            value_pa: -101_325.0,
            kind: PressureKind::Gauge,
        }
        .to_absolute(Ambient::Pressure(101_325.0))
        .expect("perfect vacuum is allowed");
        assert_eq!(edge.value_pa, 0.0);

        let gauge = PressureReading {
            value_pa: 0.0,
            kind: PressureKind::Gauge,
        };
        let bad: &[(Ambient, &[&str])] = &[
            (
                Ambient::Pressure(5_000.0),
                &["ambient pressure 5000 Pa", "20000 Pa to 130000 Pa"],
            ),
            (Ambient::Pressure(250_000.0), &["20000 Pa to 130000 Pa"]),
            (Ambient::Pressure(f64::NAN), &["20000 Pa to 130000 Pa"]),
            (
                Ambient::Altitude(12_000.0),
                &["altitude 12000 m", "-2000 m to 11000 m"],
            ),
            (Ambient::Altitude(-2_500.0), &["-2000 m to 11000 m"]),
        ];
        for (ambient, fragments) in bad {
            let err = gauge.to_absolute(*ambient).expect_err("bad ambient");
            assert_fragments(&err.to_string(), fragments, &format!("{ambient:?}"), spec);
            // An absolute reading is checked against the same ambient rules.
            let absolute = PressureReading {
                value_pa: 1e5,
                kind: PressureKind::Absolute,
            };
            assert!(absolute.to_absolute(*ambient).is_err(), "{ambient:?}");
        }
        let nan = PressureReading {
            value_pa: f64::NAN,
            kind: PressureKind::Gauge,
        };
        let err = nan
            .to_absolute(Ambient::Pressure(101_325.0))
            .expect_err("NaN reading");
        assert_fragments(&err.to_string(), &["not a finite number"], "NaN", spec);
        let neg = PressureReading {
            value_pa: -5.0,
            kind: PressureKind::Absolute,
        };
        let err = neg
            .to_absolute(Ambient::Pressure(101_325.0))
            .expect_err("negative absolute");
        assert_fragments(
            &err.to_string(),
            &["negative absolute pressure"],
            "-5 Pa",
            spec,
        );

        let text_rows: &[(&str, &[&str])] = &[
            ("1barg", &["`1barg`", "must be absolute, not gauge"]),
            ("5kPa", &["20000 Pa to 130000 Pa"]),
            ("1013", &["a pressure needs a unit"]),
        ];
        for (input, fragments) in text_rows {
            let err = Ambient::parse_pressure(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, spec);
        }
        let alt_rows: &[(&str, &[&str])] = &[
            ("40000ft", &["-2000 m to 11000 m"]),
            (
                "350",
                &["`350`", "an altitude needs a unit", "350m, 1150ft"],
            ),
            ("350 yd", &["unknown altitude unit `yd`"]),
        ];
        for (input, fragments) in alt_rows {
            let err = Ambient::parse_altitude(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, spec);
        }
    }

    #[test]
    fn constants_match_exact_definitions() {
        let rows: &[(&str, f64, f64, f64, &str)] = &[
            (
                "psi",
                PSI_PA,
                PSI_LITERAL,
                1e-9,
                "NIST SP 811 (2008) B.9, exact lb, g_n, inch",
            ),
            (
                "psi (table)",
                PSI_PA,
                6_894.757,
                0.0005,
                "NIST SP 811 (2008) B.9: 6.894 757 E+03",
            ),
            (
                "bar",
                BAR_PA,
                100_000.0,
                0.0,
                "NIST SP 811 (2008) B.9: 1.0 E+05 exact",
            ),
            (
                "atm",
                ATM_PA,
                101_325.0,
                0.0,
                "NIST SP 811 (2008) B.9: 1.013 25 E+05 exact",
            ),
            (
                "mmHg",
                MMHG_PA,
                MMHG_LITERAL,
                1e-12,
                "conventional mmHg, NIST SP 811 (2008) B.9",
            ),
            (
                "inHg",
                INHG_PA,
                INHG_LITERAL,
                1e-9,
                "conventional inHg, NIST SP 811 (2008) B.9",
            ),
            (
                "inHg (table)",
                INHG_PA,
                3_386.389,
                0.0005,
                "NIST SP 811 (2008) B.9: 3.386 389 E+03",
            ),
            (
                "ft",
                FOOT_M,
                0.3048,
                0.0,
                "NIST SP 811 (2008) B.9: 3.048 E-01 exact",
            ),
            (
                "lb",
                POUND_KG,
                0.453_592_37,
                0.0,
                "NIST SP 811 (2008) B.9: 4.535 923 7 E-01 exact",
            ),
            (
                "Btu_IT",
                BTU_IT_J,
                1_055.055_852_62,
                0.0,
                "NIST SP 811 B.9: 2326 J/kg * lb, exact",
            ),
            (
                "Btu/lb",
                BTU_PER_LB_IN_J_PER_KG,
                2_326.0,
                1e-9,
                "NIST SP 811 (2008) B.9: 2.326 E+03 exact",
            ),
            (
                "Btu/(lb °F)",
                BTU_PER_LB_F_IN_J_PER_KG_K,
                4_186.8,
                1e-9,
                "NIST SP 811 (2008) B.9: 4.1868 E+03 exact",
            ),
            (
                "lb/ft3",
                LB_PER_FT3_IN_KG_PER_M3,
                16.018_46,
                0.000_005,
                "NIST SP 811 (2008) B.9: 1.601 846 E+01",
            ),
        ];
        for (what, actual, expected, tolerance, source) in rows {
            assert_close(*actual, *expected, *tolerance, what, source);
        }
    }

    #[test]
    fn conversions_to_output_systems() {
        use Quantity as Q;
        use UnitSystem::{Metric, Si, Us};
        let f = "NIST SP 811 (2008) B.9: t/°F = T/K * 1.8 - 459.67";
        let c = "ISO 80000-5: t/°C = T/K - 273.15";
        let rows: &[(Quantity, f64, UnitSystem, f64, &str, &str)] = &[
            (Q::Temperature, 273.15, Us, 32.0, "°F", f),
            (Q::Temperature, 233.15, Us, -40.0, "°F", f),
            (Q::Temperature, 0.0, Us, -459.67, "°F", f),
            (Q::Temperature, 298.15, Metric, 25.0, "°C", c),
            (Q::Temperature, 0.0, Metric, -273.15, "°C", c),
            (Q::Temperature, 298.15, Si, 298.15, "K", c),
            (Q::TemperatureDifference, 5.0, Us, 9.0, "Δ°F", f),
            (Q::TemperatureDifference, 5.0, Metric, 5.0, "K", c),
            (
                Q::Pressure,
                PSI_LITERAL,
                Us,
                1.0,
                "psia",
                "NIST SP 811 B.9 psi",
            ),
            (
                Q::Pressure,
                101_325.0,
                Metric,
                1.013_25,
                "bar (abs)",
                "NIST SP 811 B.9 atm, bar",
            ),
            (Q::Pressure, 101_325.0, Si, 101_325.0, "Pa (abs)", "SI"),
            (
                Q::PressureDifference,
                PSI_LITERAL,
                Us,
                1.0,
                "psi",
                "NIST SP 811 B.9 psi",
            ),
            (
                Q::PressureDifference,
                50_000.0,
                Metric,
                0.5,
                "bar",
                "NIST SP 811 B.9 bar",
            ),
            (Q::PressureDifference, 1_500.0, Si, 1_500.0, "Pa", "SI"),
            (
                Q::SpecificEnergy,
                2_326.0,
                Us,
                1.0,
                "Btu/lb",
                "NIST SP 811 B.9: 2.326 E+03",
            ),
            (
                Q::SpecificEnergy,
                250_000.0,
                Metric,
                250.0,
                "kJ/kg",
                "ISO 80000-1 prefix k",
            ),
            (Q::SpecificEnergy, 250_000.0, Si, 250_000.0, "J/kg", "SI"),
            (
                Q::SpecificEntropy,
                4_186.8,
                Us,
                1.0,
                "Btu/(lb °F)",
                "NIST SP 811 B.9: 4.1868 E+03",
            ),
            (
                Q::SpecificEntropy,
                1_500.0,
                Metric,
                1.5,
                "kJ/(kg K)",
                "ISO 80000-1 prefix k",
            ),
            (Q::SpecificEntropy, 1_500.0, Si, 1_500.0, "J/(kg K)", "SI"),
            (
                Q::Density,
                16.018_463_373_960_138,
                Us,
                1.0,
                "lb/ft3",
                "NIST SP 811 B.9 lb, ft",
            ),
            (Q::Density, 1_000.0, Metric, 1_000.0, "kg/m3", "SI"),
            (
                Q::Length,
                0.3048,
                Us,
                1.0,
                "ft",
                "NIST SP 811 B.9: ft = 0.3048 m",
            ),
            (Q::Length, 350.0, Metric, 350.0, "m", "SI"),
        ];
        for (quantity, si, system, expected, label, source) in rows {
            let (value, unit) = convert(*quantity, *si, *system);
            let what = format!("{quantity:?} {si} in {system}");
            assert_close(
                value,
                *expected,
                1e-9 * expected.abs().max(1.0),
                &what,
                source,
            );
            assert_eq!(unit, *label, "{what}");
            assert_eq!(unit_label(*quantity, *system), *label, "{what}");
        }
    }

    #[test]
    fn formatting_shows_value_and_unit() {
        use UnitSystem::{Metric, Si, Us};
        type Fmt = fn(f64, UnitSystem) -> String;
        let rows: &[(Fmt, f64, UnitSystem, &str, &str)] = &[
            (fmt_temperature, 298.15, Metric, "25.00 °C", "ISO 80000-5"),
            (fmt_temperature, 298.15, Us, "77.00 °F", "NIST SP 811 B.9"),
            (fmt_temperature, 298.15, Si, "298.15 K", "SI"),
            (
                fmt_temperature,
                273.1549,
                Metric,
                "0.00 °C",
                "ISO 80000-5; no '-0.00'",
            ),
            (
                fmt_temperature_difference,
                5.0,
                Us,
                "9.00 Δ°F",
                "NIST SP 811 B.9",
            ),
            (
                fmt_temperature_difference,
                5.0,
                Metric,
                "5.00 K",
                "ISO 80000-5",
            ),
            (
                fmt_pressure,
                101_325.0,
                Si,
                "101325 Pa (abs)",
                "NIST SP 811 B.9 atm",
            ),
            (
                fmt_pressure,
                1_234_560.0,
                Metric,
                "12.3456 bar (abs)",
                "NIST SP 811 B.9 bar",
            ),
            (
                fmt_pressure,
                101_325.0,
                Us,
                "14.696 psia",
                "NIST SP 811 B.9 atm, psi",
            ),
            (
                fmt_pressure,
                1.0e5,
                Metric,
                "1.0000 bar (abs)",
                "NIST SP 811 B.9 bar",
            ),
            (
                fmt_specific_energy,
                2_326.0,
                Us,
                "1.00 Btu/lb",
                "NIST SP 811 B.9",
            ),
            (
                fmt_specific_energy,
                250_000.0,
                Metric,
                "250.00 kJ/kg",
                "ISO 80000-1",
            ),
            (fmt_specific_energy, 250_000.0, Si, "250000 J/kg", "SI"),
            (
                fmt_specific_entropy,
                4_186.8,
                Us,
                "1.0000 Btu/(lb °F)",
                "NIST SP 811 B.9",
            ),
            (
                fmt_specific_entropy,
                1_234.5,
                Metric,
                "1.2345 kJ/(kg K)",
                "ISO 80000-1",
            ),
            (
                fmt_density,
                1_000.0,
                Us,
                "62.4280 lb/ft3",
                "NIST SP 811 B.9: 62.42796 lb/ft3",
            ),
            (fmt_density, 1_000.0, Metric, "1000.000 kg/m3", "SI"),
            (
                fmt_length,
                350.52,
                Us,
                "1150.0 ft",
                "NIST SP 811 B.9: ft = 0.3048 m",
            ),
            (fmt_length, 350.0, Si, "350.0 m", "SI"),
        ];
        for (format, si, system, expected, source) in rows {
            assert_eq!(
                format(*si, *system),
                *expected,
                "{si} in {system} ({source})"
            );
        }
    }

    #[test]
    fn formatted_readings_parse_back() {
        // Round trip: formatting then parsing returns the SI value to within half of the last
        // printed digit (converted to SI). Source: identity of the conversions above.
        let systems = UnitSystem::ALL;
        for kelvin in [0.0, 200.0, 253.15, 298.15, 310.987_6, 647.096] {
            for system in systems {
                let text = fmt_temperature(kelvin, system);
                let back = Temperature::parse(&text).unwrap_or_else(|e| panic!("{text}: {e}"));
                let half_step = if system == UnitSystem::Us {
                    0.005 * 5.0 / 9.0
                } else {
                    0.005
                };
                assert_close(back.kelvin(), kelvin, half_step + 1e-9, &text, "round trip");
            }
        }
        for kelvin in [-3.0, 0.5, 5.0, 12.345] {
            for system in systems {
                let text = fmt_temperature_difference(kelvin, system);
                let back = TemperatureDifference::parse(&text).unwrap_or_else(|e| panic!("{e}"));
                let half_step = if system == UnitSystem::Us {
                    0.005 * 5.0 / 9.0
                } else {
                    0.005
                };
                assert_close(back.kelvin(), kelvin, half_step + 1e-9, &text, "round trip");
            }
        }
        for pa in [0.0, 1_000.0, 101_325.0, 1_234_567.0, 5.0e6] {
            for system in systems {
                let text = fmt_pressure(pa, system);
                let back = PressureReading::parse(&text).unwrap_or_else(|e| panic!("{e}"));
                assert_eq!(back.kind, PressureKind::Absolute, "{text}");
                let half_step = match system {
                    UnitSystem::Si => 0.5,
                    UnitSystem::Metric => 0.000_05 * BAR_PA,
                    UnitSystem::Us => 0.000_5 * PSI_PA,
                };
                assert_close(back.value_pa, pa, half_step + 1e-6, &text, "round trip");
            }
        }
        for metres in [0.0, 350.0, 1_234.56] {
            for system in systems {
                let text = fmt_length(metres, system);
                let back = Length::parse(&text).unwrap_or_else(|e| panic!("{e}"));
                let half_step = if system == UnitSystem::Us {
                    0.05 * FOOT_M
                } else {
                    0.05
                };
                assert_close(back.metres(), metres, half_step + 1e-9, &text, "round trip");
            }
        }
    }

    #[test]
    fn lengths_parse_and_negative_lengths_fail() {
        let ft = "NIST SP 811 (2008) B.9: ft = 0.3048 m exactly";
        let rows: &[(&str, f64, &str)] = &[
            ("350m", 350.0, "SI"),
            ("350 M", 350.0, "SI"),
            ("1150ft", 350.52, ft),
            ("1150 FT", 350.52, ft),
            ("0m", 0.0, "SI"),
        ];
        for (input, expected, source) in rows {
            let length = Length::parse(input).unwrap_or_else(|e| panic!("{input}: {e}"));
            assert_close(length.metres(), *expected, 1e-9, input, source);
        }
        let spec = "binodal units spec: length messages";
        let bad: &[(&str, &[&str])] = &[
            ("-5m", &["`-5m`", "a length must be at least 0 m"]),
            ("350", &["`350`", "a length needs a unit", "350m, 1150ft"]),
            ("350 km", &["unknown length unit `km`"]),
        ];
        for (input, fragments) in bad {
            let err = Length::parse(input).expect_err(input);
            assert_fragments(&err.to_string(), fragments, input, spec);
        }
    }

    #[test]
    fn message_numbers_are_short() {
        // binodal units spec: numbers in messages show at most one decimal.
        let rows: &[(f64, &str)] = &[
            (1_000.0, "1000"),
            (350.52, "350.5"),
            (12_192.000_000_000_002, "12192"),
            (-0.01, "0"),
            (-2_500.0, "-2500"),
            (f64::NAN, "NaN"),
            (1e300, "1e300"),
            (-2.5e20, "-2.5e20"),
        ];
        for (value, expected) in rows {
            assert_eq!(short(*value), *expected, "{value}");
        }
    }

    #[test]
    fn unit_systems_parse() {
        let spec = "binodal units spec: unit system names";
        let rows: &[(&str, UnitSystem, &str)] = &[
            ("si", UnitSystem::Si, spec),
            ("SI", UnitSystem::Si, spec),
            (" metric ", UnitSystem::Metric, spec),
            ("Metric", UnitSystem::Metric, spec),
            ("us", UnitSystem::Us, spec),
            ("US", UnitSystem::Us, spec),
        ];
        for (input, expected, source) in rows {
            assert_eq!(
                input.parse::<UnitSystem>(),
                Ok(*expected),
                "{input} ({source})"
            );
        }
        for system in UnitSystem::ALL {
            assert_eq!(
                system.to_string().parse::<UnitSystem>(),
                Ok(system),
                "{spec}"
            );
        }
        for input in ["imperial", "", "metres"] {
            let err = input.parse::<UnitSystem>().expect_err(input);
            assert_fragments(
                &err.to_string(),
                &["unknown unit system", "si", "metric", "us"],
                input,
                spec,
            );
        }
    }
}
