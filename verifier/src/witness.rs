//! Order witnesses (`docs/certificates.md`, section 6): classes `g_i` of exact orders
//! `d_1 | d_2 | …` that are independent generate a subgroup
//! `≅ ⊕ Z/d_i` of `Cl(O)`, so `H = ∏ d_i` divides `#Cl(O)` (Lagrange;
//! registry entry `order-witness-lagrange`). The analytic bound then gives
//! `#Cl(O) < 2H`, hence `Cl(O) ≅ ⊕ Z/d_i`. Imaginary orders only: for
//! `D > 0` the bound controls `h R`, which needs the regulator.
//!
//! The direction is the opposite of the relation lattice's: there the
//! claimed value is a multiple of the truth, here a divisor of it.

use crate::analytic::interval::Interval;
use crate::analytic::BoundOk;
use crate::ideals::form::Form;
use crate::limits::{MAX_ENTRY_BITS, MAX_RANK};
use crate::order::{check_factorisation, Factorisation};
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::short_number;
use crate::report::view::GeneratorView;
use classcert_format::{PrimePower, WitnessGenerator};
use rug::Integer;

/// Token: `H` is factored into proven (or BPSW-assumed) primes.
#[derive(Debug)]
pub(crate) struct FactorsOk<'a> {
    h: &'a Integer,
    factors: &'a [PrimePower],
    evidence: Factorisation,
}

impl FactorsOk<'_> {
    pub(crate) fn h(&self) -> &Integer {
        self.h
    }

    pub(crate) fn evidence(&self) -> &Factorisation {
        &self.evidence
    }
}

pub(crate) fn check_h<'a>(h: &'a Integer, factors: &'a [PrimePower]) -> Check<FactorsOk<'a>> {
    reject_if(
        *h < 1 || h.significant_bits() > MAX_ENTRY_BITS,
        Reason::OrderWitnessFactorisation,
        "H must be a positive integer within the limits",
    )?;
    let evidence = check_factorisation(factors, h, "H", Reason::OrderWitnessFactorisation)?;
    Ok(FactorsOk {
        h,
        factors,
        evidence,
    })
}

/// Token: every `g_i` has exact order `d_i`.
#[derive(Debug)]
struct ExactOrdersOk(());

/// Token: the `g_i` are independent on every `p`-socle.
#[derive(Debug)]
struct IndependentOk(());

/// Token: reduced primitive forms `g_i` of exact orders `d_i`, `d_1 | d_2
/// | …`, `∏ d_i = H`, independent on every `p`-socle; built only from the
/// two tokens above.
#[derive(Debug)]
pub(crate) struct WitnessesOk {
    forms: Vec<(Integer, Form)>,
    _exact: ExactOrdersOk,
    _independent: IndependentOk,
}

impl WitnessesOk {
    pub(crate) fn invariants(&self) -> Vec<Integer> {
        self.forms.iter().map(|(di, _)| di.clone()).collect()
    }

    pub(crate) fn generators(&self) -> Vec<GeneratorView> {
        self.forms
            .iter()
            .map(|(_, g)| GeneratorView::Form(g.a.clone(), g.b.clone(), g.c.clone()))
            .collect()
    }

    pub(crate) fn theorem(&self) -> Option<&'static Theorem> {
        registry::lookup(registry::ORDER_WITNESS)
    }
}

pub(crate) fn check_witnesses(
    gens: &[WitnessGenerator],
    h: &FactorsOk,
    d: &Integer,
) -> Check<WitnessesOk> {
    reject_if(
        gens.len() > MAX_RANK,
        Reason::OverLimit,
        "too many witnesses",
    )?;
    let mut prod = Integer::from(1);
    let mut forms: Vec<(Integer, Form)> = Vec::with_capacity(gens.len());
    for (i, wg) in gens.iter().enumerate() {
        let Some(g) = Form::primitive(&wg.form, d).filter(Form::is_reduced) else {
            return reject(
                Reason::OrderWitnessForm,
                format!("witness {i} must be a reduced primitive form of discriminant D"),
            );
        };
        let ok_order = wg.order > 1
            && wg.order.significant_bits() <= MAX_ENTRY_BITS
            && forms
                .last()
                .is_none_or(|(prev, _)| wg.order.is_divisible(prev));
        reject_if(
            !ok_order,
            Reason::OrderWitnessFactorisation,
            "the witnesses' orders must exceed 1 and divide each other in turn",
        )?;
        prod *= &wg.order;
        reject_if(
            prod.significant_bits() > MAX_ENTRY_BITS,
            Reason::OverLimit,
            "the witnesses' orders are too large",
        )?;
        forms.push((wg.order.clone(), g));
    }
    reject_if(
        prod != *h.h,
        Reason::OrderWitnessFactorisation,
        format_args!(
            "the witnesses' orders multiply to {}, not H = {}",
            short_number(&prod),
            short_number(h.h)
        ),
    )?;
    let exact = check_exact_orders(&forms, h.factors, d)?;
    let independent = check_independent(&forms, &exact, h.factors, d)?;
    Ok(WitnessesOk {
        forms,
        _exact: exact,
        _independent: independent,
    })
}

