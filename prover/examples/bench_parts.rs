//! Times the parts of an order-witness check at a given size (issue 4):
//! compositions of reduced forms of a `DIGITS`-digit discriminant, the
//! Euler product at the cut-off `X` whose error term is at most 0.2, and
//! the verification of primality proofs of 256-bit primes (N - 1 and
//! N + 1). Prints a Markdown table.
//!
//!   cargo run --release --example bench_parts -- 155
//!
//! The discriminant is D = -4p for the first prime p ≡ 1 (mod 4) above
//! 2.5·10^(DIGITS-2), as in `bench_d`; the forms are powers of a prime form.

// The panic-free set is the verifier's rule; a benchmark may stop at the first
// thing that goes wrong.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]
use classcert_prover::factor::primality_evidence;
use classcert_prover::setup::choose_x;
use classcert_verifier::math::euler;
use classcert_verifier::math::primality::{check, Used};
use classcert_verifier::math::Form;
use classcert_verifier::math::Interval;
use classcert_verifier::math::{kronecker_prime, primes_up_to};
use rug::integer::IsPrime;
use rug::Integer;
use std::time::Instant;

fn first_prime_1_mod_4_above(mut p: Integer) -> Integer {
    loop {
        p += 1u32;
        if p.mod_u(4) == 1 && p.is_probably_prime(40) != IsPrime::No {
            return p;
        }
    }
}

/// A prime N = 2·∏ q + 1 (or 4·∏ q - 1 when `plus`) of at least `bits`
/// bits, with the small primes q taken in order (deterministic).
fn smooth_prime(bits: u32, plus: bool) -> Integer {
    let small = primes_up_to(100_000);
    for start in 1.. {
        let mut n = Integer::from(if plus { 4 } else { 2 });
        for &q in small.iter().skip(start) {
            if n.significant_bits() >= bits {
                break;
            }
            n *= q;
        }
        if plus {
            n -= 1;
        } else {
            n += 1;
        }
        if n.is_probably_prime(40) != IsPrime::No {
            return n;
        }
    }
    unreachable!()
}

fn main() {
    let digits: u32 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(155);
    let p =
        first_prime_1_mod_4_above(Integer::from(Integer::u_pow_u(10, digits - 2)) * 5u32 / 2u32);
    let d = Integer::from(-4) * &p;
    let abs_d = Integer::from(d.abs_ref());
    println!("| part | size | count | total s | per item |");
    println!("|---|---|---|---|---|");

    // compositions: squarings and products of reduced forms
    let q = primes_up_to(1000)
        .into_iter()
        .find(|&q| q > 2 && kronecker_prime(&d, q) == 1)
        .expect("a split prime");
    let b = {
        let qi = Integer::from(q);
        let r = (0..q)
            .find(|&b| {
                let bb = Integer::from(b * b) - &d;
                bb.is_divisible(&Integer::from(4 * q)) && (b % 2 == 1) == d.is_odd()
            })
            .or_else(|| {
                (0..2 * q).find(|&b| {
                    let bb = Integer::from(b * b) - &d;
                    bb.is_divisible(&(Integer::from(4) * &qi))
                })
            })
            .expect("b with b^2 = D mod 4q");
        Integer::from(r)
    };
    let mut g = Form::new(Integer::from(q), b, &d)
        .expect("a prime form")
        .reduce()
        .expect("reduces");
    // move to a generic element first
    for _ in 0..64 {
        g = g.square().expect("squares");
    }
    let n_ops = 2000;
    let t = Instant::now();
    let mut x = g.clone();
    for i in 0..n_ops {
        x = if i % 2 == 0 {
            x.square().expect("squares")
        } else {
            x.compose(&g).expect("composes")
        };
    }
    let comp = t.elapsed().as_secs_f64();
    println!(
        "| composition + reduction | D of {digits} digits | {n_ops} | {comp:.3} | {:.1} µs |",
        comp / f64::from(n_ops) * 1e6
    );

    // the Euler product at the cut-off whose error term is at most 0.2
    let x_cut = choose_x(&abs_d, 0.2);
    let t = Instant::now();
    let primes = primes_up_to(x_cut);
    let chi = |p: u64| kronecker_prime(&d, p);
    let ld = Interval::int(&abs_d).ln().expect("log");
    let res = euler::compute(x_cut, &primes, &chi, &[x_cut], &ld).expect("Euler product");
    let eul = t.elapsed().as_secs_f64();
    println!(
        "| Euler product (sieve included) | X = {x_cut}, E = {:.3} | 1 | {eul:.3} | - |",
        res.error.hi.to_f64()
    );

    // primality proofs of 256-bit primes, both kinds
    for (plus, name) in [(false, "N - 1 (Pocklington)"), (true, "N + 1 (Morrison)")] {
        let n = smooth_prime(256, plus);
        let ev = primality_evidence(&n, 1_000_000);
        let reps = 20;
        let t = Instant::now();
        for _ in 0..reps {
            check(&n, &ev, 0, &mut Used::default()).expect("the proof verifies");
        }
        let s = t.elapsed().as_secs_f64();
        println!(
            "| primality proof, {name} | {} bits | {reps} | {s:.3} | {:.2} ms |",
            n.significant_bits(),
            s / f64::from(reps) * 1e3
        );
    }
}
