//! Reading a defining polynomial as people write it: `x^3 - 11`,
//! `x^3-2*x+5`, `X^4 + 3x^2 - x + 1`. Integer coefficients only, in one
//! variable `x` (either case), terms in any order, like terms added.
//!
//! The grammar, after spaces are dropped:
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
        while i < chars.len() && chars[i].1.is_ascii_digit() {
            i += 1;
        }
        let coeff = if i > start {
            let digits: String = chars[start..i].iter().map(|&(_, c)| c).collect();
            Some(digits.parse::<Integer>().map_err(|_| ParseError {
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
                while i < chars.len() && chars[i].1.is_ascii_digit() {
                    i += 1;
                }
                if i == s {
                    return Err(ParseError {
                        at: at(i),
                        what: "expected an exponent after '^'",
                    });
                }
                let digits: String = chars[s..i].iter().map(|&(_, c)| c).collect();
                match digits.parse::<usize>() {
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
}
