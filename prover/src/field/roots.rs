//! Root enclosures of `F` for the certificate (design note
//! `general-fields.md`, "Relations, units, regulator"), and high-precision
//! approximations of the roots for the logarithmic embedding.
//!
//! All roots are found together by the Aberth–Ehrlich iteration (O. Aberth,
//! "Iteration methods for finding all zeros of a polynomial
//! simultaneously", Math. Comp. 27 (1973); L. W. Ehrlich, "A modified
//! Newton method for polynomials", Comm. ACM 10 (1967)) at a moderate
//! precision, then each is refined by Newton's method while the precision
//! doubles, up to the target. A root whose imaginary part is below half
//! the target precision is real (the imaginary part of a non-real root of
//! an integer polynomial of degree ≤ 6 with moderate coefficients is far
//! larger, by root separation bounds). The enclosures are dyadic intervals
//! and boxes of width `3·2^-w` around the refined roots, and they are
//! confirmed by the verifier's own check
//! (`classcert_verifier::math::field::check_roots`) before they are
//! returned: a wrong approximation never reaches a certificate.

use classcert_format::{Bounds, Dyadic};
use classcert_verifier::math::field::{check_roots, Roots};
use classcert_verifier::math::poly::derivative;
use rug::float::Constant;
use rug::{Float, Integer};

/// A complex number of two MPFR floats (rounded to nearest; nothing here
/// needs to be rigorous, the verifier's check is).
#[derive(Clone, Debug, PartialEq)]
pub struct Cf {
    pub re: Float,
    pub im: Float,
}

impl Cf {
    pub fn new(prec: u32, re: f64, im: f64) -> Cf {
        Cf {
            re: Float::with_val(prec, re),
            im: Float::with_val(prec, im),
        }
    }

    pub fn prec(&self) -> u32 {
        self.re.prec().max(self.im.prec())
    }

    /// The same number at `prec` bits.
    pub fn with_prec(&self, prec: u32) -> Cf {
        Cf {
            re: Float::with_val(prec, &self.re),
            im: Float::with_val(prec, &self.im),
        }
    }

    pub fn add(&self, o: &Cf) -> Cf {
        let p = self.prec().max(o.prec());
        Cf {
            re: Float::with_val(p, &self.re + &o.re),
            im: Float::with_val(p, &self.im + &o.im),
        }
    }

    pub fn sub(&self, o: &Cf) -> Cf {
        let p = self.prec().max(o.prec());
        Cf {
            re: Float::with_val(p, &self.re - &o.re),
            im: Float::with_val(p, &self.im - &o.im),
        }
    }

    pub fn mul(&self, o: &Cf) -> Cf {
        let p = self.prec().max(o.prec());
        let rr = Float::with_val(p, &self.re * &o.re);
        let ii = Float::with_val(p, &self.im * &o.im);
        let ri = Float::with_val(p, &self.re * &o.im);
        let ir = Float::with_val(p, &self.im * &o.re);
        Cf {
            re: rr - ii,
            im: ri + ir,
        }
    }

    /// `|z|²`.
    pub fn abs2(&self) -> Float {
        let p = self.prec();
        Float::with_val(p, self.re.square_ref()) + Float::with_val(p, self.im.square_ref())
    }

    /// `self / o`, `None` for `o = 0`.
    pub fn div(&self, o: &Cf) -> Option<Cf> {
        let n = o.abs2();
        if n.is_zero() {
            return None;
        }
        let inv = Cf {
            re: Float::with_val(n.prec(), &o.re / &n),
            im: -Float::with_val(n.prec(), &o.im / &n),
        };
        Some(self.mul(&inv))
    }
}

/// `p(z)` by Horner's rule (coefficients low to high).
pub fn eval(p: &[Integer], z: &Cf) -> Cf {
    let prec = z.prec();
    let mut acc = Cf::new(prec, 0.0, 0.0);
    for c in p.iter().rev() {
        acc = acc.mul(z);
        acc.re += c;
    }
    acc
}

