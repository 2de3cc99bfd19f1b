//! Rows for papers and scripts: one row per verified certificate, written
//! as aligned text, Markdown, LaTeX, CSV or JSON Lines (`classcert table`,
//! `classcert show --format`, and the summary of `prove --batch`).
//!
//! A row is made only from the verifier's report of a certificate that
//! verified ([`Row::from_report`]): a table for a paper never shows a
//! claim that was not checked.

use classcert_format::json::Json;
use classcert_verifier::report::Report;
use std::fmt::Write as _;

/// How a table is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// Aligned columns for a terminal.
    Text,
    /// A Markdown (GitHub) table.
    Markdown,
    /// A LaTeX `tabular` environment (no package needed).
    Latex,
    /// Comma-separated values with a header line (RFC 4180 quoting).
    Csv,
    /// One JSON object per line (schema "classcert/1", kind "row").
    Json,
}

/// One verified order.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// `D`, or the polynomial `F` of a number field.
    pub order: String,
    /// Whether `order` is a polynomial.
    pub field: bool,
    /// Whether the order was certified to be the maximal one.
    pub maximal: bool,
    pub class_number: String,
    /// `d_1 | d_2 | …` (empty for the trivial group).
    pub invariants: Vec<String>,
    /// The regulator (real quadratic orders and number fields).
    pub regulator: Option<String>,
    /// The norm of the fundamental unit (real quadratic orders).
    pub unit_norm: Option<i32>,
    /// The hypotheses the result rests on (empty: unconditional).
    pub assumptions: Vec<String>,
    /// The certificate's SHA-256 (its id), 64 hex digits.
    pub id: String,
    /// Batches: the prove time in seconds, the file's size, its name.
    pub seconds: Option<f64>,
    pub bytes: Option<usize>,
    pub file: Option<String>,
}

impl Row {
    /// The row of a verified report; the reason and detail of a rejected
    /// one.
    pub fn from_report(r: &Report) -> Result<Row, String> {
        let v = match &r.outcome {
            Ok(v) => v,
            Err(e) => return Err(format!("{}: {}", e.reason.code(), e.detail)),
        };
        let (order, field) = match (v.field(), &r.summary.discriminant) {
            (Some(k), _) => (k.polynomial_text(), true),
            (None, Some(d)) => (d.to_string(), false),
            (None, None) => return Err("the report names no order".into()),
        };
        let regulator = match (v.field(), v.unit()) {
            (Some(k), _) => Some(k.regulator_text()),
            (None, Some(u)) => Some(u.regulator_text()),
            (None, None) => None,
        };
        Ok(Row {
            order,
            field,
            maximal: v.maximal(),
            class_number: v.class_number().to_string(),
            invariants: v.invariants().iter().map(|d| d.to_string()).collect(),
            regulator,
            unit_norm: v.unit().map(|u| i32::from(u.norm)),
            assumptions: v.assumptions().iter().map(|a| a.name().into()).collect(),
            id: r.summary.certificate_sha256.clone().unwrap_or_default(),
            seconds: None,
            bytes: None,
            file: None,
        })
    }
}

/// A column: its header in each format and how a row fills it.
struct Column {
    text: &'static str,
    latex: &'static str,
    key: &'static str,
    cell: fn(&Row, Format) -> String,
}

