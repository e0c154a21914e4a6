//! Precomputed saturation curves: a phase-boundary line of one fluid (or one blend's bubble or
//! dew line) under one model, tabulated once with the full solver and then read in a few tens of
//! nanoseconds.
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
//! Each series is a run of pieces, each split into equal-width segments of degree
//! [`CURVE_DEGREE`], interpolated at the Chebyshev extrema of each segment (the segment ends are
//! shared, so the curve is continuous). A line is first split at its breakpoints
//! ([`PhaseBoundary::breakpoints_k`]: temperatures where a derivative of the model jumps, none for
//! a pure fluid); then each piece tries 2 and 4 segments, and a piece that needs more is halved,
//! up to 4 times (a piece halved that often tries up to 32 segments). Segments are
//! thus fine only where the line needs them, near its critical end; most pure fluids' curves are
//! one piece of 2 or 4 segments.
//!
//! ## Verification
//!
//! The forward nodes are solved with the full solver (argmin `BrentRoot` on the fugacity gap,
//! see [`crate::PureEos::saturation_pressure`]); the inverse nodes by inverting the forward
//! series. Then, at the Chebyshev midpoints between every two nodes of every segment (where
//! interpolation error peaks), the full solver is run again: for the forward series the relative
//! pressure deviation is `|ln P_curve - ln P_solver|`; for the inverse series the solver's vapor
//! pressure at the curve's temperature is compared with the pressure asked for. The largest of
//! each is recorded in [`CurveReport`]. A build refines (more segments, or halved pieces) until
//! both deviations are below [`CURVE_BUILD_TARGET`] at every check point; if even the finest
//! layout stays above [`CURVE_TOLERANCE`], the build fails and the engine keeps using the full
//! solver. A layout is checked segment by segment from the critical end and abandoned at the
//! first check point over the target, which saves the solves of layouts that cannot be kept.
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
//! ## Blends
//!
//! The tabulation is generic over [`PhaseBoundary`]: anything with a reference solve of a
//! boundary pressure over a temperature range. A pure fluid's saturation line is one
//! ([`SaturationCurve::for_pure`]); a mixture at fixed composition has two, its bubble line and
//! its dew line ([`MixtureBoundaryLine`]), tabulated together as [`BoundaryCurves`] and attached
//! with [`crate::Mixture::with_boundary_curves`]. A mixture with lines reads them for its bubble
//! and dew pressures and temperatures and for its classification; it uses the solver above the
//! lines' range ([`BOUNDARY_CURVE_BAND`] below where the solve stops converging), for the
//! incipient compositions of bubble and dew points, and for the two-phase split (the flash). A
//! mixture without lines (a custom mixture) always solves. Mathias-Copeman alpha functions
//! change form at each component's critical temperature, so those temperatures are the
//! breakpoints of a blend's lines.

use std::cell::Cell;
use std::fmt;
use std::sync::Arc;

use crate::alpha::Alpha;
use crate::eos::PureEos;
use crate::error::Error;
use crate::mixture::Mixture;
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

/// Segment counts tried in turn on a piece of a series before the piece is halved.
const SEGMENT_COUNTS: [usize; 2] = [2, 4];

/// How many times a piece may be halved: the smallest piece spans 1/16 of its smooth piece.
const MAX_HALVINGS: u32 = 4;

/// Segment counts tried in turn on a piece that may not be halved any more; the last is kept
/// even if it misses the build target (and the build fails if it misses the tolerance).
const FINAL_SEGMENT_COUNTS: [usize; 5] = [2, 4, 8, 16, 32];

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
    /// Temperatures inside the range where the line is continuous but not smooth (a derivative
    /// of the model jumps there), K. The curve is tabulated in separate pieces between them, so
    /// that no Chebyshev segment spans one. None by default.
    fn breakpoints_k(&self) -> Vec<f64> {
        Vec::new()
    }
}

/// The saturation line of a pure fluid, from its minimum temperature to the curve's band.
#[derive(Debug, Clone, Copy)]
pub struct PureSaturationLine<'a>(pub &'a PureEos);

/// Which line of a mixture's two-phase envelope at fixed overall composition.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BoundaryKind {
    /// The bubble line: where the liquid of feed composition first forms vapor.
    Bubble,
    /// The dew line: where the vapor of feed composition first forms liquid.
    Dew,
}

impl BoundaryKind {
    /// A stable identifier: `bubble` or `dew`.
    pub fn id(self) -> &'static str {
        match self {
            BoundaryKind::Bubble => "bubble",
            BoundaryKind::Dew => "dew",
        }
    }
}

/// Relative width of the band below a mixture line's convergence limit (the highest
/// temperature at which its bubble- or dew-point solve still converges, found by
/// [`MixtureBoundaryLine::new`]) where the line's curve is not used: the curve covers the
/// mixture's minimum temperature to `limit (1 - BOUNDARY_CURVE_BAND)`, and above that the
/// solver answers. See [`MixtureBoundaryLine`] for why the band is this wide.
pub const BOUNDARY_CURVE_BAND: f64 = 0.02;

