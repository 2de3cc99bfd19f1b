//! The certificate of an order in a number field of degree 3 to 6
//! (`general-fields.md`): a body whose order has the kind `polynomial`.
//!
//! It shares the claim, the relation lattice, the primality evidence and
//! the Euler trace with quadratic certificates, and adds its own tagged
//! kinds: the factor base `two-element` (prime ideals `(p, π)` with `e`,
//! `f`, a generator of the residue field and an anti-uniformiser), raw
//! relations with `coordinates` witnesses, root enclosures, and units as
//! `power-products` of raw relations.

use crate::cbor::{self, DecodeError, MapReader};
use crate::model::{
    bounds, claim_value, euler_value, get_bounds, get_claim, get_euler, get_ints, get_lattice,
    get_maximality, get_order, get_producer, get_sparse, get_u32, ints, lattice_value,
    maximality_value, order_value, pair, producer_value, shown, sparse, Bounds, Claim, EulerTrace,
    Lattice, Order, PrimePower, Producer,
};
use ciborium::Value;
use rug::Integer;

/// A prime ideal `P = pO + πO` above `p`, elements by their coordinates
/// over the order's basis.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldPrime {
    pub p: u64,
    /// Ramification index `e = v_P(p)`.
    pub e: u32,
    /// Residue degree: `N(P) = p^f`.
    pub f: u32,
    pub pi: Vec<Integer>,
    /// An element whose image generates `O/P` over `F_p`.
    pub generator: Vec<Integer>,
    /// `γ ∉ pO` with `γ π ∈ pO`: `γ/p` lies in `P^{-1}` but not in `O`.
    pub anti: Vec<Integer>,
}

/// Enclosures of the roots of `F`: the real ones ascending, then one of
/// each complex pair (imaginary part positive) as a box.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Embedding {
    pub real: Vec<Bounds>,
    pub complex: Vec<(Bounds, Bounds)>,
}

/// The unit group claimed: `μ_w × <u_1, …, u_r>`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldUnits {
    /// `w`, the number of roots of unity.
    pub w: u32,
    /// A root of unity of order `w`, by its coordinates.
    pub zeta: Vec<Integer>,
    /// `r = r1 + r2 - 1` units, each `∏ α_j^{k_j}` over raw relations `j`
    /// (sparse `(j, k_j)`, indices increasing).
    pub units: Vec<Vec<(u32, Integer)>>,
    /// The claimed enclosure of the regulator of `u_1, …, u_r`.
    pub regulator: Bounds,
}

/// The certified content of a number-field certificate.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldBody {
    pub producer: Producer,
    /// Always [`Order::Polynomial`].
    pub order: Order,
    pub claim: Claim,
    /// The full factorisation of `|disc(O)|` when "maximal order" is
    /// claimed (`null` otherwise).
    pub maximality: Option<Vec<PrimePower>>,
    /// The part of `|disc(O)|` left unfactored (`maximality` then
    /// factors the rest): the certificate rests on it being squarefree,
    /// which makes `O` maximal at its primes too. Absent when `|disc(O)|`
    /// is fully factored.
    pub unfactored: Option<Integer>,
    pub generation_theorem: String,
    /// Every prime ideal above each listed `p`, grouped by `p` ascending.
    pub factor_base: Vec<FieldPrime>,
    pub lattice: Lattice,
    pub roots: Embedding,
    pub units: FieldUnits,
    /// The Euler-product trace for `log κ_K`, the residue of `ζ_K` at 1.
    pub euler: EulerTrace,
}

fn kind(k: &str) -> (&str, Value) {
    ("kind", Value::Text(k.into()))
}

impl FieldBody {
    pub fn to_value(&self) -> Value {
        let ideals = self
            .factor_base
            .iter()
            .map(|q| {
                Value::Array(vec![
                    cbor::uint(q.p),
                    cbor::uint(u64::from(q.e)),
                    cbor::uint(u64::from(q.f)),
                    ints(&q.pi),
                    ints(&q.generator),
                    ints(&q.anti),
                ])
            })
            .collect();
        let r = &self.roots;
        let roots = cbor::map(vec![
            ("real", Value::Array(r.real.iter().map(bounds).collect())),
            (
                "complex",
                Value::Array(
                    r.complex
                        .iter()
                        .map(|(re, im)| Value::Array(vec![bounds(re), bounds(im)]))
                        .collect(),
                ),
            ),
        ]);
        let u = &self.units;
        let units = cbor::map(vec![
            kind("power-products"),
            ("w", cbor::uint(u64::from(u.w))),
            ("zeta", ints(&u.zeta)),
            (
                "units",
                Value::Array(u.units.iter().map(|t| sparse(t)).collect()),
            ),
            ("regulator", bounds(&u.regulator)),
        ]);
        let mut entries = vec![
            ("producer", producer_value(&self.producer)),
            ("order", order_value(&self.order)),
            ("claim", claim_value(&self.claim)),
            ("maximality", maximality_value(&self.maximality)),
            (
                "generation-theorem",
                Value::Text(self.generation_theorem.clone()),
            ),
            (
                "factor-base",
                cbor::map(vec![kind("two-element"), ("ideals", Value::Array(ideals))]),
            ),
            ("lattice", lattice_value(&self.lattice)),
            ("roots", roots),
            ("units", units),
            ("euler", euler_value(&self.euler)),
        ];
        if let Some(c) = &self.unfactored {
            entries.push(("unfactored", cbor::int(c)));
        }
        cbor::map(entries)
    }

