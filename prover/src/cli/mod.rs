//! The command line: arguments are parsed and checked into a configuration
//! before any work (`config`), progress goes to a sink chosen for the
//! terminal (`sink`), and every outcome maps to one exit status
//! ([`Exit`] in `exit`, documented in `--help`).

mod ask;
mod batch;
mod config;
mod demo;
mod exit;
mod keys;
mod parse;
mod rounds;
mod sink;
mod table;

use clap::{Parser, Subcommand};
use classcert_format::json::Json;
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
    about = "Certified class groups, units and regulators of quadratic orders (imaginary or real) and of number fields of degree 3 to 6",
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
        #[command(flatten)]
        args: ProveArgs,
        /// No progress on stderr (warnings are still printed).
        #[arg(short, long)]
        quiet: bool,
    },
    /// Sieve a range of D's relation rounds into a checkpoint directory, and stop (no proof).
    ///
    /// Each round is the same bytes on any machine, so ranges can be
    /// collected on several machines and merged with combine; prove
    /// --resume DIR then reads the rounds 0, 1, 2, ... that DIR holds.
    #[command(after_help = EXIT_HELP)]
    Collect {
        #[command(flatten)]
        args: rounds::CollectArgs,
        /// No progress on stderr (warnings are still printed).
        #[arg(short, long)]
        quiet: bool,
    },
    /// Merge checkpoint directories of the same computation into one.
    ///
    /// Every round file is checked (its SHA-256, key and round number);
    /// rounds the target lacks are copied, identical ones skipped. A source
    /// of another computation, a damaged round or two copies of a round
    /// that differ refuse the whole merge: nothing is copied.
    #[command(after_help = EXIT_HELP)]
    Combine {
        #[command(flatten)]
        args: rounds::CombineArgs,
    },
    /// The exponents of a class over a certificate's generators (a discrete
    /// log), and its order: D < 0; writes an answer file for
    /// classcert-verify CERT --answer FILE.
    #[command(after_help = EXIT_HELP)]
    Ask(ask::AskArgs),
    /// Print what a certificate claims (without checking it).
    #[command(after_help = EXIT_HELP)]
    Show {
        file: PathBuf,
        /// One JSON object (schema "classcert/1", kind "claims"; errors as kind "error").
        #[arg(long)]
        json: bool,
        /// text and json show the claims as stated (not checked); markdown,
        /// latex and csv give the row for a paper, after the verifier has
        /// checked the certificate (as classcert table does).
        #[arg(long, value_enum, value_name = "FORMAT", conflicts_with = "json")]
        format: Option<classcert_prover::table::Format>,
    },
    /// One table of many verified certificates, for a paper or a script.
    ///
    /// Every certificate is verified first (on all cores); one that does
    /// not verify stops the table (exit 6). Columns: D or F, h, the group,
    /// R and the unit's norm when any row has them, the order's
    /// maximality when any is not claimed maximal, the assumptions, the
    /// certificate's SHA-256.
    #[command(after_help = EXIT_HELP)]
    Table {
        /// Certificate files (signed or not; a signature is not checked here).
        files: Vec<PathBuf>,
        /// Also every certificate a manifest lists (prove --batch writes one).
        #[arg(long, value_name = "MANIFEST")]
        manifest: Option<PathBuf>,
        #[arg(long, value_enum, default_value = "text")]
        format: classcert_prover::table::Format,
    },
    /// Write a new Ed25519 key: KEY (PKCS#8 PEM, the secret, mode 0600) and
    /// KEY.pub (SPKI PEM, for classcert-verify --trusted-key).
    #[command(after_help = EXIT_HELP)]
    Keygen {
        /// The secret key's file; neither it nor KEY.pub may exist yet.
        #[arg(short, long, value_name = "KEY")]
        output: PathBuf,
    },
    /// Sign a certificate (COSE_Sign1, Ed25519): the signed file carries the
    /// certificate's bytes unchanged, and its SHA-256 stays its id.
    #[command(after_help = EXIT_HELP)]
    Sign {
        /// The certificate.
        file: PathBuf,
        /// The secret key (PKCS#8 PEM, from keygen).
        #[arg(long, value_name = "KEY")]
        key: PathBuf,
        /// The signed certificate's file.
        #[arg(short, long, value_name = "SIGNED")]
        output: PathBuf,
    },
    /// Print a shell completion script for classcert or classcert-verify.
    ///
    /// e.g. `classcert completions bash > /etc/bash_completion.d/classcert`.
    Completions {
        shell: clap_complete::Shell,
        #[arg(long, value_enum, default_value = "classcert")]
        program: Program,
    },
    /// Write the manual pages classcert.1 and classcert-verify.1 (roff, from
    /// the same definitions as --help) into DIR.
    #[command(after_help = EXIT_HELP)]
    Man {
        /// An existing directory, e.g. /usr/local/share/man/man1.
        #[arg(long, value_name = "DIR")]
        dir: PathBuf,
    },
    /// Prove and verify the demo scenario (a few seconds in release builds).
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

/// The verifier's command line, read from its own definition so that the
/// completions and the manual page describe exactly what it accepts.
#[allow(dead_code)]
#[path = "../../../verifier/src/cli.rs"]
mod verifier_cli;

#[derive(Clone, Copy, clap::ValueEnum)]
enum Program {
    Classcert,
    ClasscertVerify,
}

/// The clap definition of `program`.
fn command(program: Program) -> clap::Command {
    use clap::CommandFactory;
    match program {
        Program::Classcert => Cli::command(),
        Program::ClasscertVerify => verifier_cli::Cli::command(),
    }
}

