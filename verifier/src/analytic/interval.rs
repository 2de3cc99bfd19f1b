//! Closed intervals `[lo, hi]` of MPFR floats with outward rounding: every
//! operation rounds `lo` down and `hi` up, so the exact result of the real
//! operation on any points of the inputs lies inside (MPFR's functions are
//! correctly rounded in each direction).

use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Bounds, Dyadic};
use rug::float::{Constant, Round};
use rug::{Float, Integer};

/// Default working precision in bits. An operation works at the larger
/// precision of its operands, so a computation started with
/// [`Interval::int_prec`] stays at that precision.
pub const PREC: u32 = 160;

#[derive(Debug, Clone, PartialEq)]
pub struct Interval {
    pub lo: Float,
    pub hi: Float,
}

fn down<T>(prec: u32, v: T) -> Float
where
    Float: rug::ops::AssignRound<T, Round = Round, Ordering = std::cmp::Ordering>,
{
    let mut f = Float::new(prec);
    rug::ops::AssignRound::assign_round(&mut f, v, Round::Down);
    f
}

fn up<T>(prec: u32, v: T) -> Float
where
    Float: rug::ops::AssignRound<T, Round = Round, Ordering = std::cmp::Ordering>,
{
    let mut f = Float::new(prec);
    rug::ops::AssignRound::assign_round(&mut f, v, Round::Up);
    f
}

fn min(a: Float, b: Float) -> Float {
    if b < a {
        b
    } else {
        a
    }
}

fn max(a: Float, b: Float) -> Float {
    if b > a {
        b
    } else {
        a
    }
}

/// `[lo, lo]`, or `[lo, next float up]` for a value that is not a float
/// (`inexact`), `lo` its rounding down.
fn one_ulp(lo: Float, inexact: bool) -> Interval {
    let mut hi = lo.clone();
    if inexact {
        hi.next_up();
    }
    Interval { lo, hi }
}

impl Interval {
    pub fn int(x: &Integer) -> Interval {
        Interval::int_prec(x, PREC)
    }

    /// `x` at `prec` bits (at least [`PREC`]).
    pub fn int_prec(x: &Integer, prec: u32) -> Interval {
        let prec = prec.max(PREC);
        Interval {
            lo: down(prec, x),
            hi: up(prec, x),
        }
    }

    pub fn u64(x: u64) -> Interval {
        Interval::int(&Integer::from(x))
    }

    /// The rational `n / d` for `d > 0`.
    pub fn ratio(n: i64, d: u64) -> Option<Interval> {
        Interval::int(&Integer::from(n)).div(&Interval::u64(d))
    }

    fn constant(c: Constant) -> Interval {
        Interval {
            lo: down(PREC, c),
            hi: up(PREC, c),
        }
    }

    pub fn pi() -> Interval {
        Interval::constant(Constant::Pi)
    }

    pub fn ln2() -> Interval {
        Interval::constant(Constant::Log2)
    }

    /// The precision results are computed at.
    pub fn prec(&self) -> u32 {
        self.lo.prec().max(self.hi.prec())
    }

    fn prec_with(&self, o: &Interval) -> u32 {
        self.prec().max(o.prec())
    }

    pub fn zero() -> Interval {
        Interval::u64(0)
    }

    pub fn add(&self, o: &Interval) -> Interval {
        let p = self.prec_with(o);
        Interval {
            lo: down(p, &self.lo + &o.lo),
            hi: up(p, &self.hi + &o.hi),
        }
    }

    pub fn sub(&self, o: &Interval) -> Interval {
        let p = self.prec_with(o);
        Interval {
            lo: down(p, &self.lo - &o.hi),
            hi: up(p, &self.hi - &o.lo),
        }
    }

    pub fn neg(&self) -> Interval {
        let p = self.prec();
        Interval {
            lo: Float::with_val(p, -&self.hi),
            hi: Float::with_val(p, -&self.lo),
        }
    }

    pub fn mul(&self, o: &Interval) -> Interval {
        let p = self.prec_with(o);
        // both nonnegative: the least product is lo·lo and the largest
        // hi·hi, and directed rounding is monotone, so this is the general
        // case's result with two products instead of eight
        if self.lo >= 0 && o.lo >= 0 {
            return Interval {
                lo: down(p, &self.lo * &o.lo),
                hi: up(p, &self.hi * &o.hi),
            };
        }
        // the least and the largest of the four end point products
        let (mut lo, mut hi) = (down(p, &self.lo * &o.lo), up(p, &self.lo * &o.lo));
        for (x, y) in [(&self.lo, &o.hi), (&self.hi, &o.lo), (&self.hi, &o.hi)] {
            lo = min(lo, down(p, x * y));
            hi = max(hi, up(p, x * y));
        }
        Interval { lo, hi }
    }

