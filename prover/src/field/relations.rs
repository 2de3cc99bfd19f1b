//! Relations for the class group of an order `O` (in practice the maximal
//! order): elements `α ∈ O` whose ideal `(α)` factors over the factor base
//! (every prime ideal above every prime `p ≤ B`), in the manner of
//! J. Buchmann ("A subexponential algorithm for the determination of class
//! groups and regulators of algebraic number fields", Séminaire de Théorie
//! des Nombres, Paris 1988–89; the reference from memory): small elements
//! have small norms, and small norms are often smooth.
//!
//! Three sources of elements, all deterministic for a given seed:
//! - small combinations of an LLL-reduced basis of `O` under the `T2` form
//!   `T2(α) = Σ_σ |σ(α)|^2` (A. K. Lenstra, H. W. Lenstra and L. Lovász,
//!   Math. Ann. 261 (1982); the prover's `linalg::lll`), which also give
//!   elements of norm `±1`, kept for the units; then, for more units, the
//!   reduced bases of `O` under randomly weighted forms `Σ w_j^2 |σ_j(α)|^2`;
//! - `α = a - bθ` with `gcd(a, b) = 1` by a line sieve over `a` for each
//!   `b` (as in the number field sieve): a prime `P = (p, θ - r)` of degree
//!   one with `p ∤ [O : Z[θ]]` contains `a - bθ` iff `a ≡ b r (mod p)`
//!   (Dedekind–Kummer), and `N(a - bθ) = F_hom(a, b)`;
//! - small combinations of an LLL-reduced basis of a factor-base prime
//!   `P` (and of products `PQ`), whose norms are `N(P)` times a small
//!   number: every prime of the factor base, whatever its degree, thus gets
//!   a relation (when one is found within `per_ideal` tries), so the
//!   relation lattice can reach full rank.
//!
//! Norms are tested for smoothness by one remainder of the product of the
//! primes up to `B` and repeated squaring (common practice), and only
//! smooth ones are factored into prime ideals.

use super::arith::Order;
use super::decompose::{decompose, factor_with_norm, DecomposeError, PrimeIdeal};
use super::fpfactor;
use crate::linalg::lll;
use crate::rng::Rng;
use classcert_verifier::math::poly::{degree, Fp};
use classcert_verifier::math::primes_up_to;
use rug::Integer;
use std::collections::HashSet;

/// The norm of `a - bθ` for `θ` a root of monic `F` of degree `n`:
/// `N(a - bθ) = b^n F(a/b) = Σ f_i a^i b^(n-i)` (homogeneous Horner);
/// `None` if `F` is not monic. `2n` multiplications.
fn norm_linear(f: &[Integer], a: &Integer, b: &Integer) -> Option<Integer> {
    let n = degree(f)?;
    if *f.get(n)? != 1 {
        return None;
    }
    let mut acc = Integer::from(1);
    let mut b_pow = Integer::from(1);
    for c in f.iter().take(n).rev() {
        b_pow *= b;
        acc = acc * a + Integer::from(c * &b_pow);
    }
    Some(acc)
}

/// The factor base: every prime ideal above every prime `p ≤ bound`.
#[derive(Debug, Clone)]
pub struct FactorBase {
    pub bound: u64,
    /// The primes above each `p ≤ bound`, `p` increasing; a prime ideal's
    /// index is its position in the concatenation.
    pub groups: Vec<Vec<PrimeIdeal>>,
    offsets: Vec<usize>,
    /// The matrices of multiplication by the anti-uniformisers, by group.
    anti: Vec<Vec<Vec<Vec<Integer>>>>,
    /// `∏_{p ≤ bound} p`.
    primorial: Integer,
}

impl FactorBase {
    /// Decomposes every prime up to `bound`; fails if `O` is not
    /// `p`-maximal at one of them.
    pub fn new(order: &Order, bound: u64, seed: u64) -> Result<FactorBase, DecomposeError> {
        FactorBase::with_extra(order, bound, &[], seed)
    }

    /// [`FactorBase::new`], and also every prime ideal above the primes
    /// `extra` (ascending, each above `bound`): the primes dividing
    /// `disc(F)` whose splitting the Euler product needs.
    pub fn with_extra(
        order: &Order,
        bound: u64,
        extra: &[u64],
        seed: u64,
    ) -> Result<FactorBase, DecomposeError> {
        let mut groups = Vec::new();
        let mut offsets = Vec::new();
        let mut anti = Vec::new();
        let mut primorial = Integer::from(1);
        let mut at = 0;
        let listed = primes_up_to(bound);
        for p in listed.into_iter().chain(extra.iter().copied()) {
            let g = decompose(order, p, seed)?;
            offsets.push(at);
            at += g.len();
            anti.push(g.iter().map(|q| order.mul_matrix(&q.anti)).collect());
            groups.push(g);
            primorial *= p;
        }
        Ok(FactorBase {
            bound,
            groups,
            offsets,
            anti,
            primorial,
        })
    }

