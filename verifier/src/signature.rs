//! Signed certificates (`classcert_format::cose`): an Ed25519 signature
//! (RFC 8032) over a COSE_Sign1 `Sig_structure` (RFC 9052) whose payload is
//! the certificate. A signature says who vouches for a certificate, not
//! that its mathematics holds: the payload is verified as any other
//! certificate, after the signature.

use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::cose;
use ed25519_dalek::pkcs8::DecodePublicKey;
use ed25519_dalek::{Signature, VerifyingKey};
use sha2::{Digest, Sha256};

/// A public key the caller trusts, with its fingerprint.
#[derive(Debug, Clone)]
pub struct TrustedKey {
    key: VerifyingKey,
    fingerprint: [u8; 32],
}

impl TrustedKey {
    /// An Ed25519 public key in an SPKI PEM file (RFC 8410); weak keys (of
    /// small order, which verify forged signatures) are refused.
    pub fn from_pem(text: &str) -> Result<TrustedKey, String> {
        let key = VerifyingKey::from_public_key_pem(text)
            .map_err(|e| format!("not an Ed25519 public key in SPKI PEM: {e}"))?;
        if key.is_weak() {
            return Err("a weak Ed25519 key (of small order) is never trusted".into());
        }
        Ok(TrustedKey {
            fingerprint: fingerprint(&key),
            key,
        })
    }

    pub fn fingerprint(&self) -> [u8; 32] {
        self.fingerprint
    }
}

/// A key's fingerprint: SHA-256 of its 32 bytes (the COSE `kid`).
pub fn fingerprint(key: &VerifyingKey) -> [u8; 32] {
    Sha256::digest(key.as_bytes()).into()
}

/// 64 hex digits.
pub fn hex(b: &[u8; 32]) -> String {
    b.iter().map(|x| format!("{x:02x}")).collect()
}

/// Who signed, and whether the signature was checked.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Signer {
    /// The signer's fingerprint (hex).
    pub fingerprint: String,
    /// Checked against a key the caller trusts (`--trusted-key`); false
    /// when no trusted key was given, so nothing was checked.
    pub trusted: bool,
}

/// Reads a signed certificate and checks its signature: with no trusted
/// keys it is not checked; otherwise the signer must be one of them and
/// the signature must pass `verify_strict` (no malleable or small-order
/// forms). Returns the certificate and the signer.
pub fn check<'a>(bytes: &'a [u8], trusted: &[TrustedKey]) -> Check<(&'a [u8], Signer)> {
    let msg = match cose::decode(bytes) {
        Ok(m) => m,
        Err(e) => {
            return reject(
                Reason::DecodeMalformed,
                format!("a signed certificate: {e}"),
            )
        }
    };
    let fp = hex(&msg.kid);
    if trusted.is_empty() {
        let signer = Signer {
            fingerprint: fp,
            trusted: false,
        };
        return Ok((msg.payload, signer));
    }
    let Some(key) = trusted.iter().find(|k| k.fingerprint == msg.kid) else {
        return reject(
            Reason::SignerNotTrusted,
            format!("signed by the key {fp}, which is not among the trusted keys"),
        );
    };
    let tbs = cose::to_be_signed(msg.protected, msg.payload);
    let sig = Signature::from_bytes(&msg.signature);
    reject_if(
        key.key.verify_strict(&tbs, &sig).is_err(),
        Reason::SignatureInvalid,
        format_args!("the signature does not verify under the trusted key {fp}"),
    )?;
    let signer = Signer {
        fingerprint: fp,
        trusted: true,
    };
    Ok((msg.payload, signer))
}
