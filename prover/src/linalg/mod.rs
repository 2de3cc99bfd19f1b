//! Linear algebra on relation matrices.
//!
//! - [`sge`]: structured Gaussian elimination with unit pivots, one routine
//!   for both signs of `D` (the row type says whether a row carries the
//!   combination of raw relations it stands for);
//! - [`echelon`]: an integer echelon form that keeps those combinations,
//!   for the columns left when `D > 0` (kernel vectors are units);
//! - [`hnf`]: an incremental Hermite normal form over Z, kept modulo a
//!   known multiple of the determinant (`D < 0`);
//! - [`smith`]: the Smith normal form with both transforms and inverses;
//! - [`modp`]: rank and determinants modulo word primes, to choose rows
//!   and to bound the Hermite form's entries.

pub mod echelon;
pub mod hnf;
pub mod modp;
pub mod sge;
pub mod smith;

pub use hnf::Hnf;
pub use modp::{det_crt, RankModP};
pub use smith::{cyclic_generators, smith, Smith};

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
