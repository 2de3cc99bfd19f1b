//! Primality proofs for the primes a certificate lists: Pocklington's
//! `N - 1` and Morrison's `N + 1` theorems, with the BPSW test as the
//! fallback the verdict names.

use super::complete::factor;
use super::primes::{is_prime, small_primes};
use classcert_format::{MorrisonFactor, PocklingtonFactor, PrimalityEvidence};
use rug::ops::Pow;
use rug::Integer;

/// Evidence that the prime `p` is prime. Up to 2^32 the Baillie–PSW test,
/// which is a proof there. Above, a Pocklington proof (H. C. Pocklington,
/// 1914; see `classcert_verifier::math::primality`) when the part of `p - 1`
/// that trial division and `budget_steps` of Pollard–Brent rho factor is
/// at least `sqrt p`, else Morrison's `N + 1` proof when enough of `p + 1`
/// factors; each factor above 2^32 gets its own proof. A proof
/// is preferred to the BPSW test even below 2^64, where the test is
/// deterministic only by an exhaustive search that a reviewer cannot
/// repeat. Otherwise the Baillie–PSW test, which the verdict lists as an
/// assumption above 2^64.
pub fn primality_evidence(p: &Integer, budget_steps: u64) -> PrimalityEvidence {
    prove_prime(p, budget_steps, 0).unwrap_or(PrimalityEvidence::Bpsw)
}

fn prove_prime(p: &Integer, budget_steps: u64, depth: u32) -> Option<PrimalityEvidence> {
    if p.significant_bits() <= 32 || depth > 16 || !is_prime(p) {
        return None;
    }
    let n1 = Integer::from(p - 1u32);
    let m1 = factored_part(&n1, budget_steps);
    let minus_ok = Integer::from(product(&m1).square_ref()) >= *p;
    let n2 = Integer::from(p + 1u32);
    let m2 = factored_part(&n2, budget_steps);
    let plus_ok = Integer::from((product(&m2) - 1u32).square_ref()) > *p;
    // the side whose largest prime is smaller needs fewer nested proofs
    let largest = |m: &[(Integer, u32)]| m.last().map(|(q, _)| q.clone()).unwrap_or_default();
    match (minus_ok, plus_ok) {
        (true, true) if largest(&m2) < largest(&m1) => morrison(p, m2, budget_steps, depth),
        (true, _) => pocklington(p, &n1, m1, budget_steps, depth),
        (false, true) => morrison(p, m2, budget_steps, depth),
        (false, false) => None,
    }
}

/// The part of `n` that trial division and `budget_steps` of rho factor:
/// all of it if rho succeeds, else what trial division finds.
fn factored_part(n: &Integer, budget_steps: u64) -> Vec<(Integer, u32)> {
    if let Some(f) = factor(n, budget_steps) {
        return f;
    }
    let mut rest = n.clone();
    let mut f = Vec::new();
    for &q in small_primes() {
        let mut e = 0u32;
        while rest.is_divisible_u(q) {
            rest.div_exact_u_mut(q);
            e += 1;
        }
        if e > 0 {
            f.push((Integer::from(q), e));
        }
    }
    f
}

fn product(f: &[(Integer, u32)]) -> Integer {
    f.iter().map(|(q, e)| Integer::from(q.pow(*e))).product()
}

fn sub_proof(q: &Integer, budget_steps: u64, depth: u32) -> Box<PrimalityEvidence> {
    Box::new(prove_prime(q, budget_steps, depth + 1).unwrap_or(PrimalityEvidence::Bpsw))
}

fn pocklington(
    p: &Integer,
    n1: &Integer,
    factors: Vec<(Integer, u32)>,
    budget_steps: u64,
    depth: u32,
) -> Option<PrimalityEvidence> {
    let mut out = Vec::with_capacity(factors.len());
    for (q, e) in factors {
        let exp = Integer::from(n1 / &q);
        // p is prime: a base works iff a^((p-1)/q) ≠ 1 (mod p)
        let base = (2u32..10_000)
            .map(Integer::from)
            .find(|a| a.clone().pow_mod(&exp, p).map(|r| r != 1).unwrap_or(false))?;
        let evidence = sub_proof(&q, budget_steps, depth);
        out.push(PocklingtonFactor {
            q,
            e,
            base,
            evidence,
        });
    }
    Some(PrimalityEvidence::Pocklington { factors: out })
}

/// Morrison's N + 1 proof: small Lucas parameters `(P, Q)` are tried until
/// the verifier's own check accepts them (M. A. Morrison, Math. Comp. 29
/// (1975)).
fn morrison(
    p: &Integer,
    factors: Vec<(Integer, u32)>,
    budget_steps: u64,
    depth: u32,
) -> Option<PrimalityEvidence> {
    let factors: Vec<MorrisonFactor> = factors
        .into_iter()
        .map(|(q, e)| MorrisonFactor {
            evidence: sub_proof(&q, budget_steps, depth),
            q,
            e,
        })
        .collect();
    for lucas_q in 2i64..64 {
        for lucas_p in 1i64..64 {
            let delta = Integer::from(lucas_p * lucas_p - 4 * lucas_q);
            if delta.jacobi(p) != -1 {
                continue;
            }
            let ev = PrimalityEvidence::Morrison {
                lucas_p: Integer::from(lucas_p),
                lucas_q: Integer::from(lucas_q),
                factors: factors.clone(),
            };
            let mut used = classcert_verifier::math::primality::Used::default();
            if classcert_verifier::math::primality::check(p, &ev, 0, &mut used).is_ok() {
                return Some(ev);
            }
        }
    }
    None
}
