//! `D ≡ 0, 1 (mod 4)` and not a square: the discriminant of the quadratic
//! order `O_D = Z[(D + sqrt D)/2]` (common practice; D. A. Cox, *Primes of
//! the form x² + ny²*, §7).

use crate::limits::MAX_DISCRIMINANT_BITS;
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::short_number;
use classcert_format::Order;
use rug::Integer;

/// Token: `D` is the discriminant of a quadratic order within the limits.
#[derive(Debug)]
pub(crate) struct OrderOk {
    d: Integer,
    abs_d: Integer,
    w: u32,
}

impl OrderOk {
    pub(crate) fn d(&self) -> &Integer {
        &self.d
    }

    pub(crate) fn abs_d(&self) -> &Integer {
        &self.abs_d
    }

    /// The number of roots of unity in `O_D`: 6 for `D = -3`, 4 for
    /// `D = -4`, 2 otherwise (common practice).
    pub(crate) fn w(&self) -> u32 {
        self.w
    }

    /// `D > 0`: a real quadratic order, with units of infinite order.
    pub(crate) fn is_real(&self) -> bool {
        self.d > 0
    }
}

pub(crate) fn check_discriminant(order: &Order) -> Check<OrderOk> {
    let Order::Quadratic { discriminant: d } = order else {
        return reject(
            Reason::UnsupportedOrder,
            "a quadratic certificate must name a quadratic order",
        );
    };
    let abs_d = Integer::from(d.abs_ref());
    reject_if(
        abs_d.significant_bits() > MAX_DISCRIMINANT_BITS,
        Reason::OverLimit,
        format_args!("|D| has more than {MAX_DISCRIMINANT_BITS} bits"),
    )?;
    let r = d.mod_u(4);
    reject_if(
        r != 0 && r != 1,
        Reason::InvalidDiscriminant,
        format_args!("D = {} is not ≡ 0 or 1 mod 4", short_number(d)),
    )?;
    reject_if(
        d.is_perfect_square(),
        Reason::InvalidDiscriminant,
        format_args!(
            "D = {} is a square, so it is not the discriminant of a quadratic order",
            short_number(d)
        ),
    )?;
    let w = match d.to_i32() {
        Some(-3) => 6,
        Some(-4) => 4,
        _ => 2,
    };
    Ok(OrderOk {
        d: d.clone(),
        abs_d,
        w,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(d: i64) -> Check<OrderOk> {
        check_discriminant(&Order::Quadratic {
            discriminant: Integer::from(d),
        })
    }

    #[test]
    fn discriminants_and_roots_of_unity() {
        // w(-3) = 6, w(-4) = 4, otherwise 2 (common practice).
        assert_eq!(check(-3).unwrap().w(), 6);
        assert_eq!(check(-4).unwrap().w(), 4);
        assert_eq!(check(-23).unwrap().w(), 2);
        assert!(check(5).unwrap().is_real());
        assert!(!check(-7).unwrap().is_real());
    }

    #[test]
    fn refusals() {
        for d in [-1i64, 2, 3, -6, 7] {
            assert_eq!(
                check(d).unwrap_err().reason,
                Reason::InvalidDiscriminant,
                "{d}"
            );
        }
        // squares are not discriminants of quadratic orders
        for d in [0i64, 1, 4, 9, 16] {
            assert_eq!(
                check(d).unwrap_err().reason,
                Reason::InvalidDiscriminant,
                "{d}"
            );
        }
        let huge = -(Integer::from(1) << (MAX_DISCRIMINANT_BITS + 2));
        let e = check_discriminant(&Order::Quadratic { discriminant: huge }).unwrap_err();
        assert_eq!(e.reason, Reason::OverLimit);
    }
}
