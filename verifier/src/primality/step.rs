//! What both proof steps share: how a step fails, and the factored part
//! `F` of `N ∓ 1` built one prime power at a time.

use crate::limits::MAX_DISCRIMINANT_BITS;
use crate::report::view::short_number;
use rug::Integer;

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

/// A step refused: `N` (shortened) and why.
pub(super) fn invalid(n: &Integer, why: impl std::fmt::Display) -> ProofError {
    ProofError::Invalid(format!("{}: {why}", short_number(n)))
}

/// The factored part `F` of `m = N ∓ 1`, one prime power at a time: `q`
/// above the previous one, `e >= 1`, and the running product divides `m`
/// (`q^e` is bounded by `m` before it is formed).
pub(super) struct Factored<'a> {
    m: &'a Integer,
    pub(super) f: Integer,
    prev: Integer,
}

impl<'a> Factored<'a> {
    pub(super) fn new(m: &'a Integer) -> Self {
        Factored {
            m,
            f: Integer::from(1),
            prev: Integer::new(),
        }
    }

    pub(super) fn push(&mut self, q: &Integer, e: u32) -> Result<(), String> {
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

/// What both theorems ask of `N` and of the length of the factor list
/// before any arithmetic: `N` odd and at least 5, the list within the cap.
pub(super) fn check_size(n: &Integer, factors: usize) -> Result<(), ProofError> {
    if *n < 5 || n.is_even() {
        return Err(invalid(n, "the theorem is used for odd N >= 5 only"));
    }
    if factors > crate::limits::MAX_PROOF_FACTORS {
        return Err(ProofError::OverLimit);
    }
    Ok(())
}
