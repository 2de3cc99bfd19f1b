//! An order `O` of `K = Q[x]/(F)` given by a basis in Hermite form over the
//! power basis, with a common denominator (the conventions are in
//! `field-spec.md`): its multiplication table, its discriminant and index
//! over `Z[θ]`, exact arithmetic on coordinate vectors, and the
//! Pohst–Zassenhaus test of `p`-maximality.
//!
//! An element is its coordinate vector over `ω_0, …, ω_{n-1}`, where
//! `ω_i = (Σ_j basis[i][j] θ^j) / den`. The element functions take vectors
//! of length `n`; a shorter one counts its missing coordinates as zero and
//! a longer one has its extra coordinates ignored, so the callers check
//! lengths where a certificate supplies the vector.
//!
//! Irreducibility of `F` is checked elsewhere (degree patterns mod `p`);
//! nothing here depends on it except the names: for a squarefree `F` that
//! factors, `Q[x]/(F)` is a product of fields and every statement below
//! holds for it as well.

use super::fppoly::Fp;
use super::{linmodp, zpoly};
use crate::limits::{
    MAX_FIELD_DEGREE, MAX_MAXIMALITY_PRIME_BITS, MAX_ORDER_ENTRY_BITS, MAX_POWER_BITS,
    MIN_FIELD_DEGREE,
};
use crate::primality::bpsw::is_bpsw_probable_prime;
use rug::ops::Pow;
use rug::Integer;
use std::cmp::Ordering;

/// Why an order was refused.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum OrderError {
    /// The degree of `F` is outside `MIN_FIELD_DEGREE..=MAX_FIELD_DEGREE`.
    Degree(usize),
    /// `F` is not monic.
    NotMonic,
    /// The basis is not `n` rows of length `n`, or `den ≤ 0`.
    Shape,
    /// A coefficient of `F`, `den` or a basis entry is over the cap.
    TooLarge,
    /// The entry `basis[row][col]` breaks the Hermite form.
    NotHermite { row: usize, col: usize },
    /// `den` and the basis entries have a common factor.
    NotPrimitive,
    /// `disc(F) = 0`: `F` has a repeated root.
    Singular,
    /// `ω_i ω_j` is not in the Z-span of the basis.
    NotARing { i: usize, j: usize },
    /// 1 is not in the Z-span of the basis.
    NoOne,
    /// `θ^k` is not in the Z-span of the basis.
    MissingPower(usize),
    /// `disc(F) ≠ [O : Z[θ]]^2 · disc(O)` (cannot happen for a correct
    /// computation; kept as a check of this code).
    Inconsistent,
    /// `p < 2` or `p` over `MAX_MAXIMALITY_PRIME_BITS` bits.
    PrimeOutOfRange,
    /// `p` failed the Baillie–PSW test or a pivot mod `p` had no inverse.
    NotPrime,
    /// The computed `p`-radical is not an ideal of `O` (cannot happen for
    /// prime `p`).
    Radical,
}

impl std::fmt::Display for OrderError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&match self {
            Self::Degree(n) => format!(
                "the polynomial has degree {n}, not between {MIN_FIELD_DEGREE} and {MAX_FIELD_DEGREE}"
            ),
            Self::NotMonic => "the polynomial is not monic".into(),
            Self::Shape => "the basis is not n rows of n entries over a positive denominator".into(),
            Self::TooLarge => {
                format!("an entry of the polynomial or basis has more than {MAX_ORDER_ENTRY_BITS} bits")
            }
            Self::NotHermite { row, col } => {
                format!("basis entry ({row}, {col}) breaks the lower Hermite form")
            }
            Self::NotPrimitive => "the denominator and the basis entries have a common factor".into(),
            Self::Singular => "the polynomial has a repeated root (discriminant 0)".into(),
            Self::NotARing { i, j } => {
                format!("the product of basis elements {i} and {j} is not in their span")
            }
            Self::NoOne => "the span of the basis does not contain 1".into(),
            Self::MissingPower(k) => format!("the span of the basis does not contain θ^{k}"),
            Self::Inconsistent => "disc(F) is not index^2 · disc(O)".into(),
            Self::PrimeOutOfRange => {
                format!("the prime is below 2 or has more than {MAX_MAXIMALITY_PRIME_BITS} bits")
            }
            Self::NotPrime => "the number given as a prime is not prime".into(),
            Self::Radical => "the computed p-radical is not an ideal".into(),
        })
    }
}

/// An order whose shape, ring property and discriminant have been checked
/// by [`FieldOrder::new`]; only that function builds one.
#[derive(Debug, Clone)]
pub struct FieldOrder {
    f: Vec<Integer>,
    basis: Vec<Vec<Integer>>,
    den: Integer,
    /// `table[i][j]` = coordinates of `ω_i ω_j`.
    table: Vec<Vec<Vec<Integer>>>,
    table_bits: u64,
    one: Vec<Integer>,
    disc: Integer,
    index: Integer,
}

/// The `j`-th unit vector of length `n`.
pub(crate) fn unit(n: usize, j: usize) -> Vec<Integer> {
    (0..n).map(|i| Integer::from(u8::from(i == j))).collect()
}

/// `Σ_i c_i · rows[i]`, of length `width`.
pub(crate) fn combine(c: &[Integer], rows: &[Vec<Integer>], width: usize) -> Vec<Integer> {
    let mut out = vec![Integer::new(); width];
    for (ci, row) in c.iter().zip(rows).filter(|(ci, _)| **ci != 0) {
        for (o, r) in out.iter_mut().zip(row) {
            *o += Integer::from(ci * r);
        }
    }
    out
}

/// The integer `c` with `c · m = y` (`c` a row vector), for a triangular
/// `m` with non-zero diagonal, solving for `c_j` in the order `cols` (for
/// each `j`, the `c_i` with `m[i][j] ≠ 0`, `i ≠ j`, come earlier). `None`
/// if a division is not exact. The answer is checked by multiplying back,
/// so a wrong order or shape gives `None`, never a wrong `c`.
fn solve_triangular(
    m: &[Vec<Integer>],
    y: &[Integer],
    cols: impl Iterator<Item = usize>,
) -> Option<Vec<Integer>> {
    let mut c = vec![Integer::new(); m.len()];
    for j in cols {
        let mut rest = y.get(j)?.clone();
        for (ci, row) in c.iter().zip(m) {
            rest -= Integer::from(ci * row.get(j)?);
        }
        let d = m.get(j)?.get(j)?;
        if *d == 0 || !rest.is_divisible(d) {
            return None;
        }
        *c.get_mut(j)? = rest.div_exact(d);
    }
    (combine(&c, m, y.len()) == y).then_some(c)
}

