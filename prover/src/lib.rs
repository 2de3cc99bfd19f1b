//! # classcert-prover
//!
//! Computes the class group of a quadratic order, imaginary or real (and,
//! for a real one, its fundamental unit and regulator), and writes a
//! certificate that `classcert-verify` re-checks on its own. Order
//! witnesses certify a claimed class number of an imaginary order.
//!
//! ```text
//! D ─▶ maximality (factor |D|) ─▶ factor base ─▶ Euler product (X)
//!   ─▶ eliminations ─▶ relations ─▶ Hermite form ─▶ Smith form
//!   ─▶ certificate body ─▶ self-check with the verifier ─▶ file
//! ```

// Matrix code here reads more plainly with explicit indices.
#![allow(clippy::needless_range_loop)]

pub mod compact;
pub mod factor;
pub mod fb;
pub mod linalg;
pub mod progress;
pub mod prove;
pub mod real;
pub mod rng;
pub mod search;
pub mod sge;
pub mod show;
pub mod units;
pub mod witness;

pub use prove::{prove, Options, ProveError};

/// Proves `D`, encodes the certificate file, and runs the verifier on the
/// bytes (decoding included) before handing them out.
pub fn prove_to_bytes(d: &rug::Integer, opts: &Options) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let body = prove(d, opts)?;
    encode_and_check(&classcert_format::Document::Relations(Box::new(body)), opts)
}

/// Encodes a certificate and runs the verifier on the bytes (decoding
/// included); a rejection is a prover bug and is reported as such.
pub fn encode_and_check(
    doc: &classcert_format::Document,
    opts: &Options,
) -> Result<(Vec<u8>, [u8; 32]), ProveError> {
    let (bytes, id) = classcert_format::encode_document(doc)
        .map_err(|e| ProveError::SelfCheckFailed(format!("encoding failed: {e}")))?;
    let progress = progress::Progress::new(opts.progress);
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

/// Writes a certificate through a temporary file and a rename, so a crash
/// or a full disk never leaves a half-written certificate under `path`.
pub fn write_certificate(path: &std::path::Path, bytes: &[u8]) -> std::io::Result<()> {
    use std::io::Write;
    let tmp = path.with_extension("cert.tmp");
    {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
    }
    std::fs::rename(&tmp, path)
}
