//! Structured Gaussian elimination (B. A. LaMacchia and A. M. Odlyzko,
//! "Solving large sparse linear systems over finite fields", CRYPTO '90),
//! used here over Z with unit pivots only: a relation with coefficient ±1
//! at column `j` expresses ideal `j` through the others, so column `j`
//! leaves the dense part (the Hermite form for `D < 0`, the echelon form
//! for `D > 0`). Pivot rows become eliminations in the certificate, in
//! reverse order of elimination (each one's support is then already
//! accounted for when the verifier reaches it).
//!
//! One routine serves both drivers; they differ only in the row type
//! ([`PivotRow`]):
//! - `D < 0`: a plain exponent vector ([`Sparse`]) with word-size entries;
//!   each relation is its own witness, so a row that outgrows
//!   [`MAX_ENTRY`] is dropped (the lattice only shrinks, and the analytic
//!   check decides whether enough is left) and a row that vanishes says
//!   nothing;
//! - `D > 0`: a row with exact entries that carries the combination of
//!   relations it stands for ([`super::echelon::Row`]), because the
//!   certificate states every derived relation as such a combination; a
//!   row that vanishes is a unit, so vanished rows are handed back. Each
//!   pivot row is named when it is chosen ([`Sge::run_with`],
//!   [`super::derived`]), so the rows it is subtracted from name it
//!   instead of copying its combination.

use crate::relations::Sparse;
use std::cmp::Reverse;
use std::collections::{BTreeSet, BinaryHeap};

/// Rows heavier than this are not used as pivots (they would fill in),
/// unless the caller asks for another limit ([`Sge::run_heavier`]).
pub const MAX_PIVOT_WEIGHT: usize = 128;
/// Entries beyond this size stop a plain row from taking part.
pub const MAX_ENTRY: i64 = 1 << 40;

/// What the elimination needs of a row.
pub trait PivotRow {
    /// The columns with a nonzero entry, ascending.
    fn columns(&self) -> impl Iterator<Item = usize> + '_;
    /// The columns whose entry is `±1`, ascending.
    fn unit_columns(&self) -> impl Iterator<Item = usize> + '_;
    /// The number of nonzero entries.
    fn weight(&self) -> usize;
    fn has(&self, c: usize) -> bool;
    fn is_zero(&self) -> bool;
    /// Clears column `c` with `pivot`, whose entry there is `±1`, changing
    /// no entry outside `pivot`'s columns; `false` when the row can no
    /// longer be held (it is then dropped).
    fn eliminate(&mut self, c: usize, pivot: &Self) -> bool;
}

impl PivotRow for Sparse {
    fn columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.keys().copied()
    }

    fn unit_columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.iter().filter(|(_, x)| x.abs() == 1).map(|(&c, _)| c)
    }

    fn weight(&self) -> usize {
        self.len()
    }

    fn has(&self, c: usize) -> bool {
        self.contains_key(&c)
    }

    fn is_zero(&self) -> bool {
        self.is_empty()
    }

    fn eliminate(&mut self, c: usize, pivot: &Self) -> bool {
        let (Some(&x), Some(&s)) = (self.get(&c), pivot.get(&c)) else {
            return true;
        };
        let f = x * s;
        for (&j, &y) in pivot {
            let Some(t) = f.checked_mul(y) else {
                return false;
            };
            let e = self.entry(j).or_insert(0);
            let Some(n) = e.checked_sub(t) else {
                return false;
            };
            if n.abs() > MAX_ENTRY {
                return false;
            }
            *e = n;
            if n == 0 {
                self.remove(&j);
            }
        }
        true
    }
}

/// The pivots taken, in order of elimination.
pub struct Sge<R> {
    pub k: usize,
    /// (column, pivot row) in order of elimination.
    pub pivots: Vec<(usize, R)>,
    pub pivoted: Vec<bool>,
}

/// What the elimination leaves.
pub struct Eliminated<R> {
    pub sge: Sge<R>,
    /// Rows left, supported on the columns that were not pivoted, in the
    /// order they were given.
    pub active: Vec<R>,
    /// Rows that became zero (or were zero), in the order they did.
    pub vanished: Vec<R>,
}

/// A candidate pivot's rank, smaller first: `(cost, w, i, c)` for the unit
/// entry of row `i` (weight `w`) at column `c`, or `(0, 0, i, c)` when it
/// is cost-free, so that a cost-free entry goes before any other and the
/// first row with one wins whatever its weight.
type Key = (usize, usize, usize, usize);

