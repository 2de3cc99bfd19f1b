//! Structured Gaussian elimination (B. A. LaMacchia and A. M. Odlyzko,
//! "Solving large sparse linear systems over finite fields", CRYPTO '90),
//! used here over Z with unit pivots only: a relation with coefficient ±1
//! at column `j` expresses ideal `j` through the others, so column `j`
//! leaves the dense Hermite form. Pivot rows become eliminations in the
//! certificate, in reverse order of elimination (each one's support is
//! then already accounted for when the verifier reaches it).

use crate::relations::Sparse;
use std::collections::BTreeSet;

/// Rows heavier than this are not used as pivots (they would fill in).
const MAX_PIVOT_WEIGHT: usize = 128;
/// Entries beyond this size stop a row from taking part.
const MAX_ENTRY: i64 = 1 << 40;

pub struct Sge {
    pub k: usize,
    /// (column, pivot row) in order of elimination.
    pub pivots: Vec<(usize, Sparse)>,
    pub pivoted: Vec<bool>,
}

fn axpy(v: &mut Sparse, f: i64, w: &Sparse) -> bool {
    for (&c, &x) in w {
        let Some(t) = f.checked_mul(x) else {
            return false;
        };
        let e = v.entry(c).or_insert(0);
        let Some(n) = e.checked_sub(t) else {
            return false;
        };
        if n.abs() > MAX_ENTRY {
            return false;
        }
        *e = n;
        if n == 0 {
            v.remove(&c);
        }
    }
    true
}

impl Sge {
    /// Eliminates as many columns as unit pivots allow; returns the active
    /// rows left (supported on the columns that were not pivoted).
    pub fn run(k: usize, rows: Vec<Sparse>) -> (Sge, Vec<Sparse>) {
        let mut rows: Vec<Option<Sparse>> = rows.into_iter().map(Some).collect();
        let mut col_rows: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); k];
        for (i, r) in rows.iter().enumerate() {
            if let Some(r) = r {
                for &c in r.keys() {
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
            // the unit entry of least Markowitz cost (w - 1)(c - 1): w the
            // row's weight, c the number of rows in its column, i.e. the
            // fill-in its elimination can cause; singletons cost nothing
            let mut best: Option<(usize, usize, usize, usize)> = None; // (cost, weight, row, col)
            for (i, r) in rows.iter().enumerate() {
                let Some(r) = r else { continue };
                let w = r.len();
                if w > MAX_PIVOT_WEIGHT {
                    continue;
                }
                for (&c, &x) in r {
                    if x.abs() == 1 {
                        let cost = (w - 1) * (col_rows[c].len() - 1);
                        let cand = (cost, w, i, c);
                        if best.is_none_or(|b| (cand.0, cand.1) < (b.0, b.1)) {
                            best = Some(cand);
                        }
                    }
                }
                if best.is_some_and(|b| b.0 == 0) {
                    break;
                }
            }
            let Some((_, _, pi, pc)) = best else { break };
            let Some(prow) = rows[pi].take() else { break };
            for &c in prow.keys() {
                col_rows[c].remove(&pi);
            }
            let sign = prow[&pc];
            let others: Vec<usize> = col_rows[pc].iter().copied().collect();
            for oi in others {
                let Some(mut r) = rows[oi].take() else {
                    continue;
                };
                for &c in r.keys() {
                    col_rows[c].remove(&oi);
                }
                let f = r[&pc] * sign;
                if axpy(&mut r, f, &prow) && !r.contains_key(&pc) && !r.is_empty() {
                    for &c in r.keys() {
                        col_rows[c].insert(oi);
                    }
                    rows[oi] = Some(r);
                }
                // a row that overflowed is dropped: the lattice only shrinks,
                // and the analytic check decides whether enough is left
            }
            s.pivoted[pc] = true;
            s.pivots.push((pc, prow));
        }
        let active = rows.into_iter().flatten().collect();
        (s, active)
    }

    /// Brings a new relation onto the unpivoted columns; `None` on overflow.
    pub fn reduce(&self, mut v: Sparse) -> Option<Sparse> {
        for (c, prow) in &self.pivots {
            if let Some(&x) = v.get(c) {
                let f = x * prow[c];
                if !axpy(&mut v, f, prow) {
                    return None;
                }
            }
        }
        Some(v)
    }

    /// Columns that remain for the dense Hermite form.
    pub fn remaining(&self) -> Vec<usize> {
        (0..self.k).filter(|&c| !self.pivoted[c]).collect()
    }
}