/// The columns `rows` need: the regulator, the unit's norm and the batch
/// figures only when some row has them.
fn columns(rows: &[Row]) -> Vec<Column> {
    let all_fields = !rows.is_empty() && rows.iter().all(|r| r.field);
    let mixed = rows.iter().any(|r| r.field) && !all_fields;
    let mut cols = vec![Column {
        text: match (all_fields, mixed) {
            (true, _) => "F",
            (_, true) => "order",
            _ => "D",
        },
        latex: match (all_fields, mixed) {
            (true, _) => "$F$",
            (_, true) => "order",
            _ => "$D$",
        },
        key: "order",
        cell: |r, f| match (f, r.field) {
            (Format::Latex, _) => format!("${}$", r.order.replace('*', "")),
            (Format::Markdown, true) => format!("`{}`", r.order),
            _ => r.order.clone(),
        },
    }];
    cols.push(Column {
        text: "h",
        latex: "$h$",
        key: "class_number",
        cell: |r, _| r.class_number.clone(),
    });
    cols.push(Column {
        text: "group",
        latex: "$\\mathrm{Cl}$",
        key: "invariants",
        cell: group,
    });
    if rows.iter().any(|r| r.regulator.is_some()) {
        cols.push(Column {
            text: "R",
            latex: "$R$",
            key: "regulator",
            cell: |r, f| r.regulator.clone().unwrap_or_else(|| dash(f)),
        });
    }
    if rows.iter().any(|r| r.unit_norm.is_some()) {
        cols.push(Column {
            text: "N(unit)",
            latex: "$N(\\varepsilon)$",
            key: "unit_norm",
            cell: |r, f| r.unit_norm.map_or_else(|| dash(f), |n| format!("{n:+}")),
        });
    }
    if rows.iter().any(|r| !r.maximal) {
        cols.push(Column {
            text: "maximal",
            latex: "maximal",
            key: "maximal",
            cell: |r, _| if r.maximal { "yes" } else { "no" }.into(),
        });
    }
    cols.push(Column {
        text: "assumptions",
        latex: "assumptions",
        key: "assumptions",
        cell: |r, f| match (r.assumptions.is_empty(), f) {
            (true, Format::Csv) => String::new(),
            (true, _) => "none".into(),
            (false, Format::Csv) => r.assumptions.join(";"),
            (false, _) => r.assumptions.join(", "),
        },
    });
    if rows.iter().any(|r| r.seconds.is_some()) {
        cols.push(Column {
            text: "seconds",
            latex: "seconds",
            key: "seconds",
            cell: |r, f| r.seconds.map_or_else(|| dash(f), |s| format!("{s:.3}")),
        });
    }
    if rows.iter().any(|r| r.bytes.is_some()) {
        cols.push(Column {
            text: "bytes",
            latex: "bytes",
            key: "bytes",
            cell: |r, f| r.bytes.map_or_else(|| dash(f), |b| b.to_string()),
        });
    }
    cols.push(Column {
        text: "certificate (SHA-256)",
        latex: "certificate (SHA-256)",
        key: "certificate_sha256",
        cell: |r, f| match f {
            Format::Latex => format!("\\texttt{{{}}}", r.id),
            Format::Markdown => format!("`{}`", r.id),
            _ => r.id.clone(),
        },
    });
    if rows.iter().any(|r| r.file.is_some()) {
        cols.push(Column {
            text: "file",
            latex: "file",
            key: "file",
            cell: |r, _| r.file.clone().unwrap_or_default(),
        });
    }
    cols
}

/// An empty cell.
fn dash(f: Format) -> String {
    match f {
        Format::Latex => "--".into(),
        Format::Csv => String::new(),
        _ => "-".into(),
    }
}

/// The group as a product of cyclic groups.
fn group(r: &Row, f: Format) -> String {
    match (r.invariants.is_empty(), f) {
        (_, Format::Csv) => r.invariants.join(";"),
        (true, Format::Latex) => "$1$".into(),
        (true, _) => "1".into(),
        (false, Format::Latex) => {
            let parts: Vec<String> = r.invariants.iter().map(|d| format!("C_{{{d}}}")).collect();
            format!("${}$", parts.join(" \\times "))
        }
        (false, _) => {
            let parts: Vec<String> = r.invariants.iter().map(|d| format!("C{d}")).collect();
            parts.join(" x ")
        }
    }
}

