//! Dense integer matrices, shared by the Hermite and Smith forms.

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
