//! The structured elimination of the real driver on word-size rows, with
//! the combinations rebuilt afterwards (`D > 0`).
//!
//! [`Sge::run_with`] on exact rows ([`Row`]: big-integer entries in an
//! ordered map, and the combination of relations each row stands for)
//! spends most of its time on the maps and the allocations, while the
//! entries stay small (at 40 digits below 2^31). Here each row is a sorted
//! vector of word-size entries that records the pivots subtracted from it
//! (pivot number, factor), and the pivots are numbered as they are chosen.
//! The choice of pivots reads the entries only, so it is the one the exact
//! rows would give; afterwards each combination is its row's own minus
//! the recorded multiples of the pivots' combinations, in the order the
//! pivots were named, which is what the exact rows compute step by step.
//! When an entry would leave `i64`, the caller falls back to exact rows.

use super::derived::Derived;
use super::echelon::{axpy, Row, Vector};
use super::sge::{Eliminated, PivotRow, Sge};
use rug::Integer;

/// A row on word-size entries that remembers what was subtracted from it.
struct Tracked {
    /// `(column, entry)`, nonzero, by increasing column.
    entries: Vec<(usize, i64)>,
    /// `(pivot number, f)`: `f` times that pivot was subtracted.
    ops: Vec<(usize, i64)>,
    /// The row's position in the input.
    id: usize,
    /// Its number as a pivot, once it is one.
    seq: usize,
}

impl Tracked {
    fn get(&self, c: usize) -> Option<i64> {
        self.entries
            .binary_search_by_key(&c, |&(j, _)| j)
            .ok()
            .map(|p| self.entries[p].1)
    }
}

impl PivotRow for Tracked {
    fn columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.entries.iter().map(|&(c, _)| c)
    }

    fn unit_columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.entries
            .iter()
            .filter(|&&(_, x)| x == 1 || x == -1)
            .map(|&(c, _)| c)
    }

    fn weight(&self) -> usize {
        self.entries.len()
    }

    fn has(&self, c: usize) -> bool {
        self.get(c).is_some()
    }

    fn is_zero(&self) -> bool {
        self.entries.is_empty()
    }

    /// `false` when an entry would leave `i64` (the row is then dropped,
    /// and [`eliminate`] gives up).
    fn eliminate(&mut self, c: usize, pivot: &Self) -> bool {
        let (Some(e), Some(s)) = (self.get(c), pivot.get(c)) else {
            return true;
        };
        let Some(f) = e.checked_mul(s) else {
            return false;
        };
        let mut out = Vec::with_capacity(self.entries.len() + pivot.entries.len());
        let mut mine = self.entries.iter().copied().peekable();
        for &(j, y) in &pivot.entries {
            while let Some(x) = mine.next_if(|&(i, _)| i < j) {
                out.push(x);
            }
            let x = mine.next_if(|&(i, _)| i == j).map_or(0, |(_, x)| x);
            let Some(v) = f.checked_mul(y).and_then(|t| x.checked_sub(t)) else {
                return false;
            };
            if v != 0 {
                out.push((j, v));
            }
        }
        out.extend(mine);
        self.entries = out;
        self.ops.push((pivot.seq, f));
        true
    }
}

