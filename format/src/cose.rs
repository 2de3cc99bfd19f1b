//! Signed certificates: a COSE_Sign1 message (RFC 9052, section 4.2)
//! whose payload is the certificate's canonical bytes, signed with Ed25519
//! (RFC 8032), algorithm `-19` ("Ed25519", the fully specified identifier
//! of RFC 9864, which replaces the polymorphic `EdDSA = -8` of RFC 9053).
//!
//! One layout only, written and read byte for byte (deterministic CBOR,
//! RFC 8949 section 4.2.1):
//!
//! ```text
//! 18([                      ; tag 18: COSE_Sign1
//!   << {1: -19, 4: kid} >>, ; protected header: alg, kid
//!   {},                     ; no unprotected header
//!   payload,                ; bstr: the certificate
//!   signature,              ; bstr .size 64
//! ])
//! ```
//!
//! `kid` is the signer's fingerprint: SHA-256 of its 32-byte Ed25519
//! public key. The signature is over the `Sig_structure`
//! `["Signature1", protected, h'', payload]` (RFC 9052, section 4.4).
//! Anything else (other headers, indefinite lengths, longer length
//! encodings, trailing bytes) is refused: a reader never has to choose
//! between readings.

use crate::DecodeError;

/// The first byte of a COSE_Sign1 message: tag 18 in one byte.
pub const TAG: u8 = 0xd2;

/// The COSE algorithm identifier of Ed25519 (RFC 9864).
pub const ALG_ED25519: i64 = -19;

/// The protected header before the kid: a map of two entries, `1: -19`
/// (`0x32` is the negative integer -19), then `4:` a 32-byte string.
const PROTECTED_PREFIX: [u8; 6] = [0xa2, 0x01, 0x32, 0x04, 0x58, 0x20];

/// A COSE_Sign1 message, read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Sign1<'a> {
    /// The serialized protected header (signed with the payload).
    pub protected: &'a [u8],
    /// The signer's fingerprint.
    pub kid: [u8; 32],
    /// The certificate.
    pub payload: &'a [u8],
    pub signature: [u8; 64],
}

/// Whether `bytes` look like a signed certificate (its first byte is tag
/// 18); a certificate itself starts with a map.
pub fn is_signed(bytes: &[u8]) -> bool {
    bytes.first() == Some(&TAG)
}

/// The header of a byte string of `len` bytes, in its shortest form.
fn bstr_header(len: usize) -> Vec<u8> {
    let len = len as u64;
    match len {
        0..=23 => vec![0x40 | len as u8],
        24..=0xff => vec![0x58, len as u8],
        0x100..=0xffff => [vec![0x59], (len as u16).to_be_bytes().to_vec()].concat(),
        0x1_0000..=0xffff_ffff => [vec![0x5a], (len as u32).to_be_bytes().to_vec()].concat(),
        _ => [vec![0x5b], len.to_be_bytes().to_vec()].concat(),
    }
}

fn bstr(out: &mut Vec<u8>, b: &[u8]) {
    out.extend(bstr_header(b.len()));
    out.extend_from_slice(b);
}

/// The serialized protected header `{1: -19, 4: kid}`.
pub fn protected(kid: &[u8; 32]) -> Vec<u8> {
    [&PROTECTED_PREFIX[..], &kid[..]].concat()
}

/// The bytes the signature covers: `["Signature1", protected, h'', payload]`.
pub fn to_be_signed(protected: &[u8], payload: &[u8]) -> Vec<u8> {
    let mut out = vec![0x84, 0x6a];
    out.extend_from_slice(b"Signature1");
    bstr(&mut out, protected);
    out.push(0x40);
    bstr(&mut out, payload);
    out
}

/// The COSE_Sign1 message for `payload`, signed by the key whose
/// fingerprint is `kid`.
pub fn encode(kid: &[u8; 32], payload: &[u8], signature: &[u8; 64]) -> Vec<u8> {
    let mut out = vec![TAG, 0x84];
    bstr(&mut out, &protected(kid));
    out.push(0xa0);
    bstr(&mut out, payload);
    bstr(&mut out, signature);
    out
}

/// Reads a byte string at `at`: its contents and the position after it.
/// Only the shortest length encoding is accepted.
fn read_bstr(bytes: &[u8], at: usize) -> Result<(&[u8], usize), DecodeError> {
    let first = *bytes.get(at).ok_or(DecodeError::Truncated)?;
    if first >> 5 != 2 {
        return Err(DecodeError::Malformed(
            "a COSE_Sign1 field is not a byte string",
        ));
    }
    let (len, start): (u64, usize) = match first & 0x1f {
        n @ 0..=23 => (u64::from(n), at + 1),
        n @ 24..=27 => {
            let width = 1usize << (n - 24);
            let raw = bytes
                .get(at + 1..at + 1 + width)
                .ok_or(DecodeError::Truncated)?;
            let len = raw.iter().fold(0u64, |v, b| (v << 8) | u64::from(*b));
            let shortest = match width {
                1 => len >= 24,
                w => len >> (4 * w) != 0,
            };
            if !shortest {
                return Err(DecodeError::NonCanonical("a longer length than needed"));
            }
            (len, at + 1 + width)
        }
        _ => return Err(DecodeError::Malformed("an indefinite or reserved length")),
    };
    let end = usize::try_from(len)
        .ok()
        .and_then(|l| start.checked_add(l))
        .ok_or(DecodeError::Truncated)?;
    let contents = bytes.get(start..end).ok_or(DecodeError::Truncated)?;
    Ok((contents, end))
}

