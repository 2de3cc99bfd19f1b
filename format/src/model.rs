//! The certificate data model (format version 1).
//!
//! Everything here is plain data: the verifier gives it meaning. Each
//! `to_value` has a matching `from_value`, and the file is accepted only
//! when `to_value(from_value(bytes)) == bytes`.
//!
//! Room for later: [`Order`], [`PrimeIdeal`] and [`Witness`] are tagged
//! unions (map key `kind`), so real quadratic orders and orders of number
//! fields of any degree add variants without changing existing files.

use crate::cbor::{self, DecodeError, MapReader};
use ciborium::Value;
use rug::Integer;

pub const FORMAT_VERSION: u64 = 1;

/// The order whose class group is claimed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Order {
    /// `O_D = Z[(D + sqrt D)/2]` for a discriminant `D`.
    Quadratic { discriminant: Integer },
}

/// Who produced the certificate. The verifier never relies on it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Producer {
    pub tool: String,
    pub version: String,
    pub seed: u64,
}

/// A dyadic rational `m · 2^e`: exact, so no floats enter the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Dyadic {
    pub mantissa: Integer,
    pub exponent: i64,
}

/// A closed interval with dyadic end points.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Bounds {
    pub lo: Dyadic,
    pub hi: Dyadic,
}

/// How a prime's primality is shown.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PrimalityEvidence {
    /// The Baillie–PSW test, which has no counterexample below 2^64; above
    /// that it is an assumption and the verdict lists it.
    Bpsw,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PrimePower {
    pub prime: Integer,
    pub exponent: u32,
    pub evidence: PrimalityEvidence,
}

/// A prime ideal of the order, in a field-generic shape.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PrimeIdeal {
    /// The ideal `(p, (b + sqrt D)/2)`, i.e. the form `(p, b, (b^2 - D)/(4p))`,
    /// with `0 <= b <= p` and `b^2 ≡ D (mod 4p)`.
    QuadraticForm { p: u64, b: u64 },
}

/// Why a relation holds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Witness {
    /// `D < 0`: composing the prime forms and reducing gives the principal
    /// form (reduced forms are unique in their class).
    FormReduction,
}

/// A relation `∏ P_i^{e_i} ~ 1`, sparse over factor-base indices.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Relation {
    pub entries: Vec<(u32, Integer)>,
    pub witness: Witness,
}

/// A relation that expresses one factor-base ideal through ideals that are
/// already accounted for: coefficient ±1 at `pivot`, and every other index
/// is a generator or the pivot of an earlier elimination.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Elimination {
    pub pivot: u32,
    pub relation: Relation,
}

/// Smith normal form of the generator relation matrix `H` (rows are
/// relations over the generators): `U·H·V = diag(d)`, `U·U' = V·V' = I`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Smith {
    pub u: Vec<Vec<Integer>>,
    pub u_inv: Vec<Vec<Integer>>,
    pub v: Vec<Vec<Integer>>,
    pub v_inv: Vec<Vec<Integer>>,
    pub diagonal: Vec<Integer>,
}

/// A reduced binary quadratic form, for the reader.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Form {
    pub a: Integer,
    pub b: Integer,
    pub c: Integer,
}

/// A generator of one cyclic factor `Z/d_i` (only factors with `d_i > 1`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CyclicGenerator {
    /// Exponents over the generator ideals `G_j`.
    pub exponents: Vec<Integer>,
    /// The reduced form of `∏ G_j^{exponents_j}`.
    pub form: Form,
}

/// The relation lattice, presented so that only a small block needs a
/// Smith form.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Lattice {
    /// Factor-base indices of the generator ideals `G`.
    pub generators: Vec<u32>,
    /// Square matrix `H`: row `i` is a relation over `G` (dense).
    pub relations: Vec<Vec<Integer>>,
    /// The witness each row of `H` carries.
    pub relation_witness: Witness,
    pub smith: Smith,
    /// One per factor-base ideal outside `G`, in checking order.
    pub eliminations: Vec<Elimination>,
}

