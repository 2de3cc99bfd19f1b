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
    /// is what sometimes needs more. The first solve also gives `det a`
    /// ([`Solver::det`]).
    pub fn new(a: &[Vec<i64>], t: usize) -> Option<Characters> {
        let n = a.len();
        let solver = Solver::new(a)?;
        let mut ch = Characters {
            chars: Vec::new(),
            det: Integer::new(),
        };
        let mut goal = t.max(1);
        while goal <= MAX_CHARACTERS {
            // the solves are independent: one per thread, kept in order
            let first = ch.chars.len();
            let solved: Vec<Option<(Integer, Vec<Integer>)>> = std::thread::scope(|scope| {
                let handles: Vec<_> = (first..goal)
                    .map(|s| {
                        let solver = &solver;
                        scope.spawn(move || solver.solve(&sign_pattern(n, s as u64)))
                    })
                    .collect();
                handles
                    .into_iter()
                    .map(|h| h.join().ok().flatten())
                    .collect()
            });
            for (s, found) in (first..goal).zip(solved) {
                let (delta, c) = found?;
                if s == 0 {
                    ch.det = Integer::from(solver.det(&delta)?.abs_ref());
                }
                let c = c.into_iter().map(|x| x.rem_euc(&delta)).collect();
                ch.chars.push((delta, c));
            }
            if ch.image_size(n)? == ch.det {
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
                        acc += y * Integer::from(x);
                    }
                }
                acc.rem_euc(d)
            })
            .collect()
    }

    /// The Hermite form of the lattice spanned by `Λ(a)` and `others`
    /// (rows on the same `n` columns), with its determinant.
    pub fn hermite(&self, n: usize, others: &[Vec<i64>]) -> Option<(Matrix, Integer)> {
        // M = ⟨δ_s e_s, images of the other relations⟩: the zero class
        let mut m = self.zero_lattice();
        for r in others {
            m.insert(self.image(r));
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
        Some((rows, det))
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
            let (rows, det) = ch.hermite(n, &others).unwrap();
            assert_eq!(rows, want, "round {round}");
            let d: Integer = (0..n).map(|i| want[i][i].clone()).product();
            assert_eq!(det, d);
        }
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
