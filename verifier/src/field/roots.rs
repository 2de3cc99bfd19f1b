//! Certified roots of `F` and the logarithmic embedding (design note
//! `general-fields.md`, "Relations, units, regulator").
//!
//! The certificate ships an enclosure of every root of the monic
//! polynomial `F` of degree `n ≤ 6`: `r1` disjoint ascending real intervals
//! and `r2` pairwise disjoint boxes in the upper half-plane. [`check_roots`]
//! proves that each set holds a root:
//! - a real interval `[a, b]` by a sign change, `F(a)·F(b) < 0`, decided
//!   exactly in integers (the end points are dyadic), and the intermediate
//!   value theorem;
//! - a box `X` by the Krawczyk test (R. Krawczyk, "Newton-Algorithmen zur
//!   Bestimmung von Nullstellen mit Fehlerschranken", Computing 4 (1969)
//!   187–201; R. E. Moore, "Interval Analysis", 1966, and "A test for
//!   existence of solutions to nonlinear systems", SIAM J. Numer. Anal. 14
//!   (1977)), in rectangular complex interval arithmetic with outward
//!   rounding (the argument is at `fn krawczyk` below).
//!
//! Then `r1 + 2 r2 = n` finishes the count: the real intervals, the boxes
//! and the boxes' mirror images are `n` pairwise disjoint sets (a box lies
//! strictly above the real axis, its mirror image strictly below), each
//! holding at least one of the `n` roots counted with multiplicity, so
//! each holds exactly one root, and it is simple. The roots in the real
//! intervals are the real embeddings, those in the boxes one of each pair
//! of complex embeddings; so `(r1, r2)` is the signature.
//!
//! Precision: an end point `m·2^e` of an enclosure of width about `2^-W`
//! has a mantissa of about `W + log2|root|` bits. The checks work at the
//! longest such mantissa plus the coefficient bits of `F` plus 128 bits
//! ([`Roots::prec`]), so the end points are exact and the rounding errors
//! stay far below the widths; the cap is `limits::MAX_ROOT_PREC`.

use crate::analytic::interval::{Interval, PREC};
use crate::field::zpoly::{derivative, eval};
use crate::limits::{
    MAX_REGULATOR_RANK, MAX_ROOT_COEFF_BITS, MAX_ROOT_DEGREE, MAX_ROOT_ENDPOINT_BITS,
    MAX_ROOT_EXPONENT, MAX_ROOT_PREC,
};
use classcert_format::{Bounds, Dyadic};
use rug::{Float, Integer};
use std::cmp::Ordering;

/// A complex number enclosed in a box: (real part, imaginary part).
type Cx = (Interval, Interval);

/// Why root enclosures are refused.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum RootError {
    /// `F` is not monic of degree 1 to [`MAX_ROOT_DEGREE`].
    Polynomial(&'static str),
    /// A coefficient, an end point or the precision is over its cap.
    OverLimit(&'static str),
    /// `r1 + 2 r2 ≠ n`.
    Count { r1: usize, r2: usize, n: usize },
    /// Real interval `i` is empty, or not above interval `i - 1`.
    RealOrder(usize),
    /// `F` has no sign change on real interval `i`.
    NoSignChange(usize),
    /// Box `i` is empty or not strictly above the real axis.
    NotUpperHalf(usize),
    /// Boxes `i` and `j` meet.
    BoxesOverlap(usize, usize),
    /// The Krawczyk test fails on box `i`.
    NotProven(usize),
}

impl std::fmt::Display for RootError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Polynomial(s) => write!(f, "the polynomial {s}"),
            Self::OverLimit(s) => write!(f, "over limit: {s}"),
            Self::Count { r1, r2, n } => write!(
                f,
                "{r1} real intervals and {r2} boxes do not account for the {n} roots"
            ),
            Self::RealOrder(i) => write!(
                f,
                "real interval {i} is empty or does not lie above the one before"
            ),
            Self::NoSignChange(i) => write!(f, "no sign change on real interval {i}"),
            Self::NotUpperHalf(i) => {
                write!(f, "box {i} is empty or not strictly above the real axis")
            }
            Self::BoxesOverlap(i, j) => write!(f, "boxes {i} and {j} meet"),
            Self::NotProven(i) => write!(
                f,
                "the Krawczyk test does not prove a unique root in box {i}"
            ),
        }
    }
}

/// Enclosures of all roots of `F`, checked by [`check_roots`]: exactly one
/// root in each real interval and in each box, every root enclosed once.
#[derive(Debug, Clone)]
pub struct Roots {
    n: usize,
    prec: u32,
    real: Vec<Interval>,
    complex: Vec<Cx>,
}

fn point(x: Float) -> Interval {
    Interval {
        lo: x.clone(),
        hi: x,
    }
}

/// The dyadic `m·2^e` as a float of `prec ≥` its mantissa's bits: exact.
fn exact(d: &Dyadic, prec: u32) -> Option<Float> {
    let mut f = Float::with_val(prec, &d.mantissa);
    let e = i32::try_from(d.exponent).ok()?;
    f <<= e;
    Some(f)
}

