//! `classcert show`: what a certificate claims, read without checking it.

use crate::units::{self, Factor};
use classcert_format::json::Json;
use classcert_format::{Body, CyclicGenerator, Decoded, Order, PrimeIdeal};
use classcert_verifier::math::Interval;
use classcert_verifier::registry;
use classcert_verifier::report::{self, json as report_json};
use classcert_verifier::report::{decimal, invariants_text, GeneratorView};
use classcert_verifier::Method;
use rug::Integer;

/// The JSON vocabulary this output follows (shared with the verifier).
pub use classcert_verifier::report::json::SCHEMA;

/// Budget (Pollard rho steps) for factoring `|D|` to settle the conductor
/// of a certificate that does not claim maximality.
const CONDUCTOR_FACTOR_BUDGET: u64 = 1_000_000;

/// How to write mathematics in text: with `ε`, `·` and `√`-free ASCII
/// fallbacks (`eps`, `*`) for terminals that are not UTF-8 capable.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Style {
    Unicode,
    Ascii,
}

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
    let d = &quadratic_d(&b.order);
    let (a, y) = unit_ab(b)?;
    let sigma = u32::from(d.is_odd());
    Some(((a - Integer::from(&y * sigma)) >> 1u32, y))
}

/// The stated fundamental unit (of the two signs, the one > 0), expanded when it is small
/// enough: `(a, b)` with `ε = (a + b sqrt(D))/2`.
pub fn unit_ab(b: &Body) -> Option<(Integer, Integer)> {
    let d = &quadratic_d(&b.order);
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
    Some((big_x, big_y))
}

/// The stated regulator in decimal, and about how many decimal digits the
/// unit has.
fn regulator_parts(b: &Body) -> Option<(String, u64)> {
    let u = b.units.as_ref()?;
    let r = Interval::from_bounds(&u.regulator)?;
    let digits = (r.hi.to_f64() / std::f64::consts::LN_10).ceil() as u64;
    Some((decimal(&r), digits))
}

/// What is known of the order `O_D = Z + f O_K`: the conductor `f` and the
/// field discriminant `d_K = D / f^2`, exactly when `|D|` is factored (the
/// certificate's maximality claim, or factoring it now), else a part of
/// `f` (the conductor primes the certificate states).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum OrderFacts {
    /// `f` and `d_K`, and whether they come from the certificate itself.
    Exact {
        conductor: Integer,
        field_discriminant: Integer,
        stated: bool,
    },
    /// `f` is a multiple of this (the rest of `|D|` was not factored).
    MultipleOf(Integer),
}

/// The conductor of `D` from a complete factorisation of `|D|`: divide out
/// `p^2` while the quotient is still a discriminant (`≡ 0, 1 mod 4`).
pub fn conductor_from_factors(d: &Integer, primes: &[Integer]) -> (Integer, Integer) {
    let mut f = Integer::from(1);
    let mut dk = d.clone();
    for p in primes {
        let p2 = Integer::from(p.square_ref());
        while dk.is_divisible(&p2) {
            let q = Integer::from(&dk / &p2);
            if !matches!(q.mod_u(4), 0 | 1) {
                break;
            }
            dk = q;
            f *= p;
        }
    }
    (f, dk)
}

pub fn order_facts(
    d: &Integer,
    maximality: Option<&[classcert_format::PrimePower]>,
    conductor_small: &[(u64, u32)],
) -> OrderFacts {
    if maximality.is_some() {
        return OrderFacts::Exact {
            conductor: Integer::from(1),
            field_discriminant: d.clone(),
            stated: true,
        };
    }
    let abs = Integer::from(d.abs_ref());
    if let Some(fac) = crate::factor::factor(&abs, CONDUCTOR_FACTOR_BUDGET) {
        let primes: Vec<Integer> = fac.into_iter().map(|(p, _)| p).collect();
        let (conductor, field_discriminant) = conductor_from_factors(d, &primes);
        return OrderFacts::Exact {
            conductor,
            field_discriminant,
            stated: false,
        };
    }
    let mut f = Integer::from(1);
    for (p, e) in conductor_small {
        f *= rug::ops::Pow::pow(Integer::from(*p), *e);
    }
    OrderFacts::MultipleOf(f)
}

