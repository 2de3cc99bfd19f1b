//! `classcert prove --batch FILE` and `--range A..B`: many orders on all
//! cores, one certificate each in the output directory, a manifest of
//! their ids, and a summary row per order (text, CSV or JSON Lines).
//!
//! Every input is read and checked before any work. A certificate already
//! in the directory for the same `D` (from an interrupted run) is kept,
//! after it verifies, instead of being proved again. Each row comes from
//! the verifier's report on the file written.

use super::config::{self, ProveArgs};
use super::exit::{fail, Exit};
use super::sink;
use classcert_prover::progress::Progress;
use classcert_prover::table::{Format, Row};
use classcert_verifier::manifest::{self, Entry};
use rug::Integer;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

/// Orders one batch may hold.
pub const MAX_BATCH: usize = 1_000_000;
/// `|A|, |B|` of `--range` at most this (squarefree parts are sieved with
/// the primes up to its square root).
pub const MAX_RANGE_ABS: u64 = 100_000_000_000_000;

/// The discriminants of a batch file: one per line, `#` comments and blank
/// lines skipped; each checked as `prove D` checks it.
pub fn read_list(file: &Path) -> Result<Vec<Integer>, String> {
    let text = std::fs::read_to_string(file)
        .map_err(|e| format!("cannot read the batch file {}: {e}", file.display()))?;
    let mut out = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let line = line.split('#').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        let d = config::discriminant(line)
            .map_err(|e| format!("{} line {}: {e}", file.display(), i + 1))?;
        if out.contains(&d) {
            return Err(format!(
                "{} line {}: D = {d} is listed twice",
                file.display(),
                i + 1
            ));
        }
        out.push(d);
        if out.len() > MAX_BATCH {
            return Err(format!("a batch holds at most {MAX_BATCH} discriminants"));
        }
    }
    if out.is_empty() {
        return Err(format!(
            "the batch file {} lists no discriminant",
            file.display()
        ));
    }
    Ok(out)
}

/// Whether `d` (≡ 0, 1 mod 4, not a square) is a fundamental
/// discriminant, given whether its odd part is squarefree (common
/// practice: `d ≡ 1 mod 4` squarefree, or `d = 4m`, `m ≡ 2, 3 mod 4`
/// squarefree).
fn fundamental(d: i64, squarefree: impl Fn(i64) -> bool) -> bool {
    match d.rem_euclid(4) {
        1 => squarefree(d),
        0 => matches!((d / 4).rem_euclid(4), 2 | 3) && squarefree(d / 4),
        _ => false,
    }
}

/// The discriminants in `A..B` (both included): the fundamental ones, or
/// with `every` all of them.
pub fn range(text: &str, every: bool) -> Result<Vec<Integer>, String> {
    let bad = || {
        format!("--range {text}: expected A..B, two integers with A <= B, e.g. -1000000001000..-1000000000000")
    };
    let (a, b) = text.split_once("..").ok_or_else(bad)?;
    let (a, b): (i64, i64) = (
        a.trim().parse().map_err(|_| bad())?,
        b.trim().parse().map_err(|_| bad())?,
    );
    if a > b {
        return Err(bad());
    }
    if a.unsigned_abs().max(b.unsigned_abs()) > MAX_RANGE_ABS {
        return Err(format!("--range {text}: |A| and |B| must be at most {MAX_RANGE_ABS}; list larger discriminants in a --batch file"));
    }
    if (b - a) as u64 >= 4 * MAX_BATCH as u64 {
        return Err(format!(
            "--range {text}: at most {} integers",
            4 * MAX_BATCH
        ));
    }
    // squarefree: no p^2 | n for p up to sqrt(max |n|)
    let limit = (a.unsigned_abs().max(b.unsigned_abs()) as f64).sqrt() as u64 + 1;
    let primes = classcert_verifier::math::primes_up_to(limit);
    let squarefree = |n: i64| {
        let n = n.unsigned_abs();
        primes
            .iter()
            .take_while(|&&p| p * p <= n)
            .all(|&p| !n.is_multiple_of(p * p))
    };
    let mut out = Vec::new();
    for d in a..=b {
        let disc =
            matches!(d.rem_euclid(4), 0 | 1) && !(d >= 0 && Integer::from(d).is_perfect_square());
        if disc && (every || fundamental(d, squarefree)) {
            out.push(Integer::from(d));
        }
        if out.len() > MAX_BATCH {
            return Err(format!(
                "--range {text}: more than {MAX_BATCH} discriminants"
            ));
        }
    }
    if out.is_empty() {
        return Err(format!("--range {text} holds no discriminant to prove"));
    }
    Ok(out)
}

