//! The published soundness corpus (`vectors/mutations/`): parameterised
//! families of forged certificates, each with the reason code the verifier
//! must refuse it with and the layer it damages.
//!
//! Every family starts from a golden certificate (`vectors/golden/`,
//! `vectors/golden-fields/`) and is written by the binary `forge-vectors`
//! (`tests/src/bin/forge-vectors.rs`); `tests/tests/vectors.rs` runs the
//! whole corpus through the verifier. The expected code of each file is
//! derived here from the design (the order of the checks in
//! `docs/certificates.md` and the decoder's rules), never by running the
//! verifier; where it depends on the mathematics (is a changed relation
//! still principal?) it is decided with the oracle's own form arithmetic
//! (`crate::oracle`). Variants that would leave a true certificate are not
//! written.
//!
//! Three layers:
//! * `bytes`: the file is damaged; the body may be right.
//! * `mathematics`: the body is re-encoded, so the bytes are canonical and
//!   the digest right; one number or list is wrong.
//! * `consistent`: as `mathematics`, and in addition every identity the
//!   verifier can check locally holds (the Smith form is that of the
//!   stated relation matrix, the claim is the Smith form's group, the
//!   lattice fits the factor base): only the mathematics behind it is
//!   wrong, and the refusal comes from a relation, the generation bound or
//!   the analytic bound.

use crate::cbor_edit::{self, Node};
use crate::forge::{self, Layer};
use crate::oracle;
use crate::support::factor_u64;
use classcert_format::{
    Body, CompactStep, CyclicGenerator, Document, Dyadic, FieldBody, Lattice, Order,
    PrimalityEvidence, PrimeIdeal, PrimePower, Witness, WitnessBody,
};
use classcert_verifier::registry;
use rug::ops::Pow;
use rug::Integer;
use std::path::Path;

/// One forged certificate of the corpus.
#[derive(Debug, Clone)]
pub struct Vector {
    /// `<base>--<family>--<variant>.cert`.
    pub file: String,
    pub code: &'static str,
    pub layer: Layer,
    /// The golden certificate it starts from (file stem).
    pub base: String,
    pub family: &'static str,
    pub bytes: Vec<u8>,
    /// A known deviation: what the verifier does today instead of refusing
    /// the file with `code` (`verified`, or another code). Such files are
    /// listed in `known-deviations.txt`, not in `expected.txt`.
    pub known: Option<&'static str>,
}

/// Families written in full for every base; the others are capped at
/// [`CAP_SMALL`] variants per base ([`CAP_LARGE`] for golden files above
/// [`LARGE`] bytes), to keep the corpus small.
const UNCAPPED: &[&str] = &[
    "catalogue",
    "primality",
    "pocklington",
    "morrison",
    "witness-h",
    "witness-form",
    "witness-order",
];
const CAP_SMALL: usize = 5;
const CAP_LARGE: usize = 2;
const LARGE: usize = 8_000;

/// A golden certificate.
pub struct Base {
    pub stem: String,
    pub bytes: Vec<u8>,
    pub doc: Document,
}

/// The golden certificates, sorted by file name: `golden/` then
/// `golden-fields/`.
pub fn bases(vectors: &Path) -> Vec<Base> {
    let mut out = Vec::new();
    for dir in ["golden", "golden-fields"] {
        let mut names: Vec<String> = std::fs::read_dir(vectors.join(dir))
            .expect("golden directory")
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".cert"))
            .collect();
        names.sort();
        for n in names {
            let bytes = std::fs::read(vectors.join(dir).join(&n)).expect("read golden");
            let doc = classcert_format::decode_document(&bytes)
                .expect("a golden certificate decodes")
                .document;
            out.push(Base {
                stem: n.trim_end_matches(".cert").to_string(),
                bytes,
                doc,
            });
        }
    }
    out
}

/// Collects the vectors of one base.
struct Out<'a> {
    base: &'a str,
    golden: &'a [u8],
    /// Every variant made, by family in order of first use; [`Out::finish`]
    /// keeps an even spread of at most the cap of each.
    v: Vec<(&'static str, Vec<Vector>)>,
}

impl Out<'_> {
    fn push(
        &mut self,
        family: &'static str,
        variant: impl AsRef<str>,
        code: &'static str,
        layer: Layer,
        bytes: Vec<u8>,
    ) {
        self.add(family, variant, code, layer, bytes, None);
    }

    /// A forgery the verifier does not refuse as the design asks (see
    /// [`Vector::known`]). None is known today (the last six, an extra or
    /// wrong-kind witness for the rows of `H` when `h = 1`, are refused
    /// since the verifier checks that witness before the rows); kept so the
    /// next one found is listed, not hidden.
    #[allow(dead_code)]
    fn known(
        &mut self,
        family: &'static str,
        variant: impl AsRef<str>,
        code: &'static str,
        observed: &'static str,
        bytes: Vec<u8>,
    ) {
        self.add(
            family,
            variant,
            code,
            Layer::Mathematics,
            bytes,
            Some(observed),
        );
    }

    fn add(
        &mut self,
        family: &'static str,
        variant: impl AsRef<str>,
        code: &'static str,
        layer: Layer,
        bytes: Vec<u8>,
        known: Option<&'static str>,
    ) {
        assert_ne!(
            bytes,
            self.golden,
            "{family} {}: changed nothing",
            variant.as_ref()
        );
        let slot = match self.v.iter().position(|(f, _)| *f == family) {
            Some(i) => i,
            None => {
                self.v.push((family, Vec::new()));
                self.v.len() - 1
            }
        };
        self.v[slot].1.push(Vector {
            known,
            file: format!("{}--{family}--{}.cert", self.base, variant.as_ref()),
            code,
            layer,
            base: self.base.to_string(),
            family,
            bytes,
        });
    }

    /// The variants kept: all of an uncapped family, an even spread of
    /// the others (consistent forgeries are always kept).
    fn finish(self) -> Vec<Vector> {
        let cap = if self.golden.len() > LARGE {
            CAP_LARGE
        } else {
            CAP_SMALL
        };
        let mut out = Vec::new();
        for (family, vs) in self.v {
            let all = UNCAPPED.contains(&family)
                || vs
                    .iter()
                    .any(|v| v.layer == Layer::Consistent || v.known.is_some());
            let keep: Vec<usize> = if all {
                (0..vs.len()).collect()
            } else {
                spread(&(0..vs.len()).collect::<Vec<_>>(), cap)
            };
            for (i, v) in vs.into_iter().enumerate() {
                if keep.contains(&i) {
                    out.push(v);
                }
            }
        }
        out
    }

    fn math(
        &mut self,
        family: &'static str,
        variant: impl AsRef<str>,
        code: &'static str,
        b: &Body,
    ) {
        self.push(family, variant, code, Layer::Mathematics, enc(b));
    }

    fn consistent(
        &mut self,
        family: &'static str,
        variant: impl AsRef<str>,
        code: &'static str,
        b: &Body,
    ) {
        self.push(family, variant, code, Layer::Consistent, enc(b));
    }
}

fn enc(b: &Body) -> Vec<u8> {
    crate::support::encode(b)
}

fn enc_doc(d: &Document) -> Vec<u8> {
    classcert_format::encode_document(d).expect("encodes").0
}

/// Every vector of the corpus, in a fixed order.
pub fn generate(vectors: &Path) -> Vec<Vector> {
    let bases = bases(vectors);
    let mut all = Vec::new();
    for base in &bases {
        let mut out = Out {
            base: &base.stem,
            golden: &base.bytes,
            v: Vec::new(),
        };
        bytes_families(&mut out, &base.bytes);
        match &base.doc {
            Document::Relations(b) => {
                let donors: Vec<&Body> = bases
                    .iter()
                    .filter(|o| o.stem != base.stem)
                    .filter_map(|o| match &o.doc {
                        Document::Relations(ob) => Some(ob.as_ref()),
                        _ => None,
                    })
                    .collect();
                relations_families(&mut out, b, &donors);
                catalogue(&mut out, b);
            }
            Document::OrderWitness(w) => witness_families(&mut out, w),
            Document::Field(f) => field_families(&mut out, f),
        }
        all.extend(out.finish());
    }
    let mut seen = std::collections::BTreeSet::new();
    for v in &all {
        assert!(seen.insert(v.file.clone()), "{} twice", v.file);
    }
    all
}

// ================================================================ bytes

/// The body subtree's pre-order indices, in the whole file's numbering.
fn body_range(tree: &Node) -> (usize, usize) {
    // file = {"body": body, "format": 1, "body-sha256": bstr}; pre-order:
    // 0 the map, 1 the key "body", 2 the body, ...
    let mut size = 0;
    let mut t = tree.clone();
    let body = cbor_edit::get_mut(&mut t, "body").clone();
    cbor_edit::visit_mut(&mut body.clone(), &mut |_, _| {
        size += 1;
        false
    });
    (2, 2 + size)
}

fn in_body(tree: &Node, pred: &dyn Fn(&Node) -> bool) -> Vec<usize> {
    let (lo, hi) = body_range(tree);
    cbor_edit::find_all(tree, pred)
        .into_iter()
        .filter(|i| (lo + 1..hi).contains(i))
        .collect()
}

/// `k` indices spread over `v` (all of them if there are fewer).
fn spread(v: &[usize], k: usize) -> Vec<usize> {
    if v.len() <= k {
        return v.to_vec();
    }
    (0..k)
        .map(|i| v[i * (v.len() - 1) / (k - 1).max(1)])
        .collect()
}

fn edited(tree: &Node, index: usize, f: &mut dyn FnMut(&Node) -> Node) -> Vec<u8> {
    let mut t = tree.clone();
    cbor_edit::replace(&mut t, index, f);
    cbor_edit::to_bytes(&t)
}