/// The determinant of a square matrix by fraction-free elimination
/// (E. H. Bareiss, Math. Comp. 22 (1968); H. Cohen, GTM 138, Algorithm
/// 2.2.6, number from memory): after step `k` every entry below and right
/// of the pivot is a `(k+1)`-minor, so the divisions by the previous pivot
/// are exact, and the last pivot is the determinant. `n^3` operations.
fn det(mut m: Vec<Vec<Integer>>) -> Integer {
    let n = m.len();
    let mut prev = Integer::from(1);
    let mut negate = false;
    for k in 0..n {
        let nonzero = |r: &Vec<Integer>| r.get(k).is_some_and(|c| *c != 0);
        let Some(r) = (k..n).find(|&r| m.get(r).is_some_and(nonzero)) else {
            return Integer::new();
        };
        if r != k {
            // k < r < n: both in range.
            m.swap(r, k);
            negate = !negate;
        }
        let pivot_row = m.get(k).cloned().unwrap_or_default();
        let pivot = pivot_row.get(k).cloned().unwrap_or_default();
        for row in m.iter_mut().skip(k + 1) {
            let lead = row.get(k).cloned().unwrap_or_default();
            for (x, y) in row.iter_mut().zip(&pivot_row).skip(k + 1) {
                let t = Integer::from(&*x * &pivot) - Integer::from(&lead * y);
                *x = t.div_exact(&prev);
            }
        }
        prev = pivot;
    }
    if negate {
        -prev
    } else {
        prev
    }
}

impl FieldOrder {
    /// Checks the order with basis `ω_i = (Σ_j basis[i][j] θ^j) / den` in
    /// `Q[x]/(f)` and computes its table, discriminant and index:
    ///
    /// 1. shape: `f` monic of degree `n` in `MIN_FIELD_DEGREE..=MAX_FIELD_DEGREE`,
    ///    `disc(f) ≠ 0`; `basis` lower Hermite (`basis[i][j] = 0` for
    ///    `j > i`, `basis[i][i] > 0`, `0 ≤ basis[i][j] < basis[j][j]` for
    ///    `j < i`), `den > 0`, `gcd(den, entries) = 1`; entries capped;
    /// 2. `1 ∈ O` and `θ^k ∈ O` for `k < n`, so `Z[θ] ⊆ O`;
    /// 3. every `ω_i ω_j` has integer coordinates, so the Z-span is closed
    ///    under products: with 2, a ring, hence an order;
    /// 4. `disc(O) = det(Tr(ω_i ω_j))` and `[O : Z[θ]] = den^n / ∏ basis[i][i]`
    ///    (the lattice of numerators against `den·Z^n`), and the theorem
    ///    `disc(Z[θ]) = [O : Z[θ]]^2 disc(O)` with `disc(Z[θ]) = disc(F)`
    ///    (common practice) is checked as a consistency test.
    pub fn new(f: &[Integer], basis: &[Vec<Integer>], den: &Integer) -> Result<Self, OrderError> {
        let n = f.len().saturating_sub(1);
        if !(MIN_FIELD_DEGREE..=MAX_FIELD_DEGREE).contains(&n) {
            return Err(OrderError::Degree(n));
        }
        if f.last().is_none_or(|c| *c != 1) {
            return Err(OrderError::NotMonic);
        }
        if basis.len() != n || basis.iter().any(|r| r.len() != n) || *den <= 0 {
            return Err(OrderError::Shape);
        }
        let big = |c: &Integer| c.significant_bits() > MAX_ORDER_ENTRY_BITS;
        if f.iter().any(big) || big(den) || basis.iter().flatten().any(big) {
            return Err(OrderError::TooLarge);
        }
        for (i, row) in basis.iter().enumerate() {
            for (j, c) in row.iter().enumerate() {
                let ok = match j.cmp(&i) {
                    Ordering::Greater => *c == 0,
                    Ordering::Equal => *c > 0,
                    Ordering::Less => {
                        let diag = basis.get(j).and_then(|r| r.get(j));
                        *c >= 0 && diag.is_some_and(|d| c < d)
                    }
                };
                if !ok {
                    return Err(OrderError::NotHermite { row: i, col: j });
                }
            }
        }
        let content = basis.iter().flatten().fold(den.clone(), |g, c| g.gcd(c));
        if content != 1 {
            return Err(OrderError::NotPrimitive);
        }
        let disc_f = zpoly::discriminant(f)
            .filter(|d| *d != 0)
            .ok_or(OrderError::Singular)?;
        let mut order = FieldOrder {
            f: f.to_vec(),
            basis: basis.to_vec(),
            den: den.clone(),
            table: Vec::new(),
            table_bits: 0,
            one: Vec::new(),
            disc: Integer::new(),
            index: Integer::new(),
        };
        let one = Integer::from(1);
        order.one = order
            .from_power_basis(std::slice::from_ref(&one), &one)
            .ok_or(OrderError::NoOne)?;
        for k in 0..n {
            if order.from_power_basis(&unit(n, k), &one).is_none() {
                return Err(OrderError::MissingPower(k));
            }
        }
        let den2 = Integer::from(den * den);
        let mut table = Vec::with_capacity(n);
        for (i, bi) in basis.iter().enumerate() {
            let mut row = Vec::with_capacity(n);
            for (j, bj) in basis.iter().enumerate() {
                let product =
                    zpoly::mul(&zpoly::normalise(bi.clone()), &zpoly::normalise(bj.clone()));
                let coords = order.from_power_basis(&product, &den2);
                row.push(coords.ok_or(OrderError::NotARing { i, j })?);
            }
            table.push(row);
        }
        order.table_bits = table
            .iter()
            .flatten()
            .flatten()
            .map(|c| u64::from(c.significant_bits()))
            .max()
            .unwrap_or(0);
        order.table = table;
        let gram: Vec<Vec<Integer>> = order
            .table
            .iter()
            .map(|row| row.iter().map(|t| order.trace(t)).collect())
            .collect();
        order.disc = det(gram);
        let diag = basis
            .iter()
            .enumerate()
            .filter_map(|(i, r)| r.get(i))
            .fold(Integer::from(1), |acc, d| acc * d);
        let den_n = Integer::from(den.pow(u32::try_from(n).unwrap_or(u32::MAX)));
        if !den_n.is_divisible(&diag) {
            return Err(OrderError::Inconsistent);
        }
        order.index = den_n.div_exact(&diag);
        if Integer::from(order.index.square_ref()) * &order.disc != disc_f {
            return Err(OrderError::Inconsistent);
        }
        Ok(order)
    }

