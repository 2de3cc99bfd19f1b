//! The analytic bound for a number field of degree `n` (`general-fields.md`,
//! "Analytic check"; registry entries `belabas-friedman-2015-thm1` and
//! `class-number-formula-number-fields`).
//!
//! The Euler product of [`super::euler`] with `a(p, m) = Σ_{P | p, f_P | m}
//! f_P - 1`: the splitting of `p` is read off the certified factor base
//! where it lists `p`, and otherwise (`p ∤ disc(F)`, so `p` is unramified
//! and prime to the index) off the degrees of the irreducible factors of
//! `F mod p` (Dedekind–Kummer). Then
//! `log h R = log κ + log w + log|Δ|/2 - r1 log 2 - r2 log 2π`.

use super::euler::{compute_general, trace_agrees, trace_prelude, EulerResult};
use super::interval::{computed, Interval};
use super::{BoundOk, Method};
use crate::field::fppoly::Fp;
use crate::registry;
use crate::report::reason::{reject_if, Check, Reason};
use classcert_format::EulerTrace;
use rug::Integer;

/// What the analytic bound needs to know of the field.
pub(crate) struct FieldFacts<'a> {
    pub(crate) polynomial: &'a [Integer],
    pub(crate) abs_disc: &'a Integer,
    pub(crate) signature: (usize, usize),
    pub(crate) w: u32,
    /// The `(e, f)` of the primes above `p` when the factor base lists `p`.
    pub(crate) splitting: &'a (dyn Fn(u64) -> Option<Vec<(u32, u32)>> + Sync),
}

/// Recomputes the trace and returns the enclosure of `log h R`.
pub(crate) fn check_field_bound(
    e: &EulerTrace,
    k: &FieldFacts,
    primes: &[u64],
    beat: &mut dyn FnMut(),
) -> Check<BoundOk> {
    reject_if(
        registry::lookup(&e.theorem).map(|t| t.id) != Some(registry::BELABAS_FRIEDMAN),
        Reason::UnknownTheorem,
        format_args!(
            "\"{}\" is not an analytic theorem for number fields",
            registry::short_id(&e.theorem)
        ),
    )?;
    let x = e.x;
    let n = k.polynomial.len().saturating_sub(1) as u64;
    let (log_delta, limits) = trace_prelude(e, k.abs_disc, n)?;
    let res = computed(euler_field(
        x,
        k.polynomial,
        k.splitting,
        primes,
        &limits,
        &log_delta,
        beat,
    ))?;
    trace_agrees(e, &res, "enclosure of log kappa")?;
    let log_hr = computed(log_hr(&res.log_l, k.abs_disc, k.signature, k.w))?;
    Ok(BoundOk {
        log_h: log_hr,
        method: Method::EulerProduct { x },
        theorems: [
            registry::BELABAS_FRIEDMAN,
            registry::CLASS_NUMBER_FORMULA_FIELDS,
        ]
        .iter()
        .copied()
        .filter_map(registry::lookup)
        .collect(),
    })
}

/// The Euler product for `log κ_K` at `X` (`n` = degree of `F`), the
/// splitting of each `p < X` from `splitting` or, where that has none,
/// from the degrees of the factors of `F mod p`; shared with the prover.
pub fn euler_field(
    x: u64,
    polynomial: &[Integer],
    splitting: &dyn Fn(u64) -> Option<Vec<(u32, u32)>>,
    primes: &[u64],
    limits: &[u64],
    log_delta: &Interval,
    beat: &mut dyn FnMut(),
) -> Option<EulerResult> {
    let n = polynomial.len().saturating_sub(1) as u64;
    // residue degrees of the primes above each p < X
    let mut degrees: Vec<(u64, Vec<u32>)> = Vec::new();
    for &p in primes.iter().take_while(|&&p| p < x) {
        let fs = match splitting(p) {
            Some(s) => s.iter().map(|&(_, f)| f).collect(),
            None => Fp::new(p)
                .and_then(|fp| fp.degree_pattern(polynomial))?
                .iter()
                .filter_map(|&f| u32::try_from(f).ok())
                .collect(),
        };
        degrees.push((p, fs));
    }
    let coef = |p: u64, m: u64| -> i64 {
        let found = degrees.binary_search_by_key(&p, |d| d.0).ok();
        let Some((_, fs)) = found.and_then(|i| degrees.get(i)) else {
            return 0;
        };
        let fs = fs.iter().map(|&f| u64::from(f));
        let s: u64 = fs.filter(|&f| f > 0 && m.is_multiple_of(f)).sum();
        s as i64 - 1
    };
    compute_general(x, primes, &coef, n, limits, log_delta, beat)
}

/// `log h R = log κ + log w + log|Δ|/2 - r1 log 2 - r2 log 2π`; shared
/// with the prover.
pub fn log_hr(
    log_kappa: &Interval,
    abs_disc: &Integer,
    (r1, r2): (usize, usize),
    w: u32,
) -> Option<Interval> {
    let half_log_d = Interval::int(abs_disc).ln()?.div(&Interval::u64(2))?;
    let log_w = Interval::u64(u64::from(w)).ln()?;
    let ln2 = Interval::ln2();
    let ln2pi = Interval::pi().mul(&Interval::u64(2)).ln()?;
    Some(
        log_kappa
            .add(&log_w)
            .add(&half_log_d)
            .sub(&ln2.mul(&Interval::u64(r1 as u64)))
            .sub(&ln2pi.mul(&Interval::u64(r2 as u64))),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::arith::primes_up_to;

    #[test]
    fn residue_of_the_pure_cubic_field_of_2() {
        // K = Q(2^(1/3)): Δ = -108 (pure cubic fields, Alaca and Williams,
        // from memory), h = 1 (OEIS A246457), w = 2, signature (1, 1), and
        // R = log(1 + 2^(1/3) + 4^(1/3)) for the unit 2^(1/3) - 1 (from
        // memory; its inverse is θ² + θ + 1). 2 and 3 are totally ramified
        // (x³ - 2 ≡ x³ mod 2 and ≡ (x + 1)³ mod 3).
        let f: Vec<Integer> = [-2, 0, 0, 1].iter().map(|&c| Integer::from(c)).collect();
        let abs_disc = Integer::from(108);
        let x = 100_000;
        let primes = primes_up_to(x);
        let splitting = |p: u64| (p == 2 || p == 3).then(|| vec![(3, 1)]);
        let ld = Interval::int(&abs_disc).ln().unwrap();
        let res = euler_field(x, &f, &splitting, &primes, &[], &ld, &mut || {}).unwrap();
        let c = 2f64.cbrt();
        let r = (1.0 + c + c * c).ln();
        let kappa = 2.0 * std::f64::consts::PI * r / 108f64.sqrt();
        let truth = kappa.ln();
        assert!(res.log_l.lo.to_f64() < truth && truth < res.log_l.hi.to_f64());
        // the approximation itself is much closer than the error bound
        assert!((res.f.mid_f64() - truth).abs() < res.error.mid_f64() / 4.0);
        // and log h R, h = 1, encloses log R
        let lhr = log_hr(&res.log_l, &abs_disc, (1, 1), 2).unwrap();
        assert!(lhr.lo.to_f64() < r.ln() && r.ln() < lhr.hi.to_f64());
    }
}
