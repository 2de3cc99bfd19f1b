//! `D < 0`: a relation `∏ P_i^{e_i}` holds when the product of the prime
//! forms reduces to the principal form, because every class of positive
//! definite forms holds exactly one reduced form (Gauss; Cohen GTM 138,
//! Prop. 5.3.3). The work is bounded before it starts (`limits::estimate`).

use crate::ideals::form::Form;
use crate::limits::{MAX_ENTRY_BITS, MAX_TABLE_FORMS};
use crate::report::reason::{reject, reject_if, Check, Reason};
use rug::Integer;
use std::collections::BTreeMap;

/// Exponents of at least this many bits are raised from a table of the
/// base's powers instead of by squaring: the eliminations of a dense block
/// name each generator with an exponent as large as the group (common
/// practice: fixed-base windowed exponentiation; D. Knuth, TAOCP vol. 2,
/// section 4.6.3).
const TABLE_MIN_BITS: u32 = 24;

/// Bits per window of a table: a table row holds `f^{k 2^{6j}}` for
/// `k = 1..63`. At 60 digits (638 rows naming 2 generators with 96-bit
/// exponents) windows of 4, 5, 6 and 7 bits cost about 15 700, 12 900,
/// 11 200 and 10 500 compositions per generator; 6 also keeps small
/// certificates' tables small.
const WINDOW: u32 = 6;
const ROW: usize = (1 << WINDOW) - 1;

/// Tables of powers of prime forms, by factor-base index, shared by the
/// relations checked with one [`Budget`]: `rows[j][k - 1] = f^{k 2^{6j}}`.
#[derive(Debug, Default)]
pub(crate) struct Powers {
    tables: BTreeMap<usize, Vec<[Form; ROW]>>,
    stored: usize,
}

impl Powers {
    /// `f^e` for `e > 0` of `bits` bits from the table of index `i`,
    /// extending it as needed; the caller has charged the work
    /// ([`Powers::cost`]). `None` if form arithmetic is refused.
    fn power(&mut self, i: usize, f: &Form, e: &Integer) -> Option<Form> {
        let windows = e.significant_bits().div_ceil(WINDOW) as usize;
        let rows = self.tables.entry(i).or_default();
        while rows.len() < windows {
            let base = match rows.last() {
                // f^{2^{6(j+1)}} = f^{63·2^{6j}} f^{2^{6j}}
                Some(last) => last[ROW - 1].compose(&last[0]).ok()?,
                None => f.clone().reduce().ok()?,
            };
            let mut row: Vec<Form> = Vec::with_capacity(ROW);
            row.push(base);
            for _ in 1..ROW {
                let next = row.last()?.compose(row.first()?).ok()?;
                row.push(next);
            }
            rows.push(row.try_into().ok()?);
            self.stored += ROW;
        }
        let mut acc: Option<Form> = None;
        for (j, row) in rows.iter().enumerate().take(windows) {
            let mut digit = 0usize;
            for b in 0..WINDOW {
                if e.get_bit(j as u32 * WINDOW + b) {
                    digit |= 1 << b;
                }
            }
            if digit > 0 {
                let t = row.get(digit - 1)?;
                acc = Some(match acc {
                    None => t.clone(),
                    Some(a) => a.compose(t).ok()?,
                });
            }
        }
        acc
    }

    /// Whether the tables may grow to raise `f_i^e`: `ROW` forms for each
    /// window they must gain, within [`MAX_TABLE_FORMS`] (else the caller
    /// squares instead).
    fn fits(&self, i: usize, e: &Integer) -> bool {
        let windows = e.significant_bits().div_ceil(WINDOW) as usize;
        let new = windows.saturating_sub(self.tables.get(&i).map_or(0, Vec::len));
        self.stored.saturating_add(new.saturating_mul(ROW)) <= MAX_TABLE_FORMS
    }
}