    /// The number of prime ideals.
    pub fn len(&self) -> usize {
        self.groups.iter().map(Vec::len).sum()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The prime ideals in index order.
    pub fn ideals(&self) -> impl Iterator<Item = &PrimeIdeal> {
        self.groups.iter().flatten()
    }

    /// The prime ideal of index `i`.
    pub fn ideal(&self, i: usize) -> &PrimeIdeal {
        let g = self.offsets.partition_point(|&o| o <= i) - 1;
        &self.groups[g][i - self.offsets[g]]
    }

    /// Whether every prime factor of `n ≠ 0` is at most the bound: `n`
    /// divides `(∏_{p ≤ B} p)^(2^k)` for `2^k ≥ log2 |n|`.
    pub fn is_smooth(&self, n: &Integer) -> bool {
        let m = Integer::from(n.abs_ref());
        if m == 0 {
            return false;
        }
        if m == 1 {
            return true;
        }
        let mut r = Integer::from(&self.primorial % &m);
        let mut reach = 1u32;
        loop {
            if r == 0 {
                return true;
            }
            if reach >= m.significant_bits() {
                return false;
            }
            r.square_mut();
            r %= &m;
            reach *= 2;
        }
    }

    /// The factorisation of `(α)` over the factor base, given `N(α)`;
    /// `None` unless `N(α)` is smooth.
    pub fn factor(&self, alpha: &[Integer], norm: &Integer) -> Option<Vec<(usize, u32)>> {
        if !self.is_smooth(norm) {
            return None;
        }
        factor_with_norm(&self.groups, alpha, norm.clone(), &mut |g, k| {
            self.anti[g][k].clone()
        })
    }
}

/// A relation: `α` by its coordinates in `O`, and `(α) = ∏ P_i^{v_i}` as
/// sparse pairs (factor-base index, `v_i > 0`), increasing; empty for a
/// unit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Relation {
    pub coords: Vec<Integer>,
    pub exponents: Vec<(usize, u32)>,
}

impl Relation {
    pub fn is_unit(&self) -> bool {
        self.exponents.is_empty()
    }
}

/// What to look for and how hard.
#[derive(Debug, Clone)]
pub struct SearchOptions {
    /// Stop adding elements once this many relations are found (every
    /// prime of the factor base still gets one, so the result can be
    /// longer).
    pub wanted: usize,
    pub seed: u64,
    /// At most this many units (elements of norm `±1`) are kept.
    pub max_units: usize,
    /// At most this many small combinations of the reduced basis of `O`.
    pub combinations: usize,
    /// At most this many further combinations looked at for units (only
    /// those of norm near ±1 by the embeddings are tried).
    pub unit_combinations: usize,
    /// Randomly weighted `T2` forms tried for units.
    pub weightings: usize,
    /// The sieve covers `|a| ≤ sieve_width` for each `b`.
    pub sieve_width: u64,
    /// At most this many sieve lines `b = 1, 2, …`.
    pub sieve_lines: u64,
    /// Elements tried per lattice of a prime ideal or product of two.
    pub per_ideal: usize,
    /// At most this many products of two primes after the coverage pass.
    pub products: usize,
}

impl SearchOptions {
    pub fn new(wanted: usize, seed: u64) -> SearchOptions {
        SearchOptions {
            wanted,
            seed,
            max_units: 64,
            combinations: 30_000,
            unit_combinations: 200_000,
            weightings: 64,
            sieve_width: 1 << 13,
            sieve_lines: 4_000,
            per_ideal: 3_000,
            products: 20_000,
        }
    }
}

/// How many relations each source gave, in the order they ran.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SearchStats {
    /// Small combinations of reduced bases of `O` (under `T2`, then
    /// under randomly weighted forms).
    pub from_order: usize,
    /// The line sieve over `a - bθ`.
    pub from_sieve: usize,
    /// Elements of factor-base primes no earlier relation contained.
    pub from_coverage: usize,
    /// Elements of products of two primes.
    pub from_products: usize,
    /// Elements whose norm was computed.
    pub tried: u64,
}

/// A complex number, for the embeddings (floating point: they only steer
/// the search).
#[derive(Debug, Clone, Copy, PartialEq)]
struct C(f64, f64);

impl C {
    fn add(self, o: C) -> C {
        C(self.0 + o.0, self.1 + o.1)
    }
    fn sub(self, o: C) -> C {
        C(self.0 - o.0, self.1 - o.1)
    }
    fn mul(self, o: C) -> C {
        C(self.0 * o.0 - self.1 * o.1, self.0 * o.1 + self.1 * o.0)
    }
    fn scale(self, s: f64) -> C {
        C(self.0 * s, self.1 * s)
    }
    fn div(self, o: C) -> C {
        let d = o.0 * o.0 + o.1 * o.1;
        C(
            (self.0 * o.0 + self.1 * o.1) / d,
            (self.1 * o.0 - self.0 * o.1) / d,
        )
    }
    fn abs(self) -> f64 {
        self.0.hypot(self.1)
    }
}

