//! Factorisation of polynomials over `F_p` for a prime `2 ≤ p < 2^63`
//! (polynomials as `Vec<u64>`, lowest degree first, as in the verifier's
//! `Fp`, whose arithmetic this reuses):
//!
//! 1. squarefree factorisation (H. Cohen, A Course in Computational
//!    Algebraic Number Theory, GTM 138, Algorithm 3.4.2, the numbers here
//!    from memory: repeated gcds with the derivative, and `p`-th roots where
//!    the derivative vanishes);
//! 2. distinct-degree factorisation (Cohen, Algorithm 3.4.3, the verifier's
//!    `Fp::distinct_degree`);
//! 3. equal-degree splitting by the method of D. G. Cantor and
//!    H. Zassenhaus ("A new algorithm for factoring polynomials over finite
//!    fields", Math. Comp. 36 (1981)): `gcd(a^((p^d - 1)/2) - 1, g)` for
//!    random `a`, or the trace `a + a^2 + … + a^(2^(d-1))` when `p = 2`.
//!
//! The random elements come from the prover's seeded generator; the
//! factors are returned sorted, so the answer does not depend on the seed.

use crate::rng::Rng;
use classcert_verifier::math::poly::Fp;
use rug::ops::Pow;
use rug::Integer;

/// The field, for `2 ≤ p < 2^63`; panics otherwise.
fn field(p: u64) -> Fp {
    Fp::new(p).expect("p must satisfy 2 ≤ p < 2^63")
}

/// `base^e mod g` by square and multiply, for `g` not zero: `2·bits(e)`
/// products and remainders mod `g`.
fn powmod(k: Fp, base: &[u64], e: &Integer, g: &[u64]) -> Vec<u64> {
    let rem = |a: &[u64]| k.rem(a, g).expect("g is not zero");
    let base = rem(base);
    let mut acc = rem(&[1]);
    for i in (0..e.significant_bits()).rev() {
        acc = rem(&k.mul(&acc, &acc));
        if e.get_bit(i) {
            acc = rem(&k.mul(&acc, &base));
        }
    }
    acc
}

fn derivative(f: &[u64], p: u64) -> Vec<u64> {
    let k = field(p);
    let d: Vec<u64> = f
        .iter()
        .enumerate()
        .skip(1)
        .map(|(i, &c)| super::arith::modp::mul(c % p, (i as u64) % p, p))
        .collect();
    k.normalise(&d)
}

fn degree(f: &[u64]) -> usize {
    f.len().saturating_sub(1)
}

/// Squarefree factorisation of a non-zero `f`: pairs `(a_i, i)` with the
/// `a_i` monic, squarefree, pairwise coprime and non-constant, and
/// `f = lc(f)·∏ a_i^i`, sorted by `i`. Cohen, GTM 138, Algorithm 3.4.2.
pub fn squarefree(f: &[u64], p: u64) -> Vec<(Vec<u64>, u32)> {
    let k = field(p);
    let f = k
        .monic(f)
        .expect("the zero polynomial has no factorisation");
    let mut out = Vec::new();
    squarefree_into(k, p, &f, 1, &mut out);
    out.sort_by(|a, b| a.1.cmp(&b.1).then_with(|| a.0.cmp(&b.0)));
    out
}

fn squarefree_into(k: Fp, p: u64, f: &[u64], scale: u32, out: &mut Vec<(Vec<u64>, u32)>) {
    if degree(f) == 0 {
        return;
    }
    let d = derivative(f, p);
    if d.is_empty() {
        // f = g(x^p), and g(x)^p = g(x^p) over F_p.
        let root: Vec<u64> = f.iter().step_by(p as usize).copied().collect();
        squarefree_into(k, p, &root, scale * p as u32, out);
        return;
    }
    let mut c = k.gcd(f, &d).unwrap();
    let mut w = k.divrem(f, &c).unwrap().0;
    let mut i = 1u32;
    while degree(&w) > 0 {
        let y = k.gcd(&w, &c).unwrap();
        let fac = k.divrem(&w, &y).unwrap().0;
        if degree(&fac) > 0 {
            out.push((fac, i * scale));
        }
        w = y;
        c = k.divrem(&c, &w).unwrap().0;
        i += 1;
    }
    if degree(&c) > 0 {
        let root: Vec<u64> = c.iter().step_by(p as usize).copied().collect();
        squarefree_into(k, p, &root, scale * p as u32, out);
    }
}

