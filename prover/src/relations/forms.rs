//! Relation search: random products of prime forms, reduced, kept when the
//! first coefficient `a` of the reduced form factors over the factor base
//! (J. L. Hafner and K. S. McCurley, J. AMS 2 (1989); J. Buchmann, Sém.
//! Théorie des Nombres Paris 1988–89). If `(a, b, c)` is reduced and
//! `a = ∏ p^e`, then `(a, b, c) ~ ∏ P_p^{±e}` with the sign `+` exactly
//! when `b ≡ b_p (mod 2p)` (composition of united forms).

use super::{add, OneAtATime, Origin, Sparse};
use crate::fb::FactorBase;
use crate::rng::Rng;
use classcert_verifier::math::Form;
use rug::Integer;

/// Factor-base index after which the early-abort test is made.
const EARLY_ABORT_INDEX: usize = 150;

/// The relation search for `D < 0`: a pool of random products of the
/// essential prime forms, two of them composed (with `P_i` for an
/// elimination) and reduced at a time.
pub struct FormSearch<'a> {
    fb: &'a FactorBase,
    rng: Rng,
    pool: Vec<(Form, Vec<(usize, i64)>)>,
    attempts: u64,
    origin: Origin,
}

impl<'a> FormSearch<'a> {
    /// `k` essential ideals (indices `0..k`) make up the random products.
    pub fn new(d: &Integer, fb: &'a FactorBase, k: usize, seed: u64) -> FormSearch<'a> {
        let mut rng = Rng::new(seed);
        let mut pool = Vec::new();
        if k > 0 {
            let size = (2 * k).max(400);
            // enough factors that a product's norm is well past sqrt|D|,
            // so that its reduced form is a fresh element
            let top = (fb.primes[k - 1] as f64).ln().max(1.0);
            let need =
                (0.6 * d.significant_bits() as f64 * std::f64::consts::LN_2 / top).ceil() as usize;
            let weight = need.max(5).min(2 * k.max(1));
            for slot in 0..size {
                let mut f = Form::principal(d);
                let mut ex = Vec::new();
                // random weight, so that no parity of the exponent sum is
                // forced on the relations
                let w = weight / 2 + 1 + rng.below(weight.div_ceil(2) as u64) as usize;
                for t in 0..w {
                    // the first factor walks through every essential index,
                    // so each one takes part in some relation
                    let i = if t == 0 {
                        slot % k
                    } else {
                        rng.below(k as u64) as usize
                    };
                    let e = if rng.below(2) == 0 { 1 } else { -1 };
                    let g = if e > 0 {
                        fb.forms[i].clone()
                    } else {
                        fb.forms[i].inverse()
                    };
                    f = f.compose(&g).expect("forms of one discriminant compose");
                    ex.push((i, e));
                }
                pool.push((f, ex));
            }
        }
        FormSearch {
            fb,
            rng,
            pool,
            attempts: 0,
            origin: Origin {
                discriminant: d.clone(),
                seed,
                source: "form-products",
                essential: k as u64,
                factor_base: fb.digest(),
                produced: 0,
            },
        }
    }

    /// Factors the reduced form `f` over factor-base indices `< limit`:
    /// returns the exponent vector of `f` in terms of the prime forms.
    pub fn factor_form(&self, f: &Form, limit: usize) -> Option<Sparse> {
        let mut out = Sparse::new();
        let fb = self.fb;
        let sign = |p: u64, i: usize| -> i64 {
            let m = 2 * p;
            let r = f.b.mod_u(m as u32) as u64;
            if r == fb.bs[i] % m {
                1
            } else {
                -1
            }
        };
        if let Some(mut a) = f.a.to_u128() {
            let top = fb.primes[limit.saturating_sub(1).min(fb.len().saturating_sub(1))] as u128;
            let limit_sq = top * top;
            for (i, &p) in fb.primes.iter().enumerate().take(limit) {
                let pp = p as u128;
                if pp * pp > a {
                    break;
                }
                if a % pp == 0 {
                    let mut e = 0;
                    while a % pp == 0 {
                        a /= pp;
                        e += 1;
                    }
                    add(&mut out, i, sign(p, i) * e);
                }
                // early abort: once the small primes are divided out, go on
                // only if the cofactor can be a product of at most two more
                // primes below the limit (most candidates stop here)
                if i == EARLY_ABORT_INDEX && a > limit_sq {
                    return None;
                }
            }
            if a > 1 {
                let q = u64::try_from(a).ok()?;
                let i = fb.index_of(q)?;
                if i >= limit {
                    return None;
                }
                add(&mut out, i, sign(q, i));
            }
            Some(out)
        } else {
            let mut a = f.a.clone();
            for (i, &p) in fb.primes.iter().enumerate().take(limit) {
                if a.is_divisible_u(p as u32) {
                    let mut e = 0;
                    while a.is_divisible_u(p as u32) {
                        a /= p as u32;
                        e += 1;
                    }
                    add(&mut out, i, sign(p, i) * e);
                }
                if a == 1 {
                    break;
                }
            }
            if a == 1 {
                return Some(out);
            }
            let q = a.to_u64()?;
            let i = fb.index_of(q)?;
            if i >= limit {
                return None;
            }
            add(&mut out, i, sign(q, i));
            Some(out)
        }
    }

    fn pick(&mut self) -> (Form, Vec<(usize, i64)>) {
        let x = self.rng.below(self.pool.len() as u64) as usize;
        let (f, ex) = &self.pool[x];
        if self.rng.below(2) == 0 {
            (f.clone(), ex.clone())
        } else {
            (f.inverse(), ex.iter().map(|&(i, e)| (i, -e)).collect())
        }
    }

    /// A relation with coefficient 1 at `i` and support on indices `< i`.
    fn elimination(&mut self, i: usize, max_attempts: u64) -> Option<Sparse> {
        let p_form = self.fb.forms[i].clone();
        for _ in 0..max_attempts {
            self.attempts += 1;
            let (f1, mut ex) = self.pick();
            let (f2, ex2) = self.pick();
            ex.extend(ex2);
            let g = p_form.compose(&f1).ok()?.compose(&f2).ok()?;
            if let Some(fac) = self.factor_form(&g, i) {
                let mut rel = Sparse::new();
                add(&mut rel, i, 1);
                for (j, e) in ex {
                    add(&mut rel, j, e);
                }
                for (j, e) in fac {
                    add(&mut rel, j, -e);
                }
                return Some(rel);
            }
        }
        None
    }

    /// A relation over the whole factor base from two random products.
    fn relation(&mut self, max_attempts: u64) -> Option<Sparse> {
        for _ in 0..max_attempts {
            self.attempts += 1;
            let (f1, e1) = self.pick();
            let (f2, e2) = self.pick();
            let g = f1.compose(&f2).ok()?;
            if let Some(fac) = self.factor_form(&g, self.fb.len()) {
                let mut rel = Sparse::new();
                for (j, e) in e1.into_iter().chain(e2) {
                    add(&mut rel, j, e);
                }
                for (j, e) in fac {
                    add(&mut rel, j, -e);
                }
                // products whose form was already reduced give back their
                // own exponents: skip those (and ramified P^2 = 1 repeats)
                let trivial = rel
                    .iter()
                    .all(|(&j, &e)| e % 2 == 0 && self.fb.bs[j].is_multiple_of(self.fb.primes[j]));
                if !trivial {
                    return Some(rel);
                }
            }
        }
        None
    }
}

impl OneAtATime for FormSearch<'_> {
    fn elimination(&mut self, i: usize, attempts: u64) -> Option<Sparse> {
        FormSearch::elimination(self, i, attempts)
    }

    fn relation(&mut self, attempts: u64) -> Option<Sparse> {
        FormSearch::relation(self, attempts)
    }

    fn origin(&mut self) -> &mut Origin {
        &mut self.origin
    }

    fn looked_at(&self) -> u64 {
        self.attempts
    }
}
