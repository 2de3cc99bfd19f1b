//! The work budget's estimate, for calibrating it: `over_budget estimate
//! FILE...` prints the verifier's estimate of each certificate's work;
//! `over_budget parts FILE` shows how much of the estimate each part of a
//! certificate takes. (The hostile inputs that ask for the most work are
//! written by `hostile-inputs`, package `classcert-tests`.)

// The panic-free set is the verifier's rule; a tool that crafts test inputs
// may stop at the first thing that goes wrong.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{decode_document, Document};
use classcert_verifier::limits::estimate;

/// An edit of a body that drops one part of it.
type Edit = fn(&mut classcert_format::Body);

fn read(path: &str) -> Document {
    let bytes = std::fs::read(path).expect("readable file");
    decode_document(&bytes).expect("a certificate").document
}

/// The estimate in units, or the number it refuses.
fn shown(doc: &Document) -> String {
    match estimate(doc) {
        Ok(units) => format!("{units:.3e} units"),
        Err(why) => format!("refused: {why}"),
    }
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("estimate") {
        for f in &args[2..] {
            println!("{f}: {}", shown(&read(f)));
        }
        return;
    }
    if args.get(1).map(String::as_str) == Some("parts") {
        // the estimate without each part in turn, to see where it comes from
        let Document::Relations(b) = read(&args[2]) else {
            panic!()
        };
        let whole = estimate(&Document::Relations(b.clone())).unwrap();
        let parts: [(&str, Edit); 7] = [
            ("euler", |c| c.euler.x = 0),
            ("factor base", |c| c.factor_base.clear()),
            ("eliminations", |c| c.lattice.eliminations.clear()),
            ("raw+derived", |c| {
                c.lattice.raw_relations = None;
                c.lattice.derived_relations = None
            }),
            ("units", |c| c.units = None),
            ("element eliminations", |c| {
                c.lattice.eliminations.retain(|e| {
                    !matches!(
                        e.relation.witness,
                        classcert_format::Witness::Element { .. }
                    )
                })
            }),
            ("smith and rows", |c| {
                c.lattice.relations.clear();
                c.lattice.smith.u.clear();
                c.lattice.smith.v.clear();
                c.lattice.smith.u_inv.clear();
                c.lattice.smith.v_inv.clear();
            }),
        ];
        println!("whole {whole:.3e}");
        let (mut forms, mut elements, mut big, mut bits) = (0, 0, 0, 0u64);
        for e in &b.lattice.eliminations {
            match e.relation.witness {
                classcert_format::Witness::Element { .. } => elements += 1,
                _ => forms += 1,
            }
            for (_, x) in &e.relation.entries {
                bits += u64::from(x.significant_bits());
                big += usize::from(x.significant_bits() >= 24);
            }
        }
        let raw = b.lattice.raw_relations.iter().flatten();
        let (mut n, mut xw, mut ent, mut ebits) = (0.0, 0.0, 0.0, 0.0);
        for r in raw.chain(b.lattice.eliminations.iter().map(|e| &e.relation)) {
            if let classcert_format::Witness::Element { x, y } = &r.witness {
                n += 1.0;
                xw += f64::from(x.significant_bits() + y.significant_bits());
                ent += r.entries.len() as f64;
                ebits += r
                    .entries
                    .iter()
                    .map(|(_, e)| f64::from(e.significant_bits()))
                    .sum::<f64>();
            }
        }
        println!(
            "elements: {n}, mean bits of x and y {:.0}, entries {:.1}, exponent bits {:.1}",
            xw / n,
            ent / n,
            ebits / n
        );
        println!("eliminations: {forms} by forms, {elements} by elements, {big} exponents of 24 bits or more, {bits} exponent bits");
        for (name, f) in parts {
            let mut c = b.clone();
            f(&mut c);
            let e = estimate(&Document::Relations(c)).unwrap();
            println!("{name}: {:.3e}", whole - e);
        }
        return;
    }
    eprintln!("usage: over_budget estimate FILE... | over_budget parts FILE");
    std::process::exit(2);
}