/// The convergence limit of a mixture line is located to this many kelvin.
pub const BOUNDARY_LIMIT_RESOLUTION_K: f64 = 0.05;

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

/// A mixture's bubble or dew line at its fixed overall composition, from the mixture's minimum
/// temperature to [`BOUNDARY_CURVE_BAND`] below the line's convergence limit.
///
/// The reference solve is the mixture's bubble- or dew-pressure solve (successive substitution
/// from Wilson's K-values, as [`Mixture::bubble_at_temperature`]). It converges up to near the
/// end of the envelope (the mixture's critical point for the bubble line, the cricondentherm for
/// the dew line) and then fails: it finds only the trivial solution, or it stops converging.
/// [`MixtureBoundaryLine::new`] locates that limit by bisection on the solve's success between
/// the minimum temperature and the highest component critical temperature (the first probe at
/// the pseudo-critical temperature, Kay's rule), to [`BOUNDARY_LIMIT_RESOLUTION_K`]. The
/// bisection assumes the solve converges everywhere below the limit; the build checks that at
/// every node and check point, and fails (leaving the mixture to its solver) if it does not.
///
/// Why a band of 2 % and not the pure fluids' 1e-4: the limit lies close to a singularity of
/// both lines (the dew line turns back at the cricondentherm, a square-root branch point of
/// `ln P` in `1/T`, and the bubble line runs on through the critical point into the same turn),
/// so the segments must shrink toward it, and the solves there are several times slower
/// (successive substitution converges linearly, with a rate that tends to 1 toward the end of
/// the envelope). The lines of every catalogue blend under every model build to the tolerance
/// with a band of 0.5 % too, but the cost grows as the band narrows: for the catalogue's 100
/// lines (10 blends, 5 models), 0.50 s of one core at 2 %, 0.66 s at 1 % and 0.79 s at 0.5 %
/// (measured on the project's 2-core machine, which other builds share; `docs/benchmarks.md`).
/// 2 % keeps a server's start-up with every line under a second with room for that load.
/// Between the top of a line and its limit the solver answers.
#[derive(Debug, Clone, Copy)]
pub struct MixtureBoundaryLine<'a> {
    mixture: &'a Mixture,
    kind: BoundaryKind,
    convergence_limit_k: f64,
}

impl<'a> MixtureBoundaryLine<'a> {
    /// The `kind` line of `mixture`, with its convergence limit located. Fails for a mixture of
    /// one component (its answers are the pure fluid's: see [`SaturationCurve::for_pure`]) and
    /// when the solve fails at the minimum temperature.
    pub fn new(mixture: &'a Mixture, kind: BoundaryKind) -> Result<Self, Error> {
        if mixture.single_component().is_some() {
            return Err(Error::invalid(
                "mole_fractions",
                1.0,
                "a mixture with one component answers as the pure fluid; it has no separate \
                 bubble and dew lines (tabulate the fluid's saturation curve instead)",
            ));
        }
        let bubble = kind == BoundaryKind::Bubble;
        let converges = |t: f64| mixture.boundary_pressure(t, bubble).is_ok();
        let t_min = mixture.minimum_temperature_k();
        // The solve is refused at and above the highest component critical temperature.
        let ceiling = mixture
            .components()
            .iter()
            .map(|c| c.critical_temperature_k())
            .fold(0.0, f64::max);
        mixture.boundary_pressure(t_min, bubble)?;
        let (mut lo, mut hi) = (t_min, ceiling);
        let (t_pc, _) = mixture.pseudo_critical();
        if t_pc > lo && t_pc < hi {
            if converges(t_pc) {
                lo = t_pc;
            } else {
                hi = t_pc;
            }
        }
        while hi - lo > BOUNDARY_LIMIT_RESOLUTION_K {
            let mid = 0.5 * (lo + hi);
            if converges(mid) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Ok(MixtureBoundaryLine {
            mixture,
            kind,
            convergence_limit_k: lo,
        })
    }

    /// The highest temperature at which the line's solve was found to converge, K (within
    /// [`BOUNDARY_LIMIT_RESOLUTION_K`] of where it stops converging).
    pub fn convergence_limit_k(&self) -> f64 {
        self.convergence_limit_k
    }

    /// Which line this is.
    pub fn kind(&self) -> BoundaryKind {
        self.kind
    }
}

impl PhaseBoundary for MixtureBoundaryLine<'_> {
    fn tabulation_range_k(&self) -> (f64, f64) {
        (
            self.mixture.minimum_temperature_k(),
            self.convergence_limit_k * (1.0 - BOUNDARY_CURVE_BAND),
        )
    }

    fn solve_ln_pressure(&self, t: f64) -> Result<f64, Error> {
        let bubble = self.kind == BoundaryKind::Bubble;
        Ok(self.mixture.boundary_pressure(t, bubble)?.pressure_pa.ln())
    }

