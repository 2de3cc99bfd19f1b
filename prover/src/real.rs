//! The prover for real quadratic orders (`D > 0`).
//!
//! Relations come from elements, not from reduced forms (reduced indefinite
//! forms are not unique in their class). For an ideal
//! `a = [A, (B + sqrt D)/2]` (a product of factor-base primes, `B² ≡ D mod
//! 4A`) the elements `α = A x + (B + sqrt D)/2` have norm `A · Q(x)` with
//! `Q(x) = A x² + B x + (B² - D)/(4A)`, and `|Q(x)|` is about `sqrt D · |t|`
//! at distance `t` from a root of `Q`. A smooth `Q(x)` gives a relation
//! `(α) = ∏ P^{±e}` whose witness is `α` itself (the polynomials of the
//! multiple-polynomial quadratic sieve, as applied to class groups by
//! M. J. Jacobson, Jr., Math. Comp. 68 (1999); trial division stands in
//! for the sieve for now).
//!
//! Linear algebra is exact and keeps track of how every row combines the
//! raw relations, because the verifier checks each derived relation as such
//! a combination: eliminations for the large primes, an echelon form on the
//! essential block, and the rows that vanish there are units (J. Buchmann,
//! Sém. Théorie des Nombres Paris 1988–89). The regulator is the real gcd
//! of their logarithms ([`crate::units::unit_gcd`]).

use crate::compact;
use crate::linalg::smith;
use crate::prove::{cyclic_generators, essential_count, setup, Options, ProveError};
use crate::rng::Rng;
use crate::units::{self, Factor};
use classcert_format::*;
use classcert_verifier::math::Interval;
use rug::ops::{DivRounding, Pow, RemRounding};
use rug::Integer;
use std::collections::{BTreeMap, BTreeSet};

/// A raw relation: exponents over the factor base (`+e` for `P^e`, `-e`
/// for `conj(P)^e`) and the element `(x + y sqrt D)/2`.
struct Raw {
    entries: BTreeMap<usize, i64>,
    x: Integer,
    y: Integer,
}

/// Kernel vectors offered to the unit search per round.
const KERNEL_PER_ROUND: usize = 32;

/// Columns beyond the generators that may be left to the echelon block.
const DENSE_SLACK: usize = 4;

/// Sparse integer vectors: over factor-base indices, or over raw relations.
type Vector = BTreeMap<usize, Integer>;

fn axpy(dst: &mut Vector, c: &Integer, src: &Vector) {
    for (i, e) in src {
        let t = dst.entry(*i).or_default();
        *t += Integer::from(c * e);
        if t.is_zero() {
            dst.remove(i);
        }
    }
}

fn scaled(c: &Integer, v: &Vector) -> Vector {
    v.iter()
        .map(|(i, e)| (*i, Integer::from(c * e)))
        .filter(|(_, e)| !e.is_zero())
        .collect()
}

/// A relation on the essential block with the combination of raw
/// relations it stands for.
#[derive(Clone)]
struct Row {
    v: Vector,
    combo: Vector,
}

impl Row {
    /// `a·self + b·other`.
    fn lin(&self, a: &Integer, other: &Row, b: &Integer) -> Row {
        let mut v = scaled(a, &self.v);
        axpy(&mut v, b, &other.v);
        let mut combo = scaled(a, &self.combo);
        axpy(&mut combo, b, &other.combo);
        Row { v, combo }
    }

    fn sub_mul(&mut self, q: &Integer, other: &Row) {
        let m = Integer::from(-q);
        axpy(&mut self.v, &m, &other.v);
        axpy(&mut self.combo, &m, &other.combo);
    }
}

/// Row echelon form over the integers, column by column from the left
/// (H. Cohen, GTM 138, §2.4.2); rows that vanish are kernel vectors.
struct Echelon {
    pivots: Vec<Option<Row>>,
    kernel: Vec<Vector>,
}

impl Echelon {
    fn new(k: usize) -> Echelon {
        Echelon {
            pivots: vec![None; k],
            kernel: Vec::new(),
        }
    }

