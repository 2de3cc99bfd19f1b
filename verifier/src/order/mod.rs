//! Step 0: the order itself (`docs/certificates.md`, section 0).
//!
//! A valid discriminant ([`discriminant`]), the primes of the conductor up
//! to the trial-division bound ([`conductor`]), and, when the certificate
//! claims the maximal order, the factorisation of `|D|` with primality
//! evidence that shows `D` fundamental ([`maximality`]).

mod conductor;
mod discriminant;
pub(crate) mod field;
mod maximality;

pub(crate) use conductor::{check_conductor, ConductorOk};
pub(crate) use discriminant::{check_discriminant, OrderOk};
pub(crate) use maximality::{check_factorisation, check_maximality, Factorisation, MaximalityOk};
