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

mod arith;
mod check;
mod compact;
mod element;
mod euler;
mod form;
mod interval;
pub mod limits;
mod primality;
mod proofs;
pub mod registry;
mod series;
mod verdict;

/// The verdict: [`Report`](report::Report), reasons, and the presentation
/// helpers that `classcert show` shares so both tools use one vocabulary.
pub mod report {
    pub use crate::verdict::{
        decimal, generator_json, generator_text, invariants_text, Assumption, GeneratorView,
        Reason, Rejection, Report, Requirement, Summary, UnitSummary, Verified,
    };
}

/// Exact and interval arithmetic that the prover reuses, and nothing else
/// of the verifier's internals.
///
/// Reuse is deliberate where both sides must compute the same thing (the
/// enclosure of `log h` the prover aims at is the one the verifier checks)
/// and harmless for soundness: the verifier re-checks every certificate
/// from its bytes, so the prover gains no trust by sharing code. What
/// sharing cannot catch, a bug that both sides make the same way, is what
/// the independent oracles in `tests/src/oracle.rs` (written from textbook
/// definitions, sharing no code with either crate) are for.
pub mod math {
    pub use crate::arith::{kronecker_prime, mod_small, primes_up_to, small_conductor};
    pub use crate::check::log_h_enclosure;
    pub use crate::form::Form;
    pub use crate::interval::Interval;

    /// The Euler product of the analytic bound (registry entry
    /// `belabas-friedman-2015-thm1`).
    pub mod euler {
        pub use crate::euler::{compute, error_bound, EulerResult, Partial, MIN_X};
    }
    /// The unconditional class number series (`erfc-series-class-number`).
    pub mod series {
        pub use crate::series::{class_number, log_l_from_log_h, terms_for};
    }
    /// Primality: the Baillie–PSW test and the checker of proof trees.
    pub mod primality {
        pub use crate::primality::{primality_evidence, Evidence};
        pub use crate::proofs::{check, ProofError, Status, Used};
    }
    /// Units in compact representation: the chain check, which the prover
    /// also uses to confirm the chain it built.
    pub mod units {
        pub use crate::compact::{check_chain, Chain};
    }
}

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
