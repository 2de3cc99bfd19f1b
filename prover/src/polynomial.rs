//! Reading a defining polynomial as people write it: `x^3 - 11`,
//! `x^3-2*x+5`, `X^4 + 3x^2 - x + 1`. Integer coefficients only, in one
//! variable `x` (either case), terms in any order, like terms added.
//!
//! The grammar (spaces may stand between tokens, never inside a number):
//!
//! ```text
//! poly  := ['+' | '-'] term (('+' | '-') term)*
//! term  := digits ['*'] [mono] | mono
//! mono  := 'x' ['^' digits]
//! ```
//!
//! An error names the character where reading stopped, so the message can
//! point at it. Whether the polynomial is monic, irreducible and of an
//! admissible degree is decided by the caller, not here.

use rug::Integer;

/// Largest exponent accepted: far above any degree a proof can handle, and
/// small enough that the coefficient vector is never large.
pub const MAX_EXPONENT: usize = 64;

/// Where and why reading a polynomial stopped.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ParseError {
    /// Byte offset into the input as given (spaces included).
    pub at: usize,
    pub what: &'static str,
}

impl ParseError {
    /// The input, then a caret under the offending character and the reason.
    pub fn render(&self, input: &str) -> String {
        let col = input[..self.at.min(input.len())].chars().count();
        format!("{input}\n{}^ {}", " ".repeat(col), self.what)
    }
}

/// Coefficients from the constant term up, without trailing zeros (the zero
/// polynomial is refused).
pub fn parse(input: &str) -> Result<Vec<Integer>, ParseError> {
    // Characters with their byte offsets; spaces may stand between tokens
    // but never split a number.
    let chars: Vec<(usize, char)> = input.char_indices().collect();
    let skip = |i: &mut usize| {
        while *i < chars.len() && chars[*i].1.is_whitespace() {
            *i += 1;
        }
    };
    let end = input.len();
    let at = |i: usize| chars.get(i).map_or(end, |&(o, _)| o);
    // The run of ASCII digits from `i`: where it ends, and its text.
    let digits = |i: usize| {
        let stop = (i..chars.len())
            .find(|&k| !chars[k].1.is_ascii_digit())
            .unwrap_or(chars.len());
        let text: String = chars[i..stop].iter().map(|&(_, c)| c).collect();
        (stop, text)
    };
    let mut coeffs: Vec<Integer> = Vec::new();
    let mut i = 0;
    skip(&mut i);
    if i == chars.len() {
        return Err(ParseError {
            at: 0,
            what: "empty polynomial",
        });
    }
    let mut first = true;
    while i < chars.len() {
        let mut sign = 1;
        match chars[i].1 {
            '+' | '-' => {
                if chars[i].1 == '-' {
                    sign = -1;
                }
                i += 1;
                skip(&mut i);
            }
            _ if !first => {
                return Err(ParseError {
                    at: at(i),
                    what: "expected '+' or '-' between terms",
                });
            }
            _ => {}
        }
        first = false;
        // Coefficient.
        let start = i;
        let (stop, text) = digits(i);
        i = stop;
        let coeff = if i > start {
            Some(text.parse::<Integer>().map_err(|_| ParseError {
                at: at(start),
                what: "bad number",
            })?)
        } else {
            None
        };
        skip(&mut i);
        let mut star = false;
        if coeff.is_some() && i < chars.len() && chars[i].1 == '*' {
            star = true;
            i += 1;
            skip(&mut i);
        }
        // Monomial.
        let exp = if i < chars.len() && matches!(chars[i].1, 'x' | 'X') {
            i += 1;
            skip(&mut i);
            if i < chars.len() && chars[i].1 == '^' {
                i += 1;
                skip(&mut i);
                let s = i;
                let (stop, text) = digits(i);
                i = stop;
                if i == s {
                    return Err(ParseError {
                        at: at(i),
                        what: "expected an exponent after '^'",
                    });
                }
                match text.parse::<usize>() {
                    Ok(e) if e <= MAX_EXPONENT => e,
                    _ => {
                        return Err(ParseError {
                            at: at(s),
                            what: "exponent too large (at most 64)",
                        })
                    }
                }
            } else {
                1
            }
        } else if star {
            return Err(ParseError {
                at: at(i),
                what: "expected 'x' after '*'",
            });
        } else if coeff.is_none() {
            return Err(ParseError {
                at: at(i),
                what: "expected a number or 'x'",
            });
        } else {
            0
        };
        let mut c = coeff.unwrap_or_else(|| Integer::from(1));
        if sign < 0 {
            c = -c;
        }
        if coeffs.len() <= exp {
            coeffs.resize(exp + 1, Integer::new());
        }
        coeffs[exp] += c;
        skip(&mut i);
    }
    while coeffs.last().is_some_and(|c| *c == 0) {
        coeffs.pop();
    }
    if coeffs.is_empty() {
        return Err(ParseError {
            at: 0,
            what: "the polynomial is zero",
        });
    }
    Ok(coeffs)
}

/// Degrees a defining polynomial may have for a proof over a number field.
/// Degree 2 goes to the quadratic path, by its discriminant.
pub const DEGREES: std::ops::RangeInclusive<usize> = 3..=6;

