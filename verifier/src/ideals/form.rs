//! Positive definite binary quadratic forms `(a, b, c)`, `b^2 - 4ac = D < 0`.
//!
//! Composition follows H. Cohen, *A Course in Computational Algebraic Number
//! Theory*, Alg. 5.4.7 (Shanks), and reduction Alg. 5.4.2. Every reduced
//! form is the unique reduced form of its class (Gauss; Cohen Prop. 5.3.3),
//! which is what makes "reduces to the principal form" a proof that a
//! product of prime forms is principal.

use rug::ops::{NegAssign, RemRounding};
use rug::{Assign, Integer};
use std::cmp::Ordering;

/// A form; callers keep `a > 0` and `b^2 - 4ac = D` (checked on entry by
/// [`Form::new`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Form {
    pub a: Integer,
    pub b: Integer,
    pub c: Integer,
}

/// Integers reused across the steps of one reduction.
#[derive(Default)]
struct Scratch {
    two_a: Integer,
    q: Integer,
    r: Integer,
    t: Integer,
}

/// Arithmetic refused (only on inputs that break the invariants).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FormError;

/// Reduction of a form whose `a` has `k` bits takes about `k` steps; this
/// cap is far above anything a bounded input can need.
const MAX_REDUCTION_STEPS: u32 = 100_000;

impl Form {
    /// `(a, b, (b^2 - D)/(4a))`, refused unless `a > 0` and `4a | b^2 - D`.
    pub fn new(a: Integer, b: Integer, d: &Integer) -> Result<Form, FormError> {
        if a <= 0 {
            return Err(FormError);
        }
        let num = Integer::from(b.square_ref()) - d;
        let four_a = Integer::from(&a << 2u32);
        if !num.is_divisible(&four_a) {
            return Err(FormError);
        }
        let c = num / four_a;
        Ok(Form { a, b, c })
    }

    /// The stated `(a, b, c)`, if it is a primitive form of discriminant
    /// `d` with `a > 0`.
    pub fn primitive(f: &classcert_format::Form, d: &Integer) -> Option<Form> {
        let g = Form::new(f.a.clone(), f.b.clone(), d).ok()?;
        let content = Integer::from(g.a.gcd_ref(&g.b)).gcd(&g.c);
        (g.c == f.c && content == 1).then_some(g)
    }

    /// The principal form `(1, D mod 2, (D mod 2 - D)/4)`.
    pub fn principal(d: &Integer) -> Form {
        let b = Integer::from(d.is_odd());
        let c = (Integer::from(&b) - d) >> 2u32;
        Form {
            a: Integer::from(1),
            b,
            c,
        }
    }

    pub fn inverse(&self) -> Form {
        Form {
            a: self.a.clone(),
            b: Integer::from(-&self.b),
            c: self.c.clone(),
        }
    }

    pub fn is_reduced(&self) -> bool {
        let abs_b = Integer::from(self.b.abs_ref());
        abs_b <= self.a
            && self.a <= self.c
            && (self.b >= 0 || (abs_b != self.a && self.a != self.c))
    }

    /// Cohen Alg. 5.4.2.
    pub fn reduce(mut self) -> Result<Form, FormError> {
        if self.a <= 0 {
            return Err(FormError);
        }
        // scratch integers, reused by every step (no allocation per step)
        let mut s = Scratch::default();
        self.normalize(&mut s);
        let mut steps = 0u32;
        while self.a > self.c {
            steps += 1;
            if steps > MAX_REDUCTION_STEPS || self.c <= 0 {
                return Err(FormError);
            }
            std::mem::swap(&mut self.a, &mut self.c);
            self.b.neg_assign();
            self.normalize(&mut s);
        }
        if self.a == self.c && self.b < 0 {
            self.b.neg_assign();
        }
        Ok(self)
    }

    /// Brings `b` into `(-a, a]` by `b ← b - 2aq`, with `c ← c - (b + r) q / 2`
    /// (Cohen Alg. 5.4.2, step 2); needs `a > 0`.
    fn normalize(&mut self, s: &mut Scratch) {
        match self.b.cmp_abs(&self.a) {
            Ordering::Less => return,
            Ordering::Equal if self.b > 0 => return,
            _ => {}
        }
        s.two_a.assign(&self.a << 1u32);
        (&mut s.q, &mut s.r).assign(self.b.div_rem_floor_ref(&s.two_a));
        if s.r > self.a {
            s.r -= &s.two_a;
            s.q += 1u32;
        }
        // c -= (b + r) q / 2, then b = r
        s.t.assign(&self.b + &s.r);
        s.t *= &s.q;
        s.t >>= 1u32;
        self.c -= &s.t;
        std::mem::swap(&mut self.b, &mut s.r);
    }

    /// The reduced form of the composition (Cohen Alg. 5.4.7).
    pub fn compose(&self, other: &Form) -> Result<Form, FormError> {
        self.compose_unreduced(other)?.1.reduce()
    }