    /// The degree `n`.
    pub fn degree(&self) -> usize {
        self.basis.len()
    }

    /// `F`, coefficients low to high.
    pub fn polynomial(&self) -> &[Integer] {
        &self.f
    }

    /// `disc(O) = det(Tr(ω_i ω_j))`.
    pub fn discriminant(&self) -> &Integer {
        &self.disc
    }

    /// `[O : Z[θ]]`.
    pub fn index(&self) -> &Integer {
        &self.index
    }

    /// The coordinates of 1.
    pub fn one(&self) -> Vec<Integer> {
        self.one.clone()
    }

    /// `a·b = Σ_{i,j} a_i b_j ω_i ω_j`: at most `n^3` multiplications.
    pub fn mul(&self, a: &[Integer], b: &[Integer]) -> Vec<Integer> {
        let mut out = vec![Integer::new(); self.degree()];
        for (ai, row) in a.iter().zip(&self.table).filter(|(ai, _)| **ai != 0) {
            for (bj, t) in b.iter().zip(row).filter(|(bj, _)| **bj != 0) {
                let c = Integer::from(ai * bj);
                for (o, tk) in out.iter_mut().zip(t) {
                    *o += &c * tk;
                }
            }
        }
        out
    }

    /// `a^e` by square and multiply (`2·32` products at most); `None` if
    /// the estimate `e·(bits(a) + bits(table) + 6)` of its size exceeds
    /// `MAX_POWER_BITS` (each coordinate of `ab` is at most
    /// `n^2 |a| |b| |table|` with `n^2 ≤ 36 < 2^6`).
    pub fn pow(&self, a: &[Integer], e: u32) -> Option<Vec<Integer>> {
        let bits_a = a
            .iter()
            .map(|c| u64::from(c.significant_bits()))
            .max()
            .unwrap_or(0);
        if u64::from(e).saturating_mul(bits_a + self.table_bits + 6) > MAX_POWER_BITS {
            return None;
        }
        let mut acc = self.one();
        for i in (0..u32::BITS - e.leading_zeros()).rev() {
            acc = self.mul(&acc, &acc);
            if (e >> i) & 1 == 1 {
                acc = self.mul(&acc, a);
            }
        }
        Some(acc)
    }

    /// `a^e` reduced mod `p` after every product, for `p ≥ 2`:
    /// `2·bits(e)` products of reduced elements.
    fn pow_mod(&self, a: &[Integer], e: &Integer, p: &Integer) -> Vec<Integer> {
        let base = linmodp::reduce(a, p);
        let mut acc = linmodp::reduce(&self.one, p);
        for i in (0..e.significant_bits()).rev() {
            acc = linmodp::reduce(&self.mul(&acc, &acc), p);
            if e.get_bit(i) {
                acc = linmodp::reduce(&self.mul(&acc, &base), p);
            }
        }
        acc
    }

    /// The matrix of `x ↦ a·x`: row `j` holds the coordinates of `a·ω_j`.
    fn mul_matrix(&self, a: &[Integer]) -> Vec<Vec<Integer>> {
        let n = self.degree();
        (0..n).map(|j| self.mul(a, &unit(n, j))).collect()
    }

    /// `N(a)`, the determinant of `x ↦ a·x` (exact, Bareiss).
    pub fn norm(&self, a: &[Integer]) -> Integer {
        det(self.mul_matrix(a))
    }

    /// `Tr(a)`, the trace of `x ↦ a·x`.
    pub fn trace(&self, a: &[Integer]) -> Integer {
        let m = self.mul_matrix(a);
        m.iter().enumerate().filter_map(|(j, r)| r.get(j)).sum()
    }

    /// `(num, den)` with `a = (Σ_j num[j] θ^j) / den`.
    pub fn to_power_basis(&self, a: &[Integer]) -> (Vec<Integer>, Integer) {
        (combine(a, &self.basis, self.degree()), self.den.clone())
    }

    /// The coordinates of `(Σ_j num[j] θ^j) / d` (`num` of any length: it
    /// is reduced modulo `F` first); `None` if `d ≤ 0` or the element is
    /// not in `O`. Solves `c · basis = num·den/d` from the last column.
    // The name pairs it with `to_power_basis`; it needs the order, hence `&self`.
    #[allow(clippy::wrong_self_convention)]
    pub fn from_power_basis(&self, num: &[Integer], d: &Integer) -> Option<Vec<Integer>> {
        if *d <= 0 {
            return None;
        }
        let (_, r) = zpoly::divrem_monic(num, &self.f)?;
        let n = self.degree();
        let mut target = Vec::with_capacity(n);
        for j in 0..n {
            let x = r.get(j).cloned().unwrap_or_default() * &self.den;
            if !x.is_divisible(d) {
                return None;
            }
            target.push(x.div_exact(d));
        }
        solve_triangular(&self.basis, &target, (0..n).rev())
    }

    /// `a = 0`.
    pub fn is_zero(&self, a: &[Integer]) -> bool {
        a.iter().all(|c| *c == 0)
    }

    /// `a ∈ p·O`: every coordinate divisible by `p`.
    pub fn divisible_by(&self, a: &[Integer], p: &Integer) -> bool {
        a.iter().all(|c| c.is_divisible(p))
    }

