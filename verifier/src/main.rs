//! `classcert-verify`: re-checks a certificate and prints a verdict.
//!
//! The command line lives here and only here: the library (the trusted
//! checks) never sees clap. Exit codes: 0 verified; 1 not verified (a
//! check failed, or the input is malformed or over limits); 2 usage or
//! I/O error; 3 every check passed but the policy refused the result.

#![forbid(unsafe_code)]

use clap::{Parser, ValueEnum};
use classcert_verifier::report::{json, Assumption, Policy, Reason};
use classcert_verifier::signature::TrustedKey;
use classcert_verifier::STAGES;
use std::io::{IsTerminal, Read, Write};
use std::process::ExitCode;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

const AFTER_HELP: &str = "\
FILE may be - to read the certificate from standard input.

Exit codes:
  0  verified, and the policy (if any) and the --answer (if any) hold
  1  not verified: a check failed, the file is not a certificate, is
     malformed, is over the verifier's limits, or its signature fails;
     or the --answer was rejected
  2  usage or I/O error (bad arguments, unreadable file or key)
  3  every check passed, but the policy refused the result (reason
     policy): an assumption not allowed, not maximal, another group,
     or not signed by a trusted key

The first line of the text output is VERIFIED or REJECTED: <reason>;
with --answer, the second is ANSWER VERIFIED or ANSWER REJECTED.
With --json, one JSON object (schema classcert/1) is printed, also for
usage and I/O errors (kind \"error\").";

#[derive(Parser)]
#[command(
    name = "classcert-verify",
    version,
    about = "Re-checks a classcert certificate on its own and prints a verdict",
    after_help = AFTER_HELP
)]
struct Cli {
    /// The certificate file, or - for standard input.
    file: String,
    /// Print one JSON object instead of text.
    #[arg(long)]
    json: bool,
    /// Refuse, with reason `policy`, a verified result that does not meet
    /// this requirement.
    #[arg(long, value_enum, value_name = "WHAT")]
    require: Vec<Require>,
    /// Accept only these assumptions (repeatable): GRH, bpsw-probable-prime,
    /// squarefree-cofactor; any other refuses the result.
    #[arg(long, value_name = "ASSUMPTION", value_parser = parse_assumption)]
    allow: Vec<Assumption>,
    /// Refuse the result unless its class number is H.
    #[arg(long, value_name = "H")]
    expect_class_number: Option<rug::Integer>,
    /// Refuse the result unless its invariants are d1,d2,... (empty for the
    /// trivial group).
    #[arg(long, value_name = "D1,D2,...", value_delimiter = ',', num_args = 0..)]
    expect_invariants: Option<Vec<rug::Integer>>,
    /// Accept only a certificate signed by this key (an Ed25519 public key,
    /// SPKI PEM, as `classcert keygen` writes it); repeatable.
    #[arg(long, value_name = "PUB")]
    trusted_key: Vec<String>,
    /// Read the same settings from a policy file (key = value lines: allow,
    /// require, expect-class-number, expect-invariants, trusted-keys).
    #[arg(long, value_name = "FILE")]
    policy: Option<String>,
    /// Print only the verdict line (text) and no progress.
    #[arg(short, long)]
    quiet: bool,
    /// Check this answer of `classcert ask` against the certificate: its
    /// verdict follows the certificate's (JSON key `answer`).
    #[arg(long, value_name = "ANSWER")]
    answer: Option<String>,
}

#[derive(Clone, Copy, ValueEnum)]
enum Require {
    /// No assumption at all: neither GRH nor "BPSW probable prime".
    Unconditional,
    /// The maximal order, certified.
    Maximal,
}

fn parse_assumption(s: &str) -> Result<Assumption, String> {
    Assumption::from_name(s)
        .ok_or_else(|| "expected GRH, bpsw-probable-prime or squarefree-cofactor".to_string())
}

