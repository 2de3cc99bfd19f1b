//! The driver for real quadratic orders (`D > 0`).
//!
//! Relations come from a [`RelationSource`] of elements of small norm, each
//! witnessed by its element: trial division of norms
//! ([`crate::relations::elements`]) for small `D`, the self-initialising
//! sieve ([`crate::relations::siqs`]) from [`SIEVE_MIN_BITS`] on, whose
//! sieving primes are then the essential block.
//!
//! With the sieve that block has hundreds of columns, and the structured
//! elimination leaves 30–80 of them to the echelon form. Spelled out over
//! the raw relations, the rows' combinations would fill in and their
//! coefficients multiply (the Hermite reduction alone takes them to
//! thousands of bits: 3.9 MB certificates at 30 digits, 24.7 MB at 40).
//! So rows that are used again are named as the certificate's derived
//! relations ([`Derived`], `shared/design/sieving.md` §4): every pivot of
//! the structured elimination, every row entering the echelon form, and
//! every pivot of the echelon form once it is reduced. Combinations name
//! them instead of copying their expansions, and only those the
//! certificate's combinations rest on are written out.
//!
//! Linear algebra is exact and keeps track of how every row combines the
//! raw and derived relations, because the verifier checks each derived
//! relation as such a combination: eliminations for the large primes, an echelon form on the
//! essential block, and the rows that vanish there are units (J. Buchmann,
//! Sém. Théorie des Nombres Paris 1988–89). The regulator is the real gcd
//! of their logarithms ([`crate::units::unit_gcd`]).

use super::algebra::{lattice_and_claim, Algebra, Finished};
use super::common::{eliminations, ELIMINATION_ATTEMPTS, ELIMINATION_CHUNK, RELATION_ATTEMPTS};
use crate::linalg::derived::Derived;
use crate::linalg::echelon::{axpy, Row, Vector};
use crate::linalg::sge::{Eliminated, Sge};
use crate::linalg::shortcomb::Block;
use crate::linalg::tracked;
use crate::progress::Progress;
use crate::relations::elements::ElementSearch;
use crate::relations::siqs::{Params, SiqsSource};
use crate::relations::{FoundRelation, RelationSource, Sparse};
use crate::setup::{essential_count, setup, Options, ProveError};
use crate::units::{self, compact, Factor};
use classcert_format::*;
use classcert_verifier::math::Interval;
use rug::ops::Pow;
use rug::Integer;
use std::collections::BTreeMap;

/// A raw relation: exponents over the factor base (`+e` for `P^e`, `-e`
/// for `conj(P)^e`) and the element `(x + y sqrt D)/2`.
struct Raw {
    entries: Sparse,
    x: Integer,
    y: Integer,
}

impl Raw {
    fn from_found(rel: FoundRelation) -> Result<Raw, ProveError> {
        let element = rel.element.ok_or_else(|| {
            ProveError::SearchFailed("a relation for D > 0 came without its element".into())
        })?;
        Ok(Raw {
            entries: rel.exponents,
            x: element.x,
            y: element.y,
        })
    }
}

/// `D` of at least this many bits (about 22 digits) takes the sieve.
/// Measured on the `bench_d N real` discriminants (one run each, 2 shared
/// cores), element search against sieve: 18 digits 0.76 s and 2.41 s,
/// 20 digits 2.06 s and 1.82 s, 21 digits 2.18 s and 3.17 s, 22 digits
/// 4.33 s and 2.64 s, 24 digits 6.24 s and 2.18 s. Below the switch (every
/// discriminant of the certificate tests) the element search keeps the
/// certificates it made before.
pub const SIEVE_MIN_BITS: u32 = 70;

/// Relations the sieve hands out before the first solve, in percent of the
/// essential block (more come in batches of a quarter of it). More rows
/// leave a smaller echelon block with shorter combinations (one run each):
/// at 30 digits (300 sieving primes) 200% took 11.1 s for a 6.9 MB
/// certificate, 300% 8.9 s for 5.4 MB, 500% 15.8 s for 3.1 MB; at 40
/// digits (500 primes) 300% took 81 s for 67.5 MB, 500% 106 s for 23.5 MB.
const SIEVE_FIRST_PERCENT: usize = 500;

/// Kernel vectors offered to the unit search per round.
const KERNEL_PER_ROUND: usize = 32;

