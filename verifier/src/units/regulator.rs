//! The stated regulator and norm against what the unit's chain shows:
//! `R* = |log|ε||` must be bounded away from 0 (else `ε` has finite order),
//! the stated interval must contain the verifier's enclosure and settle at
//! least 20 significant digits, and the stated norm must be the sign of
//! `N(ε)`.

use super::compact::Chain;
use crate::analytic::interval::{stated_contains, Interval};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::Units;
use rug::ops::Pow;
use rug::Integer;

/// Significant digits a stated regulator must settle.
const MIN_DIGITS: u32 = 20;

/// What the chain showed, once the stated values agree with it.
#[derive(Debug, Clone)]
pub(crate) struct UnitFacts {
    regulator: Interval,
    norm: i8,
    steps: usize,
}

impl UnitFacts {
    /// Rigorous enclosure of `R* = |log|ε||`.
    pub(crate) fn regulator(&self) -> &Interval {
        &self.regulator
    }

    /// `N(ε)`, `1` or `-1`.
    pub(crate) fn norm(&self) -> i8 {
        self.norm
    }

    /// Steps of the compact representation.
    pub(crate) fn steps(&self) -> usize {
        self.steps
    }
}

pub(crate) fn check_stated(units: &Units, chain: &Chain) -> Check<UnitFacts> {
    let log_eps = &chain.log_eps;
    let regulator = if log_eps.lo > 0 {
        log_eps.clone()
    } else if log_eps.hi < 0 {
        log_eps.neg()
    } else {
        return reject(
            Reason::UnitTrivial,
            "log|ε| is not bounded away from 0: the unit has finite order",
        );
    };
    let claimed = stated_contains(
        &units.regulator,
        &regulator,
        Reason::RegulatorMismatch,
        "regulator",
    )?;
    // at least 20 significant digits: hi - lo <= lo / 10^(20 + 1)
    let width = claimed.sub(&Interval {
        lo: claimed.lo.clone(),
        hi: claimed.lo.clone(),
    });
    let scale = Interval::int(&Integer::from(10u32).pow(MIN_DIGITS + 1));
    reject_if(
        width.mul(&scale).hi > claimed.lo,
        Reason::RegulatorImprecise,
        format_args!(
            "the stated regulator interval is wider than {MIN_DIGITS} significant digits allow"
        ),
    )?;
    let norm: i8 = if chain.norm_negative { -1 } else { 1 };
    reject_if(
        units.norm != i64::from(norm),
        Reason::UnitNormMismatch,
        format_args!(
            "the stated norm is {} but the unit's norm is {norm}",
            units.norm
        ),
    )?;
    Ok(UnitFacts {
        regulator,
        norm,
        steps: units.steps.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::{Bounds, CompactStep, Dyadic};

    /// The float `f`, exactly.
    fn dyadic(f: &rug::Float) -> Dyadic {
        let (mantissa, e) = f.to_integer_exp().unwrap();
        Dyadic {
            mantissa,
            exponent: e.into(),
        }
    }

    fn units(lo: &Interval, hi: &Interval, norm: i64) -> Units {
        Units {
            steps: vec![CompactStep {
                a: Integer::from(1),
                b: Integer::from(1),
                x: Integer::from(39),
                y: Integer::from(5),
                s: Integer::from(1),
            }],
            norm,
            regulator: Bounds {
                lo: dyadic(&lo.lo),
                hi: dyadic(&hi.hi),
            },
        }
    }

    #[test]
    fn regulator_of_q_sqrt_61() {
        // ε = (39 + 5 sqrt 61)/2 has norm -1 and R = log ε = 3.66421... (common
        // practice; the chain check is in compact.rs).
        let d = Integer::from(61);
        let u = units(&Interval::u64(0), &Interval::u64(0), -1);
        let chain = super::super::compact::check_chain(&d, &u.steps).unwrap();
        let r = chain.log_eps.clone();
        let ok = check_stated(&units(&r, &r, -1), &chain).unwrap();
        assert_eq!(ok.norm, -1);
        assert!((ok.regulator.mid_f64() - 3.664218).abs() < 1e-5);
        // wrong norm
        let e = check_stated(&units(&r, &r, 1), &chain).unwrap_err();
        assert_eq!(e.reason, Reason::UnitNormMismatch);
        // an interval that misses the enclosure
        let half = r.div(&Interval::u64(2)).unwrap();
        let e = check_stated(&units(&half, &half, -1), &chain).unwrap_err();
        assert_eq!(e.reason, Reason::RegulatorMismatch);
        // contains it, but too wide: [0, 4]
        let e = check_stated(&units(&Interval::u64(1), &Interval::u64(4), -1), &chain).unwrap_err();
        assert_eq!(e.reason, Reason::RegulatorImprecise);
    }
}
