//! `classcert ask`: where one class lies in a certificate's group (a
//! discrete log in the certified generators), and its order.
//!
//! For `D < 0` and a relations certificate. The certificate fixes the
//! class of every factor-base ideal in the coordinates of its Smith form:
//!
//! - rows of `H` are relations over the generator ideals `G`, and
//!   `U·H·V = diag(d)`; a vector `x` over `G` maps to `x·V`, reduced mod
//!   `d_j` in coordinate `j`. Relations map to 0 (`H·V = U^{-1}·diag(d)`,
//!   so row `i` of `H·V` is a combination of the rows of `diag(d)`), and
//!   the map is onto `⊕ Z/d_j` (`V` is unimodular), so it is the
//!   isomorphism `Z^G / rows(H) → ⊕ Z/d_j`. The claim's generator `g_i`
//!   maps to the unit vector of the `i`-th coordinate with `d_j > 1` (the
//!   verifier checks that), so the coordinates with `d_j > 1` of `[I]`
//!   are its exponents over the `g_i`.
//! - generator `G_k` has the coordinates of row `k` of `V`;
//! - an eliminated ideal `P` has a relation `c_P P + Σ c_Q Q ~ 1` with
//!   `c_P = ±1` and every `Q` a generator or eliminated before it, so its
//!   coordinates are `-c_P Σ c_Q y(Q)`.
//!
//! The class `[I]` itself is found as in the relation search: `I` is
//! multiplied by a random walk of factor-base prime forms until the
//! reduced form `(a, b, c)` has `a` prime to `D` and smooth over the factor
//! base; then `(a, b, c) ~ ∏ P_p^{±e}` over `p^e || a`, with `+` exactly
//! when `b ≡ b_p (mod 2p)` (J. L. Hafner and K. S. McCurley, J. AMS 2
//! (1989)). The answer is checked here before it is written, by the
//! reduction the verifier repeats: `I · ∏ g_i^{-e_i}` reduces to the
//! principal form.

use crate::fb::prime_b;
use crate::rng::Rng;
use crate::ProveError;
use classcert_format::{Answer, Document, Form as StatedForm, Lattice, Witness};
use classcert_verifier::math::{kronecker_prime, Form};
use rug::integer::IsPrime;
use rug::ops::RemRounding;
use rug::Integer;

/// Steps of the random walk before `ask` gives up (at 30 digits the
/// tests' forms need 157 on average, at most 645).
pub const MAX_STEPS: u64 = 2_000_000;
/// The walk multiplies by the prime forms of the first this many
/// factor-base ideals.
const WALK_PRIMES: usize = 50;

/// A certificate read for answers: `D`, the factor base and the class of
/// each of its ideals in the generators' coordinates.
#[derive(Debug, Clone)]
pub struct Certified {
    pub id: [u8; 32],
    pub d: Integer,
    /// The invariants `d_i > 1`.
    pub invariants: Vec<Integer>,
    /// The generators `g_i` (reduced forms).
    pub generators: Vec<Form>,
    primes: Vec<u64>,
    forms: Vec<Form>,
    /// `y(P)`: exponents over the `g_i`, `0 <= y_i < d_i`.
    coordinates: Vec<Vec<Integer>>,
}

/// An answer and what it was found from.
#[derive(Debug, Clone)]
pub struct Asked {
    pub answer: Answer,
    /// The answer file's bytes.
    pub bytes: Vec<u8>,
    /// Steps of the random walk taken.
    pub steps: u64,
}

fn invalid(s: impl Into<String>) -> ProveError {
    ProveError::InvalidInput(s.into())
}

/// The numbers of a form `(a, b, c)` as `classcert ask --class` reads them:
/// three integers separated by commas, in optional parentheses.
pub fn parse_form(s: &str) -> Result<StatedForm, String> {
    let t = s.trim();
    let t = t
        .strip_prefix('(')
        .and_then(|t| t.strip_suffix(')'))
        .unwrap_or(t);
    let parts: Vec<&str> = t.split(',').map(str::trim).collect();
    let int = |x: &str| {
        let digits = x.strip_prefix('-').unwrap_or(x);
        let ok = !digits.is_empty()
            && digits.len() <= 2500
            && digits.bytes().all(|c| c.is_ascii_digit());
        ok.then(|| x.parse::<Integer>().ok()).flatten()
    };
    match parts.as_slice() {
        [a, b, c] => match (int(a), int(b), int(c)) {
            (Some(a), Some(b), Some(c)) => Ok(StatedForm { a, b, c }),
            _ => Err(format!(
                "'{s}': a, b and c must be integers (decimal digits, an optional '-')"
            )),
        },
        _ => Err(format!("'{s}' is not a form: write \"(a, b, c)\"")),
    }
}