fn order_lines(s: &mut String, facts: &OrderFacts) {
    match facts {
        OrderFacts::Exact {
            conductor,
            field_discriminant,
            stated,
        } => {
            if *conductor == 1 {
                s.push_str("  conductor      1 (the maximal order)\n");
            } else {
                s.push_str(&format!(
                    "  conductor      f = {conductor}, field discriminant d_K = D/f^2 = {field_discriminant}{}\n",
                    if *stated { "" } else { " (from factoring |D| now; the certificate does not claim it)" }
                ));
            }
        }
        OrderFacts::MultipleOf(f) if *f == 1 => s.push_str(
            "  conductor      not known (|D| could not be factored; no small square factor)\n",
        ),
        OrderFacts::MultipleOf(f) => s.push_str(&format!(
            "  conductor      a multiple of {f} (|D| could not be factored to settle it)\n"
        )),
    }
}

fn order_json(out: &mut Vec<(&'static str, Json)>, facts: &OrderFacts) {
    if let OrderFacts::Exact {
        conductor,
        field_discriminant,
        ..
    } = facts
    {
        out.push((
            "field_discriminant",
            Json::str(field_discriminant.to_string()),
        ));
        out.push(("conductor", Json::str(conductor.to_string())));
    }
}

/// `(p, (b + sqrt(D))/2)^e · …` for a generator given by prime ideals.
fn ideals_text(f: &[(u64, u64, Integer)], style: Style) -> String {
    report::ideals_text(
        f,
        match style {
            Style::Unicode => " · ",
            Style::Ascii => " * ",
        },
    )
}

fn generator_line(view: &GeneratorView, order: &Integer, style: Style) -> String {
    match view {
        GeneratorView::Form(a, b, c) => {
            format!("  generator      the class of the form ({a}, {b}, {c}), of order {order}\n")
        }
        GeneratorView::Ideals(f) => format!(
            "  generator      the prime ideal product {}, of order {order}\n",
            ideals_text(f, style)
        ),
        GeneratorView::FieldIdeals(_) => format!(
            "  generator      {}, of order {order}\n",
            classcert_verifier::report::generator_text(view)
        ),
    }
}

/// `ε = (a + b·sqrt(D))/2` (ASCII: `eps = (a + b*sqrt(D))/2`).
pub fn unit_text(a: &Integer, b: &Integer, style: Style) -> String {
    let (eps, times) = match style {
        Style::Unicode => ("ε", "·"),
        Style::Ascii => ("eps", "*"),
    };
    let sign = if *b < 0 { "-" } else { "+" };
    let abs_b = Integer::from(b.abs_ref());
    let coefficient = if abs_b == 1 {
        String::new()
    } else {
        format!("{abs_b}{times}")
    };
    format!("{eps} = ({a} {sign} {coefficient}sqrt(D))/2")
}

/// Roots of unity in the order of discriminant `d`.
fn roots_of_unity(d: &Integer) -> u32 {
    if *d == -3 {
        6
    } else if *d == -4 {
        4
    } else {
        2
    }
}

/// The analytic method a trace names, in the shared vocabulary.
fn analytic_json(e: &classcert_format::EulerTrace) -> Json {
    report_json::analytic(if e.theorem == registry::ERFC_SERIES {
        Method::Series { terms: e.x }
    } else {
        Method::EulerProduct { x: e.x }
    })
}

fn analytic_text(e: &classcert_format::EulerTrace) -> String {
    if e.theorem == registry::ERFC_SERIES {
        format!(
            "  class number   from the series, {} terms ({})\n",
            e.x, e.theorem
        )
    } else {
        format!("  Euler product  X = {} ({})\n", e.x, e.theorem)
    }
}

fn producer_json(p: &classcert_format::Producer) -> Json {
    Json::obj(vec![
        ("tool", Json::str(p.tool.clone())),
        ("version", Json::str(p.version.clone())),
        ("seed", Json::Num(p.seed.to_string())),
    ])
}

fn strings(v: &[Integer]) -> Json {
    Json::Arr(v.iter().map(|x| Json::str(x.to_string())).collect())
}

/// `show` for a full certificate, in Unicode.
pub fn text(c: &Decoded) -> String {
    text_styled(c, Style::Unicode)
}

pub fn text_styled(c: &Decoded, style: Style) -> String {
    let b = &c.body;
    let discriminant = &quadratic_d(&b.order);
    let mut s = String::new();
    s.push_str("classcert certificate (contents as stated; not checked: run classcert-verify)\n");
    header_lines(
        &mut s,
        &c.id_hex(),
        &b.producer,
        discriminant,
        &b.maximality,
        &b.conductor_small,
    );
    s.push_str(&format!(
        "  class group    {}  (class number {})\n",
        invariants_text(&b.claim.invariants),
        b.claim.class_number
    ));
    for (g, d) in b.claim.generators.iter().zip(b.claim.invariants.iter()) {
        s.push_str(&generator_line(&generator_view(b, g), d, style));
    }
    if let (Some(u), Some((reg, digits))) = (&b.units, regulator_parts(b)) {
        s.push_str(&format!("  regulator      {reg}\n"));
        match unit_ab(b) {
            Some((x, y)) => s.push_str(&format!(
                "  unit           {}, of norm {}\n",
                unit_text(&x, &y, style),
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
    // D > 0: what the combinations rest on (D < 0 has neither list)
    let relations = match (&b.lattice.raw_relations, &b.lattice.derived_relations) {
        (None, None) => String::new(),
        (raw, derived) => format!(
            ", raw relations: {}, derived relations: {}",
            raw.as_ref().map_or(0, Vec::len),
            derived.as_ref().map_or(0, Vec::len)
        ),
    };
    s.push_str(&format!(
        "  lattice        generator ideals: {}, eliminations: {}{relations}\n",
        b.lattice.generators.len(),
        b.lattice.eliminations.len()
    ));
    s.push_str(&analytic_text(&b.euler));
    s
}

/// `show --json` for a full certificate (kind "claims" of the shared
/// vocabulary).
pub fn json(c: &Decoded) -> Json {
    let b = &c.body;
    let discriminant = &quadratic_d(&b.order);
    let abs_d = Integer::from(discriminant.abs_ref());
    let mut out = vec![
        ("schema", Json::str(SCHEMA)),
        ("kind", Json::str("claims")),
        ("certificate_sha256", Json::str(c.id_hex())),
        ("certificate_kind", Json::str("relations")),
        ("discriminant", Json::str(discriminant.to_string())),
        ("maximal", Json::Bool(b.maximality.is_some())),
    ];
    order_json(
        &mut out,
        &order_facts(discriminant, b.maximality.as_deref(), &b.conductor_small),
    );
    out.push(("class_number", Json::str(b.claim.class_number.to_string())));
    out.push(("invariants", strings(&b.claim.invariants)));
    out.push((
        "generators",
        Json::Arr(
            b.claim
                .generators
                .iter()
                .zip(b.claim.invariants.iter())
                .map(|(g, d)| report_json::generator(Some(d), &generator_view(b, g)))
                .collect(),
        ),
    ));
    if let (Some(u), Some((reg, _))) = (&b.units, regulator_parts(b)) {
        let mut unit = vec![
            ("norm", Json::str(u.norm.to_string())),
            ("regulator", Json::str(reg)),
            ("compact_steps", Json::Num(u.steps.len().to_string())),
        ];
        if let Some((a, bb)) = unit_ab(b) {
            unit.push(("a", Json::str(a.to_string())));
            unit.push(("b", Json::str(bb.to_string())));
        }
        out.push(("unit", Json::obj(unit)));
    }
    out.push(("analytic", analytic_json(&b.euler)));
    if let Some(bound) = registry::generation_bound(&b.generation_theorem, &abs_d) {
        out.push(("generation_bound", Json::Num(bound.to_string())));
    }
    out.push(("w", Json::Num(roots_of_unity(discriminant).to_string())));
    out.push(("producer", producer_json(&b.producer)));
    Json::obj(out)
}

/// The lines both kinds of certificate start with: id, producer, order,
/// maximality claim, conductor.
fn header_lines(
    s: &mut String,
    id_hex: &str,
    producer: &classcert_format::Producer,
    discriminant: &Integer,
    maximality: &Option<Vec<classcert_format::PrimePower>>,
    conductor_small: &[(u64, u32)],
) {
    s.push_str(&format!("  id             {id_hex}\n"));
    s.push_str(&format!(
        "  produced by    {} {} (seed {})\n",
        producer.tool, producer.version, producer.seed
    ));
    s.push_str(&format!("  order          quadratic, D = {discriminant}\n"));
    match maximality {
        Some(f) => s.push_str(&format!(
            "  maximality     claimed: |D| = {}\n",
            factorisation_text(f)
        )),
        None => s.push_str("  maximality     not claimed\n"),
    }
    order_lines(
        s,
        &order_facts(discriminant, maximality.as_deref(), conductor_small),
    );
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
    let discriminant = &quadratic_d(&w.order);
    let mut s = String::new();
    s.push_str("classcert order-witness certificate (contents as stated; not checked: run classcert-verify)\n");
    header_lines(
        &mut s,
        id_hex,
        &w.producer,
        discriminant,
        &w.maximality,
        &w.conductor_small,
    );
    s.push_str(&format!(
        "  claim          #Cl = H = {} = {}\n",
        w.class_number,
        factorisation_text(&w.h_factors)
    ));
    for g in &w.generators {
        s.push_str(&format!(
            "  witness        the class of the form ({}, {}, {}), of exact order {}\n",
            g.form.a, g.form.b, g.form.c, g.order
        ));
    }
    s.push_str(&analytic_text(&w.euler));
    s
}

/// `show --json` for an order-witness certificate.
pub fn witness_json(w: &classcert_format::WitnessBody, id_hex: &str) -> Json {
    let discriminant = &quadratic_d(&w.order);
    let mut out = vec![
        ("schema", Json::str(SCHEMA)),
        ("kind", Json::str("claims")),
        ("certificate_sha256", Json::str(id_hex)),
        ("certificate_kind", Json::str("order-witness")),
        ("discriminant", Json::str(discriminant.to_string())),
        ("maximal", Json::Bool(w.maximality.is_some())),
    ];
    order_json(
        &mut out,
        &order_facts(discriminant, w.maximality.as_deref(), &w.conductor_small),
    );
    let invariants: Vec<Integer> = w.generators.iter().map(|g| g.order.clone()).collect();
    out.push(("class_number", Json::str(w.class_number.to_string())));
    out.push(("invariants", strings(&invariants)));
    out.push((
        "generators",
        Json::Arr(
            w.generators
                .iter()
                .map(|g| {
                    report_json::generator(
                        Some(&g.order),
                        &GeneratorView::Form(g.form.a.clone(), g.form.b.clone(), g.form.c.clone()),
                    )
                })
                .collect(),
        ),
    ));
    out.push(("analytic", analytic_json(&w.euler)));
    out.push(("w", Json::Num(roots_of_unity(discriminant).to_string())));
    out.push(("producer", producer_json(&w.producer)));
    Json::obj(out)
}

/// `D` of a quadratic order. A decoded [`Body`] or order witness always
/// has one (the decoder reads a body whose order is a polynomial as a
/// number-field certificate); 0 stands in for anything else.
fn quadratic_d(o: &Order) -> Integer {
    match o {
        Order::Quadratic { discriminant } => discriminant.clone(),
        Order::Polynomial { .. } => Integer::new(),
    }
}

/// `show` for a number-field certificate: what it states, unchecked.
pub fn field_text(b: &classcert_format::FieldBody, id_hex: &str) -> String {
    let mut s = String::new();
    s.push_str("classcert number-field certificate (contents as stated; not checked: run classcert-verify)\n");
    s.push_str(&format!("  certificate    {id_hex}\n"));
    if let Order::Polynomial {
        polynomial,
        basis,
        denominator,
    } = &b.order
    {
        s.push_str(&format!(
            "  field          Q[x]/(F), F = {}\n",
            classcert_verifier::report::polynomial_text(polynomial)
        ));
        let rows: Vec<String> = basis
            .iter()
            .map(|r| {
                format!(
                    "[{}]",
                    r.iter()
                        .map(|c| c.to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                )
            })
            .collect();
        s.push_str(&format!(
            "  order basis    ({}) / {denominator} over 1, θ, θ², …\n",
            rows.join(", ")
        ));
    }
    s.push_str(&format!(
        "  maximal order  {}\n",
        if b.maximality.is_some() {
            "claimed, with the factorisation of |disc(O)|"
        } else {
            "not claimed"
        }
    ));
    s.push_str(&format!(
        "  claim          class number {}, invariants {}\n",
        b.claim.class_number,
        classcert_verifier::report::invariants_text(&b.claim.invariants)
    ));
    s.push_str(&format!(
        "  factor base    {} prime ideals; {} raw relations\n",
        b.factor_base.len(),
        b.lattice.raw_relations.as_ref().map_or(0, Vec::len)
    ));
    s.push_str(&format!(
        "  units          w = {}, {} units of infinite order as power products\n",
        b.units.w,
        b.units.units.len()
    ));
    s.push_str(&analytic_text(&b.euler));
    s
}

/// `show --json` for a number-field certificate.
pub fn field_json(b: &classcert_format::FieldBody, id_hex: &str) -> Json {
    let mut out = vec![
        ("schema", Json::str(SCHEMA)),
        ("kind", Json::str("claims")),
        ("certificate_sha256", Json::str(id_hex)),
        ("certificate_kind", Json::str("relations")),
    ];
    if let Order::Polynomial { polynomial, .. } = &b.order {
        out.push((
            "polynomial",
            Json::str(classcert_verifier::report::polynomial_text(polynomial)),
        ));
        out.push((
            "degree",
            Json::Num(polynomial.len().saturating_sub(1).to_string()),
        ));
    }
    out.push(("maximal", Json::Bool(b.maximality.is_some())));
    out.push(("class_number", Json::str(b.claim.class_number.to_string())));
    out.push(("invariants", strings(&b.claim.invariants)));
    out.push(("w", Json::Num(b.units.w.to_string())));
    out.push(("unit_rank", Json::Num(b.units.units.len().to_string())));
    out.push(("analytic", analytic_json(&b.euler)));
    out.push(("producer", producer_json(&b.producer)));
    Json::obj(out)
}

/// An error in the shared vocabulary (kind "error"), for `--json` callers.
pub fn error_json(reason: &str, detail: &str) -> Json {
    report_json::error(reason, detail)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conductor_of_non_maximal_discriminants() {
        // -300 = 10^2 * (-3); -16 = 2^2 * (-4); 5 * 3^2 = 45;
        // -4 * 3 = -12 = 2^2 * (-3) (common practice: d_K = D/f^2 is the
        // largest such quotient that is still a discriminant).
        let cases: [(i64, &[u64], i64, i64); 5] = [
            (-300, &[2, 3, 5], 10, -3),
            (-16, &[2], 2, -4),
            (45, &[3, 5], 3, 5),
            (-12, &[2, 3], 2, -3),
            (-20, &[2, 5], 1, -20),
        ];
        for (d, primes, f, dk) in cases {
            let primes: Vec<Integer> = primes.iter().map(|&p| Integer::from(p)).collect();
            let (cf, cdk) = conductor_from_factors(&Integer::from(d), &primes);
            assert_eq!((cf, cdk), (Integer::from(f), Integer::from(dk)), "D = {d}");
        }
    }

    #[test]
    fn unit_is_written_with_the_basis() {
        let a = Integer::from(160);
        let b = Integer::from(9);
        assert_eq!(unit_text(&a, &b, Style::Ascii), "eps = (160 + 9*sqrt(D))/2");
        assert_eq!(unit_text(&a, &b, Style::Unicode), "ε = (160 + 9·sqrt(D))/2");
        assert_eq!(
            unit_text(&Integer::from(1), &Integer::from(-1), Style::Ascii),
            "eps = (1 - sqrt(D))/2"
        );
    }
}
