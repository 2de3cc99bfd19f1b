//! Signing certificates: a COSE_Sign1 message with Ed25519
//! (`classcert_format::cose`; RFC 9052 and RFC 8032), and the key files,
//! a PKCS#8 PEM secret key (RFC 5958, RFC 8410) and an SPKI PEM public key
//! (RFC 5280, RFC 8410), the encodings of ed25519-dalek's `pkcs8` support.
//!
//! A signature says who vouches for a certificate; the verifier still
//! checks every claim in it.

use classcert_format::cose;
use classcert_verifier::signature::fingerprint;
use ed25519_dalek::pkcs8::spki::der::pem::LineEnding;
use ed25519_dalek::pkcs8::{DecodePrivateKey, EncodePrivateKey, EncodePublicKey};
use ed25519_dalek::{Signer, SigningKey};
use std::io::Read;

/// A new key from 32 bytes of the operating system's random source
/// (`/dev/urandom`, the kernel's CSPRNG; RFC 8032 section 5.1.5 makes the
/// secret key 32 random bytes).
pub fn new_key() -> std::io::Result<SigningKey> {
    let mut seed = [0u8; 32];
    std::fs::File::open("/dev/urandom")?.read_exact(&mut seed)?;
    Ok(SigningKey::from_bytes(&seed))
}

/// The secret key as PKCS#8 PEM and the public key as SPKI PEM.
pub fn to_pem(key: &SigningKey) -> Result<(String, String), String> {
    let secret = key
        .to_pkcs8_pem(LineEnding::LF)
        .map_err(|e| format!("cannot encode the secret key: {e}"))?;
    let public = key
        .verifying_key()
        .to_public_key_pem(LineEnding::LF)
        .map_err(|e| format!("cannot encode the public key: {e}"))?;
    Ok((secret.to_string(), public))
}

/// A secret key from PKCS#8 PEM.
pub fn from_pem(text: &str) -> Result<SigningKey, String> {
    SigningKey::from_pkcs8_pem(text)
        .map_err(|e| format!("not an Ed25519 secret key in PKCS#8 PEM: {e}"))
}

/// The key's fingerprint in hex (SHA-256 of its public key; the `kid`).
pub fn fingerprint_hex(key: &SigningKey) -> String {
    classcert_verifier::signature::hex(&fingerprint(&key.verifying_key()))
}

/// `cert` (a certificate's bytes, not already signed) signed with `key`.
/// The bytes must read as a certificate: nobody should sign a file that
/// is not one.
pub fn sign(cert: &[u8], key: &SigningKey) -> Result<Vec<u8>, String> {
    if cose::is_signed(cert) {
        return Err("the file is signed already".into());
    }
    classcert_format::decode_document(cert)
        .map_err(|e| format!("not a readable classcert certificate ({e})"))?;
    let kid = fingerprint(&key.verifying_key());
    let protected = cose::protected(&kid);
    let signature = key.sign(&cose::to_be_signed(&protected, cert));
    Ok(cose::encode(&kid, cert, &signature.to_bytes()))
}
