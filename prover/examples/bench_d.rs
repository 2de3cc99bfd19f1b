//! Prints the benchmark discriminant with the given number of digits.
//!   bench_d N        D = -4p for the first prime p ≡ 1 (mod 4) above
//!                    2.5·10^(N-2): N digits, fundamental
//!   bench_d N real   D = p for the first prime p ≡ 1 (mod 4) above
//!                    2.5·10^(N-1): N digits, a real quadratic field of prime
//!                    discriminant
//! (arbitrary, reproducible choices).

// The panic-free set is the verifier's rule; a benchmark may stop at the first
// thing that goes wrong.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]
use rug::Integer;

fn main() {
    let mut args = std::env::args().skip(1);
    let n: u32 = args.next().and_then(|s| s.parse().ok()).unwrap_or(20);
    let real = args.next().as_deref() == Some("real");
    let shift = if real { n - 1 } else { n - 2 };
    let mut p = Integer::from(Integer::u_pow_u(10, shift)) * 5u32 / 2u32;
    loop {
        p += 1u32;
        if p.mod_u(4) == 1 && p.is_probably_prime(40) != rug::integer::IsPrime::No {
            break;
        }
    }
    if real {
        println!("{p}");
    } else {
        println!("{}", Integer::from(-4) * p);
    }
}
