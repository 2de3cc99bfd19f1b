//! The prover and verifier against independent computations on random
//! discriminants (drawn from fixed seeds, so every run checks the same
//! inputs):
//! * |D| < 10^7: class number against the oracle's count of reduced forms,
//!   and Dirichlet's finite formula for fundamental D; invariant factors
//!   against the oracle's brute-force group structure; maximality against
//!   the oracle's `is_fundamental`; the small conductor against the
//!   oracle's `conductor`.
//! * fundamental D of 13 to 15 digits: genus theory (Gauss; common
//!   practice): the 2-rank of Cl(D) is t - 1, with t the number of distinct
//!   primes dividing D.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_prover::Options;
use classcert_tests::oracle;
use classcert_tests::support::{
    encode, expect_verified, factor_u64, invariants_u64, prove_body, prove_body_with, rests_on_grh,
    SplitMix,
};
use classcert_verifier::verify_bytes;
use rug::Integer;

/// Checks one discriminant with |D| < 10^7 against the oracles.
/// `formula`: also compare with the finite class number formula (slow
/// near 10^7, so only for some).
fn check_small(d: i64, formula: bool) {
    let body = prove_body(d);
    let v = expect_verified(&verify_bytes(&encode(&body)), &format!("D = {d}"));
    let h = oracle::class_number_by_counting(d);
    assert_eq!(
        *v.class_number(),
        Integer::from(h),
        "h({d}) against the count of reduced forms"
    );
    let fundamental = oracle::is_fundamental(d);
    if fundamental && formula {
        assert_eq!(
            oracle::class_number_finite_formula(d),
            h,
            "oracles disagree on h({d})"
        );
    }
    let inv = invariants_u64(&v);
    assert_eq!(
        inv,
        oracle::group_invariants_bruteforce(d),
        "invariants of Cl({d})"
    );
    assert_eq!(
        v.maximal(),
        fundamental,
        "D = {d}: maximality must be certified exactly when D is fundamental"
    );
    assert!(rests_on_grh(&v));
    // Every conductor prime is below the trial-division bound at this size
    // (f <= sqrt(|D|/3) < 1826, and X is larger), so the stated small
    // conductor is the whole conductor.
    let (_, f) = oracle::conductor(d);
    let f_small: u64 = body
        .conductor_small
        .iter()
        .map(|&(p, e)| p.pow(e))
        .product();
    assert_eq!(f_small, f as u64, "conductor of {d}");
}

/// `-n` when that is a discriminant, i.e. for `n ≡ 0, 3 (mod 4)`.
fn discriminant_from(n: u64) -> Option<i64> {
    matches!(n % 4, 0 | 3).then_some(-(n as i64))
}

#[test]
fn uniform_discriminants_below_10_7() {
    let mut rng = SplitMix::new(0x1d_0001);
    let mut done = 0;
    while done < 120 {
        let Some(d) = discriminant_from(rng.range(3, 10_000_000)) else {
            continue;
        };
        // The finite formula costs about |D|/2 Kronecker symbols: use it on
        // every fourth one.
        check_small(d, done % 4 == 0);
        done += 1;
    }
}

#[test]
fn log_uniform_discriminants_below_10_7() {
    let mut rng = SplitMix::new(0x1d_0002);
    let mut done = 0;
    let mut small_h = 0;
    while done < 150 {
        let Some(d) = discriminant_from(rng.log_range(3, 10_000_000)) else {
            continue;
        };
        check_small(d, d > -2_000_000);
        if oracle::class_number_by_counting(d) <= 200 {
            small_h += 1;
        }
        done += 1;
    }
    // The draw is meant to reach many groups small enough to inspect fully.
    assert!(small_h >= 50, "only {small_h} discriminants with h <= 200");
}

