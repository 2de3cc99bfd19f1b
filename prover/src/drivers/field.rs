//! The driver for number fields of degree 3 to 6 (`general-fields.md`):
//! the class group, units and regulator of the maximal order of
//! `K = Q[x]/(F)`.
//!
//! 1. The maximal order by Pohst–Zassenhaus round 2 ([`crate::field::maximal`]),
//!    with the factorisation of its discriminant and primality evidence.
//! 2. Root enclosures of `F` ([`crate::field::roots`]) and the roots of
//!    unity ([`crate::field::units::torsion`]).
//! 3. The factor base: every prime ideal above each `p` up to Bach's bound
//!    `12 log² |Δ|`, and above each `p < X` dividing `disc(F)`
//!    ([`crate::field::decompose`]).
//! 4. Relations: elements of small norm that factor over it
//!    ([`crate::field::relations`]), in batches, until the relation lattice
//!    has full rank and its kernel gives `r1 + r2 - 1` independent units
//!    ([`crate::field::units::find_units`]) with `h* R*` below twice the
//!    analytic lower bound on `h R`.
//! 5. The lattice section as for real quadratic orders
//!    ([`super::algebra`]), the regulator and the Euler trace computed as
//!    the verifier computes them, and the verifier's check of the bytes.

use super::algebra::{lattice_and_claim, Algebra};
use super::common::encode_and_check;
use crate::field::{maximal, relations, roots, units};
use crate::linalg::echelon::{Row, Vector};
use crate::polynomial::check_defining;
use crate::progress::Progress;
use crate::setup::{producer, Options, ProveError};
use classcert_format::*;
use classcert_verifier::math::euler::{error_bound_degree, euler_field, log_hr};
use classcert_verifier::math::{primes_up_to, Interval};
use classcert_verifier::registry;
use rug::Integer;

/// Relations asked for beyond the factor base's size at first, and in
/// each later batch.
const EXTRA_RELATIONS: usize = 20;

/// Kernel vectors offered to the unit search in the first round, plus 4 per
/// unit wanted (and as many again each later round).
const KERNEL_BASE: usize = 8;

/// Batches of relations before the search gives up.
const MAX_BATCHES: usize = 40;

/// Bits of the root enclosures' widths (`2^-ROOT_BITS`): enough for
/// exponents of units of a few hundred bits at the verifier's precision.
const ROOT_BITS: u32 = 400;

/// Primes of the factor base in fewer relations than this get more
/// relations of their own after a round that does not confirm `h R`.
const SPARSE_COLUMN: usize = 5;

/// The factor-base primes (of `k`) that fewer than `min` relations contain.
fn sparse_columns(raws: &[relations::Relation], k: usize, min: usize) -> Vec<usize> {
    let mut count = vec![0usize; k];
    for r in raws {
        for &(i, _) in &r.exponents {
            count[i] += 1;
        }
    }
    (0..k).filter(|&i| count[i] < min).collect()
}

/// Precision (bits) of the prover's own log embeddings.
const LOG_PREC: u32 = 512;

/// The regulator of `units` in intervals, computed as the verifier
/// computes it (`verifier/src/units/field.rs`): `Σ k_j Log(α_j)` over each
/// unit's terms in order, the last place dropped, `|det|`.
fn regulator_enclosure(
    roots: &classcert_verifier::math::field::Roots,
    order: &crate::field::arith::Order,
    raws: &[relations::Relation],
    units: &[Vec<(u32, Integer)>],
    r: usize,
) -> Option<Interval> {
    let places = roots.signature().0 + roots.signature().1;
    let mut matrix = Vec::with_capacity(r);
    for unit in units {
        let mut log = vec![Interval::zero(); places];
        for (j, k) in unit {
            let (num, den) = order.to_power(&raws.get(*j as usize)?.coords);
            let lj = roots.log_embedding(&num, &den)?;
            let kk = Interval::int(k);
            for (acc, l) in log.iter_mut().zip(lj.iter()) {
                *acc = acc.add(&kk.mul(l));
            }
        }
        log.truncate(r);
        matrix.push(log);
    }
    if r == 0 {
        return Some(Interval::u64(1));
    }
    classcert_verifier::math::field::abs_det(&matrix)
}