/// Columns beyond the generators that may be left to the echelon block.
const DENSE_SLACK: usize = 4;

/// `D` of at least this many bits (about 45 digits, where the sieve's
/// table gains rows) takes the dense block's rows in short combinations
/// ([`ShortAlgebra`]), harvests the large primes' eliminations from the
/// sieve's relations and keeps only the raw relations the certificate
/// names. Below it (every size measured before) the echelon form keeps the
/// certificates it made before.
pub const SHORT_MIN_BITS: u32 = 150;

/// Rows beyond the dense block's width whose combinations reach its
/// Hermite rows ([`Block`]), at least: each is stated in the certificate,
/// and more of them shorten every coefficient. Measured at 50 digits (146
/// columns): 15, 20, 30, 45 and 60 gave about 262, 263, 270, 280 and 298 KB
/// for the block's rows and combinations.
const SHORT_EXTRA: usize = 24;

/// A wider block takes one more row per this many columns, when that is
/// more than [`SHORT_EXTRA`]. Measured at 60 digits (290 columns, the
/// `bench_d 60 real` discriminant): 24, 48, 64 and 96 more rows gave 826,
/// 743, 763 and 830 KB for the combinations of its Hermite rows (the
/// coefficients over the chosen independent rows stay near 17 bits
/// whatever the number).
const SHORT_EXTRA_PER: usize = 6;

/// Rows on the essential block the short path gathers before its last
/// solve, once `h* R*` is confirmed, per essential column; 0 keeps the
/// rule that stops when the dense block no longer shrinks. Each row the
/// dense block keeps costs a combination of about as many terms as it has
/// columns, so its share of the certificate goes as the square of its
/// width; more rows leave more columns a light unit pivot. Measured at 60
/// digits (1500 columns; the dense block after 5472, 9472, 13472, 17472,
/// 21472, 25472 and 29472 rows: 293, 265, 246, 243, 220, 224 and 210
/// columns; certificates of 2.55 MB when the block stopped shrinking at
/// 6222 rows, 2.35 MB at 10722 rows and 2.03 MB at 29472).
fn spare_rows_per_column(bits: u32) -> usize {
    if bits >= 190 {
        20
    } else {
        0
    }
}

/// The block's kernel vectors offered to the unit search: the last of its
/// reduced lattice, which are the long ones (the short ones are trivial
/// units).
const KERNEL_UNITS: usize = 2;

/// Hermite rows represented first and then taken in as rows of large
/// height ([`Block::represent`]). Measured at 50 digits with 30 more rows:
/// 0, 2, 4 and 8 left the later coefficients at about 70, 25, 16 and 14
/// bits.
const HEIGHTS: usize = 6;

/// The essential block solved for the sieve's larger sizes: unit pivots
/// by the structured elimination as in [`Algebra`], then the dense block
/// as a [`Block`]: its Hermite rows and its kernel vectors in short
/// combinations of a few of its rows, which are named.
struct ShortAlgebra {
    unit_pivots: Vec<(usize, Row)>,
    dense_cols: Vec<usize>,
    derived: Derived,
    /// `None` when the dense block's rows do not have full rank (or no
    /// choice of them had a cyclic cokernel).
    block: Option<Block>,
    /// The rows the block uses, named (each combination a single term).
    used: Vec<Row>,
    /// Kernel vectors over raw and derived relations: the rows that
    /// vanished in the elimination, then the block's.
    kernel: Vec<Vector>,
    vanished: usize,
}

/// `Σ coef·rows[pos].combo` (the rows named, so one term each).
fn combine(rows: &[&Row], c: &[(usize, Integer)]) -> Vector {
    let mut out = Vector::new();
    for (pos, coef) in c {
        axpy(&mut out, coef, &rows[*pos].combo);
    }
    out
}

