//! Precomputed saturation curves: a phase-boundary line of one fluid under one model,
//! tabulated once with the full solver and then read in a few tens of nanoseconds.
//!
//! ## What is stored
//!
//! - Forward: `ln P` as a piecewise Chebyshev series in `x = 1/T`. Clausius-Clapeyron makes
//!   `ln P` nearly linear in `1/T` over the whole range, and for a cubic equation of state (a
//!   mean-field model) the vapor pressure stays an analytic function of temperature up to the
//!   critical point, so the series converge geometrically right up to the top of the curve.
//! - Inverse: `1/T` as a piecewise Chebyshev series in `ln P`, for the saturation temperature at
//!   a pressure without iterating.
//!
//! Each series is split into equal-width segments of degree [`CURVE_DEGREE`], interpolated at the
//! Chebyshev extrema of each segment (the segment ends are shared, so the curve is continuous).
//!
//! ## Verification
//!
//! The forward nodes are solved with the full solver (argmin `BrentRoot` on the fugacity gap,
//! see [`crate::PureEos::saturation_pressure`]); the inverse nodes by inverting the forward
//! series. Then, at the Chebyshev midpoints between every two nodes of every segment (where
//! interpolation error peaks), the full solver is run again: for the forward series the relative
//! pressure deviation is `|ln P_curve - ln P_solver|`; for the inverse series the solver's vapor
//! pressure at the curve's temperature is compared with the pressure asked for. The largest of
//! each is recorded in [`CurveReport`]. A build starts with few segments and doubles them until
//! both deviations are below [`CURVE_BUILD_TARGET`]; if even the finest layout stays above
//! [`CURVE_TOLERANCE`], the build fails and the engine keeps using the full solver.
//!
//! ## Where the curve is not used
//!
//! - In the band `T > Tc (1 - CURVE_CRITICAL_BAND)` (and the pressures above the curve's top):
//!   there the full solver answers, down to its own near-critical band
//!   ([`crate::NEAR_CRITICAL_BAND`]).
//! - By an engine without a curve: [`crate::PureEos::new`] builds none (a build costs about a
//!   millisecond); [`crate::PureEos::with_saturation_curve`] adds one. A custom fluid answers
//!   through the full solver until its engine has been given a curve.
//! - For saturated properties, where the cubic at the curve's pressure does not show both
//!   phases (possible only a hair below the curve's top): the full solver answers.
//!
//! Every result says which path produced it ([`SolvePath`]).
//!
//! ## Blends (extension point)
//!
//! The tabulation is generic over [`PhaseBoundary`]: anything with a reference solve of a
//! boundary pressure over a temperature range. A pure fluid's saturation line is one
//! ([`SaturationCurve::for_pure`]); a blend at fixed composition will have two, its bubble line
//! and its dew line, each tabulated with [`SaturationCurve::build`] from a `PhaseBoundary` that
//! calls the blend's bubble-point or dew-point solve.

use std::fmt;
use std::sync::Arc;

use crate::eos::PureEos;
use crate::error::Error;
use crate::saturation::{SatPoint, Saturation};

/// Relative width of the band below the critical temperature where the curve is not used:
/// above `Tc (1 - CURVE_CRITICAL_BAND)` the full solver answers.
pub const CURVE_CRITICAL_BAND: f64 = 1e-4;

/// Largest accepted deviation of a curve from the full solver at its check points, relative in
/// pressure. A curve that cannot meet it is not built.
pub const CURVE_TOLERANCE: f64 = 1e-9;

/// The deviation at which a build stops refining: well inside [`CURVE_TOLERANCE`].
pub const CURVE_BUILD_TARGET: f64 = 1e-11;

/// Degree of every Chebyshev segment.
pub const CURVE_DEGREE: usize = 16;

/// Coefficients per segment.
const STRIDE: usize = CURVE_DEGREE + 1;

/// Segment counts tried in turn, each series separately.
const SEGMENT_COUNTS: [usize; 5] = [2, 4, 8, 16, 32];

/// Which path produced a result.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SolvePath {
    /// Read from a precomputed, verified saturation curve (then one cubic solve for
    /// properties).
    Curve,
    /// Solved from the equation of state for this call.
    FullSolve,
}

impl SolvePath {
    /// A stable identifier: `curve` or `full-solve`.
    pub fn id(self) -> &'static str {
        match self {
            SolvePath::Curve => "curve",
            SolvePath::FullSolve => "full-solve",
        }
    }
}

