//! An integer echelon form that remembers, for every row, the combination
//! of relations it stands for (raw ones, and named rows: see
//! [`super::derived`]). The certificate for `D > 0` states each derived
//! relation as such a combination (the verifier checks raw relations by
//! their elements), and the rows that vanish give units.

use super::sge::PivotRow;
use rug::ops::DivRounding;
use rug::Integer;
use std::collections::BTreeMap;

/// Sparse integer vectors: over factor-base indices, or over raw relations.
pub type Vector = BTreeMap<usize, Integer>;

pub fn axpy(dst: &mut Vector, c: &Integer, src: &Vector) {
    for (i, e) in src {
        let t = dst.entry(*i).or_default();
        // one multiply-add in place, no temporary
        *t += c * e;
        if t.is_zero() {
            dst.remove(i);
        }
    }
}

pub fn scaled(c: &Integer, v: &Vector) -> Vector {
    v.iter()
        .map(|(i, e)| (*i, Integer::from(c * e)))
        .filter(|(_, e)| !e.is_zero())
        .collect()
}

/// A relation on the essential block with the combination of raw and
/// derived relations it stands for (indices as in the certificate: raw
/// relations first, then derived ones).
#[derive(Clone)]
pub struct Row {
    pub v: Vector,
    pub combo: Vector,
}

impl Row {
    /// `a·self + b·other`.
    pub fn lin(&self, a: &Integer, other: &Row, b: &Integer) -> Row {
        let mut v = scaled(a, &self.v);
        axpy(&mut v, b, &other.v);
        let mut combo = scaled(a, &self.combo);
        axpy(&mut combo, b, &other.combo);
        Row { v, combo }
    }

    pub fn sub_mul(&mut self, q: &Integer, other: &Row) {
        let m = Integer::from(-q);
        axpy(&mut self.v, &m, &other.v);
        axpy(&mut self.combo, &m, &other.combo);
    }
}

impl PivotRow for Row {
    fn columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.v.keys().copied()
    }

    fn unit_columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.v
            .iter()
            .filter(|(_, e)| **e == 1 || **e == -1)
            .map(|(&c, _)| c)
    }

    fn weight(&self) -> usize {
        self.v.len()
    }

    fn has(&self, c: usize) -> bool {
        self.v.contains_key(&c)
    }

    fn is_zero(&self) -> bool {
        self.v.is_empty()
    }

    /// Exact: never drops a row.
    fn eliminate(&mut self, c: usize, pivot: &Self) -> bool {
        if let (Some(e), Some(s)) = (self.v.get(&c), pivot.v.get(&c)) {
            let q = Integer::from(e * s);
            self.sub_mul(&q, pivot);
        }
        true
    }
}

/// Row echelon form over the integers, column by column from the left
/// (H. Cohen, GTM 138, §2.4.2); rows that vanish are kernel vectors.
pub struct Echelon {
    pub pivots: Vec<Option<Row>>,
    pub kernel: Vec<Vector>,
}

impl Echelon {
    pub fn new(k: usize) -> Echelon {
        Echelon {
            pivots: vec![None; k],
            kernel: Vec::new(),
        }
    }

    /// Echelon form of `rows` on `cols` (ascending). Combinations are what
    /// the certificate carries, so the form is built from as few rows with
    /// short combinations as will do: the shortest rows first, more only if
    /// the others do not lie in the lattice of the result. Returns the
    /// others, which then all lie in it: each is a unit once reduced
    /// ([`Echelon::unit`]). That reduction (against this form, before
    /// [`Echelon::reduce`]) is costly, because the form's off-diagonal
    /// entries multiply its quotients from column to column, so it is left
    /// to the caller; whether a row lies in the lattice is decided here on
    /// a Hermite-reduced copy of the entries instead, where the quotients
    /// stay small.
    pub fn triangularise(&mut self, cols: &[usize], mut rows: Vec<Row>) -> Vec<Row> {
        rows.sort_by_key(|r| r.combo.len());
        let mut take = rows.len().min(cols.len() + 8);
        loop {
            let mut trial = Echelon::new(self.pivots.len());
            trial.euclid(cols, rows[..take].to_vec());
            let complete = cols.iter().all(|&c| trial.pivots[c].is_some());
            let spans = complete && {
                let hermite = trial.hermite_entries(cols);
                rows[take..].iter().all(|r| lies_in(&hermite, cols, &r.v))
            };
            if spans || take == rows.len() {
                self.pivots = trial.pivots;
                self.kernel.extend(trial.kernel);
                return rows.split_off(take);
            }
            take = rows.len().min(2 * take);
        }
    }

