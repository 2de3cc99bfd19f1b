//! The stored test vectors in `vectors/` (see `vectors/README.md`):
//! * `golden/*.cert` — honest certificates; each must verify, and state the
//!   group the oracle computes.
//! * `mutations/*.cert` with `mutations/expected.txt` — the soundness
//!   corpus: forged certificates, the reason code each must be rejected
//!   with and the layer it damages.
//!
//! Regenerate the golden files (after a deliberate format or prover
//! change) with `cargo test --release -p classcert-tests --test vectors --
//! --ignored`, then the corpus with `cargo run --release -p
//! classcert-tests --bin forge-vectors`.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{decode_document, decode_file, Document};
use classcert_prover::Options;
use classcert_tests::corpus;
use classcert_tests::forge::{self, Layer};
use classcert_tests::oracle;
use classcert_tests::support::{
    encode, expect_verified, invariants_u64, prove_body, rests_on_grh, vectors_dir,
};
use classcert_verifier::verify_bytes;
use rug::Integer;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The discriminants of the golden certificates (all seed 1): imaginary
/// and real, maximal and not (-27, -300, 20 = 2^2·5).
const GOLDEN: &[i64] = &[
    -3,
    -4,
    -23,
    -27,
    -84,
    -300,
    -3299,
    -1_000_003,
    forge::PRIME_PROOF,
    forge::MORRISON_PROOF,
    5,
    20,
    61,
    316,
    999_997,
];

/// Below this |D| the oracles' brute force states the group.
const ORACLE_LIMIT: i64 = 10_000_000;

fn golden_name(d: i64) -> String {
    let sign = if d < 0 { "minus" } else { "plus" };
    format!("{sign}-{}.cert", d.unsigned_abs())
}

fn golden_dir() -> PathBuf {
    vectors_dir().join("golden")
}

fn mutations_dir() -> PathBuf {
    vectors_dir().join("mutations")
}

fn read(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap_or_else(|e| {
        panic!(
            "cannot read {}: {e} (regenerate with `cargo test --release -p classcert-tests \
             --test vectors -- --ignored`)",
            path.display()
        )
    })
}

