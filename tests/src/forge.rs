//! Forged certificates: each [`Forgery`] starts from an honest body, breaks
//! one thing, and names the reason code the verifier must give.
//!
//! Forgeries of the mathematics are re-encoded with
//! [`classcert_format::encode_file`], so the file is canonical and its
//! digest is right: only the mathematics is wrong. Forgeries of the bytes
//! start from the honest file and damage it.
//!
//! Used by `tests/tests/soundness.rs` (on freshly proved bodies) and by the
//! corpus generator in `crate::corpus` (on the stored golden certificates,
//! as the family `catalogue`).

use crate::support::encode;
use classcert_format::{Body, Dyadic, Order, PrimeIdeal};
use classcert_verifier::math::Form;
use classcert_verifier::registry;
use rug::{Integer, Rational};

/// `Cl(-3299) ≅ Z/3 × Z/9` (from memory): a non-cyclic group, so the
/// certificate has at least two generator ideals.
pub const NONCYCLIC: i64 = -3299;
/// A cyclic class group: h(-1000003) = 105 and Cl(-1000003) ≅ Z/105 by the
/// oracle's brute force.
pub const CYCLIC: i64 = -1_000_003;
/// A non-maximal order: -300 = 10^2 · (-3), conductor 10.
pub const NONMAXIMAL: i64 = -300;
/// A real quadratic field: h = 2, R = 146.758…, so the unit's compact
/// representation has two steps.
pub const REAL: i64 = 999_997;
/// D = -4p with p = 11647055677 = 4 · 3 · 83 · 157 · 211 · 353 + 1 (prime;
/// the factors are our own choice, and (p + 1)/2 is prime so the N + 1
/// side does not factor): the maximality claim carries a Pocklington
/// proof for p.
pub const PRIME_PROOF: i64 = -46_588_222_708;
/// D = -p with p = 18544966547 = 4 · 3 · 79 · 151 · 353 · 367 - 1 (prime;
/// the factors are our own choice): the maximality claim carries
/// Morrison's N + 1 proof for p.
pub const MORRISON_PROOF: i64 = -18_544_966_547;

/// What a forgery damages.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layer {
    /// The bytes of the file (encoding, length, digest).
    Bytes,
    /// The mathematics, in a canonical file with a correct digest.
    Mathematics,
    /// As [`Layer::Mathematics`], and every identity the verifier can
    /// check locally holds too (Smith form, claim, lattice shape): only the
    /// mathematics behind them is wrong.
    Consistent,
}

impl Layer {
    /// The word in `vectors/mutations/expected.txt`.
    pub fn word(self) -> &'static str {
        match self {
            Layer::Bytes => "bytes",
            Layer::Mathematics => "mathematics",
            Layer::Consistent => "consistent",
        }
    }

    pub fn from_word(w: &str) -> Option<Layer> {
        [Layer::Bytes, Layer::Mathematics, Layer::Consistent]
            .into_iter()
            .find(|l| l.word() == w)
    }
}

#[derive(Debug)]
pub struct Forgery {
    /// File-name friendly identifier.
    pub name: &'static str,
    /// The reason code the verifier must give.
    pub code: &'static str,
    /// The discriminant of the honest certificate it starts from.
    pub base: i64,
    pub layer: Layer,
    /// One of the cases the test plan requires (the rest are extra).
    pub required: bool,
    pub what: &'static str,
    pub apply: fn(&Body) -> Vec<u8>,
}

pub fn discriminant(body: &Body) -> Integer {
    match &body.order {
        Order::Quadratic { discriminant } => discriminant.clone(),
        Order::Polynomial { .. } => panic!("a quadratic body was expected"),
    }
}

/// The reduced form of factor-base ideal `i`.
pub fn fb_form(body: &Body, i: usize) -> Form {
    let d = discriminant(body);
    let PrimeIdeal::QuadraticForm { p, b } = body.factor_base[i];
    Form::new(Integer::from(p), Integer::from(b), &d)
        .and_then(Form::reduce)
        .expect("honest factor-base entry is a form")
}

/// Whether factor-base ideal `i` is principal (its reduced form is the
/// principal form: reduced forms are unique in their class, Gauss).
pub fn fb_principal(body: &Body, i: usize) -> bool {
    fb_form(body, i) == Form::principal(&discriminant(body))
}

fn dyadic_to_rational(d: &Dyadic) -> Rational {
    let m = Rational::from(&d.mantissa);
    if d.exponent >= 0 {
        m << (d.exponent as u32)
    } else {
        m >> (d.exponent.unsigned_abs() as u32)
    }
}

/// `x` as a dyadic with exponent `e`, rounded down.
fn rational_to_dyadic(x: &Rational, e: i64) -> Dyadic {
    let scaled = if e >= 0 {
        Rational::from(x >> (e as u32))
    } else {
        Rational::from(x << (e.unsigned_abs() as u32))
    };
    Dyadic {
        mantissa: scaled.floor().numer().clone(),
        exponent: e,
    }
}

