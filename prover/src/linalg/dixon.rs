//! Exact determinants by p-adic lifting: solve `A x = b` for one `b` by
//! Dixon's method (J. D. Dixon, "Exact solution of linear equations using
//! p-adic expansions", Numer. Math. 40 (1982)), read the common denominator
//! `δ` of `x` off rational reconstruction, and find the small cofactor
//! `det A / δ` modulo a few word primes. This is the determinant method of
//! J. Abbott, M. Bronstein and T. Mulders ("Fast deterministic computation
//! of determinants of dense matrices", ISSAC 1999): `δ` is usually the
//! largest invariant factor of `A`, nearly all of `det A` for relation
//! matrices, so a handful of primes replace the dozens that the Chinese
//! remainder theorem alone needs.
//!
//! `δ` divides `det A` (Cramer's rule), and the cofactor is found by the
//! Chinese remainder theorem up to twice its bound `H / δ` (`H`
//! Hadamard's bound), or once a further prime leaves its value unchanged
//! (Hadamard's bound is loose for relation matrices: thousands of bits
//! above the determinant); on any surprise the caller falls back to
//! [`super::det_crt`]. As there, the prover uses the value only as a
//! modulus for the Hermite form or to count classes, and a wrong one
//! would fail the self-check, never pass it.

use super::modp::{crt_step, det_mod_p, inv_mod, next_prime_below, to_mod, Lu};
use rug::ops::RemRounding;
use rug::Complete;
use rug::Integer;

/// `n/d ≡ t (mod modulus)` with `|n|, d ≤ bound` (`2·bound² < modulus`),
/// by the extended Euclidean algorithm (common practice; e.g. J. von zur
/// Gathen and J. Gerhard, *Modern Computer Algebra*, section 5.10); the
/// denominator `d > 0`, or `None` when there is no such fraction.
fn reconstruct(t: &Integer, modulus: &Integer, bound: &Integer) -> Option<Integer> {
    let (mut r0, mut r1) = (modulus.clone(), t.clone());
    let (mut s0, mut s1) = (Integer::new(), Integer::from(1));
    while r1 > *bound {
        let (q, r) = r0.div_rem_floor_ref(&r1).into();
        let q: Integer = q;
        r0 = std::mem::replace(&mut r1, r);
        let s = Integer::from(&s0 - &q * &s1);
        s0 = std::mem::replace(&mut s1, s);
    }
    let d = s1.abs();
    (d > 0 && d <= *bound).then_some(d)
}

/// A square, nonsingular integer matrix `A` made ready for p-adic solving:
/// its LU decomposition modulo a word prime and Hadamard's bound.
pub struct Solver<'a> {
    m: &'a [Vec<i64>],
    lu: Lu,
    p: u64,
    /// `H ≥ Π sqrt(‖row_i‖² + 1)`: bounds `|det A|` and, for `b ∈ {-1, 0, 1}^n`,
    /// every numerator of Cramer's rule (replacing one entry of each row
    /// by ±1 does not make it longer than that).
    h: Integer,
}

/// One right-hand side being lifted.
struct Lift {
    /// Its place among the right-hand sides.
    index: usize,
    /// `(b − A x_k) / p^k` for the digits so far.
    r: Vec<i128>,
    digits: Vec<Vec<u64>>,
    /// The sum of the entries of `x` modulo `p^k`, for the stopping test.
    sum: Integer,
    /// The denominator reconstructed from `sum` at the previous step.
    last_d: Option<Integer>,
    /// The step before which no further full reconstruction is tried.
    next_full: usize,
}

impl Lift {
    fn new(index: usize, b: &[i128]) -> Lift {
        Lift {
            index,
            r: b.to_vec(),
            digits: Vec::new(),
            sum: Integer::new(),
            last_d: None,
            next_full: 2,
        }
    }
}

/// A fixed pseudo-random vector of length `n` with entries in `{-1, 0, 1}`
/// (any such `b` gives exact answers; `salt` tells several apart). Not
/// `±1` alone: those are all the same vector modulo 2, so their classes
/// would never see a 2-part of the cokernel.
pub fn sign_pattern(n: usize, salt: u64) -> Vec<i128> {
    let mut state: u64 = 0x9e37_79b9_7f4a_7c15 ^ salt.wrapping_mul(0xd1b5_4a32_d192_ed03);
    (0..n)
        .map(|_| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            ((state >> 33) % 3) as i128 - 1
        })
        .collect()
}

