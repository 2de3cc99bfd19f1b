//! Canonical CBOR (RFC 8949 §4.2.1, "core deterministic encoding").
//!
//! Encoding builds a [`ciborium::Value`] tree whose maps are sorted by the
//! bytewise order of their encoded keys, and lets ciborium write it with
//! shortest-form heads and definite lengths.
//!
//! Decoding is strict, in two steps:
//! 1. [`to_value`] reads the raw bytes once with hard limits: definite
//!    lengths only, shortest-form heads, every declared length within the
//!    bytes that remain, bounded depth and item count, no floats, no tags
//!    other than the bignum tags 2 and 3, no trailing bytes. It builds a
//!    `ciborium::Value` tree itself, because ciborium's own reader turns
//!    bignums of up to 16 bytes into 128-bit integers and refuses those
//!    above 2^127.
//! 2. The typed model is built from the tree and re-encoded; the caller
//!    compares bytes, so any second encoding of the same data is refused.

use ciborium::Value;
use rug::integer::Order;
use rug::Integer;

/// Why bytes were refused before any meaning was given to them.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum DecodeError {
    /// The input ends inside an item.
    Truncated,
    /// Bytes follow the single top-level item.
    TrailingData,
    /// Well-formed CBOR, but not in the one deterministic encoding.
    NonCanonical(&'static str),
    /// Not CBOR this format allows (floats, unknown tags, bad UTF-8, …).
    Malformed(&'static str),
    /// Nesting, item count or size beyond the decoder's limits.
    OverLimit(&'static str),
    /// Valid CBOR whose shape is not a certificate: names the field.
    Schema(String),
}

impl std::fmt::Display for DecodeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            DecodeError::Truncated => write!(f, "the input ends inside a CBOR item"),
            DecodeError::TrailingData => write!(f, "bytes follow the certificate"),
            DecodeError::NonCanonical(w) => write!(f, "not deterministic CBOR: {w}"),
            DecodeError::Malformed(w) => write!(f, "malformed CBOR: {w}"),
            DecodeError::OverLimit(w) => write!(f, "over the decoder's limits: {w}"),
            DecodeError::Schema(w) => write!(f, "not a certificate: {w}"),
        }
    }
}

impl std::error::Error for DecodeError {}

/// Limits applied while walking raw bytes.
#[derive(Debug, Clone, Copy)]
pub struct WalkLimits {
    pub max_depth: usize,
    pub max_items: u64,
    /// Bytes the value tree may take: each array slot, map entry, boxed
    /// tag and string payload is charged before it is allocated, so a
    /// file of many tiny items cannot make the tree many times its size.
    pub max_tree_bytes: u64,
    /// The same, relative to the input: at most this many tree bytes per
    /// input byte, plus 1 MiB. Honest certificates need 7 to 19.
    pub tree_bytes_per_input_byte: u64,
}

impl Default for WalkLimits {
    fn default() -> Self {
        WalkLimits {
            max_depth: 24,
            max_items: 50_000_000,
            max_tree_bytes: 1 << 30,
            tree_bytes_per_input_byte: 32,
        }
    }
}

/// The bytes one value takes in its parent's slot.
const SLOT: u64 = std::mem::size_of::<Value>() as u64;
/// What the allocator adds to each block (its header and rounding).
const ALLOC: u64 = 16;

struct Walker<'a> {
    bytes: &'a [u8],
    pos: usize,
    items: u64,
    tree_bytes: u64,
    limits: WalkLimits,
}

