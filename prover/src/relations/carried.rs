//! Elements carried through the structured elimination (`D < 0`).
//!
//! A sieved relation `e` comes with `α = (x + y√D)/2` and
//! `(α) = ∏_{e_i > 0} P_i^{e_i} ∏_{e_i < 0} P̄_i^{-e_i}` (the verifier's
//! element witness, `docs/certificates.md` section 2). When the elimination
//! replaces a row `r` by `r - f·s` (`s` the pivot row), the new row is the
//! relation of `α_r · β^{|f|} / g`, where `β = ᾱ_s` for `f > 0` (whose
//! vector is `-s`) and `β = α_s` for `f < 0`, and
//! `g = ∏ p_i^{(|r_i| + |f s_i| - |r_i - f s_i|)/2}` takes out the rational
//! primes that a prime and its conjugate (or a ramified prime twice) make
//! together, `P P̄ = (p)` (the same step as for two partial relations,
//! [`super::siqs::Siqs::combined_element`]). A pivot row that still
//! carries its element then gives an elimination the verifier checks by
//! its norm instead of by composing forms.
//!
//! Elements grow by about the pivot's size at every step; one past
//! [`MAX_CARRIED_BITS`] is dropped (the row stays, checked by forms).

use super::{Element, Sparse};
use crate::linalg::sge::PivotRow;
use rug::ops::Pow;
use rug::Integer;

/// Bits of `x` or `y` beyond which a row stops carrying its element. At 60
/// digits a sieved element has about 110 bits; 1 200 left 87 heavy pivot
/// rows (114 to 508 entries) to form reduction, 4 000 leaves none of the
/// small ones, for 31 KB more certificate (3.5 %) and 0.15 × 10⁹ fewer
/// instructions in the verifier (BENCHMARKS.md).
pub const MAX_CARRIED_BITS: u32 = 4000;

/// What every row shares: `D` and the factor base's primes.
pub struct Carrier<'a> {
    pub d: &'a Integer,
    pub primes: &'a [u64],
}

/// A row of the elimination with the element of its relation, if still
/// known.
#[derive(Clone)]
pub struct CarriedRow<'a> {
    pub v: Sparse,
    pub element: Option<Element>,
    carrier: &'a Carrier<'a>,
}