fn in_caps(d: &Dyadic) -> bool {
    d.mantissa.significant_bits() <= MAX_ROOT_ENDPOINT_BITS
        && d.exponent.unsigned_abs() <= MAX_ROOT_EXPONENT.unsigned_abs()
}

/// The sign of `F(m·2^e)`, exactly: for `e = -k < 0` it is the sign of
/// the integer `2^{kn} F(m/2^k) = Σ_j f_j m^j 2^{k(n-j)}`, by Horner's rule.
fn sign_at(f: &[Integer], d: &Dyadic) -> Ordering {
    if d.exponent >= 0 {
        let x = Integer::from(&d.mantissa << d.exponent.unsigned_abs() as u32);
        return eval(f, &x).cmp0();
    }
    let step = Integer::from(1) << d.exponent.unsigned_abs() as u32;
    let mut scale = Integer::from(1);
    let mut acc = Integer::new();
    for c in f.iter().rev() {
        acc = acc * &d.mantissa + Integer::from(c * &scale);
        scale *= &step;
    }
    acc.cmp0()
}

fn cadd(a: &Cx, b: &Cx) -> Cx {
    (a.0.add(&b.0), a.1.add(&b.1))
}

fn csub(a: &Cx, b: &Cx) -> Cx {
    (a.0.sub(&b.0), a.1.sub(&b.1))
}

fn cmul(a: &Cx, b: &Cx) -> Cx {
    (
        a.0.mul(&b.0).sub(&a.1.mul(&b.1)),
        a.0.mul(&b.1).add(&a.1.mul(&b.0)),
    )
}

/// A box holding `p(z)` for every `z` in the box `z`, by Horner's rule.
fn ceval(p: &[Integer], z: &Cx, prec: u32) -> Cx {
    let zero = Interval::int_prec(&Integer::new(), prec);
    let mut acc = (zero.clone(), zero.clone());
    for c in p.iter().rev() {
        acc = cadd(&cmul(&acc, z), &(Interval::int_prec(c, prec), zero.clone()));
    }
    acc
}

/// An interval holding `p(t)` for every `t` in `t`, by Horner's rule.
fn eval_interval(p: &[Integer], t: &Interval, prec: u32) -> Interval {
    let mut acc = Interval::int_prec(&Integer::new(), prec);
    for c in p.iter().rev() {
        acc = acc.mul(t).add(&Interval::int_prec(c, prec));
    }
    acc
}

/// `max(|lo|, |hi|)`.
fn mag(x: &Interval) -> Float {
    let a = Float::with_val(x.prec(), x.lo.abs_ref());
    let b = Float::with_val(x.prec(), x.hi.abs_ref());
    if a > b {
        a
    } else {
        b
    }
}

/// `{|x| : x ∈ x}`.
fn abs(x: &Interval) -> Interval {
    if x.lo >= 0 {
        x.clone()
    } else if x.hi <= 0 {
        x.neg()
    } else {
        Interval {
            lo: Float::new(x.prec()),
            hi: mag(x),
        }
    }
}

/// `{x^2 : x ∈ x}`, tighter than `x·x` when `x` holds 0.
fn sqr(x: &Interval) -> Interval {
    let a = abs(x);
    a.mul(&a)
}

/// The Krawczyk test on the box `x`, in the contraction form. With `y` the
/// (rounded) midpoint of `x`, `Y ≈ 1/F'(y)` any complex float and `F'(X)` a
/// box holding `F'` on `x`, let `C = 1 - Y·F'(X)` and
/// `K = y - Y·F(y) + C·(X - y)`. The test passes when `K ⊆ X` and
/// `q = mag(Re C) + mag(Im C) < 1`.
///
/// Why this proves a unique root: let `g(z) = z - Y F(z)`. For `z ∈ X`,
/// `F(z) - F(y) = (z - y)·M` with `M = ∫_0^1 F'(y + t(z - y)) dt`, an
/// average of values of `F'` on the segment `[y, z] ⊆ X` (X is convex), so
/// `M` lies in the closed convex box `F'(X)`. Hence
/// `g(z) = y - Y F(y) + (1 - Y M)(z - y) ∈ K ⊆ X` by the inclusion
/// property of interval arithmetic, and the same identity between two
/// points gives `|g(z) - g(z')| ≤ q |z - z'|` since `|c| ≤ |Re c| + |Im c|`.
/// So `g` is a contraction of the closed box `X` into itself and has
/// exactly one fixed point there (Banach's fixed point theorem); `q < 1`
/// forces `Y ≠ 0`, so the fixed points of `g` are the roots of `F` in `X`.
fn krawczyk(f: &[Integer], df: &[Integer], x: &Cx, prec: u32) -> bool {
    let mid = |i: &Interval| Float::with_val(prec, &i.lo + &i.hi) / 2u32;
    // lo ≤ RN(lo + hi)/2 ≤ hi: rounding is monotone and 2·lo, 2·hi are floats
    let y = (point(mid(&x.0)), point(mid(&x.1)));
    let d = ceval(df, &y, prec);
    let (a, b) = (mid(&d.0), mid(&d.1));
    let norm = Float::with_val(prec, &a * &a) + Float::with_val(prec, &b * &b);
    if norm.is_zero() || !norm.is_finite() {
        return false;
    }
    let yinv = (point(a / &norm), point(-b / &norm));
    let one = (
        Interval::int_prec(&Integer::from(1), prec),
        Interval::int_prec(&Integer::new(), prec),
    );
    let c = csub(&one, &cmul(&yinv, &ceval(df, x, prec)));
    let k = cadd(
        &csub(&y, &cmul(&yinv, &ceval(f, &y, prec))),
        &cmul(&c, &csub(x, &y)),
    );
    let q = point(mag(&c.0)).add(&point(mag(&c.1)));
    x.0.contains(&k.0) && x.1.contains(&k.1) && q.hi < 1
}

