//! What the drivers share: the search budgets, the eliminations for the
//! factor-base ideals beyond the essential block, and the encoding of a
//! certificate with the verifier's check of the bytes.

use crate::fb::FactorBase;
use crate::progress::Progress;
use crate::relations::{FoundRelation, RelationSource};
use crate::setup::{Options, ProveError};
use classcert_format::Document;
use classcert_verifier::report::Report;

/// Candidates tried for one elimination before the search gives up.
pub(crate) const ELIMINATION_ATTEMPTS: u64 = 2_000_000;

/// Candidates tried for one relation before the search gives up.
pub(crate) const RELATION_ATTEMPTS: u64 = 5_000_000;

/// Eliminations asked of a source at a time; progress ticks after each
/// chunk (the chunk does not change which relations are found).
pub(crate) const ELIMINATION_CHUNK: usize = 25;

/// Encodes a certificate and runs the verifier on the bytes (decoding
/// included); a rejection is a prover bug and is reported as such.
pub fn encode_and_check(doc: &Document, opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    encode_and_verify(doc, opts).map(|(bytes, id, _)| (bytes, id))
}

/// [`encode_and_check`], handing out the verifier's report as well (for
/// callers that show what was verified, so the bytes are checked once).
pub fn encode_and_verify(
    doc: &Document,
    opts: &Options,
) -> Result<(Vec<u8>, [u8; 32], Report), ProveError> {
    let (bytes, id) = classcert_format::encode_document(doc)
        .map_err(|e| ProveError::SelfCheckFailed(format!("encoding failed: {e}")))?;
    let progress = Progress::new(opts.progress);
    progress.phase("self-check: verifying the encoded certificate");
    // The prover's own certificate is checked whatever its size: the
    // default work budget is for certificates from elsewhere.
    let report = classcert_verifier::verify_with_budget(
        &bytes,
        &[],
        classcert_verifier::limits::MAX_BUDGET_SCALE,
        &mut |_| {},
    );
    if let Err(rej) = &report.outcome {
        return Err(ProveError::SelfCheckFailed(format!(
            "{}: {}",
            rej.reason.code(),
            rej.detail
        )));
    }
    Ok((bytes, id, report))
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