    /// Composition without reduction (Cohen Alg. 5.4.7, steps 1-4): returns
    /// `(d, f3)` with `d = gcd(a1, a2, (b1 + b2)/2)`; for the ideals
    /// `[a, (b + sqrt D)/2]` of primitive forms with `a > 0`, the product of
    /// the two ideals is `d · [a3, (b3 + sqrt D)/2]`. Works for either sign
    /// of `D`.
    pub fn compose_unreduced(&self, other: &Form) -> Result<(Integer, Form), FormError> {
        let (f1, f2) = if self.a > other.a {
            (other, self)
        } else {
            (self, other)
        };
        let (a1, b1) = (&f1.a, &f1.b);
        let (a2, b2, c2) = (&f2.a, &f2.b, &f2.c);
        if *a1 <= 0 || *a2 <= 0 {
            return Err(FormError);
        }
        let sum = Integer::from(b1 + b2);
        if sum.is_odd() {
            return Err(FormError);
        }
        let s = sum >> 1u32;
        let n = Integer::from(b2 - &s);
        let (y1, d) = if a2.is_divisible(a1) {
            (Integer::new(), a1.clone())
        } else {
            let (g, u, _v) = <(Integer, Integer, Integer)>::from(a2.extended_gcd_ref(a1));
            (u, g)
        };
        let (x2, y2, d1) = if s.is_divisible(&d) {
            (Integer::new(), Integer::from(-1), d.clone())
        } else {
            let (g, x, y) = <(Integer, Integer, Integer)>::from(s.extended_gcd_ref(&d));
            (x, -y, g)
        };
        if d1 <= 0 {
            return Err(FormError);
        }
        let v1 = Integer::from(a1 / &d1);
        let v2 = Integer::from(a2 / &d1);
        if v1 <= 0 {
            return Err(FormError);
        }
        let t = Integer::from(&y1 * &y2) * &n - Integer::from(&x2 * c2);
        let r = t.rem_euc(&v1);
        let v2r = Integer::from(&v2 * &r);
        let b3 = Integer::from(b2 + &v2r) + &v2r;
        let a3 = Integer::from(&v1 * &v2);
        let num = Integer::from(c2 * &d1) + &r * Integer::from(b2 + &v2r);
        if !num.is_divisible(&v1) {
            return Err(FormError);
        }
        let c3 = num / &v1;
        Ok((
            d1,
            Form {
                a: a3,
                b: b3,
                c: c3,
            },
        ))
    }

    pub fn square(&self) -> Result<Form, FormError> {
        self.compose(self)
    }

    /// `self^e` (reduced); `e` may be negative. The caller bounds the bit
    /// length of `e`.
    pub fn pow(&self, e: &Integer, d: &Integer) -> Result<Form, FormError> {
        Form::product(&[(self, e)], d)
    }

    /// `∏ f_i^{e_i}` (reduced) by simultaneous left-to-right binary powering
    /// (Straus): one squaring per bit of the largest exponent and one
    /// composition per set bit. Exponents may be negative.
    pub fn product(terms: &[(&Form, &Integer)], d: &Integer) -> Result<Form, FormError> {
        let mut bases = Vec::with_capacity(terms.len());
        let mut bits = 0;
        for (f, e) in terms {
            if e.is_zero() {
                continue;
            }
            let base = if **e < 0 { f.inverse() } else { (*f).clone() }.reduce()?;
            let mag = Integer::from(e.abs_ref());
            bits = bits.max(mag.significant_bits());
            bases.push((base, mag));
        }
        let mut acc: Option<Form> = None;
        for i in (0..bits).rev() {
            if let Some(a) = acc.take() {
                acc = Some(a.square()?);
            }
            for (base, mag) in &bases {
                if mag.get_bit(i) {
                    acc = Some(match acc.take() {
                        None => base.clone(),
                        Some(a) => a.compose(base)?,
                    });
                }
            }
        }
        Ok(acc.unwrap_or_else(|| Form::principal(d)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f(a: i64, b: i64, d: i64) -> Form {
        Form::new(Integer::from(a), Integer::from(b), &Integer::from(d)).unwrap()
    }

    #[test]
    fn class_group_of_minus_23_is_cyclic_of_order_3() {
        // Cl(-23) = {(1,1,6), (2,1,3), (2,-1,3)} (OEIS A006203 lists -23 with h = 3).
        let d = Integer::from(-23);
        let g = f(2, 1, -23);
        let g2 = g.square().unwrap();
        assert_eq!(g2, f(2, -1, -23));
        let g3 = g2.compose(&g).unwrap();
        assert_eq!(g3, Form::principal(&d));
        assert_eq!(g.pow(&Integer::from(3), &d).unwrap(), Form::principal(&d));
        assert_eq!(g.pow(&Integer::from(-1), &d).unwrap(), f(2, -1, -23));
    }

    #[test]
    fn reduction_is_idempotent_and_reduced() {
        let d = Integer::from(-3299);
        let x = f(825, 1, -3299).reduce().unwrap();
        assert!(x.is_reduced());
        assert_eq!(x.clone().reduce().unwrap(), x);
        let disc = Integer::from(x.b.square_ref()) - Integer::from(4) * &x.a * &x.c;
        assert_eq!(disc, d);
    }
}
