//! Relations as integer combinations of checked ones (`docs/certificates.md`,
//! sections 2 and 3): an integer combination of relations is a relation.
//!
//! The relations a combination may name form one list: the `R` raw
//! relations (indices `0..R`, checked by their elements), then the derived
//! relations (index `R + m` for derived relation `m`). Derived relations
//! are checked in order, each as a combination of raw relations and of
//! derived relations before it ([`check_derived`]); so when a row of `H` or
//! an elimination names any of them, every relation it names already
//! holds. The order is what makes this sound: a derived relation that
//! named itself or a later one would rest on a claim not yet checked.

use crate::limits::{MAX_DERIVED_RELATIONS, MAX_ENTRY_BITS, MAX_RELATION_ENTRIES};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Relation, Witness};
use rug::Integer;
use std::collections::BTreeMap;

/// The relations a combination may name: `raw` (indices `0..R`), then
/// `derived` (index `R + m`).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Checked<'a> {
    pub(crate) raw: &'a [Relation],
    pub(crate) derived: &'a [Relation],
}

impl<'a> Checked<'a> {
    /// The relation of index `j`, if it is in this list.
    fn get(&self, j: u32) -> Option<&'a Relation> {
        let j = j as usize;
        match j.checked_sub(self.raw.len()) {
            None => self.raw.get(j),
            Some(m) => self.derived.get(m),
        }
    }

    fn len(&self) -> usize {
        self.raw.len() + self.derived.len()
    }
}

/// `Σ c · rel[j].entries` over `terms = [(j, c)]`, the relations taken from
/// `pool` (their work is bounded before it starts, `limits::estimate`).
pub(crate) fn combine(pool: Checked, terms: &[(u32, Integer)]) -> Check<BTreeMap<u32, Integer>> {
    let mut acc: BTreeMap<u32, Integer> = BTreeMap::new();
    let mut prev: Option<u32> = None;
    for (j, c) in terms {
        reject_if(
            prev.is_some_and(|q| q >= *j) || c.is_zero(),
            Reason::CombinationMismatch,
            "combination terms must be nonzero and in increasing index order",
        )?;
        prev = Some(*j);
        reject_if(
            c.significant_bits() > MAX_ENTRY_BITS,
            Reason::OverLimit,
            "a combination coefficient is too large",
        )?;
        let Some(rel) = pool.get(*j) else {
            return reject(
                Reason::CombinationMismatch,
                format!(
                    "combination names relation {j}; only the {} raw relations and {} derived \
                     relations before it may be named",
                    pool.raw.len(),
                    pool.derived.len()
                ),
            );
        };
        for (i, e) in &rel.entries {
            *acc.entry(*i).or_default() += Integer::from(c * e);
        }
    }
    acc.retain(|_, v| !v.is_zero());
    Ok(acc)
}

/// True if the sparse vector `entries` (increasing indices, nonzero) is
/// `sum`.
pub(crate) fn equals(entries: &[(usize, &Integer)], sum: &BTreeMap<u32, Integer>) -> bool {
    sum.len() == entries.len()
        && entries
            .iter()
            .all(|(i, e)| u32::try_from(*i).ok().and_then(|i| sum.get(&i)) == Some(*e))
}