fn bytes_families(out: &mut Out, file: &[u8]) {
    let tree = cbor_edit::parse(file);
    assert_eq!(
        cbor_edit::to_bytes(&tree),
        file,
        "the tree writes the golden file back"
    );
    let n = file.len();
    use Layer::Bytes;
    // Truncation anywhere inside the one top-level item.
    for (k, cut) in [1, n / 7, n / 3, n / 2, 2 * n / 3, n - 33, n - 1]
        .into_iter()
        .enumerate()
    {
        out.push(
            "truncated",
            format!("{k}-at-{cut}"),
            "decode-truncated",
            Bytes,
            file[..cut].to_vec(),
        );
    }
    // Bytes after the item, whatever they are.
    for (k, tail) in [
        &[0x00u8][..],
        &[0xff],
        &[0xa0],
        &[0x61, b'x'],
        &[0xf6, 0xf6],
    ]
    .iter()
    .enumerate()
    {
        let mut f = file.to_vec();
        f.extend_from_slice(tail);
        out.push("trailing", format!("{k}"), "decode-trailing-data", Bytes, f);
    }
    // The stored digest altered: the body decodes and is canonical.
    for (k, i) in [0usize, 9, 17, 31].into_iter().enumerate() {
        let mut f = file.to_vec();
        f[n - 32 + i] ^= 1 << (k % 8);
        out.push(
            "digest-bit",
            format!("byte-{i}"),
            "digest-mismatch",
            Bytes,
            f,
        );
    }
    // The body changed and the digest left as it was: canonical values.
    let uints = in_body(&tree, &|x| matches!(x, Node::Uint(v) if *v < 1 << 60));
    for i in spread(&uints, 4) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Uint(v) => Node::Uint(v + 1),
            _ => unreachable!(),
        });
        out.push(
            "stale-digest",
            format!("uint-{i}"),
            "digest-mismatch",
            Bytes,
            f,
        );
    }
    // The format version.
    let version_at = 4; // 0 map, 1 "body", 2.. body, then "format" key, value
    let _ = version_at;
    let mut version = |v: Node, name: &str, code: &'static str| {
        let mut t = tree.clone();
        *cbor_edit::get_mut(&mut t, "format") = v;
        out.push("version", name, code, Bytes, cbor_edit::to_bytes(&t));
    };
    version(Node::Uint(0), "0", "unsupported-version");
    version(Node::Uint(2), "2", "unsupported-version");
    version(Node::Uint(1000), "1000", "unsupported-version");
    version(Node::Nint(0), "minus-1", "decode-malformed");
    version(Node::Text("1".into()), "text", "decode-malformed");
    version(
        Node::Raw(vec![0x18, 0x01]),
        "long-head",
        "decode-noncanonical",
    );
    // Not the head of a certificate file.
    for (k, first) in [0xa2u8, 0xa4, 0xbf, 0x83].into_iter().enumerate() {
        let mut f = file.to_vec();
        f[0] = first;
        out.push("file-head", format!("{k}"), "not-a-certificate", Bytes, f);
    }
    out.push("file-head", "empty", "not-a-certificate", Bytes, Vec::new());
    // Non-shortest heads: integers, lengths of strings, arrays and maps.
    for i in spread(&uints, 3) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Uint(v) => Node::Raw(cbor_edit::long_head(0, *v)),
            _ => unreachable!(),
        });
        out.push(
            "long-head",
            format!("uint-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    let texts = in_body(&tree, &|x| matches!(x, Node::Text(_)));
    for i in spread(&texts, 2) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Text(t) => {
                let mut r = cbor_edit::long_head(3, t.len() as u64);
                r.extend_from_slice(t.as_bytes());
                Node::Raw(r)
            }
            _ => unreachable!(),
        });
        out.push(
            "long-head",
            format!("text-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    let arrays = in_body(&tree, &|x| matches!(x, Node::Array(a) if !a.is_empty()));
    for i in spread(&arrays, 2) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Array(a) => {
                let mut r = cbor_edit::long_head(4, a.len() as u64);
                for y in a {
                    cbor_edit::write(y, &mut r);
                }
                Node::Raw(r)
            }
            _ => unreachable!(),
        });
        out.push(
            "long-head",
            format!("array-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    // Indefinite lengths.
    for i in spread(&arrays, 2) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Array(a) => {
                let mut r = vec![0x9f];
                for y in a {
                    cbor_edit::write(y, &mut r);
                }
                r.push(0xff);
                Node::Raw(r)
            }
            _ => unreachable!(),
        });
        out.push(
            "indefinite",
            format!("array-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    let maps = in_body(&tree, &|x| matches!(x, Node::Map(m) if m.len() >= 2));
    for i in spread(&maps, 2) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Map(m) => {
                let mut r = vec![0xbf];
                for (k, v) in m {
                    cbor_edit::write(k, &mut r);
                    cbor_edit::write(v, &mut r);
                }
                r.push(0xff);
                Node::Raw(r)
            }
            _ => unreachable!(),
        });
        out.push(
            "indefinite",
            format!("map-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    if let Some(&i) = texts.first() {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Text(t) => {
                let mut r = vec![0x7f];
                cbor_edit::write(&Node::Text(t.clone()), &mut r);
                r.push(0xff);
                Node::Raw(r)
            }
            _ => unreachable!(),
        });
        out.push(
            "indefinite",
            format!("text-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    // Map keys out of order, and a key twice.
    for i in spread(&maps, 3) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Map(m) => {
                let mut m = m.clone();
                m.swap(0, 1);
                Node::Map(m)
            }
            _ => unreachable!(),
        });
        out.push(
            "unsorted-keys",
            format!("map-{i}"),
            "decode-noncanonical",
            Bytes,
            f,
        );
    }
    for i in spread(&maps, 2) {
        let f = edited(&tree, i, &mut |x| match x {
            Node::Map(m) => {
                let mut m = m.clone();
                m.insert(1, m[0].clone());
                Node::Map(m)
            }
            _ => unreachable!(),
        });
        out.push(
            "duplicate-key",
            format!("map-{i}"),
            "decode-malformed",
            Bytes,
            f,
        );
    }
    // A key the format does not know, in its canonical place.
    {
        let mut t = tree.clone();
        let body = cbor_edit::get_mut(&mut t, "body");
        if let Node::Map(m) = body {
            m.push((Node::Text("zz-unknown-field".into()), Node::Uint(0)));
        }
        out.push(
            "unknown-key",
            "body",
            "decode-malformed",
            Bytes,
            cbor_edit::to_bytes(&t),
        );
    }
    // A required key removed.
    for key in ["producer", "claim", "euler"] {
        let mut t = tree.clone();
        if let Node::Map(m) = cbor_edit::get_mut(&mut t, "body") {
            let before = m.len();
            m.retain(|(k, _)| !matches!(k, Node::Text(s) if s == key));
            if m.len() == before {
                continue;
            }
        }
        out.push(
            "missing-key",
            key,
            "decode-malformed",
            Bytes,
            cbor_edit::to_bytes(&t),
        );
    }
    // Items the format does not allow in place of an integer.
    let small = in_body(&tree, &|x| matches!(x, Node::Uint(_)));
    let at = spread(&small, 2);
    for (k, (name, code, raw)) in [
        ("tag-1", "decode-malformed", vec![0xc1u8, 0x01]),
        ("tag-24", "decode-malformed", vec![0xd8, 0x18, 0x01]),
        (
            "tag-55799",
            "decode-malformed",
            vec![0xd9, 0xd9, 0xf7, 0x01],
        ),
        ("float16", "decode-malformed", vec![0xf9, 0x3c, 0x00]),
        (
            "float64",
            "decode-malformed",
            vec![0xfb, 0x3f, 0xf0, 0, 0, 0, 0, 0, 0],
        ),
        ("undefined", "decode-malformed", vec![0xf7]),
        ("reserved-info", "decode-malformed", vec![0x1c]),
        (
            "bignum-short",
            "decode-noncanonical",
            vec![0xc2, 0x41, 0x01],
        ),
        (
            "bignum-leading-zero",
            "decode-noncanonical",
            vec![0xc2, 0x4a, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0x01],
        ),
        ("tag-2-on-text", "decode-malformed", vec![0xc2, 0x61, b'1']),
    ]
    .into_iter()
    .enumerate()
    {
        let i = at[k % at.len()];
        let f = edited(&tree, i, &mut |_| Node::Raw(raw.clone()));
        out.push("foreign-item", format!("{name}-{i}"), code, Bytes, f);
    }
    // Text that is not UTF-8.
    if let Some(&i) = texts.last() {
        let f = edited(&tree, i, &mut |_| Node::Raw(vec![0x62, 0xc3, 0x28]));
        out.push(
            "foreign-item",
            format!("not-utf8-{i}"),
            "decode-malformed",
            Bytes,
            f,
        );
    }
}

// ================================================================ helpers

fn disc_i64(b: &Body) -> i64 {
    forge::discriminant(b)
        .to_i64()
        .expect("a small golden discriminant")
}

/// The reduced oracle form of factor-base ideal `i` (`D < 0`).
fn oform(b: &Body, i: usize) -> oracle::Form {
    let d = disc_i64(b);
    let PrimeIdeal::QuadraticForm { p, b: bb } = b.factor_base[i];
    let (p, bb) = (p as i64, bb as i64);
    oracle::reduce((p, bb, (bb * bb - d) / (4 * p)), d)
}

fn opow(f: oracle::Form, e: &Integer, d: i64) -> oracle::Form {
    let mut base = if *e < 0 {
        oracle::reduce((f.0, -f.1, f.2), d)
    } else {
        f
    };
    let mut n = Integer::from(e.abs_ref());
    let mut acc = oracle::principal_form(d);
    while n > 0 {
        if n.is_odd() {
            acc = oracle::compose_naive(acc, base, d);
        }
        base = oracle::compose_naive(base, base, d);
        n >>= 1;
    }
    acc
}

fn oprincipal(f: oracle::Form, d: i64) -> bool {
    f == oracle::principal_form(d)
}

/// The class of `∏ P_i^{e_i}` over the factor base (`D < 0`).
fn oproduct(b: &Body, entries: &[(usize, Integer)]) -> oracle::Form {
    let d = disc_i64(b);
    entries
        .iter()
        .fold(oracle::principal_form(d), |acc, (i, e)| {
            oracle::compose_naive(acc, opow(oform(b, *i), e, d), d)
        })
}

fn is_real(b: &Body) -> bool {
    forge::discriminant(b) > 0
}

/// Rank of the generator block.
fn rank(b: &Body) -> usize {
    b.lattice.generators.len()
}

