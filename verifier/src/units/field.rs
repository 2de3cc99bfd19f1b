//! Units of an order in a number field (`general-fields.md`, "Relations,
//! units, regulator"; registry entries `krawczyk-root-enclosures`,
//! `field-units-power-products`, `roots-of-unity-residue-fields`).
//!
//! 1. The root enclosures of `F`, validated with the order
//!    (`order/field.rs`), fix the signature `(r1, r2)` and the embeddings.
//! 2. Torsion: `ζ` has exact order `w`, and `w = gcd(N P - 1)` over
//!    unramified primes `P` the verifier picks (of least degree above each
//!    `p ∤ disc(F)`), so `#μ(O) = w`.
//! 3. Each unit `u = ∏ α_j^{k_j}` over raw relations has `Σ k_j e_j = 0`,
//!    so `(u) = O`; its log vector is `Σ k_j Log(α_j)` in intervals, and
//!    `R* = |det|` of the log matrix without its last place. `R* > 0`
//!    makes `R* = [O^* : μ <u_i>] R` with a positive integer index.

use crate::analytic::interval::{stated_contains, Interval};
use crate::arith::primes_up_to;
use crate::field::fppoly::Fp;
use crate::field::order::FieldOrder;
use crate::field::roots::{abs_det, Roots};
use crate::limits::{MAX_COMBINATION_WORK, MAX_TORSION_PRIMES, MAX_W};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{FieldUnits, Relation, Witness};
use rug::ops::Pow;
use rug::Integer;

/// Token: the unit group is `μ_w × <u_1..u_r>` up to an index that the
/// analytic check bounds; the regulator `R*` of the `u_i` is enclosed.
#[derive(Debug)]
pub(crate) struct FieldUnitsOk {
    regulator: Interval,
    w: u32,
    signature: (usize, usize),
}

impl FieldUnitsOk {
    pub(crate) fn regulator(&self) -> &Interval {
        &self.regulator
    }
    pub(crate) fn w(&self) -> u32 {
        self.w
    }
    pub(crate) fn signature(&self) -> (usize, usize) {
        self.signature
    }
}

fn is_one(o: &FieldOrder, a: &[Integer]) -> bool {
    a == o.one().as_slice()
}

/// `ζ` has exact order `w`, and the residue fields allow no more.
fn check_torsion(o: &FieldOrder, disc_f: &Integer, u: &FieldUnits) -> Check<()> {
    let w = u.w;
    reject_if(
        !(2..=MAX_W).contains(&w) || u.zeta.len() != o.degree(),
        Reason::TorsionMismatch,
        format_args!("w = {w} must lie in [2, {MAX_W}], with zeta given by its coordinates"),
    )?;
    let power = |e: u32| o.pow(&u.zeta, e).unwrap_or_default();
    reject_if(
        !is_one(o, &power(w)),
        Reason::TorsionMismatch,
        format_args!("zeta^{w} is not 1"),
    )?;
    let mut m = w;
    for q in 2..=w {
        if m.is_multiple_of(q) {
            while m.is_multiple_of(q) {
                m /= q;
            }
            reject_if(
                is_one(o, &power(w / q)),
                Reason::TorsionMismatch,
                format_args!("zeta^{} is already 1: zeta does not have order {w}", w / q),
            )?;
        }
    }
    let mut g = Integer::new();
    let mut tried = 0;
    for p in primes_up_to(1 << 16).into_iter().skip(1) {
        if tried >= MAX_TORSION_PRIMES || g == w {
            break;
        }
        if disc_f.is_divisible_u(p as u32) {
            continue;
        }
        let Some(pattern) = Fp::new(p).and_then(|fp| fp.degree_pattern(o.polynomial())) else {
            continue;
        };
        let Some(f) = pattern.iter().min().and_then(|f| u32::try_from(*f).ok()) else {
            continue;
        };
        tried += 1;
        g.gcd_mut(&(Integer::from(p).pow(f) - 1u32));
    }
    reject_if(
        g != w,
        Reason::TorsionMismatch,
        format_args!(
            "the residue fields of the first {tried} unramified primes allow {g} roots of unity, not {w}"
        ),
    )?;
    Ok(())
}

