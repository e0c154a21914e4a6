//! Real roots of the compressibility cubic `Z^3 + c2 Z^2 + c1 Z + c0 = 0`:
//! closed form (Cardano, trigonometric form for three roots), then Newton polishing.

/// The real roots of a monic cubic, ascending. `len` is 1 or 3 (a double root is
/// reported twice, so three roots are always distinct positions in the array).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CubicRoots {
    roots: [f64; 3],
    len: usize,
}

impl CubicRoots {
    /// A single real root.
    pub(crate) fn single(z: f64) -> CubicRoots {
        CubicRoots {
            roots: [z; 3],
            len: 1,
        }
    }

    /// The roots, ascending.
    pub fn as_slice(&self) -> &[f64] {
        &self.roots[..self.len]
    }

    /// Smallest real root.
    pub fn smallest(&self) -> f64 {
        self.roots[0]
    }

    /// Largest real root.
    pub fn largest(&self) -> f64 {
        self.roots[self.len - 1]
    }

    /// Number of real roots (1 or 3).
    pub fn count(&self) -> usize {
        self.len
    }
}

/// Solves `z^3 + c2 z^2 + c1 z + c0 = 0` for its real roots.
///
/// One real root is found in closed form (Cardano where the discriminant is positive,
/// otherwise the largest root of the trigonometric form) and polished; the other two
/// come from the deflated quadratic with the cancellation-free formula, so that a
/// liquid root many orders of magnitude smaller than the vapor root keeps full relative
/// precision.
pub fn solve_cubic(c2: f64, c1: f64, c0: f64) -> CubicRoots {
    let first = first_root(c2, c1, c0);
    let Some((second, third)) = deflated_pair(first, c2, c1, c0) else {
        return CubicRoots::single(first);
    };
    let mut roots = [first, polish(second, c2, c1, c0), polish(third, c2, c1, c0)];
    roots.sort_by(f64::total_cmp);
    CubicRoots { roots, len: 3 }
}

/// The coefficients `[c2, c1, c0]` of the compressibility cubic `Z^3 + c2 Z^2 + c1 Z + c0 = 0`
/// of the generic two-parameter cubic equation of state, for dimensionless `A = a P / (R T)^2`
/// and `B = b P / (R T)` and the model's `delta1`, `delta2`: the one form pure fluids and
/// mixtures share.
#[inline]
pub(crate) fn compressibility_cubic(a: f64, b: f64, delta1: f64, delta2: f64) -> [f64; 3] {
    let (u, w) = (delta1 + delta2, delta1 * delta2);
    [
        -(1.0 + b - u * b),
        a + w * b * b - u * b - u * b * b,
        -(a * b + w * b * b + w * b * b * b),
    ]
}

/// Which root of a cubic a caller needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Extreme {
    /// The smallest real root (a liquid's compressibility).
    Smallest,
    /// The largest real root (a vapor's compressibility).
    Largest,
}

/// Roots closer than this, relative to the larger magnitude, are polished before they are
/// ordered: a Newton step moves a root that close to another by more than their separation.
const ROOTS_APART: f64 = 1e-6;

/// The smallest or largest real root of `z^3 + c2 z^2 + c1 z + c0 = 0`: the value
/// [`solve_cubic`] reports as `smallest()` or `largest()`, with less work. The closed-form root
/// is the largest of three (or the only one); of the deflated pair, only the root asked for is
/// polished, unless two roots lie within [`ROOTS_APART`] of each other, where all three are
/// polished and sorted as in [`solve_cubic`].
pub fn solve_cubic_extreme(c2: f64, c1: f64, c0: f64, which: Extreme) -> f64 {
    let first = first_root(c2, c1, c0);
    let Some((second, third)) = deflated_pair(first, c2, c1, c0) else {
        return first;
    };
    let (low, high) = if second <= third {
        (second, third)
    } else {
        (third, second)
    };
    match which {
        Extreme::Largest if apart(high, first) => first,
        Extreme::Smallest if apart(low, high) && apart(low, first) => polish(low, c2, c1, c0),
        Extreme::Largest => solve_cubic(c2, c1, c0).largest(),
        Extreme::Smallest => solve_cubic(c2, c1, c0).smallest(),
    }
}

/// The smallest and the largest real root of `z^3 + c2 z^2 + c1 z + c0 = 0` (equal when
/// there is one): the values [`solve_cubic`] reports as `smallest()` and `largest()`, with the
/// middle root left unpolished where the three lie apart (see [`solve_cubic_extreme`]).
pub fn solve_cubic_extremes(c2: f64, c1: f64, c0: f64) -> (f64, f64) {
    let first = first_root(c2, c1, c0);
    let Some((second, third)) = deflated_pair(first, c2, c1, c0) else {
        return (first, first);
    };
    let (low, high) = if second <= third {
        (second, third)
    } else {
        (third, second)
    };
    if apart(high, first) && apart(low, high) {
        (polish(low, c2, c1, c0), first)
    } else {
        let roots = solve_cubic(c2, c1, c0);
        (roots.smallest(), roots.largest())
    }
}