    /// Echelon form of `rows` on `cols` (ascending). Combinations are what
    /// the certificate carries, so the form is built from as few rows with
    /// short combinations as will do: the shortest rows first, more only if
    /// the others do not reduce to zero against the result (they then lie
    /// in its lattice, and are units).
    fn triangularise(&mut self, cols: &[usize], mut rows: Vec<Row>) {
        rows.sort_by_key(|r| r.combo.len());
        let mut take = rows.len().min(cols.len() + 8);
        loop {
            let mut trial = Echelon::new(self.pivots.len());
            trial.euclid(cols, rows[..take].to_vec());
            let complete = cols.iter().all(|&c| trial.pivots[c].is_some());
            let mut left = Vec::new();
            let mut units = Vec::new();
            if complete {
                for r in &rows[take..] {
                    let mut r = r.clone();
                    for &c in cols {
                        let (Some(e), Some(p)) = (r.v.get(&c).cloned(), trial.pivots[c].as_ref())
                        else {
                            continue;
                        };
                        let q = e.div_floor(&p.v[&c]);
                        r.sub_mul(&q, p);
                    }
                    if r.v.is_empty() {
                        units.push(r.combo);
                    } else {
                        left.push(r);
                    }
                }
            }
            if complete && left.is_empty() || take == rows.len() {
                self.pivots = trial.pivots;
                self.kernel.extend(trial.kernel);
                self.kernel
                    .extend(units.into_iter().filter(|c| !c.is_empty()));
                return;
            }
            take = rows.len().min(2 * take);
        }
    }

    /// Echelon form by Euclid across all rows at once: in each column the
    /// row with the smallest entry (and the shortest combination) reduces
    /// every other, until one is left. Each pass at least halves the
    /// largest entry, and combinations grow by small multiples only.
    fn euclid(&mut self, cols: &[usize], mut rows: Vec<Row>) {
        for &c in cols {
            loop {
                let with: Vec<usize> = (0..rows.len())
                    .filter(|&i| rows[i].v.contains_key(&c))
                    .collect();
                let Some(&best) = with.iter().min_by(|&&i, &&j| {
                    let key = |r: &Row| (r.v[&c].clone().abs(), r.combo.len());
                    key(&rows[i]).cmp(&key(&rows[j]))
                }) else {
                    break;
                };
                if rows[best].v[&c] < 0 {
                    let r = &rows[best];
                    rows[best] = r.lin(&Integer::from(-1), r, &Integer::new());
                }
                if with.len() == 1 {
                    self.pivots[c] = Some(rows.swap_remove(best));
                    break;
                }
                let p = rows[best].clone();
                let pc = p.v[&c].clone();
                let two_pc = Integer::from(&pc << 1u32);
                for &i in with.iter().filter(|&&i| i != best) {
                    // the nearest integer to x / pc
                    let q = (Integer::from(&rows[i].v[&c] << 1u32) + &pc).div_floor(&two_pc);
                    rows[i].sub_mul(&q, &p);
                }
                let mut kept = Vec::with_capacity(rows.len());
                for r in rows {
                    if r.v.is_empty() {
                        if !r.combo.is_empty() {
                            self.kernel.push(r.combo);
                        }
                    } else {
                        kept.push(r);
                    }
                }
                rows = kept;
            }
        }
    }

    /// Reduces the entries right of each pivot modulo the pivots below it
    /// (Hermite form), from the last column back.
    fn reduce(&mut self) {
        let k = self.pivots.len();
        for c in (0..k).rev() {
            for j in c + 1..k {
                let Some(pj) = self.pivots[j].clone() else {
                    continue;
                };
                let Some(pc) = self.pivots[c].as_mut() else {
                    continue;
                };
                let Some(e) = pc.v.get(&j) else { continue };
                let q = Integer::from(e.div_floor(&pj.v[&j]));
                if !q.is_zero() {
                    pc.sub_mul(&q, &pj);
                }
            }
        }
    }

    fn diagonal(&self, c: usize) -> Integer {
        self.pivots[c]
            .as_ref()
            .and_then(|p| p.v.get(&c).cloned())
            .unwrap_or_default()
    }
}

/// The essential block solved: unit pivots first, chosen by least
/// Markowitz cost so that combinations stay short (structured Gaussian
/// elimination: B. A. LaMacchia and A. M. Odlyzko, CRYPTO '90), then an
/// echelon form on the columns left.
struct Algebra {
    /// `(column, row)` in pivoting order; each row has `+1` at its column
    /// and its other entries on columns pivoted later or left dense.
    unit_pivots: Vec<(usize, Row)>,
    dense: Echelon,
    /// Columns left to the echelon form.
    dense_cols: Vec<usize>,
}