/// Checks the unit section against the raw relations and root enclosures.
pub(crate) fn check_field_units(
    u: &FieldUnits,
    roots: &Roots,
    o: &FieldOrder,
    disc_f: &Integer,
    raw: &[Relation],
) -> Check<FieldUnitsOk> {
    let (r1, r2) = roots.signature();
    check_torsion(o, disc_f, u)?;
    let r = r1 + r2 - 1;
    reject_if(
        u.units.len() != r,
        Reason::UnitsShape,
        format_args!(
            "the signature ({r1}, {r2}) needs {r} units, not {}",
            u.units.len()
        ),
    )?;
    let mut work = MAX_COMBINATION_WORK;
    let mut logs: Vec<Option<Vec<Interval>>> = vec![None; raw.len()];
    let mut matrix = Vec::with_capacity(r);
    for (i, unit) in u.units.iter().enumerate() {
        // Σ k_j e_j over the factor base must vanish
        let mut sum: Vec<(u32, Integer)> = Vec::new();
        let mut log = vec![Interval::zero(); r1 + r2];
        let mut prev = None;
        for (j, k) in unit {
            reject_if(
                prev.is_some_and(|p| p >= *j) || *k == 0,
                Reason::UnitsShape,
                format_args!("unit {i}: relation indices must increase, exponents be nonzero"),
            )?;
            prev = Some(*j);
            let Some(rel) = raw.get(*j as usize) else {
                return reject(Reason::UnitsShape, format!("unit {i}: no raw relation {j}"));
            };
            work = work.saturating_sub(rel.entries.len() as u64 + 1);
            reject_if(
                work == 0,
                Reason::OverLimit,
                "the units' power products are too long",
            )?;
            for (idx, e) in &rel.entries {
                match sum.binary_search_by_key(idx, |s| s.0) {
                    Ok(pos) => {
                        if let Some(s) = sum.get_mut(pos) {
                            s.1 += Integer::from(k * e);
                        }
                    }
                    Err(pos) => sum.insert(pos, (*idx, Integer::from(k * e))),
                }
            }
            let Some(slot) = logs.get_mut(*j as usize) else {
                return reject(Reason::UnitsShape, format!("unit {i}: no raw relation {j}"));
            };
            if slot.is_none() {
                let Witness::Coordinates { coordinates } = &rel.witness else {
                    return reject(
                        Reason::WitnessKind,
                        format!("raw relation {j} has no element"),
                    );
                };
                let (num, den) = o.to_power_basis(coordinates);
                *slot = roots.log_embedding(&num, &den);
            }
            let Some(lj) = slot.as_ref() else {
                return reject(
                    Reason::RegulatorImprecise,
                    format!("the embeddings of raw relation {j} are not bounded away from 0"),
                );
            };
            let kk = Interval::int(k);
            for (acc, l) in log.iter_mut().zip(lj.iter()) {
                *acc = acc.add(&kk.mul(l));
            }
        }
        reject_if(
            sum.iter().any(|(_, e)| *e != 0),
            Reason::UnitNotUnit,
            format_args!(
                "unit {i}: the exponents do not cancel over the factor base, so it is not shown to be a unit"
            ),
        )?;
        log.truncate(r);
        matrix.push(log);
    }
    let regulator = if r == 0 {
        Interval::u64(1)
    } else {
        match abs_det(&matrix) {
            Some(d) if d.lo > 0 => d,
            _ => {
                return reject(
                    Reason::RegulatorImprecise,
                    "the regulator of the units is not bounded away from 0: they may be dependent, or the enclosures too wide",
                )
            }
        }
    };
    stated_contains(
        &u.regulator,
        &regulator,
        Reason::RegulatorMismatch,
        "regulator",
    )?;
    Ok(FieldUnitsOk {
        regulator,
        w: u.w,
        signature: (r1, r2),
    })
}
