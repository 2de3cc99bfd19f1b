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

use super::common::{eliminations, RELATION_ATTEMPTS};
use crate::linalg::derived::Derived;
use crate::linalg::echelon::{axpy, Echelon, Row, Vector};
use crate::linalg::sge::{Eliminated, Sge};
use crate::linalg::{cyclic_generators, smith, tracked};
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

/// The essential block solved: unit pivots first, by the structured
/// elimination both drivers share ([`Sge`]; least Markowitz cost keeps the
/// combinations short), then an echelon form on the columns left.
struct Algebra {
    /// `(column, row)` in pivoting order; each row has `+1` at its column
    /// and its other entries on columns pivoted later or left dense.
    unit_pivots: Vec<(usize, Row)>,
    dense: Echelon,
    /// Columns left to the echelon form.
    dense_cols: Vec<usize>,
    /// The rows named on the way: every pivot of the elimination and every
    /// row that enters the echelon form. The combinations above name them.
    derived: Derived,
    /// Rows of the echelon form's lattice that it was not built from: each
    /// gives a kernel vector once reduced ([`Echelon::unit`]), after those
    /// in `dense.kernel`. They are reduced only when asked for (their
    /// combinations are long, with coefficients of thousands of bits).
    spare: Vec<Row>,
}

impl Algebra {
    /// Solves the block of `k` columns from `rows`, whose combinations name
    /// the first `raw` relations.
    fn solve(k: usize, raw: usize, rows: Vec<Row>) -> Algebra {
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
    fn kernel_len(&self) -> usize {
        self.dense.kernel.len() + self.spare.len()
    }

    /// Kernel vector `j` over the raw relations. The expansions of derived
    /// relations are kept until [`Derived::forget_expansions`].
    fn kernel_vector(&mut self, j: usize) -> Vector {
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

fn to_terms(v: &Vector) -> Vec<(u32, Integer)> {
    v.iter().map(|(i, e)| (*i as u32, e.clone())).collect()
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
    for (i, rel) in (k..n).zip(eliminations(source, fb, k, &progress)?) {
        elim_of[i] = Some(raws.len());
        raws.push(Raw::from_found(rel)?);
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
    let mut batch = first_batch;
    // the sieve path: the dense block's size after the previous solve
    let mut last_dense: Option<usize> = None;
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
        for rel in found {
            raws.push(Raw::from_found(rel)?);
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
        // a column no row touches cannot be full rank (the sieve's largest
        // primes are rare): more relations first, no solve
        if sieving && !covers(&rows, k) {
            continue;
        }
        let mut alg = Algebra::solve(k, raws.len(), rows.clone());
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
                let vanished = alg.dense.kernel.len();
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
            alg.derived.forget_expansions();
            if unit.is_none() {
                continue;
            }
        }
        // Columns left to the echelon block carry long combinations into
        // the certificate; more relations give more unit pivots.
        let dense_gens = alg
            .dense_cols
            .iter()
            .filter(|&&c| alg.dense.diagonal(c) > 1)
            .count();
        // the sieve's relations leave a few dozen columns whatever their
        // number: stop once the block no longer shrinks
        let stalled = sieving && last_dense.is_some_and(|l| alg.dense_cols.len() >= l);
        last_dense = Some(alg.dense_cols.len());
        let dense_ok = alg.dense_cols.len() <= dense_gens + DENSE_SLACK
            || raws.len() > dense_budget + n
            || stalled;
        if confirmed && dense_ok {
            break alg;
        }
    };
    let mut ech = alg.dense;
    let mut derived = alg.derived;
    ech.reduce(&mut |p| derived.name(p));

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
    let elimination_rows: Vec<(usize, Row)> = alg
        .dense_cols
        .iter()
        .rev()
        .filter(|c| !gens.contains(c))
        .map(|&c| (c, pivot(c)))
        .chain(alg.unit_pivots.iter().rev().cloned())
        .collect();
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