impl Walker<'_> {
    fn byte(&mut self) -> Result<u8, DecodeError> {
        let b = *self.bytes.get(self.pos).ok_or(DecodeError::Truncated)?;
        self.pos += 1;
        Ok(b)
    }

    fn remaining(&self) -> u64 {
        (self.bytes.len() - self.pos.min(self.bytes.len())) as u64
    }

    /// Reads one head; returns (major type, argument).
    fn head(&mut self) -> Result<(u8, u64), DecodeError> {
        let initial = self.byte()?;
        let major = initial >> 5;
        let info = initial & 0x1f;
        let arg = match info {
            0..=23 => u64::from(info),
            24..=27 => {
                let n = 1usize << (info - 24);
                let mut v: u64 = 0;
                for _ in 0..n {
                    v = (v << 8) | u64::from(self.byte()?);
                }
                let min = match n {
                    1 => 24,
                    2 => 0x100,
                    4 => 0x1_0000,
                    _ => 0x1_0000_0000,
                };
                if v < min {
                    return Err(DecodeError::NonCanonical("a head is longer than needed"));
                }
                v
            }
            31 => return Err(DecodeError::NonCanonical("indefinite length")),
            _ => return Err(DecodeError::Malformed("reserved additional information")),
        };
        Ok((major, arg))
    }

    /// Charges `bytes` of the value tree before they are allocated.
    fn charge(&mut self, bytes: u64) -> Result<(), DecodeError> {
        self.tree_bytes = self.tree_bytes.saturating_add(bytes);
        let relative = (self.limits.tree_bytes_per_input_byte)
            .saturating_mul(self.bytes.len() as u64)
            .saturating_add(1 << 20);
        match self.tree_bytes > self.limits.max_tree_bytes.min(relative) {
            true => Err(DecodeError::OverLimit(
                "the decoded tree would be too large",
            )),
            false => Ok(()),
        }
    }

    fn take(&mut self, len: u64) -> Result<&[u8], DecodeError> {
        if len > self.remaining() {
            return Err(DecodeError::Truncated);
        }
        self.charge(len + ALLOC)?;
        let start = self.pos;
        self.pos += len as usize;
        self.bytes
            .get(start..self.pos)
            .ok_or(DecodeError::Truncated)
    }

    fn item(&mut self, depth: usize) -> Result<Value, DecodeError> {
        if depth > self.limits.max_depth {
            return Err(DecodeError::OverLimit("nesting depth"));
        }
        self.items += 1;
        if self.items > self.limits.max_items {
            return Err(DecodeError::OverLimit("item count"));
        }
        let (major, arg) = self.head()?;
        match major {
            0 => Ok(Value::Integer(arg.into())),
            1 => {
                let v = -1i128 - i128::from(arg);
                ciborium::value::Integer::try_from(v)
                    .map(Value::Integer)
                    .map_err(|_| DecodeError::Malformed("negative integer out of range"))
            }
            2 => Ok(Value::Bytes(self.take(arg)?.to_vec())),
            3 => {
                let b = self.take(arg)?.to_vec();
                String::from_utf8(b)
                    .map(Value::Text)
                    .map_err(|_| DecodeError::Malformed("text is not UTF-8"))
            }
            4 => {
                if arg > self.remaining() {
                    return Err(DecodeError::Truncated);
                }
                self.charge(arg * SLOT + ALLOC)?;
                let mut out = Vec::with_capacity(arg as usize);
                for _ in 0..arg {
                    out.push(self.item(depth + 1)?);
                }
                Ok(Value::Array(out))
            }
            5 => {
                if arg.saturating_mul(2) > self.remaining() {
                    return Err(DecodeError::Truncated);
                }
                self.charge(arg * 2 * SLOT + ALLOC)?;
                let mut out = Vec::with_capacity(arg as usize);
                for _ in 0..arg {
                    let k = self.item(depth + 1)?;
                    let v = self.item(depth + 1)?;
                    out.push((k, v));
                }
                Ok(Value::Map(out))
            }
            6 => {
                if arg != 2 && arg != 3 {
                    return Err(DecodeError::Malformed(
                        "only bignum tags 2 and 3 are allowed",
                    ));
                }
                let (inner, len) = self.head()?;
                if inner != 2 {
                    return Err(DecodeError::Malformed(
                        "a bignum tag must hold a byte string",
                    ));
                }
                self.charge(SLOT + ALLOC)?;
                let b = self.take(len)?.to_vec();
                if b.len() <= 8 || b.first() == Some(&0) {
                    return Err(DecodeError::NonCanonical(
                        "a bignum that is not in preferred serialisation",
                    ));
                }
                Ok(Value::Tag(arg, Box::new(Value::Bytes(b))))
            }
            _ => match arg {
                20 => Ok(Value::Bool(false)),
                21 => Ok(Value::Bool(true)),
                22 => Ok(Value::Null),
                _ => Err(DecodeError::Malformed(
                    "floats and simple values are not allowed",
                )),
            },
        }
    }
}

/// Walks `bytes` whole: the tree and the bytes charged for it.
fn walk(bytes: &[u8], limits: WalkLimits) -> Result<(Value, u64), DecodeError> {
    let mut w = Walker {
        bytes,
        pos: 0,
        items: 0,
        tree_bytes: SLOT,
        limits,
    };
    let v = w.item(0)?;
    if w.pos != bytes.len() {
        return Err(DecodeError::TrailingData);
    }
    Ok((v, w.tree_bytes))
}