    /// Division by an interval that does not contain 0.
    pub fn div(&self, o: &Interval) -> Option<Interval> {
        if o.lo > 0 {
            let p = self.prec_with(o);
            let inv = Interval {
                lo: down(p, 1 / &o.hi),
                hi: up(p, 1 / &o.lo),
            };
            Some(self.mul(&inv))
        } else if o.hi < 0 {
            self.div(&o.neg()).map(|x| x.neg())
        } else {
            None
        }
    }

    /// `ln x` for an integer `x`, the same interval as
    /// `Interval::u64(x).ln()` at half the cost: for `x ≥ 2`, `ln x` is
    /// irrational (were `ln x = a/b`, `e^a = x^b` would make `e` algebraic,
    /// against Hermite's theorem, 1873; common practice), so it is never a
    /// float, and MPFR's correct rounding (its documented guarantee for
    /// every function and rounding mode) puts the rounding up exactly one
    /// float above the rounding down.
    pub fn ln_int(x: u64) -> Option<Interval> {
        if x < 2 {
            return Interval::u64(x).ln();
        }
        Some(one_ulp(down(PREC, Float::with_val(PREC, x).ln_ref()), true))
    }

    /// `1/n` for an integer `n ≥ 1`, the same interval as
    /// `Interval::u64(1).div(&Interval::u64(n))` with one division: unless
    /// `n` is a power of two, `1/n` has no finite binary expansion, so it
    /// is never a float and the rounding up is one float above the
    /// rounding down (MPFR rounds correctly).
    pub fn recip_int(n: u64) -> Option<Interval> {
        if n == 0 {
            return None;
        }
        let lo = down(PREC, 1 / &Float::with_val(PREC, n));
        Some(one_ulp(lo, !n.is_power_of_two()))
    }

    /// `√n` for an integer `n`, the same interval as
    /// `Interval::u64(n).sqrt()` with one square root: unless `n` is a
    /// square, `√n` is irrational and the rounding up is one float above
    /// the rounding down.
    pub fn sqrt_int(n: u64) -> Interval {
        let lo = down(PREC, Float::with_val(PREC, n).sqrt_ref());
        one_ulp(lo, n.isqrt() * n.isqrt() != n)
    }

    /// Natural logarithm of a positive interval.
    pub fn ln(&self) -> Option<Interval> {
        if self.lo <= 0 || !self.lo.is_finite() || !self.hi.is_finite() {
            return None;
        }
        let p = self.prec();
        Some(Interval {
            lo: down(p, self.lo.ln_ref()),
            hi: up(p, self.hi.ln_ref()),
        })
    }

    /// `e^x`, increasing.
    pub fn exp(&self) -> Interval {
        let p = self.prec();
        Interval {
            lo: down(p, self.lo.exp_ref()),
            hi: up(p, self.hi.exp_ref()),
        }
    }

    /// The complementary error function, decreasing.
    pub fn erfc(&self) -> Interval {
        let p = self.prec();
        Interval {
            lo: down(p, self.hi.erfc_ref()),
            hi: up(p, self.lo.erfc_ref()),
        }
    }

    pub fn sqrt(&self) -> Option<Interval> {
        if self.lo < 0 || !self.hi.is_finite() {
            return None;
        }
        let p = self.prec();
        Some(Interval {
            lo: down(p, self.lo.sqrt_ref()),
            hi: up(p, self.hi.sqrt_ref()),
        })
    }

    /// `[lo - e, hi + e]` for `e >= 0` given as an interval (its upper end is used).
    pub fn widen(&self, e: &Interval) -> Interval {
        let p = self.prec_with(e);
        Interval {
            lo: down(p, &self.lo - &e.hi),
            hi: up(p, &self.hi + &e.hi),
        }
    }

    pub fn contains(&self, o: &Interval) -> bool {
        self.lo <= o.lo && o.hi <= self.hi
    }

    pub fn mid_f64(&self) -> f64 {
        (self.lo.to_f64() + self.hi.to_f64()) / 2.0
    }

    /// The interval a certificate states; `None` if the exponents are absurd.
    pub fn from_bounds(b: &Bounds) -> Option<Interval> {
        Some(Interval {
            lo: from_dyadic(&b.lo, Round::Down)?,
            hi: from_dyadic(&b.hi, Round::Up)?,
        })
    }
}

/// The value of an interval computation; refused as over the limits if it
/// failed (a division by an interval holding 0, a log of one not above 0).
pub(crate) fn computed<T>(v: Option<T>) -> Check<T> {
    v.map_or_else(
        || reject(Reason::OverLimit, "interval arithmetic failed"),
        Ok,
    )
}

