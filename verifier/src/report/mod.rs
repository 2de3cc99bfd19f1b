//! The verdict: what was read ([`Summary`]), what was shown ([`Verified`])
//! or why not ([`reason`]), and its two renderings, [`text`] and [`json`].
//! The JSON vocabulary (schema `classcert/1`) is shared with `classcert
//! show`, so one fact has one key everywhere (`docs/json.md`).

pub mod json;
pub mod reason;
pub mod text;
pub mod view;

pub use crate::pipeline::Verified;
pub use reason::{Reason, Rejection};
pub use view::{
    decimal, generator_text, ideals_text, invariants_text, polynomial_text, prime_powers_text,
    short_number, Assumption, CertificateKind, FieldSummary, GeneratorView, UnitSummary,
};

use rug::Integer;

/// What could be read of a certificate, whatever the outcome.
#[derive(Debug, Clone, Default)]
pub struct Summary {
    pub certificate_sha256: Option<String>,
    pub kind: Option<CertificateKind>,
    pub discriminant: Option<Integer>,
    /// Number fields: `F`, coefficients from the constant term up.
    pub polynomial: Option<Vec<Integer>>,
    pub claimed_class_number: Option<Integer>,
    pub claimed_invariants: Option<Vec<Integer>>,
}

/// A report: what was read, and the outcome.
#[derive(Debug, Clone)]
pub struct Report {
    pub summary: Summary,
    pub outcome: Result<Verified, Rejection>,
}

/// What a caller may demand of a verified certificate beyond its checks
/// (`classcert-verify --require`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Requirement {
    /// No assumption at all: neither GRH nor "BPSW probable prime".
    Unconditional,
}

impl Report {
    /// Refuses a verified report that does not meet `r`, with reason
    /// `policy`; the checks themselves are unchanged.
    pub fn require(self, r: Requirement) -> Report {
        let Ok(v) = &self.outcome else {
            return self;
        };
        match r {
            Requirement::Unconditional if !v.assumptions().is_empty() => {
                let names: Vec<&str> = v.assumptions().iter().map(|a| a.name()).collect();
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

    /// Whether every check passed (and every requirement holds).
    pub fn is_verified(&self) -> bool {
        self.outcome.is_ok()
    }
}
