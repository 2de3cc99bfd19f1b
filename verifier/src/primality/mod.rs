//! Primality proofs: Pocklington's `N - 1` theorem and Morrison's `N + 1`
//! theorem, each a tree whose leaves are Baillie–PSW passes below 2^64.
//!
//!
//! The tree: each node is a Pocklington step ([`pocklington`]) or a Morrison
//! step ([`morrison`]) whose factors carry their own evidence; the leaves
//! are Baillie–PSW passes ([`bpsw`]), a proof below 2^64 and an assumption
//! above it.

pub mod bpsw;
mod morrison;
mod pocklington;
mod step;

pub use step::ProofError;

use crate::limits::{MAX_DISCRIMINANT_BITS, MAX_PROOF_DEPTH};
use bpsw::{primality_evidence, Evidence};
use classcert_format::PrimalityEvidence;
use rug::Integer;

/// What a piece of evidence shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// Proven prime (no assumption).
    Proven,
    /// Prime if the Baillie–PSW test has no counterexample at this size.
    AssumedBpsw,
}

/// What checking a proof used, for the verdict.
#[derive(Debug, Default, Clone, Copy)]
pub struct Used {
    pub pocklington: bool,
    pub morrison: bool,
}

/// Checks that `n` is prime by `ev` (its modular powers are bounded
/// before it starts, `limits::estimate`).
pub fn check(
    n: &Integer,
    ev: &PrimalityEvidence,
    depth: u32,
    used: &mut Used,
) -> Result<Status, ProofError> {
    if depth > MAX_PROOF_DEPTH || n.significant_bits() > MAX_DISCRIMINANT_BITS {
        return Err(ProofError::OverLimit);
    }
    match ev {
        PrimalityEvidence::Bpsw => match primality_evidence(n) {
            Evidence::Composite => Err(ProofError::Composite(n.clone())),
            Evidence::ProvenPrime => Ok(Status::Proven),
            Evidence::ProbablePrime => Ok(Status::AssumedBpsw),
        },
        PrimalityEvidence::Pocklington { factors } => {
            used.pocklington = true;
            pocklington::check_step(n, factors)?;
            let subs = factors.iter().map(|f| (&f.q, &*f.evidence));
            check_factors(subs, depth, used)
        }
        PrimalityEvidence::Morrison {
            lucas_p,
            lucas_q,
            factors,
        } => {
            used.morrison = true;
            morrison::check_step(n, lucas_p, lucas_q, factors)?;
            let subs = factors.iter().map(|f| (&f.q, &*f.evidence));
            check_factors(subs, depth, used)
        }
    }
}

/// The evidence of each prime factor of a step, one level down the tree.
fn check_factors<'a>(
    subs: impl Iterator<Item = (&'a Integer, &'a PrimalityEvidence)>,
    depth: u32,
    used: &mut Used,
) -> Result<Status, ProofError> {
    let mut status = Status::Proven;
    for (q, ev) in subs {
        if check(q, ev, depth + 1, used)? == Status::AssumedBpsw {
            status = Status::AssumedBpsw;
        }
    }
    Ok(status)
}