fn horner(c: &[f64], z: C) -> C {
    c.iter()
        .rev()
        .fold(C(0.0, 0.0), |acc, &k| acc.mul(z).add(C(k, 0.0)))
}

/// All complex roots of monic `F` by the Weierstrass–Durand–Kerner
/// iteration (common practice) from a circle of radius Fujiwara's bound
/// `2 max |a_{n-k}|^(1/k)`, polished by Newton steps.
fn complex_roots(f: &[Integer]) -> Vec<C> {
    let n = f.len() - 1;
    let c: Vec<f64> = f.iter().map(Integer::to_f64).collect();
    let radius = (1..=n)
        .map(|k| 2.0 * c[n - k].abs().powf(1.0 / k as f64))
        .fold(1.0, f64::max);
    let mut z: Vec<C> = (0..n)
        .map(|k| {
            let t = std::f64::consts::TAU * k as f64 / n as f64 + 0.4;
            C(radius * t.cos(), radius * t.sin())
        })
        .collect();
    for _ in 0..2_000 {
        let mut moved = 0.0f64;
        for k in 0..n {
            let mut den = C(1.0, 0.0);
            for j in 0..n {
                if j != k {
                    den = den.mul(z[k].sub(z[j]));
                }
            }
            if den.abs() == 0.0 {
                z[k] = z[k].add(C(radius * 1e-9, radius * 1e-9));
                moved = f64::INFINITY;
                continue;
            }
            let step = horner(&c, z[k]).div(den);
            z[k] = z[k].sub(step);
            moved = moved.max(step.abs());
        }
        if moved <= 1e-15 * radius {
            break;
        }
    }
    let deriv: Vec<f64> = (1..=n).map(|k| c[k] * k as f64).collect();
    for zk in z.iter_mut() {
        for _ in 0..3 {
            let d = horner(&deriv, *zk);
            if d.abs() > 0.0 {
                *zk = zk.sub(horner(&c, *zk).div(d));
            }
        }
    }
    z
}

/// The values `ω_k(ρ)` at every root `ρ` of `F`: `emb[k][j]`.
fn basis_embeddings(order: &Order) -> Vec<Vec<C>> {
    let roots = complex_roots(order.f());
    let den = order.den().to_f64();
    order
        .basis()
        .iter()
        .map(|row| {
            let c: Vec<f64> = row.iter().map(|x| x.to_f64() / den).collect();
            roots.iter().map(|&r| horner(&c, r)).collect()
        })
        .collect()
}

fn embed(emb: &[Vec<C>], coords: &[Integer]) -> Vec<C> {
    let m = emb[0].len();
    let mut out = vec![C(0.0, 0.0); m];
    for (c, e) in coords.iter().zip(emb) {
        if *c == 0 {
            continue;
        }
        let s = c.to_f64();
        for (o, v) in out.iter_mut().zip(e) {
            *o = o.add(v.scale(s));
        }
    }
    out
}

/// An LLL-reduced basis (coordinates in `O`) of the lattice with basis
/// `rows` under the `T2` form: LLL on the rows `(e_i | S·σ(row_i))` with
/// the real and imaginary parts of all `n` embeddings scaled by `S`, so
/// that the unit block only records the transformation.
fn t2_reduce(emb: &[Vec<C>], rows: &[Vec<Integer>]) -> Vec<Vec<Integer>> {
    t2_reduce_weighted(emb, rows, &vec![1.0; emb[0].len()])
}

/// As [`t2_reduce`] for the weighted form `Σ_j w_j^2 |σ_j(α)|^2`: a unit
/// `u` is short for the weights `w_j = |σ_j(u)|^(-1)`, so random weights
/// bring out units and other elements that `T2` alone does not (H. Cohen,
/// GTM 138, section 6.5, random relations from weighted forms; from
/// memory).
fn t2_reduce_weighted(emb: &[Vec<C>], rows: &[Vec<Integer>], weights: &[f64]) -> Vec<Vec<Integer>> {
    let d = rows.len();
    let scale = 2f64.powi(32);
    let mut lat: Vec<Vec<Integer>> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let mut v: Vec<Integer> = (0..d).map(|k| Integer::from(u8::from(k == i))).collect();
            for (z, w) in embed(emb, r).into_iter().zip(weights) {
                v.push(Integer::from_f64((z.0 * w * scale).round()).unwrap_or_default());
                v.push(Integer::from_f64((z.1 * w * scale).round()).unwrap_or_default());
            }
            v
        })
        .collect();
    lll::reduce(&mut lat, 160, 200_000);
    lat.iter()
        .map(|v| {
            let mut out = vec![Integer::new(); rows[0].len()];
            for (u, r) in v.iter().take(d).zip(rows) {
                if *u != 0 {
                    for (o, x) in out.iter_mut().zip(r) {
                        *o += Integer::from(u * x);
                    }
                }
            }
            out
        })
        .collect()
}