/// Checks root enclosures of the monic polynomial `f` (coefficients low to
/// high) of degree `n ≤ 6`: `real` ascending disjoint intervals, each with
/// a sign change of `F`; `complex` pairwise disjoint boxes (real part,
/// imaginary part) with imaginary part `> 0`, each passing the Krawczyk
/// test; and `r1 + 2 r2 = n`. See the module text for why this encloses
/// every root exactly once.
pub fn check_roots(
    f: &[Integer],
    real: &[Bounds],
    complex: &[(Bounds, Bounds)],
) -> Result<Roots, RootError> {
    let n = f.len().saturating_sub(1);
    if n == 0 || n > MAX_ROOT_DEGREE {
        return Err(RootError::Polynomial("is not of degree 1 to 6"));
    }
    if f.last().is_none_or(|c| *c != 1) {
        return Err(RootError::Polynomial("is not monic"));
    }
    let coeff_bits = f.iter().map(|c| c.significant_bits()).max().unwrap_or(0);
    if coeff_bits > MAX_ROOT_COEFF_BITS {
        return Err(RootError::OverLimit("a coefficient of F"));
    }
    let (r1, r2) = (real.len(), complex.len());
    if r1.saturating_add(r2.saturating_mul(2)) != n {
        return Err(RootError::Count { r1, r2, n });
    }
    let ends = real
        .iter()
        .chain(complex.iter().flat_map(|(a, b)| [a, b]))
        .flat_map(|b| [&b.lo, &b.hi]);
    let mut bits = 0;
    for d in ends {
        if !in_caps(d) {
            return Err(RootError::OverLimit("an end point of a root enclosure"));
        }
        bits = bits.max(d.mantissa.significant_bits());
    }
    let prec = (bits + coeff_bits + 128).max(PREC);
    if prec > MAX_ROOT_PREC {
        return Err(RootError::OverLimit("the working precision"));
    }
    let conv = |b: &Bounds| -> Option<Interval> {
        Some(Interval {
            lo: exact(&b.lo, prec)?,
            hi: exact(&b.hi, prec)?,
        })
    };
    let over = RootError::OverLimit("an end point of a root enclosure");
    let mut reals: Vec<Interval> = Vec::with_capacity(r1);
    for (i, b) in real.iter().enumerate() {
        let t = conv(b).ok_or(over.clone())?;
        if t.lo >= t.hi || reals.last().is_some_and(|p| p.hi >= t.lo) {
            return Err(RootError::RealOrder(i));
        }
        let (s, e) = (sign_at(f, &b.lo), sign_at(f, &b.hi));
        if s == Ordering::Equal || e == Ordering::Equal || s == e {
            return Err(RootError::NoSignChange(i));
        }
        reals.push(t);
    }
    let df = derivative(f);
    let mut boxes: Vec<Cx> = Vec::with_capacity(r2);
    for (i, (re, im)) in complex.iter().enumerate() {
        let x = (conv(re).ok_or(over.clone())?, conv(im).ok_or(over.clone())?);
        if x.0.lo >= x.0.hi || x.1.lo >= x.1.hi || x.1.lo <= 0 {
            return Err(RootError::NotUpperHalf(i));
        }
        let apart = |a: &Interval, b: &Interval| a.hi < b.lo || b.hi < a.lo;
        if let Some(j) = boxes
            .iter()
            .position(|o| !apart(&o.0, &x.0) && !apart(&o.1, &x.1))
        {
            return Err(RootError::BoxesOverlap(j, i));
        }
        if !krawczyk(f, &df, &x, prec) {
            return Err(RootError::NotProven(i));
        }
        boxes.push(x);
    }
    Ok(Roots {
        n,
        prec,
        real: reals,
        complex: boxes,
    })
}

impl Roots {
    /// `(r1, r2)`.
    pub fn signature(&self) -> (usize, usize) {
        (self.real.len(), self.complex.len())
    }

