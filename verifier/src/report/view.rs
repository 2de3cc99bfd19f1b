//! What a verdict shows: the pieces of a verified result and how numbers
//! are written for a reader. No checks live here.

use crate::analytic::interval::Interval;
use rug::Integer;

/// Which kind of certificate a verified result came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CertificateKind {
    /// Relations, their lattice and the analytic bound.
    Relations,
    /// Classes of exact order and the analytic bound.
    OrderWitness,
}

/// An assumption a verified claim rests on, beyond the cited theorems.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Assumption {
    Grh,
    BpswProbablePrime,
    /// A number field's `|disc(O)|` has a part left unfactored, assumed
    /// squarefree (then the order is maximal at its primes).
    SquarefreeCofactor,
}

impl Assumption {
    pub fn name(&self) -> &'static str {
        match self {
            Assumption::Grh => "GRH",
            Assumption::BpswProbablePrime => "BPSW probable prime",
            Assumption::SquarefreeCofactor => "squarefree cofactor",
        }
    }

    /// The assumption named `s` (its name, or with dashes for spaces, in
    /// any case).
    pub fn from_name(s: &str) -> Option<Assumption> {
        let all = [
            Assumption::Grh,
            Assumption::BpswProbablePrime,
            Assumption::SquarefreeCofactor,
        ];
        let key = s.replace('-', " ").to_lowercase();
        all.into_iter().find(|a| a.name().to_lowercase() == key)
    }
}

/// A generator of a cyclic factor, for the reader.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GeneratorView {
    /// `D < 0`: the reduced form `(a, b, c)` of its class.
    Form(Integer, Integer, Integer),
    /// `D > 0`: `∏ (p, (b + sqrt D)/2)^e` over `(p, b, e)`.
    Ideals(Vec<(u64, u64, Integer)>),
    /// Number fields: `∏ P_k^e` over `(p, k, e)`, `P_k` the factor base's
    /// entry `k`, above `p`.
    FieldIdeals(Vec<(u64, u64, Integer)>),
}

/// The unit group of a real quadratic order, as verified.
#[derive(Debug, Clone)]
pub struct UnitSummary {
    /// Rigorous enclosure of the regulator `R = |log|ε||`.
    pub regulator: Interval,
    /// The norm of `ε`, `1` or `-1`.
    pub norm: i8,
    /// Number of steps in the compact representation of `ε`.
    pub compact_length: usize,
}

impl UnitSummary {
    /// The regulator in decimal, with only digits the enclosure settles.
    pub fn regulator_text(&self) -> String {
        decimal(&self.regulator)
    }
}

/// A number field and its order, as verified.
#[derive(Debug, Clone)]
pub struct FieldSummary {
    /// `F`, coefficients from the constant term up.
    pub polynomial: Vec<Integer>,
    /// `(r1, r2)`.
    pub signature: (usize, usize),
    /// `disc(O)` (the field discriminant when the order is maximal).
    pub discriminant: Integer,
    /// `[O : Z[θ]]`.
    pub index: Integer,
    /// The part of `|disc(O)|` left unfactored and assumed squarefree.
    pub unfactored: Option<Integer>,
    /// Rigorous enclosure of the regulator.
    pub regulator: Interval,
}

impl FieldSummary {
    pub fn degree(&self) -> usize {
        self.polynomial.len().saturating_sub(1)
    }

    pub fn unit_rank(&self) -> usize {
        (self.signature.0 + self.signature.1).saturating_sub(1)
    }

    /// The regulator in decimal, with only digits the enclosure settles.
    pub fn regulator_text(&self) -> String {
        decimal(&self.regulator)
    }

    /// `F` as it is usually written, e.g. `x^3 - 2`.
    pub fn polynomial_text(&self) -> String {
        polynomial_text(&self.polynomial)
    }
}

/// A polynomial over Z written from the leading term down: `x^3 - 2*x + 5`.
pub fn polynomial_text(f: &[Integer]) -> String {
    let mut out = String::new();
    for (k, c) in f.iter().enumerate().rev() {
        if *c == 0 {
            continue;
        }
        let neg = *c < 0;
        let abs = Integer::from(c.abs_ref());
        if out.is_empty() {
            if neg {
                out.push('-');
            }
        } else {
            out.push_str(if neg { " - " } else { " + " });
        }
        let coeff = if abs == 1 && k > 0 {
            String::new()
        } else if k > 0 {
            format!("{abs}*")
        } else {
            abs.to_string()
        };
        out.push_str(&coeff);
        match k {
            0 => {}
            1 => out.push('x'),
            _ => out.push_str(&format!("x^{k}")),
        }
    }
    if out.is_empty() {
        out.push('0');
    }
    out
}

/// `Z/d_1 x Z/d_2 x …`, or `trivial`.
pub fn invariants_text(inv: &[Integer]) -> String {
    if inv.is_empty() {
        "trivial".to_string()
    } else {
        inv.iter()
            .map(|d| format!("Z/{d}"))
            .collect::<Vec<_>>()
            .join(" x ")
    }
}