/// The Hermite form of the product of two ideals given by Hermite forms
/// with `m1·O ⊆ I1` and `m2·O ⊆ I2`.
fn ideal_product(
    order: &Order,
    h1: &[Vec<Integer>],
    m1: &Integer,
    h2: &[Vec<Integer>],
    m2: &Integer,
) -> Vec<Vec<Integer>> {
    let mut gens = Vec::with_capacity(h1.len() * h2.len());
    for x in h1 {
        for y in h2 {
            gens.push(order.mul(x, y));
        }
    }
    let m = Integer::from(m1 * m2);
    super::arith::hnf(&gens, order.degree(), Some(&m)).unwrap()
}

/// The search state.
struct Search<'a> {
    order: &'a Order,
    fb: &'a FactorBase,
    opts: &'a SearchOptions,
    rng: Rng,
    seen: HashSet<Vec<Integer>>,
    relations: Vec<Relation>,
    units: usize,
    covered: Vec<bool>,
    tried: u64,
}

impl Search<'_> {
    fn done(&self) -> bool {
        self.relations.len() >= self.opts.wanted
    }

    /// Tries one element; returns the relation's index if it gave a new one.
    fn try_element(&mut self, mut alpha: Vec<Integer>, norm: Option<Integer>) -> Option<usize> {
        let first = alpha.iter().find(|x| **x != 0)?;
        if *first < 0 {
            for x in alpha.iter_mut() {
                *x = -std::mem::take(x);
            }
        }
        if self.seen.contains(&alpha) {
            return None;
        }
        self.tried += 1;
        let norm = norm.unwrap_or_else(|| self.order.norm(&alpha));
        let exponents = if Integer::from(norm.abs_ref()) == 1 {
            if self.units >= self.opts.max_units || alpha == self.order.one() {
                return None;
            }
            self.units += 1;
            Vec::new()
        } else {
            self.fb.factor(&alpha, &norm)?
        };
        for &(i, _) in &exponents {
            self.covered[i] = true;
        }
        self.seen.insert(alpha.clone());
        self.relations.push(Relation {
            coords: alpha,
            exponents,
        });
        Some(self.relations.len() - 1)
    }

    /// Small combinations `Σ c_i b_i` of a reduced basis: every vector with
    /// entries in `[-k, k]` for `k = 1, 2, …` (the first non-zero entry
    /// positive), then random ones, `count` in all; those that `keep`
    /// accepts are tried, and the search stops early when `stop` says so.
    fn combinations(
        &mut self,
        basis: &[Vec<Integer>],
        count: usize,
        keep: &dyn Fn(&[i64]) -> bool,
        stop: &mut dyn FnMut(&Self, Option<usize>) -> bool,
    ) {
        let n = basis.len();
        let mut enumerated = 0;
        let mut k = 1i64;
        let mut visit = |s: &mut Self, c: &[i64]| -> bool {
            enumerated += 1;
            if keep(c) {
                let got = s.try_element(combine(basis, c), None);
                if stop(s, got) {
                    return true;
                }
            }
            enumerated >= count
        };
        let mut finished = count == 0;
        while !finished && (2 * k + 1).pow(n as u32) <= (4 * count as i64).max(27) {
            // all vectors with max entry exactly k in absolute value
            let side = (2 * k + 1) as usize;
            let total = side.pow(n as u32);
            for code in 0..total {
                let mut c = Vec::with_capacity(n);
                let mut x = code;
                for _ in 0..n {
                    c.push((x % side) as i64 - k);
                    x /= side;
                }
                if c.iter().map(|v| v.abs()).max() != Some(k) {
                    continue;
                }
                if c.iter().find(|&&v| v != 0).is_none_or(|&v| v < 0) {
                    continue;
                }
                if visit(self, &c) {
                    finished = true;
                    break;
                }
            }
            k += 1;
        }
        let bound = k.max(2) as u64;
        while !finished {
            let c: Vec<i64> = (0..n)
                .map(|_| self.rng.below(2 * bound + 1) as i64 - bound as i64)
                .collect();
            finished = visit(self, &c);
        }
    }

    /// The line sieve over `a - bθ`.
    fn sieve(&mut self) {
        let order = self.order;
        let (Some(theta), Some(index)) = (order.theta(), order.index()) else {
            return;
        };
        let one = order.one();
        let f = order.f();
        let n = order.degree();
        const SCALE: f64 = 4.0;
        // (p, r, rounded SCALE·log2 p) for the degree-one primes with p ∤ index.
        let mut primes: Vec<(u64, u64, u16)> = Vec::new();
        let mut index_log = 0.0f64;
        for group in &self.fb.groups {
            let p = group[0].p;
            if index.is_divisible_u(p as u32) {
                index_log += 3.0 * (p as f64).log2();
                continue;
            }
            let k = Fp::new(p).unwrap();
            for r in fpfactor::roots(&k.reduce(f), p, 0) {
                primes.push((p, r, (SCALE * (p as f64).log2()).round() as u16));
            }
        }
        let slack = SCALE * (2.0 * (self.fb.bound as f64).log2() + index_log + 4.0);
        let fc: Vec<f64> = f.iter().map(Integer::to_f64).collect();
        let width = self.opts.sieve_width as i64;
        let len = (2 * width + 1) as usize;
        let mut sieve = vec![0u16; len];
        for b in 1..=self.opts.sieve_lines as i64 {
            if self.done() {
                return;
            }
            sieve.iter_mut().for_each(|s| *s = 0);
            for &(p, r, lg) in &primes {
                if (b as u64).is_multiple_of(p) {
                    continue;
                }
                let start = ((u128::from(b as u64) * u128::from(r) + width as u128) % u128::from(p))
                    as usize;
                let mut i = start;
                while i < len {
                    sieve[i] += lg;
                    i += p as usize;
                }
            }
            let bf = b as f64;
            for i in 0..len {
                let a = i as i64 - width;
                // log2 |F_hom(a, b)| = log2 |Σ f_k a^k b^(n-k)|
                let af = a as f64;
                let mut v = 0.0;
                for k in (0..=n).rev() {
                    v = v * af + fc[k] * bf.powi((n - k) as i32);
                }
                let size = SCALE * v.abs().max(1.0).log2();
                if f64::from(sieve[i]) + slack < size {
                    continue;
                }
                if Integer::from(a).gcd(&Integer::from(b)) != 1 {
                    continue;
                }
                let (az, bz) = (Integer::from(a), Integer::from(b));
                let norm = norm_linear(f, &az, &bz).unwrap();
                let alpha: Vec<Integer> = one
                    .iter()
                    .zip(&theta)
                    .map(|(o, t)| Integer::from(o * &az) - Integer::from(t * &bz))
                    .collect();
                // N(a - bθ) = F_hom(a, b); the sign of α may flip in
                // try_element, which changes N by (-1)^n only.
                self.try_element(alpha, Some(norm));
                if self.done() {
                    return;
                }
            }
        }
    }

    /// Elements of the ideal with Hermite form `h` (`m·O ⊆ I`) until
    /// `want` relations containing the factor-base prime `target` (if any)
    /// are found or `per_ideal` elements are tried.
    fn search_ideal(
        &mut self,
        emb: &[Vec<C>],
        h: &[Vec<Integer>],
        target: Option<usize>,
        want: usize,
    ) -> usize {
        let red = t2_reduce(emb, h);
        let mut found = 0;
        let count = self.opts.per_ideal;
        self.combinations(
            &red,
            count,
            &|_| true,
            &mut |s: &Search, got: Option<usize>| {
                if let Some(i) = got {
                    let hit = match target {
                        Some(t) => s.relations[i].exponents.iter().any(|&(j, _)| j == t),
                        None => true,
                    };
                    if hit {
                        found += 1;
                    }
                }
                found >= want
            },
        );
        found
    }
}

