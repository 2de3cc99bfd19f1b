//! Units in compact representation (`D > 0`), checked by ideal equations
//! in Hermite normal form.
//!
//! The certificate gives ideals `a_j = [a_j, (b_j + sqrt D)/2]` and
//! elements `β_j = μ_j / s_j`, `μ_j = (x_j + y_j sqrt D)/2 ∈ O`, for
//! `j = 1..l`. With `a_0 = O` the verifier checks, for every `j`,
//!
//! ```text
//! μ_j a_j = s_j a_{j-1}^2          (equality of Z-lattices)
//! ```
//!
//! and `a_l = O`. By induction `a_j = Γ_j^{-1} O` with
//! `Γ_j = ∏_{i <= j} β_i^{2^{j-i}}`, so `ε = Γ_l` has `εO = O`: a unit
//! (J. Buchmann, C. Thiel and H. C. Williams, "Short representation of
//! quadratic integers", 1995). Then `log|ε| = Σ 2^{l-j} log|β_j|` in
//! outward-rounded intervals, and `N(ε)` has the sign of `N(μ_l)`: every
//! other factor appears to an even power.
//!
//! Lattices are compared through a canonical basis: elements are written
//! `(X + Y sqrt D)/2` as pairs `(X, Y)`, and a rank-2 lattice of pairs has
//! the unique basis `(p, 0), (x0, y0)` with `p, y0 > 0` and `0 <= x0 < p`
//! (Hermite normal form; H. Cohen, GTM 138, §2.4.2). The square of an ideal
//! comes from composition (Cohen Alg. 5.4.7: the product of the ideals of
//! primitive forms is `d [a3, (b3 + sqrt D)/2]`).

use crate::analytic::interval::Interval;
use crate::ideals::form::Form;
use crate::limits::*;
use crate::relations::elements::log_abs_alpha;
use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::CompactStep;
use rug::Integer;

/// A pair `(X, Y)` standing for `(X + Y sqrt D)/2`.
type Pair = (Integer, Integer);

/// The canonical basis `((p, 0), (x0, y0))` of the lattice the pairs span,
/// or `None` if it does not have rank 2.
fn hermite(vs: &[Pair]) -> Option<(Integer, Pair)> {
    let mut u: Pair = (Integer::new(), Integer::new());
    let mut p = Integer::new();
    for (vx, vy) in vs {
        if vy.is_zero() {
            p = p.gcd(vx);
            continue;
        }
        if u.1.is_zero() {
            p = p.gcd(&u.0);
            u = (vx.clone(), vy.clone());
            continue;
        }
        // g = s uy + t vy; (s u + t v) has y = g, (vy/g) u - (uy/g) v has y = 0
        let (g, s, t) = u.1.clone().extended_gcd(vy.clone(), Integer::new());
        let zero_x = Integer::from(vy / &g) * &u.0 - Integer::from(&u.1 / &g) * vx;
        u = (s.clone() * &u.0 + Integer::from(&t * vx), g);
        p = p.gcd(&zero_x);
    }
    if p.is_zero() || u.1.is_zero() {
        return None;
    }
    if u.1 < 0 {
        u = (-u.0, -u.1);
    }
    let x0 = u.0.modulo(&p);
    Some((p, (x0, u.1)))
}

/// `μ · (X + Y sqrt D)/2` for `μ = (x + y sqrt D)/2`, as a pair.
fn times(d: &Integer, x: &Integer, y: &Integer, v: &Pair) -> Pair {
    let xx = Integer::from(x * &v.0) + Integer::from(y * &v.1) * d;
    let yy = Integer::from(x * &v.1) + Integer::from(y * &v.0);
    (xx >> 1u32, yy >> 1u32)
}

/// The Z-basis `a, (b + sqrt D)/2` of `[a, (b + sqrt D)/2]`, as pairs.
fn basis(a: &Integer, b: &Integer) -> [Pair; 2] {
    [
        (Integer::from(a << 1u32), Integer::new()),
        (b.clone(), Integer::from(1)),
    ]
}

/// What the chain shows: `R* = |log|ε||` (not yet known to be nonzero)
/// and the sign of `N(ε)`.
pub struct Chain {
    pub log_eps: Interval,
    pub norm_negative: bool,
}

