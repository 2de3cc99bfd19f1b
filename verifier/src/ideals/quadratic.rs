//! Quadratic orders: the first implementation of [`OrderArithmetic`].
//!
//! The prime ideals of `O_D` prime to the conductor `f` are
//! `P = (p, (b + sqrt D)/2)` with `b² ≡ D (mod 4p)`: one above a
//! ramified `p` (`p | D`), two conjugate ones above a split `p`
//! (`(D/p) = 1`), none of norm `p` above an inert one (`(D/p) = -1`). The
//! conjugate has `-b` and is the inverse class, so one of a pair suffices
//! for generation (common practice; Cohen GTM 138, §5.2; Cox §7). As a
//! form, `P` is `(p, b, (b² - D)/4p)`.

use super::form::Form;
use super::OrderArithmetic;
use crate::arith::kronecker_prime;
use crate::order::ConductorOk;
use crate::relations::elements;
use crate::report::reason::{reject, Check, Reason};
use classcert_format::{PrimeIdeal, Relation};
use rug::Integer;

/// A checked prime ideal `(p, (b + sqrt D)/2)` with its form.
#[derive(Debug, Clone)]
pub(crate) struct QuadraticIdeal {
    pub(crate) p: u64,
    pub(crate) b: u64,
    pub(crate) form: Form,
}

/// The arithmetic of `O_D`.
pub(crate) struct QuadraticOrder<'a> {
    d: &'a Integer,
    conductor: &'a ConductorOk,
}

impl<'a> QuadraticOrder<'a> {
    pub(crate) fn new(d: &'a Integer, conductor: &'a ConductorOk) -> Self {
        QuadraticOrder { d, conductor }
    }
}

impl OrderArithmetic for QuadraticOrder<'_> {
    type Entry = PrimeIdeal;
    type Ideal = QuadraticIdeal;

    fn prime_ideal(&self, index: usize, entry: &PrimeIdeal) -> Check<QuadraticIdeal> {
        let PrimeIdeal::QuadraticForm { p, b } = entry;
        let (p, b) = (*p, *b);
        let bad = |why: &str| {
            reject(
                Reason::FactorBaseInvalid,
                format!("factor base entry {index} ({p}, {b}): {why}"),
            )
        };
        if self.conductor.trial_primes().binary_search(&p).is_err() {
            return bad("p is not a prime up to the trial-division bound");
        }
        if self.conductor.divides_conductor(p) {
            return bad("p divides the conductor, so its prime ideals are not invertible");
        }
        if b > p {
            return bad("b must satisfy 0 <= b <= p");
        }
        let Ok(form) = Form::new(Integer::from(p), Integer::from(b), self.d) else {
            return bad("b^2 is not ≡ D mod 4p");
        };
        Ok(QuadraticIdeal { p, b, form })
    }

    fn prime_below(ideal: &QuadraticIdeal) -> u64 {
        ideal.p
    }

    fn needs_ideal_above(&self, p: u64) -> bool {
        !self.conductor.divides_conductor(p) && kronecker_prime(self.d, p) != -1
    }

    fn check_element_relation(
        &self,
        ideals: &[QuadraticIdeal],
        index: usize,
        relation: &Relation,
    ) -> Check<bool> {
        let ideal = |i: u32| ideals.get(i as usize).map(|q| (q.p, q.b));
        elements::check_raw(self.d, &ideal, index, relation)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::order::check_conductor;

    #[test]
    fn prime_ideals_of_minus_300() {
        // D = -300 = 10² · -3: 2 and 5 divide the conductor; 7 splits in
        // Q(sqrt -3) (7 ≡ 1 mod 3), 11 is inert (common practice).
        let d = Integer::from(-300);
        let cond = check_conductor(&[(2, 1), (5, 1)], &d, 50).unwrap();
        let o = QuadraticOrder::new(&d, &cond);
        assert!(o.needs_ideal_above(7) && o.needs_ideal_above(3));
        assert!(!o.needs_ideal_above(2) && !o.needs_ideal_above(5) && !o.needs_ideal_above(11));
        let q = |p, b| PrimeIdeal::QuadraticForm { p, b };
        // 6² = 36 ≡ -300 (mod 28), so (7, 6, 12) is a form of discriminant -300
        assert_eq!(
            o.prime_ideal(0, &q(7, 6)).unwrap().form.c,
            Integer::from(12)
        );
        for bad in [q(7, 4), q(7, 3), q(5, 0), q(9, 0), q(53, 1), q(7, 8)] {
            assert_eq!(
                o.prime_ideal(0, &bad).unwrap_err().reason,
                Reason::FactorBaseInvalid
            );
        }
    }
}
