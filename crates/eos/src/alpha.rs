//! Alpha functions: the temperature dependence of the attraction parameter,
//! `a(T) = a_c alpha(Tr)`, with the first and second derivatives that enthalpy,
//! entropy and heat capacities need.

/// An alpha function of reduced temperature `Tr = T / Tc`. Every form equals 1 at `Tr = 1`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Alpha {
    /// `alpha = 1` (van der Waals).
    Unity,
    /// `alpha = Tr^-0.5` (Redlich-Kwong).
    InverseSqrt,
    /// `alpha = (1 + m (1 - sqrt Tr))^2` (Soave 1972; Peng-Robinson 1976/1978 with their own m).
    Soave {
        /// Slope parameter, from the acentric factor.
        m: f64,
    },
    /// Twu, Bluck, Cunningham and Coon (1991), Fluid Phase Equilib. 69, 33:
    /// `alpha = Tr^(N (M - 1)) exp(L (1 - Tr^(N M)))`.
    Twu {
        /// L parameter.
        l: f64,
        /// M parameter.
        m: f64,
        /// N parameter.
        n: f64,
    },
    /// Mathias and Copeman (1983), Fluid Phase Equilib. 13, 91:
    /// `alpha = (1 + c1 x + c2 x^2 + c3 x^3)^2`, `x = 1 - sqrt Tr`, below Tc; above Tc only
    /// the c1 term is kept, as in the original paper.
    MathiasCopeman {
        /// First coefficient.
        c1: f64,
        /// Second coefficient.
        c2: f64,
        /// Third coefficient.
        c3: f64,
    },
}

/// alpha and its derivatives with respect to reduced temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlphaValue {
    /// alpha(Tr).
    pub value: f64,
    /// d alpha / d Tr.
    pub d1: f64,
    /// d^2 alpha / d Tr^2.
    pub d2: f64,
}

impl Alpha {
    /// A short identifier for reports, e.g. `twu-1991`.
    pub fn id(&self) -> &'static str {
        match self {
            Alpha::Unity => "constant",
            Alpha::InverseSqrt => "inverse-square-root",
            Alpha::Soave { .. } => "soave-type-generalized",
            Alpha::Twu { .. } => "twu-1991",
            Alpha::MathiasCopeman { .. } => "mathias-copeman-1983",
        }
    }

    /// alpha and its first two derivatives at reduced temperature `tr > 0`.
    pub fn eval(&self, tr: f64) -> AlphaValue {
        match *self {
            Alpha::Unity => AlphaValue {
                value: 1.0,
                d1: 0.0,
                d2: 0.0,
            },
            Alpha::InverseSqrt => {
                let s = tr.sqrt();
                AlphaValue {
                    value: 1.0 / s,
                    d1: -0.5 / (tr * s),
                    d2: 0.75 / (tr * tr * s),
                }
            }
            Alpha::Soave { m } => polynomial_in_sqrt(tr, m, 0.0, 0.0),
            Alpha::MathiasCopeman { c1, c2, c3 } => {
                if tr < 1.0 {
                    polynomial_in_sqrt(tr, c1, c2, c3)
                } else {
                    polynomial_in_sqrt(tr, c1, 0.0, 0.0)
                }
            }
            Alpha::Twu { l, m, n } => {
                let nm = n * m;
                let ln_tr = tr.ln();
                let tr_nm = (nm * ln_tr).exp();
                let value = ((n * (m - 1.0)) * ln_tr + l * (1.0 - tr_nm)).exp();
                // g = d ln(alpha) / d Tr
                let g = n * (m - 1.0) / tr - l * nm * tr_nm / tr;
                let dg = -n * (m - 1.0) / (tr * tr) - l * nm * (nm - 1.0) * tr_nm / (tr * tr);
                AlphaValue {
                    value,
                    d1: value * g,
                    d2: value * (g * g + dg),
                }
            }
        }
    }
}

/// `alpha = f^2` with `f = 1 + c1 x + c2 x^2 + c3 x^3`, `x = 1 - sqrt(Tr)`.
fn polynomial_in_sqrt(tr: f64, c1: f64, c2: f64, c3: f64) -> AlphaValue {
    let s = tr.sqrt();
    let x = 1.0 - s;
    let f = 1.0 + x * (c1 + x * (c2 + x * c3));
    let f_x = c1 + x * (2.0 * c2 + 3.0 * c3 * x);
    let f_xx = 2.0 * c2 + 6.0 * c3 * x;
    let dx = -0.5 / s;
    let ddx = 0.25 / (s * s * s);
    let f1 = f_x * dx;
    let f2 = f_xx * dx * dx + f_x * ddx;
    AlphaValue {
        value: f * f,
        d1: 2.0 * f * f1,
        d2: 2.0 * (f1 * f1 + f * f2),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every alpha form is 1 at the critical temperature by construction (the defining
    /// property in each paper), and the analytic derivatives match central differences.
    #[test]
    fn unity_at_critical_and_derivatives_match_differences() {
        let forms = [
            Alpha::Unity,
            Alpha::InverseSqrt,
            Alpha::Soave { m: 0.8 },
            Alpha::Twu {
                l: 0.3,
                m: 0.87,
                n: 2.1,
            },
            Alpha::MathiasCopeman {
                c1: 0.7,
                c2: -0.3,
                c3: 0.5,
            },
        ];
        for a in forms {
            assert!((a.eval(1.0).value - 1.0).abs() < 1e-15, "{a:?}");
            for tr in [0.3, 0.55, 0.8, 0.97, 1.3] {
                let h = 1e-5;
                let v = a.eval(tr);
                let d1 = (a.eval(tr + h).value - a.eval(tr - h).value) / (2.0 * h);
                let d2 = (a.eval(tr + h).d1 - a.eval(tr - h).d1) / (2.0 * h);
                assert!(
                    (v.d1 - d1).abs() < 1e-7 * (1.0 + d1.abs()),
                    "{a:?} d1 at {tr}"
                );
                assert!(
                    (v.d2 - d2).abs() < 1e-6 * (1.0 + d2.abs()),
                    "{a:?} d2 at {tr}"
                );
            }
        }
    }
}