/// The prime form `(p, b, c)` of discriminant `d` with the smaller `b >= 0`
/// (so `0 <= b <= p`, `b ≡ D mod 2`): the prime ideal `(p, (b + sqrt D)/2)`.
pub fn prime_form(d: &Integer, p: u64) -> Result<StatedForm, ProveError> {
    if Integer::from(p).is_probably_prime(30) == IsPrime::No {
        return Err(invalid(format!("{p} is not a prime")));
    }
    if kronecker_prime(d, p) == -1 {
        return Err(invalid(format!(
            "{p} is inert in the order of discriminant {d}: no prime ideal has norm {p}"
        )));
    }
    let b = prime_b(d, p);
    let (b, p) = (Integer::from(b), Integer::from(p));
    let c = (Integer::from(b.square_ref()) - d) / Integer::from(&p * 4u32);
    if Integer::from(p.gcd_ref(&b)).gcd(&c) != 1 {
        return Err(invalid(format!(
            "{p} divides the conductor of the order of discriminant {d}: no invertible prime ideal has norm {p}"
        )));
    }
    Ok(StatedForm { a: p, b, c })
}

/// Reads a certificate (signed or not) for answers.
pub fn certified(cert: &[u8]) -> Result<Certified, ProveError> {
    let bytes = match classcert_format::cose::is_signed(cert) {
        true => {
            classcert_format::cose::decode(cert)
                .map_err(|e| invalid(format!("not a readable signed certificate: {e}")))?
                .payload
        }
        false => cert,
    };
    let doc = classcert_format::decode_document(bytes)
        .map_err(|e| invalid(format!("not a readable classcert certificate: {e}")))?;
    let body = match doc.document {
        Document::Relations(body) => body,
        Document::OrderWitness(_) => {
            return Err(ProveError::Unsupported(
                "an order-witness certificate has no relations to take discrete logs with: answers need a full certificate (classcert prove D without --claim-class-number)".into(),
            ))
        }
        Document::Field(_) => {
            return Err(ProveError::Unsupported(
                "answers for number fields are not supported yet (quadratic orders with D < 0 only)".into(),
            ))
        }
    };
    let classcert_format::Order::Quadratic { discriminant: d } = &body.order else {
        return Err(ProveError::Unsupported("not a quadratic order".into()));
    };
    if *d > 0 {
        return Err(ProveError::Unsupported(
            "answers for D > 0 are not supported yet: they are checked by form reduction, which settles equivalence for D < 0 only".into(),
        ));
    }
    let mut primes = Vec::with_capacity(body.factor_base.len());
    let mut forms = Vec::with_capacity(body.factor_base.len());
    for classcert_format::PrimeIdeal::QuadraticForm { p, b } in &body.factor_base {
        let f = Form::new(Integer::from(*p), Integer::from(*b), d)
            .map_err(|_| invalid(format!("the factor base has a bad entry ({p}, {b})")))?;
        primes.push(*p);
        forms.push(f);
    }
    if primes.windows(2).any(|w| w[0] >= w[1]) {
        return Err(invalid("the factor base is not in increasing order of p"));
    }
    let generators = body
        .claim
        .generators
        .iter()
        .map(|g| match &g.form {
            Some(f) => Form::new(f.a.clone(), f.b.clone(), d)
                .map_err(|_| invalid("a generator's form has the wrong discriminant")),
            None => Err(invalid("a generator has no form")),
        })
        .collect::<Result<Vec<_>, _>>()?;
    let coordinates = coordinates(&body.lattice, primes.len())?;
    Ok(Certified {
        id: doc.id,
        d: d.clone(),
        invariants: body.claim.invariants.clone(),
        generators,
        primes,
        forms,
        coordinates,
    })
}