impl<'a> Solver<'a> {
    /// `None` when `m` is not square, is singular modulo the word prime,
    /// or has rows too long for the word arithmetic of the lifting.
    pub fn new(m: &'a [Vec<i64>]) -> Option<Solver<'a>> {
        Solver::with_lu(m, None)
    }

    /// [`Solver::new`], with the LU decomposition of `m` modulo
    /// [`Solver::prime`] when the caller has it already.
    pub(crate) fn with_lu(m: &'a [Vec<i64>], lu: Option<Lu>) -> Option<Solver<'a>> {
        let n = m.len();
        let mut h = Integer::from(1);
        let mut l1_max: i128 = 0;
        for r in m {
            if r.len() != n {
                return None;
            }
            let s: Integer = r.iter().map(|&x| Integer::from(x) * x).sum::<Integer>() + 1u32;
            h *= Integer::from(s.sqrt_ref()) + 1u32;
            let l1: i128 = r.iter().map(|&x| (x as i128).abs()).sum();
            l1_max = l1_max.max(l1);
        }
        // r stays below l1_max + 1 in size: keep A·y inside i128
        if l1_max.checked_mul(1i128 << 62)?.checked_mul(2)? > i128::MAX / 4 {
            return None;
        }
        let p = Solver::prime();
        let lu = match lu {
            Some(lu) => lu,
            None => Lu::new(m, p)?,
        };
        Some(Solver { m, lu, p, h })
    }

    /// The word prime of the lifting and `det A` modulo it.
    pub(crate) fn det_mod_prime(&self) -> (u64, u64) {
        (self.p, self.lu.det)
    }

    /// The word prime of the lifting.
    pub(crate) fn prime() -> u64 {
        next_prime_below(1u64 << 62)
    }

    /// `A x = b` (`b` with entries in `{-1, 0, 1}`): `(δ, c)` with `δ > 0` the common
    /// denominator of `x` and `c = δ·x` integral, so `A c = δ b`; `None`
    /// when the lifting fails. One right-hand side of [`Solver::solve_many`].
    pub fn solve(&self, b: &[i128]) -> Option<(Integer, Vec<Integer>)> {
        self.solve_many(&[b.to_vec()]).pop().flatten()
    }

    /// [`Solver::solve`] for each of `bs`, lifted together: every step
    /// reads the LU factors and `A` once for all of them (the matrices,
    /// not the vectors, are what a step's time goes on). Each right-hand
    /// side lifts and stops on its own digits, so its answer does not
    /// depend on the others. Lifting stops once the reconstructed
    /// denominator of the sum of the entries has stood for one step and
    /// then every entry has a rational reconstruction with `A c ≡ δ b`
    /// modulo two further word primes (output-sensitive early termination,
    /// common practice); it gives up once `p^k > 2H²`, past which the
    /// true solution would have been found. The check is modulo primes, so
    /// an answer is right with probability about `1 - 2^-120`; the prover
    /// only uses it for hints that the verifier checks.
    pub fn solve_many(&self, bs: &[Vec<i128>]) -> Vec<Option<(Integer, Vec<Integer>)>> {
        let (p, n, t) = (self.p, self.m.len(), bs.len());
        let mut out: Vec<Option<(Integer, Vec<Integer>)>> = vec![None; t];
        let mut lifts: Vec<Lift> = bs
            .iter()
            .enumerate()
            .filter(|(_, b)| b.len() == n)
            .map(|(s, b)| Lift::new(s, b))
            .collect();
        let need = Integer::from(self.h.square_ref()) * 2u32;
        let mut modulus = Integer::from(1);
        while !lifts.is_empty() {
            // y ≡ A^{-1} r (mod p) for every live right-hand side
            let rm: Vec<Vec<u64>> = lifts
                .iter()
                .map(|l| {
                    l.r.iter()
                        .map(|&v| v.rem_euclid(p as i128) as u64)
                        .collect()
                })
                .collect();
            let ys = self.lu.solve_many(&rm);
            let ays = self.times(&ys);
            let step_modulus = Integer::from(&modulus * p);
            let last = step_modulus > need;
            let bound = Integer::from((&step_modulus >> 1u32).complete().sqrt_ref());
            let mut keep = Vec::with_capacity(lifts.len());
            for ((mut l, y), ay) in lifts.into_iter().zip(ys).zip(ays) {
                // r ← (r − A y) / p, exactly
                let mut exact = true;
                for (ri, a) in l.r.iter_mut().zip(ay) {
                    let num = *ri - a;
                    if num.rem_euclid(p as i128) != 0 {
                        exact = false;
                        break;
                    }
                    *ri = num / p as i128;
                }
                if !exact {
                    continue;
                }
                let sum: u128 = y.iter().map(|&v| v as u128).sum();
                l.sum += Integer::from(sum) * &modulus;
                l.digits.push(y);
                let sum = l.sum.clone().rem_euc(&step_modulus);
                let d = reconstruct(&sum, &step_modulus, &bound);
                let stood = d.is_some() && d == l.last_d && l.digits.len() >= l.next_full;
                l.last_d = d;
                if stood || last {
                    if let Some((delta, c)) = reconstruct_all(&l.digits, p, &step_modulus, &bound) {
                        if self.satisfies(&delta, &c, &bs[l.index]) {
                            out[l.index] = Some((delta, c));
                            continue;
                        }
                    }
                    // a failed full attempt: the next one a quarter later
                    l.next_full = l.digits.len() + (l.digits.len() / 4).max(4);
                }
                if !last {
                    keep.push(l);
                }
            }
            lifts = keep;
            modulus = step_modulus;
        }
        out
    }

    /// `A·y` for each of `ys` (entries of `y` below `p`), exactly.
    fn times(&self, ys: &[Vec<u64>]) -> Vec<Vec<i128>> {
        let t = ys.len();
        let mut out = vec![vec![0i128; self.m.len()]; t];
        let mut acc = vec![0i128; t];
        for (i, row) in self.m.iter().enumerate() {
            acc.iter_mut().for_each(|a| *a = 0);
            for (j, &a) in row.iter().enumerate() {
                if a != 0 {
                    for (x, y) in acc.iter_mut().zip(ys) {
                        *x += a as i128 * y[j] as i128;
                    }
                }
            }
            for (o, &x) in out.iter_mut().zip(&acc) {
                o[i] = x;
            }
        }
        out
    }

    /// `A c ≡ δ b` modulo two word primes other than `p`.
    fn satisfies(&self, delta: &Integer, c: &[Integer], b: &[i128]) -> bool {
        let mut q = self.p;
        for _ in 0..2 {
            q = next_prime_below(q);
            let qi = Integer::from(q);
            let cq: Vec<u128> = c
                .iter()
                .map(|x| x.clone().rem_euc(&qi).to_u64().unwrap_or(0) as u128)
                .collect();
            let dq = delta.clone().rem_euc(&qi).to_u64().unwrap_or(0) as u128;
            for (row, &bi) in self.m.iter().zip(b) {
                let mut acc: u128 = 0;
                for (&a, &x) in row.iter().zip(&cq) {
                    acc = (acc + to_mod(a, q) as u128 * x) % q as u128;
                }
                let want = dq * (bi.rem_euclid(q as i128) as u128) % q as u128;
                if acc != want {
                    return false;
                }
            }
        }
        true
    }

    /// `det A`, given a divisor `δ` of it (the denominator of a solve):
    /// the cofactor `det A / δ` by the Chinese remainder theorem, from the
    /// LU decomposition's prime and one more at a time, until it reaches
    /// twice its bound `H/δ` or a prime leaves it unchanged. Each further
    /// prime costs a whole elimination (a minute at 3 306 columns), and the
    /// cofactor of a relation matrix is nearly always below the first
    /// prime: the unchanged value is then itself the check, modulo a prime
    /// it was not computed from (wrong with probability about `2^-61`).
    pub fn det(&self, delta: &Integer) -> Option<Integer> {
        let (m, p) = (self.m, self.p);
        let c_bound = Integer::from(&self.h / delta) * 2u32 + 1u32;
        let mut c = Integer::new();
        let mut cmod = Integer::from(1);
        let mut q = p;
        let mut first = true;
        loop {
            let (dq, qq) = if first {
                first = false;
                (self.lu.det, p)
            } else {
                q = next_prime_below(q);
                (det_mod_p(m, q), q)
            };
            let dq_delta = Integer::from(delta % qq).to_u64()?;
            if dq_delta == 0 {
                continue;
            }
            let cq = (dq as u128 * inv_mod(dq_delta, qq) as u128 % qq as u128) as u64;
            // c ≡ current (mod cmod), c ≡ cq (mod qq)
            let first_prime = cmod == 1;
            let changed = crt_step(&mut c, &mut cmod, cq, qq)?;
            if cmod > c_bound || (!changed && !first_prime) {
                break;
            }
        }
        Some(Integer::from(delta * &c))
    }
}

/// The solution's entries from their p-adic digits: the common
/// denominator `δ` and `δ·x`, each entry a fraction with numerator and
/// denominator at most `bound` (`None` when one has none).
fn reconstruct_all(
    digits: &[Vec<u64>],
    p: u64,
    modulus: &Integer,
    bound: &Integer,
) -> Option<(Integer, Vec<Integer>)> {
    let n = digits.first().map_or(0, Vec::len);
    let half = Integer::from(modulus >> 1u32);
    let mut delta = Integer::from(1);
    let mut c: Vec<Integer> = Vec::with_capacity(n);
    for j in 0..n {
        let mut x = Integer::new();
        for y in digits.iter().rev() {
            x *= p;
            x += y[j];
        }
        let mut t = Integer::from(&x * &delta).rem_euc(modulus);
        if t > half {
            t -= modulus;
        }
        if Integer::from(t.abs_ref()) > *bound {
            let d = reconstruct(&Integer::from(&x * &delta).rem_euc(modulus), modulus, bound)?;
            delta *= &d;
            if delta > *bound {
                return None;
            }
            for e in c.iter_mut() {
                *e *= &d;
            }
            t = Integer::from(&x * &delta).rem_euc(modulus);
            if t > half {
                t -= modulus;
            }
        }
        c.push(t);
    }
    Some((delta, c))
}

/// `det m` for a square, nonsingular `m`, exactly; `None` when the method
/// does not apply (a singular matrix, entries too large for the word
/// arithmetic, a failed check), and the caller computes it otherwise.
pub fn det_by_lifting(m: &[Vec<i64>]) -> Option<Integer> {
    if m.is_empty() {
        return Some(Integer::from(1));
    }
    let solver = Solver::new(m)?;
    let (delta, _) = solver.solve(&sign_pattern(m.len(), 0))?;
    solver.det(&delta)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::linalg::det_crt;
    use crate::rng::Rng;

    fn random(rng: &mut Rng, n: usize, spread: u64) -> Vec<Vec<i64>> {
        crate::linalg::random_rows(rng, n, n, spread)
    }

    /// The lifted determinant equals the one by the Chinese remainder
    /// theorem alone (an independent computation of the same definition).
    #[test]
    fn lifting_agrees_with_crt() {
        let mut rng = Rng::new(7);
        for (n, spread) in [(1, 5), (2, 3), (5, 100), (20, 1000), (40, 1 << 30), (60, 3)] {
            let m = random(&mut rng, n, spread);
            let want = det_crt(&m);
            if want == 0 {
                continue;
            }
            assert_eq!(det_by_lifting(&m), Some(want), "n = {n}");
        }
    }

    /// Non-cyclic cokernels (the largest invariant factor is then a small
    /// part of the determinant, and the cofactor takes several primes):
    /// diag(2, 2, 6, 6, …) times a random matrix.
    #[test]
    fn lifting_handles_non_cyclic_cokernels() {
        let mut rng = Rng::new(11);
        let n = 16;
        let base = random(&mut rng, n, 50);
        let m: Vec<Vec<i64>> = base
            .iter()
            .enumerate()
            .map(|(i, r)| r.iter().map(|&x| x * if i < 8 { 2 } else { 6 }).collect())
            .collect();
        assert_eq!(det_by_lifting(&m), Some(det_crt(&m)));
    }

    /// Several right-hand sides lifted together give what each gives
    /// alone, and `A c = δ b` holds exactly.
    #[test]
    fn block_solves_agree_with_single_ones() {
        let mut rng = Rng::new(5);
        let m = random(&mut rng, 30, 1000);
        let solver = Solver::new(&m).expect("nonsingular modulo p");
        let bs: Vec<Vec<i128>> = (0..5).map(|s| sign_pattern(30, s)).collect();
        let many = solver.solve_many(&bs);
        for (b, got) in bs.iter().zip(&many) {
            let (delta, c) = got.clone().expect("solved");
            assert_eq!(solver.solve(b), Some((delta.clone(), c.clone())));
            for (row, &bi) in m.iter().zip(b) {
                let ac: Integer = row.iter().zip(&c).map(|(&a, x)| Integer::from(a) * x).sum();
                assert_eq!(ac, Integer::from(bi) * &delta);
            }
        }
    }

    #[test]
    fn singular_matrices_are_left_to_the_caller() {
        let m = vec![vec![1, 2], vec![2, 4]];
        assert_eq!(det_by_lifting(&m), None);
    }

    #[test]
    fn reconstruction_finds_small_fractions() {
        let modulus = Integer::from(1_000_000_007u64);
        // 3/7 mod p
        let inv7 = Integer::from(7).invert(&modulus).unwrap();
        let t = (inv7 * 3u32).rem_euc(&modulus);
        assert_eq!(
            reconstruct(&t, &modulus, &Integer::from(20_000)),
            Some(Integer::from(7))
        );
    }
}