    /// Steps 1 to 3 of [`FieldOrder::is_p_maximal`]: `I_p/pO` in reduced
    /// echelon form, `p` the modulus of `k` (`None` if a pivot has no
    /// inverse mod `p`).
    fn radical_mod_p(&self, p: &Integer, k: Fp) -> Option<Vec<Vec<u64>>> {
        let n = self.degree();
        // Step 1: at most 3 passes, as p ≥ 2 and n ≤ 6.
        let mut q = p.clone();
        for _ in 0..n {
            if q >= n {
                break;
            }
            q *= p;
        }
        // Steps 2 and 3.
        let frobenius: Vec<Vec<u64>> = (0..n)
            .map(|i| linmodp::words(&self.pow_mod(&unit(n, i), &q, p), k))
            .collect();
        linmodp::kernel_words(&frobenius, k).and_then(|r| linmodp::echelon_words(r, k))
    }

    /// Whether `O` is `p`-maximal (`p ∤ [O_K : O]`), for a prime `p` (the
    /// caller proves it prime; a number failing Baillie–PSW is refused).
    ///
    /// The Pohst–Zassenhaus theorem (H. Cohen, A Course in Computational
    /// Algebraic Number Theory, GTM 138, section 6.1, Theorem 6.1.3; the
    /// number from memory): let `I_p` be the `p`-radical of `O`, the ideal
    /// of `x ∈ O` with some power in `pO`, and `O' = {x ∈ K : x I_p ⊆ I_p}`.
    /// Then `O' = O` iff `O` is `p`-maximal (else `O ⊊ O' ⊆ O_K`). Here
    /// `pO' = U := {u ∈ O : u I_p ⊆ p I_p}` (as `p ∈ I_p`, `O' ⊆ O/p`), so
    /// `O` is `p`-maximal iff `U = pO`, iff the `F_p`-linear map
    /// `O/pO → End(I_p/pI_p)`, `u ↦ (y ↦ uy)` is injective.
    ///
    /// The steps:
    /// 1. `q = p^k` with `k` least such that `q ≥ n`;
    /// 2. the matrix of `x ↦ x^q` on `O/pO` (rows `ω_i^q mod p`): it is
    ///    `F_p`-linear since `(x + y)^p = x^p + y^p` in characteristic `p`
    ///    and `c^p = c` for `c ∈ F_p`;
    /// 3. its kernel is `I_p/pO` (Cohen, Lemma 6.1.6, number from memory):
    ///    a nilpotent `x` in the `n`-dimensional algebra `O/pO` has
    ///    `x^n = 0`, hence `x^q = 0`; taken in reduced echelon form;
    /// 4. a Z-basis `β_0, …, β_{n-1}` of `I_p`: `β_j` is the kernel row
    ///    with pivot in column `j`, or `p·ω_j` if no row has; they generate
    ///    `I_p = pO + Σ Z·rows` (`p·ω_c` for a pivot column `c` is `p` times
    ///    its row minus multiples of the `p·ω_j`, `j` not a pivot), and they
    ///    are `n` of them; their matrix is upper triangular with 1 or `p` on
    ///    the diagonal;
    /// 5. for each `ω_i`, the coordinates of `ω_i β_j` over the `β`
    ///    (exact triangular solve, checked by multiplying back), mod `p`:
    ///    the matrix of `y ↦ ω_i y` on `I_p/pI_p`, flattened to `n^2`
    ///    entries;
    /// 6. the map is injective iff those `n` vectors have rank `n` mod `p`.
    ///
    /// Cost: `n·k·bits(p)` squarings and as many products in `O` (`k ≤ 3`),
    /// and eliminations on at most `2n` rows of `n^2` entries.
    pub fn is_p_maximal(&self, p: &Integer) -> Result<bool, OrderError> {
        if *p < 2 || p.significant_bits() > MAX_MAXIMALITY_PRIME_BITS {
            return Err(OrderError::PrimeOutOfRange);
        }
        if !is_bpsw_probable_prime(p) {
            return Err(OrderError::NotPrime);
        }
        let k = (p.to_u64().and_then(Fp::new)).ok_or(OrderError::PrimeOutOfRange)?;
        let n = self.degree();
        let radical = self.radical_mod_p(p, k).ok_or(OrderError::NotPrime)?;
        // Step 4.
        let pivot = |r: &&Vec<u64>| r.iter().position(|c| *c != 0);
        let beta: Vec<Vec<Integer>> = (0..n)
            .map(|j| match radical.iter().find(|r| pivot(r) == Some(j)) {
                Some(row) => row.iter().map(|&c| Integer::from(c)).collect(),
                None => unit(n, j).into_iter().map(|c| c * p).collect(),
            })
            .collect();
        // Step 5.
        let mut images = Vec::with_capacity(n);
        for i in 0..n {
            let mut flat = Vec::with_capacity(n * n);
            for b in &beta {
                let y = self.mul(&unit(n, i), b);
                let c = solve_triangular(&beta, &y, 0..n).ok_or(OrderError::Radical)?;
                flat.extend(linmodp::words(&c, k));
            }
            images.push(flat);
        }
        // Step 6.
        let rank = linmodp::echelon_words(images, k).map(|e| e.len());
        Ok(rank.ok_or(OrderError::NotPrime)? == n)
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    impl FieldOrder {
        /// `table()[i][j]` = the coordinates of `ω_i ω_j`.
        pub fn table(&self) -> &[Vec<Vec<Integer>>] {
            &self.table
        }
    }
    use crate::field::fppoly::Fp;
    use crate::field::TestRng;

    /// Integers as written (not normalised: `F` keeps its length `n + 1`).
    pub(crate) fn z(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    fn rows(r: &[&[i64]]) -> Vec<Vec<Integer>> {
        r.iter().map(|x| z(x)).collect()
    }

    /// `Z[θ]` for `F` given low to high.
    pub(crate) fn power_order(f: &[i64]) -> FieldOrder {
        let n = f.len() - 1;
        let basis: Vec<_> = (0..n).map(|i| unit(n, i)).collect();
        FieldOrder::new(&z(f), &basis, &Integer::from(1)).unwrap()
    }

    /// The monic polynomials of degree `d` over `F_p`.
    pub(crate) fn all_monic(p: u64, d: u32) -> impl Iterator<Item = Vec<u64>> {
        (0..p.pow(d)).map(move |mut i| {
            let mut c: Vec<u64> = (0..d)
                .map(|_| {
                    let r = i % p;
                    i /= p;
                    r
                })
                .collect();
            c.push(1);
            c
        })
    }

    /// The factorisation of a non-zero `g` over `F_p` by search: divide out
    /// every monic polynomial of degree 1, 2, … in turn, as often as it
    /// divides; a divisor met this way has no factor of lower degree left,
    /// so it is irreducible. Distinct monic factors with multiplicities.
    pub(crate) fn factor_brute(p: u64, g: &[u64]) -> Vec<(Vec<u64>, u32)> {
        let k = Fp::new(p).unwrap();
        let mut rest = k.monic(g).unwrap();
        let mut out = Vec::new();
        for d in 1..rest.len() as u32 {
            for h in all_monic(p, d) {
                if rest.len() == 1 {
                    return out;
                }
                let mut e = 0;
                while let Some((q, r)) = k.divrem(&rest, &h).filter(|(_, r)| r.is_empty()) {
                    debug_assert!(r.is_empty());
                    rest = q;
                    e += 1;
                }
                if e > 0 {
                    out.push((h, e));
                }
            }
        }
        out
    }

    pub(crate) fn lift(a: &[u64]) -> Vec<Integer> {
        a.iter().map(|&c| Integer::from(c)).collect()
    }

    /// Dedekind's criterion (R. Dedekind 1878; H. Cohen, GTM 138, Theorem
    /// 6.1.4, number from memory), a second method for `Z[θ]`: with
    /// `F ≡ ∏ t_i^{e_i}` mod `p`, `g = ∏ t_i`, `h = F/g` mod `p` (lifted
    /// with coefficients in `[0, p)`) and `F_1 = (g h - F)/p`, `Z[θ]` is
    /// `p`-maximal iff `gcd(F_1, g, h) = 1` mod `p`.
    pub(crate) fn dedekind_maximal(f: &[Integer], p: u64) -> bool {
        let k = Fp::new(p).unwrap();
        let fbar = k.reduce(f);
        let factors = factor_brute(p, &fbar);
        let g = factors.iter().fold(vec![1], |acc, (t, _)| k.mul(&acc, t));
        let (h, r) = k.divrem(&fbar, &g).unwrap();
        assert!(r.is_empty());
        let diff = zpoly::sub(&zpoly::mul(&lift(&g), &lift(&h)), f);
        let f1: Vec<Integer> = diff
            .iter()
            .map(|c| {
                assert!(c.is_divisible_u(p as u32));
                Integer::from(c / p)
            })
            .collect();
        let d = k.gcd(&k.gcd(&k.reduce(&f1), &g).unwrap(), &h).unwrap();
        d.len() == 1
    }

    fn maximal(o: &FieldOrder, p: i64) -> bool {
        o.is_p_maximal(&Integer::from(p)).unwrap()
    }

    #[test]
    fn pure_cubic_fields() {
        // Q(2^(1/3)): disc(x^3 - 2) = -108 = field discriminant (pure cubic
        // fields have Δ = -27 m^2 for squarefree m ≢ ±1 mod 9; Alaca and
        // Williams, Introductory Algebraic Number Theory, from memory), so
        // Z[θ] is maximal.
        let o = power_order(&[-2, 0, 0, 1]);
        assert_eq!(*o.discriminant(), -108);
        assert_eq!(*o.index(), 1);
        assert!(maximal(&o, 2) && maximal(&o, 3));
        assert_eq!(o.one(), z(&[1, 0, 0]));

        // x^3 - 10: disc -27·100 = -2700 (disc(x^3 + q) = -27 q^2, common
        // practice); m = 10 ≡ 1 mod 9 and Δ = -3·100 = -300 (same source),
        // so Z[θ] has index 3: not 3-maximal, but 2- and 5-maximal.
        let zt = power_order(&[-10, 0, 0, 1]);
        assert_eq!(*zt.discriminant(), -2700);
        assert!(!maximal(&zt, 3));
        assert!(maximal(&zt, 2) && maximal(&zt, 5));
        // η = (1 + θ + θ^2)/3 is integral (Dedekind's basis for m ≡ 1 mod 9,
        // from memory), shown here by its characteristic polynomial: the
        // matrix of 1 + θ + θ^2 on 1, θ, θ^2 (θ^3 = 10) is
        // [[1,1,1],[10,1,1],[10,10,1]] with trace 3, principal 2-minors
        // summing to -27 and determinant 81, so η is a root of
        // x^3 - (3/3)x^2 + (-27/9)x - 81/27 = x^3 - x^2 - 3x - 3.
        let a = [[1i64, 1, 1], [10, 1, 1], [10, 10, 1]];
        let tr = a[0][0] + a[1][1] + a[2][2];
        let minors = (a[0][0] * a[1][1] - a[0][1] * a[1][0])
            + (a[0][0] * a[2][2] - a[0][2] * a[2][0])
            + (a[1][1] * a[2][2] - a[1][2] * a[2][1]);
        let det3 = a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
            - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
            + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
        assert_eq!((tr % 3, minors % 9, det3 % 27), (0, 0, 0));
        let o = FieldOrder::new(
            &z(&[-10, 0, 0, 1]),
            &rows(&[&[3, 0, 0], &[0, 3, 0], &[1, 1, 1]]),
            &Integer::from(3),
        )
        .unwrap();
        assert_eq!(*o.discriminant(), -300);
        assert_eq!(*o.index(), 3);
        assert!(maximal(&o, 2) && maximal(&o, 3) && maximal(&o, 5));
        // The same char. polynomial from the order: N(η) = 3, Tr(η) = 1, and
        // by hand η^2 = (21 + 12θ + 3θ^2)/9 = 2 + θ + η, so the table has
        // ω_2 ω_2 = (2, 1, 1) and η^3 = η^2 + 3η + 3 = (5, 1, 4).
        assert_eq!(o.polynomial(), &z(&[-10, 0, 0, 1])[..]);
        assert_eq!(o.norm(&z(&[0, 0, 1])), 3);
        assert_eq!(o.trace(&z(&[0, 0, 1])), 1);
        assert_eq!(o.table()[2][2], z(&[2, 1, 1]));
        assert_eq!(o.pow(&z(&[0, 0, 1]), 3), Some(z(&[5, 1, 4])));

        // x^3 - 12: (θ^2/2)^3 = 144/8 = 18, so θ^2/2 is integral and Z[θ] is
        // not 2-maximal. Z[θ, θ^2/2] has discriminant -27·144/4 = -972 =
        // -27·(3·2)^2, the field discriminant for m = 3·2^2 ≢ ±1 mod 9
        // (Alaca and Williams, from memory): maximal.
        let zt = power_order(&[-12, 0, 0, 1]);
        assert!(!maximal(&zt, 2));
        assert!(maximal(&zt, 3));
        let o = FieldOrder::new(
            &z(&[-12, 0, 0, 1]),
            &rows(&[&[2, 0, 0], &[0, 2, 0], &[0, 0, 1]]),
            &Integer::from(2),
        )
        .unwrap();
        assert_eq!(*o.discriminant(), -972);
        assert_eq!(*o.index(), 2);
        assert!(maximal(&o, 2) && maximal(&o, 3));
    }

    #[test]
    fn quadratic_orders() {
        // Z[√5] has discriminant 20 and is not 2-maximal; Z[(1+√5)/2] has
        // discriminant 5 (common practice). Z[√-5] is maximal, discriminant
        // -20 (common practice).
        let zt = power_order(&[-5, 0, 1]);
        assert_eq!(*zt.discriminant(), 20);
        assert!(!maximal(&zt, 2) && maximal(&zt, 5));
        let o = FieldOrder::new(
            &z(&[-5, 0, 1]),
            &rows(&[&[2, 0], &[1, 1]]),
            &Integer::from(2),
        )
        .unwrap();
        assert_eq!(*o.discriminant(), 5);
        assert!(maximal(&o, 2) && maximal(&o, 5));
        // (1+√5)/2 is a root of x^2 - x - 1 (common practice).
        let phi = z(&[0, 1]);
        let lhs = o.mul(&phi, &phi);
        let rhs: Vec<Integer> = phi
            .iter()
            .zip(o.one())
            .map(|(a, b)| Integer::from(a + &b))
            .collect();
        assert_eq!(lhs, rhs);
        let zt = power_order(&[5, 0, 1]);
        assert_eq!(*zt.discriminant(), -20);
        assert!(maximal(&zt, 2) && maximal(&zt, 5));
        // A prime near the top of a machine word: p = 2^61 - 1 (a Mersenne
        // prime, common practice), F = x^2 - 3p^2, θ = p√3. Z[θ] is not
        // p-maximal, Z[θ/p] = Z[√3] (discriminant 12) is. The test runs on
        // words, so p = 2^127 - 1 is refused as out of range.
        for bits in [61u32, 127] {
            let p: Integer = (Integer::from(1) << bits) - 1;
            let f = vec![
                Integer::from(-3) * Integer::from(p.square_ref()),
                Integer::new(),
                Integer::from(1),
            ];
            let one = Integer::from(1);
            let zt = FieldOrder::new(&f, &[unit(2, 0), unit(2, 1)], &one).unwrap();
            let o =
                FieldOrder::new(&f, &[vec![p.clone(), Integer::new()], unit(2, 1)], &p).unwrap();
            assert_eq!(*o.discriminant(), 12);
            if bits == 61 {
                assert_eq!(zt.is_p_maximal(&p), Ok(false));
                assert_eq!(o.is_p_maximal(&p), Ok(true));
            } else {
                assert_eq!(zt.is_p_maximal(&p), Err(OrderError::PrimeOutOfRange));
            }
        }
    }

    #[test]
    fn refusals() {
        let f = z(&[-2, 0, 0, 1]);
        let one = Integer::from(1);
        let new = |b: &[&[i64]], d: i64| FieldOrder::new(&f, &rows(b), &Integer::from(d)).err();
        // θ/2 with 1 and θ^2: (θ/2)^2 = θ^2/4 is not in the span.
        assert_eq!(
            new(&[&[2, 0, 0], &[0, 1, 0], &[0, 0, 2]], 2),
            Some(OrderError::NotARing { i: 1, j: 1 })
        );
        // Hermite shape: a non-zero entry above the diagonal, an entry not
        // below its column's diagonal, a negative one, a zero diagonal.
        assert_eq!(
            new(&[&[1, 1, 0], &[0, 1, 0], &[0, 0, 1]], 1),
            Some(OrderError::NotHermite { row: 0, col: 1 })
        );
        assert_eq!(
            new(&[&[1, 0, 0], &[1, 1, 0], &[0, 0, 1]], 1),
            Some(OrderError::NotHermite { row: 1, col: 0 })
        );
        assert_eq!(
            new(&[&[2, 0, 0], &[-1, 1, 0], &[0, 0, 1]], 2),
            Some(OrderError::NotHermite { row: 1, col: 0 })
        );
        assert_eq!(
            new(&[&[1, 0, 0], &[0, 0, 0], &[0, 0, 1]], 1),
            Some(OrderError::NotHermite { row: 1, col: 1 })
        );
        assert_eq!(
            new(&[&[2, 0, 0], &[0, 2, 0], &[0, 0, 2]], 2),
            Some(OrderError::NotPrimitive)
        );
        // Z·2 + Zθ + Zθ^2 is closed under products (θ·θ^2 = 2) but has no 1.
        assert_eq!(
            new(&[&[2, 0, 0], &[0, 1, 0], &[0, 0, 1]], 1),
            Some(OrderError::NoOne)
        );
        // Z[2θ] = Z + Z·2θ + Z·4θ^2 is a ring without θ.
        assert_eq!(
            new(&[&[1, 0, 0], &[0, 2, 0], &[0, 0, 4]], 1),
            Some(OrderError::MissingPower(1))
        );
        assert_eq!(new(&[&[1, 0, 0], &[0, 1, 0]], 1), Some(OrderError::Shape));
        assert_eq!(
            new(&[&[1, 0, 0], &[0, 1, 0], &[0, 0, 1]], 0),
            Some(OrderError::Shape)
        );
        assert_eq!(
            new(&[&[1, 0, 0], &[0, 1, 0], &[0, 0, 1]], -1),
            Some(OrderError::Shape)
        );
        let id3 = rows(&[&[1, 0, 0], &[0, 1, 0], &[0, 0, 1]]);
        let err = |f: &[Integer], b: &[Vec<Integer>]| FieldOrder::new(f, b, &one).err();
        assert_eq!(err(&z(&[-2, 0, 0, 2]), &id3), Some(OrderError::NotMonic));
        assert_eq!(
            err(&z(&[-2, 1]), &rows(&[&[1]])),
            Some(OrderError::Degree(1))
        );
        assert_eq!(
            err(&z(&[1, 0, 0, 0, 0, 0, 0, 1]), &id3),
            Some(OrderError::Degree(7))
        );
        assert_eq!(err(&z(&[0, 0, 0, 1]), &id3), Some(OrderError::Singular));
        assert_eq!(err(&z(&[1, -1, -1, 1]), &id3), Some(OrderError::Singular)); // (x-1)^2 (x+1)
        let huge = vec![
            Integer::from(1) << 1100,
            Integer::new(),
            Integer::new(),
            Integer::from(1),
        ];
        assert_eq!(err(&huge, &id3), Some(OrderError::TooLarge));
        // is_p_maximal wants a prime of bounded size.
        let o = power_order(&[-2, 0, 0, 1]);
        assert_eq!(
            o.is_p_maximal(&Integer::from(1)),
            Err(OrderError::PrimeOutOfRange)
        );
        assert_eq!(
            o.is_p_maximal(&Integer::from(91)),
            Err(OrderError::NotPrime)
        );
        let big = Integer::from(1) << 2100;
        assert_eq!(o.is_p_maximal(&big), Err(OrderError::PrimeOutOfRange));
        // Elements outside O, and a non-positive denominator.
        assert_eq!(o.from_power_basis(&z(&[0, 1]), &Integer::from(2)), None);
        assert_eq!(o.from_power_basis(&z(&[0, 2]), &Integer::from(-2)), None);
        assert_eq!(
            o.from_power_basis(&z(&[0, 2]), &Integer::from(2)),
            Some(z(&[0, 1, 0]))
        );
        // θ^4 = 2θ is reduced modulo F.
        assert_eq!(
            o.from_power_basis(&z(&[0, 0, 0, 0, 1]), &one),
            Some(z(&[0, 2, 0]))
        );
        // The power cap.
        assert_eq!(o.pow(&z(&[1, 1, 0]), u32::MAX), None);
        for e in [
            OrderError::Degree(7),
            OrderError::NotHermite { row: 1, col: 0 },
            OrderError::Radical,
        ] {
            assert!(!e.to_string().is_empty() && !e.to_string().contains('{'));
        }
    }

    /// A random monic polynomial of degree `n`, coefficients in
    /// `[-bound, bound]`; sometimes `≡ x^n` mod a small `q` with `q^2` in the
    /// constant term, which makes `Z[θ]` not `q`-maximal (Dedekind).
    fn random_monic(rng: &mut TestRng, n: usize, bound: i64) -> Vec<i64> {
        let mut c: Vec<i64> = (0..=n)
            .map(|i| if i == n { 1 } else { rng.range(-bound, bound) })
            .collect();
        if rng.range(0, 1) == 1 {
            let q = [2, 3, 5][rng.range(0, 2) as usize];
            for x in c.iter_mut().take(n) {
                *x *= q;
            }
            c[0] *= q;
        }
        c
    }

    #[test]
    fn maximality_against_dedekind() {
        // Pohst–Zassenhaus against Dedekind's criterion (a second method),
        // on Z[θ] for random F and on Z[θ/m] for F(x) = m^n G(x/m), which is
        // Z[θ'] for a root θ' of G; Z[θ] ⊊ Z[θ/m] is not p-maximal for p | m.
        let mut rng = TestRng::new(31);
        let (mut yes, mut no) = (0, 0);
        for _ in 0..120 {
            let n = rng.range(2, 5) as usize;
            let g = random_monic(&mut rng, n, 6);
            let gz = z(&g);
            if zpoly::discriminant(&gz) == Some(Integer::new()) {
                continue;
            }
            let o = power_order(&g);
            for p in [2u64, 3, 5, 7] {
                let expect = dedekind_maximal(&gz, p);
                assert_eq!(maximal(&o, p as i64), expect, "{g:?} at {p}");
                if expect {
                    yes += 1;
                } else {
                    no += 1;
                }
            }
            let m = rng.range(2, 3);
            let f: Vec<i64> = g
                .iter()
                .enumerate()
                .map(|(i, c)| c * m.pow((n - i) as u32))
                .collect();
            let den = Integer::from(m).pow(n as u32 - 1);
            let basis: Vec<Vec<Integer>> = (0..n)
                .map(|j| {
                    unit(n, j)
                        .into_iter()
                        .map(|c| c * Integer::from(m).pow((n - 1 - j) as u32))
                        .collect()
                })
                .collect();
            let big = FieldOrder::new(&z(&f), &basis, &den).unwrap();
            // disc(Z[θ']) = disc(G), and [Z[θ/m] : Z[θ]] = m^(n(n-1)/2)
            // (the roots scale by m; common practice).
            assert_eq!(big.discriminant(), &zpoly::discriminant(&gz).unwrap());
            assert_eq!(*big.index(), Integer::from(m).pow((n * (n - 1) / 2) as u32));
            for p in [2u64, 3, 5, 7] {
                assert_eq!(
                    maximal(&big, p as i64),
                    dedekind_maximal(&gz, p),
                    "{g:?} over {m} at {p}"
                );
            }
            assert!(!maximal(&power_order(&f), m));
        }
        assert!(yes > 100 && no > 40, "{yes} {no}");
    }

    #[test]
    fn radical_against_nilpotents() {
        // The p-radical mod p against its definition: x ∈ O/pO is nilpotent
        // iff x^n = 0 (an n-dimensional algebra), by enumeration of O/pO,
        // on Z[θ] and Z[θ/m] for random F of degree 2..=4 and p = 2, 3.
        let mut rng = TestRng::new(33);
        let mut proper = 0;
        for _ in 0..40 {
            let n = rng.range(2, 4) as usize;
            let g = random_monic(&mut rng, n, 6);
            if zpoly::discriminant(&z(&g)) == Some(Integer::new()) {
                continue;
            }
            let m = rng.range(1, 2);
            let f: Vec<i64> = g
                .iter()
                .enumerate()
                .map(|(i, c)| c * m.pow((n - i) as u32))
                .collect();
            let den = Integer::from(m).pow(n as u32 - 1);
            let basis: Vec<Vec<Integer>> = (0..n)
                .map(|j| {
                    unit(n, j)
                        .into_iter()
                        .map(|c| c * Integer::from(m).pow((n - 1 - j) as u32))
                        .collect()
                })
                .collect();
            let o = FieldOrder::new(&z(&f), &basis, &den).unwrap();
            for p in [2u64, 3] {
                let pz = Integer::from(p);
                let radical: Vec<Vec<Integer>> = o
                    .radical_mod_p(&pz, Fp::new(p).unwrap())
                    .unwrap()
                    .into_iter()
                    .map(|r| r.into_iter().map(Integer::from).collect())
                    .collect();
                proper += usize::from(!radical.is_empty());
                for i in 0..p.pow(n as u32) {
                    let x: Vec<Integer> = (0..n)
                        .map(|j| Integer::from(i / p.pow(j as u32) % p))
                        .collect();
                    let mut power = x.clone();
                    for _ in 1..n {
                        power = linmodp::reduce(&o.mul(&power, &x), &pz);
                    }
                    let nilpotent = o.is_zero(&power);
                    assert_eq!(
                        linmodp::tests::in_row_space(&radical, &x, &pz),
                        Some(nilpotent),
                        "{f:?} {p}"
                    );
                }
            }
        }
        assert!(proper > 15, "{proper}");
    }

    /// The trace of `x ↦ A·x` on `Q[x]/(F)` in the power basis, from
    /// polynomial products (no table): `Σ_j [x^j] (A x^j mod F)`.
    fn naive_trace(f: &[Integer], a: &[Integer]) -> Integer {
        let n = f.len() - 1;
        (0..n)
            .map(|j| {
                let mut xj = vec![Integer::new(); j];
                xj.push(Integer::from(1));
                let (_, r) = zpoly::divrem_monic(&zpoly::mul(a, &xj), f).unwrap();
                r.get(j).cloned().unwrap_or_default()
            })
            .sum()
    }

    #[test]
    fn arithmetic_against_polynomials() {
        // On Z[θ] and on Z[θ/m]: products against polynomial products mod F,
        // N(a) against Res(F, A)/den^n (Res(F, A) = ∏ A(θ_i) for monic F,
        // common practice), traces against the polynomial route, powers
        // against repeated products, the round trip through the power basis,
        // and N(a - bθ) against Res(F, a - bx).
        let mut rng = TestRng::new(32);
        for _ in 0..60 {
            let n = rng.range(2, 6) as usize;
            let g = random_monic(&mut rng, n, 9);
            if zpoly::discriminant(&z(&g)) == Some(Integer::new()) {
                continue;
            }
            let m = rng.range(1, 3);
            let f: Vec<i64> = g
                .iter()
                .enumerate()
                .map(|(i, c)| c * m.pow((n - i) as u32))
                .collect();
            let fz = z(&f);
            let den = Integer::from(m).pow(n as u32 - 1);
            let basis: Vec<Vec<Integer>> = (0..n)
                .map(|j| {
                    unit(n, j)
                        .into_iter()
                        .map(|c| c * Integer::from(m).pow((n - 1 - j) as u32))
                        .collect()
                })
                .collect();
            let o = FieldOrder::new(&fz, &basis, &den).unwrap();
            let nn = u32::try_from(n).unwrap();
            for _ in 0..10 {
                let a: Vec<Integer> = (0..n).map(|_| Integer::from(rng.range(-20, 20))).collect();
                let b: Vec<Integer> = (0..n).map(|_| Integer::from(rng.range(-20, 20))).collect();
                let (na, d) = o.to_power_basis(&a);
                let (nb, _) = o.to_power_basis(&b);
                assert_eq!(d, den);
                assert_eq!(o.from_power_basis(&na, &d), Some(a.clone()));
                let ab = o.mul(&a, &b);
                assert_eq!(ab, o.mul(&b, &a));
                assert_eq!(o.mul(&a, &o.one()), a);
                let (nab, _) = o.to_power_basis(&ab);
                let (_, r) = zpoly::divrem_monic(&zpoly::mul(&na, &nb), &fz).unwrap();
                let scaled: Vec<Integer> = nab.iter().map(|c| Integer::from(c * &d)).collect();
                assert_eq!(zpoly::normalise(scaled), r);
                let res = zpoly::resultant(&fz, &zpoly::normalise(na.clone()));
                assert_eq!(o.norm(&a) * Integer::from((&d).pow(nn)), res);
                assert_eq!(o.trace(&a) * &d, naive_trace(&fz, &na));
                let mut slow = o.one();
                for e in 0..6u32 {
                    assert_eq!(o.pow(&a, e), Some(slow.clone()));
                    slow = o.mul(&slow, &a);
                }
                assert_eq!(o.is_zero(&a), a.iter().all(|c| *c == 0));
                let three = Integer::from(3);
                let a3: Vec<Integer> = a.iter().map(|c| Integer::from(c * &three)).collect();
                assert!(o.divisible_by(&a3, &three));
            }
            if m == 1 {
                for _ in 0..10 {
                    let (x, y) = (
                        Integer::from(rng.range(-50, 50)),
                        Integer::from(rng.range(-50, 50)),
                    );
                    let mut e = vec![x.clone(), Integer::from(-&y)];
                    e.resize(n, Integer::new());
                    let lin = zpoly::normalise(vec![x.clone(), Integer::from(-&y)]);
                    assert_eq!(o.norm(&e), zpoly::resultant(&fz, &lin));
                }
            }
        }
    }
}
