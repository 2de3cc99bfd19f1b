//! The dense block of `D > 0` as short combinations of its rows.
//!
//! The real driver's certificate states every row of the dense block's
//! Hermite form, and every unit, as an integer combination of the rows it
//! came from. An echelon form built from as many rows as columns has
//! combinations whose coefficients are minors of the block (thousands of
//! bits once the block has a few hundred columns). With `e` rows more,
//! much shorter combinations exist, and here they are found by lattice
//! reduction in dimension `e` only.
//!
//! Let `S` be `n` independent rows (`n` columns) and `E` the `e` others.
//! When `Z^n / Λ(S)` is cyclic, a character `χ` of the cokernel
//! ([`Characters::cyclic`]) identifies it with `Z/Δ`, `Δ = |det S|`. A
//! combination `y` of `E` lies in `Λ(S)` exactly when `Σ y_j χ(E_j) ≡ 0
//! (mod Δ)`: those `y` form a lattice of dimension `e` and determinant
//! about `Δ`, whose reduced basis ([`lll::reduce`]) has entries near
//! `Δ^{1/e}`. For a vector `t` of the lattice `L = Λ(S ∪ E)`, a `y` with
//! `y·E ≡ t (mod Λ(S))`, reduced modulo that lattice (Babai's rounding),
//! leaves `t − y·E = x·S` with `x` found by a p-adic solve ([`Solver`]);
//! `x` is about as short as `y` times the entries of `E` over those of
//! `S`. The vectors of the reduced basis give kernel vectors `(x, y)` of
//! the same size: units.
//!
//! The cost of a combination is its coefficients' bits: about `n` of them
//! times `log₂ Δ / e`, so `e` trades rows (each stated in full in the
//! certificate) against coefficient size.

use super::cokernel::Characters;
use super::dixon::Solver;
use super::lll;
use super::modp::Lu;
use super::Matrix;
use rug::ops::{DivRounding, RemRounding};
use rug::Integer;

/// A combination of the rows used: `(position in Block::used, coefficient)`,
/// by increasing position, nonzero coefficients.
pub type Combination = Vec<(usize, Integer)>;

/// Choices of the independent rows tried before giving up (a choice whose
/// cokernel is not cyclic, about one in seven for random matrices, is
/// replaced by another).
const ATTEMPTS: usize = 4;

/// Swaps the reduction may take, per vector of the basis.
const MAX_SWAPS_PER_VECTOR: u64 = 200_000;

/// The rows chosen, the character and the reduced lattice of combinations.
pub struct Block {
    n: usize,
    /// `Sᵀ`, for `x·S = b` as `Sᵀ xᵀ = bᵀ`.
    st: Vec<Vec<i64>>,
    /// The rows of `E`, then the targets taken in as further rows
    /// ([`Block::represent`]).
    e_rows: Vec<Vec<i64>>,
    /// Indices into the given rows: `S` (its `n` rows) then `E`.
    pub used: Vec<usize>,
    delta: Integer,
    /// `χ(e_j)` for the unit vectors.
    chi: Vec<Integer>,
    /// `[Z^n : Λ(S ∪ E)]`.
    pub index: Integer,
    /// `Δ' = Δ / index`.
    d1: Integer,
    /// `χ(E_j) / index mod Δ'` for each row of `e_rows`.
    g1: Vec<Integer>,
    /// The reduced basis of `{y : Σ y_j g1_j ≡ 0 (mod Δ')}`.
    lambda: Vec<Vec<Integer>>,
    /// `u` with `u·g1 ≡ 1 (mod Δ')`, reduced modulo that lattice.
    u: Vec<Integer>,
    /// `u = (w / δ_w)·lambda`: `(δ_w, w)`.
    w: (Integer, Vec<Integer>),
    characters: Characters,
}

fn to_i128(v: &[Integer]) -> Option<Vec<i128>> {
    v.iter().map(|x| x.to_i128()).collect()
}

