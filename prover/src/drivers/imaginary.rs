//! The driver for imaginary quadratic orders (`D < 0`): relations from a
//! [`RelationSource`] (random products of prime forms for small `|D|`, the
//! sieve from [`SIEVE_MIN_BITS`] on), structured
//! elimination, a Hermite form kept modulo a multiple of its determinant,
//! the Smith form, and the certificate body. The analytic side tells it
//! when the lattice is the whole relation lattice.

use super::common::{eliminations, ELIMINATION_CHUNK, RELATION_ATTEMPTS};
use crate::linalg::cokernel::Characters;
use crate::linalg::dixon::{det_by_lifting, Solver};
use crate::linalg::modp::Lu;
use crate::linalg::sge::{Eliminated, Sge};
use crate::linalg::{cyclic_generators, det_crt, smith, Hnf, RankModP};
use crate::progress::Progress;
use crate::relations::carried::{CarriedRow, Carrier};
use crate::relations::forms::FormSearch;
use crate::relations::siqs::{Params, SiqsSource};
use crate::relations::{Element, FoundRelation, RelationSource, Sparse};
use crate::setup::{essential_count, setup, Options, ProveError, Setup};
use classcert_format::*;
use classcert_verifier::math::Form;
use classcert_verifier::math::Interval;
use rug::Integer;
use std::collections::{BTreeMap, HashMap};

/// Candidates per relation while a second full-rank set is sought (tiny
/// factor bases may have none to give).
const SECOND_SET_ATTEMPTS: u64 = 20_000;

/// `|D|` of at least this many bits (about 32 digits) takes the sieve.
/// Measured on the `bench_d` discriminants (one run each, 2-core machine):
/// 30 digits 0.93 s with the form search, 1.18 s with the sieve; 33 digits
/// 3.10 s and 2.38 s; 36 digits 7.4 s and 3.1 s; 40 digits 30.1 s and
/// 15.5 s. Below the switch (every discriminant of the certificate tests)
/// the form search keeps the certificates it made before.
pub const SIEVE_MIN_BITS: u32 = 105;

/// The sieve collects relations until they outnumber the factor-base
/// ideals they name by this many per thousand sieving primes (and by
/// [`SIEVE_MARGIN_MIN`] at least); a special-q relation then names each
/// ideal left out. Measured at 60 digits (idle machine, one run each):
/// 100 gave 57.3 s (dense block 603), 300 gave 52.5 s (570), 1000 gave
/// 55.0 s (494: the Hermite form is quick, the relations are not).
const SIEVE_MARGIN_PER_MILLE: usize = 300;

/// Pivot rows of the structured elimination may be this heavy on the
/// sieve's path (see [`Sge::run_heavier`]).
const SIEVE_PIVOT_WEIGHT: usize = 512;

/// A dense block wider than this gets a warning: the full-rank set and
/// the LU decomposition cost the cube of its width.
const DENSE_WARNING: usize = 2000;

/// Characters of the dense block's cokernel asked for at first (more are
/// added when they do not separate its classes).
const CHARACTERS: usize = 4;

/// Relations added at a time while the Hermite form from characters is
/// not yet confirmed by the analytic bound.
const CONFIRM_BATCH: usize = 20;

/// The least margin of relations over the ideals they name.
const SIEVE_MARGIN_MIN: usize = 20;

/// The rows among which the sieve's path picks a full-rank set of the
/// dense block's: the `kd + kd / CHOOSE_SLACK + CHOOSE_SLACK_MIN` shortest
/// (at 80 digits the 3 306 shortest of 8 107 were independent once every
/// column was reached). When they do not have full rank, the rows are
/// picked one by one from all of them.
const CHOOSE_SLACK: usize = 10;
const CHOOSE_SLACK_MIN: usize = 16;

/// Passes of special-q relations for the columns without a pivot that may
/// add nothing to the rank before random relations take over.
const GAP_PASSES: usize = 3;

fn use_sieve(abs_d: &Integer) -> bool {
    abs_d.significant_bits() >= SIEVE_MIN_BITS
}

/// Marks the ideals `rel` names in `covered`; how many were new.
fn mark_named(rel: &Sparse, covered: &mut [bool]) -> usize {
    let mut new = 0;
    for &c in rel.keys() {
        if let Some(slot) = covered.get_mut(c) {
            if !*slot {
                *slot = true;
                new += 1;
            }
        }
    }
    new
}