/// The reduced product `∏ forms[i]^e` over `entries`;
/// `None` if form arithmetic is refused (inputs that break its invariants).
pub(crate) fn product(
    forms: &[&Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
) -> Check<Option<Form>> {
    product_with(forms, entries, d, None)
}

/// [`product`], raising large exponents from `powers` when given.
pub(crate) fn product_with(
    forms: &[&Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    powers: Option<&mut Powers>,
) -> Check<Option<Form>> {
    let mut terms = Vec::with_capacity(entries.len());
    let mut tabled = Vec::new();
    for (i, e) in entries {
        let Some(f) = forms.get(*i) else {
            return reject(
                Reason::EliminationStructure,
                format!("index {i} is outside the factor base"),
            );
        };
        reject_if(
            e.significant_bits() > MAX_ENTRY_BITS,
            Reason::OverLimit,
            "an exponent is too large",
        )?;
        let abs = Integer::from(e.abs_ref());
        let table = powers
            .as_deref()
            .filter(|_| abs.significant_bits() >= TABLE_MIN_BITS);
        match table.is_some_and(|p| p.fits(*i, &abs)) {
            true if !tabled.iter().any(|(j, _, _, _)| j == i) => {
                tabled.push((*i, *f, abs, **e < 0))
            }
            _ => terms.push((*f, *e)),
        }
    }
    let Ok(mut acc) = Form::product(&terms, d) else {
        return Ok(None);
    };
    if let Some(p) = powers {
        for (i, f, abs, negative) in &tabled {
            let Some(g) = p.power(*i, f, abs) else {
                return Ok(None);
            };
            let g = if *negative { g.inverse() } else { g };
            let Ok(next) = acc.compose(&g) else {
                return Ok(None);
            };
            acc = next;
        }
    }
    Ok(Some(acc))
}

/// True if `∏ forms[i]^e` over `entries` reduces to the principal form.
pub(crate) fn is_principal(
    forms: &[&Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    powers: &mut Powers,
) -> Check<bool> {
    Ok(product_with(forms, entries, d, Some(powers))? == Some(Form::principal(d)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn relations_of_minus_23() {
        // Cl(-23) ≅ Z/3 generated by (2, 1, 3) (OEIS A006203 lists h(-23) = 3).
        let d = Integer::from(-23);
        let g = Form::new(Integer::from(2), Integer::from(1), &d).unwrap();
        let forms = [&g];
        let three = Integer::from(3);
        let two = Integer::from(2);
        let mut p = Powers::default();
        assert!(is_principal(&forms, &[(0, &three)], &d, &mut p).unwrap());
        assert!(!is_principal(&forms, &[(0, &two)], &d, &mut p).unwrap());
        // an index outside the factor base
        let e = is_principal(&forms, &[(1, &three)], &d, &mut p).unwrap_err();
        assert_eq!(e.reason, Reason::EliminationStructure);
    }

    #[test]
    fn tabled_powers_agree_with_squaring() {
        // D = -1000003 (1000003 ≡ 3 mod 4, so D ≡ 1 mod 4); prime forms
        // (p, b) with b² ≡ D (mod 4p) found by search. The tables give the
        // same reduced forms as square-and-multiply (Form::pow), the
        // definition, for exponents of either sign and many sizes.
        let d = Integer::from(-1_000_003);
        let mut prime_forms = Vec::new();
        for p in [3u32, 7, 11, 13, 17, 19, 23, 29, 31, 37] {
            let b = (0..=p).find(|&b| Form::new(Integer::from(p), Integer::from(b), &d).is_ok());
            if let Some(b) = b {
                prime_forms.push(Form::new(Integer::from(p), Integer::from(b), &d).unwrap());
            }
        }
        assert!(prime_forms.len() >= 3);
        let forms: Vec<&Form> = prime_forms.iter().collect();
        let mut powers = Powers::default();
        for (t, bits) in [24u32, 25, 31, 64, 97, 200].into_iter().enumerate() {
            let e1 = (Integer::from(1) << bits) - 12345 - t as u32;
            let e2 = -(Integer::from(3) << (bits / 2 + 20)) + 7;
            let small = Integer::from(-2);
            let entries = [(0usize, &e1), (1, &small), (2, &e2)];
            let tabled = product_with(&forms, &entries, &d, Some(&mut powers)).unwrap();
            let plain = forms[0]
                .pow(&e1, &d)
                .unwrap()
                .compose(&forms[1].pow(&small, &d).unwrap())
                .unwrap()
                .compose(&forms[2].pow(&e2, &d).unwrap())
                .unwrap();
            assert_eq!(tabled, Some(plain), "bits {bits}");
        }
        assert!(powers.stored > 0, "the tables were used");
    }

    #[test]
    fn an_exponent_over_the_cap_is_refused_before_work() {
        let d = Integer::from(-23);
        let g = Form::new(Integer::from(2), Integer::from(1), &d).unwrap();
        let huge = Integer::from(1) << (MAX_ENTRY_BITS + 1);
        let e = product(&[&g], &[(0, &huge)], &d).unwrap_err();
        assert_eq!(e.reason, Reason::OverLimit);
    }
}
