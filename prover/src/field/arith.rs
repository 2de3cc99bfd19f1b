//! Orders of a number field `K = Q[x]/(F)` in the shape of the shared
//! conventions (`notes/field-spec.md`): a Z-basis `ω_i = (Σ_j basis[i][j] θ^j)
//! / den` in lower-triangular Hermite form over the power basis.
//!
//! - [`Order`]: the basis, its multiplication table, products, norms and
//!   traces of elements given by their coordinates, conversion to and from
//!   the power basis, and reduction modulo a prime `p` (to an
//!   [`AlgebraModP`], the `F_p`-algebra `O/pO`);
//! - [`hnf`], [`hnf_rational`]: the Hermite normal form of a full-rank
//!   lattice given by generators, in the same lower-triangular shape, kept
//!   modulo a multiple of its determinant (H. Cohen, A Course in
//!   Computational Algebraic Number Theory, GTM 138, Algorithm 2.4.8, after
//!   Domich, Kannan and Trotter; algorithm numbers here from memory);
//! - [`modp`]: the little linear algebra over `F_p` (`p < 2^63`) the round 2
//!   algorithm and the decomposition of primes need.
//!
//! This is the prover's side: nothing here is trusted, the verifier
//! recomputes the multiplication table and every membership it relies on.

use classcert_verifier::math::mod_small;
use classcert_verifier::math::poly::{discriminant, divrem_monic, mul as zmul};
use rug::ops::{DivRounding, Pow};
use rug::{Integer, Rational};

/// Why a basis does not describe an order.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum OrderError {
    /// `F` is not monic of degree at least 1, or `disc(F) = 0`.
    Polynomial(&'static str),
    /// The basis is not an `n × n` lower-triangular Hermite form with a
    /// positive denominator prime to its entries.
    Shape(&'static str),
    /// The basis spans a lattice that is not closed under multiplication or
    /// does not contain 1.
    NotARing,
}

impl std::fmt::Display for OrderError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            OrderError::Polynomial(w) => write!(f, "defining polynomial: {w}"),
            OrderError::Shape(w) => write!(f, "order basis: {w}"),
            OrderError::NotARing => write!(f, "the basis does not span a ring containing 1"),
        }
    }
}

/// An order `O` of `K = Q[x]/(F)`, with its multiplication table.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Order {
    f: Vec<Integer>,
    basis: Vec<Vec<Integer>>,
    den: Integer,
    /// `table[i][j]` = the coordinates of `ω_i ω_j`.
    table: Vec<Vec<Vec<Integer>>>,
    /// `Tr(ω_k)`.
    traces: Vec<Integer>,
    disc: Integer,
}

