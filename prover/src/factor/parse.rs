//! Factor lists given on the command line (`--factors`, `--factors-of-h`).

use rug::Integer;

/// Largest total multiplicity accepted by [`parse_factor_list`], so that a
/// token such as `2^1000000000` cannot exhaust memory.
pub const MAX_LISTED_FACTORS: usize = 1 << 20;

/// Parses a comma-separated list of prime factors such as `"2,2,3,7"` or
/// `"2^2,3,7"` into the list of factors with repetition
/// (`[2, 2, 3, 7]` in both cases).
///
/// Each token is a decimal integer `p ≥ 2`, optionally followed by `^e` with
/// a decimal exponent `e ≥ 1`. Spaces around tokens, bases and exponents are
/// allowed. An empty (or all-blank) string gives the empty list, the
/// factorisation of 1. The order of the tokens is kept.
///
/// Primality of the listed numbers is *not* checked here; callers must test
/// them. The total number of factors is limited to [`MAX_LISTED_FACTORS`].
pub fn parse_factor_list(s: &str) -> Result<Vec<Integer>, String> {
    let mut out: Vec<Integer> = Vec::new();
    if s.trim().is_empty() {
        return Ok(out);
    }
    for (index, raw) in s.split(',').enumerate() {
        let position = index + 1;
        let token = raw.trim();
        if token.is_empty() {
            return Err(format!(
                "factor list: token {position} is empty (stray or doubled comma?)"
            ));
        }
        let (base_str, exp_str) = match token.split_once('^') {
            Some((b, e)) => (b.trim(), Some(e.trim())),
            None => (token, None),
        };
        let base = parse_decimal(base_str)
            .map_err(|why| format!("factor list: token {position} ('{token}'): base {why}"))?;
        if base < 2 {
            return Err(format!(
                "factor list: token {position} ('{token}'): factor must be at least 2"
            ));
        }
        let exponent: usize = match exp_str {
            None => 1,
            Some(e) => {
                let value = parse_decimal(e).map_err(|why| {
                    format!("factor list: token {position} ('{token}'): exponent {why}")
                })?;
                match value.to_usize() {
                    Some(0) => {
                        return Err(format!(
                            "factor list: token {position} ('{token}'): exponent must be at least 1"
                        ))
                    }
                    Some(v) if v <= MAX_LISTED_FACTORS => v,
                    _ => {
                        return Err(format!(
                            "factor list: token {position} ('{token}'): exponent too large \
                             (at most {MAX_LISTED_FACTORS})"
                        ))
                    }
                }
            }
        };
        if out.len() + exponent > MAX_LISTED_FACTORS {
            return Err(format!(
                "factor list: more than {MAX_LISTED_FACTORS} factors in total"
            ));
        }
        out.extend(std::iter::repeat_n(base, exponent));
    }
    Ok(out)
}

/// Parses a non-empty string of ASCII decimal digits.
fn parse_decimal(s: &str) -> Result<Integer, String> {
    if s.is_empty() {
        return Err("is missing".to_string());
    }
    if let Some(bad) = s.chars().find(|ch| !ch.is_ascii_digit()) {
        return Err(format!(
            "'{s}' is not a decimal number (unexpected character '{bad}')"
        ));
    }
    Integer::from_str_radix(s, 10).map_err(|e| format!("'{s}' could not be parsed: {e}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parse_lists() {
        let v = |xs: &[u32]| xs.iter().map(|&x| Integer::from(x)).collect::<Vec<_>>();
        assert_eq!(parse_factor_list("2,2,3,7").unwrap(), v(&[2, 2, 3, 7]));
        assert_eq!(parse_factor_list("2^2,3,7").unwrap(), v(&[2, 2, 3, 7]));
        assert_eq!(
            parse_factor_list(" 2 ^ 2 , 3,7 ").unwrap(),
            v(&[2, 2, 3, 7])
        );
        assert_eq!(parse_factor_list("").unwrap(), v(&[]));
        assert_eq!(parse_factor_list("   ").unwrap(), v(&[]));
        assert_eq!(
            parse_factor_list("67280421310721,274177").unwrap(),
            vec![Integer::from(67_280_421_310_721u64), Integer::from(274_177)]
        );
        let big = "340282366920938463463374607431768211457";
        assert_eq!(
            parse_factor_list(big).unwrap(),
            vec![Integer::from_str_radix(big, 10).unwrap()]
        );
    }

    #[test]
    fn parse_errors() {
        for bad in [
            "2,,3",
            "2,3,",
            ",2",
            "x",
            "2,a",
            "-3",
            "+3",
            "1",
            "0",
            "2^",
            "^2",
            "2^0",
            "2^x",
            "2^-1",
            "2^2^2",
            "3.0",
            "2 3",
            "0x10",
            "2^99999999999999999999",
        ] {
            let err = parse_factor_list(bad).expect_err(bad);
            assert!(err.starts_with("factor list:"), "{bad}: {err}");
        }
        let err = parse_factor_list("2,,3").unwrap_err();
        assert!(err.contains("token 2"), "{err}");
        let err = parse_factor_list("2,3,q7").unwrap_err();
        assert!(err.contains("token 3") && err.contains("'q'"), "{err}");
        let err = parse_factor_list("5^0").unwrap_err();
        assert!(err.contains("at least 1"), "{err}");
        let err = parse_factor_list("1").unwrap_err();
        assert!(err.contains("at least 2"), "{err}");
        let err = parse_factor_list("2^1048576,3").unwrap_err();
        assert!(err.contains("in total"), "{err}");
    }
}
