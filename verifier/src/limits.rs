//! Hard caps on input size and work. A certificate beyond any of them is
//! rejected with `over-limit` before the work it would cause is started.

/// Bits of `|D|`.
pub const MAX_DISCRIMINANT_BITS: u32 = 4096;
/// Largest Euler-product cut-off `X`.
pub const MAX_EULER_X: u64 = 50_000_000;
/// Largest trial-division / sieve bound `max(B_gen, X)`.
pub const MAX_SIEVE: u64 = 100_000_000;
/// Number of factor-base entries.
pub const MAX_FACTOR_BASE: usize = 6_000_000;
/// Rank of the generator block (size of the Smith form).
pub const MAX_RANK: usize = 64;
/// Bits of any matrix entry or exponent.
pub const MAX_ENTRY_BITS: u32 = 16_384;
/// Entries of one sparse relation.
pub const MAX_RELATION_ENTRIES: usize = 4096;
/// Forms kept in the tables of powers for large exponents
/// (`relations/forms.rs`), all tables together; past it, square-and-multiply.
pub const MAX_TABLE_FORMS: usize = 1 << 15;
/// Euler-trace checkpoints.
pub const MAX_CHECKPOINTS: usize = 64;
/// Factors in a maximality claim.
pub const MAX_FACTORS: usize = 4096;
/// Raw relations with element witnesses (`D > 0`).
pub const MAX_RAW_RELATIONS: usize = 2_000_000;
/// Derived relations (`D > 0`): combinations of raw relations and earlier
/// derived ones, named by later combinations.
pub const MAX_DERIVED_RELATIONS: usize = 2_000_000;
/// Entries touched while adding up the combinations of raw relations
/// that make a number field's units (one more per term); the quadratic
/// combinations are charged to the work budget instead.
pub const MAX_COMBINATION_WORK: u64 = 200_000_000;
/// Steps of a unit's compact representation (about log2 of the regulator).
pub const MAX_COMPACT_STEPS: usize = 4096;
/// Depth of a primality proof tree.
pub const MAX_PROOF_DEPTH: u32 = 64;
/// Prime factors listed in one Pocklington step.
pub const MAX_PROOF_FACTORS: usize = 4096;
/// Bits of a Lucas parameter `P` or `Q` in an `N + 1` proof (so that
/// `P^2 - 4Q` fits a machine word).
pub const MAX_LUCAS_PARAMETER_BITS: u32 = 31;
/// Terms of the unconditional class number series (its sieve of smallest
/// prime factors holds one u32 per term).
pub const MAX_SERIES_TERMS: u64 = 10_000_000;

/// The decoder's caps (the format crate applies them before anything else
/// is looked at): the largest file, and the nesting depth and item count
/// of its CBOR.
pub const DECODE: classcert_format::DecodeLimits = classcert_format::DecodeLimits {
    max_file_bytes: MAX_FILE_BYTES,
    walk: classcert_format::cbor::WalkLimits {
        max_depth: MAX_CBOR_DEPTH,
        max_items: MAX_CBOR_ITEMS,
        max_tree_bytes: MAX_TREE_BYTES,
        tree_bytes_per_input_byte: TREE_BYTES_PER_INPUT_BYTE,
    },
};
/// Bytes of a certificate file (a 100-digit certificate takes about 10 MB).
pub const MAX_FILE_BYTES: usize = 64 << 20;
/// Bytes the decoded value tree may take, in all and per byte of the file
/// (honest certificates take 9 to 23 per byte), so that decoding stays
/// within a small multiple of the file.
pub const MAX_TREE_BYTES: u64 = 256 << 20;
pub const TREE_BYTES_PER_INPUT_BYTE: u64 = 32;

/// Bits of an input number printed in full; a longer one (only a refused
/// certificate can hold one) is shown by its size, as printing it would
/// cost more than refusing it.
pub const MAX_PRINTED_BITS: u32 = 65_536;

/// Lines read from a policy file (`--policy`), and its size in bytes.
pub const MAX_POLICY_LINES: usize = 1000;
pub const MAX_POLICY_BYTES: u64 = 64 << 10;
/// Certificates one manifest may list.
pub const MAX_MANIFEST_ENTRIES: usize = 1_000_000;
/// Bytes read of a manifest file.
pub const MAX_MANIFEST_BYTES: u64 = 128 << 20;
/// Nesting depth of CBOR items.
pub const MAX_CBOR_DEPTH: usize = 24;
/// CBOR items in one file.
pub const MAX_CBOR_ITEMS: u64 = 50_000_000;