/// How many primes not dividing `disc(F)` the irreducibility test tries.
const PATTERN_PRIMES: usize = 60;

/// Why a polynomial cannot define the field of a proof.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Refusal {
    /// Degree outside [`DEGREES`]; the degree found.
    Degree(usize),
    /// Degree 2: prove the quadratic order of this discriminant instead.
    Quadratic(Integer),
    /// The leading coefficient, when it is not 1.
    NotMonic(Integer),
    /// `disc(F) = 0`: `F` has a repeated factor.
    Repeated,
    /// Every prime tried left these proper degrees for a factor over Q.
    NotShownIrreducible(Vec<usize>),
}

impl std::fmt::Display for Refusal {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Refusal::Degree(d) => write!(
                f,
                "degree {d}: number fields of degree 3 to 6 are supported"
            ),
            Refusal::Quadratic(d) => write!(
                f,
                "degree 2: prove the quadratic order of discriminant {d} instead"
            ),
            Refusal::NotMonic(c) => write!(
                f,
                "the leading coefficient is {c}: the polynomial must be monic"
            ),
            Refusal::Repeated => write!(
                f,
                "the discriminant is 0: the polynomial has a repeated factor"
            ),
            Refusal::NotShownIrreducible(ds) => {
                let ds: Vec<String> = ds.iter().map(|d| d.to_string()).collect();
                write!(
                    f,
                    "not shown irreducible: modulo each of {PATTERN_PRIMES} primes the factorisation allows a factor over Q of degree {}; the polynomial is probably reducible",
                    ds.join(" or ")
                )
            }
        }
    }
}

