//! `prove`'s arguments, checked before any work starts: everything that can
//! be refused without computing is refused here, with the rule it breaks.

use super::parse::{integer, integer_list, shown, shown_int};
use classcert_prover::setup::{choose_x, UNCONDITIONAL_MAX};
use classcert_prover::Options;
use classcert_verifier::limits::MAX_EULER_X;
use classcert_verifier::math::euler::{error_bound, MIN_X};
use classcert_verifier::math::primality::{primality_evidence, Evidence};
use classcert_verifier::math::Interval;
use rug::Integer;
use std::path::{Path, PathBuf};

/// The size limit is the verifier's (`setup::validate` enforces the same; a
/// test below checks that the two agree). Above it nothing could be
/// verified; below it a full proof is refused only by its estimated cost
/// (`setup::check_cost`, overridden by `--force`).
pub use classcert_verifier::limits::MAX_DISCRIMINANT_BITS;
/// Decimal digits of `2^4096` (an upper bound on the digits of any `D`
/// accepted), checked before the number is parsed.
const MAX_DIGITS: usize = 1234;
/// Digits accepted for `H` and the entries of lists.
const MAX_LIST_DIGITS: usize = 200;

/// What the user asked for, every part of it checked.
#[derive(Debug)]
pub struct ProveConfig {
    pub d: Integer,
    /// `--polynomial`: the defining polynomial of a number field
    /// (coefficients from the constant term up; `d` is then 0).
    pub polynomial: Option<Vec<Integer>>,
    pub output: PathBuf,
    pub opts: Options,
    pub claim: Option<Claim>,
}

#[derive(Debug)]
pub struct Claim {
    pub h: Integer,
    pub h_factors: Option<Vec<Integer>>,
    pub invariants: Option<Vec<Integer>>,
}

/// The raw arguments of `prove`, as clap gives them (`-q` aside).
#[derive(clap::Args)]
pub struct ProveArgs {
    /// The discriminant D: an optional '-' and decimal digits only, ≡ 0 or
    /// 1 mod 4, not a square; e.g. -3299 or 316.
    #[arg(allow_hyphen_values = true, required_unless_present_any = ["polynomial", "batch", "range"])]
    pub discriminant: Option<String>,
    /// Instead of D: the maximal order of the number field Q[x]/(F), for a
    /// monic irreducible F of degree 3 to 6, written as usual, e.g.
    /// "x^3 - 2*x + 5" (quote it). --factors then lists primes of disc(F)
    /// the prover may not find itself.
    #[arg(long, value_name = "F", conflicts_with_all = ["discriminant", "claim_class_number", "unconditional", "resume"])]
    pub polynomial: Option<String>,
    /// A second discriminant (refused with a clear message).
    #[arg(hide = true, allow_negative_numbers = true)]
    pub more: Vec<String>,
    /// Where to write the certificate (its directory must exist); with
    /// --batch or --range, a directory (created if missing) for one
    /// certificate per order (dD.cert, e.g. d-23.cert) and their manifest.
    #[arg(short, long)]
    pub output: PathBuf,
    /// Prove many orders: one discriminant per line of FILE (# comments),
    /// on all cores. A certificate already in the -o directory for the
    /// same D is kept (after it verifies): an interrupted batch resumes.
    #[arg(long, value_name = "FILE", conflicts_with_all = ["discriminant", "polynomial", "claim_class_number", "resume", "range"])]
    pub batch: Option<PathBuf>,
    /// Prove the fundamental discriminants in A..B (both included, |A|,
    /// |B| <= 10^14), as --batch does; e.g. --range=-1000000001000..-1000000000000.
    #[arg(long, value_name = "A..B", allow_hyphen_values = true, conflicts_with_all = ["discriminant", "polynomial", "claim_class_number", "resume"])]
    pub range: Option<String>,
    /// With --range: every discriminant in it (≡ 0, 1 mod 4, not a
    /// square), not only the fundamental ones.
    #[arg(long, requires = "range")]
    pub every_discriminant: bool,
    /// Print the verified summary as JSON on stdout (schema classcert/1,
    /// kind "row"; one object per line for a batch); messages go to stderr.
    #[arg(long)]
    pub json: bool,
    /// With --batch or --range: the summary as CSV.
    #[arg(long, conflicts_with = "json")]
    pub csv: bool,
    #[command(flatten)]
    pub search: SearchArgs,
    /// Certify this class number with order witnesses (classes of exact
    /// orders d_i, independent, and the analytic bound #Cl < 2H) instead
    /// of computing the class group; D < 0. The group is taken cyclic
    /// unless --claim-invariants gives its structure.
    #[arg(long, value_name = "H")]
    pub claim_class_number: Option<String>,
    /// Prime factors of H, comma-separated, instead of factoring H.
    #[arg(long, value_name = "LIST", requires = "claim_class_number")]
    pub factors_of_h: Option<String>,
    /// The claimed invariants d1,d2,... (d1 | d2 | ..., product H) for a
    /// group that is not cyclic; one witness per invariant.
    #[arg(long, value_name = "LIST", requires = "claim_class_number")]
    pub claim_invariants: Option<String>,
    /// Certify without GRH: the prime ideals up to sqrt(|D|/3) generate,
    /// and h comes from an exact series (maximal orders, -10^12 <= D < -4;
    /// the cost grows like sqrt|D|).
    #[arg(long, conflicts_with = "claim_class_number")]
    pub unconditional: bool,
    /// Run a full proof even when its estimated cost exceeds an hour (the
    /// estimate is printed when the proof is refused).
    #[arg(long, conflicts_with = "claim_class_number")]
    pub force: bool,
    /// Keep relation rounds in DIR and continue from those already there (created if missing); a run interrupted in any way resumes from its last complete round
    #[arg(long, value_name = "DIR", conflicts_with = "claim_class_number")]
    pub resume: Option<PathBuf>,
}

