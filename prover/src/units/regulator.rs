//! The regulator: units of real quadratic orders as power products of the
//! relations' elements, their logarithms, and their expansion.
//!
//! A unit ε of the order O of discriminant D > 0 is kept as a power product
//! ε = ∏ α'_j^{w_j} of "factors" α'_j = (x_j + y_j√D)/(2 s_j), following the
//! compact representation of J. Buchmann, C. Thiel and H. C. Williams,
//! "Short representation of quadratic integers" (1995).  The exponents w_j
//! may be hundreds of bits long, so ε is never expanded naively: logarithms
//! are evaluated term by term, a generator of a group of units is found by a
//! Euclidean algorithm on real logarithms, and an explicit expansion is only
//! done modulo a prime and lifted (see `expand`).
//!
//! The real embedding takes √D > 0 throughout.

use rug::ops::RemRounding;
use rug::{Float, Integer};

/// A factor α' = (x + y√D) / (2·s) with s ≥ 1.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Factor {
    pub x: Integer,
    pub y: Integer,
    pub s: Integer,
}

/// Logarithms closer to zero than this are treated as zero.  Every nonzero
/// logarithm of a unit has absolute value at least log((1+√5)/2) ≈ 0.4812
/// (common practice: the smallest unit > 1 of a real quadratic order is at
/// least the golden ratio).
const LOG_ZERO: f64 = 0.1;

/// Bit length of |n| (0 for n = 0).
fn bits(n: &Integer) -> u32 {
    n.significant_bits()
}

/// log|α'| for α' = (x + y√D)/(2s), at `prec` bits.
///
/// Cancellation is avoided (common practice): when x and y√D have opposite
/// signs, |x + y√D| = |x² − D y²| / (|x| + |y|√D), and x² − D y² is computed
/// exactly.  Returns None if α' = 0 (x = y = 0) or s ≤ 0.
pub fn log_abs(d: &Integer, f: &Factor, prec: u32) -> Option<Float> {
    if f.s <= 0 || (f.x == 0 && f.y == 0) || *d <= 0 {
        return None;
    }
    let p = prec.max(16) + 16;
    let sqrt_d = Float::with_val(p, d).sqrt();
    let ax = Float::with_val(p, f.x.clone().abs());
    let ay = Float::with_val(p, f.y.clone().abs());
    // |x| + |y|√D, computed without cancellation.
    let sum = ax + ay * &sqrt_d;
    let opposite = (f.x < 0 && f.y > 0) || (f.x > 0 && f.y < 0);
    let num = if opposite {
        let norm = Integer::from(f.x.square_ref()) - Integer::from(f.y.square_ref()) * d;
        if norm == 0 {
            return None; // only possible if D is a square
        }
        Float::with_val(p, norm.abs()) / sum
    } else {
        sum
    };
    let den = Float::with_val(p, Integer::from(&f.s * 2u32));
    let l = num.ln() - den.ln();
    Some(Float::with_val(prec.max(16), l))
}

/// Σ w_j log|α'_j| with absolute error below 2^-64.
///
/// The working precision is 96 bits plus the bit length of the largest
/// exponent, plus twice the bit length of the term count (rounding of the
/// partial sums) and the bit length of a bound on the size of each
/// log|α'_j| (taken from the bit sizes of x, y, s and D), plus a margin.
/// Returns None on an out-of-range index or a zero/invalid factor.
pub fn log_power_product(
    d: &Integer,
    factors: &[Factor],
    terms: &[(usize, Integer)],
) -> Option<Float> {
    let mut wbits = 0u32;
    let mut sizebits = bits(d);
    for (j, w) in terms {
        let f = factors.get(*j)?;
        wbits = wbits.max(bits(w));
        sizebits = sizebits.max(bits(&f.x).max(bits(&f.y)).max(bits(&f.s)));
    }
    let n = terms.len() as u32 + 1;
    let lbits = 32 - (sizebits + 8).leading_zeros();
    let nbits = 32 - n.leading_zeros();
    let prec = 96 + wbits + 2 * nbits + lbits + 16;
    let mut acc = Float::with_val(prec, 0);
    for (j, w) in terms {
        let l = log_abs(d, factors.get(*j)?, prec)?;
        acc += l * Float::with_val(prec, w);
    }
    Some(acc)
}

