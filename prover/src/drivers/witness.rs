//! Order-witness certificates for a claimed class number `H` of an
//! imaginary quadratic order (`docs/certificates.md`, section 6): factor `H`, prove
//! its primes, find a class of exact order `H` among products of prime
//! forms, and check beforehand that the Euler product bounds `#Cl < 2H`.
//!
//! Every class has order dividing `#Cl`, so a class `c` with `c^H ≠ 1`
//! shows at once that `H` is not the class number; the prover then
//! refuses with that class as the reason.

use crate::factor;
use crate::fb::FactorBase;
use crate::progress::Progress;
use crate::rng::Rng;
use crate::setup::{
    analytic, choose_x, collect_factors, euler_trace, maximality, producer, validate, Options,
    ProveError,
};
use classcert_format::*;
use classcert_verifier::math::Form;
use classcert_verifier::math::Interval;
use classcert_verifier::math::{primes_up_to, small_conductor};
use rug::Integer;

/// Candidates tried for a class of exact order `H`.
const MAX_CANDIDATES: usize = 2000;

/// Builds an order-witness certificate for `#Cl(O_D) = h`, or says why not.
/// No nonzero combination of the `g^(d/p)` is trivial, for each prime `p`
/// (the check the verifier makes, by brute force over `(Z/p)^r`).
fn independent(gens: &[(Integer, Form)], primes: &[Integer], d: &Integer) -> bool {
    let principal = Form::principal(d);
    for p in primes {
        let socle: Vec<Form> = gens
            .iter()
            .filter(|(di, _)| di.is_divisible(p))
            .map(|(di, g)| g.pow(&Integer::from(di / p), d).expect("form arithmetic"))
            .collect();
        if socle.len() < 2 {
            continue;
        }
        let Some(pu) = p.to_u64() else {
            return false;
        };
        let size = pu.saturating_pow(socle.len() as u32);
        if size > 1_000_000 {
            return false;
        }
        let mut c = vec![0u64; socle.len()];
        for _ in 1..size {
            for slot in c.iter_mut() {
                *slot += 1;
                if *slot < pu {
                    break;
                }
                *slot = 0;
            }
            let exps: Vec<Integer> = c.iter().map(|&x| Integer::from(x)).collect();
            let terms: Vec<(&Form, &Integer)> = socle.iter().zip(exps.iter()).collect();
            if Form::product(&terms, d).expect("form arithmetic") == principal {
                return false;
            }
        }
    }
    true
}

