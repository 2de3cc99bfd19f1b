//! Signed certificates and policies: a signature under a trusted key is
//! required and checked byte for byte; a policy refuses a verified result
//! with reason `policy` and exit code 3, never like a forgery.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_prover::sign;
use classcert_tests::support::{programs, vectors_dir};
use classcert_verifier::report::{Assumption, Policy, Report};
use classcert_verifier::signature::TrustedKey;
use classcert_verifier::verify_signed_with;
use ed25519_dalek::pkcs8::spki::der::pem::LineEnding;
use ed25519_dalek::pkcs8::EncodePublicKey;
use ed25519_dalek::{Signer, SigningKey, VerifyingKey};
use rug::Integer;

fn golden(name: &str) -> Vec<u8> {
    std::fs::read(vectors_dir().join("golden").join(name)).unwrap()
}

fn trusted(key: &SigningKey) -> TrustedKey {
    TrustedKey::from_pem(&sign::to_pem(key).unwrap().1).unwrap()
}

fn verify(bytes: &[u8], keys: &[TrustedKey]) -> Report {
    verify_signed_with(bytes, keys, &mut |_| {})
}

fn code(r: &Report) -> Option<&'static str> {
    r.outcome.as_ref().err().map(|e| e.reason.code())
}

fn key(seed: u8) -> SigningKey {
    SigningKey::from_bytes(&[seed; 32])
}

#[test]
fn ed25519_agrees_with_the_published_test_vector() {
    // RFC 8032, section 7.1, TEST 1: the empty message.
    let hex = |s: &str| -> Vec<u8> {
        (0..s.len())
            .step_by(2)
            .map(|i| u8::from_str_radix(&s[i..i + 2], 16).unwrap())
            .collect()
    };
    let secret: [u8; 32] = hex("9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60")
        .try_into()
        .unwrap();
    let k = SigningKey::from_bytes(&secret);
    assert_eq!(
        k.verifying_key().as_bytes().to_vec(),
        hex("d75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a")
    );
    assert_eq!(
        k.sign(b"").to_bytes().to_vec(),
        hex("e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e065224901555fb8821590a33bacc61e39701cf9b46bd25bf5f0595bbe24655141438e7a100b")
    );
}

#[test]
fn a_signature_verifies_only_under_its_key_and_only_unchanged() {
    let cert = golden("minus-3299.cert");
    let (alice, bob) = (key(1), key(2));
    let signed = sign::sign(&cert, &alice).unwrap();
    // under Alice's key: verified, and the signer named
    let r = verify(&signed, &[trusted(&bob), trusted(&alice)]);
    assert!(r.is_verified(), "{:?}", code(&r));
    let s = r.summary.signer.clone().unwrap();
    assert!(s.trusted);
    assert_eq!(s.fingerprint, sign::fingerprint_hex(&alice));
    // the certificate's id is the id of the bytes it carries
    assert_eq!(
        r.summary.certificate_sha256,
        verify(&cert, &[]).summary.certificate_sha256
    );
    // under any other key: refused
    assert_eq!(
        code(&verify(&signed, &[trusted(&bob)])),
        Some("signer-not-trusted")
    );
    // one byte changed anywhere (header, payload or signature): refused
    for i in 0..signed.len() {
        let mut b = signed.clone();
        b[i] ^= 0x01;
        let r = verify(&b, &[trusted(&alice)]);
        assert!(!r.is_verified(), "byte {i} changed and still verified");
    }
    // in particular in the signature, and in the payload
    let sig_at = signed.len() - 10;
    let payload_at = signed.len() - 64 - 2 - cert.len() / 2;
    for at in [sig_at, payload_at] {
        let mut b = signed.clone();
        b[at] ^= 0x80;
        assert_eq!(
            code(&verify(&b, &[trusted(&alice)])),
            Some("signature-invalid")
        );
    }
    // no trusted key given: the mathematics is checked, the signature not
    let r = verify(&signed, &[]);
    assert!(r.is_verified());
    assert!(!r.summary.signer.unwrap().trusted);
    // signing twice, or signing what is not a certificate, is refused
    assert!(sign::sign(&signed, &alice).is_err());
    assert!(sign::sign(b"not a certificate", &alice).is_err());
}

#[test]
fn weak_keys_are_never_trusted() {
    // the identity point (y = 1, encoded 01 00 .. 00) has order 1: every
    // signature R = identity, s = 0 would verify under it without
    // verify_strict (RFC 8032 leaves small-order keys to the application)
    let mut raw = [0u8; 32];
    raw[0] = 1;
    let weak = VerifyingKey::from_bytes(&raw).unwrap();
    assert!(weak.is_weak());
    let pem = weak.to_public_key_pem(LineEnding::LF).unwrap();
    assert!(TrustedKey::from_pem(&pem).is_err());
    assert!(TrustedKey::from_pem(
        "-----BEGIN PUBLIC KEY-----\nnot base64\n-----END PUBLIC KEY-----\n"
    )
    .is_err());
}