/// Replaces the Smith form and the claim by those of the (nonsingular)
/// relation matrix in `b`: the claim is then exactly what the lattice
/// shows. `None` if the matrix is singular.
fn recompute_smith_and_claim(b: &mut Body) -> Option<()> {
    let h = b.lattice.relations.clone();
    let sm = classcert_prover::linalg::smith(&h)?;
    let real = is_real(b);
    let mut gens = Vec::new();
    let mut inv = Vec::new();
    let mut cn = Integer::from(1);
    for (i, di) in sm.diag.iter().enumerate() {
        cn *= di;
        if *di > 1 {
            inv.push(di.clone());
            let x = sm.v_inv[i].clone();
            let form = (!real).then(|| {
                let entries: Vec<(usize, Integer)> = b
                    .lattice
                    .generators
                    .iter()
                    .zip(x.iter())
                    .map(|(&g, e)| (g as usize, e.clone()))
                    .collect();
                let f = oproduct(b, &entries);
                classcert_format::Form {
                    a: Integer::from(f.0),
                    b: Integer::from(f.1),
                    c: Integer::from(f.2),
                }
            });
            gens.push(CyclicGenerator { exponents: x, form });
        }
    }
    b.lattice.smith = sm.into();
    b.claim.class_number = cn;
    b.claim.invariants = inv;
    b.claim.generators = gens;
    Some(())
}

/// `rows[i]` of a `Combinations` witness scaled and combined as `E·rows`
/// for the integer matrix `e` (sparse terms merged, zeros dropped).
fn combine_rows(rows: &[Vec<(u32, Integer)>], e: &[Vec<i64>]) -> Vec<Vec<(u32, Integer)>> {
    e.iter()
        .map(|coef| {
            let mut acc: std::collections::BTreeMap<u32, Integer> = Default::default();
            for (c, row) in coef.iter().zip(rows) {
                if *c == 0 {
                    continue;
                }
                for (j, x) in row {
                    *acc.entry(*j).or_default() += Integer::from(x * *c);
                }
            }
            acc.into_iter().filter(|(_, x)| !x.is_zero()).collect()
        })
        .collect()
}

/// `H ← E·H` (and the same on a `Combinations` witness).
fn left_multiply(b: &mut Body, e: &[Vec<i64>]) {
    let h = &b.lattice.relations;
    let r = h.len();
    let new: Vec<Vec<Integer>> = (0..r)
        .map(|i| {
            (0..r)
                .map(|j| {
                    let mut s = Integer::new();
                    for (k, c) in e[i].iter().enumerate() {
                        s += Integer::from(&h[k][j] * *c);
                    }
                    s
                })
                .collect()
        })
        .collect();
    b.lattice.relations = new;
    if let Witness::Combinations { rows } = &mut b.lattice.relation_witness {
        *rows = combine_rows(rows, e);
    }
}

fn identity_i64(r: usize) -> Vec<Vec<i64>> {
    (0..r)
        .map(|i| (0..r).map(|j| i64::from(i == j)).collect())
        .collect()
}

/// The code a changed relation among the generators gets (`D < 0`, form
/// reduction): still principal -> the Smith form no longer matches.
fn analytic_code(b: &Body) -> &'static str {
    if is_real(b) {
        "class-number-regulator-not-confirmed"
    } else {
        "class-number-not-confirmed"
    }
}

fn real_units(b: &mut Body) -> &mut classcert_format::Units {
    b.units.as_mut().expect("D > 0 has units")
}

/// Appends `k` steps with `β = 1` to the compact representation: the unit
/// becomes `ε^(2^k)`, a true unit of the order, of norm 1.
fn unit_power_of_two(b: &mut Body, k: u32) {
    let u = real_units(b);
    let last = u.steps.last().expect("a step").clone();
    for _ in 0..k {
        u.steps.push(CompactStep {
            x: Integer::from(2),
            y: Integer::new(),
            s: Integer::from(1),
            ..last.clone()
        });
    }
    u.norm = 1;
    u.regulator.lo.exponent += i64::from(k);
    u.regulator.hi.exponent += i64::from(k);
}

fn dyadic_shift(d: &mut Dyadic, mantissa_delta: &Integer) {
    d.mantissa += mantissa_delta;
}

// ================================================================ relations

