//! Morrison's `N + 1` theorem, one step of a primality proof tree.
//!
//! Morrison's theorem (M. A. Morrison, "A note on primality testing using
//! Lucas sequences", Math. Comp. 29 (1975); registry entry `morrison-1975`),
//! with the Lucas sequence `U_0 = 0, U_1 = 1, U_{k+1} = P U_k - Q U_{k-1}`
//! (`Δ = P² - 4Q`):
//!
//! ```text
//! N + 1 = F R with F = ∏ q^e, every q prime, N odd, gcd(N, Q) = 1,
//! (Δ/N) = -1. If N | U_{N+1} and gcd(U_{(N+1)/q}, N) = 1 for each q,
//! then every prime p | N has p ≡ ±1 (mod F). If moreover (F - 1)² > N,
//! N is prime.
//! ```
//!
//! (The rank of apparition of each prime p | N is a multiple of F and
//! divides p - (Δ/p), so p ≥ F - 1 > sqrt N.) `U_k` comes from the
//! companion `V_k` by `Δ U_k = 2 V_{k+1} - P V_k`, and `gcd(Δ, N) = 1`,
//! so the verifier tests `W_k = 2 V_{k+1} - P V_k` instead.

use super::step::{check_size, invalid, Factored, ProofError};
use crate::arith::jacobi_big;
use crate::limits::MAX_LUCAS_PARAMETER_BITS;
use crate::report::view::short_number;
use classcert_format::MorrisonFactor;
use rug::Integer;

/// `(V_k, V_{k+1}) mod n` for the Lucas sequence with parameters `(P, Q)`,
/// by the doubling formulas `V_{2k} = V_k² - 2 Q^k`,
/// `V_{2k+1} = V_k V_{k+1} - P Q^k` (common practice).
/// `x` as an `i64` if `|x| < 2^MAX_LUCAS_PARAMETER_BITS`.
fn small(x: &Integer) -> Option<i64> {
    if x.significant_bits() > MAX_LUCAS_PARAMETER_BITS {
        return None;
    }
    x.to_i64()
}

fn lucas_v(p: &Integer, q: &Integer, k: &Integer, n: &Integer) -> (Integer, Integer) {
    let mut v0 = Integer::from(2);
    let mut v1 = Integer::from(p).modulo(n);
    let mut qk = Integer::from(1); // Q^k for the current k
    let bits = k.significant_bits();
    for i in (0..bits).rev() {
        let cross = (Integer::from(&v0 * &v1) - Integer::from(p * &qk)).modulo(n);
        if k.get_bit(i) {
            // k -> 2k + 1: V_{2k+1}, V_{2k+2} = V_{k+1}^2 - 2 Q^{k+1}
            let qk1 = Integer::from(&qk * q).modulo(n);
            v1 = (Integer::from(v1.square_ref()) - Integer::from(&qk1 << 1u32)).modulo(n);
            v0 = cross;
            qk = Integer::from(&qk * &qk1).modulo(n);
        } else {
            // k -> 2k: V_{2k} = V_k^2 - 2 Q^k, V_{2k+1}
            v0 = (Integer::from(v0.square_ref()) - Integer::from(&qk << 1u32)).modulo(n);
            v1 = cross;
            qk = Integer::from(qk.square_ref()).modulo(n);
        }
    }
    (v0, v1)
}

/// `Δ U_k mod n`, as `2 V_{k+1} - P V_k`.
fn lucas_du(p: &Integer, q: &Integer, k: &Integer, n: &Integer) -> Integer {
    let (v0, v1) = lucas_v(p, q, k, n);
    (Integer::from(&v1 << 1u32) - Integer::from(p * &v0)).modulo(n)
}

