//! One driver per kind of certificate. Each calls [`crate::setup`], a
//! [`RelationSource`], [`crate::linalg`] and (for `D > 0`) [`crate::units`];
//! no driver imports another.
//!
//! - [`imaginary`]: the class group of an order with `D < 0`;
//! - [`real`]: the class group, regulator and fundamental unit for `D > 0`;
//! - [`witness`]: an order witness for a claimed class number (`D < 0`).

pub mod imaginary;
pub mod real;
pub mod witness;

use crate::fb::FactorBase;
use crate::progress::Progress;
use crate::relations::{FoundRelation, RelationSource};
use crate::setup::{validate, Options, ProveError};
use classcert_format::{Body, Document};
use rug::Integer;

/// Candidates tried for one elimination before the search gives up.
pub(crate) const ELIMINATION_ATTEMPTS: u64 = 2_000_000;

/// Candidates tried for one relation before the search gives up.
pub(crate) const RELATION_ATTEMPTS: u64 = 5_000_000;

/// Eliminations asked of a source at a time (one progress line each).
const ELIMINATION_CHUNK: usize = 500;

/// The certificate body for `D`: the class group, and the units when
/// `D > 0`.
pub fn prove(d: &Integer, opts: &Options) -> Result<Body, ProveError> {
    validate(d)?;
    if *d > 0 {
        real::prove_real(d, opts)
    } else {
        imaginary::prove_imaginary(d, opts)
    }
}

/// Proves `D`, encodes the certificate file, and runs the verifier on the
/// bytes (decoding included) before handing them out.
pub fn prove_to_bytes(d: &Integer, opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let body = prove(d, opts)?;
    encode_and_check(&Document::Relations(Box::new(body)), opts)
}

/// Encodes a certificate and runs the verifier on the bytes (decoding
/// included); a rejection is a prover bug and is reported as such.
pub fn encode_and_check(doc: &Document, opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let (bytes, id) = classcert_format::encode_document(doc)
        .map_err(|e| ProveError::SelfCheckFailed(format!("encoding failed: {e}")))?;
    let progress = Progress::new(opts.progress);
    progress.phase("self-check: verifying the encoded certificate");
    let report = classcert_verifier::verify_bytes(&bytes);
    if let Err(rej) = report.outcome {
        return Err(ProveError::SelfCheckFailed(format!(
            "{}: {}",
            rej.reason.code(),
            rej.detail
        )));
    }
    Ok((bytes, id))
}

/// An elimination for every factor-base ideal beyond the essential block
/// `0..k`, in order; an error names the first prime without one.
pub(crate) fn eliminations(
    source: &mut dyn RelationSource,
    fb: &FactorBase,
    k: usize,
    progress: &Progress,
) -> Result<Vec<FoundRelation>, ProveError> {
    let n = fb.len();
    let mut out = Vec::with_capacity(n.saturating_sub(k));
    let mut i = k;
    while i < n {
        let end = n.min(i + ELIMINATION_CHUNK);
        progress.tick((i - k) as u64, Some((n - k) as u64));
        let batch = source.eliminations(i..end, ELIMINATION_ATTEMPTS);
        let got = batch.relations.len();
        out.extend(batch.relations);
        if got < end - i {
            return Err(ProveError::SearchFailed(format!(
                "no elimination relation found for p = {}",
                fb.primes[i + got]
            )));
        }
        i = end;
    }
    Ok(out)
}
