//! Step 1: the factor base generates the class group (`docs/certificates.md`,
//! section 1).
//!
//! A generation statement from the registry says that the invertible prime
//! ideals of norm up to a bound `B_gen` generate `Cl(O)`: Bach's bound for
//! the maximal order under GRH, a larger one for any order, or (without
//! GRH, `D < 0` only) the reduced-forms bound `sqrt(|D|/3)`. The check is
//! coverage: every prime `p <= B_gen` that has such an ideal has one in the
//! factor base.

use super::OrderArithmetic;
use crate::limits::MAX_FACTOR_BASE;
use crate::order::{MaximalityOk, OrderOk};
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, reject_if, Check, Reason};

/// The generation statement a certificate names, with its bound. Not yet
/// a token: nothing has been checked against it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Statement {
    theorem: &'static Theorem,
    bound: u64,
}

impl Statement {
    pub(crate) fn bound(&self) -> u64 {
        self.bound
    }
}

/// Looks up the statement named `id` and computes its bound for `order`.
pub(crate) fn statement(id: &str, order: &OrderOk) -> Check<Statement> {
    let Some(theorem) = registry::lookup(id) else {
        return reject(
            Reason::UnknownTheorem,
            format!(
                "\"{}\" is not in the theorem registry",
                registry::short_id(id)
            ),
        );
    };
    let Some(bound) = registry::generation_bound(theorem.id, order.abs_d()) else {
        return reject(
            Reason::UnknownTheorem,
            format!("\"{}\" is not a generation bound", theorem.id),
        );
    };
    reject_if(
        theorem.id == registry::REDUCED_FORMS && order.is_real(),
        Reason::GenerationTheoremNotApplicable,
        "the reduced-forms bound holds for definite forms, that is for D < 0 only",
    )?;
    Ok(Statement { theorem, bound })
}

/// Token: every prime up to `B_gen` that needs an ideal has one in the
/// factor base, and every entry is an invertible prime ideal.
#[derive(Debug)]
pub(crate) struct GenerationOk<I> {
    theorem: &'static Theorem,
    bound: u64,
    ideals: Vec<I>,
}

impl<I> GenerationOk<I> {
    pub(crate) fn theorem(&self) -> &'static Theorem {
        self.theorem
    }

    pub(crate) fn bound(&self) -> u64 {
        self.bound
    }

    /// The factor base, checked, in certificate order.
    pub(crate) fn ideals(&self) -> &[I] {
        &self.ideals
    }
}

/// A bound for the maximal order only (`field_only`) needs certified
/// maximality; and the factor base has at most [`MAX_FACTOR_BASE`] entries.
pub(crate) fn check_applicable(field_only: bool, m: &MaximalityOk, entries: usize) -> Check<()> {
    reject_if(
        field_only && !m.is_maximal(),
        Reason::GenerationTheoremNotApplicable,
        "this generation bound holds for the maximal order only, and maximality is not certified",
    )?;
    let why = "factor base too large";
    reject_if(entries > MAX_FACTOR_BASE, Reason::OverLimit, why)
}

