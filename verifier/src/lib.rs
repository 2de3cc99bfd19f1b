//! # classcert-verifier
//!
//! The trusted base of classcert: it re-checks a certificate on its own and
//! gives a verdict. It depends on the format crate, rug (GMP/MPFR) and sha2,
//! never on the prover.
//!
//! ```text
//! bytes ─▶ format::decode_file ─▶ Body ─▶ check::verify_body ─▶ Report
//!          (canonical CBOR,              order → conductor → factor base
//!           digest)                      → relations → Smith → claim
//!                                        → Euler product → verdict
//! ```
//!
//! What it deliberately does not do: search for anything (relations, square
//! roots, Smith forms, the cut-off X all come from the certificate), trust
//! any number it can recompute, or accept a second encoding of a file.

#![forbid(unsafe_code)]
#![cfg_attr(
    not(test),
    deny(
        clippy::unwrap_used,
        clippy::expect_used,
        clippy::indexing_slicing,
        clippy::panic
    )
)]

pub mod arith;
pub mod check;
pub mod compact;
pub mod element;
pub mod euler;
pub mod form;
pub mod interval;
pub mod limits;
pub mod primality;
pub mod proofs;
pub mod registry;
pub mod series;
pub mod verdict;

use classcert_format::{DecodeError, Document, FileError};
use verdict::{Reason, Rejection, Report, Summary};

/// Verifies the bytes of a certificate file.
pub fn verify_bytes(bytes: &[u8]) -> Report {
    let decoded = match classcert_format::decode_document(bytes) {
        Ok(d) => d,
        Err(e) => {
            let reason = match &e {
                FileError::TooLarge { .. } => Reason::OverLimit,
                FileError::UnsupportedVersion(_) => Reason::UnsupportedVersion,
                FileError::DigestMismatch => Reason::DigestMismatch,
                FileError::Decode(DecodeError::Truncated) => Reason::DecodeTruncated,
                FileError::Decode(DecodeError::TrailingData) => Reason::DecodeTrailingData,
                FileError::Decode(DecodeError::NonCanonical(_)) => Reason::DecodeNonCanonical,
                FileError::Decode(DecodeError::OverLimit(_)) => Reason::OverLimit,
                FileError::Decode(_) => Reason::DecodeMalformed,
                _ => Reason::DecodeMalformed,
            };
            return Report {
                summary: Summary::default(),
                outcome: Err(Rejection {
                    reason,
                    detail: e.to_string(),
                }),
            };
        }
    };
    let id = Some(decoded.id_hex());
    match &decoded.document {
        Document::Relations(body) => {
            let classcert_format::Order::Quadratic { discriminant } = &body.order;
            Report {
                summary: Summary {
                    certificate_sha256: id,
                    discriminant: Some(discriminant.clone()),
                    claimed_class_number: Some(body.claim.class_number.clone()),
                    claimed_invariants: Some(body.claim.invariants.clone()),
                },
                outcome: check::verify_body(body),
            }
        }
        Document::OrderWitness(w) => {
            let classcert_format::Order::Quadratic { discriminant } = &w.order;
            Report {
                summary: Summary {
                    certificate_sha256: id,
                    discriminant: Some(discriminant.clone()),
                    claimed_class_number: Some(w.class_number.clone()),
                    claimed_invariants: Some(vec![w.class_number.clone()]),
                },
                outcome: check::verify_witness(w),
            }
        }
    }
}
