//! What a caller demands of a verified certificate beyond its checks
//! (`classcert-verify --allow`, `--require`, `--expect-class-number`,
//! `--expect-invariants`, `--trusted-key`, or the same in a policy file).
//! A policy never changes a check: it refuses a verified result with
//! reason `policy`, saying that every check passed and which rule refused.

use super::reason::{reject, Reason};
use super::{Assumption, Report, Summary, Verified};
use crate::limits::MAX_POLICY_LINES;
use rug::Integer;

/// The rules; the default demands nothing.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Policy {
    /// The assumptions accepted; `None` accepts any, `Some([])` none.
    pub allow: Option<Vec<Assumption>>,
    /// The maximal order must be certified.
    pub maximal: bool,
    pub class_number: Option<Integer>,
    pub invariants: Option<Vec<Integer>>,
    /// A signature under a trusted key is required.
    pub signed: bool,
}

impl Policy {
    /// The rules, one phrase each (empty: no policy).
    pub fn rules(&self) -> Vec<String> {
        let names = |a: &Vec<Assumption>| a.iter().map(|x| x.name()).collect::<Vec<_>>().join(", ");
        [
            self.allow.as_ref().map(|a| match a.is_empty() {
                true => "no assumption allowed".to_string(),
                false => format!("assumptions allowed: {}", names(a)),
            }),
            self.maximal.then(|| "the maximal order".into()),
            self.class_number
                .as_ref()
                .map(|h| format!("class number {h}")),
            (self.invariants.as_ref()).map(|d| format!("invariants {}", super::invariants_text(d))),
            self.signed.then(|| "signed by a trusted key".into()),
        ]
        .into_iter()
        .flatten()
        .collect()
    }

    /// The first rule that `v` breaks, in words.
    fn broken(&self, summary: &Summary, v: &Verified) -> Option<String> {
        let text = super::invariants_text;
        let extra: Vec<&str> = match &self.allow {
            Some(allowed) => (v.assumptions().iter())
                .filter(|a| !allowed.contains(a))
                .map(|a| a.name())
                .collect(),
            None => Vec::new(),
        };
        if !extra.is_empty() {
            Some(format!(
                "the result rests on {}, which the policy does not allow",
                extra.join(", ")
            ))
        } else if self.maximal && !v.maximal() {
            Some("the policy requires the maximal order, which was not claimed".into())
        } else if let Some(h) = self
            .class_number
            .as_ref()
            .filter(|h| *h != v.class_number())
        {
            let h_v = v.class_number();
            Some(format!("the class number is {h_v}, not the expected {h}"))
        } else if let Some(d) = self.invariants.as_ref().filter(|d| *d != v.invariants()) {
            let (group, expected) = (text(v.invariants()), text(d));
            Some(format!("the group is {group}, not the expected {expected}"))
        } else if self.signed && summary.signer.as_ref().is_none_or(|s| !s.trusted) {
            Some("the policy requires a signature under a trusted key, and the certificate is not signed".into())
        } else {
            None
        }
    }

    /// Reads a policy file: `key = value` lines (a subset of TOML), `#`
    /// comments, values a string, an integer or a list of them:
    /// `allow = ["GRH"]`, `require = ["maximal", "unconditional"]`,
    /// `expect-class-number = 27`, `expect-invariants = [3, 3, 3]`,
    /// `trusted-keys = ["alice.pub"]`. Returns the policy and the key
    /// files; a key it does not know is an error.
    pub fn from_toml(text: &str) -> Result<(Policy, Vec<String>), String> {
        let mut p = Policy::default();
        let mut keys = Vec::new();
        for (i, line) in text.lines().enumerate().take(MAX_POLICY_LINES) {
            let line = line.split('#').next().unwrap_or("").trim();
            if line.is_empty() {
                continue;
            }
            let err = |what: &str| format!("policy line {}: {what}", i + 1);
            let (key, value) = line
                .split_once('=')
                .ok_or_else(|| err("expected key = value"))?;
            let items: Vec<String> = match value.trim().strip_prefix('[') {
                Some(list) => (list
                    .strip_suffix(']')
                    .ok_or_else(|| err("an unclosed list"))?)
                .split(',')
                .map(|s| s.trim().trim_matches('"').to_string())
                .filter(|s| !s.is_empty())
                .collect(),
                None => vec![value.trim().trim_matches('"').to_string()],
            };
            let int = |s: &String| s.parse::<Integer>().map_err(|_| err("expected an integer"));
            match key.trim() {
                "allow" => {
                    let a = items.iter().map(|s| {
                        Assumption::from_name(s).ok_or_else(|| err("an unknown assumption"))
                    });
                    p.allow = Some(a.collect::<Result<_, _>>()?);
                }
                "require" => {
                    for s in &items {
                        match s.as_str() {
                            "unconditional" => p.allow = Some(Vec::new()),
                            "maximal" => p.maximal = true,
                            _ => return Err(err("require takes unconditional or maximal")),
                        }
                    }
                }
                "expect-class-number" => {
                    p.class_number = Some(int(items.first().ok_or_else(|| err("no value"))?)?)
                }
                "expect-invariants" => {
                    p.invariants = Some(items.iter().map(int).collect::<Result<_, _>>()?)
                }
                "trusted-keys" => keys = items,
                _ => return Err(err("an unknown key")),
            }
        }
        Ok((p, keys))
    }
}

impl Report {
    /// Refuses a verified report that breaks `policy`, with reason
    /// `policy`; the checks themselves are unchanged.
    pub fn apply(mut self, policy: &Policy) -> Report {
        self.summary.policy = policy.rules();
        let Ok(v) = &self.outcome else {
            return self;
        };
        match policy.broken(&self.summary, v) {
            None => self,
            Some(rule) => Report {
                summary: self.summary,
                outcome: reject(Reason::Policy, format!("every check passed, but {rule}")),
            },
        }
    }
}
