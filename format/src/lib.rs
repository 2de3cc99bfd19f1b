//! # classcert-format
//!
//! The certificate file of classcert: its data model ([`model`]) and its one
//! byte encoding, deterministic CBOR ([`cbor`], RFC 8949 §4.2.1). The schema
//! is written out in CDDL (RFC 8610) in `format/certificate.cddl`.
//!
//! ```text
//!   file  = { "format": 1, "body": body, "body-sha256": bstr .size 32 }
//!   bytes --prewalk--> ciborium Value --typed--> Body --re-encode--> bytes'
//!                                                     bytes' == bytes ?
//! ```
//!
//! What this crate does not do: it gives no meaning to the numbers. A
//! decoded certificate is well-formed, canonical and intact (its digest
//! matches), nothing more; the verifier decides whether it is true.

#![forbid(unsafe_code)]

pub mod answer;
pub mod cbor;
pub mod cose;
pub mod field;
pub mod json;
pub mod model;

pub use answer::Answer;
pub use cbor::DecodeError;
pub use field::{Embedding, FieldBody, FieldPrime, FieldUnits};
pub use model::*;

use ciborium::Value;
use sha2::{Digest, Sha256};

/// The largest file the decoder will look at by default.
pub const MAX_FILE_BYTES: usize = 256 << 20;

/// The decoder's caps: the caller (the verifier, from its `limits.rs`)
/// sets them; [`Default`] holds the values this crate was tested with.
#[derive(Debug, Clone, Copy)]
pub struct DecodeLimits {
    /// The largest file looked at.
    pub max_file_bytes: usize,
    /// Nesting depth and item count of the CBOR walk.
    pub walk: cbor::WalkLimits,
}

impl Default for DecodeLimits {
    fn default() -> Self {
        DecodeLimits {
            max_file_bytes: MAX_FILE_BYTES,
            walk: cbor::WalkLimits::default(),
        }
    }
}

/// Why a certificate file was refused.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum FileError {
    TooLarge {
        bytes: usize,
        limit: usize,
    },
    /// The bytes are not a classcert certificate at all (empty, text, or
    /// a CBOR item of another shape).
    NotACertificate(&'static str),
    Decode(DecodeError),
    UnsupportedVersion(u64),
    DigestMismatch,
}

impl std::fmt::Display for FileError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            FileError::TooLarge { bytes, limit } => {
                write!(f, "the file has {bytes} bytes; the limit is {limit}")
            }
            FileError::NotACertificate(why) => {
                write!(f, "not a classcert certificate: {why}")
            }
            FileError::Decode(e) => e.fmt(f),
            FileError::UnsupportedVersion(v) => {
                write!(f, "format version {v} is not supported (this build reads version {FORMAT_VERSION})")
            }
            FileError::DigestMismatch => {
                write!(
                    f,
                    "the body does not match its SHA-256 digest (the file was altered or damaged)"
                )
            }
        }
    }
}

impl std::error::Error for FileError {}

impl From<DecodeError> for FileError {
    fn from(e: DecodeError) -> Self {
        FileError::Decode(e)
    }
}

/// A decoded, canonical, intact certificate.
#[derive(Debug, Clone)]
pub struct Decoded {
    pub body: Body,
    /// SHA-256 of the canonical body: the certificate's id.
    pub id: [u8; 32],
}

impl Decoded {
    pub fn id_hex(&self) -> String {
        hex(&self.id)
    }
}

/// A decoded certificate of either kind.
#[derive(Debug, Clone)]
pub struct DecodedDocument {
    pub document: Document,
    pub id: [u8; 32],
}

impl DecodedDocument {
    pub fn id_hex(&self) -> String {
        hex(&self.id)
    }
}

pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

fn sha256(bytes: &[u8]) -> [u8; 32] {
    Sha256::digest(bytes).into()
}

fn file_value(body: Value) -> Result<(Value, [u8; 32]), DecodeError> {
    let body_bytes = cbor::from_value(&body)?;
    let id = sha256(&body_bytes);
    let v = cbor::map(vec![
        ("format", cbor::uint(FORMAT_VERSION)),
        ("body", body),
        ("body-sha256", Value::Bytes(id.to_vec())),
    ]);
    Ok((v, id))
}

/// Encodes a certificate file; returns the bytes and the certificate id.
pub fn encode_file(body: &Body) -> Result<(Vec<u8>, [u8; 32]), DecodeError> {
    let (v, id) = file_value(body.to_value())?;
    Ok((cbor::from_value(&v)?, id))
}

/// Encodes a certificate file of either kind.
pub fn encode_document(doc: &Document) -> Result<(Vec<u8>, [u8; 32]), DecodeError> {
    let (v, id) = file_value(doc.to_value())?;
    Ok((cbor::from_value(&v)?, id))
}

/// Decodes a full certificate (relations); an order witness is refused.
pub fn decode_file(bytes: &[u8]) -> Result<Decoded, FileError> {
    let d = decode_document(bytes)?;
    match d.document {
        Document::Relations(body) => Ok(Decoded {
            body: *body,
            id: d.id,
        }),
        Document::OrderWitness(_) => Err(FileError::Decode(DecodeError::Schema(
            "an order-witness certificate, not a full one".into(),
        ))),
        Document::Field(_) => Err(FileError::Decode(DecodeError::Schema(
            "a number-field certificate, not a quadratic one".into(),
        ))),
    }
}