/// `y(P)` for every factor-base ideal (module docs).
fn coordinates(l: &Lattice, n: usize) -> Result<Vec<Vec<Integer>>, ProveError> {
    let bad = |why: &str| invalid(format!("the certificate's lattice is inconsistent: {why}"));
    let moduli: Vec<(usize, &Integer)> = (l.smith.diagonal.iter().enumerate())
        .filter(|(_, d)| **d > 1)
        .collect();
    let mut y: Vec<Option<Vec<Integer>>> = vec![None; n];
    for (k, &g) in l.generators.iter().enumerate() {
        let row = l.smith.v.get(k).ok_or_else(|| bad("V has too few rows"))?;
        let v = moduli
            .iter()
            .map(|&(j, dj)| row.get(j).map(|x| Integer::from(x.rem_euc(dj))))
            .collect::<Option<Vec<_>>>()
            .ok_or_else(|| bad("V has too few columns"))?;
        *y.get_mut(g as usize)
            .ok_or_else(|| bad("a generator index"))? = Some(v);
    }
    for el in &l.eliminations {
        let p = el.pivot as usize;
        let mut sum = vec![Integer::new(); moduli.len()];
        let mut sign = None;
        for (i, c) in &el.relation.entries {
            if *i as usize == p {
                sign = Some(c.clone());
                continue;
            }
            let yi = y.get(*i as usize).and_then(Option::as_ref);
            let yi = yi.ok_or_else(|| bad("an elimination uses an ideal not yet accounted for"))?;
            for (s, t) in sum.iter_mut().zip(yi) {
                *s += Integer::from(c * t);
            }
        }
        // c_P P = -Σ c_Q Q with c_P = ±1, so P = -c_P Σ c_Q Q
        let sign = sign
            .filter(|s| *s == 1 || *s == -1)
            .ok_or_else(|| bad("a pivot"))?;
        let v = (sum.into_iter().zip(&moduli))
            .map(|(s, (_, dj))| (-(s * &sign)).rem_euc(*dj))
            .collect();
        *y.get_mut(p).ok_or_else(|| bad("a pivot index"))? = Some(v);
    }
    y.into_iter()
        .map(|v| v.ok_or_else(|| bad("an ideal is neither a generator nor eliminated")))
        .collect()
}

impl Certified {
    /// The exponents of `[I]` over the generators and the walk's length,
    /// for a primitive form `f` of discriminant `D` with `a > 0`.
    pub fn discrete_log(&self, f: &Form, seed: u64) -> Result<(Vec<Integer>, u64), ProveError> {
        let mut rng = Rng::new(seed);
        let walk = self.forms.len().min(WALK_PRIMES);
        let mut j = f
            .clone()
            .reduce()
            .map_err(|_| invalid("the form does not reduce"))?;
        let mut y = vec![Integer::new(); self.invariants.len()];
        for step in 0..=MAX_STEPS {
            if let Some(factors) = self.factor(&j) {
                for (i, e) in factors {
                    self.add(&mut y, i, e);
                }
                let e = (y.iter().zip(&self.invariants)).map(|(x, d)| Integer::from(x.rem_euc(d)));
                return Ok((e.collect(), step));
            }
            if walk == 0 {
                break;
            }
            // I = J · P_i^{-s}: J takes P_i^s, I's coordinates lose s y(P_i)
            let i = rng.below(walk as u64) as usize;
            let s: i64 = if rng.below(2) == 0 { 1 } else { -1 };
            let p = if s > 0 {
                self.forms[i].clone()
            } else {
                self.forms[i].inverse()
            };
            j = j
                .compose(&p)
                .map_err(|_| invalid("form arithmetic failed"))?;
            self.add(&mut y, i, -s);
        }
        Err(ProveError::SearchFailed(format!(
            "no smooth form in the class after {MAX_STEPS} steps; try another --seed"
        )))
    }

    /// `y += e · y(P_i)`.
    fn add(&self, y: &mut [Integer], i: usize, e: i64) {
        for (s, t) in y.iter_mut().zip(&self.coordinates[i]) {
            *s += Integer::from(t * e);
        }
    }

    /// `(i, ±e)` with `(a, b, c) ~ ∏ P_i^{±e}`, when `a` is prime to `D`
    /// and a product of factor-base primes.
    fn factor(&self, f: &Form) -> Option<Vec<(usize, i64)>> {
        if Integer::from(f.a.gcd_ref(&self.d)) != 1 {
            return None;
        }
        let mut a = f.a.clone();
        let mut out = Vec::new();
        let sign = |i: usize, p: u64| {
            let m = Integer::from(2 * p);
            let same = Integer::from(&f.b - &self.forms[i].b).is_divisible(&m);
            if same {
                1
            } else {
                -1
            }
        };
        for (i, &p) in self.primes.iter().enumerate() {
            if a == 1 || Integer::from(p).square() > a {
                break;
            }
            let Ok(p32) = u32::try_from(p) else { break };
            let mut e = 0i64;
            while a.is_divisible_u(p32) {
                a /= p32;
                e += 1;
            }
            if e > 0 {
                out.push((i, sign(i, p) * e));
            }
        }
        if a != 1 {
            // what is left is one prime, which must be in the factor base
            let q = a.to_u64()?;
            let i = self.primes.binary_search(&q).ok()?;
            out.push((i, sign(i, q)));
        }
        Some(out)
    }