fn transpose(m: &[Vec<i64>]) -> Vec<Vec<i64>> {
    let n = m.first().map_or(0, |r| r.len());
    (0..n).map(|j| m.iter().map(|r| r[j]).collect()).collect()
}

/// `v·c mod δ`.
fn image<T: Copy + Into<Integer>>(v: &[T], c: &[Integer], delta: &Integer) -> Integer {
    let mut acc = Integer::new();
    for (&x, y) in v.iter().zip(c) {
        let x: Integer = x.into();
        if !x.is_zero() {
            acc += y * x;
        }
    }
    acc.rem_euc(delta)
}

/// `(d, c)` with `c·B = d·v` and `d = |det B|` (`B` square and
/// nonsingular): the coordinates of `v` in the basis `B`, by fraction-free
/// elimination on `Bᵀ` (E. H. Bareiss, Math. Comp. 22 (1968)).
fn solve_rows(b: &[Vec<Integer>], v: &[Integer]) -> Option<(Integer, Vec<Integer>)> {
    let n = b.len();
    // rows of [Bᵀ | v]
    let mut m: Vec<Vec<Integer>> = (0..n)
        .map(|i| {
            let mut r: Vec<Integer> = (0..n).map(|j| b[j][i].clone()).collect();
            r.push(v[i].clone());
            r
        })
        .collect();
    let mut prev = Integer::from(1);
    let mut sign = 1i32;
    for k in 0..n {
        let piv = (k..n).find(|&i| !m[i][k].is_zero())?;
        if piv != k {
            m.swap(piv, k);
            sign = -sign;
        }
        let (top, bottom) = m.split_at_mut(k + 1);
        let pk = &top[k];
        for r in bottom.iter_mut() {
            for j in k + 1..=n {
                let t = Integer::from(&r[j] * &pk[k]) - Integer::from(&r[k] * &pk[j]);
                r[j] = t.div_exact(&prev);
            }
            r[k] = Integer::new();
        }
        prev = pk[k].clone();
    }
    // back substitution: x = c / det with c integral
    let det = Integer::from(&m[n - 1][n - 1] * sign);
    let mut c = vec![Integer::new(); n];
    for i in (0..n).rev() {
        let mut acc = Integer::from(&m[i][n] * &det);
        for j in i + 1..n {
            acc -= Integer::from(&m[i][j] * &c[j]);
        }
        c[i] = acc.div_exact(&m[i][i]);
    }
    if det < 0 {
        Some((-det, c.into_iter().map(|x| -x).collect()))
    } else {
        Some((det, c))
    }
}

/// The nearest integer to `a / b` (`b > 0`).
fn round_div(a: &Integer, b: &Integer) -> Integer {
    let twice = Integer::from(a << 1u32) + b;
    twice.div_floor(Integer::from(b << 1u32))
}

/// `v − Σ q_i b_i` with `q_i` the nearest integer to `m·c_i / d`.
fn babai(v: &mut [Integer], m: &Integer, c: &[Integer], d: &Integer, basis: &[Vec<Integer>]) {
    for (ci, bi) in c.iter().zip(basis) {
        let q = round_div(&Integer::from(m * ci), d);
        if q.is_zero() {
            continue;
        }
        for (a, b) in v.iter_mut().zip(bi) {
            *a -= Integer::from(&q * b);
        }
    }
}