fn pivot_key(w: usize, n: usize, i: usize, c: usize) -> Key {
    let cost = (w - 1) * (n - 1);
    if cost == 0 {
        (0, 0, i, c)
    } else {
        (cost, w, i, c)
    }
}

/// Which of `prow`'s columns `r` has, in `prow`'s order: by one pass over
/// both rows' columns (in increasing order), or by a lookup per column when
/// `r` is much the heavier row.
fn presence<R: PivotRow>(prow: &R, r: &R) -> Vec<bool> {
    if r.weight() > 8 * prow.weight() {
        return prow.columns().map(|c| r.has(c)).collect();
    }
    let mut out = Vec::with_capacity(prow.weight());
    let mut theirs = r.columns().peekable();
    for c in prow.columns() {
        while theirs.next_if(|&x| x < c).is_some() {}
        out.push(theirs.next_if_eq(&c).is_some());
    }
    out
}

/// The live rows by column, with each column's best candidate pivot kept
/// up to date, so that choosing a pivot costs a lookup and a step costs
/// work in proportion to what it changes: a row that a pivot row is
/// subtracted from changes only on the pivot row's columns (at most
/// [`MAX_PIVOT_WEIGHT`] of them), however heavy the row itself is.
///
/// Within one column `c` holding `n` rows, the key of a candidate is
/// `pivot_key(w, n, i, c)`, increasing in `(w, i)`: rows of weight 1 are
/// cost-free and ordered by `i`, heavier rows cost `(w - 1)(n - 1)`,
/// increasing in `w` (and are all cost-free when `n = 1`, but then the
/// column has a single row). So the column's best candidate is the least
/// `(w, i)` among its rows with a unit entry there, and the best pivot
/// overall is the least of the columns' best keys.
///
/// Almost every row a pivot is subtracted from changes its weight, and so
/// its key in each column where it has a unit entry (dozens). So nothing
/// is taken out when a row changes or leaves: every key carries the
/// version of its row when it was put, and stands only while the row has
/// that version (taking a row out starts a new one). A column's keys are a
/// heap whose top is dropped while it is stale, and which is rebuilt from
/// its standing keys once it holds twice as many keys as the column has
/// rows. A column's best key in `order` can then be stale too, but only
/// too small (a better key comes from a row put back or from a row leaving
/// the column, and both mark the column for [`Columns::settle`]), so
/// [`Columns::first`] brings the first column of `order` up to date until
/// its key stands: the least key of all, as if every change had been
/// settled at once.
struct Columns {
    /// Live rows with an entry in each column.
    rows: Vec<BTreeSet<usize>>,
    /// Rows heavier than this are no candidates.
    max_weight: usize,
    /// `(w, i, version)` for the live rows of weight `w <= max_weight`
    /// with a unit entry in each column, and stale keys (see above).
    units: Vec<BinaryHeap<Reverse<(usize, usize, u32)>>>,
    /// Each row's version.
    version: Vec<u32>,
    /// Each column's best key, as it stands in `order`, and the version
    /// of its row then.
    best: Vec<Option<(Key, u32)>>,
    order: BTreeSet<Key>,
    /// Columns changed since the last [`Columns::settle`].
    dirty: Vec<usize>,
    is_dirty: Vec<bool>,
}

impl Columns {
    fn new(k: usize, rows: usize, max_weight: usize) -> Columns {
        Columns {
            max_weight,
            rows: vec![BTreeSet::new(); k],
            units: vec![BinaryHeap::new(); k],
            version: vec![0; rows],
            best: vec![None; k],
            order: BTreeSet::new(),
            dirty: Vec::new(),
            is_dirty: vec![false; k],
        }
    }

    fn touch(&mut self, c: usize) {
        if !self.is_dirty[c] {
            self.is_dirty[c] = true;
            self.dirty.push(c);
        }
    }

    /// Row `i` becomes a candidate at its unit entries, if light enough.
    fn put_units<R: PivotRow>(&mut self, i: usize, r: &R) {
        let w = r.weight();
        if w <= self.max_weight {
            let v = self.version[i];
            for c in r.unit_columns() {
                self.units[c].push(Reverse((w, i, v)));
                self.touch(c);
            }
        }
    }

    /// Undoes [`Columns::put_units`] for row `i`: its keys stop standing.
    fn take_units(&mut self, i: usize) {
        self.version[i] += 1;
    }