/// `classcert man --dir DIR`.
fn man(dir: &std::path::Path) -> ExitCode {
    if let Err(e) = config::writable_dir(dir) {
        return fail(Exit::Usage, &e);
    }
    for program in [Program::Classcert, Program::ClasscertVerify] {
        let cmd = command(program);
        let path = dir.join(format!("{}.1", cmd.get_name()));
        let mut page = Vec::new();
        let written = clap_mangen::Man::new(cmd)
            .render(&mut page)
            .and_then(|_| std::fs::write(&path, &page));
        if let Err(e) = written {
            return fail(
                Exit::Failed,
                &format!("cannot write {}: {e}", path.display()),
            );
        }
        println!("wrote {}", path.display());
    }
    Exit::Success.into()
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
        Cmd::Prove { args, quiet } if args.batch.is_some() || args.range.is_some() => {
            batch::run(&args, quiet, args.json, args.csv)
        }
        Cmd::Prove { args, quiet } => {
            if args.csv {
                return fail(Exit::Usage, "--csv is for a batch (--batch or --range)");
            }
            let json = args.json;
            match ProveConfig::new(args) {
                Ok(config) => prove(config, quiet, json),
                Err(e) => fail(Exit::Usage, &e),
            }
        }
        Cmd::Collect { args, quiet } => rounds::collect(args, quiet),
        Cmd::Combine { args } => rounds::combine_dirs(args),
        Cmd::Ask(args) => ask::run(args),
        Cmd::Show { file, json, format } => {
            use classcert_prover::table::Format;
            match format {
                Some(f @ (Format::Markdown | Format::Latex | Format::Csv)) => {
                    table::run(&[file], None, f)
                }
                Some(Format::Json) => show_file(&file, true),
                Some(Format::Text) | None => show_file(&file, json),
            }
        }
        Cmd::Table {
            files,
            manifest,
            format,
        } => table::run(&files, manifest.as_deref(), format),
        Cmd::Demo { dir, quiet } => demo::run(dir, quiet),
        Cmd::Completions { shell, program } => {
            let mut cmd = command(program);
            let name = cmd.get_name().to_string();
            clap_complete::generate(shell, &mut cmd, name, &mut std::io::stdout());
            Exit::Success.into()
        }
        Cmd::Man { dir } => man(&dir),
        Cmd::Keygen { output } => keys::keygen(&output),
        Cmd::Sign { file, key, output } => keys::sign(&file, &key, &output),
    }
}

fn prove(mut config: ProveConfig, quiet: bool, json: bool) -> ExitCode {
    let start = std::time::Instant::now();
    let sink = sink::CliSink::install(quiet);
    config.opts.progress = sink.hook();
    let result = match (config.claim, &config.polynomial) {
        (_, Some(f)) => classcert_prover::field_to_bytes(f, &config.opts),
        (None, None) => classcert_prover::prove_to_bytes(&config.d, &config.opts),
        (Some(c), None) => classcert_prover::witness::prove_witness_to_bytes(
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
            let wrote = format!(
                "wrote {} ({} bytes, id {})",
                config.output.display(),
                bytes.len(),
                classcert_format::hex(&id)
            );
            if !json {
                println!("{wrote}");
                return Exit::Success.into();
            }
            eprintln!("classcert: {wrote}");
            match table::row_of(&bytes) {
                Ok(mut row) => {
                    row.seconds = Some(start.elapsed().as_secs_f64());
                    row.bytes = Some(bytes.len());
                    row.file = Some(config.output.display().to_string());
                    print!("{}", classcert_prover::table::row_json(&row).render());
                    Exit::Success.into()
                }
                Err(e) => fail(
                    Exit::Internal,
                    &format!("the certificate written does not verify: {e}"),
                ),
            }
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
    // a signed certificate: what it carries, and who signed (not checked)
    let (bytes, signer) = match classcert_format::cose::decode(&bytes) {
        Ok(m) if classcert_format::cose::is_signed(&bytes) => (
            m.payload.to_vec(),
            Some(classcert_verifier::signature::hex(&m.kid)),
        ),
        _ => (bytes, None),
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
    let signed = |fp: &str| {
        Json::obj(vec![
            ("fingerprint", Json::str(fp)),
            ("trusted", Json::Bool(false)),
        ])
    };
    let out = if json {
        let mut v = match doc.document {
            Document::Relations(body) => show::json(&classcert_format::Decoded {
                body: *body,
                id: doc.id,
            }),
            Document::OrderWitness(w) => show::witness_json(&w, &id_hex),
            Document::Field(b) => show::field_json(&b, &id_hex),
        };
        // the same vocabulary as the verdict's "signer" (not checked here)
        if let (Json::Obj(entries), Some(fp)) = (&mut v, &signer) {
            entries.push(("signer".into(), signed(fp)));
        }
        v.render()
    } else {
        let text = match doc.document {
            Document::Relations(body) => show::text_styled(
                &classcert_format::Decoded {
                    body: *body,
                    id: doc.id,
                },
                style(),
            ),
            Document::OrderWitness(w) => show::witness_text(&w, &id_hex),
            Document::Field(b) => show::field_text(&b, &id_hex),
        };
        match &signer {
            Some(fp) => format!("signed by key {fp} (show does not check the signature: classcert-verify --trusted-key does)\n{text}"),
            None => text,
        }
    };
    let _ = std::io::stdout().write_all(out.as_bytes());
    Exit::Success.into()
}