/// Reads a signed certificate in the one layout above.
pub fn decode(bytes: &[u8]) -> Result<Sign1<'_>, DecodeError> {
    if bytes.get(..2) != Some(&[TAG, 0x84][..]) {
        return Err(DecodeError::Malformed(
            "not a COSE_Sign1 message (tag 18, four fields)",
        ));
    }
    let (protected, at) = read_bstr(bytes, 2)?;
    let kid = match protected.strip_prefix(&PROTECTED_PREFIX[..]) {
        Some(k) => <[u8; 32]>::try_from(k)
            .map_err(|_| DecodeError::Malformed("the protected header is not {1: -19, 4: kid}"))?,
        None => {
            return Err(DecodeError::Malformed(
                "the protected header is not {1: -19, 4: kid}",
            ))
        }
    };
    if bytes.get(at) != Some(&0xa0) {
        return Err(DecodeError::Malformed(
            "the unprotected header is not empty",
        ));
    }
    let (payload, at) = read_bstr(bytes, at + 1)?;
    let (signature, at) = read_bstr(bytes, at)?;
    let signature = <[u8; 64]>::try_from(signature)
        .map_err(|_| DecodeError::Malformed("an Ed25519 signature has 64 bytes"))?;
    if at != bytes.len() {
        return Err(DecodeError::TrailingData);
    }
    Ok(Sign1 {
        protected,
        kid,
        payload,
        signature,
    })
}

#[cfg(test)]
#[allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]
mod tests {
    use super::*;

    #[test]
    fn layout_round_trips_and_matches_the_standard_encoding() {
        let kid = [7u8; 32];
        let sig = [9u8; 64];
        for len in [0usize, 23, 24, 255, 256, 70_000] {
            let payload = vec![0xa1; len];
            let msg = encode(&kid, &payload, &sig);
            let back = decode(&msg).unwrap();
            assert_eq!(back.kid, kid);
            assert_eq!(back.payload, &payload[..]);
            assert_eq!(back.signature, sig);
            assert_eq!(back.protected, &protected(&kid)[..]);
            // the same message through a general CBOR library (ciborium)
            let v: ciborium::Value = ciborium::de::from_reader(&msg[..]).unwrap();
            let ciborium::Value::Tag(18, inner) = v else {
                panic!("tag 18")
            };
            let ciborium::Value::Array(items) = *inner else {
                panic!("an array")
            };
            assert_eq!(items.len(), 4);
            assert_eq!(items[2], ciborium::Value::Bytes(payload.clone()));
            let ciborium::Value::Bytes(p) = &items[0] else {
                panic!("protected")
            };
            let h: ciborium::Value = ciborium::de::from_reader(&p[..]).unwrap();
            assert_eq!(
                h,
                ciborium::Value::Map(vec![
                    (1.into(), ALG_ED25519.into()),
                    (4.into(), ciborium::Value::Bytes(kid.to_vec())),
                ])
            );
            // the Sig_structure too
            let tbs: ciborium::Value =
                ciborium::de::from_reader(&to_be_signed(p, &payload)[..]).unwrap();
            assert_eq!(
                tbs,
                ciborium::Value::Array(vec![
                    "Signature1".into(),
                    ciborium::Value::Bytes(p.clone()),
                    ciborium::Value::Bytes(vec![]),
                    ciborium::Value::Bytes(payload.clone()),
                ])
            );
        }
    }

    #[test]
    fn other_layouts_are_refused() {
        let kid = [1u8; 32];
        let good = encode(&kid, b"\xa0", &[2u8; 64]);
        assert!(decode(&good).is_ok());
        // trailing byte, truncation at every length
        let mut longer = good.clone();
        longer.push(0);
        assert_eq!(decode(&longer), Err(DecodeError::TrailingData));
        for n in 0..good.len() {
            assert!(decode(&good[..n]).is_err(), "{n}");
        }
        // a non-empty unprotected header
        let mut b = good.clone();
        let at = 2 + 2 + 38;
        assert_eq!(b[at], 0xa0);
        b[at] = 0xa1;
        assert!(decode(&b).is_err());
        // the algorithm EdDSA (-8, 0x27) instead of Ed25519
        let mut b = good.clone();
        b[2 + 2 + 2] = 0x27;
        assert!(decode(&b).is_err());
        // a payload length written in two bytes where one will do
        let mut b = vec![TAG, 0x84];
        bstr(&mut b, &protected(&kid));
        b.extend([0xa0, 0x59, 0x00, 0x01, 0xa0]);
        bstr(&mut b, &[2u8; 64]);
        assert!(matches!(decode(&b), Err(DecodeError::NonCanonical(_))));
        // a 63-byte signature
        let mut b = vec![TAG, 0x84];
        bstr(&mut b, &protected(&kid));
        b.push(0xa0);
        bstr(&mut b, b"\xa0");
        bstr(&mut b, &[2u8; 63]);
        assert!(decode(&b).is_err());
    }
}
