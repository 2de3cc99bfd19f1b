//! Dense polynomials over `F_p` for a prime `p < 2^63`: `Vec<u64>`, lowest
//! degree first, coefficients in `[0, p)`, no high zero coefficients.
//!
//! That `p` is prime is the caller's to know; a composite `p` gives wrong
//! answers or `None` (a leading coefficient with no inverse), never a
//! panic. Inputs with coefficients `≥ p` are reduced first. Every cost is
//! stated in operations on coefficients; the caller bounds the degrees and
//! the exponents.

use super::zpoly;
use crate::arith::mod_small;
use rug::Integer;

/// Arithmetic in `F_p[x]` for one `p` with `2 ≤ p < 2^63` (so a sum of two
/// residues fits a `u64`; products go through `u128`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Fp {
    p: u64,
}

/// The polynomial `x`.
const X: [u64; 2] = [0, 1];

impl Fp {
    /// `None` unless `2 ≤ p < 2^63`.
    pub fn new(p: u64) -> Option<Fp> {
        (2..1 << 63).contains(&p).then_some(Fp { p })
    }

    /// `p`.
    pub fn modulus(self) -> u64 {
        self.p
    }

    /// `a + b mod p` for `a, b < p` (callers pass residues; wrapping keeps
    /// any other input from panicking).
    pub(crate) fn add_c(self, a: u64, b: u64) -> u64 {
        let s = a.wrapping_add(b);
        if s >= self.p {
            s - self.p
        } else {
            s
        }
    }

    /// `a - b mod p` for `a, b < p`, as [`Fp::add_c`].
    pub(crate) fn sub_c(self, a: u64, b: u64) -> u64 {
        if a >= b {
            a - b
        } else {
            a.wrapping_add(self.p.wrapping_sub(b))
        }
    }

    /// `a · b mod p`, in `u64` when both are below `2^32` (always so for
    /// residues of a `p < 2^32`), else in `u128`.
    pub(crate) fn mul_c(self, a: u64, b: u64) -> u64 {
        if (a | b) >> 32 == 0 {
            a * b % self.p
        } else {
            (u128::from(a) * u128::from(b) % u128::from(self.p)) as u64
        }
    }

    /// `a^(-1) mod p` by the extended Euclidean algorithm (`O(log p)`
    /// steps; remainders in `u64`, cofactors, at most `p` in size, in
    /// `i128`); `None` if `gcd(a, p) ≠ 1`.
    pub(crate) fn inv_c(self, a: u64) -> Option<u64> {
        let (mut r0, mut r1) = (self.p, a % self.p);
        let (mut t0, mut t1) = (0i128, 1i128);
        while r1 != 0 {
            let q = r0 / r1;
            (r0, r1) = (r1, r0 - q * r1);
            (t0, t1) = (t1, t0 - i128::from(q) * t1);
        }
        (r0 == 1).then(|| t0.rem_euclid(i128::from(self.p)) as u64)
    }

    /// Reduces the coefficients mod `p` and drops high zeros; `len a` steps.
    pub fn normalise(self, a: &[u64]) -> Vec<u64> {
        let mut out: Vec<u64> = a.iter().map(|c| c % self.p).collect();
        while out.last() == Some(&0) {
            out.pop();
        }
        out
    }

    /// `f mod p` for `f ∈ Z[x]`; `len f` reductions.
    pub fn reduce(self, f: &[Integer]) -> Vec<u64> {
        let v: Vec<u64> = f.iter().map(|c| mod_small(c, self.p)).collect();
        self.normalise(&v)
    }

    /// `a + b`, or `a - b` if `negate`; `max(len a, len b)` steps.
    fn add_signed(self, a: &[u64], b: &[u64], negate: bool) -> Vec<u64> {
        let (a, b) = (self.normalise(a), self.normalise(b));
        let n = a.len().max(b.len());
        let out: Vec<u64> = (0..n)
            .map(|i| {
                let (x, y) = (
                    a.get(i).copied().unwrap_or(0),
                    b.get(i).copied().unwrap_or(0),
                );
                if negate {
                    self.sub_c(x, y)
                } else {
                    self.add_c(x, y)
                }
            })
            .collect();
        self.normalise(&out)
    }

