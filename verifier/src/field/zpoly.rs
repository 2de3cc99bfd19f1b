//! Dense polynomials over Z: `Vec<Integer>`, lowest degree first, with no
//! leading (high) zero coefficients, so the zero polynomial is empty.
//!
//! Every function here costs at most a small polynomial in the degrees of
//! its arguments (stated on each); the caller bounds the degrees and the
//! coefficient sizes before calling.

use rug::ops::Pow;
use rug::Integer;

/// Drops high zero coefficients.
pub fn normalise(mut a: Vec<Integer>) -> Vec<Integer> {
    while a.last().is_some_and(|c| *c == 0) {
        a.pop();
    }
    a
}

/// The degree, `None` for the zero polynomial.
pub fn degree(a: &[Integer]) -> Option<usize> {
    a.iter().rposition(|c| *c != 0)
}

/// The leading coefficient (zero for the zero polynomial).
fn lead(a: &[Integer]) -> Integer {
    degree(a)
        .and_then(|d| a.get(d))
        .cloned()
        .unwrap_or_default()
}

/// `a + s·b` for `s = ±1`; `max(len a, len b)` additions.
fn add_signed(a: &[Integer], b: &[Integer], negate: bool) -> Vec<Integer> {
    let n = a.len().max(b.len());
    let out = (0..n).map(|i| {
        let x = a.get(i).cloned().unwrap_or_default();
        match b.get(i) {
            Some(y) if negate => x - y,
            Some(y) => x + y,
            None => x,
        }
    });
    normalise(out.collect())
}

/// `a + b`; `max(len a, len b)` additions.
pub fn add(a: &[Integer], b: &[Integer]) -> Vec<Integer> {
    add_signed(a, b, false)
}

/// `a - b`; `max(len a, len b)` additions.
pub fn sub(a: &[Integer], b: &[Integer]) -> Vec<Integer> {
    add_signed(a, b, true)
}

/// `a · b`; `len a · len b` multiplications.
pub fn mul(a: &[Integer], b: &[Integer]) -> Vec<Integer> {
    if a.is_empty() || b.is_empty() {
        return Vec::new();
    }
    let mut out = vec![Integer::new(); a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        for (j, y) in b.iter().enumerate() {
            if let Some(c) = out.get_mut(i + j) {
                *c += x * y;
            }
        }
    }
    normalise(out)
}

/// `(q, r)` with `a = q·m + r` and `deg r < deg m`, for monic `m` (its
/// highest non-zero coefficient is 1); `None` if `m` is not monic.
/// At most `len a · len m` multiplications.
pub fn divrem_monic(a: &[Integer], m: &[Integer]) -> Option<(Vec<Integer>, Vec<Integer>)> {
    let k = degree(m)?;
    if lead(m) != 1 {
        return None;
    }
    let mut r = normalise(a.to_vec());
    let mut q = vec![Integer::new(); r.len().saturating_sub(k)];
    // Each pass clears the top coefficient of r, so at most len a passes.
    while let Some(d) = degree(&r).filter(|&d| d >= k) {
        let c = lead(&r);
        for (j, mj) in m.iter().enumerate().take(k) {
            if let Some(rj) = r.get_mut(d - k + j) {
                *rj -= &c * mj;
            }
        }
        if let Some(slot) = r.get_mut(d) {
            *slot = Integer::new();
        }
        if let Some(slot) = q.get_mut(d - k) {
            *slot = c;
        }
        r = normalise(r);
    }
    Some((normalise(q), r))
}

/// The formal derivative; `len a` multiplications.
pub fn derivative(a: &[Integer]) -> Vec<Integer> {
    let out = a
        .iter()
        .enumerate()
        .skip(1)
        .map(|(i, c)| c * Integer::from(i));
    normalise(out.collect())
}

/// `a(x)` by Horner's rule; `len a` multiplications.
pub fn eval(a: &[Integer], x: &Integer) -> Integer {
    a.iter().rev().fold(Integer::new(), |acc, c| acc * x + c)
}

