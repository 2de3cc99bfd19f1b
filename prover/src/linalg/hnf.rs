//! An incremental Hermite normal form of the relation lattice over Z,
//! reduced modulo its determinant once it has full rank (Cohen, GTM 138,
//! §2.4.3, after Domich–Kannan–Trotter).

use super::matrix::Matrix;
use rug::ops::DivRounding;
use rug::Integer;

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
                    x.modulo_mut(d); // d > 0, so this is the Euclidean remainder
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
                    // in-place multiply-adds (GMP's addmul/submul), no
                    // temporary per entry: this loop is the Hermite form's
                    // inner loop
                    if v[j].is_divisible(&b[j]) {
                        let q = Integer::from(&v[j] / &b[j]);
                        for (x, y) in v.iter_mut().zip(b.iter()).skip(j) {
                            if !y.is_zero() {
                                *x -= &q * y;
                            }
                        }
                    } else {
                        let (g, s, t) =
                            <(Integer, Integer, Integer)>::from(b[j].extended_gcd_ref(&v[j]));
                        let bj = Integer::from(&b[j] / &g);
                        let vj = Integer::from(&v[j] / &g);
                        let mut nb = Vec::with_capacity(self.k);
                        for (x, y) in v.iter_mut().zip(b.iter()) {
                            let mut n = Integer::from(&s * y);
                            n += &t * &*x;
                            nb.push(n);
                            *x *= &bj;
                            *x -= &vj * y;
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
                        x.modulo_mut(&d);
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
                        ri[c] -= &q * &rj[c];
                    }
                }
            }
        }
        Some(rows)
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

#[cfg(test)]
mod tests {
    use super::*;

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
