//! Closed intervals `[lo, hi]` of MPFR floats with outward rounding: every
//! operation rounds `lo` down and `hi` up, so the exact result of the real
//! operation on any points of the inputs lies inside (MPFR's functions are
//! correctly rounded in each direction).

use classcert_format::{Bounds, Dyadic};
use rug::float::{Constant, Round};
use rug::{Float, Integer};

/// Working precision in bits.
pub const PREC: u32 = 160;

#[derive(Debug, Clone, PartialEq)]
pub struct Interval {
    pub lo: Float,
    pub hi: Float,
}

fn down<T>(v: T) -> Float
where
    Float: rug::ops::AssignRound<T, Round = Round, Ordering = std::cmp::Ordering>,
{
    let mut f = Float::new(PREC);
    rug::ops::AssignRound::assign_round(&mut f, v, Round::Down);
    f
}

fn up<T>(v: T) -> Float
where
    Float: rug::ops::AssignRound<T, Round = Round, Ordering = std::cmp::Ordering>,
{
    let mut f = Float::new(PREC);
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

impl Interval {
    pub fn int(x: &Integer) -> Interval {
        let mut lo = Float::new(PREC);
        let mut hi = Float::new(PREC);
        rug::ops::AssignRound::assign_round(&mut lo, x, Round::Down);
        rug::ops::AssignRound::assign_round(&mut hi, x, Round::Up);
        Interval { lo, hi }
    }

    pub fn u64(x: u64) -> Interval {
        Interval::int(&Integer::from(x))
    }

    /// The rational `n / d` for `d > 0`.
    pub fn ratio(n: i64, d: u64) -> Option<Interval> {
        Interval::int(&Integer::from(n)).div(&Interval::u64(d))
    }

    pub fn pi() -> Interval {
        Interval {
            lo: down(Constant::Pi),
            hi: up(Constant::Pi),
        }
    }

    pub fn ln2() -> Interval {
        Interval {
            lo: down(Constant::Log2),
            hi: up(Constant::Log2),
        }
    }

    pub fn zero() -> Interval {
        Interval::u64(0)
    }

    pub fn add(&self, o: &Interval) -> Interval {
        Interval {
            lo: down(&self.lo + &o.lo),
            hi: up(&self.hi + &o.hi),
        }
    }

    pub fn sub(&self, o: &Interval) -> Interval {
        Interval {
            lo: down(&self.lo - &o.hi),
            hi: up(&self.hi - &o.lo),
        }
    }

    pub fn neg(&self) -> Interval {
        Interval {
            lo: Float::with_val(PREC, -&self.hi),
            hi: Float::with_val(PREC, -&self.lo),
        }
    }

    pub fn mul(&self, o: &Interval) -> Interval {
        let pairs = [
            (&self.lo, &o.lo),
            (&self.lo, &o.hi),
            (&self.hi, &o.lo),
            (&self.hi, &o.hi),
        ];
        let mut lo: Option<Float> = None;
        let mut hi: Option<Float> = None;
        for (x, y) in pairs {
            let l = down(x * y);
            let h = up(x * y);
            lo = Some(match lo {
                None => l,
                Some(c) => min(c, l),
            });
            hi = Some(match hi {
                None => h,
                Some(c) => max(c, h),
            });
        }
        Interval {
            lo: lo.unwrap_or_else(|| Float::new(PREC)),
            hi: hi.unwrap_or_else(|| Float::new(PREC)),
        }
    }

    /// Division by an interval that does not contain 0.
    pub fn div(&self, o: &Interval) -> Option<Interval> {
        if o.lo > 0 {
            let inv = Interval {
                lo: down(1 / &o.hi),
                hi: up(1 / &o.lo),
            };
            Some(self.mul(&inv))
        } else if o.hi < 0 {
            self.div(&o.neg()).map(|x| x.neg())
        } else {
            None
        }
    }

    /// Natural logarithm of a positive interval.
    pub fn ln(&self) -> Option<Interval> {
        if self.lo <= 0 || !self.lo.is_finite() || !self.hi.is_finite() {
            return None;
        }
        Some(Interval {
            lo: down(self.lo.ln_ref()),
            hi: up(self.hi.ln_ref()),
        })
    }

    pub fn sqrt(&self) -> Option<Interval> {
        if self.lo < 0 || !self.hi.is_finite() {
            return None;
        }
        Some(Interval {
            lo: down(self.lo.sqrt_ref()),
            hi: up(self.hi.sqrt_ref()),
        })
    }

    /// `[lo - e, hi + e]` for `e >= 0` given as an interval (its upper end is used).
    pub fn widen(&self, e: &Interval) -> Interval {
        Interval {
            lo: down(&self.lo - &e.hi),
            hi: up(&self.hi + &e.hi),
        }
    }

    pub fn contains(&self, o: &Interval) -> bool {
        self.lo <= o.lo && o.hi <= self.hi
    }

    pub fn is_finite(&self) -> bool {
        self.lo.is_finite() && self.hi.is_finite()
    }

    pub fn mid_f64(&self) -> f64 {
        (self.lo.to_f64() + self.hi.to_f64()) / 2.0
    }

    pub fn to_bounds(&self) -> Option<Bounds> {
        Some(Bounds {
            lo: to_dyadic(&self.lo)?,
            hi: to_dyadic(&self.hi)?,
        })
    }

    /// The interval a certificate states; `None` if the exponents are absurd.
    pub fn from_bounds(b: &Bounds) -> Option<Interval> {
        Some(Interval {
            lo: from_dyadic(&b.lo, Round::Down)?,
            hi: from_dyadic(&b.hi, Round::Up)?,
        })
    }
}

fn to_dyadic(f: &Float) -> Option<Dyadic> {
    if f.is_zero() {
        return Some(Dyadic {
            mantissa: Integer::new(),
            exponent: 0,
        });
    }
    let (mut m, e) = f.to_integer_exp()?;
    let mut e = i64::from(e);
    // strip trailing zero bits so the representation is unique
    let tz = m.find_one(0).unwrap_or(0);
    m >>= tz;
    e += i64::from(tz);
    Some(Dyadic {
        mantissa: m,
        exponent: e,
    })
}

/// Exponents of stated bounds are kept in a sane range: the values the
/// verifier compares are of size well below 2^64.
const MAX_DYADIC_EXP: i64 = 4096;

fn from_dyadic(d: &Dyadic, round: Round) -> Option<Float> {
    if d.exponent.abs() > MAX_DYADIC_EXP || d.mantissa.significant_bits() > 4096 {
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
    fn dyadic_round_trip_is_exact() {
        let x = Interval::ratio(-7, 3).unwrap();
        let b = x.to_bounds().unwrap();
        let y = Interval::from_bounds(&b).unwrap();
        assert_eq!(x, y);
    }
}