/// Whether `above` exceeds `below` by more than [`ROOTS_APART`] of the larger magnitude.
#[inline]
fn apart(below: f64, above: f64) -> bool {
    above - below > ROOTS_APART * below.abs().max(above.abs())
}

/// One real root in closed form (Cardano where the discriminant is positive, otherwise the
/// largest root of the trigonometric form), polished.
#[inline]
fn first_root(c2: f64, c1: f64, c0: f64) -> f64 {
    // Depressed cubic t^3 + p t + q = 0 with z = t - c2/3.
    let shift = c2 / 3.0;
    let p = c1 - c2 * shift;
    let q = c0 - c1 * shift + 2.0 * shift * shift * shift;
    let disc = (q / 2.0) * (q / 2.0) + (p / 3.0) * (p / 3.0) * (p / 3.0);
    let first = if disc > 0.0 {
        let sq = disc.sqrt();
        let u = cube_root(-q / 2.0 - q.signum() * sq);
        let t = if u != 0.0 { u - p / (3.0 * u) } else { 0.0 };
        t - shift
    } else {
        let r = (-p / 3.0).sqrt();
        let arg = if r > 0.0 {
            (-q / (2.0 * r * r * r)).clamp(-1.0, 1.0)
        } else {
            0.0
        };
        2.0 * r * (arg.acos() / 3.0).cos() - shift
    };
    polish(first, c2, c1, c0)
}

/// The other two roots, unpolished, from the quadratic left by dividing out `first`:
/// `z^2 + e1 z + e0` with `e1 = c2 + first` and `e0 = -c0 / first` (the product of the
/// roots), by the cancellation-free formula; `None` when they are complex.
#[inline]
fn deflated_pair(first: f64, c2: f64, c1: f64, c0: f64) -> Option<(f64, f64)> {
    let e1 = c2 + first;
    let e0 = if first != 0.0 {
        -c0 / first
    } else {
        c1 + first * e1
    };
    let d = e1 * e1 - 4.0 * e0;
    if d < 0.0 {
        return None;
    }
    let qd = -0.5 * (e1 + e1.signum() * d.sqrt());
    if qd != 0.0 {
        Some((qd, e0 / qd))
    } else {
        Some((0.0, 0.0))
    }
}

/// Up to three Newton steps on the cubic; a step is kept only if it reduces the residual (the
/// residual of a kept step is reused by the next).
fn polish(mut z: f64, c2: f64, c1: f64, c0: f64) -> f64 {
    let mut f = ((z + c2) * z + c1) * z + c0;
    for _ in 0..3 {
        let df = (3.0 * z + 2.0 * c2) * z + c1;
        if df == 0.0 || f == 0.0 {
            break;
        }
        let next = z - f / df;
        let f_next = ((next + c2) * next + c1) * next + c0;
        if f_next.abs() < f.abs() {
            z = next;
            f = f_next;
        } else {
            break;
        }
    }
    z
}