/// [`Sge::run_with`] on `rows` with `name` called on each pivot (the real
/// driver's naming of derived relations), computed on word-size rows: the
/// same pivots, rows and derived relations in the same order. `None` when
/// an entry does not fit in `i64`, at the start or on the way.
pub fn eliminate(k: usize, rows: &[Row], derived: &mut Derived) -> Option<Eliminated<Row>> {
    let n = rows.len();
    let mut combos = Vec::with_capacity(n);
    let mut tracked = Vec::with_capacity(n);
    for (id, r) in rows.iter().enumerate() {
        let entries =
            r.v.iter()
                .map(|(&c, e)| e.to_i64().map(|x| (c, x)))
                .collect::<Option<Vec<_>>>()?;
        tracked.push(Tracked {
            entries,
            ops: Vec::new(),
            id,
            seq: usize::MAX,
        });
        combos.push(r.combo.clone());
    }
    let mut next = 0;
    let out = Sge::run_with(k, tracked, &mut |p| {
        p.seq = next;
        next += 1;
    });
    if out.sge.pivots.len() + out.active.len() + out.vanished.len() < n {
        // a row was dropped: an entry left i64
        return None;
    }
    // The combinations of the pivots as named, by pivot number.
    let mut named: Vec<Vector> = Vec::with_capacity(out.sge.pivots.len());
    let mut rebuild = |t: Tracked, named: &[Vector]| -> Row {
        let mut combo = std::mem::take(&mut combos[t.id]);
        for (s, f) in t.ops {
            axpy(&mut combo, &Integer::from(-f), &named[s]);
        }
        Row {
            v: t.entries
                .into_iter()
                .map(|(c, x)| (c, Integer::from(x)))
                .collect(),
            combo,
        }
    };
    let mut pivots = Vec::with_capacity(out.sge.pivots.len());
    for (c, t) in out.sge.pivots {
        let mut row = rebuild(t, &named);
        derived.name(&mut row);
        named.push(row.combo.clone());
        pivots.push((c, row));
    }
    let active = out.active.into_iter().map(|t| rebuild(t, &named)).collect();
    let vanished = out
        .vanished
        .into_iter()
        .map(|t| rebuild(t, &named))
        .collect();
    Some(Eliminated {
        sge: Sge {
            k,
            pivots,
            pivoted: out.sge.pivoted,
        },
        active,
        vanished,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Rng;

    /// Random rows shaped like the real driver's: sparse, skewed towards
    /// small columns, mostly unit entries, each standing for its own raw
    /// relation and sometimes for a few more (the eliminations substituted
    /// into it), some with entries too large for `i64` once combined.
    fn random_rows(rng: &mut Rng, raw: usize) -> (usize, Vec<Row>) {
        let k = 1 + rng.below(150) as usize;
        let n = rng.below(3 * k as u64 + 2) as usize;
        let huge = rng.below(8) == 0;
        let rows = (0..n)
            .map(|i| {
                let mut v = Vector::new();
                let w = 1 + rng.below(10) as usize;
                while v.len() < w.min(k) {
                    let m = 1 + rng.below(k as u64);
                    let c = rng.below(m) as usize;
                    let x: i64 = match rng.below(10) {
                        0..=5 => 1,
                        6..=8 => 2 + rng.below(4) as i64,
                        _ if huge => 1 << 40,
                        _ => 1 + rng.below(100) as i64,
                    };
                    v.insert(c, Integer::from(if rng.below(2) == 0 { x } else { -x }));
                }
                let mut combo = Vector::from([(i % raw, Integer::from(1))]);
                if rng.below(3) == 0 {
                    combo.insert(raw - 1 - i % raw, Integer::from(-2));
                }
                Row { v, combo }
            })
            .collect();
        (k, rows)
    }

    #[test]
    fn word_rows_eliminate_as_exact_rows() {
        let mut rng = Rng::new(4242);
        let (mut fast, mut gave_up, mut pivots) = (0, 0, 0);
        for t in 0..300 {
            let raw = 1000;
            let (k, rows) = random_rows(&mut rng, raw);
            let mut want_named = Derived::new(raw);
            let want = Sge::run_with(k, rows.clone(), &mut |p| want_named.name(p));
            let mut got_named = Derived::new(raw);
            let Some(got) = eliminate(k, &rows, &mut got_named) else {
                gave_up += 1;
                continue;
            };
            fast += 1;
            pivots += got.sge.pivots.len();
            assert_eq!(got.sge.pivoted, want.sge.pivoted, "matrix {t}");
            let key = |r: &Row| (r.v.clone(), r.combo.clone());
            let (g, w) = (&got.sge.pivots, &want.sge.pivots);
            assert_eq!(g.len(), w.len(), "matrix {t}");
            for ((gc, gr), (wc, wr)) in g.iter().zip(w) {
                assert_eq!((gc, key(gr)), (wc, key(wr)), "matrix {t}");
            }
            assert!(got.active.iter().map(key).eq(want.active.iter().map(key)));
            assert!(got
                .vanished
                .iter()
                .map(key)
                .eq(want.vanished.iter().map(key)));
            assert_eq!(got_named.rels(), want_named.rels(), "matrix {t}");
        }
        // both outcomes were seen, and real eliminations took place
        assert!(
            fast > 100 && gave_up > 0 && pivots > 1000,
            "{fast} {gave_up} {pivots}"
        );
    }
}
