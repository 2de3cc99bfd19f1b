//! The factor base: one prime form `(p, b, c)` for every prime `p` up to the
//! generation bound with `p ∤ f` and `(D/p) ≠ -1`.

use classcert_verifier::math::Form;
use classcert_verifier::math::{kronecker_prime, mod_small};
use rug::Integer;

fn mul_mod(a: u64, b: u64, m: u64) -> u64 {
    ((a as u128 * b as u128) % m as u128) as u64
}

fn pow_mod(mut b: u64, mut e: u64, m: u64) -> u64 {
    let mut r = 1 % m;
    b %= m;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, b, m);
        }
        b = mul_mod(b, b, m);
        e >>= 1;
    }
    r
}

/// A square root of `a` modulo an odd prime `p` (Tonelli–Shanks; Cohen,
/// GTM 138, Alg. 1.5.1), for `a` a square mod `p`.
pub fn sqrt_mod(a: u64, p: u64) -> u64 {
    let a = a % p;
    if a == 0 {
        return 0;
    }
    let mut q = p - 1;
    let mut s = 0;
    while q.is_multiple_of(2) {
        q /= 2;
        s += 1;
    }
    let mut z = 2;
    while pow_mod(z, (p - 1) / 2, p) != p - 1 {
        z += 1;
    }
    let mut m = s;
    let mut c = pow_mod(z, q, p);
    let mut t = pow_mod(a, q, p);
    let mut r = pow_mod(a, q.div_ceil(2), p);
    while t != 1 {
        let mut i = 0;
        let mut tt = t;
        while tt != 1 {
            tt = mul_mod(tt, tt, p);
            i += 1;
        }
        let b = pow_mod(c, 1 << (m - i - 1), p);
        m = i;
        c = mul_mod(b, b, p);
        t = mul_mod(t, c, p);
        r = mul_mod(r, b, p);
    }
    r
}

/// The `b` of the prime ideal `(p, (b + sqrt D)/2)` with the smaller
/// `b >= 0` (so `0 <= b <= p`), for a prime `p` with `(D/p) != -1`: of the
/// two solutions `b` and `2p - b` of `b^2 ≡ D (mod 4p)` modulo `2p`, the
/// one below `p` (or `p` itself when `p | D` and `D` is odd).
pub fn prime_b(d: &Integer, p: u64) -> u64 {
    if p == 2 {
        return match d.mod_u(8) {
            1 => 1,
            0 => 0,
            _ => 2,
        };
    }
    let s = sqrt_mod(mod_small(d, p), p);
    if (s % 2 == 1) == d.is_odd() {
        s
    } else {
        p - s
    }
}

#[derive(Debug, Clone)]
pub struct FactorBase {
    pub primes: Vec<u64>,
    pub bs: Vec<u64>,
    pub forms: Vec<Form>,
}

impl FactorBase {
    /// `primes` ascending; `conductor` lists the primes dividing the conductor.
    pub fn new(d: &Integer, primes: &[u64], bound: u64, conductor: &[u64]) -> FactorBase {
        let mut fb = FactorBase {
            primes: Vec::new(),
            bs: Vec::new(),
            forms: Vec::new(),
        };
        for &p in primes.iter().take_while(|&&p| p <= bound) {
            if conductor.contains(&p) || kronecker_prime(d, p) == -1 {
                continue;
            }
            let b = prime_b(d, p);
            let form = Form::new(Integer::from(p), Integer::from(b), d)
                .expect("b^2 = D mod 4p by construction");
            fb.primes.push(p);
            fb.bs.push(b);
            fb.forms.push(form);
        }
        fb
    }

    /// SHA-256 of the canonical CBOR array `[[p, b], …]` of the prime
    /// ideals: names this factor base in relation batches.
    pub fn digest(&self) -> [u8; 32] {
        use sha2::{Digest, Sha256};
        let pairs = self
            .primes
            .iter()
            .zip(&self.bs)
            .map(|(&p, &b)| {
                ciborium::Value::Array(vec![
                    classcert_format::cbor::uint(p),
                    classcert_format::cbor::uint(b),
                ])
            })
            .collect();
        let bytes = classcert_format::cbor::from_value(&ciborium::Value::Array(pairs))
            .expect("an array of integers encodes");
        Sha256::digest(bytes).into()
    }

    pub fn len(&self) -> usize {
        self.primes.len()
    }

    pub fn is_empty(&self) -> bool {
        self.primes.is_empty()
    }

    pub fn index_of(&self, p: u64) -> Option<usize> {
        self.primes.binary_search(&p).ok()
    }

    /// The factor base up to `bound`, extended past it to at least `want`
    /// prime ideals (the sieve's primes): more primes make smooth values
    /// far likelier, and ideals above the generation bound are allowed in
    /// a certificate as long as each is eliminated. `primes` is every prime
    /// up to `bound` at least; more are generated when needed.
    pub fn with_at_least(
        d: &Integer,
        primes: &[u64],
        bound: u64,
        conductor: &[u64],
        want: usize,
    ) -> FactorBase {
        let mut fb = FactorBase::new(d, primes, bound, conductor);
        if fb.len() >= want {
            return fb;
        }
        // about half the primes split: π(x) ≥ 2·want well before
        // x = 3·want·ln(3·want), doubled until it suffices
        let w = (3 * want).max(16) as f64;
        let mut limit = ((w * w.ln()) as u64).max(bound);
        loop {
            let more = classcert_verifier::math::primes_up_to(limit);
            fb = FactorBase::new(d, &more, limit, conductor);
            if fb.len() >= want {
                fb.primes.truncate(want);
                fb.bs.truncate(want);
                fb.forms.truncate(want);
                return fb;
            }
            limit = limit.saturating_mul(2);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sqrt_mod_small_primes() {
        for p in [3u64, 5, 7, 11, 13, 17, 97, 1_000_003] {
            for a in 0..200u64 {
                let a = a % p;
                if pow_mod(a, (p - 1) / 2, p) <= 1 {
                    let r = sqrt_mod(a, p);
                    assert_eq!(mul_mod(r, r, p), a, "p={p} a={a}");
                }
            }
        }
    }
}