#[test]
fn policies_refuse_with_their_own_reason() {
    // D = -3299: Cl = Z/3 x Z/9, h = 27 (the golden certificate; Buell,
    // "Binary Quadratic Forms", table of class groups; common practice)
    let cert = golden("minus-3299.cert");
    let check = |p: Policy| code(&verify(&cert, &[]).apply(&p));
    let unconditional = Policy {
        allow: Some(Vec::new()),
        ..Policy::default()
    };
    assert_eq!(check(unconditional), Some("policy"));
    let grh = Policy {
        allow: Some(vec![Assumption::Grh]),
        ..Policy::default()
    };
    assert_eq!(check(grh), None);
    let h = |h: u32| Policy {
        class_number: Some(Integer::from(h)),
        ..Policy::default()
    };
    assert_eq!(check(h(27)), None);
    assert_eq!(check(h(9)), Some("policy"));
    let inv = |d: &[u32]| Policy {
        invariants: Some(d.iter().map(|&x| Integer::from(x)).collect()),
        ..Policy::default()
    };
    assert_eq!(check(inv(&[3, 9])), None);
    assert_eq!(check(inv(&[27])), Some("policy"));
    let signed = Policy {
        signed: true,
        ..Policy::default()
    };
    assert_eq!(check(signed), Some("policy"));
    // a refusal says every check passed
    let r = verify(&cert, &[]).apply(&h(9));
    assert!(r
        .outcome
        .unwrap_err()
        .detail
        .starts_with("every check passed"));
    // a failed check stays what it was under any policy
    let mut forged = cert.clone();
    let n = forged.len();
    forged[n - 1] ^= 1;
    assert_ne!(code(&verify(&forged, &[]).apply(&h(27))), Some("policy"));
}

#[test]
fn policy_files() {
    let (p, keys) = Policy::from_toml(
        "# a deployment's policy\nallow = [\"GRH\"]\nrequire = [\"maximal\"]\nexpect-class-number = 27\nexpect-invariants = [3, 9]\ntrusted-keys = [\"a.pub\", \"b.pub\"]\n",
    )
    .unwrap();
    assert_eq!(p.allow, Some(vec![Assumption::Grh]));
    assert!(p.maximal);
    assert_eq!(p.class_number, Some(Integer::from(27)));
    assert_eq!(p.invariants, Some(vec![Integer::from(3), Integer::from(9)]));
    assert_eq!(keys, vec!["a.pub".to_string(), "b.pub".to_string()]);
    let (p, _) = Policy::from_toml("require = [\"unconditional\"]").unwrap();
    assert_eq!(p.allow, Some(Vec::new()));
    for bad in [
        "allow = [\"RH\"]",
        "expect-class-number = x",
        "colour = 1",
        "allow = [\"GRH\"",
        "just words",
    ] {
        assert!(Policy::from_toml(bad).is_err(), "{bad}");
    }
}

#[test]
fn keygen_sign_and_verify_from_the_command_line() {
    let dir = programs::scratch("signing");
    let p = |f: &str| dir.join(f).to_string_lossy().into_owned();
    std::fs::write(p("c.cert"), golden("minus-3299.cert")).unwrap();
    let run = programs::run;
    assert!(run("classcert", &["keygen", "-o", &p("alice")])
        .status
        .success());
    assert!(run("classcert", &["keygen", "-o", &p("bob")])
        .status
        .success());
    // never over an existing key
    assert_eq!(
        run("classcert", &["keygen", "-o", &p("alice")])
            .status
            .code(),
        Some(2)
    );
    let out = run(
        "classcert",
        &[
            "sign",
            &p("c.cert"),
            "--key",
            &p("alice"),
            "-o",
            &p("c.signed"),
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let verify = |args: &[&str]| run("classcert-verify", args);
    let ok = verify(&[&p("c.signed"), "--trusted-key", &p("alice.pub"), "--json"]);
    assert_eq!(ok.status.code(), Some(0));
    let json = String::from_utf8(ok.stdout).unwrap();
    let field = |k: &str| {
        let at = json.find(&format!("\"{k}\": \"")).unwrap() + k.len() + 5;
        json[at..at + 64].to_string()
    };
    assert!(field("certificate_sha256")
        .chars()
        .all(|c| c.is_ascii_hexdigit()));
    assert!(field("fingerprint").chars().all(|c| c.is_ascii_hexdigit()));
    assert_eq!(
        verify(&[&p("c.signed"), "--trusted-key", &p("bob.pub")])
            .status
            .code(),
        Some(1)
    );
    // exit code 3 for a policy refusal, 0 when it holds
    let code = |args: &[&str]| verify(args).status.code();
    assert_eq!(code(&[&p("c.cert"), "--require", "unconditional"]), Some(3));
    assert_eq!(code(&[&p("c.cert"), "--expect-class-number", "9"]), Some(3));
    assert_eq!(
        code(&[&p("c.cert"), "--expect-class-number", "27"]),
        Some(0)
    );
    assert_eq!(
        code(&[&p("c.cert"), "--trusted-key", &p("alice.pub")]),
        Some(3)
    );
    std::fs::write(
        p("policy.toml"),
        format!(
            "allow = [\"GRH\"]\ntrusted-keys = [\"{}\"]\n",
            p("alice.pub")
        ),
    )
    .unwrap();
    assert_eq!(
        code(&[&p("c.signed"), "--policy", &p("policy.toml")]),
        Some(0)
    );
    assert_eq!(
        code(&[&p("c.cert"), "--policy", &p("policy.toml")]),
        Some(3)
    );
    // a key file that is not a key is a usage error
    assert_eq!(
        code(&[&p("c.cert"), "--trusted-key", &p("c.cert")]),
        Some(2)
    );
    let _ = std::fs::remove_dir_all(&dir);
}