/// Checks the step `N + 1 = F R` with the Lucas parameters `P`, `Q` and
/// the stated factors of `F` (their own primality is checked one level
/// down the tree, by the caller).
pub(super) fn check_step(
    n: &Integer,
    p: &Integer,
    q: &Integer,
    factors: &[MorrisonFactor],
) -> Result<(), ProofError> {
    check_size(n, factors.len())?;
    if Integer::from(q.gcd_ref(n)) != 1 {
        return Err(invalid(
            n,
            format!("gcd(Q = {}, N) is not 1", short_number(q)),
        ));
    }
    // |P|, |Q| < 2^MAX_LUCAS_PARAMETER_BITS keeps P^2 - 4Q in an i64.
    let (Some(p_small), Some(q_small)) = (small(p), small(q)) else {
        return Err(ProofError::OverLimit);
    };
    let delta = p_small * p_small - 4 * q_small;
    if jacobi_big(delta, n) != -1 {
        return Err(invalid(
            n,
            format!("((P^2 - 4Q) / N) is not -1 for P = {p}, Q = {q}"),
        ));
    }
    let n1 = Integer::from(n + 1u32);
    if lucas_du(p, q, &n1, n) != 0 {
        return Err(invalid(n, "N does not divide U_(N+1)"));
    }
    let mut fp = Factored::new(&n1);
    for mf in factors {
        fp.push(&mf.q, mf.e).map_err(|why| invalid(n, why))?;
        let w = lucas_du(p, q, &Integer::from(&n1 / &mf.q), n);
        if w.gcd(n) != 1 {
            return Err(invalid(n, format!("gcd(U_((N+1)/{}), N) is not 1", mf.q)));
        }
    }
    let f1 = Integer::from(&fp.f - 1u32);
    if Integer::from(f1.square_ref()) <= *n {
        return Err(invalid(
            n,
            "the factored part F of N + 1 has (F - 1)^2 <= N",
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::primality::{check as check_prime, Status, Used};
    use classcert_format::PrimalityEvidence;

    #[test]
    fn lucas_sequence_matches_its_definition() {
        // U_k(P, Q) by the recurrence against 2 V_{k+1} - P V_k = Δ U_k
        for (p, q) in [(5i64, 1i64), (1, 2), (3, -5), (7, 11)] {
            let (p, q, n) = (Integer::from(p), Integer::from(q), Integer::from(1_000_003));
            let delta = Integer::from(p.square_ref()) - Integer::from(&q * 4);
            let (mut u0, mut u1) = (Integer::new(), Integer::from(1));
            for k in 0..200u32 {
                let want = Integer::from(&delta * &u0).modulo(&n);
                assert_eq!(lucas_du(&p, &q, &Integer::from(k), &n), want, "k = {k}");
                let next = Integer::from(&p * &u1) - Integer::from(&q * &u0);
                u0 = u1;
                u1 = next;
            }
        }
    }

    #[test]
    fn morrison_small() {
        // 47 + 1 = 2^4 · 3 (common practice); some P gives a proof
        let mf = |q: u64, e: u32| classcert_format::MorrisonFactor {
            q: Integer::from(q),
            e,
            evidence: Box::new(PrimalityEvidence::Bpsw),
        };
        let mut used = Used::default();
        let mut proven = 0;
        for p in 1..20i64 {
            for q in 2..20i64 {
                let ev = PrimalityEvidence::Morrison {
                    lucas_p: Integer::from(p),
                    lucas_q: Integer::from(q),
                    factors: vec![mf(2, 4), mf(3, 1)],
                };
                if check_prime(&Integer::from(47), &ev, 0, &mut used) == Ok(Status::Proven) {
                    proven += 1;
                }
            }
        }
        assert!(proven > 0);
        assert!(used.morrison);
        // 49 = 7^2 is composite: 49 + 1 = 2 · 5^2, and no P works
        for p in 1..20i64 {
            for q in 2..20i64 {
                let ev = PrimalityEvidence::Morrison {
                    lucas_p: Integer::from(p),
                    lucas_q: Integer::from(q),
                    factors: vec![mf(2, 1), mf(5, 2)],
                };
                assert!(check_prime(&Integer::from(49), &ev, 0, &mut used).is_err());
            }
        }
    }
}
