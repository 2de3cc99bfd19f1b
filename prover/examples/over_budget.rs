//! Work-budget inputs (issue 12): `over_budget estimate FILE...` prints the
//! verifier's estimate of each certificate's work; `over_budget craft DIR
//! GOLDEN_DIR` writes the hostile inputs of the issue, each edited from an
//! honest golden certificate and re-encoded with a correct digest; `parts
//! FILE` shows how much of the estimate each part of a certificate takes.

// The panic-free set is the verifier's rule; a tool that crafts test inputs
// may stop at the first thing that goes wrong.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{
    decode_document, encode_document, Document, Form, PocklingtonFactor, PrimalityEvidence,
    PrimeIdeal, PrimePower, WitnessGenerator,
};
use classcert_verifier::limits::estimate;
use rug::Integer;

/// An edit of a body that drops one part of it.
type Edit = fn(&mut classcert_format::Body);

fn read(path: &str) -> Document {
    let bytes = std::fs::read(path).expect("readable file");
    decode_document(&bytes).expect("a certificate").document
}

fn write(dir: &str, name: &str, doc: &Document) {
    let (bytes, _) = encode_document(doc).expect("encodable");
    std::fs::write(format!("{dir}/{name}.cert"), &bytes).expect("writable");
    println!("{name}: {} bytes, estimate {}", bytes.len(), shown(doc));
}

/// The estimate in units, or the number it refuses.
fn shown(doc: &Document) -> String {
    match estimate(doc) {
        Ok(units) => format!("{units:.3e} units"),
        Err(why) => format!("refused: {why}"),
    }
}

/// A negative discriminant of `bits` bits, `≡ 1 (mod 4)`.
fn big_d(bits: u32) -> Integer {
    -((Integer::from(1) << (bits - 1)) + 3u32)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args[1] == "estimate" {
        for f in &args[2..] {
            println!("{f}: {}", shown(&read(f)));
        }
        return;
    }
    if args[1] == "parts" {
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
    let (dir, golden) = (&args[2], &args[3]);
    let g = |n: &str| read(&format!("{golden}/{n}.cert"));

    let Document::Relations(mut b) = g("minus-1000003") else {
        panic!()
    };
    b.euler.x = 50_000_000;
    write(dir, "euler-x", &Document::Relations(b));

    let Document::Relations(mut b) = g("unconditional-minus-3299") else {
        panic!()
    };
    b.euler.x = 10_000_000;
    write(dir, "series-terms", &Document::Relations(b));

    // A Pocklington step with 414 listed factors for a 4096-bit number.
    let Document::Relations(mut b) = g("minus-1000003") else {
        panic!()
    };
    let mut q = Integer::from(2);
    let factors = (0..414)
        .map(|_| {
            q.next_prime_mut();
            PocklingtonFactor {
                q: q.clone(),
                e: 1,
                base: Integer::from(3),
                evidence: Box::new(PrimalityEvidence::Bpsw),
            }
        })
        .collect();
    let n = (Integer::from(1) << 4095u32) + 1u32;
    b.maximality = Some(vec![PrimePower {
        prime: n,
        exponent: 1,
        evidence: PrimalityEvidence::Pocklington { factors },
    }]);
    write(dir, "pocklington-414", &Document::Relations(b));

    // 19 witnesses of order 2 over a 3983-bit D.
    let Document::OrderWitness(mut w) = g("witness-minus-1000003") else {
        panic!()
    };
    let d = big_d(3983);
    let c = Integer::from(1 - &d) / 4u32;
    let form = Form {
        a: Integer::from(1),
        b: Integer::from(1),
        c,
    };
    w.order = classcert_format::Order::Quadratic { discriminant: d };
    w.class_number = Integer::from(1) << 19u32;
    w.h_factors = vec![PrimePower {
        prime: Integer::from(2),
        exponent: 19,
        evidence: PrimalityEvidence::Bpsw,
    }];
    w.generators = (0..19)
        .map(|_| WitnessGenerator {
            order: Integer::from(2),
            form: form.clone(),
        })
        .collect();
    write(dir, "socle-19", &Document::OrderWitness(w));

    // A 4096-bit D with a million factor-base entries (2.8 million pass no longer the decoder).
    let Document::Relations(mut b) = g("minus-1000003") else {
        panic!()
    };
    b.order = classcert_format::Order::Quadratic {
        discriminant: big_d(4096),
    };
    let mut p = 2u64;
    b.factor_base = (0..1_000_000)
        .map(|_| {
            p = Integer::from(p).next_prime().to_u64().unwrap();
            PrimeIdeal::QuadraticForm { p, b: 1 }
        })
        .collect();
    write(dir, "factor-base-4096", &Document::Relations(b));

    // An order-witness form with a 4·10^8-bit coefficient.
    let Document::OrderWitness(mut w) = g("witness-minus-1000003") else {
        panic!()
    };
    w.generators[0].form.b = (Integer::from(1) << 400_000_000u32) + 1u32;
    write(dir, "witness-form-huge", &Document::OrderWitness(w));

    // A D > 0 generator exponent of 10^8 bits.
    let Document::Relations(mut b) = g("plus-999997") else {
        panic!()
    };
    b.claim.generators[0].exponents[0] = (Integer::from(1) << 100_000_000u32) + 1u32;
    write(dir, "real-exponent-huge", &Document::Relations(b));
}
