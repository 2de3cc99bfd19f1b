//! The relation search for `D > 0`: elements of small norm, found by trial
//! division of their norms (no sieve yet).
//!
//! Relations come from elements, not from reduced forms (reduced indefinite
//! forms are not unique in their class). For an ideal
//! `a = [A, (B + sqrt D)/2]` (a product of factor-base primes, `B² ≡ D mod
//! 4A`) the elements `α = A x + (B + sqrt D)/2` have norm `A · Q(x)` with
//! `Q(x) = A x² + B x + (B² - D)/(4A)`, and `|Q(x)|` is about `sqrt D · |t|`
//! at distance `t` from a root of `Q`. A smooth `Q(x)` gives a relation
//! `(α) = ∏ P^{±e}` whose witness is `α` itself (the polynomials of the
//! multiple-polynomial quadratic sieve, as applied to class groups by
//! M. J. Jacobson, Jr., Math. Comp. 68 (1999); here each `Q(x)` is divided
//! by the factor-base primes in turn, which a sieve over `x` would replace).

use super::{gather, Element, FoundRelation, Origin, RelationBatch, RelationSource};
use crate::fb::FactorBase;
use crate::rng::Rng;
use rug::ops::{DivRounding, RemRounding};
use rug::Integer;
use std::collections::{BTreeMap, BTreeSet};
use std::ops::Range;

/// Elements `A x + (B + sqrt D)/2` whose norms factor over the factor base.
pub struct ElementSearch<'a> {
    d: &'a Integer,
    primes: &'a [u64],
    bs: &'a [u64],
    isqrt_d: Integer,
    seen: BTreeSet<Integer>,
    rng: Rng,
    candidates: u64,
    /// Essential ideals (indices `0..k`) make up the polynomials.
    k: usize,
    origin: Origin,
}