fn combine(basis: &[Vec<Integer>], c: &[i64]) -> Vec<Integer> {
    let mut out = vec![Integer::new(); basis[0].len()];
    for (b, &k) in basis.iter().zip(c) {
        if k != 0 {
            for (o, x) in out.iter_mut().zip(b) {
                *o += Integer::from(x * k);
            }
        }
    }
    out
}

/// Relations over the factor base `fb` of `order`: see the module text.
/// Returns at least one relation containing each prime of the factor base
/// where the search found one, and stops adding others at
/// `opts.wanted`; elements of norm `±1` are among them (at most
/// `opts.max_units`). Deterministic for a given `opts.seed`.
pub fn find_relations(order: &Order, fb: &FactorBase, opts: &SearchOptions) -> Vec<Relation> {
    find_relations_with_stats(order, fb, opts).0
}

/// Up to `want` more relations containing the factor-base prime `i`,
/// from elements of that prime's lattice (for a column of the relation
/// matrix that the first search left dependent, e.g. a prime whose only
/// relation was `(p)` itself).
pub fn relations_in(
    order: &Order,
    fb: &FactorBase,
    i: usize,
    want: usize,
    seed: u64,
) -> Vec<Relation> {
    let opts = SearchOptions::new(usize::MAX, seed);
    let mut s = Search {
        order,
        fb,
        opts: &opts,
        rng: Rng::new(seed),
        seen: HashSet::new(),
        relations: Vec::new(),
        units: 0,
        covered: vec![false; fb.len()],
        tried: 0,
    };
    let emb = basis_embeddings(order);
    let lattice = fb.ideal(i).lattice(order);
    s.search_ideal(&emb, &lattice, Some(i), want);
    s.relations
}

