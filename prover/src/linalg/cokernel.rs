//! The Hermite form of a relation lattice read off its cokernel, for dense
//! blocks too wide for row-by-row insertion.
//!
//! Let `A` be a nonsingular `n × n` block of relations and `L ⊇ Λ(A)` the
//! lattice of all relations (rows). A solve `A c = δ b` ([`Solver`]) gives
//! a character `v ↦ v·c mod δ` of `Z^n` that vanishes on `Λ(A)` (for
//! `v = yA`, `v·c = δ·(y·b)`). A few of them map `Z^n` into `(Z/δ_1) × … ×
//! (Z/δ_t)`; when the image has `|det A|` elements their common kernel is
//! `Λ(A)` itself, and `Z^n / L` is that image modulo the images of the
//! other relations. The Hermite form of `L` follows column by column, from
//! the last: column `j`'s pivot is the order of `e_j`'s image modulo the
//! subgroup the later columns' images generate, and its row is `d_j e_j`
//! minus the combination of later columns with the same image. Almost
//! every pivot is 1, and only the few columns with a pivot above 1 ever
//! appear in a row, so the whole form costs `O(n t²)` operations on
//! `t`-vectors after the solves, instead of `O(n³)` for insertion.
//!
//! The answer is the Hermite form of `L` (unique), the same matrix
//! [`super::Hnf`] gives; the caller falls back to that when this returns
//! `None` (too few characters, a failed solve).

use super::dixon::{sign_pattern, Solver};
use super::modp::Lu;
use super::{Hnf, Matrix};
use rug::ops::{DivRounding, RemRounding};
use rug::{Integer, Rational};
use std::collections::BTreeMap;

/// A combination of columns.
type Combo = BTreeMap<usize, Integer>;

/// Characters added at a time when those so far do not separate the
/// classes.
const MORE_CHARACTERS: usize = 4;

/// Characters tried at most.
const MAX_CHARACTERS: usize = 40;

/// Other relations imaged per thread between checks of the determinant.
const IMAGE_BATCH_PER_THREAD: usize = 8;

/// The characters and the image group they define.
pub struct Characters {
    /// `(δ_s, c_s mod δ_s)` for each character.
    chars: Vec<(Integer, Vec<Integer>)>,
    /// `|det a|`.
    det: Integer,
}

impl Characters {
    /// Characters of `Z^n / Λ(a)` (`a` square) from solves with sign
    /// patterns, `t` at first and [`MORE_CHARACTERS`] more at a time until
    /// together they separate the classes (the image has `|det a|`
    /// elements), up to [`MAX_CHARACTERS`]; `None` if they never do, `a` is
    /// singular or a solve fails. A cyclic `q`-part of the cokernel escapes
    /// `t` random characters with probability about `q^-t`, so the 2-part
    /// is what sometimes needs more.
    ///
    /// The image's size divides `|det a|` and is a multiple of every
    /// `δ_s`; it is taken as `|det a|` once it agrees with `det a` modulo
    /// the solver's prime, up to sign (the LU decomposition gives that
    /// residue). Were it a proper divisor `|det a| / m` with `m ≡ ±1`
    /// modulo a prime above `2^61`, the Hermite form read off would hold
    /// rows outside the lattice, and the self-check would reject it; the
    /// exact determinant by further primes ([`Solver::det`]) would cost an
    /// elimination of the whole block for each.
    pub fn new(a: &[Vec<i64>], t: usize) -> Option<Characters> {
        Characters::with_lu(a, None, t)
    }

    /// [`Characters::new`] with the LU decomposition of `a` modulo
    /// [`Solver::prime`] when the caller has it already
    /// ([`super::modp::Lu::choosing`]).
    pub(crate) fn with_lu(a: &[Vec<i64>], lu: Option<Lu>, t: usize) -> Option<Characters> {
        let n = a.len();
        let solver = Solver::with_lu(a, lu)?;
        let threads = std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .clamp(1, 8);
        let mut ch = Characters {
            chars: Vec::new(),
            det: Integer::new(),
        };
        let mut goal = t.max(1);
        while goal <= MAX_CHARACTERS {
            // the solves are independent: a share of them lifted together
            // on each thread, the answers kept in order
            let first = ch.chars.len();
            let bs: Vec<Vec<i128>> = (first..goal).map(|s| sign_pattern(n, s as u64)).collect();
            let share = bs.len().div_ceil(threads);
            let solved: Vec<Option<(Integer, Vec<Integer>)>> = std::thread::scope(|scope| {
                let handles: Vec<_> = bs
                    .chunks(share)
                    .map(|part| {
                        let solver = &solver;
                        scope.spawn(move || solver.solve_many(part))
                    })
                    .collect();
                handles
                    .into_iter()
                    .flat_map(|h| h.join().unwrap_or_else(|_| vec![None; share]))
                    .collect()
            });
            for found in solved {
                let (delta, c) = found?;
                let c = c.into_iter().map(|x| x.rem_euc(&delta)).collect();
                ch.chars.push((delta, c));
            }
            let size = ch.image_size(n)?;
            let (p, det_p) = solver.det_mod_prime();
            let r = Integer::from(&size % p).to_u64()?;
            if r == det_p || (r + det_p) % p == 0 {
                ch.det = size;
                return Some(ch);
            }
            goal += MORE_CHARACTERS;
        }
        None
    }

