//! Small linear algebra over `F_p` for a prime `p < 2^63` ([`Fp`]), on
//! machine words (vectors `Vec<u64>` with entries in `[0, p)`; a matrix is
//! a list of rows of one length).
//!
//! The sizes here are small (at most `n^2 = 36` columns and a few dozen
//! rows), so every function is plain Gaussian elimination: at most
//! `rows · width · (rows + width)` operations modulo `p`. That `p` is prime
//! is the caller's to know; a composite `p` shows up as a pivot with no
//! inverse, and the answer is `None`, never a panic. The unit tests check
//! them against the same elimination on [`Integer`]s.

use super::fppoly::Fp;
use crate::arith::mod_small;
use rug::Integer;

/// `v mod p`, entries in `[0, p)`, for `p ≥ 1`; for `p < 1`, where no
/// reduction is meant, `v` unchanged (the callers check `p ≥ 2` first).
pub fn reduce(v: &[Integer], p: &Integer) -> Vec<Integer> {
    if *p < 1 {
        return v.to_vec();
    }
    v.iter().map(|c| Integer::from(c.modulo_ref(p))).collect()
}

/// `v mod p` in machine words, `p` the modulus of `k`.
pub(crate) fn words(v: &[Integer], k: Fp) -> Vec<u64> {
    v.iter().map(|c| mod_small(c, k.modulus())).collect()
}

/// The rows of `m` all have length `width`.
fn same_width<T>(m: &[Vec<T>], width: usize) -> bool {
    m.iter().all(|r| r.len() == width)
}

/// The reduced row echelon form of rows with entries in `[0, p)`, `p` the
/// modulus of `k`, zero rows dropped: each row starts with a 1 (its pivot)
/// further right than the row before, and the other rows are 0 in that
/// column. It depends only on the row space, so two row spaces are equal
/// iff their echelon forms are (common practice). `None` if the rows
/// differ in length or a pivot has no inverse modulo `p`. The pivot row is
/// 0 left of `col` (all rows from `rank` on are), so scaling and
/// elimination start there.
pub(crate) fn echelon_words(mut m: Vec<Vec<u64>>, k: Fp) -> Option<Vec<Vec<u64>>> {
    let width = m.first().map_or(0, Vec::len);
    if !same_width(&m, width) {
        return None;
    }
    let mut rank = 0;
    for col in 0..width {
        let nonzero = |r: &Vec<u64>| r.get(col).is_some_and(|&c| c != 0);
        let Some(found) = (rank..m.len()).find(|&i| m.get(i).is_some_and(nonzero)) else {
            continue;
        };
        // rank ≤ found < m.len(): both in range.
        m.swap(rank, found);
        let row = m.get_mut(rank)?;
        let inv = k.inv_c(*row.get(col)?)?;
        for c in row.iter_mut().skip(col) {
            *c = k.mul_c(*c, inv);
        }
        let pivot = row.clone();
        for (i, r) in m.iter_mut().enumerate() {
            let c = r.get(col).copied().unwrap_or(0);
            if i != rank && c != 0 {
                for (x, &y) in r.iter_mut().zip(&pivot).skip(col) {
                    *x = k.sub_c(*x, k.mul_c(c, y));
                }
            }
        }
        rank += 1;
    }
    m.truncate(rank);
    Some(m)
}

/// A basis, in reduced echelon form, of the vectors `x` with
/// `Σ_i x_i · rows[i] = 0` modulo `p` (the left kernel), for entries in
/// `[0, p)`, `p` the modulus of `k`; `None` as [`echelon_words`].
///
/// Method (common practice): reduce `[rows | identity]` to echelon form
/// `[E·rows | E]` with `E` invertible. The rows whose left part vanished
/// are rows of `E` with `E_i · rows = 0`; there are `len(rows) - rank` of
/// them (the rows with a pivot in the left part number the rank), and they
/// are independent as rows of `E`, so they span the left kernel. Their
/// right parts are in reduced echelon form, since their pivots lie there.
pub(crate) fn kernel_words(rows: &[Vec<u64>], k: Fp) -> Option<Vec<Vec<u64>>> {
    kernel_with(rows, |m| echelon_words(m, k))
}

