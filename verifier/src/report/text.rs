//! The verdict as text: `VERIFIED` or `REJECTED: <reason>` on the first
//! line, then what was shown, what it rests on and what it does not prove.

use super::reason::Reason;
use super::view::CertificateKind;
use super::{generator_text, invariants_text, Report, Verified};
use crate::analytic::Method;
use crate::registry::Hypothesis;

/// What every verdict does not prove.
const NOT_PROVEN: &[&str] = &[
    "anything about the security of a cryptosystem built on this group: that needs a proper security review",
    "that the prover or this verifier is free of bugs: the verifier is small so that it can be reviewed",
];

/// What a real order's verdict does not prove when it rests on GRH.
const NOT_PROVEN_REAL: &[&str] = &[
    "without GRH, that the unit is fundamental and R the regulator (only that it is a unit of infinite order)",
    "without GRH, when the unit's norm is 1, that the order has no unit of norm -1",
];

/// What `v` does not prove, in the order the verdict lists it.
pub fn not_proven(v: &Verified) -> Vec<String> {
    let mut out = Vec::new();
    if !v.assumptions().is_empty() {
        let grh = v.theorems().iter().any(|t| t.hypothesis == Hypothesis::Grh);
        out.push(format!(
            "the hypotheses listed under 'rests on'{}",
            if grh { " (GRH is unproven)" } else { "" }
        ));
    }
    if !v.maximal() {
        out.push(
            "that this is the maximal order of its field: maximality was not claimed, so the result speaks of the order of discriminant D"
                .into(),
        );
    }
    out.extend(NOT_PROVEN.iter().map(|s| s.to_string()));
    if v.unit().is_some() && !v.assumptions().is_empty() {
        out.extend(NOT_PROVEN_REAL.iter().map(|s| s.to_string()));
    }
    if v.field().is_some() && !v.assumptions().is_empty() {
        out.push("without GRH, that the units are a basis of the unit group modulo torsion and R the regulator (only that they are independent units)".into());
    }
    out
}

/// How the analytic bound was obtained, in words.
pub fn method_text(m: Method) -> String {
    match m {
        Method::EulerProduct { x } => format!("Euler product to X = {x}"),
        Method::Series { terms } => format!("exact series, {terms} terms and a tail bound"),
    }
}

impl Report {
    /// Who signed, and the policy applied, when there are.
    fn signer_and_policy_text(&self, s: &mut String) {
        if let Some(g) = &self.summary.signer {
            let how = match g.trusted {
                true => "the signature checked against a trusted key",
                false => "the signature not checked: no trusted key was given",
            };
            s.push_str(&format!("  signed by     {} ({how})\n", g.fingerprint));
        }
        if !self.summary.policy.is_empty() {
            s.push_str(&format!(
                "  policy        {}\n",
                self.summary.policy.join("; ")
            ));
        }
    }

    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let sm = &self.summary;
        let id = sm.certificate_sha256.clone().unwrap_or_else(|| "-".into());
        let disc = (sm.discriminant.as_ref()).map_or_else(|| "-".into(), super::short_number);
        let v = match &self.outcome {
            Ok(v) => v,
            Err(r) => {
                s.push_str(&format!("REJECTED: {}\n", r.reason.code()));
                s.extend(self.summary.answer.as_ref().map(|a| a.text()));
                s.push_str(&format!("  certificate   {id}\n"));
                self.signer_and_policy_text(&mut s);
                match &self.summary.polynomial {
                    Some(f) => s.push_str(&format!(
                        "  field         Q[x]/(F), F = {}\n",
                        super::polynomial_text(f)
                    )),
                    None => s.push_str(&format!("  order         D = {disc}\n")),
                }
                s.push_str(&format!("  why           {}\n", r.detail));
                s.push_str(match r.reason {
                    Reason::Policy => {
                        "  Every check passed: the certificate holds, but not under this policy.\n"
                    }
                    _ => "  Nothing in this certificate should be relied on.\n",
                });
                return s;
            }
        };
        s.push_str("VERIFIED\n");
        s.extend(self.summary.answer.as_ref().map(|a| a.text()));
        s.push_str(&format!("  certificate   {id}\n"));
        self.signer_and_policy_text(&mut s);
        let what = if v.maximal() {
            "maximal order (fundamental discriminant, factorisation certified)"
        } else {
            "order of this discriminant (maximality not claimed)"
        };
        match v.field() {
            Some(k) => {
                s.push_str(&format!(
                    "  field         Q[x]/(F), F = {}, degree {}, signature ({}, {})\n",
                    k.polynomial_text(),
                    k.degree(),
                    k.signature.0,
                    k.signature.1
                ));
                let assumed;
                s.push_str(&format!(
                    "  order         {}, discriminant {}, index [O : Z[θ]] = {}\n",
                    if let Some(c) = &k.unfactored {
                        assumed = format!("maximal order if the unfactored part {} of its discriminant is squarefree (p-maximality certified at every other prime)", super::short_number(c));
                        &assumed
                    } else if v.maximal() {
                        "maximal order (factorisation of its discriminant and p-maximality certified)"
                    } else {
                        "order (maximality not claimed)"
                    },
                    super::short_number(&k.discriminant),
                    k.index
                ));
            }
            None => s.push_str(&format!("  order         D = {disc}, {what}\n")),
        }
        s.push_str(&format!(
            "  class group   {}   (class number {})\n",
            invariants_text(v.invariants()),
            v.class_number()
        ));
        for (g, d) in v.generators().iter().zip(v.invariants()) {
            let g = generator_text(g);
            s.push_str(&format!("  generator     {g}  of order {d}\n"));
        }
        if let Some(u) = v.unit() {
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
        if let Some(k) = v.field() {
            s.push_str(&format!("  regulator     R = {}\n", k.regulator_text()));
            s.push_str(&format!(
                "  units         rank {}, as power products of the relations' elements\n",
                k.unit_rank()
            ));
        }
        s.push_str(&format!("  roots of 1    w = {}\n", v.w()));
        let assumptions: Vec<&str> = v.assumptions().iter().map(|a| a.name()).collect();
        if assumptions.is_empty() {
            s.push_str("  rests on      no hypothesis: the result is unconditional\n");
        } else {
            s.push_str(&format!("  rests on      {}\n", assumptions.join(", ")));
        }
        let log = if v.unit().is_some() || v.field().is_some() {
            "hR"
        } else {
            "h"
        };
        let shown = match (v.kind(), v.generation_bound(), v.factor_base_size()) {
            (CertificateKind::OrderWitness, _, _) => {
                let orders: Vec<String> = v.invariants().iter().map(|d| d.to_string()).collect();
                format!(
                    "classes of exact orders {} that are independent",
                    orders.join(", ")
                )
            }
            (CertificateKind::Relations, Some(b), Some(n)) => {
                format!("{n} prime ideals up to {b}")
            }
            (CertificateKind::Relations, _, _) => "relations".into(),
        };
        s.push_str(&format!(
            "  checked       {shown}; {}; log {log} in [{:.6}, {:.6}]\n",
            method_text(v.method()),
            v.log_h().lo.to_f64(),
            v.log_h().hi.to_f64()
        ));
        s.push_str("  theorems\n");
        for t in v.theorems() {
            let (id, hypothesis) = (t.id, t.hypothesis.name());
            s.push_str(&format!("    [{id}] ({hypothesis}) {}\n", t.citation));
            if !t.note.is_empty() {
                s.push_str(&format!("      note: {}\n", t.note));
            }
        }
        s.push_str("  not proven\n");
        for n in not_proven(v) {
            s.push_str(&format!("    - {n}\n"));
        }
        s
    }
}