    /// `a + b`; `max(len a, len b)` steps.
    pub fn add(self, a: &[u64], b: &[u64]) -> Vec<u64> {
        self.add_signed(a, b, false)
    }

    /// `a - b`; `max(len a, len b)` steps.
    pub fn sub(self, a: &[u64], b: &[u64]) -> Vec<u64> {
        self.add_signed(a, b, true)
    }

    /// `a · b`; `len a · len b` steps.
    pub fn mul(self, a: &[u64], b: &[u64]) -> Vec<u64> {
        if a.is_empty() || b.is_empty() {
            return Vec::new();
        }
        let mut out = vec![0u64; a.len() + b.len() - 1];
        for (i, &x) in a.iter().enumerate() {
            for (j, &y) in b.iter().enumerate() {
                if let Some(c) = out.get_mut(i + j) {
                    *c = self.add_c(*c, self.mul_c(x, y));
                }
            }
        }
        self.normalise(&out)
    }

    /// `r ← r mod b` for normalised `r`, `b`, the quotient's coefficients
    /// written into `q` (from degree 0) when given; `None` if `b` is zero
    /// or its leading coefficient has no inverse. `len r · len b` steps.
    fn rem_in_place(self, r: &mut Vec<u64>, b: &[u64], mut q: Option<&mut [u64]>) -> Option<()> {
        let k = b.len().checked_sub(1)?;
        let inv = self.inv_c(*b.last()?)?;
        // Each pass clears the top coefficient of r: at most len r passes.
        while r.len() > k {
            let top = r.pop().unwrap_or(0);
            let start = r.len() - k;
            let c = self.mul_c(top, inv);
            for (rj, &bj) in r.iter_mut().skip(start).zip(b) {
                *rj = self.sub_c(*rj, self.mul_c(c, bj));
            }
            if let Some(slot) = q.as_deref_mut().and_then(|q| q.get_mut(start)) {
                *slot = c;
            }
            while r.last() == Some(&0) {
                r.pop();
            }
        }
        Some(())
    }

    /// `(q, r)` with `a = q·b + r`, `deg r < deg b`; `None` if `b` is zero
    /// or its leading coefficient has no inverse. `len a · len b` steps.
    pub fn divrem(self, a: &[u64], b: &[u64]) -> Option<(Vec<u64>, Vec<u64>)> {
        let (b, mut r) = (self.normalise(b), self.normalise(a));
        let mut q = vec![0u64; (r.len() + 1).saturating_sub(b.len())];
        self.rem_in_place(&mut r, &b, Some(&mut q))?;
        Some((self.normalise(&q), r))
    }

    /// `a mod b`, as [`Fp::divrem`].
    pub fn rem(self, a: &[u64], b: &[u64]) -> Option<Vec<u64>> {
        self.divrem(a, b).map(|(_, r)| r)
    }

    /// `a` divided by its leading coefficient; `None` for zero or a leading
    /// coefficient with no inverse. `len a` steps.
    pub fn monic(self, a: &[u64]) -> Option<Vec<u64>> {
        let a = self.normalise(a);
        let inv = self.inv_c(*a.last()?)?;
        Some(a.iter().map(|&c| self.mul_c(c, inv)).collect())
    }

    /// The monic gcd (zero if both are zero) by Euclid's algorithm: at most
    /// `len b + 1` divisions of `len a · len b` steps.
    pub fn gcd(self, a: &[u64], b: &[u64]) -> Option<Vec<u64>> {
        let (mut a, mut b) = (self.normalise(a), self.normalise(b));
        // Each pass lowers deg b: at most len b + 1 passes.
        while !b.is_empty() {
            self.rem_in_place(&mut a, &b, None)?;
            std::mem::swap(&mut a, &mut b);
        }
        if a.is_empty() {
            return Some(a);
        }
        self.monic(&a)
    }

