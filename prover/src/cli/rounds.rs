//! `collect` and `combine`: relation rounds sieved on several machines
//! and merged into one checkpoint directory, from which
//! `prove --resume DIR` continues. Arguments are checked before any work,
//! as for `prove`.

use super::config::{discriminant, rounds_dir, SearchArgs};
use super::exit::{fail, Exit};
use super::parse::{shown, shown_int};
use super::sink;
use classcert_prover::checkpoint::{combine, Combined};
use classcert_prover::drivers::imaginary::SIEVE_MIN_BITS;
use classcert_prover::{Options, ProveError};
use rug::Integer;
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// The end of a round range may not pass this (a billion rounds of 16
/// families: decades of sieving, and far from any overflow).
pub const MAX_ROUND_END: u64 = 1_000_000_000;

/// The raw arguments of `collect`, as clap gives them (`-q` aside).
#[derive(clap::Args)]
pub struct CollectArgs {
    /// The discriminant D < 0, written as for prove, of at least 105 bits
    /// (about 32 digits: where the sieve is used).
    #[arg(allow_hyphen_values = true)]
    pub discriminant: String,
    /// The rounds to sieve, A..B: rounds A, A+1, ..., B-1 (round r holds
    /// the polynomial families 16r to 16r+15), e.g. 0..100.
    #[arg(long, value_name = "A..B")]
    pub rounds: String,
    /// The checkpoint directory the rounds go into (created if missing);
    /// rounds already there are checked and kept.
    #[arg(long, value_name = "DIR")]
    pub into: PathBuf,
    // --seed, --factors and --euler-x fix the rounds' content: the proof
    // must be given the same ones
    #[command(flatten)]
    pub search: SearchArgs,
}

/// The raw arguments of `combine`.
#[derive(clap::Args)]
pub struct CombineArgs {
    /// The checkpoint directory that receives the rounds (created with the
    /// first source's manifest when missing or empty).
    #[arg(long, value_name = "DIR")]
    pub into: PathBuf,
    /// Checkpoint directories whose rounds are copied (only read).
    #[arg(required = true, value_name = "SOURCE")]
    pub sources: Vec<PathBuf>,
}

/// `A..B` with `A < B <= MAX_ROUND_END`, decimal digits only.
pub fn round_range(s: &str) -> Result<Range<u64>, String> {
    let rule = "write A..B with decimal digits only, for rounds A to B - 1 (e.g. 0..100)";
    let Some((a, b)) = s.split_once("..") else {
        return Err(format!("--rounds '{}' is not a range: {rule}", shown(s)));
    };
    let bound = |x: &str| -> Result<u64, String> {
        if x.is_empty() || !x.bytes().all(|c| c.is_ascii_digit()) {
            return Err(format!("--rounds '{}' is not a range: {rule}", shown(s)));
        }
        match x.parse::<u64>() {
            Ok(v) if v <= MAX_ROUND_END => Ok(v),
            _ => Err(format!(
                "--rounds '{}': rounds end at {MAX_ROUND_END} at most",
                shown(s)
            )),
        }
    };
    let (a, b) = (bound(a)?, bound(b)?);
    if a >= b {
        return Err(format!(
            "--rounds {a}..{b} is empty: A..B means rounds A to B - 1, so A must be below B"
        ));
    }
    Ok(a..b)
}

/// What `collect` was asked for, every part of it checked.
struct CollectConfig {
    d: Integer,
    rounds: Range<u64>,
    dir: PathBuf,
    opts: Options,
}

fn collect_config(a: CollectArgs) -> Result<CollectConfig, String> {
    let d = discriminant(&a.discriminant)?;
    if d > 0 {
        return Err(format!(
            "collect is for D < 0 (the sieve of real orders keeps no rounds yet); D = {} here",
            shown_int(&d)
        ));
    }
    if d.significant_bits() < SIEVE_MIN_BITS {
        return Err(format!(
            "collect is for |D| of at least {SIEVE_MIN_BITS} bits (about 32 digits), where prove uses the sieve and its rounds; |D| has {} bits here, and prove needs no rounds for it",
            d.significant_bits()
        ));
    }
    let opts = a.search.options(&Integer::from(d.abs_ref()))?;
    let rounds = round_range(&a.rounds)?;
    // last, so that a refusal above leaves no directory behind
    rounds_dir("--into", &a.into)?;
    Ok(CollectConfig {
        d,
        rounds,
        dir: a.into,
        opts,
    })
}

