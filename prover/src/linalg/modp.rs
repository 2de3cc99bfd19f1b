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
        // at full rank every row depends on the basis: reducing it to zero
        // would cost k² operations to learn nothing
        if self.rank == self.k {
            return false;
        }
        let w = self.to_mont(v);
        self.insert(w)
    }

    /// [`RankModP::add`] for each of `rows` in order, and the same answers:
    /// a batch at a time is first reduced against the basis so far, its
    /// rows split across threads (each row alone, so the thread count
    /// changes nothing), and only then added one by one. Whether a row is
    /// independent of those before it depends on their span alone, not on
    /// how it is reduced. `on_batch` hears the rank after each batch.
    pub fn add_all(&mut self, rows: &[Vec<i64>], on_batch: &mut dyn FnMut(usize)) -> Vec<bool> {
        let threads = std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .clamp(1, 8);
        let batch = RANK_BATCH_PER_THREAD * threads;
        let mut out = Vec::with_capacity(rows.len());
        for chunk in rows.chunks(batch) {
            if self.rank == self.k {
                out.resize(rows.len(), false);
                break;
            }
            let mut ws: Vec<Vec<u64>> = chunk.iter().map(|v| self.to_mont(v)).collect();
            let share = ws.len().div_ceil(threads);
            let this = &*self;
            std::thread::scope(|scope| {
                for part in ws.chunks_mut(share) {
                    scope.spawn(move || part.iter_mut().for_each(|w| this.reduce(w)));
                }
            });
            for w in ws {
                let added = self.rank < self.k && self.insert(w);
                out.push(added);
            }
            on_batch(self.rank);
        }
        out
    }

    /// Columns without a basis row.
    pub fn pivotless(&self) -> Vec<usize> {
        (0..self.k).filter(|&j| self.rows[j].is_none()).collect()
    }

    fn to_mont(&self, v: &[i64]) -> Vec<u64> {
        let (mt, p) = (&self.mt, self.mt.p);
        v.iter().map(|&x| mt.to(to_mod(x, p))).collect()
    }

    /// `w` minus the multiples of basis rows that clear it at every pivot.
    fn reduce(&self, w: &mut [u64]) {
        for j in 0..self.k {
            if w[j] != 0 {
                if let Some(b) = &self.rows[j] {
                    self.eliminate(w, b, j);
                }
            }
        }
    }

    /// `w[c] -= w[j] b[c]` for `c ≥ j` (`b[j] = 1`, `b` zero before `j`).
    fn eliminate(&self, w: &mut [u64], b: &[u64], j: usize) {
        let (mt, p) = (&self.mt, self.mt.p);
        let f = w[j];
        for (x, &y) in w[j..].iter_mut().zip(&b[j..]) {
            let t = mt.mul(f, y);
            *x = if *x >= t { *x - t } else { *x + p - t };
        }
    }

    /// Reduces `w` (Montgomery form) up to its first column without a
    /// pivot, which it then becomes (scaled to 1 there); false if nothing
    /// is left of it.
    fn insert(&mut self, mut w: Vec<u64>) -> bool {
        for j in 0..self.k {
            if w[j] == 0 {
                continue;
            }
            match &self.rows[j] {
                Some(b) => self.eliminate(&mut w, b, j),
                None => {
                    let (mt, p) = (&self.mt, self.mt.p);
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

/// Rows per thread that [`RankModP::add_all`] reduces at a time: the rows
/// of one batch are then added one by one, at a cost that grows with the
/// square of the batch.
const RANK_BATCH_PER_THREAD: usize = 32;

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
        let (mut lu, swaps) = Lu::eliminate(m, m.len(), p)?;
        if swaps % 2 == 1 {
            lu.det = (p - lu.det) % p;
        }
        Some(lu)
    }

    /// The decomposition of `n` rows chosen from `candidates` (each of
    /// length `n`), found while it is computed: column by column the pivot
    /// is the first remaining candidate with a nonzero entry there, so the
    /// rows chosen are independent modulo `p`. The indices of the chosen
    /// rows come with it, in the order the decomposition takes them (its
    /// `A` is those rows in that order, and `det` is theirs); `None` when
    /// some column has no pivot left. One elimination where picking
    /// independent rows first and decomposing them after would take two.
    pub(crate) fn choosing(candidates: &[Vec<i64>], n: usize, p: u64) -> Option<(Lu, Vec<usize>)> {
        if candidates.iter().any(|r| r.len() != n) {
            return None;
        }
        let (mut lu, _) = Lu::eliminate(candidates, n, p)?;
        let chosen = std::mem::replace(&mut lu.perm, (0..n).collect());
        Some((lu, chosen))
    }

    /// Gaussian elimination with the first nonzero pivot on the `n`
    /// columns of `m` (at least `n` rows), keeping the first `n` rows as
    /// they end up; `det` is the product of the pivots, and the number of
    /// row swaps comes with it.
    fn eliminate(m: &[Vec<i64>], n: usize, p: u64) -> Option<(Lu, usize)> {
        let rows = m.len();
        if rows < n {
            return None;
        }
        let threads = std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .clamp(1, 8);
        let mt = Mont::new(p);
        let mut a: Vec<Vec<u64>> = m
            .iter()
            .map(|r| r.iter().map(|&x| mt.to(to_mod(x, p))).collect())
            .collect();
        let mut perm: Vec<usize> = (0..rows).collect();
        let mut swaps = 0;
        let mut det = mt.to(1);
        let mut inv_diag = Vec::with_capacity(n);
        for c in 0..n {
            let piv = (c..rows).find(|&r| a[r][c] != 0)?;
            if piv != c {
                a.swap(piv, c);
                perm.swap(piv, c);
                swaps += 1;
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
        a.truncate(n);
        perm.truncate(n);
        let det = mt.from(det);
        Some((
            Lu {
                mt,
                n,
                perm,
                a,
                inv_diag,
                det,
            },
            swaps,
        ))
    }

    /// `A^{-1} r mod p` for each of `rs`, plain residues in `[0, p)`: the
    /// same answers as [`Lu::solve`] one at a time, with each entry of the
    /// factors read once for all of them.
    pub(crate) fn solve_many(&self, rs: &[Vec<u64>]) -> Vec<Vec<u64>> {
        let (mt, p, n, t) = (&self.mt, self.mt.p, self.n, rs.len());
        let sub = |acc: u64, l: u64, y: u64| {
            let v = mt.mul(l, y);
            if acc >= v {
                acc - v
            } else {
                acc + p - v
            }
        };
        // y[i·t + s]: entry i of the s-th vector
        let mut y = vec![0u64; n * t];
        for (i, &from) in self.perm.iter().enumerate() {
            for (s, r) in rs.iter().enumerate() {
                y[i * t + s] = mt.to(r[from]);
            }
        }
        let mut acc = vec![0u64; t];
        // P L z = r: forward substitution
        for i in 0..n {
            acc.copy_from_slice(&y[i * t..(i + 1) * t]);
            for (j, &l) in self.a[i][..i].iter().enumerate() {
                if l != 0 {
                    for (a, &v) in acc.iter_mut().zip(&y[j * t..(j + 1) * t]) {
                        *a = sub(*a, l, v);
                    }
                }
            }
            y[i * t..(i + 1) * t].copy_from_slice(&acc);
        }
        // U x = z: back substitution
        for i in (0..n).rev() {
            acc.copy_from_slice(&y[i * t..(i + 1) * t]);
            for (j, &u) in self.a[i].iter().enumerate().skip(i + 1) {
                if u != 0 {
                    for (a, &v) in acc.iter_mut().zip(&y[j * t..(j + 1) * t]) {
                        *a = sub(*a, u, v);
                    }
                }
            }
            for (s, &a) in acc.iter().enumerate() {
                y[i * t + s] = mt.mul(a, self.inv_diag[i]);
            }
        }
        (0..t)
            .map(|s| (0..n).map(|i| mt.from(y[i * t + s])).collect())
            .collect()
    }

    /// `A^{-1} r mod p`, plain residues in `[0, p)`.
    #[cfg(test)]
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
    fn batched_rank_picks_the_same_rows_as_one_at_a_time() {
        // 150 rows on 40 columns: random rows, exact copies and sums of
        // earlier rows (dependent), and runs of zeros
        let mut state = 7u64;
        let mut next = || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1);
            (state >> 33) as i64
        };
        let mut rows: Vec<Vec<i64>> = Vec::new();
        for i in 0..150 {
            let row: Vec<i64> = match i % 5 {
                0 if i > 10 => rows[i - 3]
                    .iter()
                    .zip(&rows[i - 7])
                    .map(|(a, b)| a - 2 * b)
                    .collect(),
                1 => vec![0; 40],
                _ => (0..40)
                    .map(|_| if next() % 3 == 0 { next() % 9 - 4 } else { 0 })
                    .collect(),
            };
            rows.push(row);
        }
        let p = (1u64 << 61) - 1;
        let mut one = RankModP::new(40, p);
        let single: Vec<bool> = rows.iter().map(|r| one.add(r)).collect();
        let mut all = RankModP::new(40, p);
        assert_eq!(all.add_all(&rows, &mut |_| {}), single);
        assert_eq!(all.rank, one.rank);
        assert_eq!(one.rank, 40, "the test wants the full-rank stop covered");
        // a second call continues from the basis so far
        let mut halves = RankModP::new(40, p);
        let mut split = halves.add_all(&rows[..37], &mut |_| {});
        split.extend(halves.add_all(&rows[37..], &mut |_| {}));
        assert_eq!(split, single);
    }

    #[test]
    fn block_solves_agree_with_single_ones() {
        let m = crate::linalg::random_rows(&mut crate::rng::Rng::new(3), 25, 25, 50);
        let p = (1u64 << 61) - 1;
        let lu = Lu::new(&m, p).expect("nonsingular");
        let rs: Vec<Vec<u64>> = (0..3u64)
            .map(|s| (0..25u64).map(|i| (i * i + s * 7919) % p).collect())
            .collect();
        let many = lu.solve_many(&rs);
        for (r, x) in rs.iter().zip(&many) {
            assert_eq!(&lu.solve(r), x);
            // A x ≡ r (mod p)
            for (row, &ri) in m.iter().zip(r) {
                let ax = row.iter().zip(x).fold(0u128, |acc, (&a, &xv)| {
                    (acc + to_mod(a, p) as u128 * xv as u128) % p as u128
                });
                assert_eq!(ax as u64, ri);
            }
        }
    }

    /// Rows picked while decomposing: independent, decomposed as chosen
    /// (`det` theirs, and solves right), dependent rows skipped.
    #[test]
    fn choosing_picks_independent_rows_and_decomposes_them() {
        let mut rng = crate::rng::Rng::new(4);
        let n = 20;
        let base = crate::linalg::random_rows(&mut rng, n, n, 30);
        // a zero row, a copy and a sum of earlier rows come first
        let mut cands = vec![vec![0i64; n], base[0].clone(), base[0].clone()];
        cands.push(base[0].iter().zip(&base[1]).map(|(a, b)| a + b).collect());
        cands.extend(base[1..].iter().cloned());
        let p = (1u64 << 61) - 1;
        let (lu, chosen) = Lu::choosing(&cands, n, p).expect("full rank");
        assert_eq!(chosen.len(), n);
        let mut sorted = chosen.clone();
        sorted.sort_unstable();
        sorted.dedup();
        assert_eq!(sorted.len(), n, "{chosen:?}");
        assert!(!chosen.contains(&0), "the zero row");
        let a: Vec<Vec<i64>> = chosen.iter().map(|&i| cands[i].clone()).collect();
        let want = det_crt(&a).rem_euc(Integer::from(p));
        assert_eq!(Integer::from(lu.det), want);
        let r: Vec<u64> = (0..n as u64).map(|i| i * 7 + 1).collect();
        let x = lu.solve(&r);
        for (row, &ri) in a.iter().zip(&r) {
            let ax = row.iter().zip(&x).fold(0u128, |acc, (&v, &xv)| {
                (acc + to_mod(v, p) as u128 * xv as u128) % p as u128
            });
            assert_eq!(ax as u64, ri);
        }
        // too few independent rows
        assert!(Lu::choosing(&cands[..n], n, p).is_none());
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
