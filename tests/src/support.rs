//! Helpers shared by the integration tests in `tests/tests/`: proving and
//! verifying in one call, a seeded generator for random inputs, factoring
//! of word-sized integers, and access to the `vectors/` folder.
//!
//! Nothing here computes an expected answer: expectations come from
//! [`crate::oracle`], from published tables in `vectors/published/`, or
//! from a theorem named beside the test.

// The textbook spelling `n % m == 0`, as in the oracles (see oracle.rs).
#![allow(unknown_lints, clippy::manual_is_multiple_of)]

use classcert_format::Body;
use classcert_prover::{prove, Options};
use classcert_verifier::report::{Report, Verified};
use rug::Integer;
use std::path::PathBuf;

// ---------------------------------------------------------------- prove / verify

/// Proves `d` with `opts`; panics with the prover's message on failure.
pub fn prove_body_with(d: i64, opts: &Options) -> Body {
    prove(&Integer::from(d), opts).unwrap_or_else(|e| panic!("prove({d}) failed: {e}"))
}

/// Proves `d` with the default options (seed 1).
pub fn prove_body(d: i64) -> Body {
    prove_body_with(d, &Options::default())
}

/// The canonical file bytes of `body` (correct digest).
pub fn encode(body: &Body) -> Vec<u8> {
    classcert_format::encode_file(body)
        .expect("an in-memory body encodes")
        .0
}

/// Proves `d`, encodes the certificate and runs the verifier on the bytes.
pub fn prove_and_verify(d: i64) -> (Body, Report) {
    let body = prove_body(d);
    let report = classcert_verifier::verify_bytes(&encode(&body));
    (body, report)
}

/// The verdict, or a panic naming the reason code and detail.
pub fn expect_verified(report: &Report, what: &str) -> Verified {
    match &report.outcome {
        Ok(v) => v.clone(),
        Err(r) => panic!(
            "{what}: expected a verified certificate, got {}: {}",
            r.reason.code(),
            r.detail
        ),
    }
}

/// The rejection code, or `None` if the bytes verified.
pub fn rejection_code(bytes: &[u8]) -> Option<&'static str> {
    match classcert_verifier::verify_bytes(bytes).outcome {
        Ok(_) => None,
        Err(r) => Some(r.reason.code()),
    }
}

/// Invariant factors of a verdict as machine words.
pub fn invariants_u64(v: &Verified) -> Vec<u64> {
    v.invariants()
        .iter()
        .map(|d| d.to_u64().expect("invariant fits in u64"))
        .collect()
}

/// True if the verdict rests on GRH (every certificate of this format does).
pub fn rests_on_grh(v: &Verified) -> bool {
    v.assumptions().iter().any(|a| a.name() == "GRH")
}

// ---------------------------------------------------------------- random inputs

/// A seeded generator for clearly random test inputs: the prover's own
/// SplitMix64 (`classcert_prover::rng`), which only draws inputs here and
/// never computes an expectation.
#[derive(Debug, Clone)]
pub struct SplitMix(classcert_prover::rng::Rng);

impl SplitMix {
    pub fn new(seed: u64) -> SplitMix {
        SplitMix(classcert_prover::rng::Rng::new(seed))
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0.next_u64()
    }

    /// Uniform in `lo..hi` (`lo < hi`).
    pub fn range(&mut self, lo: u64, hi: u64) -> u64 {
        lo + self.0.below(hi - lo)
    }

    /// Roughly log-uniform in `lo..hi` (`1 <= lo < hi`).
    pub fn log_range(&mut self, lo: u64, hi: u64) -> u64 {
        let (a, b) = ((lo as f64).ln(), (hi as f64).ln());
        let u = (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
        let x = (a + u * (b - a)).exp() as u64;
        x.clamp(lo, hi - 1)
    }
}

// ---------------------------------------------------------------- factoring

fn mul_mod(a: u64, b: u64, m: u64) -> u64 {
    ((a as u128 * b as u128) % m as u128) as u64
}

fn pow_mod(mut a: u64, mut e: u64, m: u64) -> u64 {
    let mut r = 1 % m;
    a %= m;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, a, m);
        }
        a = mul_mod(a, a, m);
        e >>= 1;
    }
    r
}

/// Miller–Rabin with the first twelve prime bases, which is deterministic
/// for all n < 3.3 · 10^24 (common practice), so for every u64.
pub fn is_prime_u64(n: u64) -> bool {
    const BASES: [u64; 12] = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37];
    if n < 2 {
        return false;
    }
    for p in BASES {
        if n % p == 0 {
            return n == p;
        }
    }
    let s = (n - 1).trailing_zeros();
    let d = (n - 1) >> s;
    'bases: for a in BASES {
        let mut x = pow_mod(a, d, n);
        if x == 1 || x == n - 1 {
            continue;
        }
        for _ in 1..s {
            x = mul_mod(x, x, n);
            if x == n - 1 {
                continue 'bases;
            }
        }
        return false;
    }
    true
}

fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// A nontrivial factor of the odd composite `n` by Pollard's rho
/// (Floyd cycle finding, several polynomials x^2 + c).
fn rho(n: u64) -> u64 {
    for c in 1..u64::MAX {
        let f = |x: u64| (mul_mod(x, x, n) + c) % n;
        let (mut x, mut y, mut g) = (2u64, 2u64, 1u64);
        while g == 1 {
            x = f(x);
            y = f(f(y));
            g = gcd(x.abs_diff(y), n);
        }
        if g != n {
            return g;
        }
    }
    unreachable!("rho found no factor of {n}")
}

