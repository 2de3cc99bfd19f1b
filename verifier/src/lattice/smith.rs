//! The Smith normal form of the generator block: `U·H·V = diag(d)`,
//! `U·U' = V·V' = I`, `d_i > 0`, `d_i | d_{i+1}`. Then `U` and `V` are
//! unimodular and `Z^r / H Z^r ≅ ⊕ Z/d_i` (Cohen GTM 138, §2.4.3).

use crate::limits::MAX_ENTRY_BITS;
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::short_number;
use classcert_format::Smith;
use rug::Integer;

/// `a · b` for `n × n` matrices the caller has checked with [`is_square`].
pub(crate) fn mat_mul(a: &[Vec<Integer>], b: &[Vec<Integer>], n: usize) -> Vec<Vec<Integer>> {
    let mut out = vec![vec![Integer::new(); n]; n];
    for (row_out, row_a) in out.iter_mut().zip(a.iter()) {
        for (k, aik) in row_a.iter().enumerate() {
            if aik.is_zero() {
                continue;
            }
            if let Some(row_b) = b.get(k) {
                for (o, bkj) in row_out.iter_mut().zip(row_b.iter()) {
                    *o += Integer::from(aik * bkj);
                }
            }
        }
    }
    out
}

/// `n × n`, every entry within the size limit.
pub(crate) fn is_square(m: &[Vec<Integer>], n: usize) -> bool {
    m.len() == n
        && m.iter()
            .all(|r| r.len() == n && r.iter().all(|x| x.significant_bits() <= MAX_ENTRY_BITS))
}

fn is_identity(m: &[Vec<Integer>]) -> bool {
    m.iter().enumerate().all(|(i, r)| {
        r.iter()
            .enumerate()
            .all(|(j, x)| *x == Integer::from(i == j))
    })
}

/// Checks the Smith form of the `r × r` matrix `h` (already shape-checked);
/// returns `∏ d_i`.
pub(crate) fn check_smith(h: &[Vec<Integer>], s: &Smith, r: usize) -> Check<Integer> {
    if !(is_square(&s.u, r)
        && is_square(&s.u_inv, r)
        && is_square(&s.v, r)
        && is_square(&s.v_inv, r))
        || s.diagonal.len() != r
    {
        return reject(
            Reason::SmithShape,
            format!("Smith transforms must be {r} x {r}"),
        );
    }
    reject_if(
        !is_identity(&mat_mul(&s.u, &s.u_inv, r)) || !is_identity(&mat_mul(&s.v, &s.v_inv, r)),
        Reason::SmithNotUnimodular,
        "U U' or V V' is not the identity",
    )?;
    let uhv = mat_mul(&mat_mul(&s.u, h, r), &s.v, r);
    for (i, row) in uhv.iter().enumerate() {
        for (j, x) in row.iter().enumerate() {
            let want = if i == j {
                s.diagonal.get(i).cloned().unwrap_or_default()
            } else {
                Integer::new()
            };
            if *x != want {
                return reject(
                    Reason::SmithMismatch,
                    format!(
                        "(U H V)[{i}][{j}] = {}, not the stated {}",
                        short_number(x),
                        short_number(&want)
                    ),
                );
            }
        }
    }
    let mut h_star = Integer::from(1);
    for (i, di) in s.diagonal.iter().enumerate() {
        reject_if(
            *di < 1 || di.significant_bits() > MAX_ENTRY_BITS,
            Reason::SmithDivisibility,
            format_args!("diagonal entry {i} must be positive"),
        )?;
        if let Some(next) = s.diagonal.get(i + 1) {
            reject_if(
                !next.is_divisible(di),
                Reason::SmithDivisibility,
                format_args!(
                    "d_{i} = {} does not divide d_{} = {}",
                    short_number(di),
                    i + 1,
                    short_number(next)
                ),
            )?;
        }
        h_star *= di;
    }
    Ok(h_star)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(rows: &[&[i64]]) -> Vec<Vec<Integer>> {
        rows.iter()
            .map(|r| r.iter().map(|&x| Integer::from(x)).collect())
            .collect()
    }

    #[test]
    fn smith_of_a_small_block() {
        // H = [[2, 0], [0, 3]] has Smith form diag(1, 6) (common practice:
        // Z/2 ⊕ Z/3 ≅ Z/6), with the transforms below (U H V computed here).
        let h = m(&[&[2, 0], &[0, 3]]);
        let u = m(&[&[-1, 1], &[3, -2]]);
        let v = m(&[&[1, 3], &[1, 2]]);
        let uhv = mat_mul(&mat_mul(&u, &h, 2), &v, 2);
        assert_eq!(uhv, m(&[&[1, 0], &[0, 6]]));
        let u_inv = m(&[&[2, 1], &[3, 1]]);
        let v_inv = m(&[&[-2, 3], &[1, -1]]);
        let s = Smith {
            u: u.clone(),
            u_inv: u_inv.clone(),
            v: v.clone(),
            v_inv: v_inv.clone(),
            diagonal: vec![Integer::from(1), Integer::from(6)],
        };
        assert_eq!(check_smith(&h, &s, 2).unwrap(), 6);
        let mut bad = s.clone();
        bad.diagonal = vec![Integer::from(6), Integer::from(1)];
        assert_eq!(
            check_smith(&h, &bad, 2).unwrap_err().reason,
            Reason::SmithMismatch
        );
        let mut bad = s.clone();
        bad.u_inv = m(&[&[1, 0], &[0, 1]]);
        assert_eq!(
            check_smith(&h, &bad, 2).unwrap_err().reason,
            Reason::SmithNotUnimodular
        );
        let mut bad = s.clone();
        bad.v.pop();
        assert_eq!(
            check_smith(&h, &bad, 2).unwrap_err().reason,
            Reason::SmithShape
        );
        // diag(2, 3) is the right product but not a Smith form
        let d23 = Smith {
            u: m(&[&[1, 0], &[0, 1]]),
            u_inv: m(&[&[1, 0], &[0, 1]]),
            v: m(&[&[1, 0], &[0, 1]]),
            v_inv: m(&[&[1, 0], &[0, 1]]),
            diagonal: vec![Integer::from(2), Integer::from(3)],
        };
        assert_eq!(
            check_smith(&h, &d23, 2).unwrap_err().reason,
            Reason::SmithDivisibility
        );
    }
}
