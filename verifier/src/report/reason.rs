//! Why a certificate is refused: the reason codes, stable for scripts.

/// Defines [`Reason`] and its codes in one list, so a variant cannot lack
/// its code.
macro_rules! reasons {
    ($($variant:ident => $code:literal,)*) => {
        /// Why a certificate (or an answer) was not verified. Each has a
        /// stable code that scripts may match on (`reason` in the JSON
        /// output).
        #[derive(Debug, Clone, Copy, PartialEq, Eq)]
        #[non_exhaustive]
        pub enum Reason {
            $($variant,)*
        }

        impl Reason {
            /// Every reason, in the order of the list.
            pub const ALL: &'static [Reason] = &[$(Reason::$variant,)*];

            /// The stable code (`reason` in the JSON output).
            pub fn code(self) -> &'static str {
                match self {
                    $(Reason::$variant => $code,)*
                }
            }
        }
    };
}

reasons! {
    DecodeTruncated => "decode-truncated",
    DecodeTrailingData => "decode-trailing-data",
    DecodeNonCanonical => "decode-noncanonical",
    DecodeMalformed => "decode-malformed",
    DigestMismatch => "digest-mismatch",
    UnsupportedVersion => "unsupported-version",
    OverLimit => "over-limit",
    InvalidDiscriminant => "invalid-discriminant",
    UnsupportedOrder => "unsupported-order",
    NotACertificate => "not-a-certificate",
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
    PolynomialInvalid => "polynomial-invalid",
    OrderNotRing => "order-not-ring",
    OrderNotMaximal => "order-not-maximal",
    RootsInvalid => "roots-invalid",
    TorsionMismatch => "torsion-mismatch",
    UnitNotUnit => "unit-not-unit",
    SignatureInvalid => "signature-invalid",
    SignerNotTrusted => "signer-not-trusted",
    ManifestMismatch => "manifest-mismatch",
    AnswerMismatch => "answer-mismatch",
    AnswerInvalid => "answer-invalid",
    AnswerNotPrincipal => "answer-not-principal",
    AnswerOrderMismatch => "answer-order-mismatch",
}

/// A refusal: the reason code and one sentence saying what failed.
#[derive(Debug, Clone)]
pub struct Rejection {
    pub reason: Reason,
    pub detail: String,
}

/// The result of a check: its token, or why the certificate is refused.
pub type Check<T> = Result<T, Rejection>;

/// Refuses with `reason` when `refused`; the detail is written out only
/// then (pass `format_args!`, not `format!`).
pub fn reject_if(refused: bool, reason: Reason, detail: impl std::fmt::Display) -> Check<()> {
    match refused {
        true => reject(reason, detail.to_string()),
        false => Ok(()),
    }
}

/// Refuses with `reason`.
pub fn reject<T>(reason: Reason, detail: impl Into<String>) -> Result<T, Rejection> {
    Err(Rejection {
        reason,
        detail: detail.into(),
    })
}
