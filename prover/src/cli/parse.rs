//! Strict parsing of the numbers a user types, and messages that never echo
//! more than a few dozen characters of an input.

use rug::Integer;

/// Inputs longer than this are shortened in messages.
const SHOWN_CHARS: usize = 40;
/// Characters kept at the start of a shortened input.
const KEPT_CHARS: usize = 12;

/// An input as it may appear in a message: in full when short, else its
/// start and its length, e.g. `123456789012...(2000 digits)`.
pub fn shown(s: &str) -> String {
    let n = s.chars().count();
    if n <= SHOWN_CHARS {
        return s.to_string();
    }
    let head: String = s.chars().take(KEPT_CHARS).collect();
    let digits = s.trim_start_matches('-');
    let unit = if digits.bytes().all(|c| c.is_ascii_digit()) {
        format!("{} digits", digits.len())
    } else {
        format!("{n} characters")
    };
    format!("{head}...({unit})")
}

/// An integer as it may appear in a message (the verifier's rule, so both
/// programs shorten numbers alike).
pub fn shown_int(x: &Integer) -> String {
    classcert_verifier::report::short_number(x)
}

/// The rule [`integer`] enforces, for messages.
pub const INTEGER_RULE: &str =
    "an optional leading '-' and then the decimal digits 0-9 only (no spaces, '+', '_' or ',')";

/// A decimal integer, strictly: an optional leading `-`, then ASCII digits
/// only. `max_digits` bounds the work and the message before parsing.
pub fn integer(what: &str, s: &str, max_digits: usize) -> Result<Integer, String> {
    let digits = s.strip_prefix('-').unwrap_or(s);
    if digits.is_empty() || !digits.bytes().all(|c| c.is_ascii_digit()) {
        return Err(format!(
            "{what} '{}' is not an integer: write {INTEGER_RULE}",
            shown(s)
        ));
    }
    if digits.len() > max_digits {
        return Err(format!(
            "{what} '{}' is too long: at most {max_digits} digits are accepted",
            shown(s)
        ));
    }
    s.parse::<Integer>()
        .map_err(|_| format!("{what} '{}' is not an integer", shown(s)))
}

/// A comma-separated list of positive integers, each optionally `p^e`
/// when `powers` is set (factor lists): no spaces, signs or separators
/// other than the comma. Powers are expanded (`2^2,5` gives 2, 2, 5).
pub fn integer_list(
    what: &str,
    s: &str,
    powers: bool,
    max_digits: usize,
) -> Result<Vec<Integer>, String> {
    const MAX_ITEMS: usize = 4096;
    let mut out = Vec::new();
    for (i, token) in s.split(',').enumerate() {
        let item = format!("{what}: item {}", i + 1);
        let (base, exp) = match token.split_once('^') {
            Some((b, e)) if powers => (b, Some(e)),
            _ => (token, None),
        };
        if base.starts_with('-') {
            return Err(format!("{item} '{}' must be positive", shown(token)));
        }
        let value = integer(&item, base, max_digits)?;
        if value < 1 {
            return Err(format!("{item} '{}' must be positive", shown(token)));
        }
        let e = match exp {
            None => 1,
            Some(e) => {
                let e = integer(&format!("{item}: exponent"), e, 4)?;
                match e.to_usize() {
                    Some(e) if e >= 1 => e,
                    _ => return Err(format!("{item}: the exponent must be at least 1")),
                }
            }
        };
        if out.len() + e > MAX_ITEMS {
            return Err(format!("{what}: more than {MAX_ITEMS} items"));
        }
        out.extend(std::iter::repeat_n(value, e));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn integers_are_parsed_strictly() {
        assert_eq!(integer("D", "-3299", 10), Ok(Integer::from(-3299)));
        assert_eq!(integer("D", "316", 10), Ok(Integer::from(316)));
        for bad in [
            "-3299 ", " 316", "1_000", "12,345", "+5", "--5", "-", "", "3e5", "0x10", "１２",
        ] {
            let e = integer("D", bad, 10).expect_err(bad);
            assert!(e.contains("decimal digits 0-9 only"), "{bad}: {e}");
        }
        let e = integer("D", &"7".repeat(2000), 121).expect_err("too long");
        assert!(e.contains("777777777777...(2000 digits)"), "{e}");
        assert!(e.len() < 120, "{e}");
    }

    #[test]
    fn lists_and_powers() {
        let v = |xs: &[u32]| xs.iter().map(|&x| Integer::from(x)).collect::<Vec<_>>();
        assert_eq!(integer_list("f", "2^2,5", true, 50), Ok(v(&[2, 2, 5])));
        assert_eq!(integer_list("f", "3,9", false, 50), Ok(v(&[3, 9])));
        assert!(integer_list("f", "2^2", false, 50).is_err());
        assert!(integer_list("f", "2, 5", true, 50).is_err());
        assert!(integer_list("f", "2,,5", true, 50).is_err());
        assert!(integer_list("f", "0", true, 50).is_err());
        assert!(integer_list("f", "2^0", true, 50).is_err());
        assert!(integer_list("f", "-2", true, 50).is_err());
    }

    #[test]
    fn short_inputs_are_shown_whole() {
        assert_eq!(shown("-3299"), "-3299");
        assert_eq!(shown(&"x".repeat(50)), "xxxxxxxxxxxx...(50 characters)");
    }
}