    /// The answer for the primitive form `f` (as stated): its exponents,
    /// its order, checked by the reduction the verifier repeats.
    pub fn ask(&self, stated: &StatedForm, seed: u64) -> Result<Asked, ProveError> {
        let f = self.check_form(stated)?;
        let (exponents, steps) = self.discrete_log(&f, seed)?;
        let order = (exponents.iter().zip(&self.invariants)).fold(Integer::from(1), |n, (e, d)| {
            n.lcm(&(d / Integer::from(d.gcd_ref(e))))
        });
        let minus: Vec<Integer> = exponents.iter().map(|e| Integer::from(-e)).collect();
        let one = Integer::from(1);
        let terms: Vec<(&Form, &Integer)> = [(&f, &one)]
            .into_iter()
            .chain(self.generators.iter().zip(&minus))
            .collect();
        if Form::product(&terms, &self.d).ok() != Some(Form::principal(&self.d)) {
            return Err(ProveError::SelfCheckFailed(
                "the answer's form times the generators to minus its exponents is not principal"
                    .into(),
            ));
        }
        let answer = Answer {
            certificate: self.id,
            form: stated.clone(),
            exponents,
            order,
            witness: Witness::FormReduction,
        };
        let bytes = answer
            .encode()
            .map_err(|e| ProveError::SelfCheckFailed(format!("the answer does not encode: {e}")))?;
        Ok(Asked {
            answer,
            bytes,
            steps,
        })
    }

    /// `(a, b, c)` as a form of this order: `a > 0`, `b^2 - 4ac = D`,
    /// primitive.
    pub fn check_form(&self, f: &StatedForm) -> Result<Form, ProveError> {
        let disc = Integer::from(f.b.square_ref()) - Integer::from(&f.a * &f.c) * 4u32;
        if disc != self.d {
            return Err(invalid(format!(
                "({}, {}, {}) has discriminant {disc}, not the certificate's D = {}",
                f.a, f.b, f.c, self.d
            )));
        }
        if f.a <= 0 {
            return Err(invalid(
                "a must be positive (a positive definite form; its negative is another form)",
            ));
        }
        if Integer::from(f.a.gcd_ref(&f.b)).gcd(&f.c) != 1 {
            return Err(invalid(format!(
                "({}, {}, {}) is not primitive: gcd(a, b, c) > 1, so it is no invertible ideal of the order",
                f.a, f.b, f.c
            )));
        }
        Form::new(f.a.clone(), f.b.clone(), &self.d).map_err(|_| invalid("not a form of D"))
    }
}

/// Answers about `stated` in the certificate `cert`.
pub fn ask(cert: &[u8], stated: &StatedForm, seed: u64) -> Result<Asked, ProveError> {
    certified(cert)?.ask(stated, seed)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn forms_are_read_strictly() {
        let f = parse_form("(3, -2, 5)").unwrap();
        assert_eq!(
            (f.a, f.b, f.c),
            (Integer::from(3), Integer::from(-2), Integer::from(5))
        );
        assert!(parse_form(" 1,1 , 6 ").is_ok());
        for bad in [
            "(1, 1)",
            "(1, 1, 6, 7)",
            "(1, +1, 6)",
            "(1, 1.0, 6)",
            "(a, 1, 6)",
            "",
        ] {
            assert!(parse_form(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn prime_forms_take_the_smaller_b() {
        // D = -56: b^2 ≡ -56 (mod 4p); for p = 3, b ≡ ±2 (mod 6) gives b = 2
        // (common practice: the forms of discriminant -56 are (1, 0, 14),
        // (2, 0, 7), (3, ±2, 5))
        let d = Integer::from(-56);
        let f = prime_form(&d, 3).unwrap();
        assert_eq!(
            (f.a, f.b, f.c),
            (Integer::from(3), Integer::from(2), Integer::from(5))
        );
        let f = prime_form(&d, 2).unwrap();
        assert_eq!((f.b, f.c), (Integer::from(0), Integer::from(7)));
        let f = prime_form(&d, 7).unwrap();
        assert_eq!((f.b, f.c), (Integer::from(0), Integer::from(2)));
        assert!(prime_form(&d, 4).is_err());
        assert!(prime_form(&d, 11).is_err(), "(-56/11) = -1: inert");
        // every b is the least nonnegative solution of b^2 ≡ D (mod 4p)
        let d = Integer::from(-1_000_003);
        for p in [3u64, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47] {
            if let Ok(f) = prime_form(&d, p) {
                let b = f.b.to_u64().unwrap();
                let least = (0..=2 * p)
                    .find(|x| (Integer::from(x * x) - &d).is_divisible(&Integer::from(4 * p)));
                assert_eq!(Some(b), least, "p = {p}");
            }
        }
    }
}