/// Decodes `bytes` into a value tree with the checks listed in the module
/// docs. Bignums stay tagged byte strings, so every size round-trips.
pub fn to_value(bytes: &[u8], limits: WalkLimits) -> Result<Value, DecodeError> {
    walk(bytes, limits).map(|(v, _)| v)
}

/// The bytes [`to_value`] charges for the tree of `bytes` (`None` if they
/// do not decode under `limits`).
pub fn tree_bytes(bytes: &[u8], limits: WalkLimits) -> Option<u64> {
    walk(bytes, limits).ok().map(|(_, t)| t)
}

/// Encodes a value tree. Writing into a `Vec` cannot fail for the trees
/// this crate builds; an error is still passed on rather than hidden.
pub fn from_value(v: &Value) -> Result<Vec<u8>, DecodeError> {
    let mut out = Vec::new();
    ciborium::ser::into_writer(v, &mut out)
        .map_err(|_| DecodeError::Malformed("the value tree could not be encoded"))?;
    Ok(out)
}

/// A map sorted by encoded key (RFC 8949 §4.2.1). Keys here are short
/// text strings, so this is "shorter first, then bytewise".
pub fn map(entries: Vec<(&str, Value)>) -> Value {
    let mut e: Vec<(&str, Value)> = entries;
    e.sort_by(|a, b| (a.0.len(), a.0.as_bytes()).cmp(&(b.0.len(), b.0.as_bytes())));
    Value::Map(
        e.into_iter()
            .map(|(k, v)| (Value::Text(k.to_string()), v))
            .collect(),
    )
}

/// An integer of any size: a plain CBOR integer when it fits in 64 bits,
/// otherwise a bignum (tag 2 or 3) without leading zero bytes.
pub fn int(x: &Integer) -> Value {
    if let Some(v) = x.to_u64() {
        return Value::Integer(v.into());
    }
    if x.is_negative() {
        let m: Integer = Integer::from(-1) - x;
        if let Some(v) = m.to_u64() {
            let i = -1i128 - i128::from(v);
            if let Ok(ci) = ciborium::value::Integer::try_from(i) {
                return Value::Integer(ci);
            }
        }
        Value::Tag(3, Box::new(Value::Bytes(m.to_digits::<u8>(Order::Msf))))
    } else {
        Value::Tag(2, Box::new(Value::Bytes(x.to_digits::<u8>(Order::Msf))))
    }
}

pub fn uint(x: u64) -> Value {
    Value::Integer(x.into())
}

pub fn sint(x: i64) -> Value {
    Value::Integer(x.into())
}

/// Reads an integer written by [`int`].
pub fn get_int(v: &Value, what: &str) -> Result<Integer, DecodeError> {
    match v {
        Value::Integer(i) => Ok(Integer::from(i128::from(*i))),
        Value::Tag(t @ (2 | 3), inner) => match inner.as_ref() {
            Value::Bytes(b) => {
                let m = Integer::from_digits(b, Order::Msf);
                Ok(if *t == 2 { m } else { Integer::from(-1) - m })
            }
            _ => Err(schema(what, "a bignum")),
        },
        _ => Err(schema(what, "an integer")),
    }
}

pub fn get_u64(v: &Value, what: &str) -> Result<u64, DecodeError> {
    match v {
        Value::Integer(i) => {
            u64::try_from(*i).map_err(|_| schema(what, "an unsigned 64-bit integer"))
        }
        _ => Err(schema(what, "an unsigned integer")),
    }
}

pub fn get_i64(v: &Value, what: &str) -> Result<i64, DecodeError> {
    match v {
        Value::Integer(i) => i64::try_from(*i).map_err(|_| schema(what, "a signed 64-bit integer")),
        _ => Err(schema(what, "an integer")),
    }
}

pub fn get_text<'a>(v: &'a Value, what: &str) -> Result<&'a str, DecodeError> {
    match v {
        Value::Text(s) => Ok(s),
        _ => Err(schema(what, "a text string")),
    }
}

pub fn get_bytes<'a>(v: &'a Value, what: &str) -> Result<&'a [u8], DecodeError> {
    match v {
        Value::Bytes(b) => Ok(b),
        _ => Err(schema(what, "a byte string")),
    }
}