    /// The combination of `row`, a row of the lattice returned by
    /// [`Echelon::triangularise`], minus the pivots that clear it column by
    /// column (floor quotients): a kernel vector.
    pub fn unit(&self, cols: &[usize], row: &Row) -> Vector {
        let mut r = row.clone();
        for &c in cols {
            let (Some(e), Some(p)) = (r.v.get(&c).cloned(), self.pivots[c].as_ref()) else {
                continue;
            };
            let q = e.div_floor(&p.v[&c]);
            r.sub_mul(&q, p);
        }
        debug_assert!(r.v.is_empty(), "a row outside the lattice");
        r.combo
    }

    /// The pivots' entries (not their combinations) in Hermite form: each
    /// entry right of a pivot reduced modulo the pivot below it, from the
    /// last column back, as for the Hermite normal form (H. Cohen, GTM 138,
    /// §2.4). Only the lattice matters here, not the combinations.
    fn hermite_entries(&self, cols: &[usize]) -> Vec<Option<Vector>> {
        let mut h: Vec<Option<Vector>> = vec![None; self.pivots.len()];
        for &c in cols.iter().rev() {
            let Some(p) = &self.pivots[c] else { continue };
            let mut v = p.v.clone();
            for &j in cols.iter().filter(|&&j| j > c) {
                let (Some(e), Some(pj)) = (v.get(&j), &h[j]) else {
                    continue;
                };
                let q = Integer::from(e.div_floor(&pj[&j]));
                if !q.is_zero() {
                    axpy(&mut v, &(-q), pj);
                }
            }
            h[c] = Some(v);
        }
        h
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
    /// (Hermite form), from the last column back. Each pivot is handed to
    /// `done` once it is reduced, before it reduces the ones above it (the
    /// real driver names it there: reduced rows are subtracted from every
    /// row above, so their combinations, spelled out, would multiply from
    /// row to row).
    pub fn reduce(&mut self, done: &mut dyn FnMut(&mut Row)) {
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
            if let Some(pc) = self.pivots[c].as_mut() {
                done(pc);
            }
        }
    }

    pub fn diagonal(&self, c: usize) -> Integer {
        self.pivots[c]
            .as_ref()
            .and_then(|p| p.v.get(&c).cloned())
            .unwrap_or_default()
    }
}

