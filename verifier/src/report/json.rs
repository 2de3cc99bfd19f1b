//! The verdict as JSON, in the vocabulary shared with `classcert show`
//! (schema `classcert/1`; `docs/json.md`): integers of the mathematics
//! are decimal strings, counts and bounds are JSON numbers.

use super::text::not_proven;
use super::view::CertificateKind;
use super::{GeneratorView, Report};
use crate::analytic::Method;
use classcert_format::json::Json;
use rug::Integer;

/// The schema name of every JSON document classcert prints.
pub const SCHEMA: &str = "classcert/1";

fn num(x: &Integer) -> Json {
    Json::str(super::view::printable(x))
}

/// A generator: `{"order", "form": [a, b, c]}` or
/// `{"order", "prime_ideals": [{"p", "b", "e"}, …]}`.
pub fn generator(order: Option<&Integer>, g: &GeneratorView) -> Json {
    let order = order.map(num).unwrap_or(Json::Null);
    match g {
        GeneratorView::Form(a, b, c) => Json::obj(vec![
            ("order", order),
            ("form", Json::Arr(vec![num(a), num(b), num(c)])),
        ]),
        GeneratorView::Ideals(f) | GeneratorView::FieldIdeals(f) => {
            // `b` for a quadratic ideal, the factor base index for a field's
            let (label, field) = match g {
                GeneratorView::Ideals(_) => ("b", false),
                _ => ("factor_base_index", true),
            };
            let ideal = |(p, b, e): &(u64, u64, Integer)| {
                let b = if field {
                    Json::Num(b.to_string())
                } else {
                    Json::str(b.to_string())
                };
                Json::obj(vec![
                    ("p", Json::str(p.to_string())),
                    (label, b),
                    ("e", num(e)),
                ])
            };
            Json::obj(vec![
                ("order", order),
                ("prime_ideals", Json::Arr(f.iter().map(ideal).collect())),
            ])
        }
    }
}

/// `{"method": "euler-product", "x": X}` or `{"method": "series", "terms": N}`.
pub fn analytic(m: Method) -> Json {
    match m {
        Method::EulerProduct { x } => Json::obj(vec![
            ("method", Json::str("euler-product")),
            ("x", Json::Num(x.to_string())),
        ]),
        Method::Series { terms } => Json::obj(vec![
            ("method", Json::str("series")),
            ("terms", Json::Num(terms.to_string())),
        ]),
    }
}

/// The kind of certificate, as named in JSON.
pub fn kind_name(k: CertificateKind) -> &'static str {
    match k {
        CertificateKind::Relations => "relations",
        CertificateKind::OrderWitness => "order-witness",
    }
}

/// An error before any certificate could be read (exit code 2), as JSON.
pub fn error(code: &str, detail: &str) -> Json {
    Json::obj(vec![
        ("schema", Json::str(SCHEMA)),
        ("kind", Json::str("error")),
        ("reason", Json::str(code)),
        ("detail", Json::str(detail)),
    ])
}

impl Report {
    /// `signer` when signed, `policy` when one was applied.
    fn signer_and_policy_json(&self, e: &mut Vec<(&str, Json)>) {
        if let Some(s) = &self.summary.signer {
            e.push((
                "signer",
                Json::obj(vec![
                    ("fingerprint", Json::str(s.fingerprint.clone())),
                    ("trusted", Json::Bool(s.trusted)),
                ]),
            ));
        }
        if !self.summary.policy.is_empty() {
            let rules = self.summary.policy.iter().map(|r| Json::str(r.clone()));
            e.push(("policy", Json::Arr(rules.collect())));
        }
    }

    /// The verdict, with the key `answer` last when an answer was checked.
    pub fn to_json(&self) -> Json {
        let mut j = self.verdict_json();
        if let (Json::Obj(e), Some(a)) = (&mut j, &self.summary.answer) {
            e.push(("answer".into(), a.json()));
        }
        j
    }