// Number fields: orders and prime ideals.
/// Smallest degree of the defining polynomial `F` of an order given by a
/// basis (`field/order.rs`); 2 is allowed so that quadratic fields can be
/// checked against the quadratic path.
pub const MIN_FIELD_DEGREE: usize = 2;
/// Largest degree of the defining polynomial `F` of an order.
pub const MAX_FIELD_DEGREE: usize = 6;
/// Bits of a coefficient of `F`, of the common denominator of an order's
/// basis and of an entry of its Hermite form.
pub const MAX_ORDER_ENTRY_BITS: u32 = 1024;
/// Bits of the prime `p` in the `p`-maximality test, run on machine words
/// (its Frobenius powers cost about `bits(p)·⌈log_p n⌉` squarings of an
/// element, for each of the `n` basis elements). The prover enlarges an
/// order only at primes below 2^63 too.
pub const MAX_MAXIMALITY_PRIME_BITS: u32 = 63;
/// Bits of a power `a^e` of an element, estimated before it is computed.
pub const MAX_POWER_BITS: u64 = 1 << 20;

// Number fields: roots and logarithms.
/// Degree of a polynomial whose root enclosures are checked.
pub const MAX_ROOT_DEGREE: usize = 6;
/// Bits of a coefficient of that polynomial.
pub const MAX_ROOT_COEFF_BITS: u32 = 1024;
/// Bits of the mantissa of an end point of a root enclosure.
pub const MAX_ROOT_ENDPOINT_BITS: u32 = 4096;
/// Largest `|exponent|` of an end point of a root enclosure.
pub const MAX_ROOT_EXPONENT: i64 = 4096;
/// Working precision (bits) of the root checks and the log embeddings.
pub const MAX_ROOT_PREC: u32 = 8192;
/// Size `r` of the `r × r` determinants of a regulator (`r = r1 + r2 - 1`).
pub const MAX_REGULATOR_RANK: usize = 5;

// Number fields: the polynomial, elements, torsion.
/// Bits of a coefficient of the defining polynomial `F`.
pub const MAX_FIELD_COEFF_BITS: u32 = 256;
/// Primes whose factorisation patterns of `F mod p` may be tried to show
/// `F` irreducible.
pub const MAX_IRREDUCIBILITY_PRIMES: usize = 200;
/// Bits of a coordinate of a relation's element, and of its exponents.
pub const MAX_ELEMENT_BITS: u32 = 4096;
/// Unramified primes tried to bound the roots of unity.
pub const MAX_TORSION_PRIMES: usize = 200;
/// The largest number of roots of unity accepted (degree 6 allows 18).
pub const MAX_W: u32 = 64;

// The work budget: the whole certificate's cost, estimated from its
// decoded sizes before any check starts (`estimate`). A unit is about one
// machine-word operation, weighted so that it takes about a nanosecond on
// the reference machine (BENCHMARKS.md, "The work budget").
/// Units a certificate may cost by default (about 10 s of checking; a
/// 100-digit certificate is projected at 1.3e9 for D < 0, 7.4e9 for D > 0).
pub const DEFAULT_BUDGET: f64 = 1e10;
/// The largest `--budget-scale`, the multiplier of the default budget.
pub const MAX_BUDGET_SCALE: u32 = 100_000;
/// Units per `n` of the Euler product (per prime, its interval terms).
const EULER_UNIT: f64 = 600.0;
/// Units per term of the unconditional series, and per term whose
/// `erfc` argument `n sqrt(π/|D|)` is small (`n < 2 sqrt|D|`), the costly ones.
const SERIES_UNIT: [f64; 2] = [3000.0, 80000.0];

use crate::report::reason::{reject, reject_if, Check, Reason};
use classcert_format::{Document, Order, PrimalityEvidence as Ev, Relation, Witness};
use rug::Integer;

/// Words of `n`, plus one.
fn words(n: &Integer) -> f64 {
    f64::from(n.significant_bits()) / 64.0 + 1.0
}

/// A product of numbers of these sizes (a norm, a step of a unit).
fn square<'a>(ns: impl IntoIterator<Item = &'a Integer>) -> f64 {
    ns.into_iter().map(words).sum::<f64>().powi(2)
}

/// Compositions for one exponent in square-and-multiply (two per bit).
fn exponent(e: &Integer) -> f64 {
    2.0 * f64::from(e.significant_bits()) + 1.0
}

/// A modular exponentiation mod `n` with an exponent of `n`'s size.
fn power(n: &Integer) -> f64 {
    200.0 + 64.0 * words(n).powi(3)
}

