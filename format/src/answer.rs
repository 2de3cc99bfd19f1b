//! The answer file of `classcert ask`: where one class lies in a
//! certificate's group.
//!
//! ```text
//!   answer = { "kind": "answer", "format": 1, "certificate-sha256": id,
//!              "form": [a, b, c], "exponents": [e_1, …], "order": n,
//!              "witness": { "kind": "form-reduction" } }
//! ```
//!
//! It claims `[(a, b, c)] = ∏ g_i^{e_i}` for the generators `g_i` of the
//! certificate named by `id` (its SHA-256), and that the class has order
//! `n`. The witness says how the claim is shown: for `D < 0`, the reduction
//! of `(a, b, c) · ∏ g_i^{-e_i}` to the principal form, which the verifier
//! recomputes (so the witness holds no data). Other witness kinds are left
//! for real orders. Like a certificate, an answer has one encoding:
//! deterministic CBOR, read strictly and re-encoded to compare.

use crate::cbor::{self, DecodeError, MapReader, WalkLimits};
use crate::model::{get_form, get_ints, get_witness, ints, witness, Form, Witness};
use ciborium::Value;
use rug::Integer;

/// The one answer format this build writes and reads.
pub const ANSWER_VERSION: u64 = 1;

/// The decoder's caps: an answer is small (a form and one exponent per
/// invariant).
pub const MAX_ANSWER_BYTES: usize = 1 << 20;
const ANSWER_WALK: WalkLimits = WalkLimits {
    max_depth: 8,
    max_items: 10_000,
    max_tree_bytes: 4 << 20,
    tree_bytes_per_input_byte: 64,
};

/// An answer about the class of one form.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Answer {
    /// The certificate's id: SHA-256 of its canonical body.
    pub certificate: [u8; 32],
    /// The form asked about, as it was given (not necessarily reduced).
    pub form: Form,
    /// One exponent per invariant `d_i`, with `0 <= e_i < d_i`.
    pub exponents: Vec<Integer>,
    /// The order of the class.
    pub order: Integer,
    /// How the claim is shown ([`Witness::FormReduction`] for `D < 0`).
    pub witness: Witness,
}

impl Answer {
    pub fn to_value(&self) -> Value {
        cbor::map(vec![
            ("kind", Value::Text("answer".into())),
            ("format", cbor::uint(ANSWER_VERSION)),
            (
                "certificate-sha256",
                Value::Bytes(self.certificate.to_vec()),
            ),
            ("form", crate::model::form(&self.form)),
            ("exponents", ints(&self.exponents)),
            ("order", cbor::int(&self.order)),
            ("witness", witness(&self.witness)),
        ])
    }

    /// The answer's canonical bytes.
    pub fn encode(&self) -> Result<Vec<u8>, DecodeError> {
        cbor::from_value(&self.to_value())
    }

    /// Reads an answer strictly: at most [`MAX_ANSWER_BYTES`], one CBOR
    /// item in the deterministic encoding, no unknown or missing keys, no
    /// trailing bytes.
    pub fn decode(bytes: &[u8]) -> Result<Answer, DecodeError> {
        if bytes.len() > MAX_ANSWER_BYTES {
            return Err(DecodeError::OverLimit("an answer file is at most 1 MiB"));
        }
        let v = cbor::to_value(bytes, ANSWER_WALK)?;
        let mut m = MapReader::new(&v, "answer")?;
        if cbor::get_text(m.req("kind")?, "answer.kind")? != "answer" {
            return Err(cbor::schema("answer.kind", "\"answer\""));
        }
        if cbor::get_u64(m.req("format")?, "answer.format")? != ANSWER_VERSION {
            return Err(cbor::schema("answer.format", "1"));
        }
        let id = cbor::get_bytes(m.req("certificate-sha256")?, "answer.certificate-sha256")?;
        let certificate = <[u8; 32]>::try_from(id)
            .map_err(|_| cbor::schema("answer.certificate-sha256", "32 bytes"))?;
        let answer = Answer {
            certificate,
            form: get_form(m.req("form")?, "answer.form")?,
            exponents: get_ints(m.req("exponents")?, "answer.exponents")?,
            order: cbor::get_int(m.req("order")?, "answer.order")?,
            witness: get_witness(m.req("witness")?, "answer.witness")?,
        };
        m.finish()?;
        if answer.encode()? != bytes {
            return Err(DecodeError::NonCanonical(
                "the bytes differ from the canonical encoding of their content",
            ));
        }
        Ok(answer)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::indexing_slicing)]
mod tests {
    use super::*;

    fn sample() -> Answer {
        Answer {
            certificate: [7; 32],
            form: Form {
                a: Integer::from(3),
                b: Integer::from(2),
                c: Integer::from(5),
            },
            exponents: vec![Integer::from(1), Integer::from(1) << 70u32],
            order: Integer::from(4),
            witness: Witness::FormReduction,
        }
    }

    #[test]
    fn round_trip_and_strictness() {
        let a = sample();
        let bytes = a.encode().unwrap();
        assert_eq!(Answer::decode(&bytes).unwrap(), a);
        // a trailing byte, a truncation, a wrong kind, an unknown key
        let mut long = bytes.clone();
        long.push(0);
        assert_eq!(Answer::decode(&long), Err(DecodeError::TrailingData));
        assert_eq!(
            Answer::decode(&bytes[..bytes.len() - 1]),
            Err(DecodeError::Truncated)
        );
        let mut v = a.to_value();
        if let Value::Map(m) = &mut v {
            m.push((Value::Text("extra".into()), Value::Null));
        }
        let extra = cbor::from_value(&v).unwrap();
        assert!(matches!(
            Answer::decode(&extra),
            Err(DecodeError::Schema(_))
        ));
        // the same content with its keys out of order is a second encoding
        if let Value::Map(m) = &mut v {
            m.pop();
            m.reverse();
        }
        let reordered = cbor::from_value(&v).unwrap();
        assert_eq!(Answer::decode(&reordered).unwrap_err(), {
            DecodeError::NonCanonical(
                "the bytes differ from the canonical encoding of their content",
            )
        });
        // a short id
        let mut v = a.to_value();
        if let Value::Map(m) = &mut v {
            for (k, x) in m.iter_mut() {
                if matches!(k, Value::Text(t) if t == "certificate-sha256") {
                    *x = Value::Bytes(vec![0; 31]);
                }
            }
        }
        assert!(matches!(
            Answer::decode(&cbor::from_value(&v).unwrap()),
            Err(DecodeError::Schema(_))
        ));
    }
}
