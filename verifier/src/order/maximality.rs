//! The claim "this is the maximal order of Q(sqrt D)".
//!
//! It needs `D` to be a fundamental discriminant: `D ≡ 1 (mod 4)`
//! squarefree, or `D = 4m` with `m ≡ 2, 3 (mod 4)` squarefree (common
//! practice; Cohen GTM 138, §5.1). That is read off the full
//! factorisation of `|D|`, each prime with evidence checked by
//! [`crate::primality`]. Without the claim the verdict speaks only of "the
//! order of discriminant D".

use crate::limits::{MAX_DISCRIMINANT_BITS, MAX_FACTORS};
use crate::primality::{self, ProofError, Status, Used};
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::short_number;
use classcert_format::PrimePower;
use rug::ops::Pow;
use rug::Integer;

/// What a checked factorisation rests on.
#[derive(Debug, Default, Clone, Copy)]
pub(crate) struct Factorisation {
    /// Some prime is only a BPSW probable prime (above 2^64).
    pub(crate) bpsw_assumed: bool,
    /// Which proof theorems were used.
    pub(crate) used: Used,
}

impl Factorisation {
    /// The registry entries the evidence rests on.
    pub(crate) fn theorems(&self) -> Vec<&'static Theorem> {
        let mut ids = vec![registry::BPSW_SMALL];
        if self.used.pocklington {
            ids.push(registry::POCKLINGTON);
        }
        if self.used.morrison {
            ids.push(registry::MORRISON);
        }
        ids.into_iter().filter_map(registry::lookup).collect()
    }
}

/// Token: maximality is certified (or not claimed).
#[derive(Debug)]
pub(crate) struct MaximalityOk {
    /// `Some` when the maximal order is claimed and certified.
    evidence: Option<Factorisation>,
}

impl MaximalityOk {
    /// Maximality shown by `evidence` (number fields: with the
    /// Pohst–Zassenhaus test, in `order/field.rs`).
    pub(crate) fn certified(evidence: Factorisation) -> MaximalityOk {
        MaximalityOk {
            evidence: Some(evidence),
        }
    }

    pub(crate) fn is_maximal(&self) -> bool {
        self.evidence.is_some()
    }

    pub(crate) fn evidence(&self) -> Option<&Factorisation> {
        self.evidence.as_ref()
    }
}

pub(crate) fn check_maximality(
    claim: &Option<Vec<PrimePower>>,
    d: &Integer,
) -> Check<MaximalityOk> {
    let Some(factors) = claim else {
        return Ok(MaximalityOk { evidence: None });
    };
    let abs_d = Integer::from(d.abs_ref());
    let evidence = check_factorisation(factors, &abs_d, "|D|", Reason::MaximalityFactorisation)?;
    let two_exp = factors
        .iter()
        .find(|f| f.prime == 2)
        .map_or(0, |f| f.exponent);
    let squarefree_odd = factors.iter().all(|f| f.prime == 2 || f.exponent == 1);
    let fundamental = squarefree_odd
        && match two_exp {
            0 => d.mod_u(4) == 1,
            2 => matches!(Integer::from(d >> 2u32).mod_u(4), 2 | 3),
            3 => true,
            _ => false,
        };
    reject_if(
        !fundamental,
        Reason::MaximalityNotFundamental,
        "the factorisation shows that D is not a fundamental discriminant",
    )?;
    Ok(MaximalityOk {
        evidence: Some(evidence),
    })
}

/// `factors` is the factorisation of `target` into primes listed once each
/// in increasing order, each with checked evidence. A wrong factorisation
/// is refused with `reason`.
pub(crate) fn check_factorisation(
    factors: &[PrimePower],
    target: &Integer,
    what: &str,
    reason: Reason,
) -> Check<Factorisation> {
    reject_if(
        factors.len() > MAX_FACTORS,
        Reason::OverLimit,
        format_args!("too many factors of {what}"),
    )?;
    let mut out = Factorisation::default();
    let mut product = Integer::from(1);
    let mut prev = Integer::new();
    for f in factors {
        reject_if(
            f.prime <= prev || f.exponent == 0 || f.exponent > MAX_DISCRIMINANT_BITS,
            reason,
            "factors must be listed once each, in increasing order, with positive exponents",
        )?;
        reject_if(
            f.prime.significant_bits() > MAX_DISCRIMINANT_BITS,
            Reason::OverLimit,
            "a factor is too large",
        )?;
        match primality::check(&f.prime, &f.evidence, 0, &mut out.used) {
            Err(ProofError::Composite(q)) => {
                return reject(
                    reason,
                    format!("{} is not prime (it fails the BPSW test)", short_number(&q)),
                )
            }
            Err(ProofError::Invalid(why)) => {
                return reject(
                    Reason::PrimalityProofInvalid,
                    format!(
                        "the primality proof of {} fails: {why}",
                        short_number(&f.prime)
                    ),
                )
            }
            Err(ProofError::OverLimit) => {
                return reject(
                    Reason::OverLimit,
                    "a primality proof is too deep or too long",
                )
            }
            Ok(Status::Proven) => {}
            Ok(Status::AssumedBpsw) => out.bpsw_assumed = true,
        }
        product *= Integer::from((&f.prime).pow(f.exponent));
        reject_if(
            product.significant_bits() > MAX_DISCRIMINANT_BITS + 1,
            reason,
            format_args!("the factors multiply past {what}"),
        )?;
        prev = f.prime.clone();
    }
    reject_if(
        product != *target,
        reason,
        format_args!(
            "the stated factors multiply to {}, not {what} = {}",
            short_number(&product),
            short_number(target)
        ),
    )?;
    Ok(out)
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

    #[test]
    fn fundamental_discriminants() {
        // -4, -8, -23 and -84 are fundamental; -12 = 2^2 · -3 and -27 = 3^2 · -3
        // are not (common practice).
        let ok = |d: i64, f: Vec<PrimePower>| check_maximality(&Some(f), &Integer::from(d));
        assert!(ok(-4, vec![pp(2, 2)]).unwrap().is_maximal());
        assert!(ok(-8, vec![pp(2, 3)]).unwrap().is_maximal());
        assert!(ok(-23, vec![pp(23, 1)]).unwrap().is_maximal());
        assert!(ok(-84, vec![pp(2, 2), pp(3, 1), pp(7, 1)]).is_ok());
        assert_eq!(
            ok(-12, vec![pp(2, 2), pp(3, 1)]).unwrap_err().reason,
            Reason::MaximalityNotFundamental
        );
        assert_eq!(
            ok(-27, vec![pp(3, 3)]).unwrap_err().reason,
            Reason::MaximalityNotFundamental
        );
        assert!(!check_maximality(&None, &Integer::from(-27))
            .unwrap()
            .is_maximal());
    }

    #[test]
    fn factorisations_must_be_exact_and_ordered() {
        let r = Reason::MaximalityFactorisation;
        let t = Integer::from(84);
        assert!(check_factorisation(&[pp(2, 2), pp(3, 1), pp(7, 1)], &t, "n", r).is_ok());
        for bad in [
            vec![pp(3, 1), pp(2, 2), pp(7, 1)],
            vec![pp(2, 2), pp(3, 1)],
            vec![pp(2, 2), pp(3, 0), pp(7, 1)],
            vec![pp(2, 2), pp(21, 1)],
        ] {
            assert_eq!(check_factorisation(&bad, &t, "n", r).unwrap_err().reason, r);
        }
    }
}