    /// The critical temperatures of the components whose alpha function changes form there:
    /// Mathias-Copeman (1983) keeps only its first coefficient above Tc, so the second
    /// derivative of the component's attraction term, and with it the mixture's lines, jumps
    /// at that temperature.
    fn breakpoints_k(&self) -> Vec<f64> {
        self.mixture
            .components()
            .iter()
            .filter(|c| {
                matches!(c.alpha(), Alpha::MathiasCopeman { c2, c3, .. } if c2 != 0.0 || c3 != 0.0)
            })
            .map(|c| c.critical_temperature_k())
            .collect()
    }
}

/// A mixture's bubble and dew lines, each a [`SaturationCurve`] tabulated from a
/// [`MixtureBoundaryLine`] and verified against the mixture's solver, with the convergence
/// limits they were built below. Build once per mixture (composition, `k_ij` and model);
/// mixtures hold it in an [`Arc`] ([`Mixture::with_boundary_curves`]).
#[derive(Debug, Clone)]
pub struct BoundaryCurves {
    bubble: SaturationCurve,
    dew: SaturationCurve,
    limits_k: [f64; 2],
}

impl BoundaryCurves {
    /// Tabulates and verifies both lines of `mixture` (see [`MixtureBoundaryLine`]).
    pub fn build(mixture: &Mixture) -> Result<BoundaryCurves, Error> {
        let bubble = MixtureBoundaryLine::new(mixture, BoundaryKind::Bubble)?;
        let dew = MixtureBoundaryLine::new(mixture, BoundaryKind::Dew)?;
        Ok(BoundaryCurves {
            bubble: SaturationCurve::build(&bubble)?,
            dew: SaturationCurve::build(&dew)?,
            limits_k: [bubble.convergence_limit_k(), dew.convergence_limit_k()],
        })
    }

    /// One of the two lines.
    #[inline]
    pub fn line(&self, kind: BoundaryKind) -> &SaturationCurve {
        match kind {
            BoundaryKind::Bubble => &self.bubble,
            BoundaryKind::Dew => &self.dew,
        }
    }

