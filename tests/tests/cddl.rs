//! Certificates written by the prover validate against the published
//! schema `format/certificate.cddl` (CDDL, RFC 8610), and damaged ones do
//! not, so the schema cannot drift from `format/src/model.rs` unnoticed.
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

use cddl::validator::cbor::CBORValidator;
use cddl::validator::cbor_value::{decode_cbor, Value};
use cddl::validator::Validator;
use classcert_format::cbor::{self, WalkLimits};
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
    cddl::validate_cbor_from_slice(SCHEMA, bytes, None).map_err(|e| e.to_string())?;
    assert!(
        SCHEMA.contains(INTEGER_RULE),
        "certificate.cddl no longer defines {INTEGER_RULE:?}"
    );
    let schema = SCHEMA.replace(INTEGER_RULE, UNTAGGED_INTEGER_RULE);
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
    for (d, maximal) in [(-3299, true), (-3299 * 4, false), (-3, true)] {
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
