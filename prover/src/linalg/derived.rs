//! Named intermediate relations (`D > 0`): the certificate's derived
//! relations (`docs/certificates.md`, section 3).
//!
//! A row of the elimination carries the combination it stands for. Spelled
//! out over the raw relations, that combination grows with every row
//! subtracted from it (fill-in, and coefficients that multiply), and the
//! certificate would repeat each pivot's expansion in every row it touched.
//! Instead a row that is about to be used again (a pivot of the structured
//! elimination, a row entering the echelon form) is *named*: it becomes
//! derived relation `m`, with index `R + m` after the `R` raw relations,
//! stated once with its entries and its combination, and from then on the
//! row's combination is the single term `{R + m: 1}`. Later combinations
//! name it instead of copying its expansion, and the verifier checks the
//! derived relations in order, each from the ones before it.
//!
//! The unit's logarithm still needs kernel vectors over the raw relations
//! (the elements are there): [`Derived::expand`] spells them out, memoised,
//! for the vectors actually asked for.

use super::echelon::{axpy, Row, Vector};
use rug::Integer;
use std::collections::BTreeSet;

/// The derived relations named so far, in order.
pub struct Derived {
    /// The index of the first derived relation: the number of raw ones.
    first: usize,
    /// `(entries, combination)` of each; a combination names raw relations
    /// (indices below `first`) and earlier derived ones only.
    rels: Vec<(Vector, Vector)>,
    /// Each one's combination over the raw relations, once asked for.
    memo: Vec<Option<Vector>>,
}

impl Derived {
    /// No derived relations yet, after `raw` raw relations.
    pub fn new(raw: usize) -> Derived {
        Derived {
            first: raw,
            rels: Vec::new(),
            memo: Vec::new(),
        }
    }

    /// Names `row`: states it as the next derived relation and makes its
    /// combination the single term naming it. A row whose combination is a
    /// single term already names a relation and is left as it is.
    pub fn name(&mut self, row: &mut Row) {
        if row.combo.len() <= 1 {
            return;
        }
        let id = self.first + self.rels.len();
        let combo = std::mem::replace(&mut row.combo, Vector::from([(id, Integer::from(1))]));
        self.rels.push((row.v.clone(), combo));
        self.memo.push(None);
    }

    /// `v`, a combination of raw and derived relations, as a combination of
    /// raw relations only.
    pub fn expand(&mut self, v: &Vector) -> Vector {
        let mut out = Vector::new();
        for (&id, c) in v {
            match id.checked_sub(self.first) {
                None => axpy(&mut out, c, &Vector::from([(id, Integer::from(1))])),
                Some(m) => {
                    self.fill(m);
                    if let Some(e) = &self.memo[m] {
                        axpy(&mut out, c, e);
                    }
                }
            }
        }
        out
    }

    /// `(entries, combination)` of each derived relation, in order.
    #[cfg(test)]
    pub fn rels(&self) -> &[(Vector, Vector)] {
        &self.rels
    }

    /// Drops the expansions kept so far (they can be large).
    pub fn forget_expansions(&mut self) {
        self.memo.iter_mut().for_each(|m| *m = None);
    }

    /// Expands derived relation `m` and those it rests on, without
    /// recursion: the ones not yet expanded, in increasing order (each
    /// names only earlier ones).
    fn fill(&mut self, m: usize) {
        let mut need = BTreeSet::new();
        let mut stack = vec![m];
        while let Some(x) = stack.pop() {
            if self.memo[x].is_some() || !need.insert(x) {
                continue;
            }
            stack.extend(
                self.rels[x]
                    .1
                    .keys()
                    .filter_map(|&id| id.checked_sub(self.first)),
            );
        }
        for x in need {
            let mut e = Vector::new();
            for (&id, c) in &self.rels[x].1 {
                match id.checked_sub(self.first) {
                    None => axpy(&mut e, c, &Vector::from([(id, Integer::from(1))])),
                    Some(y) => {
                        if let Some(ey) = &self.memo[y] {
                            axpy(&mut e, c, ey);
                        }
                    }
                }
            }
            self.memo[x] = Some(e);
        }
    }

    /// The derived relations that the combinations `used` rest on (named
    /// there, or by one named there, and so on), renumbered in order from
    /// `R`; only these go into the certificate. One that is named only once
    /// is written into the combination that names it instead (stated on
    /// its own it would cost its entries and one more term).
    pub fn keep<'a>(&self, used: impl IntoIterator<Item = &'a Vector>) -> Kept {
        let n = self.rels.len();
        let mut refs = vec![0usize; n];
        let count = |refs: &mut Vec<usize>, v: &Vector| {
            for &id in v.keys() {
                if let Some(m) = id.checked_sub(self.first) {
                    refs[m] += 1;
                }
            }
        };
        for v in used {
            count(&mut refs, v);
        }
        // each names only earlier ones: one pass from the last
        for m in (0..n).rev() {
            if refs[m] > 0 {
                count(&mut refs, &self.rels[m].1);
            }
        }
        let mut kept = Kept {
            first: self.first,
            index: vec![None; n],
            inlined: vec![None; n],
            rels: Vec::new(),
        };
        for m in 0..n {
            if refs[m] == 0 {
                continue;
            }
            // the ones it names are settled: kept (renumbered) or inlined
            let terms = kept.resolve(&self.rels[m].1);
            if refs[m] == 1 {
                kept.inlined[m] = Some(terms);
            } else {
                kept.index[m] = Some(self.first + kept.rels.len());
                kept.rels
                    .push((self.rels[m].0.clone(), kept.terms_of(&terms)));
            }
        }
        kept
    }
}

