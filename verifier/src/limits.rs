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
/// Total compositions the relation checks may cost (each exponent bit
/// costs at most two).
pub const MAX_COMPOSITIONS: u64 = 40_000_000;
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
/// Entries touched while adding up combinations of raw and derived
/// relations (one more per term), for the derived relations, the rows of
/// `H` and the eliminations together.
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
/// Modular exponentiations all primality proofs of a certificate may cost.
pub const MAX_PROOF_POWERS: u64 = 100_000;
/// Terms of the unconditional class number series (its sieve of smallest
/// prime factors holds one u32 per term).
pub const MAX_SERIES_TERMS: u64 = 10_000_000;
/// Combinations an order witness's socle search may try.
pub const MAX_SOCLE_COMBINATIONS: u64 = 1_000_000;

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
/// Units a certificate may cost by default (about 4 s of checking).
pub const DEFAULT_BUDGET: f64 = 4e9;
/// The largest `--budget-scale`, the multiplier of the default budget.
pub const MAX_BUDGET_SCALE: u32 = 100_000;
/// Units per `n` of the Euler product (per prime, its interval terms).
const EULER_UNIT: f64 = 600.0;
/// Units per term of the unconditional series, and per term whose
/// `erfc` argument `n sqrt(π/|D|)` is small (`n < 2 sqrt|D|`), the costly ones.
const SERIES_UNIT: [f64; 2] = [3000.0, 30000.0];

use classcert_format::{Document, EulerTrace, PrimalityEvidence as Ev, Relation, Witness};
use rug::Integer;

/// Words of `n`, plus one.
fn words(n: &Integer) -> f64 {
    f64::from(n.significant_bits()) / 64.0 + 1.0
}

/// A composition and reduction of forms of discriminant `D` (`w` words).
fn compose(w: f64) -> f64 {
    400.0 + 2.0 * w * w
}

/// Compositions for one exponent in square-and-multiply (two per bit).
fn exponent(e: &Integer) -> f64 {
    2.0 * f64::from(e.significant_bits()) + 1.0
}

/// A modular exponentiation mod `n` with an exponent of `n`'s size.
fn power(n: &Integer) -> f64 {
    200.0 + 128.0 * words(n).powi(3)
}

/// A primality proof of `n`: one power per listed factor and one more
/// (Lucas sequences: two), each factor's own proof, or a BPSW test.
fn proof(n: &Integer, ev: &Ev) -> f64 {
    let step = |k: f64, qs: Vec<(&Integer, &Ev)>| {
        let each = qs.iter().map(|(q, e)| k * power(n) + proof(q, e));
        each.sum::<f64>() + k * power(n)
    };
    match ev {
        Ev::Bpsw => 3.0 * power(n),
        Ev::Pocklington { factors } => {
            step(1.0, factors.iter().map(|f| (&f.q, &*f.evidence)).collect())
        }
        Ev::Morrison { factors, .. } => {
            step(2.0, factors.iter().map(|f| (&f.q, &*f.evidence)).collect())
        }
    }
}

/// The analytic bound: the series' terms, or the Euler product to `X` (a
/// Kronecker symbol of `w` words per `n`, times the degree).
fn analytic(e: &EulerTrace, bits: f64, degree: f64) -> f64 {
    let (x, w) = (e.x as f64, bits / 64.0 + 1.0);
    match e.theorem == crate::registry::ERFC_SERIES {
        true => SERIES_UNIT[0] * x + SERIES_UNIT[1] * x.min(2.0 * (bits / 2.0).exp2()),
        false => x * (EULER_UNIT + 8.0 * w) * degree,
    }
}

/// The sieve and trial division to `max(t, 12 log^2 |D|)` (`bits` of
/// `|D|`): a few units per integer, a reduction of `D` per prime.
fn sieve(t: f64, bits: f64, w: f64) -> f64 {
    let t = t.max(12.0 * (bits * 0.7).powi(2));
    8.0 * t + t / t.ln().max(1.0) * (40.0 + 8.0 * w)
}

/// A relation: its exponents (forms, when it is checked by reduction)
/// and its element's norm and valuations.
fn relation(r: &Relation, comp: f64, lens: &[f64]) -> f64 {
    let entries = r.entries.len() as f64;
    let terms = |t: &[(u32, Integer)]| {
        let each = t
            .iter()
            .map(|(j, c)| words(c) * lens.get(*j as usize).unwrap_or(&0.0));
        20.0 * each.sum::<f64>()
    };
    entries * 20.0
        + match &r.witness {
            Witness::FormReduction => {
                comp * r.entries.iter().map(|(_, e)| exponent(e)).sum::<f64>()
            }
            Witness::Element { x, y } => (words(x) + words(y)).powi(2) * (50.0 + entries),
            Witness::Coordinates { coordinates } => {
                400.0 * coordinates.iter().map(words).sum::<f64>().powi(2)
            }
            Witness::Combination { terms: t } => terms(t),
            Witness::Combinations { rows } => rows.iter().map(|t| terms(t)).sum(),
        }
}