/// The certificate file of `d` in a batch directory: `d-23.cert`,
/// `d5.cert`.
pub fn file_name(d: &Integer) -> String {
    format!("d{d}.cert")
}

/// How one order of the batch ended.
enum Outcome {
    Row(Row),
    Failed(String),
}

/// `prove --batch` / `--range`.
pub fn run(a: &ProveArgs, quiet: bool, json: bool, csv: bool) -> ExitCode {
    let list = match (&a.batch, &a.range) {
        (Some(f), _) => read_list(f),
        (None, Some(r)) => range(r, a.every_discriminant),
        (None, None) => Err("neither --batch nor --range".into()),
    };
    let list = match list {
        Ok(l) => l,
        Err(e) => return fail(Exit::Usage, &e),
    };
    // every option checked for every D before any work
    let mut opts = Vec::with_capacity(list.len());
    for d in &list {
        match a.search.options(&Integer::from(d.abs_ref())) {
            Ok(mut o) => {
                o.unconditional = a.unconditional;
                o.force = a.force;
                opts.push(o);
            }
            Err(e) => return fail(Exit::Usage, &format!("D = {d}: {e}")),
        }
    }
    let dir = &a.output;
    if let Err(e) = config::rounds_dir("-o", dir) {
        return fail(
            Exit::Usage,
            &format!("{e} (with --batch or --range, -o names a directory)"),
        );
    }
    let sink = sink::CliSink::install(quiet);
    let progress = Progress::new(sink.hook());
    progress.phase(&format!("proving {} orders", list.len()));
    // workers send each outcome here; this thread shows progress
    let next = AtomicUsize::new(0);
    let mut results: Vec<Option<Outcome>> = (0..list.len()).map(|_| None).collect();
    let threads = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .min(list.len());
    std::thread::scope(|scope| {
        let (send, receive) = std::sync::mpsc::channel::<(usize, Outcome)>();
        for _ in 0..threads {
            let send = send.clone();
            let (list, opts, next) = (&list, &opts, &next);
            scope.spawn(move || loop {
                let i = next.fetch_add(1, Ordering::Relaxed);
                let (Some(d), Some(o)) = (list.get(i), opts.get(i)) else {
                    return;
                };
                if send.send((i, one(d, o, dir))).is_err() {
                    return;
                }
            });
        }
        drop(send);
        for (n, (i, outcome)) in receive.iter().enumerate() {
            if let (Outcome::Failed(e), Some(d)) = (&outcome, list.get(i)) {
                progress.warn(&format!("D = {d}: {e}"));
            }
            if let Some(slot) = results.get_mut(i) {
                *slot = Some(outcome);
            }
            progress.tick(n as u64 + 1, Some(list.len() as u64));
        }
    });
    sink.finish();
    let mut rows = Vec::new();
    let mut failed = 0;
    for r in results {
        match r {
            Some(Outcome::Row(row)) => rows.push(row),
            Some(Outcome::Failed(_)) | None => failed += 1,
        }
    }
    let entries: Vec<Entry> = rows
        .iter()
        .map(|r| Entry {
            id: r.id.clone(),
            file: r.file.clone().unwrap_or_default(),
        })
        .collect();
    let manifest_path = dir.join("manifest");
    if let Err(e) =
        classcert_prover::write_certificate(&manifest_path, manifest::render(&entries).as_bytes())
    {
        return fail(
            Exit::Failed,
            &format!("cannot write {}: {e}", manifest_path.display()),
        );
    }
    let format = match (json, csv) {
        (true, _) => Format::Json,
        (_, true) => Format::Csv,
        _ => Format::Text,
    };
    let _ = super::table::print(&rows, format);
    eprintln!(
        "classcert: {} of {} orders proved and verified; manifest {}",
        rows.len(),
        list.len(),
        manifest_path.display()
    );
    if failed > 0 {
        return fail(
            Exit::Failed,
            &format!(
                "{failed} orders failed (see the warnings above); the manifest lists the others"
            ),
        );
    }
    Exit::Success.into()
}

