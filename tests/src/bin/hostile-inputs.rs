//! Writes the hostile inputs of `classcert_tests::hostile` into a
//! directory, with the manifest `hostile.txt` (file, bytes, expected
//! outcome, what it is).
//!
//! ```sh
//! cargo run --release -p classcert-tests --bin hostile-inputs -- DIR [--small | --stored]
//! ```
//!
//! `--small` leaves out the big inputs (above about 5 MB, or slow to
//! make); `--stored` writes only the slow-to-make work inputs that
//! `vectors/hostile/` keeps (`hostile::STORED`; run it with DIR =
//! `vectors/hostile` after a change to the format or the golden
//! certificates). The output depends on the seeds and the golden certificates
//! alone: two runs write the same bytes.

use classcert_tests::hostile;
use std::path::PathBuf;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let small_only = args.iter().any(|a| a == "--small");
    let stored_only = args.iter().any(|a| a == "--stored");
    let Some(dir) = args
        .iter()
        .find(|a| !a.starts_with("--"))
        .map(PathBuf::from)
    else {
        eprintln!("usage: hostile-inputs DIR [--small | --stored]");
        return ExitCode::from(2);
    };
    if let Err(e) = std::fs::create_dir_all(&dir) {
        eprintln!("hostile-inputs: cannot create {}: {e}", dir.display());
        return ExitCode::FAILURE;
    }
    let cases: Vec<_> = hostile::cases()
        .into_iter()
        .filter(|c| !(small_only && c.big))
        .filter(|c| !stored_only || hostile::STORED.contains(&c.name.as_str()))
        .collect();
    let mut sizes = Vec::with_capacity(cases.len());
    for c in &cases {
        eprintln!("hostile-inputs: {}", c.name);
        let bytes = (c.build)();
        let path = dir.join(format!("{}.cert", c.name));
        if let Err(e) = std::fs::write(&path, &bytes) {
            eprintln!("hostile-inputs: cannot write {}: {e}", path.display());
            return ExitCode::FAILURE;
        }
        sizes.push(bytes.len());
    }
    let manifest = dir.join("hostile.txt");
    if let Err(e) = std::fs::write(&manifest, hostile::manifest(&cases, &sizes)) {
        eprintln!("hostile-inputs: cannot write {}: {e}", manifest.display());
        return ExitCode::FAILURE;
    }
    eprintln!("hostile-inputs: {} files in {}", cases.len(), dir.display());
    ExitCode::SUCCESS
}
