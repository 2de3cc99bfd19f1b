//! Arithmetic modulo word primes: an echelon basis for picking independent
//! rows, and determinants by the Chinese remainder theorem.

use rug::ops::RemRounding;
use rug::Integer;

fn mul_mod(a: u64, b: u64, p: u64) -> u64 {
    ((a as u128 * b as u128) % p as u128) as u64
}

pub(crate) fn inv_mod(a: u64, p: u64) -> u64 {
    // p prime
    let mut r = 1u64;
    let mut b = a % p;
    let mut e = p - 2;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, b, p);
        }
        b = mul_mod(b, b, p);
        e >>= 1;
    }
    r
}

pub(crate) fn to_mod(x: i64, p: u64) -> u64 {
    x.rem_euclid(p as i64) as u64
}

/// Echelon basis modulo a word prime, for picking independent rows
/// (entries kept in Montgomery form).
pub struct RankModP {
    mt: Mont,
    k: usize,
    rows: Vec<Option<Vec<u64>>>,
    pub rank: usize,
}

impl RankModP {
    /// `p` an odd prime below `2^62`.
    pub fn new(k: usize, p: u64) -> RankModP {
        RankModP {
            mt: Mont::new(p),
            k,
            rows: vec![None; k],
            rank: 0,
        }
    }

    /// True if `v` is independent of the rows seen so far (and keeps it).
    pub fn add(&mut self, v: &[i64]) -> bool {
        let mt = &self.mt;
        let p = mt.p;
        let mut w: Vec<u64> = v.iter().map(|&x| mt.to(to_mod(x, p))).collect();
        for j in 0..self.k {
            if w[j] == 0 {
                continue;
            }
            match &self.rows[j] {
                Some(b) => {
                    // b[j] = 1: w[c] -= w[j] b[c]
                    let f = w[j];
                    for (x, &y) in w[j..].iter_mut().zip(&b[j..]) {
                        let t = mt.mul(f, y);
                        *x = if *x >= t { *x - t } else { *x + p - t };
                    }
                }
                None => {
                    let inv = mt.to(inv_mod(mt.from(w[j]), p));
                    for x in w.iter_mut() {
                        *x = mt.mul(*x, inv);
                    }
                    self.rows[j] = Some(w);
                    self.rank += 1;
                    return true;
                }
            }
        }
        false
    }
}

/// Montgomery arithmetic modulo an odd `p < 2^62` (P. L. Montgomery,
/// "Modular multiplication without trial division", Math. Comp. 44 (1985)).
pub(crate) struct Mont {
    pub(crate) p: u64,
    /// `-p^{-1} mod 2^64`
    pinv: u64,
    /// `2^128 mod p`
    r2: u64,
}

impl Mont {
    pub(crate) fn new(p: u64) -> Mont {
        let mut inv: u64 = 1;
        for _ in 0..6 {
            inv = inv.wrapping_mul(2u64.wrapping_sub(p.wrapping_mul(inv)));
        }
        let r = ((1u128 << 64) % p as u128) as u64;
        let r2 = ((r as u128 * r as u128) % p as u128) as u64;
        Mont {
            p,
            pinv: inv.wrapping_neg(),
            r2,
        }
    }

    fn redc(&self, t: u128) -> u64 {
        let m = (t as u64).wrapping_mul(self.pinv);
        let u = ((t + m as u128 * self.p as u128) >> 64) as u64;
        if u >= self.p {
            u - self.p
        } else {
            u
        }
    }

    pub(crate) fn mul(&self, a: u64, b: u64) -> u64 {
        self.redc(a as u128 * b as u128)
    }

    pub(crate) fn to(&self, a: u64) -> u64 {
        self.mul(a, self.r2)
    }

    pub(crate) fn from(&self, a: u64) -> u64 {
        self.redc(a as u128)
    }
}

/// The largest prime below `n` (`n > 3`).
pub(crate) fn next_prime_below(n: u64) -> u64 {
    let mut c = (n - 1) | 1;
    if c >= n {
        c -= 2;
    }
    while Integer::from(c).is_probably_prime(30) == rug::integer::IsPrime::No {
        c -= 2;
    }
    c
}

/// `det m mod p` (0 when `m` is singular modulo `p`).
pub(crate) fn det_mod_p(m: &[Vec<i64>], p: u64) -> u64 {
    Lu::new(m, p).map_or(0, |lu| lu.det)
}

