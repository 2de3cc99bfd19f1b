//! The compact representation of a unit of known logarithm (J. Buchmann,
//! C. Thiel and H. C. Williams, "Short representation of quadratic
//! integers", 1995): walk the cycle of reduced principal ideals by
//! squaring and continued-fraction steps, so that `ε = ∏ β_j^{2^{l-j}}`
//! with small `β_j` (checked by `classcert_verifier::math::units::check_chain`).
//!
//! Ideals are `[a, (b + sqrt D)/2]` with `a > 0`, `b² ≡ D (mod 4a)`. One
//! step (a continued-fraction step, common practice): pick `B ≡ b (mod 2a)`,
//! let `c = (B² - D)/(4a)`; then `θ = (B + sqrt D)/2` has
//! `θ O = [a, θ]·[|c|, θ]`, so `[a, (b + sqrt D)/2] = μ · [|c|, (-B + sqrt D)/2]`
//! with `μ = θ / |c|`. For a reduced ideal with `sqrt D - 2a < B < sqrt D`
//! the factor `μ` exceeds 1: the walk moves forward.

use super::regulator::{self as units, Factor};
use classcert_format::CompactStep;
use classcert_verifier::math::Form;
use rug::ops::DivRounding;
use rug::{Float, Integer};

const PREC: u32 = 256;

/// `(X + Y sqrt D)/(2 S)`.
struct Element {
    x: Integer,
    y: Integer,
    s: Integer,
}

impl Element {
    fn rational(n: &Integer) -> Element {
        Element {
            x: Integer::from(n << 1u32),
            y: Integer::new(),
            s: Integer::from(1),
        }
    }

    /// Multiplies by `(b + sqrt D)/(2 c)`.
    fn mul_step(&mut self, d: &Integer, b: &Integer, c: &Integer) {
        let x = (Integer::from(&self.x * b) + Integer::from(&self.y * d)) >> 1u32;
        let y = (Integer::from(&self.y * b) + &self.x) >> 1u32;
        self.x = x;
        self.y = y;
        self.s *= c;
        self.tidy(d);
    }

    /// Removes common factors that keep the numerator in the order.
    fn tidy(&mut self, d: &Integer) {
        let g = self.x.clone().gcd(&self.y).gcd(&self.s);
        if g <= 1 {
            return;
        }
        let odd = Integer::from(&g >> g.find_one(0).unwrap_or(0));
        if odd > 1 {
            self.x /= &odd;
            self.y /= &odd;
            self.s /= &odd;
        }
        while self.s.is_even() && self.x.is_even() && self.y.is_even() {
            let (x, y) = (
                Integer::from(&self.x >> 1u32),
                Integer::from(&self.y >> 1u32),
            );
            if (&x - Integer::from(&y * d)).is_odd() {
                break;
            }
            self.x = x;
            self.y = y;
            self.s >>= 1u32;
        }
    }
}

/// The next ideal and the step's `(B, |c|)`, with `a = μ a'`, `μ = (B + sqrt D)/(2|c|)`.
fn rho(
    d: &Integer,
    isqrt_d: &Integer,
    a: &Integer,
    b: &Integer,
) -> (Integer, Integer, Integer, Integer) {
    let two_a = Integer::from(a << 1u32);
    let big_b = if a <= isqrt_d {
        // the largest B ≡ b (mod 2a) with B <= sqrt D
        let k = Integer::from(isqrt_d - b).div_floor(&two_a);
        b + k * &two_a
    } else {
        // |B| <= a
        let k = Integer::from(b + a).div_floor(&two_a);
        b - k * &two_a
    };
    let c = (Integer::from(big_b.square_ref()) - d) / Integer::from(a << 2u32);
    let c = c.abs();
    let next_b = Integer::from(-&big_b);
    (c.clone(), next_b, big_b, c)
}

fn log_mu(d: &Integer, b: &Integer, c: &Integer) -> Float {
    units::log_abs(
        d,
        &Factor {
            x: b.clone(),
            y: Integer::from(1),
            s: c.clone(),
        },
        PREC,
    )
    .unwrap_or_else(|| Float::with_val(PREC, 0))
}

/// The compact representation of the unit `ε > 1` with `log ε = r`, or
/// `None` if the walk does not come back to the order where it should
/// (then `r` was not the logarithm of a unit).
pub fn compact(d: &Integer, r: &Float) -> Option<Vec<CompactStep>> {
    let isqrt_d = d.clone().sqrt();
    let r = Float::with_val(PREC, r);
    // margin kept below each intermediate target, so that the distance
    // after squaring never overshoots the next one
    let m = Float::with_val(PREC, d.significant_bits()).max(&Float::with_val(PREC, 4)) * 2u32;
    let l = {
        let ratio = Float::with_val(PREC, &r / &m);
        if ratio <= 1 {
            1
        } else {
            ratio.log2().to_f64().floor() as u32 + 1
        }
    };
    let mut steps = Vec::with_capacity(l as usize);
    let mut a = Integer::from(1);
    let mut b = Integer::from(d.is_odd());
    let mut delta = Float::with_val(PREC, 0);
    for j in 1..=l {
        let target = Float::with_val(PREC, &r) / Float::with_val(PREC, Integer::from(1) << (l - j));
        let form = Form::new(a.clone(), b.clone(), d).ok()?;
        let (content, sq) = form.compose_unreduced(&form).ok()?;
        let mut beta = Element::rational(&content);
        delta = delta * 2u32 + Float::with_val(PREC, &content).ln();
        let (mut ca, mut cb) = (sq.a, sq.b);
        let mut walked = 0u64;
        loop {
            let (na, nb, big_b, c) = rho(d, &isqrt_d, &ca, &cb);
            let lm = log_mu(d, &big_b, &c);
            let reduced = ca <= isqrt_d;
            if j < l {
                let limit = Float::with_val(PREC, &target - &m);
                if reduced && Float::with_val(PREC, &delta + &lm) > limit {
                    break;
                }
            } else if reduced && ca == 1 && Float::with_val(PREC, &delta - &r).abs() < 0.2 {
                break;
            } else if Float::with_val(PREC, &delta - &r) > 1 {
                return None;
            }
            beta.mul_step(d, &big_b, &c);
            delta += lm;
            ca = na;
            cb = nb;
            walked += 1;
            if walked > 1_000_000 {
                return None;
            }
        }
        steps.push(CompactStep {
            a: ca.clone(),
            b: cb.clone(),
            x: beta.x,
            y: beta.y,
            s: beta.s,
        });
        a = ca;
        b = cb;
    }
    Some(steps)
}