impl ShortAlgebra {
    fn solve(k: usize, raw: usize, rows: Vec<Row>) -> ShortAlgebra {
        let rows: Vec<Row> = rows.into_iter().filter(|r| !r.combo.is_empty()).collect();
        let mut derived = Derived::new(raw);
        let Eliminated {
            sge,
            mut active,
            vanished,
        } = match tracked::eliminate(k, &rows, &mut derived) {
            Some(e) => e,
            None => Sge::run_with(k, rows, &mut |p| derived.name(p)),
        };
        let dense_cols = sge.remaining();
        let mut kernel: Vec<Vector> = vanished
            .into_iter()
            .map(|r| r.combo)
            .filter(|c| !c.is_empty())
            .collect();
        let vanished = kernel.len();
        let unit_pivots = sge
            .pivots
            .into_iter()
            .map(|(c, p)| {
                if p.v[&c] < 0 {
                    (c, p.lin(&Integer::from(-1), &p, &Integer::new()))
                } else {
                    (c, p)
                }
            })
            .collect();
        // rows with short combinations and small entries first: those
        // chosen are stated in full
        let weight = |r: &Row| -> (usize, Integer) {
            (r.combo.len(), r.v.values().map(|x| x.clone().abs()).sum())
        };
        active.sort_by_cached_key(weight);
        let dense: Option<Vec<Vec<i64>>> = active
            .iter()
            .map(|r| {
                dense_cols
                    .iter()
                    .map(|c| r.v.get(c).map_or(Some(0), |x| x.to_i64()))
                    .collect()
            })
            .collect();
        let kd = dense_cols.len();
        let extra = SHORT_EXTRA
            .max(kd / SHORT_EXTRA_PER)
            .min(active.len().saturating_sub(kd));
        let block = dense.and_then(|m| Block::new(&m, kd, extra));
        let mut used = Vec::new();
        if let Some(b) = &block {
            for &i in &b.used {
                let mut r = active[i].clone();
                derived.name(&mut r);
                used.push(r);
            }
            let refs: Vec<&Row> = used.iter().collect();
            // The reduced lattice's vectors are short, and a short kernel
            // vector is the trivial unit: its logarithm, a sum of
            // coefficients times heights of some 2^6, lies far below R.
            // One direction is as long as R over those heights, and its
            // last vectors are the ones that reach units: the last
            // [`KERNEL_UNITS`], last first.
            if let Some(ks) = b.kernel() {
                kernel.extend(
                    ks.iter()
                        .rev()
                        .take(KERNEL_UNITS)
                        .map(|c| combine(&refs, c)),
                );
            }
        }
        ShortAlgebra {
            unit_pivots,
            dense_cols,
            derived,
            block,
            used,
            kernel,
            vanished,
        }
    }

    fn full_rank(&self) -> bool {
        self.block.is_some()
    }

    fn h_star(&self) -> Integer {
        self.block
            .as_ref()
            .map_or_else(Integer::new, |b| b.index.clone())
    }

    /// Kernel vector `j` over the raw relations.
    fn kernel_vector(&mut self, j: usize) -> Vector {
        self.derived.expand(&self.kernel[j])
    }

    /// As [`Algebra::cheapest`].
    fn cheapest(&mut self, range: std::ops::Range<usize>, count: usize) -> Vec<usize> {
        let mut order: Vec<(u64, usize)> = range
            .map(|j| {
                let bits: u64 = self
                    .kernel_vector(j)
                    .values()
                    .map(|e| u64::from(e.significant_bits()) + 1)
                    .sum();
                (bits, j)
            })
            .collect();
        order.sort_unstable();
        order.into_iter().take(count).map(|(_, j)| j).collect()
    }

    /// The generators, the rows of `H` over the essential block, the
    /// eliminations (dense columns from the last back, then the unit
    /// pivots, last first) and the derived relations they rest on. The
    /// Hermite rows taken in as rows of large height are named too, in
    /// order.
    fn finish(mut self) -> Result<Finished, ProveError> {
        let failed = || ProveError::SearchFailed("the dense block's combinations failed".into());
        let mut block = self.block.take().ok_or_else(failed)?;
        let herm = block.hermite().ok_or_else(failed)?;
        let kd = self.dense_cols.len();
        let combos = block.represent(&herm, HEIGHTS).ok_or_else(failed)?;
        let mut targets: Vec<Row> = Vec::with_capacity(kd);
        for (j, (h, c)) in herm.iter().zip(&combos).enumerate() {
            let v: Vector = h
                .iter()
                .enumerate()
                .filter(|(_, x)| !x.is_zero())
                .map(|(i, x)| (self.dense_cols[i], x.clone()))
                .collect();
            let refs: Vec<&Row> = self.used.iter().chain(&targets).collect();
            let mut row = Row {
                v,
                combo: combine(&refs, c),
            };
            if j < HEIGHTS {
                self.derived.name(&mut row);
            }
            targets.push(row);
        }
        let gpos: Vec<usize> = (0..kd).filter(|&j| herm[j][j] > 1).collect();
        let gens: Vec<usize> = gpos.iter().map(|&j| self.dense_cols[j]).collect();
        let h_rows: Vec<Row> = gpos.iter().map(|&j| targets[j].clone()).collect();
        let elimination_rows: Vec<(usize, Row)> = (0..kd)
            .rev()
            .filter(|j| !gpos.contains(j))
            .map(|j| (self.dense_cols[j], targets[j].clone()))
            .chain(self.unit_pivots.iter().rev().cloned())
            .collect();
        Ok(Finished {
            gens,
            h_rows,
            elimination_rows,
            derived: self.derived,
        })
    }
}