impl Order {
    /// The order with the given basis (see the module text for the shape);
    /// computes its multiplication table, refusing a basis that does not
    /// span a ring containing 1.
    pub fn new(f: &[Integer], basis: Vec<Vec<Integer>>, den: Integer) -> Result<Order, OrderError> {
        let n = f.len().saturating_sub(1);
        if n == 0 || f[n] != 1 {
            return Err(OrderError::Polynomial(
                "F must be monic of degree at least 1",
            ));
        }
        if discriminant(f).is_none_or(|d| d == 0) {
            return Err(OrderError::Polynomial("disc(F) = 0"));
        }
        if den <= 0 {
            return Err(OrderError::Shape("the denominator must be positive"));
        }
        if basis.len() != n || basis.iter().any(|r| r.len() != n) {
            return Err(OrderError::Shape("the basis must be n × n"));
        }
        let mut g = den.clone();
        for i in 0..n {
            if basis[i][i] <= 0 {
                return Err(OrderError::Shape("diagonal entries must be positive"));
            }
            for j in 0..n {
                if j > i && basis[i][j] != 0 {
                    return Err(OrderError::Shape("the basis must be lower triangular"));
                }
                if j < i && (basis[i][j] < 0 || basis[i][j] >= basis[j][j]) {
                    return Err(OrderError::Shape(
                        "entries left of the diagonal must be reduced modulo the diagonal",
                    ));
                }
                g.gcd_mut(&basis[i][j]);
            }
        }
        if g != 1 {
            return Err(OrderError::Shape(
                "the denominator must be prime to the entries",
            ));
        }
        let mut order = Order {
            f: f.to_vec(),
            basis,
            den,
            table: Vec::new(),
            traces: Vec::new(),
            disc: Integer::new(),
        };
        if order
            .from_power(&unit_vector(n, 0), &Integer::from(1))
            .is_none()
        {
            return Err(OrderError::NotARing);
        }
        let den2 = Integer::from(order.den.square_ref());
        let mut table = vec![vec![Vec::new(); n]; n];
        for i in 0..n {
            for j in i..n {
                let prod = zmul(&order.basis[i], &order.basis[j]);
                let (_, r) = divrem_monic(&prod, &order.f).ok_or(OrderError::NotARing)?;
                let c = order
                    .from_power(&pad(r, n), &den2)
                    .ok_or(OrderError::NotARing)?;
                table[i][j] = c.clone();
                table[j][i] = c;
            }
        }
        order.table = table;
        order.traces = (0..n)
            .map(|k| (0..n).map(|i| order.table[k][i][i].clone()).sum())
            .collect();
        let gram: Vec<Vec<Integer>> = (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| dot(&order.table[i][j], &order.traces))
                    .collect()
            })
            .collect();
        order.disc = det(gram);
        Ok(order)
    }

    /// The equation order `Z[θ]`.
    pub fn equation(f: &[Integer]) -> Result<Order, OrderError> {
        let n = f.len().saturating_sub(1);
        let basis = (0..n).map(|i| unit_vector(n, i)).collect();
        Order::new(f, basis, Integer::from(1))
    }

    /// The order spanned by `gens[k] / den` (power-basis numerators), put
    /// in Hermite form; the lattice must have full rank and be a ring.
    pub fn from_generators(
        f: &[Integer],
        gens: &[Vec<Integer>],
        den: &Integer,
    ) -> Result<Order, OrderError> {
        let (basis, den) =
            hnf_rational(gens, den).ok_or(OrderError::Shape("the generators have rank < n"))?;
        Order::new(f, basis, den)
    }

    /// `F`, from the constant term up.
    pub fn f(&self) -> &[Integer] {
        &self.f
    }

    /// The basis numerators, `basis[i][j]` the coefficient of `θ^j` in `den·ω_i`.
    pub fn basis(&self) -> &[Vec<Integer>] {
        &self.basis
    }

    /// The common denominator of the basis.
    pub fn den(&self) -> &Integer {
        &self.den
    }

    /// The degree `n` of `K`.
    pub fn degree(&self) -> usize {
        self.basis.len()
    }

    /// `table()[i][j]`: the coordinates of `ω_i ω_j`.
    pub fn table(&self) -> &[Vec<Vec<Integer>>] {
        &self.table
    }

    /// `disc(O) = det(Tr(ω_i ω_j))`.
    pub fn discriminant(&self) -> &Integer {
        &self.disc
    }

    /// `[O : Z[θ]]` when `O ⊇ Z[θ]` (then `den^n / ∏ basis[i][i]`), else `None`.
    pub fn index(&self) -> Option<Integer> {
        let n = self.degree();
        self.theta()?;
        let num = Integer::from((&self.den).pow(n as u32));
        let diag: Integer = (0..n).map(|i| self.basis[i][i].clone()).product();
        num.is_divisible(&diag).then(|| num.div_exact(&diag))
    }

    /// The coordinates of 1.
    pub fn one(&self) -> Vec<Integer> {
        self.from_power(&unit_vector(self.degree(), 0), &Integer::from(1))
            .unwrap()
    }

    /// The coordinates of `θ`, if `θ ∈ O`.
    pub fn theta(&self) -> Option<Vec<Integer>> {
        let n = self.degree();
        if n == 1 {
            return self.from_power(&[-self.f[0].clone()], &Integer::from(1));
        }
        self.from_power(&unit_vector(n, 1), &Integer::from(1))
    }

    /// `Σ_j num[j] θ^j / d` in coordinates, if it lies in `O` (`d ≠ 0`).
    pub fn from_power(&self, num: &[Integer], d: &Integer) -> Option<Vec<Integer>> {
        let n = self.degree();
        if *d == 0 || num.len() > n {
            return None;
        }
        let mut c = vec![Integer::new(); n];
        for j in (0..n).rev() {
            let mut s = Integer::from(&self.den * num.get(j).unwrap_or(&Integer::new()));
            for i in j + 1..n {
                if c[i] != 0 && self.basis[i][j] != 0 {
                    s -= Integer::from(&c[i] * &self.basis[i][j]) * d;
                }
            }
            let q = Integer::from(d * &self.basis[j][j]);
            if !s.is_divisible(&q) {
                return None;
            }
            c[j] = s.div_exact(&q);
        }
        Some(c)
    }

    /// `(num, d)` with `α = Σ_j num[j] θ^j / d`, `d > 0` and
    /// `gcd(d, num) = 1`.
    pub fn to_power(&self, a: &[Integer]) -> (Vec<Integer>, Integer) {
        let n = self.degree();
        let mut num = vec![Integer::new(); n];
        for (i, ai) in a.iter().enumerate() {
            if *ai == 0 {
                continue;
            }
            for j in 0..=i {
                num[j] += Integer::from(ai * &self.basis[i][j]);
            }
        }
        let mut g = self.den.clone();
        for x in &num {
            g.gcd_mut(x);
        }
        let d = Integer::from(self.den.div_exact_ref(&g));
        (num.into_iter().map(|x| x.div_exact(&g)).collect(), d)
    }

    /// `α·β`.
    pub fn mul(&self, a: &[Integer], b: &[Integer]) -> Vec<Integer> {
        let n = self.degree();
        let mut out = vec![Integer::new(); n];
        for i in 0..n {
            if a[i] == 0 {
                continue;
            }
            for j in 0..n {
                if b[j] == 0 {
                    continue;
                }
                let ab = Integer::from(&a[i] * &b[j]);
                for (o, t) in out.iter_mut().zip(&self.table[i][j]) {
                    if *t != 0 {
                        *o += Integer::from(&ab * t);
                    }
                }
            }
        }
        out
    }

    /// The matrix of multiplication by `α`: row `i` holds the coordinates
    /// of `α·ω_i`, so `α·β = Σ_i β_i row_i`.
    pub fn mul_matrix(&self, a: &[Integer]) -> Vec<Vec<Integer>> {
        let n = self.degree();
        (0..n)
            .map(|i| {
                let mut row = vec![Integer::new(); n];
                for (j, aj) in a.iter().enumerate() {
                    if *aj == 0 {
                        continue;
                    }
                    for (o, t) in row.iter_mut().zip(&self.table[j][i]) {
                        if *t != 0 {
                            *o += Integer::from(aj * t);
                        }
                    }
                }
                row
            })
            .collect()
    }

    /// `N(α)`, the determinant of multiplication by `α`.
    pub fn norm(&self, a: &[Integer]) -> Integer {
        det(self.mul_matrix(a))
    }

    /// `Tr(α)`.
    pub fn trace(&self, a: &[Integer]) -> Integer {
        dot(a, &self.traces)
    }

    /// Coordinates reduced into `[0, p)`.
    pub fn reduce_mod(&self, a: &[Integer], p: u64) -> Vec<u64> {
        a.iter().map(|x| mod_small(x, p)).collect()
    }

    /// `O/pO` as an `F_p`-algebra on the images of `ω_0 .. ω_{n-1}`, for
    /// `2 ≤ p < 2^63`.
    pub fn algebra_mod(&self, p: u64) -> AlgebraModP {
        assert!((2..1 << 63).contains(&p), "p out of range");
        let table = self
            .table
            .iter()
            .map(|r| r.iter().map(|c| self.reduce_mod(c, p)).collect())
            .collect();
        AlgebraModP {
            p,
            table,
            one: self.reduce_mod(&self.one(), p),
        }
    }
}