/// Checks the factor base against `statement`; `primes` holds every prime
/// up to the trial-division bound, which is at least `B_gen`.
pub(crate) fn check_generation<A: OrderArithmetic>(
    arith: &A,
    statement: Statement,
    maximality: &MaximalityOk,
    factor_base: &[A::Entry],
    primes: &[u64],
) -> Check<GenerationOk<A::Ideal>> {
    let Statement { theorem, bound } = statement;
    let field_only = theorem.id == registry::BACH_FIELD || theorem.id == registry::REDUCED_FORMS;
    check_applicable(field_only, maximality, factor_base.len())?;
    let mut ideals = Vec::with_capacity(factor_base.len());
    let mut prev = 0u64;
    for (i, entry) in factor_base.iter().enumerate() {
        let ideal = arith.prime_ideal(i, entry)?;
        let p = A::prime_below(&ideal);
        // One ideal per prime: a quadratic order needs one of a conjugate
        // pair, since the other is its inverse.
        reject_if(
            p <= prev,
            Reason::FactorBaseInvalid,
            format_args!(
                "factor base entry {i}: entries must be in strictly increasing order of p"
            ),
        )?;
        prev = p;
        ideals.push(ideal);
    }
    let mut listed = ideals.iter().map(A::prime_below).peekable();
    for &p in primes.iter().take_while(|&&p| p <= bound) {
        while listed.peek().is_some_and(|&q| q < p) {
            listed.next();
        }
        reject_if(
            arith.needs_ideal_above(p) && listed.peek() != Some(&p),
            Reason::FactorBaseGap,
            format_args!(
                "no prime ideal above p = {p} in the factor base (generation bound {bound})"
            ),
        )?;
    }
    Ok(GenerationOk {
        theorem,
        bound,
        ideals,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ideals::quadratic::QuadraticOrder;
    use crate::order::{check_conductor, check_discriminant, check_maximality};
    use classcert_format::PrimeIdeal;
    use classcert_format::{Order, PrimalityEvidence, PrimePower};
    use rug::Integer;

    fn q(p: u64, b: u64) -> PrimeIdeal {
        PrimeIdeal::QuadraticForm { p, b }
    }

    #[test]
    fn coverage_of_minus_23() {
        // D = -23: 2, 3 split (−23 ≡ 1 mod 8, −23 ≡ 1 mod 3), 5 and 7 are
        // inert, 13 splits (common practice). Bach's bound 6 log²23 ≈ 59
        // needs every split or ramified prime up to 59.
        let d = Integer::from(-23);
        let order = check_discriminant(&Order::Quadratic {
            discriminant: d.clone(),
        })
        .unwrap();
        let cond = check_conductor(&[], &d, 100).unwrap();
        let arith = QuadraticOrder::new(&d, &cond);
        let max = check_maximality(
            &Some(vec![PrimePower {
                prime: Integer::from(23),
                exponent: 1,
                evidence: PrimalityEvidence::Bpsw,
            }]),
            &d,
        )
        .unwrap();
        let st = statement(registry::BACH_FIELD, &order).unwrap();
        assert!(st.bound() == 59, "{}", st.bound());
        let full = vec![
            q(2, 1),
            q(3, 1),
            q(13, 9),
            q(23, 23),
            q(29, 21),
            q(31, 15),
            q(41, 31),
            q(47, 27),
            q(59, 53),
        ];
        let ok = check_generation(&arith, st, &max, &full, cond.trial_primes());
        assert!(ok.is_ok(), "{:?}", ok.err());
        // drop 13: a gap
        let gap: Vec<PrimeIdeal> = full.iter().filter(|e| **e != q(13, 9)).cloned().collect();
        let e = check_generation(&arith, st, &max, &gap, cond.trial_primes()).unwrap_err();
        assert_eq!(e.reason, Reason::FactorBaseGap);
        // out of order
        let mut swapped = full.clone();
        swapped.swap(0, 1);
        let e = check_generation(&arith, st, &max, &swapped, cond.trial_primes()).unwrap_err();
        assert_eq!(e.reason, Reason::FactorBaseInvalid);
        // the field bound without certified maximality
        let none = check_maximality(&None, &d).unwrap();
        let e = check_generation(&arith, st, &none, &full, cond.trial_primes()).unwrap_err();
        assert_eq!(e.reason, Reason::GenerationTheoremNotApplicable);
    }

    #[test]
    fn reduced_forms_bound_is_for_definite_forms_only() {
        let order = check_discriminant(&Order::Quadratic {
            discriminant: Integer::from(316),
        })
        .unwrap();
        let e = statement(registry::REDUCED_FORMS, &order).unwrap_err();
        assert_eq!(e.reason, Reason::GenerationTheoremNotApplicable);
        let e = statement("no-such-theorem", &order).unwrap_err();
        assert_eq!(e.reason, Reason::UnknownTheorem);
    }
}
