//! `classcert-verify`: re-checks a certificate and prints a verdict.
//!
//! The command line lives here and only here: the library (the trusted
//! checks) never sees clap. Exit codes: 0 verified; 1 not verified (a
//! check failed, or the input is malformed or over limits); 2 usage or
//! I/O error; 3 every check passed but the policy refused the result.

#![forbid(unsafe_code)]

use clap::Parser;
use classcert_format::json::Json;
use classcert_verifier::report::reason::Rejection;
use classcert_verifier::report::{json, Policy, Reason, Report};
use classcert_verifier::signature::Signer;
use classcert_verifier::signature::TrustedKey;
use classcert_verifier::STAGES;
use classcert_verifier::{limits, manifest, signature};
use std::io::{IsTerminal, Read, Write};
use std::process::ExitCode;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

mod cli;
use cli::{Cli, Require};

/// The policy from the options and the policy file, and the trusted keys.
fn policy(cli: &Cli) -> Result<(Policy, Vec<TrustedKey>), String> {
    let (mut p, mut key_files) = match &cli.policy {
        Some(f) => Policy::from_toml(&read_text(f, limits::MAX_POLICY_BYTES, "the policy file")?)?,
        None => (Policy::default(), Vec::new()),
    };
    if !cli.allow.is_empty() {
        p.allow = Some(cli.allow.clone());
    }
    for r in &cli.require {
        match r {
            Require::Unconditional => p.allow = Some(Vec::new()),
            Require::Maximal => p.maximal = true,
        }
    }
    p.class_number = cli.expect_class_number.clone().or(p.class_number);
    p.invariants = cli.expect_invariants.clone().or(p.invariants);
    key_files.extend(cli.trusted_key.iter().cloned());
    let mut keys = Vec::new();
    for f in &key_files {
        let text = read_text(f, 1 << 16, "the key")?;
        keys.push(TrustedKey::from_pem(&text).map_err(|e| format!("{f}: {e}"))?);
    }
    p.signed = !keys.is_empty();
    Ok((p, keys))
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().collect();
    // `classcert-verify help` is help, unless a file of that name exists.
    if args.len() == 2
        && args.get(1).map(String::as_str) == Some("help")
        && !std::path::Path::new("help").exists()
    {
        let mut cmd = <Cli as clap::CommandFactory>::command();
        let _ = cmd.print_help();
        return ExitCode::SUCCESS;
    }
    let cli = match Cli::try_parse_from(&args) {
        Ok(c) => c,
        Err(e) => {
            if e.use_stderr() && args.iter().any(|a| a == "--json") {
                return usage_error(true, "usage", &e.kind().to_string());
            }
            let _ = e.print();
            return ExitCode::from(if e.use_stderr() { 2 } else { 0 });
        }
    };
    let (policy, trusted) = match policy(&cli) {
        Ok(p) => p,
        Err(detail) => return usage_error(cli.json, "usage", &detail),
    };
    if cli.files.len() != 1 || cli.manifest.is_some() {
        if cli.answer.is_some() {
            return usage_error(cli.json, "usage", "--answer goes with one certificate");
        }
        return match jobs(&cli, &trusted) {
            Ok((jobs, signer)) => several(&cli, &jobs, signer.as_ref(), &trusted, &policy),
            Err(detail) => usage_error(cli.json, "io-error", &detail),
        };
    }
    let file = cli.files.first().map_or("-", String::as_str);
    let bytes = match read_bounded(file, limits::MAX_FILE_BYTES as u64) {
        Ok(b) => b,
        Err(e) => {
            let what = if file == "-" { "standard input" } else { file };
            return usage_error(cli.json, "io-error", &format!("cannot read {what}: {e}"));
        }
    };
    let read_answer = |f| read_bounded(f, limits::MAX_FILE_BYTES as u64);
    let answer = (cli.answer.as_deref().map(read_answer).transpose())
        .map_err(|e| format!("cannot read the answer: {e}"));
    let answer = match answer {
        Ok(a) => a,
        Err(detail) => return usage_error(cli.json, "io-error", &detail),
    };
    let mut progress = Progress::new(cli.quiet);
    let mut stage = |name: &str| progress.stage(name);
    let report =
        classcert_verifier::verify_with_budget(&bytes, &trusted, cli.budget_scale, &mut stage);
    progress.done();
    let report = report.apply(&policy).check_answer(answer.as_deref());
    let text = if cli.json {
        report.to_json().render()
    } else if cli.quiet {
        let mut t = report.to_text();
        let n = usize::from(answer.is_some());
        t.truncate(t.match_indices('\n').nth(n).map_or(t.len(), |(i, _)| i + 1));
        t
    } else {
        report.to_text()
    };
    print_out(&paint(text));
    exit_code(&[report])
}