    fn insert<R: PivotRow>(&mut self, i: usize, r: &R) {
        for c in r.columns() {
            self.rows[c].insert(i);
            self.touch(c);
        }
        self.put_units(i, r);
    }

    /// Takes out row `i`, which must be as it was inserted.
    fn remove<R: PivotRow>(&mut self, i: usize, r: &R) {
        for c in r.columns() {
            self.rows[c].remove(&i);
            self.touch(c);
        }
        self.take_units(i);
    }

    /// Row `i`, whose units were taken out, has had `prow` subtracted from
    /// it; `had` says which of `prow`'s columns it had before.
    fn amend<R: PivotRow>(&mut self, i: usize, r: &R, prow: &R, had: &[bool]) {
        for ((c, &h), has) in prow.columns().zip(had).zip(presence(prow, r)) {
            if h != has {
                if h {
                    self.rows[c].remove(&i);
                } else {
                    self.rows[c].insert(i);
                }
                self.touch(c);
            }
        }
        debug_assert!(r.columns().all(|c| self.rows[c].contains(&i)));
        self.put_units(i, r);
    }

    /// Row `i`, whose units were taken out, leaves after `prow` was (or
    /// was being) subtracted from it; `had` as for [`Columns::amend`].
    fn forget<R: PivotRow>(&mut self, i: usize, r: &R, prow: &R, had: &[bool]) {
        // outside `prow`'s columns the row is as it was inserted
        let now = r.columns();
        let before = prow.columns().zip(had).filter(|&(_, &h)| h).map(|(c, _)| c);
        for c in now.chain(before) {
            if self.rows[c].remove(&i) {
                self.touch(c);
            }
        }
    }

    /// Brings column `c`'s best key up to date.
    fn refresh(&mut self, c: usize) {
        let version = &self.version;
        let stands = |&Reverse((_, i, v)): &Reverse<(usize, usize, u32)>| version[i] == v;
        let heap = &mut self.units[c];
        if heap.len() > 2 * self.rows[c].len() + 32 {
            heap.retain(stands);
        }
        while heap.peek().is_some_and(|k| !stands(k)) {
            heap.pop();
        }
        let best = heap
            .peek()
            .map(|&Reverse((w, i, v))| (pivot_key(w, self.rows[c].len(), i, c), v));
        if best != self.best[c] {
            if let Some((old, _)) = self.best[c] {
                self.order.remove(&old);
            }
            if let Some((new, _)) = best {
                self.order.insert(new);
            }
            self.best[c] = best;
        }
    }

    /// Brings the best keys of the changed columns up to date.
    fn settle(&mut self) {
        for c in std::mem::take(&mut self.dirty) {
            self.is_dirty[c] = false;
            self.refresh(c);
        }
    }

    /// The best pivot `(row, column)`, if any.
    fn first(&mut self) -> Option<(usize, usize)> {
        loop {
            let &(_, _, i, c) = self.order.first()?;
            if self.best[c].is_some_and(|(_, v)| v == self.version[i]) {
                return Some((i, c));
            }
            self.refresh(c);
        }
    }
}

impl<R: PivotRow> Sge<R> {
    /// Eliminates as many of the columns `0..k` as unit pivots allow. The
    /// pivot is the unit entry of least Markowitz cost `(w - 1)(c - 1)`
    /// (`w` the row's weight, `c` the number of rows in its column: the
    /// fill-in its elimination can cause), the lighter row on a tie, the
    /// first row on a further tie, its first such column on a last one;
    /// rows heavier than [`MAX_PIVOT_WEIGHT`] are not used. A cost-free
    /// entry goes first: the first row that has one, at its first such
    /// column, whatever its weight.
    pub fn run(k: usize, rows: Vec<R>) -> Eliminated<R> {
        Self::run_with(k, rows, &mut |_| {})
    }

    /// [`Sge::run`], with `on_pivot` called on each pivot row when it is
    /// chosen, before it is subtracted from the others. It may change what
    /// the row carries besides its entries (the real driver names the row
    /// there, so that the rows it is subtracted from refer to it by name),
    /// but not the entries: the choice of pivots is the same.
    pub fn run_with(k: usize, rows: Vec<R>, on_pivot: &mut dyn FnMut(&mut R)) -> Eliminated<R> {
        Self::run_heavier(k, rows, MAX_PIVOT_WEIGHT, on_pivot)
    }