/// [`find_relations`], with the count from each source.
pub fn find_relations_with_stats(
    order: &Order,
    fb: &FactorBase,
    opts: &SearchOptions,
) -> (Vec<Relation>, SearchStats) {
    let n = order.degree();
    let mut stats = SearchStats::default();
    let mut s = Search {
        order,
        fb,
        opts,
        rng: Rng::new(opts.seed),
        seen: HashSet::new(),
        relations: Vec::new(),
        units: 0,
        covered: vec![false; fb.len()],
        tried: 0,
    };
    let emb = basis_embeddings(order);
    let identity: Vec<Vec<Integer>> = (0..n).map(|i| super::arith::unit_vector(n, i)).collect();
    // 1. Small elements of O.
    let red = t2_reduce(&emb, &identity);
    s.combinations(&red, opts.combinations, &|_| true, &mut |s: &Search, _| {
        s.done()
    });
    // Units: many more combinations, of which only those whose norm
    // (estimated from the embeddings) is near ±1 are tried.
    let red_emb: Vec<Vec<C>> = red.iter().map(|b| embed(&emb, b)).collect();
    let near_unit = |c: &[i64]| {
        let mut log_norm = 0.0f64;
        for j in 0..red_emb[0].len() {
            let mut z = C(0.0, 0.0);
            for (b, &k) in red_emb.iter().zip(c) {
                z = z.add(b[j].scale(k as f64));
            }
            log_norm += z.abs().ln();
        }
        log_norm.abs() < 0.5
    };
    s.combinations(
        &red,
        opts.unit_combinations,
        &near_unit,
        &mut |s: &Search, _| s.units >= s.opts.max_units,
    );
    // Randomly weighted forms: their reduced bases and the combinations
    // with entries in [-1, 1], for units (and relations, once per basis
    // vector).
    let m = emb[0].len();
    for t in 0..opts.weightings {
        if s.units >= opts.max_units {
            break;
        }
        let spread = 1.0 + t as f64 / 4.0;
        let mut logs: Vec<f64> = (0..m)
            .map(|_| (s.rng.below(1 << 20) as f64 / (1 << 20) as f64 * 2.0 - 1.0) * spread)
            .collect();
        let mean = logs.iter().sum::<f64>() / m as f64;
        logs.iter_mut().for_each(|l| *l -= mean);
        let weights: Vec<f64> = logs.iter().map(|l| l.exp()).collect();
        let red_w = t2_reduce_weighted(&emb, &identity, &weights);
        let red_w_emb: Vec<Vec<C>> = red_w.iter().map(|b| embed(&emb, b)).collect();
        for b in &red_w {
            s.try_element(b.clone(), None);
        }
        let near_unit_w = |c: &[i64]| {
            let mut log_norm = 0.0f64;
            for j in 0..m {
                let mut z = C(0.0, 0.0);
                for (b, &k) in red_w_emb.iter().zip(c) {
                    z = z.add(b[j].scale(k as f64));
                }
                log_norm += z.abs().ln();
            }
            log_norm.abs() < 0.5
        };
        let level_one = (3usize.pow(n as u32) - 1) / 2;
        s.combinations(&red_w, level_one, &near_unit_w, &mut |s: &Search, _| {
            s.units >= s.opts.max_units
        });
    }
    stats.from_order = s.relations.len();
    // 2. The line sieve over a - bθ.
    s.sieve();
    stats.from_sieve = s.relations.len() - stats.from_order;
    // 3. Every prime of the factor base in some relation.
    let lattices: Vec<Vec<Vec<Integer>>> = fb.ideals().map(|q| q.lattice(order)).collect();
    for i in 0..fb.len() {
        if !s.covered[i] {
            s.search_ideal(&emb, &lattices[i], Some(i), 1);
        }
    }
    stats.from_coverage = s.relations.len() - stats.from_order - stats.from_sieve;
    // 4. Products of two primes for variety, until enough relations.
    let m = fb.len();
    let mut tries = 0;
    while !s.done() && tries < opts.products && m > 0 {
        tries += 1;
        let i = s.rng.below(m as u64) as usize;
        let j = s.rng.below(m as u64) as usize;
        let (pi, pj) = (Integer::from(fb.ideal(i).p), Integer::from(fb.ideal(j).p));
        let h = ideal_product(order, &lattices[i], &pi, &lattices[j], &pj);
        s.search_ideal(&emb, &h, None, 2);
    }
    stats.from_products =
        s.relations.len() - stats.from_order - stats.from_sieve - stats.from_coverage;
    stats.tried = s.tried;
    (s.relations, stats)
}

#[cfg(test)]
mod tests {
    use super::super::decompose::valuation;
    use super::super::maximal::maximal_order;
    use super::*;
    use classcert_verifier::math::poly::{normalise, resultant};
    use rug::ops::Pow;