    /// `r ← a · b mod g` for `g` monic of degree `k` and `a`, `b` with
    /// entries in `[0, p)`; `r` is reused, so square and multiply allocates
    /// nothing after its first steps. `len a · len b` products, then at
    /// most `len a + len b` reduction passes of `k` steps each.
    fn mul_mod(self, a: &[u64], b: &[u64], g: &[u64], r: &mut Vec<u64>) {
        r.clear();
        r.resize((a.len() + b.len()).saturating_sub(1), 0);
        for (i, &x) in a.iter().enumerate() {
            for (c, &y) in r.iter_mut().skip(i).zip(b) {
                *c = self.add_c(*c, self.mul_c(x, y));
            }
        }
        let k = g.len().saturating_sub(1);
        // Each pass takes off the top coefficient t of degree d and
        // subtracts t·x^(d-k)·g without its (cancelling) leading term.
        while r.len() > k {
            let top = r.pop().unwrap_or(0);
            let start = r.len() - k;
            for (c, &gj) in r.iter_mut().skip(start).zip(g) {
                *c = self.sub_c(*c, self.mul_c(top, gj));
            }
        }
        while r.last() == Some(&0) {
            r.pop();
        }
    }

    /// `x^p mod g` by square and multiply over the bits of `p`; `None` as
    /// [`Fp::divrem`]. `bits(p)` squarings and at most `bits(p)` products
    /// mod `g`, each `O(deg(g)^2)` steps. The remainder mod `g` is the one
    /// mod `g` made monic.
    fn x_to_p(self, g: &[u64]) -> Option<Vec<u64>> {
        let g = self.monic(g)?;
        let x = self.rem(&X, &g)?;
        let mut acc = self.rem(&[1], &g)?;
        let mut next = Vec::with_capacity(2 * g.len());
        for i in (0..u64::BITS - self.p.leading_zeros()).rev() {
            self.mul_mod(&acc, &acc, &g, &mut next);
            std::mem::swap(&mut acc, &mut next);
            if (self.p >> i) & 1 == 1 {
                self.mul_mod(&acc, &x, &g, &mut next);
                std::mem::swap(&mut acc, &mut next);
            }
        }
        Some(acc)
    }

    /// `v^p mod g` for `g` monic of degree `≥ 1`, `v` reduced mod `g` and
    /// `xp = x^p mod g`: for `p` prime, `v(x)^p = v(x^p)` in `F_p[x]` (the
    /// `p`-th power is additive and fixes `F_p`), so Horner's rule gives
    /// it in `len v` products mod `g` (J. von zur Gathen and V. Shoup,
    /// "Computing Frobenius maps and factoring polynomials", Comput.
    /// Complexity 2 (1992); common practice).
    fn frobenius(self, v: &[u64], xp: &[u64], g: &[u64]) -> Vec<u64> {
        let (mut acc, mut next) = (Vec::new(), Vec::new());
        for &c in v.iter().rev() {
            self.mul_mod(&acc, xp, g, &mut next);
            match next.first_mut() {
                Some(c0) => *c0 = self.add_c(*c0, c),
                None => next.push(c),
            }
            while next.last() == Some(&0) {
                next.pop();
            }
            std::mem::swap(&mut acc, &mut next);
        }
        acc
    }

    /// Distinct-degree factorisation of a squarefree `f` of degree `n ≥ 1`
    /// (H. Cohen, GTM 138, Algorithm 3.4.3): for each `d` with irreducible
    /// factors of degree `d`, the pair `(d, A_d)` with `A_d` the monic
    /// product of those factors, `d` increasing. `None` if `f` is zero,
    /// constant or not squarefree (`gcd(f, f') ≠ 1`). One `x^p mod f`
    /// ([`Fp::x_to_p`]), then at most `n/2` Frobenius steps of `n`
    /// products mod a divisor of `f` ([`Fp::frobenius`]) and as many gcds.
    pub fn distinct_degree(self, f: &[u64]) -> Option<Vec<(usize, Vec<u64>)>> {
        let mut w = self.monic(f)?;
        let n = w.len().checked_sub(1).filter(|&n| n >= 1)?;
        let deriv: Vec<u64> = w
            .iter()
            .enumerate()
            .skip(1)
            .map(|(i, &c)| self.mul_c(c, i as u64))
            .collect();
        if self.gcd(&w, &deriv)?.len() != 1 {
            return None;
        }
        let mut xp = self.x_to_p(&w)?;
        let mut v = X.to_vec();
        let mut out = Vec::new();
        for d in 1..=n {
            let dw = w.len().saturating_sub(1);
            if 2 * d > dw {
                if dw > 0 {
                    out.push((dw, w));
                }
                break;
            }
            v = self.frobenius(&v, &xp, &w);
            let a_d = self.gcd(&self.sub(&v, &X), &w)?;
            if a_d.len() > 1 {
                w = self.divrem(&w, &a_d)?.0;
                v = self.rem(&v, &w)?;
                xp = self.rem(&xp, &w)?;
                out.push((d, a_d));
            }
        }
        Some(out)
    }