/// A generator for the text report: a reduced form `(a, b, c)`, or a
/// product of prime ideals `(p, (b + sqrt(D))/2)^e`.
pub fn generator_text(g: &GeneratorView) -> String {
    match g {
        GeneratorView::Form(a, b, c) => format!("({a}, {b}, {c})"),
        GeneratorView::Ideals(f) => ideals_text(f, " · "),
        GeneratorView::FieldIdeals(f) => {
            product_text(f, " · ", |p, k| format!("P{k} (above {p})"))
        }
    }
}

/// `∏ (p, (b + sqrt(D))/2)^e` over `(p, b, e)`, joined by `sep`; `(1)`
/// for the empty product.
pub fn ideals_text(f: &[(u64, u64, Integer)], sep: &str) -> String {
    product_text(f, sep, |p, b| format!("({p}, ({b} + sqrt(D))/2)"))
}

/// `∏ ideal(p, b)^e` over `(p, b, e)`, joined by `sep`; `(1)` for the
/// empty product.
fn product_text(
    f: &[(u64, u64, Integer)],
    sep: &str,
    ideal: impl Fn(u64, u64) -> String,
) -> String {
    if f.is_empty() {
        return "(1)".into();
    }
    let powers: Vec<String> = f.iter().map(|(p, b, e)| power(ideal(*p, *b), e)).collect();
    powers.join(sep)
}

/// At most `MAX_SHOWN_DIGITS` digits of a number from the input, so a
/// huge value cannot flood a message: `1234567890…(2000 digits)`.
pub fn short_number(n: &Integer) -> String {
    let s = printable(n);
    let (sign, digits) = s.split_at(usize::from(s.starts_with('-')));
    if digits.len() <= MAX_SHOWN_DIGITS {
        return s;
    }
    let head: String = digits.chars().take(MAX_SHOWN_DIGITS - 10).collect();
    format!("{sign}{head}…({} digits)", digits.len())
}

/// `n` in decimal, or `-(8388608-bit number)` past `MAX_PRINTED_BITS`.
pub fn printable(n: &Integer) -> String {
    let bits = n.significant_bits();
    match bits > crate::limits::MAX_PRINTED_BITS {
        true => format!("{}({bits}-bit number)", if *n < 0 { "-" } else { "" }),
        false => n.to_string(),
    }
}

/// The most digits of an input number a message shows.
pub const MAX_SHOWN_DIGITS: usize = 40;

/// `2^2 · 5` for `[(2, 2), (5, 1)]`, `none` for `[]`.
pub fn prime_powers_text(pp: &[(u64, u32)]) -> String {
    if pp.is_empty() {
        return "none".into();
    }
    let powers: Vec<String> = pp.iter().map(|(p, e)| power(p.to_string(), e)).collect();
    powers.join(" · ")
}

/// `base^e`, or `base` when `e` is 1.
fn power(base: String, e: &impl std::fmt::Display) -> String {
    match e.to_string().as_str() {
        "1" => base,
        e => format!("{base}^{e}"),
    }
}