/// The options that fix a search, and so the key of its relation rounds:
/// `prove` and `collect` take them alike.
#[derive(clap::Args)]
pub struct SearchArgs {
    /// Seed of the deterministic search (the same seed gives the same file).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Prime factors of |D|, comma-separated ("2,2,5" or "2^2,5"), to claim maximality without factoring.
    #[arg(long, value_name = "LIST")]
    pub factors: Option<String>,
    /// Euler-product cut-off X, in [69, 50000000] (default: chosen so the error term is at most 0.2).
    #[arg(long, value_name = "X")]
    pub euler_x: Option<u64>,
}

impl SearchArgs {
    /// Checks `--euler-x` and `--factors` for `|D|` (see [`euler_x`]) and
    /// gives the options with the factors parsed.
    pub fn options(&self, abs_d: &Integer) -> Result<Options, String> {
        if let Some(x) = self.euler_x {
            euler_x(x, abs_d)?;
        }
        let factors = self
            .factors
            .as_deref()
            .map(|s| factor_list("--factors", s, abs_d, "|D|"))
            .transpose()?;
        Ok(Options {
            seed: self.seed,
            factors,
            euler_x: self.euler_x,
            ..Options::default()
        })
    }
}

/// Checks that `D` is a discriminant the prover handles; the message names
/// the rule and shows at most a few dozen digits of `D`.
pub fn discriminant(s: &str) -> Result<Integer, String> {
    let d = integer("the discriminant D", s, usize::MAX)
        .map_err(|e| format!("{e}; a negative D is given as it is, e.g. -3299"));
    let digits = s.trim_start_matches('-').len();
    // the size first, so that a huge input costs nothing
    if d.is_ok() && digits > MAX_DIGITS {
        return Err(size_message(
            s.starts_with('-'),
            &format!("{digits} digits"),
        ));
    }
    let d = d?;
    if d.significant_bits() > MAX_DISCRIMINANT_BITS {
        return Err(size_message(
            d < 0,
            &format!("{} bits", d.significant_bits()),
        ));
    }
    let r = d.mod_u(4);
    if r != 0 && r != 1 {
        return Err(format!(
            "D = {} is not a discriminant: D must be ≡ 0 or 1 (mod 4), and here D ≡ {r} (mod 4)",
            shown_int(&d)
        ));
    }
    if d.is_perfect_square() {
        return Err(format!(
            "D = {} is a square (0 included), so it is not the discriminant of a quadratic order",
            shown_int(&d)
        ));
    }
    Ok(d)
}

fn size_message(negative: bool, size: &str) -> String {
    format!(
        "D {} 0 has {size}, more than the verifier checks: |D| up to {MAX_DISCRIMINANT_BITS} bits (about 1233 digits)",
        if negative { "<" } else { ">" }
    )
}

/// The directory a file will be written to exists and takes a new file.
pub fn writable_dir(dir: &Path) -> Result<(), String> {
    match std::fs::metadata(dir) {
        Err(_) => return Err(format!("directory {} does not exist", dir.display())),
        Ok(m) if !m.is_dir() => return Err(format!("{} is not a directory", dir.display())),
        Ok(_) => {}
    }
    let probe = dir.join(format!(".classcert-write-test-{}", std::process::id()));
    match std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(_) => {
            let _ = std::fs::remove_file(&probe);
            Ok(())
        }
        Err(e) => Err(format!("cannot write in {}: {e}", dir.display())),
    }
}