/// Checks that `F` (coefficients from the constant term up, as [`parse`]
/// gives them) can define a number field for a proof: degree in
/// [`DEGREES`], monic, `disc(F) ≠ 0`, and irreducible over Q, shown by the
/// degrees of `F mod p`: a factor of `F` over Q of degree `k` reduces to a
/// product of irreducible factors mod `p` whose degrees sum to `k`, so once
/// the sub-sums of the patterns at several `p ∤ disc(F)` have no proper
/// degree in common, `F` is irreducible (common practice; H. Cohen, GTM 138,
/// section 3.5, from memory). Some irreducible polynomials split modulo
/// every prime (`x^4 + 1`); for them the roots decide: no set of roots
/// closed under conjugation may have a product with integer coefficients.
/// Returns `disc(F)`.
pub fn check_defining(f: &[Integer]) -> Result<Integer, Refusal> {
    use classcert_verifier::math::poly::{discriminant, Fp};
    use classcert_verifier::math::primes_up_to;
    let n = f.len().saturating_sub(1);
    let lead = f.last().cloned().unwrap_or_default();
    if n == 2 && lead == 1 {
        return Err(Refusal::Quadratic(
            f[1].clone() * &f[1] - Integer::from(4) * &f[0],
        ));
    }
    if !DEGREES.contains(&n) {
        return Err(Refusal::Degree(n));
    }
    if lead != 1 {
        return Err(Refusal::NotMonic(lead));
    }
    let disc = discriminant(f).unwrap_or_default();
    if disc == 0 {
        return Err(Refusal::Repeated);
    }
    // possible[k]: a factor of degree k over Q is still possible.
    let mut possible: Vec<bool> = (0..=n).map(|k| k > 0 && k < n).collect();
    let mut tried = 0;
    // Far more primes than PATTERN_PRIMES unramified ones need: disc(F) has
    // at most a few hundred prime factors at the supported sizes.
    for p in primes_up_to(20_000) {
        if tried == PATTERN_PRIMES || !possible.iter().any(|&b| b) {
            break;
        }
        if disc.is_divisible_u(p as u32) {
            continue;
        }
        let Some(pattern) = Fp::new(p).and_then(|fp| fp.degree_pattern(f)) else {
            continue;
        };
        tried += 1;
        let mut sums = vec![false; n + 1];
        sums[0] = true;
        for d in pattern {
            for k in (d..=n).rev() {
                sums[k] |= sums[k - d];
            }
        }
        for (k, b) in possible.iter_mut().enumerate() {
            *b &= sums[k];
        }
    }
    let left: Vec<usize> = (0..=n).filter(|&k| possible[k]).collect();
    if left.is_empty() {
        return Ok(disc);
    }
    // Patterns cannot separate every field (x^4 + 1 splits modulo every
    // prime): certified roots can, as the verifier checks it
    // (`Roots::no_integer_factor`).
    match crate::field::roots::enclose(f, 200) {
        Ok((_, roots)) if roots.no_integer_factor() => Ok(disc),
        _ => Err(Refusal::NotShownIrreducible(left)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ints(v: &[i64]) -> Vec<Integer> {
        v.iter().map(|&c| Integer::from(c)).collect()
    }

    #[test]
    fn the_usual_written_forms() {
        assert_eq!(parse("x^3 - 11").unwrap(), ints(&[-11, 0, 0, 1]));
        assert_eq!(parse("x^3-11").unwrap(), ints(&[-11, 0, 0, 1]));
        assert_eq!(parse("x^3 - 2*x + 5").unwrap(), ints(&[5, -2, 0, 1]));
        assert_eq!(
            parse("X^4 + 3x^2 - x + 1").unwrap(),
            ints(&[1, -1, 3, 0, 1])
        );
        assert_eq!(parse("-x + x^2").unwrap(), ints(&[0, -1, 1]));
        assert_eq!(parse(" 2 x ^ 2 ").unwrap(), ints(&[0, 0, 2]));
        // like terms are added; a cancelled leading term lowers the degree
        assert_eq!(parse("x^2 + x^2 + 1").unwrap(), ints(&[1, 0, 2]));
        assert_eq!(parse("x^3 + x - x^3").unwrap(), ints(&[0, 1]));
        assert_eq!(
            parse("x^2 - 123456789012345678901234567890").unwrap()[0],
            "-123456789012345678901234567890"
                .parse::<Integer>()
                .unwrap()
        );
    }

    #[test]
    fn errors_point_at_the_failure() {
        let cases = [
            ("", 0, "empty polynomial"),
            ("x^", 2, "expected an exponent after '^'"),
            ("x^3 11", 4, "expected '+' or '-' between terms"),
            ("x^3 - y", 6, "expected a number or 'x'"),
            ("x^3 + 2*", 8, "expected 'x' after '*'"),
            ("x^3 +", 5, "expected a number or 'x'"),
            ("x^65", 2, "exponent too large (at most 64)"),
            ("x - x", 0, "the polynomial is zero"),
            ("x**2", 1, "expected '+' or '-' between terms"),
            ("x^3 - 1 1", 8, "expected '+' or '-' between terms"),
            ("x^3 + 2×x", 7, "expected '+' or '-' between terms"),
        ];
        for (input, at, what) in cases {
            assert_eq!(parse(input), Err(ParseError { at, what }), "{input:?}");
        }
        let shown = parse("x^3 - y").unwrap_err().render("x^3 - y");
        assert_eq!(shown, "x^3 - y\n      ^ expected a number or 'x'");
    }

    fn check(text: &str) -> Result<Integer, Refusal> {
        check_defining(&parse(text).unwrap())
    }

    #[test]
    fn defining_polynomials_accepted_with_their_discriminants() {
        // disc(x^3 + a x + b) = -4a^3 - 27b^2 (common practice)
        assert_eq!(check("x^3 - 2"), Ok(Integer::from(-108)));
        assert_eq!(check("x^3 - 11"), Ok(Integer::from(-27 * 121)));
        assert_eq!(check("x^3 - 2*x + 5"), Ok(Integer::from(32 - 27 * 25)));
        // the simplest cubic field, disc 49 (common practice)
        assert_eq!(check("x^3 - x^2 - 2x + 1"), Ok(Integer::from(49)));
        // x^5 - x - 1 is irreducible with disc 2869 = 19 * 151 (from memory)
        assert_eq!(check("x^5 - x - 1"), Ok(Integer::from(2869)));
        // the 7th cyclotomic polynomial: disc (-1)^(6*5/2) 7^5 = -16807 (common practice)
        assert_eq!(check("x^6+x^5+x^4+x^3+x^2+x+1"), Ok(Integer::from(-16807)));
    }

    #[test]
    fn refusals_name_their_reason() {
        assert_eq!(check("x^2 - 5"), Err(Refusal::Quadratic(Integer::from(20))));
        assert_eq!(
            check("x^2 + x + 1"),
            Err(Refusal::Quadratic(Integer::from(-3)))
        );
        assert_eq!(check("x - 1"), Err(Refusal::Degree(1)));
        assert_eq!(check("x^7 - 2"), Err(Refusal::Degree(7)));
        assert_eq!(check("2x^3 - 1"), Err(Refusal::NotMonic(Integer::from(2))));
        assert_eq!(check("x^3 - 3x + 2"), Err(Refusal::Repeated)); // (x - 1)^2 (x + 2)
                                                                   // (x^2 + 1)(x^2 + x + 1): a quadratic factor over Q
        assert_eq!(
            check("x^4 + x^3 + 2x^2 + x + 1"),
            Err(Refusal::NotShownIrreducible(vec![2]))
        );
        // (x - 2)(x^2 + 2x + 4) = x^3 - 8
        assert_eq!(
            check("x^3 - 8"),
            Err(Refusal::NotShownIrreducible(vec![1, 2]))
        );
        // x^4 + 1 (Φ_8) and x^4 - x^2 + 1 (Φ_12) split modulo every prime;
        // their roots show them irreducible. disc(Φ_8) = 256 and
        // disc(Φ_12) = 144 (the discriminant of Q(ζ_m); common practice)
        assert_eq!(check("x^4 + 1"), Ok(Integer::from(256)));
        assert_eq!(check("x^4 - x^2 + 1"), Ok(Integer::from(144)));
        let shown = check("x^3 - 8").unwrap_err().to_string();
        assert!(
            shown.contains("of degree 1 or 2; the polynomial is probably reducible"),
            "{shown}"
        );
    }
}
