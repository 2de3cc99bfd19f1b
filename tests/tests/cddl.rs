//! Certificates written by the prover validate against the published
//! schema `format/certificate.cddl` (CDDL, RFC 8610), and damaged ones do
//! not, so the schema cannot drift from `format/src/model.rs` unnoticed.
//! Both signs of the discriminant are covered: imaginary orders (form
//! reduction witnesses) and real orders (raw relations with element
//! witnesses, combinations, and the unit in compact representation).
//!
//! The validator is the `cddl` crate (a CDDL parser and CBOR/JSON
//! validator), used here as an independent reading of the schema: it shares
//! no code with the format crate's own decoder.
//!
//! One gap of that validator (cddl 0.10.7) is worked around here: when a
//! tagged item meets a type name that is neither a bignum nor a date type,
//! it accepts the item without looking at it, so a bignum standing where
//! the schema says `tstr` would pass. Each certificate is therefore
//! validated twice: as it is, and with every bignum (tag 2 or 3 over a byte
//! string) replaced by its bare byte string, against a copy of the schema
//! whose `integer` rule reads `int / bstr`. The only other byte string in
//! the schema is the 32-byte digest, so the second pass fails wherever a
//! bignum stands outside `integer`. (A map would not do as the stand-in:
//! that validator lets a map pass where `tstr` is expected, when the map
//! has a text key.) Tags other than 2 and 3 are left as they are; the
//! format crate's decoder refuses them.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use cddl::validator::cbor::CBORValidator;
use cddl::validator::cbor_value::{decode_cbor, Value};
use cddl::validator::Validator;
use classcert_format::cbor::{self, WalkLimits};
use classcert_format::Witness;
use classcert_prover::{prove_to_bytes, Options};
use rug::Integer;

const SCHEMA: &str = include_str!("../../format/certificate.cddl");

/// The schema's rule for integers of any size, and its stand-in for the
/// second pass.
const INTEGER_RULE: &str = "integer = int / biguint / bignint";
const UNTAGGED_INTEGER_RULE: &str = "integer = int / bstr";

fn certificate(d: i64) -> Vec<u8> {
    let (bytes, _id) = prove_to_bytes(&Integer::from(d), &Options::default())
        .unwrap_or_else(|e| panic!("the prover failed on D = {d}: {e}"));
    bytes
}

/// Replaces each bignum by its byte string (see the module docs); any other
/// tag is left in place.
fn untag(v: Value) -> Value {
    match v {
        Value::Tag(2 | 3, inner) if matches!(*inner, Value::Bytes(_)) => *inner,
        Value::Tag(t, inner) => Value::Tag(t, Box::new(untag(*inner))),
        Value::Array(items) => Value::Array(items.into_iter().map(untag).collect()),
        Value::Map(entries) => Value::Map(
            entries
                .into_iter()
                .map(|(k, x)| (untag(k), untag(x)))
                .collect(),
        ),
        other => other,
    }
}

/// Both passes: the bytes as they are, then with bignums made visible.
fn validate(bytes: &[u8]) -> Result<(), String> {
    validate_against(SCHEMA, bytes)
}

/// [`validate`] for an answer file: the validator takes the schema's first
/// rule as the root, so a rule naming `answer-file` is put first.
fn validate_answer(bytes: &[u8]) -> Result<(), String> {
    validate_against(&format!("answer-root = answer-file\n{SCHEMA}"), bytes)
}

fn validate_against(schema: &str, bytes: &[u8]) -> Result<(), String> {
    cddl::validate_cbor_from_slice(schema, bytes, None).map_err(|e| e.to_string())?;
    assert!(
        schema.contains(INTEGER_RULE),
        "certificate.cddl no longer defines {INTEGER_RULE:?}"
    );
    let schema = schema.replace(INTEGER_RULE, UNTAGGED_INTEGER_RULE);
    let ast = cddl::cddl_from_str(&schema, true)?;
    let tree = untag(decode_cbor(bytes).map_err(|e| e.to_string())?);
    let mut v = CBORValidator::new(&ast, tree, None);
    Validator::<cddl::validator::cbor::Error<std::io::Error>>::validate(&mut v)
        .map_err(|e| format!("with bignums made visible: {e}"))
}