// ---------------------------------------------------------------- mathematics

fn elimination_exponent(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let target = b
        .lattice
        .eliminations
        .iter()
        .enumerate()
        .find_map(|(k, el)| {
            el.relation
                .entries
                .iter()
                .position(|(i, _)| *i != el.pivot && !fb_principal(&b, *i as usize))
                .map(|j| (k, j))
        })
        .expect("an elimination with a non-principal, non-pivot entry");
    let (k, j) = target;
    let e = &mut b.lattice.eliminations[k].relation.entries[j].1;
    // Multiplying the product by a non-principal ideal (or its inverse)
    // makes it non-principal; the exponent stays nonzero.
    if *e == -1 {
        *e -= 1;
    } else {
        *e += 1;
    }
    encode(&b)
}

fn relation_entry(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(!b.lattice.generators.is_empty(), "needs a nontrivial group");
    let j = (0..b.lattice.generators.len())
        .find(|&j| !fb_principal(&b, b.lattice.generators[j] as usize))
        .expect("a non-principal generator ideal");
    b.lattice.relations[0][j] += 1;
    encode(&b)
}

fn smith_diagonal(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let last = b.lattice.smith.diagonal.last_mut().expect("rank >= 1");
    *last += 1;
    encode(&b)
}

fn smith_v_entry(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.lattice.smith.v[0][0] += 1;
    encode(&b)
}

/// Rebuilds the lattice of a certificate for a cyclic group of order `h`
/// from its factor base alone, claiming `Z/(m h)`: one generator ideal `G`
/// of order `h`, relations `[[m h]]`, identity Smith transforms, diagonal
/// `[m h]`, every other factor-base ideal eliminated as
/// `P_i · G^{-k_i} ~ 1` (discrete logarithms from a table of powers of
/// `G`), and the claim generated by `G`. For `m = 1` this is a true
/// certificate made without the prover's linear algebra; for `m = 2` every
/// algebraic check still passes and only the analytic bound can object.
pub fn rebuild_cyclic(b: &Body, m: u64) -> Body {
    let mut b = b.clone();
    let d = discriminant(&b);
    assert_eq!(b.claim.invariants.len(), 1, "needs a cyclic group");
    let h = b.claim.class_number.to_u64().expect("small h");
    assert!(h >= 2, "needs a nontrivial group");
    let principal = Form::principal(&d);
    let forms: Vec<Form> = (0..b.factor_base.len()).map(|i| fb_form(&b, i)).collect();
    // A factor-base ideal whose powers run through all h classes.
    let powers_of = |g: &Form| -> Vec<Form> {
        let mut v = vec![principal.clone()];
        for _ in 1..h {
            let next = v.last().expect("nonempty").compose(g).expect("compose");
            v.push(next);
        }
        v
    };
    let (g, table) = forms
        .iter()
        .enumerate()
        .find_map(|(i, f)| {
            let t = powers_of(f);
            (!t[1..].contains(&principal)).then_some((i, t))
        })
        .expect("a factor-base ideal that generates the class group");
    let mut eliminations = Vec::new();
    for (i, f) in forms.iter().enumerate() {
        if i == g {
            continue;
        }
        let k = table
            .iter()
            .position(|t| t == f)
            .expect("every class is a power of G");
        let mut entries = vec![(i as u32, Integer::from(1))];
        if k > 0 {
            entries.push((g as u32, Integer::from(-(k as i64))));
        }
        entries.sort();
        eliminations.push(classcert_format::Elimination {
            pivot: i as u32,
            relation: classcert_format::Relation {
                entries,
                witness: classcert_format::Witness::FormReduction,
            },
        });
    }
    let mh = Integer::from(m * h);
    let one = || vec![vec![Integer::from(1)]];
    let l = &mut b.lattice;
    l.generators = vec![g as u32];
    l.relations = vec![vec![mh.clone()]];
    l.smith.u = one();
    l.smith.u_inv = one();
    l.smith.v = one();
    l.smith.v_inv = one();
    l.smith.diagonal = vec![mh.clone()];
    l.eliminations = eliminations;
    let gf = &forms[g];
    b.claim.class_number = mh.clone();
    b.claim.invariants = vec![mh];
    b.claim.generators = vec![classcert_format::CyclicGenerator {
        exponents: vec![Integer::from(1)],
        form: Some(classcert_format::Form {
            a: gf.a.clone(),
            b: gf.b.clone(),
            c: gf.c.clone(),
        }),
    }];
    b
}

fn class_number_doubled(b: &Body) -> Vec<u8> {
    encode(&rebuild_cyclic(b, 2))
}

fn class_number_halved(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(b.claim.class_number >= 2);
    b.claim.class_number /= 2u32;
    encode(&b)
}

