//! `classcert`: prove class groups of quadratic orders, imaginary or real
//! (with the fundamental unit and regulator of real ones), and write
//! certificates; show what a certificate claims; run the demo. The
//! command line lives in `cli/`.

#![forbid(unsafe_code)]

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