fn assert_valid(what: &str, bytes: &[u8]) {
    if let Err(e) = validate(bytes) {
        panic!(
            "{what}: a certificate the format crate wrote does not match certificate.cddl:\n{e}"
        );
    }
}

fn assert_invalid(what: &str, bytes: &[u8]) {
    if validate(bytes).is_ok() {
        panic!("{what}: a damaged certificate passed the schema");
    }
}

/// Counts bignum tags (2 and 3) in a CBOR item, to show the golden files
/// exercise the `biguint / bignint` branch of `integer`.
fn count_bignums(v: &Value) -> usize {
    match v {
        Value::Tag(2 | 3, _) => 1,
        Value::Tag(_, inner) => count_bignums(inner),
        Value::Array(items) => items.iter().map(count_bignums).sum(),
        Value::Map(entries) => entries
            .iter()
            .map(|(k, x)| count_bignums(k) + count_bignums(x))
            .sum(),
        _ => 0,
    }
}

/// Decodes a certificate into a value tree, lets `$body` change it, and
/// re-encodes it. (A macro, because the tree's type belongs to the format
/// crate's CBOR library, which this crate does not name.)
macro_rules! damaged {
    ($bytes:expr, |$v:ident| $body:block) => {{
        let mut $v = cbor::to_value($bytes, WalkLimits::default()).expect("golden file decodes");
        $body
        cbor::from_value(&$v).expect("the damaged tree encodes")
    }};
}

/// The entry of map `$m` under text key `$k`, mutably.
macro_rules! field {
    ($m:expr, $k:expr) => {
        $m.as_map_mut()
            .expect("a map")
            .iter_mut()
            .find(|(key, _)| key.as_text() == Some($k))
            .map(|(_, x)| x)
            .expect("the field is present")
    };
}

/// Removes the entry under text key `$k` from map `$m`.
macro_rules! remove {
    ($m:expr, $k:expr) => {{
        let m = $m.as_map_mut().expect("a map");
        let before = m.len();
        m.retain(|(key, _)| key.as_text() != Some($k));
        assert_eq!(m.len() + 1, before, "field {} was present once", $k);
    }};
}

#[test]
fn schema_parses() {
    if let Err(e) = cddl::cddl_from_str(SCHEMA, true) {
        panic!("format/certificate.cddl does not parse: {e}");
    }
}

#[test]
fn golden_certificates_match_the_schema() {
    let mut bignums = 0;
    // -46588222708 = -4 · 11647055677 carries a Pocklington proof,
    // -18544966547 a Morrison proof
    for (d, maximal) in [
        (-3299, true),
        (-3299 * 4, false),
        (-3, true),
        (-46_588_222_708, true),
        (-18_544_966_547, true),
    ] {
        let bytes = certificate(d);
        let decoded = classcert_format::decode_file(&bytes).expect("the prover's file decodes");
        assert_eq!(
            decoded.body.maximality.is_some(),
            maximal,
            "maximality claim for D = {d}"
        );
        assert_valid(&format!("D = {d}"), &bytes);
        let tree = decode_cbor(&bytes).expect("CBOR");
        bignums += count_bignums(&tree);
    }
    assert!(
        bignums > 0,
        "no golden certificate holds a bignum, so the biguint/bignint branch is untested"
    );
}

/// Real quadratic orders: fundamental discriminants with a nontrivial
/// class group (316, h = 3) and a larger one with two prime factors.
const REAL: [i64; 2] = [316, 999_997];

/// The file for `D > 0`, through the prover's body and the format crate's
/// encoder (the same bytes `prove_to_bytes` hands out after its self-check).
fn real_certificate(d: i64) -> Vec<u8> {
    let body = classcert_prover::prove(&Integer::from(d), &Options::default())
        .unwrap_or_else(|e| panic!("the prover failed on D = {d}: {e}"));
    let (bytes, _id) = classcert_format::encode_file(&body)
        .unwrap_or_else(|e| panic!("encoding failed for D = {d}: {e}"));
    bytes
}

