//! The class number formula for quadratic orders and the conclusion step
//! (`docs/certificates.md`, section 5).
//!
//! `h(D) = w sqrt|D| L(1, χ_D) / (2π)` for `D < 0` and
//! `h(D) R(D) = sqrt(D) L(1, χ_D) / 2` for `D > 0`, with
//! `L(1, χ_D) = L(1, χ_d) ∏_{p | f} (1 - χ_d(p)/p)` (registry entries
//! `class-number-formula-orders`, `class-number-formula-real-orders`).
//! Given an enclosure of `log L(1, χ_d)`, [`log_h_enclosure`] gives one of
//! `log h` (`log h R`). Conclusion: the lattice gives `h* R* = k h R` with
//! `k >= 1` an integer, so `log h* R* < lo(log h R) + log 2` forces
//! `k = 1`; and `log h* R* < lo(log h R)` cannot happen if the relations
//! and GRH both hold.

use super::interval::{computed, Interval};
use super::BoundOk;
use crate::arith::kronecker_prime;
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::short_number;
use rug::Integer;

/// The enclosure of `log h(O_D)` (for `D > 0`, of `log h(O_D) R(O_D)`)
/// from the class number formula and the Euler-product enclosure of
/// `log L(1, χ_d)`; shared with the prover so both sides agree on what is
/// checked.
pub fn log_h_enclosure(
    d: &Integer,
    w: u32,
    log_l: &Interval,
    conductor: &[(u64, u32)],
    d_small: &Integer,
    x: u64,
) -> Option<Interval> {
    let abs_d = Interval::int(&Integer::from(d.abs_ref()));
    let half_log_d = abs_d.ln()?.div(&Interval::u64(2))?;
    // h = w sqrt|D| L / (2 pi) for D < 0; h R = sqrt D L / 2 for D > 0
    let lead = if *d > 0 {
        Interval::u64(1).div(&Interval::u64(2))?
    } else {
        Interval::u64(u64::from(w)).div(&Interval::pi().mul(&Interval::u64(2)))?
    };
    let mut acc = lead.ln()?.add(&half_log_d).add(log_l);
    for (p, _) in conductor {
        let chi = i64::from(kronecker_prime(d_small, *p));
        let pi = Interval::u64(*p);
        let factor = pi.sub(&Interval::int(&Integer::from(chi))).div(&pi)?;
        acc = acc.add(&factor.ln()?);
    }
    // Primes q > X of the conductor not found by trial division: at most
    // log|D| / (2 log X) of them, each contributing log(1 ± 1/X) at most.
    let k = abs_d
        .ln()?
        .div(&Interval::u64(x).ln()?.mul(&Interval::u64(2)))?;
    let k_max = k.hi.to_f64().floor().max(0.0) as u64;
    if k_max > 0 {
        let xi = Interval::u64(x);
        let lo = xi.sub(&Interval::u64(1)).div(&xi)?.ln()?;
        let hi = xi.add(&Interval::u64(1)).div(&xi)?.ln()?;
        let k = Interval::u64(k_max);
        let slop = Interval {
            lo: lo.mul(&k).lo,
            hi: hi.mul(&k).hi,
        };
        acc = acc.add(&slop);
    }
    Some(acc)
}

/// Token: `h = h*` (and `R = R*` when `D > 0`).
#[derive(Debug)]
pub(crate) struct AnalyticOk {
    bound: BoundOk,
}

impl AnalyticOk {
    pub(crate) fn bound(&self) -> &BoundOk {
        &self.bound
    }

    pub(crate) fn into_bound(self) -> BoundOk {
        self.bound
    }
}

