//! The claim matches the lattice: the class number is `∏ d_i`, the
//! invariants are the `d_i > 1`, and each claimed generator maps to the
//! unit vector of its cyclic factor under `V` (so it generates it), with
//! its reduced form when `D < 0`.

use super::LatticeOk;
use crate::ideals::form::Form;
use crate::limits::MAX_COMPOSITIONS;
use crate::relations::forms::{product, Budget};
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::{short_number, GeneratorView};
use classcert_format::{Claim, Lattice};
use rug::Integer;

/// How a generator's prime ideals are named: `(p, b)` for the quadratic
/// ideal `(p, (b + sqrt D)/2)`, `(p, k)` for the `k`-th factor-base entry
/// of a number field.
pub(crate) type IdealLabel = (u64, u64);

/// Token: the claimed group is the lattice's.
#[derive(Debug)]
pub(crate) struct ClaimOk {
    invariants: Vec<Integer>,
    generators: Vec<GeneratorView>,
}

impl ClaimOk {
    pub(crate) fn invariants(&self) -> &[Integer] {
        &self.invariants
    }

    pub(crate) fn into_generators(self) -> Vec<GeneratorView> {
        self.generators
    }
}

/// `reduced_forms`: generators are stated as reduced forms (`D < 0`);
/// otherwise by their exponents alone (reduced indefinite forms are not
/// unique in their class).
pub(crate) fn check_claim(
    c: &Claim,
    l: &Lattice,
    lat: &LatticeOk,
    ideals: &[IdealLabel],
    forms: &[&Form],
    d: &Integer,
    reduced_forms: bool,
) -> Check<ClaimOk> {
    reject_if(
        c.class_number != *lat.h_star(),
        Reason::ClassNumberMismatch,
        format_args!(
            "claimed class number {} but the Smith diagonal multiplies to {}",
            short_number(&c.class_number),
            short_number(lat.h_star())
        ),
    )?;
    let diagonal = lat.diagonal().iter().enumerate();
    let nontrivial: Vec<(usize, &Integer)> = diagonal.filter(|(_, d)| **d > 1).collect();
    let inv: Vec<Integer> = nontrivial.iter().map(|(_, d)| (*d).clone()).collect();
    reject_if(
        c.invariants != inv,
        Reason::InvariantsMismatch,
        "claimed invariants differ from the Smith diagonal entries > 1",
    )?;
    reject_if(
        c.generators.len() != nontrivial.len(),
        Reason::GeneratorMismatch,
        "one generator per invariant factor is required",
    )?;
    let r = l.generators.len();
    let mut budget = Budget::new(MAX_COMPOSITIONS);
    let mut out = Vec::with_capacity(c.generators.len());
    for ((i, _), g) in nontrivial.iter().zip(c.generators.iter()) {
        reject_if(
            g.exponents.len() != r,
            Reason::GeneratorMismatch,
            "generator exponent vector has the wrong length",
        )?;
        // x V ≡ e_i (mod d_j) in every coordinate j
        for (j, dj) in lat.diagonal().iter().enumerate() {
            let mut s = Integer::new();
            for (xk, vrow) in g.exponents.iter().zip(l.smith.v.iter()) {
                if let Some(vkj) = vrow.get(j) {
                    s += Integer::from(xk * vkj);
                }
            }
            s -= Integer::from(j == *i);
            reject_if(
                !s.is_divisible(dj),
                Reason::GeneratorMismatch,
                format_args!("generator {i} does not map to the unit vector of factor {i}"),
            )?;
        }
        let entries = super::over_factor_base(&l.generators, &g.exponents);
        if !reduced_forms {
            reject_if(
                g.form.is_some(),
                Reason::GeneratorMismatch,
                "for D > 0 a generator is given by its exponents, without a form",
            )?;
            let ideals = entries
                .iter()
                .filter_map(|(gi, e)| ideals.get(*gi).map(|&(p, b)| (p, b, (*e).clone())))
                .collect();
            out.push(GeneratorView::Ideals(ideals));
            continue;
        }
        let Some(stated) = &g.form else {
            let why = format!("generator {i} has no reduced form");
            return reject(Reason::GeneratorMismatch, why);
        };
        let Some(acc) = product(forms, &entries, d, &mut budget)? else {
            return reject(Reason::GeneratorMismatch, "form arithmetic failed");
        };
        reject_if(
            acc.a != stated.a || acc.b != stated.b || acc.c != stated.c,
            Reason::GeneratorMismatch,
            format_args!(
                "generator {i} reduces to ({}, {}, {}), not the stated form",
                acc.a, acc.b, acc.c
            ),
        )?;
        out.push(GeneratorView::Form(acc.a, acc.b, acc.c));
    }
    Ok(ClaimOk {
        invariants: inv,
        generators: out,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ideals::quadratic::QuadraticIdeal;
    use crate::lattice::check_lattice;
    use crate::relations::{RawOk, Witnesses};
    use classcert_format::{CyclicGenerator, Smith, Witness};

    fn one(x: i64) -> Vec<Vec<Integer>> {
        vec![vec![Integer::from(x)]]
    }

    #[test]
    fn claim_of_minus_23() {
        // Cl(-23) ≅ Z/3, generated by P_2 = (2, 1, 3) (OEIS A006203: h = 3).
        let d = Integer::from(-23);
        let p2 = QuadraticIdeal {
            p: 2,
            b: 1,
            form: Form::new(Integer::from(2), Integer::from(1), &d).unwrap(),
        };
        let lattice = Lattice {
            generators: vec![0],
            relations: one(3),
            relation_witness: Witness::FormReduction,
            smith: Smith {
                u: one(1),
                u_inv: one(1),
                v: one(1),
                v_inv: one(1),
                diagonal: vec![Integer::from(3)],
            },
            eliminations: vec![],
            raw_relations: None,
            derived_relations: None,
        };
        let raw = RawOk::for_tests();
        let mut w = Witnesses::new(&raw, vec![&p2.form], &d);
        let lat = check_lattice(&lattice, 1, &mut w).unwrap();
        let claim = |h: i64, form: Option<(i64, i64, i64)>| Claim {
            class_number: Integer::from(h),
            invariants: vec![Integer::from(h)],
            generators: vec![CyclicGenerator {
                exponents: vec![Integer::from(1)],
                form: form.map(|(a, b, c)| classcert_format::Form {
                    a: Integer::from(a),
                    b: Integer::from(b),
                    c: Integer::from(c),
                }),
            }],
        };
        let ideals = [(2u64, 1u64)];
        let forms = [&p2.form];
        let ok = check_claim(
            &claim(3, Some((2, 1, 3))),
            &lattice,
            &lat,
            &ideals,
            &forms,
            &d,
            true,
        )
        .unwrap();
        assert_eq!(ok.invariants(), &[Integer::from(3)]);
        let e = check_claim(
            &claim(6, Some((2, 1, 3))),
            &lattice,
            &lat,
            &ideals,
            &forms,
            &d,
            true,
        )
        .unwrap_err();
        assert_eq!(e.reason, Reason::ClassNumberMismatch);
        let e = check_claim(
            &claim(3, Some((2, -1, 3))),
            &lattice,
            &lat,
            &ideals,
            &forms,
            &d,
            true,
        )
        .unwrap_err();
        assert_eq!(e.reason, Reason::GeneratorMismatch);
        // D > 0 style: exponents alone, no form
        let e = check_claim(
            &claim(3, Some((2, 1, 3))),
            &lattice,
            &lat,
            &ideals,
            &forms,
            &d,
            false,
        )
        .unwrap_err();
        assert_eq!(e.reason, Reason::GeneratorMismatch);
    }
}
