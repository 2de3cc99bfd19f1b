//! Exact linear algebra over Z with rug: an incremental Hermite normal form
//! of the relation lattice (reduced modulo its determinant once it has full
//! rank; Cohen, GTM 138, §2.4.3, after Domich–Kannan–Trotter), and a Smith
//! normal form with both transforms and their inverses (Cohen §2.4.4).

use rug::ops::{DivRounding, RemRounding};
use rug::Integer;

pub type Matrix = Vec<Vec<Integer>>;

pub fn identity(n: usize) -> Matrix {
    (0..n)
        .map(|i| (0..n).map(|j| Integer::from(i == j)).collect())
        .collect()
}

pub fn mat_mul(a: &Matrix, b: &Matrix) -> Matrix {
    let n = a.len();
    let m = b.first().map_or(0, |r| r.len());
    let mut out = vec![vec![Integer::new(); m]; n];
    for i in 0..n {
        for (k, aik) in a[i].iter().enumerate() {
            if aik.is_zero() {
                continue;
            }
            for j in 0..m {
                out[i][j] += Integer::from(aik * &b[k][j]);
            }
        }
    }
    out
}

/// Upper-triangular basis of a lattice in `Z^k`, built one vector at a time.
#[derive(Debug, Clone)]
pub struct Hnf {
    pub k: usize,
    /// `rows[j]` has its leading (positive) entry at column `j`.
    pub rows: Vec<Option<Vec<Integer>>>,
    /// Product of the pivots once every row is present (`ΔZ^k ⊆ L`).
    det: Option<Integer>,
    /// A known `M` with `M·Z^k` inside the lattice, if any.
    modulus: Option<Integer>,
}

impl Hnf {
    pub fn new(k: usize) -> Hnf {
        Hnf {
            k,
            rows: vec![None; k],
            det: if k == 0 { Some(Integer::from(1)) } else { None },
            modulus: None,
        }
    }

    pub fn full_rank(&self) -> bool {
        self.det.is_some()
    }

    pub fn det(&self) -> Option<&Integer> {
        self.det.as_ref()
    }

    /// The smallest known `M` with `M·Z^k ⊆ L`.
    fn reducer(&self) -> Option<&Integer> {
        match (&self.det, &self.modulus) {
            (Some(d), Some(m)) => Some(if d < m { d } else { m }),
            (Some(d), None) => Some(d),
            (None, m) => m.as_ref(),
        }
    }

    fn reduce_mod_det(&self, v: &mut [Integer]) {
        if let Some(d) = self.reducer() {
            for x in v.iter_mut() {
                if x.significant_bits() >= d.significant_bits() {
                    *x = Integer::from((&*x).rem_euc(d));
                }
            }
        }
    }

    /// Adds `v` to the lattice.
    pub fn insert(&mut self, mut v: Vec<Integer>) {
        debug_assert_eq!(v.len(), self.k);
        self.reduce_mod_det(&mut v);
        for j in 0..self.k {
            if v[j].is_zero() {
                continue;
            }
            match self.rows[j].take() {
                None => {
                    if v[j] < 0 {
                        for x in v.iter_mut() {
                            *x = -std::mem::take(x);
                        }
                    }
                    self.rows[j] = Some(v);
                    self.update_det();
                    return;
                }
                Some(mut b) => {
                    if v[j].is_divisible(&b[j]) {
                        let q = Integer::from(&v[j] / &b[j]);
                        for (x, y) in v.iter_mut().zip(b.iter()).skip(j) {
                            *x -= Integer::from(&q * y);
                        }
                    } else {
                        let (g, s, t) =
                            <(Integer, Integer, Integer)>::from(b[j].extended_gcd_ref(&v[j]));
                        let bj = Integer::from(&b[j] / &g);
                        let vj = Integer::from(&v[j] / &g);
                        let mut nb = Vec::with_capacity(self.k);
                        for (x, y) in v.iter_mut().zip(b.iter()) {
                            nb.push(Integer::from(&s * y) + Integer::from(&t * &*x));
                            *x = Integer::from(&bj * &*x) - Integer::from(&vj * y);
                        }
                        if nb[j] < 0 {
                            for x in nb.iter_mut() {
                                *x = -std::mem::take(x);
                            }
                        }
                        b = nb;
                        self.rows[j] = Some(b);
                        self.update_det();
                        self.reduce_mod_det(&mut v);
                        continue;
                    }
                    self.rows[j] = Some(b);
                    self.reduce_mod_det(&mut v);
                }
            }
        }
    }