    /// The working precision in bits.
    pub fn prec(&self) -> u32 {
        self.prec
    }

    /// `Log(α)` for `α = (Σ_j num_j θ^j) / den`: the `r1 + r2` intervals
    /// `log|σ_i α|` over the real places, then `2 log|σ α| =
    /// log(Re² + Im²)` over the complex ones (in the order of the
    /// enclosures). `None` if `den = 0`, if `num` has more than `n`
    /// coefficients, or if some `|σ_i α|` cannot be bounded away from 0.
    pub fn log_embedding(&self, num: &[Integer], den: &Integer) -> Option<Vec<Interval>> {
        if *den == 0 || num.len() > self.n {
            return None;
        }
        let log_den = Interval::int_prec(&Integer::from(den.abs_ref()), self.prec).ln()?;
        let mut out = Vec::with_capacity(self.real.len() + self.complex.len());
        for t in &self.real {
            let v = eval_interval(num, t, self.prec);
            out.push(abs(&v).ln()?.sub(&log_den));
        }
        let two_log_den = log_den.add(&log_den);
        for z in &self.complex {
            let (a, b) = ceval(num, z, self.prec);
            out.push(sqr(&a).add(&sqr(&b)).ln()?.sub(&two_log_den));
        }
        Some(out)
    }

    /// Whether `F` is shown to have no monic factor of degree `0 < d < n`
    /// over `Z` (then `F` is irreducible over `Q`, by Gauss's lemma: a
    /// monic rational factor of a monic integer polynomial has integer
    /// coefficients; common practice). The roots of such a factor are a
    /// set closed under conjugation: some real roots and whole complex
    /// pairs. For every such set of size at most `n/2`, the coefficients
    /// of `∏ (x - root)` are enclosed; a real part holding no integer
    /// rules the set out. `false` when some set cannot be ruled out.
    pub fn no_integer_factor(&self) -> bool {
        let zero = Interval::int_prec(&Integer::new(), self.prec);
        let one = Interval::int_prec(&Integer::from(1), self.prec);
        let mut groups: Vec<Vec<Cx>> = self
            .real
            .iter()
            .map(|t| vec![(t.clone(), zero.clone())])
            .collect();
        for z in &self.complex {
            groups.push(vec![z.clone(), (z.0.clone(), z.1.neg())]);
        }
        let g = groups.len();
        for mask in 1u32..(1 << g) - 1 {
            let chosen = (0..g).filter(|i| mask >> i & 1 == 1);
            let roots: Vec<&Cx> = chosen
                .flat_map(|i| groups.get(i).into_iter().flatten())
                .collect();
            if roots.len() * 2 > self.n {
                continue;
            }
            // coefficients from the constant term up
            let mut c: Vec<Cx> = vec![(one.clone(), zero.clone())];
            for r in roots {
                let mut next = vec![(zero.clone(), zero.clone()); c.len() + 1];
                for (k, ck) in c.iter().enumerate() {
                    if let Some(slot) = next.get_mut(k + 1) {
                        *slot = cadd(slot, ck);
                    }
                    if let Some(slot) = next.get_mut(k) {
                        *slot = csub(slot, &cmul(r, ck));
                    }
                }
                c = next;
            }
            let ruled_out = c
                .iter()
                .any(|(re, _)| re.lo.clone().ceil() > re.hi.clone().floor());
            if !ruled_out {
                return false;
            }
        }
        true
    }
}

/// Laplace expansion along row `row` over the columns `cols`.
fn det(m: &[Vec<Interval>], row: usize, cols: &[usize]) -> Option<Interval> {
    if cols.is_empty() {
        return Some(Interval::u64(1));
    }
    let mut acc = Interval::zero();
    for (k, c) in cols.iter().enumerate() {
        let rest: Vec<usize> = cols.iter().copied().filter(|x| x != c).collect();
        let term = m.get(row)?.get(*c)?.mul(&det(m, row + 1, &rest)?);
        acc = if k % 2 == 0 {
            acc.add(&term)
        } else {
            acc.sub(&term)
        };
    }
    Some(acc)
}

/// `|det m|` for a square `r × r` matrix of intervals, `r ≤`
/// [`MAX_REGULATOR_RANK`], by Laplace expansion (at most `5! = 120`
/// products); `None` if `m` is not square or too large. The empty matrix
/// has determinant 1.
pub fn abs_det(m: &[Vec<Interval>]) -> Option<Interval> {
    let r = m.len();
    if r > MAX_REGULATOR_RANK || m.iter().any(|row| row.len() != r) {
        return None;
    }
    let cols: Vec<usize> = (0..r).collect();
    det(m, 0, &cols).map(|d| abs(&d))
}