/// The Euler-product approximation of `log L(1, χ_d)`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EulerTrace {
    /// Registry name of the theorem used.
    pub theorem: String,
    /// The cut-off `X`.
    pub x: u64,
    /// Partial sums `(limit, A, C)` with `A = Σ χ(p)^m/(m p^m)` and
    /// `C = Σ χ(p)^m log p / p^{m/2}` over prime powers `p^m < limit`.
    pub checkpoints: Vec<Checkpoint>,
    /// The claimed enclosure of `log L(1, χ_d)`, error term included.
    pub log_l: Bounds,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Checkpoint {
    pub limit: u64,
    pub a: Bounds,
    pub c: Bounds,
}

/// What the certificate claims.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Claim {
    pub class_number: Integer,
    /// Invariant factors `d_1 | d_2 | …`, all `> 1`.
    pub invariants: Vec<Integer>,
    pub generators: Vec<CyclicGenerator>,
}

/// The certified content of a certificate.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Body {
    pub producer: Producer,
    pub order: Order,
    pub claim: Claim,
    /// `(p, e)` with `p^e` the exact power of `p` in the conductor, for all
    /// primes up to the trial-division bound (the verifier recomputes it).
    pub conductor_small: Vec<(u64, u32)>,
    /// Present only when "maximal order of Q(sqrt d)" is claimed: the full
    /// factorisation of `|D|`.
    pub maximality: Option<Vec<PrimePower>>,
    /// Registry name of the generation bound used.
    pub generation_theorem: String,
    pub factor_base: Vec<PrimeIdeal>,
    pub lattice: Lattice,
    pub euler: EulerTrace,
}

/// A certificate file: the body and the SHA-256 of its canonical encoding.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Certificate {
    pub body: Body,
}

// ---------------------------------------------------------------- encode

fn ints(v: &[Integer]) -> Value {
    Value::Array(v.iter().map(cbor::int).collect())
}

fn matrix(m: &[Vec<Integer>]) -> Value {
    Value::Array(m.iter().map(|r| ints(r)).collect())
}

fn dyadic(d: &Dyadic) -> Value {
    Value::Array(vec![cbor::int(&d.mantissa), cbor::sint(d.exponent)])
}

fn bounds(b: &Bounds) -> Value {
    Value::Array(vec![dyadic(&b.lo), dyadic(&b.hi)])
}

fn witness(w: &Witness) -> Value {
    match w {
        Witness::FormReduction => cbor::map(vec![("kind", Value::Text("form-reduction".into()))]),
    }
}

fn relation(r: &Relation) -> Value {
    cbor::map(vec![
        (
            "e",
            Value::Array(
                r.entries
                    .iter()
                    .map(|(i, e)| Value::Array(vec![cbor::uint(u64::from(*i)), cbor::int(e)]))
                    .collect(),
            ),
        ),
        ("w", witness(&r.witness)),
    ])
}

fn form(f: &Form) -> Value {
    Value::Array(vec![cbor::int(&f.a), cbor::int(&f.b), cbor::int(&f.c)])
}

