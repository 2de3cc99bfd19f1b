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
use crate::limits::MAX_RAW_RELATIONS;
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Relation, Witness};
use combinations::Checked;
use forms::Powers;
use rug::Integer;

/// Token: every raw relation holds by its element witness, and every
/// derived relation as the combination it states of those before it.
/// Empty when the order's relations are shown by form reduction instead.
#[derive(Debug)]
pub(crate) struct RawOk<'a> {
    relations: Option<Checked<'a>>,
}

impl RawOk<'_> {
    /// No raw relations (form reduction), for unit tests of later steps.
    #[cfg(test)]
    pub(crate) fn for_tests() -> RawOk<'static> {
        RawOk { relations: None }
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
        (None, false) if derived.is_none() => return Ok(RawOk { relations: None }),
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
    reject_if(
        raw.len() > MAX_RAW_RELATIONS,
        Reason::OverLimit,
        "too many raw relations",
    )?;
    for (k, rel) in raw.iter().enumerate() {
        if k % 4096 == 0 {
            beat();
        }
        arith.check_element_relation(ideals, k, rel)?;
    }
    let derived = derived.as_deref().unwrap_or_default();
    combinations::check_derived(raw, derived, beat)?;
    Ok(RawOk {
        relations: Some(Checked { raw, derived }),
    })
}

/// How the relations of the lattice are shown to hold.
pub(crate) enum Witnesses<'a> {
    /// By reduction of products of prime forms (`D < 0`), or by an
    /// element (`elements` counts those checked so).
    Forms {
        forms: Vec<&'a Form>,
        d: &'a Integer,
        powers: Powers,
        elements: usize,
    },
    /// As combinations of checked raw and derived relations.
    Raw { pool: Checked<'a> },
}

impl<'a> Witnesses<'a> {
    /// Raw relations when there are any, form reduction otherwise.
    pub(crate) fn new(raw: &RawOk<'a>, forms: Vec<&'a Form>, d: &'a Integer) -> Self {
        match raw.relations {
            Some(pool) => Witnesses::Raw { pool },
            None => Witnesses::Forms {
                forms,
                d,
                powers: Powers::default(),
                elements: 0,
            },
        }
    }

    /// The registry entry element witnesses rest on, when a relation shown
    /// by form reduction otherwise carried one (`D < 0`); the raw relations
    /// of `D > 0` name it through [`RawOk::theorem`].
    pub(crate) fn theorem(&self) -> Option<&'static Theorem> {
        match self {
            Witnesses::Forms { elements, .. } if *elements > 0 => {
                registry::lookup(registry::ELEMENT_RELATIONS)
            }
            _ => None,
        }
    }

    /// Whether relations are shown as combinations of raw ones.
    pub(crate) fn by_combinations(&self) -> bool {
        matches!(self, Witnesses::Raw { .. })
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
            (
                Witnesses::Forms {
                    forms, d, powers, ..
                },
                Witness::FormReduction,
            ) => forms::is_principal(forms, entries, d, powers),
            // A sieved relation's element: its norm and one residue per
            // prime show it (section 2), without form arithmetic.
            (
                Witnesses::Forms {
                    forms, d, elements, ..
                },
                Witness::Element { x, y },
            ) => {
                let ideal = |i: u32| {
                    let f = forms.get(i as usize)?;
                    Some((f.a.to_u64()?, f.b.to_u64()?))
                };
                let mut sparse = Vec::with_capacity(entries.len());
                for (i, e) in entries {
                    let Ok(i) = u32::try_from(*i) else {
                        return reject(Reason::OverLimit, format!("{what}: index {i}"));
                    };
                    sparse.push((i, *e));
                }
                elements::check_element(d, &ideal, what, &sparse, x, y)?;
                *elements += 1;
                Ok(true)
            }
            (Witnesses::Raw { pool }, Witness::Combination { terms }) => {
                let sum = combinations::combine(*pool, terms)?;
                Ok(combinations::equals(entries, &sum))
            }
            (Witnesses::Forms { .. }, _) => reject(
                Reason::WitnessKind,
                format!("{what}: D < 0 relations are shown by form reduction or by an element"),
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
