//! Pocklington's `N - 1` theorem, one step of a primality proof tree.
//!
//! Pocklington's theorem (H. C. Pocklington, "The
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
//!

use super::step::{check_size, invalid, Factored, ProofError};
use classcert_format::PocklingtonFactor;
use rug::Integer;

/// Checks the step `N - 1 = F R` with the stated factors of `F` (their own
/// primality is checked one level down the tree, by the caller).
pub(super) fn check_step(n: &Integer, factors: &[PocklingtonFactor]) -> Result<(), ProofError> {
    check_size(n, factors.len())?;
    let n1 = Integer::from(n - 1u32);
    let mut fp = Factored::new(&n1);
    for pf in factors {
        fp.push(&pf.q, pf.e).map_err(|why| invalid(n, why))?;
        if pf.base < 2 || pf.base >= n1 {
            return Err(invalid(n, format!("base {} is not in [2, N - 2]", pf.base)));
        }
        let Ok(fermat) = pf.base.clone().pow_mod(&n1, n) else {
            return Err(invalid(n, "modular power failed"));
        };
        if fermat != 1 {
            return Err(invalid(n, format!("{}^(N-1) is not 1 mod N", pf.base)));
        }
        let Ok(part) = pf.base.clone().pow_mod(&Integer::from(&n1 / &pf.q), n) else {
            return Err(invalid(n, "modular power failed"));
        };
        if (part - 1u32).gcd(n) != 1 {
            return Err(invalid(
                n,
                format!("gcd({}^((N-1)/{}) - 1, N) is not 1", pf.base, pf.q),
            ));
        }
    }
    if Integer::from(fp.f.square_ref()) < *n {
        return Err(invalid(n, "the factored part F of N - 1 has F^2 < N"));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use crate::primality::{check, ProofError, Status, Used};
    use classcert_format::{PocklingtonFactor, PrimalityEvidence};
    use rug::Integer;

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
        let mut used = Used::default();
        assert_eq!(
            check(&Integer::from(97), &ev, 0, &mut used),
            Ok(Status::Proven)
        );
        assert!(used.pocklington);
        // 2^5 alone: 32^2 >= 97, enough
        let ev = PrimalityEvidence::Pocklington {
            factors: vec![leaf(2, 5, 5)],
        };
        assert!(check(&Integer::from(97), &ev, 0, &mut used).is_ok());
        // 3 alone: 9 < 97, not enough
        let ev = PrimalityEvidence::Pocklington {
            factors: vec![leaf(3, 1, 5)],
        };
        assert!(matches!(
            check(&Integer::from(97), &ev, 0, &mut used),
            Err(ProofError::Invalid(_))
        ));
        // 91 = 7 · 13 is composite: 91 - 1 = 2 · 3^2 · 5, and no base works
        for a in 2..90u64 {
            let ev = PrimalityEvidence::Pocklington {
                factors: vec![leaf(2, 1, a), leaf(3, 2, a), leaf(5, 1, a)],
            };
            assert!(check(&Integer::from(91), &ev, 0, &mut used).is_err());
        }
    }
}
