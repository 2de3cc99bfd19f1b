//! What every driver shares: the discriminant checked, `|D|` factored to
//! support a maximality claim, the generation bound and the Euler cut-off
//! `X` chosen, the factor base built, and the analytic side (the enclosure
//! of `log h`, or `log hR` when `D > 0`) computed exactly as the verifier
//! will.

use crate::checkpoint::CheckpointError;
use crate::factor;
use crate::fb::FactorBase;
use crate::field::roots::dyadic;
use crate::progress::Progress;
use classcert_format::*;
use classcert_verifier::limits::MAX_DISCRIMINANT_BITS;
use classcert_verifier::math::euler;
use classcert_verifier::math::log_h_enclosure;
use classcert_verifier::math::primality::{primality_evidence, Evidence};
use classcert_verifier::math::series;
use classcert_verifier::math::Interval;
use classcert_verifier::math::{kronecker_prime, primes_up_to, small_conductor};
use classcert_verifier::registry;
use rug::Integer;

#[derive(Debug, Clone)]
pub struct Options {
    pub seed: u64,
    /// User-supplied prime factors of `|D|` (with repetition).
    pub factors: Option<Vec<Integer>>,
    /// Force the Euler cut-off (for experiments and tests).
    pub euler_x: Option<u64>,
    /// Pollard-rho budget for factoring `|D|` to support a maximality claim.
    pub factor_budget: u64,
    /// Where progress, counters and warnings go (nowhere by default).
    pub progress: crate::progress::Hook,
    /// Run a full proof even when its estimated cost exceeds a day.
    pub force: bool,
    /// Certify without GRH (maximal orders with D < -4): generation by the
    /// prime ideals up to sqrt(|D|/3) and h from an exact series.
    pub unconditional: bool,
    /// The checkpoint directory of `--resume` ([`crate::checkpoint`]),
    /// checked by the command line before any work: the sieve for `D < 0`
    /// keeps its rounds there and reads back those already stored.
    pub resume: Option<std::path::PathBuf>,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            seed: 1,
            factors: None,
            euler_x: None,
            factor_budget: 3_000_000,
            progress: crate::progress::Hook::none(),
            unconditional: false,
            force: false,
            resume: None,
        }
    }
}

#[derive(Debug)]
pub enum ProveError {
    InvalidInput(String),
    Unsupported(String),
    /// The search gave up; nothing false was produced.
    SearchFailed(String),
    /// The claim given (an order witness's `H`) was shown false.
    Refuted(String),
    /// A full proof would cost more than allowed without `force`.
    TooCostly(String),
    /// The verifier rejected what the prover built: a bug in the prover.
    SelfCheckFailed(String),
    /// The checkpoint directory of `--resume` cannot be used: it holds
    /// another computation's rounds or a damaged file (the user's choice
    /// of directory), or it cannot be read or written.
    Checkpoint(CheckpointError),
}

impl From<CheckpointError> for ProveError {
    fn from(e: CheckpointError) -> ProveError {
        ProveError::Checkpoint(e)
    }
}