/// A phase-boundary line that can be tabulated: a reference solve of its pressure over a
/// temperature range below any critical point. Implemented for a pure fluid's saturation line;
/// a blend's bubble and dew lines are the next implementors (see the module documentation).
pub trait PhaseBoundary {
    /// The temperatures to tabulate, K: `(lowest, highest)`, with `lowest < highest`.
    fn tabulation_range_k(&self) -> (f64, f64);
    /// The reference solve: the natural logarithm of the boundary pressure (Pa) at `t` (K).
    fn solve_ln_pressure(&self, t: f64) -> Result<f64, Error>;
}

/// The saturation line of a pure fluid, from its minimum temperature to the curve's band.
#[derive(Debug, Clone, Copy)]
pub struct PureSaturationLine<'a>(pub &'a PureEos);

impl PhaseBoundary for PureSaturationLine<'_> {
    fn tabulation_range_k(&self) -> (f64, f64) {
        (
            self.0.minimum_temperature_k(),
            self.0.critical_temperature_k() * (1.0 - CURVE_CRITICAL_BAND),
        )
    }

    fn solve_ln_pressure(&self, t: f64) -> Result<f64, Error> {
        Ok(self.0.solve_saturation_pressure_unchecked(t)?.pressure.ln())
    }
}

/// Evaluates the Chebyshev series `sum c[k] T_k(u)` by Clenshaw's recurrence, for `u` in
/// [-1, 1]. The curves are interpolated in this form and then evaluated in monomial form by
/// [`estrin`]; this is the benchmarks' floor for a bare Chebyshev evaluation.
#[inline]
pub fn clenshaw(coefficients: &[f64], u: f64) -> f64 {
    let two_u = 2.0 * u;
    let (mut b1, mut b2) = (0.0, 0.0);
    for &c in coefficients[1..].iter().rev() {
        let b0 = c + two_u * b1 - b2;
        b2 = b1;
        b1 = b0;
    }
    coefficients[0] + u * b1 - b2
}

/// Evaluates the polynomial `sum a[j] u^j` of degree [`CURVE_DEGREE`] by Estrin's scheme: the
/// same arithmetic as Horner's rule, but in a tree of depth five instead of a chain of sixteen
/// dependent steps, so a lookup waits for far fewer multiply-adds.
#[inline]
pub fn estrin(a: &[f64; STRIDE], u: f64) -> f64 {
    const _: () = assert!(CURVE_DEGREE == 16, "estrin is written out for degree 16");
    let u2 = u * u;
    let u4 = u2 * u2;
    let u8 = u4 * u4;
    let p0 = a[0] + a[1] * u;
    let p1 = a[2] + a[3] * u;
    let p2 = a[4] + a[5] * u;
    let p3 = a[6] + a[7] * u;
    let p4 = a[8] + a[9] * u;
    let p5 = a[10] + a[11] * u;
    let p6 = a[12] + a[13] * u;
    let p7 = a[14] + a[15] * u;
    let q0 = p0 + p1 * u2;
    let q1 = p2 + p3 * u2;
    let q2 = p4 + p5 * u2;
    let q3 = p6 + p7 * u2;
    let r0 = q0 + q1 * u4;
    let r1 = q2 + q3 * u4 + a[16] * u8;
    r0 + r1 * u8
}

/// The monomial coefficients of the Chebyshev series `c` on [-1, 1]. The curves' series
/// converge fast (each coefficient several times smaller than the last), so the conversion
/// loses nothing measurable; the check points verify the converted form.
fn monomial(c: &[f64; STRIDE]) -> [f64; STRIDE] {
    // Rows of T_k's integer coefficients by T_{k+1} = 2u T_k - T_{k-1}.
    let mut previous = [0.0; STRIDE];
    let mut current = [0.0; STRIDE];
    previous[0] = 1.0;
    current[1] = 1.0;
    let mut a = [0.0; STRIDE];
    a[0] += c[0];
    for j in 0..STRIDE {
        a[j] += c[1] * current[j];
    }
    for &ck in &c[2..] {
        let mut next = [0.0; STRIDE];
        for j in 0..STRIDE {
            let shifted = if j > 0 { 2.0 * current[j - 1] } else { 0.0 };
            next[j] = shifted - previous[j];
        }
        for j in 0..STRIDE {
            a[j] += ck * next[j];
        }
        previous = current;
        current = next;
    }
    a
}

/// A piecewise polynomial on `[lo, hi]` with equal-width segments, interpolated as Chebyshev
/// series and stored in monomial form.
#[derive(Clone)]
struct Piecewise {
    lo: f64,
    hi: f64,
    /// Segments per unit of the variable.
    scale: f64,
    /// Monomial coefficients of each segment in its own variable `u` in [-1, 1].
    segments: Vec<[f64; STRIDE]>,
}

