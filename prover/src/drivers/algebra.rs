//! The relation lattice from raw relations, shared by the drivers whose
//! relations all carry an element (`D > 0`, number fields): the structured
//! elimination and echelon form of [`Algebra`] with every row's
//! combination of raw relations tracked, and the certificate's lattice
//! section and claim assembled from its result ([`lattice_and_claim`]).

use crate::linalg::derived::Derived;
use crate::linalg::echelon::{Echelon, Row, Vector};
use crate::linalg::sge::{Eliminated, Sge};
use crate::linalg::{cyclic_generators, smith, tracked};
use crate::setup::ProveError;
use classcert_format::*;
use rug::Integer;

/// The essential block solved: unit pivots first, by the structured
/// elimination both drivers share ([`Sge`]; least Markowitz cost keeps the
/// combinations short), then an echelon form on the columns left.
pub(crate) struct Algebra {
    /// `(column, row)` in pivoting order; each row has `+1` at its column
    /// and its other entries on columns pivoted later or left dense.
    pub(crate) unit_pivots: Vec<(usize, Row)>,
    pub(crate) dense: Echelon,
    /// Columns left to the echelon form.
    pub(crate) dense_cols: Vec<usize>,
    /// The rows named on the way: every pivot of the elimination and every
    /// row that enters the echelon form. The combinations above name them.
    pub(crate) derived: Derived,
    /// Rows of the echelon form's lattice that it was not built from: each
    /// gives a kernel vector once reduced ([`Echelon::unit`]), after those
    /// in `dense.kernel`. They are reduced only when asked for (their
    /// combinations are long, with coefficients of thousands of bits).
    pub(crate) spare: Vec<Row>,
}

impl Algebra {
    /// Solves the block of `k` columns from `rows`, whose combinations name
    /// the first `raw` relations.
    pub(crate) fn solve(k: usize, raw: usize, rows: Vec<Row>) -> Algebra {
        let rows: Vec<Row> = rows.into_iter().filter(|r| !r.combo.is_empty()).collect();
        let mut derived = Derived::new(raw);
        // on word-size rows when the entries allow (the same result)
        let Eliminated {
            sge,
            mut active,
            vanished,
        } = match tracked::eliminate(k, &rows, &mut derived) {
            Some(e) => e,
            None => Sge::run_with(k, rows, &mut |p| derived.name(p)),
        };
        let dense_cols = sge.remaining();
        // rows that vanish are units
        let kernel = vanished
            .into_iter()
            .map(|r| r.combo)
            .filter(|c| !c.is_empty())
            .collect();
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
        // the echelon form takes the rows with the shortest combinations
        // first: order them so before naming makes every one a single term
        active.sort_by_key(|r| r.combo.len());
        for r in &mut active {
            derived.name(r);
        }
        let mut dense = Echelon::new(k);
        dense.kernel = kernel;
        let spare = dense.triangularise(&dense_cols, active);
        Algebra {
            unit_pivots,
            dense,
            dense_cols,
            derived,
            spare,
        }
    }

    /// The number of kernel vectors: rows that vanished, then the spare rows.
    pub(crate) fn kernel_len(&self) -> usize {
        self.dense.kernel.len() + self.spare.len()
    }

    /// Kernel vector `j` over the raw relations. The expansions of derived
    /// relations are kept until [`Derived::forget_expansions`].
    pub(crate) fn kernel_vector(&mut self, j: usize) -> Vector {
        match j.checked_sub(self.dense.kernel.len()) {
            None => self.derived.expand(&self.dense.kernel[j]),
            Some(i) => {
                let unit = self.dense.unit(&self.dense_cols, &self.spare[i]);
                self.derived.expand(&unit)
            }
        }
    }