pub fn get_bool(v: &Value, what: &str) -> Result<bool, DecodeError> {
    match v {
        Value::Bool(b) => Ok(*b),
        _ => Err(schema(what, "a boolean")),
    }
}

pub fn get_array<'a>(v: &'a Value, what: &str) -> Result<&'a [Value], DecodeError> {
    match v {
        Value::Array(a) => Ok(a),
        _ => Err(schema(what, "an array")),
    }
}

pub fn schema(what: &str, expected: &str) -> DecodeError {
    DecodeError::Schema(format!("{what} must be {expected}"))
}

/// A map being read: every key must be consumed, so unknown fields are
/// refused rather than ignored.
pub struct MapReader<'a> {
    what: String,
    entries: Vec<(&'a str, &'a Value)>,
    used: Vec<bool>,
}

impl<'a> MapReader<'a> {
    pub fn new(v: &'a Value, what: &str) -> Result<Self, DecodeError> {
        let Value::Map(m) = v else {
            return Err(schema(what, "a map"));
        };
        let mut entries = Vec::with_capacity(m.len());
        for (k, v) in m {
            let Value::Text(k) = k else {
                return Err(schema(what, "a map with text keys"));
            };
            entries.push((k.as_str(), v));
        }
        Ok(MapReader {
            what: what.to_string(),
            used: vec![false; entries.len()],
            entries,
        })
    }

    pub fn opt(&mut self, key: &str) -> Option<&'a Value> {
        for (i, (k, v)) in self.entries.iter().enumerate() {
            if *k == key {
                if let Some(u) = self.used.get_mut(i) {
                    *u = true;
                }
                return Some(*v);
            }
        }
        None
    }

    pub fn req(&mut self, key: &str) -> Result<&'a Value, DecodeError> {
        let what = format!("{}.{key}", self.what);
        self.opt(key)
            .ok_or_else(|| DecodeError::Schema(format!("{what} is missing")))
    }

    pub fn path(&self, key: &str) -> String {
        format!("{}.{key}", self.what)
    }

    /// Refuses any key that was not read.
    pub fn finish(self) -> Result<(), DecodeError> {
        for ((k, _), u) in self.entries.iter().zip(self.used.iter()) {
            if !u {
                return Err(DecodeError::Schema(format!(
                    "{}.{k} is not a known field",
                    self.what
                )));
            }
        }
        Ok(())
    }
}

// Tests report failures by panicking (the panic-free set is the
// verifier's rule, not the tests').
#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]
mod tests {
    use super::*;

    /// `n` one-element arrays `[0]` in one array: 2 bytes each on the
    /// wire, two value slots and an allocation each in the tree.
    fn arrays(n: u32) -> Vec<u8> {
        let mut b = vec![0x9a];
        b.extend(n.to_be_bytes());
        for _ in 0..n {
            b.extend([0x81, 0x00]);
        }
        b
    }

    #[test]
    fn many_tiny_items_are_refused_before_the_tree_is_built() {
        let b = arrays(200_000);
        let limits = WalkLimits::default();
        assert_eq!(
            to_value(&b, limits),
            Err(DecodeError::OverLimit(
                "the decoded tree would be too large"
            ))
        );
        // the same items are fine when the tree may be 64 times the input
        let loose = WalkLimits {
            tree_bytes_per_input_byte: 64,
            ..limits
        };
        assert!(to_value(&b, loose).is_ok());
        // and the absolute cap applies whatever the input's size
        let tight = WalkLimits {
            max_tree_bytes: 1 << 10,
            ..loose
        };
        assert!(to_value(&arrays(100), tight).is_err());
    }

    /// Every stored honest certificate decodes within the default
    /// relative cap (32 tree bytes per input byte), with room to spare
    /// (they take 9 to 23 per byte).
    #[test]
    fn honest_certificates_stay_within_the_relative_cap() {
        let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/../vectors");
        let mut seen = 0;
        for sub in ["golden", "golden-fields"] {
            for e in std::fs::read_dir(format!("{dir}/{sub}")).unwrap() {
                let p = e.unwrap().path();
                if p.extension().is_some_and(|x| x == "cert") {
                    let b = std::fs::read(&p).unwrap();
                    let t = tree_bytes(&b, WalkLimits::default()).unwrap();
                    assert!(t < 24 * b.len() as u64 + (1 << 20), "{}", p.display());
                    seen += 1;
                }
            }
        }
        assert!(seen >= 10, "{seen} certificates");
    }
}
