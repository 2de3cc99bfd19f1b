//! The command line of `classcert-verify`, and only its definition: the
//! program (`main.rs`) reads it, and `classcert completions` and
//! `classcert man` read the same file to describe it.

use clap::{Parser, ValueEnum};
use classcert_verifier::report::Assumption;

pub const AFTER_HELP: &str = "\
FILE may be - to read the certificate from standard input. With several
files or --manifest, one line per file (--json: one object per line).
VERIFIED and REJECTED are coloured on a terminal unless NO_COLOR is set.

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
pub struct Cli {
    /// The certificate files (- for standard input). With more than one,
    /// or with --manifest, one line per file (JSON: one object per line).
    #[arg(required_unless_present = "manifest")]
    pub files: Vec<String>,
    /// Verify every certificate a manifest lists (written by classcert
    /// prove --batch), checking each file's id against it; a signed
    /// manifest is checked against --trusted-key, and vouches for the ids.
    #[arg(long, value_name = "MANIFEST")]
    pub manifest: Option<String>,
    /// Print one JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Refuse, with reason `policy`, a verified result that does not meet
    /// this requirement.
    #[arg(long, value_enum, value_name = "WHAT")]
    pub require: Vec<Require>,
    /// Accept only these assumptions (repeatable): GRH, bpsw-probable-prime,
    /// squarefree-cofactor; any other refuses the result.
    #[arg(long, value_name = "ASSUMPTION", value_parser = parse_assumption)]
    pub allow: Vec<Assumption>,
    /// Refuse the result unless its class number is H.
    #[arg(long, value_name = "H")]
    pub expect_class_number: Option<rug::Integer>,
    /// Refuse the result unless its invariants are d1,d2,... (empty for the
    /// trivial group).
    #[arg(long, value_name = "D1,D2,...", value_delimiter = ',', num_args = 0..)]
    pub expect_invariants: Option<Vec<rug::Integer>>,
    /// Accept only a certificate signed by this key (an Ed25519 public key,
    /// SPKI PEM, as `classcert keygen` writes it); repeatable.
    #[arg(long, value_name = "PUB")]
    pub trusted_key: Vec<String>,
    /// Read the same settings from a policy file (key = value lines: allow,
    /// require, expect-class-number, expect-invariants, trusted-keys).
    #[arg(long, value_name = "FILE")]
    pub policy: Option<String>,
    /// Multiply the work budget by K (1 to 100000): a certificate whose
    /// estimated work exceeds it is refused (reason over-limit) unchecked.
    #[arg(long, value_name = "K", default_value_t = 1,
          value_parser = clap::value_parser!(u32).range(1..=100_000))]
    pub budget_scale: u32,
    /// Print only the verdict line (text) and no progress.
    #[arg(short, long)]
    pub quiet: bool,
    /// Check this answer of `classcert ask` against the certificate: its
    /// verdict follows the certificate's (JSON key `answer`).
    #[arg(long, value_name = "ANSWER", conflicts_with = "manifest")]
    pub answer: Option<String>,
}

#[derive(Clone, Copy, ValueEnum)]
pub enum Require {
    /// No assumption at all: neither GRH nor "BPSW probable prime".
    Unconditional,
    /// The maximal order, certified.
    Maximal,
}

fn parse_assumption(s: &str) -> Result<Assumption, String> {
    Assumption::from_name(s)
        .ok_or_else(|| "expected GRH, bpsw-probable-prime or squarefree-cofactor".to_string())
}