    /// `|det a|`.
    pub fn det(&self) -> &Integer {
        &self.det
    }

    /// A character that is an isomorphism `Z^n / Λ(a) → Z/|det a|`, when
    /// one of them is: its values `c_j` on the unit vectors (`v ↦ v·c mod
    /// |det a|`). A character of order `δ` has image `Z/δ` (its `c` and `δ`
    /// are coprime), so one with `δ = |det a|` is onto a group as large as
    /// the cokernel, hence injective; the cokernel is then cyclic.
    pub fn cyclic(&self) -> Option<&[Integer]> {
        self.chars
            .iter()
            .find(|(d, _)| *d == self.det)
            .map(|(_, c)| c.as_slice())
    }

    /// `|image| = Π δ_s / det(I)` with `I = ⟨δ_s e_s, images of e_j⟩ ⊆ Z^t`.
    fn image_size(&self, n: usize) -> Option<Integer> {
        let mut image = self.zero_lattice();
        for j in 0..n {
            image.insert(self.image_of_column(j));
        }
        let prod: Integer = self.chars.iter().map(|(d, _)| d.clone()).product();
        Some(Integer::from(&prod / image.det()?))
    }

    fn t(&self) -> usize {
        self.chars.len()
    }

    /// The lattice `⟨δ_s e_s⟩ ⊆ Z^t` (the images of zero), as a Hermite
    /// form kept modulo `lcm δ_s`, which it contains times `Z^t`.
    fn zero_lattice(&self) -> Hnf {
        let lcm = self
            .chars
            .iter()
            .fold(Integer::from(1), |l, (d, _)| l.lcm(d));
        let mut h = Hnf::with_modulus(self.t(), &lcm);
        for s in 0..self.t() {
            h.insert(self.unit(s));
        }
        h
    }

    /// `δ_s e_s`.
    fn unit(&self, s: usize) -> Vec<Integer> {
        let mut v = vec![Integer::new(); self.t()];
        v[s] = self.chars[s].0.clone();
        v
    }

    fn image_of_column(&self, j: usize) -> Vec<Integer> {
        self.chars.iter().map(|(_, c)| c[j].clone()).collect()
    }

    /// The image of a row `r` (an integer vector on the block's columns).
    fn image(&self, r: &[i64]) -> Vec<Integer> {
        self.chars
            .iter()
            .map(|(d, c)| {
                let mut acc = Integer::new();
                for (&x, y) in r.iter().zip(c) {
                    if x != 0 {
                        acc += y * x;
                    }
                }
                acc.rem_euc(d)
            })
            .collect()
    }

    /// The images of `rows`, in order, computed on up to `threads` threads.
    fn images(&self, rows: &[Vec<i64>], threads: usize) -> Vec<Vec<Integer>> {
        let share = rows.len().div_ceil(threads.max(1)).max(1);
        std::thread::scope(|scope| {
            let handles: Vec<_> = rows
                .chunks(share)
                .map(|part| {
                    scope.spawn(move || part.iter().map(|r| self.image(r)).collect::<Vec<_>>())
                })
                .collect();
            handles
                .into_iter()
                .flat_map(|h| h.join().unwrap_or_default())
                .collect()
        })
    }