    fn z(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    #[test]
    fn norms_of_linear_elements() {
        // N(a - b√d) = a^2 - d b^2 (common practice).
        for (a, b) in [(3, 2), (-5, 7), (0, 1), (4, 0)] {
            let n = norm_linear(&z(&[-13, 0, 1]), &Integer::from(a), &Integer::from(b));
            assert_eq!(n, Some(Integer::from(a * a - 13 * b * b)));
        }
        // N(a - b·2^(1/3)) = a^3 - 2 b^3 (common practice).
        let n = norm_linear(&z(&[-2, 0, 0, 1]), &Integer::from(5), &Integer::from(-3));
        assert_eq!(n, Some(Integer::from(125 + 54)));
        // A second route: N(a - bθ) = Res(F, a - bx) for monic F (the
        // resultant is lc(F)^1 ∏ (a - bθ_i)).
        let mut rng = Rng::new(3);
        for _ in 0..200 {
            let n = 1 + rng.below(6) as usize;
            let mut small = |r: u64| Integer::from(rng.below(2 * r + 1)) - r;
            let mut f: Vec<Integer> = (0..n).map(|_| small(40)).collect();
            f.push(Integer::from(1));
            let (a, b) = (small(1000), small(1000));
            let lin = normalise(vec![a.clone(), Integer::from(-&b)]);
            assert_eq!(norm_linear(&f, &a, &b), Some(resultant(&f, &lin)));
        }
        assert_eq!(
            norm_linear(&z(&[1, 0, 2]), &Integer::from(1), &Integer::from(1)),
            None
        );
        assert_eq!(norm_linear(&[], &Integer::from(1), &Integer::from(1)), None);
    }

    /// Checks every relation: `N(α) = ±∏ N(P_i)^{v_i}`, each `v_i` equal to
    /// the valuation recomputed by the anti-uniformiser, and units of norm
    /// ±1.
    pub(super) fn check(order: &Order, fb: &FactorBase, rels: &[Relation]) {
        for r in rels {
            let norm = order.norm(&r.coords);
            let prod: Integer = r
                .exponents
                .iter()
                .map(|&(i, v)| fb.ideal(i).norm().pow(v))
                .product();
            assert_eq!(Integer::from(norm.abs_ref()), prod, "{r:?}");
            for &(i, v) in &r.exponents {
                assert_eq!(valuation(order, fb.ideal(i), &r.coords), v);
            }
            for w in r.exponents.windows(2) {
                assert!(w[0].0 < w[1].0);
            }
        }
    }

    #[test]
    fn relations_in_small_fields() {
        for (f, bound) in [
            (&[-2i64, 0, 0, 1][..], 60),
            (&[-10, 0, 0, 1], 60),
            (&[1, -2, -1, 1], 60),
            (&[1, 1, 1, 1, 1], 60),
            (&[1, 0, 0, 0, 1], 60),
            (&[-1, -1, 0, 0, 0, 1], 60),
            (&[1, 1, 1, 1, 1, 1, 1], 60),
        ] {
            let order = maximal_order(&z(f), &[], 1_000_000).unwrap().order;
            let fb = FactorBase::new(&order, bound, 1).unwrap();
            let opts = SearchOptions::new(fb.len() + 30, 7);
            let rels = find_relations(&order, &fb, &opts);
            assert!(
                rels.len() >= fb.len() + 30,
                "{f:?}: {} of {}",
                rels.len(),
                fb.len() + 30
            );
            check(&order, &fb, &rels);
            // every prime of the factor base occurs
            let mut seen = vec![false; fb.len()];
            for r in &rels {
                for &(i, _) in &r.exponents {
                    seen[i] = true;
                }
            }
            assert!(seen.iter().all(|&b| b), "{f:?}");
            // Elements of norm ±1 are kept: each of these fields but
            // Q(10^(1/3)) has a small one, by hand: N(1 - θ) = F(1) = -1 for
            // x^3 - 2 (N(a - θ) = F(a) for monic F of odd degree, up to
            // sign), N(θ) = ±F(0) = ±1 for x^3 - x^2 - 2x + 1 and
            // x^5 - x - 1, and θ is a root of unity for the cyclotomic ones.
            if f[0] != -10 {
                assert!(rels.iter().any(Relation::is_unit), "{f:?}");
            }
            // the same seed gives the same relations
            assert_eq!(find_relations(&order, &fb, &opts), rels);
        }
    }

    #[test]
    fn sieve_relations() {
        // The line sieve alone (no combinations of O, no weighted forms):
        // its relations pass the same checks, in a field where 3 divides
        // the index (x^3 - 10) and in one where it does not (x^3 - 2).
        for f in [
            &[-10i64, 0, 0, 1][..],
            &[-2, 0, 0, 1],
            &[-1, -1, 0, 0, 0, 1],
        ] {
            let order = maximal_order(&z(f), &[], 0).unwrap().order;
            let fb = FactorBase::new(&order, 200, 3).unwrap();
            let mut opts = SearchOptions::new(fb.len() + 30, 1);
            opts.combinations = 0;
            opts.unit_combinations = 0;
            opts.weightings = 0;
            let (rels, stats) = find_relations_with_stats(&order, &fb, &opts);
            assert_eq!(stats.from_order, 0);
            assert!(stats.from_sieve >= fb.len() / 2, "{f:?}: {stats:?}");
            check(&order, &fb, &rels);
            // the sieve's elements are a - bθ: coordinates of the power
            // basis (1, -b, 0, …) up to sign
            for r in &rels[..stats.from_sieve] {
                let (num, den) = order.to_power(&r.coords);
                assert_eq!(den, 1);
                assert!(num[2..].iter().all(|c| *c == 0), "{num:?}");
            }
        }
    }

    #[test]
    fn smoothness_test() {
        let order = Order::equation(&z(&[-2, 0, 0, 1])).unwrap();
        let fb = FactorBase::new(&order, 30, 0).unwrap();
        assert!(fb.is_smooth(&Integer::from(2u64.pow(40) * 29 * 29 * 27)));
        assert!(fb.is_smooth(&Integer::from(-1)));
        assert!(!fb.is_smooth(&Integer::from(31)));
        assert!(!fb.is_smooth(&Integer::from(2 * 37)));
        assert!(!fb.is_smooth(&Integer::new()));
        // against trial division for every number below 3000
        for m in 1..3000u64 {
            let mut r = m;
            for p in primes_up_to(30) {
                while r % p == 0 {
                    r /= p;
                }
            }
            assert_eq!(fb.is_smooth(&Integer::from(m)), r == 1, "{m}");
        }
    }

    #[test]
    fn roots_and_embeddings() {
        // x^3 - 2: one real root 2^(1/3) and a complex pair of the same
        // modulus; the product of the embeddings of α is N(α).
        let order = maximal_order(&z(&[-2, 0, 0, 1]), &[], 0).unwrap().order;
        let roots = complex_roots(order.f());
        for r in &roots {
            assert!((r.abs() - 2f64.powf(1.0 / 3.0)).abs() < 1e-12);
        }
        let emb = basis_embeddings(&order);
        for a in [z(&[1, 1, 0]), z(&[3, -1, 2]), z(&[5, 7, -4])] {
            let e = embed(&emb, &a);
            let prod = e.iter().fold(C(1.0, 0.0), |acc, &x| acc.mul(x));
            assert!((prod.0 - order.norm(&a).to_f64()).abs() < 1e-6 * prod.abs().max(1.0));
            assert!(prod.1.abs() < 1e-6 * prod.abs().max(1.0));
        }
    }
}

#[cfg(test)]
mod timing {
    use super::super::maximal::maximal_order;
    use super::*;
    use classcert_verifier::math::poly::discriminant;