impl Block {
    /// Chooses `n` independent rows among `rows` (on `n` columns, the
    /// preferred first) and `extra` more, and reduces the lattice of their
    /// combinations. `None` when the rows do not have full rank, no choice
    /// had a cyclic cokernel, or a step failed.
    pub fn new(rows: &[Vec<i64>], n: usize, extra: usize) -> Option<Block> {
        if n == 0 || rows.len() < n + extra {
            return None;
        }
        let p = Solver::prime();
        for attempt in 0..ATTEMPTS {
            // each attempt starts a little further down the list
            let skip = (attempt * (n / 16 + 1)).min(rows.len() - n - extra);
            let pool: Vec<usize> = (skip..rows.len()).chain(0..skip).collect();
            let take = pool.len().min(n + n / 10 + 16);
            let cands: Vec<Vec<i64>> = pool[..take].iter().map(|&i| rows[i].clone()).collect();
            let (lu, picked) = match Lu::choosing(&cands, n, p) {
                Some(x) => x,
                None => {
                    let all: Vec<Vec<i64>> = pool.iter().map(|&i| rows[i].clone()).collect();
                    Lu::choosing(&all, n, p)?
                }
            };
            let s_idx: Vec<usize> = picked.iter().map(|&i| pool[i]).collect();
            let s_rows: Vec<Vec<i64>> = s_idx.iter().map(|&i| rows[i].clone()).collect();
            let Some(characters) = Characters::with_lu(&s_rows, Some(lu), 4) else {
                continue;
            };
            let Some(chi) = characters.cyclic().map(|c| c.to_vec()) else {
                continue;
            };
            let e_idx: Vec<usize> = pool
                .iter()
                .copied()
                .filter(|i| !s_idx.contains(i))
                .take(extra)
                .collect();
            let e_rows: Vec<Vec<i64>> = e_idx.iter().map(|&i| rows[i].clone()).collect();
            if let Some(mut b) = Block::with(&s_rows, e_rows, chi, characters) {
                b.used = s_idx.into_iter().chain(e_idx).collect();
                return Some(b);
            }
        }
        None
    }

    fn with(
        s_rows: &[Vec<i64>],
        e_rows: Vec<Vec<i64>>,
        chi: Vec<Integer>,
        characters: Characters,
    ) -> Option<Block> {
        let n = s_rows.len();
        let e = e_rows.len();
        let delta = characters.det().clone();
        let g: Vec<Integer> = e_rows.iter().map(|r| image(r, &chi, &delta)).collect();
        let index = g.iter().fold(delta.clone(), |acc, x| acc.gcd(x));
        let d1 = Integer::from(&delta / &index);
        let g1: Vec<Integer> = g.iter().map(|x| Integer::from(x / &index)).collect();
        // a coordinate whose image generates: the lattice is then
        // Δ' e_j0 and e_j − (g_j / g_j0) e_j0
        let j0 = (0..e).find(|&j| Integer::from(g1[j].gcd_ref(&d1)) == 1)?;
        let inv = g1[j0].clone().invert(&d1).ok()?;
        let mut lambda: Vec<Vec<Integer>> = Vec::with_capacity(e);
        let mut first = vec![Integer::new(); e];
        first[j0] = d1.clone();
        lambda.push(first);
        for j in (0..e).filter(|&j| j != j0) {
            let mut r = vec![Integer::new(); e];
            r[j] = Integer::from(1);
            let t = Integer::from(&g1[j] * &inv).rem_euc(&d1);
            r[j0] = -t;
            lambda.push(r);
        }
        let mut u = vec![Integer::new(); e];
        u[j0] = inv;
        let mut b = Block {
            n,
            st: transpose(s_rows),
            e_rows,
            used: Vec::new(),
            delta,
            chi,
            index,
            d1,
            g1,
            lambda,
            u,
            w: (Integer::new(), Vec::new()),
            characters,
        };
        b.reduce()?;
        Some(b)
    }

    /// Reduces the lattice, then `u` modulo it, and prepares Babai's
    /// rounding for multiples of `u`.
    fn reduce(&mut self) -> Option<()> {
        let e = self.lambda.len() as u32;
        let prec = (e * 8 / 5 + 48).max(64);
        lll::reduce(&mut self.lambda, prec, MAX_SWAPS_PER_VECTOR * e as u64);
        let (d, c) = solve_rows(&self.lambda, &self.u)?;
        let mut u = self.u.clone();
        babai(&mut u, &Integer::from(1), &c, &d, &self.lambda);
        self.w = solve_rows(&self.lambda, &u)?;
        self.u = u;
        Some(())
    }

