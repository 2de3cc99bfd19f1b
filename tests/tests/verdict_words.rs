//! Every word of the verdict is what was checked: snapshots and assertions
//! for the wording that once said more (or other) than the checks showed.
//!
//! * An unconditional certificate names the exact series and its number of
//!   terms, never "Euler product to X" (the series has no cut-off X).
//! * An order witness lists the analytic theorem it used: GRH only when the
//!   Euler product was used; with the series it rests on no hypothesis.
//! * The Morrison entry states the general-Q theorem the check uses.
//! * The reduced-forms generation entry holds for D < 0 only.
//! * A non-maximal order's verdict says that maximality was not claimed.
//! * Every reason code is documented in the README.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{decode_file, Document};
use classcert_prover::witness::prove_witness;
use classcert_prover::{prove_to_bytes, Options};
use classcert_tests::support::{encode, prove_body, rejection_code, vectors_dir};
use classcert_verifier::registry;
use classcert_verifier::verify_bytes;
use rug::Integer;

fn unconditional_bytes(d: i64) -> Vec<u8> {
    let opts = Options {
        unconditional: true,
        ..Options::default()
    };
    prove_to_bytes(&Integer::from(d), &opts)
        .unwrap_or_else(|e| panic!("D = {d}: {e}"))
        .0
}

#[test]
fn unconditional_verdict_names_the_series() {
    // h(-3299) = 27, Cl ≅ Z/3 x Z/9 (see tests/tests/snapshots.rs)
    let report = verify_bytes(&unconditional_bytes(-3299));
    let text = report.to_text();
    let json = report.to_json().render();
    assert!(!text.contains("Euler product"), "{text}");
    assert!(!json.contains("euler"), "{json}");
    insta::assert_snapshot!("unconditional_minus_3299_verify_text", text);
    insta::assert_snapshot!("unconditional_minus_3299_verify_json", json);
}

fn witness_document(d: i64, h: u64, inv: &[u64], series_from: Option<&[u8]>) -> Vec<u8> {
    let mut w = prove_witness(
        &Integer::from(d),
        &Integer::from(h),
        None,
        Some(inv.iter().map(|&x| Integer::from(x)).collect()),
        &Options::default(),
    )
    .expect("the prover certifies the published class group");
    if let Some(bytes) = series_from {
        let full = decode_file(bytes).expect("decodes");
        w.euler = full.body.euler;
    }
    classcert_format::encode_document(&Document::OrderWitness(Box::new(w)))
        .expect("encodes")
        .0
}

#[test]
fn order_witness_lists_the_analytic_theorem_it_used() {
    // Cl(-3299) ≅ Z/3 x Z/9 (snapshots.rs); with the Euler product: GRH.
    let report = verify_bytes(&witness_document(-3299, 27, &[3, 9], None));
    let v = report.outcome.as_ref().expect("verifies");
    assert_eq!(
        v.assumptions().iter().map(|a| a.name()).collect::<Vec<_>>(),
        vec!["GRH"]
    );
    insta::assert_snapshot!("witness_minus_3299_grh_verify_text", report.to_text());
    // With the series of an unconditional certificate: no hypothesis, and
    // neither the Euler product nor GRH is named.
    let series = unconditional_bytes(-3299);
    let report = verify_bytes(&witness_document(-3299, 27, &[3, 9], Some(&series)));
    let v = report.outcome.as_ref().expect("verifies");
    assert!(v.assumptions().is_empty());
    assert!(v
        .theorems()
        .iter()
        .all(|t| t.id != registry::BELABAS_FRIEDMAN && t.hypothesis.name() != "GRH"));
    let text = report.to_text();
    assert!(text.contains("rests on      no hypothesis"), "{text}");
    insta::assert_snapshot!("witness_minus_3299_series_verify_text", text);
    insta::assert_snapshot!(
        "witness_minus_3299_series_verify_json",
        report.to_json().render()
    );
}

#[test]
fn morrison_entry_states_the_general_q_theorem() {
    // The golden certificate whose factor of |D| is proven by N + 1.
    let path = vectors_dir().join("golden").join("minus-18544966547.cert");
    let bytes = std::fs::read(&path).expect("golden file");
    let report = verify_bytes(&bytes);
    let v = report.outcome.as_ref().expect("verifies");
    let t = v
        .theorems()
        .iter()
        .find(|t| t.id == registry::MORRISON)
        .expect("the verdict lists the N + 1 theorem");
    assert!(
        t.statement.contains("((P^2 - 4Q)/N) = -1"),
        "{}",
        t.statement
    );
    assert!(t.statement.contains("gcd(N, Q) = 1") && t.statement.contains("N be odd"));
    insta::assert_snapshot!("morrison_golden_verify_json", report.to_json().render());
}