    /// The highest temperature at which the line's solve converged, K: the curve covers up to
    /// [`BOUNDARY_CURVE_BAND`] below it.
    pub fn convergence_limit_k(&self, kind: BoundaryKind) -> f64 {
        match kind {
            BoundaryKind::Bubble => self.limits_k[0],
            BoundaryKind::Dew => self.limits_k[1],
        }
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

/// One segment of a piecewise series: its monomial coefficients in the segment's variable `u`
/// in [-1, 1], and the offset that gives `u` from the series variable `x` with one multiply
/// and one subtraction, `u = 2 scale x - offset` (`offset = 2 scale lo + 2 i + 1` for segment
/// `i` of a piece starting at `lo`). The build verifies the series with this same arithmetic
/// ([`segment_variable`]), so the recorded deviation is that of the lookups.
#[derive(Clone, Copy)]
struct Segment {
    coefficients: [f64; STRIDE],
    offset: f64,
}

/// The segment holding `x` (clamped to the piece's segments `0..=last`) and the segment's
/// variable `u` at `x`: the one mapping both the build's checks and the lookups use.
#[inline]
fn segment_variable(
    x: f64,
    lo: f64,
    scale: f64,
    last: usize,
    segments: &[Segment],
) -> (usize, f64) {
    // `as usize` saturates: a rounding excursion below `lo` lands in the first segment.
    let i = (((x - lo) * scale) as usize).min(last);
    (i, x * (2.0 * scale) - segments[i].offset)
}

/// A piecewise polynomial on `[lo, hi]` with equal-width segments, interpolated as Chebyshev
/// series and stored in monomial form.
#[derive(Clone)]
struct Piecewise {
    lo: f64,
    hi: f64,
    /// Segments of the layout (all of them once built).
    count: usize,
    /// Segments per unit of the variable.
    scale: f64,
    /// Each segment's monomial coefficients in its own variable `u` in [-1, 1], with its offset.
    segments: Vec<Segment>,
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
    /// A layout of `count` equal segments on `[lo, hi]`, each to be filled by
    /// [`Piecewise::fill_segment`] before it is evaluated.
    fn layout(lo: f64, hi: f64, count: usize) -> Piecewise {
        let scale = count as f64 / (hi - lo);
        Piecewise {
            lo,
            hi,
            count,
            scale,
            segments: (0..count)
                .map(|i| Segment {
                    coefficients: [0.0; STRIDE],
                    offset: 2.0 * scale * lo + (2 * i + 1) as f64,
                })
                .collect(),
        }
    }

    /// The ends of segment `s`.
    fn segment_ends(&self, s: usize) -> (f64, f64) {
        let width = (self.hi - self.lo) / self.count as f64;
        let a = self.lo + width * s as f64;
        let b = if s + 1 == self.count {
            self.hi
        } else {
            a + width
        };
        (a, b)
    }

    /// Interpolates `f` at the Chebyshev extrema of segment `s`. `left` and `right` are the
    /// values at its ends where a neighbouring segment has them already; returns the values at
    /// both ends.
    fn fill_segment(
        &mut self,
        s: usize,
        f: &mut NodeValue<'_>,
        left: Option<f64>,
        right: Option<f64>,
    ) -> Result<(f64, f64), Error> {
        let (a, b) = self.segment_ends(s);
        let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
        let mut values = [0.0; STRIDE];
        // j = 0 is the right end, j = n the left end.
        for (j, value) in values.iter_mut().enumerate() {
            *value = match (j, left, right) {
                (0, _, Some(v)) => v,
                (0, _, None) => f(b)?,
                (CURVE_DEGREE, Some(v), _) => v,
                (CURVE_DEGREE, None, _) => f(a)?,
                _ => f(mid + half * extremum(j))?,
            };
        }
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
        self.segments[s].coefficients = monomial(&coefficients);
        Ok((values[CURVE_DEGREE], values[0]))
    }

    /// The series at `x`, which the caller keeps inside `[lo, hi]`.
    #[inline]
    fn eval(&self, x: f64) -> f64 {
        let last = self.segments.len() - 1;
        let (i, u) = segment_variable(x, self.lo, self.scale, last, &self.segments);
        estrin(&self.segments[i].coefficients, u)
    }

    /// The check points of segment `s`: the Chebyshev midpoints between its nodes.
    fn check_points(&self, s: usize) -> impl Iterator<Item = f64> {
        let width = (self.hi - self.lo) / self.count as f64;
        let a = self.lo + width * s as f64;
        (0..CURVE_DEGREE).map(move |j| a + 0.5 * width * (1.0 + midpoint(j)))
    }
}

/// Where one piece of a series lies and where its segments start, for the lookup.
#[derive(Clone, Copy)]
struct PieceMap {
    lo: f64,
    /// Segments per unit of the variable.
    scale: f64,
    /// Index of the piece's last segment, counted within the piece.
    last: usize,
    /// Index of the piece's first segment in [`Pieces::segments`].
    base: usize,
}

/// Smooth pieces of a series side by side, ascending and contiguous in the variable: a line
/// with breakpoints (one piece without). Laid out for the lookup: the first piece's map is
/// held inline and every segment of every piece in one array, so that a lookup follows one
/// pointer to its coefficients.
#[derive(Clone)]
struct Pieces {
    first: PieceMap,
    /// The maps of the pieces after the first (empty for most lines).
    rest: Vec<PieceMap>,
    segments: Vec<Segment>,
    /// Pieces in all.
    count: usize,
}

impl Pieces {
    fn new(pieces: Vec<Piecewise>) -> Pieces {
        let mut maps = Vec::with_capacity(pieces.len());
        let mut segments = Vec::new();
        for piece in &pieces {
            maps.push(PieceMap {
                lo: piece.lo,
                scale: piece.scale,
                last: piece.segments.len() - 1,
                base: segments.len(),
            });
            segments.extend_from_slice(&piece.segments);
        }
        let count = maps.len();
        let first = maps.remove(0);
        Pieces {
            first,
            rest: maps,
            segments,
            count,
        }
    }

    /// The series at `x`, which the caller keeps inside the first piece's `lo` and the last
    /// piece's `hi`: the piece whose range holds `x` (at a shared end, the upper piece).
    #[inline]
    fn eval(&self, x: f64) -> f64 {
        let mut map = &self.first;
        for next in &self.rest {
            if x < next.lo {
                break;
            }
            map = next;
        }
        let piece = &self.segments[map.base..];
        let (i, u) = segment_variable(x, map.lo, map.scale, map.last, piece);
        estrin(&piece[i].coefficients, u)
    }

    /// Segments of all pieces.
    fn segments(&self) -> usize {
        self.segments.len()
    }
}

/// Which end of a series' variable lies toward the critical point: where a line is hardest to
/// follow and a layout that misses the target usually misses it first.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum CriticalEnd {
    /// The low end (the forward series: `1/T` is smallest at the top of the line).
    Low,
    /// The high end (the inverse series: `ln P` is largest at the top of the line).
    High,
}

/// What [`refine`] returns: the pieces covering its range, ascending, with the largest
/// deviation at their check points and the largest second figure.
type Refined = (Vec<Piecewise>, f64, f64);

/// The value a series interpolates, at a node.
type NodeValue<'a> = dyn FnMut(f64) -> Result<f64, Error> + 'a;

/// A series' deviation at a check point, and a second figure to keep the largest of.
type CheckGap<'a> = dyn FnMut(&Piecewise, f64) -> Result<(f64, f64), Error> + 'a;

/// Tabulates `f` on `[lo, hi]` so that `gap(series, check point)`, the deviation at every check
/// point, is within [`CURVE_BUILD_TARGET`] (`gap` also returns a second figure, of which the
/// largest is kept). The layouts of [`SEGMENT_COUNTS`] are tried in turn; if none meets the
/// target, the range is halved and each half tabulated the same way, so that segments are fine
/// only where the line needs them (near its critical end). A range halved [`MAX_HALVINGS`] times
/// tries [`FINAL_SEGMENT_COUNTS`] instead and keeps the finest even if it misses the target.
///
/// Each layout is checked segment by segment from the critical end (the forward series builds
/// its segments in that order, each node a solve) and abandoned at the first segment over the
/// target, which saves the solves of the rest.
fn refine(
    lo: f64,
    hi: f64,
    f: &mut NodeValue<'_>,
    gap: &mut CheckGap<'_>,
    check_points: &mut usize,
    critical: CriticalEnd,
    halvings_left: u32,
) -> Result<Refined, Error> {
    let counts: &[usize] = if halvings_left == 0 {
        &FINAL_SEGMENT_COUNTS
    } else {
        &SEGMENT_COUNTS
    };
    'layouts: for (k, &count) in counts.iter().enumerate() {
        let keep = halvings_left == 0 && k + 1 == counts.len();
        let mut series = Piecewise::layout(lo, hi, count);
        let (mut worst, mut worst_second): (f64, f64) = (0.0, 0.0);
        let mut shared = None;
        for i in 0..count {
            let s = match critical {
                CriticalEnd::Low => i,
                CriticalEnd::High => count - 1 - i,
            };
            let (left, right) = match critical {
                CriticalEnd::Low => (shared, None),
                CriticalEnd::High => (None, shared),
            };
            let (at_left, at_right) = series.fill_segment(s, f, left, right)?;
            shared = Some(match critical {
                CriticalEnd::Low => at_right,
                CriticalEnd::High => at_left,
            });
            for x in series.check_points(s) {
                *check_points += 1;
                let (deviation, second) = gap(&series, x)?;
                worst = worst.max(deviation);
                worst_second = worst_second.max(second);
            }
            if worst > CURVE_BUILD_TARGET && !keep {
                continue 'layouts;
            }
        }
        return Ok((vec![series], worst, worst_second));
    }
    let mid = 0.5 * (lo + hi);
    let (mut pieces, worst_a, second_a) =
        refine(lo, mid, f, gap, check_points, critical, halvings_left - 1)?;
    let (upper, worst_b, second_b) =
        refine(mid, hi, f, gap, check_points, critical, halvings_left - 1)?;
    pieces.extend(upper);
    Ok((pieces, worst_a.max(worst_b), second_a.max(second_b)))
}