/// Splits a monic squarefree `g` whose irreducible factors all have degree
/// `d` into those factors (Cantor–Zassenhaus), unsorted.
pub fn equal_degree(g: &[u64], d: usize, p: u64, rng: &mut Rng) -> Vec<Vec<u64>> {
    let k = field(p);
    let n = degree(g);
    assert!(
        d >= 1 && n.is_multiple_of(d),
        "degree {n} is not a multiple of {d}"
    );
    if n == d {
        return vec![g.to_vec()];
    }
    let exponent = (Integer::from(p).pow(d as u32) - 1u32) / 2u32;
    loop {
        let a: Vec<u64> = k.normalise(&(0..n).map(|_| rng.below(p)).collect::<Vec<u64>>());
        if degree(&a) == 0 {
            continue;
        }
        let b = if p == 2 {
            // the trace from F_(2^d) to F_2, applied to a mod each factor
            let mut t = k.rem(&a, g).unwrap();
            let mut acc = t.clone();
            for _ in 1..d {
                t = k.rem(&k.mul(&t, &t), g).unwrap();
                acc = k.add(&acc, &t);
            }
            acc
        } else {
            k.sub(&powmod(k, &a, &exponent, g), &[1])
        };
        let h = k.gcd(&b, g).unwrap();
        if degree(&h) > 0 && degree(&h) < n {
            let other = k.divrem(g, &h).unwrap().0;
            let mut out = equal_degree(&h, d, p, rng);
            out.extend(equal_degree(&other, d, p, rng));
            return out;
        }
    }
}

/// The monic irreducible factors of a non-zero `f` over `F_p` with their
/// multiplicities, sorted by degree and then by coefficients (from the
/// constant term up); the empty list for a constant. Panics for `f = 0` or
/// `p` outside `[2, 2^63)`; `p` must be prime.
pub fn factor(f: &[u64], p: u64, seed: u64) -> Vec<(Vec<u64>, u32)> {
    let k = field(p);
    let mut rng = Rng::new(seed ^ p.rotate_left(17));
    let mut out = Vec::new();
    for (part, mult) in squarefree(f, p) {
        for (d, a_d) in k.distinct_degree(&part).expect("a squarefree part") {
            for g in equal_degree(&a_d, d, p, &mut rng) {
                out.push((g, mult));
            }
        }
    }
    out.sort_by(|a, b| a.0.len().cmp(&b.0.len()).then_with(|| a.0.cmp(&b.0)));
    out
}

/// `factor` of `F mod p` for `F ∈ Z[x]` (coefficients from the constant
/// term up), `F mod p ≠ 0`.
pub fn factor_integer_poly(f: &[Integer], p: u64, seed: u64) -> Vec<(Vec<u64>, u32)> {
    factor(&field(p).reduce(f), p, seed)
}