#[test]
fn reduced_forms_bound_is_refused_for_real_orders() {
    // D = 316 = 4 · 79 (OEIS A349419; tests/tests/real.rs)
    let mut body = prove_body(316);
    body.generation_theorem = registry::REDUCED_FORMS.into();
    assert_eq!(
        rejection_code(&encode(&body)),
        Some("generation-theorem-not-applicable")
    );
}

#[test]
fn non_maximal_verdict_says_maximality_was_not_claimed() {
    // D = -300 = 10^2 · -3 (common practice): not the maximal order.
    let path = vectors_dir().join("golden").join("minus-300.cert");
    let report = verify_bytes(&std::fs::read(&path).expect("golden file"));
    let text = report.to_text();
    assert!(text.contains("maximality was not claimed"), "{text}");
    assert!(text.contains("order-generation-12log2"), "{text}");
    assert!(text.contains("constant from memory, unconfirmed"), "{text}");
}

#[test]
fn the_registry_as_a_reviewer_reads_it() {
    let mut s = String::new();
    for t in registry::REGISTRY {
        s.push_str(&format!(
            "[{}] ({})\n  statement: {}\n  citation: {}\n  note: {}\n",
            t.id,
            t.hypothesis.name(),
            t.statement,
            t.citation,
            t.note
        ));
    }
    insta::assert_snapshot!("registry", s);
}

/// The value of `key` in a JSON object.
fn field<'a>(
    j: &'a classcert_format::json::Json,
    key: &str,
) -> Option<&'a classcert_format::json::Json> {
    match j {
        classcert_format::json::Json::Obj(entries) => {
            entries.iter().find(|(k, _)| k == key).map(|(_, v)| v)
        }
        _ => None,
    }
}

#[test]
fn show_and_verify_share_one_vocabulary() {
    // One fact, one key (docs/json.md): every key both documents carry has
    // the same value, except `kind` (claims against verdict) and `unit`,
    // where `show` adds the coordinates a, b.
    use classcert_prover::show;
    let mut checked = 0;
    for name in [
        "minus-3299.cert",
        "minus-300.cert",
        "plus-316.cert",
        "minus-18544966547.cert",
    ] {
        let path = vectors_dir().join("golden").join(name);
        let bytes = std::fs::read(&path).expect("golden file");
        let decoded = decode_file(&bytes).expect("decodes");
        let claims = show::json(&decoded);
        let verdict = verify_bytes(&bytes).to_json();
        let classcert_format::json::Json::Obj(entries) = &claims else {
            panic!("show --json is an object");
        };
        for (key, value) in entries {
            if key == "kind" {
                continue;
            }
            let Some(other) = field(&verdict, key) else {
                continue;
            };
            if key == "unit" {
                for sub in ["norm", "regulator", "compact_steps"] {
                    assert_eq!(field(value, sub), field(other, sub), "{name}: unit.{sub}");
                }
            } else {
                assert_eq!(value, other, "{name}: key {key}");
            }
            checked += 1;
        }
        assert_eq!(field(&claims, "schema"), field(&verdict, "schema"));
    }
    // the witness kind too
    let w = witness_document(-3299, 27, &[3, 9], None);
    let doc = classcert_format::decode_document(&w).expect("decodes");
    let Document::OrderWitness(body) = &doc.document else {
        panic!("an order witness");
    };
    let claims = show::witness_json(body, &doc.id_hex());
    let verdict = verify_bytes(&w).to_json();
    for key in [
        "schema",
        "certificate_sha256",
        "certificate_kind",
        "discriminant",
        "class_number",
        "invariants",
        "generators",
        "analytic",
        "w",
    ] {
        assert_eq!(
            field(&claims, key),
            field(&verdict, key),
            "witness: key {key}"
        );
        checked += 1;
    }
    assert!(checked > 40, "{checked} keys compared");
}

/// Every reason code a verdict can give is in the README's tables, once
/// (`verifier/src/report/reason.rs` lists them all in one place).
#[test]
fn every_reason_code_is_documented_once() {
    use classcert_verifier::report::Reason;
    let readme =
        std::fs::read_to_string(classcert_tests::support::workspace_dir().join("README.md"))
            .expect("README.md");
    let mut codes: Vec<&str> = Reason::ALL.iter().map(|r| r.code()).collect();
    for code in &codes {
        let row = format!("| `{code}` |");
        assert_eq!(readme.matches(&row).count(), 1, "README rows for {code}");
    }
    codes.sort_unstable();
    codes.dedup();
    assert_eq!(codes.len(), Reason::ALL.len(), "codes are distinct");
}
