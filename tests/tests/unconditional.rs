//! Unconditional certificates (`docs/certificates.md`, section 7): generation by the
//! prime ideals up to sqrt(|D|/3) and h from an exact series, so the
//! verdict lists no hypothesis. They must agree with the GRH path and with
//! the oracle's count of reduced forms; `--require unconditional` accepts
//! them.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_prover::{prove_to_bytes, Options};
use classcert_tests::oracle;
use classcert_tests::support::SplitMix;
use classcert_verifier::report::Policy;
use classcert_verifier::verify_bytes;
use rug::Integer;

/// `--require unconditional`: no assumption allowed.
fn no_assumption() -> Policy {
    Policy {
        allow: Some(Vec::new()),
        ..Policy::default()
    }
}

fn verdict(d: i64, unconditional: bool) -> classcert_verifier::report::Verified {
    let opts = Options {
        unconditional,
        ..Options::default()
    };
    let (bytes, _) = prove_to_bytes(&Integer::from(d), &opts)
        .unwrap_or_else(|e| panic!("D = {d}, unconditional = {unconditional}: {e}"));
    let report = verify_bytes(&bytes);
    if unconditional {
        // the policy flag accepts it
        let r = verify_bytes(&bytes).apply(&no_assumption());
        assert!(r.is_verified(), "D = {d}: --require unconditional refused");
    }
    report
        .outcome
        .unwrap_or_else(|r| panic!("D = {d}: {}", r.detail))
}

#[test]
fn unconditional_agrees_with_grh_and_with_the_oracle() {
    let mut rng = SplitMix::new(0x5eed_0009);
    let mut done = 0;
    while done < 150 {
        let d = -(rng.log_range(5, 1_000_000) as i64);
        if !oracle::is_fundamental(d) || d > -5 {
            continue;
        }
        let u = verdict(d, true);
        assert!(u.assumptions().is_empty(), "D = {d}: {:?}", u.assumptions());
        let g = verdict(d, false);
        assert_eq!(u.class_number(), g.class_number(), "D = {d}");
        assert_eq!(u.invariants(), g.invariants(), "D = {d}");
        assert_eq!(
            *u.class_number(),
            Integer::from(oracle::class_number_by_counting(d)),
            "D = {d}"
        );
        done += 1;
    }
}

#[test]
fn unconditional_needs_a_maximal_order() {
    // -300 = 10^2 · (-3) is not fundamental
    let opts = Options {
        unconditional: true,
        ..Options::default()
    };
    assert!(prove_to_bytes(&Integer::from(-300), &opts).is_err());
    assert!(prove_to_bytes(&Integer::from(-3), &opts).is_err());
}

#[test]
fn grh_certificates_fail_the_unconditional_policy() {
    let (bytes, _) = prove_to_bytes(&Integer::from(-3299), &Options::default()).unwrap();
    let r = verify_bytes(&bytes).apply(&no_assumption());
    assert_eq!(r.outcome.err().map(|e| e.reason.code()), Some("policy"));
}

/// The long comparison (not run by CI): 300 random fundamental D with
/// |D| < 10^8, unconditional against GRH. Run with
/// `cargo test --release -p classcert-tests --test unconditional -- --ignored`.
#[test]
#[ignore = "takes minutes; run by hand"]
fn unconditional_agrees_with_grh_up_to_1e8() {
    let mut rng = SplitMix::new(0x5eed_000a);
    let mut done = 0;
    while done < 300 {
        let d = -(rng.log_range(5, 100_000_000) as i64);
        if !oracle::is_fundamental(d) || d > -5 {
            continue;
        }
        let u = verdict(d, true);
        let g = verdict(d, false);
        assert!(u.assumptions().is_empty());
        assert_eq!(u.class_number(), g.class_number(), "D = {d}");
        assert_eq!(u.invariants(), g.invariants(), "D = {d}");
        done += 1;
    }
}