    /// Run with `--ignored --nocapture`: timings for fields at the sizes
    /// the task names, with the bound 12 log^2 |Δ| (Bach 1990).
    #[test]
    #[ignore]
    fn larger_fields() {
        for f in [
            vec![-192_451i64, 0, 0, 1],
            vec![11, -7000, 0, 1],
            vec![2, -5, 11, 3, -7, 1, 1],
            vec![-3, 7, -2, -9, 4, 0, 1],
            vec![-12, 0, 0, 0, 0, 0, 1],
            vec![23, 17, 0, -11, 0, 3, 1],
            vec![-7, 0, 14, 0, -7, 0, 1],
            vec![5, -3, 9, -1, 1],
            vec![-7, 3, 0, 2, 0, 1],
        ] {
            let f: Vec<Integer> = f.iter().map(|&c| Integer::from(c)).collect();
            let t = std::time::Instant::now();
            let m = maximal_order(&f, &[], 3_000_000).unwrap();
            let ln = m.disc.to_f64().abs().ln();
            let bound = (12.0 * ln * ln) as u64;
            let t1 = t.elapsed();
            let fb = FactorBase::new(&m.order, bound, 1).unwrap();
            let t2 = t.elapsed();
            let mut opts = SearchOptions::new(fb.len() + 30, 7);
            let (rels, stats) = find_relations_with_stats(&m.order, &fb, &opts);
            let t3 = t.elapsed();
            println!("{stats:?}");
            opts.combinations = 0;
            let (_, stats) = find_relations_with_stats(&m.order, &fb, &opts);
            println!(
                "without combinations of O: {stats:?} in {:?}",
                t.elapsed() - t3
            );
            let units = rels.iter().filter(|r| r.is_unit()).count();
            super::tests::check(&m.order, &fb, &rels);
            let mut seen = vec![false; fb.len()];
            for r in &rels {
                for &(i, _) in &r.exponents {
                    seen[i] = true;
                }
            }
            println!(
                "primes in no relation: {}",
                seen.iter().filter(|&&b| !b).count()
            );
            println!(
                "F = {f:?}: disc(F) = {}, disc(O) = {}, B = {bound}, |FB| = {}, relations {} ({units} units); maximal {:?}, factor base {:?}, relations {:?}",
                discriminant(&f).unwrap(),
                m.disc,
                fb.len(),
                rels.len(),
                t1,
                t2 - t1,
                t3 - t2
            );
        }
    }
}
