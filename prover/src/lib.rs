//! # classcert-prover
//!
//! Computes the class group of a quadratic order, imaginary or real (and,
//! for a real one, its fundamental unit and regulator), and writes a
//! certificate that `classcert-verify` re-checks on its own. Order
//! witnesses certify a claimed class number of an imaginary order.
//!
//! ```text
//! D ─▶ setup: maximality (factor |D|), factor base, Euler product (X)
//!   ─▶ relations (a RelationSource) ─▶ linalg: eliminations, Hermite
//!      or echelon form, Smith form ─▶ units (D > 0)
//!   ─▶ certificate body ─▶ self-check with the verifier ─▶ file
//! ```
//!
//! Layout, along the mathematics: [`setup`] (what every driver shares),
//! [`drivers`] (one per kind of certificate), [`relations`] (the
//! `RelationSource` trait, the `RelationBatch` type and today's two
//! searches), [`linalg`], [`units`], [`factor`], [`fb`] (the factor base),
//! [`rng`] and [`checkpoint`] (the directory of `--resume`, which keeps
//! relation rounds on disk).

// Matrix code here reads more plainly with explicit indices.
#![allow(clippy::needless_range_loop)]
// The panic-free set is the verifier's rule. The prover is not the trusted
// base: a failed internal invariant is a bug to report, never a wrong
// certificate, because the verifier re-checks every file before it is
// written; and its matrix code reads best with plain indexing.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

pub mod ask;
pub mod checkpoint;
pub mod drivers;
pub mod factor;
pub mod fb;
pub mod field;
pub mod linalg;
pub mod polynomial;
pub mod progress;
pub mod relations;
pub mod rng;
pub mod setup;
pub mod show;
pub mod sign;
pub mod table;
pub mod units;

pub use drivers::field::{field_to_bytes, prove_field};
pub use drivers::{
    collect, encode_and_check, encode_and_verify, prove, prove_to_bytes, prove_verified, witness,
};
pub use setup::{Options, ProveError};

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
