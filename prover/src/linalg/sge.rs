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
//! - `D > 0`: a row with exact entries that carries the combination of raw
//!   relations it stands for ([`super::echelon::Row`]), because the
//!   certificate states every derived relation as such a combination; a
//!   row that vanishes is a unit, so vanished rows are handed back.

use crate::relations::Sparse;
use std::collections::BTreeSet;

/// Rows heavier than this are not used as pivots (they would fill in).
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
    /// Clears column `c` with `pivot`, whose entry there is `±1`; `false`
    /// when the row can no longer be held (it is then dropped).
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

impl<R: PivotRow> Sge<R> {
    /// Eliminates as many of the columns `0..k` as unit pivots allow. The
    /// pivot is the unit entry of least Markowitz cost `(w - 1)(c - 1)`
    /// (`w` the row's weight, `c` the number of rows in its column: the
    /// fill-in its elimination can cause), the lighter row on a tie, the
    /// first row on a further tie; a row with a cost-free entry is taken
    /// at once.
    pub fn run(k: usize, rows: Vec<R>) -> Eliminated<R> {
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
            let Some((_, _, pi, pc)) = best else { break };
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
                // a row that overflowed is dropped: the lattice only shrinks,
                // and the analytic check decides whether enough is left
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
