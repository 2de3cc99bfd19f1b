//! Prints what a certificate holds, for the benchmark table: factor-base
//! size, eliminations, raw relations (D > 0), rows of the dense block.
//!   cert_stats FILE   ->   "<fb> <eliminations> <raw> <block>"

// The panic-free set is the verifier's rule; a benchmark may stop at the first
// thing that goes wrong.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{decode_document, Document};

fn main() {
    let path = std::env::args().nth(1).expect("usage: cert_stats FILE");
    let bytes = std::fs::read(&path).expect("readable file");
    let doc = decode_document(&bytes).expect("a certificate");
    match doc.document {
        Document::Relations(b) => println!(
            "{} {} {} {}",
            b.factor_base.len(),
            b.lattice.eliminations.len(),
            b.lattice.raw_relations.as_ref().map_or(0, |r| r.len()),
            b.lattice.generators.len()
        ),
        Document::OrderWitness(_) => println!("0 0 0 0"),
        Document::Field(b) => println!(
            "{} {} {} {}",
            b.factor_base.len(),
            b.lattice.eliminations.len(),
            b.lattice.raw_relations.as_ref().map_or(0, |r| r.len()),
            b.lattice.generators.len()
        ),
    }
}