    fn update_det(&mut self) {
        let mut d = Integer::from(1);
        for r in self.rows.iter().enumerate() {
            match r {
                (j, Some(row)) => d *= &row[j],
                _ => {
                    self.det = None;
                    return;
                }
            }
        }
        self.det = Some(d);
        if let Some(d) = self.reducer().cloned() {
            for row in self.rows.iter_mut().flatten() {
                for x in row.iter_mut() {
                    if x.significant_bits() > d.significant_bits() {
                        *x = Integer::from((&*x).rem_euc(&d));
                    }
                }
            }
        }
    }

    /// The reduced Hermite form of the lattice (full rank required): each
    /// entry above a pivot is reduced into `[0, pivot)`. Reducing rows
    /// modulo `Δ` kept the lattice: a full-rank lattice of determinant `Δ`
    /// contains `ΔZ^k`.
    pub fn finish(&self) -> Option<Matrix> {
        self.det.as_ref()?;
        let h = self.clone();
        let mut rows: Matrix = h.rows.into_iter().collect::<Option<Vec<_>>>()?;
        let k = self.k;
        // bottom-up: rows below i are already reduced, so reducing row i
        // column by column from the left leaves every entry in [0, pivot)
        for i in (0..k).rev() {
            for j in i + 1..k {
                if rows[i][j].is_zero() {
                    continue;
                }
                let q = Integer::from((&rows[i][j]).div_floor(&rows[j][j]));
                if q.is_zero() {
                    continue;
                }
                let (top, bottom) = rows.split_at_mut(j);
                let (ri, rj) = (&mut top[i], &bottom[0]);
                for c in j..k {
                    if !rj[c].is_zero() {
                        let t = Integer::from(&q * &rj[c]);
                        ri[c] -= t;
                    }
                }
            }
        }
        Some(rows)
    }
}

/// Smith normal form: returns `(U, U', V, V', diag)` with `U A V = diag`,
/// `U U' = V V' = I`, `d_i | d_{i+1}`, `d_i > 0`, for square nonsingular `A`.
pub struct Smith {
    pub u: Matrix,
    pub u_inv: Matrix,
    pub v: Matrix,
    pub v_inv: Matrix,
    pub diag: Vec<Integer>,
}

impl From<Smith> for classcert_format::Smith {
    fn from(sm: Smith) -> Self {
        classcert_format::Smith {
            u: sm.u,
            u_inv: sm.u_inv,
            v: sm.v,
            v_inv: sm.v_inv,
            diagonal: sm.diag,
        }
    }
}

