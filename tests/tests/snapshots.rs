//! Snapshots of what a person reads: `classcert show` (text and `--json`)
//! and the verifier's verdict (JSON and text), for two fixed certificates
//! stored in `vectors/golden/`:
//! * D = -3299, Cl ≅ Z/3 × Z/9 — the standard example of a non-cyclic
//!   class group (from memory; the oracle's brute force agrees, see
//!   `tests/tests/vectors.rs`);
//! * D = -300 = 10^2 · (-3), a non-maximal order (conductor 10);
//! * D = 316 = 4 · 79, a real quadratic field with Cl ≅ Z/3 and
//!   fundamental unit 80 + 9 sqrt 79 = (160 + 9 sqrt 316)/2 of norm 1 (OEIS A349419, checked
//!   against the stored entry; see `tests/tests/real.rs`).
//!
//! The snapshots come from the stored files, not fresh proofs, so prover
//! changes do not move them; regenerating the golden files does (then run
//! with `INSTA_UPDATE=always` and review the diff).
//!
//! Also: proving twice with the same seed gives byte-identical files.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::decode_file;
use classcert_prover::{prove_to_bytes, show, Options};
use classcert_tests::support::{encode, prove_body_with, vectors_dir};
use classcert_verifier::verify_bytes;
use rug::Integer;

fn golden(name: &str) -> Vec<u8> {
    let path = vectors_dir().join("golden").join(name);
    std::fs::read(&path).unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()))
}

fn snapshot_all(tag: &str, file: &str) {
    let bytes = golden(file);
    let decoded = decode_file(&bytes).expect("golden file decodes");
    let report = verify_bytes(&bytes);
    assert!(report.is_verified(), "{file} must verify");
    insta::assert_snapshot!(format!("{tag}_show_text"), show::text(&decoded));
    insta::assert_snapshot!(format!("{tag}_show_json"), show::json(&decoded).render());
    insta::assert_snapshot!(format!("{tag}_verify_json"), report.to_json().render());
    insta::assert_snapshot!(format!("{tag}_verify_text"), report.to_text());
}

#[test]
fn minus_3299_non_cyclic() {
    let text = show::text(&decode_file(&golden("minus-3299.cert")).expect("decodes"));
    assert!(text.contains("Z/3 x Z/9"), "{text}");
    snapshot_all("minus_3299", "minus-3299.cert");
}

#[test]
fn minus_300_non_maximal() {
    let report = verify_bytes(&golden("minus-300.cert"));
    let v = report.outcome.as_ref().expect("verifies");
    assert!(!v.maximal());
    snapshot_all("minus_300", "minus-300.cert");
}

#[test]
fn plus_316_real_with_unit() {
    let text = show::text(&decode_file(&golden("plus-316.cert")).expect("decodes"));
    assert!(
        text.contains("ε = (160 + 9·sqrt(D))/2, of norm 1"),
        "{text}"
    );
    snapshot_all("plus_316", "plus-316.cert");
}

#[test]
fn same_seed_gives_identical_bytes() {
    for (d, seed) in [
        (-3299i64, 1u64),
        (-3299, 7),
        (-300, 1),
        (-1_000_003, 2),
        (316, 1),
        (999_997, 3),
    ] {
        let opts = Options {
            seed,
            ..Options::default()
        };
        let a = encode(&prove_body_with(d, &opts));
        let b = encode(&prove_body_with(d, &opts));
        assert!(a == b, "D = {d}, seed {seed}: two runs differ");
        let (c, id) = prove_to_bytes(&Integer::from(d), &opts).expect("proves");
        assert!(
            a == c,
            "D = {d}, seed {seed}: prove_to_bytes differs from prove + encode"
        );
        assert_eq!(decode_file(&c).expect("decodes").id, id);
        assert_eq!(decode_file(&c).expect("decodes").body.producer.seed, seed);
    }
}