/// `cos(pi j / n)` for the Chebyshev extrema, `j = 0..=n` (from +1 down to -1).
fn extremum(j: usize) -> f64 {
    (std::f64::consts::PI * j as f64 / CURVE_DEGREE as f64).cos()
}

/// The check point between extrema `j` and `j + 1`: `cos(pi (j + 1/2) / n)`.
fn midpoint(j: usize) -> f64 {
    (std::f64::consts::PI * (j as f64 + 0.5) / CURVE_DEGREE as f64).cos()
}

impl Piecewise {
    /// Interpolates `f` at the Chebyshev extrema of `segments` equal segments of `[lo, hi]`.
    fn interpolate(
        lo: f64,
        hi: f64,
        segments: usize,
        mut f: impl FnMut(f64) -> Result<f64, Error>,
    ) -> Result<Piecewise, Error> {
        let width = (hi - lo) / segments as f64;
        let mut blocks = Vec::with_capacity(segments);
        let mut values = [0.0; STRIDE];
        let mut shared_left = None;
        for s in 0..segments {
            let a = lo + width * s as f64;
            let b = if s + 1 == segments { hi } else { a + width };
            let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
            // j = n is the left end, shared with the previous segment's right end (j = 0).
            for (j, value) in values.iter_mut().enumerate() {
                *value = match (j, shared_left) {
                    (0, _) => f(b)?,
                    (CURVE_DEGREE, Some(v)) => v,
                    (CURVE_DEGREE, None) => f(a)?,
                    _ => f(mid + half * extremum(j))?,
                };
            }
            shared_left = Some(values[0]);
            let n = CURVE_DEGREE as f64;
            let mut coefficients = [0.0; STRIDE];
            for (k, coefficient) in coefficients.iter_mut().enumerate() {
                let mut sum = 0.0;
                for (j, &v) in values.iter().enumerate() {
                    let w = if j == 0 || j == CURVE_DEGREE {
                        0.5
                    } else {
                        1.0
                    };
                    sum += w * v * (std::f64::consts::PI * (j * k) as f64 / n).cos();
                }
                let c = 2.0 / n * sum;
                *coefficient = if k == 0 || k == CURVE_DEGREE {
                    0.5 * c
                } else {
                    c
                };
            }
            blocks.push(monomial(&coefficients));
        }
        Ok(Piecewise {
            lo,
            hi,
            scale: segments as f64 / (hi - lo),
            segments: blocks,
        })
    }

    /// The series at `x`, which the caller keeps inside `[lo, hi]`.
    #[inline]
    fn eval(&self, x: f64) -> f64 {
        let s = (x - self.lo) * self.scale;
        // `as usize` saturates: a rounding excursion below `lo` lands in the first segment.
        let i = (s as usize).min(self.segments.len() - 1);
        let u = 2.0 * (s - i as f64) - 1.0;
        estrin(&self.segments[i], u)
    }

    /// The check points: the Chebyshev midpoints between the nodes of every segment.
    fn check_points(&self) -> impl Iterator<Item = f64> + '_ {
        let width = (self.hi - self.lo) / self.segments.len() as f64;
        (0..self.segments.len()).flat_map(move |s| {
            let a = self.lo + width * s as f64;
            (0..CURVE_DEGREE).map(move |j| a + 0.5 * width * (1.0 + midpoint(j)))
        })
    }
}

/// How a curve was built and how closely it follows the full solver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurveReport {
    /// Segments of the forward series (`ln P` in `1/T`).
    pub forward_segments: usize,
    /// Segments of the inverse series (`1/T` in `ln P`).
    pub inverse_segments: usize,
    /// Degree of every segment.
    pub degree: usize,
    /// Check points compared with the full solver, both series together.
    pub check_points: usize,
    /// Full solves the build ran (nodes and check points of every layout tried).
    pub solves: usize,
    /// Largest `|P_curve / P_solver - 1|` of the forward series at its check points.
    pub max_pressure_deviation: f64,
    /// Largest `|P_solver(T_curve(P)) / P - 1|` of the inverse series at its check points.
    pub max_inverse_pressure_deviation: f64,
    /// The inverse deviation as a temperature, K: pressure deviation over `d ln P / d T`.
    pub max_inverse_temperature_deviation_k: f64,
}