/// a − q·b for sparse exponent vectors sorted by index (zeros dropped).
fn combine(a: &[(usize, Integer)], q: &Integer, b: &[(usize, Integer)]) -> Vec<(usize, Integer)> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    let (mut i, mut k) = (0, 0);
    while i < a.len() || k < b.len() {
        let (idx, v) = if k >= b.len() || (i < a.len() && a[i].0 < b[k].0) {
            i += 1;
            (a[i - 1].0, a[i - 1].1.clone())
        } else if i >= a.len() || b[k].0 < a[i].0 {
            k += 1;
            (b[k - 1].0, -Integer::from(q * &b[k - 1].1))
        } else {
            i += 1;
            k += 1;
            (a[i - 1].0, Integer::from(&a[i - 1].1 - q * &b[k - 1].1))
        };
        if v != 0 {
            out.push((idx, v));
        }
    }
    out
}

/// Real extended gcd ("Euclid on reals") of units.
///
/// All inputs are units of O, so their logarithms are integer multiples of
/// the regulator R ≥ log((1+√5)/2) (common practice).  The Euclidean
/// algorithm is run on these real multiples: q = round(L_a / L_b),
/// combo_a −= q·combo_b, and L_a is recomputed from the new exponent vector
/// with `log_power_product` (never by subtracting floats), so the error stays
/// below 2^-64 at every step.  |log| < 0.1 counts as zero.  The result
/// generates the same group as the inputs modulo ±1 and is normalised to
/// have positive logarithm.  Returns None if every input has log 0 (or on
/// invalid input).
pub fn unit_gcd(
    d: &Integer,
    factors: &[Factor],
    units: &[Vec<(usize, Integer)>],
) -> Option<Vec<(usize, Integer)>> {
    let mut acc: Option<(Vec<(usize, Integer)>, Float)> = None;
    for u in units {
        let lu = log_power_product(d, factors, u)?;
        if lu.clone().abs() < LOG_ZERO {
            continue;
        }
        let (mut ca, mut la) = match acc.take() {
            None => {
                acc = Some((u.clone(), lu));
                continue;
            }
            Some(p) => p,
        };
        let (mut cb, mut lb) = (u.clone(), lu);
        // Euclid: |L| shrinks by at least half each step, and is a multiple of R.
        let mut steps = 0u32;
        while lb.clone().abs() >= LOG_ZERO {
            steps += 1;
            if steps > 1_000_000 {
                return None;
            }
            let q = Float::with_val(la.prec().max(lb.prec()), &la / &lb)
                .round()
                .to_integer()?;
            ca = combine(&ca, &q, &cb);
            la = log_power_product(d, factors, &ca)?;
            std::mem::swap(&mut ca, &mut cb);
            std::mem::swap(&mut la, &mut lb);
        }
        acc = Some((ca, la));
    }
    let (mut c, l) = acc?;
    if l < 0 {
        for (_, w) in c.iter_mut() {
            *w = Integer::from(-&*w);
        }
    }
    Some(c)
}

/// Element a + b√D of (Z/M)[√D].
type ModPair = (Integer, Integer);

fn mul_mod(u: &ModPair, v: &ModPair, d: &Integer, m: &Integer) -> ModPair {
    let a = (Integer::from(&u.0 * &v.0) + Integer::from(&u.1 * &v.1) * d).rem_euc(m);
    let b = (Integer::from(&u.0 * &v.1) + Integer::from(&u.1 * &v.0)).rem_euc(m);
    (a, b)
}

/// Symmetric residue of r modulo m, in (−m/2, m/2].
fn symmetric(r: Integer, m: &Integer) -> Integer {
    let r = r.rem_euc(m);
    if Integer::from(&r * 2u32) > *m {
        r - m
    } else {
        r
    }
}