#[test]
fn real_certificates_match_the_schema() {
    for d in REAL {
        let bytes = real_certificate(d);
        let decoded = classcert_format::decode_file(&bytes).expect("the prover's file decodes");
        let body = &decoded.body;
        // The optional parts of the schema that only D > 0 uses are really
        // exercised: the unit section, the raw relations, element and
        // combination witnesses, and generators without a form.
        let units = body.units.as_ref().expect("D > 0 has a unit section");
        assert!(
            !units.steps.is_empty(),
            "D = {d}: an empty compact representation"
        );
        let raw = body
            .lattice
            .raw_relations
            .as_ref()
            .expect("D > 0 has raw relations");
        assert!(!raw.is_empty(), "D = {d}: no raw relations");
        assert!(raw
            .iter()
            .all(|r| matches!(r.witness, Witness::Element { .. })));
        assert!(matches!(
            body.lattice.relation_witness,
            Witness::Combinations { .. }
        ));
        assert!(body
            .lattice
            .eliminations
            .iter()
            .all(|e| matches!(e.relation.witness, Witness::Combination { .. })));
        // derived relations: present (the prover names its pivots), never
        // empty, each shown as a combination
        let derived = body
            .lattice
            .derived_relations
            .as_ref()
            .expect("the prover's D > 0 certificates have derived relations");
        assert!(!derived.is_empty(), "D = {d}: an empty derived list");
        assert!(derived
            .iter()
            .all(|r| matches!(r.witness, Witness::Combination { .. })));
        assert!(body.claim.generators.iter().all(|g| g.form.is_none()));
        if d == 316 {
            assert_eq!(body.claim.class_number, 3, "h(316)");
            assert_eq!(body.claim.generators.len(), 1);
        }
        assert_valid(&format!("D = {d}"), &bytes);
    }
}

#[test]
fn a_hand_made_bignum_matches_the_schema() {
    // Replace the discriminant by a tagged bignum: the schema must accept
    // `integer` in both shapes (the verifier would then reject the
    // certificate on its own grounds; the shape is what is tested here).
    let bytes = certificate(-3299);
    let big = cbor::int(&(Integer::from(1) << 100u32));
    let neg = cbor::int(&-(Integer::from(1) << 100u32));
    assert!(big.as_tag().is_some() && neg.as_tag().is_some());
    for v in [big, neg] {
        let out = damaged!(&bytes, |t| {
            *field!(field!(field!(t, "body"), "order"), "discriminant") = v.clone();
        });
        assert_valid("bignum discriminant", &out);
    }
}

