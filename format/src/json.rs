//! A minimal JSON writer, shared by the prover's `show --json` and the
//! verifier's `--json`, so neither needs a JSON crate.

#[derive(Debug, Clone, PartialEq)]
pub enum Json {
    Null,
    Bool(bool),
    /// A number written as given (callers pass integers only).
    Num(String),
    Str(String),
    Arr(Vec<Json>),
    Obj(Vec<(String, Json)>),
}

impl Json {
    pub fn str(s: impl Into<String>) -> Json {
        Json::Str(s.into())
    }

    pub fn obj(entries: Vec<(&str, Json)>) -> Json {
        Json::Obj(
            entries
                .into_iter()
                .map(|(k, v)| (k.to_string(), v))
                .collect(),
        )
    }

    /// Pretty-printed with two-space indentation and a fixed key order
    /// (the order given), so output is stable for snapshots.
    pub fn render(&self) -> String {
        let mut out = String::new();
        self.write(&mut out, 0);
        out.push('\n');
        out
    }

    /// On one line, `", "` and `": "` between items (JSON Lines), with the
    /// same key order as [`Json::render`].
    pub fn line(&self) -> String {
        let mut out = String::new();
        self.write_line(&mut out);
        out.push('\n');
        out
    }

    fn write_line(&self, out: &mut String) {
        let sep = |out: &mut String, k: usize| {
            if k > 0 {
                out.push_str(", ")
            }
        };
        match self {
            Json::Arr(items) => {
                out.push('[');
                for (k, i) in items.iter().enumerate() {
                    sep(out, k);
                    i.write_line(out);
                }
                out.push(']');
            }
            Json::Obj(entries) => {
                out.push('{');
                for (k, (key, v)) in entries.iter().enumerate() {
                    sep(out, k);
                    escape(key, out);
                    out.push_str(": ");
                    v.write_line(out);
                }
                out.push('}');
            }
            scalar => scalar.write(out, 0),
        }
    }

    fn write(&self, out: &mut String, indent: usize) {
        match self {
            Json::Null => out.push_str("null"),
            Json::Bool(b) => out.push_str(if *b { "true" } else { "false" }),
            Json::Num(n) => out.push_str(n),
            Json::Str(s) => escape(s, out),
            Json::Arr(items) => {
                if items.is_empty() {
                    out.push_str("[]");
                    return;
                }
                if items
                    .iter()
                    .all(|i| matches!(i, Json::Str(_) | Json::Num(_)))
                {
                    out.push('[');
                    for (k, i) in items.iter().enumerate() {
                        if k > 0 {
                            out.push_str(", ");
                        }
                        i.write(out, indent);
                    }
                    out.push(']');
                    return;
                }
                out.push_str("[\n");
                for (k, i) in items.iter().enumerate() {
                    pad(out, indent + 1);
                    i.write(out, indent + 1);
                    if k + 1 < items.len() {
                        out.push(',');
                    }
                    out.push('\n');
                }
                pad(out, indent);
                out.push(']');
            }
            Json::Obj(entries) => {
                if entries.is_empty() {
                    out.push_str("{}");
                    return;
                }
                out.push_str("{\n");
                for (k, (key, v)) in entries.iter().enumerate() {
                    pad(out, indent + 1);
                    escape(key, out);
                    out.push_str(": ");
                    v.write(out, indent + 1);
                    if k + 1 < entries.len() {
                        out.push(',');
                    }
                    out.push('\n');
                }
                pad(out, indent);
                out.push('}');
            }
        }
    }
}

fn pad(out: &mut String, indent: usize) {
    for _ in 0..indent {
        out.push_str("  ");
    }
}

fn escape(s: &str, out: &mut String) {
    out.push('"');
    for ch in s.chars() {
        match ch {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if (c as u32) < 0x20 => out.push_str(&format!("\\u{:04x}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_control_and_quotes() {
        let j = Json::obj(vec![("k", Json::str("a\"b\\c\u{1}"))]);
        assert_eq!(j.render(), "{\n  \"k\": \"a\\\"b\\\\c\\u0001\"\n}\n");
    }
}