/// The regulator of `r` units from their log vectors (each of length
/// `r + 1 = r1 + r2`, complex places doubled): `|det|` of the `r × r`
/// minor without the last place. Any place may be dropped because the
/// entries of a unit's log vector sum to `log |N(u)| = 0` (H. Cohen, "A
/// Course in Computational Algebraic Number Theory", GTM 138, Definition
/// 4.9.2 and the remark after it, the number from memory; stated for any
/// place as `NumberField.Units.regulator_eq_det` in Mathlib). `None`
/// unless every vector has `r + 1` entries whose sum interval holds 0 and
/// the determinant is bounded away from 0 (the units are independent).
pub fn regulator(logs: &[Vec<Interval>]) -> Option<Interval> {
    let r = logs.len();
    if r > MAX_REGULATOR_RANK {
        return None;
    }
    let mut minor = Vec::with_capacity(r);
    for v in logs {
        if v.len() != r + 1 {
            return None;
        }
        let sum = v.iter().fold(Interval::zero(), |s, x| s.add(x));
        if sum.lo > 0 || sum.hi < 0 {
            return None;
        }
        minor.push(v.iter().take(r).cloned().collect::<Vec<_>>());
    }
    abs_det(&minor).filter(|d| d.lo > 0)
}

#[cfg(test)]
mod tests {
    use super::*;

    const W: u32 = 300;
    const P: u32 = 700;

