//! Integer factorisation for the prover.
//!
//! The prover needs the complete factorisation of discriminants and related
//! numbers. Its output is never trusted: the verifier re-checks every prime
//! and the product. The method is the usual layered one:
//!
//! 1. trial division by the primes below [`TRIAL_DIVISION_BOUND`];
//! 2. a perfect-power check (Pollard's method can return the whole number for
//!    a prime power, so powers are split off first);
//! 3. a probable-prime test of each cofactor (rug's `is_probably_prime`, which
//!    combines Baillie–PSW with Miller–Rabin rounds);
//! 4. Pollard's rho method — J. M. Pollard, "A Monte Carlo method for
//!    factorization", BIT 15 (1975), 331–334 — with Brent's cycle finding and
//!    batched gcds — R. P. Brent, "An improved Monte Carlo factorization
//!    algorithm", BIT 20 (1980), 176–184 — for composite cofactors.
//!
//! The total number of rho iterations (evaluations of `x ↦ x² + c`) is bounded
//! by a caller-supplied budget, so a hard number makes [`factor`] give up with
//! `None` instead of running indefinitely.
//!
//! The pieces (private modules): `complete` (the layered method above),
//! `primes` (the small primes and the probable-prime test), `rho`
//! (Pollard–Brent), `proofs` (primality proofs for the certificate) and
//! `parse` (factor lists given on the command line).

mod complete;
mod parse;
mod primes;
mod proofs;
mod rho;

pub use complete::factor;
pub use parse::{parse_factor_list, MAX_LISTED_FACTORS};
pub use primes::TRIAL_DIVISION_BOUND;
pub use proofs::primality_evidence;