pub fn smith(a: &Matrix) -> Option<Smith> {
    let n = a.len();
    let mut a = a.clone();
    let mut u = identity(n);
    let mut ui = identity(n);
    let mut v = identity(n);
    let mut vi = identity(n);
    // row_i -= q row_t
    fn row_sub(a: &mut Matrix, u: &mut Matrix, ui: &mut Matrix, i: usize, t: usize, q: &Integer) {
        let n = a.len();
        for c in 0..n {
            let x = Integer::from(q * &a[t][c]);
            a[i][c] -= x;
            let y = Integer::from(q * &u[t][c]);
            u[i][c] -= y;
        }
        for r in 0..n {
            let z = Integer::from(q * &ui[r][i]);
            ui[r][t] += z;
        }
    }
    // col_j -= q col_t
    fn col_sub(a: &mut Matrix, v: &mut Matrix, vi: &mut Matrix, j: usize, t: usize, q: &Integer) {
        let n = a.len();
        for r in 0..n {
            let x = Integer::from(q * &a[r][t]);
            a[r][j] -= x;
            let y = Integer::from(q * &v[r][t]);
            v[r][j] -= y;
        }
        for c in 0..n {
            let z = Integer::from(q * &vi[j][c]);
            vi[t][c] += z;
        }
    }
    for t in 0..n {
        loop {
            // smallest nonzero entry of the remaining block
            let mut best: Option<(usize, usize)> = None;
            for i in t..n {
                for j in t..n {
                    if !a[i][j].is_zero() {
                        let better = match best {
                            None => true,
                            Some((bi, bj)) => a[i][j].cmp_abs(&a[bi][bj]).is_lt(),
                        };
                        if better {
                            best = Some((i, j));
                        }
                    }
                }
            }
            let (bi, bj) = best?;
            if bi != t {
                a.swap(bi, t);
                u.swap(bi, t);
                for r in ui.iter_mut() {
                    r.swap(bi, t);
                }
            }
            if bj != t {
                for r in a.iter_mut() {
                    r.swap(bj, t);
                }
                for r in v.iter_mut() {
                    r.swap(bj, t);
                }
                vi.swap(bj, t);
            }
            let p = a[t][t].clone();
            let mut clean = true;
            for i in t + 1..n {
                if !a[i][t].is_zero() {
                    let q = Integer::from((&a[i][t]).div_floor(&p));
                    row_sub(&mut a, &mut u, &mut ui, i, t, &q);
                    if !a[i][t].is_zero() {
                        clean = false;
                    }
                }
            }
            for j in t + 1..n {
                if !a[t][j].is_zero() {
                    let q = Integer::from((&a[t][j]).div_floor(&p));
                    col_sub(&mut a, &mut v, &mut vi, j, t, &q);
                    if !a[t][j].is_zero() {
                        clean = false;
                    }
                }
            }
            if !clean {
                continue;
            }
            // divisibility: p must divide every remaining entry
            let mut fix = None;
            'outer: for i in t + 1..n {
                for j in t + 1..n {
                    if !a[i][j].is_divisible(&p) {
                        fix = Some(i);
                        break 'outer;
                    }
                }
            }
            match fix {
                Some(i) => {
                    // row_t += row_i
                    let m1 = Integer::from(-1);
                    row_sub(&mut a, &mut u, &mut ui, t, i, &m1);
                }
                None => break,
            }
        }
        if a[t][t] < 0 {
            for c in 0..n {
                a[t][c] = -std::mem::take(&mut a[t][c]);
                u[t][c] = -std::mem::take(&mut u[t][c]);
            }
            for r in ui.iter_mut() {
                r[t] = -std::mem::take(&mut r[t]);
            }
        }
    }
    let diag = (0..n).map(|i| a[i][i].clone()).collect();
    Some(Smith {
        u,
        u_inv: ui,
        v,
        v_inv: vi,
        diag,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(rows: &[&[i64]]) -> Matrix {
        rows.iter()
            .map(|r| r.iter().map(|&x| Integer::from(x)).collect())
            .collect()
    }

    #[test]
    fn smith_of_small_matrices() {
        // diag(2, 3) ~ diag(1, 6) (common practice: Z/2 x Z/3 = Z/6)
        for a in [
            m(&[&[2, 0], &[0, 3]]),
            m(&[&[4, 6], &[2, 9]]),
            m(&[&[6, 4, 2], &[0, 3, 9], &[1, 1, 5]]),
        ] {
            let s = smith(&a).unwrap();
            let n = a.len();
            assert_eq!(mat_mul(&s.u, &s.u_inv), identity(n));
            assert_eq!(mat_mul(&s.v, &s.v_inv), identity(n));
            let d = mat_mul(&mat_mul(&s.u, &a), &s.v);
            for i in 0..n {
                for j in 0..n {
                    if i != j {
                        assert!(d[i][j].is_zero());
                    }
                }
                assert_eq!(d[i][i], s.diag[i]);
                if i + 1 < n {
                    assert!(s.diag[i + 1].is_divisible(&s.diag[i]));
                }
            }
        }
    }

    #[test]
    fn hnf_determinant_is_lattice_index() {
        let mut h = Hnf::new(3);
        for v in [[2, 4, 6], [0, 3, 3], [1, 1, 1], [5, 0, 5], [0, 0, 7]] {
            h.insert(v.iter().map(|&x| Integer::from(x)).collect());
        }
        let rows = h.finish().unwrap();
        let det: Integer = (0..3).map(|i| rows[i][i].clone()).product();
        // index of the lattice spanned by these rows, by hand: gcd of 3x3 minors = 1
        assert_eq!(det, 1);
    }
}

#[cfg(test)]
mod more_tests {
    use super::*;

    #[test]
    fn hnf_small_full_rank() {
        let mut h = Hnf::new(2);
        h.insert(vec![Integer::from(2), Integer::from(0)]);
        h.insert(vec![Integer::from(1), Integer::from(1)]);
        assert!(!h.full_rank() || h.det().is_some());
        h.insert(vec![Integer::from(0), Integer::from(1)]);
        assert!(h.full_rank(), "{:?}", h.rows);
        assert_eq!(h.det().cloned(), Some(Integer::from(1)));
    }
}

impl Hnf {
    /// A basis that starts as `M·Z^k`: valid when `M·Z^k` lies in the
    /// lattice to be computed (e.g. `M` is the determinant of a full-rank
    /// set of its vectors). Entries then stay below `M` throughout, which
    /// avoids the growth of the plain incremental method.
    pub fn with_modulus(k: usize, m: &Integer) -> Hnf {
        let mut rows = Vec::with_capacity(k);
        for j in 0..k {
            let mut r = vec![Integer::new(); k];
            r[j] = m.clone();
            rows.push(Some(r));
        }
        let mut h = Hnf {
            k,
            rows,
            det: None,
            modulus: Some(m.clone()),
        };
        h.update_det();
        h
    }
}

fn mul_mod(a: u64, b: u64, p: u64) -> u64 {
    ((a as u128 * b as u128) % p as u128) as u64
}

fn inv_mod(a: u64, p: u64) -> u64 {
    // p prime
    let mut r = 1u64;
    let mut b = a % p;
    let mut e = p - 2;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, b, p);
        }
        b = mul_mod(b, b, p);
        e >>= 1;
    }
    r
}