fn power(g: &Form, e: &Integer, d: &Integer) -> Check<Form> {
    match g.pow(e, d) {
        Ok(x) => Ok(x),
        Err(_) => reject(Reason::OrderWitnessForm, "form arithmetic failed"),
    }
}

/// `g_i^(d_i) = 1` and `g_i^(d_i/q) != 1` for every prime `q | d_i`.
fn check_exact_orders(
    forms: &[(Integer, Form)],
    factors: &[PrimePower],
    d: &Integer,
) -> Check<ExactOrdersOk> {
    let principal = Form::principal(d);
    for (i, (di, g)) in forms.iter().enumerate() {
        reject_if(
            power(g, di, d)? != principal,
            Reason::OrderWitnessPower,
            format_args!(
                "g_{i}^{di} is not the principal form: {di} is not a multiple of its order"
            ),
        )?;
        for pp in factors.iter().filter(|pp| di.is_divisible(&pp.prime)) {
            let e = Integer::from(di / &pp.prime);
            reject_if(
                power(g, &e, d)? == principal,
                Reason::OrderWitnessNotExact,
                format_args!(
                    "g_{i}^({di}/{}) is the principal form: g_{i} has order below {di}",
                    pp.prime
                ),
            )?;
        }
    }
    Ok(ExactOrdersOk(()))
}

/// Independence: the map `⊕ Z/d_i -> Cl` is injective iff it is on the
/// `p`-socle for every prime `p | H` (a nonzero kernel has an element of
/// prime order; common practice): no nonzero `c ∈ (Z/p)^r` with
/// `∏ (g_i^(d_i/p))^(c_i) = 1`, checked by brute force under a cap.
/// Needs exact orders: the socle elements `g_i^(d_i/p)` then have order `p`.
fn check_independent(
    forms: &[(Integer, Form)],
    _exact: &ExactOrdersOk,
    factors: &[PrimePower],
    d: &Integer,
) -> Check<IndependentOk> {
    let principal = Form::principal(d);
    for pp in factors {
        let p = &pp.prime;
        let socle: Vec<Form> = forms
            .iter()
            .filter(|(di, _)| di.is_divisible(p))
            .map(|(di, g)| power(g, &Integer::from(di / p), d))
            .collect::<Check<Vec<Form>>>()?;
        if socle.len() < 2 {
            continue; // one element of order p is independent by itself
        }
        let Some(pu) = p.to_u64() else {
            return reject(Reason::OverLimit, "a socle too large to search");
        };
        let mut size: u64 = 1;
        for _ in 0..socle.len() {
            size = size.saturating_mul(pu);
        }
        // every c in (Z/p)^r \ {0}, as counters
        let mut c = vec![0u64; socle.len()];
        for _ in 1..size {
            for slot in c.iter_mut() {
                *slot += 1;
                if *slot < pu {
                    break;
                }
                *slot = 0;
            }
            let exps: Vec<Integer> = c.iter().map(|ci| Integer::from(*ci)).collect();
            let terms: Vec<(&Form, &Integer)> = socle.iter().zip(exps.iter()).collect();
            let Ok(x) = Form::product(&terms, d) else {
                return reject(Reason::OrderWitnessForm, "form arithmetic failed");
            };
            reject_if(
                x == principal,
                Reason::OrderWitnessDependent,
                format_args!(
                    "the witnesses are not independent: a combination of order {p} is trivial"
                ),
            )?;
        }
    }
    Ok(IndependentOk(()))
}