impl Body {
    pub fn to_value(&self) -> Value {
        let Order::Quadratic { discriminant } = &self.order;
        let order = cbor::map(vec![
            ("kind", Value::Text("quadratic".into())),
            ("discriminant", cbor::int(discriminant)),
        ]);
        let producer = cbor::map(vec![
            ("tool", Value::Text(self.producer.tool.clone())),
            ("version", Value::Text(self.producer.version.clone())),
            ("seed", cbor::uint(self.producer.seed)),
        ]);
        let claim = cbor::map(vec![
            ("class-number", cbor::int(&self.claim.class_number)),
            ("invariants", ints(&self.claim.invariants)),
            (
                "generators",
                Value::Array(
                    self.claim
                        .generators
                        .iter()
                        .map(|g| {
                            cbor::map(vec![
                                ("exponents", ints(&g.exponents)),
                                ("form", form(&g.form)),
                            ])
                        })
                        .collect(),
                ),
            ),
        ]);
        let conductor = Value::Array(
            self.conductor_small
                .iter()
                .map(|(p, e)| Value::Array(vec![cbor::uint(*p), cbor::uint(u64::from(*e))]))
                .collect(),
        );
        let maximality = match &self.maximality {
            None => Value::Null,
            Some(f) => Value::Array(
                f.iter()
                    .map(|pp| {
                        let PrimalityEvidence::Bpsw = pp.evidence;
                        cbor::map(vec![
                            ("p", cbor::int(&pp.prime)),
                            ("e", cbor::uint(u64::from(pp.exponent))),
                            (
                                "evidence",
                                cbor::map(vec![("kind", Value::Text("bpsw".into()))]),
                            ),
                        ])
                    })
                    .collect(),
            ),
        };
        let ideals = Value::Array(
            self.factor_base
                .iter()
                .map(|PrimeIdeal::QuadraticForm { p, b }| {
                    Value::Array(vec![cbor::uint(*p), cbor::uint(*b)])
                })
                .collect(),
        );
        let fb = cbor::map(vec![
            ("kind", Value::Text("quadratic-forms".into())),
            ("ideals", ideals),
        ]);
        let l = &self.lattice;
        let smith = cbor::map(vec![
            ("u", matrix(&l.smith.u)),
            ("u-inv", matrix(&l.smith.u_inv)),
            ("v", matrix(&l.smith.v)),
            ("v-inv", matrix(&l.smith.v_inv)),
            ("diagonal", ints(&l.smith.diagonal)),
        ]);
        let lattice = cbor::map(vec![
            (
                "generators",
                Value::Array(
                    l.generators
                        .iter()
                        .map(|g| cbor::uint(u64::from(*g)))
                        .collect(),
                ),
            ),
            ("relations", matrix(&l.relations)),
            ("relation-witness", witness(&l.relation_witness)),
            ("smith", smith),
            (
                "eliminations",
                Value::Array(
                    l.eliminations
                        .iter()
                        .map(|e| {
                            Value::Array(vec![
                                cbor::uint(u64::from(e.pivot)),
                                relation(&e.relation),
                            ])
                        })
                        .collect(),
                ),
            ),
        ]);
        let e = &self.euler;
        let euler = cbor::map(vec![
            ("theorem", Value::Text(e.theorem.clone())),
            ("x", cbor::uint(e.x)),
            (
                "checkpoints",
                Value::Array(
                    e.checkpoints
                        .iter()
                        .map(|c| {
                            Value::Array(vec![cbor::uint(c.limit), bounds(&c.a), bounds(&c.c)])
                        })
                        .collect(),
                ),
            ),
            ("log-l", bounds(&e.log_l)),
        ]);
        cbor::map(vec![
            ("producer", producer),
            ("order", order),
            ("claim", claim),
            ("conductor-small", conductor),
            ("maximality", maximality),
            (
                "generation-theorem",
                Value::Text(self.generation_theorem.clone()),
            ),
            ("factor-base", fb),
            ("lattice", lattice),
            ("euler", euler),
        ])
    }

    /// The canonical bytes of the body (what the digest covers).
    pub fn encode(&self) -> Result<Vec<u8>, DecodeError> {
        cbor::from_value(&self.to_value())
    }
}

// ---------------------------------------------------------------- decode

fn get_ints(v: &Value, what: &str) -> Result<Vec<Integer>, DecodeError> {
    cbor::get_array(v, what)?
        .iter()
        .map(|x| cbor::get_int(x, what))
        .collect()
}

fn get_matrix(v: &Value, what: &str) -> Result<Vec<Vec<Integer>>, DecodeError> {
    cbor::get_array(v, what)?
        .iter()
        .map(|r| get_ints(r, what))
        .collect()
}

fn pair<'a>(v: &'a Value, what: &str) -> Result<(&'a Value, &'a Value), DecodeError> {
    match cbor::get_array(v, what)? {
        [a, b] => Ok((a, b)),
        _ => Err(cbor::schema(what, "a pair")),
    }
}

fn get_dyadic(v: &Value, what: &str) -> Result<Dyadic, DecodeError> {
    let (m, e) = pair(v, what)?;
    Ok(Dyadic {
        mantissa: cbor::get_int(m, what)?,
        exponent: cbor::get_i64(e, what)?,
    })
}

fn get_bounds(v: &Value, what: &str) -> Result<Bounds, DecodeError> {
    let (lo, hi) = pair(v, what)?;
    Ok(Bounds {
        lo: get_dyadic(lo, what)?,
        hi: get_dyadic(hi, what)?,
    })
}

fn get_u32(v: &Value, what: &str) -> Result<u32, DecodeError> {
    u32::try_from(cbor::get_u64(v, what)?).map_err(|_| cbor::schema(what, "below 2^32"))
}