impl Algebra {
    fn solve(k: usize, rows: Vec<Row>) -> Algebra {
        let mut active: Vec<Row> = rows.into_iter().filter(|r| !r.combo.is_empty()).collect();
        let mut kernel = Vec::new();
        active.retain(|r| {
            if r.v.is_empty() {
                kernel.push(r.combo.clone());
                false
            } else {
                true
            }
        });
        let mut done = vec![false; k];
        let mut unit_pivots = Vec::new();
        loop {
            let mut count = vec![0usize; k];
            for r in &active {
                for c in r.v.keys() {
                    count[*c] += 1;
                }
            }
            let mut best: Option<(usize, usize, usize)> = None; // (cost, row, col)
            for (ri, r) in active.iter().enumerate() {
                let w = r.v.len();
                for (c, e) in &r.v {
                    if *e == 1 || *e == -1 {
                        let cost = (w - 1) * (count[*c] - 1);
                        if best.is_none_or(|(b, _, _)| cost < b) {
                            best = Some((cost, ri, *c));
                        }
                    }
                }
            }
            let Some((_, ri, c)) = best else { break };
            let mut p = active.swap_remove(ri);
            if p.v[&c] < 0 {
                p = p.lin(&Integer::from(-1), &p, &Integer::new());
            }
            let mut next = Vec::with_capacity(active.len());
            for mut r in active {
                if let Some(e) = r.v.get(&c).cloned() {
                    r.sub_mul(&e, &p);
                }
                if r.v.is_empty() {
                    if !r.combo.is_empty() {
                        kernel.push(r.combo);
                    }
                } else {
                    next.push(r);
                }
            }
            active = next;
            done[c] = true;
            unit_pivots.push((c, p));
        }
        let dense_cols: Vec<usize> = (0..k).filter(|&c| !done[c]).collect();
        let mut dense = Echelon::new(k);
        dense.kernel = kernel;
        dense.triangularise(&dense_cols, active);
        Algebra {
            unit_pivots,
            dense,
            dense_cols,
        }
    }

    fn full_rank(&self) -> bool {
        self.dense_cols
            .iter()
            .all(|&c| self.dense.pivots[c].is_some())
    }

    fn h_star(&self) -> Integer {
        self.dense_cols
            .iter()
            .map(|&c| self.dense.diagonal(c))
            .product()
    }
}

/// The search for elements of small norm.
struct Sieve<'a> {
    d: &'a Integer,
    primes: &'a [u64],
    bs: &'a [u64],
    isqrt_d: Integer,
    seen: BTreeSet<Integer>,
    rng: Rng,
    candidates: u64,
}