/// How a curve was built and how closely it follows the full solver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurveReport {
    /// Breakpoints inside the range ([`PhaseBoundary::breakpoints_k`]), where the line was
    /// split into separately tabulated smooth pieces.
    pub breakpoints: usize,
    /// Pieces of the forward series: the smooth pieces, each halved where it needed more than
    /// a few segments (see the module documentation).
    pub pieces: usize,
    /// Pieces of the inverse series.
    pub inverse_pieces: usize,
    /// Segments of the forward series (`ln P` in `1/T`), all pieces together.
    pub forward_segments: usize,
    /// Segments of the inverse series (`1/T` in `ln P`), all pieces together.
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

/// A tabulated phase-boundary line with its inverse: a pure fluid's saturation line, or a
/// blend's bubble or dew line ([`BoundaryCurves`]). Build once per fluid (or blend) and model;
/// share it (engines and mixtures hold it in an [`Arc`]).
///
/// The forward series holds `ln P` as piecewise Chebyshev series in `1/T`, the inverse `1/T`
/// in `ln P`; both are verified against the full solver at the midpoints between their nodes
/// ([`CurveReport`]). Engines do not use the curve above `Tc (1 - CURVE_CRITICAL_BAND)`; a
/// blend's lines end [`BOUNDARY_CURVE_BAND`] below where their solves stop converging.
#[derive(Clone)]
pub struct SaturationCurve {
    t_min: f64,
    t_max: f64,
    p_min: f64,
    p_max: f64,
    /// `ln P(1/T)`.
    forward: Pieces,
    /// `1/T(ln P)`.
    inverse: Pieces,
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

    /// Tabulates any phase-boundary line and verifies it against the line's own solver. The
    /// line is tabulated in smooth pieces split at its breakpoints
    /// ([`PhaseBoundary::breakpoints_k`]); each piece is refined on its own.
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
        // The ends of the smooth pieces in x = 1/T, ascending.
        let mut knots: Vec<f64> = line
            .breakpoints_k()
            .into_iter()
            .filter(|&t| t > t_min && t < t_max)
            .map(|t| 1.0 / t)
            .collect();
        knots.push(x_lo);
        knots.push(x_hi);
        knots.sort_by(f64::total_cmp);
        knots.dedup();
        let solves = Cell::new(0usize);
        let mut check_points = 0usize;
        let solve = |x: f64| {
            solves.set(solves.get() + 1);
            line.solve_ln_pressure(1.0 / x)
        };

