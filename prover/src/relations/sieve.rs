//! Relation search by sieving quadratic polynomials (`D < 0`), after
//! M. J. Jacobson, Math. Comp. 68 (1999) (the multiple-polynomial sieve
//! applied to forms) and `shared/design/sieving.md` §§1–3.
//!
//! For `u ≡ D (mod 2)` the element `α = (u + √D)/2` has norm
//! `N(α) = (u² - D)/4`; when that factors over the factor base,
//! `(α) = ∏ P_i^{s_i v_i}` with `s_i = +1` exactly when `u ≡ b_i (mod 2p_i)`
//! (ramified primes have `v_i = 1`). The `u` come from polynomials
//! `g(x) = a x² + b x + c` with `a` a product of factor-base primes,
//! `b² ≡ D (mod 4a)` and `c = (b² - D)/(4a)`: `u = 2ax + b` gives
//! `N(α) = a·g(x)`, so only `g(x)` must be smooth. `g` is sieved over
//! `|x| ≤ M` with rounded `log₂ p` at its roots modulo each prime.
//!
//! An elimination for the prime `q = p_i` puts `q` into `a` (special-q),
//! sieves with the primes below `q` only and keeps a value that `q` does not
//! divide: the relation has `P_q^{±1}` exactly once (it is negated when the
//! exponent is `-1`) and everything else below `i`.
//!
//! The output is a plain exponent vector, checked by the verifier through
//! form reduction like every other `D < 0` relation. Single full relations
//! only: large primes, self-initialisation and threads are later steps.

use super::{add, OneAtATime, Origin, Sparse};
use crate::fb::FactorBase;
use crate::rng::Rng;
use classcert_verifier::math::{mod_small, Form};
use rug::Integer;
use std::collections::{BTreeSet, VecDeque};

/// Primes below this are not sieved (their roots are dense and their
/// logarithms small); they are divided out of every candidate instead.
const SMALL_PRIME: u64 = 40;

/// Sieve positions that make up one candidate in the attempt count (a
/// candidate of the form search is one composition, one reduction and a
/// trial division, which costs about as much as sieving this many places).
const POSITIONS_PER_CANDIDATE: u64 = 16;

/// `x⁻¹ mod p` for `gcd(x, p) = 1` (extended Euclid).
fn inv_mod(x: u64, p: u64) -> u64 {
    let (mut r0, mut r1) = (p as i64, (x % p) as i64);
    let (mut t0, mut t1) = (0i64, 1i64);
    while r1 != 0 {
        let q = r0 / r1;
        (r0, r1) = (r1, r0 - q * r1);
        (t0, t1) = (t1, t0 - q * t1);
    }
    t0.rem_euclid(p as i64) as u64
}

/// One polynomial `a x² + b x + c` with the primes (factor-base indices)
/// whose product is `a`.
struct Poly {
    a: Integer,
    b: Integer,
    c: Integer,
    a_primes: Vec<usize>,
}

/// The sieve for `D < 0`.
pub struct SieveSearch<'a> {
    d: Integer,
    fb: &'a FactorBase,
    rng: Rng,
    /// `√D mod p` for every odd factor-base prime (0 for `p = 2`).
    roots: Vec<u64>,
    /// `⌊log₂ p⌉`.
    logs: Vec<u8>,
    /// Indices of odd primes that split (usable in `a`).
    split: Vec<usize>,
    /// Half-width of the interval.
    m: i64,
    /// `log₂` of the `a` that balances the values over the interval.
    log_target: f64,
    /// Values `a` already used, so that no polynomial is sieved twice.
    used: BTreeSet<Integer>,
    /// Relations found and not yet handed out.
    queue: VecDeque<Sparse>,
    /// Relations handed out, up to sign, so that none repeats.
    emitted: BTreeSet<Sparse>,
    sieve: Vec<u8>,
    positions: u64,
    origin: Origin,
}