/// The pseudo-remainder `r` with `lc(b)^(deg a - deg b + 1)·a = q·b + r`,
/// `deg r < deg b`, for `deg a ≥ deg b ≥ 0` (Cohen, GTM 138, Alg. 3.1.2; the number from memory).
/// At most `len a · len b` multiplications.
fn pseudo_rem(a: &[Integer], b: &[Integer]) -> Vec<Integer> {
    let (Some(da), Some(db)) = (degree(a), degree(b)) else {
        return Vec::new();
    };
    let lb = lead(b);
    let mut r = a.to_vec();
    let mut e = (da + 1).saturating_sub(db);
    while let Some(dr) = degree(&r).filter(|&d| d >= db) {
        let lr = lead(&r);
        for c in r.iter_mut() {
            *c *= &lb;
        }
        for (j, bj) in b.iter().enumerate() {
            if let Some(rj) = r.get_mut(dr - db + j) {
                *rj -= &lr * bj;
            }
        }
        r = normalise(r);
        e = e.saturating_sub(1);
    }
    let scale = lb.pow(u32::try_from(e).unwrap_or(u32::MAX));
    normalise(r.into_iter().map(|c| c * &scale).collect())
}

/// The resultant `Res(a, b)` by the sub-resultant algorithm (H. Cohen,
/// GTM 138, Algorithm 3.3.7, without the content reduction). Zero if
/// either polynomial is zero. At most `deg b + 1` pseudo-divisions, each
/// at most `len a · len b` multiplications.
pub fn resultant(a: &[Integer], b: &[Integer]) -> Integer {
    let (mut a, mut b) = (normalise(a.to_vec()), normalise(b.to_vec()));
    let (Some(mut da), Some(mut db)) = (degree(&a), degree(&b)) else {
        return Integer::new();
    };
    let mut negative = false;
    if da < db {
        std::mem::swap(&mut a, &mut b);
        std::mem::swap(&mut da, &mut db);
        negative = da % 2 == 1 && db % 2 == 1;
    }
    let (mut g, mut h) = (Integer::from(1), Integer::from(1));
    // Invariant: da ≥ db; db falls at every pass.
    while db > 0 {
        let delta = u32::try_from(da - db).unwrap_or(u32::MAX);
        negative ^= da % 2 == 1 && db % 2 == 1;
        let r = pseudo_rem(&a, &b);
        a = std::mem::take(&mut b);
        let Some(dr) = degree(&r) else {
            return Integer::new();
        };
        let divisor = Integer::from(&h).pow(delta) * &g;
        b = r.into_iter().map(|c| c.div_exact(&divisor)).collect();
        g = lead(&a);
        // h ← h^(1-δ) g^δ, exact.
        h = match delta {
            0 => h,
            _ => g.clone().pow(delta).div_exact(&h.pow(delta - 1)),
        };
        da = db;
        db = dr;
    }
    // b is a non-zero constant: h ← h^(1-deg a) lc(b)^deg a.
    let da = u32::try_from(da).unwrap_or(u32::MAX);
    let res = match da {
        0 => Integer::from(1),
        _ => lead(&b).pow(da).div_exact(&h.pow(da - 1)),
    };
    if negative {
        -res
    } else {
        res
    }
}