/// Proves `d` into `dir` (or keeps the certificate already there when it
/// verifies and is of `d`), and makes its row.
fn one(d: &Integer, opts: &classcert_prover::Options, dir: &Path) -> Outcome {
    let name = file_name(d);
    let path: PathBuf = dir.join(&name);
    let start = Instant::now();
    let kept = std::fs::read(&path)
        .ok()
        .and_then(|b| super::table::row_of(&b).ok().map(|r| (r, b.len())));
    let (mut row, bytes, seconds) = match kept {
        Some((row, n)) if row.order == d.to_string() => (row, n, None),
        _ => {
            // the prover's own check of the bytes gives the row
            let (bytes, report) = match classcert_prover::prove_verified(d, opts) {
                Ok(done) => done,
                Err(e) => return Outcome::Failed(e.to_string()),
            };
            let seconds = start.elapsed().as_secs_f64();
            if let Err(e) = classcert_prover::write_certificate(&path, &bytes) {
                return Outcome::Failed(format!("cannot write {}: {e}", path.display()));
            }
            match classcert_prover::table::Row::from_report(&report) {
                Ok(row) => (row, bytes.len(), Some(seconds)),
                Err(e) => return Outcome::Failed(format!("the certificate does not verify: {e}")),
            }
        }
    };
    row.seconds = seconds;
    row.bytes = Some(bytes);
    row.file = Some(name);
    Outcome::Row(row)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// OEIS A003657 (discriminants of imaginary quadratic fields, negated):
    /// 3, 4, 7, 8, 11, 15, 19, 20, 23, 24, 31, 35, 39, 40, 43, 47, 51, 52,
    /// 55, 56, 59, 67, 68, 71, 79, 83, 84, 87, 88, 91, 95 (from memory).
    #[test]
    fn fundamental_discriminants_below_one_hundred() {
        let got: Vec<i64> = range("-95..-1", false)
            .unwrap()
            .iter()
            .map(|d| -d.to_i64().unwrap())
            .rev()
            .collect();
        let want = [
            3, 4, 7, 8, 11, 15, 19, 20, 23, 24, 31, 35, 39, 40, 43, 47, 51, 52, 55, 56, 59, 67, 68,
            71, 79, 83, 84, 87, 88, 91, 95,
        ];
        assert_eq!(got, want);
        // OEIS A003658 (fundamental discriminants of real quadratic fields):
        // 1 excluded as a square; 5, 8, 12, 13, 17, 21, 24, 28, 29, 33, 37,
        // 40, 41, 44 (from memory)
        let real: Vec<i64> = range("2..44", false)
            .unwrap()
            .iter()
            .map(|d| d.to_i64().unwrap())
            .collect();
        assert_eq!(real, [5, 8, 12, 13, 17, 21, 24, 28, 29, 33, 37, 40, 41, 44]);
        // every discriminant: ≡ 0, 1 mod 4 and not a square
        let all: Vec<i64> = range("-12..-1", true)
            .unwrap()
            .iter()
            .map(|d| d.to_i64().unwrap())
            .collect();
        assert_eq!(all, [-12, -11, -8, -7, -4, -3]);
    }

    #[test]
    fn ranges_and_lists_are_refused_before_work() {
        assert!(range("5..1", false).is_err());
        assert!(range("-3", false).is_err());
        assert!(range("-1000000000000000..-999999999999999", false).is_err());
        assert!(range("-2..-1", false).is_err(), "no discriminant in it");
    }
}
