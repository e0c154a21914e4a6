//! The generic two-parameter cubic and the models it covers.
//!
//! All models share one form (Michelsen and Mollerup, *Thermodynamic Models:
//! Fundamentals and Computational Aspects*, 2nd ed., 2007, ch. 3):
//!
//! ```text
//! P = R T / (V - b) - a(T) / ((V + delta1 b) (V + delta2 b))
//! a(T) = Omega_a R^2 Tc^2 / Pc * alpha(T),   b = Omega_b R Tc / Pc
//! ```

use crate::alpha::Alpha;
use crate::error::{Error, ErrorKind};
use std::fmt;
use std::str::FromStr;

/// A cubic equation of state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Model {
    /// van der Waals (1873).
    VanDerWaals,
    /// Redlich and Kwong (1949), alpha = Tr^-0.5.
    RedlichKwong,
    /// Soave (1972) modification of Redlich-Kwong.
    SoaveRedlichKwong,
    /// Peng and Robinson (1976).
    PengRobinson1976,
    /// Peng and Robinson as revised in 1978: a cubic kappa polynomial for acentric factors
    /// above 0.491, otherwise identical to 1976.
    PengRobinson1978,
}

/// The constants of one model in the generic cubic form.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CubicConstants {
    /// First volume constant.
    pub delta1: f64,
    /// Second volume constant.
    pub delta2: f64,
    /// Attraction constant.
    pub omega_a: f64,
    /// Co-volume constant.
    pub omega_b: f64,
}

impl CubicConstants {
    /// Critical compressibility factor of the model: the triple root of the Z cubic
    /// at the critical point, `Zc = (1 + Omega_b (1 - delta1 - delta2)) / 3`.
    pub fn critical_compressibility(&self) -> f64 {
        (1.0 + self.omega_b * (1.0 - self.delta1 - self.delta2)) / 3.0
    }
}

impl Model {
    /// Every model, in order of publication.
    pub const ALL: [Model; 5] = [
        Model::VanDerWaals,
        Model::RedlichKwong,
        Model::SoaveRedlichKwong,
        Model::PengRobinson1976,
        Model::PengRobinson1978,
    ];

    /// A stable, lowercase identifier, e.g. `peng-robinson-1978`.
    pub fn id(self) -> &'static str {
        match self {
            Model::VanDerWaals => "van-der-waals",
            Model::RedlichKwong => "redlich-kwong",
            Model::SoaveRedlichKwong => "soave-redlich-kwong",
            Model::PengRobinson1976 => "peng-robinson-1976",
            Model::PengRobinson1978 => "peng-robinson-1978",
        }
    }

    /// A readable name, e.g. `Peng-Robinson (1978)`.
    pub fn display_name(self) -> &'static str {
        match self {
            Model::VanDerWaals => "van der Waals (1873)",
            Model::RedlichKwong => "Redlich-Kwong (1949)",
            Model::SoaveRedlichKwong => "Soave-Redlich-Kwong (1972)",
            Model::PengRobinson1976 => "Peng-Robinson (1976)",
            Model::PengRobinson1978 => "Peng-Robinson (1978)",
        }
    }

    /// The model's constants in the generic cubic form. The Omega values are the exact
    /// solutions of the critical conditions, not the rounded published figures.
    pub fn constants(self) -> CubicConstants {
        match self {
            Model::VanDerWaals => CubicConstants {
                delta1: 0.0,
                delta2: 0.0,
                omega_a: 27.0 / 64.0,
                omega_b: 0.125,
            },
            Model::RedlichKwong | Model::SoaveRedlichKwong => {
                let c = 2f64.powf(1.0 / 3.0) - 1.0;
                CubicConstants {
                    delta1: 1.0,
                    delta2: 0.0,
                    omega_a: 1.0 / (9.0 * c),
                    omega_b: c / 3.0,
                }
            }
            Model::PengRobinson1976 | Model::PengRobinson1978 => {
                let s2 = std::f64::consts::SQRT_2;
                // The critical conditions solved to double precision; Peng and Robinson
                // (1976) print the rounded values 0.45724 and 0.07780.
                CubicConstants {
                    delta1: 1.0 + s2,
                    delta2: 1.0 - s2,
                    omega_a: 0.457_235_528_921_382_1,
                    omega_b: 0.077_796_073_903_888_44,
                }
            }
        }
    }

    /// The model's own generalized alpha function for a fluid of acentric factor `omega`.
    pub fn generalized_alpha(self, omega: f64) -> Alpha {
        match self {
            Model::VanDerWaals => Alpha::Unity,
            Model::RedlichKwong => Alpha::InverseSqrt,
            // Soave (1972), Chem. Eng. Sci. 27, 1197.
            Model::SoaveRedlichKwong => Alpha::Soave {
                m: 0.480 + 1.574 * omega - 0.176 * omega * omega,
            },
            // Peng and Robinson (1976), Ind. Eng. Chem. Fundam. 15, 59.
            Model::PengRobinson1976 => Alpha::Soave {
                m: pr76_kappa(omega),
            },
            // Robinson and Peng (1978), GPA Research Report RR-28.
            Model::PengRobinson1978 => {
                if omega > 0.491 {
                    Alpha::Soave {
                        m: 0.379_642 + 1.485_03 * omega - 0.164_423 * omega * omega
                            + 0.016_666 * omega * omega * omega,
                    }
                } else {
                    Alpha::Soave {
                        m: pr76_kappa(omega),
                    }
                }
            }
        }
    }
}