/// `disc(F) = (-1)^(n(n-1)/2) Res(F, F')` for monic `F` of degree `n ≥ 1`;
/// `None` otherwise. Cost as [`resultant`].
pub fn discriminant(f: &[Integer]) -> Option<Integer> {
    let n = degree(f).filter(|&n| n >= 1 && lead(f) == 1)?;
    let res = resultant(f, &derivative(f));
    Some(if (n * (n - 1) / 2) % 2 == 1 {
        -res
    } else {
        res
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::TestRng;

    fn z(c: &[i64]) -> Vec<Integer> {
        normalise(c.iter().map(|&x| Integer::from(x)).collect())
    }

    /// A random polynomial of degree in `degs`, coefficients in `[-bound, bound]`.
    fn random_poly(rng: &mut TestRng, degs: (i64, i64), bound: i64, monic: bool) -> Vec<Integer> {
        let deg = rng.range(degs.0, degs.1) as usize;
        let mut c: Vec<i64> = (0..=deg).map(|_| rng.range(-bound, bound)).collect();
        if monic {
            c[deg] = 1;
        } else if c[deg] == 0 {
            c[deg] = 3;
        }
        z(&c)
    }

    /// The determinant by fraction-free Gaussian elimination (Bareiss 1968;
    /// Cohen, GTM 138, Algorithm 2.2.6; the number from memory), exact over Z.
    fn det_bareiss(mut m: Vec<Vec<Integer>>) -> Integer {
        let n = m.len();
        let mut sign = 1;
        let mut prev = Integer::from(1);
        for k in 0..n {
            if m[k][k] == 0 {
                let Some(i) = (k + 1..n).find(|&i| m[i][k] != 0) else {
                    return Integer::new();
                };
                m.swap(k, i);
                sign = -sign;
            }
            for i in k + 1..n {
                for j in k + 1..n {
                    let t = Integer::from(&m[i][j] * &m[k][k]) - Integer::from(&m[i][k] * &m[k][j]);
                    m[i][j] = t.div_exact(&prev);
                }
            }
            prev = m[k][k].clone();
        }
        match n {
            0 => Integer::from(1),
            _ => m[n - 1][n - 1].clone() * sign,
        }
    }

    /// `Res(a, b)` as the determinant of the Sylvester matrix (common
    /// practice): `deg b` shifted rows of `a`, then `deg a` shifted rows of
    /// `b`, coefficients from the highest.
    fn res_sylvester(a: &[Integer], b: &[Integer]) -> Integer {
        let (m, n) = (a.len() - 1, b.len() - 1);
        let mut rows = Vec::new();
        for (poly, shifts) in [(a, n), (b, m)] {
            for s in 0..shifts {
                let mut row = vec![Integer::new(); m + n];
                for (k, c) in poly.iter().rev().enumerate() {
                    row[s + k] = c.clone();
                }
                rows.push(row);
            }
        }
        det_bareiss(rows)
    }

    /// disc(a x^3 + b x^2 + c x + d) = b²c² - 4ac³ - 4b³d - 27a²d² + 18abcd
    /// (common practice).
    fn disc_cubic(f: &[i64; 4]) -> i64 {
        let [d, c, b, a] = *f;
        b * b * c * c - 4 * a * c * c * c - 4 * b * b * b * d - 27 * a * a * d * d
            + 18 * a * b * c * d
    }

    #[test]
    fn discriminants_of_known_polynomials() {
        // OEIS A343003 examples, as the issue cites them (not looked up
        // here); the first two and the third are also checked by hand with
        // the cubic formula below.
        for (f, d) in [
            ([1, -2, -1, 1], 49),
            ([-1, -3, 0, 1], 81),
            ([-35, -21, 0, 1], 3969),
        ] {
            assert_eq!(discriminant(&z(&f)), Some(Integer::from(d)));
            assert_eq!(disc_cubic(&f), d);
        }
        // x^3 - 2: -108; x^3 + a: -27 a^2 (disc(x^3 + px + q) = -4p^3 - 27q^2,
        // common practice).
        assert_eq!(discriminant(&z(&[-2, 0, 0, 1])), Some(Integer::from(-108)));
        for a in -12..=12 {
            assert_eq!(
                discriminant(&z(&[a, 0, 0, 1])),
                Some(Integer::from(-27 * a * a))
            );
        }
        // x^2 - d: 4d (common practice).
        for d in -20..=20 {
            assert_eq!(discriminant(&z(&[-d, 0, 1])), Some(Integer::from(4 * d)));
        }
        // Cyclotomic Φ_p: (-1)^((p-1)/2) p^(p-2) (common practice):
        // Φ_3 → -3, Φ_5 → 125, Φ_7 → -16807.
        assert_eq!(discriminant(&z(&[1, 1, 1])), Some(Integer::from(-3)));
        assert_eq!(discriminant(&z(&[1; 5])), Some(Integer::from(125)));
        assert_eq!(discriminant(&z(&[1; 7])), Some(Integer::from(-16807)));
        // Degree 1: the empty product, 1. A repeated root gives 0.
        assert_eq!(discriminant(&z(&[5, 1])), Some(Integer::from(1)));
        assert_eq!(discriminant(&z(&[1, 2, 1])), Some(Integer::new()));
    }

    #[test]
    fn discriminant_rejects_bad_input() {
        assert_eq!(discriminant(&[]), None);
        assert_eq!(discriminant(&z(&[7])), None);
        assert_eq!(discriminant(&z(&[1, 0, 2])), None);
        // High zeros are ignored: x^2 - 3 written with a zero on top.
        assert_eq!(
            discriminant(&[
                Integer::from(-3),
                Integer::new(),
                Integer::from(1),
                Integer::new()
            ]),
            Some(Integer::from(12))
        );
    }

    #[test]
    fn resultant_matches_sylvester_determinant() {
        // Two routes: the sub-resultant PRS against the Sylvester
        // determinant by Bareiss elimination, on non-monic pairs of
        // degrees 0..=6, and the discriminant of monic F of degree 1..=6
        // through both; cubics also against the cubic formula.
        let mut rng = TestRng::new(1);
        for _ in 0..400 {
            let a = random_poly(&mut rng, (0, 6), 9, false);
            let b = random_poly(&mut rng, (0, 6), 9, false);
            let (m, n) = (a.len() - 1, b.len() - 1);
            let r = resultant(&a, &b);
            assert_eq!(r, res_sylvester(&a, &b), "{a:?} {b:?}");
            let swapped = if m * n % 2 == 1 {
                -r.clone()
            } else {
                r.clone()
            };
            assert_eq!(resultant(&b, &a), swapped);
        }
        // Sparse small coefficients make degree gaps (an abnormal PRS, where
        // the h^(1-δ) step of the algorithm matters).
        for _ in 0..2000 {
            let a = random_poly(&mut rng, (0, 8), 1, false);
            let b = random_poly(&mut rng, (0, 8), 1, false);
            assert_eq!(resultant(&a, &b), res_sylvester(&a, &b), "{a:?} {b:?}");
        }
        // Pairs with a common factor have resultant 0.
        for _ in 0..50 {
            let c = random_poly(&mut rng, (1, 3), 5, false);
            let a = mul(&c, &random_poly(&mut rng, (2, 2), 5, false));
            let b = mul(&c, &random_poly(&mut rng, (3, 3), 5, false));
            assert_eq!(resultant(&a, &b), 0);
        }
        for _ in 0..300 {
            let f = random_poly(&mut rng, (1, 6), 30, true);
            let n = f.len() - 1;
            let sign = if n * (n - 1) / 2 % 2 == 1 { -1 } else { 1 };
            let expect = res_sylvester(&f, &derivative(&f)) * sign;
            assert_eq!(discriminant(&f), Some(expect));
            if n == 3 {
                let c: Vec<i64> = f.iter().map(|x| x.to_i64().unwrap()).collect();
                let d = disc_cubic(&[c[0], c[1], c[2], c[3]]);
                assert_eq!(discriminant(&f), Some(Integer::from(d)));
            }
        }
        assert_eq!(resultant(&[], &z(&[1, 1])), 0);
        assert_eq!(resultant(&z(&[3]), &z(&[5])), 1);
        // Res(c, b) = c^deg b.
        assert_eq!(resultant(&z(&[3]), &z(&[1, 2, 1])), 9);
    }

    #[test]
    fn ring_operations() {
        // Checked pointwise: evaluation is a ring homomorphism Z[x] → Z.
        let mut rng = TestRng::new(2);
        for _ in 0..200 {
            let a = random_poly(&mut rng, (0, 7), 50, false);
            let b = random_poly(&mut rng, (0, 7), 50, false);
            for x in [-3i64, -1, 0, 2, 5] {
                let x = Integer::from(x);
                let (ea, eb) = (eval(&a, &x), eval(&b, &x));
                assert_eq!(eval(&add(&a, &b), &x), Integer::from(&ea + &eb));
                assert_eq!(eval(&sub(&a, &b), &x), Integer::from(&ea - &eb));
                assert_eq!(eval(&mul(&a, &b), &x), ea * eb);
            }
            assert!(sub(&a, &a).is_empty());
            // Division by a monic m: a = q m + r with deg r < deg m.
            let m = random_poly(&mut rng, (0, 4), 20, true);
            let (q, r) = divrem_monic(&a, &m).unwrap();
            assert_eq!(add(&mul(&q, &m), &r), a);
            assert!(degree(&r).is_none_or(|d| d < degree(&m).unwrap()));
        }
        assert_eq!(divrem_monic(&z(&[1, 2, 3]), &z(&[1, 2])), None);
        assert_eq!(divrem_monic(&z(&[1, 2, 3]), &[]), None);
        // d/dx (x^3 - 2x + 7) = 3x^2 - 2.
        assert_eq!(derivative(&z(&[7, -2, 0, 1])), z(&[-2, 0, 3]));
        assert!(derivative(&z(&[7])).is_empty());
    }
}
