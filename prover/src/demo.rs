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

use classcert_prover::{prove_to_bytes, Options};
use rug::Integer;
use std::path::Path;
use std::process::ExitCode;
use std::time::Instant;

/// The invented prime of the scenario (39 digits, ≡ 1 mod 4: the first such prime above 2.5·10^38).
pub const DEMO_P: &str = "250000000000000000000000000000000000061";

/// The invented real discriminant of the second act: the first prime
/// ≡ 1 (mod 4) above 2.5·10^21 (22 digits), a fundamental discriminant.
pub const DEMO_Q: &str = "2500000000000000000093";

/// Proves `d`, writes `<dir>/<name>`, verifies the bytes and prints the
/// verdict; true if verified.
fn act(d: &Integer, dir: &Path, name: &str) -> Result<bool, ExitCode> {
    println!("1. prove: classcert computes the groups and writes a certificate");
    let t = Instant::now();
    let opts = Options {
        progress: true,
        ..Options::default()
    };
    let (bytes, _id) = prove_to_bytes(d, &opts).map_err(|e| {
        eprintln!("classcert: demo failed: {e}");
        ExitCode::from(1)
    })?;
    let prove_s = t.elapsed().as_secs_f64();
    let path = dir.join(name);
    classcert_prover::write_certificate(&path, &bytes).map_err(|e| {
        eprintln!("classcert: cannot write {}: {e}", path.display());
        ExitCode::from(2)
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

pub fn run(dir: &Path) -> ExitCode {
    let (Ok(p), Ok(q)) = (DEMO_P.parse::<Integer>(), DEMO_Q.parse::<Integer>()) else {
        return ExitCode::from(2);
    };
    let d = Integer::from(-4) * &p;
    println!("Scenario (invented for this demo): the Quillmoor Cryptography Group proposes");
    println!("the toy parameter set QM-40 on the class group of discriminant D = -4p with");
    println!("  p = {p}");
    println!("A reviewer asks for a certificate of Cl(O_D) before the set is considered.\n");
    let first = match act(&d, dir, "qm-40.cert") {
        Ok(v) => v,
        Err(code) => return code,
    };
    println!("\nSecond act: the proposal's appendix quotes the class number and regulator of");
    println!("the real quadratic field of discriminant");
    println!("  q = {q}");
    println!("(its fundamental unit has billions of digits; the certificate keeps it in");
    println!("compact form). The reviewer certifies those numbers as well.\n");
    let second = match act(&q, dir, "qm-appendix.cert") {
        Ok(v) => v,
        Err(code) => return code,
    };
    println!("\nNote: a verified certificate fixes the group structure and the regulator under");
    println!("the listed assumptions; it is not a security assessment of QM-40. That needs a");
    println!("proper review.");
    if first && second {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}