/// The derived relations a certificate keeps, renumbered.
pub struct Kept {
    first: usize,
    /// The new index of each derived relation that is kept.
    index: Vec<Option<usize>>,
    /// The combination (over raw and kept relations, old indices) written
    /// in place of each derived relation named only once.
    inlined: Vec<Option<Vector>>,
    /// `(entries, terms)` of each kept one, in order, terms renumbered.
    pub rels: Vec<(Vector, Vec<(u32, Integer)>)>,
}

impl Kept {
    /// `v` with the derived relations named only once written out.
    fn resolve(&self, v: &Vector) -> Vector {
        let mut out = Vector::new();
        for (&id, c) in v {
            match id
                .checked_sub(self.first)
                .and_then(|m| self.inlined[m].as_ref())
            {
                Some(w) => axpy(&mut out, c, w),
                None => axpy(&mut out, c, &Vector::from([(id, Integer::from(1))])),
            }
        }
        out
    }

    /// A resolved combination, renumbered (the renumbering keeps the
    /// order, so the terms stay increasing).
    fn terms_of(&self, v: &Vector) -> Vec<(u32, Integer)> {
        v.iter()
            .map(|(&id, c)| {
                let new = match id.checked_sub(self.first) {
                    None => id,
                    Some(m) => self.index[m].expect("a derived relation in use is kept"),
                };
                (new as u32, c.clone())
            })
            .collect()
    }

    /// The combination `v` as the certificate writes it.
    pub fn terms(&self, v: &Vector) -> Vec<(u32, Integer)> {
        self.terms_of(&self.resolve(v))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn vector(v: &[(usize, i64)]) -> Vector {
        v.iter().map(|&(i, e)| (i, Integer::from(e))).collect()
    }

    fn terms(v: &Vector) -> Vec<(u32, Integer)> {
        v.iter().map(|(&i, e)| (i as u32, e.clone())).collect()
    }

    /// The combination `combo` of the relations `rows` (over raw indices).
    fn sum(rows: &[Vector], combo: &Vector) -> Vector {
        let mut out = Vector::new();
        for (j, c) in combo {
            axpy(&mut out, c, &rows[*j]);
        }
        out
    }

    #[test]
    fn names_expand_and_renumber() {
        // Three raw "relations" (any vectors do: this is bookkeeping of
        // linear combinations, common practice).
        let raw = [
            vector(&[(0, 1), (1, 2)]),
            vector(&[(1, 1)]),
            vector(&[(0, 3)]),
        ];
        let mut d = Derived::new(raw.len());
        let row = |v: &Vector, combo: &[(usize, i64)]| Row {
            v: v.clone(),
            combo: vector(combo),
        };
        // a = r0 - 2 r1, named 3; b = 2 a + r2, named 4; c = b - r1, named 5
        let a_combo = vector(&[(0, 1), (1, -2)]);
        let mut a = row(&sum(&raw, &a_combo), &[(0, 1), (1, -2)]);
        d.name(&mut a);
        assert_eq!(a.combo, vector(&[(3, 1)]));
        let mut b = a.lin(
            &Integer::from(2),
            &row(&raw[2], &[(2, 1)]),
            &Integer::from(1),
        );
        assert_eq!(b.combo, vector(&[(2, 1), (3, 2)]));
        d.name(&mut b);
        let mut c = b.lin(
            &Integer::from(1),
            &row(&raw[1], &[(1, 1)]),
            &Integer::from(-1),
        );
        d.name(&mut c);
        assert_eq!(c.combo, vector(&[(5, 1)]));
        // a single-term row is not named again
        let mut single = row(&raw[1], &[(1, 1)]);
        d.name(&mut single);
        assert_eq!(single.combo, vector(&[(1, 1)]));
        // c = 2 r0 - 5 r1 + r2 over the raw relations, and its entries are
        // that combination's
        let c_raw = d.expand(&c.combo);
        assert_eq!(c_raw, vector(&[(0, 2), (1, -5), (2, 1)]));
        assert_eq!(sum(&raw, &c_raw), c.v);
        // c rests on b, b on a, each named once: all written into c's
        // combination, which is then its expansion
        let kept = d.keep([&c.combo]);
        assert!(kept.rels.is_empty());
        assert_eq!(kept.terms(&c.combo), terms(&c_raw));
        // named twice, c is kept; b and a are still written into it
        let kept = d.keep([&c.combo, &vector(&[(0, 1), (5, 2)])]);
        assert_eq!(kept.rels, vec![(c.v.clone(), terms(&c_raw))]);
        assert_eq!(kept.terms(&c.combo), vec![(3, Integer::from(1))]);
        // a named by the certificate and by b: kept, and b's combination
        // (written into c) names it with its new index 3
        let kept = d.keep([&c.combo, &vector(&[(3, -1)])]);
        assert_eq!(kept.rels.len(), 1);
        assert_eq!(kept.rels[0], (a.v.clone(), terms(&a_combo)));
        assert_eq!(
            kept.terms(&vector(&[(3, -1)])),
            vec![(3, Integer::from(-1))]
        );
        // c = b - r1 = 2 a + r2 - r1
        assert_eq!(
            kept.terms(&c.combo),
            terms(&vector(&[(1, -1), (2, 1), (3, 2)]))
        );
    }
}
