//! Step 2: relations hold (`docs/certificates.md`, section 2).
//!
//! A relation is a vector `e` over the factor base with `∏ P_i^{e_i}`
//! principal. It is shown in one of two ways, each checked exactly:
//! - [`forms`]: `D < 0`, the product of prime forms reduces to the
//!   principal form (reduced definite forms are unique in their class);
//! - [`elements`]: an element `α` with `(α) = ∏ P_i^{e_i}` (raw relations,
//!   used for `D > 0`, where reduced forms are not unique), and
//!   [`combinations`] of those raw relations for everything derived: the
//!   certificate's derived relations, checked in order right after the raw
//!   ones, then the rows of `H` and the eliminations, which may name raw
//!   and derived relations alike.

pub(crate) mod combinations;
pub(crate) mod elements;
pub(crate) mod forms;

use crate::ideals::form::Form;
use crate::ideals::OrderArithmetic;
use crate::limits::{MAX_COMBINATION_WORK, MAX_COMPOSITIONS, MAX_RAW_RELATIONS};
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, Check, Reason};
use classcert_format::{Relation, Witness};
use combinations::Checked;
use forms::Budget;
use rug::Integer;

/// Token: every raw relation holds by its element witness, and every
/// derived relation as the combination it states of those before it.
/// Empty when the order's relations are shown by form reduction instead.
#[derive(Debug)]
pub(crate) struct RawOk<'a> {
    relations: Option<Checked<'a>>,
    /// What is left of the combination budget after the derived relations.
    work: u64,
}

impl RawOk<'_> {
    /// No raw relations (form reduction), for unit tests of later steps.
    #[cfg(test)]
    pub(crate) fn for_tests() -> RawOk<'static> {
        RawOk {
            relations: None,
            work: 0,
        }
    }

    /// The registry entry element witnesses rest on, if any were used.
    pub(crate) fn theorem(&self) -> Option<&'static Theorem> {
        self.relations
            .and(registry::lookup(registry::ELEMENT_RELATIONS))
    }
}

/// Checks the raw relations, then the derived relations in order: raw
/// relations are required for `D > 0` (`needs_elements`), and both are
/// refused for `D < 0`, where form reduction shows every relation.
pub(crate) fn check_raw_relations<'a, A: OrderArithmetic>(
    arith: &A,
    ideals: &[A::Ideal],
    raw: &'a Option<Vec<Relation>>,
    derived: &'a Option<Vec<Relation>>,
    needs_elements: bool,
    beat: &mut dyn FnMut(),
) -> Check<RawOk<'a>> {
    let raw = match (raw, needs_elements) {
        (None, false) if derived.is_none() => {
            return Ok(RawOk {
                relations: None,
                work: 0,
            })
        }
        (Some(raw), true) => raw,
        (_, false) => {
            return reject(
                Reason::WitnessKind,
                "raw and derived relations (element and combination witnesses) are for D > 0",
            )
        }
        (None, true) => {
            return reject(
                Reason::WitnessKind,
                "D > 0 needs raw relations with element witnesses",
            )
        }
    };
    if raw.len() > MAX_RAW_RELATIONS {
        return reject(Reason::OverLimit, "too many raw relations");
    }
    for (k, rel) in raw.iter().enumerate() {
        if k % 4096 == 0 {
            beat();
        }
        arith.check_element_relation(ideals, k, rel)?;
    }
    let derived = derived.as_deref().unwrap_or_default();
    let mut work = MAX_COMBINATION_WORK;
    combinations::check_derived(raw, derived, &mut work, beat)?;
    Ok(RawOk {
        relations: Some(Checked { raw, derived }),
        work,
    })
}

/// How the relations of the lattice are shown to hold.
pub(crate) enum Witnesses<'a> {
    /// By reduction of products of prime forms (`D < 0`).
    Forms {
        forms: Vec<&'a Form>,
        d: &'a Integer,
        budget: Budget,
    },
    /// As combinations of checked raw and derived relations.
    Raw { pool: Checked<'a>, work: u64 },
}

impl<'a> Witnesses<'a> {
    /// Raw relations when there are any, form reduction otherwise.
    pub(crate) fn new(raw: &RawOk<'a>, forms: Vec<&'a Form>, d: &'a Integer) -> Self {
        match raw.relations {
            Some(pool) => Witnesses::Raw {
                pool,
                work: raw.work,
            },
            None => Witnesses::Forms {
                forms,
                d,
                budget: Budget::new(MAX_COMPOSITIONS),
            },
        }
    }

    /// The reason when a relation does not hold by its witness.
    pub(crate) fn failure(&self, elimination: bool) -> Reason {
        match (self, elimination) {
            (Witnesses::Raw { .. }, _) => Reason::CombinationMismatch,
            (Witnesses::Forms { .. }, false) => Reason::RelationNotPrincipal,
            (Witnesses::Forms { .. }, true) => Reason::EliminationNotPrincipal,
        }
    }

    /// True if the relation `entries` (sparse, by factor-base index, in
    /// increasing order) holds by `witness`.
    pub(crate) fn holds(
        &mut self,
        entries: &[(usize, &Integer)],
        witness: &Witness,
        what: &str,
    ) -> Check<bool> {
        match (self, witness) {
            (Witnesses::Forms { forms, d, budget }, Witness::FormReduction) => {
                forms::is_principal(forms, entries, d, budget)
            }
            (Witnesses::Raw { pool, work }, Witness::Combination { terms }) => {
                let sum = combinations::combine(*pool, terms, work)?;
                Ok(combinations::equals(entries, &sum))
            }
            (Witnesses::Forms { .. }, _) => reject(
                Reason::WitnessKind,
                format!("{what}: D < 0 relations are shown by form reduction"),
            ),
            (Witnesses::Raw { .. }, _) => reject(
                Reason::WitnessKind,
                format!(
                    "{what}: D > 0 relations are shown as combinations of raw and derived relations"
                ),
            ),
        }
    }
}