fn relations_families(out: &mut Out, b: &Body, donors: &[&Body]) {
    let real = is_real(b);
    let d = disc_i64(b);
    let r = rank(b);
    let unconditional = b.euler.theorem == registry::ERFC_SERIES;

    // --- rows of H
    for i in 0..r {
        for j in 0..r {
            for delta in [1i64, -1] {
                if r > 3 && delta == -1 {
                    continue;
                }
                let mut f = b.clone();
                f.lattice.relations[i][j] += delta;
                let code = if real {
                    "combination-mismatch"
                } else {
                    let g = oform(b, b.lattice.generators[j] as usize);
                    if oprincipal(opow(g, &Integer::from(delta), d), d) {
                        "smith-mismatch"
                    } else {
                        "relation-not-principal"
                    }
                };
                out.math(
                    "relation-entry",
                    format!("r{i}-c{j}-{}", sign(delta)),
                    code,
                    &f,
                );
            }
        }
    }
    // --- Smith transforms and diagonal
    for (name, pick) in [("u", 0usize), ("u-inv", 1), ("v", 2), ("v-inv", 3)] {
        for i in 0..r {
            for j in 0..r {
                if r > 3 && i != j && i != 0 {
                    continue;
                }
                let mut f = b.clone();
                let s = &mut f.lattice.smith;
                let m = [&mut s.u, &mut s.u_inv, &mut s.v, &mut s.v_inv];
                let m = m.into_iter().nth(pick).expect("four matrices");
                m[i][j] += 1;
                out.math(
                    "smith-transform",
                    format!("{name}-{i}-{j}"),
                    "smith-not-unimodular",
                    &f,
                );
            }
        }
    }
    for i in 0..r {
        for (name, new) in [
            ("plus-1", Integer::from(&b.lattice.smith.diagonal[i] + 1)),
            ("zero", Integer::new()),
            ("negated", Integer::from(-&b.lattice.smith.diagonal[i])),
        ] {
            let mut f = b.clone();
            f.lattice.smith.diagonal[i] = new;
            out.math(
                "smith-diagonal",
                format!("{i}-{name}"),
                "smith-mismatch",
                &f,
            );
        }
    }
    if r >= 1 {
        let mut f = b.clone();
        f.lattice.smith.diagonal.pop();
        out.math("smith-shape", "diagonal-short", "smith-shape", &f);
        let mut f = b.clone();
        f.lattice.smith.v.pop();
        out.math("smith-shape", "v-short", "smith-shape", &f);
        let mut f = b.clone();
        f.lattice.relations[0].push(Integer::new());
        out.math("smith-shape", "h-row-long", "smith-shape", &f);
    }
    // --- eliminations
    let els = &b.lattice.eliminations;
    for (k, el) in els.iter().enumerate().take(10) {
        for (t, (idx, _)) in el.relation.entries.iter().enumerate() {
            if *idx == el.pivot || t > 3 {
                continue;
            }
            let mut f = b.clone();
            f.lattice.eliminations[k].relation.entries[t].1 += 1;
            if f.lattice.eliminations[k].relation.entries[t].1.is_zero() {
                continue; // a zero entry is a structure error, see below
            }
            let code = match &el.relation.witness {
                Witness::FormReduction => {
                    if oprincipal(oform(b, *idx as usize), d) {
                        continue; // still principal: still a true certificate
                    }
                    "elimination-not-principal"
                }
                Witness::Element { .. } => "relation-witness-invalid",
                _ => "combination-mismatch",
            };
            out.math("elimination-entry", format!("e{k}-t{t}"), code, &f);
        }
        for (name, c) in [("two", 2i64), ("zero", 0), ("minus-two", -2)] {
            let mut f = b.clone();
            let e = &mut f.lattice.eliminations[k];
            let p = e.pivot;
            e.relation
                .entries
                .iter_mut()
                .find(|(i, _)| *i == p)
                .expect("pivot entry")
                .1 = Integer::from(c);
            out.math(
                "elimination-pivot",
                format!("e{k}-{name}"),
                "elimination-structure",
                &f,
            );
        }
        let mut f = b.clone();
        let dropped = f.lattice.eliminations.remove(k);
        let used_later = els[k + 1..]
            .iter()
            .any(|l| l.relation.entries.iter().any(|(i, _)| *i == dropped.pivot));
        let code = if used_later {
            "elimination-structure"
        } else {
            "elimination-incomplete"
        };
        out.math("elimination-dropped", format!("e{k}"), code, &f);
        if k + 1 < els.len() {
            let next = &els[k + 1];
            if next.relation.entries.iter().any(|(i, _)| *i == el.pivot) {
                let mut f = b.clone();
                f.lattice.eliminations.swap(k, k + 1);
                out.math(
                    "elimination-order",
                    format!("e{k}"),
                    "elimination-structure",
                    &f,
                );
            }
        }
        if k == 0 {
            let mut f = b.clone();
            let e = &mut f.lattice.eliminations[0];
            e.relation.entries.reverse();
            if e.relation.entries.len() >= 2 {
                out.math(
                    "elimination-pivot",
                    "e0-entries-reversed",
                    "elimination-structure",
                    &f,
                );
            }
            let mut f = b.clone();
            let g = *b.lattice.generators.first().unwrap_or(&0);
            f.lattice.eliminations[0].pivot = g;
            if r > 0 {
                out.math(
                    "elimination-pivot",
                    "e0-pivot-generator",
                    "elimination-structure",
                    &f,
                );
            }
        }
    }
    if let Some(first) = els.first() {
        let mut f = b.clone();
        f.lattice.eliminations.push(first.clone());
        out.math(
            "elimination-dropped",
            "first-repeated",
            "elimination-structure",
            &f,
        );
    }
    // --- generators
    if r >= 1 {
        let mut f = b.clone();
        f.lattice.generators[0] = b.factor_base.len() as u32 + 3;
        out.math("generators", "outside", "generators-invalid", &f);
    }
    if r >= 2 {
        let mut f = b.clone();
        f.lattice.generators[r - 1] = f.lattice.generators[0];
        out.math("generators", "repeated", "generators-invalid", &f);
    }
    // --- factor base
    let abs_d = Integer::from(forge::discriminant(b).abs_ref());
    let bound = registry::generation_bound(&b.generation_theorem, &abs_d).expect("a known bound");
    let fb = &b.factor_base;
    let below: Vec<usize> = (0..fb.len())
        .filter(|&i| {
            let PrimeIdeal::QuadraticForm { p, .. } = fb[i];
            p <= bound
        })
        .collect();
    for &i in &spread(&below, 8) {
        let mut f = b.clone();
        f.factor_base.remove(i);
        out.math(
            "factor-base-dropped",
            format!("i{i}"),
            "factor-base-gap",
            &f,
        );
    }
    for i in spread(&(0..fb.len()).collect::<Vec<_>>(), 6) {
        let PrimeIdeal::QuadraticForm { p, b: bb } = fb[i];
        // b of the other parity is never a square root of D mod 4
        let nb = if bb < p { bb + 1 } else { bb - 1 };
        let mut f = b.clone();
        f.factor_base[i] = PrimeIdeal::QuadraticForm { p, b: nb };
        out.math(
            "factor-base-entry",
            format!("i{i}-b"),
            "factor-base-invalid",
            &f,
        );
        let mut f = b.clone();
        f.factor_base[i] = PrimeIdeal::QuadraticForm { p, b: p + 2 };
        out.math(
            "factor-base-entry",
            format!("i{i}-b-above-p"),
            "factor-base-invalid",
            &f,
        );
        if i + 1 < fb.len() {
            let mut f = b.clone();
            f.factor_base.swap(i, i + 1);
            out.math(
                "factor-base-entry",
                format!("i{i}-swapped"),
                "factor-base-invalid",
                &f,
            );
        }
    }
    // --- the claim
    let h = &b.claim.class_number;
    let mut variants = vec![
        ("plus-1", Integer::from(h + 1)),
        ("doubled", Integer::from(h * 2)),
        ("zero", Integer::new()),
        ("huge", Integer::from(h * 2) + (Integer::from(1) << 80u32)),
    ];
    if *h > 1 {
        variants.push(("minus-1", Integer::from(h - 1)));
    }
    for (name, x) in variants {
        let mut f = b.clone();
        f.claim.class_number = x;
        out.math("claim-class-number", name, "class-number-mismatch", &f);
    }
    let inv = &b.claim.invariants;
    for i in 0..inv.len() {
        let mut f = b.clone();
        f.claim.invariants[i] += 1;
        out.math(
            "claim-invariants",
            format!("{i}-plus-1"),
            "invariants-mismatch",
            &f,
        );
    }
    {
        let mut f = b.clone();
        f.claim.invariants.push(Integer::from(2));
        out.math("claim-invariants", "extra-2", "invariants-mismatch", &f);
        let mut f = b.clone();
        f.claim.invariants.insert(0, Integer::from(1));
        out.math("claim-invariants", "leading-1", "invariants-mismatch", &f);
        if !inv.is_empty() {
            let mut f = b.clone();
            f.claim.invariants.pop();
            out.math(
                "claim-invariants",
                "last-dropped",
                "invariants-mismatch",
                &f,
            );
        }
        if inv.len() >= 2 && inv.first() != inv.last() {
            let mut f = b.clone();
            f.claim.invariants.reverse();
            out.math("claim-invariants", "reversed", "invariants-mismatch", &f);
        }
    }
    let diag = &b.lattice.smith.diagonal;
    for (gi, g) in b.claim.generators.iter().enumerate() {
        for j in 0..g.exponents.len() {
            // x + e_j maps to e_i + (row j of V): a change unless that row
            // vanishes modulo every d_k
            let moves = (0..r).any(|k| !b.lattice.smith.v[j][k].is_divisible(&diag[k]));
            if !moves {
                continue;
            }
            let mut f = b.clone();
            f.claim.generators[gi].exponents[j] += 1;
            out.math(
                "claim-generator",
                format!("g{gi}-x{j}"),
                "generator-mismatch",
                &f,
            );
        }
        let mut f = b.clone();
        f.claim.generators[gi].exponents.push(Integer::from(0));
        out.math(
            "claim-generator",
            format!("g{gi}-long"),
            "generator-mismatch",
            &f,
        );
        if let Some(form) = &g.form {
            let of = (
                form.a.to_i64().expect("small"),
                form.b.to_i64().expect("small"),
                form.c.to_i64().expect("small"),
            );
            let inverse = oracle::reduce((of.0, -of.1, of.2), d);
            let mut others = vec![("principal", oracle::principal_form(d))];
            if inverse != of {
                others.push(("inverse", inverse));
            }
            others.push(("unreduced", (of.0, of.1 + 2 * of.0, of.0 + of.1 + of.2)));
            for (name, o) in others {
                let mut f = b.clone();
                f.claim.generators[gi].form = Some(classcert_format::Form {
                    a: Integer::from(o.0),
                    b: Integer::from(o.1),
                    c: Integer::from(o.2),
                });
                out.math(
                    "claim-generator",
                    format!("g{gi}-form-{name}"),
                    "generator-mismatch",
                    &f,
                );
            }
            let mut f = b.clone();
            f.claim.generators[gi].form = None;
            out.math(
                "claim-generator",
                format!("g{gi}-form-missing"),
                "generator-mismatch",
                &f,
            );
        } else if real {
            let mut f = b.clone();
            f.claim.generators[gi].form = Some(classcert_format::Form {
                a: Integer::from(1),
                b: Integer::from(1),
                c: Integer::from(1),
            });
            out.math(
                "claim-generator",
                format!("g{gi}-form-given"),
                "generator-mismatch",
                &f,
            );
        }
    }
    if !b.claim.generators.is_empty() {
        let mut f = b.clone();
        f.claim.generators.pop();
        out.math("claim-generator", "dropped", "generator-mismatch", &f);
    }
    // --- conductor
    let listed: Vec<u64> = b.conductor_small.iter().map(|(p, _)| *p).collect();
    for q in [2u64, 3, 5, 7, 11, 13]
        .into_iter()
        .filter(|q| !listed.contains(q))
        .take(3)
    {
        let mut f = b.clone();
        f.conductor_small.push((q, 1));
        f.conductor_small.sort_unstable();
        out.math("conductor", format!("added-{q}"), "conductor-mismatch", &f);
    }
    for (t, (p, e)) in b.conductor_small.iter().enumerate() {
        let mut f = b.clone();
        f.conductor_small.remove(t);
        out.math(
            "conductor",
            format!("dropped-{p}"),
            "conductor-mismatch",
            &f,
        );
        let mut f = b.clone();
        f.conductor_small[t].1 = e + 1;
        out.math(
            "conductor",
            format!("exponent-{p}"),
            "conductor-mismatch",
            &f,
        );
    }
    // --- the analytic side
    if !unconditional {
        euler_families(out, &b.euler, &|e| {
            let mut f = b.clone();
            f.euler = e;
            enc(&f)
        });
    }
    for (name, t) in [
        ("empty", ""),
        ("unknown", "no-such-theorem"),
        ("generation-bound", registry::BACH_FIELD),
        ("lattice-index", registry::LATTICE_INDEX),
    ] {
        let mut f = b.clone();
        f.euler.theorem = t.into();
        out.math("euler-theorem", name, "unknown-theorem", &f);
    }
    for (name, t) in [
        ("empty", ""),
        ("unknown", "bach-1990"),
        ("analytic", registry::BELABAS_FRIEDMAN),
        ("order-witness", registry::ORDER_WITNESS),
    ] {
        let mut f = b.clone();
        f.generation_theorem = t.into();
        out.math("generation-theorem", name, "unknown-theorem", &f);
    }
    if b.maximality.is_none() && b.generation_theorem != registry::BACH_FIELD {
        let mut f = b.clone();
        f.generation_theorem = registry::BACH_FIELD.into();
        out.math(
            "generation-theorem",
            "field-bound-unproven",
            "generation-theorem-not-applicable",
            &f,
        );
    }
    if real {
        let mut f = b.clone();
        f.generation_theorem = registry::REDUCED_FORMS.into();
        out.math(
            "generation-theorem",
            "reduced-forms-real",
            "generation-theorem-not-applicable",
            &f,
        );
    }
    // --- maximality and primality evidence
    maximality_families(out, &b.maximality, &abs_d, &|m| {
        let mut f = b.clone();
        f.maximality = m;
        enc(&f)
    });
    if b.maximality.is_none() {
        if let Some(abs) = abs_d.to_u64() {
            let m: Vec<PrimePower> = factor_u64(abs)
                .into_iter()
                .map(|(p, e)| PrimePower {
                    prime: Integer::from(p),
                    exponent: e,
                    evidence: PrimalityEvidence::Bpsw,
                })
                .collect();
            let mut f = b.clone();
            f.maximality = Some(m);
            out.math(
                "maximality",
                "claimed-not-fundamental",
                "maximality-not-fundamental",
                &f,
            );
        }
    }
    // --- the order
    for (name, delta) in [("minus-2", -2i64), ("plus-1", 1), ("plus-2", 2)] {
        let nd = Integer::from(&forge::discriminant(b) + delta);
        let m4 = nd.mod_u(4);
        if m4 == 2 || m4 == 3 {
            let mut f = b.clone();
            f.order = Order::Quadratic { discriminant: nd };
            out.math("discriminant", name, "invalid-discriminant", &f);
        }
    }
    for (name, sq) in [("square-4", 4i64), ("square-9", 9)] {
        let mut f = b.clone();
        f.order = Order::Quadratic {
            discriminant: Integer::from(sq),
        };
        out.math("discriminant", name, "invalid-discriminant", &f);
    }
    // --- D > 0: raw and derived relations, units
    if real {
        real_families(out, b);
    } else {
        let mut f = b.clone();
        f.units = b.units.clone().or_else(|| {
            Some(classcert_format::Units {
                steps: vec![],
                norm: 1,
                regulator: b.euler.log_l.clone(),
            })
        });
        out.math("units", "for-imaginary", "units-shape", &f);
    }
    consistent_families(out, b, donors);
}

fn sign(x: i64) -> String {
    if x < 0 {
        format!("minus{}", -x)
    } else {
        format!("plus{x}")
    }
}

