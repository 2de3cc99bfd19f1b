//! Derived relations as integer combinations of raw ones (`docs/certificates.md`,
//! section 3): an integer combination of relations is a relation, so a
//! row of `H` or an elimination is shown by its coefficients over the raw
//! relations, summed exactly under a work budget.

use crate::limits::MAX_ENTRY_BITS;
use crate::report::reason::{reject, Check, Reason};
use classcert_format::Relation;
use rug::Integer;
use std::collections::BTreeMap;

/// `Σ c · raw[j].entries` over `terms = [(j, c)]`, with `work` charged one
/// unit per entry touched.
pub(crate) fn combine(
    raw: &[Relation],
    terms: &[(u32, Integer)],
    work: &mut u64,
) -> Check<BTreeMap<u32, Integer>> {
    let mut acc: BTreeMap<u32, Integer> = BTreeMap::new();
    let mut prev: Option<u32> = None;
    for (j, c) in terms {
        if prev.is_some_and(|q| q >= *j) || c.is_zero() {
            return reject(
                Reason::CombinationMismatch,
                "combination terms must be nonzero and in increasing index order",
            );
        }
        prev = Some(*j);
        if c.significant_bits() > MAX_ENTRY_BITS {
            return reject(Reason::OverLimit, "a combination coefficient is too large");
        }
        let Some(rel) = raw.get(*j as usize) else {
            return reject(
                Reason::CombinationMismatch,
                format!("combination names raw relation {j}, which does not exist"),
            );
        };
        let cost = rel.entries.len() as u64 + 1;
        if cost > *work {
            return reject(
                Reason::OverLimit,
                "combinations need more work than the verifier allows",
            );
        }
        *work -= cost;
        for (i, e) in &rel.entries {
            *acc.entry(*i).or_default() += Integer::from(c * e);
        }
    }
    acc.retain(|_, v| !v.is_zero());
    Ok(acc)
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::Witness;

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

    #[test]
    fn combinations_add_up() {
        let raw = vec![rel(vec![(0, 1), (2, -1)]), rel(vec![(0, 1), (1, 3)])];
        let mut work = 100;
        let t = vec![(0u32, Integer::from(2)), (1u32, Integer::from(-2))];
        let c = combine(&raw, &t, &mut work).unwrap();
        let got: Vec<(u32, i64)> = c.iter().map(|(i, e)| (*i, e.to_i64().unwrap())).collect();
        assert_eq!(got, vec![(1, -6), (2, -2)]);
        let bad = vec![(1u32, Integer::from(1)), (0u32, Integer::from(1))];
        assert!(combine(&raw, &bad, &mut work).is_err());
    }
}
