//! Prints the benchmark discriminant with the given number of digits:
//! D = -4p for the first prime p ≡ 1 (mod 4) above 2.5·10^(n-2), so that
//! D has n digits and is fundamental (an arbitrary, reproducible choice).
use rug::Integer;

fn main() {
    let n: u32 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(20);
    let mut p = Integer::from(Integer::u_pow_u(10, n - 2)) * 5u32 / 2u32;
    loop {
        p += 1u32;
        if p.mod_u(4) == 1 && p.is_probably_prime(40) != rug::integer::IsPrime::No {
            break;
        }
    }
    println!("{}", Integer::from(-4) * p);
}
