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
    WitnessKind,
    RelationWitnessInvalid,
    CombinationMismatch,
    UnitsShape,
    UnitChainMismatch,
    UnitTrivial,
    RegulatorMismatch,
    RegulatorImprecise,
    UnitNormMismatch,
    ClassNumberRegulatorNotConfirmed,
    PrimalityProofInvalid,
    Policy,
    OrderWitnessFactorisation,
    OrderWitnessForm,
    OrderWitnessPower,
    OrderWitnessNotExact,
    OrderWitnessDependent,
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
            WitnessKind => "witness-kind",
            RelationWitnessInvalid => "relation-witness-invalid",
            CombinationMismatch => "combination-mismatch",
            UnitsShape => "units-shape",
            UnitChainMismatch => "unit-chain-mismatch",
            UnitTrivial => "unit-trivial",
            RegulatorMismatch => "regulator-mismatch",
            RegulatorImprecise => "regulator-imprecise",
            UnitNormMismatch => "unit-norm-mismatch",
            ClassNumberRegulatorNotConfirmed => "class-number-regulator-not-confirmed",
            PrimalityProofInvalid => "primality-proof-invalid",
            Policy => "policy",
            OrderWitnessFactorisation => "order-witness-factorisation",
            OrderWitnessForm => "order-witness-form",
            OrderWitnessPower => "order-witness-power",
            OrderWitnessNotExact => "order-witness-not-exact",
            OrderWitnessDependent => "order-witness-dependent",
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

/// A generator of a cyclic factor, for the reader.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GeneratorView {
    /// `D < 0`: the reduced form `(a, b, c)` of its class.
    Form(Integer, Integer, Integer),
    /// `D > 0`: `∏ (p, (b + sqrt D)/2)^e` over `(p, b, e)`.
    Ideals(Vec<(u64, u64, Integer)>),
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