fn to_mod(x: i64, p: u64) -> u64 {
    x.rem_euclid(p as i64) as u64
}

/// Echelon basis modulo a word prime, for picking independent rows.
pub struct RankModP {
    p: u64,
    k: usize,
    rows: Vec<Option<Vec<u64>>>,
    pub rank: usize,
}

impl RankModP {
    pub fn new(k: usize, p: u64) -> RankModP {
        RankModP {
            p,
            k,
            rows: vec![None; k],
            rank: 0,
        }
    }

    /// True if `v` is independent of the rows seen so far (and keeps it).
    pub fn add(&mut self, v: &[i64]) -> bool {
        let p = self.p;
        let mut w: Vec<u64> = v.iter().map(|&x| to_mod(x, p)).collect();
        for j in 0..self.k {
            if w[j] == 0 {
                continue;
            }
            match &self.rows[j] {
                Some(b) => {
                    let f = w[j];
                    for c in j..self.k {
                        w[c] = (w[c] + p - mul_mod(f, b[c], p)) % p;
                    }
                }
                None => {
                    let inv = inv_mod(w[j], p);
                    for x in w.iter_mut() {
                        *x = mul_mod(*x, inv, p);
                    }
                    self.rows[j] = Some(w);
                    self.rank += 1;
                    return true;
                }
            }
        }
        false
    }
}

/// Montgomery arithmetic modulo an odd `p < 2^62` (P. L. Montgomery,
/// "Modular multiplication without trial division", Math. Comp. 44 (1985)).
struct Mont {
    p: u64,
    /// `-p^{-1} mod 2^64`
    pinv: u64,
    /// `2^128 mod p`
    r2: u64,
}

impl Mont {
    fn new(p: u64) -> Mont {
        let mut inv: u64 = 1;
        for _ in 0..6 {
            inv = inv.wrapping_mul(2u64.wrapping_sub(p.wrapping_mul(inv)));
        }
        let r = ((1u128 << 64) % p as u128) as u64;
        let r2 = ((r as u128 * r as u128) % p as u128) as u64;
        Mont {
            p,
            pinv: inv.wrapping_neg(),
            r2,
        }
    }

    fn redc(&self, t: u128) -> u64 {
        let m = (t as u64).wrapping_mul(self.pinv);
        let u = ((t + m as u128 * self.p as u128) >> 64) as u64;
        if u >= self.p {
            u - self.p
        } else {
            u
        }
    }

