//! Linear algebra on relation matrices.
//!
//! - [`sge`]: structured Gaussian elimination with unit pivots, one routine
//!   for both signs of `D` (the row type says whether a row carries the
//!   combination of relations it stands for);
//! - [`tracked`]: that elimination for `D > 0` on word-size rows that
//!   record what was subtracted from them, the combinations rebuilt after;
//! - [`echelon`]: an integer echelon form that keeps those combinations,
//!   for the columns left when `D > 0` (kernel vectors are units);
//! - [`derived`]: named intermediate relations, so that those combinations
//!   name earlier rows instead of spelling them out (`D > 0`);
//! - [`hnf`]: an incremental Hermite normal form over Z, kept modulo a
//!   known multiple of the determinant (`D < 0`);
//! - [`smith`](mod@smith): the Smith normal form with both transforms and inverses;
//! - [`cokernel`]: the Hermite form read off characters of the cokernel,
//!   for dense blocks too wide for row insertion (`D < 0`);
//! - [`dixon`]: exact determinants by p-adic lifting (a few word primes
//!   instead of dozens);
//! - [`modp`]: rank and determinants modulo word primes, to choose rows
//!   and to bound the Hermite form's entries;
//! - [`matrix`]: the dense matrix type the Hermite and Smith forms share.

pub mod cokernel;
pub mod derived;
pub mod dixon;
pub mod echelon;
pub mod hnf;
pub mod lll;
pub mod matrix;
pub mod modp;
pub mod sge;
pub mod shortcomb;
pub mod smith;
pub mod tracked;

pub use hnf::Hnf;
pub use matrix::{identity, mat_mul, Matrix};
pub use modp::{det_crt, RankModP};
pub use smith::{cyclic_generators, smith, Smith};

/// `rows × n` integers drawn uniformly from `[-spread, spread]` (tests).
#[cfg(test)]
pub(crate) fn random_rows(
    rng: &mut crate::rng::Rng,
    rows: usize,
    n: usize,
    spread: u64,
) -> Vec<Vec<i64>> {
    (0..rows)
        .map(|_| {
            (0..n)
                .map(|_| rng.below(2 * spread + 1) as i64 - spread as i64)
                .collect()
        })
        .collect()
}
