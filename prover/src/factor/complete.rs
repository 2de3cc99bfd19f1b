//! The complete factorisation: trial division, perfect powers, the
//! probable-prime test and Pollard–Brent rho under a step budget.

use super::primes::{is_prime, small_primes};
use super::rho::pollard_brent;
use rug::ops::Pow;
use rug::Integer;

/// Complete factorisation of `|n|` into primes with multiplicities, sorted by
/// prime (each prime appears once).
///
/// * `factor(±1)` is `Some(vec![])`; `factor(0)` is `None` (zero has no
///   factorisation).
/// * `budget_steps` bounds the total number of Pollard–Brent rho iterations
///   over the whole call; if it runs out before every cofactor is split into
///   primes, the result is `None`. Trial division and primality tests are not
///   counted.
///
/// Primality of the returned factors is established by a probable-prime test
/// only; the verifier must re-check them.
pub fn factor(n: &Integer, budget_steps: u64) -> Option<Vec<(Integer, u32)>> {
    if *n == 0 {
        return None;
    }
    let mut m = Integer::from(n.abs_ref());
    let mut found: Vec<(Integer, u32)> = Vec::new();

    // 1. Trial division.
    for &p in small_primes() {
        if m == 1 {
            break;
        }
        if Integer::from(p) * p > m {
            // No prime factor ≤ √m remains, so m is 1 or prime.
            break;
        }
        if m.is_divisible_u(p) {
            let mut e = 0u32;
            while m.is_divisible_u(p) {
                m.div_exact_u_mut(p);
                e += 1;
            }
            found.push((Integer::from(p), e));
        }
    }

    // 2.–4. Split the cofactor. Work items are (number, exponent) meaning
    // number^exponent divides the original n.
    let mut budget = budget_steps;
    let mut stack: Vec<(Integer, u32)> = Vec::new();
    if m != 1 {
        stack.push((m, 1));
    }
    let mut seed: u64 = 1;
    while let Some((c, e)) = stack.pop() {
        if is_prime(&c) {
            found.push((c, e));
            continue;
        }
        if let Some((root, k)) = perfect_power(&c) {
            stack.push((root, e.checked_mul(k)?));
            continue;
        }
        let d = pollard_brent(&c, &mut budget, &mut seed)?;
        let other = Integer::from(c.div_exact_ref(&d));
        // Both pieces may be composite or share primes; equal primes are
        // merged after the loop.
        stack.push((d, e));
        stack.push((other, e));
    }

    // Merge equal primes and sort.
    found.sort_by(|a, b| a.0.cmp(&b.0));
    let mut merged: Vec<(Integer, u32)> = Vec::with_capacity(found.len());
    for (p, e) in found {
        match merged.last_mut() {
            Some((q, f)) if *q == p => *f = f.checked_add(e)?,
            _ => merged.push((p, e)),
        }
    }
    Some(merged)
}