/// A primality proof of `n`: two powers (or Lucas sequences) per listed
/// factor and two more, and each factor's own proof; or a BPSW test.
fn proof(n: &Integer, ev: &Ev) -> f64 {
    let qs: Vec<(&Integer, &Ev)> = match ev {
        Ev::Bpsw => return 3.0 * power(n),
        Ev::Pocklington { factors } => factors.iter().map(|f| (&f.q, &*f.evidence)).collect(),
        Ev::Morrison { factors, .. } => factors.iter().map(|f| (&f.q, &*f.evidence)).collect(),
    };
    let each = qs.iter().map(|(q, e)| 2.0 * power(n) + proof(q, e));
    each.sum::<f64>() + 2.0 * power(n)
}

/// A relation: its exponents (in compositions `comp` each, when it is
/// checked by reduction), its element's norm and valuations, or the
/// entries its combination touches (`lens`: of the raw and derived ones).
fn relation(entries: &[(u32, Integer)], witness: &Witness, comp: f64, lens: &[f64]) -> f64 {
    let terms = |t: &[(u32, Integer)]| {
        let len = |j: &u32| 1.0 + lens.get(*j as usize).unwrap_or(&0.0);
        150.0 * t.iter().map(|(j, c)| words(c) * len(j)).sum::<f64>()
    };
    let exps = entries.iter().map(|(_, e)| exponent(e)).sum::<f64>();
    20.0 * entries.len() as f64
        + match witness {
            Witness::FormReduction => comp * exps,
            Witness::Element { x, y } => 4.0 * square([x, y]) + 9.0 * exps * square([x, y]).sqrt(),
            Witness::Coordinates { coordinates: c } => 400.0 * square(c),
            Witness::Combination { terms: t } => terms(t),
            Witness::Combinations { rows } => rows.iter().map(|t| terms(t)).sum(),
        }
}

/// The estimated cost of checking `doc`, in units; `Err` names a number
/// too large for the arithmetic it would enter (checked here, before it).
/// The analytic bound costs the series' terms, or the Euler product to
/// `X` (a Kronecker symbol per `n`, times the degree); the sieve and
/// trial division to `max(X, 12 log^2 |D|)` a few units per integer and
/// a reduction of `D` per prime; a composition of forms `(|D|/64)^2`.
pub fn estimate(doc: &Document) -> Result<f64, String> {
    let (order, e, maximality, degree) = match doc {
        Document::Relations(b) => (&b.order, &b.euler, &b.maximality, 1.0),
        Document::OrderWitness(w) => (&w.order, &w.euler, &w.maximality, 1.0),
        Document::Field(f) => (&f.order, &f.euler, &f.maximality, 6.0),
    };
    let d = match order {
        Order::Quadratic { discriminant } => discriminant.clone(),
        Order::Polynomial { .. } => Integer::new(),
    };
    let (x, bits, w) = (e.x as f64, d.significant_bits(), words(&d));
    let comp = 400.0 + 2.0 * w * w;
    let mut cost = match e.theorem == crate::registry::ERFC_SERIES {
        true => SERIES_UNIT[0] * x + SERIES_UNIT[1] * x.min(2.0 * (f64::from(bits) / 2.0).exp2()),
        false => x * (EULER_UNIT + 8.0 * w) * degree,
    };
    let t = x.max(12.0 * (f64::from(bits) * 0.7).powi(2));
    cost += 8.0 * t + t / t.ln().max(1.0) * (40.0 + 8.0 * w);
    for pp in maximality.iter().flatten() {
        cost += proof(&pp.prime, &pp.evidence);
    }
    let (lattice, claim, fb, units) = match doc {
        Document::Relations(b) => {
            let steps = b.units.iter().flat_map(|u| &u.steps);
            let units = steps.map(|s| 50.0 * square([&s.a, &s.b, &s.x, &s.y, &s.s]));
            (&b.lattice, &b.claim, b.factor_base.len(), units.sum())
        }
        Document::Field(f) => (&f.lattice, &f.claim, f.factor_base.len(), 0.0),
        Document::OrderWitness(wb) => {
            let factors = wb.h_factors.len() as f64;
            for g in &wb.generators {
                let f = &g.form;
                if [&f.a, &f.b, &f.c]
                    .iter()
                    .any(|x| x.significant_bits() > bits + 2)
                {
                    return Err(format!(
                        "a witness form's coefficient exceeds D's {bits} bits"
                    ));
                }
                cost += comp * exponent(&g.order) * (1.0 + factors);
            }
            for pp in &wb.h_factors {
                let gens = wb.generators.iter();
                let r = gens.filter(|g| g.order.is_divisible(&pp.prime)).count() as f64;
                // the p-socle of rank r >= 2 is searched: p^r combinations
                let socle = (r > 1.0).then(|| pp.prime.to_f64().powf(r) * r * comp);
                cost += proof(&pp.prime, &pp.evidence) + socle.unwrap_or(0.0);
            }
            return Ok(cost);
        }
    };
    cost += units + fb as f64 * (500.0 + 100.0 * w) * degree;
    let (raw, der) = (&lattice.raw_relations, &lattice.derived_relations);
    let rd: Vec<&Relation> = raw.iter().chain(der).flatten().collect();
    let lens: Vec<f64> = rd.iter().map(|r| r.entries.len() as f64).collect();
    let elims = lattice.eliminations.iter().map(|e| &e.relation);
    for r in rd.into_iter().chain(elims) {
        cost += relation(&r.entries, &r.witness, comp, &lens);
    }
    let h_exps: f64 = lattice.relations.iter().flatten().map(exponent).sum();
    cost += relation(&[], &lattice.relation_witness, comp, &lens) + comp * h_exps;
    let s = &lattice.smith;
    let matrices = [&lattice.relations, &s.u, &s.u_inv, &s.v, &s.v_inv];
    let widest = matrices.iter().flat_map(|m| m.iter().flatten()).map(words);
    let widest = widest.fold(1.0, f64::max);
    cost += 40.0 * (lattice.generators.len() as f64).powi(3) * widest * widest;
    for e in claim.generators.iter().flat_map(|g| &g.exponents) {
        if e.significant_bits() > MAX_ENTRY_BITS {
            let why = format!("a generator's exponent has over {MAX_ENTRY_BITS} bits");
            return Err(why);
        }
        cost += comp * exponent(e) + widest * words(e);
    }
    Ok(cost)
}