/// The left kernel with the echelon form given by `echelon`.
fn kernel_with<T: Clone + From<u8> + PartialEq>(
    rows: &[Vec<T>],
    echelon: impl FnOnce(Vec<Vec<T>>) -> Option<Vec<Vec<T>>>,
) -> Option<Vec<Vec<T>>> {
    let width = rows.first().map_or(0, Vec::len);
    if !same_width(rows, width) {
        return None;
    }
    let count = rows.len();
    let augmented: Vec<Vec<T>> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let unit = (0..count).map(|j| T::from(u8::from(i == j)));
            r.iter().cloned().chain(unit).collect()
        })
        .collect();
    let zero = T::from(0);
    let reduced = echelon(augmented)?.into_iter();
    let left_zero = |row: &Vec<T>| row.iter().take(width).all(|c| *c == zero);
    Some(
        reduced
            .filter(left_zero)
            .map(|row| row.into_iter().skip(width).collect())
            .collect(),
    )
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    // The same elimination on Integers (any p), the reference for the
    // word versions.
    /// The reduced row echelon form of the rows modulo `p`, zero rows dropped:
    /// each row starts with a 1 (its pivot) further right than the row before,
    /// and the other rows are 0 in that column. It depends only on the row
    /// space, so two row spaces are equal iff their echelon forms are (common
    /// practice). `None` if `p < 2`, the rows differ in length, or a pivot has
    /// no inverse modulo `p`.
    pub(crate) fn echelon(rows: &[Vec<Integer>], p: &Integer) -> Option<Vec<Vec<Integer>>> {
        if *p < 2 {
            return None;
        }
        let width = rows.first().map_or(0, Vec::len);
        if !same_width(rows, width) {
            return None;
        }
        let mut m: Vec<Vec<Integer>> = rows.iter().map(|r| reduce(r, p)).collect();
        let mut rank = 0;
        for col in 0..width {
            let nonzero = |r: &Vec<Integer>| r.get(col).is_some_and(|c| *c != 0);
            let Some(found) = (rank..m.len()).find(|&i| m.get(i).is_some_and(nonzero)) else {
                continue;
            };
            // rank ≤ found < m.len(): both in range.
            m.swap(rank, found);
            let row = m.get(rank)?;
            let inv = Integer::from(row.get(col)?.invert_ref(p)?);
            let pivot: Vec<Integer> = row
                .iter()
                .map(|c| Integer::from(c * &inv).modulo(p))
                .collect();
            for (i, r) in m.iter_mut().enumerate() {
                if i == rank {
                    r.clone_from(&pivot);
                    continue;
                }
                let c = r.get(col).cloned().unwrap_or_default();
                if c != 0 {
                    for (x, y) in r.iter_mut().zip(&pivot) {
                        *x = Integer::from(&*x - &c * y).modulo(p);
                    }
                }
            }
            rank += 1;
        }
        m.truncate(rank);
        Some(m)
    }

    /// The rank of the rows modulo `p`; `None` as [`echelon`].
    pub(crate) fn rank(rows: &[Vec<Integer>], p: &Integer) -> Option<usize> {
        echelon(rows, p).map(|e| e.len())
    }

    /// A basis, in reduced echelon form, of the vectors `x` with
    /// `Σ_i x_i · rows[i] = 0` modulo `p` (the left kernel); `None` as
    /// [`echelon`].
    ///
    /// Method (common practice): reduce `[rows | identity]` to echelon form
    /// `[E·rows | E]` with `E` invertible. The rows whose left part vanished
    /// are rows of `E` with `E_i · rows = 0`; there are `len(rows) - rank` of
    /// them (the rows with a pivot in the left part number the rank), and they
    /// are independent as rows of `E`, so they span the left kernel. Their
    /// right parts are in reduced echelon form, since their pivots lie there.
    pub(crate) fn kernel(rows: &[Vec<Integer>], p: &Integer) -> Option<Vec<Vec<Integer>>> {
        kernel_with(rows, |m| echelon(&m, p))
    }

    /// Whether `v` lies in the row space of `rows` modulo `p`: adding it
    /// does not raise the rank.
    pub(crate) fn in_row_space(rows: &[Vec<Integer>], v: &[Integer], p: &Integer) -> Option<bool> {
        let mut with_v = rows.to_vec();
        with_v.push(v.to_vec());
        Some(rank(&with_v, p)? == rank(rows, p)?)
    }
    use crate::field::TestRng;

    fn v(c: &[i64]) -> Vec<Integer> {
        c.iter().map(|&x| Integer::from(x)).collect()
    }

    fn m(rows: &[&[i64]]) -> Vec<Vec<Integer>> {
        rows.iter().map(|r| v(r)).collect()
    }

    /// All `p^len` vectors of `F_p^len`, for the brute-force checks.
    fn all_vectors(p: u64, len: u32) -> Vec<Vec<Integer>> {
        (0..p.pow(len))
            .map(|mut i| {
                (0..len)
                    .map(|_| {
                        let r = i % p;
                        i /= p;
                        Integer::from(r)
                    })
                    .collect()
            })
            .collect()
    }

    fn combine(x: &[Integer], rows: &[Vec<Integer>], p: &Integer, width: usize) -> Vec<Integer> {
        let mut out = vec![Integer::new(); width];
        for (c, r) in x.iter().zip(rows) {
            for (o, y) in out.iter_mut().zip(r) {
                *o += Integer::from(c * y);
            }
        }
        reduce(&out, p)
    }

    #[test]
    fn small_examples() {
        // By hand: over F_5, (1 2 3) and (2 4 4) have rank 2 (the second
        // minus twice the first is (0 0 -2)); (2 4 6) = 2·(1 2 3).
        let p = Integer::from(5);
        let a = m(&[&[1, 2, 3], &[2, 4, 4], &[2, 4, 6]]);
        let e = echelon(&a, &p).unwrap();
        assert_eq!(e, m(&[&[1, 2, 0], &[0, 0, 1]]));
        assert_eq!(rank(&a, &p), Some(2));
        // Left kernel: 2·row0 - row2 = 0, and row1, row0 independent.
        let k = kernel(&a, &p).unwrap();
        assert_eq!(k, m(&[&[1, 0, 2]])); // (1, 0, 2)·A = (5, 10, 15) ≡ 0
        assert_eq!(in_row_space(&a, &v(&[3, 6, 7]), &p), Some(true)); // row0 + row1
        assert_eq!(in_row_space(&a, &v(&[0, 1, 0]), &p), Some(false));
        // Negative entries are reduced; over F_2 the same rows differ.
        assert_eq!(rank(&m(&[&[-1, 1], &[1, 1]]), &Integer::from(2)), Some(1));
        assert_eq!(rank(&m(&[&[-1, 1], &[1, 1]]), &Integer::from(3)), Some(2));
        // A large prime: 2^127 - 1 (a Mersenne prime, common practice).
        let big = (Integer::from(1) << 127) - 1;
        let b = vec![v(&[3, 5]), vec![Integer::from(&big + 3), Integer::from(5)]];
        assert_eq!(rank(&b, &big), Some(1));
        // Bad input: p < 2, ragged rows, a composite modulus with a
        // non-invertible pivot.
        assert_eq!(echelon(&a, &Integer::from(1)), None);
        assert_eq!(echelon(&m(&[&[1, 2], &[1]]), &p), None);
        assert_eq!(echelon(&m(&[&[2, 1]]), &Integer::from(4)), None);
        assert_eq!(in_row_space(&a, &v(&[1, 2]), &p), None);
        assert_eq!(rank(&[], &p), Some(0));
        assert_eq!(reduce(&v(&[-3, 7]), &p), v(&[2, 2]));
        assert_eq!(reduce(&v(&[-3, 7]), &Integer::new()), v(&[-3, 7]));
        assert_eq!(kernel(&[], &p), Some(vec![]));
    }

    #[test]
    fn against_brute_force() {
        // Over F_2, F_3, F_5 with up to 4 rows of length up to 3: the row
        // space, the left kernel and the rank against enumeration of all
        // coefficient vectors (the definitions themselves).
        let mut rng = TestRng::new(21);
        for _ in 0..300 {
            let p64 = [2u64, 3, 5][rng.range(0, 2) as usize];
            let p = Integer::from(p64);
            let rows_n = rng.range(1, 4) as u32;
            let width = rng.range(1, 3) as usize;
            let rows: Vec<Vec<Integer>> = (0..rows_n)
                .map(|_| {
                    (0..width)
                        .map(|_| Integer::from(rng.range(-7, 7)))
                        .collect()
                })
                .collect();
            let span: std::collections::BTreeSet<Vec<Integer>> = all_vectors(p64, rows_n)
                .iter()
                .map(|x| combine(x, &rows, &p, width))
                .collect();
            let e = echelon(&rows, &p).unwrap();
            // |row space| = p^rank.
            assert_eq!(span.len() as u64, p64.pow(e.len() as u32));
            for w in all_vectors(p64, width as u32) {
                assert_eq!(in_row_space(&rows, &w, &p), Some(span.contains(&w)));
            }
            // Echelon rows lie in the span and have leading 1s moving right.
            let mut last = None;
            for r in &e {
                assert!(span.contains(r));
                let lead = r.iter().position(|c| *c != 0).unwrap();
                assert_eq!(r[lead], 1);
                assert!(last.is_none_or(|l| lead > l));
                for other in &e {
                    if other != r {
                        assert_eq!(other[lead], 0);
                    }
                }
                last = Some(lead);
            }
            // The kernel: exactly the x with x·rows = 0.
            let k = kernel(&rows, &p).unwrap();
            assert_eq!(k.len(), rows_n as usize - e.len());
            let zero = vec![Integer::new(); width];
            let killers: Vec<_> = all_vectors(p64, rows_n)
                .into_iter()
                .filter(|x| combine(x, &rows, &p, width) == zero)
                .collect();
            assert_eq!(killers.len() as u64, p64.pow(k.len() as u32));
            for x in &killers {
                assert_eq!(in_row_space(&k, x, &p), Some(true));
            }
            for x in &k {
                assert_eq!(combine(x, &rows, &p, width), zero);
            }
        }
    }

    #[test]
    fn words_match_integers() {
        // The machine-word echelon form and kernel against the Integer
        // ones (the plain definitions above), on random matrices with
        // dependent rows, for primes below and above 2^32 and near 2^63.
        let mut rng = TestRng::new(22);
        for p64 in crate::field::fppoly::tests::word_primes() {
            let (k, p) = (Fp::new(p64).unwrap(), Integer::from(p64));
            for _ in 0..60 {
                let (rows_n, width) = (rng.range(1, 7) as usize, rng.range(1, 9) as usize);
                let mut rows: Vec<Vec<u64>> = Vec::new();
                for _ in 0..rows_n {
                    let row: Vec<u64> = match (rows.len(), rng.range(0, 3)) {
                        (2.., 0) => {
                            let c = rng.next() % p64;
                            rows[0]
                                .iter()
                                .zip(&rows[1])
                                .map(|(&x, &y)| k.add_c(x, k.mul_c(c, y)))
                                .collect()
                        }
                        (_, 1) => (0..width).map(|_| rng.next() % 3 % p64).collect(),
                        _ => (0..width).map(|_| rng.next() % p64).collect(),
                    };
                    rows.push(row);
                }
                let big: Vec<Vec<Integer>> = rows
                    .iter()
                    .map(|r| r.iter().map(|&c| Integer::from(c)).collect())
                    .collect();
                let to_big = |m: Vec<Vec<u64>>| -> Vec<Vec<Integer>> {
                    m.into_iter()
                        .map(|r| r.into_iter().map(Integer::from).collect())
                        .collect()
                };
                assert_eq!(
                    echelon_words(rows.clone(), k).map(to_big),
                    echelon(&big, &p)
                );
                assert_eq!(kernel_words(&rows, k).map(to_big), kernel(&big, &p));
            }
            let ragged = vec![vec![1, 2], vec![1]];
            assert_eq!(echelon_words(ragged.clone(), k), None);
            assert_eq!(kernel_words(&ragged, k), None);
        }
    }
}
