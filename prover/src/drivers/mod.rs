//! One driver per kind of certificate. Each calls [`crate::setup`], a
//! [`RelationSource`](crate::relations::RelationSource), [`crate::linalg`]
//! and (for `D > 0`) [`crate::units`]; no driver imports another.
//!
//! - [`imaginary`]: the class group of an order with `D < 0`;
//! - [`real`]: the class group, regulator and fundamental unit for `D > 0`;
//! - [`witness`]: an order witness for a claimed class number (`D < 0`);
//! - [`common`]: what they share (search budgets, eliminations, and the
//!   encoding with the verifier's check).

pub(crate) mod algebra;
pub mod common;
pub mod field;
pub mod imaginary;
pub mod real;
pub mod witness;

pub use common::{encode_and_check, encode_and_verify};

use crate::setup::{check_cost, validate, Options, ProveError};
use classcert_format::{Body, Document};
use classcert_verifier::report::Report;
use rug::Integer;

/// The certificate body for `D`: the class group, and the units when
/// `D > 0`.
pub fn prove(d: &Integer, opts: &Options) -> Result<Body, ProveError> {
    validate(d)?;
    check_cost(d, opts.force)?;
    if *d > 0 {
        real::prove_real(d, opts)
    } else {
        imaginary::prove_imaginary(d, opts)
    }
}

/// `classcert collect`: for `D < 0` on the sieve's path, the rounds
/// `rounds` of its sieve that `dir` lacks, sieved and stored as
/// `prove --resume dir` stores them; no proof, and no cost limit (the work
/// is the range asked for). Returns the rounds written and those already
/// there.
pub fn collect(
    d: &Integer,
    opts: &Options,
    dir: &std::path::Path,
    rounds: std::ops::Range<u64>,
) -> Result<(u64, u64), ProveError> {
    validate(d)?;
    if *d > 0 {
        return Err(ProveError::Unsupported(
            "rounds are collected for D < 0 only (the sieve of real orders keeps no rounds yet)"
                .into(),
        ));
    }
    imaginary::collect_rounds(d, opts, dir, rounds)
}

/// Proves `D`, encodes the certificate file, and runs the verifier on the
/// bytes (decoding included) before handing them out.
pub fn prove_to_bytes(d: &Integer, opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let body = prove(d, opts)?;
    encode_and_check(&Document::Relations(Box::new(body)), opts)
}

/// [`prove_to_bytes`], with the verifier's report on the bytes.
pub fn prove_verified(d: &Integer, opts: &Options) -> Result<(Vec<u8>, Report), ProveError> {
    let body = prove(d, opts)?;
    let doc = Document::Relations(Box::new(body));
    encode_and_verify(&doc, opts).map(|(bytes, _, report)| (bytes, report))
}
