//! Small number theory on machine words: a bounded prime sieve, the
//! verifier's one Jacobi symbol (on words, with reciprocity for a big
//! modulus), the Kronecker symbol `(D/p)` for a big `D` and a word-sized
//! prime `p`, and the small part of the conductor found by trial division.

use rug::ops::RemRounding;
use rug::Integer;

/// Primes up to `limit` (inclusive) by the sieve of Eratosthenes over odd
/// numbers. The caller bounds `limit`.
pub fn primes_up_to(limit: u64) -> Vec<u64> {
    let mut out = Vec::new();
    if limit < 2 {
        return out;
    }
    out.push(2);
    // bit i stands for 2i + 1
    let n = ((limit - 1) / 2 + 1) as usize;
    let mut composite = vec![false; n];
    let mut i = 1usize;
    while i < n {
        let p = 2 * i as u64 + 1;
        if !composite.get(i).copied().unwrap_or(true) {
            out.push(p);
            let mut j = p.saturating_mul(p);
            while j <= limit {
                if let Some(slot) = composite.get_mut(((j - 1) / 2) as usize) {
                    *slot = true;
                }
                j = j.saturating_add(2 * p);
            }
        }
        i += 1;
    }
    out
}

/// Jacobi symbol `(a/n)` for odd `n > 0` (0 for even `n`): the binary
/// algorithm with quadratic reciprocity (H. Cohen, GTM 138, Alg. 1.4.10).
/// This is the verifier's only implementation of the symbol.
pub fn jacobi(mut a: u64, mut n: u64) -> i8 {
    if n.is_multiple_of(2) {
        return 0;
    }
    a %= n;
    let mut t = 1i8;
    while a != 0 {
        while a.is_multiple_of(2) {
            a /= 2;
            let r = n % 8;
            if r == 3 || r == 5 {
                t = -t;
            }
        }
        std::mem::swap(&mut a, &mut n);
        if a % 4 == 3 && n % 4 == 3 {
            t = -t;
        }
        a %= n;
    }
    if n == 1 {
        t
    } else {
        0
    }
}

/// Jacobi symbol `(a/n)` for a word-sized `a` and a big odd `n > 0` (0 when
/// `n` is even or not positive), by reciprocity down to [`jacobi`]:
/// `(-1/n) = (-1)^((n-1)/2)`, `(2/n) = (-1)^((n²-1)/8)`, and for odd
/// `m > 0`, `(m/n) = (n mod m / m) (-1)^((m-1)/2 · (n-1)/2)` (common practice).
pub fn jacobi_big(a: i64, n: &Integer) -> i8 {
    if *n <= 0 || n.is_even() {
        return 0;
    }
    let mut t = 1i8;
    if a < 0 && n.mod_u(4) == 3 {
        t = -t;
    }
    let mut m = a.unsigned_abs();
    if m == 0 {
        return i8::from(*n == 1);
    }
    let twos = m.trailing_zeros();
    m >>= twos;
    if twos % 2 == 1 && matches!(n.mod_u(8), 3 | 5) {
        t = -t;
    }
    if m == 1 {
        return t;
    }
    if m % 4 == 3 && n.mod_u(4) == 3 {
        t = -t;
    }
    t * jacobi(mod_small(n, m), m)
}

/// `D mod p` in `[0, p)` for `p < 2^32`.
pub fn mod_small(d: &Integer, p: u64) -> u64 {
    match u32::try_from(p) {
        Ok(p32) if p32 > 0 => u64::from(d.mod_u(p32)),
        _ => {
            let m = Integer::from(p);
            d.clone().rem_euc(&m).to_u64().unwrap_or(0)
        }
    }
}

/// Kronecker symbol `(D/p)` for a prime `p`.
pub fn kronecker_prime(d: &Integer, p: u64) -> i8 {
    if p == 2 {
        if d.is_even() {
            return 0;
        }
        return match d.mod_u(8) {
            1 | 7 => 1,
            _ => -1,
        };
    }
    jacobi(mod_small(d, p), p)
}