/// Approximations of all roots of `F`: the real ones ascending, then one
/// of each pair of complex conjugates (imaginary part `> 0`).
#[derive(Clone, Debug)]
pub struct RootApprox {
    pub real: Vec<Float>,
    pub complex: Vec<Cf>,
}

impl RootApprox {
    /// `(r1, r2)`.
    pub fn signature(&self) -> (usize, usize) {
        (self.real.len(), self.complex.len())
    }

    /// The places in order: real roots (as complex numbers), then complex.
    pub fn places(&self) -> Vec<Cf> {
        let p = self
            .real
            .first()
            .map(|x| x.prec())
            .or(self.complex.first().map(|z| z.prec()))
            .unwrap_or(64);
        self.real
            .iter()
            .map(|x| Cf {
                re: x.clone(),
                im: Float::new(p),
            })
            .chain(self.complex.iter().cloned())
            .collect()
    }
}

/// `1 + max |f_i|` for monic `f` (Cauchy's bound on the roots, common
/// practice), at `prec` bits.
fn cauchy_bound(f: &[Integer], prec: u32) -> Float {
    let m = f
        .iter()
        .take(f.len().saturating_sub(1))
        .map(|c| Integer::from(c.abs_ref()))
        .max()
        .unwrap_or_default();
    Float::with_val(prec, m) + 1u32
}

/// All roots at `prec` bits by the Aberth–Ehrlich iteration, from points
/// on a circle of the Cauchy radius.
fn aberth(f: &[Integer], prec: u32) -> Result<Vec<Cf>, String> {
    let n = f.len() - 1;
    let df = derivative(f);
    let radius = cauchy_bound(f, prec);
    let two_pi = Float::with_val(prec, Constant::Pi) * 2u32;
    let mut z: Vec<Cf> = (0..n)
        .map(|k| {
            // an offset off the real axis keeps the start away from symmetries
            let angle = Float::with_val(prec, &two_pi * k as u32) / n as u32 + 0.4f64;
            Cf {
                re: Float::with_val(prec, angle.cos_ref()) * &radius,
                im: Float::with_val(prec, angle.sin_ref()) * &radius,
            }
        })
        .collect();
    let tol = Float::with_val(prec, 1) >> (prec - 24);
    for _ in 0..2000 {
        let mut worst = Float::new(prec);
        for k in 0..n {
            let v = eval(f, &z[k]);
            if v.abs2().is_zero() {
                continue;
            }
            let Some(w) = v.div(&eval(&df, &z[k])) else {
                continue;
            };
            let mut s = Cf::new(prec, 0.0, 0.0);
            for j in 0..n {
                if j != k {
                    if let Some(t) = Cf::new(prec, 1.0, 0.0).div(&z[k].sub(&z[j])) {
                        s = s.add(&t);
                    }
                }
            }
            let denom = Cf::new(prec, 1.0, 0.0).sub(&w.mul(&s));
            let corr = w.div(&denom).unwrap_or(w);
            let scale = z[k].abs2().max(&Float::with_val(prec, 1));
            let rel = Float::with_val(prec, corr.abs2() / scale);
            if rel > worst {
                worst = rel;
            }
            z[k] = z[k].sub(&corr);
        }
        if worst.sqrt() < tol {
            return Ok(z);
        }
    }
    Err("the Aberth–Ehrlich iteration did not converge".into())
}

/// Newton's method from `z`, doubling the precision up to `prec`.
fn newton(f: &[Integer], df: &[Integer], z: &Cf, prec: u32) -> Cf {
    let mut p = z.prec();
    let mut z = z.clone();
    let step = |z: &Cf| match eval(f, z).div(&eval(df, z)) {
        Some(c) => z.sub(&c),
        None => z.clone(),
    };
    while p < prec {
        p = (2 * p).min(prec);
        z = step(&z.with_prec(p));
    }
    for _ in 0..3 {
        z = step(&z);
    }
    z
}