impl<'a> ElementSearch<'a> {
    /// A search over `fb` for `D = d > 0`, its polynomials built on the
    /// essential ideals `0..k`.
    pub fn new(d: &'a Integer, fb: &'a FactorBase, k: usize, seed: u64) -> ElementSearch<'a> {
        ElementSearch {
            d,
            primes: &fb.primes,
            bs: &fb.bs,
            isqrt_d: d.clone().sqrt(),
            seen: BTreeSet::new(),
            rng: Rng::new(seed),
            candidates: 0,
            k,
            origin: Origin {
                discriminant: d.clone(),
                seed,
                source: "element-norms",
                essential: k as u64,
                factor_base: fb.digest(),
                produced: 0,
            },
        }
    }

    /// `(A, B, C)` for the ideal `∏ P_i` over distinct odd indices `idx`.
    fn poly(&self, idx: &[usize]) -> (Integer, Integer, Integer) {
        let mut a = Integer::from(1);
        let mut b = Integer::new();
        for &i in idx {
            let p = Integer::from(self.primes[i]);
            // b ≡ b_i (mod p), b unchanged modulo the primes so far
            let inv = a.clone().invert(&p).unwrap_or_default();
            let t = Integer::from(self.bs[i]) - &b;
            let k = (t * inv).rem_euc(&p);
            b += k * &a;
            a *= &p;
        }
        if b.is_odd() != self.d.is_odd() {
            b += &a;
        }
        let c = (Integer::from(b.square_ref()) - self.d) / Integer::from(&a << 2u32);
        (a, b, c)
    }

    /// The element `A x + (B + sqrt D)/2` if `Q(x)` factors over the
    /// factor-base primes below index `limit` (and not by `forbid`).
    fn element(
        &mut self,
        poly: &(Integer, Integer, Integer),
        idx: &[usize],
        x: &Integer,
        limit: usize,
        forbid: Option<usize>,
    ) -> Option<FoundRelation> {
        self.candidates += 1;
        let (a, b, c) = poly;
        let q = Integer::from(a * x) * x + Integer::from(b * x) + c;
        if q.is_zero() {
            return None;
        }
        let big_x = Integer::from(a * x) * 2u32 + b;
        let mut rest = q.clone().abs();
        let mut val: BTreeMap<usize, u32> = BTreeMap::new();
        for &i in idx {
            *val.entry(i).or_default() += 1;
        }
        for (i, &p) in self.primes.iter().enumerate().take(limit) {
            if rest == 1 || Integer::from(p) * p > rest {
                // what is left is 1 or a prime
                break;
            }
            let mut e = 0u32;
            while rest.is_divisible_u(p as u32) {
                rest /= p as u32;
                e += 1;
            }
            if e > 0 {
                if forbid == Some(i) {
                    return None;
                }
                *val.entry(i).or_default() += e;
            }
        }
        if rest != 1 {
            // the last prime must lie below the limit too
            let r = rest.to_u64()?;
            let i = self.primes[..limit].binary_search(&r).ok()?;
            if forbid == Some(i) {
                return None;
            }
            *val.entry(i).or_default() += 1;
        }
        if !self.seen.insert(big_x.clone()) {
            return None;
        }
        let mut entries = BTreeMap::new();
        for (i, e) in val {
            let p = self.primes[i];
            let sign = if self.d.is_divisible_u(p as u32) {
                1
            } else {
                // α ∈ P iff p | (X - b)/2
                let t = Integer::from(&big_x - self.bs[i]) >> 1u32;
                if t.is_divisible_u(p as u32) {
                    1
                } else {
                    -1
                }
            };
            entries.insert(i, sign * i64::from(e));
        }
        Some(FoundRelation {
            exponents: entries,
            element: Some(Element {
                x: big_x,
                y: Integer::from(1),
            }),
        })
    }

    /// Integer points next to the two roots of `Q`, nearest first.
    fn roots(&self, poly: &(Integer, Integer, Integer)) -> [Integer; 2] {
        let (a, b, _) = poly;
        let two_a = Integer::from(a << 1u32);
        let r1 = Integer::from(&self.isqrt_d - b).div_floor(&two_a);
        let r2 = (-Integer::from(&self.isqrt_d + b)).div_floor(&two_a);
        [r1, r2]
    }

    /// An elimination relation for `P_i`: coefficient +1 at `i`, support
    /// below `i`.
    fn elimination(&mut self, i: usize, max_t: i64) -> Option<FoundRelation> {
        let poly = self.poly(&[i]);
        let roots = self.roots(&poly);
        for t in 0..max_t {
            for s in [t, -t - 1] {
                for r in &roots {
                    let x = Integer::from(r + s);
                    if let Some(raw) = self.element(&poly, &[i], &x, i, Some(i)) {
                        return Some(raw);
                    }
                }
            }
        }
        None
    }

    /// A relation over the whole factor base from a random polynomial built
    /// on the essential primes `0..k`.
    fn relation(&mut self, max_tries: u64) -> Option<FoundRelation> {
        let (k, n) = (self.k, self.primes.len());
        let odd: Vec<usize> = (0..k).filter(|&i| self.primes[i] != 2).collect();
        for _ in 0..max_tries {
            let mut idx = Vec::new();
            let want = if odd.is_empty() {
                0
            } else {
                self.rng.below(3) as usize
            };
            while idx.len() < want.min(odd.len()) {
                let i = odd[self.rng.below(odd.len() as u64) as usize];
                if !idx.contains(&i) {
                    idx.push(i);
                }
            }
            idx.sort_unstable();
            let poly = self.poly(&idx);
            let roots = self.roots(&poly);
            let r = &roots[self.rng.below(2) as usize];
            // the window widens as the nearby elements are used up
            let w = 64 + self.candidates / 16;
            let t = self.rng.below(w) as i64 - (w / 2) as i64;
            let x = Integer::from(r + t);
            if let Some(raw) = self.element(&poly, &idx, &x, n, None) {
                return Some(raw);
            }
        }
        None
    }
}

impl RelationSource for ElementSearch<'_> {
    fn eliminations(&mut self, ideals: Range<usize>, attempts: u64) -> RelationBatch {
        let first = ideals.start;
        let found = gather(ideals, |i| {
            self.elimination(i, i64::try_from(attempts).unwrap_or(i64::MAX))
        });
        self.origin.eliminations(first, found)
    }

    fn relations(&mut self, count: usize, attempts: u64) -> RelationBatch {
        let found = gather(0..count, |_| self.relation(attempts));
        self.origin.relations(found)
    }

    fn candidates(&self) -> u64 {
        self.candidates
    }
}
