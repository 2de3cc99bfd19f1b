//! `classcert`: prove class groups of quadratic orders, imaginary or real
//! (with the fundamental unit and regulator of real ones), and write
//! certificates; show what a certificate claims; run the demo. The
//! command line lives in `cli/`.

#![forbid(unsafe_code)]
// The panic-free set is the verifier's rule; the command line is not the trusted
// base, and a failed invariant there is a bug to report.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
