//! The command line: arguments are parsed and checked into a configuration
//! before any work (`config`), progress goes to a sink chosen for the
//! terminal (`sink`), and every outcome maps to one exit status
//! ([`Exit`] in `exit`, documented in `--help`).

mod config;
mod demo;
mod exit;
mod parse;
mod sink;

use clap::{Parser, Subcommand};
use classcert_format::Document;
use classcert_prover::show::{self, Style};
use config::{ProveArgs, ProveConfig};
use exit::{fail, Exit, EXIT_HELP};
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "classcert",
    version,
    about = "Certified class groups of quadratic orders, imaginary or real (with the unit and regulator of real ones)",
    after_help = EXIT_HELP
)]
struct Cli {
    #[command(subcommand)]
    cmd: Cmd,
}

#[derive(Subcommand)]
enum Cmd {
    /// Compute Cl(O_D) (and the unit group when D > 0) and write a certificate.
    #[command(after_help = EXIT_HELP)]
    Prove {
        /// The discriminant D: an optional '-' and decimal digits only, ≡ 0 or
        /// 1 mod 4, not a square; e.g. -3299 or 316.
        #[arg(allow_hyphen_values = true)]
        discriminant: String,
        /// A second discriminant (refused with a clear message).
        #[arg(hide = true, allow_negative_numbers = true)]
        more: Vec<String>,
        /// Where to write the certificate (its directory must exist).
        #[arg(short, long)]
        output: PathBuf,
        /// Seed of the deterministic search (the same seed gives the same file).
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Prime factors of |D|, comma-separated ("2,2,5" or "2^2,5"), to claim maximality without factoring.
        #[arg(long, value_name = "LIST")]
        factors: Option<String>,
        /// Euler-product cut-off X, in [69, 50000000] (default: chosen so the error term is at most 0.2).
        #[arg(long, value_name = "X")]
        euler_x: Option<u64>,
        /// Certify this class number with order witnesses (classes of exact
        /// orders d_i, independent, and the analytic bound #Cl < 2H) instead
        /// of computing the class group; D < 0. The group is taken cyclic
        /// unless --claim-invariants gives its structure.
        #[arg(long, value_name = "H")]
        claim_class_number: Option<String>,
        /// Prime factors of H, comma-separated, instead of factoring H.
        #[arg(long, value_name = "LIST", requires = "claim_class_number")]
        factors_of_h: Option<String>,
        /// The claimed invariants d1,d2,... (d1 | d2 | ..., product H) for a
        /// group that is not cyclic; one witness per invariant.
        #[arg(long, value_name = "LIST", requires = "claim_class_number")]
        claim_invariants: Option<String>,
        /// Certify without GRH: the prime ideals up to sqrt(|D|/3) generate,
        /// and h comes from an exact series (maximal orders, -10^12 <= D < -4;
        /// the cost grows like sqrt|D|).
        #[arg(long, conflicts_with = "claim_class_number")]
        unconditional: bool,
        /// Run a full proof even when its estimated cost exceeds an hour (the
        /// estimate is printed when the proof is refused).
        #[arg(long, conflicts_with = "claim_class_number")]
        force: bool,
        /// No progress on stderr (warnings are still printed).
        #[arg(short, long)]
        quiet: bool,
    },
    /// Print what a certificate claims (without checking it).
    #[command(after_help = EXIT_HELP)]
    Show {
        file: PathBuf,
        /// One JSON object (schema "classcert/1", kind "claims"; errors as kind "error").
        #[arg(long)]
        json: bool,
    },
    /// Prove and verify the demo scenario (about a minute in release builds).
    #[command(after_help = EXIT_HELP)]
    Demo {
        /// An existing directory for the demo's two certificates (default:
        /// a directory classcert-demo in the system's temporary directory).
        #[arg(long)]
        dir: Option<PathBuf>,
        /// No progress on stderr (warnings are still printed).
        #[arg(short, long)]
        quiet: bool,
    },
}

/// Whether the locale promises UTF-8 output (else text output is ASCII).
pub fn style() -> Style {
    let utf8 = ["LC_ALL", "LC_CTYPE", "LANG"]
        .iter()
        .find_map(|k| std::env::var(k).ok().filter(|v| !v.is_empty()))
        .map(|v| {
            let v = v.to_ascii_lowercase();
            v.contains("utf-8") || v.contains("utf8")
        })
        .unwrap_or(false);
    if utf8 {
        Style::Unicode
    } else {
        Style::Ascii
    }
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.cmd {
        Cmd::Prove {
            discriminant,
            more,
            output,
            seed,
            factors,
            euler_x,
            claim_class_number,
            factors_of_h,
            claim_invariants,
            unconditional,
            force,
            quiet,
        } => {
            let args = ProveArgs {
                discriminant: std::iter::once(discriminant).chain(more).collect(),
                output,
                seed,
                factors,
                euler_x,
                claim_class_number,
                factors_of_h,
                claim_invariants,
                unconditional,
                force,
            };
            match ProveConfig::new(args) {
                Ok(config) => prove(config, quiet),
                Err(e) => fail(Exit::Usage, &e),
            }
        }
        Cmd::Show { file, json } => show_file(&file, json),
        Cmd::Demo { dir, quiet } => demo::run(dir, quiet),
    }
}

fn prove(mut config: ProveConfig, quiet: bool) -> ExitCode {
    let sink = sink::CliSink::install(quiet);
    config.opts.progress = sink.hook();
    let result = match config.claim {
        None => classcert_prover::prove_to_bytes(&config.d, &config.opts),
        Some(c) => classcert_prover::witness::prove_witness_to_bytes(
            &config.d,
            &c.h,
            c.h_factors,
            c.invariants,
            &config.opts,
        ),
    };
    sink.finish();
    match result {
        Ok((bytes, id)) => {
            if let Err(e) = classcert_prover::write_certificate(&config.output, &bytes) {
                return fail(
                    Exit::Failed,
                    &format!("cannot write {}: {e}", config.output.display()),
                );
            }
            println!(
                "wrote {} ({} bytes, id {})",
                config.output.display(),
                bytes.len(),
                classcert_format::hex(&id)
            );
            Exit::Success.into()
        }
        Err(e) => fail(Exit::of(&e), &e.to_string()),
    }
}

fn show_file(file: &std::path::Path, json: bool) -> ExitCode {
    let error = |reason: &str, detail: String| -> ExitCode {
        if json {
            print!("{}", show::error_json(reason, &detail).render());
        } else {
            eprintln!("classcert: {detail}");
        }
        Exit::Usage.into()
    };
    let bytes = match std::fs::read(file) {
        Ok(b) => b,
        Err(e) => return error("io", format!("cannot read {}: {e}", file.display())),
    };
    let doc = match classcert_format::decode_document(&bytes) {
        Ok(doc) => doc,
        Err(e) => {
            return error(
                "not-a-certificate",
                format!(
                    "{} is not a readable classcert certificate ({e})",
                    file.display()
                ),
            )
        }
    };
    let id_hex = classcert_format::hex(&doc.id);
    let out = match (doc.document, json) {
        (Document::Relations(body), json) => {
            let c = classcert_format::Decoded {
                body: *body,
                id: doc.id,
            };
            if json {
                show::json(&c).render()
            } else {
                show::text_styled(&c, style())
            }
        }
        (Document::OrderWitness(w), true) => show::witness_json(&w, &id_hex).render(),
        (Document::OrderWitness(w), false) => show::witness_text(&w, &id_hex),
    };
    let _ = std::io::stdout().write_all(out.as_bytes());
    Exit::Success.into()
}
