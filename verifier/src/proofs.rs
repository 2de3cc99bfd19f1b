//! Primality proofs: Pocklington's `N - 1` theorem and Morrison's `N + 1`
//! theorem, each a tree whose leaves are Baillie–PSW passes below 2^64.
//!
//! ## N - 1
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
//! ## N + 1
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
    pub morrison: bool,
}

/// The factored part `F` of `m = N ∓ 1`, one prime power at a time: `q`
/// above the previous one, `e >= 1`, and the running product divides `m`
/// (`q^e` is bounded by `m` before it is formed).
struct Factored<'a> {
    m: &'a Integer,
    f: Integer,
    prev: Integer,
}

impl<'a> Factored<'a> {
    fn new(m: &'a Integer) -> Self {
        Factored {
            m,
            f: Integer::from(1),
            prev: Integer::new(),
        }
    }

    fn push(&mut self, q: &Integer, e: u32) -> Result<(), String> {
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
    let factors = match ev {
        PrimalityEvidence::Bpsw => {
            return match primality_evidence(n) {
                Evidence::Composite => Err(ProofError::Composite(n.clone())),
                Evidence::ProvenPrime => Ok(Status::Proven),
                Evidence::ProbablePrime => Ok(Status::AssumedBpsw),
            }
        }
        PrimalityEvidence::Morrison {
            lucas_p,
            lucas_q,
            factors,
        } => return check_morrison(n, lucas_p, lucas_q, factors, depth, work, used),
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
    let mut fp = Factored::new(&n1);
    let mut status = Status::Proven;
    for pf in factors {
        if let Err(why) = fp.push(&pf.q, pf.e) {
            return invalid(why);
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
    if Integer::from(fp.f.square_ref()) < *n {
        return invalid("the factored part F of N - 1 has F^2 < N".into());
    }
    Ok(status)
}

/// `(V_k, V_{k+1}) mod n` for the Lucas sequence with parameters `(P, Q)`,
/// by the doubling formulas `V_{2k} = V_k² - 2 Q^k`,
/// `V_{2k+1} = V_k V_{k+1} - P Q^k` (common practice).
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

fn check_morrison(
    n: &Integer,
    p: &Integer,
    q: &Integer,
    factors: &[classcert_format::MorrisonFactor],
    depth: u32,
    work: &mut u64,
    used: &mut Used,
) -> Result<Status, ProofError> {
    used.morrison = true;
    let invalid = |why: String| Err(ProofError::Invalid(format!("{n}: {why}")));
    if *n < 5 || n.is_even() {
        return invalid("the theorem is used for odd N >= 5 only".into());
    }
    if factors.len() > MAX_PROOF_FACTORS
        || p.significant_bits() > n.significant_bits()
        || q.significant_bits() > n.significant_bits()
    {
        return Err(ProofError::OverLimit);
    }
    if Integer::from(q.gcd_ref(n)) != 1 {
        return invalid(format!("gcd(Q = {q}, N) is not 1"));
    }
    let delta = Integer::from(p.square_ref()) - Integer::from(q << 2u32);
    if delta.jacobi(n) != -1 {
        return invalid(format!("(P^2 - 4Q / N) is not -1 for P = {p}, Q = {q}"));
    }
    let n1 = Integer::from(n + 1u32);
    if *work < 1 {
        return Err(ProofError::OverLimit);
    }
    *work -= 1;
    if lucas_du(p, q, &n1, n) != 0 {
        return invalid("N does not divide U_(N+1)".into());
    }
    let mut fp = Factored::new(&n1);
    let mut status = Status::Proven;
    for mf in factors {
        if let Err(why) = fp.push(&mf.q, mf.e) {
            return invalid(why);
        }
        if *work < 1 {
            return Err(ProofError::OverLimit);
        }
        *work -= 1;
        let w = lucas_du(p, q, &Integer::from(&n1 / &mf.q), n);
        if w.gcd(n) != 1 {
            return invalid(format!("gcd(U_((N+1)/{}), N) is not 1", mf.q));
        }
        match check(&mf.q, &mf.evidence, depth + 1, work, used)? {
            Status::Proven => {}
            Status::AssumedBpsw => status = Status::AssumedBpsw,
        }
    }
    let f1 = Integer::from(&fp.f - 1u32);
    if Integer::from(f1.square_ref()) <= *n {
        return invalid("the factored part F of N + 1 has (F - 1)^2 <= N".into());
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
                if check(&Integer::from(47), &ev, 0, &mut 100, &mut used) == Ok(Status::Proven) {
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
                assert!(check(&Integer::from(49), &ev, 0, &mut 100, &mut used).is_err());
            }
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