/// The digits of an enclosure that are certain: the midpoint rounded to as
/// many significant digits as the width allows (at most 40), in plain
/// decimal notation. MPFR rounds to the digits (`1.23e-4` or `146.758`);
/// the point is then put in place.
pub fn decimal(i: &Interval) -> String {
    let mid = rug::Float::with_val(i.prec(), &i.lo + &i.hi) / 2u32;
    let width = rug::Float::with_val(i.prec(), &i.hi - &i.lo);
    if mid.is_zero() || !mid.is_finite() {
        return "0".into();
    }
    // significant digits: log10(|mid| / width) - 1, within [1, 40]
    let ratio = match width.is_zero() {
        true => 1e300,
        false => (mid.clone().abs() / &width).to_f64(),
    };
    let digits = (ratio.log10().floor() as i64 - 1).clamp(1, 40);
    let s = mid.to_string_radix(10, Some(digits as usize));
    let (mantissa, e10) = s.split_once('e').unwrap_or((&s, "0"));
    let (sign, mantissa) = mantissa.split_at(usize::from(mantissa.starts_with('-')));
    let (int, frac) = mantissa.split_once('.').unwrap_or((mantissa, ""));
    let ds = format!("{int}{frac}");
    // value = 0.ds × 10^point
    let point = int.len() as i64 + e10.parse::<i64>().unwrap_or(0);
    match usize::try_from(point) {
        Err(_) => format!("{sign}0.{}{ds}", "0".repeat(point.unsigned_abs() as usize)),
        Ok(0) => format!("{sign}0.{ds}"),
        Ok(k) if k >= ds.len() => format!("{sign}{ds}{}", "0".repeat(k - ds.len())),
        Ok(k) => {
            let (a, b) = ds.split_at(k);
            format!("{sign}{a}.{b}")
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rug::ops::Pow;

    #[test]
    fn long_numbers_are_shortened() {
        let n: Integer = Integer::from(10).pow(2000) + 7;
        let s = short_number(&n);
        assert!(s.ends_with("…(2001 digits)") && s.len() < 60, "{s}");
        assert_eq!(short_number(&Integer::from(-3299)), "-3299");
        assert_eq!(prime_powers_text(&[(2, 2), (5, 1)]), "2^2 · 5");
        assert_eq!(prime_powers_text(&[]), "none");
        // past MAX_PRINTED_BITS only the size is printed (the decimal of
        // an 8-million-bit D took 0.8 s, more than refusing it)
        let huge = -(Integer::from(1) << 8_388_607u32);
        assert_eq!(printable(&huge), "-(8388608-bit number)");
        assert_eq!(short_number(&huge), "-(8388608-bit number)");
        let edge = Integer::from(1) << 65_535u32;
        assert_eq!(printable(&edge), edge.to_string());
    }

    /// The former implementation, kept as the reference: the digits of an enclosure that are certain: the midpoint rounded to as
    /// many significant digits as the width allows (at most 40), in plain
    /// decimal notation.
    fn decimal_by_scaling(i: &Interval) -> String {
        use rug::ops::Pow;
        let mid = rug::Float::with_val(i.prec(), &i.lo + &i.hi) / 2u32;
        let width = rug::Float::with_val(i.prec(), &i.hi - &i.lo);
        if mid.is_zero() || !mid.is_finite() {
            return "0".into();
        }
        // significant digits: log10(|mid| / width) - 1, within [1, 40]
        let ratio = if width.is_zero() {
            1e300
        } else {
            (mid.clone().abs() / &width).to_f64()
        };
        let digits = (ratio.log10().floor() as i64 - 1).clamp(1, 40);
        let neg = mid < 0;
        let abs = mid.abs();
        // e10 = floor(log10 |mid|), then the digits as an integer
        let mut e10 = abs.to_f64().log10().floor() as i64;
        let scaled = |e10: i64| -> Option<Integer> {
            let shift = digits - 1 - e10;
            let ten = rug::Float::with_val(abs.prec(), 10u32);
            let factor = if shift >= 0 {
                ten.pow(i32::try_from(shift).ok()?)
            } else {
                rug::Float::with_val(abs.prec(), 1u32) / ten.pow(i32::try_from(-shift).ok()?)
            };
            rug::Float::with_val(abs.prec(), &abs * &factor)
                .round()
                .to_integer()
        };
        let Some(mut m) = scaled(e10) else {
            return "0".into();
        };
        let limit = Integer::from(10u32).pow(digits as u32);
        if m >= limit {
            e10 += 1;
            m = scaled(e10).unwrap_or_default();
        }
        let ds = m.to_string();
        // value = 0.ds × 10^(e10 + 1)
        let point = e10 + 1;
        let mut out = String::new();
        if neg {
            out.push('-');
        }
        if point <= 0 {
            out.push_str("0.");
            out.push_str(&"0".repeat(point.unsigned_abs() as usize));
            out.push_str(&ds);
        } else if (point as usize) >= ds.len() {
            out.push_str(&ds);
            out.push_str(&"0".repeat(point as usize - ds.len()));
        } else {
            let (a, b) = ds.split_at(point as usize);
            out.push_str(a);
            out.push('.');
            out.push_str(b);
        }
        out
    }

    /// The MPFR rounding and the scaling by powers of ten agree (ties
    /// aside, which random midpoints do not hit).
    #[test]
    fn decimal_agrees_with_scaling() {
        let mut x: u64 = 0x9e37_79b9_7f4a_7c15;
        for _ in 0..2000 {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let n = (x >> 20) as i64 - (1 << 43);
            let d = 1 + (x % 1_000_003);
            let scale = (x >> 8) % 36; // digits within the 128-bit precision
                                       // [q, q + |q| 10^-scale] for q = n/d
            let lo = rug::Float::with_val(128, n) / d;
            let rel = rug::Float::with_val(128, 10).pow(-(scale as i32));
            let hi = lo.clone() + lo.clone().abs() * rel;
            let i = Interval { lo, hi };
            assert_eq!(
                decimal(&i),
                decimal_by_scaling(&i),
                "{n}/{d}, scale {scale}"
            );
        }
    }

    #[test]
    fn decimals_put_the_point_in_the_right_place() {
        let r = |n: i64, d: u64| Interval::ratio(n, d).unwrap();
        // 62150.6 and 0.0481 (common practice: plain decimal notation)
        assert!(decimal(&r(621506, 10)).starts_with("62150.6"));
        assert!(decimal(&r(481, 10000)).starts_with("0.0481"));
        assert!(decimal(&r(-25, 10)).starts_with("-2.5"));
        assert!(decimal(&r(1079, 100)).starts_with("10.79"));
        assert!(decimal(&Interval::u64(1000)).starts_with("1000.000"));
    }
}
