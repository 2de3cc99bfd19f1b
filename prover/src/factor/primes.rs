//! The primes below [`TRIAL_DIVISION_BOUND`] for trial division, and the
//! probable-prime test the factorisation and the primality proofs share.

use rug::integer::IsPrime;
use rug::Integer;
use std::sync::OnceLock;

/// Trial division uses every prime below this bound.
pub const TRIAL_DIVISION_BOUND: u32 = 100_000;

/// Rounds for rug's probable-prime test.
const PRIME_TEST_REPS: u32 = 30;

/// The primes below [`TRIAL_DIVISION_BOUND`] (sieve of Eratosthenes, computed
/// once).
pub(super) fn small_primes() -> &'static [u32] {
    static PRIMES: OnceLock<Vec<u32>> = OnceLock::new();
    PRIMES.get_or_init(|| {
        let limit = TRIAL_DIVISION_BOUND as usize;
        let mut composite = vec![false; limit];
        let mut primes = Vec::new();
        for i in 2..limit {
            if !composite[i] {
                primes.push(i as u32);
                let mut j = i * i;
                while j < limit {
                    composite[j] = true;
                    j += i;
                }
            }
        }
        primes
    })
}

pub(super) fn is_prime(n: &Integer) -> bool {
    n.is_probably_prime(PRIME_TEST_REPS) != IsPrime::No
}
