//! The Smith normal form with both transforms and their inverses (Cohen,
//! GTM 138, §2.4.4).

use super::matrix::{identity, Matrix};
use rug::ops::DivRounding;
use rug::Integer;

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

/// Generators of the cyclic factors `Z/d_i` with `d_i > 1`: rows of `V^{-1}`
/// reduced modulo the upper triangular `H`. Returns `(d_i, exponents)`.
pub fn cyclic_generators(sm: &Smith, h_g: &[Vec<Integer>]) -> Vec<(Integer, Vec<Integer>)> {
    let r = h_g.len();
    let mut out = Vec::new();
    for (i, di) in sm.diag.iter().enumerate() {
        if *di <= 1 {
            continue;
        }
        let mut xv = sm.v_inv[i].clone();
        for t in 0..r {
            let q = Integer::from((&xv[t]).div_floor(&h_g[t][t]));
            if !q.is_zero() {
                for c in t..r {
                    let s = Integer::from(&q * &h_g[t][c]);
                    xv[c] -= s;
                }
            }
        }
        out.push((di.clone(), xv));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::linalg::matrix::mat_mul;

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
}