/// The essential block solved, by the echelon form or in short
/// combinations.
enum Solved {
    Echelon(Algebra),
    Short(Box<ShortAlgebra>),
}

impl Solved {
    fn full_rank(&self) -> bool {
        match self {
            Solved::Echelon(a) => a.full_rank(),
            Solved::Short(a) => a.full_rank(),
        }
    }

    fn kernel_len(&self) -> usize {
        match self {
            Solved::Echelon(a) => a.kernel_len(),
            Solved::Short(a) => a.kernel.len(),
        }
    }

    /// How many of the kernel vectors are rows that vanished (offered
    /// first).
    fn vanished(&self) -> usize {
        match self {
            Solved::Echelon(a) => a.dense.kernel.len(),
            Solved::Short(a) => a.vanished,
        }
    }

    fn kernel_vector(&mut self, j: usize) -> Vector {
        match self {
            Solved::Echelon(a) => a.kernel_vector(j),
            Solved::Short(a) => a.kernel_vector(j),
        }
    }

    fn cheapest(&mut self, range: std::ops::Range<usize>, count: usize) -> Vec<usize> {
        match self {
            Solved::Echelon(a) => a.cheapest(range, count),
            Solved::Short(a) => a.cheapest(range, count),
        }
    }

    fn h_star(&self) -> Integer {
        match self {
            Solved::Echelon(a) => a.h_star(),
            Solved::Short(a) => a.h_star(),
        }
    }

    fn forget_expansions(&mut self) {
        match self {
            Solved::Echelon(a) => a.derived.forget_expansions(),
            Solved::Short(a) => a.derived.forget_expansions(),
        }
    }

    fn dense_len(&self) -> usize {
        match self {
            Solved::Echelon(a) => a.dense_cols.len(),
            Solved::Short(a) => a.dense_cols.len(),
        }
    }

    /// Dense columns whose pivot is above 1.
    fn dense_gens(&self) -> usize {
        match self {
            Solved::Echelon(a) => a
                .dense_cols
                .iter()
                .filter(|&&c| a.dense.diagonal(c) > 1)
                .count(),
            // every column of the block costs combinations: none is cheap
            Solved::Short(_) => 0,
        }
    }
}

/// Whether every essential column `0..k` has a nonzero entry in some row.
fn covers(rows: &[Row], k: usize) -> bool {
    let mut seen = vec![false; k];
    for r in rows {
        for &c in r.v.keys() {
            if let Some(s) = seen.get_mut(c) {
                *s = true;
            }
        }
    }
    seen.into_iter().all(|s| s)
}

/// Raw relation `j` on the essential block `0..k`: its ideals beyond the
/// block replaced by their eliminations, largest first, with the
/// combination of raw relations that gives it.
fn substitute(j: usize, raws: &[Raw], elim_of: &[Option<usize>], k: usize) -> Row {
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
}

/// The ideal a relation of the sieve eliminates, if any: its largest
/// index, when that lies beyond the essential block `0..k` and its
/// exponent there is `±1` (its support then lies below it, and the
/// eliminations are checked in increasing order).
fn eliminates(rel: &FoundRelation, k: usize) -> Option<usize> {
    let (&i, &e) = rel.exponents.iter().next_back()?;
    (i >= k && e.abs() == 1).then_some(i)
}