/// Prime factorisation `(p, e)` of `n >= 1`, primes increasing: trial
/// division by primes below 1000, then Pollard's rho with Miller–Rabin.
pub fn factor_u64(mut n: u64) -> Vec<(u64, u32)> {
    assert!(n >= 1);
    let mut primes: Vec<u64> = Vec::new();
    let mut p = 2u64;
    while p < 1000 && p * p <= n {
        while n % p == 0 {
            primes.push(p);
            n /= p;
        }
        p += if p == 2 { 1 } else { 2 };
    }
    let mut stack = vec![n];
    while let Some(m) = stack.pop() {
        if m == 1 {
            continue;
        }
        if is_prime_u64(m) {
            primes.push(m);
            continue;
        }
        let g = rho(m);
        stack.push(g);
        stack.push(m / g);
    }
    primes.sort_unstable();
    let mut out: Vec<(u64, u32)> = Vec::new();
    for q in primes {
        match out.last_mut() {
            Some((r, e)) if *r == q => *e += 1,
            _ => out.push((q, 1)),
        }
    }
    out
}

// ---------------------------------------------------------------- vectors/

/// The workspace root (the parent of this crate).
pub fn workspace_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("tests/ has a parent")
        .to_path_buf()
}

/// `vectors/` at the workspace root.
pub fn vectors_dir() -> PathBuf {
    workspace_dir().join("vectors")
}

/// A published list from `vectors/published/<name>`: its `#` header lines
/// (which name the source) and its `D h` rows.
#[derive(Debug, Clone)]
pub struct Published {
    pub header: Vec<String>,
    pub rows: Vec<(i64, u64)>,
}

pub fn read_published(name: &str) -> Published {
    let path = vectors_dir().join("published").join(name);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    let mut header = Vec::new();
    let mut rows = Vec::new();
    for (no, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() {
            continue;
        }
        if let Some(h) = line.strip_prefix('#') {
            header.push(h.trim().to_string());
            continue;
        }
        let mut it = line.split_whitespace();
        let parse = |s: Option<&str>| -> Option<i64> { s?.parse().ok() };
        match (parse(it.next()), parse(it.next()), it.next()) {
            (Some(d), Some(h), None) if h > 0 => rows.push((d, h as u64)),
            _ => panic!(
                "{}:{}: expected `D h`, got {line:?}",
                path.display(),
                no + 1
            ),
        }
    }
    assert!(
        header
            .iter()
            .any(|h| h.to_lowercase().starts_with("source:")),
        "{} has no `# source:` header line",
        path.display()
    );
    assert!(!rows.is_empty(), "{} has no rows", path.display());
    Published { header, rows }
}

/// The two programs, for tests of the command line. Cargo exposes
/// `CARGO_BIN_EXE_*` only to tests of the package that owns a binary, so
/// they are looked up in the target directory a test runs from
/// (`target/<profile>/`); a missing one fails the test (a test that passes
/// without checking proves nothing).
pub mod programs {
    use std::path::{Path, PathBuf};
    use std::process::{Command, Output};

    pub fn bin(name: &str) -> PathBuf {
        // .../target/<profile>/deps/<test>-<hash>  ->  .../target/<profile>/<name>
        let exe = std::env::current_exe().expect("the test's own path");
        let dir = exe
            .parent()
            .and_then(Path::parent)
            .expect("target/<profile>");
        let path = dir.join(format!("{name}{}", std::env::consts::EXE_SUFFIX));
        assert!(
            path.is_file(),
            "{} not found; run `cargo build --release --workspace` first",
            path.display()
        );
        path
    }

    /// A fresh scratch directory for one test.
    pub fn scratch(test: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("classcert-{}-{test}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("create scratch dir");
        dir
    }

    /// Runs `name` (classcert or classcert-verify) with `args`.
    pub fn run(name: &str, args: &[&str]) -> Output {
        Command::new(bin(name))
            .args(args)
            .output()
            .unwrap_or_else(|e| panic!("cannot run {name}: {e}"))
    }

    pub fn stdout(o: &Output) -> String {
        String::from_utf8_lossy(&o.stdout).into_owned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factor_small_and_large() {
        assert_eq!(factor_u64(1), vec![]);
        assert_eq!(factor_u64(84), vec![(2, 2), (3, 1), (7, 1)]);
        // Two primes near 10^7 (checked by Miller–Rabin here, and their
        // product's factorisation by multiplication).
        let (p, q) = (9_999_991u64, 9_999_973u64);
        assert!(is_prime_u64(p) && is_prime_u64(q));
        assert_eq!(factor_u64(p * q * 4), vec![(2, 2), (q, 1), (p, 1)]);
        for n in 1..3000u64 {
            let f = factor_u64(n);
            let prod: u64 = f.iter().map(|(p, e)| p.pow(*e)).product();
            assert_eq!(prod, n);
            assert!(f.iter().all(|(p, _)| is_prime_u64(*p)));
        }
    }

    #[test]
    fn miller_rabin_agrees_with_trial_division() {
        for n in 0..20_000u64 {
            let naive = n >= 2 && (2..).take_while(|d| d * d <= n).all(|d| n % d != 0);
            assert_eq!(is_prime_u64(n), naive, "n = {n}");
        }
    }
}