/// A finite-dimensional commutative `F_p`-algebra by its multiplication
/// table on a basis: `table[i][j]` = coordinates of `e_i e_j`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct AlgebraModP {
    pub p: u64,
    pub table: Vec<Vec<Vec<u64>>>,
    /// The coordinates of 1.
    pub one: Vec<u64>,
}

impl AlgebraModP {
    pub fn dim(&self) -> usize {
        self.table.len()
    }

    pub fn mul(&self, a: &[u64], b: &[u64]) -> Vec<u64> {
        let p = self.p;
        let m = self.dim();
        let mut acc = vec![0u128; m];
        for i in 0..m {
            if a[i] == 0 {
                continue;
            }
            for j in 0..m {
                if b[j] == 0 {
                    continue;
                }
                let ab = modp::mul(a[i], b[j], p);
                for (o, &t) in acc.iter_mut().zip(&self.table[i][j]) {
                    if t != 0 {
                        *o = (*o + u128::from(ab) * u128::from(t)) % u128::from(p);
                    }
                }
            }
        }
        acc.into_iter().map(|x| x as u64).collect()
    }

    /// `a^e` by square and multiply (`a^0 = 1`).
    pub fn pow(&self, a: &[u64], e: &Integer) -> Vec<u64> {
        let mut acc = self.one.clone();
        for i in (0..e.significant_bits()).rev() {
            acc = self.mul(&acc, &acc);
            if e.get_bit(i) {
                acc = self.mul(&acc, a);
            }
        }
        acc
    }