pub fn prove_witness(
    d: &Integer,
    h: &Integer,
    h_factors: Option<Vec<Integer>>,
    invariants: Option<Vec<Integer>>,
    opts: &Options,
) -> Result<WitnessBody, ProveError> {
    validate(d)?;
    if *d > 0 {
        return Err(ProveError::Unsupported(
            "order witnesses are for D < 0 (for D > 0 the regulator is needed too); run prove without --claim-class-number".into(),
        ));
    }
    if *h < 1 {
        return Err(ProveError::InvalidInput(format!(
            "the claimed class number {h} is not positive"
        )));
    }
    let progress = Progress::new(opts.progress);
    progress.phase("order witness: factoring H, then the analytic bound");
    let abs_d = Integer::from(d.abs_ref());
    // H and its primes
    let fac: Vec<(Integer, u32)> = match h_factors {
        Some(list) => collect_factors(&list, h, "--factors-of-h", "H")?,
        None => factor::factor(h, opts.factor_budget).ok_or_else(|| {
            ProveError::SearchFailed(format!(
                "could not factor H = {h} within the budget; give its primes with --factors-of-h"
            ))
        })?,
    };
    let mut h_powers = Vec::with_capacity(fac.len());
    for (p, e) in &fac {
        h_powers.push(PrimePower {
            prime: p.clone(),
            exponent: *e,
            evidence: factor::primality_evidence(p, opts.factor_budget),
        });
    }
    // The analytic side: #Cl lies in [e^lo, e^hi]; H must be > e^hi / 2.
    let max_claim = maximality(d, opts, &progress)?;
    let x = opts.euler_x.unwrap_or_else(|| choose_x(&abs_d, 0.2));
    let primes = primes_up_to(x);
    let (conductor, d_small) = small_conductor(d, &primes);
    let (res, log_h) = analytic(d, x, &primes, &conductor, &d_small)?;
    let log_big_h = Interval::int(h).ln().expect("H >= 1");
    if log_big_h.lo > log_h.hi {
        return Err(ProveError::Refuted(format!(
            "H = {h} is larger than the analytic bound allows (#Cl <= {:.4e} under GRH): it is not the class number",
            log_h.hi.to_f64().exp()
        )));
    }
    if log_big_h.lo <= log_h.sub(&Interval::ln2()).hi {
        return Err(ProveError::SearchFailed(format!(
            "H = {h} is too small for an order witness: under GRH #Cl lies in [{:.4e}, {:.4e}], so #Cl = 2H or more is not excluded",
            log_h.lo.to_f64().exp(),
            log_h.hi.to_f64().exp()
        )));
    }
    // Invariants: the claim's, or [H] (cyclic); none for H = 1.
    let invariants: Vec<Integer> = match invariants {
        Some(v) => {
            let prod: Integer = v.iter().product();
            let chain = v.windows(2).all(|w| w[1].is_divisible(&w[0]));
            if prod != *h || !chain || v.iter().any(|x| *x <= 1) {
                return Err(ProveError::InvalidInput(format!(
                    "the claimed invariants must exceed 1, divide each other in turn and multiply to H = {h}"
                )));
            }
            v
        }
        None if *h == 1 => vec![],
        None => vec![h.clone()],
    };
    // Classes of exact orders d_i, independent: for random c, c itself or
    // c^(e/d_i) with e the group's exponent (the largest invariant).
    let cond_primes: Vec<u64> = conductor.iter().map(|(p, _)| *p).collect();
    let fb = FactorBase::new(d, &primes, x.min(50_000), &cond_primes);
    let principal = Form::principal(d);
    let pow = |f: &Form, e: &Integer| f.pow(e, d).expect("form arithmetic");
    let exponent = invariants
        .last()
        .cloned()
        .unwrap_or_else(|| Integer::from(1));
    let primes_of_h: Vec<Integer> = fac.iter().map(|(q, _)| q.clone()).collect();
    let mut rng = Rng::new(opts.seed);
    let mut chosen: Vec<(Integer, Form)> = Vec::new();
    let mut tries = 0usize;
    progress.phase("searching for classes of the claimed orders");
    for di in invariants.iter().rev() {
        loop {
            tries += 1;
            progress.tick(tries as u64, Some(MAX_CANDIDATES as u64));
            if tries > MAX_CANDIDATES || fb.is_empty() {
                return Err(ProveError::SearchFailed(format!(
                    "no independent classes of orders {} among {MAX_CANDIDATES} tried: the group may have another structure; use the full certificate (prove without --claim-class-number)",
                    invariants.iter().map(|x| x.to_string()).collect::<Vec<_>>().join(", ")
                )));
            }
            // prime forms first, then random products of a few of them
            let c = if tries <= fb.len().min(50) {
                fb.forms[tries - 1].clone()
            } else {
                let mut c = principal.clone();
                for _ in 0..3 {
                    let j = rng.below(fb.len().min(200) as u64) as usize;
                    c = c.compose(&fb.forms[j]).expect("form arithmetic");
                }
                c
            };
            if pow(&c, &exponent) != principal {
                return Err(ProveError::Refuted(format!(
                    "the claim is wrong: the class of ({}, {}, {}) has order not dividing {exponent}",
                    c.a, c.b, c.c
                )));
            }
            // c itself when its order divides d_i (it may lie outside the
            // larger invariants' multiples), else c^(e/d_i)
            let g = if pow(&c, di) == principal {
                c.reduce().expect("a positive definite form reduces")
            } else {
                pow(&c, &Integer::from(&exponent / di))
            };
            let exact = primes_of_h
                .iter()
                .filter(|q| di.is_divisible(q))
                .all(|q| pow(&g, &Integer::from(di / q)) != principal);
            if !exact {
                continue;
            }
            let mut trial = chosen.clone();
            trial.push((di.clone(), g.clone()));
            if independent(&trial, &primes_of_h, d) {
                chosen.push((di.clone(), g));
                break;
            }
        }
    }
    chosen.reverse();
    Ok(WitnessBody {
        producer: producer(opts),
        order: Order::Quadratic {
            discriminant: d.clone(),
        },
        class_number: h.clone(),
        h_factors: h_powers,
        generators: chosen
            .into_iter()
            .map(|(order, g)| WitnessGenerator {
                order,
                form: classcert_format::Form {
                    a: g.a,
                    b: g.b,
                    c: g.c,
                },
            })
            .collect(),
        conductor_small: conductor,
        maximality: max_claim,
        euler: euler_trace(&res, x),
    })
}

/// Proves, encodes, and runs the verifier on the bytes.
pub fn prove_witness_to_bytes(
    d: &Integer,
    h: &Integer,
    h_factors: Option<Vec<Integer>>,
    invariants: Option<Vec<Integer>>,
    opts: &Options,
) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let w = prove_witness(d, h, h_factors, invariants, opts)?;
    super::common::encode_and_check(&Document::OrderWitness(Box::new(w)), opts)
}
