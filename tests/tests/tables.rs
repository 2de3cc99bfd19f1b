//! Tables for papers and scripts (`classcert table`, `show --format`) and
//! batches (`prove --batch` / `--range`, `classcert-verify --manifest`).
//!
//! Snapshots come from the stored golden certificates (D = -3299 with
//! Cl ≅ Z/3 × Z/9, the non-maximal order D = -300, the real field D = 316
//! with Cl ≅ Z/3, and the cubic field of x^3 - 7; sources in
//! `tests/tests/snapshots.rs` and `tests/tests/fields.rs`). The batch is
//! checked against published class numbers: every fundamental
//! discriminant in -200..-3 is proved, and the orders with h = 1, 2, 3
//! are exactly those of the published complete lists
//! (`vectors/published/class-number-{1,2,3}.txt`).

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_prover::table::{render, Format, Row};
use classcert_tests::support::{programs, read_published, vectors_dir};
use classcert_verifier::verify_bytes;

const FORMATS: [(Format, &str); 5] = [
    (Format::Text, "text"),
    (Format::Markdown, "markdown"),
    (Format::Latex, "latex"),
    (Format::Csv, "csv"),
    (Format::Json, "json"),
];

fn golden(path: &str) -> std::path::PathBuf {
    vectors_dir().join(path)
}

fn row(path: &str) -> Row {
    let bytes = std::fs::read(golden(path)).unwrap();
    Row::from_report(&verify_bytes(&bytes)).unwrap()
}

#[test]
fn one_row_in_every_format() {
    // `show --format` gives the one-row table, for each kind of order
    for (tag, file) in [
        ("minus_3299", "golden/minus-3299.cert"),
        ("plus_316", "golden/plus-316.cert"),
        ("x3_minus_7", "golden-fields/x3-minus-7.cert"),
    ] {
        let r = row(file);
        for (f, name) in FORMATS {
            insta::assert_snapshot!(
                format!("row_{tag}_{name}"),
                render(std::slice::from_ref(&r), f)
            );
        }
    }
    let r = row("golden/minus-3299.cert");
    assert_eq!(r.class_number, "27");
    assert_eq!(r.invariants, ["3", "9"]);
    let r = row("golden/plus-316.cert");
    assert_eq!((r.class_number.as_str(), r.unit_norm), ("3", Some(1)));
}

#[test]
fn a_table_of_several_orders() {
    let rows: Vec<Row> = [
        "golden/minus-3299.cert",
        "golden/minus-300.cert",
        "golden/plus-316.cert",
        "golden-fields/x3-minus-7.cert",
    ]
    .iter()
    .map(|f| row(f))
    .collect();
    for (f, name) in FORMATS {
        insta::assert_snapshot!(format!("table_{name}"), render(&rows, f));
    }
    // the command line gives the same table, and refuses a damaged file
    let files: Vec<String> = ["golden/minus-3299.cert", "golden/minus-300.cert"]
        .iter()
        .map(|f| golden(f).to_string_lossy().into_owned())
        .collect();
    let out = programs::run(
        "classcert",
        &["table", &files[0], &files[1], "--format", "latex"],
    );
    assert!(out.status.success());
    assert_eq!(programs::stdout(&out), render(&rows[..2], Format::Latex));
    let out = programs::run("classcert", &["show", &files[0], "--format", "csv"]);
    assert_eq!(programs::stdout(&out), render(&rows[..1], Format::Csv));
    let dir = programs::scratch("table-damaged");
    let mut bytes = std::fs::read(&files[0]).unwrap();
    let last = bytes.len() - 1;
    bytes[last] ^= 1;
    let bad = dir.join("bad.cert");
    std::fs::write(&bad, bytes).unwrap();
    let out = programs::run("classcert", &["table", &files[1], bad.to_str().unwrap()]);
    assert_eq!(
        out.status.code(),
        Some(6),
        "a certificate that does not verify"
    );
    assert!(programs::stdout(&out).is_empty(), "nothing is tabulated");
    let _ = std::fs::remove_dir_all(&dir);
}

/// The summary with the time column blanked (it varies from run to run).
fn without_seconds(csv: &str) -> String {
    let head: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let k = head.iter().position(|h| *h == "seconds").unwrap();
    csv.lines()
        .enumerate()
        .map(|(i, line)| {
            let mut f: Vec<&str> = line.split(',').collect();
            if i > 0 {
                assert!(f[k].parse::<f64>().is_ok(), "a time: {line}");
                f[k] = "<s>";
            }
            f.join(",") + "\n"
        })
        .collect()
}