        // Forward series, each smooth piece refined until its check points meet the target.
        let mut pieces = Vec::with_capacity(knots.len() - 1);
        let mut forward_worst: f64 = 0.0;
        for ends in knots.windows(2) {
            let mut node = |x: f64| solve(x);
            let mut gap =
                |series: &Piecewise, x: f64| Ok(((series.eval(x) - solve(x)?).abs(), 0.0));
            let (refined, worst, _) = refine(
                ends[0],
                ends[1],
                &mut node,
                &mut gap,
                &mut check_points,
                CriticalEnd::Low,
                MAX_HALVINGS,
            )?;
            pieces.extend(refined);
            forward_worst = forward_worst.max(worst);
        }
        let forward = Pieces::new(pieces);
        if forward_worst > CURVE_TOLERANCE {
            return Err(curve_failed("forward", forward_worst));
        }

        // Inverse series: nodes by inverting the forward series, checks with the solver. Its
        // pieces end at the pressures of the forward pieces' ends (ln P falls as 1/T rises).
        let y_knots: Vec<f64> = knots.iter().rev().map(|&x| forward.eval(x)).collect();
        let mut invert = |y: f64| -> Result<f64, Error> {
            Ok(invert_decreasing(|x| forward.eval(x), y, x_lo, x_hi))
        };
        let mut pieces = Vec::with_capacity(y_knots.len() - 1);
        let (mut inverse_worst, mut inverse_worst_t): (f64, f64) = (0.0, 0.0);
        for ends in y_knots.windows(2) {
            let mut gap = |series: &Piecewise, y: f64| {
                let x = series.eval(y).clamp(x_lo, x_hi);
                let gap = (y - solve(x)?).abs();
                // d ln P / d T = -x^2 d ln P / d x, by a central difference on the forward series.
                let h = 1e-6 * (x_hi - x_lo);
                let (a, b) = ((x - h).max(x_lo), (x + h).min(x_hi));
                let slope = (forward.eval(b) - forward.eval(a)) / (b - a) * x * x;
                Ok((gap, gap / slope.abs()))
            };
            let (refined, worst, worst_t) = refine(
                ends[0],
                ends[1],
                &mut invert,
                &mut gap,
                &mut check_points,
                CriticalEnd::High,
                MAX_HALVINGS,
            )?;
            pieces.extend(refined);
            inverse_worst = inverse_worst.max(worst);
            inverse_worst_t = inverse_worst_t.max(worst_t);
        }
        let inverse = Pieces::new(pieces);
        if inverse_worst > CURVE_TOLERANCE {
            return Err(curve_failed("inverse", inverse_worst));
        }
        let report = CurveReport {
            breakpoints: knots.len() - 2,
            pieces: forward.count,
            inverse_pieces: inverse.count,
            forward_segments: forward.segments(),
            inverse_segments: inverse.segments(),
            degree: CURVE_DEGREE,
            check_points,
            solves: solves.get(),
            max_pressure_deviation: forward_worst.exp_m1(),
            max_inverse_pressure_deviation: inverse_worst.exp_m1(),
            max_inverse_temperature_deviation_k: inverse_worst_t,
        };
        let (y_lo, y_hi) = (y_knots[0], y_knots[y_knots.len() - 1]);
        Ok(SaturationCurve {
            t_min,
            t_max,
            // The same exponential as the lookups, so that the curve's end temperatures give
            // exactly its end pressures.
            p_min: exp_ln_pressure(y_lo),
            p_max: exp_ln_pressure(y_hi),
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
            Some(exp_ln_pressure(self.forward.eval(1.0 / t)))
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

/// `2^(j/256)` for `j = 0..256`, correctly rounded (evaluated to 60 significant digits).
#[allow(clippy::excessive_precision, clippy::approx_constant)]
const EXP2_FRACTIONS: [f64; 256] = [
    1.0,
    1.0027112750502025,
    1.0054299011128027,
    1.0081558981184175,
    1.0108892860517005,
    1.0136300849514894,
    1.016378314910953,
    1.019133996077738,
    1.0218971486541166,
    1.0246677928971357,
    1.0274459491187637,
    1.030231637686041,
    1.0330248790212284,
    1.0358256936019572,
    1.0386341019613787,
    1.041450124688316,
    1.0442737824274138,
    1.0471050958792898,
    1.0499440858006872,
    1.0527907730046264,
    1.0556451783605572,
    1.0585073227945128,
    1.061377227289262,
    1.0642549128844645,
    1.0671404006768237,
    1.0700337118202419,
    1.0729348675259756,
    1.075843889062791,
    1.0787607977571199,
    1.0816856149932152,
    1.0846183622133092,
    1.0875590609177697,
    1.0905077326652577,
    1.0934643990728858,
    1.0964290818163769,
    1.099401802630222,
    1.102382583307841,
    1.1053714457017412,
    1.1083684117236787,
    1.1113735033448175,
    1.1143867425958924,
    1.1174081515673693,
    1.1204377524096067,
    1.12347556733302,
    1.1265216186082418,
    1.129575928566288,
    1.1326385195987192,
    1.1357094141578055,
    1.1387886347566916,
    1.1418762039695616,
    1.1449721444318042,
    1.148076478840179,
    1.1511892299529827,
    1.154310420590216,
    1.1574400736337511,
    1.1605782120274988,
    1.1637248587775775,
    1.1668800369524817,
    1.1700437696832502,
    1.1732160801636373,
    1.1763969916502812,
    1.1795865274628758,
    1.182784710984341,
    1.1859915656609938,
    1.189207115002721,
    1.1924313825831512,
    1.1956643920398273,
    1.1989061670743806,
    1.202156731452703,
    1.2054161090051239,
    1.2086843236265816,
    1.2119613992768012,
    1.215247359980469,
    1.2185422298274085,
    1.2218460329727576,
    1.2251587936371455,
    1.22848053610687,
    1.2318112847340759,
    1.2351510639369334,
    1.2384998981998165,
    1.241857812073484,
    1.245224830175258,
    1.2486009771892048,
    1.2519862778663162,
    1.255380757024691,
    1.2587844395497165,
    1.2621973503942507,
    1.2656195145788063,
    1.2690509571917332,
    1.2724917033894028,
    1.275941778396392,
    1.2794012075056693,
    1.2828700160787783,
    1.2863482295460256,
    1.2898358734066657,
    1.2933329732290895,
    1.2968395546510096,
    1.3003556433796506,
    1.3038812651919358,
    1.3074164459346773,
    1.3109612115247644,
    1.3145155879493546,
    1.318079601266064,
    1.3216532776031575,
    1.3252366431597413,
    1.3288297242059544,
    1.3324325470831615,
    1.3360451382041458,
    1.339667524053303,
    1.3432997311868353,
    1.3469417862329458,
    1.3505937158920345,
    1.3542555469368927,
    1.3579273062129011,
    1.3616090206382248,
    1.365300717204012,
    1.3690024229745905,
    1.3727141650876684,
    1.3764359707545302,
    1.380167867260238,
    1.383909881963832,
    1.387662042298529,
    1.3914243757719262,
    1.3951969099662003,
    1.3989796725383112,
    1.4027726912202048,
    1.4065759938190154,
    1.4103896082172707,
    1.4142135623730951,
    1.4180478843204152,
    1.4218926021691656,
    1.4257477441054942,
    1.42961333839197,
    1.433489413367789,
    1.4373759974489824,
    1.4412731191286257,
    1.4451808069770467,
    1.449099089642035,
    1.4530279958490526,
    1.4569675544014438,
    1.460917794180647,
    1.4648787441464057,
    1.4688504333369818,
    1.4728328908693675,
    1.4768261459394993,
    1.4808302278224719,
    1.4848451658727524,
    1.488870989524397,
    1.4929077282912648,
    1.4969554117672355,
    1.5010140696264256,
    1.5050837316234065,
    1.5091644275934228,
    1.5132561874526098,
    1.5173590411982147,
    1.5214730189088146,
    1.5255981507445384,
    1.529734466947287,
    1.533881997840956,
    1.5380407738316568,
    1.5422108254079407,
    1.5463921831410214,
    1.550584877685,
    1.5547889397770887,
    1.559004400237837,
    1.5632312899713576,
    1.567469639965553,
    1.5717194812923414,
    1.5759808451078865,
    1.5802537626528246,
    1.5845382652524937,
    1.588834384317164,
    1.593142151342267,
    1.597461597908627,
    1.6017927556826934,
    1.606135656416771,
    1.6104903319492543,
    1.6148568142048607,
    1.6192351351948637,
    1.6236253270173289,
    1.6280274218573478,
    1.632441451987275,
    1.6368674497669644,
    1.6413054476440063,
    1.645755478153965,
    1.6502175739206177,
    1.6546917676561943,
    1.6591780921616162,
    1.6636765803267364,
    1.6681872651305825,
    1.6727101796415966,
    1.6772453570178785,
    1.681792830507429,
    1.6863526334483934,
    1.6909247992693053,
    1.6955093614893326,
    1.7001063537185235,
    1.7047158096580513,
    1.709337763100463,
    1.713972247929926,
    1.718619298122478,
    1.723278947746274,
    1.7279512309618377,
    1.732636182022311,
    1.7373338352737062,
    1.7420442251551564,
    1.746767386199169,
    1.7515033530318782,
    1.7562521603732995,
    1.761013843037584,
    1.7657884359332727,
    1.7705759740635547,
    1.7753764925265212,
    1.7801900265154245,
    1.785016611318935,
    1.789856282321401,
    1.7947090750031072,
    1.7995750249405351,
    1.804454167806624,
    1.809346539371032,
    1.8142521755003989,
    1.8191711121586085,
    1.8241033854070534,
    1.8290490314048973,
    1.8340080864093424,
    1.8389805867758937,
    1.843966568958626,
    1.8489660695104508,
    1.8539791250833855,
    1.8590057724288205,
    1.864046048397789,
    1.8690999899412386,
    1.8741676341103,
    1.8792490180565602,
    1.8843441790323345,
    1.8894531543909392,
    1.8945759815869656,
    1.8997126981765553,
    1.9048633418176741,
    1.9100279502703899,
    1.9152065613971474,
    1.9203992131630474,
    1.925605943636125,
    1.930826790987627,
    1.9360617934922943,
    1.9413109895286405,
    1.9465744175792332,
    1.9518521162309783,
    1.9571441241754002,
    1.9624504802089273,
    1.9677712232331759,
    1.9731063922552343,
    1.978456026387951,
    1.9838201648502194,
    1.9891988469672663,
    1.9945921121709402,
];
/// `ln 2 / 256`, split so that `k * LN2_256_HIGH` is exact for `|k| < 2^20`.
const LN2_256_HIGH: f64 = 0.0027076061737716373;
/// The rest of `ln 2 / 256`.
const LN2_256_LOW: f64 = 2.9064910585985925e-13;
/// `256 / ln 2`.
const TWO_HUNDRED_FIFTY_SIX_OVER_LN2: f64 = 369.3299304675746;

/// `e^y` for a curve's `ln P`, within 2 units in the last place (tested against the
/// library's `exp`). Written out so that it inlines into the lookup: `y = (256 m + j)
/// ln2/256 + r` with `|r| <= ln2/512` (the reduction exact, `ln2/256` in two parts), then
/// `2^m 2^(j/256) e^r` from a table of 256 values (2 KiB) and the Taylor series of `e^r` to
/// `r^4` (truncation below 4e-17). Outside `|y| < 700` (no curve holds such a pressure), and
/// for NaN, it hands over to the library.
#[inline]
pub(crate) fn exp_ln_pressure(y: f64) -> f64 {
    let within = y.abs() < 700.0;
    if !within {
        return y.exp();
    }
    // Round to the nearest integer by adding 1.5 * 2^52: the sum's last mantissa bits are
    // then the integer, in two's complement below the 1.5 (no rounding instruction on
    // baseline x86-64, and no saturating float-to-integer conversion).
    const ROUNDER: f64 = 6_755_399_441_055_744.0;
    let shifted = y * TWO_HUNDRED_FIFTY_SIX_OVER_LN2 + ROUNDER;
    let k = (shifted.to_bits() as i64).wrapping_sub(ROUNDER.to_bits() as i64);
    let kn = shifted - ROUNDER;
    let r = (y - kn * LN2_256_HIGH) - kn * LN2_256_LOW;
    let r2 = r * r;
    let series = r + r2 * (0.5 + r * (1.0 / 6.0) + r2 * (1.0 / 24.0));
    let scale =
        f64::from_bits((((k >> 8) + 1023) as u64) << 52) * EXP2_FRACTIONS[(k & 255) as usize];
    scale + scale * series
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
    ///
    /// # Panics
    ///
    /// If the curve's temperature range does not lie inside this engine's saturation range:
    /// lookups trust a temperature inside the curve's range without other checks, so a curve
    /// from another fluid would give wrong answers silently.
    pub fn with_shared_curve(mut self, curve: Arc<SaturationCurve>) -> PureEos {
        // Lookups trust a temperature inside the curve's range without other checks
        // (`saturation_pressure`), so the range must lie inside this engine's.
        assert!(
            curve.t_min >= self.minimum_temperature_k()
                && curve.t_max <= self.saturation_temperature_limit_k(),
            "with_shared_curve: a curve for {:?} K does not fit an engine for {} K to {} K \
             (a curve built for another fluid or model)",
            (curve.t_min, curve.t_max),
            self.minimum_temperature_k(),
            self.saturation_temperature_limit_k(),
        );
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

#[cfg(test)]
mod tests {
    use super::*;

    /// The lookup's exponential agrees with the library's `exp` (correctly rounded to within
    /// one unit in the last place) within 2 units in the last place, over every `ln P` a curve
    /// can hold (vapor pressures from 4e-18 Pa to 2e17 Pa), at the table's nodes and at the
    /// hand-over to the library.
    #[test]
    fn curve_exponential_matches_the_library() {
        let mut worst: f64 = 0.0;
        let mut y = -40.0;
        while y <= 40.0 {
            for v in [y, y + 0.5 * LN2_256_HIGH, -y] {
                let (fast, exact) = (exp_ln_pressure(v), v.exp());
                worst = worst.max(((fast - exact) / exact).abs());
            }
            y += 1.0e-4;
        }
        assert!(
            worst <= 2.0 * f64::EPSILON,
            "worst relative difference {worst:e}"
        );
        for y in [-700.5, 700.5, f64::NAN] {
            assert_eq!(exp_ln_pressure(y).to_bits(), y.exp().to_bits(), "{y}");
        }
        assert_eq!(exp_ln_pressure(0.0), 1.0);
    }
}