/// Families on an Euler trace; `wrap` re-encodes a body with the trace.
fn euler_families(
    out: &mut Out,
    e: &classcert_format::EulerTrace,
    wrap: &dyn Fn(classcert_format::EulerTrace) -> Vec<u8>,
) {
    let m = Layer::Mathematics;
    for (x, code) in [
        (0u64, "euler-x-out-of-range"),
        (1, "euler-x-out-of-range"),
        (68, "euler-x-out-of-range"),
        (69, "euler-x-too-small"),
        (100, "euler-x-too-small"),
    ] {
        let mut t = e.clone();
        t.x = x;
        out.push("euler-x", format!("{x}"), code, m, wrap(t));
    }
    for k in 0..e.checkpoints.len().min(6) {
        for part in ["a", "c"] {
            let mut t = e.clone();
            let cp = &mut t.checkpoints[k];
            let bnd = if part == "a" { &mut cp.a } else { &mut cp.c };
            // moved wholly above its old upper end
            let lo_e = bnd.lo.exponent.min(bnd.hi.exponent).min(-40);
            let up = Integer::from(1) << 20u32;
            for d in [&mut bnd.lo, &mut bnd.hi] {
                let shift = d.exponent - lo_e;
                d.mantissa <<= shift as u32;
                d.exponent = lo_e;
            }
            let width = Integer::from(&bnd.hi.mantissa - &bnd.lo.mantissa) + &up;
            dyadic_shift(&mut bnd.lo, &width);
            dyadic_shift(&mut bnd.hi, &width);
            out.push(
                "euler-checkpoint",
                format!("{k}-{part}-moved"),
                "euler-trace-mismatch",
                m,
                wrap(t),
            );
        }
        let mut t = e.clone();
        t.checkpoints[k].limit = e.x + 1;
        out.push(
            "euler-checkpoint",
            format!("{k}-limit-past-x"),
            "euler-trace-mismatch",
            m,
            wrap(t),
        );
        if k + 1 < e.checkpoints.len() {
            let mut t = e.clone();
            t.checkpoints.swap(k, k + 1);
            out.push(
                "euler-checkpoint",
                format!("{k}-swapped"),
                "euler-trace-mismatch",
                m,
                wrap(t),
            );
        }
    }
    if let Some(c) = e.checkpoints.first() {
        let mut t = e.clone();
        t.checkpoints.insert(0, c.clone());
        out.push(
            "euler-checkpoint",
            "first-repeated",
            "euler-trace-mismatch",
            m,
            wrap(t),
        );
    }
    // The stated enclosure of log L made too narrow, or moved.
    let (lo, hi) = (&e.log_l.lo, &e.log_l.hi);
    let ex = lo.exponent.min(hi.exponent) - 8;
    let at = |d: &Dyadic| Integer::from(&d.mantissa << (d.exponent - ex) as u32);
    let (ml, mh) = (at(lo), at(hi));
    let w = Integer::from(&mh - &ml);
    let q = Integer::from(&w >> 2u32);
    let half = Integer::from(&w >> 1u32);
    let mid = Integer::from(&ml + &half);
    for (name, nlo, nhi) in [
        (
            "narrowed-quarter",
            Integer::from(&ml + &q),
            Integer::from(&mh - &q),
        ),
        ("narrowed-lower-half", ml.clone(), mid.clone()),
        ("narrowed-upper-half", mid.clone(), mh.clone()),
        (
            "moved-up",
            Integer::from(&mh + 1u32),
            Integer::from(&mh + &w) + 1u32,
        ),
        (
            "moved-down",
            Integer::from(&ml - &w) - 1u32,
            Integer::from(&ml - 1u32),
        ),
        ("point", mid.clone(), mid.clone()),
    ] {
        let mut t = e.clone();
        t.log_l.lo = Dyadic {
            mantissa: nlo,
            exponent: ex,
        };
        t.log_l.hi = Dyadic {
            mantissa: nhi,
            exponent: ex,
        };
        out.push(
            "euler-interval",
            name,
            "euler-interval-understated",
            m,
            wrap(t),
        );
    }
}

/// Families on a maximality claim of `|D|` (`target`).
fn maximality_families(
    out: &mut Out,
    m: &Option<Vec<PrimePower>>,
    target: &Integer,
    wrap: &dyn Fn(Option<Vec<PrimePower>>) -> Vec<u8>,
) {
    let Some(factors) = m else { return };
    let ml = Layer::Mathematics;
    let _ = target;
    for (i, f) in factors.iter().enumerate() {
        let proof = !matches!(f.evidence, PrimalityEvidence::Bpsw);
        let mut g = factors.clone();
        g[i].prime += 2;
        let code = if proof {
            "primality-proof-invalid"
        } else {
            "maximality-factorisation"
        };
        // p + 2 still below the next prime keeps the order; either way the
        // product is wrong
        out.push(
            "maximality",
            format!("f{i}-prime-plus-2"),
            code,
            ml,
            wrap(Some(g)),
        );
        let mut g = factors.clone();
        g[i].exponent += 1;
        out.push(
            "maximality",
            format!("f{i}-exponent"),
            "maximality-factorisation",
            ml,
            wrap(Some(g)),
        );
        let mut g = factors.clone();
        g.remove(i);
        out.push(
            "maximality",
            format!("f{i}-dropped"),
            "maximality-factorisation",
            ml,
            wrap(Some(g)),
        );
        let mut g = factors.clone();
        g.insert(i, f.clone());
        out.push(
            "maximality",
            format!("f{i}-repeated"),
            "maximality-factorisation",
            ml,
            wrap(Some(g)),
        );
        let mut g = factors.clone();
        g[i].exponent = 0;
        out.push(
            "maximality",
            format!("f{i}-exponent-zero"),
            "maximality-factorisation",
            ml,
            wrap(Some(g)),
        );
        if !proof && f.prime > 3 {
            // a composite, flagged as a BPSW prime: 9 or p^2 in place of p
            let mut g = factors.clone();
            g[i].prime = Integer::from(f.prime.square_ref());
            out.push(
                "maximality",
                format!("f{i}-squared-bpsw"),
                "maximality-factorisation",
                ml,
                wrap(Some(g)),
            );
        }
        // the evidence replaced by an empty proof
        let mut g = factors.clone();
        g[i].evidence = PrimalityEvidence::Pocklington { factors: vec![] };
        out.push(
            "primality",
            format!("f{i}-empty-pocklington"),
            "primality-proof-invalid",
            ml,
            wrap(Some(g)),
        );
        let mut g = factors.clone();
        g[i].evidence = PrimalityEvidence::Morrison {
            lucas_p: Integer::from(1),
            lucas_q: Integer::from(-1),
            factors: vec![],
        };
        out.push(
            "primality",
            format!("f{i}-empty-morrison"),
            "primality-proof-invalid",
            ml,
            wrap(Some(g)),
        );
        match &f.evidence {
            PrimalityEvidence::Pocklington { factors: pf } => {
                let n = &f.prime;
                for (k, q) in pf.iter().enumerate() {
                    let mut edit =
                        |name: &str, change: &dyn Fn(&mut classcert_format::PocklingtonFactor)| {
                            let mut g = factors.clone();
                            if let PrimalityEvidence::Pocklington { factors: pf } =
                                &mut g[i].evidence
                            {
                                change(&mut pf[k]);
                            }
                            out.push(
                                "pocklington",
                                format!("f{i}-q{k}-{name}"),
                                "primality-proof-invalid",
                                ml,
                                wrap(Some(g)),
                            );
                        };
                    // a square base gives base^((N-1)/2) = 1 (Euler's
                    // criterion): it fails for q = 2 only
                    if q.q == 2 {
                        edit("base-square", &|x| x.base = Integer::from(4));
                    }
                    edit("base-one", &|x| x.base = Integer::from(1));
                    edit("exponent-plus-1", &|x| x.e += 1);
                    edit("q-plus-2", &|x| x.q += 2);
                    edit("q-times-q", &|x| x.q = Integer::from(x.q.square_ref()));
                    if q.q > 3 {
                        edit("sub-proof-empty", &|x| {
                            *x.evidence = PrimalityEvidence::Pocklington { factors: vec![] }
                        });
                    }
                }
                // keep the first k factors only, when F^2 < N then
                let mut fprod = Integer::from(1);
                for (k, q) in pf.iter().enumerate() {
                    if k > 0 && Integer::from(fprod.square_ref()) < *n {
                        let mut g = factors.clone();
                        if let PrimalityEvidence::Pocklington { factors: pf } = &mut g[i].evidence {
                            pf.truncate(k);
                        }
                        out.push(
                            "pocklington",
                            format!("f{i}-first-{k}"),
                            "primality-proof-invalid",
                            ml,
                            wrap(Some(g)),
                        );
                    }
                    fprod *= q.q.clone().pow(q.e);
                }
            }
            PrimalityEvidence::Morrison {
                factors: mf,
                lucas_p,
                lucas_q,
            } => {
                let n = &f.prime;
                let mut pq = |name: &str, p: Integer, q: Integer| {
                    let mut g = factors.clone();
                    if let PrimalityEvidence::Morrison {
                        lucas_p, lucas_q, ..
                    } = &mut g[i].evidence
                    {
                        *lucas_p = p;
                        *lucas_q = q;
                    }
                    out.push(
                        "morrison",
                        format!("f{i}-{name}"),
                        "primality-proof-invalid",
                        ml,
                        wrap(Some(g)),
                    );
                };
                // P^2 - 4Q a square: (Δ/N) = 1 or 0, never -1
                pq(
                    "square-discriminant-3-2",
                    Integer::from(3),
                    Integer::from(2),
                );
                pq(
                    "square-discriminant-5-4",
                    Integer::from(5),
                    Integer::from(4),
                );
                pq("q-is-n", lucas_p.clone(), n.clone());
                pq("q-is-2n", lucas_p.clone(), Integer::from(n * 2));
                pq("q-zero", lucas_p.clone(), Integer::new());
                let _ = lucas_q;
                for (k, mk) in mf.iter().enumerate() {
                    let mut edit =
                        |name: &str, change: &dyn Fn(&mut classcert_format::MorrisonFactor)| {
                            let mut g = factors.clone();
                            if let PrimalityEvidence::Morrison { factors: mf, .. } =
                                &mut g[i].evidence
                            {
                                change(&mut mf[k]);
                            }
                            out.push(
                                "morrison",
                                format!("f{i}-q{k}-{name}"),
                                "primality-proof-invalid",
                                ml,
                                wrap(Some(g)),
                            );
                        };
                    edit("exponent-plus-1", &|x| x.e += 1);
                    edit("q-plus-2", &|x| x.q += 2);
                    if mk.q > 3 {
                        edit("sub-proof-empty", &|x| {
                            *x.evidence = PrimalityEvidence::Pocklington { factors: vec![] }
                        });
                    }
                }
                let mut fprod = Integer::from(1);
                for (k, q) in mf.iter().enumerate() {
                    if k > 0 && Integer::from(Integer::from(&fprod - 1u32).square_ref()) <= *n {
                        let mut g = factors.clone();
                        if let PrimalityEvidence::Morrison { factors: mf, .. } = &mut g[i].evidence
                        {
                            mf.truncate(k);
                        }
                        out.push(
                            "morrison",
                            format!("f{i}-first-{k}"),
                            "primality-proof-invalid",
                            ml,
                            wrap(Some(g)),
                        );
                    }
                    fprod *= q.q.clone().pow(q.e);
                }
            }
            PrimalityEvidence::Bpsw => {}
        }
    }
}