    /// Takes in `t` (a vector of the lattice, `y·E ≡ t` modulo `Λ(S)`) as
    /// a further row of `E`: the lattice gains the vector `(y, −1)`.
    fn take_in(&mut self, t: &[Integer], y: &[Integer]) -> Option<()> {
        let row: Vec<i64> = t.iter().map(|x| x.to_i64()).collect::<Option<_>>()?;
        let ct = image(&row, &self.chi, &self.delta);
        self.g1
            .push(Integer::from(&ct / &self.index).rem_euc(&self.d1));
        self.e_rows.push(row);
        for r in &mut self.lambda {
            r.push(Integer::new());
        }
        let mut v = y.to_vec();
        v.push(Integer::from(-1));
        self.lambda.push(v);
        self.u.push(Integer::new());
        self.reduce()
    }

    /// Solves `x·S = b` for each of `bs`; `None` unless every `x` is
    /// integral.
    fn over_s(&self, bs: &[Vec<i128>]) -> Option<Vec<Vec<Integer>>> {
        let solver = Solver::new(&self.st)?;
        solver
            .solve_many(bs)
            .into_iter()
            .map(|s| {
                let (d, x) = s?;
                (d == 1).then_some(x)
            })
            .collect()
    }

    /// `t − y·E` as words, or `None`.
    fn rest(&self, t: &[Integer], y: &[Integer]) -> Option<Vec<i128>> {
        let mut b: Vec<Integer> = t.to_vec();
        for (yj, ej) in y.iter().zip(&self.e_rows) {
            if yj.is_zero() {
                continue;
            }
            for (bi, &x) in b.iter_mut().zip(ej) {
                if x != 0 {
                    *bi -= Integer::from(yj * x);
                }
            }
        }
        to_i128(&b)
    }

    fn combination(x: &[Integer], y: &[Integer]) -> Combination {
        x.iter()
            .chain(y)
            .enumerate()
            .filter(|(_, c)| !c.is_zero())
            .map(|(i, c)| (i, c.clone()))
            .collect()
    }

    /// Kernel vectors: one combination of the rows used per vector of the
    /// reduced basis, each summing to zero.
    pub fn kernel(&self) -> Option<Vec<Combination>> {
        let zero = vec![Integer::new(); self.n];
        let bs: Vec<Vec<i128>> = self
            .lambda
            .iter()
            .map(|y| self.rest(&zero, y))
            .collect::<Option<_>>()?;
        let xs = self.over_s(&bs)?;
        Some(
            xs.iter()
                .zip(&self.lambda)
                .map(|(x, y)| Block::combination(x, y))
                .collect(),
        )
    }

    /// The Hermite form of the lattice the rows used span (`n × n`).
    pub fn hermite(&self) -> Option<Matrix> {
        let (rows, det, _) = self.characters.hermite(self.n, &self.e_rows, &|_| false)?;
        (det == self.index).then_some(rows)
    }

    /// A `y` with `y·E ≡ t` modulo `Λ(S)`, reduced; `None` if `t` is not
    /// in the lattice.
    fn y_for(&self, t: &[Integer]) -> Option<Vec<Integer>> {
        let mut ct = Integer::new();
        for (x, c) in t.iter().zip(&self.chi) {
            if !x.is_zero() {
                ct += Integer::from(x * c);
            }
        }
        let ct = ct.rem_euc(&self.delta);
        if !ct.is_divisible(&self.index) {
            return None;
        }
        let m = ct / &self.index;
        // m·u reduced modulo the lattice: m·u·B⁻¹ = m·w/δ_w
        let mut y: Vec<Integer> = self.u.iter().map(|a| Integer::from(&m * a)).collect();
        let (dw, w) = &self.w;
        babai(&mut y, &m, w, dw, &self.lambda);
        Some(y)
    }