/// Files in `dir` ending in `.cert`, sorted.
fn cert_files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .map(|it| {
            it.filter_map(|e| e.ok())
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .filter(|n| n.ends_with(".cert"))
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

/// A row of `mutations/expected.txt`.
struct Row {
    file: String,
    code: String,
    layer: Layer,
}

/// The rows of `mutations/expected.txt`: `file reason layer base`.
fn expected_rows() -> Vec<Row> {
    let path = mutations_dir().join("expected.txt");
    let text = String::from_utf8(read(&path)).expect("expected.txt is UTF-8");
    text.lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .map(|l| {
            let cols: Vec<&str> = l.split(' ').collect();
            match cols[..] {
                [file, code, layer, base] => {
                    assert!(
                        file.starts_with(&format!("{base}--")),
                        "expected.txt: {file} does not start from its base {base}"
                    );
                    Row {
                        file: file.to_string(),
                        code: code.to_string(),
                        layer: Layer::from_word(layer)
                            .unwrap_or_else(|| panic!("expected.txt: unknown layer {layer}")),
                    }
                }
                _ => panic!("expected.txt: bad line {l}"),
            }
        })
        .collect()
}

/// A forgery the verifier accepts, or refuses with another code than the
/// design asks for: `mutations/known-deviations.txt`, lines
/// `file expected-reason observed` (`observed` is a code or `verified`).
struct Known {
    file: String,
    code: String,
    observed: String,
}

fn known_rows() -> Vec<Known> {
    let path = mutations_dir().join("known-deviations.txt");
    let Ok(text) = std::fs::read_to_string(&path) else {
        return Vec::new();
    };
    text.lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .map(|l| {
            let cols: Vec<&str> = l.split(' ').collect();
            match cols[..] {
                [file, code, observed] => Known {
                    file: file.to_string(),
                    code: code.to_string(),
                    observed: observed.to_string(),
                },
                _ => panic!("known-deviations.txt: bad line {l}"),
            }
        })
        .collect()
}

#[test]
#[ignore = "writes vectors/; run explicitly to regenerate"]
fn regenerate_vectors() {
    let golden = golden_dir();
    std::fs::create_dir_all(&golden).expect("create vectors dir");
    for f in cert_files(&golden) {
        std::fs::remove_file(golden.join(f)).expect("remove old vector");
    }
    for &d in GOLDEN {
        let bytes = encode(&prove_body(d));
        expect_verified(&verify_bytes(&bytes), &format!("golden {d}"));
        std::fs::write(golden.join(golden_name(d)), bytes).expect("write golden");
    }
    // `classcert prove -1000003 --claim-class-number 105`
    let (bytes, _) = classcert_prover::witness::prove_witness_to_bytes(
        &Integer::from(WITNESS.0),
        &Integer::from(WITNESS.1),
        None,
        None,
        &Options::default(),
    )
    .expect("an order witness");
    std::fs::write(golden.join(WITNESS_FILE), bytes).expect("write golden");
    // `classcert prove -3299 --unconditional`
    let opts = Options {
        unconditional: true,
        ..Options::default()
    };
    let (bytes, _) = classcert_prover::prove_to_bytes(&Integer::from(UNCONDITIONAL), &opts)
        .expect("an unconditional certificate");
    std::fs::write(golden.join(UNCONDITIONAL_FILE), bytes).expect("write golden");
    // The soundness corpus is written from these by
    // `cargo run --release -p classcert-tests --bin forge-vectors`.
}

/// The order-witness golden certificate: D and its class number
/// (h(-1000003) = 105 by the oracle's count, checked below).
const WITNESS: (i64, u64) = (-1_000_003, 105);
const WITNESS_FILE: &str = "witness-minus-1000003.cert";
/// The unconditional golden certificate (no GRH).
const UNCONDITIONAL: i64 = -3299;
const UNCONDITIONAL_FILE: &str = "unconditional-minus-3299.cert";

/// The order-witness and unconditional golden certificates verify and
/// state the oracle's group; the unconditional one rests on nothing.
#[test]
fn golden_witness_and_unconditional_certificates() {
    let w = expect_verified(
        &verify_bytes(&read(&golden_dir().join(WITNESS_FILE))),
        WITNESS_FILE,
    );
    assert_eq!(
        w.kind(),
        classcert_verifier::report::CertificateKind::OrderWitness
    );
    assert_eq!(
        invariants_u64(&w),
        oracle::group_invariants_bruteforce(WITNESS.0)
    );
    assert_eq!(oracle::class_number_by_counting(WITNESS.0), WITNESS.1);
    let u = expect_verified(
        &verify_bytes(&read(&golden_dir().join(UNCONDITIONAL_FILE))),
        UNCONDITIONAL_FILE,
    );
    assert!(u.assumptions().is_empty(), "unconditional rests on nothing");
    assert_eq!(
        invariants_u64(&u),
        oracle::group_invariants_bruteforce(UNCONDITIONAL)
    );
}

#[test]
fn golden_certificates_verify_and_state_the_true_group() {
    let files = cert_files(&golden_dir());
    let want: BTreeSet<String> = GOLDEN
        .iter()
        .map(|&d| golden_name(d))
        .chain([WITNESS_FILE.to_string(), UNCONDITIONAL_FILE.to_string()])
        .collect();
    assert_eq!(files.iter().cloned().collect::<BTreeSet<_>>(), want);
    for &d in GOLDEN {
        let bytes = read(&golden_dir().join(golden_name(d)));
        let v = expect_verified(&verify_bytes(&bytes), &golden_name(d));
        if d < 0 && d.abs() > ORACLE_LIMIT {
            // too large for the brute force; its group is re-derived by a
            // fresh proof in golden_groups_match_a_fresh_proof
        } else if d < 0 {
            let truth = oracle::group_invariants_bruteforce(d);
            assert_eq!(invariants_u64(&v), truth, "{}", golden_name(d));
            assert_eq!(
                *v.class_number(),
                Integer::from(oracle::class_number_by_counting(d))
            );
        } else {
            // the regulator of the order from its continued fraction
            let r: f64 = v
                .unit()
                .as_ref()
                .expect("units")
                .regulator_text()
                .parse()
                .unwrap();
            let want = oracle::regulator_by_continued_fraction(d);
            assert!((r - want).abs() < 1e-9 * want, "R({d})");
            if oracle::is_fundamental(d) {
                assert_eq!(
                    *v.class_number(),
                    Integer::from(oracle::class_number_real_finite_formula(d))
                );
            }
        }
        assert_eq!(v.maximal(), oracle::is_fundamental(d));
        assert!(rests_on_grh(&v));
        // The stored file is canonical: decoding and re-encoding is exact.
        let decoded = decode_file(&bytes).expect("decodes");
        assert_eq!(encode(&decoded.body), bytes);
    }
}

/// Today's prover still finds the same groups as the stored certificates
/// (the bytes may differ after prover changes; the mathematics may not).
#[test]
fn golden_groups_match_a_fresh_proof() {
    for &d in GOLDEN {
        let stored = decode_file(&read(&golden_dir().join(golden_name(d))))
            .expect("decodes")
            .body;
        let fresh = prove_body(d);
        assert_eq!(
            fresh.claim.class_number, stored.claim.class_number,
            "h({d})"
        );
        assert_eq!(fresh.claim.invariants, stored.claim.invariants, "Cl({d})");
        assert_eq!(fresh.maximality.is_some(), stored.maximality.is_some());
    }
}

/// Verifies `rows`; returns a line for each file not refused as listed
/// (and panics on a layer that is not what it says).
fn check_rows(dir: &Path, rows: &[Row]) -> Vec<String> {
    let mut wrong = Vec::new();
    for row in rows {
        let bytes = read(&dir.join(&row.file));
        let got = match verify_bytes(&bytes).outcome {
            Ok(v) => format!("VERIFIED (class number {})", v.class_number()),
            Err(r) => r.reason.code().to_string(),
        };
        if got != row.code {
            wrong.push(format!("{} expected {}, got {got}", row.file, row.code));
        }
        if row.layer != Layer::Bytes {
            // canonical bytes and a matching digest: only the mathematics
            // is wrong
            let doc = decode_document(&bytes).unwrap_or_else(|e| {
                panic!(
                    "{}: a {} forgery does not decode: {e}",
                    row.file,
                    row.layer.word()
                )
            });
            if row.layer == Layer::Consistent {
                let lattice = match &doc.document {
                    Document::Relations(b) => Some(&b.lattice),
                    Document::Field(f) => Some(&f.lattice),
                    Document::OrderWitness(_) => None,
                };
                if let Some(l) = lattice {
                    assert!(
                        corpus::smith_identities_hold(l),
                        "{}: a consistent forgery whose Smith form does not hold",
                        row.file
                    );
                }
            }
        }
    }
    wrong
}

/// The soundness corpus (`vectors/mutations/`, written by the binary
/// `forge-vectors` from `classcert_tests::corpus`): every listed file is
/// refused with exactly its reason code, the listing and the directory
/// agree, and the layers are what they say.
#[test]
fn corpus_is_rejected_with_the_listed_codes() {
    let dir = mutations_dir();
    let rows = expected_rows();
    let known = known_rows();
    let listed: BTreeSet<String> = rows
        .iter()
        .map(|r| r.file.clone())
        .chain(known.iter().map(|k| k.file.clone()))
        .collect();
    assert_eq!(
        listed.len(),
        rows.len() + known.len(),
        "a file is listed twice"
    );
    let present: BTreeSet<String> = cert_files(&dir).into_iter().collect();
    let missing: Vec<&str> = listed
        .difference(&present)
        .take(5)
        .map(|s| s.as_str())
        .collect();
    let unlisted: Vec<&str> = present
        .difference(&listed)
        .take(5)
        .map(|s| s.as_str())
        .collect();
    assert!(
        missing.is_empty() && unlisted.is_empty(),
        "expected.txt and mutations/ differ: listed but absent [{}], present but unlisted [{}]",
        missing.join(", "),
        unlisted.join(", ")
    );
    assert!(rows.len() >= 1000, "only {} forgeries", rows.len());
    let consistent = rows.iter().filter(|r| r.layer == Layer::Consistent).count();
    assert!(consistent >= 200, "only {consistent} consistent forgeries");
    // Two workers (the machine the suite runs on has two cores).
    let half = rows.len().div_ceil(2);
    let wrong: Vec<String> = std::thread::scope(|scope| {
        let handles: Vec<_> = rows
            .chunks(half)
            .map(|chunk| scope.spawn(|| check_rows(&dir, chunk)))
            .collect();
        handles
            .into_iter()
            .flat_map(|h| h.join().expect("a worker panicked"))
            .collect()
    });
    assert!(
        wrong.is_empty(),
        "{} of {} forgeries not refused as listed:\n{}",
        wrong.len(),
        rows.len(),
        wrong.join("\n")
    );
    // Known deviations are reported, never hidden: each still behaves as
    // recorded (when one is fixed, move it to expected.txt).
    for k in &known {
        let got = match verify_bytes(&read(&dir.join(&k.file))).outcome {
            Ok(_) => "verified".to_string(),
            Err(r) => r.reason.code().to_string(),
        };
        eprintln!(
            "KNOWN DEVIATION {}: should be refused as {}, the verifier says {got}",
            k.file, k.code
        );
        assert_eq!(
            got, k.observed,
            "{}: the recorded deviation changed (fixed? move it to expected.txt)",
            k.file
        );
    }
}

/// The stored corpus is exactly what the generator writes today from the
/// golden files: same files, same bytes, same expected.txt.
#[test]
fn corpus_matches_its_generator() {
    let vectors = corpus::generate(&vectors_dir());
    let dir = mutations_dir();
    let stored = String::from_utf8(read(&dir.join("expected.txt"))).expect("UTF-8");
    assert_eq!(
        stored,
        corpus::expected_txt(&vectors),
        "expected.txt is not the generator's (run `cargo run --release -p classcert-tests --bin forge-vectors`)"
    );
    let known = String::from_utf8(read(&dir.join("known-deviations.txt"))).expect("UTF-8");
    assert_eq!(known, corpus::known_txt(&vectors), "known-deviations.txt");
    for v in &vectors {
        assert!(
            read(&dir.join(&v.file)) == v.bytes,
            "{}: the stored bytes differ from the generator's",
            v.file
        );
    }
}
