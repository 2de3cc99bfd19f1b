// The panic-free set is the verifier's rule; tests report failures by panicking
// (assertions, unwrap), and test code indexes freely.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]
pub mod cbor_edit;
pub mod corpus;
pub mod field_oracle;
pub mod forge;
pub mod hostile;
pub mod oracle;
pub mod support;
