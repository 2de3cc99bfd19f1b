//! The order of a number field `K = Q[x]/(F)` (`general-fields.md`, "The
//! field and the order"; registry entry `order-ring-and-maximality`).
//!
//! 1. `F` is monic of degree 3 to 6 with `disc(F) != 0`, its root
//!    enclosures hold ([`check_roots`]), and it is irreducible: a factor
//!    of degree `d` would make `d` a sum of some of the degrees of the
//!    irreducible factors of `F mod p` at every prime `p ∤ disc(F)`, and
//!    the patterns at a few primes leave no such `d` with `0 < d < n`; or,
//!    where patterns cannot (`x^4 + 1` splits modulo every prime), no set
//!    of roots closed under conjugation has a product with integer
//!    coefficients ([`Roots::no_integer_factor`]).
//! 2. The basis spans a ring containing `Z[θ]`, and `disc(O)` is computed
//!    ([`FieldOrder::new`]).
//! 3. Maximality, when claimed: the full factorisation of `|disc(O)|`,
//!    each prime with evidence, and the Pohst–Zassenhaus criterion at each
//!    `p` with `p² | disc(O)` (at the others `p ∤ [O_K : O]`, because
//!    `disc(O) = [O_K : O]² disc(O_K)`).

use super::maximality::{check_factorisation, MaximalityOk};
use crate::arith::primes_up_to;
use crate::field::fppoly::Fp;
use crate::field::order::FieldOrder;
use crate::field::roots::{check_roots, Roots};
use crate::field::zpoly;
use crate::limits::{MAX_FIELD_COEFF_BITS, MAX_IRREDUCIBILITY_PRIMES};
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Embedding, Order, PrimePower};
use rug::Integer;

/// Token: `F` is irreducible, the basis spans an order `O ⊇ Z[θ]`.
#[derive(Debug)]
pub(crate) struct FieldOrderOk {
    order: FieldOrder,
    disc_f: Integer,
    roots: Roots,
}

impl FieldOrderOk {
    pub(crate) fn order(&self) -> &FieldOrder {
        &self.order
    }

    /// `disc(F)`.
    pub(crate) fn disc_f(&self) -> &Integer {
        &self.disc_f
    }

    /// The checked root enclosures of `F`.
    pub(crate) fn roots(&self) -> &Roots {
        &self.roots
    }
}

/// Checks the polynomial, its root enclosures and the order's basis.
pub(crate) fn check_field_order(order: &Order, enclosures: &Embedding) -> Check<FieldOrderOk> {
    let Order::Polynomial {
        polynomial: f,
        basis,
        denominator,
    } = order
    else {
        return reject(
            Reason::UnsupportedOrder,
            "a number-field certificate must name an order by its polynomial",
        );
    };
    let n = f.len().saturating_sub(1);
    reject_if(
        !(3..=6).contains(&n) || f.last() != Some(&Integer::from(1)),
        Reason::PolynomialInvalid,
        "F must be monic of degree 3 to 6",
    )?;
    if f.iter()
        .any(|c| c.significant_bits() > MAX_FIELD_COEFF_BITS)
    {
        return reject(
            Reason::OverLimit,
            format!("a coefficient of F has more than {MAX_FIELD_COEFF_BITS} bits"),
        );
    }
    let disc_f = match zpoly::discriminant(f) {
        Some(d) if d != 0 => d,
        _ => return reject(Reason::PolynomialInvalid, "F has a repeated root"),
    };
    let roots = match check_roots(f, &enclosures.real, &enclosures.complex) {
        Ok(r) => r,
        Err(e) => return reject(Reason::RootsInvalid, e.to_string()),
    };
    reject_if(
        !shown_irreducible(f, n, &disc_f) && !roots.no_integer_factor(),
        Reason::PolynomialInvalid,
        format_args!(
            "F is not shown irreducible: neither its factorisation patterns modulo the first {MAX_IRREDUCIBILITY_PRIMES} primes not dividing disc(F) nor its roots rule out a proper factor"
        ),
    )?;
    match FieldOrder::new(f, basis, denominator) {
        Ok(order) => Ok(FieldOrderOk {
            order,
            disc_f,
            roots,
        }),
        Err(e) => reject(Reason::OrderNotRing, e.to_string()),
    }
}

/// Whether the degree patterns of `F mod p` leave no factor degree `d`,
/// `0 < d < n`, possible.
pub fn shown_irreducible(f: &[Integer], n: usize, disc_f: &Integer) -> bool {
    // bit d set: a factor of degree d is still possible
    let full: u32 = (1 << n) - 2;
    let mut possible = full;
    let mut tried = 0;
    for p in primes_up_to(1 << 16) {
        if tried >= MAX_IRREDUCIBILITY_PRIMES || possible == 0 {
            break;
        }
        if disc_f.is_divisible_u(p as u32) {
            continue;
        }
        let Some(pattern) = Fp::new(p).and_then(|fp| fp.degree_pattern(f)) else {
            continue;
        };
        tried += 1;
        // sums of sub-multisets of the pattern, as a bit set
        let mut sums: u32 = 1;
        for d in pattern {
            sums |= sums << d;
        }
        possible &= sums;
    }
    possible & full == 0
}

/// Maximality when claimed: `factors` is the full factorisation of
/// `|disc(O)|`, and `O` is `p`-maximal at every `p` with `p² | disc(O)`.
/// A field certificate must claim it (non-maximal orders come later).
///
/// With `unfactored = c`, `factors` factors `|disc(O)| / c` instead, and
/// `c > 1` must divide `|disc(O)|`, be coprime to the listed primes and not
/// be a perfect power (which is never squarefree). The result then rests
/// on `c` being squarefree: every prime `q | c` has `q ∥ disc(O)`, so `O`
/// is `q`-maximal (`disc(O) = [O_K : O]² d_K`, common practice).
pub(crate) fn check_field_maximality(
    claim: &Option<Vec<PrimePower>>,
    unfactored: Option<&Integer>,
    o: &FieldOrderOk,
) -> Check<MaximalityOk> {
    let Some(factors) = claim else {
        return reject(
            Reason::UnsupportedOrder,
            "orders of number fields are certified only as maximal orders for now: the certificate must give the factorisation of |disc(O)|",
        );
    };
    let mut abs = Integer::from(o.order.discriminant().abs_ref());
    if let Some(c) = unfactored {
        let coprime = factors.iter().all(|pp| !c.is_divisible(&pp.prime));
        reject_if(
            *c <= 1 || !abs.is_divisible(c) || !coprime || c.is_perfect_power(),
            Reason::MaximalityFactorisation,
            "the unfactored part of |disc(O)| must exceed 1, divide it, be coprime to the listed primes and not be a perfect power",
        )?;
        abs = abs.div_exact(c);
    }
    let evidence = check_factorisation(
        factors,
        &abs,
        "|disc(O)| without its unfactored part",
        Reason::MaximalityFactorisation,
    )?;
    for pp in factors.iter().filter(|pp| pp.exponent >= 2) {
        match o.order.is_p_maximal(&pp.prime) {
            Ok(true) => {}
            Ok(false) => {
                return reject(
                    Reason::OrderNotMaximal,
                    format!(
                        "the order is not maximal at p = {}: the Pohst-Zassenhaus test finds a larger ring",
                        pp.prime
                    ),
                )
            }
            Err(e) => return reject(Reason::OverLimit, e.to_string()),
        }
    }
    Ok(MaximalityOk::certified(evidence))
}
