//! Number fields `K = Q[x]/(F)` of degree 3 to 6 (design note
//! `general-fields.md`).

pub mod roots;
pub mod units;