    fn verdict_json(&self) -> Json {
        let opt = |x: &Option<Integer>| x.as_ref().map(num).unwrap_or(Json::Null);
        let sm = &self.summary;
        let id = sm.certificate_sha256.clone().map_or(Json::Null, Json::Str);
        let mut e: Vec<(&str, Json)> = vec![
            ("schema", Json::str(SCHEMA)),
            ("kind", Json::str("verdict")),
        ];
        let v = match &self.outcome {
            Ok(v) => v,
            Err(r) => {
                e.push(("verdict", Json::str("rejected")));
                e.push(("reason", Json::str(r.reason.code())));
                e.push(("detail", Json::str(r.detail.clone())));
                e.push(("certificate_sha256", id));
                self.signer_and_policy_json(&mut e);
                let kind = sm.kind.map_or(Json::Null, |k| Json::str(kind_name(k)));
                e.push(("certificate_kind", kind));
                match &self.summary.polynomial {
                    Some(f) => e.push(("polynomial", Json::str(super::polynomial_text(f)))),
                    None => e.push(("discriminant", opt(&self.summary.discriminant))),
                }
                e.push(("maximal", Json::Bool(false)));
                e.push(("class_number", Json::Null));
                e.push(("invariants", Json::Null));
                e.push(("assumptions", Json::Arr(vec![])));
                e.push(("claimed_class_number", opt(&sm.claimed_class_number)));
                let inv = sm.claimed_invariants.as_ref();
                let inv = inv.map_or(Json::Null, |v| Json::Arr(v.iter().map(num).collect()));
                e.push(("claimed_invariants", inv));
                return Json::obj(e);
            }
        };
        e.push(("verdict", Json::str("verified")));
        e.push(("reason", Json::Null));
        e.push(("detail", Json::Null));
        e.push(("certificate_sha256", id));
        self.signer_and_policy_json(&mut e);
        e.push(("certificate_kind", Json::str(kind_name(v.kind()))));
        if let Some(k) = v.field() {
            e.push(("polynomial", Json::str(k.polynomial_text())));
            e.push(("degree", Json::Num(k.degree().to_string())));
            e.push((
                "signature",
                Json::Arr(vec![
                    Json::Num(k.signature.0.to_string()),
                    Json::Num(k.signature.1.to_string()),
                ]),
            ));
            e.push(("maximal", Json::Bool(v.maximal())));
            e.push((
                if v.maximal() {
                    "field_discriminant"
                } else {
                    "order_discriminant"
                },
                num(&k.discriminant),
            ));
            e.push(("index", num(&k.index)));
            if let Some(c) = &k.unfactored {
                e.push(("unfactored", num(c)));
            }
            e.push(("regulator", Json::str(k.regulator_text())));
            e.push(("unit_rank", Json::Num(k.unit_rank().to_string())));
        } else {
            e.push(("discriminant", opt(&self.summary.discriminant)));
            e.push(("maximal", Json::Bool(v.maximal())));
        }
        if v.maximal() && v.field().is_none() {
            e.push(("field_discriminant", opt(&self.summary.discriminant)));
            e.push(("conductor", Json::str("1")));
        }
        e.push(("class_number", num(v.class_number())));
        let (inv, gens) = (v.invariants(), v.generators());
        e.push(("invariants", Json::Arr(inv.iter().map(num).collect())));
        let gens = gens
            .iter()
            .enumerate()
            .map(|(i, g)| generator(inv.get(i), g));
        e.push(("generators", Json::Arr(gens.collect())));
        if let Some(u) = v.unit() {
            e.push((
                "unit",
                Json::obj(vec![
                    ("norm", Json::str(u.norm.to_string())),
                    ("regulator", Json::str(u.regulator_text())),
                    ("compact_steps", Json::Num(u.compact_length.to_string())),
                ]),
            ));
        }
        let assumptions = v.assumptions().iter().map(|a| Json::str(a.name()));
        e.push(("assumptions", Json::Arr(assumptions.collect())));
        e.push(("analytic", analytic(v.method())));
        if let Some(b) = v.generation_bound() {
            e.push(("generation_bound", Json::Num(b.to_string())));
        }
        e.push(("w", Json::Num(v.w().to_string())));
        let theorems = v.theorems().iter().map(|t| {
            Json::obj(vec![
                ("id", Json::str(t.id)),
                ("hypothesis", Json::str(t.hypothesis.name())),
                ("statement", Json::str(t.statement)),
                ("citation", Json::str(t.citation)),
                ("note", Json::str(t.note)),
            ])
        });
        e.push(("theorems", Json::Arr(theorems.collect())));
        let not_proven = not_proven(v).into_iter().map(Json::Str);
        e.push(("not_proven", Json::Arr(not_proven.collect())));
        Json::obj(e)
    }
}