/// Refuses, with `over-limit`, a certificate whose estimated cost exceeds
/// `scale` times [`DEFAULT_BUDGET`], or that holds a number too large.
pub(crate) fn check_budget(doc: &Document, scale: u32) -> Check<()> {
    let budget = DEFAULT_BUDGET * f64::from(scale.clamp(1, MAX_BUDGET_SCALE));
    let cost = estimate(doc).or_else(|why| reject(Reason::OverLimit, why))?;
    let why = format!("the estimated work is {cost:.2e} units, over the budget of {budget:.2e} (--budget-scale raises it)");
    reject_if(cost > budget, Reason::OverLimit, why)
}

#[cfg(test)]
mod tests {
    use super::*;
    use classcert_format::{decode_document, Form, PocklingtonFactor, PrimalityEvidence};
    use classcert_format::{PrimeIdeal, PrimePower, WitnessGenerator};

    fn golden(name: &str) -> Document {
        let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/../vectors/golden/");
        let bytes = std::fs::read(format!("{dir}{name}.cert")).unwrap();
        decode_document(&bytes).unwrap().document
    }

    fn cost(doc: &Document) -> f64 {
        estimate(doc).unwrap()
    }

    /// A negative discriminant of `bits` bits, `≡ 1 (mod 4)`.
    fn big_d(bits: u32) -> Integer {
        -((Integer::from(1) << (bits - 1)) + 3u32)
    }

    /// A Pocklington step for `n` listing the first `k` odd primes.
    fn pocklington(n: Integer, k: usize) -> Vec<PrimePower> {
        let mut q = Integer::from(2);
        let factors = (0..k).map(|_| {
            q.next_prime_mut();
            let evidence = Box::new(PrimalityEvidence::Bpsw);
            PocklingtonFactor {
                q: q.clone(),
                e: 1,
                base: Integer::from(3),
                evidence,
            }
        });
        let evidence = PrimalityEvidence::Pocklington {
            factors: factors.collect(),
        };
        vec![PrimePower {
            prime: n,
            exponent: 1,
            evidence,
        }]
    }

    /// `k` witnesses of order 2 over a `bits`-bit `D`, `H = 2^k`.
    fn socle(bits: u32, k: u32) -> Document {
        let Document::OrderWitness(mut w) = golden("witness-minus-1000003") else {
            panic!()
        };
        let d = big_d(bits);
        let c = Integer::from(1 - &d) / 4u32;
        let form = Form {
            a: Integer::from(1),
            b: Integer::from(1),
            c,
        };
        w.order = Order::Quadratic { discriminant: d };
        w.class_number = Integer::from(1) << k;
        let evidence = PrimalityEvidence::Bpsw;
        w.h_factors = vec![PrimePower {
            prime: Integer::from(2),
            exponent: k,
            evidence,
        }];
        let g = WitnessGenerator {
            order: Integer::from(2),
            form,
        };
        w.generators = vec![g; k as usize];
        Document::OrderWitness(w)
    }