/// `|x² - D y²|`, four times the absolute norm of `(x + y sqrt D)/2`.
fn norm4(x: &Integer, y: &Integer, d: &Integer) -> Integer {
    let n = Integer::from(x.square_ref()) - Integer::from(y.square_ref()) * d;
    n.abs()
}

fn real_families(out: &mut Out, b: &Body) {
    let dq = forge::discriminant(b);
    let raw = b.lattice.raw_relations.clone().unwrap_or_default();
    for (k, rel) in raw.iter().enumerate().take(8) {
        if let Witness::Element { .. } = rel.witness {
            for (name, dx, dy) in [("x-plus-2", 2i64, 0i64), ("y-plus-1", 0, 1)] {
                let mut f = b.clone();
                let rr = &mut f.lattice.raw_relations.as_mut().expect("raw")[k];
                let mut same_norm = false;
                if let Witness::Element { x, y } = &mut rr.witness {
                    let before = norm4(x, y, &dq);
                    *x += dx;
                    *y += dy;
                    // (α) is fixed by its norm and the primes it lies in;
                    // a new element of the same |norm| might still fit
                    same_norm = norm4(x, y, &dq) == before;
                }
                if same_norm {
                    continue;
                }
                out.math(
                    "raw-relation",
                    format!("r{k}-{name}"),
                    "relation-witness-invalid",
                    &f,
                );
            }
            if !rel.entries.is_empty() {
                let mut f = b.clone();
                f.lattice.raw_relations.as_mut().expect("raw")[k].entries[0].1 += 1;
                out.math(
                    "raw-relation",
                    format!("r{k}-exponent"),
                    "relation-witness-invalid",
                    &f,
                );
            }
        }
    }
    let rcount = raw.len() as u32;
    if let Some(derived) = &b.lattice.derived_relations {
        for (k, rel) in derived.iter().enumerate().take(6) {
            let mut f = b.clone();
            let dr = &mut f.lattice.derived_relations.as_mut().expect("derived")[k];
            if let Witness::Combination { terms } = &mut dr.witness {
                terms[0].1 += 1;
            }
            out.math(
                "derived-relation",
                format!("d{k}-term"),
                "combination-mismatch",
                &f,
            );
            if !rel.entries.is_empty() {
                let mut f = b.clone();
                f.lattice.derived_relations.as_mut().expect("derived")[k].entries[0].1 += 1;
                out.math(
                    "derived-relation",
                    format!("d{k}-entry"),
                    "combination-mismatch",
                    &f,
                );
            }
            let mut f = b.clone();
            let dr = &mut f.lattice.derived_relations.as_mut().expect("derived")[k];
            dr.witness = Witness::Combination {
                terms: vec![(rcount + k as u32, Integer::from(1))],
            };
            out.math(
                "derived-relation",
                format!("d{k}-names-itself"),
                "combination-mismatch",
                &f,
            );
        }
    }
    if let Witness::Combinations { rows } = &b.lattice.relation_witness {
        for i in 0..rows.len() {
            if rows[i].is_empty() {
                continue;
            }
            let mut f = b.clone();
            if let Witness::Combinations { rows } = &mut f.lattice.relation_witness {
                rows[i][0].1 += 1;
            }
            out.math(
                "h-combination",
                format!("row{i}-term"),
                "combination-mismatch",
                &f,
            );
        }
        let mut f = b.clone();
        if let Witness::Combinations { rows } = &mut f.lattice.relation_witness {
            rows.push(vec![]);
        }
        // One combination per row of H is required, even with no
        // generators (h = 1).
        out.math("h-combination", "extra-row", "combination-mismatch", &f);
    }
    let mut f = b.clone();
    f.lattice.relation_witness = Witness::FormReduction;
    // form reduction proves nothing for D > 0, even with no rows to show
    out.math("h-combination", "form-reduction", "witness-kind", &f);
    // units
    let u = b.units.clone().expect("units");
    for (j, st0) in u.steps.iter().enumerate().take(6) {
        for name in ["x-plus-2", "y-plus-1", "s-plus-1", "a-plus-1", "b-plus-2"] {
            // b is taken mod 2a: with a = 1, b + 2 is the same ideal
            if name == "b-plus-2" && st0.a == 1 {
                continue;
            }
            // β changed to an element of the same |norm| may be another
            // unit times β, and the chain may still hold
            let (nx, ny) = match name {
                "x-plus-2" => (Integer::from(&st0.x + 2), st0.y.clone()),
                "y-plus-1" => (st0.x.clone(), Integer::from(&st0.y + 1)),
                _ => (Integer::from(1), Integer::from(1)),
            };
            if name.starts_with(['x', 'y']) && norm4(&nx, &ny, &dq) == norm4(&st0.x, &st0.y, &dq) {
                continue;
            }
            let mut f = b.clone();
            let st = &mut real_units(&mut f).steps[j];
            match name {
                "x-plus-2" => st.x += 2,
                "y-plus-1" => st.y += 1,
                "s-plus-1" => st.s += 1,
                "a-plus-1" => st.a += 1,
                _ => st.b += 2,
            }
            out.math(
                "unit-step",
                format!("s{j}-{name}"),
                "unit-chain-mismatch",
                &f,
            );
        }
    }
    if u.steps.len() >= 2 {
        let mut f = b.clone();
        real_units(&mut f).steps.remove(0);
        out.math("unit-chain", "first-removed", "unit-chain-mismatch", &f);
    }
    let mut f = b.clone();
    real_units(&mut f).steps.pop();
    if !u.steps.is_empty() && u.steps.len() >= 2 {
        out.math("unit-chain", "last-removed", "unit-chain-mismatch", &f);
    }
    let mut f = b.clone();
    real_units(&mut f).steps.clear();
    out.math("unit-chain", "empty", "unit-trivial", &f);
    for k in [-3i64, -2, -1, 1, 2] {
        let mut f = b.clone();
        let reg = &mut real_units(&mut f).regulator;
        reg.lo.exponent += k;
        reg.hi.exponent += k;
        out.math(
            "regulator",
            format!("times-2^{k}"),
            "regulator-mismatch",
            &f,
        );
    }
    let mut f = b.clone();
    let reg = &mut real_units(&mut f).regulator;
    reg.lo.mantissa = Integer::new();
    // it still contains R, but holds fewer than 20 significant digits
    out.math("regulator", "from-zero", "regulator-imprecise", &f);
    let mut f = b.clone();
    real_units(&mut f).norm = -u.norm;
    out.math("unit-norm", "flipped", "unit-norm-mismatch", &f);
    for n in [0i64, 2] {
        let mut f = b.clone();
        real_units(&mut f).norm = n;
        out.math("unit-norm", format!("{n}"), "unit-norm-mismatch", &f);
    }
    let mut f = b.clone();
    f.units = None;
    out.math("units", "removed", "units-shape", &f);
}

// ================================================================ consistent