/// The digits of an enclosure that are certain: the midpoint rounded to as
/// many significant digits as the width allows (at most 40), in plain
/// decimal notation.
pub fn decimal(i: &Interval) -> String {
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

/// What is known once every check has passed. It can only be built by
/// `check::verify_body`, from the tokens each check returns.
#[derive(Debug, Clone)]
pub struct Verified {
    pub class_number: Integer,
    pub invariants: Vec<Integer>,
    pub generators: Vec<GeneratorView>,
    /// `D > 0`: the unit group and regulator.
    pub unit: Option<UnitSummary>,
    pub maximal: bool,
    pub assumptions: Vec<Assumption>,
    pub theorems: Vec<&'static Theorem>,
    pub w: u32,
    pub euler_x: u64,
    pub generation_bound: u64,
    pub log_h: Interval,
    pub factor_base_size: usize,
    /// Shown by an element of exact order `H` (design note, section 6),
    /// not by relations.
    pub order_witness: bool,
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

/// What a real order's verdict does not prove, beyond [`NOT_PROVEN`].
const NOT_PROVEN_REAL: &[&str] = &[
    "without GRH, that the unit is fundamental and R the regulator (only that it is a unit of infinite order)",
    "without GRH, when the unit's norm is 1, that the order has no unit of norm -1",
];

fn not_proven(v: &Verified) -> Vec<&'static str> {
    let mut out: Vec<&'static str> = NOT_PROVEN
        .iter()
        .copied()
        .filter(|s| !(v.assumptions.is_empty() && s.starts_with("the hypotheses")))
        .collect();
    if v.unit.is_some() {
        out.extend_from_slice(NOT_PROVEN_REAL);
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

/// A generator for JSON: `[a, b, c]` or `[[p, b, e], …]`.
pub fn generator_json(g: &GeneratorView) -> Json {
    let num = |x: &Integer| Json::str(x.to_string());
    match g {
        GeneratorView::Form(a, b, c) => Json::Arr(vec![num(a), num(b), num(c)]),
        GeneratorView::Ideals(f) => Json::Arr(
            f.iter()
                .map(|(p, b, e)| {
                    Json::Arr(vec![
                        Json::Num(p.to_string()),
                        Json::Num(b.to_string()),
                        num(e),
                    ])
                })
                .collect(),
        ),
    }
}

/// A generator for the text report.
pub fn generator_text(g: &GeneratorView) -> String {
    match g {
        GeneratorView::Form(a, b, c) => format!("({a}, {b}, {c})"),
        GeneratorView::Ideals(f) => f
            .iter()
            .map(|(p, b, e)| {
                if *e == 1 {
                    format!("({p}, {b})")
                } else {
                    format!("({p}, {b})^{e}")
                }
            })
            .collect::<Vec<_>>()
            .join(" "),
    }
}

/// What a caller may demand of a verified certificate beyond its checks
/// (`classcert-verify --require`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Requirement {
    /// No assumption at all: neither GRH nor "BPSW probable prime".
    Unconditional,
}

impl Requirement {
    pub fn parse(s: &str) -> Option<Requirement> {
        match s {
            "unconditional" => Some(Requirement::Unconditional),
            _ => None,
        }
    }
}

impl Report {
    /// Refuses a verified report that does not meet `r`, with reason
    /// `policy`; the checks themselves are unchanged.
    pub fn require(self, r: Requirement) -> Report {
        let Ok(v) = &self.outcome else {
            return self;
        };
        match r {
            Requirement::Unconditional if !v.assumptions.is_empty() => {
                let names: Vec<&str> = v.assumptions.iter().map(|a| a.name()).collect();
                Report {
                    summary: self.summary,
                    outcome: Err(Rejection {
                        reason: Reason::Policy,
                        detail: format!(
                            "every check passed, but the result rests on {}, and --require unconditional allows no assumption",
                            names.join(", ")
                        ),
                    }),
                }
            }
            Requirement::Unconditional => self,
        }
    }

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
                for (i, g) in v.generators.iter().enumerate() {
                    let d = v
                        .invariants
                        .get(i)
                        .map(|d| d.to_string())
                        .unwrap_or_default();
                    s.push_str(&format!(
                        "  generator     {}  of order {d}\n",
                        generator_text(g)
                    ));
                }
                if let Some(u) = &v.unit {
                    s.push_str(&format!("  regulator     R = {}\n", u.regulator_text()));
                    s.push_str(&format!(
                        "  unit          ε of norm {}, in compact representation of {} step{}\n",
                        u.norm,
                        u.compact_length,
                        if u.compact_length == 1 { "" } else { "s" }
                    ));
                    if u.norm < 0 {
                        s.push_str(
                            "                a unit of norm -1 is exhibited: that fact holds unconditionally\n",
                        );
                    }
                }
                s.push_str(&format!("  roots of 1    w = {}\n", v.w));
                let assumptions: Vec<&str> = v.assumptions.iter().map(|a| a.name()).collect();
                if assumptions.is_empty() {
                    s.push_str("  rests on      no hypothesis: the result is unconditional\n");
                } else {
                    s.push_str(&format!("  rests on      {}\n", assumptions.join(", ")));
                }
                if v.order_witness {
                    s.push_str(&format!(
                        "  checked       a class of exact order {}, Euler product to X = {}, log h in [{:.6}, {:.6}]\n",
                        v.class_number,
                        v.euler_x,
                        v.log_h.lo.to_f64(),
                        v.log_h.hi.to_f64()
                    ));
                } else {
                    s.push_str(&format!(
                    "  checked       {} prime ideals up to {}, Euler product to X = {}, log {} in [{:.6}, {:.6}]\n",
                    v.factor_base_size,
                    v.generation_bound,
                    v.euler_x,
                    if v.unit.is_some() { "hR" } else { "h" },
                    v.log_h.lo.to_f64(),
                    v.log_h.hi.to_f64()
                ));
                }
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
                for n in not_proven(v) {
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
                    Json::Arr(v.generators.iter().map(generator_json).collect()),
                ));
                if let Some(u) = &v.unit {
                    e.push(("regulator", Json::str(u.regulator_text())));
                    e.push(("unit_norm", Json::Num(u.norm.to_string())));
                    e.push((
                        "unit_compact_length",
                        Json::Num(u.compact_length.to_string()),
                    ));
                }
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
                if v.order_witness {
                    e.push(("shown_by", Json::str("order-witness")));
                }
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
                    Json::Arr(not_proven(v).into_iter().map(Json::str).collect()),
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

#[cfg(test)]
mod tests {
    use super::*;

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