/// Whether `v` (supported on `cols`) lies in the lattice of the complete
/// echelon form `pivots`: cleared column by column with floor quotients, it
/// vanishes exactly then (the entry left at each column lies in
/// `[0, pivot)`, and is 0 for a lattice vector; common practice).
fn lies_in(pivots: &[Option<Vector>], cols: &[usize], v: &Vector) -> bool {
    let mut v = v.clone();
    for &c in cols {
        let (Some(e), Some(p)) = (v.get(&c), &pivots[c]) else {
            continue;
        };
        let q = Integer::from(e.div_floor(&p[&c]));
        axpy(&mut v, &(-q), p);
    }
    v.is_empty()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Rng;

    /// `triangularise` as it was first written: every row beyond the trial
    /// reduced against the trial form with its combination, a row that
    /// vanishes being a unit. The lazy form (lattice test on a Hermite
    /// copy, units reduced on demand) must give the same pivots and the
    /// same kernel vectors in the same order, or real certificates change.
    fn triangularise_eager(e: &mut Echelon, cols: &[usize], mut rows: Vec<Row>) {
        rows.sort_by_key(|r| r.combo.len());
        let mut take = rows.len().min(cols.len() + 8);
        loop {
            let mut trial = Echelon::new(e.pivots.len());
            trial.euclid(cols, rows[..take].to_vec());
            let complete = cols.iter().all(|&c| trial.pivots[c].is_some());
            let mut left = Vec::new();
            let mut units = Vec::new();
            if complete {
                for r in &rows[take..] {
                    let mut r = r.clone();
                    for &c in cols {
                        let (Some(x), Some(p)) = (r.v.get(&c).cloned(), trial.pivots[c].as_ref())
                        else {
                            continue;
                        };
                        let q = x.div_floor(&p.v[&c]);
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
                e.pivots = trial.pivots;
                e.kernel.extend(trial.kernel);
                e.kernel.extend(units.into_iter().filter(|c| !c.is_empty()));
                return;
            }
            take = rows.len().min(2 * take);
        }
    }

    /// Random rows on `k` columns, each its own combination: entries small,
    /// a sublattice (column 0 even) in the first rows sometimes, so that
    /// the trial must grow, and some rows sums of others, so that spare
    /// rows lie in the lattice.
    fn random_rows(rng: &mut Rng) -> (usize, Vec<Row>) {
        let k = 1 + rng.below(12) as usize;
        let n = rng.below(3 * k as u64 + 20) as usize;
        let even_first = rng.below(3) == 0;
        let mut vs: Vec<Vector> = Vec::new();
        for i in 0..n {
            let mut v = Vector::new();
            if i > 2 && rng.below(3) == 0 {
                let (a, b) = (rng.below(i as u64) as usize, rng.below(i as u64) as usize);
                let m = Integer::from(rng.below(5) as i64 - 2);
                v = vs[a].clone();
                axpy(&mut v, &m, &vs[b]);
            } else {
                for c in 0..k {
                    if rng.below(2) == 0 {
                        let mut x = rng.below(9) as i64 - 4;
                        if c == 0 && even_first && i < k + 8 {
                            x *= 2;
                        }
                        if x != 0 {
                            v.insert(c, Integer::from(x));
                        }
                    }
                }
            }
            vs.push(v);
        }
        let rows = vs
            .into_iter()
            .enumerate()
            .filter(|(_, v)| !v.is_empty())
            .map(|(i, v)| Row {
                v,
                combo: Vector::from([(i, Integer::from(1))]),
            })
            .collect();
        (k, rows)
    }

    #[test]
    fn lazy_units_equal_eager_reduction() {
        let mut rng = Rng::new(77);
        let (mut grown, mut spare_units, mut incomplete) = (0, 0, 0);
        for t in 0..500 {
            let (k, rows) = random_rows(&mut rng);
            let cols: Vec<usize> = (0..k).collect();
            let mut want = Echelon::new(k);
            triangularise_eager(&mut want, &cols, rows.clone());
            let mut got = Echelon::new(k);
            let spare = got.triangularise(&cols, rows.clone());
            let used = rows.len() - spare.len();
            if used > (k + 8).min(rows.len()) {
                grown += 1;
            }
            if !cols.iter().all(|&c| got.pivots[c].is_some()) {
                incomplete += 1;
            }
            for c in 0..k {
                let (g, w) = (&got.pivots[c], &want.pivots[c]);
                assert_eq!(g.as_ref().map(|r| &r.v), w.as_ref().map(|r| &r.v), "{t}");
                assert_eq!(g.as_ref().map(|r| &r.combo), w.as_ref().map(|r| &r.combo));
            }
            let mut kernel = got.kernel.clone();
            kernel.extend(spare.iter().map(|r| got.unit(&cols, r)));
            spare_units += spare.len();
            assert_eq!(kernel, want.kernel, "matrix {t}");
        }
        // the matrices exercised a trial that had to grow, spare rows that
        // were units, and blocks not of full rank
        assert!(
            grown > 0 && spare_units > 100 && incomplete > 0,
            "{grown} {spare_units} {incomplete}"
        );
    }
}