/// `rel` with the sign that makes its exponent at `i` `+1`: `−ᾱ = (−x +
/// y√D)/2` generates the conjugate ideal, whose exponents are the negated
/// ones.
fn oriented(mut rel: FoundRelation, i: usize) -> FoundRelation {
    if rel.exponents.get(&i) == Some(&-1) {
        rel.exponents.values_mut().for_each(|e| *e = -*e);
        if let Some(el) = rel.element.as_mut() {
            el.x = -el.x.clone();
        }
    }
    rel
}

/// The terms of every combination in `lattice`: its eliminations', its
/// derived relations' and its rows of `H`.
fn all_terms(lattice: &mut Lattice) -> Vec<&mut Vec<(u32, Integer)>> {
    let mut out = Vec::new();
    let relations = lattice
        .eliminations
        .iter_mut()
        .map(|e| &mut e.relation)
        .chain(lattice.derived_relations.iter_mut().flatten());
    for r in relations {
        if let Witness::Combination { terms } = &mut r.witness {
            out.push(terms);
        }
    }
    if let Witness::Combinations { rows } = &mut lattice.relation_witness {
        out.extend(rows.iter_mut());
    }
    out
}

/// Drops the raw relations that no combination names and renumbers the
/// rest, and the derived relations after them (the order is kept, so terms
/// stay increasing). The sieve hands out more relations than the
/// certificate rests on: those spent on the unit search, and those that
/// only made the structured elimination's choice.
fn drop_unnamed_raws(lattice: &mut Lattice) {
    let Some(raw) = lattice.raw_relations.take() else {
        return;
    };
    let r = raw.len();
    let mut named = vec![false; r];
    for terms in all_terms(lattice) {
        for (i, _) in terms.iter() {
            if let Some(slot) = named.get_mut(*i as usize) {
                *slot = true;
            }
        }
    }
    let mut new_index = vec![0u32; r];
    let mut kept = Vec::new();
    for (i, rel) in raw.into_iter().enumerate() {
        if named[i] {
            new_index[i] = kept.len() as u32;
            kept.push(rel);
        }
    }
    let shift = (r - kept.len()) as u32;
    for terms in all_terms(lattice) {
        for (i, _) in terms.iter_mut() {
            *i = match new_index.get(*i as usize) {
                Some(&j) => j,
                None => *i - shift,
            };
        }
    }
    lattice.raw_relations = Some(kept);
}

