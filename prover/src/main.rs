//! `classcert`: prove class groups of imaginary quadratic orders and write
//! certificates; show them; run the demo.

use clap::{Parser, Subcommand};
use classcert_prover::{prove_to_bytes, Options};
use rug::Integer;
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

mod demo;

#[derive(Parser)]
#[command(
    name = "classcert",
    version,
    about = "Certified class groups of quadratic orders"
)]
struct Cli {
    #[command(subcommand)]
    cmd: Cmd,
}

#[derive(Subcommand)]
enum Cmd {
    /// Compute Cl(O_D) (and the unit group when D > 0) and write a certificate.
    Prove {
        /// The discriminant D (≡ 0 or 1 mod 4, not a square), e.g. -3299 or 316.
        #[arg(allow_negative_numbers = true)]
        discriminant: String,
        /// Where to write the certificate.
        #[arg(short, long)]
        output: PathBuf,
        /// Seed of the deterministic search (the same seed gives the same file).
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Prime factors of |D|, comma-separated ("2,2,5" or "2^2,5"), to claim maximality without factoring.
        #[arg(long)]
        factors: Option<String>,
        /// Euler-product cut-off X (default: chosen so the error term is at most 0.2).
        #[arg(long)]
        euler_x: Option<u64>,
        /// Certify this class number with an order witness (a class of exact
        /// order H and the analytic bound #Cl < 2H) instead of computing the
        /// class group; D < 0, cyclic groups only.
        #[arg(long, value_name = "H")]
        claim_class_number: Option<String>,
        /// Prime factors of H, comma-separated, instead of factoring H.
        #[arg(long, value_name = "LIST", requires = "claim_class_number")]
        factors_of_h: Option<String>,
        /// The claimed structure d1,d2,... (d1 | d2 | ..., product H) for a
        /// group that is not cyclic; one witness per invariant.
        #[arg(long, value_name = "LIST", requires = "claim_class_number")]
        claim_invariants: Option<String>,
        /// Certify without GRH: the prime ideals up to sqrt(|D|/3) generate,
        /// and h comes from an exact series (maximal orders, D < -4; the cost
        /// grows like sqrt|D|).
        #[arg(long, conflicts_with = "claim_class_number")]
        unconditional: bool,
        /// No progress lines on stderr.
        #[arg(short, long)]
        quiet: bool,
    },
    /// Print what a certificate claims (without checking it).
    Show {
        file: PathBuf,
        #[arg(long)]
        json: bool,
    },
    /// Prove and verify the demo scenario.
    Demo {
        /// Directory for the demo certificate.
        #[arg(long, default_value = ".")]
        dir: PathBuf,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.cmd {
        Cmd::Prove {
            discriminant,
            output,
            seed,
            factors,
            euler_x,
            claim_class_number,
            factors_of_h,
            claim_invariants,
            unconditional,
            quiet,
        } => {
            let Ok(d) = discriminant.trim().parse::<Integer>() else {
                eprintln!("classcert: {discriminant:?} is not an integer");
                return ExitCode::from(2);
            };
            let factors = match factors.map(|s| classcert_prover::factor::parse_factor_list(&s)) {
                None => None,
                Some(Ok(f)) => Some(f),
                Some(Err(e)) => {
                    eprintln!("classcert: --factors: {e}");
                    return ExitCode::from(2);
                }
            };
            let opts = Options {
                seed,
                factors,
                euler_x,
                progress: !quiet,
                unconditional,
                ..Options::default()
            };
            let result = match claim_class_number {
                None => prove_to_bytes(&d, &opts),
                Some(h) => {
                    let Ok(h) = h.trim().parse::<Integer>() else {
                        eprintln!("classcert: --claim-class-number {h:?} is not an integer");
                        return ExitCode::from(2);
                    };
                    let hf = match factors_of_h
                        .map(|s| classcert_prover::factor::parse_factor_list(&s))
                    {
                        None => None,
                        Some(Ok(f)) => Some(f),
                        Some(Err(e)) => {
                            eprintln!("classcert: --factors-of-h: {e}");
                            return ExitCode::from(2);
                        }
                    };
                    let inv = match claim_invariants.map(|s| {
                        s.split(',')
                            .map(|t| t.trim().parse::<Integer>())
                            .collect::<Result<Vec<_>, _>>()
                    }) {
                        None => None,
                        Some(Ok(v)) => Some(v),
                        Some(Err(_)) => {
                            eprintln!("classcert: --claim-invariants takes integers d1,d2,...");
                            return ExitCode::from(2);
                        }
                    };
                    classcert_prover::witness::prove_witness_to_bytes(&d, &h, hf, inv, &opts)
                }
            };
            match result {
                Ok((bytes, id)) => {
                    if let Err(e) = classcert_prover::write_certificate(&output, &bytes) {
                        eprintln!("classcert: cannot write {}: {e}", output.display());
                        return ExitCode::from(2);
                    }
                    println!(
                        "wrote {} ({} bytes, id {})",
                        output.display(),
                        bytes.len(),
                        classcert_format::hex(&id)
                    );
                    ExitCode::SUCCESS
                }
                Err(e) => {
                    eprintln!("classcert: {e}");
                    ExitCode::from(1)
                }
            }
        }
        Cmd::Show { file, json } => {
            let bytes = match std::fs::read(&file) {
                Ok(b) => b,
                Err(e) => {
                    eprintln!("classcert: cannot read {}: {e}", file.display());
                    return ExitCode::from(2);
                }
            };
            match classcert_format::decode_document(&bytes) {
                Ok(doc) => {
                    let out = match doc.document {
                        classcert_format::Document::Relations(body) => {
                            let c = classcert_format::Decoded {
                                body: *body,
                                id: doc.id,
                            };
                            if json {
                                classcert_prover::show::json(&c).render()
                            } else {
                                classcert_prover::show::text(&c)
                            }
                        }
                        classcert_format::Document::OrderWitness(w) => {
                            classcert_prover::show::witness_text(
                                &w,
                                &classcert_format::hex(&doc.id),
                            )
                        }
                    };
                    let _ = std::io::stdout().write_all(out.as_bytes());
                    ExitCode::SUCCESS
                }
                Err(e) => {
                    eprintln!(
                        "classcert: {} is not a readable certificate: {e}",
                        file.display()
                    );
                    ExitCode::from(1)
                }
            }
        }
        Cmd::Demo { dir } => demo::run(&dir),
    }
}