fn get_kind<'a>(v: &'a Value, what: &str) -> Result<(String, MapReader<'a>), DecodeError> {
    let mut m = MapReader::new(v, what)?;
    let kind = cbor::get_text(m.req("kind")?, what)?.to_string();
    Ok((kind, m))
}

fn get_witness(v: &Value, what: &str) -> Result<Witness, DecodeError> {
    let (kind, m) = get_kind(v, what)?;
    let w = match kind.as_str() {
        "form-reduction" => Witness::FormReduction,
        _ => {
            return Err(DecodeError::Schema(format!(
                "{what}: unknown witness kind {kind:?}"
            )))
        }
    };
    m.finish()?;
    Ok(w)
}

fn get_relation(v: &Value, what: &str) -> Result<Relation, DecodeError> {
    let mut m = MapReader::new(v, what)?;
    let entries = cbor::get_array(m.req("e")?, what)?
        .iter()
        .map(|x| {
            let (i, e) = pair(x, what)?;
            Ok((get_u32(i, what)?, cbor::get_int(e, what)?))
        })
        .collect::<Result<Vec<_>, DecodeError>>()?;
    let witness = get_witness(m.req("w")?, what)?;
    m.finish()?;
    Ok(Relation { entries, witness })
}

fn get_form(v: &Value, what: &str) -> Result<Form, DecodeError> {
    match cbor::get_array(v, what)? {
        [a, b, c] => Ok(Form {
            a: cbor::get_int(a, what)?,
            b: cbor::get_int(b, what)?,
            c: cbor::get_int(c, what)?,
        }),
        _ => Err(cbor::schema(what, "a form [a, b, c]")),
    }
}

