//! The verdict: what was read ([`Summary`]), what was shown ([`Verified`])
//! or why not ([`reason`]), and its two renderings, [`text`] and [`json`].
//! The JSON vocabulary (schema `classcert/1`) is shared with `classcert
//! show`, so one fact has one key everywhere (`docs/json.md`).

pub mod json;
pub mod policy;
pub mod reason;
pub mod text;
pub mod view;

pub use crate::pipeline::Verified;
pub use reason::{Reason, Rejection};
pub use view::{
    decimal, generator_text, ideals_text, invariants_text, polynomial_text, prime_powers_text,
    short_number, Assumption, CertificateKind, FieldSummary, GeneratorView, UnitSummary,
};

pub use policy::Policy;

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
    /// Who signed the certificate, when it is signed.
    pub signer: Option<crate::signature::Signer>,
    /// The rules of the policy applied (`Report::apply`), if any.
    pub policy: Vec<String>,
    /// An answer checked against the certificate (`Report::check_answer`).
    pub answer: Option<crate::answer::Answered>,
}

/// A report: what was read, and the outcome.
#[derive(Debug, Clone)]
pub struct Report {
    pub summary: Summary,
    pub outcome: Result<Verified, Rejection>,
}

impl Report {
    /// Whether every check passed (and every requirement holds).
    pub fn is_verified(&self) -> bool {
        self.outcome.is_ok()
    }

    /// A report on input that could not be read as a certificate.
    pub fn rejected(reason: Reason, detail: String) -> Report {
        let outcome = Err(Rejection { reason, detail });
        Report {
            summary: Summary::default(),
            outcome,
        }
    }
}