#[test]
fn a_batch_of_published_class_numbers() {
    let dir = programs::scratch("batch");
    let out_dir = dir.join("out");
    let o = out_dir.to_str().unwrap();
    let run = programs::run(
        "classcert",
        &["prove", "--range=-200..-3", "-o", o, "--csv"],
    );
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let csv = programs::stdout(&run);
    insta::assert_snapshot!("batch_summary_csv", without_seconds(&csv));

    // each published complete list is exactly the set proved with its h
    let proved: Vec<(i64, u64)> = csv
        .lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[0].parse().unwrap(), f[1].parse().unwrap())
        })
        .collect();
    for (h, file) in [
        (1, "class-number-1.txt"),
        (2, "class-number-2.txt"),
        (3, "class-number-3.txt"),
    ] {
        let mut published: Vec<i64> = read_published(file)
            .rows
            .iter()
            .filter(|(d, _)| (-200..=-3).contains(d))
            .map(|(d, _)| *d)
            .collect();
        published.sort();
        let got: Vec<i64> = proved
            .iter()
            .filter(|(_, g)| *g == h)
            .map(|(d, _)| *d)
            .collect();
        assert_eq!(
            got, published,
            "fundamental D in -200..-3 with h = {h} ({file})"
        );
    }

    // the verifier checks the whole batch by its manifest; a second run
    // keeps every certificate (JSON Lines, one row each)
    let manifest = out_dir.join("manifest");
    let v = programs::run(
        "classcert-verify",
        &["--manifest", manifest.to_str().unwrap()],
    );
    assert!(v.status.success(), "{}", programs::stdout(&v));
    let verified = programs::stdout(&v)
        .lines()
        .filter(|l| l.starts_with("VERIFIED"))
        .count();
    assert_eq!(verified, proved.len());
    let again = programs::run(
        "classcert",
        &["prove", "--range=-200..-3", "-o", o, "--json"],
    );
    assert!(again.status.success());
    let lines: Vec<String> = programs::stdout(&again).lines().map(String::from).collect();
    assert_eq!(lines.len(), proved.len());
    assert!(
        lines.iter().all(|l| !l.contains("\"seconds\"")),
        "kept, not proved again"
    );

    // a file swapped for another is caught by its id in the manifest
    std::fs::copy(out_dir.join("d-3.cert"), out_dir.join("d-4.cert")).unwrap();
    let v = programs::run(
        "classcert-verify",
        &["--manifest", manifest.to_str().unwrap(), "--json"],
    );
    assert_eq!(v.status.code(), Some(1));
    let bad: Vec<String> = programs::stdout(&v)
        .lines()
        .filter(|l| l.contains("\"verdict\": \"rejected\""))
        .map(String::from)
        .collect();
    assert_eq!(bad.len(), 1, "{bad:?}");
    assert!(bad[0].contains("\"reason\": \"manifest-mismatch\"") && bad[0].contains("d-4.cert"));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn completions_manual_pages_and_plain_output_off_a_terminal() {
    for shell in ["bash", "zsh", "fish"] {
        for program in ["classcert", "classcert-verify"] {
            let o = programs::run("classcert", &["completions", shell, "--program", program]);
            assert!(o.status.success(), "{shell} {program}");
            let script = programs::stdout(&o);
            assert!(script.contains(program), "{shell} {program}");
        }
    }
    let o = programs::run(
        "classcert",
        &["completions", "bash", "--program", "classcert-verify"],
    );
    assert!(
        programs::stdout(&o).contains("--trusted-key"),
        "the verifier's own options"
    );
    let dir = programs::scratch("manual");
    let o = programs::run("classcert", &["man", "--dir", dir.to_str().unwrap()]);
    assert!(o.status.success());
    let page = std::fs::read_to_string(dir.join("classcert-verify.1")).unwrap();
    assert!(
        page.starts_with(".ie \\n(.g") || page.contains(".TH"),
        "roff"
    );
    assert!(page.contains("manifest") && page.contains("Exit codes"));
    assert!(std::fs::read_to_string(dir.join("classcert.1"))
        .unwrap()
        .contains(".TH"));
    // output to a pipe has no colour codes, and several files (one from
    // standard input is not among them) give one line each
    let a = golden("golden/minus-3299.cert");
    let b = golden("golden/plus-316.cert");
    let o = programs::run(
        "classcert-verify",
        &[a.to_str().unwrap(), b.to_str().unwrap()],
    );
    assert!(o.status.success());
    let out = programs::stdout(&o);
    assert!(!out.contains('\x1b'), "no escape codes off a terminal");
    assert_eq!(
        out.lines().filter(|l| l.starts_with("VERIFIED  ")).count(),
        2,
        "{out}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