fn factor_base_gap(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let bound = registry::generation_bound(
        &b.generation_theorem,
        &Integer::from(discriminant(&b).abs_ref()),
    )
    .expect("known generation theorem");
    let PrimeIdeal::QuadraticForm { p, .. } = b.factor_base[0];
    assert!(p <= bound, "p = {p} must lie below the bound {bound}");
    b.factor_base.remove(0);
    encode(&b)
}

fn euler_x_100(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.euler.x = 100;
    encode(&b)
}

fn euler_x_50(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.euler.x = 50;
    encode(&b)
}

/// Raises the lower end and lowers the upper end of the stated enclosure
/// of log L(1, χ) by a quarter of its width each.
fn euler_interval_narrowed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let ll = &mut b.euler.log_l;
    let (lo, hi) = (dyadic_to_rational(&ll.lo), dyadic_to_rational(&ll.hi));
    let quarter = Rational::from(&hi - &lo) / 4u32;
    assert!(quarter > 0, "the interval has positive width");
    let e = ll.lo.exponent.min(ll.hi.exponent) - 4;
    ll.lo = rational_to_dyadic(&Rational::from(&lo + &quarter), e);
    ll.hi = rational_to_dyadic(&Rational::from(&hi - &quarter), e);
    encode(&b)
}

/// Regression (issue 8): a stated bound with dyadic exponent `i64::MIN`
/// once made the verifier panic on `abs()`; it must be refused.
fn euler_exponent_min(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.euler.log_l.lo.exponent = i64::MIN;
    encode(&b)
}

/// The same in an Euler checkpoint.
fn checkpoint_exponent_min(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.euler
        .checkpoints
        .first_mut()
        .expect("a checkpoint")
        .c
        .hi
        .exponent = i64::MIN;
    encode(&b)
}

/// The same in the stated regulator.
fn regulator_exponent_min(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.units
        .as_mut()
        .expect("D > 0 has units")
        .regulator
        .hi
        .exponent = i64::MIN;
    encode(&b)
}

/// Moves the first checkpoint's `A` interval entirely above its old upper
/// end, so it no longer contains the recomputed partial sum.
fn euler_checkpoint_moved(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let a = &mut b.euler.checkpoints.first_mut().expect("a checkpoint").a;
    let (lo, hi) = (dyadic_to_rational(&a.lo), dyadic_to_rational(&a.hi));
    let w = Rational::from(&hi - &lo).max(Rational::from((1, 1u64 << 30)));
    let e = a.lo.exponent.min(a.hi.exponent).min(-40);
    a.lo = rational_to_dyadic(&Rational::from(&hi + &w), e);
    a.hi = rational_to_dyadic(&(&hi + Rational::from(&w * 2u32)), e);
    encode(&b)
}

fn maximality_wrong_factor(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let f = b.maximality.as_mut().expect("a maximality claim");
    let last = f.last_mut().expect("a factor");
    last.prime += 2u32;
    encode(&b)
}

fn conductor_skip(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let PrimeIdeal::QuadraticForm { p, .. } = b.factor_base[0];
    assert!(b.conductor_small.iter().all(|(q, _)| *q != p));
    b.conductor_small.push((p, 1));
    b.conductor_small.sort_unstable();
    b.factor_base.remove(0);
    encode(&b)
}

// extra mathematics cases

fn invariants_swapped(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(b.claim.invariants.len() >= 2);
    b.claim.invariants.reverse();
    encode(&b)
}

fn generator_form_inverted(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let g = b.claim.generators.last_mut().expect("a generator");
    // (a, -b, c) is the inverse class; it differs from (a, b, c) for an
    // element of order > 2.
    let f = g.form.as_mut().expect("D < 0 generators carry a form");
    f.b = Integer::from(-&f.b);
    encode(&b)
}

fn elimination_dropped(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.lattice.eliminations.pop().expect("an elimination");
    encode(&b)
}

fn elimination_pivot_two(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let el = &mut b.lattice.eliminations[0];
    let pivot = el.pivot;
    let (_, e) = el
        .relation
        .entries
        .iter_mut()
        .find(|(i, _)| *i == pivot)
        .expect("pivot entry");
    *e = Integer::from(2);
    encode(&b)
}

fn elimination_huge_exponent(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let el = b
        .lattice
        .eliminations
        .iter_mut()
        .find(|el| el.relation.entries.len() > 1)
        .expect("an elimination with a non-pivot entry");
    let pivot = el.pivot;
    let (_, e) = el
        .relation
        .entries
        .iter_mut()
        .find(|(i, _)| *i != pivot)
        .expect("a non-pivot entry");
    *e = Integer::from(1) << 20_000u32;
    encode(&b)
}