    /// Rows `a·e_i`, so that `a·b = Σ_i b_i row_i`.
    pub fn mul_matrix(&self, a: &[u64]) -> Vec<Vec<u64>> {
        (0..self.dim())
            .map(|i| self.mul(a, &unit_u64(self.dim(), i)))
            .collect()
    }

    /// The minimal polynomial (monic, from the constant term up) of `a`
    /// over `F_p` inside the subalgebra with unit `u` (`u` idempotent and
    /// `u·a = a`): the first linear dependence of `u, a, a^2, …`.
    pub fn min_poly(&self, u: &[u64], a: &[u64]) -> Vec<u64> {
        let p = self.p;
        let mut powers = vec![u.to_vec()];
        loop {
            let next = self.mul(powers.last().unwrap(), a);
            powers.push(next);
            let ker = modp::left_kernel(&powers, p);
            if let Some(v) = ker.first() {
                let k = powers.len() - 1;
                let inv = modp::inv(v[k], p);
                return v.iter().map(|&c| modp::mul(c, inv, p)).collect();
            }
            assert!(powers.len() <= self.dim() + 2, "no dependence found");
        }
    }
}

/// `Σ a_i b_i`.
pub(crate) fn dot(a: &[Integer], b: &[Integer]) -> Integer {
    let mut acc = Integer::new();
    for (x, y) in a.iter().zip(b) {
        if *x != 0 && *y != 0 {
            acc += Integer::from(x * y);
        }
    }
    acc
}

pub(crate) fn unit_vector(n: usize, i: usize) -> Vec<Integer> {
    let mut v = vec![Integer::new(); n];
    v[i] = Integer::from(1);
    v
}

pub(crate) fn unit_u64(n: usize, i: usize) -> Vec<u64> {
    let mut v = vec![0; n];
    v[i] = 1;
    v
}

fn pad(mut v: Vec<Integer>, n: usize) -> Vec<Integer> {
    v.resize(n, Integer::new());
    v
}

/// The determinant by fraction-free elimination (E. H. Bareiss, Math.
/// Comp. 22 (1968); Cohen, GTM 138, Algorithm 2.2.6).
pub fn det(mut m: Vec<Vec<Integer>>) -> Integer {
    let n = m.len();
    let mut negate = false;
    let mut prev = Integer::from(1);
    for k in 0..n {
        if m[k][k] == 0 {
            let Some(i) = (k + 1..n).find(|&i| m[i][k] != 0) else {
                return Integer::new();
            };
            m.swap(k, i);
            negate = !negate;
        }
        for i in k + 1..n {
            for j in k + 1..n {
                let t = Integer::from(&m[i][j] * &m[k][k]) - Integer::from(&m[i][k] * &m[k][j]);
                m[i][j] = t.div_exact(&prev);
            }
        }
        prev = m[k][k].clone();
    }
    let d = if n == 0 {
        Integer::from(1)
    } else {
        m[n - 1][n - 1].clone()
    };
    if negate {
        -d
    } else {
        d
    }
}

/// `n` linearly independent vectors among `gens` (greedily, in order), if
/// the rank is `n`; exact elimination over Q.
fn independent(gens: &[Vec<Integer>], n: usize) -> Option<Vec<Vec<Integer>>> {
    let mut echelon: Vec<(usize, Vec<Rational>)> = Vec::new();
    let mut chosen = Vec::new();
    for g in gens {
        let mut v: Vec<Rational> = g.iter().map(Rational::from).collect();
        for (piv, row) in &echelon {
            if v[*piv] != 0 {
                let c = Rational::from(&v[*piv] / &row[*piv]);
                for (x, y) in v.iter_mut().zip(row) {
                    *x -= Rational::from(&c * y);
                }
            }
        }
        if let Some(piv) = v.iter().position(|x| *x != 0) {
            echelon.push((piv, v));
            chosen.push(g.clone());
            if chosen.len() == n {
                return Some(chosen);
            }
        }
    }
    None
}