/// The output file can be written: not a directory, in a writable one.
pub fn output_file(path: &Path) -> Result<(), String> {
    if path.as_os_str().is_empty() {
        return Err("the output path is empty".into());
    }
    if path.is_dir() {
        return Err(format!(
            "{} is a directory; give a file name, e.g. {}",
            path.display(),
            path.join("d.cert").display()
        ));
    }
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    writable_dir(dir).map_err(|e| format!("cannot write {}: {e}", path.display()))
}

/// A directory of relation rounds named by option `flag` (`--resume DIR`,
/// or `collect --into DIR`): created, parents included, when missing, and
/// taking new files. Whether it holds this run's rounds is checked when
/// the run opens it (`classcert_prover::checkpoint`).
pub fn rounds_dir(flag: &str, dir: &Path) -> Result<(), String> {
    if dir.as_os_str().is_empty() {
        return Err(format!("{flag}: the directory path is empty"));
    }
    match std::fs::metadata(dir) {
        Ok(m) if !m.is_dir() => {
            return Err(format!(
                "{flag} {0}: {0} exists and is not a directory; give a directory for the relation rounds (it is created if missing)",
                dir.display()
            ))
        }
        Ok(_) => {}
        Err(_) => std::fs::create_dir_all(dir).map_err(|e| {
            format!(
                "{flag} {}: the directory cannot be created: {e}",
                dir.display()
            )
        })?,
    }
    writable_dir(dir).map_err(|e| format!("{flag} {}: {e}", dir.display()))
}

/// `--euler-x X` for `|D|`: within the verifier's range, and large enough
/// that twice the error term stays below log 2 (the verifier's rule).
fn euler_x(x: u64, abs_d: &Integer) -> Result<(), String> {
    if !(MIN_X..=MAX_EULER_X).contains(&x) {
        return Err(format!(
            "--euler-x {x} is out of range: X must lie in [{MIN_X}, {MAX_EULER_X}] (the verifier's limits)"
        ));
    }
    let enough = Interval::int(abs_d)
        .ln()
        .and_then(|ld| error_bound(x, &ld))
        .is_some_and(|e| e.hi.to_f64() * 2.0 < std::f64::consts::LN_2);
    if !enough {
        return Err(format!(
            "--euler-x {x} is too small for this D: the error term of the Euler product must stay below (log 2)/2; X = {} or more will do",
            choose_x(abs_d, 0.3)
        ));
    }
    Ok(())
}

/// The primes of a list, each checked not composite, multiplying to `target`.
fn factor_list(flag: &str, s: &str, target: &Integer, what: &str) -> Result<Vec<Integer>, String> {
    let list = integer_list(flag, s, true, MAX_LIST_DIGITS)?;
    for p in &list {
        if *p < 2 || primality_evidence(p) == Evidence::Composite {
            return Err(format!("{flag}: {} is not prime", shown_int(p)));
        }
    }
    let prod: Integer = list.iter().product();
    if prod != *target {
        return Err(format!(
            "{flag}: the primes multiply to {}, not to {what} = {}",
            shown_int(&prod),
            shown_int(target)
        ));
    }
    Ok(list)
}

impl ProveConfig {
    /// `prove --polynomial F`: `F` read and checked (degree 3 to 6, monic,
    /// squarefree, irreducible) before any work.
    fn field(a: &ProveArgs, text: &str) -> Result<ProveConfig, String> {
        let f = classcert_prover::polynomial::parse(text).map_err(|e| e.render(text))?;
        let disc = classcert_prover::polynomial::check_defining(&f)
            .map_err(|r| format!("--polynomial \"{}\": {r}", shown(text)))?;
        let factors = a
            .search
            .factors
            .as_deref()
            .map(|s| integer_list("--factors", s, true, MAX_LIST_DIGITS))
            .transpose()?;
        for p in factors.iter().flatten() {
            if *p < 2 || primality_evidence(p) == Evidence::Composite {
                return Err(format!("--factors: {} is not prime", shown_int(p)));
            }
            if !disc.is_divisible(p) {
                return Err(format!(
                    "--factors: {} does not divide disc(F) = {}",
                    shown_int(p),
                    shown_int(&disc)
                ));
            }
        }
        if let Some(x) = a.search.euler_x {
            euler_x(x, &Integer::from(disc.abs_ref()))?;
        }
        output_file(&a.output)?;
        Ok(ProveConfig {
            d: Integer::new(),
            polynomial: Some(f),
            output: a.output.clone(),
            opts: Options {
                seed: a.search.seed,
                factors,
                euler_x: a.search.euler_x,
                force: a.force,
                ..Options::default()
            },
            claim: None,
        })
    }