fn factor_base_bad_b(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let d = discriminant(&b);
    let i = (0..b.factor_base.len())
        .find(|&i| {
            let PrimeIdeal::QuadraticForm { p, b: bb } = b.factor_base[i];
            bb < p && Form::new(Integer::from(p), Integer::from(bb + 1), &d).is_err()
        })
        .expect("an entry whose b + 1 is not a square root of D mod 4p");
    let PrimeIdeal::QuadraticForm { p, b: bb } = b.factor_base[i];
    b.factor_base[i] = PrimeIdeal::QuadraticForm { p, b: bb + 1 };
    encode(&b)
}

fn generator_repeated(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(b.lattice.generators.len() >= 2);
    b.lattice.generators[1] = b.lattice.generators[0];
    encode(&b)
}

fn relations_not_square(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.lattice.relations.pop().expect("a relation row");
    encode(&b)
}

fn unknown_theorem(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.generation_theorem = "no-such-theorem".into();
    encode(&b)
}

fn field_bound_for_order(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(b.maximality.is_none());
    b.generation_theorem = registry::BACH_FIELD.into();
    encode(&b)
}

fn maximality_not_fundamental(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    assert!(b.maximality.is_none());
    let abs = Integer::from(discriminant(&b).abs_ref())
        .to_u64()
        .expect("small");
    b.maximality = Some(
        crate::support::factor_u64(abs)
            .into_iter()
            .map(|(p, e)| classcert_format::PrimePower {
                prime: Integer::from(p),
                exponent: e,
                evidence: classcert_format::PrimalityEvidence::Bpsw,
            })
            .collect(),
    );
    encode(&b)
}

fn discriminant_3_mod_4(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let d = discriminant(&b) - 2u32;
    assert_eq!(d.mod_u(4), 3);
    b.order = Order::Quadratic { discriminant: d };
    encode(&b)
}

// ---------------------------------------------------------------- bytes

fn truncated_last_byte(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    f.pop();
    f
}

fn truncated_half(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    f.truncate(f.len() / 2);
    f
}

/// Position of the `format` value: the byte after the text "format".
fn format_value_at(f: &[u8]) -> usize {
    let key = b"\x66format";
    let at = f
        .windows(key.len())
        .rposition(|w| w == key)
        .expect("the key \"format\"");
    let v = at + key.len();
    assert_eq!(f[v], 0x01, "format version 1 is the single byte 0x01");
    v
}

/// The unsigned integer 1 written with a one-byte argument (0x18 0x01):
/// valid CBOR, but not the shortest form.
fn noncanonical_format(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    let v = format_value_at(&f);
    f[v] = 0x18;
    f.insert(v + 1, 0x01);
    f
}

fn trailing_byte(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    f.push(0x00);
    f
}

fn digest_bit_flipped(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    // The file ends with "body-sha256": bstr(32); flip a bit in its middle.
    let n = f.len();
    f[n - 16] ^= 0x04;
    f
}

fn format_version_two(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    let v = format_value_at(&f);
    f[v] = 0x02;
    f
}

fn format_value_null(b: &Body) -> Vec<u8> {
    let mut f = encode(b);
    let v = format_value_at(&f);
    f[v] = 0xf6;
    f
}

// ---------------------------------------------------------------- real orders

fn real_units(b: &Body) -> classcert_format::Units {
    b.units
        .clone()
        .expect("a real order's certificate has units")
}

/// Multiplies a stated interval by 2^k.
fn scale_bounds(x: &mut classcert_format::Bounds, k: i64) {
    x.lo.exponent += k;
    x.hi.exponent += k;
}

fn alpha_changed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let raw = b.lattice.raw_relations.as_mut().expect("raw relations");
    let r = raw
        .iter_mut()
        .find(|r| !r.entries.is_empty())
        .expect("a raw relation with entries");
    if let classcert_format::Witness::Element { x, .. } = &mut r.witness {
        // (x + 2 + y sqrt D)/2 has another norm
        *x += 2;
    }
    encode(&b)
}

fn unit_step_changed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    u.steps[0].x += 2;
    b.units = Some(u);
    encode(&b)
}

fn unit_chain_cut(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    u.steps.pop();
    b.units = Some(u);
    encode(&b)
}

fn unit_one(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    u.steps.clear();
    b.units = Some(u);
    encode(&b)
}

fn regulator_halved(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    scale_bounds(&mut u.regulator, -1);
    b.units = Some(u);
    encode(&b)
}

fn unit_squared(b: &Body) -> Vec<u8> {
    // ε²: one more step with β = 1 and a_{l+1} = O = O², regulator doubled
    let mut b = b.clone();
    let mut u = real_units(&b);
    let last = u.steps.last().expect("a step").clone();
    u.steps.push(classcert_format::CompactStep {
        x: Integer::from(2),
        y: Integer::new(),
        s: Integer::from(1),
        ..last
    });
    scale_bounds(&mut u.regulator, 1);
    u.norm = 1;
    b.units = Some(u);
    encode(&b)
}

