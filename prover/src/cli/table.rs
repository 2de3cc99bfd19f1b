//! `classcert table` and `classcert show --format markdown|latex|csv`:
//! every certificate is verified (by the verifier's library, on all
//! cores) before it becomes a row.

use super::exit::{fail, Exit};
use classcert_prover::table::{self, Format, Row};
use classcert_verifier::manifest;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicUsize, Ordering};

/// The files named, then those the manifest lists (relative to it).
pub fn files(named: &[PathBuf], manifest_file: Option<&Path>) -> Result<Vec<PathBuf>, String> {
    let mut out = named.to_vec();
    if let Some(m) = manifest_file {
        let mut text = String::new();
        std::fs::File::open(m)
            .and_then(|f| {
                f.take(classcert_verifier::limits::MAX_MANIFEST_BYTES)
                    .read_to_string(&mut text)
            })
            .map_err(|e| format!("cannot read the manifest {}: {e}", m.display()))?;
        let dir = m.parent().unwrap_or(Path::new(""));
        let entries = manifest::parse(&text).map_err(|e| format!("{}: {e}", m.display()))?;
        out.extend(entries.into_iter().map(|e| dir.join(e.file)));
    }
    if out.is_empty() {
        return Err("no certificate: name files or --manifest".into());
    }
    Ok(out)
}

/// Verifies `bytes` (signed or not; a signature is not checked here) and
/// makes its row.
pub fn row_of(bytes: &[u8]) -> Result<Row, String> {
    Row::from_report(&classcert_verifier::verify_signed_with(
        bytes,
        &[],
        &mut |_| {},
    ))
}

/// The rows of `files`, in their order, verified on all cores; the first
/// file that cannot be read or does not verify is the error.
pub fn rows(files: &[PathBuf]) -> Result<Vec<Row>, String> {
    let next = AtomicUsize::new(0);
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let mut done: Vec<(usize, Result<Row, String>)> = std::thread::scope(|scope| {
        let workers: Vec<_> = (0..threads.min(files.len()))
            .map(|_| {
                scope.spawn(|| {
                    let mut out = Vec::new();
                    loop {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        let Some(f) = files.get(i) else { return out };
                        let row = std::fs::read(f)
                            .map_err(|e| format!("cannot read it: {e}"))
                            .and_then(|b| row_of(&b))
                            .map_err(|e| format!("{}: {e}", f.display()));
                        out.push((i, row));
                    }
                })
            })
            .collect();
        workers
            .into_iter()
            .flat_map(|w| w.join().unwrap_or_default())
            .collect()
    });
    if done.len() != files.len() {
        return Err("a verifying thread stopped early".into());
    }
    done.sort_by_key(|(i, _)| *i);
    done.into_iter().map(|(_, r)| r).collect()
}

/// `classcert table`.
pub fn run(named: &[PathBuf], manifest_file: Option<&Path>, format: Format) -> ExitCode {
    let files = match files(named, manifest_file) {
        Ok(f) => f,
        Err(e) => return fail(Exit::Usage, &e),
    };
    match rows(&files) {
        Ok(rows) => print(&rows, format),
        Err(e) => fail(
            Exit::Rejected,
            &format!("not verified, so not tabulated: {e}"),
        ),
    }
}

/// Writes the table on stdout (and, for the human formats, what it does
/// not say on stderr).
pub fn print(rows: &[Row], format: Format) -> ExitCode {
    let _ = std::io::stdout().write_all(table::render(rows, format).as_bytes());
    if matches!(format, Format::Text | Format::Markdown | Format::Latex) {
        eprintln!("classcert: {}", table::CAUTION);
    }
    Exit::Success.into()
}
