//! Primality proofs by Pocklington's theorem (H. C. Pocklington, "The
//! determination of the prime or composite nature of large numbers by
//! Fermat's theorem", Proc. Cambridge Phil. Soc. 18 (1914); in the form of
//! J. Brillhart, D. H. Lehmer and J. L. Selfridge, Math. Comp. 29 (1975),
//! registry entry `pocklington-1914`):
//!
//! ```text
//! N - 1 = F R with F = ∏ q^e, every q prime. If for each q there is an a
//! with a^(N-1) ≡ 1 (mod N) and gcd(a^((N-1)/q) - 1, N) = 1, then every
//! prime factor p of N has p ≡ 1 (mod F). If moreover F² ≥ N, N is prime.
//! ```
//!
//! (Every prime p | N then exceeds F ≥ sqrt N, so N has no prime factor up
//! to its square root.) Each `q` carries its own evidence, checked the same
//! way, so a proof is a tree; below 2^64 a Baillie–PSW pass is a proof.

use crate::limits::*;
use crate::primality::{primality_evidence, Evidence};
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
    let factors = match ev {
        PrimalityEvidence::Bpsw => {
            return match primality_evidence(n) {
                Evidence::Composite => Err(ProofError::Composite(n.clone())),
                Evidence::ProvenPrime => Ok(Status::Proven),
                Evidence::ProbablePrime => Ok(Status::AssumedBpsw),
            }
        }
        PrimalityEvidence::Pocklington { factors } => factors,
    };
    used.pocklington = true;
    let invalid = |why: String| Err(ProofError::Invalid(format!("{n}: {why}")));
    if *n < 5 || n.is_even() {
        return invalid("the theorem is used for odd N >= 5 only".into());
    }
    if factors.len() > MAX_PROOF_FACTORS {
        return Err(ProofError::OverLimit);
    }
    let n1 = Integer::from(n - 1u32);
    let mut f = Integer::from(1);
    let mut prev = Integer::new();
    let mut status = Status::Proven;
    for pf in factors {
        if pf.q <= prev || pf.e == 0 || pf.e > MAX_DISCRIMINANT_BITS {
            return invalid("factors must be increasing, with positive exponents".into());
        }
        prev = pf.q.clone();
        // q^e divides N - 1 (checked before q^e is formed at full size)
        if u64::from(pf.e) * u64::from(pf.q.significant_bits().saturating_sub(1))
            > u64::from(n1.significant_bits())
        {
            return invalid(format!("{}^{} exceeds N - 1", pf.q, pf.e));
        }
        let qe = Integer::from(rug::ops::Pow::pow(&pf.q, pf.e));
        f *= &qe;
        if !n1.is_divisible(&f) {
            return invalid(format!(
                "the product of the factors up to {} does not divide N - 1",
                pf.q
            ));
        }
        if pf.base < 2 || pf.base >= n1 {
            return invalid(format!("base {} is not in [2, N - 2]", pf.base));
        }
        if *work < 2 {
            return Err(ProofError::OverLimit);
        }
        *work -= 2;
        let Ok(fermat) = pf.base.clone().pow_mod(&n1, n) else {
            return invalid("modular power failed".into());
        };
        if fermat != 1 {
            return invalid(format!("{}^(N-1) is not 1 mod N", pf.base));
        }
        let Ok(part) = pf.base.clone().pow_mod(&Integer::from(&n1 / &pf.q), n) else {
            return invalid("modular power failed".into());
        };
        if (part - 1u32).gcd(n) != 1 {
            return invalid(format!("gcd({}^((N-1)/{}) - 1, N) is not 1", pf.base, pf.q));
        }
        match check(&pf.q, &pf.evidence, depth + 1, work, used)? {
            Status::Proven => {}
            Status::AssumedBpsw => status = Status::AssumedBpsw,
        }
    }
    if Integer::from(f.square_ref()) < *n {
        return invalid("the factored part F of N - 1 has F^2 < N".into());
    }
    Ok(status)
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::PocklingtonFactor;

    fn leaf(q: u64, e: u32, base: u64) -> PocklingtonFactor {
        PocklingtonFactor {
            q: Integer::from(q),
            e,
            base: Integer::from(base),
            evidence: Box::new(PrimalityEvidence::Bpsw),
        }
    }

    #[test]
    fn small_proofs() {
        // 97 - 1 = 2^5 · 3, and 5 is a primitive root mod 97 (common practice)
        let ev = PrimalityEvidence::Pocklington {
            factors: vec![leaf(2, 5, 5), leaf(3, 1, 5)],
        };
        let mut work = 100;
        let mut used = Used::default();
        assert_eq!(
            check(&Integer::from(97), &ev, 0, &mut work, &mut used),
            Ok(Status::Proven)
        );
        assert!(used.pocklington);
        // 2^5 alone: 32^2 >= 97, enough
        let ev = PrimalityEvidence::Pocklington {
            factors: vec![leaf(2, 5, 5)],
        };
        assert!(check(&Integer::from(97), &ev, 0, &mut work, &mut used).is_ok());
        // 3 alone: 9 < 97, not enough
        let ev = PrimalityEvidence::Pocklington {
            factors: vec![leaf(3, 1, 5)],
        };
        assert!(matches!(
            check(&Integer::from(97), &ev, 0, &mut work, &mut used),
            Err(ProofError::Invalid(_))
        ));
        // 91 = 7 · 13 is composite: 91 - 1 = 2 · 3^2 · 5, and no base works
        for a in 2..90u64 {
            let ev = PrimalityEvidence::Pocklington {
                factors: vec![leaf(2, 1, a), leaf(3, 2, a), leaf(5, 1, a)],
            };
            assert!(check(&Integer::from(91), &ev, 0, &mut 1000, &mut used).is_err());
        }
    }
}