/// All roots of the monic squarefree `f` of degree ≥ 1 to about `prec`
/// bits (relative to `max(1, |root|)`).
pub fn approximate(f: &[Integer], prec: u32) -> Result<RootApprox, String> {
    let n = f.len().saturating_sub(1);
    if n == 0 || f[n] != 1 {
        return Err("the polynomial must be monic of degree at least 1".into());
    }
    let bits = f.iter().map(|c| c.significant_bits()).max().unwrap_or(0);
    let start = 128 + 2 * bits;
    let prec = prec.max(start);
    let df = derivative(f);
    let mut real = Vec::new();
    let mut complex = Vec::new();
    let mut lower = 0usize;
    for z in aberth(f, start)? {
        let z = newton(f, &df, &z, prec);
        let scale = z.abs2().max(&Float::with_val(prec, 1)).sqrt();
        let small = Float::with_val(prec, 1) >> (prec / 2);
        if Float::with_val(prec, z.im.abs_ref()) < Float::with_val(prec, &small * &scale) {
            // a real root: refine on the real line
            let r = newton(
                f,
                &df,
                &Cf {
                    re: z.re,
                    im: Float::new(prec),
                },
                prec,
            );
            real.push(r.re);
        } else if z.im > 0 {
            complex.push(z);
        } else {
            lower += 1;
        }
    }
    if lower != complex.len() || real.len() + 2 * complex.len() != n {
        return Err(format!(
            "the roots found do not pair up: {} real, {} above and {lower} below the real axis",
            real.len(),
            complex.len()
        ));
    }
    real.sort_by(|a, b| a.partial_cmp(b).expect("roots are finite"));
    Ok(RootApprox { real, complex })
}

/// Root enclosures as the certificate states them.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Enclosures {
    pub real: Vec<Bounds>,
    pub complex: Vec<(Bounds, Bounds)>,
}

/// `m·2^e` with trailing zero bits of `m` moved into `e` (one spelling for
/// every number; zero is `0·2^0`).
pub fn dyadic(m: Integer, e: i64) -> Dyadic {
    if m.is_zero() {
        return Dyadic {
            mantissa: m,
            exponent: 0,
        };
    }
    let tz = m.find_one(0).unwrap_or(0);
    Dyadic {
        mantissa: m >> tz,
        exponent: e + i64::from(tz),
    }
}

/// `[(m - 1)·2^-w, (m + 2)·2^-w]` with `m = ⌊x·2^w⌋`: holds every number
/// within `2^-w` of `x`.
fn around(x: &Float, w: u32) -> Bounds {
    let scaled = Float::with_val(x.prec() + w, x << w).floor();
    let m = scaled.to_integer().expect("finite");
    let e = -i64::from(w);
    Bounds {
        lo: dyadic(Integer::from(&m - 1u32), e),
        hi: dyadic(m + 2u32, e),
    }
}

