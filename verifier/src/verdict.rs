//! Reasons, verdicts and their two renderings (text and JSON).

use crate::interval::Interval;
use crate::registry::Theorem;
use classcert_format::json::Json;
use rug::Integer;

/// Why a certificate was not verified. Each has a stable code that scripts
/// may match on (`reason` in the JSON output).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum Reason {
    DecodeTruncated,
    DecodeTrailingData,
    DecodeNonCanonical,
    DecodeMalformed,
    DigestMismatch,
    UnsupportedVersion,
    OverLimit,
    InvalidDiscriminant,
    UnsupportedOrder,
    UnknownTheorem,
    GenerationTheoremNotApplicable,
    ConductorMismatch,
    MaximalityFactorisation,
    MaximalityNotFundamental,
    FactorBaseInvalid,
    FactorBaseGap,
    GeneratorsInvalid,
    RelationNotPrincipal,
    SmithShape,
    SmithNotUnimodular,
    SmithMismatch,
    SmithDivisibility,
    EliminationStructure,
    EliminationNotPrincipal,
    EliminationIncomplete,
    ClassNumberMismatch,
    InvariantsMismatch,
    GeneratorMismatch,
    EulerXOutOfRange,
    EulerXTooSmall,
    EulerTraceMismatch,
    EulerIntervalUnderstated,
    ClassNumberNotConfirmed,
    AnalyticInconsistent,
}

impl Reason {
    pub fn code(self) -> &'static str {
        use Reason::*;
        match self {
            DecodeTruncated => "decode-truncated",
            DecodeTrailingData => "decode-trailing-data",
            DecodeNonCanonical => "decode-noncanonical",
            DecodeMalformed => "decode-malformed",
            DigestMismatch => "digest-mismatch",
            UnsupportedVersion => "unsupported-version",
            OverLimit => "over-limit",
            InvalidDiscriminant => "invalid-discriminant",
            UnsupportedOrder => "unsupported-order",
            UnknownTheorem => "unknown-theorem",
            GenerationTheoremNotApplicable => "generation-theorem-not-applicable",
            ConductorMismatch => "conductor-mismatch",
            MaximalityFactorisation => "maximality-factorisation",
            MaximalityNotFundamental => "maximality-not-fundamental",
            FactorBaseInvalid => "factor-base-invalid",
            FactorBaseGap => "factor-base-gap",
            GeneratorsInvalid => "generators-invalid",
            RelationNotPrincipal => "relation-not-principal",
            SmithShape => "smith-shape",
            SmithNotUnimodular => "smith-not-unimodular",
            SmithMismatch => "smith-mismatch",
            SmithDivisibility => "smith-divisibility",
            EliminationStructure => "elimination-structure",
            EliminationNotPrincipal => "elimination-not-principal",
            EliminationIncomplete => "elimination-incomplete",
            ClassNumberMismatch => "class-number-mismatch",
            InvariantsMismatch => "invariants-mismatch",
            GeneratorMismatch => "generator-mismatch",
            EulerXOutOfRange => "euler-x-out-of-range",
            EulerXTooSmall => "euler-x-too-small",
            EulerTraceMismatch => "euler-trace-mismatch",
            EulerIntervalUnderstated => "euler-interval-understated",
            ClassNumberNotConfirmed => "class-number-not-confirmed",
            AnalyticInconsistent => "analytic-inconsistent",
        }
    }
}

#[derive(Debug, Clone)]
pub struct Rejection {
    pub reason: Reason,
    pub detail: String,
}

pub fn reject<T>(reason: Reason, detail: impl Into<String>) -> Result<T, Rejection> {
    Err(Rejection {
        reason,
        detail: detail.into(),
    })
}

/// An assumption a verified claim rests on, beyond the cited theorems.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Assumption {
    Grh,
    BpswProbablePrime,
}

impl Assumption {
    pub fn name(&self) -> &'static str {
        match self {
            Assumption::Grh => "GRH",
            Assumption::BpswProbablePrime => "BPSW probable prime",
        }
    }
}

/// Evidence that every check ran; only this crate can make one.
#[derive(Debug, Clone)]
pub struct AllChecksPassed(pub(crate) ());

/// What is known once every check has passed. It can only be built by
/// `check::verify_body`, from the tokens each check returns.
#[derive(Debug, Clone)]
pub struct Verified {
    pub class_number: Integer,
    pub invariants: Vec<Integer>,
    pub generators: Vec<(Integer, Integer, Integer)>,
    pub maximal: bool,
    pub assumptions: Vec<Assumption>,
    pub theorems: Vec<&'static Theorem>,
    pub w: u32,
    pub euler_x: u64,
    pub generation_bound: u64,
    pub log_h: Interval,
    pub factor_base_size: usize,
    pub proof: AllChecksPassed,
}

/// What could be read of a certificate, whatever the outcome.
#[derive(Debug, Clone, Default)]
pub struct Summary {
    pub certificate_sha256: Option<String>,
    pub discriminant: Option<Integer>,
    pub claimed_class_number: Option<Integer>,
    pub claimed_invariants: Option<Vec<Integer>>,
}

#[derive(Debug, Clone)]
pub struct Report {
    pub summary: Summary,
    pub outcome: Result<Verified, Rejection>,
}

const NOT_PROVEN: &[&str] = &[
    "the hypotheses listed under 'rests on' (GRH is unproven)",
    "anything about the security of a cryptosystem built on this group: that needs a proper security review",
    "that the prover or this verifier is free of bugs: the verifier is small so that it can be reviewed",
];

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

