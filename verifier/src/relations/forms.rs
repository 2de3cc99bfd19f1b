//! `D < 0`: a relation `∏ P_i^{e_i}` holds when the product of the prime
//! forms reduces to the principal form, because every class of positive
//! definite forms holds exactly one reduced form (Gauss; Cohen GTM 138,
//! Prop. 5.3.3). The work is charged to a [`Budget`] before it is done.

use crate::ideals::form::Form;
use crate::limits::{MAX_ENTRY_BITS, MAX_TABLE_FORMS};
use crate::report::reason::{reject, reject_if, Check, Reason};
use rug::Integer;
use std::collections::BTreeMap;

/// Budget for form arithmetic, in compositions.
#[derive(Debug)]
pub(crate) struct Budget(u64);

impl Budget {
    pub(crate) fn new(compositions: u64) -> Self {
        Budget(compositions)
    }

    /// Charges for `∏ f_i^{e_i}` by simultaneous powering: one squaring per
    /// bit of the largest exponent plus one composition per set bit.
    pub(crate) fn charge(&mut self, exps: &[&Integer]) -> Check<()> {
        let mut max_bits = 0u32;
        let mut ones = 0u64;
        for e in exps {
            let bits = e.significant_bits();
            reject_if(
                bits > MAX_ENTRY_BITS,
                Reason::OverLimit,
                "an exponent is too large",
            )?;
            max_bits = max_bits.max(bits);
            ones += u64::from(Integer::from(e.abs_ref()).count_ones().unwrap_or(bits));
        }
        let cost = u64::from(max_bits) + ones;
        reject_if(
            cost > self.0,
            Reason::OverLimit,
            "relations need more form arithmetic than the verifier allows",
        )?;
        self.0 -= cost;
        Ok(())
    }
}

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

    /// Compositions for `f_i^e` from the table: one per window, and
    /// `ROW` for each window the table must gain. `None` when the tables
    /// would outgrow [`MAX_TABLE_FORMS`] (the caller squares instead).
    fn cost(&self, i: usize, e: &Integer) -> Option<u64> {
        let windows = u64::from(e.significant_bits().div_ceil(WINDOW));
        let have = self.tables.get(&i).map_or(0, |r| r.len() as u64);
        let new = windows.saturating_sub(have);
        let new_forms = usize::try_from(new).ok()?.checked_mul(ROW)?;
        if self.stored.checked_add(new_forms)? > MAX_TABLE_FORMS {
            return None;
        }
        Some(windows + new * ROW as u64)
    }
}

/// The reduced product `∏ forms[i]^e` over `entries`, charged to `budget`;
/// `None` if form arithmetic is refused (inputs that break its invariants).
pub(crate) fn product(
    forms: &[&Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    budget: &mut Budget,
) -> Check<Option<Form>> {
    product_with(forms, entries, d, budget, None)
}

/// [`product`], raising large exponents from `powers` when given.
pub(crate) fn product_with(
    forms: &[&Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    budget: &mut Budget,
    powers: Option<&mut Powers>,
) -> Check<Option<Form>> {
    let mut terms = Vec::with_capacity(entries.len());
    let mut tabled = Vec::new();
    let mut table_cost = 0u64;
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
        let cost = match powers.as_deref() {
            Some(p) if abs.significant_bits() >= TABLE_MIN_BITS => p.cost(*i, &abs),
            _ => None,
        };
        match cost {
            // (the tables of two entries with one index would share rows:
            // charging both in full only overcharges)
            Some(c) if !tabled.iter().any(|(j, _, _, _)| j == i) => {
                table_cost = table_cost.saturating_add(c + 1);
                tabled.push((*i, *f, abs, **e < 0));
            }
            _ => terms.push((*f, *e)),
        }
    }
    let exps: Vec<&Integer> = terms.iter().map(|(_, e)| *e).collect();
    budget.charge(&exps)?;
    reject_if(
        table_cost > budget.0,
        Reason::OverLimit,
        "relations need more form arithmetic than the verifier allows",
    )?;
    budget.0 -= table_cost;
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
    budget: &mut Budget,
    powers: &mut Powers,
) -> Check<bool> {
    Ok(product_with(forms, entries, d, budget, Some(powers))? == Some(Form::principal(d)))
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
        let mut budget = Budget::new(1000);
        let three = Integer::from(3);
        let two = Integer::from(2);
        let mut p = Powers::default();
        assert!(is_principal(&forms, &[(0, &three)], &d, &mut budget, &mut p).unwrap());
        assert!(!is_principal(&forms, &[(0, &two)], &d, &mut budget, &mut p).unwrap());
        // an index outside the factor base
        let e = is_principal(&forms, &[(1, &three)], &d, &mut budget, &mut p).unwrap_err();
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
        let mut budget = Budget::new(u64::MAX);
        for (t, bits) in [24u32, 25, 31, 64, 97, 200].into_iter().enumerate() {
            let e1 = (Integer::from(1) << bits) - 12345 - t as u32;
            let e2 = -(Integer::from(3) << (bits / 2 + 20)) + 7;
            let small = Integer::from(-2);
            let entries = [(0usize, &e1), (1, &small), (2, &e2)];
            let tabled =
                product_with(&forms, &entries, &d, &mut budget, Some(&mut powers)).unwrap();
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
    fn budget_is_charged_before_work() {
        let mut b = Budget::new(10);
        let big = Integer::from(1) << 20u32; // 21 bits, one set bit
        assert_eq!(b.charge(&[&big]).unwrap_err().reason, Reason::OverLimit);
        let huge = Integer::from(1) << (MAX_ENTRY_BITS + 1);
        assert_eq!(
            Budget::new(u64::MAX).charge(&[&huge]).unwrap_err().reason,
            Reason::OverLimit
        );
        let small = Integer::from(5); // 3 bits, 2 set bits
        assert!(b.charge(&[&small]).is_ok());
        assert!(b.charge(&[&small]).is_ok());
        assert!(b.charge(&[&small]).is_err());
    }
}