impl<'a> SieveSearch<'a> {
    /// `k` is recorded in the batch headers as the essential block size.
    pub fn new(d: &Integer, fb: &'a FactorBase, k: usize, seed: u64) -> SieveSearch<'a> {
        assert!(*d < 0, "the sieve is for D < 0");
        let roots: Vec<u64> = fb
            .primes
            .iter()
            .map(|&p| {
                if p == 2 {
                    0
                } else {
                    crate::fb::sqrt_mod(mod_small(d, p), p)
                }
            })
            .collect();
        let logs = fb
            .primes
            .iter()
            .map(|&p| (p as f64).log2().round() as u8)
            .collect();
        let split = (0..fb.len())
            .filter(|&i| fb.primes[i] > 2 && roots[i] != 0)
            .collect();
        // a ≈ √|D| / (2M) balances |D|/(4a) at the centre against a M² at
        // the ends; small D take a smaller interval so that a stays above
        // the small primes
        let log_d = d.significant_bits() as f64;
        // the interval grows with D: 2^12 at 100 bits, 2^15 from 124 bits
        // (measured at 30, 36 and 40 digits)
        let mut m = 1i64 << ((log_d / 8.0).round().clamp(9.0, 15.0) as u32);
        while m > 256 && log_d / 2.0 - ((2 * m) as f64).log2() < 12.0 {
            m /= 2;
        }
        let log_target = (log_d / 2.0 - ((2 * m) as f64).log2()).max(1.0);
        SieveSearch {
            d: d.clone(),
            fb,
            rng: Rng::new(seed),
            roots,
            logs,
            split,
            m,
            log_target,
            used: BTreeSet::new(),
            queue: VecDeque::new(),
            emitted: BTreeSet::new(),
            sieve: vec![0; 2 * m as usize + 1],
            positions: 0,
            origin: Origin {
                discriminant: d.clone(),
                seed,
                source: "quadratic-sieve",
                essential: k as u64,
                factor_base: fb.digest(),
                produced: 0,
            },
        }
    }

    /// Indices (into `split`, restricted to positions `< limit` of the
    /// factor base) of primes near `2^bits`: those within a factor 2, or
    /// the nearest few when there are none.
    fn pool(&self, bits: f64, limit: usize) -> Vec<usize> {
        let lo = 2f64.powf(bits - 1.0);
        let hi = 2f64.powf(bits + 1.0);
        let cand: Vec<usize> = self.split.iter().copied().filter(|&i| i < limit).collect();
        let near: Vec<usize> = cand
            .iter()
            .copied()
            .filter(|&i| {
                let p = self.fb.primes[i] as f64;
                p >= lo && p <= hi
            })
            .collect();
        if near.len() >= 8 {
            return near;
        }
        // too few: the split primes closest to 2^bits
        let mut by_dist = cand;
        by_dist.sort_by(|&x, &y| {
            let dx = ((self.fb.primes[x] as f64).log2() - bits).abs();
            let dy = ((self.fb.primes[y] as f64).log2() - bits).abs();
            dx.total_cmp(&dy).then(x.cmp(&y))
        });
        by_dist.truncate(16);
        by_dist.sort_unstable();
        by_dist
    }

    /// A fresh `a`: `fixed` (the special prime, if any) times primes below
    /// factor-base position `limit`, about the target size. `None` when no
    /// fresh `a` could be made.
    fn choose_a(&mut self, fixed: Option<usize>, limit: usize) -> Option<Vec<usize>> {
        let mut want = self.log_target;
        let mut chosen = Vec::new();
        if let Some(q) = fixed {
            chosen.push(q);
            want -= (self.fb.primes[q] as f64).log2();
        }
        for attempt in 0..64usize {
            let mut primes = chosen.clone();
            let mut left = want;
            // a special prime near the target alone gives one polynomial;
            // after that it takes a small companion
            if left >= 4.0 || (attempt > 0 && !primes.is_empty()) {
                left = left.max(2.0);
                // factors of about 2^11, at least two when a allows it (so
                // that there are many a to choose from), one more after
                // every 16 repeats
                let s = (left / 11.0)
                    .round()
                    .max(if left >= 12.0 { 2.0 } else { 1.0 })
                    + (attempt / 16) as f64;
                let bits = left / s;
                let pool = self.pool(bits, limit);
                let pool: Vec<usize> = pool.into_iter().filter(|i| !primes.contains(i)).collect();
                if pool.is_empty() {
                    return None;
                }
                for _ in 0..(s as usize).saturating_sub(1) {
                    let j = pool[self.rng.below(pool.len() as u64) as usize];
                    if !primes.contains(&j) {
                        primes.push(j);
                        left -= (self.fb.primes[j] as f64).log2();
                    }
                }
                // the last factor brings a closest to the target
                let cand: Vec<usize> = self
                    .split
                    .iter()
                    .copied()
                    .filter(|&i| i < limit && !primes.contains(&i))
                    .collect();
                if cand.is_empty() {
                    return None;
                }
                let goal = 2f64.powf(left);
                let pos = cand.partition_point(|&i| (self.fb.primes[i] as f64) < goal);
                // one of the two neighbours, at random, so that a varies
                let pick = if pos == 0 {
                    0
                } else if pos >= cand.len() {
                    cand.len() - 1
                } else {
                    pos - 1 + self.rng.below(2) as usize
                };
                let lo = pick.saturating_sub(2 + attempt);
                let hi = (pick + 3 + attempt).min(cand.len());
                let j = cand[lo + self.rng.below((hi - lo) as u64) as usize];
                primes.push(j);
            }
            if primes.is_empty() {
                return None;
            }
            primes.sort_unstable();
            let a: Integer = primes
                .iter()
                .map(|&i| Integer::from(self.fb.primes[i]))
                .product();
            if self.used.insert(a) {
                return Some(primes);
            }
        }
        None
    }

    /// The polynomial for `a = ∏ primes`, with random signs of the square
    /// roots (the first sign fixed: `b` and `-b` give the same values).
    fn poly(&mut self, primes: Vec<usize>) -> Poly {
        let a: Integer = primes
            .iter()
            .map(|&i| Integer::from(self.fb.primes[i]))
            .product();
        let mut b = Integer::new();
        for (t, &i) in primes.iter().enumerate() {
            let q = self.fb.primes[i];
            let cof = Integer::from(&a / q);
            let inv = inv_mod(cof.mod_u(q as u32) as u64, q);
            let mut beta = self.fb.bs[i] % q;
            if t > 0 && self.rng.below(2) == 1 {
                beta = (q - beta) % q;
            }
            let coef = (beta as u128 * inv as u128 % q as u128) as u64;
            b += cof * coef;
        }
        b %= &a;
        // b ≡ D (mod 2), in (-a, a]
        if b.is_odd() != self.d.is_odd() {
            b += &a;
        }
        if b > a {
            b -= Integer::from(&a * 2u32);
        }
        let four_a = Integer::from(&a * 4u32);
        let num = Integer::from(b.square_ref()) - &self.d;
        debug_assert!(num.is_divisible(&four_a), "b² ≡ D (mod 4a)");
        let c = num / four_a;
        Poly {
            a,
            b,
            c,
            a_primes: primes,
        }
    }

    /// Sieves `poly` with the primes at positions `< limit` (except those
    /// of `a`) and returns the relations of the smooth values, in order of
    /// `x`. With `special = Some(i)` only values prime to `p_i` count.
    fn sieve_poly(&mut self, poly: &Poly, limit: usize, special: Option<usize>) -> Vec<Sparse> {
        let m = self.m;
        let width = (2 * m + 1) as usize;
        self.sieve.iter_mut().for_each(|s| *s = 0);
        let mut hits: Vec<(usize, u64, u64)> = Vec::new(); // (index, r1, r2)
        for i in 0..limit {
            let p = self.fb.primes[i];
            if p < SMALL_PRIME || poly.a_primes.contains(&i) {
                continue;
            }
            let two_a = (poly.a.mod_u(p as u32) as u64 * 2) % p;
            let inv = inv_mod(two_a, p);
            let bp = poly.b.mod_u(p as u32) as u64;
            let t = self.roots[i];
            // p < 2^32, so the products fit in 64 bits
            let r1 = (p - bp + t) % p * inv % p;
            let r2 = (2 * p - bp - t) % p * inv % p;
            let lg = self.logs[i];
            let shift = (m as u64) % p;
            for r in if r1 == r2 { vec![r1] } else { vec![r1, r2] } {
                let mut j = ((r + shift) % p) as usize;
                while j < width {
                    self.sieve[j] = self.sieve[j].wrapping_add(lg);
                    j += p as usize;
                }
            }
            hits.push((i, r1, r2));
        }
        self.positions += width as u64;
        // the values lie between |D|/(4a) and about |D|/(4a) + a M²
        let log_min = (self.d.significant_bits() as f64 - 2.0) - poly.a.significant_bits() as f64;
        let top = limit.saturating_sub(1).min(self.fb.len() - 1);
        let log_p = (self.fb.primes[top] as f64).log2();
        let threshold = (log_min - 1.2 * log_p - 6.0).max(0.0) as u8;
        let mut out = Vec::new();
        for (c, chunk) in self.sieve.chunks(16).enumerate() {
            if chunk.iter().all(|&v| v < threshold) {
                continue;
            }
            for (t, &v) in chunk.iter().enumerate() {
                if v < threshold {
                    continue;
                }
                let x = (16 * c + t) as i64 - m;
                if let Some(rel) = self.confirm(poly, x, limit, special, &hits) {
                    out.push(rel);
                }
            }
        }
        out
    }

    /// The relation of `u = 2ax + b` when `g(x)` factors over the primes
    /// at positions `< limit` (and `p_special` does not divide it).
    fn confirm(
        &self,
        poly: &Poly,
        x: i64,
        limit: usize,
        special: Option<usize>,
        hits: &[(usize, u64, u64)],
    ) -> Option<Sparse> {
        let fb = self.fb;
        let mut g = Integer::from(&poly.a * x);
        g += &poly.b;
        g *= x;
        g += &poly.c;
        if let Some(s) = special {
            if g.is_divisible_u(fb.primes[s] as u32) {
                return None;
            }
        }
        let mut factors: Vec<(usize, u32)> = Vec::new();
        let mut divide = |g: &mut Integer, i: usize| {
            let p = fb.primes[i] as u32;
            let mut e = 0;
            while g.is_divisible_u(p) {
                g.div_exact_u_mut(p);
                e += 1;
            }
            if e > 0 {
                factors.push((i, e));
            }
        };
        // the primes that were not sieved
        for i in 0..limit {
            let p = fb.primes[i];
            if p >= SMALL_PRIME {
                break;
            }
            divide(&mut g, i);
        }
        for &i in &poly.a_primes {
            if i < limit {
                divide(&mut g, i);
            }
        }
        for &(i, r1, r2) in hits {
            let p = fb.primes[i];
            let xr = x.rem_euclid(p as i64) as u64;
            if xr == r1 || xr == r2 {
                divide(&mut g, i);
            }
        }
        if g != 1 {
            return None;
        }
        // N(α) = a g(x): the primes of a once more
        for &i in &poly.a_primes {
            match factors.iter_mut().find(|(j, _)| *j == i) {
                Some(f) => f.1 += 1,
                None => factors.push((i, 1)),
            }
        }
        let mut u = Integer::from(&poly.a * (2 * x));
        u += &poly.b;
        let mut rel = Sparse::new();
        for (i, v) in factors {
            let p = fb.primes[i];
            let ramified = fb.bs[i].is_multiple_of(p);
            let sign = if ramified || u.mod_u((2 * p) as u32) as u64 == fb.bs[i] % (2 * p) {
                1
            } else {
                -1
            };
            add(&mut rel, i, sign * v as i64);
        }
        Some(rel)
    }

    /// Whether the product of the prime forms to `rel` reduces to the
    /// principal form: every emitted relation is checked so in debug builds.
    fn holds(&self, rel: &Sparse) -> bool {
        let exps: Vec<Integer> = rel.values().map(|&e| Integer::from(e)).collect();
        let terms: Vec<(&Form, &Integer)> = rel
            .keys()
            .map(|&i| &self.fb.forms[i])
            .zip(exps.iter())
            .collect();
        Form::product(&terms, &self.d).is_ok_and(|f| f == Form::principal(&self.d))
    }

    /// `rel` or its negative, whichever has a positive first entry.
    fn normal(rel: &Sparse) -> Sparse {
        if rel.values().next().is_some_and(|&e| e < 0) {
            rel.iter().map(|(&i, &e)| (i, -e)).collect()
        } else {
            rel.clone()
        }
    }

    /// A relation with coefficient 1 at `i` and support on indices `< i`.
    fn elimination(&mut self, i: usize, max_attempts: u64) -> Option<Sparse> {
        if self.fb.primes[i] == 2 {
            return None;
        }
        let start = self.positions;
        while (self.positions - start) / POSITIONS_PER_CANDIDATE < max_attempts {
            let primes = self.choose_a(Some(i), i)?;
            let poly = self.poly(primes);
            let found = self.sieve_poly(&poly, i, Some(i));
            if let Some(rel) = found.into_iter().next() {
                let e = rel.get(&i).copied();
                debug_assert!(e.is_some_and(|e| e.abs() == 1));
                debug_assert!(rel.keys().all(|&j| j <= i));
                debug_assert!(self.holds(&rel), "not a relation: {rel:?}");
                return Some(if e == Some(-1) {
                    rel.iter().map(|(&j, &x)| (j, -x)).collect()
                } else {
                    rel
                });
            }
        }
        None
    }

    /// A relation over the whole factor base.
    fn relation(&mut self, max_attempts: u64) -> Option<Sparse> {
        let start = self.positions;
        loop {
            while let Some(rel) = self.queue.pop_front() {
                if self.emitted.insert(Self::normal(&rel)) {
                    debug_assert!(self.holds(&rel), "not a relation: {rel:?}");
                    return Some(rel);
                }
            }
            if (self.positions - start) / POSITIONS_PER_CANDIDATE >= max_attempts {
                return None;
            }
            let n = self.fb.len();
            let primes = self.choose_a(None, n)?;
            let poly = self.poly(primes);
            let found = self.sieve_poly(&poly, n, None);
            self.queue.extend(found);
        }
    }
}

impl OneAtATime for SieveSearch<'_> {
    fn elimination(&mut self, i: usize, attempts: u64) -> Option<Sparse> {
        SieveSearch::elimination(self, i, attempts)
    }

