//! A light test of the two command-line programs (the library is tested
//! thoroughly elsewhere). Cargo exposes `CARGO_BIN_EXE_*` only to tests of
//! the package that owns the binary, so the binaries are looked up in the
//! target directory this test runs from (`target/<profile>/`); when they
//! are absent (e.g. `cargo test -p classcert-tests` without a prior
//! `cargo build`), each test says so and passes without checking.

use classcert_tests::oracle;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin(name: &str) -> Option<PathBuf> {
    // .../target/<profile>/deps/cli-<hash>  ->  .../target/<profile>/<name>
    let exe = std::env::current_exe().ok()?;
    let dir = exe.parent()?.parent()?;
    let path = dir.join(format!("{name}{}", std::env::consts::EXE_SUFFIX));
    if path.is_file() {
        Some(path)
    } else {
        eprintln!(
            "SKIPPED: {} not found; run `cargo build --release --workspace` first",
            path.display()
        );
        None
    }
}

fn both() -> Option<(PathBuf, PathBuf)> {
    Some((bin("classcert")?, bin("classcert-verify")?))
}

/// A fresh scratch directory for one test.
fn scratch(test: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("classcert-cli-{}-{test}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create scratch dir");
    dir
}

fn run(cmd: &Path, args: &[&str]) -> Output {
    Command::new(cmd)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("cannot run {}: {e}", cmd.display()))
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

#[test]
fn prove_show_verify_round_trip() {
    let Some((classcert, verify)) = both() else {
        return;
    };
    let dir = scratch("round-trip");
    let cert = dir.join("d.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let d = -3299;
    let out = run(&classcert, &["prove", &d.to_string(), "-o", cert_s, "-q"]);
    assert!(
        out.status.success(),
        "prove failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Cl(-3299) ≅ Z/3 × Z/9 (from memory); the oracle's brute force agrees.
    assert_eq!(oracle::group_invariants_bruteforce(d), vec![3, 9]);

    let show = run(&classcert, &["show", cert_s]);
    assert!(show.status.success());
    assert!(
        stdout(&show).contains("Z/3 x Z/9  (class number 27)"),
        "{}",
        stdout(&show)
    );
    let show_json = run(&classcert, &["show", cert_s, "--json"]);
    assert!(show_json.status.success());
    assert!(stdout(&show_json).contains("\"class_number\": \"27\""));
    assert!(stdout(&show_json).contains("\"checked\": false"));

    let v = run(&verify, &[cert_s]);
    assert_eq!(v.status.code(), Some(0), "{}", stdout(&v));
    assert!(stdout(&v).starts_with("VERIFIED"));
    let vj = run(&verify, &[cert_s, "--json"]);
    assert_eq!(vj.status.code(), Some(0));
    assert!(stdout(&vj).contains("\"verdict\": \"verified\""));
    assert!(stdout(&vj).contains("\"invariants\": [\"3\", \"9\"]"));

    // The same seed through the library gives the same bytes.
    let lib = classcert_prover::prove_to_bytes(
        &rug::Integer::from(d),
        &classcert_prover::Options::default(),
    )
    .expect("proves")
    .0;
    assert!(
        std::fs::read(&cert).expect("read cert") == lib,
        "CLI and library files differ"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn verifier_exit_codes() {
    let Some((classcert, verify)) = both() else {
        return;
    };
    let dir = scratch("exit-codes");
    let cert = dir.join("d.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let out = run(
        &classcert,
        &["prove", "-300", "-o", cert_s, "-q", "--seed", "5"],
    );
    assert!(out.status.success());
    let mut bytes = std::fs::read(&cert).expect("read cert");
    bytes.push(0);
    let bad = dir.join("bad.cert");
    std::fs::write(&bad, &bytes).expect("write");
    let bad_s = bad.to_str().expect("utf-8 path");

    let r = run(&verify, &[bad_s, "--json"]);
    assert_eq!(r.status.code(), Some(1), "a rejected file exits 1");
    assert!(
        stdout(&r).contains("\"reason\": \"decode-trailing-data\""),
        "{}",
        stdout(&r)
    );
    let r = run(&verify, &[bad_s]);
    assert_eq!(r.status.code(), Some(1));
    assert!(stdout(&r).starts_with("REJECTED: decode-trailing-data"));

    let missing = dir.join("missing.cert");
    let r = run(&verify, &[missing.to_str().expect("utf-8 path")]);
    assert_eq!(r.status.code(), Some(2), "an unreadable file exits 2");
    let r = run(&verify, &[]);
    assert_eq!(r.status.code(), Some(2), "no argument exits 2");
    let r = run(&verify, &[cert_s, "--frobnicate"]);
    assert_eq!(r.status.code(), Some(2), "an unknown option exits 2");

    // --require unconditional refuses a certificate that rests on GRH
    let r = run(&verify, &[cert_s]);
    assert_eq!(r.status.code(), Some(0));
    let r = run(&verify, &[cert_s, "--json", "--require", "unconditional"]);
    assert_eq!(r.status.code(), Some(1), "a GRH result fails the policy");
    assert!(
        stdout(&r).contains("\"reason\": \"policy\""),
        "{}",
        stdout(&r)
    );
    let r = run(&verify, &[cert_s, "--require", "sometimes"]);
    assert_eq!(r.status.code(), Some(2), "an unknown requirement exits 2");

    // `show` refuses a damaged file instead of printing it.
    let s = run(&classcert, &["show", bad_s]);
    assert!(!s.status.success());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn prover_refuses_bad_input() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("bad-input");
    let cert = dir.join("x.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    // -5 and 7 are ≡ 3 (mod 4), not discriminants; 16 is a square;
    // "abc" is not an integer.
    for d in ["-5", "7", "16", "abc"] {
        let o = run(&classcert, &["prove", d, "-o", cert_s, "-q"]);
        assert!(!o.status.success(), "prove {d} should fail");
        assert!(!cert.exists(), "prove {d} wrote a file");
        assert!(!o.stderr.is_empty(), "prove {d} gave no message");
    }
    // Wrong factors are refused rather than certified.
    let o = run(
        &classcert,
        &["prove", "-84", "-o", cert_s, "-q", "--factors", "2,2,3,5"],
    );
    assert!(!o.status.success(), "wrong --factors accepted");
    let _ = std::fs::remove_dir_all(&dir);
}