/// The part `f_s` of the conductor of `O_D` made of primes in `primes`:
/// `p^e` with `e` the largest such that `D / p^{2e}` is still a
/// discriminant (`≡ 0, 1 mod 4`). Returns `(p, e)` pairs and `d_s = D / f_s^2`.
pub fn small_conductor(d: &Integer, primes: &[u64]) -> (Vec<(u64, u32)>, Integer) {
    let mut ds = d.clone();
    let mut out = Vec::new();
    for &p in primes {
        if mod_small(&ds, p) != 0 {
            continue;
        }
        let p2 = Integer::from(p) * p;
        let mut e = 0u32;
        loop {
            if !ds.is_divisible(&p2) {
                break;
            }
            let q = Integer::from(&ds / &p2);
            let r = q.mod_u(4);
            if r == 0 || r == 1 {
                ds = q;
                e += 1;
            } else {
                break;
            }
        }
        if e > 0 {
            out.push((p, e));
        }
    }
    (out, ds)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sieve_counts() {
        // pi(10^6) = 78498 (OEIS A006880).
        assert_eq!(primes_up_to(1_000_000).len(), 78498);
        assert_eq!(primes_up_to(2), vec![2]);
        assert_eq!(primes_up_to(1), Vec::<u64>::new());
    }

    #[test]
    fn conductor_of_small_orders() {
        let primes = primes_up_to(100);
        // -12 = 2^2 * -3, -16 = 2^2 * -4, -27 = 3^2 * -3 (common practice).
        assert_eq!(
            small_conductor(&Integer::from(-12), &primes).0,
            vec![(2, 1)]
        );
        assert_eq!(
            small_conductor(&Integer::from(-16), &primes).0,
            vec![(2, 1)]
        );
        assert_eq!(
            small_conductor(&Integer::from(-27), &primes).0,
            vec![(3, 1)]
        );
        // -4 and -8 are fundamental: 4 | D but D/4 is not a discriminant.
        assert!(small_conductor(&Integer::from(-4), &primes).0.is_empty());
        assert!(small_conductor(&Integer::from(-8), &primes).0.is_empty());
        let (f, ds) = small_conductor(&Integer::from(-3 * 36 * 25), &primes);
        assert_eq!(f, vec![(2, 1), (3, 1), (5, 1)]);
        assert_eq!(ds, -3);
    }

    #[test]
    fn jacobi_big_matches_gmp() {
        // GMP's mpz_jacobi as the reference library.
        let mut x = 0x9E37_79B9_7F4A_7C15u64;
        for _ in 0..4000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let n = (Integer::from(x) << 70u32) + Integer::from(x | 1);
            for a in [
                -12i64,
                -7,
                -1,
                0,
                1,
                2,
                5,
                8,
                9,
                11,
                13,
                1 << 40,
                -(1 << 33) - 5,
            ] {
                assert_eq!(
                    i32::from(jacobi_big(a, &n)),
                    Integer::from(a).jacobi(&n),
                    "({a}/{n})"
                );
            }
        }
        assert_eq!(jacobi_big(3, &Integer::from(8)), 0);
        assert_eq!(jacobi_big(3, &Integer::from(-7)), 0);
        assert_eq!(jacobi_big(0, &Integer::from(1)), 1);
    }

    #[test]
    fn kronecker_matches_euler_criterion() {
        for p in primes_up_to(200).into_iter().skip(1) {
            for a in -50i64..50 {
                let d = Integer::from(a);
                let r = Integer::from(a)
                    .pow_mod(&Integer::from((p - 1) / 2), &Integer::from(p))
                    .unwrap();
                let expect = if a.rem_euclid(p as i64) == 0 {
                    0
                } else if r == 1 {
                    1
                } else {
                    -1
                };
                assert_eq!(kronecker_prime(&d, p), expect, "a={a} p={p}");
            }
        }
    }
}