impl<'a> Sieve<'a> {
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
    ) -> Option<Raw> {
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
        Some(Raw {
            entries,
            x: big_x,
            y: Integer::from(1),
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
    fn elimination(&mut self, i: usize, max_t: i64) -> Option<Raw> {
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
    fn relation(&mut self, k: usize, n: usize, max_tries: u64) -> Option<Raw> {
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

fn to_terms(v: &Vector) -> Vec<(u32, Integer)> {
    v.iter().map(|(i, e)| (*i as u32, e.clone())).collect()
}

pub fn prove_real(d: &Integer, opts: &Options) -> Result<Body, ProveError> {
    let mut setup = setup(d, opts)?;
    let progress = std::mem::replace(&mut setup.progress, crate::progress::Progress::new(false));
    let fb = &setup.fb;
    let n = fb.len();
    let k = essential_count(fb, d);
    progress.phase(&format!(
        "factor base of {n} prime ideals ({k} essential): eliminating the others"
    ));
    let mut sieve = Sieve {
        d,
        primes: &fb.primes,
        bs: &fb.bs,
        isqrt_d: d.clone().sqrt(),
        seen: BTreeSet::new(),
        rng: Rng::new(opts.seed),
        candidates: 0,
    };
    let mut raws: Vec<Raw> = Vec::new();
    let mut elim_of: Vec<Option<usize>> = vec![None; n];
    for i in k..n {
        let raw = sieve.elimination(i, 2_000_000).ok_or_else(|| {
            ProveError::SearchFailed(format!(
                "no elimination relation found for p = {}",
                fb.primes[i]
            ))
        })?;
        elim_of[i] = Some(raws.len());
        raws.push(raw);
        progress.tick((i + 1 - k) as u64, Some((n - k) as u64));
    }
    progress.phase("relations on the essential block, until h* R* is confirmed");
    // ramified primes: (p) = P^2, witness α = p
    for i in 0..k {
        let p = fb.primes[i];
        if d.is_divisible_u(p as u32) {
            raws.push(Raw {
                entries: BTreeMap::from([(i, 2)]),
                x: Integer::from(2 * p),
                y: Integer::new(),
            });
        }
    }

    // The essential block: substitute the eliminations, then echelon form.
    let substitute = |j: usize, raws: &[Raw]| -> Row {
        let mut v: Vector = raws[j]
            .entries
            .iter()
            .map(|(i, e)| (*i, Integer::from(*e)))
            .collect();
        let mut combo = Vector::from([(j, Integer::from(1))]);
        while let Some((&c, e)) = v.iter().next_back() {
            if c < k {
                break;
            }
            let e = e.clone();
            let Some(r) = elim_of[c] else { break };
            let rv: Vector = raws[r]
                .entries
                .iter()
                .map(|(i, x)| (*i, Integer::from(*x)))
                .collect();
            let m = Integer::from(-&e);
            axpy(&mut v, &m, &rv);
            axpy(&mut combo, &m, &Vector::from([(r, Integer::from(1))]));
        }
        Row { v, combo }
    };
    let mut rows: Vec<Row> = ((n - k)..raws.len())
        .map(|j| substitute(j, &raws))
        .collect();
    let factors = |raws: &[Raw]| -> Vec<Factor> {
        raws.iter()
            .map(|r| {
                let mut s = Integer::from(1);
                for (i, e) in &r.entries {
                    if *e < 0 {
                        s *= Integer::from(fb.primes[*i]).pow(e.unsigned_abs() as u32);
                    }
                }
                Factor {
                    x: r.x.clone(),
                    y: r.y.clone(),
                    s,
                }
            })
            .collect()
    };
    let max_relations = 60 * k + 2000;
    // how many essential relations may be spent on shrinking the echelon block
    let dense_budget = 6 * k + 100;
    let mut unit: Option<Vector> = None;
    let mut confirmed = false;
    let mut batch = k.max(8);
    let alg = loop {
        for _ in 0..batch {
            let Some(raw) = sieve.relation(k, n, 5_000_000) else {
                return Err(ProveError::SearchFailed(
                    "relation search exhausted its attempts".into(),
                ));
            };
            raws.push(raw);
            rows.push(substitute(raws.len() - 1, &raws));
            progress.tick(raws.len() as u64, None);
        }
        batch = (k / 4).max(4);
        if raws.len() > max_relations + n {
            return Err(ProveError::SearchFailed(format!(
                "{} relations did not determine the class group and regulator; try another --seed",
                raws.len()
            )));
        }
        let alg = Algebra::solve(k, rows.clone());
        if !alg.full_rank() || alg.dense.kernel.is_empty() {
            continue;
        }
        let h_star = alg.h_star();
        if !confirmed {
            // the current unit and kernel vectors spread over the kernel
            let kernel = &alg.dense.kernel;
            let step = kernel.len().div_ceil(KERNEL_PER_ROUND).max(1);
            let cands: Vec<Vec<(usize, Integer)>> = unit
                .iter()
                .chain(kernel.iter().step_by(step))
                .map(|kv| kv.iter().map(|(i, e)| (*i, e.clone())).collect())
                .collect();
            let fs = factors(&raws);
            if let Some(g) = units::unit_gcd(d, &fs, &cands) {
                unit = Some(g.into_iter().collect());
            }
            let Some(u) = &unit else { continue };
            let log_r = units::log_power_product(
                d,
                &fs,
                &u.iter().map(|(i, e)| (*i, e.clone())).collect::<Vec<_>>(),
            )
            .map(|l| l.abs().to_f64())
            .unwrap_or(f64::INFINITY);
            let log_hr = Interval::int(&h_star)
                .ln()
                .map(|l| l.hi.to_f64())
                .unwrap_or(f64::INFINITY)
                + log_r.ln();
            // a margin for the rigorous check that follows
            confirmed = log_hr < setup.ceiling.to_f64() - 1e-9;
        }
        // Columns left to the echelon block carry long combinations into
        // the certificate; more relations give more unit pivots.
        let dense_gens = alg
            .dense_cols
            .iter()
            .filter(|&&c| alg.dense.diagonal(c) > 1)
            .count();
        let dense_ok =
            alg.dense_cols.len() <= dense_gens + DENSE_SLACK || raws.len() > dense_budget + n;
        if confirmed && dense_ok {
            break alg;
        }
    };
    let mut ech = alg.dense;
    ech.reduce();

    // Generators: dense columns whose pivot is > 1.
    let gens: Vec<usize> = alg
        .dense_cols
        .iter()
        .copied()
        .filter(|&c| ech.diagonal(c) > 1)
        .collect();
    let pivot = |c: usize| ech.pivots[c].clone().expect("full rank");
    let mut h_rows: Vec<Row> = Vec::new();
    for &g in &gens {
        let mut row = pivot(g);
        for &c in alg.dense_cols.iter().filter(|&&c| c > g) {
            if gens.contains(&c) {
                continue;
            }
            if let Some(e) = row.v.get(&c).cloned() {
                row.sub_mul(&e, &pivot(c));
            }
        }
        h_rows.push(row);
    }
    let h_g: Vec<Vec<Integer>> = h_rows
        .iter()
        .map(|r| {
            gens.iter()
                .map(|g| r.v.get(g).cloned().unwrap_or_default())
                .collect()
        })
        .collect();
    let sm = smith(&h_g).ok_or_else(|| ProveError::SearchFailed("Smith form failed".into()))?;
    let mut eliminations = Vec::new();
    let elimination_rows = alg
        .dense_cols
        .iter()
        .rev()
        .filter(|c| !gens.contains(c))
        .map(|&c| (c, pivot(c)))
        .chain(alg.unit_pivots.iter().rev().cloned());
    for (c, row) in elimination_rows {
        eliminations.push(Elimination {
            pivot: c as u32,
            relation: Relation {
                entries: to_terms(&row.v),
                witness: Witness::Combination {
                    terms: to_terms(&row.combo),
                },
            },
        });
    }
    for i in k..n {
        let r = elim_of[i].expect("every large prime has an elimination");
        eliminations.push(Elimination {
            pivot: i as u32,
            relation: Relation {
                entries: raws[r]
                    .entries
                    .iter()
                    .map(|(c, e)| (*c as u32, Integer::from(*e)))
                    .collect(),
                witness: Witness::Combination {
                    terms: vec![(r as u32, Integer::from(1))],
                },
            },
        });
    }
    let raw_relations: Vec<Relation> = raws
        .iter()
        .map(|r| Relation {
            entries: r
                .entries
                .iter()
                .map(|(c, e)| (*c as u32, Integer::from(*e)))
                .collect(),
            witness: Witness::Element {
                x: r.x.clone(),
                y: r.y.clone(),
            },
        })
        .collect();
    // The unit found from the relations, rewritten in compact form from
    // its logarithm; the verifier's own check gives the stated enclosure.
    let terms: Vec<(usize, Integer)> = unit
        .as_ref()
        .expect("a unit was found")
        .iter()
        .map(|(i, e)| (*i, e.clone()))
        .collect();
    let log_r = units::log_power_product(d, &factors(&raws), &terms)
        .ok_or_else(|| ProveError::SearchFailed("the unit's logarithm failed".into()))?
        .abs();
    let steps = compact::compact(d, &log_r).ok_or_else(|| {
        ProveError::SearchFailed("the compact representation of the unit failed".into())
    })?;
    let chain = classcert_verifier::math::units::check_chain(d, &steps).map_err(|e| {
        ProveError::SelfCheckFailed(format!("compact representation: {}", e.detail))
    })?;
    let regulator = chain.log_eps;
    let mut generators = Vec::new();
    let mut invariants = Vec::new();
    for (di, xv) in cyclic_generators(&sm, &h_g) {
        invariants.push(di);
        generators.push(CyclicGenerator {
            exponents: xv,
            form: None,
        });
    }
    let claim = Claim {
        class_number: sm.diag.iter().product(),
        invariants,
        generators,
    };
    let lattice = Lattice {
        generators: gens.iter().map(|&g| g as u32).collect(),
        relations: h_g,
        relation_witness: Witness::Combinations {
            rows: h_rows.iter().map(|r| to_terms(&r.combo)).collect(),
        },
        smith: sm.into(),
        eliminations,
        raw_relations: Some(raw_relations),
    };
    let units = Units {
        steps,
        norm: if chain.norm_negative { -1 } else { 1 },
        regulator: regulator
            .to_bounds()
            .ok_or_else(|| ProveError::SearchFailed("regulator out of range".into()))?,
    };
    progress.say(&format!(
        "class number {}, regulator {}",
        claim.class_number,
        classcert_verifier::report::decimal(&regulator)
    ));
    Ok(setup.body(d, opts, claim, lattice, Some(units)))
}