/// The Hermite normal form of the full-rank lattice in `Z^n` spanned by
/// `gens`, lower triangular as in the module text (row `i` has its positive
/// pivot at column `i`, zeros right of it, entries left of it reduced
/// modulo the pivots of their columns). `modulus`, if given, must satisfy
/// `modulus·Z^n ⊆ lattice`; otherwise one is taken as the determinant of
/// `n` independent generators. `None` if the rank is below `n`.
/// Cohen, GTM 138, Algorithm 2.4.8 (HNF modulo `D`).
pub fn hnf(
    gens: &[Vec<Integer>],
    n: usize,
    modulus: Option<&Integer>,
) -> Option<Vec<Vec<Integer>>> {
    let d = match modulus {
        Some(m) => Integer::from(m.abs_ref()),
        None => det(independent(gens, n)?).abs(),
    };
    if d == 0 {
        return None;
    }
    let reduce = |v: &mut Vec<Integer>, upto: usize| {
        for x in v.iter_mut().take(upto) {
            if *x < 0 || *x >= d {
                x.modulo_mut(&d);
            }
        }
    };
    let mut work: Vec<Vec<Integer>> = Vec::with_capacity(gens.len() + n);
    for g in gens {
        assert_eq!(g.len(), n, "generator of the wrong length");
        let mut v = g.clone();
        reduce(&mut v, n);
        if v.iter().any(|x| *x != 0) {
            work.push(v);
        }
    }
    for k in 0..n {
        let mut v = vec![Integer::new(); n];
        v[k] = d.clone();
        work.push(v);
    }
    let mut basis: Vec<Vec<Integer>> = vec![Vec::new(); n];
    for j in (0..n).rev() {
        // Euclid on column j among the rows that have a non-zero entry there.
        loop {
            let live: Vec<usize> = (0..work.len()).filter(|&i| work[i][j] != 0).collect();
            let &small = live
                .iter()
                .min_by(|&&a, &&b| work[a][j].cmp_abs(&work[b][j]))
                .expect("d·e_j keeps column j non-zero");
            if live.len() == 1 {
                break;
            }
            let pivot = work[small].clone();
            for &i in &live {
                if i == small {
                    continue;
                }
                let q = work[i][j].clone().div_floor(&pivot[j]);
                for (x, y) in work[i].iter_mut().zip(&pivot) {
                    if *y != 0 {
                        *x -= Integer::from(&q * y);
                    }
                }
                reduce(&mut work[i], j);
            }
            work.retain(|v| v.iter().any(|x| *x != 0));
        }
        let i = (0..work.len()).find(|&i| work[i][j] != 0).unwrap();
        let mut piv = work.swap_remove(i);
        if piv[j] < 0 {
            for x in piv.iter_mut() {
                *x = -std::mem::take(x);
            }
        }
        reduce(&mut piv, j);
        basis[j] = piv;
    }
    for i in 0..n {
        for j in (0..i).rev() {
            if basis[i][j] < 0 || basis[i][j] >= basis[j][j] {
                let q = basis[i][j].clone().div_floor(&basis[j][j]);
                let (head, tail) = basis.split_at_mut(i);
                for (x, y) in tail[0].iter_mut().zip(&head[j]) {
                    *x -= Integer::from(&q * y);
                }
            }
        }
    }
    Some(basis)
}

/// The Hermite form of the lattice spanned by `gens[k] / den` in `Q^n`
/// (`den ≠ 0`): `(basis, den')` in the shape of an order basis, with
/// `gcd(den', entries) = 1` and `den' > 0`. `None` if the rank is below
/// `n` or there are no generators.
pub fn hnf_rational(gens: &[Vec<Integer>], den: &Integer) -> Option<(Vec<Vec<Integer>>, Integer)> {
    let n = gens.first()?.len();
    if *den == 0 {
        return None;
    }
    let mut h = hnf(gens, n, None)?;
    let mut g = Integer::from(den.abs_ref());
    for row in &h {
        for x in row {
            g.gcd_mut(x);
        }
    }
    for row in h.iter_mut() {
        for x in row.iter_mut() {
            *x = Integer::from(x.div_exact_ref(&g));
        }
    }
    Some((h, Integer::from(den.abs_ref()).div_exact(&g)))
}

