//! Prime ideals of an order in a number field, the generation statement,
//! and relations shown by an element (`general-fields.md`, "Prime
//! ideals" and "Relations"; registry entries `prime-ideals-residue-fields`,
//! `field-element-relations`, `bach-1990-number-field`).
//!
//! Each factor-base entry is checked to be a prime ideal with its `e` and
//! `f` ([`check_prime`]); the entries above one `p` must be all the primes
//! above it (`Σ e f = n`). Every `p` up to the generation bound must be
//! decomposed so, and so must every `p < X` dividing `disc(F)`, whose
//! splitting the Euler product needs.

use super::OrderArithmetic;
use crate::field::order::FieldOrder;
use crate::field::prime::{check_decomposition, check_prime, valuation, CheckedPrime};
use crate::limits::MAX_ELEMENT_BITS;
use crate::order::MaximalityOk;
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{FieldPrime, Relation, Witness};
use rug::ops::Pow;
use rug::Integer;

/// The arithmetic of an order of a number field, for the generic checks.
pub(crate) struct FieldArith<'a> {
    pub(crate) order: &'a FieldOrder,
}

impl OrderArithmetic for FieldArith<'_> {
    type Entry = FieldPrime;
    type Ideal = CheckedPrime;

    fn prime_ideal(&self, index: usize, q: &FieldPrime) -> Check<CheckedPrime> {
        check_prime(self.order, q.p, q.e, q.f, &q.pi, &q.generator, &q.anti).or_else(|e| {
            reject(
                Reason::FactorBaseInvalid,
                format!("factor base entry {index} (above p = {}): {e}", q.p),
            )
        })
    }

    fn prime_below(ideal: &CheckedPrime) -> u64 {
        ideal.p()
    }

    fn needs_ideal_above(&self, _p: u64) -> bool {
        true
    }

    /// `α` by its coordinates: `|N(α)| = ∏ N(P_i)^{e_i}` and
    /// `v_{P_i}(α) = e_i` for every listed `P_i` leave no room for another
    /// prime factor (`v_p(N α) = Σ_{P | p} f_P v_P(α)`).
    fn check_element_relation(
        &self,
        ideals: &[CheckedPrime],
        index: usize,
        relation: &Relation,
    ) -> Check<bool> {
        let bad = |why: String| {
            reject(
                Reason::RelationWitnessInvalid,
                format!("raw relation {index}: {why}"),
            )
        };
        let Witness::Coordinates { coordinates: a } = &relation.witness else {
            return reject(
                Reason::WitnessKind,
                format!("raw relation {index}: a number-field relation is shown by an element's coordinates"),
            );
        };
        if a.len() != self.order.degree() {
            return bad("the element has the wrong number of coordinates".into());
        }
        reject_if(
            a.iter().any(|c| c.significant_bits() > MAX_ELEMENT_BITS),
            Reason::OverLimit,
            format_args!(
                "raw relation {index}: a coordinate has more than {MAX_ELEMENT_BITS} bits"
            ),
        )?;
        let norm = self.order.norm(a);
        if norm == 0 {
            return bad("the element is zero".into());
        }
        let mut rest = Integer::from(norm.abs_ref());
        let mut prev = None;
        for (i, e) in &relation.entries {
            if prev.is_some_and(|p| p >= *i) {
                return bad("entries must be in increasing order of index".into());
            }
            prev = Some(*i);
            let Some(ideal) = ideals.get(*i as usize) else {
                return bad(format!("index {i} is outside the factor base"));
            };
            let Some(e) = e.to_u32().filter(|e| *e > 0 && *e <= MAX_ELEMENT_BITS) else {
                return bad(format!(
                    "the exponent at index {i} is not a positive valuation"
                ));
            };
            let Some(fe) = ideal.f().checked_mul(e) else {
                return bad(format!("the exponent at index {i} is too large"));
            };
            let q = Integer::from(ideal.p()).pow(fe);
            if !rest.is_divisible(&q) {
                return bad(format!("N(P_{i})^{e} does not divide the norm"));
            }
            rest /= q;
            if valuation(self.order, ideal, a, e + 1) != Some(e) {
                return bad(format!("the valuation at P_{i} is not {e}"));
            }
        }
        if rest != 1 {
            return bad("the norm has a factor outside the listed prime ideals".into());
        }
        Ok(norm < 0)
    }
}