/// `s` as one CSV field (RFC 4180: quoted when it holds a comma, a quote
/// or a line break, quotes doubled).
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// The JSON object of one row (kind "row" of the shared vocabulary).
pub fn row_json(r: &Row) -> Json {
    let opt = |x: &Option<String>| x.clone().map_or(Json::Null, Json::Str);
    let mut e = vec![
        (
            "schema",
            Json::str(classcert_verifier::report::json::SCHEMA),
        ),
        ("kind", Json::str("row")),
        (
            if r.field {
                "polynomial"
            } else {
                "discriminant"
            },
            Json::str(r.order.clone()),
        ),
        ("maximal", Json::Bool(r.maximal)),
        ("class_number", Json::str(r.class_number.clone())),
        (
            "invariants",
            Json::Arr(r.invariants.iter().map(|d| Json::str(d.clone())).collect()),
        ),
        ("regulator", opt(&r.regulator)),
        (
            "unit_norm",
            r.unit_norm.map_or(Json::Null, |n| Json::Num(n.to_string())),
        ),
        (
            "assumptions",
            Json::Arr(r.assumptions.iter().map(|a| Json::str(a.clone())).collect()),
        ),
        ("certificate_sha256", Json::str(r.id.clone())),
    ];
    if let Some(s) = r.seconds {
        e.push(("seconds", Json::Num(format!("{s:.3}"))));
    }
    if let Some(b) = r.bytes {
        e.push(("bytes", Json::Num(b.to_string())));
    }
    if let Some(f) = &r.file {
        e.push(("file", Json::str(f.clone())));
    }
    Json::obj(e)
}

/// The table of `rows` in format `f`.
pub fn render(rows: &[Row], f: Format) -> String {
    let cols = columns(rows);
    let cells: Vec<Vec<String>> = rows
        .iter()
        .map(|r| cols.iter().map(|c| (c.cell)(r, f)).collect())
        .collect();
    let mut out = String::new();
    match f {
        Format::Json => {
            for r in rows {
                out.push_str(&row_json(r).line());
            }
        }
        Format::Csv => {
            let head: Vec<&str> = cols.iter().map(|c| c.key).collect();
            let _ = writeln!(out, "{}", head.join(","));
            for row in &cells {
                let fields: Vec<String> = row.iter().map(|s| csv_field(s)).collect();
                let _ = writeln!(out, "{}", fields.join(","));
            }
        }
        Format::Markdown => {
            let head: Vec<&str> = cols.iter().map(|c| c.text).collect();
            let _ = writeln!(out, "| {} |", head.join(" | "));
            let _ = writeln!(out, "|{}", "---|".repeat(cols.len()));
            for row in &cells {
                let _ = writeln!(out, "| {} |", row.join(" | "));
            }
        }
        Format::Latex => {
            let _ = writeln!(out, "\\begin{{tabular}}{{{}}}", "l".repeat(cols.len()));
            let _ = writeln!(out, "\\hline");
            let head: Vec<&str> = cols.iter().map(|c| c.latex).collect();
            let _ = writeln!(out, "{} \\\\", head.join(" & "));
            let _ = writeln!(out, "\\hline");
            for row in &cells {
                let _ = writeln!(out, "{} \\\\", row.join(" & "));
            }
            let _ = writeln!(out, "\\hline");
            let _ = writeln!(out, "\\end{{tabular}}");
        }
        Format::Text => {
            let mut widths: Vec<usize> = cols.iter().map(|c| c.text.chars().count()).collect();
            for row in &cells {
                for (w, s) in widths.iter_mut().zip(row) {
                    *w = (*w).max(s.chars().count());
                }
            }
            let line = |items: Vec<&str>| {
                let padded: Vec<String> = items
                    .iter()
                    .zip(&widths)
                    .map(|(s, w)| format!("{s:<w$}"))
                    .collect();
                padded.join("  ").trim_end().to_string()
            };
            let _ = writeln!(out, "{}", line(cols.iter().map(|c| c.text).collect()));
            for row in &cells {
                let _ = writeln!(out, "{}", line(row.iter().map(String::as_str).collect()));
            }
        }
    }
    out
}

/// What a table does and does not say, for the human formats: a line to
/// print after it (on stderr, so that the table itself stays clean).
pub const CAUTION: &str = "every row was verified by classcert-verify's checks; the assumptions column names what a row rests on. A class group certificate is not a security proof of any cryptosystem built on the group: that needs its own review.";