impl<'a> Carrier<'a> {
    pub fn row(&'a self, v: Sparse, element: Option<Element>) -> CarriedRow<'a> {
        CarriedRow {
            v,
            element,
            carrier: self,
        }
    }

    /// `α β` for `α = (x₁ + y₁√D)/2`, `β = (x₂ + y₂√D)/2`:
    /// `((x₁x₂ + y₁y₂D)/2 + (x₁y₂ + x₂y₁)/2 · √D)/2`, the halves exact
    /// because the product lies in the order.
    fn mul(&self, a: &Element, b: &Element) -> Option<Element> {
        let mut x = Integer::from(&a.x * &b.x) + Integer::from(&a.y * &b.y) * self.d;
        let mut y = Integer::from(&a.x * &b.y) + Integer::from(&b.x * &a.y);
        if x.is_odd() || y.is_odd() {
            return None;
        }
        x >>= 1u32;
        y >>= 1u32;
        Some(Element { x, y })
    }

    /// The element of `r - f·s` (vectors `rv`, `sv`, result `new`), as in
    /// the module's text; `None` if a division is not exact (which the
    /// argument rules out) or the element grows too large.
    fn combine(
        &self,
        (ar, rv): (&Element, &Sparse),
        (as_, sv): (&Element, &Sparse),
        f: i64,
        new: &Sparse,
    ) -> Option<Element> {
        let beta = if f > 0 {
            Element {
                x: as_.x.clone(),
                y: Integer::from(-&as_.y),
            }
        } else {
            as_.clone()
        };
        let mut out = ar.clone();
        for _ in 0..f.unsigned_abs() {
            out = self.mul(&out, &beta)?;
        }
        let mut g = Integer::from(1);
        for (&i, &e) in sv {
            let fe = f.checked_mul(e)?;
            let r = rv.get(&i).copied().unwrap_or(0);
            let c = new.get(&i).copied().unwrap_or(0);
            let twice = r.abs() + fe.abs() - c.abs();
            if twice > 0 {
                let p = Integer::from(*self.primes.get(i)?);
                g *= p.pow(u32::try_from(twice / 2).ok()?);
            }
        }
        if !out.x.is_divisible(&g) || !out.y.is_divisible(&g) {
            return None;
        }
        out.x.div_exact_mut(&g);
        out.y.div_exact_mut(&g);
        let bits = out.x.significant_bits().max(out.y.significant_bits());
        (bits <= MAX_CARRIED_BITS).then_some(out)
    }
}

impl PivotRow for CarriedRow<'_> {
    fn columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.v.columns()
    }

    fn unit_columns(&self) -> impl Iterator<Item = usize> + '_ {
        self.v.unit_columns()
    }

    fn weight(&self) -> usize {
        self.v.weight()
    }

    fn has(&self, c: usize) -> bool {
        self.v.has(c)
    }

    fn is_zero(&self) -> bool {
        self.v.is_zero()
    }

    fn eliminate(&mut self, c: usize, pivot: &Self) -> bool {
        let (Some(&x), Some(&s)) = (self.v.get(&c), pivot.v.get(&c)) else {
            return true;
        };
        let before = self.element.take().map(|e| (e, self.v.clone()));
        if !self.v.eliminate(c, &pivot.v) {
            return false;
        }
        if let (Some((ar, rv)), Some(as_)) = (before, &pivot.element) {
            self.element = self
                .carrier
                .combine((&ar, &rv), (as_, &pivot.v), x * s, &self.v);
        }
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The verifier's element check (`verifier/src/relations/elements.rs`)
    /// restated: `|N(α)| = ∏ p^{|e|}` and `α` in the named prime above
    /// each split `p`, `P = (p, (b + √D)/2)`.
    fn generates(d: &Integer, primes: &[u64], bs: &[u64], v: &Sparse, el: &Element) -> bool {
        let mut norm =
            (Integer::from(el.x.square_ref()) - Integer::from(el.y.square_ref()) * d) >> 2u32;
        for (&i, &e) in v {
            let (p, b) = (primes[i], bs[i]);
            let pe = Integer::from(p).pow(e.unsigned_abs() as u32);
            if !norm.is_divisible(&pe) {
                return false;
            }
            norm.div_exact_mut(&pe);
            if !d.is_divisible_u(p as u32) {
                let yb = Integer::from(&el.y * b);
                let t = if e > 0 {
                    Integer::from(&el.x + &yb)
                } else {
                    Integer::from(&el.x - &yb)
                };
                if (t >> 1u32).is_divisible_u(p as u32) {
                    return false;
                }
            }
        }
        norm.abs() == 1
    }

    /// The vector of the relation `α` generates, from the definition:
    /// factor `N(α)` and test membership at each prime; `None` when `α` is
    /// divisible by some `p` or its norm does not factor over `primes`.
    fn vector_of(d: &Integer, primes: &[u64], bs: &[u64], el: &Element) -> Option<Sparse> {
        let mut norm =
            (Integer::from(el.x.square_ref()) - Integer::from(el.y.square_ref()) * d) >> 2u32;
        let mut v = Sparse::new();
        for (i, (&p, &b)) in primes.iter().zip(bs).enumerate() {
            let mut k = 0i64;
            while norm.is_divisible_u(p as u32) {
                norm.div_exact_u_mut(p as u32);
                k += 1;
            }
            if k == 0 {
                continue;
            }
            let yb = Integer::from(&el.y * b);
            let in_p = (Integer::from(&el.x - &yb) >> 1u32).is_divisible_u(p as u32);
            let in_conj = (Integer::from(&el.x + &yb) >> 1u32).is_divisible_u(p as u32);
            let e = match (d.is_divisible_u(p as u32), in_p, in_conj) {
                (true, _, _) => k,
                (false, true, false) => k,
                (false, false, true) => -k,
                _ => return None,
            };
            v.insert(i, e);
        }
        (norm == 1).then_some(v)
    }

    #[test]
    fn carried_elements_generate_their_rows() {
        // D = -1079 = -13·83 (≡ 1 mod 4). Prime ideals (p, b) with
        // b² ≡ D (mod 4p) by search; elements (x + y√D)/2 with small x, y
        // whose norms factor over them; every elimination step between two
        // of them must leave an element that generates the new row, by the
        // definition (`generates`), whenever one is carried.
        let d = Integer::from(-1079);
        let mut primes = Vec::new();
        let mut bs = Vec::new();
        for p in [
            2u64, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71, 73, 79,
            83,
        ] {
            let four_p = Integer::from(4 * p);
            if let Some(b) = (0..=p).find(|&b| (Integer::from(b * b) - &d).is_divisible(&four_p)) {
                primes.push(p);
                bs.push(b);
            }
        }
        let carrier = Carrier {
            d: &d,
            primes: &primes,
        };
        let mut rels = Vec::new();
        for y in 1..4i64 {
            for x in -60..60i64 {
                if (x - y * -1079).rem_euclid(2) != 0 {
                    continue;
                }
                let el = Element {
                    x: Integer::from(x),
                    y: Integer::from(y),
                };
                if let Some(v) = vector_of(&d, &primes, &bs, &el) {
                    if !v.is_empty() {
                        assert!(generates(&d, &primes, &bs, &v, &el));
                        rels.push((v, el));
                    }
                }
            }
        }
        assert!(rels.len() > 40, "{} relations", rels.len());
        let mut steps = 0;
        for (rv, ra) in &rels {
            for (sv, sa) in &rels {
                for (&c, &e) in sv {
                    if e.abs() != 1 || !rv.contains_key(&c) || rv == sv {
                        continue;
                    }
                    let mut row = carrier.row(rv.clone(), Some(ra.clone()));
                    let pivot = carrier.row(sv.clone(), Some(sa.clone()));
                    assert!(row.eliminate(c, &pivot));
                    assert!(!row.v.contains_key(&c));
                    let el = row.element.expect("exact divisions keep the element");
                    assert!(
                        generates(&d, &primes, &bs, &row.v, &el),
                        "{rv:?} - {sv:?} at {c}"
                    );
                    steps += 1;
                }
            }
        }
        assert!(steps > 200, "{steps} steps");
    }
}