/// Expand a unit ε = ∏ α'_j^{w_j} exactly as (X + Y√D)/2 with X ≡ Y·D (mod 2).
///
/// The caller promises that ε is a unit.  With L = log|ε| (which must satisfy
/// |L| ≤ max_digits·ln 10, else None), both conjugates of ε have absolute value
/// at most e^{|L|} because |ε·ε̄| = 1, so |X| = |ε + ε̄| ≤ 2e^{|L|} and
/// |Y| ≤ 2e^{|L|}/√D.  The product is therefore computed in (Z/M)[√D] for a
/// prime M > 8·e^{|L|}·(√D + 1) coprime to 2 and every s_j (and to the norms
/// of factors with negative exponent), and 2ε's coordinates are lifted to the
/// symmetric residue range (Chinese-remainder style reconstruction, common
/// practice).  All exponents are processed by one simultaneous left-to-right
/// square-and-multiply (common practice).  The result is checked exactly:
/// X² − D·Y² = ±4 and log|(X + Y√D)/2| ≈ L; None is returned otherwise.
pub fn expand(
    d: &Integer,
    factors: &[Factor],
    terms: &[(usize, Integer)],
    max_digits: u32,
) -> Option<(Integer, Integer)> {
    let l = log_power_product(d, factors, terms)?;
    let abs_l = l.clone().abs();
    if abs_l > Float::with_val(64, max_digits) * Float::with_val(64, 10).ln() {
        return None;
    }
    // bits of 8·e^{|L|}·(√D+1), with a margin.
    let lbits = (abs_l / Float::with_val(64, 2).ln())
        .ceil()
        .to_integer()?
        .to_u32()?;
    let mbits = lbits.checked_add(bits(d) / 2 + 16)?;
    let mut m = Integer::from(Integer::u_pow_u(2, mbits)).next_prime();
    // Indices into `factors` were validated by `log_power_product` above.
    // Precompute the norms x² − D y² of factors with negative exponent.
    let norms: Vec<Option<Integer>> = terms
        .iter()
        .map(|(j, w)| {
            let f = &factors[*j];
            (*w < 0).then(|| Integer::from(f.x.square_ref()) - Integer::from(f.y.square_ref()) * d)
        })
        .collect();
    let bases: Vec<ModPair> = 'search: loop {
        let mut bases = Vec::with_capacity(terms.len());
        for ((j, _), norm) in terms.iter().zip(&norms) {
            let f = &factors[*j];
            let two_s = Integer::from(&f.s * 2u32);
            let base = match norm {
                // α'^{-1} = 2s·(x − y√D) / (x² − D y²).
                Some(n) => match n.clone().invert(&m) {
                    Ok(ni) => {
                        let c = two_s * ni;
                        (
                            Integer::from(&c * &f.x).rem_euc(&m),
                            (-Integer::from(&c * &f.y)).rem_euc(&m),
                        )
                    }
                    Err(_) => {
                        m = m.next_prime();
                        continue 'search;
                    }
                },
                None => match two_s.invert(&m) {
                    Ok(si) => (
                        Integer::from(&si * &f.x).rem_euc(&m),
                        Integer::from(&si * &f.y).rem_euc(&m),
                    ),
                    Err(_) => {
                        m = m.next_prime();
                        continue 'search;
                    }
                },
            };
            bases.push(base);
        }
        break bases;
    };
    let abs_w: Vec<Integer> = terms.iter().map(|(_, w)| w.clone().abs()).collect();
    let top = abs_w.iter().map(bits).max().unwrap_or(0);
    let dm = d.clone().rem_euc(&m);
    let mut acc: ModPair = (Integer::from(1), Integer::new());
    for bit in (0..top).rev() {
        acc = mul_mod(&acc, &acc, &dm, &m);
        for (b, w) in bases.iter().zip(&abs_w) {
            if w.get_bit(bit) {
                acc = mul_mod(&acc, b, &dm, &m);
            }
        }
    }
    let x = symmetric(acc.0 * 2u32, &m);
    let y = symmetric(acc.1 * 2u32, &m);
    let n = Integer::from(x.square_ref()) - Integer::from(y.square_ref()) * d;
    if n != 4 && n != -4 {
        return None;
    }
    let f = Factor {
        x,
        y,
        s: Integer::from(1),
    };
    let check = log_abs(d, &f, 64)?;
    if (check - l.to_f64()).abs() >= LOG_ZERO {
        return None;
    }
    Some((f.x, f.y))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn int(v: i64) -> Integer {
        Integer::from(v)
    }

    fn fac(x: i64, y: i64, s: i64) -> Factor {
        Factor {
            x: int(x),
            y: int(y),
            s: int(s),
        }
    }

    /// Common practice: log((1+√5)/2), the regulator of Q(√5), at 600 bits.
    fn log_golden(prec: u32) -> Float {
        let phi: Float = (Float::with_val(prec, 5).sqrt() + 1u32) / 2u32;
        phi.ln()
    }

    /// Regulator of Z[(1+√61)/2]: log((39 + 5√61)/2), norm −1 (39² − 61·5² = −4).
    fn log_eps61() -> f64 {
        ((39.0 + 5.0 * 61f64.sqrt()) / 2.0).ln()
    }

    #[test]
    fn golden_ratio_log() {
        // Common practice: log((1+√5)/2) = 0.48121182505960344749775891342436842313518433438566...
        let l = log_abs(&int(5), &fac(1, 1, 1), 128).unwrap();
        assert!((l.to_f64() - 0.4812118250596034).abs() < 1e-15);
        let diff = l - log_golden(600);
        assert!(diff.abs() < Float::with_val(64, Float::i_exp(1, -120)));
    }

    #[test]
    fn s_greater_than_one() {
        // (2 + 2√5)/(2·2) = (1 + √5)/2; logs must agree.
        let d = int(5);
        let a = log_abs(&d, &fac(1, 1, 1), 128).unwrap();
        let b = log_abs(&d, &fac(2, 2, 2), 128).unwrap();
        assert!((a - b).abs() < Float::with_val(64, Float::i_exp(1, -120)));
        assert!(log_abs(&d, &fac(0, 0, 1), 64).is_none());
        assert!(log_abs(&d, &fac(1, 1, 0), 64).is_none());
    }

    #[test]
    fn cancellation() {
        // (−39 + 5√61)/2 = −conjugate of (39 + 5√61)/2, whose norm is −1, so
        // log|(−39 + 5√61)/2| = −log((39 + 5√61)/2).
        let d = int(61);
        let a = log_abs(&d, &fac(-39, 5, 1), 200).unwrap();
        let b = log_abs(&d, &fac(39, 5, 1), 200).unwrap();
        assert!((a.clone() + b).abs() < Float::with_val(64, Float::i_exp(1, -180)));
        assert!((a.to_f64() + log_eps61()).abs() < 1e-12);
        // Same with a large power (6th power pair, see `expand_pell_61`): relative accuracy kept.
        let a = log_abs(&d, &fac(-2 * 1766319049, 2 * 226153980, 1), 200).unwrap();
        assert!((a.to_f64() + 6.0 * log_eps61()).abs() < 1e-12);
    }

    #[test]
    fn big_exponent_log() {
        // Reference: (2^200 + 1)·log((1+√5)/2) computed at 600 bits (common practice).
        let d = int(5);
        let w = Integer::from(Integer::u_pow_u(2, 200)) + 1u32;
        let l = log_power_product(&d, &[fac(1, 1, 1)], &[(0, w.clone())]).unwrap();
        let reference = log_golden(600) * Float::with_val(600, &w);
        let err = Float::with_val(600, &l - &reference).abs();
        assert!(
            err < Float::with_val(64, Float::i_exp(1, -64)),
            "err = {err}"
        );
        assert!(log_power_product(&d, &[fac(1, 1, 1)], &[(1, w)]).is_none());
    }

    #[test]
    fn expand_pell_61() {
        // Commonly quoted Pell table: the smallest solution of x² − 61y² = 1 is
        // 1766319049 + 226153980√61, the 6th power of ε = (39 + 5√61)/2.
        let d = int(61);
        let f = [fac(39, 5, 1)];
        let (x, y) = expand(&d, &f, &[(0, int(6))], 100).unwrap();
        assert_eq!((x, y), (int(2 * 1766319049), int(2 * 226153980)));
        // ε^{-6} is the conjugate.
        let (x, y) = expand(&d, &f, &[(0, int(-6))], 100).unwrap();
        assert_eq!((x, y), (int(2 * 1766319049), int(-2 * 226153980)));
        // ε itself (norm −1) and ε² = (1523 + 195√61)/2.
        assert_eq!(expand(&d, &f, &[(0, int(1))], 100), Some((int(39), int(5))));
        assert_eq!(
            expand(&d, &f, &[(0, int(2))], 100),
            Some((int(1523), int(195)))
        );
        // Too many digits requested: ε^6 has about 10 digits.
        assert!(expand(&d, &f, &[(0, int(6))], 5).is_none());
    }

    #[test]
    fn expand_with_denominators() {
        // D = 5: 2 · (2 + 2√5)/(2·4) = (1 + √5)/2, a unit built from non-units with s = 4.
        let d = int(5);
        let f = [fac(4, 0, 1), fac(2, 2, 4)];
        assert_eq!(
            expand(&d, &f, &[(0, int(1)), (1, int(1))], 10),
            Some((int(1), int(1)))
        );
        // (6 + 2√5)/(2·2) = (3 + √5)/2 = φ²; φ^{-2} = (3 − √5)/2.
        let g = [fac(6, 2, 2)];
        assert_eq!(expand(&d, &g, &[(0, int(-1))], 10), Some((int(3), int(-1))));
        // A non-unit (2) must be rejected by the norm check.
        assert!(expand(&d, &f, &[(0, int(1))], 10).is_none());
    }

    #[test]
    fn expand_large() {
        // φ^n = (L_n + F_n√5)/2 (Lucas and Fibonacci numbers; common practice).
        let d = int(5);
        let n = 5000u32;
        let (x, y) = expand(&d, &[fac(1, 1, 1)], &[(0, Integer::from(n))], 2000).unwrap();
        assert_eq!(x, Integer::from(Integer::lucas(n)));
        assert_eq!(y, Integer::from(Integer::fibonacci(n)));
    }

    #[test]
    fn gcd_single_factor() {
        // ε^6 and ε^10 generate ε^{gcd(6,10)} = ε^2.
        let d = int(61);
        let f = [fac(39, 5, 1)];
        let g = unit_gcd(&d, &f, &[vec![(0, int(6))], vec![(0, int(10))]]).unwrap();
        assert_eq!(g, vec![(0, int(2))]);
        // Negative logs and zero units: gcd(−6, 0, 15) = 3, normalised positive.
        let g = unit_gcd(&d, &f, &[vec![(0, int(-6))], vec![], vec![(0, int(15))]]).unwrap();
        assert_eq!(g, vec![(0, int(3))]);
        assert!(unit_gcd(&d, &f, &[vec![], vec![]]).is_none());
    }

    #[test]
    fn gcd_two_factors() {
        // f0 = ε^3 = 29718 + 3805√61 (Pell table: smallest solution of x² − 61y² = −1),
        // f1 = ε = (39 + 5√61)/2.  f0^2 has log 6R, f1^4 has log 4R: gcd is 2R.
        let d = int(61);
        let f = [fac(59436, 7610, 1), fac(39, 5, 1)];
        let g = unit_gcd(&d, &f, &[vec![(0, int(2))], vec![(1, int(4))]]).unwrap();
        let l = log_power_product(&d, &f, &g).unwrap().to_f64();
        assert!((l - 2.0 * log_eps61()).abs() < 1e-9, "log = {l}");
        assert_eq!(expand(&d, &f, &g, 100), Some((int(1523), int(195))));
    }

    #[test]
    fn gcd_big_exponents() {
        // φ^(2^200·3) and φ^(2^200·5 + 2): gcd of 3·2^200 and 5·2^200 + 2 is 2.
        let d = int(5);
        let f = [fac(1, 1, 1)];
        let p = Integer::from(Integer::u_pow_u(2, 200));
        let a = Integer::from(&p * 3u32);
        let b = Integer::from(&p * 5u32) + 2u32;
        let g = unit_gcd(&d, &f, &[vec![(0, a)], vec![(0, b)]]).unwrap();
        assert_eq!(g, vec![(0, int(2))]);
    }
}