fn consistent_families(out: &mut Out, b: &Body, donors: &[&Body]) {
    let real = is_real(b);
    let d = disc_i64(b);
    let r = rank(b);
    let code = analytic_code(b);
    // A sublattice of index k: row i of H multiplied by k (true relations),
    // its Smith form and the claim recomputed: h* = k h.
    for i in 0..r.min(4) {
        for k in [2i64, 3, 5] {
            let mut f = b.clone();
            let mut e = identity_i64(r);
            e[i][i] = k;
            left_multiply(&mut f, &e);
            recompute_smith_and_claim(&mut f).expect("nonsingular");
            out.consistent("sublattice-row", format!("r{i}-times-{k}"), code, &f);
        }
    }
    // E·H with E of determinant k mixing two rows.
    if r >= 2 {
        for i in 0..(r - 1).min(3) {
            for (k, c) in [(2i64, 1i64), (3, -1), (4, 2), (6, 1)] {
                let mut f = b.clone();
                let mut e = identity_i64(r);
                // [[1, 1], [c, k + c]] on rows i, i + 1: determinant k
                e[i][i + 1] = 1;
                e[i + 1][i] = c;
                e[i + 1][i + 1] = k + c;
                left_multiply(&mut f, &e);
                recompute_smith_and_claim(&mut f).expect("nonsingular");
                out.consistent("sublattice-mixed", format!("r{i}-k{k}-c{c}"), code, &f);
            }
        }
    }
    // A forged relation, with the Smith form and the claim recomputed.
    if r >= 1 {
        for i in 0..r.min(3) {
            for j in 0..r.min(3) {
                for delta in [1i64, 2, -1] {
                    let mut f = b.clone();
                    f.lattice.relations[i][j] += delta;
                    let c = if real {
                        "combination-mismatch"
                    } else {
                        let g = oform(b, b.lattice.generators[j] as usize);
                        if oprincipal(opow(g, &Integer::from(delta), d), d) {
                            continue; // a true relation: a sublattice, see above
                        }
                        "relation-not-principal"
                    };
                    if recompute_smith_and_claim(&mut f).is_none() {
                        continue;
                    }
                    out.consistent(
                        "forged-relation",
                        format!("r{i}-c{j}-{}", sign(delta)),
                        c,
                        &f,
                    );
                }
            }
        }
    }
    // A superlattice: d_i divided by a prime p | d_i, H = U' diag V'. Its
    // rows cannot all be relations (the index would drop below h).
    let diag = b.lattice.smith.diagonal.clone();
    for (i, di) in diag.iter().enumerate() {
        let Some(dv) = di.to_u64() else { continue };
        if dv < 2 {
            continue;
        }
        for (p, _) in factor_u64(dv).into_iter().take(2) {
            let mut f = b.clone();
            let mut nd = diag.clone();
            nd[i] = Integer::from(di / p);
            // keep d_j | d_{j+1}: only when the new entry still divides the
            // next and is divisible by the one before
            let ok = (i == 0 || nd[i].is_divisible(&nd[i - 1]))
                && (i + 1 == r || nd[i + 1].is_divisible(&nd[i]));
            if !ok {
                continue;
            }
            let s = &b.lattice.smith;
            let rr = s.u_inv.len();
            let new_h: Vec<Vec<Integer>> = (0..rr)
                .map(|x| {
                    (0..rr)
                        .map(|y| {
                            let mut acc = Integer::new();
                            for (t, dt) in nd.iter().enumerate() {
                                acc += Integer::from(&s.u_inv[x][t] * dt) * &s.v_inv[t][y];
                            }
                            acc
                        })
                        .collect()
                })
                .collect();
            f.lattice.relations = new_h;
            recompute_smith_and_claim(&mut f).expect("nonsingular");
            let c = if real {
                "combination-mismatch"
            } else {
                "relation-not-principal"
            };
            if real {
                // and the unit squared, the regulator doubled: h R unchanged
                unit_power_of_two(&mut f, 1);
            }
            out.consistent("superlattice", format!("d{i}-over-{p}"), c, &f);
        }
    }
    // The Smith diagonal out of divisibility order by a permutation of U
    // and V: every product identity holds.
    for i in 0..r {
        for j in i + 1..r {
            if diag[i] == diag[j] {
                continue;
            }
            let mut f = b.clone();
            let s = &mut f.lattice.smith;
            s.u.swap(i, j);
            for row in s.u_inv.iter_mut() {
                row.swap(i, j);
            }
            for row in s.v.iter_mut() {
                row.swap(i, j);
            }
            s.v_inv.swap(i, j);
            s.diagonal.swap(i, j);
            out.consistent(
                "smith-permuted",
                format!("{i}-{j}"),
                "smith-divisibility",
                &f,
            );
        }
    }
    // A cyclic group rebuilt as Z/(m h) from the factor base alone.
    if !real && b.claim.invariants.len() == 1 && b.euler.theorem != registry::ERFC_SERIES {
        for m in [2u64, 3, 4, 6] {
            let f = forge::rebuild_cyclic(b, m);
            out.consistent(
                "cyclic-rebuilt",
                format!("times-{m}"),
                "class-number-not-confirmed",
                &f,
            );
        }
    }
    // D > 0: ε^(2^k) with R* = 2^k R, alone and with a sublattice.
    if real {
        for k in 1..=4u32 {
            let mut f = b.clone();
            unit_power_of_two(&mut f, k);
            out.consistent("unit-power", format!("2^{k}"), code, &f);
        }
        if r >= 1 {
            let mut f = b.clone();
            unit_power_of_two(&mut f, 1);
            let mut e = identity_i64(r);
            e[0][0] = 2;
            left_multiply(&mut f, &e);
            recompute_smith_and_claim(&mut f).expect("nonsingular");
            out.consistent("unit-power", "2-and-sublattice-2", code, &f);
        }
    }
    // The factor base cut at a lower bound, the lattice made to fit.
    factor_base_truncated(out, b);
    // An honest Euler trace of another discriminant.
    if b.euler.theorem == registry::BELABAS_FRIEDMAN {
        let me = forge::discriminant(b);
        let mut picked = 0;
        for donor in donors {
            if donor.euler.theorem != registry::BELABAS_FRIEDMAN || donor.euler.x < b.euler.x {
                continue;
            }
            let dd = forge::discriminant(donor);
            let last = donor.euler.checkpoints.last().map_or(0, |c| c.limit);
            let (me64, dd64) = (me.to_i64().expect("small"), dd.to_i64().expect("small"));
            let differs = (2..last as i64).any(|p| {
                crate::support::is_prime_u64(p as u64)
                    && oracle::kronecker(me64, p) != oracle::kronecker(dd64, p)
            });
            let c = if differs {
                "euler-trace-mismatch"
            } else {
                "euler-interval-understated"
            };
            let mut f = b.clone();
            f.euler = donor.euler.clone();
            let stem = if dd < 0 {
                format!("minus-{}", Integer::from(-&dd))
            } else {
                format!("plus-{dd}")
            };
            out.consistent("euler-transplant", format!("from-{stem}"), c, &f);
            picked += 1;
            if picked == 3 {
                break;
            }
        }
    }
}

/// Removes the last factor-base entries (largest p) while each is
/// eliminated and used by no other elimination, and drops their
/// eliminations: a lattice that fits a smaller factor base. Refused for the
/// gap as soon as a removed p lies below the generation bound.
fn factor_base_truncated(out: &mut Out, b: &Body) {
    let abs_d = Integer::from(forge::discriminant(b).abs_ref());
    let Some(bound) = registry::generation_bound(&b.generation_theorem, &abs_d) else {
        return;
    };
    let mut f = b.clone();
    let mut removed_below = false;
    for t in 1..=4 {
        let Some(last) = f.factor_base.len().checked_sub(1) else {
            return;
        };
        let idx = last as u32;
        if f.lattice.generators.contains(&idx) {
            return;
        }
        let Some(k) = f.lattice.eliminations.iter().position(|e| e.pivot == idx) else {
            return;
        };
        let used = f
            .lattice
            .eliminations
            .iter()
            .enumerate()
            .any(|(j, e)| j != k && e.relation.entries.iter().any(|(i, _)| *i == idx));
        let in_raw = f
            .lattice
            .raw_relations
            .iter()
            .chain(f.lattice.derived_relations.iter())
            .flatten()
            .any(|r| r.entries.iter().any(|(i, _)| *i == idx));
        if used || in_raw {
            return;
        }
        let el = f.lattice.eliminations.remove(k);
        // an elimination by combination names raw relations that mention
        // the removed index: then the cut does not fit; stop
        if !matches!(el.relation.witness, Witness::FormReduction) {
            return;
        }
        let PrimeIdeal::QuadraticForm { p, .. } = f.factor_base.pop().expect("nonempty");
        removed_below |= p <= bound;
        if removed_below {
            out.consistent(
                "factor-base-cut",
                format!("last-{t}"),
                "factor-base-gap",
                &f,
            );
        }
    }
}

// ================================================================ catalogue

/// The single forgeries of `forge::CATALOGUE` whose base is this golden
/// certificate.
fn catalogue(out: &mut Out, b: &Body) {
    let d = forge::discriminant(b);
    for f in forge::CATALOGUE {
        if d != f.base || b.euler.theorem == registry::ERFC_SERIES {
            continue;
        }
        out.push("catalogue", f.name, f.code, f.layer, (f.apply)(b));
    }
}

// ================================================================ order witnesses

fn witness_families(out: &mut Out, w: &WitnessBody) {
    let wrap = |w: &WitnessBody| enc_doc(&Document::OrderWitness(Box::new(w.clone())));
    let ml = Layer::Mathematics;
    let d = match &w.order {
        Order::Quadratic { discriminant } => discriminant.to_i64().expect("small"),
        Order::Polynomial { .. } => unreachable!(),
    };
    let h = w.class_number.to_u64().expect("small h");
    // The claimed H and its factorisation.
    for (name, x) in [("plus-1", h + 1), ("doubled", 2 * h), ("minus-1", h - 1)] {
        let mut f = w.clone();
        f.class_number = Integer::from(x);
        out.push(
            "witness-h",
            name,
            "order-witness-factorisation",
            ml,
            wrap(&f),
        );
    }
    for i in 0..w.h_factors.len() {
        let mut f = w.clone();
        f.h_factors[i].exponent += 1;
        out.push(
            "witness-h",
            format!("f{i}-exponent"),
            "order-witness-factorisation",
            ml,
            wrap(&f),
        );
        let mut f = w.clone();
        f.h_factors[i].prime += 2;
        out.push(
            "witness-h",
            format!("f{i}-prime-plus-2"),
            "order-witness-factorisation",
            ml,
            wrap(&f),
        );
        let mut f = w.clone();
        f.h_factors.remove(i);
        out.push(
            "witness-h",
            format!("f{i}-dropped"),
            "order-witness-factorisation",
            ml,
            wrap(&f),
        );
    }
    // The witness form.
    let g = &w.generators[0].form;
    let gf = (
        g.a.to_i64().expect("small"),
        g.b.to_i64().expect("small"),
        g.c.to_i64().expect("small"),
    );
    let set_form = |f: &mut WitnessBody, o: oracle::Form| {
        f.generators[0].form = classcert_format::Form {
            a: Integer::from(o.0),
            b: Integer::from(o.1),
            c: Integer::from(o.2),
        };
    };
    for (name, o, code) in [
        (
            "unreduced",
            (gf.0, gf.1 + 2 * gf.0, gf.0 + gf.1 + gf.2),
            "order-witness-form",
        ),
        (
            "other-discriminant",
            (gf.0, gf.1, gf.2 + 1),
            "order-witness-form",
        ),
        (
            "principal",
            oracle::principal_form(d),
            "order-witness-not-exact",
        ),
    ] {
        let mut f = w.clone();
        set_form(&mut f, o);
        out.push("witness-form", name, code, ml, wrap(&f));
    }
    // g^m for m sharing a prime with H: g^m has order H / gcd < H, so
    // g^(H/q) = 1 for some q | H.
    for (q, _) in factor_u64(h) {
        let o = opow(gf, &Integer::from(q), d);
        let mut f = w.clone();
        set_form(&mut f, o);
        out.push(
            "witness-form",
            format!("power-{q}"),
            "order-witness-not-exact",
            ml,
            wrap(&f),
        );
    }
    // A form whose order does not divide H: g^H is not principal.
    let forms = oracle::reduced_forms(d);
    let order_of = |f: oracle::Form| -> u64 {
        let mut acc = f;
        let mut n = 1;
        while !oprincipal(acc, d) {
            acc = oracle::compose_naive(acc, f, d);
            n += 1;
        }
        n
    };
    let _ = forms;
    let mut f = w.clone();
    f.generators[0].order = Integer::from(2 * h);
    out.push(
        "witness-order",
        "doubled",
        "order-witness-factorisation",
        ml,
        wrap(&f),
    );
    euler_families(out, &w.euler, &|e| {
        let mut f = w.clone();
        f.euler = e;
        wrap(&f)
    });
    maximality_families(out, &w.maximality, &Integer::from(d.unsigned_abs()), &|m| {
        let mut f = w.clone();
        f.maximality = m;
        wrap(&f)
    });
    // Consistent: a class of exact order H' < H with H' and its
    // factorisation stated correctly; only #Cl < 2H' fails.
    let mut by_order: std::collections::BTreeMap<u64, Vec<oracle::Form>> = Default::default();
    for f in oracle::reduced_forms(d) {
        let n = order_of(f);
        if n < h && n > 1 {
            let v = by_order.entry(n).or_default();
            if v.len() < 3 {
                v.push(f);
            }
        }
    }
    for (n, fs) in by_order {
        for (t, o) in fs.into_iter().enumerate() {
            let mut f = w.clone();
            f.class_number = Integer::from(n);
            f.h_factors = factor_u64(n)
                .into_iter()
                .map(|(p, e)| PrimePower {
                    prime: Integer::from(p),
                    exponent: e,
                    evidence: PrimalityEvidence::Bpsw,
                })
                .collect();
            f.generators[0].order = Integer::from(n);
            set_form(&mut f, o);
            out.push(
                "witness-smaller-order",
                format!("h{n}-{t}"),
                "class-number-not-confirmed",
                Layer::Consistent,
                wrap(&f),
            );
        }
    }
}