/// The estimated cost of checking `doc`, in units; `Err` names a number
/// too large for the arithmetic it would enter (checked here, before it).
pub fn estimate(doc: &Document) -> Result<f64, String> {
    let (order, claim, maximality, lattice, euler, units, fb, degree) = match doc {
        Document::Relations(b) => {
            let units = b.units.iter().flat_map(|u| &u.steps);
            let units = units.map(|s| {
                50.0 * [&s.a, &s.b, &s.x, &s.y, &s.s]
                    .map(words)
                    .iter()
                    .sum::<f64>()
                    .powi(2)
            });
            (
                &b.order,
                &b.claim,
                &b.maximality,
                &b.lattice,
                &b.euler,
                units.sum::<f64>(),
                b.factor_base.len(),
                1.0,
            )
        }
        Document::Field(f) => {
            let units = f.units.units.iter().map(|u| 1e4 * u.len() as f64).sum();
            (
                &f.order,
                &f.claim,
                &f.maximality,
                &f.lattice,
                &f.euler,
                units,
                f.factor_base.len(),
                6.0,
            )
        }
        Document::OrderWitness(w) => return estimate_witness(w),
    };
    let d = match order {
        classcert_format::Order::Quadratic { discriminant } => discriminant.clone(),
        classcert_format::Order::Polynomial { .. } => Integer::new(),
    };
    let (w, bits, comp) = (
        words(&d),
        f64::from(d.significant_bits()),
        compose(words(&d)),
    );
    let mut cost = units + analytic(euler, bits, degree) + sieve(euler.x as f64, bits, w);
    cost += fb as f64 * (500.0 + 100.0 * w) * degree;
    for pp in maximality.iter().flatten() {
        cost += proof(&pp.prime, &pp.evidence);
    }
    let raw = lattice.raw_relations.iter().flatten();
    let derived = lattice.derived_relations.iter().flatten();
    let lens: Vec<f64> = raw
        .clone()
        .chain(derived.clone())
        .map(|r| r.entries.len() as f64)
        .collect();
    let elims = lattice.eliminations.iter().map(|e| &e.relation);
    for r in raw.chain(derived).chain(elims) {
        cost += relation(r, comp, &lens);
    }
    let rows = lattice.relations.iter().map(|row| Relation {
        entries: row.iter().map(|e| (0, e.clone())).collect(),
        witness: lattice.relation_witness.clone(),
    });
    cost += rows.map(|r| relation(&r, comp, &lens)).sum::<f64>();
    let s = &lattice.smith;
    let matrices = [&lattice.relations, &s.u, &s.u_inv, &s.v, &s.v_inv];
    let widest = matrices
        .iter()
        .flat_map(|m| m.iter().flatten())
        .map(words)
        .fold(1.0, f64::max);
    cost += 40.0 * (lattice.generators.len() as f64).powi(3) * widest * widest;
    for g in &claim.generators {
        if let Some(e) = g
            .exponents
            .iter()
            .find(|e| e.significant_bits() > MAX_ENTRY_BITS)
        {
            return Err(format!(
                "a generator's exponent has {} bits, more than {MAX_ENTRY_BITS}",
                e.significant_bits()
            ));
        }
        cost += g
            .exponents
            .iter()
            .map(|e| comp * exponent(e) + widest * words(e))
            .sum::<f64>();
    }
    Ok(cost)
}

/// [`estimate`] for an order witness: the proofs for `H`, the powers
/// `g_i^(d_i)` and `g_i^(d_i/q)`, and the search of each `p`-socle.
fn estimate_witness(wb: &classcert_format::WitnessBody) -> Result<f64, String> {
    let classcert_format::Order::Quadratic { discriminant: d } = &wb.order else {
        return Ok(0.0);
    };
    let (w, bits) = (words(d), d.significant_bits());
    let comp = compose(w);
    let mut cost =
        analytic(&wb.euler, f64::from(bits), 1.0) + sieve(wb.euler.x as f64, f64::from(bits), w);
    let factors = wb.h_factors.len() as f64;
    for pp in wb.maximality.iter().flatten().chain(&wb.h_factors) {
        cost += proof(&pp.prime, &pp.evidence);
    }
    for g in &wb.generators {
        let f = &g.form;
        if let Some(big) = [&f.a, &f.b, &f.c]
            .into_iter()
            .find(|x| x.significant_bits() > bits + 2)
        {
            return Err(format!(
                "a witness form's coefficient has {} bits, and D {bits}",
                big.significant_bits()
            ));
        }
        cost += comp * exponent(&g.order) * (1.0 + factors);
    }
    for pp in &wb.h_factors {
        let r = wb
            .generators
            .iter()
            .filter(|g| g.order.is_divisible(&pp.prime))
            .count();
        if r > 1 {
            let combos = pp.prime.to_f64().powi(i32::try_from(r).unwrap_or(i32::MAX));
            cost += combos * r as f64 * comp;
        }
    }
    Ok(cost)
}

/// Refuses, with `over-limit`, a certificate whose estimated cost exceeds
/// `scale` times [`DEFAULT_BUDGET`], or that holds a number too large.
pub(crate) fn check_budget(doc: &Document, scale: u32) -> crate::report::reason::Check<()> {
    use crate::report::reason::{reject_if, Reason};
    let budget = DEFAULT_BUDGET * f64::from(scale.clamp(1, MAX_BUDGET_SCALE));
    let cost = estimate(doc).map_err(|detail| crate::report::reason::Rejection {
        reason: Reason::OverLimit,
        detail,
    })?;
    reject_if(
        cost > budget,
        Reason::OverLimit,
        format_args!("the estimated work is {cost:.2e} units, over the budget of {budget:.2e} (--budget-scale raises it)"),
    )
}
