//! Class numbers from published tables: prove, encode, verify the bytes,
//! and compare with the table. The tables live in `vectors/published/`,
//! each with a header naming its source, so data and source stay together.
//!
//! Each row is also checked against the oracle's count of reduced forms, so
//! a typing error in a table shows up as a disagreement between the table
//! and the oracle rather than as a prover bug.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_tests::oracle;
use classcert_tests::support::{
    expect_verified, invariants_u64, prove_and_verify, read_published, rests_on_grh,
};
use rug::Integer;
use std::collections::BTreeSet;

/// Proves and verifies every row of `vectors/published/<file>`.
fn check_table(file: &str) -> usize {
    let table = read_published(file);
    for &(d, h) in &table.rows {
        assert_eq!(
            oracle::class_number_by_counting(d),
            h,
            "{file}: the table says h({d}) = {h}, the oracle's count disagrees"
        );
        let (body, report) = prove_and_verify(d);
        let v = expect_verified(&report, &format!("{file}: D = {d}"));
        assert_eq!(*v.class_number(), Integer::from(h), "{file}: h({d})");
        assert_eq!(
            body.claim.class_number,
            Integer::from(h),
            "{file}: claim for {d}"
        );
        let inv = invariants_u64(&v);
        assert_eq!(
            inv.iter().product::<u64>(),
            h,
            "{file}: invariants {inv:?} of {d}"
        );
        assert_eq!(
            inv,
            oracle::group_invariants_bruteforce(d),
            "{file}: invariants of {d}"
        );
        assert_eq!(
            v.maximal(),
            oracle::is_fundamental(d),
            "{file}: D = {d}: maximal must be claimed exactly for fundamental D"
        );
        assert!(
            rests_on_grh(&v),
            "{file}: D = {d}: GRH missing from the assumptions"
        );
    }
    table.rows.len()
}

#[test]
fn class_number_one_fields() {
    // OEIS A014602 / A003173; Stark (1967).
    assert_eq!(check_table("class-number-1.txt"), 9);
}

#[test]
fn class_number_one_non_maximal_orders() {
    // Cox, the thirteen orders of class number one (from memory).
    let rows = read_published("class-number-1-orders.txt").rows;
    assert!(rows.iter().all(|&(d, _)| !oracle::is_fundamental(d)));
    assert_eq!(check_table("class-number-1-orders.txt"), 4);
}

#[test]
fn class_number_two_fields() {
    // OEIS A014603.
    assert_eq!(check_table("class-number-2.txt"), 18);
}

#[test]
fn class_number_three_fields() {
    // OEIS A006203.
    assert_eq!(check_table("class-number-3.txt"), 16);
}

#[test]
fn class_numbers_of_minus_4n() {
    // OEIS A000003, n = 1..50.
    let rows = read_published("h-minus-4n.txt").rows;
    let ds: Vec<i64> = rows.iter().map(|&(d, _)| d).collect();
    assert_eq!(ds, (1..=50).map(|n| -4 * n).collect::<Vec<i64>>());
    assert_eq!(check_table("h-minus-4n.txt"), 50);
}

/// The tables of fields with h = 1, 2, 3 hold every fundamental
/// discriminant with that class number in the range the oracle can scan;
/// the thirteen orders of class number one likewise. (Completeness beyond
/// the scan is the theorem cited in each file's header.)
#[test]
fn tables_are_complete_up_to_5000() {
    let set = |file: &str| -> BTreeSet<i64> {
        read_published(file).rows.iter().map(|&(d, _)| d).collect()
    };
    let mut by_h: [BTreeSet<i64>; 4] = Default::default();
    let mut orders_h1 = BTreeSet::new();
    for n in 3..=5000i64 {
        let d = -n;
        if !oracle::is_discriminant(d) {
            continue;
        }
        let h = oracle::class_number_by_counting(d);
        if h == 1 {
            orders_h1.insert(d);
        }
        if oracle::is_fundamental(d) && h <= 3 {
            by_h[h as usize].insert(d);
        }
    }
    assert_eq!(by_h[1], set("class-number-1.txt"));
    assert_eq!(by_h[2], set("class-number-2.txt"));
    assert_eq!(by_h[3], set("class-number-3.txt"));
    let mut all_h1 = set("class-number-1.txt");
    all_h1.extend(set("class-number-1-orders.txt"));
    assert_eq!(orders_h1, all_h1);
    assert_eq!(orders_h1.len(), 13);
}