/// The policy from the options and the policy file, and the trusted keys.
fn policy(cli: &Cli) -> Result<(Policy, Vec<TrustedKey>), String> {
    let (mut p, mut key_files) = match &cli.policy {
        Some(f) => {
            let mut text = String::new();
            std::fs::File::open(f)
                .and_then(|h| {
                    h.take(classcert_verifier::limits::MAX_POLICY_BYTES)
                        .read_to_string(&mut text)
                })
                .map_err(|e| format!("cannot read the policy file {f}: {e}"))?;
            Policy::from_toml(&text)?
        }
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
        let mut text = String::new();
        std::fs::File::open(f)
            .and_then(|h| h.take(1 << 16).read_to_string(&mut text))
            .map_err(|e| format!("cannot read the key {f}: {e}"))?;
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
    let bytes = match read_bounded(&cli.file) {
        Ok(b) => b,
        Err(e) => {
            let what = if cli.file == "-" {
                "standard input".to_string()
            } else {
                cli.file.clone()
            };
            return usage_error(cli.json, "io-error", &format!("cannot read {what}: {e}"));
        }
    };
    let answer = (cli.answer.as_deref().map(read_bounded).transpose())
        .map_err(|e| format!("cannot read the answer: {e}"));
    let answer = match answer {
        Ok(a) => a,
        Err(detail) => return usage_error(cli.json, "io-error", &detail),
    };
    // The ticker thread starts only once a run has taken QUIET_FOR: a
    // second thread makes every allocation pay for thread safety (about 7%
    // of a short run), which a run that ends quickly need not pay.
    let stage = Arc::new(AtomicUsize::new(0));
    let start = Instant::now();
    let mut ticker: Option<Ticker> = None;
    let report = classcert_verifier::verify_signed_with(&bytes, &trusted, &mut |name| {
        if let Some(i) = STAGES.iter().position(|s| *s == name) {
            stage.store(i + 1, Ordering::Relaxed);
        }
        if !cli.quiet && ticker.is_none() && start.elapsed() >= QUIET_FOR {
            ticker = Some(Ticker::start(Arc::clone(&stage), start));
        }
    });
    if let Some(t) = ticker {
        t.stop();
    }
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
    print_out(&text);
    match &report.outcome {
        Ok(_) if report.answer_holds() => ExitCode::SUCCESS,
        Err(r) if r.reason == Reason::Policy => ExitCode::from(3),
        _ => ExitCode::from(1),
    }
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

/// Reads at most one byte past the size limit, so a huge input costs no
/// more than that (the decoder then refuses it as over the limit).
fn read_bounded(path: &str) -> std::io::Result<Vec<u8>> {
    let limit = classcert_verifier::limits::MAX_FILE_BYTES as u64 + 1;
    let mut buf = Vec::new();
    if path == "-" {
        std::io::stdin().lock().take(limit).read_to_end(&mut buf)?;
    } else {
        std::fs::File::open(path)?
            .take(limit)
            .read_to_end(&mut buf)?;
    }
    Ok(buf)
}

/// Progress on standard error, once a run has taken longer than
/// [`QUIET_FOR`] (checked when a stage starts): one line updated in place
/// on a terminal, otherwise a line at most every [`LOG_EVERY`].
struct Ticker {
    stop: std::sync::mpsc::Sender<()>,
    handle: std::thread::JoinHandle<()>,
}

const QUIET_FOR: Duration = Duration::from_secs(2);
const LOG_EVERY: Duration = Duration::from_secs(10);

impl Ticker {
    fn start(stage: Arc<AtomicUsize>, start: Instant) -> Ticker {
        let (stop, stopped) = std::sync::mpsc::channel::<()>();
        let handle = std::thread::spawn(move || {
            let tty = std::io::stderr().is_terminal();
            let mut last: Option<Instant> = None;
            let mut shown = false;
            // shows a line now, then wakes every 200 ms, and at once when
            // the run is over
            let mut wait = Duration::ZERO;
            while let Err(std::sync::mpsc::RecvTimeoutError::Timeout) = stopped.recv_timeout(wait) {
                wait = Duration::from_millis(200);
                let now = Instant::now();
                let due = tty || last.is_none_or(|t| now - t >= LOG_EVERY);
                if !due {
                    continue;
                }
                let k = stage.load(Ordering::Relaxed);
                let name = k
                    .checked_sub(1)
                    .and_then(|i| STAGES.get(i))
                    .copied()
                    .unwrap_or("reading");
                let line = format!(
                    "classcert-verify: checking {name} (step {k} of {}), {} s",
                    STAGES.len(),
                    (now - start).as_secs()
                );
                let mut err = std::io::stderr().lock();
                let _ = if tty {
                    write!(err, "\r\x1b[2K{line}")
                } else {
                    writeln!(err, "{line}")
                };
                let _ = err.flush();
                last = Some(now);
                shown = true;
            }
            if shown && tty {
                let _ = write!(std::io::stderr().lock(), "\r\x1b[2K");
            }
        });
        Ticker { stop, handle }
    }

    fn stop(self) {
        let _ = self.stop.send(());
        let _ = self.handle.join();
    }
}