/// Non-maximal orders: D = f^2 d0 with d0 fundamental and f >= 2.
#[test]
fn non_maximal_orders_below_10_7() {
    let mut rng = SplitMix::new(0x1d_0003);
    let mut done = 0;
    while done < 80 {
        let Some(d0) = discriminant_from(rng.log_range(3, 400_000)) else {
            continue;
        };
        if !oracle::is_fundamental(d0) {
            continue;
        }
        let f = rng.range(2, 60) as i64;
        let d = d0 * f * f;
        if d <= -10_000_000 {
            continue;
        }
        assert!(!oracle::is_fundamental(d));
        assert_eq!(oracle::conductor(d), (d0, f));
        check_small(d, false);
        done += 1;
    }
}

/// Maximality from user-supplied factors gives the same verdict.
#[test]
fn supplied_factors_give_the_same_group() {
    let mut rng = SplitMix::new(0x1d_0004);
    let mut done = 0;
    while done < 20 {
        let Some(d) = discriminant_from(rng.range(1_000, 10_000_000)) else {
            continue;
        };
        if !oracle::is_fundamental(d) {
            continue;
        }
        let mut factors: Vec<Integer> = Vec::new();
        for (p, e) in factor_u64(d.unsigned_abs()) {
            for _ in 0..e {
                factors.push(Integer::from(p));
            }
        }
        let opts = Options {
            factors: Some(factors),
            ..Options::default()
        };
        let v = expect_verified(
            &verify_bytes(&encode(&prove_body_with(d, &opts))),
            &format!("D = {d} with factors"),
        );
        assert!(v.maximal());
        assert_eq!(invariants_u64(&v), oracle::group_invariants_bruteforce(d));
        done += 1;
    }
}

/// A random fundamental discriminant of 13 to 15 digits and the number of
/// distinct primes dividing it.
fn random_fundamental_15_digits(rng: &mut SplitMix) -> (i64, usize) {
    loop {
        let n = rng.range(10_000_000_000_000, 1_000_000_000_000_000);
        // D = -n with n ≡ 3 (mod 4) squarefree, or D = -4n with n ≡ 1, 2
        // (mod 4) squarefree (common practice).
        let abs_d = match n % 4 {
            3 => n,
            1 | 2 if n < 250_000_000_000_000 => 4 * n,
            _ => continue,
        };
        let f = factor_u64(n);
        if f.iter().any(|&(_, e)| e > 1) {
            continue;
        }
        let t = f.len() + usize::from(abs_d != n && n % 2 == 1);
        return (-(abs_d as i64), t);
    }
}

fn genus_theory(seed: u64, count: usize) {
    let mut rng = SplitMix::new(seed);
    let mut ranks = [0usize; 8];
    for _ in 0..count {
        let (d, t) = random_fundamental_15_digits(&mut rng);
        // The generator's own view of fundamentality (independent code).
        let t_check = factor_u64(d.unsigned_abs()).len();
        assert_eq!(t, t_check, "distinct primes of {d}");
        let v = expect_verified(&verify_bytes(&encode(&prove_body(d))), &format!("D = {d}"));
        assert!(
            v.maximal(),
            "D = {d} is fundamental; maximality should be certified"
        );
        assert!(rests_on_grh(&v));
        let two_rank = v.invariants().iter().filter(|x| x.is_even()).count();
        assert_eq!(
            two_rank,
            t - 1,
            "D = {d}: {t} distinct prime divisors, invariants {:?}",
            v.invariants()
        );
        let two_part = Integer::from(1) << (t as u32 - 1);
        assert!(v.class_number().is_divisible(&two_part));
        ranks[two_rank.min(7)] += 1;
    }
    // The draw should exercise several 2-ranks.
    assert!(
        ranks.iter().filter(|&&c| c > 0).count() >= 3,
        "2-ranks seen: {ranks:?}"
    );
}

// 200 discriminants in two halves, so the test threads share them.
#[test]
fn genus_theory_15_digits_first_half() {
    genus_theory(0x1d_0005, 100);
}

#[test]
fn genus_theory_15_digits_second_half() {
    genus_theory(0x1d_0006, 100);
}
