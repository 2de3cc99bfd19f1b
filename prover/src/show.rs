//! `classcert show`: what a certificate claims, read without checking it.

use crate::units::{self, Factor};
use classcert_format::json::Json;
use classcert_format::{Body, CyclicGenerator, Decoded, Order, PrimeIdeal};
use classcert_verifier::math::Interval;
use classcert_verifier::report::{decimal, generator_text, invariants_text, GeneratorView};
use rug::Integer;

/// Units with at most this many digits are printed in full.
const MAX_UNIT_DIGITS: u32 = 200;

/// A generator as stated: its reduced form (`D < 0`) or its ideals.
fn generator_view(b: &Body, g: &CyclicGenerator) -> GeneratorView {
    if let Some(f) = &g.form {
        return GeneratorView::Form(f.a.clone(), f.b.clone(), f.c.clone());
    }
    let mut out = Vec::new();
    for (gi, e) in b.lattice.generators.iter().zip(g.exponents.iter()) {
        if let (false, Some(PrimeIdeal::QuadraticForm { p, b })) =
            (e.is_zero(), b.factor_base.get(*gi as usize))
        {
            out.push((*p, *b, e.clone()));
        }
    }
    GeneratorView::Ideals(out)
}

/// The stated fundamental unit, expanded when it is small enough:
/// `(x, y)` with `ε = x + y ω`, `ω = (σ + sqrt D)/2`, `σ = D mod 2`.
pub fn unit_coordinates(b: &Body) -> Option<(Integer, Integer)> {
    let Order::Quadratic { discriminant: d } = &b.order;
    let units = b.units.as_ref()?;
    // ε = ∏ β_j^{2^{l-j}}
    let l = units.steps.len();
    let factors: Vec<Factor> = units
        .steps
        .iter()
        .map(|t| Factor {
            x: t.x.clone(),
            y: t.y.clone(),
            s: t.s.clone(),
        })
        .collect();
    let terms: Vec<(usize, Integer)> = (0..l)
        .map(|j| Some((j, Integer::from(1) << u32::try_from(l - 1 - j).ok()?)))
        .collect::<Option<Vec<_>>>()?;
    let (mut big_x, mut big_y) = units::expand(d, &factors, &terms, MAX_UNIT_DIGITS)?;
    // -ε is a fundamental unit too; print the one that is > 0
    let x_dominates = Integer::from(big_x.square_ref()) > Integer::from(big_y.square_ref()) * d;
    let negative = if x_dominates { big_x < 0 } else { big_y < 0 };
    if negative {
        big_x = -big_x;
        big_y = -big_y;
    }
    let sigma = u32::from(d.is_odd());
    let x = (big_x - Integer::from(&big_y * sigma)) >> 1u32;
    Some((x, big_y))
}

/// The stated regulator in decimal, and about how many decimal digits the
/// unit has.
fn regulator_parts(b: &Body) -> Option<(String, u64)> {
    let u = b.units.as_ref()?;
    let r = Interval::from_bounds(&u.regulator)?;
    let digits = (r.hi.to_f64() / std::f64::consts::LN_10).ceil() as u64;
    Some((decimal(&r), digits))
}

fn omega_text(d: &Integer) -> String {
    if d.is_odd() {
        format!("(1 + sqrt {d})/2")
    } else {
        format!("sqrt {d}/2")
    }
}

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
            s.push_str(&format!(
                "  maximality     claimed: |D| = {}\n",
                factorisation_text(f)
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
            "  generator      {} of order {d}\n",
            generator_text(&generator_view(b, g))
        ));
    }
    if let (Some(u), Some((reg, digits))) = (&b.units, regulator_parts(b)) {
        s.push_str(&format!("  regulator      {reg}\n"));
        match unit_coordinates(b) {
            Some((x, y)) => s.push_str(&format!(
                "  unit           {x} {} {} w, w = {}, of norm {}\n",
                if y < 0 { "-" } else { "+" },
                Integer::from(y.abs_ref()),
                omega_text(discriminant),
                u.norm
            )),
            None => s.push_str(&format!(
                "  unit           of norm {}, about {digits} digits: in compact representation of {} step{}\n",
                u.norm,
                u.steps.len(),
                if u.steps.len() == 1 { "" } else { "s" }
            )),
        }
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
    let mut out = vec![
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
                    .map(|g| {
                        classcert_verifier::report::json::generator(None, &generator_view(b, g))
                    })
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
    ];
    if let (Some(u), Some((reg, digits))) = (&b.units, regulator_parts(b)) {
        out.push(("regulator", Json::str(reg)));
        out.push(("unit_norm", Json::Num(u.norm.to_string())));
        out.push(("unit_compact_length", Json::Num(u.steps.len().to_string())));
        out.push(("unit_digits", Json::Num(digits.to_string())));
        out.push((
            "unit",
            match unit_coordinates(b) {
                Some((x, y)) => Json::Arr(vec![num(&x), num(&y)]),
                None => Json::Null,
            },
        ));
    }
    Json::obj(out)
}

/// `p1^e1 * p2 * …`, or `1`.
fn factorisation_text(f: &[classcert_format::PrimePower]) -> String {
    if f.is_empty() {
        return "1".into();
    }
    f.iter()
        .map(|pp| {
            if pp.exponent == 1 {
                pp.prime.to_string()
            } else {
                format!("{}^{}", pp.prime, pp.exponent)
            }
        })
        .collect::<Vec<_>>()
        .join(" * ")
}

/// `show` for an order-witness certificate.
pub fn witness_text(w: &classcert_format::WitnessBody, id_hex: &str) -> String {
    let Order::Quadratic { discriminant } = &w.order;
    let mut s = String::new();
    s.push_str("classcert order-witness certificate (contents as stated; not checked: run classcert-verify)\n");
    s.push_str(&format!("  id             {id_hex}\n"));
    s.push_str(&format!(
        "  produced by    {} {} (seed {})\n",
        w.producer.tool, w.producer.version, w.producer.seed
    ));
    s.push_str(&format!("  order          quadratic, D = {discriminant}\n"));
    s.push_str(&format!(
        "  maximality     {}\n",
        if w.maximality.is_some() {
            "claimed"
        } else {
            "not claimed"
        }
    ));
    s.push_str(&format!(
        "  claim          #Cl = H = {} = {}\n",
        w.class_number,
        factorisation_text(&w.h_factors)
    ));
    for g in &w.generators {
        s.push_str(&format!(
            "  witness        ({}, {}, {}) of exact order {}\n",
            g.form.a, g.form.b, g.form.c, g.order
        ));
    }
    s.push_str(&format!(
        "  Euler product  X = {} ({})\n",
        w.euler.x, w.euler.theorem
    ));
    s
}
