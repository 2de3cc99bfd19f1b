//! The class number of an imaginary quadratic field without GRH, from a
//! rapidly convergent series (registry entry `erfc-series-class-number`;
//! H. Cohen, GTM 138, section 5.3, the formula from memory, checked in the
//! tests against counts of reduced forms): for fundamental `D < -4`,
//!
//! ```text
//! h(D) = Σ_{n >= 1} χ(n) (erfc(n sqrt(π/|D|)) + sqrt|D| / (π n) · e^{-π n² / |D|})
//! ```
//!
//! with `χ = (D/·)`. The first `N` terms are summed in outward-rounded
//! intervals; the rest is bounded with `erfc(x) <= e^{-x²} / (x sqrt π)`
//! (common practice), which makes each term at most
//! `2 sqrt|D| / (π n) · e^{-π n² / |D|}`, and with `n² >= (N + 1) n`:
//!
//! ```text
//! |Σ_{n > N}| <= 2 sqrt|D| / (π (N + 1)) · q^{N+1} / (1 - q),   q = e^{-π (N + 1) / |D|}
//! ```

use super::interval::{computed, stated_contains, Interval};
use crate::arith::kronecker_prime;
use crate::limits::MAX_SERIES_TERMS;
use crate::order::OrderOk;
use crate::report::reason::{reject_if, Check, Reason};
use classcert_format::EulerTrace;
use rug::Integer;

/// Kronecker symbol `(D/n)` for `n >= 1`, multiplicatively from primes.
fn kronecker(d: &Integer, mut n: u64, spf: &[u32]) -> i8 {
    let mut s = 1i8;
    while n > 1 {
        let p = match spf.get(n as usize) {
            Some(&p) if p > 0 => u64::from(p),
            _ => return 0,
        };
        n /= p;
        s *= kronecker_prime(d, p);
        if s == 0 {
            return 0;
        }
    }
    s
}

/// Smallest prime factor of every n <= limit (0 for n < 2).
fn smallest_prime_factors(limit: usize) -> Vec<u32> {
    let mut spf = vec![0u32; limit + 1];
    for i in 2..=limit {
        if spf.get(i) == Some(&0) {
            // the multiples i, 2i, … of i not marked yet
            for slot in spf.iter_mut().skip(i).step_by(i).filter(|s| **s == 0) {
                *slot = i as u32;
            }
        }
    }
    spf
}

/// An enclosure of `h(D)` from `n_terms` terms and the tail bound. The
/// caller checks `D < -4` fundamental and bounds `n_terms`.
pub fn class_number(d: &Integer, n_terms: u64) -> Option<Interval> {
    class_number_with(d, n_terms, &mut || {})
}

/// [`class_number`], calling `beat` every 2^14 terms (progress only).
fn class_number_with(d: &Integer, n_terms: u64, beat: &mut dyn FnMut()) -> Option<Interval> {
    let abs_d = Interval::int(&Integer::from(d.abs_ref()));
    let pi = Interval::pi();
    let sqrt_d = abs_d.sqrt()?;
    let step = pi.div(&abs_d)?.sqrt()?; // sqrt(π/|D|)
    let spf = smallest_prime_factors(usize::try_from(n_terms).ok()?);
    let mut sum = Interval::zero();
    for n in 1..=n_terms {
        if n % (1 << 14) == 0 {
            beat();
        }
        let chi = kronecker(d, n, &spf);
        if chi == 0 {
            continue;
        }
        let ni = Interval::u64(n);
        let x = step.mul(&ni);
        let term = x
            .erfc()
            .add(&sqrt_d.div(&pi.mul(&ni))?.mul(&x.mul(&x).neg().exp()));
        sum = if chi > 0 {
            sum.add(&term)
        } else {
            sum.sub(&term)
        };
    }
    // tail
    let n1 = Interval::u64(n_terms.checked_add(1)?);
    let q = pi.mul(&n1).div(&abs_d)?.neg().exp();
    let qn = pi.mul(&n1).mul(&n1).div(&abs_d)?.neg().exp(); // q^{N+1}
    let one = Interval::u64(1);
    let tail = Interval::u64(2)
        .mul(&sqrt_d)
        .div(&pi.mul(&n1))?
        .mul(&qn)
        .div(&one.sub(&q))?;
    Some(sum.widen(&tail))
}

/// `log L(1, χ) = log h + log(2π / (w sqrt|D|))` (the class number
/// formula for `D < 0`), the value a certificate states as `log-l`.
pub fn log_l_from_log_h(log_h: &Interval, w: u32, abs_d: &Integer) -> Option<Interval> {
    let factor = Interval::pi()
        .mul(&Interval::u64(2))
        .div(&Interval::u64(u64::from(w)).mul(&Interval::int(abs_d).sqrt()?))?
        .ln()?;
    Some(log_h.add(&factor))
}

/// Section 7: `h` itself from the series above, without
/// GRH, for a maximal order of discriminant `D < -4`. The stated
/// `log-l` must contain `log L(1, χ) = log(2 π h / (w sqrt|D|))`.
pub(crate) fn check_series(
    e: &EulerTrace,
    order: &OrderOk,
    maximal: bool,
    beat: &mut dyn FnMut(),
) -> Check<Interval> {
    reject_if(
        order.is_real() || *order.d() > -5 || !maximal,
        Reason::GenerationTheoremNotApplicable,
        "the unconditional series applies to maximal orders with D < -4 only",
    )?;
    let n = e.x;
    reject_if(
        n == 0 || n > MAX_SERIES_TERMS || !e.checkpoints.is_empty(),
        Reason::EulerXOutOfRange,
        format_args!("the series needs 1 to {MAX_SERIES_TERMS} terms and no checkpoints"),
    )?;
    let h = computed(class_number_with(order.d(), n, beat))?;
    reject_if(
        h.lo <= 0,
        Reason::EulerXTooSmall,
        format_args!("{n} terms do not bound h away from 0"),
    )?;
    let log_h = computed(h.ln())?;
    let log_l = computed(log_l_from_log_h(&log_h, order.w(), order.abs_d()))?;
    stated_contains(
        &e.log_l,
        &log_l,
        Reason::EulerIntervalUnderstated,
        "enclosure of log L(1, chi)",
    )?;
    Ok(log_h)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_class_numbers() {
        // h = 1, 2, 3, 5, 7, 27, 105 (OEIS A014602/A014603/A006203 and the
        // oracle's counts in the integration tests; common practice)
        for (d, h) in [
            (-7i64, 1u64),
            (-8, 1),
            (-15, 2),
            (-23, 3),
            (-47, 5),
            (-71, 7),
            (-3299, 27),
            (-1_000_003, 105),
        ] {
            let d = Integer::from(d);
            // 2 sqrt|D| terms: the tail bound is then far below the 0.1 asked.
            let n = 2 * d.to_f64().abs().sqrt() as u64 + 10;
            let s = class_number(&d, n).unwrap();
            let want = Interval::u64(h);
            assert!(s.lo <= want.lo && want.hi <= s.hi, "h({d})");
            assert!((s.hi.to_f64() - s.lo.to_f64()) < 0.1, "width for {d}");
        }
    }
}