fn pr76_kappa(omega: f64) -> f64 {
    0.374_64 + 1.542_26 * omega - 0.269_92 * omega * omega
}

impl fmt::Display for Model {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.id())
    }
}

impl FromStr for Model {
    type Err = Error;

    /// Parses an identifier (`peng-robinson-1978`) or a common short form (`pr78`, `srk`),
    /// ignoring case, spaces, dashes and underscores.
    fn from_str(s: &str) -> Result<Model, Error> {
        let key: String = s
            .chars()
            .filter(|c| c.is_ascii_alphanumeric())
            .map(|c| c.to_ascii_lowercase())
            .collect();
        let model = match key.as_str() {
            "vanderwaals" | "vdw" => Model::VanDerWaals,
            "redlichkwong" | "rk" => Model::RedlichKwong,
            "soaveredlichkwong" | "srk" | "soave" => Model::SoaveRedlichKwong,
            "pengrobinson1976" | "pr76" | "pr1976" => Model::PengRobinson1976,
            "pengrobinson1978" | "pr78" | "pr1978" | "pr" | "pengrobinson" => {
                Model::PengRobinson1978
            }
            _ => {
                return Err(Error::new(ErrorKind::UnknownModel {
                    name: s.to_string(),
                }));
            }
        };
        Ok(model)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Critical conditions: at Tc, Pc the Z cubic has a triple root, so with
    /// A = Omega_a and B = Omega_b the cubic equals (Z - Zc)^3. Published critical
    /// compressibilities (Poling, Prausnitz, O'Connell 2001, table 4-6): vdW 3/8,
    /// RK/SRK 1/3, PR 0.3074.
    #[test]
    fn omega_constants_satisfy_the_critical_conditions() {
        let published_zc = [
            (Model::VanDerWaals, 0.375),
            (Model::SoaveRedlichKwong, 1.0 / 3.0),
            (Model::PengRobinson1976, 0.3074),
        ];
        for (model, zc_pub) in published_zc {
            let c = model.constants();
            let (a, b) = (c.omega_a, c.omega_b);
            let [c2, c1, c0] = crate::cubic::compressibility_cubic(a, b, c.delta1, c.delta2);
            let zc = c.critical_compressibility();
            // (Z - zc)^3 = Z^3 - 3 zc Z^2 + 3 zc^2 Z - zc^3
            assert!((c2 + 3.0 * zc).abs() < 1e-12, "{model}");
            assert!(
                (c1 - 3.0 * zc * zc).abs() < 1e-12,
                "{model}: c1 {c1} vs {}",
                3.0 * zc * zc
            );
            assert!((c0 + zc * zc * zc).abs() < 1e-12, "{model}");
            assert!(
                (zc - zc_pub).abs() < 1e-4,
                "{model}: Zc {zc} vs published {zc_pub}"
            );
        }
    }

    #[test]
    fn parses_ids_and_short_forms() {
        for m in Model::ALL {
            assert_eq!(m.id().parse::<Model>().unwrap(), m);
        }
        assert_eq!("PR78".parse::<Model>().unwrap(), Model::PengRobinson1978);
        assert_eq!(
            "Soave Redlich Kwong".parse::<Model>().unwrap(),
            Model::SoaveRedlichKwong
        );
        let err = "bwr".parse::<Model>().unwrap_err();
        assert!(err.to_string().contains("peng-robinson-1978"), "{err}");
    }
}