    fn poly(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    type C64 = (f64, f64);

    fn m64(a: C64, b: C64) -> C64 {
        (a.0 * b.0 - a.1 * b.1, a.0 * b.1 + a.1 * b.0)
    }

    fn d64(a: C64, b: C64) -> C64 {
        let n = b.0 * b.0 + b.1 * b.1;
        m64(a, (b.0 / n, -b.1 / n))
    }

    /// All roots in f64 by the Durand–Kerner iteration (common practice).
    fn durand_kerner(c: &[i64]) -> Vec<C64> {
        let n = c.len() - 1;
        let ev = |z: C64| {
            c.iter().rev().fold((0.0, 0.0), |a, &k| {
                let p = m64(a, z);
                (p.0 + k as f64, p.1)
            })
        };
        let mut z: Vec<C64> = (0..n)
            .map(|k| (0..k).fold((1.0, 0.0), |a, _| m64(a, (0.4, 0.9))))
            .collect();
        for _ in 0..2000 {
            for i in 0..n {
                let mut den = (1.0, 0.0);
                for j in 0..n {
                    if j != i {
                        den = m64(den, (z[i].0 - z[j].0, z[i].1 - z[j].1));
                    }
                }
                let d = d64(ev(z[i]), den);
                z[i] = (z[i].0 - d.0, z[i].1 - d.1);
            }
        }
        z
    }

    type CF = (Float, Float);

    fn mf(a: &CF, b: &CF) -> CF {
        (
            Float::with_val(P, &a.0 * &b.0) - Float::with_val(P, &a.1 * &b.1),
            Float::with_val(P, &a.0 * &b.1) + Float::with_val(P, &a.1 * &b.0),
        )
    }

    fn evf(c: &[Integer], z: &CF) -> CF {
        c.iter().rev().fold((Float::new(P), Float::new(P)), |a, k| {
            let p = mf(&a, z);
            (p.0 + k, p.1)
        })
    }

    /// A root refined by Newton's method at `P` bits (real roots stay real).
    fn newton(f: &[Integer], z: C64) -> CF {
        let df = derivative(f);
        let mut z = (Float::with_val(P, z.0), Float::with_val(P, z.1));
        for _ in 0..40 {
            let (v, d) = (evf(f, &z), evf(&df, &z));
            let n = Float::with_val(P, &d.0 * &d.0) + Float::with_val(P, &d.1 * &d.1);
            let q = mf(&v, &(d.0 / &n, -d.1 / &n));
            z = (z.0 - q.0, z.1 - q.1);
        }
        z
    }

    /// `[x - 2^-W, x + 2^-W]`-ish with dyadic end points.
    fn around(x: &Float) -> Bounds {
        let m = Float::with_val(P, x << W).floor().to_integer().unwrap();
        let d = |k: i64| Dyadic {
            mantissa: Integer::from(&m + k),
            exponent: -i64::from(W),
        };
        Bounds {
            lo: d(-1),
            hi: d(2),
        }
    }

    /// Root enclosures of width `3·2^-W` around Newton-refined roots.
    fn enclose(c: &[i64]) -> (Vec<Bounds>, Vec<(Bounds, Bounds)>) {
        let f = poly(c);
        let mut real = Vec::new();
        let mut complex = Vec::new();
        for z in durand_kerner(c) {
            if z.1.abs() < 1e-6 {
                real.push(newton(&f, (z.0, 0.0)).0);
            } else if z.1 > 0.0 {
                let r = newton(&f, z);
                complex.push((around(&r.0), around(&r.1)));
            }
        }
        real.sort_by(|a, b| a.partial_cmp(b).unwrap());
        (real.iter().map(around).collect(), complex)
    }

    fn check(c: &[i64]) -> Result<Roots, RootError> {
        let (real, complex) = enclose(c);
        check_roots(&poly(c), &real, &complex)
    }

    fn holds(i: &Interval, x: f64, tol: f64) -> bool {
        i.lo.to_f64() - tol <= x && x <= i.hi.to_f64() + tol
    }

    fn width(i: &Interval) -> f64 {
        Float::with_val(P, &i.hi - &i.lo).to_f64()
    }

    /// Brill's theorem: `sign(disc F) = (-1)^{r2}` (common practice).
    fn brill(c: &[i64], r: &Roots) {
        let d = crate::field::zpoly::discriminant(&poly(c)).unwrap();
        let (_, r2) = r.signature();
        assert_eq!(d < 0, r2 % 2 == 1, "{c:?}");
    }

    #[test]
    fn cube_root_of_two() {
        // 2^(1/3) = 1.2599210498948732 (f64 cbrt); the other roots are
        // 2^(1/3)·e^{±2πi/3} (common practice): signature (1, 1)
        let c = [-2, 0, 0, 1];
        let r = check(&c).unwrap();
        assert_eq!(r.signature(), (1, 1));
        brill(&c, &r);
        let t = 2f64.cbrt();
        assert!(holds(&r.real[0], t, 1e-15));
        let (re, im) = &r.complex[0];
        assert!(holds(re, -t / 2.0, 1e-15));
        assert!(holds(im, t * 3f64.sqrt() / 2.0, 1e-15));
        assert!(width(&r.real[0]) < 1e-89 && width(im) < 1e-89);
    }

    #[test]
    fn eighth_roots_of_unity() {
        // x^4 + 1: e^{iπ/4}, e^{3iπ/4} and conjugates (common practice)
        let c = [1, 0, 0, 0, 1];
        let r = check(&c).unwrap();
        assert_eq!(r.signature(), (0, 2));
        brill(&c, &r);
        let h = 0.5f64.sqrt();
        let mut res: Vec<f64> = r.complex.iter().map(|b| b.0.mid_f64()).collect();
        res.sort_by(|a, b| a.partial_cmp(b).unwrap());
        assert!((res[0] + h).abs() < 1e-15 && (res[1] - h).abs() < 1e-15);
        assert!(r.complex.iter().all(|b| holds(&b.1, h, 1e-15)));
    }

    #[test]
    fn quintic_with_one_real_root() {
        // x^5 - x - 1: one real root 1.1673039782614187 (from memory; the
        // f64 Newton value below is the check), signature (1, 2)
        let c = [-1, -1, 0, 0, 0, 1];
        let r = check(&c).unwrap();
        assert_eq!(r.signature(), (1, 2));
        brill(&c, &r);
        let mut x = 1.0f64;
        for _ in 0..50 {
            x -= (x.powi(5) - x - 1.0) / (5.0 * x.powi(4) - 1.0);
        }
        assert!(holds(&r.real[0], x, 1e-15));
    }

    #[test]
    fn seventh_roots_of_unity_have_absolute_value_one() {
        // Φ_7 = x^6 + ... + 1, roots e^{2πik/7} (common practice): every
        // |σ(ζ)| = 1, so Log(ζ) is the zero vector; also Log(ζ^3) via θ^3
        let c = [1, 1, 1, 1, 1, 1, 1];
        let r = check(&c).unwrap();
        assert_eq!(r.signature(), (0, 3));
        brill(&c, &r);
        for num in [poly(&[0, 1]), poly(&[0, 0, 0, 1])] {
            let l = r.log_embedding(&num, &Integer::from(1)).unwrap();
            assert_eq!(l.len(), 3);
            for x in &l {
                assert!(x.lo <= 0 && x.hi >= 0 && width(x) < 1e-85, "{x:?}");
            }
        }
        // 1 + ζ has |1 + e^{iφ}| = 2|cos(φ/2)|: compare with f64
        let l = r.log_embedding(&poly(&[1, 1]), &Integer::from(1)).unwrap();
        for (x, b) in l.iter().zip(&r.complex) {
            let phi = b.1.mid_f64().atan2(b.0.mid_f64());
            let want = 2.0 * (2.0 * (phi / 2.0).cos().abs()).ln();
            assert!(holds(x, want, 1e-13), "{x:?} {want}");
        }
        // 0 and a denominator of 0 have no logarithm
        assert!(r.log_embedding(&[], &Integer::from(1)).is_none());
        assert!(r.log_embedding(&poly(&[1]), &Integer::new()).is_none());
    }

    #[test]
    fn regulator_of_the_cube_root_of_two() {
        // θ - 1 with θ = 2^(1/3) is a unit: (θ - 1)(θ^2 + θ + 1) = θ^3 - 1 = 1,
        // so its regulator is |log(θ - 1)| = log(1 + 2^(1/3) + 4^(1/3)) ≈
        // 1.347377 (from memory; cross-checked against f64 here). It is the
        // fundamental unit (from memory), which this test does not rely on.
        let r = check(&[-2, 0, 0, 1]).unwrap();
        let l = r.log_embedding(&poly(&[-1, 1]), &Integer::from(1)).unwrap();
        let t = 2f64.cbrt();
        let want = (1.0 + t + t * t).ln();
        assert!((want - 1.347377).abs() < 1e-6);
        let reg = regulator(std::slice::from_ref(&l)).unwrap();
        assert!(holds(&reg, want, 1e-14) && width(&reg) < 1e-85);
        // the other place gives the same
        let other = abs_det(&[vec![l[1].clone()]]).unwrap();
        assert!(holds(&other, want, 1e-14));
        // (θ - 1)/2 is not a unit: its log vector does not sum to 0
        let half = r.log_embedding(&poly(&[-1, 1]), &Integer::from(2)).unwrap();
        assert!(regulator(&[half]).is_none());
        // a denominator divides out: (2θ - 2)/2 = θ - 1
        let same = r
            .log_embedding(&poly(&[-2, 2]), &Integer::from(-2))
            .unwrap();
        assert!(holds(&regulator(&[same]).unwrap(), want, 1e-14));
    }

    #[test]
    fn regulator_of_two_units_against_f64() {
        // x^3 - 3x + 1 is totally real; θ and θ - 1 are units, N(θ) =
        // -F(0) = -1 and N(θ - 1) = -F(1) = 1. The 2×2 determinant of their
        // logs is compared with the same definition in f64.
        let c = [1, -3, 0, 1];
        let r = check(&c).unwrap();
        assert_eq!(r.signature(), (3, 0));
        brill(&c, &r);
        let one = Integer::from(1);
        let a = r.log_embedding(&poly(&[0, 1]), &one).unwrap();
        let b = r.log_embedding(&poly(&[-1, 1]), &one).unwrap();
        let reg = regulator(&[a, b]).unwrap();
        let xs: Vec<f64> = r.real.iter().map(|t| t.mid_f64()).collect();
        let la: Vec<f64> = xs.iter().map(|x| x.abs().ln()).collect();
        let lb: Vec<f64> = xs.iter().map(|x| (x - 1.0).abs().ln()).collect();
        let want = (la[0] * lb[1] - la[1] * lb[0]).abs();
        assert!(holds(&reg, want, 1e-13), "{reg:?} {want}");
        // dependent units (θ and θ^2) give no regulator
        let a = r.log_embedding(&poly(&[0, 1]), &one).unwrap();
        let sq = r.log_embedding(&poly(&[0, 0, 1]), &one).unwrap();
        assert!(regulator(&[a, sq]).is_none());
    }

    #[test]
    fn determinants_of_vandermonde_matrices() {
        // det (x_i^j) = ∏_{i<j} (x_j - x_i); for x = 1..r this is the
        // superfactorial 1, 1, 2, 12, 288 (OEIS A000178)
        let want = [1u64, 1, 2, 12, 288];
        for r in 1..=5usize {
            let m: Vec<Vec<Interval>> = (1..=r as u64)
                .map(|x| (0..r as u32).map(|j| Interval::u64(x.pow(j))).collect())
                .collect();
            let d = abs_det(&m).unwrap();
            assert_eq!(d, Interval::u64(want[r - 1]), "r = {r}");
        }
        assert_eq!(abs_det(&[]), Some(Interval::u64(1)));
        let six = vec![vec![Interval::u64(1); 6]; 6];
        assert!(abs_det(&six).is_none());
        assert!(abs_det(&[vec![Interval::u64(1); 2]]).is_none());
        // a sign: [[0, 1], [1, 0]] has det -1
        let swap = vec![
            vec![Interval::zero(), Interval::u64(1)],
            vec![Interval::u64(1), Interval::zero()],
        ];
        assert_eq!(abs_det(&swap), Some(Interval::u64(1)));
    }

    fn dy(m: i64, e: i64) -> Dyadic {
        Dyadic {
            mantissa: Integer::from(m),
            exponent: e,
        }
    }

    fn bd(lo: (i64, i64), hi: (i64, i64)) -> Bounds {
        Bounds {
            lo: dy(lo.0, lo.1),
            hi: dy(hi.0, hi.1),
        }
    }

    #[test]
    fn refusals() {
        let cube = poly(&[-2, 0, 0, 1]);
        let (real, complex) = enclose(&[-2, 0, 0, 1]);
        // wrong count: the complex pair left out, or listed twice
        assert_eq!(
            check_roots(&cube, &real, &[]).unwrap_err(),
            RootError::Count { r1: 1, r2: 0, n: 3 }
        );
        assert!(matches!(
            check_roots(&cube, &[], &complex),
            Err(RootError::Count { .. })
        ));
        // a box without a root: the true box moved by 1 to the right
        let mut moved = complex[0].clone();
        moved.0.lo.mantissa += Integer::from(1) << W;
        moved.0.hi.mantissa += Integer::from(1) << W;
        assert_eq!(
            check_roots(&cube, &real, &[moved]).unwrap_err(),
            RootError::NotProven(0)
        );
        // the mirror image in the lower half-plane
        let mut low = complex[0].clone();
        low.1 = Bounds {
            lo: Dyadic {
                mantissa: -low.1.hi.mantissa.clone(),
                exponent: low.1.hi.exponent,
            },
            hi: Dyadic {
                mantissa: -low.1.lo.mantissa.clone(),
                exponent: low.1.lo.exponent,
            },
        };
        assert_eq!(
            check_roots(&cube, &real, &[low]).unwrap_err(),
            RootError::NotUpperHalf(0)
        );
        // no sign change: [1, 5/4] lies below 2^(1/3)
        assert_eq!(
            check_roots(&cube, &[bd((1, 0), (5, -2))], &complex).unwrap_err(),
            RootError::NoSignChange(0)
        );
        // a wide interval [1, 2] is fine (one sign change)
        assert!(check_roots(&cube, &[bd((1, 0), (2, 0))], &complex).is_ok());
        // x^3 - 3x + 1 (roots near -1.88, 0.35, 1.53): overlapping
        // intervals, each with a sign change
        let t = poly(&[1, -3, 0, 1]);
        let ivs = [
            bd((-2, 0), (-1, 0)),
            bd((0, 0), (1, 0)),
            bd((1, -1), (2, 0)),
        ];
        assert_eq!(
            check_roots(&t, &ivs, &[]).unwrap_err(),
            RootError::RealOrder(2)
        );
        let fine = [
            bd((-2, 0), (-1, 0)),
            bd((0, 0), (1, -1)),
            bd((1, 0), (2, 0)),
        ];
        assert!(check_roots(&t, &fine, &[]).is_ok());
        // x^4 + 1: the same box twice
        let q = poly(&[1, 0, 0, 0, 1]);
        let (_, boxes) = enclose(&[1, 0, 0, 0, 1]);
        let twice = [boxes[0].clone(), boxes[0].clone()];
        assert_eq!(
            check_roots(&q, &[], &twice).unwrap_err(),
            RootError::BoxesOverlap(0, 1)
        );
        // a box holding both roots of the upper half-plane,
        // [-1, 1] × [1/2, 1], and a far box [5, 6] × [5, 6]
        let both = (bd((-1, 0), (1, 0)), bd((1, -1), (1, 0)));
        let far = (bd((5, 0), (6, 0)), bd((5, 0), (6, 0)));
        assert_eq!(
            check_roots(&q, &[], &[both, far.clone()]).unwrap_err(),
            RootError::NotProven(0)
        );
        assert_eq!(
            check_roots(&q, &[], &[boxes[0].clone(), far]).unwrap_err(),
            RootError::NotProven(1)
        );
        // not monic, degree 7, huge end points
        assert!(matches!(
            check_roots(&poly(&[-2, 0, 0, 2]), &real, &complex),
            Err(RootError::Polynomial(_))
        ));
        assert!(matches!(
            check_roots(&poly(&[1, 0, 0, 0, 0, 0, 0, 1]), &[], &[]),
            Err(RootError::Polynomial(_))
        ));
        let huge = Bounds {
            lo: dy(1, i64::MIN),
            hi: dy(2, 0),
        };
        assert!(matches!(
            check_roots(&cube, &[huge], &complex),
            Err(RootError::OverLimit(_))
        ));
    }

    #[test]
    fn sign_at_matches_rational_evaluation() {
        // the scaled Horner sum against rug's exact rationals
        let f = poly(&[-7, 3, -5, 0, 2, 1]);
        for m in -40i64..40 {
            for e in -6i64..3 {
                let x =
                    rug::Rational::from(m) * rug::ops::Pow::pow(rug::Rational::from(2), e as i32);
                let v = f.iter().rev().fold(rug::Rational::new(), |a, c| a * &x + c);
                assert_eq!(sign_at(&f, &dy(m, e)), v.cmp0(), "{m} {e}");
            }
        }
    }

    #[test]
    fn irreducibility_from_the_roots() {
        // x^4 + 1 and x^4 - x^2 + 1 (cyclotomic, irreducible, common
        // practice) split modulo every prime into factors of degree at
        // most 2, so degree patterns cannot show them irreducible; the
        // roots can. (x^2 + 1)(x^2 + 2) and (x - 2)(x^2 + x + 1) cannot be
        // shown irreducible by either, being reducible.
        assert!(check(&[1, 0, 0, 0, 1]).unwrap().no_integer_factor());
        assert!(check(&[1, 0, -1, 0, 1]).unwrap().no_integer_factor());
        assert!(check(&[1, 0, -10, 0, 1]).unwrap().no_integer_factor());
        assert!(!check(&[2, 0, 3, 0, 1]).unwrap().no_integer_factor());
        assert!(!check(&[-2, -1, -1, 1]).unwrap().no_integer_factor());
        assert!(check(&[-2, 0, 0, 1]).unwrap().no_integer_factor());
    }
}