/// `classcert collect`.
pub fn collect(args: CollectArgs, quiet: bool) -> ExitCode {
    let mut c = match collect_config(args) {
        Ok(c) => c,
        Err(e) => return fail(Exit::Usage, &e),
    };
    let sink = sink::CliSink::install(quiet);
    c.opts.progress = sink.hook();
    let result = classcert_prover::collect(&c.d, &c.opts, &c.dir, c.rounds.clone());
    sink.finish();
    match result {
        Ok((written, kept)) => {
            println!(
                "wrote {} into {} ({kept} of rounds {}..{} were there already)",
                rounds_text(written),
                c.dir.display(),
                c.rounds.start,
                c.rounds.end
            );
            Exit::Success.into()
        }
        Err(e) => fail(Exit::of(&e), &e.to_string()),
    }
}

/// The sources exist and are directories, and the target is a directory
/// or does not exist yet (it is created only once everything checks out).
fn combine_paths(target: &Path, sources: &[PathBuf]) -> Result<(), String> {
    if target.as_os_str().is_empty() {
        return Err("--into: the directory path is empty".into());
    }
    if target.exists() && !target.is_dir() {
        return Err(format!(
            "--into {0}: {0} exists and is not a directory",
            target.display()
        ));
    }
    for s in sources {
        if !s.is_dir() {
            return Err(format!(
                "{} is not a directory: give checkpoint directories (of collect or prove --resume) to combine",
                s.display()
            ));
        }
    }
    Ok(())
}

/// `classcert combine`.
pub fn combine_dirs(args: CombineArgs) -> ExitCode {
    if let Err(e) = combine_paths(&args.into, &args.sources) {
        return fail(Exit::Usage, &e);
    }
    match combine(&args.into, &args.sources) {
        Ok(c) => {
            println!("{}", combined_text(&c, &args.into, args.sources.len()));
            Exit::Success.into()
        }
        Err(e) => {
            let e = ProveError::from(e);
            fail(Exit::of(&e), &e.to_string())
        }
    }
}

/// "1 round", "3 rounds".
fn rounds_text(n: u64) -> String {
    format!("{n} round{}", if n == 1 { "" } else { "s" })
}

fn combined_text(c: &Combined, target: &Path, sources: usize) -> String {
    let gap = if c.rounds > c.prefix {
        format!(
            "; round {} is missing, so the {} after it are not read until it is there",
            c.prefix,
            rounds_text(c.rounds - c.prefix)
        )
    } else {
        String::new()
    };
    format!(
        "combined {sources} {} into {}{}: {} copied, {} already there (the same bytes); it holds rounds 0..{}, which prove --resume reads{gap}",
        if sources == 1 { "directory" } else { "directories" },
        target.display(),
        if c.created { " (new)" } else { "" },
        rounds_text(c.copied),
        c.identical,
        c.prefix
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_ranges_are_parsed_strictly() {
        assert_eq!(round_range("0..100"), Ok(0..100));
        assert_eq!(round_range("7..8"), Ok(7..8));
        for bad in [
            "", "5", "..5", "5..", "1...5", "-1..5", "1..+5", " 1..5", "0x1..5", "1..5 ",
        ] {
            let e = round_range(bad).expect_err(bad);
            assert!(e.contains("not a range"), "{bad}: {e}");
        }
        assert!(round_range("5..5").unwrap_err().contains("empty"));
        assert!(round_range("6..5").unwrap_err().contains("empty"));
        assert!(round_range(&format!("0..{}", MAX_ROUND_END + 1))
            .unwrap_err()
            .contains("at most"));
        assert_eq!(
            round_range(&format!("0..{MAX_ROUND_END}")),
            Ok(0..MAX_ROUND_END)
        );
    }
}
