//! `classcert-verify <FILE> [--json] [--require unconditional]`
//!
//! Exit codes: 0 verified; 1 not verified (a check failed, or the input is
//! malformed or over limits); 2 usage or I/O error.

#![forbid(unsafe_code)]

use classcert_verifier::report::Requirement;
use std::io::Write;
use std::process::ExitCode;

const USAGE: &str = concat!(
    "usage: classcert-verify <FILE> [--json] [--require unconditional]\n",
    "Re-checks a classcert certificate and prints a verdict.\n",
    "  --json                    print one JSON object instead of text\n",
    "  --require unconditional   refuse (reason policy) a result that rests on\n",
    "                            any assumption, such as GRH\n",
    "exit codes: 0 verified, 1 not verified, 2 usage or I/O error\n",
);

fn main() -> ExitCode {
    let mut file: Option<String> = None;
    let mut json = false;
    let mut require = Vec::new();
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--json" => json = true,
            "--require" => match args.next().as_deref().and_then(Requirement::parse) {
                Some(r) => require.push(r),
                None => {
                    eprint!("classcert-verify: --require takes: unconditional\n{USAGE}");
                    return ExitCode::from(2);
                }
            },
            "-h" | "--help" => {
                print!("{USAGE}");
                return ExitCode::SUCCESS;
            }
            "-V" | "--version" => {
                println!("classcert-verify {}", env!("CARGO_PKG_VERSION"));
                return ExitCode::SUCCESS;
            }
            s if s.starts_with("--") => {
                eprint!("classcert-verify: unknown option {s}\n{USAGE}");
                return ExitCode::from(2);
            }
            s => {
                if file.replace(s.to_string()).is_some() {
                    eprint!("classcert-verify: give exactly one certificate file\n{USAGE}");
                    return ExitCode::from(2);
                }
            }
        }
    }
    let Some(path) = file else {
        eprint!("{USAGE}");
        return ExitCode::from(2);
    };
    let bytes = match read_bounded(&path) {
        Ok(b) => b,
        Err(e) => {
            eprintln!("classcert-verify: cannot read {path}: {e}");
            return ExitCode::from(2);
        }
    };
    let mut report = classcert_verifier::verify_bytes(&bytes);
    for r in require {
        report = report.require(r);
    }
    let text = if json {
        report.to_json().render()
    } else {
        report.to_text()
    };
    let mut out = std::io::stdout().lock();
    // A closed pipe (e.g. `| head`) is not an error worth reporting.
    let _ = out.write_all(text.as_bytes());
    let _ = out.flush();
    if report.is_verified() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}

/// Reads at most one byte past the format's size limit, so a huge file
/// costs no more than that.
fn read_bounded(path: &str) -> std::io::Result<Vec<u8>> {
    use std::io::Read;
    let f = std::fs::File::open(path)?;
    let mut buf = Vec::new();
    f.take(classcert_format::MAX_FILE_BYTES as u64 + 1)
        .read_to_end(&mut buf)?;
    Ok(buf)
}