/// Checks the derived relations in order: derived relation `m` must be the
/// combination its witness states of raw relations and derived relations
/// `0..m`, and its entries must be a well-formed sparse vector (increasing
/// indices, nonzero values within the size cap), since later combinations
/// add them up as stated. `beat` is called now and then.
pub(crate) fn check_derived(
    raw: &[Relation],
    derived: &[Relation],
    beat: &mut dyn FnMut(),
) -> Check<()> {
    reject_if(
        derived.len() > MAX_DERIVED_RELATIONS,
        Reason::OverLimit,
        "too many derived relations",
    )?;
    for (m, rel) in derived.iter().enumerate() {
        if m % 4096 == 0 {
            beat();
        }
        reject_if(
            rel.entries.len() > MAX_RELATION_ENTRIES,
            Reason::OverLimit,
            "a relation has too many entries",
        )?;
        let mut prev: Option<u32> = None;
        for (i, e) in &rel.entries {
            reject_if(
                prev.is_some_and(|q| q >= *i) || e.is_zero(),
                Reason::CombinationMismatch,
                format_args!(
                    "derived relation {m}: entries must be nonzero and in increasing index order"
                ),
            )?;
            prev = Some(*i);
            reject_if(
                e.significant_bits() > MAX_ENTRY_BITS,
                Reason::OverLimit,
                format_args!("derived relation {m}: an entry is too large"),
            )?;
        }
        let Witness::Combination { terms } = &rel.witness else {
            return reject(
                Reason::WitnessKind,
                format!("derived relation {m} must carry a combination witness"),
            );
        };
        // only the relations before this one: raw ones and derived 0..m
        let pool = Checked {
            raw,
            derived: derived.get(..m).unwrap_or_default(),
        };
        if let Some((j, _)) = terms.iter().find(|(j, _)| *j as usize >= pool.len()) {
            return reject(
                Reason::CombinationMismatch,
                format!(
                    "derived relation {m} (index {}) names relation {j}, which is not before it",
                    raw.len() + m
                ),
            );
        }
        let sum = combine(pool, terms)?;
        let entries: Vec<(usize, &Integer)> =
            rel.entries.iter().map(|(i, e)| (*i as usize, e)).collect();
        reject_if(
            !equals(&entries, &sum),
            Reason::CombinationMismatch,
            format_args!("derived relation {m} is not the combination its witness states"),
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::Witness;

    // The relations below are made-up vectors: these tests check the
    // bookkeeping of combinations (sums, order, indices), which does not
    // depend on the vectors being relations of an actual order.

    fn rel(entries: Vec<(u32, i64)>) -> Relation {
        Relation {
            entries: entries
                .into_iter()
                .map(|(i, e)| (i, Integer::from(e)))
                .collect(),
            witness: Witness::Element {
                x: Integer::new(),
                y: Integer::new(),
            },
        }
    }

    fn derived(entries: Vec<(u32, i64)>, terms: Vec<(u32, i64)>) -> Relation {
        Relation {
            witness: Witness::Combination {
                terms: terms
                    .into_iter()
                    .map(|(j, c)| (j, Integer::from(c)))
                    .collect(),
            },
            ..rel(entries)
        }
    }

    fn raw() -> Vec<Relation> {
        vec![rel(vec![(0, 1), (2, -1)]), rel(vec![(0, 1), (1, 3)])]
    }

    /// The reason of a refusal, `None` when the check passes.
    fn reason(r: Check<()>) -> Option<Reason> {
        r.err().map(|e| e.reason)
    }

    #[test]
    fn combinations_add_up() {
        let raw = raw();
        let pool = Checked {
            raw: &raw,
            derived: &[],
        };
        let t = vec![(0u32, Integer::from(2)), (1u32, Integer::from(-2))];
        let c = combine(pool, &t).unwrap();
        let got: Vec<(u32, i64)> = c.iter().map(|(i, e)| (*i, e.to_i64().unwrap())).collect();
        // 2 (e_0 - e_2) - 2 (e_0 + 3 e_1) = -6 e_1 - 2 e_2
        assert_eq!(got, vec![(1, -6), (2, -2)]);
        let bad = vec![(1u32, Integer::from(1)), (0u32, Integer::from(1))];
        assert!(combine(pool, &bad).is_err());
    }

    #[test]
    fn derived_relations_in_order_hold() {
        let raw = raw();
        // d_0 = r_0 - r_1 = -3 e_1 - e_2 (index 2); d_1 = 2 d_0 + r_0 (index 3)
        let d = vec![
            derived(vec![(1, -3), (2, -1)], vec![(0, 1), (1, -1)]),
            derived(vec![(0, 1), (1, -6), (2, -3)], vec![(0, 1), (2, 2)]),
        ];
        assert_eq!(reason(check_derived(&raw, &d, &mut || {})), None);
        // then an elimination or a row of H may name either
        let pool = Checked {
            raw: &raw,
            derived: &d,
        };
        let sum = combine(pool, &[(3, Integer::from(1))]).unwrap();
        let one = Integer::from(1);
        let m6 = Integer::from(-6);
        let m3 = Integer::from(-3);
        assert!(equals(&[(0, &one), (1, &m6), (2, &m3)], &sum));
    }

    #[test]
    fn a_derived_relation_may_not_name_itself_or_a_later_one() {
        let raw = raw();
        // d_0 names itself (index 2): the entries would be any vector at all
        let own = vec![derived(vec![(5, 7)], vec![(2, 1)])];
        assert_eq!(
            reason(check_derived(&raw, &own, &mut || {})),
            Some(Reason::CombinationMismatch)
        );
        // d_0 names d_1 (index 3), which names d_0: a cycle of claims
        let cycle = vec![
            derived(vec![(5, 7)], vec![(3, 1)]),
            derived(vec![(5, 7)], vec![(2, 1)]),
        ];
        assert_eq!(
            reason(check_derived(&raw, &cycle, &mut || {})),
            Some(Reason::CombinationMismatch)
        );
        // an index beyond every relation
        let far = vec![derived(vec![(5, 7)], vec![(u32::MAX, 1)])];
        assert_eq!(
            reason(check_derived(&raw, &far, &mut || {})),
            Some(Reason::CombinationMismatch)
        );
    }

    #[test]
    fn a_wrong_derived_entry_is_refused() {
        let raw = raw();
        // r_0 - r_1 is -3 e_1 - e_2, not -3 e_1 - 2 e_2
        let wrong = vec![derived(vec![(1, -3), (2, -2)], vec![(0, 1), (1, -1)])];
        assert_eq!(
            reason(check_derived(&raw, &wrong, &mut || {})),
            Some(Reason::CombinationMismatch)
        );
        // the right entries twice over at one index: refused as malformed
        let doubled = vec![derived(vec![(1, -3), (1, -3)], vec![(0, 1), (1, -1)])];
        assert_eq!(
            reason(check_derived(&raw, &doubled, &mut || {})),
            Some(Reason::CombinationMismatch)
        );
        // a derived relation shown by an element: the wrong kind
        let element = vec![rel(vec![(1, -3), (2, -1)])];
        assert_eq!(
            reason(check_derived(&raw, &element, &mut || {})),
            Some(Reason::WitnessKind)
        );
    }
}