/// The first byte of every certificate file: the head of a CBOR map of
/// three entries (`format`, `body`, `body-sha256`).
const FILE_HEAD: u8 = 0xa3;

/// Decodes a certificate file of either kind strictly (see [`cbor`]):
/// canonical bytes only, no trailing data, and a matching digest.
pub fn decode_document(bytes: &[u8]) -> Result<DecodedDocument, FileError> {
    decode_document_with(bytes, &DecodeLimits::default())
}

/// [`decode_document`] under the caller's caps.
pub fn decode_document_with(
    bytes: &[u8],
    limits: &DecodeLimits,
) -> Result<DecodedDocument, FileError> {
    if bytes.len() > limits.max_file_bytes {
        return Err(FileError::TooLarge {
            bytes: bytes.len(),
            limit: limits.max_file_bytes,
        });
    }
    match bytes.first() {
        None => return Err(FileError::NotACertificate("the file is empty")),
        Some(&FILE_HEAD) => {}
        Some(_) => {
            return Err(FileError::NotACertificate(
                "it does not begin as one does (a CBOR map of three entries)",
            ))
        }
    }
    // The value tree is dropped before the body is encoded again, so the
    // two trees never live together.
    let (document, claimed) = {
        let v = cbor::to_value(bytes, limits.walk)?;
        let mut top = cbor::MapReader::new(&v, "file")?;
        let version = cbor::get_u64(top.req("format")?, "file.format")?;
        if version != FORMAT_VERSION {
            return Err(FileError::UnsupportedVersion(version));
        }
        let document = Document::from_value(top.req("body")?)?;
        let claimed = cbor::get_bytes(top.req("body-sha256")?, "file.body-sha256")?.to_vec();
        top.finish()?;
        (document, claimed)
    };
    // Re-encode with the stated digest, so that a wrong digest is reported
    // as such and any other difference as a non-canonical encoding.
    let body_bytes = document.encode()?;
    let id = sha256(&body_bytes);
    // The file's canonical bytes: the map's head, then each key and value
    // in the order `cbor::map` puts them, the body's being the bytes just
    // made (encoding the body a second time would give the same bytes).
    let file = cbor::map(vec![
        ("format", cbor::uint(FORMAT_VERSION)),
        ("body", Value::Null),
        ("body-sha256", Value::Bytes(claimed.clone())),
    ]);
    let mut re = Vec::with_capacity(bytes.len());
    re.push(FILE_HEAD);
    if let Value::Map(entries) = &file {
        for (k, v) in entries {
            re.extend(cbor::from_value(k)?);
            match k {
                Value::Text(t) if t == "body" => re.extend_from_slice(&body_bytes),
                _ => re.extend(cbor::from_value(v)?),
            }
        }
    }
    if re != bytes {
        return Err(FileError::Decode(DecodeError::NonCanonical(
            "the bytes differ from the canonical encoding of their content",
        )));
    }
    if claimed != id {
        return Err(FileError::DigestMismatch);
    }
    Ok(DecodedDocument { document, id })
}

// Tests report failures by panicking (the panic-free set is the
// verifier's rule, not the tests').
#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]
mod tests {
    use super::*;

    /// The stored certificate of D = 61 (`vectors/golden/`, made by the
    /// prover; the test suite checks that it verifies): a real quadratic
    /// order whose lattice has derived relations.
    const PLUS_61: &[u8] = include_bytes!("../../vectors/golden/plus-61.cert");

    /// The body's lattice map, to change it as a value tree.
    fn lattice_map(v: &mut Value) -> &mut Vec<(Value, Value)> {
        let Value::Map(top) = v else {
            panic!("the body is a map")
        };
        let lattice = top
            .iter_mut()
            .find(|(k, _)| matches!(k, Value::Text(t) if t == "lattice"))
            .map(|(_, l)| l)
            .expect("a lattice");
        let Value::Map(l) = lattice else {
            panic!("the lattice is a map")
        };
        l
    }

    #[test]
    fn derived_relations_round_trip_and_none_has_one_encoding() {
        let decoded = decode_file(PLUS_61).unwrap();
        let derived = &decoded.body.lattice.derived_relations;
        assert!(derived.as_ref().is_some_and(|d| !d.is_empty()));
        // encoding what was decoded gives the same bytes back
        let (bytes, id) = encode_file(&decoded.body).unwrap();
        assert_eq!(bytes, PLUS_61);
        assert_eq!(id, decoded.id);

        // without derived relations the key is absent, and Some(empty)
        // is written the same way and read back as None
        let mut none = decoded.body.clone();
        none.lattice.derived_relations = None;
        let mut empty = decoded.body.clone();
        empty.lattice.derived_relations = Some(Vec::new());
        let (none_bytes, _) = encode_file(&none).unwrap();
        assert_eq!(encode_file(&empty).unwrap().0, none_bytes);
        assert!(!none_bytes
            .windows(b"derived-relations".len())
            .any(|w| w == b"derived-relations"));
        assert_eq!(decode_file(&none_bytes).unwrap().body, none);

        // an empty list written by hand is refused: "none" has one encoding
        let mut v = none.to_value();
        lattice_map(&mut v).push((
            Value::Text("derived-relations".into()),
            Value::Array(Vec::new()),
        ));
        assert!(matches!(Body::from_value(&v), Err(DecodeError::Schema(_))));
    }
}
