//! Primality proofs: the prover's Pocklington proofs for large primes
//! whose `N - 1` factors, checked by the verifier; composites refused.
//! The primes are built here from random small primes, and their primality
//! is confirmed with GMP's Miller–Rabin test (`rug`), independently of the
//! prover's factoring and of the verifier's Baillie–PSW code.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::PrimalityEvidence;
use classcert_prover::factor::primality_evidence;
use classcert_tests::support::{is_prime_u64, SplitMix};
use classcert_verifier::math::primality::{check, ProofError, Status, Used};
use rug::integer::IsPrime;
use rug::Integer;

/// A prime N = 2 · ∏ q_i + 1 >= 2^bits with small random primes q_i.
fn smooth_prime(rng: &mut SplitMix, bits: u32) -> Integer {
    loop {
        let mut n = Integer::from(2);
        while n.significant_bits() < bits {
            let q = loop {
                let q = rng.range(3, 1_000_000);
                if is_prime_u64(q) {
                    break q;
                }
            };
            n *= q;
        }
        n += 1;
        if n.is_probably_prime(40) != IsPrime::No {
            return n;
        }
    }
}

fn verify(n: &Integer, ev: &PrimalityEvidence) -> Result<Status, ProofError> {
    check(n, ev, 0, &mut Used::default())
}

#[test]
fn large_primes_get_pocklington_proofs_that_verify() {
    let mut rng = SplitMix::new(0x5eed_0005);
    for bits in [64, 128, 300, 512] {
        let n = smooth_prime(&mut rng, bits);
        let ev = primality_evidence(&n, 3_000_000);
        let PrimalityEvidence::Pocklington { factors } = &ev else {
            panic!("{n}: expected a Pocklington proof, got {ev:?}");
        };
        assert!(!factors.is_empty());
        assert_eq!(verify(&n, &ev), Ok(Status::Proven), "{bits} bits: {n}");
        // a square base for q = 2 breaks the gcd condition
        let mut bad = factors.clone();
        bad[0].base = Integer::from(4);
        let bad = PrimalityEvidence::Pocklington { factors: bad };
        assert!(matches!(verify(&n, &bad), Err(ProofError::Invalid(_))));
    }
}

#[test]
fn composites_are_refused() {
    let mut rng = SplitMix::new(0x5eed_0006);
    let (p, q) = (smooth_prime(&mut rng, 160), smooth_prime(&mut rng, 160));
    let n = Integer::from(&p * &q);
    // the prover offers no proof for a composite, and BPSW refuses it
    assert_eq!(primality_evidence(&n, 100_000), PrimalityEvidence::Bpsw);
    assert!(matches!(
        verify(&n, &PrimalityEvidence::Bpsw),
        Err(ProofError::Composite(_))
    ));
    // a proof for p does not prove p q: p q - 1 is not divisible by p - 1's
    // factors in general, and the Fermat condition fails
    let ev = primality_evidence(&p, 3_000_000);
    assert!(verify(&n, &ev).is_err());
}

#[test]
fn carmichael_number_is_refused() {
    // 561 = 3 · 11 · 17 is the smallest Carmichael number (common
    // practice): a^560 ≡ 1 for every a prime to 561, but the gcd condition
    // of Pocklington's theorem fails for every base.
    let n = Integer::from(561);
    for a in 2..560u32 {
        let ev = PrimalityEvidence::Pocklington {
            factors: [(2u32, 4u32), (5, 1), (7, 1)]
                .iter()
                .map(|&(q, e)| classcert_format::PocklingtonFactor {
                    q: Integer::from(q),
                    e,
                    base: Integer::from(a),
                    evidence: Box::new(PrimalityEvidence::Bpsw),
                })
                .collect(),
        };
        assert!(verify(&n, &ev).is_err(), "base {a}");
    }
}

/// A prime N = 4 · ∏ ℓ_i - 1 >= 2^bits with small random primes ℓ_i (our
/// own choice, in the style of the primes of isogeny-based parameters).
fn plus_one_smooth_prime(rng: &mut SplitMix, bits: u32) -> Integer {
    loop {
        let mut n = Integer::from(4);
        while n.significant_bits() < bits {
            let l = loop {
                let l = rng.range(3, 2000);
                if is_prime_u64(l) {
                    break l;
                }
            };
            n *= l;
        }
        n -= 1;
        if n.is_probably_prime(40) != IsPrime::No {
            return n;
        }
    }
}

#[test]
fn primes_of_the_form_4_prod_l_minus_1_get_morrison_proofs() {
    let mut rng = SplitMix::new(0x5eed_0007);
    for bits in [64, 300, 512] {
        let n = plus_one_smooth_prime(&mut rng, bits);
        assert!(n.significant_bits() >= bits);
        let ev = primality_evidence(&n, 3_000_000);
        let PrimalityEvidence::Morrison { factors, .. } = &ev else {
            panic!("{n}: expected an N + 1 proof, got {ev:?}");
        };
        assert_eq!(verify(&n, &ev), Ok(Status::Proven), "{bits} bits: {n}");
        // the same factors with a square discriminant (P = 3, Q = 2) fail
        let bad = PrimalityEvidence::Morrison {
            lucas_p: Integer::from(3),
            lucas_q: Integer::from(2),
            factors: factors.clone(),
        };
        assert!(matches!(verify(&n, &bad), Err(ProofError::Invalid(_))));
    }
}