    fn relation(&mut self, attempts: u64) -> Option<Sparse> {
        SieveSearch::relation(self, attempts)
    }

    fn origin(&mut self) -> &mut Origin {
        &mut self.origin
    }

    fn looked_at(&self) -> u64 {
        self.positions / POSITIONS_PER_CANDIDATE
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::relations::RelationSource;
    use classcert_verifier::math::{primes_up_to, Form};

    fn holds(fb: &FactorBase, d: &Integer, rel: &Sparse) -> bool {
        let exps: Vec<Integer> = rel.values().map(|&e| Integer::from(e)).collect();
        let terms: Vec<(&Form, &Integer)> =
            rel.keys().map(|&i| &fb.forms[i]).zip(exps.iter()).collect();
        Form::product(&terms, d).unwrap() == Form::principal(d)
    }

    /// Discriminants of 20 to 25 digits: -4p for p ≡ 1 (mod 4) prime
    /// (as `bench_d` makes them), -p for p ≡ 3 (mod 4) prime, and the
    /// order of conductor 3 in the field of discriminant -4p (its factor
    /// base leaves out 3).
    fn cases() -> Vec<(Integer, Vec<u64>)> {
        // the first prime p ≡ r (mod 4) above 2.5·10^(n-2)
        let prime = |n: u32, r: u32| -> Integer {
            let mut p = Integer::from(Integer::u_pow_u(10, n - 2)) * 5u32 / 2u32;
            loop {
                p += 1u32;
                if p.mod_u(4) == r && p.is_probably_prime(30) != rug::integer::IsPrime::No {
                    return p;
                }
            }
        };
        vec![
            (Integer::from(-4) * prime(20, 1), vec![]),
            (Integer::from(-4) * prime(25, 1), vec![]),
            // -p with p ≡ 3 (mod 4): D ≡ 1 (mod 4), fundamental
            (-prime(23, 3), vec![]),
            // conductor 3 over the fundamental -4p
            (Integer::from(-36) * prime(19, 1), vec![3]),
        ]
    }

    fn base(d: &Integer, conductor: &[u64]) -> FactorBase {
        let l = d.significant_bits() as f64 * std::f64::consts::LN_2;
        let bound = (6.0 * l * l) as u64;
        FactorBase::new(d, &primes_up_to(bound), bound, conductor)
    }

    /// Every relation the sieve emits is one: the product of the prime
    /// forms to its exponents reduces to the principal form (the definition
    /// of a relation, common practice).
    #[test]
    fn sieved_relations_reduce_to_the_principal_form() {
        for (d, conductor) in cases() {
            let fb = base(&d, &conductor);
            let k = 100.min(fb.len());
            let mut s = SieveSearch::new(&d, &fb, k, 7);
            let elim = s.eliminations(k..fb.len(), 2_000_000);
            assert_eq!(elim.relations.len(), fb.len() - k, "D = {d}");
            for (i, rel) in (k..).zip(&elim.relations) {
                assert!(holds(&fb, &d, &rel.exponents), "D = {d}, elimination {i}");
            }
            let rels = s.relations(60, 5_000_000);
            assert_eq!(rels.relations.len(), 60, "D = {d}");
            for rel in &rels.relations {
                assert!(
                    holds(&fb, &d, &rel.exponents),
                    "D = {d}: {:?}",
                    rel.exponents
                );
            }
            // no relation twice, up to sign
            let distinct: BTreeSet<Sparse> = rels
                .relations
                .iter()
                .map(|r| SieveSearch::normal(&r.exponents))
                .collect();
            assert_eq!(distinct.len(), 60, "D = {d}");
        }
    }

    /// An elimination for index `i` has coefficient +1 at `i` and support
    /// on indices below `i` (what `BatchKind::Eliminations` promises), for
    /// every prime beyond a small essential block.
    #[test]
    fn eliminations_have_a_unit_pivot_and_lower_support() {
        for (d, conductor) in cases() {
            let fb = base(&d, &conductor);
            let k = 40.min(fb.len());
            let mut s = SieveSearch::new(&d, &fb, k, 2);
            let elim = s.eliminations(k..fb.len(), 2_000_000);
            assert_eq!(elim.relations.len(), fb.len() - k, "D = {d}");
            assert_eq!(
                (elim.header.first, elim.header.end),
                (k as u64, fb.len() as u64)
            );
            for (i, rel) in (k..).zip(&elim.relations) {
                let r = &rel.exponents;
                assert_eq!(r.get(&i), Some(&1), "D = {d}, i = {i}: {r:?}");
                assert_eq!(r.keys().next_back(), Some(&i), "D = {d}, i = {i}: {r:?}");
            }
        }
    }

    /// A flipped sign breaks a relation: the check above can fail (a
    /// relation with a split prime of exponent ±1 no longer reduces to the
    /// principal form when that exponent is negated, unless the prime form
    /// has order dividing 2).
    #[test]
    fn a_flipped_sign_is_caught() {
        let (d, conductor) = cases().remove(0);
        let fb = base(&d, &conductor);
        let mut s = SieveSearch::new(&d, &fb, 100, 3);
        let rels = s.relations(20, 5_000_000).relations;
        let mut caught = 0;
        for rel in rels {
            let mut r = rel.exponents;
            let Some((&i, _)) = r
                .iter()
                .find(|(&i, &e)| e.abs() == 1 && !fb.bs[i].is_multiple_of(fb.primes[i]))
            else {
                continue;
            };
            *r.get_mut(&i).unwrap() *= -1;
            if !holds(&fb, &d, &r) {
                caught += 1;
            }
        }
        assert!(caught >= 10, "{caught}");
    }

    /// Same D and seed, same relations.
    #[test]
    fn the_sieve_is_deterministic() {
        let (d, conductor) = cases().remove(0);
        let fb = base(&d, &conductor);
        let run = || {
            let mut s = SieveSearch::new(&d, &fb, 100, 11);
            let e = s.eliminations(100..140, 2_000_000);
            let r = s.relations(30, 5_000_000);
            (e, r)
        };
        assert_eq!(run(), run());
    }
}