    fn relations(name: &str) -> Box<classcert_format::Body> {
        let Document::Relations(b) = golden(name) else {
            panic!("{name}")
        };
        b
    }

    #[test]
    fn the_golden_certificates_are_within_the_default_budget() {
        for dir in ["golden", "golden-fields"] {
            let path = format!("{}/../vectors/{dir}", env!("CARGO_MANIFEST_DIR"));
            for f in std::fs::read_dir(path).unwrap() {
                let bytes = std::fs::read(f.unwrap().path()).unwrap();
                let doc = decode_document(&bytes).unwrap().document;
                assert!(check_budget(&doc, 1).is_ok(), "{}", cost(&doc));
                // and far within it: a hundredth of the budget at most
                assert!(cost(&doc) < DEFAULT_BUDGET / 100.0);
            }
        }
    }

    #[test]
    fn the_estimate_grows_with_each_size() {
        let b = relations("minus-1000003");
        let base = cost(&Document::Relations(b.clone()));
        let grown = |f: &dyn Fn(&mut classcert_format::Body)| {
            let mut c = b.clone();
            f(&mut c);
            cost(&Document::Relations(c))
        };
        assert!(grown(&|c| c.euler.x *= 2) > base);
        assert!(
            grown(&|c| c.order = Order::Quadratic {
                discriminant: big_d(2048)
            }) > base
        );
        let entry = PrimeIdeal::QuadraticForm { p: 3, b: 1 };
        assert!(grown(&|c| c.factor_base.push(entry.clone())) > base);
        assert!(grown(&|c| c.maximality = Some(pocklington(Integer::from(1000003), 3))) > base);
        let fewer = pocklington(Integer::from(1000003), 3);
        let more = pocklington(Integer::from(1000003), 4);
        let with = |m: Vec<PrimePower>| grown(&move |c| c.maximality = Some(m.clone()));
        assert!(with(more) > with(fewer));
        let wider = |c: &mut classcert_format::Body| {
            let e = &mut c.lattice.eliminations[0].relation.entries[0].1;
            *e = Integer::from(&*e) << 64u32;
        };
        assert!(grown(&wider) > base);
        let mut u = relations("unconditional-minus-3299");
        let terms = cost(&Document::Relations(u.clone()));
        u.euler.x *= 2;
        assert!(cost(&Document::Relations(u)) > terms);
        assert!(cost(&socle(512, 4)) > cost(&socle(512, 3)));
        assert!(cost(&socle(1024, 3)) > cost(&socle(512, 3)));
    }

    /// The inputs of issue 12, each within the older caps, all over the
    /// default budget or refused for a number too large.
    #[test]
    fn the_hostile_inputs_are_over_the_budget() {
        let over = |doc: Document| {
            let r = check_budget(&doc, 1).unwrap_err();
            assert_eq!(r.reason, Reason::OverLimit);
            r.detail
        };
        let mut b = relations("minus-1000003");
        b.euler.x = MAX_EULER_X;
        assert!(over(Document::Relations(b)).contains("estimated work"));
        let mut b = relations("unconditional-minus-3299");
        b.euler.x = MAX_SERIES_TERMS;
        over(Document::Relations(b));
        let mut b = relations("minus-1000003");
        b.maximality = Some(pocklington((Integer::from(1) << 4095u32) + 1u32, 414));
        over(Document::Relations(b));
        assert!(over(socle(3983, 19)).contains("estimated work"));
        let mut b = relations("minus-1000003");
        b.order = Order::Quadratic {
            discriminant: big_d(4096),
        };
        b.factor_base = (0..1_000_000)
            .map(|p| PrimeIdeal::QuadraticForm { p, b: 1 })
            .collect();
        over(Document::Relations(b));
        let Document::OrderWitness(mut w) = golden("witness-minus-1000003") else {
            panic!()
        };
        w.generators[0].form.b = Integer::from(1) << 100_000u32;
        assert!(over(Document::OrderWitness(w)).contains("coefficient"));
        let mut b = relations("plus-999997");
        b.claim.generators[0].exponents[0] = Integer::from(1) << (MAX_ENTRY_BITS + 1);
        assert!(over(Document::Relations(b)).contains("exponent"));
        // a scale admits what the default refuses
        let mut b = relations("minus-1000003");
        b.euler.x = MAX_EULER_X;
        assert!(check_budget(&Document::Relations(b), 10).is_ok());
    }
}