#[test]
fn damaged_certificates_fail_the_schema() {
    let maximal = certificate(-3299);
    let non_maximal = certificate(-3299 * 4);

    // Missing fields, at the top and inside the body.
    let out = damaged!(&maximal, |t| {
        remove!(t, "body-sha256");
    });
    assert_invalid("no body-sha256", &out);
    for key in ["euler", "lattice", "maximality", "factor-base", "claim"] {
        let out = damaged!(&maximal, |t| {
            remove!(field!(t, "body"), key);
        });
        assert_invalid(&format!("no body.{key}"), &out);
    }
    let out = damaged!(&non_maximal, |t| {
        remove!(
            field!(field!(field!(t, "body"), "lattice"), "smith"),
            "v-inv"
        );
    });
    assert_invalid("no lattice.smith.v-inv", &out);

    // A digest of the wrong length.
    let out = damaged!(&maximal, |t| {
        field!(t, "body-sha256")
            .as_bytes_mut()
            .expect("bytes")
            .pop();
    });
    assert_invalid("31-byte digest", &out);

    // An unknown variant of a tagged union.
    let out = damaged!(&maximal, |t| {
        let kind = field!(field!(field!(t, "body"), "order"), "kind");
        *kind.as_text_mut().expect("text") = "real-quadratic".into();
    });
    assert_invalid("order kind", &out);

    // A wrong type: text where an integer belongs.
    let out = damaged!(&maximal, |t| {
        let tool = field!(field!(field!(t, "body"), "producer"), "tool").clone();
        *field!(field!(field!(t, "body"), "order"), "discriminant") = tool;
    });
    assert_invalid("text discriminant", &out);

    // Bignums outside `integer`: where a 64-bit unsigned integer belongs,
    // and where text belongs (the second is caught only by the second
    // pass; see the module docs).
    for key in ["seed", "tool"] {
        let out = damaged!(&maximal, |t| {
            *field!(field!(field!(t, "body"), "producer"), key) =
                cbor::int(&(Integer::from(1) << 100u32));
        });
        assert_invalid(&format!("bignum producer.{key}"), &out);
    }

    // A wrong format version.
    let out = damaged!(&maximal, |t| {
        *field!(t, "format") = cbor::uint(2);
    });
    assert_invalid("format 2", &out);

    // An unknown field: CDDL maps are closed unless the schema says
    // otherwise, and the decoder refuses unknown keys too.
    // The key used is a text value taken from the file itself (the name of
    // the generation theorem), so no CBOR type needs naming here.
    let out = damaged!(&maximal, |t| {
        let extra = field!(field!(t, "body"), "generation-theorem").clone();
        t.as_map_mut().expect("a map").push((extra.clone(), extra));
    });
    assert_invalid("unknown top-level field", &out);
}

#[test]
fn damaged_real_certificates_fail_the_schema() {
    let real = real_certificate(316);

    // The unit section: an unknown kind, missing fields, a step of the
    // wrong length, and a norm that is not an integer.
    let out = damaged!(&real, |t| {
        let kind = field!(field!(field!(t, "body"), "units"), "kind");
        *kind.as_text_mut().expect("text") = "explicit".into();
    });
    assert_invalid("units kind", &out);
    for key in ["kind", "steps", "norm", "regulator"] {
        let out = damaged!(&real, |t| {
            remove!(field!(field!(t, "body"), "units"), key);
        });
        assert_invalid(&format!("no units.{key}"), &out);
    }
    let out = damaged!(&real, |t| {
        let steps = field!(field!(field!(t, "body"), "units"), "steps");
        let first = steps
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a step");
        first.as_array_mut().expect("a step is an array").pop();
    });
    assert_invalid("a compact step of four integers", &out);
    let out = damaged!(&real, |t| {
        let kind = field!(field!(field!(t, "body"), "units"), "kind").clone();
        *field!(field!(field!(t, "body"), "units"), "norm") = kind;
    });
    assert_invalid("text units.norm", &out);

    // Derived relations: an empty list (the key is absent when there are
    // none), and one with a witness without its terms.
    let out = damaged!(&real, |t| {
        let derived = field!(field!(field!(t, "body"), "lattice"), "derived-relations");
        derived.as_array_mut().expect("an array").clear();
    });
    assert_invalid("empty derived-relations", &out);
    let out = damaged!(&real, |t| {
        let derived = field!(field!(field!(t, "body"), "lattice"), "derived-relations");
        let first = derived
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a derived relation");
        remove!(field!(first, "w"), "terms");
    });
    assert_invalid("combination witness without terms", &out);

    // Raw relations: an element witness without "y", and one of an unknown
    // kind.
    let out = damaged!(&real, |t| {
        let raw = field!(field!(field!(t, "body"), "lattice"), "raw-relations");
        let first = raw
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a raw relation");
        remove!(field!(first, "w"), "y");
    });
    assert_invalid("element witness without y", &out);
    let out = damaged!(&real, |t| {
        let raw = field!(field!(field!(t, "body"), "lattice"), "raw-relations");
        let first = raw
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a raw relation");
        let kind = field!(field!(first, "w"), "kind");
        *kind.as_text_mut().expect("text") = "ideal".into();
    });
    assert_invalid("raw relation witness kind", &out);

    // The rows of H: a combinations witness without its rows, and a row
    // whose coefficient is text.
    let out = damaged!(&real, |t| {
        remove!(
            field!(field!(field!(t, "body"), "lattice"), "relation-witness"),
            "rows"
        );
    });
    assert_invalid("combinations witness without rows", &out);
    let out = damaged!(&real, |t| {
        let kind = field!(
            field!(field!(field!(t, "body"), "lattice"), "relation-witness"),
            "kind"
        )
        .clone();
        let rows = field!(
            field!(field!(field!(t, "body"), "lattice"), "relation-witness"),
            "rows"
        );
        let term = rows
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a row")
            .as_array_mut()
            .expect("a row is an array")
            .first_mut()
            .expect("a term");
        *term
            .as_array_mut()
            .expect("a term is a pair")
            .last_mut()
            .expect("a coefficient") = kind;
    });
    assert_invalid("text combination coefficient", &out);

    // A generator without its exponents (its form is optional, its
    // exponents are not).
    let out = damaged!(&real, |t| {
        let gens = field!(field!(field!(t, "body"), "claim"), "generators");
        let first = gens
            .as_array_mut()
            .expect("an array")
            .first_mut()
            .expect("a generator");
        remove!(first, "exponents");
    });
    assert_invalid("generator without exponents", &out);
}