pub fn prove_real(d: &Integer, opts: &Options) -> Result<Body, ProveError> {
    let mut setup = setup(d, opts, 0)?;
    let progress = std::mem::replace(&mut setup.progress, Progress::new(false));
    let fb = &setup.fb;
    let n = fb.len();
    let params = (d.significant_bits() >= SIEVE_MIN_BITS).then(|| Params::for_real(d, n));
    let k = match &params {
        Some(p) => p.primes.min(n),
        None => essential_count(fb, d),
    };
    let sieving = params.is_some();
    // the larger sieve sizes: short combinations, eliminations harvested
    let short = sieving && d.significant_bits() >= SHORT_MIN_BITS;
    let first_batch = match &params {
        Some(_) => k * SIEVE_FIRST_PERCENT / 100,
        None => k.max(8),
    };
    progress.phase(&format!(
        "factor base of {n} prime ideals ({k} essential): eliminating the others"
    ));
    let mut search;
    let mut sieve;
    let source: &mut dyn RelationSource = if let Some(params) = params {
        sieve = SiqsSource::new(d, fb, params, opts.seed);
        sieve.resume(opts.resume.as_deref(), &progress)?;
        &mut sieve
    } else {
        search = ElementSearch::new(d, fb, k, opts.seed);
        &mut search
    };
    let mut raws: Vec<Raw> = Vec::new();
    let mut elim_of: Vec<Option<usize>> = vec![None; n];
    if !short {
        for (i, rel) in (k..n).zip(eliminations(source, fb, k, &progress)?) {
            elim_of[i] = Some(raws.len());
            raws.push(Raw::from_found(rel)?);
        }
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
    // (the eliminations come first when they are found first)
    let first_row = if short { 0 } else { n - k };
    let mut rows: Vec<Row> = (first_row..raws.len())
        .map(|j| substitute(j, &raws, &elim_of, k))
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
    let mut batch = first_batch;
    // the sieve path: the dense block's size after the previous solve
    let mut last_dense: Option<usize> = None;
    let spare_rows = if short {
        spare_rows_per_column(d.significant_bits()) * k
    } else {
        0
    };
    let alg = loop {
        let found = source.relations(batch, RELATION_ATTEMPTS).relations;
        if found.len() < batch {
            if let Some(e) = source.take_error() {
                return Err(e.into());
            }
            return Err(ProveError::SearchFailed(
                "relation search exhausted its attempts".into(),
            ));
        }
        if short && raws.len() <= k {
            // The first batch: each relation whose largest ideal lies
            // beyond the essential block with exponent ±1 eliminates it (the
            // first such one, in order); a special-q relation for each
            // ideal left.
            let first = raws.len();
            // the lightest candidate for each ideal (the first on a tie):
            // its entries are stated twice, as a raw relation and as the
            // elimination
            let mut best: BTreeMap<usize, usize> = BTreeMap::new();
            for (t, rel) in found.iter().enumerate() {
                if let Some(i) = eliminates(rel, k) {
                    let e = best.entry(i).or_insert(t);
                    if rel.exponents.len() < found[*e].exponents.len() {
                        *e = t;
                    }
                }
            }
            let mut rest = Vec::with_capacity(found.len());
            for (t, rel) in found.into_iter().enumerate() {
                match eliminates(&rel, k).filter(|i| best.get(i) == Some(&t)) {
                    Some(i) => {
                        elim_of[i] = Some(raws.len());
                        raws.push(Raw::from_found(oriented(rel, i))?);
                    }
                    None => rest.push(rel),
                }
            }
            let missing: Vec<usize> = (k..n).filter(|&i| elim_of[i].is_none()).collect();
            progress.phase(&format!(
                "{} relations eliminate {} of the {} ideals beyond the essential block: special-q relations for the other {}",
                raws.len() - first + rest.len(),
                n - k - missing.len(),
                n - k,
                missing.len()
            ));
            for (t, chunk) in missing.chunks(ELIMINATION_CHUNK).enumerate() {
                progress.tick((t * ELIMINATION_CHUNK) as u64, Some(missing.len() as u64));
                for (&i, e) in chunk
                    .iter()
                    .zip(source.eliminations_for(chunk, ELIMINATION_ATTEMPTS))
                {
                    let Some(e) = e else {
                        return Err(ProveError::SearchFailed(format!(
                            "no elimination relation found for p = {}",
                            fb.primes[i]
                        )));
                    };
                    elim_of[i] = Some(raws.len());
                    raws.push(Raw::from_found(e)?);
                }
            }
            progress.phase("relations on the essential block, until h* R* is confirmed");
            for rel in rest {
                raws.push(Raw::from_found(rel)?);
                rows.push(substitute(raws.len() - 1, &raws, &elim_of, k));
            }
        } else {
            for rel in found {
                raws.push(Raw::from_found(rel)?);
                rows.push(substitute(raws.len() - 1, &raws, &elim_of, k));
                progress.tick(raws.len() as u64, None);
            }
        }
        batch = (k / 4).max(4);
        if raws.len() > max_relations + n {
            return Err(ProveError::SearchFailed(format!(
                "{} relations did not determine the class group and regulator; try another --seed",
                raws.len()
            )));
        }
        // a column no row touches cannot be full rank (the sieve's largest
        // primes are rare): more relations first, no solve
        if sieving && !covers(&rows, k) {
            continue;
        }
        let mut alg = if short {
            Solved::Short(Box::new(ShortAlgebra::solve(k, raws.len(), rows.clone())))
        } else {
            Solved::Echelon(Algebra::solve(k, raws.len(), rows.clone()))
        };
        if !alg.full_rank() || alg.kernel_len() == 0 {
            continue;
        }
        let h_star = alg.h_star();
        if !confirmed {
            let fs = factors(&raws);
            // whether h* R* lies below the ceiling, R* from the unit `u`
            let below_ceiling = |u: &Vector| -> bool {
                let terms: Vec<(usize, Integer)> = u.iter().map(|(i, e)| (*i, e.clone())).collect();
                let log_r = units::log_power_product(d, &fs, &terms)
                    .map(|l| l.abs().to_f64())
                    .unwrap_or(f64::INFINITY);
                let log_hr = Interval::int(&h_star)
                    .ln()
                    .map(|l| l.hi.to_f64())
                    .unwrap_or(f64::INFINITY)
                    + log_r.ln();
                // a margin for the rigorous check that follows
                log_hr < setup.ceiling.to_f64() - 1e-9
            };
            let as_terms = |kv: &Vector| -> Vec<(usize, Integer)> {
                kv.iter().map(|(i, e)| (*i, e.clone())).collect()
            };
            if sieving {
                // The kernel vectors are long and their logarithms huge
                // multiples of R, so each step of the real gcd is costly:
                // the cheapest first, one at a time, until R* is confirmed
                // (two or three usually do). The rows that vanished come
                // first (the echelon form's trial alone leaves 8 when the
                // block has full rank): the spare rows' units, reduced
                // against an echelon form whose quotients multiply, have
                // 30 to 45 times their coefficient bits at 30 and 40
                // digits, every one of them, and are reduced only if the
                // vanished rows do not do.
                let vanished = alg.vanished();
                let mut offered = 0;
                for range in [0..vanished, vanished..alg.kernel_len()] {
                    if confirmed || offered == KERNEL_PER_ROUND {
                        break;
                    }
                    for j in alg.cheapest(range, KERNEL_PER_ROUND - offered) {
                        offered += 1;
                        let kv = alg.kernel_vector(j);
                        let cands: Vec<Vec<(usize, Integer)>> =
                            unit.iter().chain([&kv]).map(as_terms).collect();
                        if let Some(g) = units::unit_gcd(d, &fs, &cands) {
                            unit = Some(g.into_iter().collect());
                        }
                        if unit.as_ref().is_some_and(below_ceiling) {
                            confirmed = true;
                            break;
                        }
                    }
                }
            } else {
                // the current unit and kernel vectors spread over the kernel
                let step = alg.kernel_len().div_ceil(KERNEL_PER_ROUND).max(1);
                let spread: Vec<Vector> = (0..alg.kernel_len())
                    .step_by(step)
                    .map(|j| alg.kernel_vector(j))
                    .collect();
                let cands: Vec<Vec<(usize, Integer)>> =
                    unit.iter().chain(&spread).map(as_terms).collect();
                if let Some(g) = units::unit_gcd(d, &fs, &cands) {
                    unit = Some(g.into_iter().collect());
                }
                confirmed = unit.as_ref().is_some_and(below_ceiling);
            }
            alg.forget_expansions();
            if unit.is_none() {
                continue;
            }
        }
        if spare_rows > 0 && confirmed {
            if rows.len() < spare_rows {
                batch = spare_rows - rows.len();
                progress.phase(&format!(
                    "h* R* confirmed: {batch} more relations to shrink the dense block of {} columns",
                    alg.dense_len()
                ));
                continue;
            }
            break alg;
        }
        // Columns left to the echelon block carry long combinations into
        // the certificate; more relations give more unit pivots.
        let dense_gens = alg.dense_gens();
        // the sieve's relations leave a few dozen columns whatever their
        // number: stop once the block no longer shrinks
        let stalled = sieving && last_dense.is_some_and(|l| alg.dense_len() >= l);
        last_dense = Some(alg.dense_len());
        let dense_ok =
            alg.dense_len() <= dense_gens + DENSE_SLACK || raws.len() > dense_budget + n || stalled;
        if confirmed && dense_ok {
            break alg;
        }
    };
    let fin = match alg {
        Solved::Echelon(alg) => alg.finish(),
        Solved::Short(alg) => alg.finish()?,
    };
    let extra: Vec<Elimination> = (k..n)
        .map(|i| {
            let r = elim_of[i].expect("every large prime has an elimination");
            Elimination {
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
            }
        })
        .collect();
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
    let (claim, mut lattice) = lattice_and_claim(fin, extra, raw_relations)?;
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
    if short {
        drop_unnamed_raws(&mut lattice);
    }
    let units = Units {
        steps,
        norm: if chain.norm_negative { -1 } else { 1 },
        regulator: crate::setup::to_bounds(&regulator)
            .ok_or_else(|| ProveError::SearchFailed("regulator out of range".into()))?,
    };
    progress.say(&format!(
        "class number {}, regulator {}",
        claim.class_number,
        classcert_verifier::report::decimal(&regulator)
    ));
    Ok(setup.body(d, opts, claim, lattice, Some(units)))
}