    fn mul(&self, a: u64, b: u64) -> u64 {
        self.redc(a as u128 * b as u128)
    }

    fn to(&self, a: u64) -> u64 {
        self.mul(a, self.r2)
    }

    fn from(&self, a: u64) -> u64 {
        self.redc(a as u128)
    }
}

fn det_mod_p(m: &[Vec<i64>], p: u64) -> u64 {
    let n = m.len();
    let mt = Mont::new(p);
    let mut a: Vec<Vec<u64>> = m
        .iter()
        .map(|r| r.iter().map(|&x| mt.to(to_mod(x, p))).collect())
        .collect();
    let mut det = mt.to(1);
    for c in 0..n {
        let Some(piv) = (c..n).find(|&r| a[r][c] != 0) else {
            return 0;
        };
        if piv != c {
            a.swap(piv, c);
            det = (p - det) % p;
        }
        det = mt.mul(det, a[c][c]);
        let inv = mt.to(inv_mod(mt.from(a[c][c]), p));
        let (top, bottom) = a.split_at_mut(c + 1);
        let pivot_row = &top[c];
        for row in bottom.iter_mut() {
            if row[c] == 0 {
                continue;
            }
            let f = mt.mul(row[c], inv);
            for (x, &y) in row[c..].iter_mut().zip(pivot_row[c..].iter()) {
                let t = mt.mul(f, y);
                *x = if *x >= t { *x - t } else { *x + p - t };
            }
        }
    }
    mt.from(det)
}

/// The determinant of a square integer matrix, by Gaussian elimination
/// modulo word primes and the Chinese remainder theorem, up to twice
/// Hadamard's bound.
pub fn det_crt(m: &[Vec<i64>]) -> Integer {
    let mut bound = Integer::from(1);
    for r in m {
        let s: Integer = r.iter().map(|&x| Integer::from(x) * x).sum();
        // ceil(sqrt(s)) >= row norm
        let root = Integer::from(s.sqrt_ref()) + 1u32;
        bound *= root;
    }
    bound <<= 1u32;
    let mut modulus = Integer::from(1);
    let mut value = Integer::new();
    let mut cand: u64 = (1u64 << 62) - 1;
    while modulus <= bound {
        while Integer::from(cand).is_probably_prime(30) == rug::integer::IsPrime::No {
            cand -= 2;
        }
        let p = cand;
        cand -= 2;
        let r = det_mod_p(m, p);
        // x ≡ value (mod modulus), x ≡ r (mod p)
        let pm = Integer::from(p);
        let diff = (Integer::from(r) - &value).rem_euc(&pm);
        let inv = Integer::from(modulus.invert_ref(&pm).expect("coprime"));
        let t = (diff * inv).rem_euc(&pm);
        value += Integer::from(&modulus * &t);
        modulus *= &pm;
    }
    let half = Integer::from(&modulus >> 1u32);
    if value > half {
        value -= &modulus;
    }
    value
}

#[cfg(test)]
mod det_tests {
    use super::*;

    #[test]
    fn det_small() {
        let m = vec![vec![2, 1, 0], vec![1, 3, 1], vec![0, 1, 4]];
        // 2(12-1) - 1(4-0) = 18 (by hand)
        assert_eq!(det_crt(&m), 18);
        let s = vec![vec![0, 1], vec![1, 0]];
        assert_eq!(det_crt(&s), -1);
    }
}

#[cfg(test)]
mod reduce_tests {
    use super::*;

    #[test]
    fn finished_rows_are_reduced() {
        // random lattice: every entry above a pivot must end in [0, pivot)
        let mut x: u64 = 12345;
        let mut next = || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            (x % 7) as i64 - 3
        };
        let k = 12;
        let mut h = Hnf::with_modulus(k, &Integer::from(1_000_003u32 * 97));
        for _ in 0..40 {
            h.insert((0..k).map(|_| Integer::from(next())).collect());
        }
        let rows = h.finish().unwrap();
        for i in 0..k {
            for j in 0..k {
                if j < i {
                    assert!(rows[i][j].is_zero());
                } else if j > i {
                    assert!(rows[i][j] >= 0 && rows[i][j] < rows[j][j], "({i},{j})");
                }
            }
        }
    }
}