    /// The Hermite form of the lattice spanned by `Λ(a)` and the first
    /// rows of `others` (on the same `n` columns), its determinant and the
    /// number of rows of `others` it took: they are taken in order, a
    /// batch at a time, until `enough` holds for the determinant of the
    /// lattice spanned so far (all of them if it never does). That
    /// determinant is `|det a| · det(M) / Π δ_s`, for `M` the lattice of
    /// images of zero below.
    pub fn hermite(
        &self,
        n: usize,
        others: &[Vec<i64>],
        enough: &dyn Fn(&Integer) -> bool,
    ) -> Option<(Matrix, Integer, usize)> {
        let threads = std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .clamp(1, 8);
        let prod: Integer = self.chars.iter().map(|(d, _)| d.clone()).product();
        // M = ⟨δ_s e_s, images of the other relations⟩: the zero class
        let mut m = self.zero_lattice();
        let mut used = 0;
        for batch in others.chunks(IMAGE_BATCH_PER_THREAD * threads) {
            for v in self.images(batch, threads) {
                m.insert(v);
            }
            used += batch.len();
            let det = Integer::from(&self.det * m.det()?) / &prod;
            if enough(&det) {
                break;
            }
        }
        let m_rows = m.finish()?;
        let mut basis = Basis {
            rows: m_rows.into_iter().map(|v| (v, Combo::new())).collect(),
        };
        let mut pivots: Vec<Integer> = vec![Integer::from(1); n];
        let mut combos: Vec<Combo> = vec![Combo::new(); n];
        for j in (0..n).rev() {
            let v = self.image_of_column(j);
            let (d, z) = basis.order(&v)?;
            // d·e_j − Σ z_s combo_s lies in the kernel
            let mut row = Combo::new();
            for (s, zs) in z.iter().enumerate() {
                if zs.is_zero() {
                    continue;
                }
                for (&k, x) in &basis.rows[s].1 {
                    let e = row.entry(k).or_default();
                    *e -= Integer::from(zs * x);
                }
            }
            row.retain(|_, x| !x.is_zero());
            if d > 1 {
                basis.insert(v, Combo::from([(j, Integer::from(1))]));
            }
            pivots[j] = d;
            combos[j] = row;
        }
        // reduce each row modulo the pivots above 1 (later columns first
        // reduced, so left to right within a row)
        let big: Vec<usize> = (0..n).filter(|&k| pivots[k] > 1).collect();
        for j in (0..n).rev() {
            for &k in big.iter().filter(|&&k| k > j) {
                let Some(x) = combos[j].get(&k).cloned() else {
                    continue;
                };
                let q = x.div_floor(&pivots[k]);
                if q.is_zero() {
                    continue;
                }
                let (head, tail) = combos.split_at_mut(k);
                let rk = &tail[0];
                let rj = &mut head[j];
                *rj.entry(k).or_default() -= Integer::from(&q * &pivots[k]);
                for (&c, y) in rk {
                    *rj.entry(c).or_default() -= Integer::from(&q * y);
                }
                rj.retain(|_, x| !x.is_zero());
            }
        }
        let det: Integer = big.iter().map(|&k| pivots[k].clone()).product();
        let mut rows: Matrix = Vec::with_capacity(n);
        for j in 0..n {
            let mut r = vec![Integer::new(); n];
            r[j] = pivots[j].clone();
            for (&k, x) in &combos[j] {
                r[k] = x.clone();
            }
            rows.push(r);
        }
        Some((rows, det, used))
    }
}

/// An upper-triangular basis of a full-rank lattice in `Z^t`, each vector
/// with the combination of columns whose image it is (empty for the zero
/// class).
struct Basis {
    rows: Vec<(Vec<Integer>, Combo)>,
}

impl Basis {
    /// The order `d` of `v` modulo the lattice and `z` with `d·v = Σ z_s
    /// rows_s`.
    fn order(&self, v: &[Integer]) -> Option<(Integer, Vec<Integer>)> {
        let t = self.rows.len();
        let mut y: Vec<Rational> = Vec::with_capacity(t);
        for col in 0..t {
            let mut rest = Rational::from(v[col].clone());
            for (s, ys) in y.iter().enumerate() {
                let u = &self.rows[s].0[col];
                if !u.is_zero() {
                    rest -= Rational::from(ys * u);
                }
            }
            let piv = &self.rows[col].0[col];
            if piv.is_zero() {
                return None;
            }
            y.push(rest / piv.clone());
        }
        let d = y.iter().fold(Integer::from(1), |l, q| l.lcm(q.denom()));
        let z = y
            .iter()
            .map(|q| q.numer() * Integer::from(&d / q.denom()))
            .collect();
        Some((d, z))
    }