/// A tabulated phase-boundary line with its inverse: a pure fluid's saturation line, or (when
/// blends are built) a blend's bubble or dew line. Build once per fluid and model; share it
/// (engines hold it in an [`Arc`]).
///
/// The forward series holds `ln P` as piecewise Chebyshev series in `1/T`, the inverse `1/T`
/// in `ln P`; both are verified against the full solver at the midpoints between their nodes
/// ([`CurveReport`]). Engines do not use the curve above `Tc (1 - CURVE_CRITICAL_BAND)`.
#[derive(Clone)]
pub struct SaturationCurve {
    t_min: f64,
    t_max: f64,
    p_min: f64,
    p_max: f64,
    /// `ln P(1/T)`.
    forward: Piecewise,
    /// `1/T(ln P)`.
    inverse: Piecewise,
    report: CurveReport,
}

impl fmt::Debug for SaturationCurve {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("SaturationCurve")
            .field("temperature_range_k", &(self.t_min, self.t_max))
            .field("pressure_range_pa", &(self.p_min, self.p_max))
            .field("report", &self.report)
            .finish()
    }
}

impl SaturationCurve {
    /// Tabulates the saturation line of `eos` (see the module documentation).
    pub fn for_pure(eos: &PureEos) -> Result<SaturationCurve, Error> {
        SaturationCurve::build(&PureSaturationLine(eos))
    }

    /// Tabulates any phase-boundary line and verifies it against the line's own solver.
    pub fn build(line: &impl PhaseBoundary) -> Result<SaturationCurve, Error> {
        let (t_min, t_max) = line.tabulation_range_k();
        if !(t_min > 0.0 && t_min < t_max && t_max.is_finite()) {
            return Err(Error::invalid(
                "tabulation_range_k",
                t_min,
                format!("needs 0 < lowest < highest temperature; got {t_min} K to {t_max} K"),
            ));
        }
        let (x_lo, x_hi) = (1.0 / t_max, 1.0 / t_min);
        let mut solves = 0usize;
        let mut check_points = 0usize;
        let mut solve = |x: f64| {
            solves += 1;
            line.solve_ln_pressure(1.0 / x)
        };

        // Forward series, refined until its check points meet the target.
        let mut forward = None;
        for &segments in &SEGMENT_COUNTS {
            let series = Piecewise::interpolate(x_lo, x_hi, segments, &mut solve)?;
            let mut worst: f64 = 0.0;
            for x in series.check_points().collect::<Vec<_>>() {
                check_points += 1;
                worst = worst.max((series.eval(x) - solve(x)?).abs());
            }
            let done = worst <= CURVE_BUILD_TARGET;
            forward = Some((series, worst));
            if done {
                break;
            }
        }
        let (forward, forward_worst) = forward.expect("at least one layout");
        if forward_worst > CURVE_TOLERANCE {
            return Err(curve_failed("forward", forward_worst));
        }

        // Inverse series: nodes by inverting the forward series, checks with the solver.
        let (y_lo, y_hi) = (forward.eval(x_hi), forward.eval(x_lo));
        let invert = |y: f64| -> Result<f64, Error> {
            Ok(invert_decreasing(|x| forward.eval(x), y, x_lo, x_hi))
        };
        let mut inverse = None;
        for &segments in &SEGMENT_COUNTS {
            let series = Piecewise::interpolate(y_lo, y_hi, segments, invert)?;
            let (mut worst, mut worst_t): (f64, f64) = (0.0, 0.0);
            for y in series.check_points().collect::<Vec<_>>() {
                check_points += 1;
                let x = series.eval(y).clamp(x_lo, x_hi);
                let gap = (y - solve(x)?).abs();
                // d ln P / d T = -x^2 d ln P / d x, by a central difference on the forward series.
                let h = 1e-6 * (x_hi - x_lo);
                let (a, b) = ((x - h).max(x_lo), (x + h).min(x_hi));
                let slope = (forward.eval(b) - forward.eval(a)) / (b - a) * x * x;
                worst = worst.max(gap);
                worst_t = worst_t.max(gap / slope.abs());
            }
            let done = worst <= CURVE_BUILD_TARGET;
            inverse = Some((series, worst, worst_t));
            if done {
                break;
            }
        }
        let (inverse, inverse_worst, inverse_worst_t) = inverse.expect("at least one layout");
        if inverse_worst > CURVE_TOLERANCE {
            return Err(curve_failed("inverse", inverse_worst));
        }
        let report = CurveReport {
            forward_segments: forward.segments.len(),
            inverse_segments: inverse.segments.len(),
            degree: CURVE_DEGREE,
            check_points,
            solves,
            max_pressure_deviation: forward_worst.exp_m1(),
            max_inverse_pressure_deviation: inverse_worst.exp_m1(),
            max_inverse_temperature_deviation_k: inverse_worst_t,
        };
        Ok(SaturationCurve {
            t_min,
            t_max,
            p_min: y_lo.exp(),
            p_max: y_hi.exp(),
            forward,
            inverse,
            report,
        })
    }