impl Body {
    pub fn from_value(v: &Value) -> Result<Body, DecodeError> {
        let mut top = MapReader::new(v, "body")?;

        let mut p = MapReader::new(top.req("producer")?, "body.producer")?;
        let producer = Producer {
            tool: cbor::get_text(p.req("tool")?, "producer.tool")?.to_string(),
            version: cbor::get_text(p.req("version")?, "producer.version")?.to_string(),
            seed: cbor::get_u64(p.req("seed")?, "producer.seed")?,
        };
        p.finish()?;

        let (kind, mut o) = get_kind(top.req("order")?, "body.order")?;
        let order = match kind.as_str() {
            "quadratic" => Order::Quadratic {
                discriminant: cbor::get_int(o.req("discriminant")?, "order.discriminant")?,
            },
            _ => return Err(DecodeError::Schema(format!("unknown order kind {kind:?}"))),
        };
        o.finish()?;

        let mut c = MapReader::new(top.req("claim")?, "body.claim")?;
        let generators = cbor::get_array(c.req("generators")?, "claim.generators")?
            .iter()
            .map(|g| {
                let mut gm = MapReader::new(g, "claim.generators[]")?;
                let cg = CyclicGenerator {
                    exponents: get_ints(gm.req("exponents")?, "generator.exponents")?,
                    form: get_form(gm.req("form")?, "generator.form")?,
                };
                gm.finish()?;
                Ok(cg)
            })
            .collect::<Result<Vec<_>, DecodeError>>()?;
        let claim = Claim {
            class_number: cbor::get_int(c.req("class-number")?, "claim.class-number")?,
            invariants: get_ints(c.req("invariants")?, "claim.invariants")?,
            generators,
        };
        c.finish()?;

        let conductor_small = cbor::get_array(top.req("conductor-small")?, "conductor-small")?
            .iter()
            .map(|x| {
                let (p, e) = pair(x, "conductor-small[]")?;
                Ok((
                    cbor::get_u64(p, "conductor prime")?,
                    get_u32(e, "conductor exponent")?,
                ))
            })
            .collect::<Result<Vec<_>, DecodeError>>()?;

        let maximality = match top.req("maximality")? {
            Value::Null => None,
            v => Some(
                cbor::get_array(v, "maximality")?
                    .iter()
                    .map(|x| {
                        let mut m = MapReader::new(x, "maximality[]")?;
                        let prime = cbor::get_int(m.req("p")?, "maximality.p")?;
                        let exponent = get_u32(m.req("e")?, "maximality.e")?;
                        let (kind, ev) = get_kind(m.req("evidence")?, "maximality.evidence")?;
                        let evidence = match kind.as_str() {
                            "bpsw" => PrimalityEvidence::Bpsw,
                            _ => {
                                return Err(DecodeError::Schema(format!(
                                    "unknown evidence {kind:?}"
                                )))
                            }
                        };
                        ev.finish()?;
                        m.finish()?;
                        Ok(PrimePower {
                            prime,
                            exponent,
                            evidence,
                        })
                    })
                    .collect::<Result<Vec<_>, DecodeError>>()?,
            ),
        };

        let generation_theorem =
            cbor::get_text(top.req("generation-theorem")?, "generation-theorem")?.to_string();

        let (fb_kind, mut fbm) = get_kind(top.req("factor-base")?, "body.factor-base")?;
        if fb_kind != "quadratic-forms" {
            return Err(DecodeError::Schema(format!(
                "unknown factor-base kind {fb_kind:?}"
            )));
        }
        let factor_base = cbor::get_array(fbm.req("ideals")?, "factor-base.ideals")?
            .iter()
            .map(|x| {
                let (p, b) = pair(x, "factor-base[]")?;
                Ok(PrimeIdeal::QuadraticForm {
                    p: cbor::get_u64(p, "factor-base p")?,
                    b: cbor::get_u64(b, "factor-base b")?,
                })
            })
            .collect::<Result<Vec<_>, DecodeError>>()?;
        fbm.finish()?;

        let mut l = MapReader::new(top.req("lattice")?, "body.lattice")?;
        let mut s = MapReader::new(l.req("smith")?, "lattice.smith")?;
        let smith = Smith {
            u: get_matrix(s.req("u")?, "smith.u")?,
            u_inv: get_matrix(s.req("u-inv")?, "smith.u-inv")?,
            v: get_matrix(s.req("v")?, "smith.v")?,
            v_inv: get_matrix(s.req("v-inv")?, "smith.v-inv")?,
            diagonal: get_ints(s.req("diagonal")?, "smith.diagonal")?,
        };
        s.finish()?;
        let lattice = Lattice {
            generators: cbor::get_array(l.req("generators")?, "lattice.generators")?
                .iter()
                .map(|g| get_u32(g, "lattice.generators[]"))
                .collect::<Result<Vec<_>, DecodeError>>()?,
            relations: get_matrix(l.req("relations")?, "lattice.relations")?,
            relation_witness: get_witness(l.req("relation-witness")?, "lattice.relation-witness")?,
            smith,
            eliminations: cbor::get_array(l.req("eliminations")?, "lattice.eliminations")?
                .iter()
                .map(|x| {
                    let (p, r) = pair(x, "elimination")?;
                    Ok(Elimination {
                        pivot: get_u32(p, "elimination pivot")?,
                        relation: get_relation(r, "elimination relation")?,
                    })
                })
                .collect::<Result<Vec<_>, DecodeError>>()?,
        };
        l.finish()?;

        let mut e = MapReader::new(top.req("euler")?, "body.euler")?;
        let euler = EulerTrace {
            theorem: cbor::get_text(e.req("theorem")?, "euler.theorem")?.to_string(),
            x: cbor::get_u64(e.req("x")?, "euler.x")?,
            checkpoints: cbor::get_array(e.req("checkpoints")?, "euler.checkpoints")?
                .iter()
                .map(|x| match cbor::get_array(x, "checkpoint")? {
                    [n, a, c] => Ok(Checkpoint {
                        limit: cbor::get_u64(n, "checkpoint limit")?,
                        a: get_bounds(a, "checkpoint a")?,
                        c: get_bounds(c, "checkpoint c")?,
                    }),
                    _ => Err(cbor::schema("checkpoint", "[limit, a, c]")),
                })
                .collect::<Result<Vec<_>, DecodeError>>()?,
            log_l: get_bounds(e.req("log-l")?, "euler.log-l")?,
        };
        e.finish()?;
        top.finish()?;

        Ok(Body {
            producer,
            order,
            claim,
            conductor_small,
            maximality,
            generation_theorem,
            factor_base,
            lattice,
            euler,
        })
    }
}