    /// The `count` kernel vectors among `range` whose logarithms are
    /// cheapest to evaluate, cheapest first: fewest coefficient bits over
    /// the raw relations, ties by position. Each is expanded on its own and
    /// dropped after it is measured (all of them at once took gigabytes).
    pub(crate) fn cheapest(&mut self, range: std::ops::Range<usize>, count: usize) -> Vec<usize> {
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

    pub(crate) fn full_rank(&self) -> bool {
        self.dense_cols
            .iter()
            .all(|&c| self.dense.pivots[c].is_some())
    }

    /// The echelon form Hermite-reduced (each pivot named once reduced),
    /// and what the certificate's lattice section is built from:
    /// generators (dense columns with a pivot above 1), the rows of `H`,
    /// the eliminations (dense columns from the last back, then the unit
    /// pivots, last first) and the derived relations.
    pub(crate) fn finish(self) -> Finished {
        let mut ech = self.dense;
        let mut derived = self.derived;
        ech.reduce(&mut |p| derived.name(p));
        let gens: Vec<usize> = self
            .dense_cols
            .iter()
            .copied()
            .filter(|&c| ech.diagonal(c) > 1)
            .collect();
        let pivot = |c: usize| ech.pivots[c].clone().expect("full rank");
        let mut h_rows: Vec<Row> = Vec::new();
        for &g in &gens {
            let mut row = pivot(g);
            for &c in self.dense_cols.iter().filter(|&&c| c > g) {
                if gens.contains(&c) {
                    continue;
                }
                if let Some(e) = row.v.get(&c).cloned() {
                    row.sub_mul(&e, &pivot(c));
                }
            }
            h_rows.push(row);
        }
        let elimination_rows: Vec<(usize, Row)> = self
            .dense_cols
            .iter()
            .rev()
            .filter(|c| !gens.contains(c))
            .map(|&c| (c, pivot(c)))
            .chain(self.unit_pivots.iter().rev().cloned())
            .collect();
        Finished {
            gens,
            h_rows,
            elimination_rows,
            derived,
        }
    }

    pub(crate) fn h_star(&self) -> Integer {
        self.dense_cols
            .iter()
            .map(|&c| self.dense.diagonal(c))
            .product()
    }
}

/// What the certificate's lattice section is built from.
pub(crate) struct Finished {
    pub(crate) gens: Vec<usize>,
    pub(crate) h_rows: Vec<Row>,
    pub(crate) elimination_rows: Vec<(usize, Row)>,
    pub(crate) derived: Derived,
}

/// `v` as sparse terms.
pub(crate) fn to_terms(v: &Vector) -> Vec<(u32, Integer)> {
    v.iter().map(|(i, e)| (*i as u32, e.clone())).collect()
}

/// The claim and the lattice section from a solved block: the rows of `H`
/// over the generators and its Smith form, the eliminations (the block's
/// own, then `extra`), the raw relations and the derived relations the
/// combinations rest on.
pub(crate) fn lattice_and_claim(
    fin: Finished,
    extra: Vec<Elimination>,
    raw_relations: Vec<Relation>,
) -> Result<(Claim, Lattice), ProveError> {
    let Finished {
        gens,
        h_rows,
        elimination_rows,
        derived,
    } = fin;
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
    // the derived relations these combinations rest on
    let kept = derived.keep(
        elimination_rows
            .iter()
            .map(|(_, r)| &r.combo)
            .chain(h_rows.iter().map(|r| &r.combo)),
    );
    for (c, row) in &elimination_rows {
        eliminations.push(Elimination {
            pivot: *c as u32,
            relation: Relation {
                entries: to_terms(&row.v),
                witness: Witness::Combination {
                    terms: kept.terms(&row.combo),
                },
            },
        });
    }
    eliminations.extend(extra);
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
            rows: h_rows.iter().map(|r| kept.terms(&r.combo)).collect(),
        },
        smith: sm.into(),
        eliminations,
        raw_relations: Some(raw_relations),
        derived_relations: (!kept.rels.is_empty()).then(|| {
            kept.rels
                .iter()
                .map(|(v, terms)| Relation {
                    entries: to_terms(v),
                    witness: Witness::Combination {
                        terms: terms.clone(),
                    },
                })
                .collect()
        }),
    };
    Ok((claim, lattice))
}