    pub fn encode(&self) -> Result<Vec<u8>, DecodeError> {
        cbor::from_value(&self.to_value())
    }

    pub fn from_value(v: &Value) -> Result<FieldBody, DecodeError> {
        let mut top = MapReader::new(v, "body")?;
        let producer = get_producer(top.req("producer")?)?;
        let order = get_order(top.req("order")?)?;
        let claim = get_claim(top.req("claim")?)?;
        let maximality = get_maximality(top.req("maximality")?)?;
        let unfactored = top
            .opt("unfactored")
            .map(|c| cbor::get_int(c, "unfactored"))
            .transpose()?;
        let generation_theorem =
            cbor::get_text(top.req("generation-theorem")?, "generation-theorem")?.to_string();
        let mut fb = MapReader::new(top.req("factor-base")?, "body.factor-base")?;
        let k = cbor::get_text(fb.req("kind")?, "factor-base.kind")?;
        if k != "two-element" {
            return Err(DecodeError::Schema(format!(
                "unknown factor-base kind {}",
                shown(k)
            )));
        }
        let what = "factor-base.ideals[]";
        let factor_base = cbor::get_array(fb.req("ideals")?, "factor-base.ideals")?
            .iter()
            .map(|x| match cbor::get_array(x, what)? {
                [p, e, f, pi, g, a] => Ok(FieldPrime {
                    p: cbor::get_u64(p, what)?,
                    e: get_u32(e, what)?,
                    f: get_u32(f, what)?,
                    pi: get_ints(pi, what)?,
                    generator: get_ints(g, what)?,
                    anti: get_ints(a, what)?,
                }),
                _ => Err(cbor::schema(what, "[p, e, f, pi, generator, anti]")),
            })
            .collect::<Result<Vec<_>, DecodeError>>()?;
        fb.finish()?;
        let lattice = get_lattice(top.req("lattice")?)?;
        let mut r = MapReader::new(top.req("roots")?, "body.roots")?;
        let roots = Embedding {
            real: cbor::get_array(r.req("real")?, "roots.real")?
                .iter()
                .map(|b| get_bounds(b, "roots.real[]"))
                .collect::<Result<Vec<_>, DecodeError>>()?,
            complex: cbor::get_array(r.req("complex")?, "roots.complex")?
                .iter()
                .map(|b| {
                    let (re, im) = pair(b, "roots.complex[]")?;
                    Ok((
                        get_bounds(re, "roots.complex[] re")?,
                        get_bounds(im, "roots.complex[] im")?,
                    ))
                })
                .collect::<Result<Vec<_>, DecodeError>>()?,
        };
        r.finish()?;
        let mut u = MapReader::new(top.req("units")?, "body.units")?;
        let k = cbor::get_text(u.req("kind")?, "units.kind")?;
        if k != "power-products" {
            return Err(DecodeError::Schema(format!(
                "unknown units kind {}",
                shown(k)
            )));
        }
        let units = FieldUnits {
            w: get_u32(u.req("w")?, "units.w")?,
            zeta: get_ints(u.req("zeta")?, "units.zeta")?,
            units: cbor::get_array(u.req("units")?, "units.units")?
                .iter()
                .map(|t| get_sparse(t, "units.units[]"))
                .collect::<Result<Vec<_>, DecodeError>>()?,
            regulator: get_bounds(u.req("regulator")?, "units.regulator")?,
        };
        u.finish()?;
        let euler = get_euler(top.req("euler")?)?;
        top.finish()?;
        Ok(FieldBody {
            producer,
            order,
            claim,
            maximality,
            unfactored,
            generation_theorem,
            factor_base,
            lattice,
            roots,
            units,
            euler,
        })
    }
}

/// Whether a body's order has the kind `polynomial` (then it is a
/// [`FieldBody`]).
pub(crate) fn is_field_body(v: &Value) -> bool {
    let Value::Map(entries) = v else {
        return false;
    };
    entries.iter().any(|(k, o)| {
        matches!(k, Value::Text(t) if t == "order")
            && matches!(o, Value::Map(m) if m.iter().any(|(k2, v2)|
                matches!(k2, Value::Text(t) if t == "kind")
                    && matches!(v2, Value::Text(t) if t == "polynomial")))
    })
}