fn to_entries(rel: &Sparse) -> Vec<(u32, Integer)> {
    rel.iter()
        .map(|(&i, &e)| (i as u32, Integer::from(e)))
        .collect()
}

/// The setup every driver shares, with a factor base sized for the sieve
/// from [`SIEVE_MIN_BITS`] on, and the sieve's parameters there (None
/// below): what fixes the key of the sieve's rounds, so that `prove` and
/// `collect` agree on it.
fn sieve_setup(d: &Integer, opts: &Options) -> Result<(Setup, Option<Params>), ProveError> {
    let abs_d = Integer::from(d.abs_ref());
    let want = if use_sieve(&abs_d) {
        Params::sieving_primes_for(d)
    } else {
        0
    };
    let setup = setup(d, opts, want)?;
    let params = use_sieve(&abs_d).then(|| Params::for_discriminant(d, setup.fb.len()));
    Ok((setup, params))
}

/// `classcert collect`: sieves the rounds `rounds` of `D`'s sieve that
/// `dir` lacks and stores them there, exactly as `prove --resume dir`
/// would (`D < 0` already validated); no proof. Returns the rounds
/// written and those already there.
pub fn collect_rounds(
    d: &Integer,
    opts: &Options,
    dir: &std::path::Path,
    rounds: std::ops::Range<u64>,
) -> Result<(u64, u64), ProveError> {
    let (mut setup, params) = sieve_setup(d, opts)?;
    let Some(params) = params else {
        return Err(ProveError::Unsupported(format!(
            "rounds are collected only where the sieve is used, from {SIEVE_MIN_BITS} bits of |D| (about 32 digits); here |D| has {} bits",
            d.significant_bits()
        )));
    };
    let progress = std::mem::replace(&mut setup.progress, Progress::new(false));
    let sieve = SiqsSource::new(d, &setup.fb, params, opts.seed);
    Ok(sieve.fill(dir, rounds, &progress)?)
}