fn class_number_regulator_traded(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    scale_bounds(&mut u.regulator, -1);
    b.units = Some(u);
    b.claim.class_number *= 2;
    encode(&b)
}

fn unit_norm_flipped(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let mut u = real_units(&b);
    u.norm = -u.norm;
    b.units = Some(u);
    encode(&b)
}

fn combination_changed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    for e in b.lattice.eliminations.iter_mut() {
        if let classcert_format::Witness::Combination { terms } = &mut e.relation.witness {
            if let Some(t) = terms.first_mut() {
                t.1 += 1;
                break;
            }
        }
    }
    encode(&b)
}

/// A derived relation that rests on itself: its combination names its own
/// index, so it would "hold" whatever its entries. The first derived
/// relation gets that witness; a certificate without derived relations
/// gets one, stating the first elimination's relation.
fn derived_out_of_order(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let r = b.lattice.raw_relations.as_ref().map_or(0, Vec::len) as u32;
    let own = classcert_format::Witness::Combination {
        terms: vec![(r, Integer::from(1))],
    };
    match b.lattice.derived_relations.as_mut() {
        Some(derived) => derived[0].witness = own,
        None => {
            let entries = b.lattice.eliminations[0].relation.entries.clone();
            b.lattice.derived_relations = Some(vec![classcert_format::Relation {
                entries,
                witness: own,
            }]);
        }
    }
    encode(&b)
}

fn units_removed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.units = None;
    encode(&b)
}

fn form_reduction_for_real(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    b.lattice.relation_witness = classcert_format::Witness::FormReduction;
    encode(&b)
}

// ---------------------------------------------------------------- primality proofs

/// The Pocklington proof of the largest prime factor of |D|.
fn proof_mut(b: &mut Body) -> &mut Vec<classcert_format::PocklingtonFactor> {
    let m = b.maximality.as_mut().expect("maximality is claimed");
    let last = m.last_mut().expect("a factor");
    match &mut last.evidence {
        classcert_format::PrimalityEvidence::Pocklington { factors } => factors,
        _ => panic!("the largest factor carries a Pocklington proof"),
    }
}

fn pocklington_base_square(b: &Body) -> Vec<u8> {
    // 4 is a square, so 4^((p-1)/2) = 1 and the gcd is p
    let mut b = b.clone();
    proof_mut(&mut b)[0].base = Integer::from(4);
    encode(&b)
}

fn pocklington_factors_truncated(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    proof_mut(&mut b).truncate(2);
    encode(&b)
}

fn pocklington_exponent(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    proof_mut(&mut b)[0].e += 1;
    encode(&b)
}

fn pocklington_q_changed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    if let Some(f) = proof_mut(&mut b).last_mut() {
        f.q += 2;
    }
    encode(&b)
}

fn pocklington_sub_proof(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    if let Some(f) = proof_mut(&mut b).last_mut() {
        *f.evidence = classcert_format::PrimalityEvidence::Pocklington { factors: vec![] };
    }
    encode(&b)
}

/// The Morrison proof of the largest prime factor of |D|.
fn morrison_mut(
    b: &mut Body,
) -> (
    &mut Integer,
    &mut Integer,
    &mut Vec<classcert_format::MorrisonFactor>,
) {
    let m = b.maximality.as_mut().expect("maximality is claimed");
    let last = m.last_mut().expect("a factor");
    match &mut last.evidence {
        classcert_format::PrimalityEvidence::Morrison {
            lucas_p,
            lucas_q,
            factors,
        } => (lucas_p, lucas_q, factors),
        _ => panic!("the largest factor carries a Morrison proof"),
    }
}

fn morrison_square_discriminant(b: &Body) -> Vec<u8> {
    // P = 3, Q = 2: P^2 - 4Q = 1 is a square, so (Δ/N) = 1
    let mut b = b.clone();
    let (p, q, _) = morrison_mut(&mut b);
    *p = Integer::from(3);
    *q = Integer::from(2);
    encode(&b)
}

fn morrison_q_shares_n(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    let n = b
        .maximality
        .as_ref()
        .and_then(|m| m.last())
        .map(|f| f.prime.clone());
    let (_, q, _) = morrison_mut(&mut b);
    *q = n.expect("a prime");
    encode(&b)
}

fn morrison_factors_truncated(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    morrison_mut(&mut b).2.truncate(2);
    encode(&b)
}

fn morrison_exponent(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    morrison_mut(&mut b).2[0].e += 1;
    encode(&b)
}

fn morrison_q_changed(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    if let Some(f) = morrison_mut(&mut b).2.last_mut() {
        f.q += 2;
    }
    encode(&b)
}

fn morrison_sub_proof(b: &Body) -> Vec<u8> {
    let mut b = b.clone();
    if let Some(f) = morrison_mut(&mut b).2.last_mut() {
        *f.evidence = classcert_format::PrimalityEvidence::Pocklington { factors: vec![] };
    }
    encode(&b)
}

