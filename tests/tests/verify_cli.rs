//! The verifier's command line, tried as a new user would: every case here
//! was seen to fail once (issue 8). The binary must have been built
//! (`cargo build --release --workspace`, which `./run test` does first).

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_tests::support::vectors_dir;
use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

fn verifier() -> PathBuf {
    let exe = std::env::current_exe().expect("test executable");
    let dir = exe
        .parent()
        .and_then(|p| p.parent())
        .expect("target/<profile>/deps");
    let path = dir.join(format!("classcert-verify{}", std::env::consts::EXE_SUFFIX));
    assert!(
        path.is_file(),
        "{} not found: run `cargo build --release --workspace` first",
        path.display()
    );
    path
}

fn run(args: &[&str], stdin: Option<&[u8]>) -> Output {
    let mut cmd = Command::new(verifier());
    cmd.args(args)
        .stdin(if stdin.is_some() {
            Stdio::piped()
        } else {
            Stdio::null()
        })
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    let mut child = cmd.spawn().expect("runs");
    if let Some(bytes) = stdin {
        child
            .stdin
            .take()
            .expect("stdin")
            .write_all(bytes)
            .expect("writes stdin");
    }
    child.wait_with_output().expect("finishes")
}

fn golden(name: &str) -> String {
    vectors_dir()
        .join("golden")
        .join(name)
        .to_string_lossy()
        .into_owned()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn scratch_file(name: &str, bytes: &[u8]) -> String {
    let path = std::env::temp_dir().join(format!("classcert-verify-{}-{name}", std::process::id()));
    std::fs::write(&path, bytes).expect("writes scratch file");
    path.to_string_lossy().into_owned()
}

#[test]
fn help_in_every_spelling() {
    for args in [&["help"][..], &["--help"], &["-h"]] {
        let o = run(args, None);
        assert_eq!(o.status.code(), Some(0), "{args:?}");
        let out = stdout(&o);
        assert!(out.contains("Usage: classcert-verify"), "{args:?}: {out}");
        assert!(out.contains("Exit codes"), "{args:?}: {out}");
    }
}

#[test]
fn require_takes_the_equals_form_and_refuses_grh() {
    let f = golden("minus-23.cert");
    let o = run(&["--require=unconditional", &f], None);
    assert_eq!(o.status.code(), Some(3), "a policy refusal exits 3");
    assert!(stdout(&o).starts_with("REJECTED: policy"), "{}", stdout(&o));
    let o = run(&["--require", "everything", &f], None);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn quiet_prints_the_verdict_line_only() {
    let o = run(&["-q", &golden("minus-23.cert")], None);
    assert_eq!(o.status.code(), Some(0));
    assert_eq!(stdout(&o), "VERIFIED\n");
    assert!(o.stderr.is_empty());
}

#[test]
fn dash_reads_standard_input() {
    let bytes = std::fs::read(golden("minus-3299.cert")).expect("golden");
    let o = run(&["-", "--quiet"], Some(&bytes));
    assert_eq!(o.status.code(), Some(0));
    assert_eq!(stdout(&o), "VERIFIED\n");
}

#[test]
fn json_errors_are_json() {
    let o = run(&["--json", "/nonexistent/classcert.cert"], None);
    assert_eq!(o.status.code(), Some(2));
    let out = stdout(&o);
    assert!(out.contains("\"schema\": \"classcert/1\""), "{out}");
    assert!(out.contains("\"kind\": \"error\""), "{out}");
    assert!(out.contains("\"reason\": \"io-error\""), "{out}");
    let o = run(&["--json", "--no-such-option", "x"], None);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stdout(&o).contains("\"reason\": \"usage\""),
        "{}",
        stdout(&o)
    );
}

#[test]
fn text_and_empty_files_are_not_certificates() {
    for (name, bytes) in [
        ("text.txt", &b"class group of -23 is Z/3\n"[..]),
        ("empty.cert", &b""[..]),
        ("json.cert", &b"{\"format\": 1}"[..]),
    ] {
        let f = scratch_file(name, bytes);
        let o = run(&["--json", &f], None);
        assert_eq!(o.status.code(), Some(1), "{name}");
        let out = stdout(&o);
        assert!(
            out.contains("\"reason\": \"not-a-certificate\""),
            "{name}: {out}"
        );
        assert!(out.contains("not a classcert certificate"), "{name}: {out}");
    }
}

/// `vectors/hostile/euler-x-5e7.cert`: X = 5·10^7 on minus-3299, true
/// (tests/src/hostile.rs), estimated at about 3.1e10 units, over the
/// default budget of 1e10.
fn true_cut_off_at_its_cap() -> String {
    let p = vectors_dir().join("hostile").join("euler-x-5e7.cert");
    p.to_string_lossy().into_owned()
}

#[test]
fn budget_scale_is_range_checked_and_multiplies_the_budget() {
    let f = true_cut_off_at_its_cap();
    let o = run(&[&f], None);
    assert_eq!(o.status.code(), Some(1));
    let out = stdout(&o);
    assert!(out.starts_with("REJECTED: over-limit"), "{out}");
    assert!(
        out.contains("over the budget of 1.00e10 (--budget-scale raises it)"),
        "{out}"
    );
    // three times the budget is still short of the estimate
    let o = run(&["--budget-scale", "3", &f], None);
    assert_eq!(o.status.code(), Some(1));
    assert!(
        stdout(&o).contains("over the budget of 3.00e10"),
        "{}",
        stdout(&o)
    );
    for bad in ["0", "100001", "-1", "two"] {
        let o = run(&["--budget-scale", bad, &f], None);
        assert_eq!(
            o.status.code(),
            Some(2),
            "--budget-scale {bad} is a usage error"
        );
    }
}

#[test]
#[ignore = "about 17 s of real work (a sieve and an Euler product to 5·10^7)"]
fn budget_scale_admits_a_true_certificate_over_the_default() {
    let f = true_cut_off_at_its_cap();
    let o = run(&["--quiet", "--budget-scale", "4", &f], None);
    assert_eq!(stdout(&o), "VERIFIED\n");
    assert_eq!(o.status.code(), Some(0));
}