    /// Adds `v` (the image of `combo`), keeping the basis triangular.
    fn insert(&mut self, mut v: Vec<Integer>, mut combo: Combo) {
        let t = self.rows.len();
        for j in 0..t {
            if v[j].is_zero() {
                continue;
            }
            let (b, bc) = &self.rows[j];
            let (g, s, u) = <(Integer, Integer, Integer)>::from(b[j].extended_gcd_ref(&v[j]));
            let bj = Integer::from(&b[j] / &g);
            let vj = Integer::from(&v[j] / &g);
            // new row s·b + u·v (pivot g); v ← bj·v − vj·b (entry j zero)
            let nb: Vec<Integer> = b
                .iter()
                .zip(&v)
                .map(|(x, y)| Integer::from(&s * x) + Integer::from(&u * y))
                .collect();
            let nbc = lin(&s, bc, &u, &combo);
            let nv: Vec<Integer> = v
                .iter()
                .zip(b)
                .map(|(y, x)| Integer::from(&bj * y) - Integer::from(&vj * x))
                .collect();
            let nvc = lin(&bj, &combo, &Integer::from(-&vj), bc);
            self.rows[j] = (nb, nbc);
            v = nv;
            combo = nvc;
        }
    }
}

/// `a·x + b·y` for combinations.
fn lin(a: &Integer, x: &Combo, b: &Integer, y: &Combo) -> Combo {
    let mut out = Combo::new();
    for (&k, e) in x {
        *out.entry(k).or_default() += Integer::from(a * e);
    }
    for (&k, e) in y {
        *out.entry(k).or_default() += Integer::from(b * e);
    }
    out.retain(|_, e| !e.is_zero());
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::linalg::det_crt;
    use crate::rng::Rng;

    use crate::linalg::random_rows as random;

    /// The same Hermite form as row-by-row insertion (an independent
    /// computation of the same unique matrix), on random lattices with a
    /// cyclic and with a non-cyclic quotient.
    #[test]
    fn agrees_with_insertion() {
        let mut rng = Rng::new(5);
        let n = 12;
        for round in 0..6 {
            let mut a = random(&mut rng, n, n, 20);
            if round % 2 == 1 {
                // a factor Z/2 × Z/2 on top: double two rows
                for r in a.iter_mut().take(2) {
                    r.iter_mut().for_each(|x| *x *= 2);
                }
            }
            if det_crt(&a) == 0 {
                continue;
            }
            let others = random(&mut rng, 3, n, 20);
            let mut h = Hnf::new(n);
            for r in a.iter().chain(&others) {
                h.insert(r.iter().map(|&x| Integer::from(x)).collect());
            }
            let want = h.finish().unwrap();
            let ch = Characters::new(&a, 4).expect("characters separate");
            assert_eq!(*ch.det(), Integer::from(det_crt(&a).abs_ref()));
            let (rows, det, used) = ch.hermite(n, &others, &|_| false).unwrap();
            assert_eq!(rows, want, "round {round}");
            assert_eq!(used, others.len());
            let d: Integer = (0..n).map(|i| want[i][i].clone()).product();
            assert_eq!(det, d);
        }
    }

    /// Told when the determinant is small enough, the form stops taking
    /// rows, and is still the form of the whole lattice when that
    /// determinant is the whole lattice's.
    #[test]
    fn stops_once_the_determinant_is_enough() {
        let mut rng = Rng::new(8);
        let n = 12;
        let a = random(&mut rng, n, n, 20);
        let others = random(&mut rng, 40, n, 20);
        let mut h = Hnf::new(n);
        for r in a.iter().chain(&others) {
            h.insert(r.iter().map(|&x| Integer::from(x)).collect());
        }
        let want = h.finish().unwrap();
        let whole: Integer = (0..n).map(|i| want[i][i].clone()).product();
        let ch = Characters::new(&a, 4).expect("characters separate");
        let (rows, det, used) = ch.hermite(n, &others, &|d| *d == whole).unwrap();
        assert_eq!((rows, det), (want, whole));
        assert!(used < others.len(), "took all {used} rows");
    }

    /// A quotient `(Z/2)^3 × …` needs at least three characters: asked for
    /// one, more are added until the image has `|det A|` elements.
    #[test]
    fn characters_are_added_until_they_separate() {
        let mut rng = Rng::new(9);
        let n = 8;
        let mut a = random(&mut rng, n, n, 20);
        for r in a.iter_mut().take(3) {
            r.iter_mut().for_each(|x| *x *= 2);
        }
        assert!(det_crt(&a) != 0);
        let ch = Characters::new(&a, 1).expect("separating characters");
        assert!(ch.t() >= 3);
    }
}
