//! The hostile inputs of `classcert_tests::hostile` (random bytes,
//! truncations, bit flips, size bombs, and certificates that ask for the
//! most work): each small one is written to a scratch directory, read back
//! and verified by the library (and the quick ones also by
//! `classcert-verify`), and must give its expected outcome without a
//! panic: refused with the listed reason, or, for the true ones, verified
//! or refused as `over-limit`. The big ones (above about 5 MB) are
//! measured by `tests/hostile.sh` instead. No test here is timed.

// Tests report failures by panicking.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_tests::hostile::{self, Case, Expect};
use classcert_tests::support::programs;
use std::path::Path;

/// Writes `c` (built, or read from `vectors/hostile/` when stored) into
/// `dir`, reads it back, verifies it with the library (a panic is caught
/// and reported as a failure) and checks the verdict.
fn check(c: &Case, dir: &Path) {
    let path = dir.join(format!("{}.cert", c.name));
    let bytes = match hostile::STORED.contains(&c.name.as_str()) {
        true => hostile::stored(&c.name),
        false => (c.build)(),
    };
    std::fs::write(&path, bytes).unwrap();
    let bytes = std::fs::read(&path).unwrap();
    let report = std::panic::catch_unwind(|| classcert_verifier::verify_bytes(&bytes))
        .unwrap_or_else(|_| panic!("{}: the verifier panicked", c.name));
    let verdict = report.outcome.as_ref().err().map(|r| r.reason.code());
    assert!(
        c.expect.admits(verdict),
        "{} ({}): expected {}, got {}",
        c.name,
        c.what,
        c.expect.word(),
        verdict.unwrap_or("verified")
    );
}

/// The case named `name` (it must exist and be small).
fn named(name: &str) -> Case {
    let c = hostile::cases()
        .into_iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no hostile case {name}"));
    assert!(!c.big, "{name} is left to tests/hostile.sh");
    c
}

fn check_named(name: &str) {
    let dir = programs::scratch(&format!("hostile-{name}"));
    check(&named(name), &dir);
    let _ = std::fs::remove_dir_all(&dir);
}

/// The cases that ask for real work, each with a test of its own below.
const WORK: &[&str] = &[
    "bignum-discriminant-1mb",
    "euler-x-5e7",
    "series-1e7",
    "pocklington-414",
    "witness-2-rank-19",
    "real-generator-exponent-16k",
    "real-generator-exponent-32m",
];

#[test]
fn stored_work_inputs_are_what_they_say() {
    // Cheap checks of the stored files' shape (the ignored test below
    // rebuilds them byte for byte).
    let doc = |name: &str| {
        classcert_format::decode_document(&hostile::stored(name))
            .unwrap()
            .document
    };
    use classcert_format::{Document, Order, PrimalityEvidence};
    let Document::Relations(b) = doc("euler-x-5e7") else {
        panic!("euler-x-5e7 is a full certificate")
    };
    assert_eq!(b.euler.x, 50_000_000);
    let Document::Relations(b) = doc("series-1e7") else {
        panic!("series-1e7 is a full certificate")
    };
    assert_eq!(
        (b.euler.x, b.euler.theorem.as_str()),
        (10_000_000, classcert_verifier::registry::ERFC_SERIES)
    );
    let Document::Relations(b) = doc("pocklington-414") else {
        panic!("pocklington-414 is a full certificate")
    };
    let Order::Quadratic { discriminant } = &b.order else {
        panic!("quadratic")
    };
    assert_eq!(discriminant.significant_bits(), 4096);
    let proof = &b.maximality.as_ref().unwrap()[0].evidence;
    let PrimalityEvidence::Pocklington { factors } = proof else {
        panic!("a Pocklington proof")
    };
    assert!(factors.len() > 300, "{} factors", factors.len());
    let Document::OrderWitness(w) = doc("witness-2-rank-19") else {
        panic!("witness-2-rank-19 is an order witness")
    };
    assert_eq!(w.generators.len(), 19);
}

#[test]
#[ignore = "about 75 s: rebuilds the stored work inputs (run after a change to the format or the golden certificates)"]
fn stored_work_inputs_match_their_generator() {
    for c in hostile::cases() {
        if hostile::STORED.contains(&c.name.as_str()) {
            assert!(
                (c.build)() == hostile::stored(&c.name),
                "{}: vectors/hostile/ is stale; rewrite it with `hostile-inputs vectors/hostile --stored`",
                c.name
            );
        }
    }
}

#[test]
fn every_small_case_is_checked_here() {
    // A case added to the generator must get a test (the quick group
    // takes the rest, so only the list of work cases can fall behind).
    let cases = hostile::cases();
    for name in WORK {
        assert!(cases.iter().any(|c| c.name == *name), "no case {name}");
    }
    let names: std::collections::BTreeSet<_> = cases.iter().map(|c| c.name.clone()).collect();
    assert_eq!(names.len(), cases.len(), "case names are unique");
}

#[test]
fn bytes_damage_and_bombs_are_rejected_as_listed() {
    let dir = programs::scratch("hostile-quick");
    let quick: Vec<Case> = hostile::cases()
        .into_iter()
        .filter(|c| !c.big && !WORK.contains(&c.name.as_str()))
        .collect();
    assert!(quick.len() > 80, "only {} quick cases", quick.len());
    for c in &quick {
        check(c, &dir);
        // The command line: exit code 1 (a check failed) and the reason
        // on the first line.
        let path = dir.join(format!("{}.cert", c.name));
        let out = programs::run("classcert-verify", &["--quiet", path.to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(1), "{}: exit code", c.name);
        let first = programs::stdout(&out);
        let reason = first
            .lines()
            .next()
            .and_then(|l| l.strip_prefix("REJECTED: "));
        assert!(
            c.expect.admits(reason),
            "{}: classcert-verify says {}",
            c.name,
            first.trim()
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn bignum_discriminant_is_over_limit() {
    check_named("bignum-discriminant-1mb");
}

#[test]
fn euler_cut_off_at_its_cap_is_true() {
    check_named("euler-x-5e7");
}

#[test]
fn series_at_its_cap_is_true() {
    check_named("series-1e7");
}

#[test]
fn pocklington_with_hundreds_of_factors() {
    check_named("pocklington-414");
}

#[test]
fn order_witness_of_two_rank_19() {
    check_named("witness-2-rank-19");
}

#[test]
fn real_generator_exponent_at_the_entry_cap_is_true() {
    check_named("real-generator-exponent-16k");
}

#[test]
fn real_generator_exponent_of_32_million_bits_is_true() {
    check_named("real-generator-exponent-32m");
}

#[test]
fn expectations_admit_only_what_they_say() {
    // The check above rests on `admits`; it must refuse a wrong verdict.
    assert!(Expect::Rejected("over-limit").admits(Some("over-limit")));
    assert!(!Expect::Rejected("over-limit").admits(Some("decode-truncated")));
    assert!(!Expect::Rejected("over-limit").admits(None));
    assert!(!Expect::RejectedAny.admits(None));
    assert!(Expect::VerifiedOrOverLimit.admits(None));
    assert!(Expect::VerifiedOrOverLimit.admits(Some("over-limit")));
    assert!(!Expect::VerifiedOrOverLimit.admits(Some("euler-trace-mismatch")));
}
