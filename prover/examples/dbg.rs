use rug::Integer;
fn main() {
    let mut p: Integer = "3141592653589793238462643383279502884197".parse().unwrap();
    loop {
        p += 1;
        if p.mod_u(4) == 1 && p.is_probably_prime(40) != rug::integer::IsPrime::No { break; }
    }
    println!("{p} {}", p.to_string().len());
    let mut q: Integer = "271828182845904523536028747135".parse().unwrap();
    loop { q += 1; if q.mod_u(4) == 1 && q.is_probably_prime(40) != rug::integer::IsPrime::No { break; } }
    println!("{q} {}", q.to_string().len());
}