/// Enclosures of width `3·2^-w` of all roots of the monic squarefree `f`
/// (degree 1 to 6), checked by the verifier's `check_roots`, which also
/// returns them as [`Roots`]. Tries three working precisions before it
/// gives up.
pub fn enclose(f: &[Integer], w: u32) -> Result<(Enclosures, Roots), String> {
    let bits = f.iter().map(|c| c.significant_bits()).max().unwrap_or(0);
    // root magnitudes are below the Cauchy bound, about `bits` bits
    let mut prec = w + 2 * bits + 128;
    let mut last = String::new();
    for _ in 0..3 {
        let approx = approximate(f, prec)?;
        let enc = Enclosures {
            real: approx.real.iter().map(|x| around(x, w)).collect(),
            complex: approx
                .complex
                .iter()
                .map(|z| (around(&z.re, w), around(&z.im, w)))
                .collect(),
        };
        match check_roots(f, &enc.real, &enc.complex) {
            Ok(roots) => return Ok((enc, roots)),
            Err(e) => last = e.to_string(),
        }
        prec *= 2;
    }
    Err(format!("the root enclosures were refused: {last}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn poly(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    #[test]
    fn enclosures_of_known_fields_are_accepted() {
        // signatures from the sign of the discriminant and the real roots
        // (common practice): x^3 - 2 (1, 1); x^4 + 1 (0, 2); x^5 - x - 1
        // (1, 2); Φ_7 (0, 3); x^3 - 3x + 1 (3, 0); x^6 - 2 (2, 2); and a
        // polynomial with larger coefficients, x^4 - 1000x^2 + 1 (4, 0)
        // (its roots are ±(√1002 ± √998)/2, real)
        let cases: [(&[i64], (usize, usize)); 7] = [
            (&[-2, 0, 0, 1], (1, 1)),
            (&[1, 0, 0, 0, 1], (0, 2)),
            (&[-1, -1, 0, 0, 0, 1], (1, 2)),
            (&[1, 1, 1, 1, 1, 1, 1], (0, 3)),
            (&[1, -3, 0, 1], (3, 0)),
            (&[-2, 0, 0, 0, 0, 0, 1], (2, 2)),
            (&[1, 0, -1000, 0, 1], (4, 0)),
        ];
        for (c, sig) in cases {
            for w in [64, 300] {
                let (enc, roots) = enclose(&poly(c), w).unwrap();
                assert_eq!(roots.signature(), sig, "{c:?}");
                assert_eq!((enc.real.len(), enc.complex.len()), sig);
                // the stated width is 3·2^-w
                for b in enc.real.iter().chain(enc.complex.iter().map(|p| &p.0)) {
                    let lo = Float::with_val(4096, &b.lo.mantissa) << b.lo.exponent as i32;
                    let hi = Float::with_val(4096, &b.hi.mantissa) << b.hi.exponent as i32;
                    let width = Float::with_val(4096, hi - lo) << w;
                    assert_eq!(width, 3);
                }
            }
        }
    }

    #[test]
    fn roots_agree_with_closed_forms() {
        // x^4 - 1000x^2 + 1: ±(√1002 ± √998)/2 (solve the quadratic in x^2)
        let a = poly(&[1, 0, -1000, 0, 1]);
        let r = approximate(&a, 200).unwrap();
        let (s, t) = (1002f64.sqrt(), 998f64.sqrt());
        let want = [-(s + t) / 2.0, -(s - t) / 2.0, (s - t) / 2.0, (s + t) / 2.0];
        for (x, y) in r.real.iter().zip(want) {
            assert!((x.to_f64() - y).abs() < 1e-12 * y.abs().max(1.0), "{x} {y}");
        }
        // x^6 - 2: 2^(1/6) e^{iπk/3}
        let r = approximate(&poly(&[-2, 0, 0, 0, 0, 0, 1]), 200).unwrap();
        let t = 2f64.powf(1.0 / 6.0);
        assert!((r.real[1].to_f64() - t).abs() < 1e-15);
        for z in &r.complex {
            let m = z.abs2().to_f64().sqrt();
            assert!((m - t).abs() < 1e-15);
        }
        // the refined roots are roots to the working precision
        for z in r.places() {
            let v = eval(&poly(&[-2, 0, 0, 0, 0, 0, 1]), &z);
            assert!(v.abs2() < Float::with_val(200, 1) >> 300u32);
        }
    }

    #[test]
    fn dyadics_have_one_spelling() {
        assert_eq!(
            dyadic(Integer::from(12), -5),
            Dyadic {
                mantissa: Integer::from(3),
                exponent: -3
            }
        );
        assert_eq!(dyadic(Integer::new(), -5).exponent, 0);
        assert_eq!(dyadic(Integer::from(-7), 2).mantissa, -7);
    }
}
