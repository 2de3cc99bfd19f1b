//! Prime ideals of the order, and the statement that they generate its
//! class group (`docs/certificates.md`, sections 1 and 2).
//!
//! [`OrderArithmetic`] is the seam between the checks and the arithmetic of
//! one kind of order: what a factor-base entry means, which primes need an
//! ideal in the factor base, and how an element witness is checked. The
//! checks in [`generation`], `relations/` and `lattice/` are written against
//! it; quadratic orders ([`quadratic`]) are its first implementation, and
//! orders in number fields of higher degree add an implementation rather
//! than new checks. Binary quadratic forms ([`form`]) are the quadratic
//! orders' own arithmetic of ideal classes.

pub(crate) mod field;
pub(crate) mod form;
pub(crate) mod generation;
pub(crate) mod quadratic;

use crate::report::reason::Check;
use classcert_format::Relation;

/// The arithmetic of an order that the checks need.
pub(crate) trait OrderArithmetic {
    /// A factor-base entry as the certificate states it.
    type Entry;
    /// A factor-base entry once checked to be an invertible prime ideal.
    type Ideal;

    /// Checks factor-base entry `index`: a prime ideal of the order,
    /// invertible (prime to the conductor), above a prime the trial
    /// division reached.
    fn prime_ideal(&self, index: usize, entry: &Self::Entry) -> Check<Self::Ideal>;

    /// The rational prime below `ideal`.
    fn prime_below(ideal: &Self::Ideal) -> u64;

    /// Whether a generation statement over all prime ideals of norm up to
    /// a bound needs an ideal above `p` in the factor base: `p` has an
    /// invertible prime ideal above it (and, for quadratic orders, one of a
    /// conjugate pair stands for both, its conjugate being its inverse).
    fn needs_ideal_above(&self, p: u64) -> bool;

    /// Checks the ideal equation of raw relation `index` from its element
    /// witness; returns whether the element has negative norm.
    fn check_element_relation(
        &self,
        ideals: &[Self::Ideal],
        index: usize,
        relation: &Relation,
    ) -> Check<bool>;
}
