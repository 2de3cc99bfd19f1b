//! # classcert-verifier
//!
//! The trusted base of classcert: it re-checks a certificate on its own and
//! gives a verdict. It depends on the format crate, rug (GMP/MPFR) and
//! sha2, never on the prover.
//!
//! ```text
//! bytes ─▶ format::decode_document ─▶ Body or WitnessBody
//!          (canonical CBOR, digest;       │
//!           caps in limits.rs)            ▼
//!   pipeline: order/ → ideals/ → relations/ → lattice/ → units/ → analytic/
//!             (order witnesses: order/ → witness.rs → analytic/)
//!                                         │
//!                                         ▼
//!             Report: VERIFIED (report/text.rs, report/json.rs) or REJECTED: <reason>
//! ```
//!
//! Each folder checks one piece of the mathematics and cites the theorem
//! it rests on (`registry.rs`; the design note is `docs/certificates.md`).
//! Each check returns a token only its module can build, and the verified
//! result is assembled from all of them in `pipeline.rs`.
//!
//! What it deliberately does not do: search for anything (relations,
//! square roots, Smith forms, the cut-off X all come from the certificate),
//! trust any number it can recompute, accept a second encoding of a file,
//! or let the input drive unbounded work (every cap is in [`limits`]).

#![forbid(unsafe_code)]
// The panic-free set (`unwrap`, `expect`, indexing, the panic macro) is denied by
// the workspace lints (Cargo.toml). Only the unit tests may panic: a failed
// assertion is how a test reports.
#![cfg_attr(
    test,
    allow(
        clippy::unwrap_used,
        clippy::expect_used,
        clippy::indexing_slicing,
        clippy::panic
    )
)]

mod analytic;
pub mod answer;
mod arith;
mod field;
mod ideals;
mod lattice;
pub mod limits;
pub mod manifest;
mod order;
mod pipeline;
mod primality;
pub mod registry;
mod relations;
pub mod report;
pub mod signature;
mod units;
mod witness;

pub use analytic::Method;
pub use pipeline::STAGES;

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
    pub use crate::analytic::class_number_formula::log_h_enclosure;
    pub use crate::analytic::interval::Interval;
    pub use crate::arith::{kronecker_prime, mod_small, primes_up_to, small_conductor};
    pub use crate::ideals::form::Form;

    /// The Euler product of the analytic bound (registry entry
    /// `belabas-friedman-2015-thm1`).
    pub mod euler {
        pub use crate::analytic::euler::{
            compute, error_bound, error_bound_degree, EulerResult, MIN_X,
        };
        pub use crate::analytic::field::{euler_field, log_hr};
    }
    /// The unconditional class number series (`erfc-series-class-number`).
    pub mod series {
        pub use crate::analytic::series::{class_number, log_l_from_log_h};
    }
    /// Primality: the Baillie–PSW test and the checker of proof trees.
    pub mod primality {
        pub use crate::primality::bpsw::{primality_evidence, Evidence};
        pub use crate::primality::{check, ProofError, Status, Used};
    }
    /// Polynomials over Z and over `F_p` for number fields of degree 3 to
    /// 6: resultants, discriminants, distinct-degree
    /// factorisation and Rabin's irreducibility test.
    pub mod poly {
        pub use crate::field::fppoly::Fp;
        pub use crate::field::zpoly::{
            add, degree, derivative, discriminant, divrem_monic, eval, mul, normalise, resultant,
            sub,
        };
    }
    /// Number fields: checked root enclosures of `F`, the logarithmic
    /// embedding, determinants and regulators in intervals.
    pub mod field {
        pub use crate::field::roots::{abs_det, check_roots, regulator, RootError, Roots};
        pub use crate::order::field::shown_irreducible;
    }
    /// Units in compact representation: the chain check, which the prover
    /// also uses to confirm the chain it built.
    pub mod units {
        pub use crate::units::compact::check_chain;
    }
}

use classcert_format::{DecodeError, Document, FileError, Order};
use report::reason::Reason;
use report::{Report, Summary};

