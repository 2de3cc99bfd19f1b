//! Number fields `K = Q[x]/(F)` of degree 3 to 6: the prover's (untrusted)
//! algorithms (design note `general-fields.md`).

pub mod arith;
pub mod decompose;
pub mod fpfactor;
pub mod maximal;
pub mod relations;
pub mod roots;
pub mod units;