    /// Short combinations for each of `targets` (vectors of the lattice
    /// the rows used span); `None` if one is not in it or a step failed.
    ///
    /// Every row has a small logarithmic height (its element is
    /// `(u + √D)/2` with `u² ≈ D`, times a few such), so a combination
    /// that reaches a vector of arbitrary height, such as a unit vector,
    /// needs coefficients near the regulator divided by those heights: in
    /// the lattice of `y` one direction is that long whatever `e`. So the
    /// first `heights` targets are represented one at a time and each is
    /// then taken in as a further row: in the combinations that follow,
    /// target `j` stands at position `n + e + j`, and a few such rows of
    /// large height leave every coefficient short.
    pub fn represent(
        &mut self,
        targets: &[Vec<Integer>],
        heights: usize,
    ) -> Option<Vec<Combination>> {
        let first = heights.min(targets.len());
        let mut out = Vec::with_capacity(targets.len());
        for t in &targets[..first] {
            let y = self.y_for(t)?;
            let x = self.over_s(&[self.rest(t, &y)?])?.pop()?;
            out.push(Block::combination(&x, &y));
            self.take_in(t, &y)?;
        }
        let rest = &targets[first..];
        let ys: Vec<Vec<Integer>> = rest.iter().map(|t| self.y_for(t)).collect::<Option<_>>()?;
        let bs: Vec<Vec<i128>> = rest
            .iter()
            .zip(&ys)
            .map(|(t, y)| self.rest(t, y))
            .collect::<Option<_>>()?;
        let xs = self.over_s(&bs)?;
        out.extend(xs.iter().zip(&ys).map(|(x, y)| Block::combination(x, y)));
        Some(out)
    }

    /// The rows of `S`, then of `E` (without targets taken in).
    pub fn rows(&self) -> impl Iterator<Item = Vec<i64>> + '_ {
        let s = transpose(&self.st);
        let e = self.used.len() - self.n;
        s.into_iter().chain(self.e_rows.iter().take(e).cloned())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::linalg::random_rows;
    use crate::rng::Rng;

    /// The sum of a combination; positions past the rows used name the
    /// targets taken in (`extra`).
    fn sum(
        rows: &[Vec<i64>],
        used: &[usize],
        extra: &[Vec<Integer>],
        c: &Combination,
        n: usize,
    ) -> Vec<Integer> {
        let mut out = vec![Integer::new(); n];
        for (pos, coef) in c {
            let row: Vec<Integer> = match used.get(*pos) {
                Some(&i) => rows[i].iter().map(|&x| Integer::from(x)).collect(),
                None => extra[*pos - used.len()].clone(),
            };
            for (o, x) in out.iter_mut().zip(&row) {
                *o += Integer::from(coef * x);
            }
        }
        out
    }

    /// On random blocks: the kernel combinations vanish, the Hermite rows
    /// are what their combinations sum to, the index is the Hermite form's
    /// determinant, and the coefficients are far shorter than minors.
    #[test]
    fn combinations_sum_to_their_targets() {
        let mut rng = Rng::new(11);
        let mut checked = 0;
        for _ in 0..6 {
            let n = 30;
            let rows = random_rows(&mut rng, 80, n, 20);
            let Some(mut b) = Block::new(&rows, n, 20) else {
                continue;
            };
            checked += 1;
            for k in b.kernel().unwrap() {
                assert!(sum(&rows, &b.used, &[], &k, n).iter().all(|x| x.is_zero()));
            }
            let h = b.hermite().unwrap();
            let det: Integer = (0..n).map(|i| h[i][i].clone()).product();
            assert_eq!(det, b.index);
            let reps = b.represent(&h, 3).unwrap();
            for (t, c) in h.iter().zip(&reps) {
                assert_eq!(&sum(&rows, &b.used, &h[..3], c, n), t);
                // minors of 30 rows of 5-bit entries have some 150 bits
                assert!(c.iter().all(|(_, x)| x.significant_bits() < 60));
            }
        }
        assert!(checked >= 4, "{checked}");
    }
}
