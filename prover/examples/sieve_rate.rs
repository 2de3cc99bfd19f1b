//! Measures the sieve's yield for one discriminant and one parameter
//! choice (for tuning `Params::for_discriminant`, and `Params::for_real`
//! when `D > 0`):
//!   sieve_rate D ROUNDS [PRIMES M [BOUND]]
//! prints families, full and partial values found and combined relations
//! per second of one thread. The factor base reaches Bach's bound
//! `6 log² |D|`, or BOUND when given (to try sieving past it).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]
use classcert_prover::fb::FactorBase;
use classcert_prover::relations::siqs::{Collector, Params, Siqs, FAMILIES_PER_ROUND};
use classcert_verifier::math::primes_up_to;
use rug::Integer;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let d: Integer = args[0].parse().expect("D");
    let rounds: u64 = args[1].parse().expect("rounds");
    let l = d.significant_bits() as f64 * std::f64::consts::LN_2;
    let bound = args
        .get(4)
        .map(|b| b.parse().expect("bound"))
        .unwrap_or((6.0 * l * l) as u64);
    let fb = FactorBase::new(&d, &primes_up_to(bound), bound, &[]);
    let real = d > 0;
    let mut params = if real {
        Params::for_real(&d, fb.len())
    } else {
        Params::for_discriminant(&d, fb.len())
    };
    if args.len() >= 4 {
        let base = Params {
            primes: args[2].parse().expect("primes"),
            m: args[3].parse().expect("m"),
            ..params.clone()
        };
        // a and s follow m as in for_discriminant and for_real
        let half = d.significant_bits() as f64 / 2.0;
        let a_bits = if real {
            half - 0.5 - (base.m as f64).log2()
        } else {
            half - (2.0 * base.m as f64).log2()
        }
        .max(8.0);
        params = Params {
            a_bits: a_bits.round() as u32,
            s: ((a_bits / 11.0).round() as u32).max(2),
            ..base
        };
    }
    let siqs = Siqs::new(&d, &fb, params.clone(), 1);
    let mut c = Collector::new();
    let start = std::time::Instant::now();
    for r in 0..rounds {
        let found = siqs.round(r * FAMILIES_PER_ROUND, FAMILIES_PER_ROUND, 1);
        c.absorb(&siqs, found);
    }
    let secs = start.elapsed().as_secs_f64();
    let mut rels = 0;
    while c.pop().is_some() {
        rels += 1;
    }
    println!(
        "{params:?} n={} : {:.1} s, fulls {:.2}/s, partials {:.2}/s, relations {:.2}/s",
        fb.len(),
        secs,
        c.fulls as f64 / secs,
        c.partial_count as f64 / secs,
        rels as f64 / secs
    );
}