/// A stated enclosure must contain the verifier's own (`reason` if not).
pub(crate) fn stated_contains(
    stated: &Bounds,
    mine: &Interval,
    reason: Reason,
    what: &str,
) -> Check<Interval> {
    let Some(claimed) = Interval::from_bounds(stated) else {
        return reject(reason, format!("the stated {what} is out of range"));
    };
    reject_if(
        !claimed.contains(mine),
        reason,
        format_args!(
            "the stated {what} [{:.15}, {:.15}] does not contain the rigorous enclosure [{:.15}, {:.15}]",
            claimed.lo.to_f64(),
            claimed.hi.to_f64(),
            mine.lo.to_f64(),
            mine.hi.to_f64()
        ),
    )?;
    Ok(claimed)
}

/// Exponents of stated bounds are kept in a sane range: the values the
/// verifier compares are of size well below 2^64.
const MAX_DYADIC_EXP: i64 = 4096;

fn from_dyadic(d: &Dyadic, round: Round) -> Option<Float> {
    // unsigned_abs: `i64::MIN.abs()` would overflow (a stated exponent of
    // i64::MIN once panicked here).
    if d.exponent.unsigned_abs() > MAX_DYADIC_EXP.unsigned_abs()
        || d.mantissa.significant_bits() > 4096
    {
        return None;
    }
    let mut f = Float::new(PREC);
    rug::ops::AssignRound::assign_round(&mut f, &d.mantissa, round);
    let e = i32::try_from(d.exponent).ok()?;
    if e >= 0 {
        f <<= e as u32;
    } else {
        f >>= e.unsigned_abs();
    }
    Some(f)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pi_and_logs_enclose_known_values() {
        // π = 3.14159265358979323846… (common practice)
        let p = Interval::pi();
        assert!(p.lo.to_f64() <= std::f64::consts::PI && std::f64::consts::PI <= p.hi.to_f64());
        let l = Interval::u64(10).ln().unwrap();
        assert!(l.lo < l.hi);
        assert!((l.mid_f64() - std::f64::consts::LN_10).abs() < 1e-15);
    }

    #[test]
    fn products_of_nonnegative_intervals_are_the_general_ones() {
        // the shortcut against the four-product definition
        let general = |a: &Interval, b: &Interval| {
            let ends = [
                (&a.lo, &b.lo),
                (&a.lo, &b.hi),
                (&a.hi, &b.lo),
                (&a.hi, &b.hi),
            ];
            let lo = ends
                .iter()
                .map(|(x, y)| down(PREC, *x * *y))
                .reduce(min)
                .unwrap();
            let hi = ends
                .iter()
                .map(|(x, y)| up(PREC, *x * *y))
                .reduce(max)
                .unwrap();
            Interval { lo, hi }
        };
        let xs: Vec<Interval> = (0..40u64)
            .map(|k| {
                Interval::u64(k * 7 + 3)
                    .ln()
                    .unwrap()
                    .div(&Interval::u64(k + 1))
                    .unwrap()
            })
            .chain([Interval::zero(), Interval::pi()])
            .collect();
        for a in &xs {
            for b in &xs {
                assert_eq!(a.mul(b), general(a, b));
            }
        }
    }

    #[test]
    fn integer_roots_and_reciprocals_are_the_general_ones() {
        let large = [
            u64::MAX,
            u64::MAX - 58,
            1 << 40,
            (1 << 32) - 1,
            4_294_967_296,
        ];
        for n in (0..30_000u64)
            .chain(large)
            .chain((1..3000u64).map(|k| k * k))
        {
            assert_eq!(
                Some(Interval::sqrt_int(n)),
                Interval::u64(n).sqrt(),
                "n = {n}"
            );
            let general = Interval::u64(1).div(&Interval::u64(n));
            assert_eq!(Interval::recip_int(n), general, "n = {n}");
        }
    }

    #[test]
    fn integer_logs_are_the_general_ones() {
        // the shortcut against the definition: the same two floats
        let large = [u64::MAX, u64::MAX - 58, 1 << 40, 999_999_999_989];
        for x in (0..30_000u64).chain(large) {
            assert_eq!(Interval::ln_int(x), Interval::u64(x).ln(), "x = {x}");
        }
    }

    #[test]
    fn absurd_exponents_are_refused_not_a_panic() {
        // Regression: an exponent of i64::MIN overflowed `abs()`.
        for exponent in [i64::MIN, i64::MIN + 1, i64::MAX, -4097, 4097] {
            let b = Bounds {
                lo: Dyadic {
                    mantissa: Integer::from(1),
                    exponent,
                },
                hi: Dyadic {
                    mantissa: Integer::from(1),
                    exponent: 0,
                },
            };
            assert!(Interval::from_bounds(&b).is_none(), "{exponent}");
        }
        let huge = Dyadic {
            mantissa: Integer::from(1) << 5000u32,
            exponent: 0,
        };
        let b = Bounds {
            lo: huge.clone(),
            hi: huge,
        };
        assert!(Interval::from_bounds(&b).is_none());
    }
}