    /// [`Sge::run_with`] with pivot rows of weight up to `max_weight`:
    /// more columns leave the dense block, whose rows then have larger
    /// entries (at 60 digits, D < 0: 512 leaves 570 columns where 128
    /// leaves 690, and the Hermite form's cost goes as the cube).
    pub fn run_heavier(
        k: usize,
        rows: Vec<R>,
        max_weight: usize,
        on_pivot: &mut dyn FnMut(&mut R),
    ) -> Eliminated<R> {
        let mut vanished = Vec::new();
        let mut rows: Vec<Option<R>> = rows
            .into_iter()
            .filter_map(|r| {
                if r.is_zero() {
                    vanished.push(r);
                    None
                } else {
                    Some(Some(r))
                }
            })
            .collect();
        let mut cols = Columns::new(k, rows.len(), max_weight);
        for (i, r) in rows.iter().enumerate() {
            if let Some(r) = r {
                cols.insert(i, r);
            }
        }
        cols.settle();
        let mut s = Sge {
            k,
            pivots: Vec::new(),
            pivoted: vec![false; k],
        };
        while let Some((pi, pc)) = cols.first() {
            let mut prow = rows[pi].take().expect("a candidate pivot's row is live");
            cols.remove(pi, &prow);
            on_pivot(&mut prow);
            let others: Vec<usize> = cols.rows[pc].iter().copied().collect();
            for oi in others {
                let Some(mut r) = rows[oi].take() else {
                    continue;
                };
                cols.take_units(oi);
                let had = presence(&prow, &r);
                if r.eliminate(pc, &prow) && !r.has(pc) {
                    if r.is_zero() {
                        cols.forget(oi, &r, &prow, &had);
                        vanished.push(r);
                    } else {
                        cols.amend(oi, &r, &prow, &had);
                        rows[oi] = Some(r);
                    }
                } else {
                    // a row that overflowed is dropped: the lattice only
                    // shrinks, and the analytic check decides whether
                    // enough is left
                    cols.forget(oi, &r, &prow, &had);
                }
            }
            cols.settle();
            s.pivoted[pc] = true;
            s.pivots.push((pc, prow));
        }
        Eliminated {
            sge: s,
            active: rows.into_iter().flatten().collect(),
            vanished,
        }
    }

    /// Brings a new relation onto the unpivoted columns; `None` when it
    /// can no longer be held.
    pub fn reduce(&self, mut v: R) -> Option<R> {
        for (c, prow) in &self.pivots {
            if v.has(*c) && !v.eliminate(*c, prow) {
                return None;
            }
        }
        Some(v)
    }