/// The verdict word in colour (green, red) when standard output is a
/// terminal and `NO_COLOR` is unset or empty (no-color.org).
fn paint(text: String) -> String {
    let plain = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
    if plain || !std::io::stdout().is_terminal() {
        return text;
    }
    for (word, colour) in [("VERIFIED", 32), ("REJECTED", 31)] {
        if let Some(rest) = text.strip_prefix(word) {
            return format!("\x1b[1;{colour}m{word}\x1b[0m{rest}");
        }
    }
    text
}

/// 0 when every report verified (with its answer, if any); else 1 when a
/// check failed in any; else 3 (only the policy refused).
fn exit_code(reports: &[Report]) -> ExitCode {
    let reasons = reports.iter().filter_map(|r| r.outcome.as_ref().err());
    match reasons.map(|e| e.reason == Reason::Policy).min() {
        None if reports.iter().all(|r| r.answer_holds()) => ExitCode::SUCCESS,
        None => ExitCode::from(1),
        Some(true) => ExitCode::from(3),
        Some(false) => ExitCode::from(1),
    }
}

/// One file to verify: its name, and the id a manifest lists for it.
type Job = (String, Option<String>);

/// What `several` prints after the lines.
const SEVERAL_CAUTION: &str = "Each line is the verdict on one file; verify a file on its own for what it rests on and what it does not prove. A class group certificate is not a security proof of any cryptosystem.";

/// The files named on the command line, then those of the manifest, and
/// the manifest's signer when it is signed (its signature checked first).
fn jobs(cli: &Cli, trusted: &[TrustedKey]) -> Result<(Vec<Job>, Option<Signer>), String> {
    let mut out: Vec<Job> = cli.files.iter().map(|f| (f.clone(), None)).collect();
    let Some(m) = &cli.manifest else {
        return Ok((out, None));
    };
    let bytes = read_bounded(m, limits::MAX_MANIFEST_BYTES)
        .map_err(|e| format!("cannot read the manifest {m}: {e}"))?;
    if bytes.len() as u64 > limits::MAX_MANIFEST_BYTES {
        return Err(format!(
            "the manifest {m} is over {} bytes",
            limits::MAX_MANIFEST_BYTES
        ));
    }
    let (text, signer) = match classcert_format::cose::is_signed(&bytes) {
        true => signature::check(&bytes, trusted)
            .map(|(payload, signer)| (payload.to_vec(), Some(signer)))
            .map_err(|r| format!("the manifest {m}: {}: {}", r.reason.code(), r.detail))?,
        false => (bytes, None),
    };
    let text = String::from_utf8(text).map_err(|_| format!("the manifest {m} is not UTF-8"))?;
    let dir = std::path::Path::new(m)
        .parent()
        .unwrap_or(std::path::Path::new(""));
    for e in manifest::parse(&text).map_err(|e| format!("{m}: {e}"))? {
        out.push((dir.join(&e.file).to_string_lossy().into_owned(), Some(e.id)));
    }
    Ok((out, signer))
}

/// Verifies several files on all cores and prints one line (or JSON
/// object) per file in their order, then a count.
fn several(
    cli: &Cli,
    jobs: &[Job],
    vouched: Option<&Signer>,
    trusted: &[TrustedKey],
    policy: &Policy,
) -> ExitCode {
    let next = AtomicUsize::new(0);
    let threads = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .min(jobs.len().max(1));
    let done: Option<Vec<Vec<(usize, Report)>>> = std::thread::scope(|scope| {
        let workers: Vec<_> = (0..threads)
            .map(|_| {
                scope.spawn(|| {
                    let mut out = Vec::new();
                    loop {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        let Some((file, id)) = jobs.get(i) else {
                            return out;
                        };
                        out.push((
                            i,
                            one(file, id.as_deref(), vouched, (trusted, cli.budget_scale)),
                        ));
                    }
                })
            })
            .collect();
        workers.into_iter().map(|w| w.join().ok()).collect()
    });
    let Some(done) = done else {
        return usage_error(cli.json, "internal", "a verifying thread stopped early");
    };
    let mut done: Vec<(usize, Report)> = done.into_iter().flatten().collect();
    done.sort_by_key(|(i, _)| *i);
    let reports: Vec<Report> = done.into_iter().map(|(_, r)| r.apply(policy)).collect();
    let mut out = String::new();
    for ((file, _), r) in jobs.iter().zip(&reports) {
        match (cli.json, &r.outcome) {
            (true, _) => {
                let mut j = r.to_json();
                if let Json::Obj(e) = &mut j {
                    e.insert(2, ("file".into(), Json::str(file.clone())));
                }
                out.push_str(&j.line());
            }
            (false, Ok(_)) => out.push_str(&paint(format!("VERIFIED  {file}\n"))),
            (false, Err(e)) => out.push_str(&paint(format!(
                "REJECTED: {}  {file}  ({})\n",
                e.reason.code(),
                e.detail
            ))),
        }
    }
    if !cli.json {
        let ok = reports.iter().filter(|r| r.is_verified()).count();
        out.push_str(&format!(
            "{ok} of {} verified. {SEVERAL_CAUTION}\n",
            reports.len()
        ));
    }
    print_out(&out);
    exit_code(&reports)
}