// ---------------------------------------------------------------- catalogue

macro_rules! forgery {
    ($name:literal, $code:literal, $base:expr, $layer:ident, $req:literal, $what:literal, $f:ident) => {
        Forgery {
            name: $name,
            code: $code,
            base: $base,
            layer: Layer::$layer,
            required: $req,
            what: $what,
            apply: $f,
        }
    };
}

pub static CATALOGUE: &[Forgery] =
    &[
        forgery!(
            "elimination-exponent",
            "elimination-not-principal",
            NONCYCLIC,
            Mathematics,
            true,
            "a non-pivot exponent of an elimination changed by one",
            elimination_exponent
        ),
        forgery!(
            "relation-entry",
            "relation-not-principal",
            NONCYCLIC,
            Mathematics,
            true,
            "an entry of lattice.relations changed by one",
            relation_entry
        ),
        forgery!(
            "smith-diagonal",
            "smith-mismatch",
            NONCYCLIC,
            Mathematics,
            true,
            "the last Smith diagonal entry increased by one",
            smith_diagonal
        ),
        forgery!(
            "smith-v-entry",
            "smith-not-unimodular",
            NONCYCLIC,
            Mathematics,
            true,
            "V[0][0] increased by one, so V V' != I",
            smith_v_entry
        ),
        forgery!(
            "class-number-doubled",
            "class-number-not-confirmed",
            CYCLIC,
            Consistent,
            true,
            "a consistent forged lattice for Z/2h: one generator ideal, relations [[2h]], Smith form, eliminations and claim",
            class_number_doubled
        ),
        forgery!(
            "class-number-halved",
            "class-number-mismatch",
            NONMAXIMAL,
            Mathematics,
            true,
            "claimed class number halved, nothing else changed",
            class_number_halved
        ),
        forgery!(
            "factor-base-gap",
            "factor-base-gap",
            NONCYCLIC,
            Mathematics,
            true,
            "the first factor-base entry (below the generation bound) removed",
            factor_base_gap
        ),
        forgery!(
            "euler-x-100",
            "euler-x-too-small",
            NONCYCLIC,
            Mathematics,
            true,
            "euler.x = 100",
            euler_x_100
        ),
        forgery!(
            "euler-x-50",
            "euler-x-out-of-range",
            NONCYCLIC,
            Mathematics,
            true,
            "euler.x = 50 (below the theorem's X >= 69)",
            euler_x_50
        ),
        forgery!(
            "euler-interval-narrowed",
            "euler-interval-understated",
            NONCYCLIC,
            Mathematics,
            true,
            "euler.log_l shrunk by a quarter of its width at each end",
            euler_interval_narrowed
        ),
        forgery!(
            "euler-exponent-min",
            "euler-interval-understated",
            NONCYCLIC,
            Mathematics,
            false,
            "regression: the stated log L bound has dyadic exponent i64::MIN",
            euler_exponent_min
        ),
        forgery!(
            "euler-checkpoint-exponent-min",
            "euler-trace-mismatch",
            NONCYCLIC,
            Mathematics,
            false,
            "regression: a checkpoint bound has dyadic exponent i64::MIN",
            checkpoint_exponent_min
        ),
        forgery!(
            "real-regulator-exponent-min",
            "regulator-mismatch",
            REAL,
            Mathematics,
            false,
            "regression: the stated regulator bound has dyadic exponent i64::MIN",
            regulator_exponent_min
        ),
        forgery!(
            "euler-checkpoint-moved",
            "euler-trace-mismatch",
            NONCYCLIC,
            Mathematics,
            true,
            "the first checkpoint's A interval moved above its old upper end",
            euler_checkpoint_moved
        ),
        forgery!(
            "maximality-wrong-factor",
            "maximality-factorisation",
            NONCYCLIC,
            Mathematics,
            true,
            "the largest prime factor of |D| replaced by that number plus 2",
            maximality_wrong_factor
        ),
        forgery!("conductor-skip", "conductor-mismatch", NONCYCLIC, Mathematics, true,
        "(p, 1) added to conductor_small for the first factor-base prime p, and its entry removed",
        conductor_skip),
        forgery!(
            "truncated-last-byte",
            "decode-truncated",
            NONCYCLIC,
            Bytes,
            true,
            "the last byte dropped",
            truncated_last_byte
        ),
        forgery!(
            "truncated-half",
            "decode-truncated",
            NONCYCLIC,
            Bytes,
            true,
            "the file cut in half",
            truncated_half
        ),
        forgery!(
            "noncanonical-format",
            "decode-noncanonical",
            NONCYCLIC,
            Bytes,
            true,
            "the format version 1 written as 0x18 0x01",
            noncanonical_format
        ),
        forgery!(
            "trailing-byte",
            "decode-trailing-data",
            NONCYCLIC,
            Bytes,
            true,
            "a zero byte appended",
            trailing_byte
        ),
        forgery!(
            "digest-bit-flipped",
            "digest-mismatch",
            NONCYCLIC,
            Bytes,
            true,
            "one bit of the stored SHA-256 flipped",
            digest_bit_flipped
        ),
        // Extra cases beyond the required list.
        forgery!(
            "invariants-swapped",
            "invariants-mismatch",
            NONCYCLIC,
            Mathematics,
            false,
            "claimed invariants [9, 3] instead of [3, 9]",
            invariants_swapped
        ),
        forgery!(
            "generator-form-inverted",
            "generator-mismatch",
            NONCYCLIC,
            Mathematics,
            false,
            "a generator's form replaced by its inverse",
            generator_form_inverted
        ),
        forgery!(
            "elimination-dropped",
            "elimination-incomplete",
            NONCYCLIC,
            Mathematics,
            false,
            "the last elimination removed",
            elimination_dropped
        ),
        forgery!(
            "elimination-pivot-two",
            "elimination-structure",
            NONCYCLIC,
            Mathematics,
            false,
            "the pivot coefficient of the first elimination set to 2",
            elimination_pivot_two
        ),
        forgery!(
            "elimination-huge-exponent",
            "over-limit",
            NONCYCLIC,
            Mathematics,
            false,
            "an elimination exponent of 2^20000",
            elimination_huge_exponent
        ),
        forgery!(
            "factor-base-bad-b",
            "factor-base-invalid",
            NONCYCLIC,
            Mathematics,
            false,
            "a factor-base b replaced by b + 1, not a square root of D mod 4p",
            factor_base_bad_b
        ),
        forgery!(
            "generator-repeated",
            "generators-invalid",
            NONCYCLIC,
            Mathematics,
            false,
            "the second generator ideal index replaced by the first",
            generator_repeated
        ),
        forgery!(
            "relations-not-square",
            "smith-shape",
            NONCYCLIC,
            Mathematics,
            false,
            "the last row of lattice.relations removed",
            relations_not_square
        ),
        forgery!(
            "unknown-theorem",
            "unknown-theorem",
            NONCYCLIC,
            Mathematics,
            false,
            "generation_theorem = \"no-such-theorem\"",
            unknown_theorem
        ),
        forgery!(
            "field-bound-for-order",
            "generation-theorem-not-applicable",
            NONMAXIMAL,
            Mathematics,
            false,
            "the field generation bound named for a non-maximal order",
            field_bound_for_order
        ),
        forgery!(
            "maximality-not-fundamental",
            "maximality-not-fundamental",
            NONMAXIMAL,
            Mathematics,
            false,
            "a true factorisation of |D| offered as a maximality claim for a non-fundamental D",
            maximality_not_fundamental
        ),
        forgery!(
            "discriminant-3-mod-4",
            "invalid-discriminant",
            NONCYCLIC,
            Mathematics,
            false,
            "D replaced by D - 2, which is 3 mod 4",
            discriminant_3_mod_4
        ),
        forgery!(
            "format-version-two",
            "unsupported-version",
            NONCYCLIC,
            Bytes,
            false,
            "the format version 1 replaced by 2",
            format_version_two
        ),
        forgery!(
            "format-value-null",
            "decode-malformed",
            NONCYCLIC,
            Bytes,
            false,
            "the format version replaced by CBOR null",
            format_value_null
        ),
        forgery!(
            "real-alpha-changed",
            "relation-witness-invalid",
            REAL,
            Mathematics,
            false,
            "D > 0: the x of a raw relation's element changed by 2",
            alpha_changed
        ),
        forgery!(
            "real-unit-step-changed",
            "unit-chain-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: a forged unit: one β of the compact representation changed",
            unit_step_changed
        ),
        forgery!(
            "real-unit-chain-cut",
            "unit-chain-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: not a unit: the compact representation stops before the order",
            unit_chain_cut
        ),
        forgery!(
            "real-unit-one",
            "unit-trivial",
            REAL,
            Mathematics,
            false,
            "D > 0: the empty compact representation, ε = 1",
            unit_one
        ),
        forgery!(
            "real-regulator-halved",
            "regulator-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: the regulator claimed twice too small",
            regulator_halved
        ),
        forgery!(
            "real-unit-squared",
            "class-number-regulator-not-confirmed",
            REAL,
            Mathematics,
            false,
            "D > 0: the regulator twice too large, with ε² as the unit",
            unit_squared
        ),
        forgery!(
            "real-h-and-r-traded",
            "class-number-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: h doubled and R halved, h R unchanged",
            class_number_regulator_traded
        ),
        forgery!(
            "real-unit-norm-flipped",
            "unit-norm-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: the norm of ε negated",
            unit_norm_flipped
        ),
        forgery!(
            "real-combination-changed",
            "combination-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: a coefficient of an elimination's combination changed by one",
            combination_changed
        ),
        forgery!(
            "real-derived-out-of-order",
            "combination-mismatch",
            REAL,
            Mathematics,
            false,
            "D > 0: a derived relation whose combination names itself",
            derived_out_of_order
        ),
        forgery!(
            "real-units-removed",
            "units-shape",
            REAL,
            Mathematics,
            false,
            "D > 0: the unit section removed",
            units_removed
        ),
        forgery!(
            "real-form-reduction",
            "witness-kind",
            REAL,
            Mathematics,
            false,
            "D > 0: the rows of H claimed by form reduction",
            form_reduction_for_real
        ),
        forgery!(
            "pocklington-base-square",
            "primality-proof-invalid",
            PRIME_PROOF,
            Mathematics,
            false,
            "Pocklington proof: the base for q = 2 replaced by the square 4",
            pocklington_base_square
        ),
        forgery!(
            "pocklington-factors-truncated",
            "primality-proof-invalid",
            PRIME_PROOF,
            Mathematics,
            false,
            "Pocklington proof: only 2^2 and 3 kept, so F^2 < N",
            pocklington_factors_truncated
        ),
        forgery!(
            "pocklington-exponent",
            "primality-proof-invalid",
            PRIME_PROOF,
            Mathematics,
            false,
            "Pocklington proof: the exponent of q = 2 raised, so F does not divide N - 1",
            pocklington_exponent
        ),
        forgery!(
            "pocklington-q-changed",
            "primality-proof-invalid",
            PRIME_PROOF,
            Mathematics,
            false,
            "Pocklington proof: the largest q changed by 2",
            pocklington_q_changed
        ),
        forgery!(
            "pocklington-sub-proof",
            "primality-proof-invalid",
            PRIME_PROOF,
            Mathematics,
            false,
            "Pocklington proof: the largest q's own proof replaced by an empty one",
            pocklington_sub_proof
        ),
        forgery!(
            "morrison-square-discriminant",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: P = 3, Q = 2, whose discriminant 1 is a square",
            morrison_square_discriminant
        ),
        forgery!(
            "morrison-q-shares-n",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: Q replaced by N itself",
            morrison_q_shares_n
        ),
        forgery!(
            "morrison-factors-truncated",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: only 2^2 and 3 kept, so (F - 1)^2 <= N",
            morrison_factors_truncated
        ),
        forgery!(
            "morrison-exponent",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: the exponent of 2 raised, so F does not divide N + 1",
            morrison_exponent
        ),
        forgery!(
            "morrison-q-changed",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: the largest q changed by 2",
            morrison_q_changed
        ),
        forgery!(
            "morrison-sub-proof",
            "primality-proof-invalid",
            MORRISON_PROOF,
            Mathematics,
            false,
            "Morrison proof: the largest q's own proof replaced by an empty one",
            morrison_sub_proof
        ),
    ];