/// The reason code for a file the decoder refused.
fn decode_reason(e: &FileError) -> Reason {
    match e {
        FileError::TooLarge { .. } => Reason::OverLimit,
        FileError::NotACertificate(_) => Reason::NotACertificate,
        FileError::UnsupportedVersion(_) => Reason::UnsupportedVersion,
        FileError::DigestMismatch => Reason::DigestMismatch,
        FileError::Decode(DecodeError::Truncated) => Reason::DecodeTruncated,
        FileError::Decode(DecodeError::TrailingData) => Reason::DecodeTrailingData,
        FileError::Decode(DecodeError::NonCanonical(_)) => Reason::DecodeNonCanonical,
        FileError::Decode(DecodeError::OverLimit(_)) => Reason::OverLimit,
        _ => Reason::DecodeMalformed,
    }
}

/// Verifies the bytes of a certificate file.
pub fn verify_bytes(bytes: &[u8]) -> Report {
    verify_bytes_with(bytes, &mut |_| {})
}

/// Verifies a certificate that may be signed (`classcert_format::cose`):
/// the signature first ([`signature::check`]; not checked when `trusted`
/// is empty), then the certificate it carries, as [`verify_bytes_with`].
/// An unsigned certificate is verified as it is; whether a signature was
/// required is the policy's to say ([`report::policy`]).
pub fn verify_signed_with(
    bytes: &[u8],
    trusted: &[signature::TrustedKey],
    progress: &mut dyn FnMut(&str),
) -> Report {
    verify_with_budget(bytes, trusted, 1, progress)
}

/// [`verify_signed_with`] with `scale` times the default work budget
/// ([`limits::DEFAULT_BUDGET`], at most [`limits::MAX_BUDGET_SCALE`]).
pub fn verify_with_budget(
    bytes: &[u8],
    trusted: &[signature::TrustedKey],
    scale: u32,
    progress: &mut dyn FnMut(&str),
) -> Report {
    if !classcert_format::cose::is_signed(bytes) {
        return verify_scaled(bytes, scale, progress);
    }
    match signature::check(bytes, trusted) {
        Ok((payload, signer)) => {
            let mut report = verify_scaled(payload, scale, progress);
            report.summary.signer = Some(signer);
            report
        }
        Err(r) => Report::rejected(r.reason, r.detail),
    }
}

/// [`verify_bytes`], telling `progress` the name of each stage (one of
/// [`STAGES`]) as it starts.
pub fn verify_bytes_with(bytes: &[u8], progress: &mut dyn FnMut(&str)) -> Report {
    verify_scaled(bytes, 1, progress)
}

/// Decodes, estimates the work against the budget, then checks.
fn verify_scaled(bytes: &[u8], scale: u32, progress: &mut dyn FnMut(&str)) -> Report {
    let decoded = match classcert_format::decode_document_with(bytes, &limits::DECODE) {
        Ok(d) => d,
        Err(e) => return Report::rejected(decode_reason(&e), e.to_string()),
    };
    let id = Some(decoded.id_hex());
    let budget = limits::check_budget(&decoded.document, scale);
    let (order, summary_claims, outcome) = match &decoded.document {
        Document::Relations(body) => (
            &body.order,
            (
                report::CertificateKind::Relations,
                body.claim.class_number.clone(),
                body.claim.invariants.clone(),
            ),
            budget.and_then(|()| pipeline::verify_relations(body, progress)),
        ),
        Document::OrderWitness(w) => (
            &w.order,
            (
                report::CertificateKind::OrderWitness,
                w.class_number.clone(),
                w.generators.iter().map(|g| g.order.clone()).collect(),
            ),
            budget.and_then(|()| pipeline::verify_order_witness(w, progress)),
        ),
        Document::Field(body) => {
            return Report {
                summary: Summary {
                    certificate_sha256: id,
                    kind: Some(report::CertificateKind::Relations),
                    polynomial: match &body.order {
                        Order::Polynomial { polynomial, .. } => Some(polynomial.clone()),
                        Order::Quadratic { .. } => None,
                    },
                    claimed_class_number: Some(body.claim.class_number.clone()),
                    claimed_invariants: Some(body.claim.invariants.clone()),
                    ..Summary::default()
                },
                outcome: budget.and_then(|()| pipeline::verify_field(body, progress)),
            }
        }
    };
    let discriminant = match order {
        Order::Quadratic { discriminant } => Some(discriminant.clone()),
        Order::Polynomial { .. } => None,
    };
    let (kind, h, inv) = summary_claims;
    Report {
        summary: Summary {
            certificate_sha256: id,
            kind: Some(kind),
            discriminant,
            claimed_class_number: Some(h),
            claimed_invariants: Some(inv),
            ..Summary::default()
        },
        outcome,
    }
}