/// If `n = r^k` with `k ≥ 2` maximal, returns `(r, k)`.
fn perfect_power(n: &Integer) -> Option<(Integer, u32)> {
    if *n < 4 || !n.is_perfect_power() {
        return None;
    }
    // n has no prime factor below TRIAL_DIVISION_BOUND here in practice, but
    // this works for any n: try exponents from the largest possible down.
    let bits = n.significant_bits();
    for k in (2..=bits).rev() {
        let r = Integer::from(n.root_ref(k));
        if r > 1 && Integer::from((&r).pow(k)) == *n {
            return Some((r, k));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Rng;
    use rug::integer::IsPrime;

    fn is_prime_ref(n: &Integer) -> bool {
        n.is_probably_prime(30) != IsPrime::No
    }

    /// Multiplies the factorisation back and checks every base is prime and
    /// the list is strictly increasing.
    fn check(n: &Integer, fs: &[(Integer, u32)]) {
        let mut prod = Integer::from(1);
        for (p, e) in fs {
            assert!(is_prime_ref(p), "{p} is not prime (factoring {n})");
            assert!(*e >= 1);
            prod *= Integer::from(p.pow(*e));
        }
        assert_eq!(prod, Integer::from(n.abs_ref()), "product mismatch for {n}");
        for w in fs.windows(2) {
            assert!(w[0].0 < w[1].0, "not strictly sorted: {fs:?}");
        }
    }

    /// A random integer with exactly `bits` bits (top bit set), from the
    /// prover's own seeded generator.
    fn random_integer(rng: &mut Rng, bits: u32) -> Integer {
        let mut n = Integer::new();
        let mut have = 0;
        while have < bits {
            n <<= 64;
            n += rng.next_u64();
            have += 64;
        }
        n >>= have - bits;
        n.set_bit(bits - 1, true);
        n
    }

    const BIG_BUDGET: u64 = 50_000_000;

    #[test]
    fn trivial_inputs() {
        assert_eq!(factor(&Integer::from(1), 0), Some(vec![]));
        assert_eq!(factor(&Integer::from(-1), 0), Some(vec![]));
        assert_eq!(factor(&Integer::from(0), BIG_BUDGET), None);
        assert_eq!(
            factor(&Integer::from(-12), 0),
            Some(vec![(Integer::from(2), 2), (Integer::from(3), 1)])
        );
        assert_eq!(
            factor(&Integer::from(99_991), 0),
            Some(vec![(Integer::from(99_991), 1)])
        );
    }

    #[test]
    fn small_numbers_exhaustively() {
        for k in 1u32..20_000 {
            let n = Integer::from(k);
            let fs = factor(&n, BIG_BUDGET).unwrap();
            check(&n, &fs);
        }
    }

    #[test]
    fn fermat_number_f6() {
        // 2^64 + 1 = 274177 × 67280421310721 (common practice, Landry 1880).
        let n = (Integer::from(1) << 64u32) + 1u32;
        let fs = factor(&n, BIG_BUDGET).unwrap();
        check(&n, &fs);
        assert_eq!(
            fs,
            vec![
                (Integer::from(274_177u32), 1),
                (Integer::from(67_280_421_310_721u64), 1)
            ]
        );
    }

    #[test]
    fn ten_to_twenty_plus_one() {
        // 10^20 + 1 = 73 × 137 × 1676321 × 5964848081 (from memory; the test
        // checks the product and primality independently).
        let n = Integer::from(Integer::u_pow_u(10, 20)) + 1u32;
        let fs = factor(&n, BIG_BUDGET).unwrap();
        check(&n, &fs);
        let primes: Vec<Integer> = fs.iter().map(|(p, _)| p.clone()).collect();
        assert_eq!(
            primes,
            vec![
                Integer::from(73),
                Integer::from(137),
                Integer::from(1_676_321u32),
                Integer::from(5_964_848_081u64)
            ]
        );
    }

    #[test]
    fn mersenne_67() {
        // 2^67 - 1 = 193707721 × 761838257287 (common practice: Cole 1903).
        let n = (Integer::from(1) << 67u32) - 1u32;
        let fs = factor(&n, BIG_BUDGET).unwrap();
        check(&n, &fs);
        assert_eq!(fs.len(), 2);
        assert_eq!(fs[0].0, 193_707_721u32);
    }

    #[test]
    fn products_of_random_primes() {
        let mut rng = Rng::new(0x2545_F491_4F6C_DD1D);
        for round in 0..200 {
            let count = 1 + (rng.next_u64() % 5) as usize;
            let mut n = Integer::from(1);
            let mut expected: Vec<Integer> = Vec::new();
            for _ in 0..count {
                // Mix of small primes (trial division) and primes up to 36
                // bits (found by rho).
                let bits = if round % 3 == 0 {
                    2 + (rng.next_u64() % 15) as u32
                } else {
                    17 + (rng.next_u64() % 20) as u32
                };
                let p = random_integer(&mut rng, bits).next_prime();
                let e = 1 + (rng.next_u64() % 3) as u32;
                n *= Integer::from((&p).pow(e));
                for _ in 0..e {
                    expected.push(p.clone());
                }
            }
            // Occasionally one big prime cofactor that must be recognised.
            if round % 7 == 0 {
                let p = random_integer(&mut rng, 120).next_prime();
                n *= &p;
                expected.push(p);
            }
            expected.sort();
            let fs = factor(&n, BIG_BUDGET).unwrap_or_else(|| panic!("gave up on {n}"));
            check(&n, &fs);
            let flat: Vec<Integer> = fs
                .iter()
                .flat_map(|(p, e)| std::iter::repeat_n(p.clone(), *e as usize))
                .collect();
            assert_eq!(flat, expected, "n = {n}");
        }
    }

    #[test]
    fn prime_powers_of_large_primes() {
        let p = Integer::from(1_000_000_007u64);
        let q = Integer::from(998_244_353u64);
        let n = Integer::from((&p).pow(5)) * Integer::from((&q).pow(3)) * 1024u32;
        let fs = factor(&n, BIG_BUDGET).unwrap();
        check(&n, &fs);
        assert_eq!(fs, vec![(Integer::from(2), 10), (q, 3), (p, 5)]);
        // A square of a product of two large primes: a perfect power whose
        // root is composite.
        let r = Integer::from(1_000_003u64) * Integer::from(1_000_033u64);
        let n = Integer::from((&r).pow(2));
        let fs = factor(&n, BIG_BUDGET).unwrap();
        check(&n, &fs);
        assert_eq!(fs.len(), 2);
        assert!(fs.iter().all(|(_, e)| *e == 2));
    }

    #[test]
    fn budget_exhaustion() {
        let mut rng = Rng::new(77);
        // Two primes of about 40 decimal digits (133 bits).
        let p = random_integer(&mut rng, 133).next_prime();
        let q = random_integer(&mut rng, 133).next_prime();
        let n = Integer::from(&p * &q);
        assert_eq!(factor(&n, 1000), None);
        assert_eq!(factor(&n, 0), None);
        // A zero budget still suffices when no rho step is needed.
        assert!(factor(&p, 0).is_some());
        let smooth = Integer::from(2 * 3 * 5 * 7 * 11 * 99_991u64);
        assert!(factor(&smooth, 0).is_some());
    }
}