    /// The degrees of the irreducible factors of `F mod p`, increasing, for
    /// `F ∈ Z[x]` monic of degree `n ≥ 1` and squarefree mod `p` (true when
    /// `p ∤ disc(F)`); `None` otherwise. A product of degree-`d` factors of
    /// degree `m` has `m/d` of them. Cost as [`Fp::distinct_degree`].
    pub fn degree_pattern(self, f: &[Integer]) -> Option<Vec<usize>> {
        if zpoly::degree(f)
            .and_then(|d| f.get(d))
            .is_none_or(|c| *c != 1)
        {
            return None;
        }
        let mut out = Vec::new();
        for (d, a_d) in self.distinct_degree(&self.reduce(f))? {
            let m = a_d.len().checked_sub(1)?;
            if m % d != 0 {
                return None;
            }
            out.extend(std::iter::repeat_n(d, m / d));
        }
        Some(out)
    }

    /// Rabin's test: `g` of degree `f ≥ 1` is irreducible iff
    /// `g | x^(p^f) - x` and `gcd(x^(p^(f/q)) - x, g) = 1` for each prime
    /// `q | f` (M. O. Rabin, SIAM J. Comput. 9 (1980); common practice).
    /// `None` if `g` is zero or constant. One `x^p mod g`, `f` Frobenius
    /// steps mod `g` ([`Fp::frobenius`]), one gcd per prime factor of `f`.
    pub fn is_irreducible(self, g: &[u64]) -> Option<bool> {
        let g = self.monic(g)?;
        let f = g.len().checked_sub(1).filter(|&f| f >= 1)?;
        let x = self.rem(&X, &g)?;
        // powers[k] = x^(p^k) mod g, k = 0..=f
        let xp = self.x_to_p(&g)?;
        let mut powers = vec![x.clone()];
        for _ in 0..f {
            let next = self.frobenius(powers.last()?, &xp, &g);
            powers.push(next);
        }
        if powers.last() != Some(&x) {
            return Some(false);
        }
        let (mut rest, mut q) = (f, 2);
        while rest > 1 && q <= rest {
            if rest % q == 0 {
                while rest % q == 0 {
                    rest /= q;
                }
                let h = self.sub(powers.get(f / q)?, &x);
                if self.gcd(&h, &g)?.len() != 1 {
                    return Some(false);
                }
            }
            q += 1;
        }
        Some(true)
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::arith::primes_up_to;
    use crate::field::TestRng;
    use rug::ops::Pow;

    fn z(c: &[i64]) -> Vec<Integer> {
        zpoly::normalise(c.iter().map(|&x| Integer::from(x)).collect())
    }

    fn eval(k: Fp, a: &[u64], x: u64) -> u64 {
        a.iter()
            .rev()
            .fold(0, |acc, &c| k.add_c(k.mul_c(acc, x), c))
    }

    /// The monic polynomials of degree `d` over `F_p`, all `p^d` of them.
    fn all_monic(p: u64, d: u32) -> impl Iterator<Item = Vec<u64>> {
        (0..p.pow(d)).map(move |mut i| {
            let mut c: Vec<u64> = (0..d)
                .map(|_| {
                    let r = i % p;
                    i /= p;
                    r
                })
                .collect();
            c.push(1);
            c
        })
    }

    fn divides(k: Fp, d: &[u64], a: &[u64]) -> bool {
        k.rem(a, d).unwrap().is_empty()
    }

    /// Irreducible by search: no monic divisor of degree 1..=deg/2.
    fn naive_irreducible(k: Fp, g: &[u64]) -> bool {
        let f = g.len() as u32 - 1;
        (1..=f / 2).all(|d| all_monic(k.p, d).all(|h| !divides(k, &h, g)))
    }

    /// The factor degrees of a squarefree monic `f` of degree ≤ 6 by
    /// search: its roots by evaluation at every residue, its irreducible
    /// quadratic and cubic factors by trial division by every monic
    /// quadratic and cubic without a root; what is left has no factor of
    /// degree ≤ 3 and degree ≤ 6, so it is one irreducible factor. The
    /// cubic search is only needed when 6 is left (3 + 3 or 6), and is run
    /// for p < 20 as well as a check.
    fn naive_pattern(k: Fp, f: &[u64]) -> Vec<usize> {
        let p = k.p;
        let mut out = Vec::new();
        let roots = (0..p).filter(|&x| eval(k, f, x) == 0).count();
        out.extend(std::iter::repeat_n(1, roots));
        let rootless = |h: &Vec<u64>| (0..p).all(|x| eval(k, h, x) != 0);
        let quads = all_monic(p, 2)
            .filter(|h| divides(k, h, f) && rootless(h))
            .count();
        out.extend(std::iter::repeat_n(2, quads));
        let mut left = f.len() - 1 - roots - 2 * quads;
        if left == 6 || (left >= 3 && p < 20) {
            let cubics = all_monic(p, 3)
                .filter(|h| divides(k, h, f) && rootless(h))
                .count();
            out.extend(std::iter::repeat_n(3, cubics));
            left -= 3 * cubics;
        }
        if left > 0 {
            out.push(left);
        }
        out
    }

    #[test]
    fn field_and_bad_input() {
        for p in [0, 1, 1 << 63, u64::MAX] {
            assert_eq!(Fp::new(p), None);
        }
        let k = Fp::new((1 << 63) - 25).unwrap(); // 2^63 - 25 is prime (from memory); only sizes matter here
        let big = (1u64 << 63) - 26;
        assert_eq!(k.mul(&[big], &[big]), vec![1]); // (-1)^2
        assert_eq!(k.add(&[big], &[big]), vec![big - 1]); // -2
        assert_eq!(k.inv_c(big), Some(big));
        let k = Fp::new(7).unwrap();
        // Coefficients ≥ p are reduced; a zero divisor is refused.
        assert_eq!(k.normalise(&[9, 14, 21]), vec![2]);
        assert_eq!(k.divrem(&[1, 2], &[]), None);
        assert_eq!(k.divrem(&[1, 2], &[0, 7]), None);
        assert_eq!(k.monic(&[0, 0]), None);
        assert_eq!(k.x_to_p(&[]), None);
        assert_eq!(k.is_irreducible(&[3]), None);
        assert_eq!(k.is_irreducible(&[]), None);
        // Not monic over Z, or not squarefree mod p: no pattern.
        assert_eq!(k.degree_pattern(&z(&[1, 0, 2])), None);
        assert_eq!(k.degree_pattern(&z(&[])), None);
        // x^4 + 7x^3 - 2 ≡ x^4 - 2 mod 7 is fine: x^2 = ±3 (3^2 ≡ 2), and 3
        // is not a square mod 7 while -3 ≡ 2^2, so (1, 1, 2), by hand.
        assert_eq!(k.degree_pattern(&z(&[-2, 0, 0, 7, 1])), Some(vec![1, 1, 2]));
        assert_eq!(k.degree_pattern(&z(&[1, 2, 1])), None); // (x + 1)^2
        assert_eq!(k.degree_pattern(&z(&[0, 0, 0, 0, 0, 0, 0, 1])), None); // x^7
        assert_eq!(k.distinct_degree(&[1, 0, 0, 0, 0, 0, 0, 1]), None); // (x + 1)^7
                                                                        // A composite modulus gives None or some answer, never a panic.
        let k = Fp::new(12).unwrap();
        assert_eq!(k.divrem(&[1, 2, 3], &[5, 6]), None);
        let _ = k.degree_pattern(&z(&[1, 5, 0, 1]));
        let _ = k.is_irreducible(&[1, 5, 0, 1]);
    }

    #[test]
    fn known_patterns() {
        let k5 = Fp::new(5).unwrap();
        // x^3 - 2 mod 5: 3^3 = 27 ≡ 2, so (x - 3)(x^2 + 3x + 4), and the
        // quadratic has discriminant 9 - 16 ≡ 3, not a square mod 5
        // (squares 0, 1, 4): by hand.
        let f = z(&[-2, 0, 0, 1]);
        assert_eq!(eval(k5, &k5.reduce(&f), 3), 0);
        assert_eq!(k5.mul(&[2, 1], &[4, 3, 1]), k5.reduce(&f));
        assert_eq!(k5.degree_pattern(&f), Some(vec![1, 2]));
        // Mod 7: 7 ≡ 1 mod 3 and 2 is not a cube mod 7 (cubes 0, ±1):
        // irreducible. Mod 31: 2 ≡ 4^3 = 64 mod 31 and 31 ≡ 1 mod 3, so
        // three roots (common practice).
        assert_eq!(Fp::new(7).unwrap().degree_pattern(&f), Some(vec![3]));
        assert_eq!(Fp::new(31).unwrap().degree_pattern(&f), Some(vec![1, 1, 1]));
        // Φ_5 mod p splits into factors of degree the order of p mod 5
        // (common practice): 11 → 1, 19 → 2, 2 and 3 → 4.
        let phi5 = z(&[1; 5]);
        for (p, pattern) in [
            (11, vec![1; 4]),
            (19, vec![2, 2]),
            (2, vec![4]),
            (3, vec![4]),
        ] {
            assert_eq!(Fp::new(p).unwrap().degree_pattern(&phi5), Some(pattern));
        }
        // Mod 5 Φ_5 ≡ (x - 1)^4: not squarefree.
        assert_eq!(k5.degree_pattern(&phi5), None);
    }

    #[test]
    fn degree_patterns_match_search() {
        // Random monic F of degree 3..=6 against the search above, at every
        // prime p < 60 with p ∤ disc(F); the distinct-degree parts multiply
        // back to F mod p.
        let mut rng = TestRng::new(11);
        let mut seen = std::collections::BTreeSet::new();
        for _ in 0..60 {
            let n = rng.range(3, 6) as usize;
            let c: Vec<i64> = (0..=n)
                .map(|i| if i == n { 1 } else { rng.range(-10, 10) })
                .collect();
            let f = z(&c);
            let disc = zpoly::discriminant(&f).unwrap();
            for p in primes_up_to(59) {
                if disc.is_divisible_u(p as u32) {
                    continue;
                }
                let k = Fp::new(p).unwrap();
                let fp = k.reduce(&f);
                let pattern = k.degree_pattern(&f).unwrap();
                assert_eq!(pattern, naive_pattern(k, &fp), "{c:?} mod {p}");
                let parts = k.distinct_degree(&fp).unwrap();
                let product = parts.iter().fold(vec![1], |acc, (_, a)| k.mul(&acc, a));
                assert_eq!(product, fp);
                seen.insert(pattern);
            }
        }
        // The cases cover most of the 26 partitions of 3..=6, among them
        // those the cubic search decides.
        assert!(seen.contains(&vec![3, 3]) && seen.contains(&vec![6]));
        assert!(seen.len() >= 20, "{seen:?}");
    }

    #[test]
    fn rabin_test() {
        // x^2 + 1: irreducible mod 3 (-1 is not a square, 3 ≡ 3 mod 4),
        // reducible mod 5 (2^2 = -1); x^4 + x + 1 irreducible mod 2; x^4 +
        // x^2 + 1 = (x^2 + x + 1)^2 mod 2 (common practice).
        assert_eq!(Fp::new(3).unwrap().is_irreducible(&[1, 0, 1]), Some(true));
        assert_eq!(Fp::new(5).unwrap().is_irreducible(&[1, 0, 1]), Some(false));
        let k2 = Fp::new(2).unwrap();
        assert_eq!(k2.is_irreducible(&[1, 1, 0, 0, 1]), Some(true));
        assert_eq!(k2.is_irreducible(&[1, 0, 1, 0, 1]), Some(false));
        // (x^2 + 1)(x^2 + x + 2) mod 3 divides x^(3^4) - x; only the gcd
        // with x^(3^2) - x shows it reducible.
        let k3 = Fp::new(3).unwrap();
        assert_eq!(
            k3.is_irreducible(&k3.mul(&[1, 0, 1], &[2, 1, 1])),
            Some(false)
        );
        // Random polynomials of degree 1..=6 mod small p against the
        // divisor search, and against the degree pattern.
        let mut rng = TestRng::new(12);
        let mut irreducible = 0;
        for _ in 0..1500 {
            let p = [2, 3, 5, 7][rng.range(0, 3) as usize];
            let k = Fp::new(p).unwrap();
            let f = rng.range(1, 6) as usize;
            let mut g: Vec<u64> = (0..f).map(|_| rng.next() % p).collect();
            g.push(1 + rng.next() % (p - 1));
            let expect = naive_irreducible(k, &k.monic(&g).unwrap());
            assert_eq!(k.is_irreducible(&g), Some(expect), "{g:?} mod {p}");
            irreducible += usize::from(expect);
            if let Some(parts) = k.distinct_degree(&g) {
                assert_eq!(expect, parts.len() == 1 && parts[0].0 == f);
            }
        }
        assert!(irreducible > 100);
    }

    /// `a^e mod g` from products and remainders alone, halving `e`.
    fn pow_ref(k: Fp, a: &[u64], e: &Integer, g: &[u64]) -> Vec<u64> {
        if *e == 0 {
            return k.rem(&[1], g).unwrap();
        }
        let half = pow_ref(k, a, &Integer::from(e >> 1), g);
        let square = k.rem(&k.mul(&half, &half), g).unwrap();
        match e.is_odd() {
            true => k.rem(&k.mul(&square, a), g).unwrap(),
            false => square,
        }
    }

    #[test]
    fn powers() {
        // x^p mod g and the reference power against repeated
        // multiplication, and x^(p^k) against k Frobenius steps.
        let k = Fp::new(13).unwrap();
        let g = [3, 0, 5, 1, 1];
        let mut slow = vec![1];
        for e in 0..60u32 {
            assert_eq!(pow_ref(k, &X, &Integer::from(e), &g), slow);
            if e == 13 {
                assert_eq!(k.x_to_p(&g), Some(slow.clone()));
            }
            slow = k.rem(&k.mul(&slow, &X), &g).unwrap();
        }
        let mut frob = X.to_vec();
        let xp = k.x_to_p(&g).unwrap();
        for j in 1..=8u32 {
            frob = k.frobenius(&frob, &xp, &g);
            assert_eq!(pow_ref(k, &X, &Integer::from(13).pow(j), &g), frob);
        }
        // gcd: monic, and the common factor of two products.
        let a = k.mul(&[1, 1], &[2, 0, 1]);
        let b = k.mul(&[1, 1], &[5, 1]);
        assert_eq!(k.gcd(&a, &b), Some(vec![1, 1]));
        assert_eq!(k.gcd(&k.mul(&a, &[3]), &[]), Some(a.clone()));
        assert_eq!(k.gcd(&[], &[]), Some(vec![]));
        let (q, r) = k.divrem(&a, &[4, 3]).unwrap();
        assert_eq!(k.add(&k.mul(&q, &[4, 3]), &r), a);
        assert_eq!(k.sub(&a, &a), Vec::<u64>::new());
    }

    /// Primes on both sides of `2^32` and near `2^63`, for the machine-word
    /// paths: `2^32 - 5`, `2^32 + 15`, `2^61 - 1`, `2^63 - 25` (from memory;
    /// each is checked here by GMP's probable-prime test).
    pub(crate) fn word_primes() -> Vec<u64> {
        let ps = vec![
            2,
            3,
            13,
            65537,
            (1 << 32) - 5,
            (1 << 32) + 15,
            (1 << 61) - 1,
            (1 << 63) - 25,
        ];
        for &p in &ps {
            assert_ne!(
                Integer::from(p).is_probably_prime(30),
                rug::integer::IsPrime::No
            );
        }
        ps
    }

    /// `b^e mod p` by square and multiply in `u128` (the definition).
    fn pow_u128(b: u64, mut e: u64, p: u64) -> u64 {
        let (mut acc, mut b) = (1u128, u128::from(b) % u128::from(p));
        while e > 0 {
            if e & 1 == 1 {
                acc = acc * b % u128::from(p);
            }
            b = b * b % u128::from(p);
            e >>= 1;
        }
        acc as u64
    }

    #[test]
    fn word_arithmetic_at_large_primes() {
        // The u64 and u128 products, inverses, the in-place products mod g
        // and the Frobenius by composition against the definitions: u128
        // products, multiplication then division, and x^p, v^p by square
        // and multiply.
        let mut rng = TestRng::new(31);
        for p in word_primes() {
            let k = Fp::new(p).unwrap();
            for _ in 0..200 {
                let (a, b) = (rng.next() % p, rng.next() % p);
                let small = (rng.next() >> 32) % p;
                for (x, y) in [(a, b), (small, b), (small, small)] {
                    let truth = (u128::from(x) * u128::from(y) % u128::from(p)) as u64;
                    assert_eq!(k.mul_c(x, y), truth);
                    assert_eq!(
                        k.add_c(x, y),
                        ((u128::from(x) + u128::from(y)) % u128::from(p)) as u64
                    );
                    assert_eq!(k.add_c(k.sub_c(x, y), y), x);
                }
                if a != 0 {
                    assert_eq!(k.mul_c(a, k.inv_c(a).unwrap()), 1);
                }
            }
            for _ in 0..40 {
                let deg = rng.range(1, 7) as usize;
                let mut g: Vec<u64> = (0..deg).map(|_| rng.next() % p).collect();
                g.push(1);
                let mut random = || -> Vec<u64> {
                    let len = rng.range(0, deg as i64) as usize;
                    k.normalise(&(0..len).map(|_| rng.next() % p).collect::<Vec<_>>())
                };
                let (a, b) = (random(), random());
                let mut r = vec![7; 3];
                k.mul_mod(&a, &b, &g, &mut r);
                assert_eq!(r, k.rem(&k.mul(&a, &b), &g).unwrap());
                let xp = k.x_to_p(&g).unwrap();
                assert_eq!(xp, pow_ref(k, &X, &Integer::from(p), &g));
                assert_eq!(
                    k.frobenius(&a, &xp, &g),
                    pow_ref(k, &a, &Integer::from(p), &g)
                );
            }
        }
    }

    #[test]
    fn patterns_of_known_products_at_large_primes() {
        // F = Π (x - a_i) · Π (x^2 - r_j) · (x^3 - c), the a_i distinct,
        // the r_j distinct non-squares mod p (Euler's criterion), and c a
        // non-cube when p ≡ 1 mod 3 (then x^3 - c is irreducible; common
        // practice). Its pattern is known by construction.
        let mut rng = TestRng::new(32);
        let mut seen = std::collections::BTreeSet::new();
        for p in word_primes().into_iter().filter(|&p| p > 100) {
            let k = Fp::new(p).unwrap();
            for _ in 0..30 {
                let mut f = vec![1u64];
                let mut expect = Vec::new();
                let mut roots = std::collections::BTreeSet::new();
                for _ in 0..rng.range(0, 3) {
                    let a = rng.next() % p;
                    if roots.insert(a) {
                        f = k.mul(&f, &[p - a, 1].map(|c| c % p));
                        expect.push(1);
                    }
                }
                let mut squares = std::collections::BTreeSet::new();
                for _ in 0..rng.range(0, 2) {
                    let r = 1 + rng.next() % (p - 1);
                    if pow_u128(r, (p - 1) / 2, p) == p - 1 && squares.insert(r) {
                        f = k.mul(&f, &[p - r, 0, 1]);
                        expect.push(2);
                    }
                }
                let c = 1 + rng.next() % (p - 1);
                if p % 3 == 1 && pow_u128(c, (p - 1) / 3, p) != 1 {
                    f = k.mul(&f, &[p - c, 0, 0, 1]);
                    expect.push(3);
                }
                if f.len() < 2 {
                    continue;
                }
                let big: Vec<Integer> = f.iter().map(|&c| Integer::from(c)).collect();
                assert_eq!(
                    k.degree_pattern(&big),
                    Some(expect.clone()),
                    "{f:?} mod {p}"
                );
                if expect.len() == 1 {
                    assert_eq!(k.is_irreducible(&f), Some(true));
                } else {
                    assert_eq!(k.is_irreducible(&f), Some(false));
                }
                seen.insert(expect);
            }
        }
        assert!(
            seen.contains(&vec![1, 1, 2, 2, 3]) && seen.len() >= 10,
            "{seen:?}"
        );
    }
}