/// Checks the chain `steps` (see the module documentation).
pub fn check_chain(d: &Integer, steps: &[CompactStep]) -> Check<Chain> {
    let bad = |j: usize, why: &str| {
        reject(
            Reason::UnitChainMismatch,
            format!("compact representation, step {}: {why}", j + 1),
        )
    };
    reject_if(
        steps.len() > MAX_COMPACT_STEPS,
        Reason::OverLimit,
        "the compact representation is too long",
    )?;
    let l = steps.len();
    let prec = 224 + u32::try_from(l).unwrap_or(u32::MAX).min(MAX_ENTRY_BITS);
    let mut log_eps = Interval::int_prec(&Integer::new(), prec);
    let mut norm_negative = false;
    // a_0 = O = [1, (σ + sqrt D)/2], σ = D mod 2
    let mut prev = Form::principal(d);
    for (j, t) in steps.iter().enumerate() {
        for v in [&t.a, &t.b, &t.x, &t.y, &t.s] {
            reject_if(
                v.significant_bits() > MAX_ENTRY_BITS,
                Reason::OverLimit,
                "a compact step is too large",
            )?;
        }
        if t.s <= 0 || (t.x.is_zero() && t.y.is_zero()) {
            return bad(j, "β must be nonzero with a positive denominator");
        }
        if (&t.x - Integer::from(&t.y * d)).is_odd() {
            return bad(j, "x ≢ y D (mod 2): the numerator is not in the order");
        }
        let Ok(ideal) = Form::new(t.a.clone(), t.b.clone(), d) else {
            return bad(
                j,
                "the ideal is not [a, (b + sqrt D)/2] with a > 0, b^2 ≡ D mod 4a",
            );
        };
        let Ok((content, sq)) = prev.compose_unreduced(&prev) else {
            return bad(j, "the previous ideal could not be squared");
        };
        // s a_{j-1}^2 = s·content·[a3, (b3 + sqrt D)/2]
        let scale = Integer::from(&t.s * &content);
        let left: Vec<Pair> = basis(&sq.a, &sq.b)
            .iter()
            .map(|(x, y)| (Integer::from(x * &scale), Integer::from(y * &scale)))
            .collect();
        let right: Vec<Pair> = basis(&t.a, &t.b)
            .iter()
            .map(|v| times(d, &t.x, &t.y, v))
            .collect();
        match (hermite(&left), hermite(&right)) {
            (Some(l), Some(r)) if l == r => {}
            _ => return bad(j, "β a_j differs from a_{j-1}^2"),
        }
        // log|β_j| = log|μ_j| - log s_j, weighted by 2^{l-j}
        let Some(lm) = log_abs_alpha(d, &t.x, &t.y, prec) else {
            return bad(j, "log|β| failed");
        };
        let Some(ls) = Interval::int_prec(&t.s, prec).ln() else {
            return bad(j, "log s failed");
        };
        let weight = Integer::from(1) << u32::try_from(l - 1 - j).unwrap_or(0);
        log_eps = log_eps.add(&lm.sub(&ls).mul(&Interval::int_prec(&weight, prec)));
        if j + 1 == l {
            let n4 = Integer::from(t.x.square_ref()) - Integer::from(t.y.square_ref()) * d;
            norm_negative = n4 < 0;
        }
        prev = ideal;
    }
    reject_if(
        prev.a != 1,
        Reason::UnitChainMismatch,
        "the last ideal of the compact representation is not the order itself",
    )?;
    Ok(Chain {
        log_eps,
        norm_negative,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn step(a: i64, b: i64, x: i64, y: i64, s: i64) -> CompactStep {
        let i = Integer::from;
        CompactStep {
            a: i(a),
            b: i(b),
            x: i(x),
            y: i(y),
            s: i(s),
        }
    }

    #[test]
    fn one_step_chains_are_units() {
        // D = 61: ε = (39 + 5 sqrt 61)/2 with a_1 = O: β_1 O = O^2 = O.
        let d = Integer::from(61);
        let c = check_chain(&d, &[step(1, 1, 39, 5, 1)]).unwrap();
        assert!(c.norm_negative, "N(ε) = (39² - 61·25)/4 = -1");
        let want = ((39.0 + 5.0 * 61f64.sqrt()) / 2.0).ln();
        assert!((c.log_eps.mid_f64() - want).abs() < 1e-12);
        // (41 + 5 sqrt 61)/2 has norm (1681 - 1525)/4 = 39: not a unit
        let e = check_chain(&d, &[step(1, 1, 41, 5, 1)]).err().unwrap();
        assert_eq!(e.reason, Reason::UnitChainMismatch);
    }

    #[test]
    fn a_step_that_does_not_hold_is_refused() {
        // D = 61: (7 + sqrt 61)/2 has norm -3, so 3 a_1 = θ O^2 cannot hold
        // with a_1 = [3, (1 + sqrt 61)/2] and β = θ/3 (the ideal θ O has
        // norm 3, 3 a_1 has norm 27).
        let d = Integer::from(61);
        assert!(check_chain(&d, &[step(3, 1, 7, 1, 3), step(1, 1, 1, 0, 1)]).is_err());
    }

    #[test]
    fn hermite_bases_are_canonical() {
        let i = Integer::from;
        let a = hermite(&[(i(6), i(0)), (i(1), i(1))]).unwrap();
        let b = hermite(&[(i(7), i(1)), (i(13), i(1)), (i(12), i(0))]).unwrap();
        assert_eq!(a, b);
        assert!(hermite(&[(i(1), i(1)), (i(2), i(2))]).is_none());
    }
}
