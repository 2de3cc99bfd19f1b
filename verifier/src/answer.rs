//! Answers about one class (`classcert ask`), checked against a verified
//! certificate: `[I] = ∏ g_i^{e_i}` and the order of `[I]` (registry entry
//! `class-coordinates`).
//!
//! The certificate is verified first, and its verified result supplies
//! the generators: `Cl(O) = ⊕ <g_i>` with `g_i` of order `d_i` (the Smith
//! form of a lattice of relations, each `g_i` mapping to the unit vector
//! of its factor and the analytic bound showing the lattice complete; or,
//! for an order witness, independent classes of exact orders `d_i` with
//! `∏ d_i = h`). Then the answer needs only exact checks of bounded size:
//! `0 <= e_i < d_i`, and `I · ∏ g_i^{-e_i}` reduces to the principal form
//! (reduced forms are unique in their class); its order follows from the
//! exponents alone.

use crate::ideals::form::Form;
use crate::limits::MAX_ENTRY_BITS;
use crate::registry::CLASS_COORDINATES;
use crate::report::reason::{reject, reject_if, Check, Reason, Rejection};
use crate::report::{short_number, GeneratorView, Report};
use classcert_format::json::Json;
use classcert_format::{Answer, FileError, Witness};
use rug::Integer;

/// An answer as read, and the outcome of its check.
#[derive(Debug, Clone)]
pub struct Answered {
    /// What the answer states (`None` when it could not be read).
    pub stated: Option<Answer>,
    pub outcome: Check<()>,
}

impl Report {
    /// Checks the answer file `bytes`, if any, against this report's
    /// certificate (only a verified one: otherwise the answer is refused
    /// with the certificate's reason) and keeps the outcome in the summary.
    pub fn check_answer(mut self, bytes: Option<&[u8]>) -> Report {
        self.summary.answer = bytes.map(|bytes| match Answer::decode(bytes) {
            Ok(a) => Answered {
                outcome: check(&self, &a),
                stated: Some(a),
            },
            Err(e) => Answered {
                outcome: reject(
                    crate::decode_reason(&FileError::Decode(e.clone())),
                    format!("the answer: {e}"),
                ),
                stated: None,
            },
        });
        self
    }

    /// Whether no answer was given or it was verified.
    pub fn answer_holds(&self) -> bool {
        (self.summary.answer.as_ref()).is_none_or(|a| a.outcome.is_ok())
    }
}

fn check(report: &Report, a: &Answer) -> Check<()> {
    let v = report.outcome.as_ref().map_err(|r| Rejection {
        reason: r.reason,
        detail: "the certificate was not accepted, so no answer is checked".into(),
    })?;
    let id = classcert_format::hex(&a.certificate);
    reject_if(
        report.summary.certificate_sha256.as_ref() != Some(&id),
        Reason::AnswerMismatch,
        format_args!("the answer is about another certificate ({id})"),
    )?;
    let d = report.summary.discriminant.as_ref().filter(|d| **d < 0);
    let generators: Option<Vec<Form>> = (v.generators().iter())
        .map(|g| match g {
            GeneratorView::Form(a, b, _) => Form::new(a.clone(), b.clone(), d?).ok(),
            _ => None,
        })
        .collect();
    let (Some(d), Some(generators)) = (d, generators) else {
        return reject(
            Reason::UnsupportedOrder,
            "answers are checked for D < 0 only",
        );
    };
    reject_if(
        a.witness != Witness::FormReduction,
        Reason::WitnessKind,
        "for D < 0 an answer is shown by form reduction",
    )?;
    let f = &a.form;
    let small = [&f.a, &f.b, &f.c]
        .iter()
        .all(|x| x.significant_bits() <= MAX_ENTRY_BITS);
    let Some(form) = Form::primitive(f, d).filter(|_| small) else {
        let why = "the form is not a primitive positive definite form of discriminant D";
        return reject(Reason::AnswerInvalid, why);
    };
    let inv = v.invariants();
    let in_range = (a.exponents.iter().zip(inv)).all(|(e, di)| *e >= 0 && e < di);
    reject_if(
        a.exponents.len() != inv.len() || !in_range,
        Reason::AnswerInvalid,
        "one exponent per invariant d_i is required, each in [0, d_i)",
    )?;
    // I · ∏ g_i^{-e_i}: each e_i is below d_i <= h, which the certificate's
    // checks bound
    let minus: Vec<Integer> = a.exponents.iter().map(|e| Integer::from(-e)).collect();
    let one = Integer::from(1);
    let terms: Vec<_> = [(&form, &one)]
        .into_iter()
        .chain(generators.iter().zip(&minus))
        .collect();
    reject_if(
        Form::product(&terms, d).ok() != Some(Form::principal(d)),
        Reason::AnswerNotPrincipal,
        "(a, b, c) · ∏ g_i^(-e_i) does not reduce to the principal form",
    )?;
    // in ⊕ Z/d_i the order of (e_i) is the lcm of the orders d_i/gcd(d_i, e_i)
    let order = (a.exponents.iter().zip(inv)).fold(Integer::from(1), |n, (e, di)| {
        n.lcm(&(di / Integer::from(di.gcd_ref(e))))
    });
    reject_if(
        a.order != order,
        Reason::AnswerOrderMismatch,
        format_args!("the class has order {order}, not the stated one"),
    )
}

impl Answered {
    /// The answer's line of the text verdict (its second line).
    pub fn text(&self) -> String {
        let (Ok(()), Some(a)) = (&self.outcome, &self.stated) else {
            let r = self.outcome.as_ref().err();
            let why = r.map(|r| format!(": {}: {}", r.reason.code(), r.detail));
            return format!("ANSWER REJECTED{}\n", why.unwrap_or_default());
        };
        let e = (a.exponents.iter().enumerate()).filter(|(_, e)| !e.is_zero());
        let class: Vec<String> = e.map(|(i, e)| format!("g{}^{e}", i + 1)).collect();
        let f = [&a.form.a, &a.form.b, &a.form.c].map(short_number);
        let class = match class.is_empty() {
            true => "1 (principal)".to_string(),
            false => class.join(" · "),
        };
        format!(
            "ANSWER VERIFIED: [({})] = {class}, of order {} [{CLASS_COORDINATES}]\n",
            f.join(", "),
            a.order
        )
    }

    /// The key `answer` of the JSON verdict.
    pub fn json(&self) -> Json {
        let ints =
            |v: Vec<&Integer>| Json::Arr(v.iter().map(|x| Json::str(x.to_string())).collect());
        let (s, r) = (self.stated.as_ref(), self.outcome.as_ref().err());
        let verdict = Json::str(if r.is_some() { "rejected" } else { "verified" });
        let reason = r.map_or(Json::Null, |r| Json::str(r.reason.code()));
        let detail = r.map_or(Json::Null, |r| Json::str(r.detail.clone()));
        let form = s.map_or(Json::Null, |a| ints(vec![&a.form.a, &a.form.b, &a.form.c]));
        let exponents = s.map_or(Json::Null, |a| ints(a.exponents.iter().collect()));
        let order = s.map_or(Json::Null, |a| Json::str(a.order.to_string()));
        let theorem = r.map_or(Json::str(CLASS_COORDINATES), |_| Json::Null);
        Json::obj(vec![
            ("verdict", verdict),
            ("reason", reason),
            ("detail", detail),
            ("form", form),
            ("exponents", exponents),
            ("order", order),
            ("theorem", theorem),
        ])
    }
}