/// Verifies one file; a manifest's id must match the certificate's, and
/// an unsigned certificate it lists is vouched for by the manifest's
/// signer.
fn one(
    file: &str,
    id: Option<&str>,
    vouched: Option<&Signer>,
    key: (&[TrustedKey], u32),
) -> Report {
    let bytes = match read_bounded(file, limits::MAX_FILE_BYTES as u64) {
        Ok(b) => b,
        Err(e) => {
            return Report::rejected(Reason::NotACertificate, format!("cannot read {file}: {e}"))
        }
    };
    let mut report = classcert_verifier::verify_with_budget(&bytes, key.0, key.1, &mut |_| {});
    let Some(id) = id else { return report };
    if report.summary.certificate_sha256.as_deref() != Some(id) {
        let detail = format!("the manifest lists the id {id}, and {file} has another");
        report.outcome = Err(Rejection {
            reason: Reason::ManifestMismatch,
            detail,
        });
    } else if report.summary.signer.is_none() {
        report.summary.signer = vouched.cloned();
    }
    report
}

/// Says what stopped the run before any check (exit code 2).
fn usage_error(as_json: bool, code: &str, detail: &str) -> ExitCode {
    match as_json {
        true => print_out(&json::error(code, detail).render()),
        false => eprintln!("classcert-verify: {detail}"),
    }
    ExitCode::from(2)
}

/// Writes to standard output; a closed pipe (`| head`) is not an error.
fn print_out(text: &str) {
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes());
    let _ = out.flush();
}

/// Reads at most one byte past `limit`, so a huge input costs no more
/// than that (a certificate's decoder then refuses it as over the limit).
fn read_bounded(path: &str, limit: u64) -> std::io::Result<Vec<u8>> {
    let mut buf = Vec::new();
    match path {
        "-" => std::io::stdin()
            .lock()
            .take(limit + 1)
            .read_to_end(&mut buf)?,
        _ => std::fs::File::open(path)?
            .take(limit + 1)
            .read_to_end(&mut buf)?,
    };
    Ok(buf)
}

/// A text file of at most `limit` bytes (`what` names it in the error).
fn read_text(path: &str, limit: u64, what: &str) -> Result<String, String> {
    let bytes = read_bounded(path, limit).map_err(|e| format!("cannot read {what} {path}: {e}"))?;
    match bytes.len() as u64 > limit {
        true => Err(format!("{what} {path} is over {limit} bytes")),
        false => String::from_utf8(bytes).map_err(|_| format!("{what} {path} is not UTF-8")),
    }
}

/// Progress on standard error once a run has taken [`QUIET_FOR`], shown
/// when the checks name a stage (a long stage repeats its name now and
/// then): one line updated in place on a terminal, at most every 200 ms,
/// otherwise a line at most every [`LOG_EVERY`]. No thread of its own: a
/// second thread would make every allocation pay for thread safety.
struct Progress {
    start: Instant,
    last: Option<Instant>,
    tty: bool,
    quiet: bool,
}

const QUIET_FOR: Duration = Duration::from_secs(2);
const LOG_EVERY: Duration = Duration::from_secs(10);

impl Progress {
    fn new(quiet: bool) -> Progress {
        let tty = std::io::stderr().is_terminal();
        Progress {
            start: Instant::now(),
            last: None,
            tty,
            quiet,
        }
    }

    fn stage(&mut self, name: &str) {
        let now = Instant::now();
        let gap = if self.tty {
            Duration::from_millis(200)
        } else {
            LOG_EVERY
        };
        let early = now - self.start < QUIET_FOR || self.last.is_some_and(|t| now - t < gap);
        if self.quiet || early {
            return;
        }
        self.last = Some(now);
        let k = STAGES.iter().position(|s| *s == name).map_or(0, |i| i + 1);
        let secs = (now - self.start).as_secs();
        let line = format!(
            "classcert-verify: checking {name} (step {k} of {}), {secs} s",
            STAGES.len()
        );
        let mut err = std::io::stderr().lock();
        let _ = match self.tty {
            true => write!(err, "\r\x1b[2K{line}"),
            false => writeln!(err, "{line}"),
        };
        let _ = err.flush();
    }

    /// Clears the line on a terminal.
    fn done(&self) {
        if self.tty && self.last.is_some() {
            let _ = write!(std::io::stderr().lock(), "\r\x1b[2K");
        }
    }
}
