//! `classcert demo`: a scenario of our own, with invented data.
//!
//! The (fictional) Quillmoor Cryptography Group proposes a toy parameter
//! set "QM-40" for a group-action key exchange, built on the class group
//! of the maximal order of discriminant D = -4p for a 39-digit prime
//! p ≡ 1 (mod 4) of their choosing. Before anyone deploys it, a reviewer
//! wants the class group itself certified: the demo proves it, writes the
//! certificate, and checks it with the independent verifier. In a second
//! act the group's appendix quotes the regulator of a real quadratic field
//! of their choosing, and the reviewer certifies that too.

use super::exit::{fail, Exit};
use super::sink::CliSink;
use classcert_prover::{prove_to_bytes, Options};
use rug::Integer;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

/// The invented prime of the scenario (39 digits, ≡ 1 mod 4: the first such prime above 2.5·10^38).
pub const DEMO_P: &str = "250000000000000000000000000000000000061";

/// The invented real discriminant of the second act: the first prime
/// ≡ 1 (mod 4) above 2.5·10^21 (22 digits), a fundamental discriminant.
pub const DEMO_Q: &str = "2500000000000000000093";

/// Proves `d`, writes `<dir>/<name>`, verifies the bytes and prints the
/// verdict; true if verified.
fn act(d: &Integer, dir: &Path, name: &str, sink: &'static CliSink) -> Result<bool, ExitCode> {
    println!("1. prove: classcert computes the groups and writes a certificate");
    let t = Instant::now();
    let opts = Options {
        progress: sink.hook(),
        ..Options::default()
    };
    let proved = prove_to_bytes(d, &opts);
    sink.finish();
    let (bytes, _id) = proved.map_err(|e| {
        eprintln!("classcert: demo failed: {e}");
        ExitCode::from(Exit::of(&e))
    })?;
    let prove_s = t.elapsed().as_secs_f64();
    let path = dir.join(name);
    classcert_prover::write_certificate(&path, &bytes).map_err(|e| {
        eprintln!("classcert: cannot write {}: {e}", path.display());
        ExitCode::from(Exit::Failed)
    })?;
    println!(
        "   wrote {} ({} bytes) in {:.1} s (this includes the prover's own self-check)\n",
        path.display(),
        bytes.len(),
        prove_s
    );
    println!("2. verify: the independent checker re-reads the file and re-checks every claim");
    println!("   (the same as: classcert-verify {})\n", path.display());
    let t = Instant::now();
    let report = classcert_verifier::verify_bytes(&bytes);
    let verify_s = t.elapsed().as_secs_f64();
    print!("{}", report.to_text());
    println!("\n   verified in {verify_s:.1} s");
    Ok(report.is_verified())
}

/// The demo's directory: the one given (it must exist), else
/// `classcert-demo` in the system's temporary directory (created).
fn demo_dir(dir: Option<PathBuf>) -> Result<PathBuf, String> {
    let dir = match dir {
        Some(d) => d,
        None => {
            let d = std::env::temp_dir().join("classcert-demo");
            std::fs::create_dir_all(&d)
                .map_err(|e| format!("cannot create {}: {e}", d.display()))?;
            d
        }
    };
    super::config::writable_dir(&dir)?;
    Ok(dir)
}

pub fn run(dir: Option<PathBuf>, quiet: bool) -> ExitCode {
    let dir = match demo_dir(dir) {
        Ok(d) => d,
        Err(e) => return fail(Exit::Usage, &format!("demo: {e}")),
    };
    let dir = dir.as_path();
    let (Ok(p), Ok(q)) = (DEMO_P.parse::<Integer>(), DEMO_Q.parse::<Integer>()) else {
        return fail(Exit::Internal, "demo: the built-in numbers do not parse");
    };
    let sink = CliSink::install(quiet);
    println!(
        "The demo writes its two certificates to {}\n",
        dir.display()
    );
    let d = Integer::from(-4) * &p;
    println!("Scenario (invented for this demo): the Quillmoor Cryptography Group proposes");
    println!("the toy parameter set QM-40 on the class group of discriminant D = -4p with");
    println!("  p = {p}");
    println!("A reviewer asks for a certificate of Cl(O_D) before the set is considered.\n");
    let first = match act(&d, dir, "qm-40.cert", sink) {
        Ok(v) => v,
        Err(code) => return code,
    };
    println!("\nSecond act: the proposal's appendix quotes the class number and regulator of");
    println!("the real quadratic field of discriminant");
    println!("  q = {q}");
    println!("(its fundamental unit has billions of digits; the certificate keeps it in");
    println!("compact form). The reviewer certifies those numbers as well.\n");
    let second = match act(&q, dir, "qm-appendix.cert", sink) {
        Ok(v) => v,
        Err(code) => return code,
    };
    println!("\nNote: a verified certificate fixes the group structure and the regulator under");
    println!("the listed assumptions; it is not a security assessment of QM-40. That needs a");
    println!("proper review.");
    if first && second {
        Exit::Success.into()
    } else {
        // the prover's self-check passed, so a rejection here is a bug
        fail(Exit::Internal, "demo: a certificate was not verified")
    }
}