/// The conclusion step for a relation lattice of index `h_star` (and the
/// unit's `R*` when `D > 0`).
pub(crate) fn check_conclusion(
    bound: BoundOk,
    h_star: &Integer,
    regulator: Option<&Interval>,
) -> Check<AnalyticOk> {
    let log_h = bound.log_h();
    let ln2 = Interval::ln2();
    let mut log_hs = computed(Interval::int(h_star).ln())?;
    if let Some(r) = regulator {
        log_hs = log_hs.add(&computed(r.ln())?);
    }
    // h* R* = k h R with k >= 1 (R = R* = 1 for D < 0). If
    // log h* R* < lo(log h R) + log 2 then k = 1.
    if log_hs.hi >= log_h.add(&ln2).lo {
        reject_if(
            regulator.is_some(),
            Reason::ClassNumberRegulatorNotConfirmed,
            format_args!(
                "h* R* is too large: log h* R* = {:.6} but log h R <= {:.6} + log 2 is all the analytic bound allows for h = h*, R = R*",
                log_hs.hi.to_f64(),
                log_h.lo.to_f64()
            ),
        )?;
        return reject(
            Reason::ClassNumberNotConfirmed,
            format!(
                "h* = {} is too large: log h* = {:.6} but log h <= {:.6} + log 2 is all the analytic bound allows for k = 1",
                short_number(h_star),
                log_hs.hi.to_f64(),
                log_h.lo.to_f64()
            ),
        );
    }
    reject_if(
        log_hs.hi < log_h.lo,
        Reason::AnalyticInconsistent,
        format_args!(
            "h* R* = {} · {:.6} is below the analytic lower bound exp({:.6}): the relations and the analytic bound cannot both hold",
            short_number(h_star),
            regulator.map_or(1.0, |r| r.mid_f64()),
            log_h.lo.to_f64()
        ),
    )?;
    Ok(AnalyticOk { bound })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analytic::Method;

    fn exact_log_l(h: u64, w: u64, abs_d: u64) -> Interval {
        // L(1, χ_D) = 2π h / (w sqrt|D|) for D < 0 (the formula itself)
        Interval::pi()
            .mul(&Interval::u64(2 * h))
            .div(&Interval::u64(w).mul(&Interval::u64(abs_d).sqrt().unwrap()))
            .unwrap()
            .ln()
            .unwrap()
    }

    #[test]
    fn enclosure_of_log_h_for_a_field_and_an_order() {
        // h(-23) = 3 (OEIS A006203); h(-92) = 3: -92 = 2² · -23 with
        // χ_{-23}(2) = 1, so h(-92) = 3 · 2 · (1 - 1/2) (Cox, Thm 7.24).
        let log_l = exact_log_l(3, 2, 23);
        let ln3 = Interval::u64(3).ln().unwrap();
        let field = log_h_enclosure(
            &Integer::from(-23),
            2,
            &log_l,
            &[],
            &Integer::from(-23),
            1_000_000,
        )
        .unwrap();
        assert!(field.lo <= ln3.lo && ln3.hi <= field.hi);
        let order = log_h_enclosure(
            &Integer::from(-92),
            2,
            &log_l,
            &[(2, 1)],
            &Integer::from(-23),
            1_000_000,
        )
        .unwrap();
        assert!(order.lo <= ln3.lo && ln3.hi <= order.hi);
        assert!(order.hi.to_f64() - order.lo.to_f64() < 1e-20);
    }

    fn bound(center: u64, radius: (i64, u64)) -> BoundOk {
        let c = Interval::u64(center).ln().unwrap();
        let r = Interval::ratio(radius.0, radius.1).unwrap();
        BoundOk {
            log_h: c.widen(&r),
            method: Method::EulerProduct { x: 1000 },
            theorems: Vec::new(),
        }
    }

    #[test]
    fn conclusion_both_ways() {
        // log h known to ±0.1 around log 27: h* = 27 is confirmed; h* = 54
        // could be 2h; h* = 13 is below the bound (inconsistent).
        let b = || bound(27, (1, 10));
        assert!(check_conclusion(b(), &Integer::from(27), None).is_ok());
        let e = check_conclusion(b(), &Integer::from(54), None).unwrap_err();
        assert_eq!(e.reason, Reason::ClassNumberNotConfirmed);
        let e = check_conclusion(b(), &Integer::from(13), None).unwrap_err();
        assert_eq!(e.reason, Reason::AnalyticInconsistent);
        // D > 0: h* R* against log h R; R* twice too large is not confirmed
        let unit = |r: u64| Interval::u64(r);
        assert!(check_conclusion(bound(54, (1, 10)), &Integer::from(27), Some(&unit(2))).is_ok());
        let e =
            check_conclusion(bound(54, (1, 10)), &Integer::from(27), Some(&unit(4))).unwrap_err();
        assert_eq!(e.reason, Reason::ClassNumberRegulatorNotConfirmed);
    }
}
