//! A light test of the two command-line programs (the library is tested
//! thoroughly elsewhere). Cargo exposes `CARGO_BIN_EXE_*` only to tests of
//! the package that owns the binary, so the binaries are looked up in the
//! target directory this test runs from (`target/<profile>/`); when they
//! are absent (e.g. `cargo test -p classcert-tests` without a prior
//! `cargo build`), each test says so and passes without checking.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_tests::oracle;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin(name: &str) -> Option<PathBuf> {
    // .../target/<profile>/deps/cli-<hash>  ->  .../target/<profile>/<name>
    let exe = std::env::current_exe().ok()?;
    let dir = exe.parent()?.parent()?;
    let path = dir.join(format!("{name}{}", std::env::consts::EXE_SUFFIX));
    // A missing binary is a failure, not a skip: a test that passes
    // without checking anything proves nothing.
    assert!(
        path.is_file(),
        "{} not found; run `cargo build --release --workspace` first",
        path.display()
    );
    Some(path)
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
    run_env(cmd, args, &[])
}

fn run_env(cmd: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut c = Command::new(cmd);
    c.args(args);
    for (k, v) in env {
        c.env(k, v);
    }
    c.output()
        .unwrap_or_else(|e| panic!("cannot run {}: {e}", cmd.display()))
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
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
    assert!(stdout(&show_json).contains("\"kind\": \"claims\""));

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
    assert_eq!(
        r.status.code(),
        Some(3),
        "a GRH result fails the policy: exit 3"
    );
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

// ---- the command line as a new user meets it (issue 8, interface) ----

/// Item 1 and 13: `show --json` gives JSON (schema "classcert/1") for
/// order-witness certificates too, and errors as JSON.
#[test]
fn show_json_for_order_witness_and_errors() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("show-witness");
    let cert = dir.join("w.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    // Cl(-3299) ≅ Z/3 × Z/9 (from memory; the oracle's brute force agrees)
    assert_eq!(oracle::group_invariants_bruteforce(-3299), vec![3, 9]);
    let o = run(
        &classcert,
        &[
            "prove",
            "-3299",
            "--claim-class-number",
            "27",
            "--claim-invariants",
            "3,9",
            "-o",
            cert_s,
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let j = run(&classcert, &["show", cert_s, "--json"]);
    assert_eq!(j.status.code(), Some(0));
    let out = stdout(&j);
    assert!(
        out.starts_with("{\n  \"schema\": \"classcert/1\",\n  \"kind\": \"claims\","),
        "{out}"
    );
    assert!(
        out.contains("\"certificate_kind\": \"order-witness\""),
        "{out}"
    );
    assert!(out.contains("\"invariants\": [\"3\", \"9\"]"), "{out}");
    assert!(out.contains("\"form\": ["), "{out}");
    assert!(!out.contains("generation_bound"), "{out}");
    // a file that is not a certificate: JSON of kind "error", exit 2
    let junk = dir.join("junk.txt");
    std::fs::write(&junk, "hello\n").expect("write");
    let j = run(
        &classcert,
        &["show", junk.to_str().expect("utf-8"), "--json"],
    );
    assert_eq!(j.status.code(), Some(2));
    assert!(stdout(&j).contains("\"kind\": \"error\""), "{}", stdout(&j));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 2: options are range-checked before any work, with the range.
#[test]
fn euler_x_is_range_checked_first() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("euler-x");
    let cert = dir.join("x.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    for x in ["10", "100000000"] {
        let t = std::time::Instant::now();
        let o = run(
            &classcert,
            &["prove", "-3299", "-o", cert_s, "--euler-x", x],
        );
        assert_eq!(o.status.code(), Some(2), "--euler-x {x}");
        assert!(stderr(&o).contains("[69, 50000000]"), "{}", stderr(&o));
        assert!(
            t.elapsed().as_secs() < 5,
            "--euler-x {x} was not refused at once"
        );
        assert!(!cert.exists());
    }
    // in range but too small for this D: refused with a cut-off that works
    let o = run(
        &classcert,
        &["prove", "-3299", "-o", cert_s, "--euler-x", "70"],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("or more will do"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 3: an unusable output path is refused before the computation.
#[test]
fn output_path_is_checked_first() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    // a 35-digit D takes seconds to prove: the refusal must come at once
    let t = std::time::Instant::now();
    let o = run(
        &classcert,
        &[
            "prove",
            "-40000000000000000000000000000000004",
            "-o",
            "/nonexistent/x.cert",
        ],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("does not exist"), "{}", stderr(&o));
    let t2 = std::time::Instant::now();
    let d = run(&classcert, &["demo", "--dir", "/nonexistent"]);
    assert_eq!(d.status.code(), Some(2));
    assert!(stderr(&d).contains("does not exist"), "{}", stderr(&d));
    assert!(t.elapsed().as_secs() < 3 && t2.elapsed().as_secs() < 2);
    // a directory is not a file name
    let dir = scratch("out-dir");
    let o = run(
        &classcert,
        &["prove", "-3299", "-o", dir.to_str().expect("utf-8")],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("is a directory"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 4: a huge D is refused by its size, and messages show at most a
/// few dozen of its digits.
#[test]
fn huge_input_is_not_echoed() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let big = "1".repeat(2000) + "2";
    let o = run(&classcert, &["prove", &big, "-o", "/tmp/never.cert"]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("2001 digits") && e.contains("4096 bits"), "{e}");
    assert!(e.len() < 300, "message too long: {} bytes", e.len());
    let junk = "x".repeat(3000);
    let o = run(&classcert, &["prove", &junk, "-o", "/tmp/never.cert"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).len() < 400, "{}", stderr(&o));
}

/// Item 5: one exit scheme, documented in --help.
#[test]
fn exit_codes_follow_the_documented_scheme() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("exit-scheme");
    let cert = dir.join("x.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let help = run(&classcert, &["prove", "--help"]);
    let h = stdout(&help);
    for line in [
        "0  success",
        "2  usage",
        "3  the claim is refuted",
        "4  the computation failed",
        "5  internal error",
    ] {
        assert!(h.contains(line), "--help lacks {line:?}:\n{h}");
    }
    // usage: not an integer, not a discriminant (3 ≡ 3 mod 4), a square
    for d in ["abc", "3", "16"] {
        let o = run(&classcert, &["prove", d, "-o", cert_s, "-q"]);
        assert_eq!(o.status.code(), Some(2), "prove {d}: {}", stderr(&o));
    }
    // refuted: #Cl(-3299) = 27 (see above), and a class has order 27, not dividing 26
    let o = run(
        &classcert,
        &[
            "prove",
            "-3299",
            "--claim-class-number",
            "26",
            "-o",
            cert_s,
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    // failed: H = 9 is below the true 27, but the Euler bound alone cannot
    // exclude #Cl >= 2H, so the prover gives up without a refutation
    let o = run(
        &classcert,
        &[
            "prove",
            "-3299",
            "--claim-class-number",
            "9",
            "-o",
            cert_s,
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(4), "{}", stderr(&o));
    assert!(!cert.exists());
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 6: discriminants are parsed strictly, and the rule is explained.
#[test]
fn discriminants_are_parsed_strictly() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    for d in [
        "-3299 ", " -3299", "1_000", "12,345", "+316", "−3299", "-3-",
    ] {
        let o = run(&classcert, &["prove", d, "-o", "/tmp/never.cert"]);
        assert_eq!(o.status.code(), Some(2), "prove '{d}'");
        assert!(
            stderr(&o).contains("decimal digits 0-9 only"),
            "'{d}': {}",
            stderr(&o)
        );
    }
    let o = run(&classcert, &["prove", "-3", "-4", "-o", "/tmp/never.cert"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("prove takes one discriminant"),
        "{}",
        stderr(&o)
    );
    // a negative D works in any position
    let dir = scratch("strict");
    let cert = dir.join("x.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    for args in [
        vec!["prove", "-3299", "-o", cert_s, "-q"],
        vec!["prove", "-q", "-o", cert_s, "-3299"],
    ] {
        let o = run(&classcert, &args);
        assert_eq!(o.status.code(), Some(0), "{args:?}: {}", stderr(&o));
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 7: the unit is written in the basis (a + b sqrt(D))/2, and D > 0
/// generators are labelled as prime ideals. D = 316: Cl ≅ Z/3 and
/// ε = 80 + 9 sqrt(79) = (160 + 9 sqrt(316))/2 (OEIS A349419, see
/// tests/tests/snapshots.rs).
#[test]
fn unit_is_written_out() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("unit");
    let cert = dir.join("r.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let o = run(&classcert, &["prove", "316", "-o", cert_s, "-q"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let ascii = stdout(&run_env(&classcert, &["show", cert_s], &[("LC_ALL", "C")]));
    assert!(
        ascii.contains("eps = (160 + 9*sqrt(D))/2, of norm 1"),
        "{ascii}"
    );
    assert!(ascii.contains("the prime ideal product ("), "{ascii}");
    assert!(ascii.contains(" + sqrt(D))/2)"), "{ascii}");
    assert!(ascii.is_ascii(), "{ascii}");
    let utf8 = stdout(&run_env(
        &classcert,
        &["show", cert_s],
        &[("LC_ALL", "C.UTF-8")],
    ));
    assert!(utf8.contains("ε = (160 + 9·sqrt(D))/2"), "{utf8}");
    let j = stdout(&run(&classcert, &["show", cert_s, "--json"]));
    assert!(
        j.contains("\"a\": \"160\"") && j.contains("\"b\": \"9\""),
        "{j}"
    );
    assert!(j.contains("\"prime_ideals\": ["), "{j}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 8: a non-maximal order shows its exact conductor and field
/// discriminant: -300 = 10^2 · (-3) (common practice).
#[test]
fn conductor_is_exact_when_factored() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("conductor");
    let cert = dir.join("c.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let o = run(&classcert, &["prove", "-300", "-o", cert_s, "-q"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let t = stdout(&run(&classcert, &["show", cert_s]));
    assert!(
        t.contains("f = 10, field discriminant d_K = D/f^2 = -3"),
        "{t}"
    );
    assert!(!t.contains("divisible by"), "{t}");
    let j = stdout(&run(&classcert, &["show", cert_s, "--json"]));
    assert!(
        j.contains("\"field_discriminant\": \"-3\",\n  \"conductor\": \"10\""),
        "{j}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 9: Rust debug formatting never reaches users. Every format string
/// in the prover's sources outside tests, assertions and `expect`s is
/// checked for `:?}`, and the messages of a few failures for its traces.
#[test]
fn no_debug_formatting_in_messages() {
    let src = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../prover/src");
    let mut files = vec![src.clone()];
    let mut offenders = Vec::new();
    while let Some(p) = files.pop() {
        if p.is_dir() {
            for e in std::fs::read_dir(&p).expect("read dir") {
                files.push(e.expect("entry").path());
            }
            continue;
        }
        if p.extension().is_none_or(|e| e != "rs") {
            continue;
        }
        let text = std::fs::read_to_string(&p).expect("read source");
        let body = text.split("#[cfg(test)]").next().unwrap_or("");
        for (i, line) in body.lines().enumerate() {
            let internal = ["assert", "expect(", "panic!", "unreachable!", "#[derive"]
                .iter()
                .any(|k| line.contains(k));
            if (line.contains(":?}") || line.contains(":#?}")) && !internal {
                offenders.push(format!("{}:{}: {line}", p.display(), i + 1));
            }
        }
    }
    assert!(offenders.is_empty(), "{}", offenders.join("\n"));
    let Some(classcert) = bin("classcert") else {
        return;
    };
    for args in [
        vec!["prove", "abc", "-o", "/tmp/never.cert"],
        vec![
            "prove",
            "-84",
            "-o",
            "/tmp/never.cert",
            "--factors",
            "2,2,3,5",
        ],
        vec![
            "prove",
            "-84",
            "-o",
            "/tmp/never.cert",
            "--factors",
            "2,2,x",
        ],
    ] {
        let e = stderr(&run(&classcert, &args));
        assert!(
            !e.is_empty() && !e.contains('"') && !e.contains("Some("),
            "{e}"
        );
    }
}

/// Item 10: off a terminal, progress lines are at least 3 s and at most
/// 10 s apart; with -q nothing but warnings. A 35-digit D takes a few
/// seconds.
#[test]
fn progress_is_throttled_off_a_terminal() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("progress");
    let cert = dir.join("p.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let d = "-40000000000000000000000000000000004";
    let o = run(&classcert, &["prove", d, "-o", cert_s]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let mut last = 0.0f64;
    for line in stderr(&o).lines() {
        let t: f64 = line
            .strip_prefix('[')
            .and_then(|l| l.split(" s]").next())
            .and_then(|t| t.trim().parse().ok())
            .unwrap_or_else(|| panic!("not a progress line: {line}"));
        if !line.ends_with("] done") {
            assert!(t - last >= 2.9, "lines closer than 3 s: {}", stderr(&o));
        }
        assert!(t - last <= 10.5, "silent for over 10 s: {}", stderr(&o));
        last = t;
    }
    let q = run(&classcert, &["prove", d, "-o", cert_s, "-q"]);
    assert_eq!(q.status.code(), Some(0));
    assert!(q.stderr.is_empty(), "{}", stderr(&q));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Issue 9: no fixed size cap for full proofs below the verifier's 4096
/// bits; a proof whose estimated cost exceeds an hour is refused before any
/// work, with the estimate, unless `--force`.
#[test]
fn full_proof_refused_with_an_estimate() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("estimate");
    let cert = dir.join("e.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let d = format!("-{}6", "1".repeat(84)); // 85 digits, D ≡ 0 (mod 4)
    let started = std::time::Instant::now();
    let o = run(&classcert, &["prove", &d, "-o", cert_s]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("would take about") && err.contains("--force"),
        "{err}"
    );
    assert!(started.elapsed().as_secs() < 5, "refused before any work");
    assert!(!cert.exists());
    // the verifier's own limit is the only hard one
    let huge = format!("-{}", "4".repeat(1300));
    let o = run(&classcert, &["prove", &huge, "-o", cert_s]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("4096 bits"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Issue 9, acceptance 3: the certificate does not depend on the number of
/// threads. One core (`taskset -c 0`, so the prover sees one) against all
/// of them, at 36 digits, where the sieve and the threaded determinants
/// are used (D = -4p, p the first prime ≡ 1 mod 4 above 2.5·10^34, our
/// benchmark choice).
#[test]
fn one_and_all_cores_give_identical_bytes() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("threads");
    let one = dir.join("one.cert");
    let all = dir.join("all.cert");
    let d = "-100000000000000000000000000000000388";
    let o = Command::new("taskset")
        .args(["-c", "0"])
        .arg(&classcert)
        .args(["prove", d, "-q", "-o"])
        .arg(&one)
        .output()
        .expect("taskset (util-linux) runs");
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let o = run(
        &classcert,
        &["prove", d, "-q", "-o", all.to_str().expect("utf-8")],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let (a, b) = (
        std::fs::read(&one).expect("one"),
        std::fs::read(&all).expect("all"),
    );
    assert!(
        a == b,
        "the certificates differ between one core and all cores"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// `-q` hides progress, never a warning: an `|D|` whose two prime factors
/// (our own choice, the primes after 2^50 and 2^51 with a product ≡ 3 mod
/// 4) are out of reach of the factoring budget, so maximality is not
/// claimed and the user is told.
#[test]
fn quiet_still_prints_warnings() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("quiet-warning");
    let cert = dir.join("w.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let d = "-2535301200456606295881202795651"; // -(1125899906842679 · 2251799813685269)
    let o = run(&classcert, &["prove", d, "-o", cert_s, "-q"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("warning:") && err.contains("maximality will not be claimed"),
        "{err}"
    );
    assert_eq!(err.lines().count(), 1, "only the warning: {err}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Item 12: no stale words in the help.
#[test]
fn help_speaks_of_both_signs() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let top = stdout(&run(&classcert, &["--help"]));
    assert!(top.contains("imaginary or real"), "{top}");
    let prove = stdout(&run(&classcert, &["prove", "--help"]));
    assert!(!prove.contains("cyclic groups only"), "{prove}");
    assert!(prove.contains("--claim-invariants"), "{prove}");
}

/// Item 11: the demo writes into the directory it names, nowhere else
/// (a few seconds in release builds since the sieve).
#[test]
fn demo_writes_into_its_directory() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("demo");
    let o = run(
        &classcert,
        &["demo", "--dir", dir.to_str().expect("utf-8"), "-q"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains(&format!("certificates to {}", dir.display())));
    assert!(dir.join("qm-40.cert").is_file() && dir.join("qm-appendix.cert").is_file());
    let _ = std::fs::remove_dir_all(&dir);
}

/// `--resume DIR` is checked before any work: a path that exists and is
/// not a directory is a usage error naming it; the option is in the help.
#[test]
fn resume_must_be_a_directory() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("resume-file");
    let file = dir.join("not-a-dir");
    std::fs::write(&file, "a regular file\n").expect("write");
    let file_s = file.to_str().expect("utf-8 path");
    let cert = dir.join("x.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    let o = run(
        &classcert,
        &["prove", "-23", "-o", cert_s, "--resume", file_s, "-q"],
    );
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains(file_s), "{}", stderr(&o));
    assert!(stderr(&o).contains("not a directory"), "{}", stderr(&o));
    assert!(!cert.exists(), "a certificate was written");
    assert_eq!(
        std::fs::read_to_string(&file).expect("read"),
        "a regular file\n"
    );
    // a missing directory is created (the run then proves as usual)
    let fresh = dir.join("rounds");
    let o = run(
        &classcert,
        &[
            "prove",
            "-23",
            "-o",
            cert_s,
            "--resume",
            fresh.to_str().expect("utf-8 path"),
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(fresh.is_dir() && cert.is_file());
    let help = stdout(&run(&classcert, &["prove", "--help"]));
    assert!(help.contains("--resume <DIR>"), "{help}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Issue 9, acceptance 2, at a test size: a run killed with SIGKILL
/// resumes from its checkpoint directory and writes the same certificate
/// as a run never interrupted; a round file with one byte changed is
/// refused (exit 2, the file named) and nothing is written. 40 digits
/// (D = -4p, p the first prime ≡ 1 mod 4 above 2.5·10^38, our benchmark
/// choice), where the sieve keeps several rounds.
#[test]
fn a_killed_run_resumes_to_the_same_bytes_and_a_changed_round_is_refused() {
    let Some(classcert) = bin("classcert") else {
        return;
    };
    let dir = scratch("resume-kill");
    let d = "-1000000000000000000000000000000000000244";
    let plain = dir.join("plain.cert");
    let resumed = dir.join("resumed.cert");
    let rounds = dir.join("rounds");
    let o = run(
        &classcert,
        &["prove", d, "-q", "-o", plain.to_str().expect("utf-8")],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    // start a run and kill it once two rounds are on disk
    let mut child = Command::new(&classcert)
        .args(["prove", d, "-q", "-o"])
        .arg(&resumed)
        .arg("--resume")
        .arg(&rounds)
        .spawn()
        .expect("spawn");
    let round = |r: u32| rounds.join(format!("round-{r:06}.ckpt"));
    let start = std::time::Instant::now();
    while !round(1).exists() && start.elapsed().as_secs() < 120 {
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    child.kill().expect("SIGKILL");
    let _ = child.wait();
    assert!(round(0).exists(), "no round was stored before the kill");
    assert!(!resumed.exists(), "the killed run finished first");
    let o = run(
        &classcert,
        &[
            "prove",
            d,
            "-o",
            resumed.to_str().expect("utf-8"),
            "--resume",
            rounds.to_str().expect("utf-8"),
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stderr(&o).contains("resuming"), "{}", stderr(&o));
    assert!(
        std::fs::read(&plain).expect("plain") == std::fs::read(&resumed).expect("resumed"),
        "the resumed run wrote other bytes"
    );
    // one byte changed in the middle of round 0: refused, never used
    let mut bytes = std::fs::read(round(0)).expect("round 0");
    let mid = bytes.len() / 2;
    bytes[mid] ^= 0x01;
    std::fs::write(round(0), &bytes).expect("write");
    std::fs::remove_file(&resumed).expect("remove");
    let o = run(
        &classcert,
        &[
            "prove",
            d,
            "-q",
            "-o",
            resumed.to_str().expect("utf-8"),
            "--resume",
            rounds.to_str().expect("utf-8"),
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("round-000000.ckpt"), "{}", stderr(&o));
    assert!(stderr(&o).contains("refused"), "{}", stderr(&o));
    assert!(
        !resumed.exists(),
        "a certificate was written from a changed round"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// The names and bytes of the files in `dir`.
fn files_in(dir: &Path) -> std::collections::BTreeMap<String, Vec<u8>> {
    std::fs::read_dir(dir)
        .expect("list")
        .map(|e| {
            let e = e.expect("entry");
            (
                e.file_name().to_string_lossy().into_owned(),
                std::fs::read(e.path()).expect("read"),
            )
        })
        .collect()
}

/// Relation rounds sieved in two directories (as on two machines) with
/// `collect` and merged with `combine` give a resumed proof the same
/// certificate bytes as a plain proof, and it verifies; a merge with a
/// round of one byte changed, or with the rounds of another discriminant,
/// is refused (exit 2, the file or directory named) and changes nothing;
/// `collect` refuses a directory of another computation before sieving.
/// 36 digits (D = -4p, p the first prime ≡ 1 mod 4 above 2.5·10^34, our
/// benchmark choice), where the sieve's rounds are used and the plain
/// proof takes about three rounds with seed 1 (measured).
#[test]
fn collected_rounds_combine_and_resume_to_the_same_bytes() {
    let Some((classcert, verify)) = both() else {
        return;
    };
    let dir = scratch("collect-combine");
    let d = "-100000000000000000000000000000000388";
    let path = |name: &str| dir.join(name);
    let s = |p: &PathBuf| p.to_str().expect("utf-8").to_string();
    let (plain, resumed) = (path("plain.cert"), path("resumed.cert"));
    let (a, b, target) = (path("a"), path("b"), path("merged"));
    let o = run(&classcert, &["prove", d, "-q", "-o", &s(&plain)]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));

    // `collect` of rounds `range` of D into `into`: it succeeds, and what
    // it says
    let collect = |range: &str, into: &PathBuf| -> String {
        let o = run(
            &classcert,
            &["collect", d, "--rounds", range, "--into", &s(into), "-q"],
        );
        assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
        stdout(&o)
    };
    // rounds 0..2 on one machine, 2..3 on another
    let out = collect("0..2", &a);
    assert!(out.starts_with("wrote 2 rounds into"), "{out}");
    let out = collect("2..3", &b);
    assert!(out.starts_with("wrote 1 round into"), "{out}");
    // collecting an overlapping range again writes only what is missing
    let out = collect("1..3", &b);
    assert!(
        out.contains("wrote 1 round into") && out.contains("1 of rounds 1..3"),
        "{out}"
    );
    // the same round sieved on both sides is the same bytes
    assert_eq!(
        files_in(&a)["round-000001.ckpt"],
        files_in(&b)["round-000001.ckpt"]
    );
    let o = run(
        &classcert,
        &["combine", "--into", &s(&target), &s(&a), &s(&b)],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(
        out.contains("3 rounds copied, 1 already there") && out.contains("rounds 0..3"),
        "{out}"
    );
    let o = run(&classcert, &["combine", "--into", &s(&target), &s(&b)]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("0 rounds copied, 2 already there"),
        "{}",
        stdout(&o)
    );

    let o = run(
        &classcert,
        &["prove", d, "-o", &s(&resumed), "--resume", &s(&target)],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stderr(&o).contains("resuming: 3 rounds"), "{}", stderr(&o));
    assert!(
        std::fs::read(&plain).expect("plain") == std::fs::read(&resumed).expect("resumed"),
        "the proof resumed from combined rounds wrote other bytes"
    );
    let o = run(&verify, &[&s(&resumed), "-q"]);
    assert_eq!(o.status.code(), Some(0), "{}", stdout(&o));

    // one byte changed in the middle of a round: the merge is refused
    let before = files_in(&target);
    let bad = path("bad");
    std::fs::create_dir_all(&bad).expect("mkdir");
    for (name, bytes) in files_in(&b) {
        std::fs::write(bad.join(&name), bytes).expect("copy");
    }
    let round = bad.join("round-000002.ckpt");
    let mut bytes = std::fs::read(&round).expect("round 2");
    let mid = bytes.len() / 2;
    bytes[mid] ^= 0x01;
    std::fs::write(&round, &bytes).expect("write");
    let fresh = path("fresh");
    for into in [&target, &fresh] {
        let o = run(
            &classcert,
            &["combine", "--into", &s(into), &s(&a), &s(&bad)],
        );
        assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
        let err = stderr(&o);
        assert!(
            err.contains(&s(&round))
                && err.contains("SHA-256")
                && err.contains("nothing was copied"),
            "{err}"
        );
    }
    assert_eq!(files_in(&target), before);
    assert!(!fresh.exists(), "a refused merge made its target");

    // another discriminant (40 digits: D = -4p, p the first prime ≡ 1 mod 4
    // above 2.5·10^38, our benchmark choice)
    let other = path("other");
    let o = run(
        &classcert,
        &[
            "collect",
            "-1000000000000000000000000000000000000244",
            "--rounds",
            "0..1",
            "--into",
            &s(&other),
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let o = run(&classcert, &["combine", "--into", &s(&target), &s(&other)]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains(&s(&other))
            && err.contains("another computation")
            && err.contains("-10000000000"),
        "{err}"
    );
    assert_eq!(files_in(&target), before);
    // collect refuses a directory of another computation (here another seed)
    let o = run(
        &classcert,
        &[
            "collect",
            d,
            "--rounds",
            "3..4",
            "--into",
            &s(&a),
            "--seed",
            "2",
            "-q",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("another computation"), "{}", stderr(&o));
    assert!(!a.join("round-000003.ckpt").exists());

    // the commands and the exit codes are in the help
    let help = stdout(&run(&classcert, &["--help"]));
    assert!(
        help.contains("collect") && help.contains("combine"),
        "{help}"
    );
    for cmd in ["collect", "combine"] {
        let h = stdout(&run(&classcert, &[cmd, "--help"]));
        assert!(h.contains("--into <DIR>") && h.contains("2  usage"), "{h}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn number_fields_from_the_command_line() {
    let Some((classcert, verify)) = both() else {
        return;
    };
    let dir = scratch("fields");
    let cert = dir.join("k.cert");
    let cert_s = cert.to_str().expect("utf-8 path");
    // Q(11^(1/3)): h = 2 (OEIS A246457), Δ = -27 · 121 = -3267 (pure cubic
    // fields, Alaca and Williams; from memory)
    let out = run(
        &classcert,
        &["prove", "--polynomial", "x^3 - 11", "-o", cert_s, "-q"],
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let vj = run(&verify, &[cert_s, "--json"]);
    assert_eq!(vj.status.code(), Some(0), "{}", stdout(&vj));
    let j = stdout(&vj);
    for key in [
        "\"polynomial\": \"x^3 - 11\"",
        "\"degree\": 3",
        "\"signature\": [1, 1]",
        "\"field_discriminant\": \"-3267\"",
        "\"index\": \"1\"",
        "\"class_number\": \"2\"",
        "\"unit_rank\": 1",
        "\"w\": 2",
        "\"maximal\": true",
        "\"regulator\": ",
    ] {
        assert!(j.contains(key), "{key} missing from {j}");
    }
    let show = run(&classcert, &["show", cert_s]);
    assert!(stdout(&show).contains("F = x^3 - 11"), "{}", stdout(&show));
    // refusals before any work, exit code 2, with the reason
    for (f, says) in [
        ("x^3 - 2y", "^ expected"),
        ("x^3 - 8", "not shown irreducible"),
        ("x^7 - 2", "degree 7"),
        ("2*x^3 - 1", "monic"),
        ("x^2 + 5", "quadratic order of discriminant -20"),
    ] {
        let out = run(&classcert, &["prove", "--polynomial", f, "-o", cert_s]);
        assert_eq!(out.status.code(), Some(2), "{f}");
        assert!(stderr(&out).contains(says), "{f}: {}", stderr(&out));
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// `classcert ask` and `classcert-verify --answer`: an answer verified,
/// one forged (exit 1, with the answer's reason), the text, quiet and JSON
/// shapes, and refusals (exit 2).
#[test]
fn ask_and_verify_an_answer() {
    let Some((classcert, verify)) = both() else {
        return;
    };
    let dir = scratch("ask");
    let path = |name: &str| dir.join(name).to_str().expect("utf-8 path").to_string();
    let (cert, answer) = (path("d.cert"), path("p.answer"));
    // D = -56: Cl ≅ Z/4 (OEIS A000003, a(14) = 4), generated by (3, 2, 5)
    let out = run(&classcert, &["prove", "-56", "-o", &cert, "-q"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let out = run(
        &classcert,
        &["ask", &cert, "--class", "(3, -2, 5)", "-o", &answer],
    );
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(
        stdout(&out).contains("exponents     e = (3)"),
        "{}",
        stdout(&out)
    );
    assert!(stdout(&out).contains("order         4"), "{}", stdout(&out));

    let v = run(&verify, &[&cert, "--answer", &answer, "-q"]);
    assert_eq!(v.status.code(), Some(0), "{}", stdout(&v));
    assert_eq!(
        stdout(&v),
        "VERIFIED\nANSWER VERIFIED: [(3, -2, 5)] = g1^3, of order 4 [class-coordinates]\n"
    );
    let vj = run(&verify, &[&cert, "--answer", &answer, "--json"]);
    assert_eq!(vj.status.code(), Some(0));
    assert!(
        stdout(&vj).contains("\"exponents\": [\"3\"]"),
        "{}",
        stdout(&vj)
    );

    // the prime ideal above 7 is ramified: (7, 0, 2), of order 2
    let out = run(&classcert, &["ask", &cert, "--prime", "7", "--json"]);
    assert!(out.status.success());
    assert!(stdout(&out).contains("\"kind\": \"answer\""));
    assert!(
        stdout(&out).contains("\"order\": \"2\""),
        "{}",
        stdout(&out)
    );

    // the answer for (3, 2, 5) under the name of (3, -2, 5): rejected
    let other = path("q.answer");
    let out = run(
        &classcert,
        &["ask", &cert, "--class", "(3, 2, 5)", "-o", &other],
    );
    assert!(out.status.success());
    let mut forged = std::fs::read(&other).expect("read");
    // the form [3, 2, 5] is written 0x83 0x03 0x02 0x05 (RFC 8949); its 2
    // becomes -2 (0x21), which keeps the encoding canonical
    let at = forged
        .windows(4)
        .position(|w| w == [0x83, 0x03, 0x02, 0x05]);
    forged[at.expect("the form in the answer") + 2] = 0x21;
    std::fs::write(&other, &forged).expect("write");
    let v = run(&verify, &[&cert, "--answer", &other]);
    assert_eq!(v.status.code(), Some(1), "{}", stdout(&v));
    assert!(
        stdout(&v).contains("ANSWER REJECTED: answer-not-principal"),
        "{}",
        stdout(&v)
    );

    // refusals: another discriminant, no such answer file
    let out = run(&classcert, &["ask", &cert, "--class", "(2, 1, 3)"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("discriminant -23"),
        "{}",
        stderr(&out)
    );
    let v = run(&verify, &[&cert, "--answer", &path("missing")]);
    assert_eq!(v.status.code(), Some(2));
    let _ = std::fs::remove_dir_all(&dir);
}