/// The distinct roots in `[0, p)` of a non-zero `f`, increasing.
pub fn roots(f: &[u64], p: u64, seed: u64) -> Vec<u64> {
    let k = field(p);
    let f = k.monic(f).expect("the zero polynomial");
    if degree(&f) == 0 {
        return Vec::new();
    }
    // gcd(f, x^p - x) is the product of the distinct linear factors.
    let xp = powmod(k, &[0, 1], &Integer::from(p), &f);
    let lin = k.gcd(&k.sub(&xp, &[0, 1]), &f).unwrap();
    if degree(&lin) == 0 {
        return Vec::new();
    }
    let mut rng = Rng::new(seed ^ p.rotate_left(29));
    let mut r: Vec<u64> = equal_degree(&lin, 1, p, &mut rng)
        .into_iter()
        .map(|g| (p - g[0]) % p)
        .collect();
    r.sort_unstable();
    r
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_verifier::math::primes_up_to;

    fn eval(f: &[u64], x: u64, p: u64) -> u64 {
        use super::super::arith::modp;
        f.iter()
            .rev()
            .fold(0, |acc, &c| modp::add(modp::mul(acc, x, p), c % p, p))
    }

    fn product(k: Fp, fs: &[(Vec<u64>, u32)]) -> Vec<u64> {
        let mut acc = vec![1];
        for (g, e) in fs {
            for _ in 0..*e {
                acc = k.mul(&acc, g);
            }
        }
        acc
    }

    #[test]
    fn powers_against_repeated_products() {
        // base^e mod g against e products mod g, at a small prime and at
        // 2^61 - 1 (a Mersenne prime, common practice), g not monic.
        for p in [13u64, (1 << 61) - 1] {
            let k = field(p);
            let (g, base) = ([3, 0, 5, 1, 7], [2, 5, 1]);
            let mut slow = vec![1];
            for e in 0..60u32 {
                assert_eq!(powmod(k, &base, &Integer::from(e), &g), slow);
                slow = k.rem(&k.mul(&slow, &base), &g).unwrap();
            }
        }
    }

    #[test]
    fn factors_multiply_back_and_are_irreducible() {
        // Random polynomials (often with repeated factors, built as products)
        // against: the product of the factors with multiplicities, Rabin's
        // irreducibility test of the verifier (an independent routine), the
        // factors being distinct, and the roots found by evaluating at every
        // residue for small p (brute force).
        let mut rng = Rng::new(21);
        for &p in &[2u64, 3, 5, 7, 11, 13, 101, 65_537, 1_000_000_007] {
            let k = Fp::new(p).unwrap();
            for _ in 0..60 {
                let parts = 1 + rng.below(3) as usize;
                let mut f = vec![1 + rng.below(p - 1)];
                for _ in 0..parts {
                    let d = 1 + rng.below(4) as usize;
                    let g: Vec<u64> = (0..d)
                        .map(|_| rng.below(p))
                        .chain(std::iter::once(1))
                        .collect();
                    let e = 1 + rng.below(3);
                    for _ in 0..e {
                        f = k.mul(&f, &g);
                    }
                }
                let fs = factor(&f, p, 7);
                assert_eq!(product(k, &fs), k.monic(&f).unwrap(), "mod {p}: {f:?}");
                for (g, _) in &fs {
                    assert_eq!(k.is_irreducible(g), Some(true), "{g:?} mod {p}");
                    assert_eq!(*g.last().unwrap(), 1);
                }
                for w in fs.windows(2) {
                    assert_ne!(w[0].0, w[1].0);
                }
                // the same answer under another seed
                assert_eq!(factor(&f, p, 99), fs);
                if p <= 101 {
                    let brute: Vec<u64> = (0..p).filter(|&x| eval(&f, x, p) == 0).collect();
                    assert_eq!(roots(&f, p, 3), brute);
                    let linear: Vec<u64> = fs
                        .iter()
                        .filter(|(g, _)| g.len() == 2)
                        .map(|(g, _)| (p - g[0]) % p)
                        .collect::<std::collections::BTreeSet<u64>>()
                        .into_iter()
                        .collect();
                    assert_eq!(linear, brute);
                }
            }
        }
    }

    #[test]
    fn known_factorisations() {
        // x^p - x = ∏_{a ∈ F_p} (x - a) (common practice), for small p.
        for p in [2u64, 3, 5, 7] {
            let mut f = vec![0u64; p as usize + 1];
            f[1] = p - 1;
            f[p as usize] = 1;
            let fs = factor(&f, p, 1);
            assert_eq!(fs.len(), p as usize);
            assert!(fs.iter().all(|(g, e)| g.len() == 2 && *e == 1));
        }
        // x^4 + 1 mod 3 = (x^2 + x + 2)(x^2 + 2x + 2): by hand, the product
        // is x^4 + 3x^3 + 6x^2 + 6x + 4 ≡ x^4 + 1.
        assert_eq!(
            factor(&[1, 0, 0, 0, 1], 3, 1),
            vec![(vec![2, 1, 1], 1), (vec![2, 2, 1], 1)]
        );
        // (x + 1)^6 mod 3: one factor of multiplicity 6, reached through
        // the p-th root step ((x + 1)^6 = (x^3 + 1)^2 over F_3).
        let k3 = Fp::new(3).unwrap();
        let mut f = vec![1];
        for _ in 0..6 {
            f = k3.mul(&f, &[1, 1]);
        }
        assert_eq!(factor(&f, 3, 1), vec![(vec![1, 1], 6)]);
        // x^2 (x + 1)^4 mod 2 and its squarefree parts.
        let k2 = Fp::new(2).unwrap();
        let mut f = vec![0, 0, 1];
        for _ in 0..4 {
            f = k2.mul(&f, &[1, 1]);
        }
        assert_eq!(squarefree(&f, 2), vec![(vec![0, 1], 2), (vec![1, 1], 4)]);
        assert_eq!(factor(&f, 2, 1), vec![(vec![0, 1], 2), (vec![1, 1], 4)]);
        assert_eq!(factor(&[5], 7, 1), vec![]);
    }

    #[test]
    fn patterns_against_the_verifier() {
        // For F ∈ Z[x] squarefree mod p, the degrees of the factors equal
        // the verifier's degree pattern (distinct-degree factorisation; it
        // gives None where F is not squarefree mod p).
        let f: Vec<Integer> = [-1i64, -1, 0, 0, 0, 1]
            .iter()
            .map(|&c| Integer::from(c))
            .collect();
        for p in primes_up_to(300) {
            let k = Fp::new(p).unwrap();
            let Some(pattern) = k.degree_pattern(&f) else {
                continue;
            };
            let mut ours: Vec<usize> = factor_integer_poly(&f, p, 5)
                .iter()
                .map(|(g, _)| g.len() - 1)
                .collect();
            ours.sort_unstable();
            assert_eq!(ours, pattern, "mod {p}");
        }
    }
}