/// `A = P·L·U` modulo `p` (entries in Montgomery form), for solving.
/// Elimination steps with at least this many entries to update are split
/// across threads (below it, starting them costs more than it saves).
const LU_SPLIT_WORK: usize = 1 << 18;

pub(crate) struct Lu {
    mt: Mont,
    n: usize,
    /// Row `i` of the factorisation came from row `perm[i]` of `A`.
    perm: Vec<usize>,
    /// `L` below the diagonal (unit diagonal), `U` on and above it.
    a: Vec<Vec<u64>>,
    /// Inverses of `U`'s diagonal.
    inv_diag: Vec<u64>,
    /// `det A mod p` (plain form).
    pub(crate) det: u64,
}

impl Lu {
    /// `None` when `A` is singular modulo `p`.
    pub(crate) fn new(m: &[Vec<i64>], p: u64) -> Option<Lu> {
        let n = m.len();
        let threads = std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .clamp(1, 8);
        let mt = Mont::new(p);
        let mut a: Vec<Vec<u64>> = m
            .iter()
            .map(|r| r.iter().map(|&x| mt.to(to_mod(x, p))).collect())
            .collect();
        let mut perm: Vec<usize> = (0..n).collect();
        let mut det = mt.to(1);
        let mut inv_diag = Vec::with_capacity(n);
        for c in 0..n {
            let piv = (c..n).find(|&r| a[r][c] != 0)?;
            if piv != c {
                a.swap(piv, c);
                perm.swap(piv, c);
                det = (p - det) % p;
            }
            det = mt.mul(det, a[c][c]);
            let inv = mt.to(inv_mod(mt.from(a[c][c]), p));
            inv_diag.push(inv);
            let (top, bottom) = a.split_at_mut(c + 1);
            let pivot_row = &top[c];
            let eliminate = |rows: &mut [Vec<u64>]| {
                for row in rows.iter_mut() {
                    if row[c] == 0 {
                        continue;
                    }
                    let f = mt.mul(row[c], inv);
                    row[c] = f;
                    for (x, &y) in row[c + 1..].iter_mut().zip(pivot_row[c + 1..].iter()) {
                        let t = mt.mul(f, y);
                        *x = if *x >= t { *x - t } else { *x + p - t };
                    }
                }
            };
            // the rows below are independent: large blocks use every core
            // (the same operations on the same rows, so the same result)
            let work = bottom.len() * (n - c);
            if threads > 1 && work >= LU_SPLIT_WORK {
                let share = bottom.len().div_ceil(threads);
                std::thread::scope(|scope| {
                    for chunk in bottom.chunks_mut(share) {
                        scope.spawn(|| eliminate(chunk));
                    }
                });
            } else {
                eliminate(bottom);
            }
        }
        let det = mt.from(det);
        Some(Lu {
            mt,
            n,
            perm,
            a,
            inv_diag,
            det,
        })
    }

    /// `A^{-1} r mod p`, plain residues in `[0, p)`.
    pub(crate) fn solve(&self, r: &[u64]) -> Vec<u64> {
        let (mt, p, n) = (&self.mt, self.mt.p, self.n);
        // P L y = r: forward substitution on the permuted right-hand side
        let mut y: Vec<u64> = self.perm.iter().map(|&i| mt.to(r[i])).collect();
        for i in 0..n {
            let mut acc = y[i];
            for (j, &l) in self.a[i][..i].iter().enumerate() {
                let t = mt.mul(l, y[j]);
                acc = if acc >= t { acc - t } else { acc + p - t };
            }
            y[i] = acc;
        }
        // U x = y: back substitution
        for i in (0..n).rev() {
            let mut acc = y[i];
            for (j, &u) in self.a[i].iter().enumerate().skip(i + 1) {
                let t = mt.mul(u, y[j]);
                acc = if acc >= t { acc - t } else { acc + p - t };
            }
            y[i] = mt.mul(acc, self.inv_diag[i]);
        }
        y.into_iter().map(|v| mt.from(v)).collect()
    }
}

/// One step of the Chinese remainder theorem: `value` (mod `modulus`)
/// becomes the `x` in `(-modulus·p/2, modulus·p/2]` with `x ≡ value (mod
/// modulus)` and `x ≡ r (mod p)`, and `modulus` becomes `modulus·p`;
/// whether `value` changed, or `None` when `p` divides `modulus`.
pub(crate) fn crt_step(value: &mut Integer, modulus: &mut Integer, r: u64, p: u64) -> Option<bool> {
    let pm = Integer::from(p);
    let diff = (Integer::from(r) - &*value).rem_euc(&pm);
    let inv = Integer::from(modulus.invert_ref(&pm)?);
    let t = (diff * inv).rem_euc(&pm);
    let before = value.clone();
    *value += Integer::from(&*modulus * &t);
    *modulus *= &pm;
    let half = Integer::from(&*modulus >> 1u32);
    if *value > half {
        *value -= &*modulus;
    }
    Some(*value != before)
}

