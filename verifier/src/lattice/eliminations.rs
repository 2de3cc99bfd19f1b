//! Eliminations (`docs/certificates.md`, section 3): each factor-base ideal outside
//! the generator block is `±1` times a product of ideals already accounted
//! for, by a relation. So its class lies in the subgroup the generators
//! span, and `Z^n / L` is the quotient of the generator block alone.

use crate::limits::MAX_RELATION_ENTRIES;
use crate::relations::Witnesses;
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::Elimination;
use rug::Integer;

/// Checks `eliminations` in order; `known[i]` is true for the generators
/// on entry, and for every ideal on success.
pub(crate) fn check_eliminations(
    eliminations: &[Elimination],
    known: &mut [bool],
    witnesses: &mut Witnesses,
) -> Check<()> {
    reject_if(
        eliminations.len() > known.len(),
        Reason::EliminationStructure,
        "more eliminations than factor-base ideals",
    )?;
    for (k, el) in eliminations.iter().enumerate() {
        let p = el.pivot as usize;
        reject_if(
            known.get(p).copied() != Some(false),
            Reason::EliminationStructure,
            format_args!("elimination {k}: pivot {p} is already accounted for or out of range"),
        )?;
        let ents = &el.relation.entries;
        reject_if(
            ents.len() > MAX_RELATION_ENTRIES,
            Reason::OverLimit,
            "a relation has too many entries",
        )?;
        let mut prev: Option<u32> = None;
        let mut pivot_ok = false;
        for (i, e) in ents {
            reject_if(
                prev.is_some_and(|q| q >= *i) || e.is_zero(),
                Reason::EliminationStructure,
                format_args!(
                    "elimination {k}: entries must be nonzero and in increasing index order"
                ),
            )?;
            prev = Some(*i);
            if *i as usize == p {
                pivot_ok = *e == 1 || *e == -1;
            } else if known.get(*i as usize).copied() != Some(true) {
                return reject(
                    Reason::EliminationStructure,
                    format!("elimination {k}: index {i} is not yet accounted for"),
                );
            }
        }
        reject_if(
            !pivot_ok,
            Reason::EliminationStructure,
            format_args!("elimination {k}: the pivot's coefficient must be ±1"),
        )?;
        let entries: Vec<(usize, &Integer)> = ents.iter().map(|(i, e)| (*i as usize, e)).collect();
        reject_if(
            !witnesses.holds(&entries, &el.relation.witness, &format!("elimination {k}"))?,
            witnesses.failure(true),
            format_args!("elimination {k} (pivot {p}) does not hold by its witness"),
        )?;
        if let Some(slot) = known.get_mut(p) {
            *slot = true;
        }
    }
    if let Some(missing) = known.iter().position(|k| !k) {
        return reject(
            Reason::EliminationIncomplete,
            format!("factor-base ideal {missing} is neither a generator nor eliminated"),
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ideals::form::Form;
    use crate::relations::RawOk;
    use classcert_format::{Relation, Witness};

    fn el(pivot: u32, entries: &[(u32, i64)]) -> Elimination {
        Elimination {
            pivot,
            relation: Relation {
                entries: entries
                    .iter()
                    .map(|&(i, e)| (i, Integer::from(e)))
                    .collect(),
                witness: Witness::FormReduction,
            },
        }
    }

    #[test]
    fn eliminations_of_minus_23() {
        // D = -23: P_2 = (2, 1, 3) and P_3 = (3, 1, 2) ~ (2, -1, 3) = P_2^{-1}
        // (reduction of (3, 1, 2); common practice), so P_2 P_3 is principal.
        let d = Integer::from(-23);
        let f2 = Form::new(Integer::from(2), Integer::from(1), &d).unwrap();
        let f3 = Form::new(Integer::from(3), Integer::from(1), &d).unwrap();
        let raw = RawOk::for_tests();
        let mk = || Witnesses::new(&raw, vec![&f2, &f3], &d);
        let mut known = vec![true, false];
        assert!(check_eliminations(&[el(1, &[(0, 1), (1, 1)])], &mut known, &mut mk()).is_ok());
        // P_2 P_3^-1 = P_2^2 is not principal
        let mut known = vec![true, false];
        let e =
            check_eliminations(&[el(1, &[(0, 1), (1, -1)])], &mut known, &mut mk()).unwrap_err();
        assert_eq!(e.reason, Reason::EliminationNotPrincipal);
        // pivot coefficient 2
        let mut known = vec![true, false];
        let e = check_eliminations(&[el(1, &[(0, 1), (1, 2)])], &mut known, &mut mk()).unwrap_err();
        assert_eq!(e.reason, Reason::EliminationStructure);
        // nothing eliminates ideal 1
        let mut known = vec![true, false];
        let e = check_eliminations(&[], &mut known, &mut mk()).unwrap_err();
        assert_eq!(e.reason, Reason::EliminationIncomplete);
        // a pivot that is a generator
        let mut known = vec![true, false];
        let e = check_eliminations(&[el(0, &[(0, 1)])], &mut known, &mut mk()).unwrap_err();
        assert_eq!(e.reason, Reason::EliminationStructure);
        // The same relation by an element, as a sieved one carries it:
        // α = (1 + sqrt -23)/2 has norm (1 + 23)/4 = 6 and lies in
        // P_2 = (2, (1 + sqrt -23)/2) and P_3 = (3, (1 + sqrt -23)/2), since
        // (x - y b)/2 = 0 (worked by hand; common practice), so
        // (α) = P_2 P_3, which the forms above confirm.
        let by_element = |entries: &[(u32, i64)], x: i64| {
            let mut e = el(1, entries);
            e.relation.witness = Witness::Element {
                x: Integer::from(x),
                y: Integer::from(1),
            };
            e
        };
        let mut known = vec![true, false];
        let mut w = mk();
        assert!(w.theorem().is_none());
        assert!(
            check_eliminations(&[by_element(&[(0, 1), (1, 1)], 1)], &mut known, &mut w).is_ok()
        );
        assert!(
            w.theorem().is_some(),
            "the element check's theorem is named"
        );
        // its conjugate, -ᾱ = (-1 + sqrt -23)/2, generates P̄_2 P̄_3
        let mut known = vec![true, false];
        let r = check_eliminations(
            &[by_element(&[(0, -1), (1, -1)], -1)],
            &mut known,
            &mut mk(),
        );
        assert!(r.is_ok());
        // a wrong sign: α lies in P_3, not in its conjugate
        let mut known = vec![true, false];
        let e = check_eliminations(&[by_element(&[(0, 1), (1, -1)], 1)], &mut known, &mut mk())
            .unwrap_err();
        assert_eq!(e.reason, Reason::RelationWitnessInvalid);
        // a norm that does not match: (3 + sqrt -23)/2 has norm 8
        let mut known = vec![true, false];
        let e = check_eliminations(&[by_element(&[(0, 1), (1, 1)], 3)], &mut known, &mut mk())
            .unwrap_err();
        assert_eq!(e.reason, Reason::RelationWitnessInvalid);
    }

    fn relation(entries: &[(u32, i64)], witness: Witness) -> Relation {
        Relation {
            entries: entries
                .iter()
                .map(|&(i, e)| (i, Integer::from(e)))
                .collect(),
            witness,
        }
    }

    fn terms(t: &[(u32, i64)]) -> Witness {
        Witness::Combination {
            terms: t.iter().map(|&(j, c)| (j, Integer::from(c))).collect(),
        }
    }

    #[test]
    fn an_elimination_may_name_a_derived_relation() {
        use crate::ideals::quadratic::QuadraticOrder;
        use crate::ideals::OrderArithmetic;
        use crate::order::check_conductor;
        use crate::relations::check_raw_relations;
        use classcert_format::PrimeIdeal;
        // D = 40, the order Z[sqrt 10]. Prime ideals P2 = (2, sqrt 10),
        // P3 = (3, 1 + sqrt 10), P5 = (5, sqrt 10) (b² ≡ 40 mod 4p). Elements
        // (x + y sqrt 40)/2 = x/2 + y sqrt 10 of norm x²/4 - 10 y² (common
        // practice; norms and memberships worked out by hand, and the
        // verifier's element check below confirms them):
        //   sqrt 10:      norm -10, (sqrt 10) = P2 P5;
        //   2 + sqrt 10:  norm -6, lies in conj(P3) (3 | (4 + 2)/2), = P2 conj(P3);
        //   5 + sqrt 10:  norm 15, lies in conj(P3) (3 | (10 + 2)/2), = conj(P3) P5.
        let d = Integer::from(40);
        let cond = check_conductor(&[], &d, 50).unwrap();
        let o = QuadraticOrder::new(&d, &cond);
        let ideals: Vec<_> = [(2, 0), (3, 2), (5, 0)]
            .iter()
            .enumerate()
            .map(|(i, &(p, b))| {
                o.prime_ideal(i, &PrimeIdeal::QuadraticForm { p, b })
                    .unwrap()
            })
            .collect();
        let element = |x: i64, y: i64| Witness::Element {
            x: Integer::from(x),
            y: Integer::from(y),
        };
        let raw = Some(vec![
            relation(&[(0, 1), (2, 1)], element(0, 1)),
            relation(&[(0, 1), (1, -1)], element(4, 1)),
            relation(&[(1, -1), (2, 1)], element(10, 1)),
        ]);
        // derived 0 (index 3) = raw 1 - raw 0 = P3^-1 P5^-1; derived 1
        // (index 4) = raw 2 - derived 0 = P5^2, i.e. (5) = P5².
        let derived = Some(vec![
            relation(&[(1, -1), (2, -1)], terms(&[(0, -1), (1, 1)])),
            relation(&[(2, 2)], terms(&[(2, 1), (3, -1)])),
        ]);
        let checked = check_raw_relations(&o, &ideals, &raw, &derived, true, &mut || {}).unwrap();
        let forms = ideals.iter().map(|i| &i.form).collect::<Vec<_>>();
        let mk = || Witnesses::new(&checked, forms.clone(), &d);
        // P2 is the generator; P3 = P2 by raw 1, then P5 = P3^-1 by
        // derived 0 negated: an elimination that names a derived relation
        let eliminations = |last: Witness| {
            vec![
                Elimination {
                    pivot: 1,
                    relation: relation(&[(0, 1), (1, -1)], terms(&[(1, 1)])),
                },
                Elimination {
                    pivot: 2,
                    relation: relation(&[(1, 1), (2, 1)], last),
                },
            ]
        };
        let mut known = vec![true, false, false];
        assert!(
            check_eliminations(&eliminations(terms(&[(3, -1)])), &mut known, &mut mk()).is_ok()
        );
        // naming a relation beyond the last derived one (index 5)
        let mut known = vec![true, false, false];
        let e = check_eliminations(&eliminations(terms(&[(5, -1)])), &mut known, &mut mk())
            .unwrap_err();
        assert_eq!(e.reason, Reason::CombinationMismatch);
        // for D < 0 every relation is shown by form reduction: derived
        // relations are refused there, with or without raw ones
        let d23 = Integer::from(-23);
        let cond23 = check_conductor(&[], &d23, 50).unwrap();
        let o23 = QuadraticOrder::new(&d23, &cond23);
        let e = check_raw_relations(&o23, &[], &None, &derived, false, &mut || {}).unwrap_err();
        assert_eq!(e.reason, Reason::WitnessKind);
        // the derived relation with the wrong sign
        let mut known = vec![true, false, false];
        let e =
            check_eliminations(&eliminations(terms(&[(3, 1)])), &mut known, &mut mk()).unwrap_err();
        assert_eq!(e.reason, Reason::CombinationMismatch);
    }
}