    /// The temperatures the curve covers, K.
    pub fn temperature_range_k(&self) -> (f64, f64) {
        (self.t_min, self.t_max)
    }

    /// The pressures the curve covers, Pa.
    pub fn pressure_range_pa(&self) -> (f64, f64) {
        (self.p_min, self.p_max)
    }

    /// How the curve was built and its verified deviation from the solver.
    pub fn report(&self) -> &CurveReport {
        &self.report
    }

    /// The boundary pressure at `t`, Pa, or `None` outside the curve's temperature range.
    #[inline]
    pub fn pressure_pa(&self, t: f64) -> Option<f64> {
        if t >= self.t_min && t <= self.t_max {
            Some(self.forward.eval(1.0 / t).exp())
        } else {
            None
        }
    }

    /// The boundary temperature at `p`, K, or `None` outside the curve's pressure range.
    #[inline]
    pub fn temperature_k(&self, p: f64) -> Option<f64> {
        if p >= self.p_min && p <= self.p_max {
            Some(1.0 / self.inverse.eval(p.ln()))
        } else {
            None
        }
    }
}

fn curve_failed(which: &str, worst: f64) -> Error {
    Error::no_convergence(
        "saturation curve",
        format!(
            "the {which} series deviates from the solver by {worst:.3e} (ln P) at a check \
             point with the finest layout; the limit is {CURVE_TOLERANCE:e}"
        ),
    )
}

/// The `x` in `[lo, hi]` where the decreasing function `f` equals `y` (clamped to the ends),
/// by the Illinois variant of false position.
fn invert_decreasing(f: impl Fn(f64) -> f64, y: f64, lo: f64, hi: f64) -> f64 {
    let (mut a, mut b) = (lo, hi);
    let (mut fa, mut fb) = (f(a) - y, f(b) - y);
    if fa <= 0.0 {
        return a;
    }
    if fb >= 0.0 {
        return b;
    }
    let mut side = 0;
    for _ in 0..200 {
        let c = (a * fb - b * fa) / (fb - fa);
        let fc = f(c) - y;
        if fc == 0.0 || (b - a).abs() <= 1e-15 * c.abs() {
            return c;
        }
        if fc > 0.0 {
            a = c;
            fa = fc;
            if side == 1 {
                fb *= 0.5;
            }
            side = 1;
        } else {
            b = c;
            fb = fc;
            if side == -1 {
                fa *= 0.5;
            }
            side = -1;
        }
    }
    0.5 * (a + b)
}

impl PureEos {
    /// This engine with a saturation curve tabulated and verified for it (see
    /// [`SaturationCurve`]): saturation and classification then read the curve where it is
    /// valid. Costs about a millisecond; fails only if the curve cannot meet
    /// [`CURVE_TOLERANCE`], in which case keep the engine without a curve.
    pub fn with_saturation_curve(self) -> Result<PureEos, Error> {
        let curve = SaturationCurve::for_pure(&self)?;
        Ok(self.with_shared_curve(Arc::new(curve)))
    }

    /// This engine using `curve`, which must have been built from an engine with the same
    /// fluid and model (engines that differ only in reference state share one curve).
    pub fn with_shared_curve(mut self, curve: Arc<SaturationCurve>) -> PureEos {
        self.curve = Some(curve);
        self
    }

    /// The saturation curve, if this engine has one.
    pub fn saturation_curve(&self) -> Option<&Arc<SaturationCurve>> {
        self.curve.as_ref()
    }

    /// Vapor pressure at `t` from the curve, where the engine has one that covers `t`.
    #[inline]
    pub(crate) fn curve_pressure(&self, t: f64) -> Option<f64> {
        self.curve.as_ref()?.pressure_pa(t)
    }

    /// Saturation temperature at `p` from the curve, where the engine has one that covers `p`.
    #[inline]
    pub(crate) fn curve_temperature(&self, p: f64) -> Option<f64> {
        self.curve.as_ref()?.temperature_k(p)
    }

    /// Both saturated phases at `t` from the curve's pressure and one cubic solve, where the
    /// curve covers `t` and the cubic shows both phases there.
    pub(crate) fn curve_saturation(&self, t: f64, p: f64) -> Option<Saturation> {
        let roots = self.compressibility_roots(t, p);
        if roots.count() != 3 {
            return None;
        }
        let point = SatPoint {
            pressure: p,
            z_liquid: roots.smallest(),
            z_vapor: roots.largest(),
        };
        let mut sat = self.saturation_from_point(t, point);
        sat.path = crate::curve::SolvePath::Curve;
        Some(sat)
    }
}