/// The coordinates `c` with `Σ_i c_i h[i] = v` for a lower-triangular `h`
/// with non-zero diagonal (a Hermite form), if they are integers.
pub fn lattice_coords(h: &[Vec<Integer>], v: &[Integer]) -> Option<Vec<Integer>> {
    let n = h.len();
    let mut c = vec![Integer::new(); n];
    for j in (0..n).rev() {
        let mut s = v[j].clone();
        for i in j + 1..n {
            if c[i] != 0 && h[i][j] != 0 {
                s -= Integer::from(&c[i] * &h[i][j]);
            }
        }
        if !s.is_divisible(&h[j][j]) {
            return None;
        }
        c[j] = s.div_exact(&h[j][j]);
    }
    Some(c)
}

/// Linear algebra over `F_p` for a prime `2 ≤ p < 2^63`; vectors are
/// `Vec<u64>` with entries in `[0, p)`.
pub mod modp {
    pub fn add(a: u64, b: u64, p: u64) -> u64 {
        let s = a + b;
        if s >= p {
            s - p
        } else {
            s
        }
    }

    pub fn sub(a: u64, b: u64, p: u64) -> u64 {
        if a >= b {
            a - b
        } else {
            a + p - b
        }
    }

    pub fn mul(a: u64, b: u64, p: u64) -> u64 {
        (u128::from(a) * u128::from(b) % u128::from(p)) as u64
    }

    pub fn pow(mut a: u64, mut e: u64, p: u64) -> u64 {
        let mut acc = 1 % p;
        while e > 0 {
            if e & 1 == 1 {
                acc = mul(acc, a, p);
            }
            a = mul(a, a, p);
            e >>= 1;
        }
        acc
    }

    /// `a^(-1)` for `a ≢ 0` (Fermat).
    pub fn inv(a: u64, p: u64) -> u64 {
        assert!(!a.is_multiple_of(p), "inverse of zero");
        pow(a % p, p - 2, p)
    }

    /// The reduced row echelon form of the span of `rows`: its non-zero
    /// rows (pivot entries 1, zeros above and below each pivot) and their
    /// pivot columns, increasing.
    pub fn rref(rows: &[Vec<u64>], p: u64) -> (Vec<Vec<u64>>, Vec<usize>) {
        let mut m: Vec<Vec<u64>> = rows.to_vec();
        let width = m.first().map_or(0, |r| r.len());
        let mut pivots = Vec::new();
        let mut rank = 0;
        for col in 0..width {
            let Some(r) = (rank..m.len()).find(|&r| m[r][col] != 0) else {
                continue;
            };
            m.swap(rank, r);
            let inv = inv(m[rank][col], p);
            for x in m[rank].iter_mut() {
                *x = mul(*x, inv, p);
            }
            let pivot = m[rank].clone();
            for (i, row) in m.iter_mut().enumerate() {
                if i != rank && row[col] != 0 {
                    let c = row[col];
                    for (x, &y) in row.iter_mut().zip(&pivot) {
                        *x = sub(*x, mul(c, y, p), p);
                    }
                }
            }
            pivots.push(col);
            rank += 1;
        }
        m.truncate(rank);
        (m, pivots)
    }

    pub fn rank(rows: &[Vec<u64>], p: u64) -> usize {
        rref(rows, p).1.len()
    }

    /// `v` minus its components along a reduced echelon basis: zero iff
    /// `v` lies in the span.
    pub fn reduce(v: &[u64], echelon: &[Vec<u64>], pivots: &[usize], p: u64) -> Vec<u64> {
        let mut v = v.to_vec();
        for (row, &c) in echelon.iter().zip(pivots) {
            if v[c] != 0 {
                let k = v[c];
                for (x, &y) in v.iter_mut().zip(row) {
                    *x = sub(*x, mul(k, y, p), p);
                }
            }
        }
        v
    }