impl Report {
    pub fn is_verified(&self) -> bool {
        self.outcome.is_ok()
    }

    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let id = self
            .summary
            .certificate_sha256
            .clone()
            .unwrap_or_else(|| "-".into());
        let disc = self
            .summary
            .discriminant
            .as_ref()
            .map(|d| d.to_string())
            .unwrap_or_else(|| "-".into());
        match &self.outcome {
            Ok(v) => {
                s.push_str("VERIFIED\n");
                s.push_str(&format!("  certificate   {id}\n"));
                let what = if v.maximal {
                    "maximal order (fundamental discriminant, factorisation certified)"
                } else {
                    "order of this discriminant (maximality not claimed)"
                };
                s.push_str(&format!("  order         D = {disc}, {what}\n"));
                s.push_str(&format!(
                    "  class group   {}   (class number {})\n",
                    invariants_text(&v.invariants),
                    v.class_number
                ));
                for (i, (a, b, c)) in v.generators.iter().enumerate() {
                    let d = v
                        .invariants
                        .get(i)
                        .map(|d| d.to_string())
                        .unwrap_or_default();
                    s.push_str(&format!("  generator     ({a}, {b}, {c})  of order {d}\n"));
                }
                s.push_str(&format!("  roots of 1    w = {}\n", v.w));
                let assumptions: Vec<&str> = v.assumptions.iter().map(|a| a.name()).collect();
                s.push_str(&format!("  rests on      {}\n", assumptions.join(", ")));
                s.push_str(&format!(
                    "  checked       {} prime ideals up to {}, Euler product to X = {}, log h in [{:.6}, {:.6}]\n",
                    v.factor_base_size,
                    v.generation_bound,
                    v.euler_x,
                    v.log_h.lo.to_f64(),
                    v.log_h.hi.to_f64()
                ));
                s.push_str("  theorems\n");
                for t in &v.theorems {
                    s.push_str(&format!(
                        "    [{}] ({}) {}\n",
                        t.id,
                        t.hypothesis.name(),
                        t.citation
                    ));
                    if !t.note.is_empty() {
                        s.push_str(&format!("      note: {}\n", t.note));
                    }
                }
                s.push_str("  not proven\n");
                for n in NOT_PROVEN {
                    s.push_str(&format!("    - {n}\n"));
                }
            }
            Err(r) => {
                s.push_str(&format!("REJECTED: {}\n", r.reason.code()));
                s.push_str(&format!("  certificate   {id}\n"));
                s.push_str(&format!("  order         D = {disc}\n"));
                s.push_str(&format!("  why           {}\n", r.detail));
                s.push_str("  Nothing in this certificate should be relied on.\n");
            }
        }
        s
    }

    pub fn to_json(&self) -> Json {
        let num = |x: &Integer| Json::str(x.to_string());
        let opt = |x: &Option<Integer>| x.as_ref().map(num).unwrap_or(Json::Null);
        let mut e: Vec<(&str, Json)> = Vec::new();
        match &self.outcome {
            Ok(v) => {
                e.push(("verdict", Json::str("verified")));
                e.push(("reason", Json::Null));
                e.push(("detail", Json::Null));
                e.push(("discriminant", opt(&self.summary.discriminant)));
                e.push(("class_number", num(&v.class_number)));
                e.push((
                    "invariants",
                    Json::Arr(v.invariants.iter().map(num).collect()),
                ));
                e.push((
                    "generators",
                    Json::Arr(
                        v.generators
                            .iter()
                            .map(|(a, b, c)| Json::Arr(vec![num(a), num(b), num(c)]))
                            .collect(),
                    ),
                ));
                e.push((
                    "assumptions",
                    Json::Arr(v.assumptions.iter().map(|a| Json::str(a.name())).collect()),
                ));
                e.push(("maximal", Json::Bool(v.maximal)));
                e.push(("w", Json::Num(v.w.to_string())));
                e.push((
                    "generation_bound",
                    Json::Num(v.generation_bound.to_string()),
                ));
                e.push(("euler_x", Json::Num(v.euler_x.to_string())));
                e.push((
                    "theorems",
                    Json::Arr(
                        v.theorems
                            .iter()
                            .map(|t| {
                                Json::obj(vec![
                                    ("id", Json::str(t.id)),
                                    ("hypothesis", Json::str(t.hypothesis.name())),
                                    ("citation", Json::str(t.citation)),
                                    ("note", Json::str(t.note)),
                                ])
                            })
                            .collect(),
                    ),
                ));
                e.push((
                    "not_proven",
                    Json::Arr(NOT_PROVEN.iter().map(|s| Json::str(*s)).collect()),
                ));
            }
            Err(r) => {
                e.push(("verdict", Json::str("rejected")));
                e.push(("reason", Json::str(r.reason.code())));
                e.push(("detail", Json::str(r.detail.clone())));
                e.push(("discriminant", opt(&self.summary.discriminant)));
                e.push(("class_number", Json::Null));
                e.push(("invariants", Json::Null));
                e.push((
                    "claimed_class_number",
                    opt(&self.summary.claimed_class_number),
                ));
                e.push((
                    "claimed_invariants",
                    self.summary
                        .claimed_invariants
                        .as_ref()
                        .map(|v| Json::Arr(v.iter().map(num).collect()))
                        .unwrap_or(Json::Null),
                ));
                e.push(("assumptions", Json::Arr(vec![])));
                e.push(("maximal", Json::Bool(false)));
            }
        }
        e.push((
            "certificate_sha256",
            self.summary
                .certificate_sha256
                .clone()
                .map(Json::Str)
                .unwrap_or(Json::Null),
        ));
        Json::obj(e)
    }
}