/// Token: every entry is a prime ideal, grouped by `p` into whole
/// decompositions, covering every `p` up to the generation bound and every
/// `p < x` dividing `disc(F)`.
#[derive(Debug)]
pub(crate) struct FieldGenerationOk {
    theorem: &'static Theorem,
    bound: u64,
    ideals: Vec<CheckedPrime>,
    /// `(p, [(e, f)])` for every decomposed `p`, ascending.
    splitting: Vec<(u64, Vec<(u32, u32)>)>,
}

impl FieldGenerationOk {
    pub(crate) fn theorem(&self) -> &'static Theorem {
        self.theorem
    }
    pub(crate) fn bound(&self) -> u64 {
        self.bound
    }
    pub(crate) fn ideals(&self) -> &[CheckedPrime] {
        &self.ideals
    }
    /// The `(e, f)` of the primes above `p`, when the factor base lists them.
    pub(crate) fn splitting(&self, p: u64) -> Option<&[(u32, u32)]> {
        let i = self.splitting.binary_search_by_key(&p, |s| s.0).ok()?;
        self.splitting.get(i).map(|s| s.1.as_slice())
    }
}

/// The generation bound of `theorem_id` for `|disc(O)|`.
pub(crate) fn field_bound(theorem_id: &str, abs_disc: &Integer) -> Check<(&'static Theorem, u64)> {
    let theorem = match registry::lookup(theorem_id) {
        Some(t) if t.id == registry::BACH_NUMBER_FIELD => t,
        _ => {
            return reject(
                Reason::GenerationTheoremNotApplicable,
                format!(
                    "\"{}\" is not a generation bound for number fields",
                    registry::short_id(theorem_id)
                ),
            )
        }
    };
    match registry::generation_bound(theorem.id, abs_disc) {
        Some(b) => Ok((theorem, b)),
        None => reject(Reason::OverLimit, "the generation bound is out of range"),
    }
}

/// Checks the factor base. `primes` holds every prime up to
/// `max(bound, x)`; `disc_f` is `disc(F)`.
pub(crate) fn check_field_generation(
    arith: &FieldArith,
    (theorem, bound): (&'static Theorem, u64),
    maximality: &MaximalityOk,
    factor_base: &[FieldPrime],
    primes: &[u64],
    disc_f: &Integer,
    x: u64,
) -> Check<FieldGenerationOk> {
    super::generation::check_applicable(true, maximality, factor_base.len())?;
    let mut ideals = Vec::with_capacity(factor_base.len());
    for (i, entry) in factor_base.iter().enumerate() {
        if ideals
            .last()
            .is_some_and(|q: &CheckedPrime| q.p() > entry.p)
        {
            return reject(
                Reason::FactorBaseInvalid,
                format!("factor base entry {i}: entries must be grouped by p, ascending"),
            );
        }
        ideals.push(arith.prime_ideal(i, entry)?);
    }
    let mut splitting: Vec<(u64, Vec<(u32, u32)>)> = Vec::new();
    for group in ideals.chunk_by(|a, b| a.p() == b.p()) {
        let Some(first) = group.first() else { continue };
        let p = first.p();
        let refs: Vec<&CheckedPrime> = group.iter().collect();
        if let Err(e) = check_decomposition(arith.order, p, &refs) {
            return reject(
                Reason::FactorBaseGap,
                format!("the prime ideals listed above p = {p} are not all of them: {e}"),
            );
        }
        splitting.push((p, group.iter().map(|q| (q.e(), q.f())).collect()));
    }
    let listed = |p: u64| splitting.binary_search_by_key(&p, |s| s.0).is_ok();
    for &p in primes {
        let needed = p <= bound || (p < x && disc_f.is_divisible_u(p as u32));
        if p > bound && p >= x {
            break;
        }
        reject_if(
            needed && !listed(p),
            Reason::FactorBaseGap,
            format_args!(
                "the prime ideals above p = {p} are not listed (generation bound {bound}, X = {x})"
            ),
        )?;
    }
    Ok(FieldGenerationOk {
        theorem,
        bound,
        ideals,
        splitting,
    })
}
