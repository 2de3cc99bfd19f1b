//! Step 3: the relation lattice, its index and the group structure (design
//! note, section 3).
//!
//! The certificate names generator ideals `G` and a square matrix `H` of
//! relations among them, shows every other factor-base ideal eliminated
//! ([`eliminations`]), and gives the Smith form of `H` ([`smith`]). Then
//! `Z^n / L ≅ ⊕ Z/d_i` for the lattice `L` the relations span, and since
//! `L` lies in the full relation lattice, `#Cl(O)` divides
//! `h* = ∏ d_i` (registry entry `relation-lattice-index`). [`claim`] then
//! checks that the certificate's claim is this group.

pub(crate) mod claim;
mod eliminations;
mod smith;

use crate::limits::MAX_RANK;
use crate::registry::{self, Theorem};
use crate::relations::Witnesses;
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Lattice, Witness};
use rug::Integer;

/// Token: `Z^n / L ≅ ⊕ Z/d_i`, with `L` made of relations that hold.
#[derive(Debug)]
pub(crate) struct LatticeOk {
    h_star: Integer,
    diagonal: Vec<Integer>,
}

impl LatticeOk {
    /// `h* = ∏ d_i`, a multiple of `#Cl(O)`.
    pub(crate) fn h_star(&self) -> &Integer {
        &self.h_star
    }

    pub(crate) fn diagonal(&self) -> &[Integer] {
        &self.diagonal
    }

    pub(crate) fn theorem(&self) -> Option<&'static Theorem> {
        registry::lookup(registry::LATTICE_INDEX)
    }
}

/// Checks the lattice over a factor base of `n` ideals, its relations shown
/// by `witnesses`.
pub(crate) fn check_lattice(l: &Lattice, n: usize, witnesses: &mut Witnesses) -> Check<LatticeOk> {
    let r = l.generators.len();
    reject_if(
        r > MAX_RANK,
        Reason::OverLimit,
        format_args!("{r} generators; the limit is {MAX_RANK}"),
    )?;
    let mut known = vec![false; n];
    for &g in &l.generators {
        match known.get_mut(g as usize) {
            Some(k) if !*k => *k = true,
            _ => {
                return reject(
                    Reason::GeneratorsInvalid,
                    format!("generator index {g} is repeated or outside the factor base"),
                )
            }
        }
    }
    // Relations among the generators (rows of H).
    reject_if(
        !smith::is_square(&l.relations, r),
        Reason::SmithShape,
        format_args!("the relation matrix must be {r} x {r}"),
    )?;
    let row_witnesses = row_witnesses(&l.relation_witness, r, witnesses.by_combinations())?;
    for (i, (row, w)) in l.relations.iter().zip(&row_witnesses).enumerate() {
        let mut entries = over_factor_base(&l.generators, row);
        entries.sort_by_key(|(g, _)| *g);
        if !witnesses.holds(&entries, w, &format!("row {i} of H"))? {
            return reject(
                witnesses.failure(false),
                format!("generator relation {i} does not hold by its witness"),
            );
        }
    }
    let h_star = smith::check_smith(&l.relations, &l.smith, r)?;
    eliminations::check_eliminations(&l.eliminations, &mut known, witnesses)?;
    Ok(LatticeOk {
        h_star,
        diagonal: l.smith.diagonal.clone(),
    })
}

/// The nonzero entries of `row` (over the generators `G`) by factor-base
/// index.
pub(crate) fn over_factor_base<'a>(g: &[u32], row: &'a [Integer]) -> Vec<(usize, &'a Integer)> {
    let entries = g.iter().zip(row.iter()).filter(|(_, e)| !e.is_zero());
    entries.map(|(g, e)| (*g as usize, e)).collect()
}

/// One witness per row of `H`, checked whatever the number of rows (none
/// when `h = 1`): a `combinations` witness with exactly `r` rows when
/// relations are combinations of raw ones (`D > 0`, number fields), form
/// reduction otherwise.
fn row_witnesses(w: &Witness, r: usize, combinations: bool) -> Check<Vec<Witness>> {
    match (w, combinations) {
        (Witness::Combinations { rows }, true) if rows.len() == r => Ok((rows.iter())
            .map(|terms| Witness::Combination {
                terms: terms.clone(),
            })
            .collect()),
        (Witness::Combinations { .. }, true) => reject(
            Reason::CombinationMismatch,
            format!("one combination per row of H is required ({r} rows)"),
        ),
        (Witness::FormReduction, false) => Ok(vec![Witness::FormReduction; r]),
        _ => reject(
            Reason::WitnessKind,
            "the rows of H need a combinations witness (D > 0, number fields) or form reduction (D < 0)",
        ),
    }
}