/// Primes past which an unchanged Chinese-remainder value is taken as the
/// determinant (each agreement has probability about `2^-61` of being a
/// coincidence; early termination of this kind is common practice).
pub(crate) const STABLE_PRIMES: usize = 2;

/// The determinant of a square integer matrix, by Gaussian elimination
/// modulo word primes and the Chinese remainder theorem: up to twice
/// Hadamard's bound, or earlier once the value has not changed for
/// `STABLE_PRIMES` further primes. The prover uses the result only as a
/// modulus for the Hermite form; were it wrong, the rows it gives would
/// not be relations and the self-check would reject the certificate, so
/// early termination costs no soundness. The primes are fixed in advance
/// and the stopping rule is read off prefixes of that list, so the result
/// does not depend on the number of threads that compute the residues
/// (all cores, at most 8).
pub fn det_crt(m: &[Vec<i64>]) -> Integer {
    let mut bound = Integer::from(1);
    for r in m {
        let s: Integer = r.iter().map(|&x| Integer::from(x) * x).sum();
        // ceil(sqrt(s)) >= row norm
        let root = Integer::from(s.sqrt_ref()) + 1u32;
        bound *= root;
    }
    bound <<= 1u32;
    let mut primes = Vec::new();
    let mut modulus = Integer::from(1);
    let mut cand: u64 = (1u64 << 62) - 1;
    while modulus <= bound {
        while Integer::from(cand).is_probably_prime(30) == rug::integer::IsPrime::No {
            cand -= 2;
        }
        primes.push(cand);
        modulus *= cand;
        cand -= 2;
    }
    let threads = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .clamp(1, 8);
    let mut modulus = Integer::from(1);
    let mut value = Integer::new();
    let mut unchanged = 0;
    let mut done = 0;
    // residues a few at a time (a multiple of the thread count), combined
    // one prime at a time in the fixed order
    while done < primes.len() && unchanged < STABLE_PRIMES {
        let end = primes.len().min(done + 2 * threads);
        let residues = residues(m, &primes[done..end], threads);
        for (&p, r) in primes[done..end].iter().zip(residues) {
            if unchanged >= STABLE_PRIMES {
                break;
            }
            let changed = crt_step(&mut value, &mut modulus, r, p).expect("distinct primes");
            unchanged = if !changed && done > 0 {
                unchanged + 1
            } else {
                0
            };
            done += 1;
        }
    }
    value
}

/// `det(m) mod p` for each of `primes`, in their order, on up to `threads`
/// threads (each takes a contiguous share of the primes).
fn residues(m: &[Vec<i64>], primes: &[u64], threads: usize) -> Vec<u64> {
    if threads <= 1 || primes.len() < 2 {
        return primes.iter().map(|&p| det_mod_p(m, p)).collect();
    }
    let share = primes.len().div_ceil(threads);
    std::thread::scope(|scope| {
        let handles: Vec<_> = primes
            .chunks(share)
            .map(|ps| scope.spawn(move || ps.iter().map(|&p| det_mod_p(m, p)).collect::<Vec<_>>()))
            .collect();
        handles
            .into_iter()
            .flat_map(|h| h.join().expect("a determinant thread panicked"))
            .collect()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn residues_do_not_depend_on_the_thread_count() {
        let m: Vec<Vec<i64>> = (0..12)
            .map(|i| {
                (0..12)
                    .map(|j| ((i * 7 + j * 13) % 11) as i64 - 5 + i64::from(i == j) * 9)
                    .collect()
            })
            .collect();
        let primes = [1_000_003u64, 1_000_033, 1_000_037, 1_000_039, 1_000_081];
        let one = residues(&m, &primes, 1);
        for t in 2..=4 {
            assert_eq!(residues(&m, &primes, t), one, "{t} threads");
        }
    }

    #[test]
    fn det_small() {
        let m = vec![vec![2, 1, 0], vec![1, 3, 1], vec![0, 1, 4]];
        // 2(12-1) - 1(4-0) = 18 (by hand)
        assert_eq!(det_crt(&m), 18);
        let s = vec![vec![0, 1], vec![1, 0]];
        assert_eq!(det_crt(&s), -1);
    }
}
