//! Number fields of degree 3 to 6: the prover's (untrusted) algorithms.

pub mod arith;
pub mod decompose;
pub mod fpfactor;
pub mod maximal;
pub mod relations;