/// The real cube root of `x`, to within about one unit in the last place: a first guess from
/// the exponent bits (a third of the biased exponent, about 5 % off), then three steps of
/// Halley's iteration `y <- y (y^3 + 2x) / (2y^3 + x)`, which triples the number of correct
/// digits each step. About half the cost of the library's correctly rounded `cbrt`; the root
/// it feeds is polished by Newton steps on the cubic afterwards anyway.
fn cube_root(x: f64) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let a = x.abs();
    let (a, scale) = if a < f64::MIN_POSITIVE {
        // Subnormal: scale by 2^54 (cube root 2^18) to keep the bit trick valid.
        (a * 18_014_398_509_481_984.0, 1.0 / 262_144.0)
    } else {
        (a, 1.0)
    };
    let mut y = f64::from_bits(a.to_bits() / 3 + 0x2A9F_7893_782D_A1CE);
    for _ in 0..3 {
        let y3 = y * y * y;
        y *= (y3 + 2.0 * a) / (2.0 * y3 + a);
    }
    (y * scale).copysign(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The fast cube root agrees with the library's correctly rounded one within 1e-15
    /// relative, over normal and subnormal magnitudes of both signs.
    #[test]
    fn cube_root_matches_the_library() {
        let mut x = 1e-310_f64;
        while x < 1e300 {
            for v in [x, -x, 1.37 * x, -2.9 * x] {
                let (fast, exact) = (cube_root(v), v.cbrt());
                assert!(
                    (fast - exact).abs() <= 1e-15 * exact.abs(),
                    "{v}: {fast} {exact}"
                );
            }
            x *= 7.3;
        }
        assert_eq!(cube_root(0.0), 0.0);
        assert_eq!(cube_root(-27.0), -3.0);
        assert!(cube_root(f64::NAN).is_nan());
    }

    /// The coefficients `(c2, c1, c0)` of the monic cubic with roots `r`.
    fn monic(r: [f64; 3]) -> (f64, f64, f64) {
        (
            -(r[0] + r[1] + r[2]),
            r[0] * r[1] + r[0] * r[2] + r[1] * r[2],
            -r[0] * r[1] * r[2],
        )
    }

    /// Asserts that the single-root solves give bit for bit the full solve's extremes.
    fn assert_extremes_match(c2: f64, c1: f64, c0: f64) {
        let full = solve_cubic(c2, c1, c0);
        let expected = (full.smallest().to_bits(), full.largest().to_bits());
        let (smallest, largest) = solve_cubic_extremes(c2, c1, c0);
        let single = (
            solve_cubic_extreme(c2, c1, c0, Extreme::Smallest).to_bits(),
            solve_cubic_extreme(c2, c1, c0, Extreme::Largest).to_bits(),
        );
        assert_eq!(single, expected, "one root at a time, {c2} {c1} {c0}");
        assert_eq!(
            (smallest.to_bits(), largest.to_bits()),
            expected,
            "both extremes, {c2} {c1} {c0}"
        );
    }

    /// The single-root solve gives exactly the root the full solve reports, for cubics from
    /// known roots spread over many magnitudes (liquid roots down to 1e-7 of the vapor root),
    /// nearly coincident pairs and triples, cubics with one real root, negative and zero
    /// roots, and exact double and triple roots.
    #[test]
    fn extreme_roots_match_the_full_solve() {
        let mut checked = 0;
        let mut seed = 0x9E37_79B9_7F4A_7C15_u64;
        let mut uniform = || {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for _ in 0..20_000 {
            let largest = 0.05 + 1.5 * uniform();
            let smallest = largest * 10f64.powf(-7.0 * uniform());
            let middle = match (uniform() * 4.0) as u32 {
                0 => smallest * (1.0 + 1e-9 * uniform()),
                1 => largest * (1.0 - 1e-9 * uniform()),
                _ => smallest + (largest - smallest) * uniform(),
            };
            // Three real roots, and a cubic with the pair below the largest made complex.
            let single = (-(largest) - 0.2, 0.01 + 0.2 * largest, -0.01 * largest);
            for (c2, c1, c0) in [monic([smallest, middle, largest]), single] {
                assert_extremes_match(c2, c1, c0);
                checked += 1;
            }
        }
        assert_eq!(checked, 40_000);
        // Negative (spurious) roots, a zero root, exact double and triple roots.
        for r in [
            [-0.3, 0.02, 0.8],
            [-1e-3, 1e-4, 0.95],
            [0.0, 0.1, 0.9],
            [-0.5, 0.0, 0.5],
            [0.25, 0.25, 0.9],
            [0.1, 0.7, 0.7],
            [0.4, 0.4, 0.4],
        ] {
            let (c2, c1, c0) = monic(r);
            assert_extremes_match(c2, c1, c0);
        }
    }

    /// Cubics built from known roots, including the nearly coincident pairs met near the
    /// critical point and roots of very different size met at low reduced temperature.
    #[test]
    fn recovers_known_roots() {
        let cases: [[f64; 3]; 5] = [
            [0.01, 0.3, 0.95],
            [1e-6, 2e-3, 0.9999],
            [0.307, 0.3075, 0.308],
            [0.2, 0.2, 0.8],
            [0.5, 0.5, 0.5],
        ];
        for r in cases {
            let c2 = -(r[0] + r[1] + r[2]);
            let c1 = r[0] * r[1] + r[0] * r[2] + r[1] * r[2];
            let c0 = -r[0] * r[1] * r[2];
            let roots = solve_cubic(c2, c1, c0);
            assert!((roots.largest() - r[2]).abs() < 1e-9, "{r:?} -> {roots:?}");
            assert!((roots.smallest() - r[0]).abs() < 1e-4, "{r:?} -> {roots:?}");
        }
        // One real root: (z - 0.9)(z^2 + 0.01)
        let roots = solve_cubic(-0.9, 0.01, -0.009);
        assert_eq!(roots.count(), 1);
        assert!((roots.largest() - 0.9).abs() < 1e-14);
    }
}