impl std::fmt::Display for ProveError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ProveError::InvalidInput(s)
            | ProveError::Unsupported(s)
            | ProveError::SearchFailed(s)
            | ProveError::Refuted(s)
            | ProveError::TooCostly(s) => f.write_str(s),
            ProveError::SelfCheckFailed(s) => write!(
                f,
                "internal error: the verifier rejected the prover's own certificate ({s}); please report this"
            ),
            ProveError::Checkpoint(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for ProveError {}

pub const TOOL: &str = "classcert-prover";

/// Largest |D| for `--unconditional` (sqrt(|D|/3) and the series' terms
/// stay within the verifier's caps).
pub const UNCONDITIONAL_MAX: u64 = 1_000_000_000_000;

/// Checks that `D` is an admissible discriminant: `≡ 0, 1 (mod 4)`, not a
/// square, and within the prover's size.
pub fn validate(d: &Integer) -> Result<(), ProveError> {
    let r = d.mod_u(4);
    if r != 0 && r != 1 {
        return Err(ProveError::InvalidInput(format!(
            "D = {d} is not a discriminant: D must be ≡ 0 or 1 mod 4 (here D ≡ {r} mod 4)"
        )));
    }
    if d.is_perfect_square() {
        return Err(ProveError::InvalidInput(format!(
            "D = {d} is a square, so it is not the discriminant of a quadratic order"
        )));
    }
    if d.significant_bits() > MAX_DISCRIMINANT_BITS {
        return Err(ProveError::Unsupported(format!(
            "|D| has {} bits; the verifier checks |D| up to {MAX_DISCRIMINANT_BITS} bits",
            d.significant_bits()
        )));
    }
    Ok(())
}

/// What a full proof of `D` would cost, estimated before any work.
#[derive(Debug, Clone, Copy)]
pub struct Estimate {
    pub seconds: f64,
    pub mib: f64,
}

/// Without `--force`, a full proof whose estimate exceeds an hour is
/// refused (the estimate is an extrapolation past the measured range).
pub const MAX_UNFORCED_SECONDS: f64 = 3600.0;

/// `exp(a + c · sqrt(ln|D| ln ln|D|))`, the shape `L(1/2, c)` of
/// subexponential relation search, fitted by least squares to this
/// prover's measured times (BENCHMARKS.md: D < 0 at 50–70 digits with the
/// self-initialising sieve on 2 cores, D > 0 at 25–40 digits with the
/// same sieve), time and
/// peak memory separately. An estimate, not a
/// promise: it knows only the measured range and the shape of the curve.
pub fn estimate(d: &Integer) -> Estimate {
    let ln = (d.significant_bits().max(8) as f64) * std::f64::consts::LN_2;
    let s = (ln * ln.ln()).sqrt();
    // (a, c) for seconds, then for MiB
    let ((at, ct), (am, cm)) = if *d < 0 {
        ((-16.323, 0.785), (-2.535, 0.271))
    } else {
        ((-6.818, 0.559), (-2.727, 0.473))
    };
    Estimate {
        seconds: (at + ct * s).exp(),
        mib: (am + cm * s).exp(),
    }
}

/// Refuses, before any work, a full proof whose estimated cost exceeds
/// [`MAX_UNFORCED_SECONDS`] unless `force`; the message gives the estimate.
pub fn check_cost(d: &Integer, force: bool) -> Result<(), ProveError> {
    let e = estimate(d);
    if force || e.seconds <= MAX_UNFORCED_SECONDS {
        return Ok(());
    }
    Err(ProveError::TooCostly(format!(
        "a full proof of this {}-digit D would take about {} and {} of memory on a machine like the benchmark's (an L(1/2, c) fit to this prover's measured times, BENCHMARKS.md; an extrapolation past the measured sizes), more than the hour allowed without --force; add --force to run it anyway, or certify a known class number with --claim-class-number, which costs seconds at any size the verifier accepts",
        Integer::from(d.abs_ref()).to_string().len(),
        duration_text(e.seconds),
        memory_text(e.mib)
    )))
}

fn duration_text(s: f64) -> String {
    let (v, unit) = if s < 120.0 {
        (s, "seconds")
    } else if s < 7200.0 {
        (s / 60.0, "minutes")
    } else if s < 2.0 * 86_400.0 {
        (s / 3600.0, "hours")
    } else if s < 2.0 * 365.0 * 86_400.0 {
        (s / 86_400.0, "days")
    } else {
        (s / (365.0 * 86_400.0), "years")
    };
    format!("{} {unit}", significant(v))
}

fn memory_text(mib: f64) -> String {
    if mib < 2048.0 {
        format!("{} MiB", significant(mib))
    } else {
        format!("{} GiB", significant(mib / 1024.0))
    }
}

/// Two significant digits, in plain notation up to 10^6.
fn significant(v: f64) -> String {
    if v >= 1.0e6 {
        return format!("{v:.1e}");
    }
    let digits = if v >= 10.0 { 0 } else { 1 };
    let rounded = if v >= 100.0 {
        let m = 10f64.powi(v.log10().floor() as i32 - 1);
        (v / m).round() * m
    } else {
        v
    };
    format!("{rounded:.digits$}")
}

/// Whether the factorisation `(p, e)` of `|D|` shows `D` fundamental.
pub fn is_fundamental(d: &Integer, factors: &[(Integer, u32)]) -> bool {
    let mut two = 0;
    for (p, e) in factors {
        if *p == 2 {
            two = *e;
        } else if *e != 1 {
            return false;
        }
    }
    match two {
        0 => d.mod_u(4) == 1,
        2 => matches!(Integer::from(d >> 2u32).mod_u(4), 2 | 3),
        3 => true,
        _ => false,
    }
}

/// A list of primes given on the command line (`flag`), with repetition,
/// as sorted `(p, e)` pairs multiplying to `target` (called `what`).
pub(crate) fn collect_factors(
    list: &[Integer],
    target: &Integer,
    flag: &str,
    what: &str,
) -> Result<Vec<(Integer, u32)>, ProveError> {
    let mut sorted = list.to_vec();
    sorted.sort();
    let mut out: Vec<(Integer, u32)> = Vec::new();
    for p in sorted {
        if primality_evidence(&p) == Evidence::Composite {
            return Err(ProveError::InvalidInput(format!(
                "{flag}: {p} is not prime"
            )));
        }
        match out.last_mut() {
            Some((q, e)) if *q == p => *e += 1,
            _ => out.push((p, 1)),
        }
    }
    let prod: Integer = out
        .iter()
        .map(|(p, e)| Integer::from(rug::ops::Pow::pow(p, *e)))
        .product();
    if prod != *target {
        return Err(ProveError::InvalidInput(format!(
            "{flag} multiply to {prod}, not {what} = {target}"
        )));
    }
    Ok(out)
}

pub(crate) fn maximality(
    d: &Integer,
    opts: &Options,
    progress: &Progress,
) -> Result<Option<Vec<PrimePower>>, ProveError> {
    let abs = Integer::from(d.abs_ref());
    let fac: Vec<(Integer, u32)> = match &opts.factors {
        Some(list) => collect_factors(list, &abs, "--factors", "|D|")?,
        None => {
            progress.say("factoring |D| (to support a maximality claim)");
            match factor::factor(&abs, opts.factor_budget) {
                Some(f) => f,
                None => {
                    progress.warn("|D| not factored within budget: maximality will not be claimed");
                    return Ok(None);
                }
            }
        }
    };
    if !is_fundamental(d, &fac) {
        return Ok(None);
    }
    Ok(Some(
        fac.into_iter()
            .map(|(prime, exponent)| PrimePower {
                evidence: factor::primality_evidence(&prime, opts.factor_budget),
                prime,
                exponent,
            })
            .collect(),
    ))
}

/// Smallest `X` on a fixed ladder whose error term is at most `target`.
pub fn choose_x(abs_d: &Integer, target: f64) -> u64 {
    let ld = Interval::int(abs_d).ln().expect("|D| > 0");
    let mut x = 128u64;
    loop {
        if let Some(e) = euler::error_bound(x, &ld) {
            if e.hi.to_f64() <= target {
                return x;
            }
        }
        x = x * 5 / 4;
    }
}

fn checkpoint_limits(x: u64) -> Vec<u64> {
    let mut v = Vec::new();
    let mut t = 100u64;
    while t < x {
        v.push(t);
        t *= 10;
    }
    v.push(x);
    v
}

/// How many factor-base ideals take part in the dense linear algebra.
pub(crate) fn essential_count(fb: &FactorBase, abs_d: &Integer) -> usize {
    let n = fb.len();
    if n <= 48 {
        return n;
    }
    let l = abs_d.significant_bits() as f64 * std::f64::consts::LN_2;
    // grows like exp(c sqrt(log|D| log log|D|)), kept modest for the dense
    // Hermite form
    let b = (0.45 * (l * l.ln()).sqrt()).exp().max(100.0);
    let k = fb.primes.iter().take_while(|&&p| (p as f64) <= b).count();
    k.clamp(24.min(n), n.min(800))
}

/// `w`, the number of roots of unity in the order of discriminant `d`.
pub(crate) fn roots_of_unity(d: &Integer) -> u32 {
    match d.to_i32() {
        Some(-3) => 6,
        Some(-4) => 4,
        _ => 2,
    }
}

/// The Euler product to `x` (all primes below `x` in `primes`) and the
/// enclosure of `log h` (`log h R` for `D > 0`) it gives, exactly as the
/// verifier computes them.
pub(crate) fn analytic(
    d: &Integer,
    x: u64,
    primes: &[u64],
    conductor: &[(u64, u32)],
    d_small: &Integer,
) -> Result<(euler::EulerResult, Interval), ProveError> {
    let abs_d = Integer::from(d.abs_ref());
    let log_delta = Interval::int(&abs_d).ln().expect("|D| > 0");
    let limits = checkpoint_limits(x);
    let chi = |p: u64| kronecker_prime(d_small, p);
    let res = euler::compute(x, primes, &chi, &limits, &log_delta)
        .ok_or_else(|| ProveError::SearchFailed("Euler product could not be evaluated".into()))?;
    let log_h = log_h_enclosure(d, roots_of_unity(d), &res.log_l, conductor, d_small, x)
        .ok_or_else(|| ProveError::SearchFailed("analytic bound could not be evaluated".into()))?;
    Ok((res, log_h))
}

/// Who made the certificate.
pub(crate) fn producer(opts: &Options) -> Producer {
    Producer {
        tool: TOOL.to_string(),
        version: env!("CARGO_PKG_VERSION").to_string(),
        seed: opts.seed,
    }
}

/// The enclosure `i` as a certificate states it: its end points exactly,
/// each in its one dyadic spelling; `None` for an infinite or NaN end point.
pub fn to_bounds(i: &Interval) -> Option<Bounds> {
    let end = |f: &rug::Float| f.to_integer_exp().map(|(m, e)| dyadic(m, e.into()));
    Some(Bounds {
        lo: end(&i.lo)?,
        hi: end(&i.hi)?,
    })
}

/// Terms of the unconditional series enough for a tail below 0.01 (about
/// 1.8 sqrt|D|).
fn series_terms(abs_d: &Integer) -> u64 {
    (1.8 * abs_d.to_f64().sqrt()).ceil() as u64 + 10
}

/// The certificate's Euler trace for `res`.
pub fn euler_trace(res: &euler::EulerResult, x: u64) -> EulerTrace {
    let to_b = |i: &Interval| to_bounds(i).expect("finite interval");
    EulerTrace {
        theorem: registry::BELABAS_FRIEDMAN.to_string(),
        x,
        checkpoints: res
            .checkpoints
            .iter()
            .map(|c| Checkpoint {
                limit: c.limit,
                a: to_b(&c.a),
                c: to_b(&c.c),
            })
            .collect(),
        log_l: to_b(&res.log_l),
    }
}

/// What both signs of `D` share: maximality, the generation bound, the
/// factor base and the analytic side.
pub(crate) struct Setup {
    pub max_claim: Option<Vec<PrimePower>>,
    pub theorem: &'static str,
    pub conductor: Vec<(u64, u32)>,
    pub fb: FactorBase,
    pub trace: EulerTrace,
    /// Upper end allowed for `log h*` (`log h* R*` when `D > 0`): below
    /// it the analytic check confirms the claim.
    pub ceiling: rug::Float,
    pub progress: Progress,
}

/// `want` is the number of prime ideals the relation search would like in
/// the factor base (its sieving primes); the factor base reaches the
/// generation bound in any case.
pub(crate) fn setup(d: &Integer, opts: &Options, want: usize) -> Result<Setup, ProveError> {
    let progress = Progress::new(opts.progress);
    let abs_d = Integer::from(d.abs_ref());
    let max_claim = maximality(d, opts, &progress)?;
    if opts.unconditional && abs_d > UNCONDITIONAL_MAX {
        return Err(ProveError::Unsupported(format!(
            "--unconditional is for |D| <= {UNCONDITIONAL_MAX}: its generation bound sqrt(|D|/3) and its series grow like sqrt|D|"
        )));
    }
    if opts.unconditional && (*d > -5 || max_claim.is_none()) {
        return Err(ProveError::Unsupported(
            "--unconditional needs a fundamental D < -4 whose factorisation the prover finds (or --factors): it certifies maximal imaginary orders only".into(),
        ));
    }
    let theorem = if opts.unconditional {
        registry::REDUCED_FORMS
    } else if max_claim.is_some() {
        registry::BACH_FIELD
    } else {
        registry::ORDER_GENERATION
    };
    let bound = registry::generation_bound(theorem, &abs_d).expect("registry bound");
    let (mut x, mut trial) = if opts.unconditional {
        (series_terms(&abs_d), bound)
    } else {
        let x = opts.euler_x.unwrap_or_else(|| choose_x(&abs_d, 0.2));
        (x, bound.max(x))
    };
    // The verifier takes factor-base primes from its own list of primes up
    // to its trial-division bound, max(generation bound, X): a factor base
    // extended past both raises X to its largest prime (conductor primes
    // found up to the new bound may push the factor base a little further,
    // hence the loop).
    let (primes, conductor, d_small, fb) = loop {
        let primes = primes_up_to(trial);
        let (conductor, d_small) = small_conductor(d, &primes);
        let cond_primes: Vec<u64> = conductor.iter().map(|(p, _)| *p).collect();
        let fb = FactorBase::with_at_least(d, &primes, bound, &cond_primes, want);
        let last = fb.primes.last().copied().unwrap_or(0);
        if opts.unconditional || last <= trial {
            break (primes, conductor, d_small, fb);
        }
        x = last;
        trial = last;
    };
    progress.phase(&format!(
        "analytic bound (generation bound {bound}, cut-off {x})"
    ));

    // Analytic side first: it tells the search when to stop.
    let (trace, log_h) = if opts.unconditional {
        // h itself, without GRH (`docs/certificates.md`, section 7)
        let h = series::class_number(d, x)
            .ok_or_else(|| ProveError::SearchFailed("the series could not be evaluated".into()))?;
        let log_h = h
            .ln()
            .ok_or_else(|| ProveError::SearchFailed("h <= 0".into()))?;
        let log_l = series::log_l_from_log_h(&log_h, roots_of_unity(d), &abs_d)
            .and_then(|l| to_bounds(&l))
            .ok_or_else(|| ProveError::SearchFailed("log L(1, chi) out of range".into()))?;
        let trace = EulerTrace {
            theorem: registry::ERFC_SERIES.to_string(),
            x,
            checkpoints: vec![],
            log_l,
        };
        (trace, log_h)
    } else {
        let (res, log_h) = analytic(d, x, &primes, &conductor, &d_small)?;
        (euler_trace(&res, x), log_h)
    };
    let ceiling = log_h.add(&Interval::ln2()).lo.clone();
    progress.say(&format!(
        "log {} in [{:.4}, {:.4}] (about {:.4e})",
        if *d > 0 { "hR" } else { "h" },
        log_h.lo.to_f64(),
        log_h.hi.to_f64(),
        log_h.mid_f64().exp()
    ));
    Ok(Setup {
        max_claim,
        theorem,
        conductor,
        fb,
        trace,
        ceiling,
        progress,
    })
}

impl Setup {
    /// The certificate body around a lattice, a claim and (for `D > 0`)
    /// the units.
    pub(crate) fn body(
        self,
        d: &Integer,
        opts: &Options,
        claim: Claim,
        lattice: Lattice,
        units: Option<Units>,
    ) -> Body {
        Body {
            producer: producer(opts),
            order: Order::Quadratic {
                discriminant: d.clone(),
            },
            claim,
            conductor_small: self.conductor,
            maximality: self.max_claim,
            generation_theorem: self.theorem.to_string(),
            factor_base: self
                .fb
                .primes
                .iter()
                .zip(self.fb.bs.iter())
                .map(|(&p, &b)| PrimeIdeal::QuadraticForm { p, b })
                .collect(),
            lattice,
            euler: self.trace,
            units,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dyadic_round_trip_is_exact() {
        // The stated bounds are the enclosure itself, and zero is 0·2^0.
        let x = Interval::ratio(-7, 3).unwrap();
        assert_eq!(Interval::from_bounds(&to_bounds(&x).unwrap()), Some(x));
        let zero = to_bounds(&Interval::zero()).unwrap();
        assert_eq!((zero.lo.mantissa, zero.lo.exponent), (Integer::new(), 0));
    }

    /// A factor base extended past the generation bound and the cut-off
    /// raises the cut-off to its largest prime: the verifier takes
    /// factor-base primes from its list of primes up to max(bound, X), and
    /// rejects others (`factor-base-invalid`), as an 80-digit run showed.
    #[test]
    fn an_extended_factor_base_raises_the_cut_off() {
        // D = -(10^29 + 148), the benchmark discriminant of 30 digits; its
        // generation bound gives 1 461 prime ideals (BENCHMARKS.md)
        let d: Integer = "-100000000000000000000000000148".parse().unwrap();
        let plain = setup(&d, &Options::default(), 0).unwrap();
        let last = |s: &Setup| *s.fb.primes.last().unwrap();
        assert!(
            last(&plain)
                <= plain.trace.x.max(
                    registry::generation_bound(plain.theorem, &Integer::from(d.abs_ref())).unwrap()
                )
        );
        let wide = setup(&d, &Options::default(), 5000).unwrap();
        assert_eq!(wide.fb.len(), 5000);
        assert!(last(&wide) > last(&plain));
        assert!(
            wide.trace.x >= last(&wide),
            "X {} below p {}",
            wide.trace.x,
            last(&wide)
        );
    }
}