#[test]
fn order_witness_certificates_match_the_schema() {
    // h(-1000003) = 105 (the oracle's count in tests/tests/witness.rs)
    let (bytes, _) = classcert_prover::witness::prove_witness_to_bytes(
        &Integer::from(-1_000_003),
        &Integer::from(105),
        None,
        None,
        &Options::default(),
    )
    .expect("the witness proves");
    assert_valid("order witness for D = -1000003", &bytes);
}

#[test]
fn field_certificates_match_the_schema() {
    // Number fields: the polynomial order (with a denominator for x^3 - 10,
    // whose Z[θ] has index 3), two-element prime ideals, coordinates
    // witnesses, real and complex root enclosures, power-product units.
    for f in ["x^3 - 7", "x^3 - 10", "x^4 + 1"] {
        let poly = classcert_prover::polynomial::parse(f).expect("a polynomial");
        let (bytes, _) = classcert_prover::field_to_bytes(&poly, &Options::default())
            .unwrap_or_else(|e| panic!("the prover failed on {f}: {e}"));
        if let Err(e) = validate(&bytes) {
            panic!("{f}: the certificate does not match the schema: {e}");
        }
    }
}

#[test]
fn answer_files_match_the_schema() {
    // the class of a prime form of D = -3299, the same answer with a bignum
    // order, and damaged answers
    let bytes = certificate(-3299);
    let d = Integer::from(-3299);
    let p = classcert_prover::ask::prime_form(&d, 5).expect("5 splits");
    let asked = classcert_prover::ask::ask(&bytes, &p, 1).expect("an answer");
    let answer = asked.bytes;
    if let Err(e) = validate_answer(&answer) {
        panic!("an answer the format crate wrote does not match answer-file:\n{e}");
    }
    assert!(validate(&answer).is_err(), "an answer is not a certificate");
    let mut big = asked.answer.clone();
    big.order = Integer::from(1) << 80u32;
    assert!(
        validate_answer(&big.encode().unwrap()).is_ok(),
        "a bignum order"
    );
    for key in [
        "kind",
        "form",
        "order",
        "format",
        "witness",
        "exponents",
        "certificate-sha256",
    ] {
        let out = damaged!(&answer, |t| {
            remove!(t, key);
        });
        assert!(validate_answer(&out).is_err(), "an answer without {key}");
    }
    let out = damaged!(&answer, |t| {
        field!(t, "certificate-sha256")
            .as_bytes_mut()
            .expect("bytes")
            .pop();
    });
    assert!(validate_answer(&out).is_err(), "a 31-byte id");
    let out = damaged!(&answer, |t| {
        let kind = field!(field!(t, "witness"), "kind");
        *kind.as_text_mut().expect("text") = "element".into();
    });
    assert!(validate_answer(&out).is_err(), "another witness kind");
}
