//! `classcert demo`: a scenario of our own, with invented data.
//!
//! The (fictional) Quillmoor Cryptography Group proposes a toy parameter
//! set "QM-40" for a group-action key exchange, built on the class group
//! of the maximal order of discriminant D = -4p for a 39-digit prime
//! p ≡ 1 (mod 4) of their choosing. Before anyone deploys it, a reviewer
//! wants the class group itself certified: the demo proves it, writes the
//! certificate, and checks it with the independent verifier.

use classcert_prover::{prove_to_bytes, Options};
use rug::Integer;
use std::path::Path;
use std::process::ExitCode;
use std::time::Instant;

/// The invented prime of the scenario (39 digits, ≡ 1 mod 4: the first such prime above 2.5·10^38).
pub const DEMO_P: &str = "250000000000000000000000000000000000061";

pub fn run(dir: &Path) -> ExitCode {
    let p: Integer = match DEMO_P.parse() {
        Ok(p) => p,
        Err(_) => return ExitCode::from(2),
    };
    let d = Integer::from(-4) * &p;
    println!("Scenario (invented for this demo): the Quillmoor Cryptography Group proposes");
    println!("the toy parameter set QM-40 on the class group of discriminant D = -4p with");
    println!("  p = {p}");
    println!("A reviewer asks for a certificate of Cl(O_D) before the set is considered.\n");
    println!("1. prove: classcert computes the class group and writes a certificate");
    let t = Instant::now();
    let opts = Options {
        progress: true,
        ..Options::default()
    };
    let (bytes, _id) = match prove_to_bytes(&d, &opts) {
        Ok(x) => x,
        Err(e) => {
            eprintln!("classcert: demo failed: {e}");
            return ExitCode::from(1);
        }
    };
    let prove_s = t.elapsed().as_secs_f64();
    let path = dir.join("qm-40.cert");
    if let Err(e) = classcert_prover::write_certificate(&path, &bytes) {
        eprintln!("classcert: cannot write {}: {e}", path.display());
        return ExitCode::from(2);
    }
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
    println!("\nNote: a verified certificate fixes the group structure under the listed");
    println!("assumptions; it is not a security assessment of QM-40. That needs a proper review.");
    if report.is_verified() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}