/// The forgery called `name`.
pub fn find(name: &str) -> &'static Forgery {
    CATALOGUE
        .iter()
        .find(|f| f.name == name)
        .unwrap_or_else(|| panic!("no forgery named {name:?}"))
}

/// The reason codes the test plan requires, one per kind of damage.
pub const REQUIRED_CODES: &[&str] = &[
    "elimination-not-principal",
    "relation-not-principal",
    "smith-mismatch",
    "smith-not-unimodular",
    "class-number-not-confirmed",
    "class-number-mismatch",
    "factor-base-gap",
    "euler-x-too-small",
    "euler-x-out-of-range",
    "euler-interval-understated",
    "euler-trace-mismatch",
    "maximality-factorisation",
    "conductor-mismatch",
    "decode-truncated",
    "decode-noncanonical",
    "decode-trailing-data",
    "digest-mismatch",
];

/// A forgery the verifier rejects, but with another code than the one the
/// design asks for: a bug outside this crate, recorded here so the suite
/// stays green while it is open. The strict check is the ignored test
/// `known_deviations_are_fixed` in `tests/tests/soundness.rs`.
#[derive(Debug)]
pub struct Deviation {
    pub forgery: &'static str,
    /// The code given today.
    pub observed: &'static str,
    pub note: &'static str,
}

pub static KNOWN_DEVIATIONS: &[Deviation] = &[];

/// How a verdict's code relates to what forgery `f` must give.
#[derive(Debug)]
pub enum CodeCheck {
    /// The designed code.
    Exact,
    /// A recorded deviation (still a rejection).
    KnownDeviation(&'static Deviation),
    /// Anything else: a failure.
    Wrong,
}

pub fn check_code(f: &Forgery, code: &str) -> CodeCheck {
    if code == f.code {
        return CodeCheck::Exact;
    }
    match KNOWN_DEVIATIONS
        .iter()
        .find(|d| d.forgery == f.name && d.observed == code)
    {
        Some(d) => CodeCheck::KnownDeviation(d),
        None => CodeCheck::Wrong,
    }
}
