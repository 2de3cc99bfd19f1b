//! `classcert show`: what a certificate claims, read without checking it.

use classcert_format::json::Json;
use classcert_format::{Decoded, Order, PrimeIdeal};
use classcert_verifier::verdict::invariants_text;

pub fn text(c: &Decoded) -> String {
    let b = &c.body;
    let Order::Quadratic { discriminant } = &b.order;
    let mut s = String::new();
    s.push_str("classcert certificate (contents as stated; not checked: run classcert-verify)\n");
    s.push_str(&format!("  id             {}\n", c.id_hex()));
    s.push_str(&format!(
        "  produced by    {} {} (seed {})\n",
        b.producer.tool, b.producer.version, b.producer.seed
    ));
    s.push_str(&format!("  order          quadratic, D = {discriminant}\n"));
    match &b.maximality {
        Some(f) => {
            let parts: Vec<String> = f
                .iter()
                .map(|pp| {
                    if pp.exponent == 1 {
                        pp.prime.to_string()
                    } else {
                        format!("{}^{}", pp.prime, pp.exponent)
                    }
                })
                .collect();
            s.push_str(&format!(
                "  maximality     claimed: |D| = {}\n",
                parts.join(" * ")
            ));
        }
        None => s.push_str("  maximality     not claimed\n"),
    }
    if !b.conductor_small.is_empty() {
        let parts: Vec<String> = b
            .conductor_small
            .iter()
            .map(|(p, e)| format!("{p}^{e}"))
            .collect();
        s.push_str(&format!(
            "  conductor      divisible by {}\n",
            parts.join(" * ")
        ));
    }
    s.push_str(&format!(
        "  class group    {}  (class number {})\n",
        invariants_text(&b.claim.invariants),
        b.claim.class_number
    ));
    for (g, d) in b.claim.generators.iter().zip(b.claim.invariants.iter()) {
        s.push_str(&format!(
            "  generator      ({}, {}, {}) of order {d}\n",
            g.form.a, g.form.b, g.form.c
        ));
    }
    let maxp = b
        .factor_base
        .last()
        .map(|PrimeIdeal::QuadraticForm { p, .. }| *p)
        .unwrap_or(0);
    s.push_str(&format!(
        "  factor base    {} prime ideals, p <= {maxp} ({})\n",
        b.factor_base.len(),
        b.generation_theorem
    ));
    s.push_str(&format!(
        "  lattice        generator ideals: {}, eliminations: {}\n",
        b.lattice.generators.len(),
        b.lattice.eliminations.len()
    ));
    s.push_str(&format!(
        "  Euler product  X = {} ({})\n",
        b.euler.x, b.euler.theorem
    ));
    s
}

pub fn json(c: &Decoded) -> Json {
    let b = &c.body;
    let Order::Quadratic { discriminant } = &b.order;
    let num = |x: &rug::Integer| Json::str(x.to_string());
    Json::obj(vec![
        ("certificate_sha256", Json::str(c.id_hex())),
        ("checked", Json::Bool(false)),
        ("tool", Json::str(b.producer.tool.clone())),
        ("tool_version", Json::str(b.producer.version.clone())),
        ("seed", Json::Num(b.producer.seed.to_string())),
        ("discriminant", num(discriminant)),
        ("class_number", num(&b.claim.class_number)),
        (
            "invariants",
            Json::Arr(b.claim.invariants.iter().map(num).collect()),
        ),
        (
            "generators",
            Json::Arr(
                b.claim
                    .generators
                    .iter()
                    .map(|g| Json::Arr(vec![num(&g.form.a), num(&g.form.b), num(&g.form.c)]))
                    .collect(),
            ),
        ),
        ("maximality_claimed", Json::Bool(b.maximality.is_some())),
        (
            "conductor_small",
            Json::Arr(
                b.conductor_small
                    .iter()
                    .map(|(p, e)| {
                        Json::Arr(vec![Json::Num(p.to_string()), Json::Num(e.to_string())])
                    })
                    .collect(),
            ),
        ),
        (
            "generation_theorem",
            Json::str(b.generation_theorem.clone()),
        ),
        (
            "factor_base_size",
            Json::Num(b.factor_base.len().to_string()),
        ),
        (
            "generator_ideals",
            Json::Num(b.lattice.generators.len().to_string()),
        ),
        (
            "eliminations",
            Json::Num(b.lattice.eliminations.len().to_string()),
        ),
        ("euler_x", Json::Num(b.euler.x.to_string())),
    ])
}