/// Token: `H <= #Cl(O) < 2H`, so `#Cl(O) = H`.
#[derive(Debug)]
pub(crate) struct WitnessBoundOk {
    bound: BoundOk,
}

impl WitnessBoundOk {
    pub(crate) fn bound(&self) -> &BoundOk {
        &self.bound
    }
}

/// `#Cl = k H` with `k >= 1` and `log #Cl <= hi(log h)`: `k = 1` when
/// `log H > hi(log h) - log 2`.
pub(crate) fn check_witness_bound(bound: BoundOk, h: &Integer) -> Check<WitnessBoundOk> {
    let log_h = bound.log_h();
    let Some(log_big_h) = Interval::int(h).ln() else {
        return reject(Reason::OverLimit, "interval arithmetic failed");
    };
    reject_if(
        log_big_h.lo > log_h.hi,
        Reason::AnalyticInconsistent,
        format_args!(
            "H = {} exceeds the analytic upper bound exp({:.6}): the witness and the analytic bound cannot both hold",
            short_number(h),
            log_h.hi.to_f64()
        ),
    )?;
    reject_if(
        log_big_h.lo <= log_h.sub(&Interval::ln2()).hi,
        Reason::ClassNumberNotConfirmed,
        format_args!(
            "H = {} is too small: log H = {:.6}, but #Cl may be as large as exp({:.6}), so #Cl = k H with k >= 2 is not excluded",
            short_number(h),
            log_big_h.lo.to_f64(),
            log_h.hi.to_f64()
        ),
    )?;
    Ok(WitnessBoundOk { bound })
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::PrimalityEvidence;

    fn pp(p: u64, e: u32) -> PrimePower {
        PrimePower {
            prime: Integer::from(p),
            exponent: e,
            evidence: PrimalityEvidence::Bpsw,
        }
    }

    fn wg(order: u64, a: i64, b: i64, d: &Integer) -> WitnessGenerator {
        let f = Form::new(Integer::from(a), Integer::from(b), d).unwrap();
        WitnessGenerator {
            order: Integer::from(order),
            form: classcert_format::Form {
                a: f.a,
                b: f.b,
                c: f.c,
            },
        }
    }

    #[test]
    fn witnesses_of_minus_23() {
        // Cl(-23) ≅ Z/3 generated by (2, 1, 3) (OEIS A006203: h(-23) = 3).
        let d = Integer::from(-23);
        let h = Integer::from(3);
        let f = [pp(3, 1)];
        let hok = check_h(&h, &f).unwrap();
        assert!(check_witnesses(&[wg(3, 2, 1, &d)], &hok, &d).is_ok());
        // order 6 claimed for an element of order 3: g^(6/2) = 1
        let h6 = Integer::from(6);
        let f6 = [pp(2, 1), pp(3, 1)];
        let hok6 = check_h(&h6, &f6).unwrap();
        let e = check_witnesses(&[wg(6, 2, 1, &d)], &hok6, &d).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessNotExact);
        // the principal form has order 1, not 3: g^(3/3) = 1
        let e = check_witnesses(&[wg(3, 1, 1, &d)], &hok, &d).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessNotExact);
        // order 2 claimed for an element of order 3: g^2 != 1
        let h2 = Integer::from(2);
        let f2 = [pp(2, 1)];
        let hok2 = check_h(&h2, &f2).unwrap();
        let e = check_witnesses(&[wg(2, 2, 1, &d)], &hok2, &d).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessPower);
        // (3, 1, 2) is not reduced
        let e = check_witnesses(&[wg(3, 3, 1, &d)], &hok, &d).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessForm);
        // g and g^-1 = (2, -1, 3) are dependent: Z/3 x Z/3 is not a subgroup
        let h9 = Integer::from(9);
        let f9 = [pp(3, 2)];
        let hok9 = check_h(&h9, &f9).unwrap();
        let e = check_witnesses(&[wg(3, 2, 1, &d), wg(3, 2, -1, &d)], &hok9, &d).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessDependent);
        // a wrong factorisation of H
        let e = check_h(&h9, &f).unwrap_err();
        assert_eq!(e.reason, Reason::OrderWitnessFactorisation);
    }
}