// ================================================================ number fields

fn field_families(out: &mut Out, b: &FieldBody) {
    let wrap = |b: &FieldBody| enc_doc(&Document::Field(Box::new(b.clone())));
    let ml = Layer::Mathematics;
    let raw = b.lattice.raw_relations.clone().unwrap_or_default();
    for (k, rel) in raw
        .iter()
        .enumerate()
        .filter(|(_, r)| !r.entries.is_empty())
        .take(6)
    {
        let mut f = b.clone();
        f.lattice.raw_relations.as_mut().expect("raw")[k].entries[0].1 += 1;
        out.push(
            "field-relation",
            format!("r{k}-valuation"),
            "relation-witness-invalid",
            ml,
            wrap(&f),
        );
        let _ = rel;
        for c in 0..2 {
            let mut f = b.clone();
            if let Witness::Coordinates { coordinates } =
                &mut f.lattice.raw_relations.as_mut().expect("raw")[k].witness
            {
                coordinates[c] += 1;
            }
            out.push(
                "field-relation",
                format!("r{k}-coordinate-{c}"),
                "relation-witness-invalid",
                ml,
                wrap(&f),
            );
        }
    }
    // the Smith form of H
    let r = b.lattice.generators.len();
    for (name, pick) in [("u", 0usize), ("v-inv", 3)] {
        for i in 0..r {
            let mut f = b.clone();
            let s = &mut f.lattice.smith;
            let m = [&mut s.u, &mut s.u_inv, &mut s.v, &mut s.v_inv];
            let m = m.into_iter().nth(pick).expect("four");
            m[i][i] += 1;
            out.push(
                "smith-transform",
                format!("{name}-{i}-{i}"),
                "smith-not-unimodular",
                ml,
                wrap(&f),
            );
        }
    }
    for i in 0..r {
        let mut f = b.clone();
        f.lattice.smith.diagonal[i] += 1;
        out.push(
            "smith-diagonal",
            format!("{i}-plus-1"),
            "smith-mismatch",
            ml,
            wrap(&f),
        );
    }
    for (name, x) in [
        ("plus-1", Integer::from(&b.claim.class_number + 1)),
        ("doubled", Integer::from(&b.claim.class_number * 2)),
        ("tripled", Integer::from(&b.claim.class_number * 3)),
    ] {
        let mut f = b.clone();
        f.claim.class_number = x;
        out.push(
            "claim-class-number",
            name,
            "class-number-mismatch",
            ml,
            wrap(&f),
        );
    }
    let mut f = b.clone();
    f.claim.invariants.push(Integer::from(2));
    out.push(
        "claim-invariants",
        "extra-2",
        "invariants-mismatch",
        ml,
        wrap(&f),
    );
    // roots of unity, roots, units, regulator
    for w in [1u32, 4, 6, 14] {
        let mut f = b.clone();
        f.units.w = w;
        out.push(
            "field-torsion",
            format!("w{w}"),
            "torsion-mismatch",
            ml,
            wrap(&f),
        );
    }
    for (k, _) in b.roots.real.iter().enumerate() {
        for s in [20u32, 40] {
            let mut f = b.clone();
            f.roots.real[k].lo.mantissa += Integer::from(1) << s;
            f.roots.real[k].hi.mantissa += Integer::from(1) << s;
            out.push(
                "field-roots",
                format!("real{k}-moved-{s}"),
                "roots-invalid",
                ml,
                wrap(&f),
            );
        }
    }
    for k in [2i64, 3, -1] {
        let mut f = b.clone();
        for (_, e) in &mut f.units.units[0] {
            *e *= k;
        }
        if k == -1 {
            // the inverse unit: the same regulator, a true certificate
            continue;
        }
        out.push(
            "field-unit",
            format!("power-{k}"),
            "regulator-mismatch",
            ml,
            wrap(&f),
        );
    }
    for kexp in [-2i64, -1, 1] {
        let mut f = b.clone();
        f.units.regulator.lo.exponent += kexp;
        f.units.regulator.hi.exponent += kexp;
        out.push(
            "field-regulator",
            format!("times-2^{kexp}"),
            "regulator-mismatch",
            ml,
            wrap(&f),
        );
    }
    let fb_below: Vec<usize> = (0..b.factor_base.len())
        .filter(|&i| b.factor_base[i].p <= 13)
        .collect();
    for i in spread(&fb_below, 4) {
        let mut f = b.clone();
        f.factor_base.remove(i);
        out.push(
            "field-factor-base",
            format!("i{i}-dropped"),
            "factor-base-gap",
            ml,
            wrap(&f),
        );
    }
    euler_families(out, &b.euler, &|e| {
        let mut f = b.clone();
        f.euler = e;
        wrap(&f)
    });
    // Consistent: u^k with the regulator multiplied by k (index k in the
    // unit group, stated correctly): only the analytic bound refuses.
    for k in [2u32, 3, 4, 5] {
        let mut f = b.clone();
        for (_, e) in &mut f.units.units[0] {
            *e *= k;
        }
        let reg = &mut f.units.regulator;
        reg.lo.mantissa *= k;
        reg.hi.mantissa *= k;
        out.push(
            "field-unit-power",
            format!("{k}"),
            "class-number-regulator-not-confirmed",
            Layer::Consistent,
            wrap(&f),
        );
    }
}

/// Checks used by the corpus test: the lattice identity of a consistent
/// forgery (`U H V = diag`, `U U' = V V' = I`).
pub fn smith_identities_hold(l: &Lattice) -> bool {
    let n = l.relations.len();
    let mul = |a: &[Vec<Integer>], b: &[Vec<Integer>]| -> Vec<Vec<Integer>> {
        (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| {
                        let mut s = Integer::new();
                        for k in 0..n {
                            s += Integer::from(&a[i][k] * &b[k][j]);
                        }
                        s
                    })
                    .collect()
            })
            .collect()
    };
    let s = &l.smith;
    let id = |m: &[Vec<Integer>]| {
        m.iter()
            .enumerate()
            .all(|(i, r)| r.iter().enumerate().all(|(j, x)| *x == i32::from(i == j)))
    };
    let uhv = mul(&mul(&s.u, &l.relations), &s.v);
    id(&mul(&s.u, &s.u_inv))
        && id(&mul(&s.v, &s.v_inv))
        && uhv.iter().enumerate().all(|(i, r)| {
            r.iter().enumerate().all(|(j, x)| {
                if i == j {
                    *x == s.diagonal[i]
                } else {
                    x.is_zero()
                }
            })
        })
}

/// The text of `vectors/mutations/expected.txt` for `vectors`.
pub fn expected_txt(vectors: &[Vector]) -> String {
    let mut s = String::from(
        "# The soundness corpus: forged certificates and how classcert-verify must refuse each.\n\
         # Written by `cargo run --release -p classcert-tests --bin forge-vectors`\n\
         # (tests/src/corpus.rs); never edit by hand. See vectors/README.md.\n\
         #\n\
         # columns, separated by one space:\n\
         #   file    the file in this directory: <base>--<family>--<variant>.cert\n\
         #   reason  the reason code the verifier must give (README, \"Reason codes\")\n\
         #   layer   bytes: the file's bytes are damaged (encoding, length, digest);\n\
         #           mathematics: canonical CBOR, right digest, one thing wrong;\n\
         #           consistent: as mathematics, and every matrix identity holds\n\
         #   base    the golden certificate it starts from (vectors/golden*/<base>.cert)\n",
    );
    for v in vectors.iter().filter(|v| v.known.is_none()) {
        s.push_str(&format!(
            "{} {} {} {}\n",
            v.file,
            v.code,
            v.layer.word(),
            v.base
        ));
    }
    s
}

/// The text of `vectors/mutations/known-deviations.txt`.
pub fn known_txt(vectors: &[Vector]) -> String {
    let mut s = String::from(
        "# Forgeries the verifier does not refuse as the design asks: reported by the corpus\n\
         # test, never hidden. Written by forge-vectors with expected.txt; see vectors/README.md.\n\
         # columns: file  reason-the-design-asks-for  what-the-verifier-says-today\n",
    );
    for v in vectors {
        if let Some(observed) = v.known {
            s.push_str(&format!("{} {} {observed}\n", v.file, v.code));
        }
    }
    s
}