    pub fn new(a: ProveArgs) -> Result<ProveConfig, String> {
        if let Some(text) = &a.polynomial {
            return Self::field(&a, text);
        }
        let first = a.discriminant.as_deref().unwrap_or_default();
        let d = match a.more.as_slice() {
            [] => discriminant(first)?,
            [second, ..] => {
                return Err(format!(
                    "prove takes one discriminant, but {} were given ('{}', '{}'{}); prove them one at a time",
                    a.more.len() + 1,
                    shown(first),
                    shown(second),
                    if a.more.len() > 1 { ", ..." } else { "" }
                ))
            }
        };
        let abs_d = Integer::from(d.abs_ref());
        if a.unconditional {
            if d >= -4 {
                return Err(format!(
                    "--unconditional is for D < -4 (maximal imaginary orders); D = {} here",
                    shown_int(&d)
                ));
            }
            if abs_d > UNCONDITIONAL_MAX {
                return Err(format!(
                    "--unconditional is for |D| <= {UNCONDITIONAL_MAX}: its cost grows like sqrt|D|"
                ));
            }
            if a.search.euler_x.is_some() {
                return Err(
                    "--euler-x does not apply with --unconditional (an exact series replaces the Euler product)"
                        .into(),
                );
            }
        }
        let search = a.search.options(&abs_d)?;
        let claim = match a.claim_class_number.as_deref() {
            None => None,
            Some(s) => {
                if d > 0 {
                    return Err(
                        "--claim-class-number is for D < 0 (for D > 0 the regulator is needed too); prove without it".into(),
                    );
                }
                let h = integer("--claim-class-number", s, MAX_LIST_DIGITS)?;
                if h < 1 {
                    return Err(format!(
                        "--claim-class-number {} must be positive",
                        shown_int(&h)
                    ));
                }
                let h_factors = a
                    .factors_of_h
                    .as_deref()
                    .map(|s| factor_list("--factors-of-h", s, &h, "H"))
                    .transpose()?;
                let invariants = match a.claim_invariants.as_deref() {
                    None => None,
                    Some(s) => {
                        let v = integer_list("--claim-invariants", s, false, MAX_LIST_DIGITS)?;
                        let prod: Integer = v.iter().product();
                        let chain = v.windows(2).all(|w| w[1].is_divisible(&w[0]));
                        if prod != h || !chain || v.iter().any(|x| *x <= 1) {
                            return Err(format!(
                                "--claim-invariants: the invariants d1,d2,... must exceed 1, each divide the next, and multiply to H = {}",
                                shown_int(&h)
                            ));
                        }
                        Some(v)
                    }
                };
                Some(Claim {
                    h,
                    h_factors,
                    invariants,
                })
            }
        };
        output_file(&a.output)?;
        // last, so that a refusal above leaves no directory behind
        if let Some(dir) = &a.resume {
            rounds_dir("--resume", dir)?;
        }
        Ok(ProveConfig {
            d,
            polynomial: None,
            output: a.output,
            opts: Options {
                unconditional: a.unconditional,
                force: a.force,
                resume: a.resume,
                ..search
            },
            claim,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_prover::setup::validate;
    use rug::ops::Pow;

    #[test]
    fn size_limits_agree_with_the_library() {
        // the largest |D| of 4096 bits that is ≡ 0 (mod 4), and one bit more
        for sign in [-1i32, 1] {
            let top = ((Integer::from(1) << MAX_DISCRIMINANT_BITS) - 4u32) * sign;
            assert!(discriminant(&top.to_string()).is_ok());
            assert!(validate(&top).is_ok());
            let over = Integer::from(&top * 2u32);
            assert!(discriminant(&over.to_string()).is_err());
            assert!(validate(&over).is_err());
        }
        assert!(
            Integer::from(1u32) << MAX_DISCRIMINANT_BITS
                < Integer::from(10u32).pow(MAX_DIGITS as u32)
        );
    }

    #[test]
    fn discriminant_rules() {
        assert!(discriminant("-3299").is_ok());
        assert!(discriminant("316").is_ok());
        let e = discriminant("3").unwrap_err();
        assert!(e.contains("≡ 3 (mod 4)"), "{e}");
        assert!(discriminant("16").unwrap_err().contains("square"));
        let e = discriminant(&"1".repeat(2000)).unwrap_err();
        assert!(e.starts_with("D > 0 has 2000 digits"), "{e}");
    }
}
