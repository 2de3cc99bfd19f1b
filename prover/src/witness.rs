//! Order-witness certificates for a claimed class number `H` of an
//! imaginary quadratic order (design note, section 6): factor `H`, prove
//! its primes, find a class of exact order `H` among products of prime
//! forms, and check beforehand that the Euler product bounds `#Cl < 2H`.
//!
//! Every class has order dividing `#Cl`, so a class `c` with `c^H ≠ 1`
//! shows at once that `H` is not the class number; the prover then
//! refuses with that class as the reason.

use crate::factor;
use crate::fb::FactorBase;
use crate::prove::{
    analytic, choose_x, collect_factors, euler_trace, maximality, producer, validate, Options,
    ProveError,
};
use crate::rng::Rng;
use classcert_format::*;
use classcert_verifier::arith::{primes_up_to, small_conductor};
use classcert_verifier::form::Form;
use classcert_verifier::interval::Interval;
use rug::Integer;

/// Candidates tried for a class of exact order `H`.
const MAX_CANDIDATES: usize = 2000;

/// Builds an order-witness certificate for `#Cl(O_D) = h`, or says why not.
pub fn prove_witness(
    d: &Integer,
    h: &Integer,
    h_factors: Option<Vec<Integer>>,
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
    let mut progress = crate::progress::Progress::new(opts.progress);
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
    let max_claim = maximality(d, opts, &mut progress)?;
    let x = opts.euler_x.unwrap_or_else(|| choose_x(&abs_d, 0.2));
    let primes = primes_up_to(x);
    let (conductor, d_small) = small_conductor(d, &primes);
    let (res, log_h) = analytic(d, x, &primes, &conductor, &d_small)?;
    let log_big_h = Interval::int(h).ln().expect("H >= 1");
    if log_big_h.lo > log_h.hi {
        return Err(ProveError::InvalidInput(format!(
            "H = {h} is larger than the analytic bound allows (#Cl <= {:.4e} under GRH): it is not the class number",
            log_h.hi.to_f64().exp()
        )));
    }
    if log_big_h.lo <= log_h.sub(&Interval::ln2()).hi {
        return Err(ProveError::InvalidInput(format!(
            "H = {h} is too small for an order witness: under GRH #Cl lies in [{:.4e}, {:.4e}], so #Cl = 2H or more is not excluded",
            log_h.lo.to_f64().exp(),
            log_h.hi.to_f64().exp()
        )));
    }
    // A class of exact order H.
    let cond_primes: Vec<u64> = conductor.iter().map(|(p, _)| *p).collect();
    let fb = FactorBase::new(d, &primes, x.min(50_000), &cond_primes);
    let principal = Form::principal(d);
    let pow = |f: &Form, e: &Integer| f.pow(e, d).expect("form arithmetic");
    let cofactors: Vec<Integer> = fac.iter().map(|(q, _)| Integer::from(h / q)).collect();
    let mut rng = Rng::new(opts.seed);
    let mut found = None;
    for i in 0..MAX_CANDIDATES {
        if fb.is_empty() {
            break;
        }
        // prime forms first, then random products of a few of them
        let cand = if i < fb.len().min(50) {
            fb.forms[i].clone()
        } else {
            let mut c = principal.clone();
            for _ in 0..3 {
                let j = rng.below(fb.len().min(200) as u64) as usize;
                c = c.compose(&fb.forms[j]).expect("form arithmetic");
            }
            c
        };
        if pow(&cand, h) != principal {
            return Err(ProveError::InvalidInput(format!(
                "H = {h} is not the class number: the class of ({}, {}, {}) has order not dividing H",
                cand.a, cand.b, cand.c
            )));
        }
        if cofactors.iter().all(|e| pow(&cand, e) != principal) {
            found = Some(cand);
            break;
        }
    }
    let g = match (found, *h == 1) {
        (Some(g), _) => g,
        (None, true) => principal.clone(),
        (None, false) => {
            return Err(ProveError::SearchFailed(format!(
                "no class of exact order H = {h} among {MAX_CANDIDATES} tried: the class group may not be cyclic, or H may be a proper multiple of every order; use the full certificate (prove without --claim-class-number)"
            )))
        }
    };
    Ok(WitnessBody {
        producer: producer(opts),
        order: Order::Quadratic {
            discriminant: d.clone(),
        },
        class_number: h.clone(),
        h_factors: h_powers,
        form: classcert_format::Form {
            a: g.a,
            b: g.b,
            c: g.c,
        },
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
    opts: &Options,
) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let w = prove_witness(d, h, h_factors, opts)?;
    crate::encode_and_check(&Document::OrderWitness(Box::new(w)), opts)
}