/// The smallest `X` on a ladder whose error term (degree `n`) is at most
/// `target`.
fn choose_x(log_delta: &Interval, n: u64, target: f64) -> u64 {
    let mut x = 1000u64;
    while x < 50_000_000 {
        if let Some(e) = error_bound_degree(x, log_delta, n) {
            if e.hi.to_f64() <= target {
                return x;
            }
        }
        x = x * 5 / 4;
    }
    x
}

/// Proves the class group, units and regulator of the maximal order of
/// `Q[x]/(F)`, `f` from the constant term up.
pub fn prove_field(f: &[Integer], opts: &Options) -> Result<FieldBody, ProveError> {
    let progress = Progress::new(opts.progress);
    let disc_f = check_defining(f).map_err(|r| ProveError::InvalidInput(r.to_string()))?;
    let n = f.len() - 1;
    progress.phase("the maximal order (round 2)");
    let extra: Vec<Integer> = opts.factors.clone().unwrap_or_default();
    let mo = maximal::maximal_order(f, &extra, opts.factor_budget)
        .map_err(|e| ProveError::Unsupported(e.to_string()))?;
    if let Some(c) = &mo.unfactored {
        // The order is maximal at every known prime; at the primes of `c`
        // it is when `c` is squarefree, which the certificate then states
        // as its assumption (a perfect power never is, so it is refused).
        if c.is_perfect_power() {
            return Err(ProveError::Unsupported(format!(
                "the unfactored part {c} of disc(F) is a perfect power, so the order may not be maximal at its primes; give them with --factors"
            )));
        }
        progress.warn(&format!(
            "the part {c} of disc(F) could not be factored; the certificate rests on it being squarefree (give its primes with --factors to remove that assumption)"
        ));
    }
    let order = &mo.order;
    let abs_disc = Integer::from(mo.disc.abs_ref());
    let maximality: Vec<PrimePower> = mo
        .disc_factors
        .iter()
        .map(|(p, e)| PrimePower {
            prime: p.clone(),
            exponent: *e,
            evidence: crate::factor::primality_evidence(p, opts.factor_budget),
        })
        .collect();
    progress.phase("root enclosures and roots of unity");
    let (enclosures, checked_roots) = roots::enclose(f, ROOT_BITS)
        .map_err(|e| ProveError::SearchFailed(format!("root enclosures: {e}")))?;
    let embedding = Embedding {
        real: enclosures.real,
        complex: enclosures.complex,
    };
    let (r1, r2) = (embedding.real.len(), embedding.complex.len());
    let r = r1 + r2 - 1;
    let (w, zeta) = units::torsion(f, order.basis(), order.den())
        .map_err(|e| ProveError::SearchFailed(format!("roots of unity: {e}")))?;
    let approx = roots::approximate(f, LOG_PREC)
        .map_err(|e| ProveError::SearchFailed(format!("roots: {e}")))?;
    let places = approx.places();

    let log_delta = Interval::int(&abs_disc)
        .ln()
        .ok_or_else(|| ProveError::SearchFailed("log |disc| failed".into()))?;
    let x = match opts.euler_x {
        Some(x) => x,
        None => choose_x(&log_delta, n as u64, 0.2),
    };
    let bound = registry::generation_bound(registry::BACH_NUMBER_FIELD, &abs_disc)
        .ok_or_else(|| ProveError::SearchFailed("generation bound out of range".into()))?;
    progress.phase(&format!(
        "factor base: every prime ideal above p <= {bound} (and p < X = {x} dividing disc(F))"
    ));
    let primes = primes_up_to(bound.max(x));
    let extra: Vec<u64> = primes
        .iter()
        .copied()
        .filter(|&p| p > bound && p < x && disc_f.is_divisible_u(p as u32))
        .collect();
    let fb = relations::FactorBase::with_extra(order, bound, &extra, opts.seed)
        .map_err(|e| ProveError::SearchFailed(format!("prime decomposition: {e}")))?;
    let factor_base: Vec<FieldPrime> = fb
        .ideals()
        .map(|q| FieldPrime {
            p: q.p,
            e: q.e,
            f: q.f,
            pi: q.pi.clone(),
            generator: q.generator.clone(),
            anti: q.anti.clone(),
        })
        .collect();
    let k = factor_base.len();
    let splitting = |p: u64| -> Option<Vec<(u32, u32)>> {
        let s: Vec<(u32, u32)> = factor_base
            .iter()
            .filter(|q| q.p == p)
            .map(|q| (q.e, q.f))
            .collect();
        (!s.is_empty()).then_some(s)
    };
    progress.phase(&format!("the Euler product to X = {x}"));
    let res = euler_field(x, f, &splitting, &primes, &[], &log_delta, &mut || {})
        .ok_or_else(|| ProveError::SearchFailed("the Euler product failed".into()))?;
    let log_hr_bound = log_hr(&res.log_l, &abs_disc, (r1, r2), w)
        .ok_or_else(|| ProveError::SearchFailed("the analytic bound failed".into()))?;
    // h* R* below this confirms h R (the verifier's test, with a margin)
    let ceiling = log_hr_bound.lo.to_f64() + std::f64::consts::LN_2 - 1e-6;

    progress.phase(&format!(
        "relations over {k} prime ideals, until h* R* is confirmed"
    ));
    let mut raws: Vec<relations::Relation> = Vec::new();
    let mut element_logs: Vec<Vec<rug::Float>> = Vec::new();
    let mut extra_relations: Vec<relations::Relation> = Vec::new();
    let mut seen: std::collections::HashSet<Vec<Integer>> = std::collections::HashSet::new();
    // units found in earlier rounds, and the rounds that reached them
    let mut previous: Vec<Vec<(u32, Integer)>> = Vec::new();
    let mut solved_rounds = 0;
    let mut batch = k + EXTRA_RELATIONS;
    let mut confirmed = None;
    for round in 0..MAX_BATCHES {
        let search = relations::SearchOptions::new(batch, opts.seed.wrapping_add(round as u64));
        let t0 = std::time::Instant::now();
        let mut found_now = relations::find_relations(order, &fb, &search);
        if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
            eprintln!("round {round}: search {:.3} s", t0.elapsed().as_secs_f64());
        }
        found_now.append(&mut extra_relations);
        // an element found again, or its negative, only gives the kernel
        // a trivial unit
        for rel in found_now {
            let mut key = rel.coords.clone();
            if key.iter().find(|c| **c != 0).is_some_and(|c| *c < 0) {
                key.iter_mut().for_each(|c| *c = -c.clone());
            }
            if seen.insert(key) {
                raws.push(rel);
            }
        }
        for rel in &raws[element_logs.len()..] {
            let (num, den) = order.to_power(&rel.coords);
            let l = units::log_vector(&places, r1, &num, &den).ok_or_else(|| {
                ProveError::SearchFailed("a relation's element vanishes at a place".into())
            })?;
            element_logs.push(l);
        }
        // the search starts afresh each round: it is asked for more, so
        // that its sieve and products reach further than before
        batch += EXTRA_RELATIONS.max(k / 2);
        progress.tick(raws.len() as u64, None);
        let rows: Vec<Row> = raws
            .iter()
            .enumerate()
            .map(|(j, r)| Row {
                v: r.exponents
                    .iter()
                    .map(|(i, e)| (*i, Integer::from(*e)))
                    .collect(),
                combo: Vector::from([(j, Integer::from(1))]),
            })
            .collect();
        let t0 = std::time::Instant::now();
        let mut alg = Algebra::solve(k, raws.len(), rows);
        if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
            eprintln!("round {round}: solve {:.3} s", t0.elapsed().as_secs_f64());
        }
        if !alg.full_rank() {
            // columns left without a pivot: relations inside those primes
            let dependent: Vec<usize> = alg
                .dense_cols
                .iter()
                .copied()
                .filter(|&c| alg.dense.pivots[c].is_none())
                .collect();
            if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
                eprintln!(
                    "round {round}: {} relations, {} columns without a pivot",
                    raws.len(),
                    dependent.len()
                );
            }
            for c in dependent {
                let seed = opts.seed.wrapping_add(round as u64);
                extra_relations.extend(relations::relations_in(order, &fb, c, 4, seed));
            }
            continue;
        }
        let m = raws.len();
        // the units found so far and the cheapest kernel vectors (the
        // log-lattice reduction costs grow fast with their number)
        solved_rounds += 1;
        let count = (KERNEL_BASE + 4 * r) * solved_rounds;
        let mut kernel: Vec<Vec<Integer>> = previous
            .iter()
            .map(|u: &Vec<(u32, Integer)>| {
                let mut dense = vec![Integer::new(); m];
                for (i, e) in u {
                    dense[*i as usize] = e.clone();
                }
                dense
            })
            .collect();
        // the cheapest kernel vectors whose units are not roots of unity
        // half of them the cheapest, half spread over the whole kernel (the
        // cheapest alone can miss a direction of the unit lattice)
        let len = alg.kernel_len();
        let step = (len / (count / 2).max(1)).max(1);
        let mut picks = alg.cheapest(0..len, 5 * count);
        picks.truncate(count / 2);
        picks.extend(
            (0..len)
                .step_by(step)
                .filter(|j| !picks.contains(j))
                .collect::<Vec<_>>(),
        );
        let mut offered = 0;
        for j in picks {
            if offered == count {
                break;
            }
            let mut dense = vec![Integer::new(); m];
            for (i, e) in alg.kernel_vector(j) {
                dense[i] = e;
            }
            if units::is_torsion(&element_logs, &dense) {
                continue;
            }
            offered += 1;
            kernel.push(dense);
        }
        let t0 = std::time::Instant::now();
        let found = units::units_from_kernel(&element_logs, &kernel, m, r, LOG_PREC);
        if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
            eprintln!("round {round}: units {:.3} s", t0.elapsed().as_secs_f64());
        }
        let found = match found {
            Ok(found) => found,
            Err(e) => {
                if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
                    eprintln!(
                        "round {round}: {} relations, kernel {}: {e}",
                        raws.len(),
                        kernel.len()
                    );
                }
                continue;
            }
        };
        let h_star = alg.h_star();
        let log_hs = Interval::int(&h_star)
            .ln()
            .map_or(f64::INFINITY, |l| l.hi.to_f64())
            + found.regulator.ln();
        if std::env::var_os("CLASSCERT_DEBUG_FIELD").is_some() {
            eprintln!(
                "round {round}: {} relations, h* = {h_star}, R* = {}, log h*R* = {log_hs:.4}, ceiling {ceiling:.4}, kernel {}",
                raws.len(),
                found.regulator,
                alg.kernel_len()
            );
        }
        previous = found.units.clone();
        if log_hs < ceiling {
            confirmed = Some((alg, found));
            break;
        }
        // A prime in few relations can leave the lattice short of a
        // relation in its direction for round after round (the search
        // rarely meets a prime of large norm): more relations inside it.
        let seed = opts.seed.wrapping_add(round as u64);
        for c in sparse_columns(&raws, k, SPARSE_COLUMN) {
            extra_relations.extend(relations::relations_in(order, &fb, c, 4, seed));
        }
    }
    let Some((alg, found)) = confirmed else {
        return Err(ProveError::SearchFailed(format!(
            "{} relations did not confirm h R; try another --seed",
            raws.len()
        )));
    };
    let raw_relations: Vec<Relation> = raws
        .iter()
        .map(|r| Relation {
            entries: r
                .exponents
                .iter()
                .map(|(i, e)| (*i as u32, Integer::from(*e)))
                .collect(),
            witness: Witness::Coordinates {
                coordinates: r.coords.clone(),
            },
        })
        .collect();
    let (claim, lattice) = lattice_and_claim(alg.finish(), Vec::new(), raw_relations)?;
    let regulator = regulator_enclosure(&checked_roots, order, &raws, &found.units, r)
        .ok_or_else(|| ProveError::SearchFailed("the regulator enclosure failed".into()))?;
    progress.say(&format!(
        "class number {}, regulator {}",
        claim.class_number,
        classcert_verifier::report::decimal(&regulator)
    ));
    let to_b = |i: &Interval| {
        crate::setup::to_bounds(i)
            .ok_or_else(|| ProveError::SearchFailed("an enclosure is out of range".into()))
    };
    Ok(FieldBody {
        producer: producer(opts),
        order: Order::Polynomial {
            polynomial: f.to_vec(),
            basis: order.basis().to_vec(),
            denominator: order.den().clone(),
        },
        claim,
        maximality: Some(maximality),
        unfactored: mo.unfactored.clone(),
        generation_theorem: registry::BACH_NUMBER_FIELD.to_string(),
        factor_base,
        lattice,
        roots: embedding,
        units: FieldUnits {
            w,
            zeta,
            units: found.units,
            regulator: to_b(&regulator)?,
        },
        euler: EulerTrace {
            theorem: registry::BELABAS_FRIEDMAN.to_string(),
            x,
            checkpoints: Vec::new(),
            log_l: to_b(&res.log_l)?,
        },
    })
}

/// Proves `F`, encodes the certificate and runs the verifier on the bytes.
pub fn field_to_bytes(f: &[Integer], opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let body = prove_field(f, opts)?;
    encode_and_check(&Document::Field(Box::new(body)), opts)
}
