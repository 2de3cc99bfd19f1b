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

use crate::limits::*;
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

/// Why evidence was refused.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ProofError {
    /// The number fails the Baillie–PSW test: it is composite.
    Composite(Integer),
    /// The proof does not show what it claims.
    Invalid(String),
    /// The proof is deeper or longer than the verifier allows.
    OverLimit,
}

/// What checking a proof used, for the verdict.
#[derive(Debug, Default, Clone, Copy)]
pub struct Used {
    pub pocklington: bool,
    pub morrison: bool,
}

/// The factored part `F` of `m = N ∓ 1`, one prime power at a time: `q`
/// above the previous one, `e >= 1`, and the running product divides `m`
/// (`q^e` is bounded by `m` before it is formed).
pub(crate) struct Factored<'a> {
    m: &'a Integer,
    pub(crate) f: Integer,
    prev: Integer,
}

impl<'a> Factored<'a> {
    pub(crate) fn new(m: &'a Integer) -> Self {
        Factored {
            m,
            f: Integer::from(1),
            prev: Integer::new(),
        }
    }

    pub(crate) fn push(&mut self, q: &Integer, e: u32) -> Result<(), String> {
        if *q <= self.prev || e == 0 || e > MAX_DISCRIMINANT_BITS {
            return Err("factors must be increasing, with positive exponents".into());
        }
        self.prev = q.clone();
        if u64::from(e) * u64::from(q.significant_bits().saturating_sub(1))
            > u64::from(self.m.significant_bits())
        {
            return Err(format!("{q}^{e} exceeds {}", self.m));
        }
        self.f *= Integer::from(rug::ops::Pow::pow(q, e));
        if !self.m.is_divisible(&self.f) {
            return Err(format!(
                "the product of the factors up to {q} does not divide {}",
                self.m
            ));
        }
        Ok(())
    }
}

/// Checks that `n` is prime by `ev`. `work` counts modular
/// exponentiations left.
pub fn check(
    n: &Integer,
    ev: &PrimalityEvidence,
    depth: u32,
    work: &mut u64,
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
        PrimalityEvidence::Morrison {
            lucas_p,
            lucas_q,
            factors,
        } => morrison::check(n, lucas_p, lucas_q, factors, depth, work, used),
        PrimalityEvidence::Pocklington { factors } => {
            pocklington::check(n, factors, depth, work, used)
        }
    }
}
