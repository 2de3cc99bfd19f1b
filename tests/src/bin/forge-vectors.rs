//! Writes the soundness corpus `vectors/mutations/` from the golden
//! certificates: every family of `classcert_tests::corpus`, and
//! `expected.txt` with the reason code and layer of each file.
//!
//! ```sh
//! cargo run --release -p classcert-tests --bin forge-vectors [VECTORS_DIR]
//! ```
//!
//! The output depends on the golden files alone (no randomness, no clock):
//! two runs write the same bytes. Stale `.cert` files in the directory are
//! removed first.

use classcert_tests::corpus;
use std::collections::BTreeMap;
use std::path::PathBuf;
use std::process::ExitCode;

fn main() -> ExitCode {
    let dir: PathBuf = match std::env::args_os().nth(1) {
        Some(d) => PathBuf::from(d),
        None => classcert_tests::support::vectors_dir(),
    };
    let vectors = corpus::generate(&dir);
    let out = dir.join("mutations");
    if let Err(e) = std::fs::create_dir_all(&out) {
        eprintln!("forge-vectors: cannot create {}: {e}", out.display());
        return ExitCode::FAILURE;
    }
    let stale: Vec<PathBuf> = std::fs::read_dir(&out)
        .map(|it| {
            it.filter_map(|e| e.ok())
                .map(|e| e.path())
                .filter(|p| p.extension().is_some_and(|x| x == "cert"))
                .collect()
        })
        .unwrap_or_default();
    for p in stale {
        if let Err(e) = std::fs::remove_file(&p) {
            eprintln!("forge-vectors: cannot remove {}: {e}", p.display());
            return ExitCode::FAILURE;
        }
    }
    for v in &vectors {
        if let Err(e) = std::fs::write(out.join(&v.file), &v.bytes) {
            eprintln!("forge-vectors: cannot write {}: {e}", v.file);
            return ExitCode::FAILURE;
        }
    }
    let text = corpus::expected_txt(&vectors);
    if let Err(e) = std::fs::write(out.join("expected.txt"), text) {
        eprintln!("forge-vectors: cannot write expected.txt: {e}");
        return ExitCode::FAILURE;
    }
    if let Err(e) = std::fs::write(
        out.join("known-deviations.txt"),
        corpus::known_txt(&vectors),
    ) {
        eprintln!("forge-vectors: cannot write known-deviations.txt: {e}");
        return ExitCode::FAILURE;
    }
    let mut by_layer: BTreeMap<&str, usize> = BTreeMap::new();
    for v in &vectors {
        *by_layer.entry(v.layer.word()).or_default() += 1;
    }
    let bytes: usize = vectors.iter().map(|v| v.bytes.len()).sum();
    let layers: Vec<String> = by_layer.iter().map(|(l, n)| format!("{n} {l}")).collect();
    println!(
        "forge-vectors: {} files ({}), {} bytes, in {}",
        vectors.len(),
        layers.join(", "),
        bytes,
        out.display()
    );
    ExitCode::SUCCESS
}