    /// A basis of `{λ : Σ_i λ_i rows[i] = 0}` (Gaussian elimination on
    /// `rows` augmented by the identity).
    pub fn left_kernel(rows: &[Vec<u64>], p: u64) -> Vec<Vec<u64>> {
        let r = rows.len();
        let width = rows.first().map_or(0, |x| x.len());
        let mut m: Vec<Vec<u64>> = rows
            .iter()
            .enumerate()
            .map(|(i, row)| {
                let mut v = row.clone();
                v.extend((0..r).map(|k| u64::from(k == i)));
                v
            })
            .collect();
        let mut rank = 0;
        for col in 0..width {
            let Some(k) = (rank..r).find(|&k| m[k][col] != 0) else {
                continue;
            };
            m.swap(rank, k);
            let inv = inv(m[rank][col], p);
            for x in m[rank].iter_mut() {
                *x = mul(*x, inv, p);
            }
            let pivot = m[rank].clone();
            for (i, row) in m.iter_mut().enumerate() {
                if i != rank && row[col] != 0 {
                    let c = row[col];
                    for (x, &y) in row.iter_mut().zip(&pivot) {
                        *x = sub(*x, mul(c, y, p), p);
                    }
                }
            }
            rank += 1;
        }
        m.into_iter()
            .skip(rank)
            .map(|v| v[width..].to_vec())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    pub(crate) fn z(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    /// Multiplication of power-basis polynomials mod F, over Q: the
    /// definition of the product in K.
    fn power_mul(f: &[Integer], a: &[Integer], b: &[Integer]) -> Vec<Integer> {
        let (_, r) = divrem_monic(&zmul(a, b), f).unwrap();
        pad(r, f.len() - 1)
    }

    #[test]
    fn equation_order_of_a_cubic() {
        // x^3 - 2: θ^3 = 2. disc(Z[θ]) = disc(F) = -108 (common practice).
        let f = z(&[-2, 0, 0, 1]);
        let o = Order::equation(&f).unwrap();
        assert_eq!(*o.discriminant(), -108);
        assert_eq!(o.index(), Some(Integer::from(1)));
        let th = o.theta().unwrap();
        let th2 = o.mul(&th, &th);
        assert_eq!(o.mul(&th2, &th), z(&[2, 0, 0]));
        // N(a + bθ + cθ^2) = a^3 + 2b^3 + 4c^3 - 6abc (common practice for
        // the pure cubic x^3 - 2).
        for (a, b, c) in [(1, 1, 0), (3, -1, 2), (0, 0, 1), (5, 7, -4)] {
            let v = z(&[a, b, c]);
            assert_eq!(
                o.norm(&v),
                Integer::from(a * a * a + 2 * b * b * b + 4 * c * c * c - 6 * a * b * c)
            );
            // Tr = 3a (the traces of θ and θ^2 vanish)
            assert_eq!(o.trace(&v), Integer::from(3 * a));
        }
    }

    #[test]
    fn an_order_with_a_denominator() {
        // x^2 - 5: the ring of integers is Z[(1 + θ)/2], basis (2, 0), (1, 1)
        // over 2; disc 5 (common practice).
        let f = z(&[-5, 0, 1]);
        let o = Order::new(&f, vec![z(&[2, 0]), z(&[1, 1])], Integer::from(2)).unwrap();
        assert_eq!(*o.discriminant(), 5);
        assert_eq!(o.index(), Some(Integer::from(2)));
        assert_eq!(o.one(), z(&[1, 0]));
        assert_eq!(o.theta(), Some(z(&[-1, 2])));
        // ω = (1 + √5)/2 satisfies ω^2 = ω + 1.
        assert_eq!(o.mul(&z(&[0, 1]), &z(&[0, 1])), z(&[1, 1]));
        assert_eq!(o.norm(&z(&[0, 1])), -1);
        assert_eq!(o.to_power(&z(&[0, 1])), (z(&[1, 1]), Integer::from(2)));
        assert_eq!(o.from_power(&z(&[1, 1]), &Integer::from(3)), None);
        // Not a ring: Z + Z(θ/2).
        assert_eq!(
            Order::new(&f, vec![z(&[2, 0]), z(&[0, 1])], Integer::from(2)),
            Err(OrderError::NotARing)
        );
        assert!(matches!(
            Order::new(&f, vec![z(&[2, 1]), z(&[0, 1])], Integer::from(2)),
            Err(OrderError::Shape(_))
        ));
    }

    #[test]
    fn products_agree_with_the_power_basis() {
        // Z[θ] for x^3 - 21x - 35 rebuilt by from_generators from 3, 3θ,
        // 3θ^2 over 3; then random products in coordinates against products
        // of polynomials mod F (the definition).
        let f = z(&[-35, -21, 0, 1]);
        let gens = vec![z(&[3, 0, 0]), z(&[0, 3, 0]), z(&[0, 0, 3])];
        let o = Order::from_generators(&f, &gens, &Integer::from(3)).unwrap();
        assert_eq!(o, Order::equation(&f).unwrap());
        let mut rng = crate::rng::Rng::new(5);
        for _ in 0..50 {
            let a: Vec<Integer> = (0..3)
                .map(|_| Integer::from(rng.below(41) as i64 - 20))
                .collect();
            let b: Vec<Integer> = (0..3)
                .map(|_| Integer::from(rng.below(41) as i64 - 20))
                .collect();
            let (pa, da) = o.to_power(&a);
            let (pb, db) = o.to_power(&b);
            let prod = power_mul(&f, &pa, &pb);
            assert_eq!(o.from_power(&prod, &(da * db)), Some(o.mul(&a, &b)));
        }
    }

    #[test]
    fn hermite_forms() {
        // The lattice spanned by (4, 0), (2, 6), (0, 9): its index in Z^2 is
        // gcd of the 2x2 minors = gcd(24, 36, 18) = 6. By hand:
        // (2, 0) = -(4, 0) + 3(2, 6) - 2(0, 9) and (0, 3) = (0, 9) - (2, 6)
        // + (2, 0), and 2·3 = 6, so the rows are (2, 0) and (0, 3).
        let gens = vec![z(&[4, 0]), z(&[2, 6]), z(&[0, 9])];
        let h = hnf(&gens, 2, None).unwrap();
        assert_eq!(h, vec![z(&[2, 0]), z(&[0, 3])]);
        for g in &gens {
            assert!(lattice_coords(&h, g).is_some());
        }
        for row in &h {
            // each basis row is an integer combination of the generators
            // (checked by brute force over small coefficients)
            let mut found = false;
            for a in -5i64..=5 {
                for b in -5i64..=5 {
                    for c in -5i64..=5 {
                        let v: Vec<Integer> = (0..2)
                            .map(|k| {
                                Integer::from(&gens[0][k] * a) + &gens[1][k] * b + &gens[2][k] * c
                            })
                            .collect();
                        found |= v == *row;
                    }
                }
            }
            assert!(found, "{row:?}");
        }
        assert_eq!(hnf(&[z(&[1, 2]), z(&[2, 4])], 2, None), None);
        // Random full-rank lattices: the HNF has the same determinant as the
        // lattice (gcd of maximal minors: here the generators are a basis
        // plus one combination) and contains each generator.
        let mut rng = crate::rng::Rng::new(9);
        for _ in 0..40 {
            let n = 2 + rng.below(5) as usize;
            let basis: Vec<Vec<Integer>> = (0..n)
                .map(|_| {
                    (0..n)
                        .map(|_| Integer::from(rng.below(61) as i64 - 30))
                        .collect()
                })
                .collect();
            let d = det(basis.clone()).abs();
            if d == 0 {
                continue;
            }
            let mut gens = basis.clone();
            let comb: Vec<Integer> = (0..n)
                .map(|k| basis.iter().map(|r| Integer::from(&r[k] * 3)).sum())
                .collect();
            gens.push(comb);
            let h = hnf(&gens, n, None).unwrap();
            let hd: Integer = (0..n).map(|i| h[i][i].clone()).product();
            assert_eq!(hd, d);
            for g in &gens {
                assert!(lattice_coords(&h, g).is_some());
            }
            for i in 0..n {
                for j in 0..n {
                    if j > i {
                        assert_eq!(h[i][j], 0);
                    } else if j < i {
                        assert!(h[i][j] >= 0 && h[i][j] < h[j][j]);
                    }
                }
            }
        }
    }

    #[test]
    fn linear_algebra_mod_p() {
        let p = 7;
        let rows = vec![vec![1, 2, 3], vec![2, 4, 6], vec![0, 1, 1]];
        let ker = modp::left_kernel(&rows, p);
        assert_eq!(ker.len(), 1);
        for v in &ker {
            for c in 0..3 {
                let s = (0..3).fold(0, |acc, i| {
                    modp::add(acc, modp::mul(v[i], rows[i][c], p), p)
                });
                assert_eq!(s, 0);
            }
        }
        assert_eq!(modp::rank(&rows, p), 2);
        let (e, piv) = modp::rref(&rows, p);
        assert_eq!(modp::reduce(&[3, 6, 9], &e, &piv, p), vec![0, 0, 0]);
        assert_ne!(modp::reduce(&[0, 0, 1], &e, &piv, p), vec![0, 0, 0]);
        assert_eq!(modp::mul(modp::inv(5, p), 5, p), 1);
    }
}