/// The certificate body for `D < 0` (`D` already validated).
pub fn prove_imaginary(d: &Integer, opts: &Options) -> Result<Body, ProveError> {
    let abs_d = Integer::from(d.abs_ref());
    // the sieve's own primes are the essential block; the form search
    // keeps a small one
    let (mut setup, params) = sieve_setup(d, opts)?;
    let progress = std::mem::replace(&mut setup.progress, Progress::new(false));
    let fb = &setup.fb;
    let n = fb.len();
    let ceiling = setup.ceiling.clone();
    let sieving = params.is_some();

    let k = match &params {
        Some(p) => p.primes.min(n),
        None => essential_count(fb, &abs_d),
    };
    progress.phase(&if sieving {
        format!("factor base of {n} prime ideals; sieving with the first {k}")
    } else {
        format!("factor base of {n} prime ideals ({k} essential): eliminating the others")
    });
    // the sieve from SIEVE_MIN_BITS on, where it is faster; the form search
    // below (the tests' sizes keep their certificates)
    let mut forms;
    let mut sieve;
    let source: &mut dyn RelationSource = if let Some(params) = params {
        sieve = SiqsSource::new(d, fb, params, opts.seed);
        sieve.resume(opts.resume.as_deref(), &progress)?;
        &mut sieve
    } else {
        forms = FormSearch::new(d, fb, k, opts.seed);
        &mut forms
    };

    // Eliminations for every ideal beyond the essential block (the sieve
    // first collects its relations, whose cofactors cover many of them).
    let mut elim: Vec<Option<Sparse>> = vec![None; n];
    if !sieving {
        for (i, rel) in (k..n).zip(eliminations(source, fb, k, &progress)?) {
            elim[i] = Some(rel.exponents);
        }
    }
    progress.phase("relations on the essential block");

    // Relations on the essential block, until the index is confirmed.
    let found = std::cell::Cell::new(0u64);
    // the count the sieve aims at, for progress lines
    let wanted: std::cell::Cell<Option<u64>> = std::cell::Cell::new(None);
    let max_relations = 50 * (k as u64) + 2000;
    // The sieve's elements by exponent vector, until the structured
    // elimination takes them along with its rows.
    let elements: std::cell::RefCell<HashMap<Sparse, Element>> = Default::default();
    let keep = |rel: FoundRelation| -> Sparse {
        if let Some(el) = rel.element {
            elements.borrow_mut().insert(rel.exponents.clone(), el);
        }
        rel.exponents
    };
    let next_relation = |source: &mut dyn RelationSource| -> Result<Sparse, ProveError> {
        if found.get() > max_relations {
            return Err(ProveError::SearchFailed(format!(
                "{} relations did not determine the class group; try another --seed",
                found.get()
            )));
        }
        let Some(rel) = source.relations(1, RELATION_ATTEMPTS).relations.pop() else {
            if let Some(e) = source.take_error() {
                return Err(e.into());
            }
            return Err(ProveError::SearchFailed(
                "relation search exhausted its attempts".into(),
            ));
        };
        found.set(found.get() + 1);
        progress.tick(found.get(), wanted.get());
        Ok(keep(rel))
    };
    // The relation restricted to the essential block, by substituting the
    // eliminations (largest index first); used only to test for full rank.
    let substitute = |mut rel: Sparse| -> Option<Sparse> {
        while let Some((&j, &e)) = rel.iter().next_back() {
            if j < k {
                break;
            }
            for (&c, &x) in elim[j].as_ref()? {
                let t = rel.entry(c).or_insert(0);
                *t = t.checked_sub(e.checked_mul(x)?)?;
                if *t == 0 {
                    rel.remove(&c);
                }
            }
        }
        Some(rel)
    };
    let dense = |v: &Sparse, cols: &[usize]| -> Vec<i64> {
        let mut out = vec![0i64; cols.len()];
        for (&c, &e) in v {
            if let Ok(pos) = cols.binary_search(&c) {
                out[pos] = e;
            }
        }
        out
    };
    let all_cols: Vec<usize> = (0..k).collect();
    let mut rels: Vec<Sparse> = Vec::new();
    // ramified primes: P^2 = (p) is principal
    for i in 0..k {
        if fb.bs[i].is_multiple_of(fb.primes[i]) {
            rels.push(Sparse::from([(i, 2)]));
        }
    }
    if sieving {
        // Relations until they outnumber the ideals they name by a margin
        // (a rank test per relation would cost k² each; a shortfall is made
        // up after the structured elimination, where the dense block is
        // small). The largest sieving primes are rare in smooth values, so
        // waiting for a relation to name each would take many times as
        // long: a special-q relation names each ideal left out instead.
        let margin = (k * SIEVE_MARGIN_PER_MILLE / 1000).max(SIEVE_MARGIN_MIN);
        let mut covered = vec![false; n];
        let mut named_now: usize = rels.iter().map(|r| mark_named(r, &mut covered)).sum();
        while rels.len() < named_now + margin {
            wanted.set(Some((named_now + margin) as u64));
            let r = next_relation(source)?;
            named_now += mark_named(&r, &mut covered);
            rels.push(r);
        }
        let missing: Vec<usize> = (0..n).filter(|&c| !covered[c]).collect();
        progress.phase(&format!(
            "{} relations name {named_now} of the {n} ideals: a special-q relation for each of the other {}",
            rels.len(),
            missing.len()
        ));
        for (t, chunk) in missing.chunks(ELIMINATION_CHUNK).enumerate() {
            progress.tick((t * ELIMINATION_CHUNK) as u64, Some(missing.len() as u64));
            for (&i, e) in chunk.iter().zip(source.eliminations_for(chunk, 0)) {
                let Some(e) = e else {
                    return Err(ProveError::SearchFailed(format!(
                        "no special-q relation found for p = {}",
                        fb.primes[i]
                    )));
                };
                elim[i] = Some(keep(e));
            }
        }
    } else {
        // Enough relations for full rank on the essential block.
        let mut rank = RankModP::new(k, (1u64 << 61) - 1);
        for v in &rels {
            rank.add(&dense(v, &all_cols));
        }
        while rank.rank < k {
            let v = next_relation(source)?;
            if let Some(sv) = substitute(v.clone()) {
                rank.add(&dense(&sv, &all_cols));
            }
            rels.push(v);
        }
        // some excess gives the elimination more unit pivots to choose from
        for _ in 0..k / 3 {
            rels.push(next_relation(source)?);
        }
    }
    // Unit pivots leave the dense block. The eliminations join the raw
    // relations here, so large primes stay sparse columns (no fill-in
    // from substituting them).
    rels.extend(elim.iter().flatten().cloned());
    wanted.set(None);
    progress.phase(&format!(
        "structured elimination of {} relations over {n} ideals",
        rels.len()
    ));
    // Each row carries its relation's element, if any, through the
    // elimination (`relations/carried.rs`).
    let carrier = Carrier {
        d,
        primes: &fb.primes,
    };
    let rows: Vec<CarriedRow> = {
        let mut elements = elements.borrow_mut();
        rels.into_iter()
            .map(|v| {
                let el = elements.remove(&v);
                carrier.row(v, el)
            })
            .collect()
    };
    // the sieve's relations: heavier pivots, a smaller dense block
    let Eliminated { sge, active, .. } = if sieving {
        Sge::run_heavier(n, rows, SIEVE_PIVOT_WEIGHT, &mut |_| {})
    } else {
        Sge::run(n, rows)
    };
    // a later relation is brought onto the dense block without its element
    let reduce = |v: Sparse| sge.reduce(carrier.row(v, None)).map(|r| r.v);
    let cols = sge.remaining();
    let kd = cols.len();
    progress.say(&format!(
        "{} relations from the search; {} columns left after structured elimination",
        found.get(),
        kd
    ));
    if kd > DENSE_WARNING {
        progress.warn(&format!(
            "the dense block has {kd} columns: the elimination that picks its full-rank rows and the solves behind its Hermite form take time that grows as the cube of that (at 3 306 columns, 80 digits, about 2 minutes; BENCHMARKS.md)"
        ));
    }
    // A full-rank set first: its determinant M gives M·Z^kd inside the
    // lattice, so the Hermite form can be kept modulo M.
    let mut rank = RankModP::new(kd, (1u64 << 61) - 1);
    // the rows picked for the full-rank set, and the others
    let mut independent = Vec::new();
    let mut others: Vec<Vec<i64>> = Vec::new();
    // Short rows first: the determinants of the two full-rank sets are
    // then smaller (Hadamard's bound is the product of the row lengths), so
    // fewer primes compute them. Which rows make up the sets does not
    // change the result, the Hermite form of the whole relation lattice.
    let mut active: Vec<Vec<i64>> = active.iter().map(|r| dense(&r.v, &cols)).collect();
    // Relations naming the ideals of given dense columns, from special-q
    // families after the last one used for each column.
    let mut next_family: BTreeMap<usize, u64> = BTreeMap::new();
    let mut naming = |source: &mut dyn RelationSource, gaps: &[usize]| -> Vec<Vec<i64>> {
        let mut out = Vec::new();
        for &j in gaps {
            let from = next_family.entry(j).or_insert(0);
            let Some((t, rel)) = source.naming(cols[j], *from) else {
                continue;
            };
            *from = t + 1;
            if let Some(v) = reduce(rel.exponents) {
                out.push(dense(&v, &cols));
            }
        }
        out
    };
    // A column no row reaches after the elimination (its relations were
    // pivots or overflowed) leaves every candidate dependent, each costing
    // kd² to learn it: at 80 digits one such column held up 1 350 random
    // relations and 4 800 candidates. Its ideal is named first.
    let mut reached = vec![false; kd];
    for v in &active {
        for (r, &x) in reached.iter_mut().zip(v) {
            *r |= x != 0;
        }
    }
    let unreached: Vec<usize> = (0..kd).filter(|&j| !reached[j]).collect();
    active.sort_by_cached_key(|v| {
        let norm: i128 = v.iter().map(|&x| (x as i128) * (x as i128)).sum();
        norm
    });
    if !unreached.is_empty() {
        progress.say(&format!(
            "no row reaches {} of the dense columns: special-q relations for their ideals",
            unreached.len()
        ));
        // first, where the rows are picked from
        let named = naming(source, &unreached);
        active.splice(0..0, named);
    }
    // On the sieve's path one elimination modulo the solver's prime both
    // picks full-rank rows among the shortest and decomposes them for the
    // solves behind the characters; picking rows one by one first (below)
    // would cost a second elimination of the same size.
    let chosen = if sieving && kd > 0 {
        let take = active.len().min(kd + kd / CHOOSE_SLACK + CHOOSE_SLACK_MIN);
        progress.phase(&format!(
            "dense block {kd} x {kd}: full-rank rows among the {take} shortest, decomposed modulo a prime"
        ));
        Lu::choosing(&active[..take], kd, Solver::prime())
    } else {
        None
    };
    let mut factored = None;
    if let Some((lu, picked)) = chosen {
        let mut is_picked = vec![false; active.len()];
        for &i in &picked {
            is_picked[i] = true;
        }
        independent = picked.iter().map(|&i| active[i].clone()).collect();
        others = active
            .into_iter()
            .zip(is_picked)
            .filter(|(_, picked)| !picked)
            .map(|(v, _)| v)
            .collect();
        factored = Some(lu);
    } else {
        progress.phase(&format!(
            "a full-rank set of the dense block's rows ({} candidates, shortest first)",
            active.len()
        ));
        let picked = rank.add_all(&active, &mut |r| progress.tick(r as u64, Some(kd as u64)));
        for (dv, picked) in active.into_iter().zip(picked) {
            if picked {
                independent.push(dv);
            } else {
                others.push(dv);
            }
        }
        // Short of full rank, the columns left without a pivot show where to
        // look, and a special-q relation names a column's ideal outright.
        let mut idle_passes = 0;
        while rank.rank < kd && idle_passes < GAP_PASSES {
            let before = rank.rank;
            let gaps = rank.pivotless();
            progress.say(&format!(
                "rank {before} of {kd}: special-q relations for the ideals of the {} columns without a pivot",
                gaps.len()
            ));
            for dv in naming(source, &gaps) {
                if rank.add(&dv) {
                    independent.push(dv);
                } else {
                    others.push(dv);
                }
            }
            idle_passes = if rank.rank > before {
                0
            } else {
                idle_passes + 1
            };
        }
        while rank.rank < kd {
            let Some(v) = reduce(next_relation(source)?) else {
                continue;
            };
            let dv = dense(&v, &cols);
            if rank.add(&dv) {
                independent.push(dv);
            } else {
                others.push(dv);
            }
        }
    }
    // The Hermite form read off characters of the cokernel of a full-rank
    // set (`linalg/cokernel.rs`: O(n) after the solves, where insertion is
    // O(n³)) on the sieve's path; row by row modulo a determinant gcd
    // otherwise, or when the characters fail. Both give the Hermite form
    // of the same lattice, which is unique.
    let characters = if sieving && kd > 0 {
        progress.say(&format!(
            "dense block {kd} x {kd}: its Hermite form from characters of the cokernel"
        ));
        Characters::with_lu(&independent, factored, CHARACTERS)
    } else {
        None
    };
    let confirmed_det =
        |det: &Integer| -> bool { Interval::int(det).ln().is_some_and(|l| l.hi < ceiling) };
    let rows = if let Some(ch) = characters {
        loop {
            let (rows, det, used) = ch.hermite(kd, &others, &confirmed_det).ok_or_else(|| {
                ProveError::SearchFailed("the cokernel's Hermite form failed".into())
            })?;
            progress.say(&format!(
                "determinant of the full-rank set {} bits; with {used} more relations the Hermite form's is {} bits",
                ch.det().significant_bits(),
                det.significant_bits()
            ));
            if confirmed_det(&det) {
                break rows;
            }
            let mut added = 0;
            while added < CONFIRM_BATCH {
                let Some(v) = reduce(next_relation(source)?) else {
                    continue;
                };
                others.push(dense(&v, &cols));
                added += 1;
            }
        }
    } else {
        let mut hnf = if kd == 0 {
            Hnf::new(0)
        } else {
            // A second full-rank subset from the other rows: M·Z^kd lies in the
            // lattice for both determinants, hence for their gcd, which is
            // usually close to the class number and keeps the entries small.
            let mut rank2 = RankModP::new(kd, (1u64 << 61) - 31);
            let mut second = Vec::new();
            let mut extra = Vec::new();
            for v in &others {
                if rank2.add(v) {
                    second.push(v.clone());
                }
            }
            // Tiny factor bases may have no fresh relations left: then d1 alone.
            let mut tries = 0u32;
            while rank2.rank < kd && tries < 20 * kd as u32 + 200 {
                tries += 1;
                let fresh = source.relations(1, SECOND_SET_ATTEMPTS).relations.pop();
                let Some(v) = fresh.and_then(|v| reduce(v.exponents)) else {
                    continue;
                };
                let dv = dense(&v, &cols);
                if rank2.add(&dv) {
                    second.push(dv.clone());
                }
                extra.push(dv);
            }
            others.extend(extra);
            progress.say(&format!(
                "two independent sets of {kd} relations on the dense block; their determinants next"
            ));
            // one determinant per core (each exact, so the thread count
            // changes nothing)
            let exact = |m: &[Vec<i64>]| -> Integer {
                let det = det_by_lifting(m).unwrap_or_else(|| det_crt(m));
                Integer::from(det.abs_ref())
            };
            let (d1, d2) = std::thread::scope(|scope| {
                let second_det = (rank2.rank == kd).then(|| scope.spawn(|| exact(&second)));
                let d1 = exact(&independent);
                let d2 = match second_det {
                    Some(h) => h.join().expect("a determinant thread panicked"),
                    None => d1.clone(),
                };
                (d1, d2)
            });
            let m = d1.clone().gcd(&d2);
            progress.say(&format!(
                "dense block {kd} x {kd}; determinants of {} and {} bits, gcd {} bits",
                d1.significant_bits(),
                d2.significant_bits(),
                m.significant_bits()
            ));
            Hnf::with_modulus(kd, &m)
        };
        let confirmed = |h: &Hnf| -> bool {
            match h.det() {
                Some(det) => Interval::int(det).ln().is_some_and(|l| l.hi < ceiling),
                None => false,
            }
        };
        // Once the determinant is below the analytic ceiling the lattice is the
        // whole relation lattice, and further rows change nothing: the Hermite
        // form of a lattice is unique, so stopping early keeps it.
        for v in independent.into_iter().chain(others) {
            if confirmed(&hnf) {
                break;
            }
            hnf.insert(v.into_iter().map(Integer::from).collect());
        }
        while !confirmed(&hnf) {
            let Some(v) = reduce(next_relation(source)?) else {
                continue;
            };
            hnf.insert(dense(&v, &cols).into_iter().map(Integer::from).collect());
        }
        progress.say("Hermite form confirmed by the analytic bound");
        hnf.finish().expect("full rank")
    };
    // positions in the dense block with a pivot > 1 are the generators
    let gpos: Vec<usize> = (0..kd).filter(|&j| rows[j][j] > 1).collect();
    let gens: Vec<usize> = gpos.iter().map(|&j| cols[j]).collect();
    let h_g: Vec<Vec<Integer>> = gpos
        .iter()
        .map(|&g| gpos.iter().map(|&c| rows[g][c].clone()).collect())
        .collect();
    let sm = smith(&h_g).ok_or_else(|| ProveError::SearchFailed("Smith form failed".into()))?;
    let mut eliminations = Vec::new();
    // dense-block columns with pivot 1: Hermite rows, supported on G
    for c in (0..kd).filter(|c| !gpos.contains(c)) {
        let entries: Vec<(u32, Integer)> = (0..kd)
            .filter(|&j| !rows[c][j].is_zero())
            .map(|j| (cols[j] as u32, rows[c][j].clone()))
            .collect();
        eliminations.push(Elimination {
            pivot: cols[c] as u32,
            relation: Relation {
                entries,
                witness: Witness::FormReduction,
            },
        });
    }
    // unit pivots, last eliminated first; a pivot row that still carries
    // its element gives it as the witness
    let mut by_element = 0usize;
    for (c, prow) in sge.pivots.iter().rev() {
        let witness = match &prow.element {
            Some(el) => Witness::Element {
                x: el.x.clone(),
                y: el.y.clone(),
            },
            None => Witness::FormReduction,
        };
        by_element += usize::from(prow.element.is_some());
        eliminations.push(Elimination {
            pivot: *c as u32,
            relation: Relation {
                entries: to_entries(&prow.v),
                witness,
            },
        });
    }
    if by_element > 0 {
        progress.say(&format!(
            "{by_element} of {} eliminations carry their element",
            eliminations.len()
        ));
    }
    // Generators of the cyclic factors: rows of V^{-1}, reduced modulo H_G.
    let mut generators = Vec::new();
    let mut invariants = Vec::new();
    for (di, xv) in cyclic_generators(&sm, &h_g) {
        invariants.push(di);
        let mut f = Form::principal(d);
        for (t, e) in xv.iter().enumerate() {
            if !e.is_zero() {
                let p = fb.forms[gens[t]].pow(e, d).expect("form arithmetic");
                f = f.compose(&p).expect("form arithmetic");
            }
        }
        generators.push(CyclicGenerator {
            exponents: xv,
            form: Some(classcert_format::Form {
                a: f.a,
                b: f.b,
                c: f.c,
            }),
        });
    }
    let class_number: Integer = sm.diag.iter().product();
    let claim = Claim {
        class_number,
        invariants,
        generators,
    };
    let lattice = Lattice {
        generators: gens.iter().map(|&g| g as u32).collect(),
        relations: h_g,
        relation_witness: Witness::FormReduction,
        smith: sm.into(),
        eliminations,
        raw_relations: None,
        derived_relations: None,
    };
    Ok(setup.body(d, opts, claim, lattice, None))
}