    /// Columns that remain for the dense part.
    pub fn remaining(&self) -> Vec<usize> {
        (0..self.k).filter(|&c| !self.pivoted[c]).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Rng;

    /// What a reference run saw: pivots taken at cost 0 and at a positive
    /// cost, so the comparison can show it covered both.
    #[derive(Default)]
    struct Seen {
        free: usize,
        costly: usize,
    }

    /// The pivot choice by a full scan of the live rows at every step, as
    /// `Sge::run` first made it: the definition the indexed choice must
    /// reproduce exactly (certificates are byte-identical only if it does).
    fn run_by_scan<R: PivotRow>(k: usize, rows: Vec<R>, seen: &mut Seen) -> Eliminated<R> {
        let mut vanished = Vec::new();
        let mut rows: Vec<Option<R>> = rows
            .into_iter()
            .filter_map(|r| {
                if r.is_zero() {
                    vanished.push(r);
                    None
                } else {
                    Some(Some(r))
                }
            })
            .collect();
        let mut col_rows: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); k];
        for (i, r) in rows.iter().enumerate() {
            if let Some(r) = r {
                for c in r.columns() {
                    col_rows[c].insert(i);
                }
            }
        }
        let mut s = Sge {
            k,
            pivots: Vec::new(),
            pivoted: vec![false; k],
        };
        loop {
            let mut best: Option<(usize, usize, usize, usize)> = None; // (cost, weight, row, col)
            for (i, r) in rows.iter().enumerate() {
                let Some(r) = r else { continue };
                let w = r.weight();
                if w > MAX_PIVOT_WEIGHT {
                    continue;
                }
                for c in r.unit_columns() {
                    let cost = (w - 1) * (col_rows[c].len() - 1);
                    let cand = (cost, w, i, c);
                    if best.is_none_or(|b| (cand.0, cand.1) < (b.0, b.1)) {
                        best = Some(cand);
                    }
                }
                if best.is_some_and(|b| b.0 == 0) {
                    break;
                }
            }
            let Some((cost, _, pi, pc)) = best else { break };
            if cost == 0 {
                seen.free += 1;
            } else {
                seen.costly += 1;
            }
            let Some(prow) = rows[pi].take() else { break };
            for c in prow.columns() {
                col_rows[c].remove(&pi);
            }
            let others: Vec<usize> = col_rows[pc].iter().copied().collect();
            for oi in others {
                let Some(mut r) = rows[oi].take() else {
                    continue;
                };
                for c in r.columns() {
                    col_rows[c].remove(&oi);
                }
                if r.eliminate(pc, &prow) && !r.has(pc) {
                    if r.is_zero() {
                        vanished.push(r);
                    } else {
                        for c in r.columns() {
                            col_rows[c].insert(oi);
                        }
                        rows[oi] = Some(r);
                    }
                }
            }
            s.pivoted[pc] = true;
            s.pivots.push((pc, prow));
        }
        Eliminated {
            sge: s,
            active: rows.into_iter().flatten().collect(),
            vanished,
        }
    }

    /// A random sparse matrix shaped like a relation matrix: columns
    /// skewed towards small indices (small primes are dense), many unit
    /// entries, some empty rows, some rows too heavy to pivot, some
    /// entries large enough that elimination overflows `MAX_ENTRY`.
    fn random_matrix(rng: &mut Rng) -> (usize, Vec<Sparse>) {
        let k = 1 + rng.below(260) as usize;
        let n = rng.below(2 * k as u64 + 2) as usize;
        let mut rows = Vec::with_capacity(n);
        for _ in 0..n {
            let w = match rng.below(20) {
                0 => 0,
                1 if k > MAX_PIVOT_WEIGHT => {
                    MAX_PIVOT_WEIGHT + 1 + rng.below((k - MAX_PIVOT_WEIGHT) as u64) as usize
                }
                _ => 1 + rng.below(8) as usize,
            };
            let mut r = Sparse::new();
            while r.len() < w.min(k) {
                let c = if rng.below(2) == 0 {
                    rng.below(k as u64) as usize
                } else {
                    let m = 1 + rng.below(k as u64);
                    rng.below(m) as usize
                };
                let x: i64 = match rng.below(12) {
                    0..=6 => 1,
                    7..=9 => 2 + rng.below(3) as i64,
                    10 => 1 + rng.below(1000) as i64,
                    _ => (1 << 39) + rng.below(1 << 39) as i64,
                };
                let x = if rng.below(2) == 0 { x } else { -x };
                r.insert(c, x);
            }
            rows.push(r);
        }
        (k, rows)
    }

    #[test]
    fn sge_indexed_choice_equals_scan() {
        let mut rng = Rng::new(2024);
        let mut seen = Seen::default();
        let (mut pivots, mut dropped, mut vanished, mut heavy) = (0, 0, 0, 0);
        for t in 0..400 {
            let (k, rows) = random_matrix(&mut rng);
            heavy += rows.iter().filter(|r| r.len() > MAX_PIVOT_WEIGHT).count();
            let n = rows.len();
            let want = run_by_scan(k, rows.clone(), &mut seen);
            let got = Sge::run(k, rows);
            assert_eq!(got.sge.pivots.len(), want.sge.pivots.len(), "matrix {t}");
            for (step, (g, w)) in got.sge.pivots.iter().zip(&want.sge.pivots).enumerate() {
                assert_eq!(g, w, "matrix {t}, step {step}");
            }
            assert_eq!(got.sge.pivoted, want.sge.pivoted, "matrix {t}");
            assert_eq!(got.active, want.active, "matrix {t}");
            assert_eq!(got.vanished, want.vanished, "matrix {t}");
            pivots += want.sge.pivots.len();
            vanished += want.vanished.len();
            dropped += n - want.sge.pivots.len() - want.active.len() - want.vanished.len();
        }
        // the matrices exercised every branch of the choice and of the
        // elimination
        assert!(
            seen.free > 1000 && seen.costly > 1000,
            "{} {}",
            seen.free,
            seen.costly
        );
        assert!(pivots > 0 && dropped > 0 && vanished > 0 && heavy > 0);
    }
}
