//! The checks, in the order of the mathematics (see `DEVELOPERS.md` and
//! the design note): order → conductor and maximality → factor base
//! (generation) → relations → lattice and Smith form → claim → analytic
//! bound → verdict.
//!
//! Fail closed: each step returns a token that only this module can build,
//! and [`Verified`] is assembled from all of them, so a skipped step does
//! not compile.

use crate::arith::{kronecker_prime, mod_small, primes_up_to, small_conductor};
use crate::compact;
use crate::element;
use crate::euler;
use crate::form::Form;
use crate::interval::Interval;
use crate::limits::*;
use crate::proofs::{self, ProofError, Status, Used};
use crate::registry::{self, Hypothesis, Theorem};
use crate::series;
use crate::verdict::{reject, Assumption, GeneratorView, Reason, Rejection, UnitSummary, Verified};
use classcert_format::{
    Body, EulerTrace, Order, PrimeIdeal, PrimePower, Relation, Witness, WitnessBody,
};
use rug::ops::Pow;
use rug::Integer;

type Check<T> = Result<T, Rejection>;

/// Step 0: a valid discriminant within limits.
struct OrderOk {
    d: Integer,
    abs_d: Integer,
    w: u32,
    /// `D > 0`.
    real: bool,
}

/// Step 0 (continued): conductor part found by trial division, and the
/// maximality claim if any.
struct ConductorOk {
    trial_primes: Vec<u64>,
    d_small: Integer,
    conductor: Vec<(u64, u32)>,
    maximal: bool,
    bpsw_assumed: bool,
    /// Primality proofs that were checked.
    proofs: Used,
}

/// Step 1: the factor base holds an invertible prime ideal above every
/// prime up to the generation bound.
struct GenerationOk {
    bound: u64,
    theorem: &'static Theorem,
    forms: Vec<Form>,
}

/// Step 2 (`D > 0`): every raw relation holds by its element witness.
struct RawOk<'a> {
    relations: &'a [Relation],
}

/// Step 4 (`D > 0`): a unit of infinite order, `R* = |log|ε|| > 0`.
struct UnitsOk {
    regulator: Interval,
    norm: i8,
    length: usize,
}

/// Steps 2–3: relations hold, and `Z^n / L ≅ ⊕ Z/d_i` with `h | ∏ d_i`.
struct LatticeOk {
    h_star: Integer,
    diagonal: Vec<Integer>,
}

/// The claim matches the lattice.
struct ClaimOk {
    invariants: Vec<Integer>,
    generators: Vec<GeneratorView>,
}

/// Step 5: `h = h*` (and `R = R*` when `D > 0`).
struct AnalyticOk {
    log_h: Interval,
    x: u64,
}

fn check_order(order: &Order) -> Check<OrderOk> {
    let Order::Quadratic { discriminant: d } = order;
    let abs_d = Integer::from(d.abs_ref());
    if abs_d.significant_bits() > MAX_DISCRIMINANT_BITS {
        return reject(
            Reason::OverLimit,
            format!("|D| has more than {MAX_DISCRIMINANT_BITS} bits"),
        );
    }
    let r = d.mod_u(4);
    if r != 0 && r != 1 {
        return reject(
            Reason::InvalidDiscriminant,
            format!("D = {d} is not ≡ 0 or 1 mod 4"),
        );
    }
    if d.is_perfect_square() {
        return reject(
            Reason::InvalidDiscriminant,
            format!("D = {d} is a square, so it is not the discriminant of a quadratic order"),
        );
    }
    let w = match d.to_i32() {
        Some(-3) => 6,
        Some(-4) => 4,
        _ => 2,
    };
    Ok(OrderOk {
        d: d.clone(),
        abs_d,
        w,
        real: *d > 0,
    })
}

fn check_conductor_and_maximality(
    conductor_small: &[(u64, u32)],
    maximality: &Option<Vec<PrimePower>>,
    order: &OrderOk,
    trial_bound: u64,
) -> Check<ConductorOk> {
    let trial_primes = primes_up_to(trial_bound);
    let (conductor, d_small) = small_conductor(&order.d, &trial_primes);
    if conductor != conductor_small {
        return reject(
            Reason::ConductorMismatch,
            format!(
                "trial division to {trial_bound} finds conductor primes {:?}; the certificate states {:?}",
                conductor, conductor_small
            ),
        );
    }
    let mut maximal = false;
    let mut bpsw_assumed = false;
    let mut used = Used::default();
    if let Some(factors) = maximality {
        let mut work = MAX_PROOF_POWERS;
        if check_factorisation(
            factors,
            &order.abs_d,
            "|D|",
            Reason::MaximalityFactorisation,
            &mut work,
            &mut used,
        )? {
            bpsw_assumed = true;
        }
        let two_exp = factors
            .iter()
            .find(|f| f.prime == 2)
            .map_or(0, |f| f.exponent);
        let squarefree_odd = factors.iter().all(|f| f.prime == 2 || f.exponent == 1);
        // D fundamental: D ≡ 1 (4) squarefree, or D = 4m, m ≡ 2, 3 (4), m squarefree.
        let fundamental = squarefree_odd
            && match two_exp {
                0 => order.d.mod_u(4) == 1,
                2 => matches!(Integer::from(&order.d >> 2u32).mod_u(4), 2 | 3),
                3 => true,
                _ => false,
            };
        if !fundamental {
            return reject(
                Reason::MaximalityNotFundamental,
                "the factorisation shows that D is not a fundamental discriminant",
            );
        }
        maximal = true;
    }
    Ok(ConductorOk {
        trial_primes,
        d_small,
        conductor,
        maximal,
        bpsw_assumed,
        proofs: used,
    })
}

/// `factors` is the factorisation of `target` into primes listed once each
/// in increasing order, each with checked evidence. Returns whether some
/// prime rests on the BPSW assumption. A wrong factorisation is `reason`.
fn check_factorisation(
    factors: &[PrimePower],
    target: &Integer,
    what: &str,
    reason: Reason,
    work: &mut u64,
    used: &mut Used,
) -> Check<bool> {
    if factors.len() > MAX_FACTORS {
        return reject(Reason::OverLimit, format!("too many factors of {what}"));
    }
    let mut product = Integer::from(1);
    let mut prev = Integer::new();
    let mut bpsw_assumed = false;
    for f in factors {
        if f.prime <= prev || f.exponent == 0 || f.exponent > MAX_DISCRIMINANT_BITS {
            return reject(
                reason,
                "factors must be listed once each, in increasing order, with positive exponents",
            );
        }
        if f.prime.significant_bits() > MAX_DISCRIMINANT_BITS {
            return reject(Reason::OverLimit, "a factor is too large");
        }
        match proofs::check(&f.prime, &f.evidence, 0, work, used) {
            Err(ProofError::Composite(q)) => {
                return reject(reason, format!("{q} is not prime (it fails the BPSW test)"))
            }
            Err(ProofError::Invalid(why)) => {
                return reject(
                    Reason::PrimalityProofInvalid,
                    format!("the primality proof of {} fails: {why}", f.prime),
                )
            }
            Err(ProofError::OverLimit) => {
                return reject(
                    Reason::OverLimit,
                    "a primality proof is too deep or too long",
                )
            }
            Ok(Status::Proven) => {}
            Ok(Status::AssumedBpsw) => bpsw_assumed = true,
        }
        product *= Integer::from((&f.prime).pow(f.exponent));
        if product.significant_bits() > MAX_DISCRIMINANT_BITS + 1 {
            return reject(reason, format!("the factors multiply past {what}"));
        }
        prev = f.prime.clone();
    }
    if product != *target {
        return reject(
            reason,
            format!("the stated factors multiply to {product}, not {what} = {target}"),
        );
    }
    Ok(bpsw_assumed)
}

fn check_generation(
    body: &Body,
    order: &OrderOk,
    cond: &ConductorOk,
    bound: u64,
    theorem: &'static Theorem,
) -> Check<GenerationOk> {
    if body.factor_base.len() > MAX_FACTOR_BASE {
        return reject(Reason::OverLimit, "factor base too large");
    }
    let d = &order.d;
    let conductor_primes: Vec<u64> = cond.conductor.iter().map(|(p, _)| *p).collect();
    let mut forms = Vec::with_capacity(body.factor_base.len());
    let mut prev = 0u64;
    let max_p = cond.trial_primes.last().copied().unwrap_or(0);
    for (i, PrimeIdeal::QuadraticForm { p, b }) in body.factor_base.iter().enumerate() {
        let (p, b) = (*p, *b);
        let bad = |why: &str| {
            reject(
                Reason::FactorBaseInvalid,
                format!("factor base entry {i} ({p}, {b}): {why}"),
            )
        };
        if p <= prev {
            return bad("entries must be in strictly increasing order of p");
        }
        if p > max_p || cond.trial_primes.binary_search(&p).is_err() {
            return bad("p is not a prime up to the trial-division bound");
        }
        if conductor_primes.contains(&p) {
            return bad("p divides the conductor, so its prime ideals are not invertible");
        }
        if b > p {
            return bad("b must satisfy 0 <= b <= p");
        }
        let Ok(form) = Form::new(Integer::from(p), Integer::from(b), d) else {
            return bad("b^2 is not ≡ D mod 4p");
        };
        forms.push(form);
        prev = p;
    }
    // Coverage: every p <= bound, p not dividing the conductor, (D/p) != -1.
    let mut fb = body
        .factor_base
        .iter()
        .map(|PrimeIdeal::QuadraticForm { p, .. }| *p)
        .peekable();
    for &p in cond.trial_primes.iter().take_while(|&&p| p <= bound) {
        while fb.peek().is_some_and(|&q| q < p) {
            fb.next();
        }
        if conductor_primes.contains(&p) || kronecker_prime(d, p) == -1 {
            continue;
        }
        if fb.peek() != Some(&p) {
            return reject(
                Reason::FactorBaseGap,
                format!(
                    "no prime ideal above p = {p} in the factor base (generation bound {bound})"
                ),
            );
        }
    }
    Ok(GenerationOk {
        bound,
        theorem,
        forms,
    })
}

/// Budget for form arithmetic across all relation checks.
struct Budget(u64);

impl Budget {
    /// Charges for `∏ f_i^{e_i}` by simultaneous powering: one squaring per
    /// bit of the largest exponent plus one composition per set bit.
    fn charge(&mut self, exps: &[&Integer]) -> Check<()> {
        let mut max_bits = 0u32;
        let mut ones = 0u64;
        for e in exps {
            let bits = e.significant_bits();
            if bits > MAX_ENTRY_BITS {
                return reject(Reason::OverLimit, "an exponent is too large");
            }
            max_bits = max_bits.max(bits);
            ones += u64::from(Integer::from(e.abs_ref()).count_ones().unwrap_or(bits));
        }
        let cost = u64::from(max_bits) + ones;
        if cost > self.0 {
            return reject(
                Reason::OverLimit,
                "relations need more form arithmetic than the verifier allows",
            );
        }
        self.0 -= cost;
        Ok(())
    }
}

/// The product `∏ forms[i]^e` over `entries`, charged to `budget`.
fn product(
    forms: &[Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    budget: &mut Budget,
) -> Check<Option<Form>> {
    let exps: Vec<&Integer> = entries.iter().map(|(_, e)| *e).collect();
    budget.charge(&exps)?;
    let mut terms = Vec::with_capacity(entries.len());
    for (i, e) in entries {
        let Some(f) = forms.get(*i) else {
            return reject(
                Reason::EliminationStructure,
                format!("index {i} is outside the factor base"),
            );
        };
        terms.push((f, *e));
    }
    Ok(Form::product(&terms, d).ok())
}

/// True if `∏ forms[i]^e` over `entries` reduces to the principal form.
fn is_principal(
    forms: &[Form],
    entries: &[(usize, &Integer)],
    d: &Integer,
    budget: &mut Budget,
) -> Check<bool> {
    Ok(product(forms, entries, d, budget)? == Some(Form::principal(d)))
}

/// How relations are shown to hold: by form reduction (`D < 0`), or as
/// combinations of raw relations with element witnesses (`D > 0`).
enum Witnesses<'a> {
    Forms {
        forms: &'a [Form],
        d: &'a Integer,
        budget: Budget,
    },
    Raw {
        raw: &'a [Relation],
        work: u64,
    },
}

impl Witnesses<'_> {
    /// True if the relation `entries` (sparse, by factor-base index) holds
    /// by `witness`. `None` stands for the combination `terms` (a row of
    /// `H` under a `combinations` witness).
    fn holds(
        &mut self,
        entries: &[(usize, &Integer)],
        witness: &Witness,
        what: &str,
    ) -> Check<bool> {
        match (self, witness) {
            (Witnesses::Forms { forms, d, budget }, Witness::FormReduction) => {
                is_principal(forms, entries, d, budget)
            }
            (Witnesses::Raw { raw, work }, Witness::Combination { terms }) => {
                let sum = element::combine(raw, terms, work)?;
                Ok(sum.len() == entries.len()
                    && entries
                        .iter()
                        .all(|(i, e)| u32::try_from(*i).ok().and_then(|i| sum.get(&i)) == Some(*e)))
            }
            (Witnesses::Forms { .. }, _) => reject(
                Reason::WitnessKind,
                format!("{what}: D < 0 relations are shown by form reduction"),
            ),
            (Witnesses::Raw { .. }, _) => reject(
                Reason::WitnessKind,
                format!("{what}: D > 0 relations are shown as combinations of raw relations"),
            ),
        }
    }
}

/// Step 2 for `D > 0`: each raw relation holds by its element witness
/// (see [`element`]). For `D < 0` there are none.
fn check_raw_relations<'a>(body: &'a Body, order: &OrderOk) -> Check<Option<RawOk<'a>>> {
    let raw = match (&body.lattice.raw_relations, order.real) {
        (None, false) => return Ok(None),
        (Some(raw), true) => raw,
        (Some(_), false) => {
            return reject(
                Reason::WitnessKind,
                "raw relations with element witnesses are for D > 0",
            )
        }
        (None, true) => {
            return reject(
                Reason::WitnessKind,
                "D > 0 needs raw relations with element witnesses",
            )
        }
    };
    if raw.len() > MAX_RAW_RELATIONS {
        return reject(Reason::OverLimit, "too many raw relations");
    }
    for (k, rel) in raw.iter().enumerate() {
        element::check_raw(&order.d, &body.factor_base, k, rel)?;
    }
    Ok(Some(RawOk { relations: raw }))
}

fn mat_mul(a: &[Vec<Integer>], b: &[Vec<Integer>], n: usize) -> Vec<Vec<Integer>> {
    let mut out = vec![vec![Integer::new(); n]; n];
    for (row_out, row_a) in out.iter_mut().zip(a.iter()) {
        for (k, aik) in row_a.iter().enumerate() {
            if aik.is_zero() {
                continue;
            }
            if let Some(row_b) = b.get(k) {
                for (o, bkj) in row_out.iter_mut().zip(row_b.iter()) {
                    *o += Integer::from(aik * bkj);
                }
            }
        }
    }
    out
}

fn is_square(m: &[Vec<Integer>], n: usize) -> bool {
    m.len() == n
        && m.iter()
            .all(|r| r.len() == n && r.iter().all(|x| x.significant_bits() <= MAX_ENTRY_BITS))
}

fn is_identity(m: &[Vec<Integer>]) -> bool {
    m.iter().enumerate().all(|(i, r)| {
        r.iter()
            .enumerate()
            .all(|(j, x)| *x == Integer::from(i == j))
    })
}

fn check_lattice(
    body: &Body,
    order: &OrderOk,
    gen: &GenerationOk,
    raw: Option<&RawOk>,
) -> Check<LatticeOk> {
    let l = &body.lattice;
    let n = gen.forms.len();
    let r = l.generators.len();
    if r > MAX_RANK {
        return reject(
            Reason::OverLimit,
            format!("{r} generators; the limit is {MAX_RANK}"),
        );
    }
    let mut known = vec![false; n];
    for &g in &l.generators {
        match known.get_mut(g as usize) {
            Some(k) if !*k => *k = true,
            _ => {
                return reject(
                    Reason::GeneratorsInvalid,
                    format!("generator index {g} is repeated or outside the factor base"),
                )
            }
        }
    }
    let mut witnesses = match raw {
        None => Witnesses::Forms {
            forms: &gen.forms,
            d: &order.d,
            budget: Budget(MAX_COMPOSITIONS),
        },
        Some(raw) => Witnesses::Raw {
            raw: raw.relations,
            work: MAX_COMBINATION_WORK,
        },
    };
    // Relations among the generators (rows of H).
    if !is_square(&l.relations, r) {
        return reject(
            Reason::SmithShape,
            format!("the relation matrix must be {r} x {r}"),
        );
    }
    let row_witness = |i: usize| -> Check<Witness> {
        match &l.relation_witness {
            Witness::Combinations { rows } => match rows.get(i) {
                Some(terms) if rows.len() == r => Ok(Witness::Combination {
                    terms: terms.clone(),
                }),
                _ => reject(
                    Reason::CombinationMismatch,
                    format!("one combination per row of H is required ({r} rows)"),
                ),
            },
            Witness::Combination { .. } | Witness::Element { .. } => reject(
                Reason::WitnessKind,
                "the rows of H need a combinations or form-reduction witness",
            ),
            Witness::FormReduction => Ok(Witness::FormReduction),
        }
    };
    for (i, row) in l.relations.iter().enumerate() {
        let entries: Vec<(usize, &Integer)> = l
            .generators
            .iter()
            .zip(row.iter())
            .filter(|(_, e)| !e.is_zero())
            .map(|(g, e)| (*g as usize, e))
            .collect();
        let mut entries = entries;
        entries.sort_by_key(|(g, _)| *g);
        if !witnesses.holds(&entries, &row_witness(i)?, &format!("row {i} of H"))? {
            let reason = if order.real {
                Reason::CombinationMismatch
            } else {
                Reason::RelationNotPrincipal
            };
            return reject(
                reason,
                format!("generator relation {i} does not hold by its witness"),
            );
        }
    }
    // Smith form: U H V = diag(d), U U' = V V' = I, d_i | d_{i+1}.
    let s = &l.smith;
    if !(is_square(&s.u, r)
        && is_square(&s.u_inv, r)
        && is_square(&s.v, r)
        && is_square(&s.v_inv, r))
        || s.diagonal.len() != r
    {
        return reject(
            Reason::SmithShape,
            format!("Smith transforms must be {r} x {r}"),
        );
    }
    if !is_identity(&mat_mul(&s.u, &s.u_inv, r)) || !is_identity(&mat_mul(&s.v, &s.v_inv, r)) {
        return reject(
            Reason::SmithNotUnimodular,
            "U U' or V V' is not the identity",
        );
    }
    let uhv = mat_mul(&mat_mul(&s.u, &l.relations, r), &s.v, r);
    for (i, row) in uhv.iter().enumerate() {
        for (j, x) in row.iter().enumerate() {
            let want = if i == j {
                s.diagonal.get(i).cloned().unwrap_or_default()
            } else {
                Integer::new()
            };
            if *x != want {
                return reject(
                    Reason::SmithMismatch,
                    format!("(U H V)[{i}][{j}] = {x}, not the stated {want}"),
                );
            }
        }
    }
    let mut h_star = Integer::from(1);
    for (i, di) in s.diagonal.iter().enumerate() {
        if *di < 1 || di.significant_bits() > MAX_ENTRY_BITS {
            return reject(
                Reason::SmithDivisibility,
                format!("diagonal entry {i} must be positive"),
            );
        }
        if let Some(next) = s.diagonal.get(i + 1) {
            if !next.is_divisible(di) {
                return reject(
                    Reason::SmithDivisibility,
                    format!("d_{i} = {di} does not divide d_{} = {next}", i + 1),
                );
            }
        }
        h_star *= di;
    }
    // Eliminations: each ideal outside G is ±1 times a product of ideals
    // already accounted for.
    if l.eliminations.len() > n {
        return reject(
            Reason::EliminationStructure,
            "more eliminations than factor-base ideals",
        );
    }
    for (k, el) in l.eliminations.iter().enumerate() {
        let p = el.pivot as usize;
        if known.get(p).copied() != Some(false) {
            return reject(
                Reason::EliminationStructure,
                format!("elimination {k}: pivot {p} is already accounted for or out of range"),
            );
        }
        let ents = &el.relation.entries;
        if ents.len() > MAX_RELATION_ENTRIES {
            return reject(Reason::OverLimit, "a relation has too many entries");
        }
        let mut prev: Option<u32> = None;
        let mut pivot_ok = false;
        for (i, e) in ents {
            if prev.is_some_and(|q| q >= *i) || e.is_zero() {
                return reject(
                    Reason::EliminationStructure,
                    format!(
                        "elimination {k}: entries must be nonzero and in increasing index order"
                    ),
                );
            }
            prev = Some(*i);
            if *i as usize == p {
                pivot_ok = *e == 1 || *e == -1;
            } else if known.get(*i as usize).copied() != Some(true) {
                return reject(
                    Reason::EliminationStructure,
                    format!("elimination {k}: index {i} is not yet accounted for"),
                );
            }
        }
        if !pivot_ok {
            return reject(
                Reason::EliminationStructure,
                format!("elimination {k}: the pivot's coefficient must be ±1"),
            );
        }
        let entries: Vec<(usize, &Integer)> = ents.iter().map(|(i, e)| (*i as usize, e)).collect();
        if !witnesses.holds(&entries, &el.relation.witness, &format!("elimination {k}"))? {
            let reason = if order.real {
                Reason::CombinationMismatch
            } else {
                Reason::EliminationNotPrincipal
            };
            return reject(
                reason,
                format!("elimination {k} (pivot {p}) does not hold by its witness"),
            );
        }
        if let Some(slot) = known.get_mut(p) {
            *slot = true;
        }
    }
    if let Some(missing) = known.iter().position(|k| !k) {
        return reject(
            Reason::EliminationIncomplete,
            format!("factor-base ideal {missing} is neither a generator nor eliminated"),
        );
    }
    Ok(LatticeOk {
        h_star,
        diagonal: s.diagonal.clone(),
    })
}

fn check_claim(
    body: &Body,
    order: &OrderOk,
    gen: &GenerationOk,
    lat: &LatticeOk,
) -> Check<ClaimOk> {
    let c = &body.claim;
    if c.class_number != lat.h_star {
        return reject(
            Reason::ClassNumberMismatch,
            format!(
                "claimed class number {} but the Smith diagonal multiplies to {}",
                c.class_number, lat.h_star
            ),
        );
    }
    let nontrivial: Vec<(usize, Integer)> = lat
        .diagonal
        .iter()
        .enumerate()
        .filter(|(_, d)| **d > 1)
        .map(|(i, d)| (i, d.clone()))
        .collect();
    let inv: Vec<Integer> = nontrivial.iter().map(|(_, d)| d.clone()).collect();
    if c.invariants != inv {
        return reject(
            Reason::InvariantsMismatch,
            "claimed invariants differ from the Smith diagonal entries > 1",
        );
    }
    if c.generators.len() != nontrivial.len() {
        return reject(
            Reason::GeneratorMismatch,
            "one generator per invariant factor is required",
        );
    }
    let l = &body.lattice;
    let r = l.generators.len();
    let d = &order.d;
    let mut budget = Budget(MAX_COMPOSITIONS);
    let mut out = Vec::with_capacity(c.generators.len());
    for ((i, _), g) in nontrivial.iter().zip(c.generators.iter()) {
        if g.exponents.len() != r {
            return reject(
                Reason::GeneratorMismatch,
                "generator exponent vector has the wrong length",
            );
        }
        // x V ≡ e_i (mod d_j) in every coordinate j
        for (j, dj) in lat.diagonal.iter().enumerate() {
            let mut s = Integer::new();
            for (xk, vrow) in g.exponents.iter().zip(l.smith.v.iter()) {
                if let Some(vkj) = vrow.get(j) {
                    s += Integer::from(xk * vkj);
                }
            }
            s -= Integer::from(j == *i);
            if !s.is_divisible(dj) {
                return reject(
                    Reason::GeneratorMismatch,
                    format!("generator {i} does not map to the unit vector of factor {i}"),
                );
            }
        }
        let entries: Vec<(usize, &Integer)> = l
            .generators
            .iter()
            .zip(g.exponents.iter())
            .filter(|(_, e)| !e.is_zero())
            .map(|(gi, e)| (*gi as usize, e))
            .collect();
        if order.real {
            // Reduced indefinite forms are not unique in their class, so the
            // generator is stated by its exponents alone.
            if g.form.is_some() {
                return reject(
                    Reason::GeneratorMismatch,
                    "for D > 0 a generator is given by its exponents, without a form",
                );
            }
            let mut ideals = Vec::with_capacity(entries.len());
            for (gi, e) in &entries {
                if let Some(PrimeIdeal::QuadraticForm { p, b }) = body.factor_base.get(*gi) {
                    ideals.push((*p, *b, (*e).clone()));
                }
            }
            out.push(GeneratorView::Ideals(ideals));
            continue;
        }
        let Some(stated) = &g.form else {
            return reject(
                Reason::GeneratorMismatch,
                format!("generator {i} has no reduced form"),
            );
        };
        let Some(acc) = product(&gen.forms, &entries, d, &mut budget)? else {
            return reject(Reason::GeneratorMismatch, "form arithmetic failed");
        };
        if acc.a != stated.a || acc.b != stated.b || acc.c != stated.c {
            return reject(
                Reason::GeneratorMismatch,
                format!(
                    "generator {i} reduces to ({}, {}, {}), not the stated form",
                    acc.a, acc.b, acc.c
                ),
            );
        }
        out.push(GeneratorView::Form(acc.a, acc.b, acc.c));
    }
    Ok(ClaimOk {
        invariants: inv,
        generators: out,
    })
}

/// The enclosure of `log h(O_D)` (for `D > 0`, of `log h(O_D) R(O_D)`)
/// from the class number formula and the Euler-product enclosure of
/// `log L(1, χ_d)`; shared with the prover so both sides agree on what is
/// checked.
pub fn log_h_enclosure(
    d: &Integer,
    w: u32,
    log_l: &Interval,
    conductor: &[(u64, u32)],
    d_small: &Integer,
    x: u64,
) -> Option<Interval> {
    let abs_d = Interval::int(&Integer::from(d.abs_ref()));
    let half_log_d = abs_d.ln()?.div(&Interval::u64(2))?;
    // h = w sqrt|D| L / (2 pi) for D < 0; h R = sqrt D L / 2 for D > 0
    let lead = if *d > 0 {
        Interval::u64(1).div(&Interval::u64(2))?
    } else {
        Interval::u64(u64::from(w)).div(&Interval::pi().mul(&Interval::u64(2)))?
    };
    let mut acc = lead.ln()?.add(&half_log_d).add(log_l);
    for (p, _) in conductor {
        let chi = i64::from(kronecker_prime(d_small, *p));
        let pi = Interval::u64(*p);
        let factor = pi.sub(&Interval::int(&Integer::from(chi))).div(&pi)?;
        acc = acc.add(&factor.ln()?);
    }
    // Primes q > X of the conductor not found by trial division: at most
    // log|D| / (2 log X) of them, each contributing log(1 ± 1/X) at most.
    let k = abs_d
        .ln()?
        .div(&Interval::u64(x).ln()?.mul(&Interval::u64(2)))?;
    let k_max = k.hi.to_f64().floor().max(0.0) as u64;
    if k_max > 0 {
        let xi = Interval::u64(x);
        let lo = xi.sub(&Interval::u64(1)).div(&xi)?.ln()?;
        let hi = xi.add(&Interval::u64(1)).div(&xi)?.ln()?;
        let k = Interval::u64(k_max);
        let slop = Interval {
            lo: lo.mul(&k).lo,
            hi: hi.mul(&k).hi,
        };
        acc = acc.add(&slop);
    }
    Some(acc)
}

/// Step 4 (`D > 0`): the compact representation is a unit of infinite
/// order (see [`compact`]), and the claimed regulator and norm match.
/// `R* = |log|ε||`, bounded away from 0, is a positive integer multiple of
/// the regulator: `R* = [O^* : <-1, ε>] R` (design note, section 4).
fn check_units(body: &Body, order: &OrderOk) -> Check<Option<UnitsOk>> {
    let units = match (&body.units, order.real) {
        (None, false) => return Ok(None),
        (Some(u), true) => u,
        (Some(_), false) => return reject(Reason::UnitsShape, "a unit section is only for D > 0"),
        (None, true) => {
            return reject(
                Reason::UnitsShape,
                "D > 0 needs the fundamental unit and the regulator",
            )
        }
    };
    let chain = compact::check_chain(&order.d, &units.steps)?;
    let log_eps = chain.log_eps;
    let regulator = if log_eps.lo > 0 {
        log_eps
    } else if log_eps.hi < 0 {
        log_eps.neg()
    } else {
        return reject(
            Reason::UnitTrivial,
            "log|ε| is not bounded away from 0: the unit has finite order",
        );
    };
    let claimed = stated_contains(
        &units.regulator,
        &regulator,
        Reason::RegulatorMismatch,
        "regulator",
    )?;
    // at least 20 significant digits: hi - lo <= lo / 10^21
    let width = claimed.sub(&Interval {
        lo: claimed.lo.clone(),
        hi: claimed.lo.clone(),
    });
    let scale = Interval::int(&Integer::from(10u32).pow(21));
    if width.mul(&scale).hi > claimed.lo {
        return reject(
            Reason::RegulatorImprecise,
            "the stated regulator interval is wider than 20 significant digits allow",
        );
    }
    let norm: i8 = if chain.norm_negative { -1 } else { 1 };
    if units.norm != i64::from(norm) {
        return reject(
            Reason::UnitNormMismatch,
            format!(
                "the stated norm is {} but the unit's norm is {norm}",
                units.norm
            ),
        );
    }
    Ok(Some(UnitsOk {
        regulator,
        norm,
        length: units.steps.len(),
    }))
}

/// Section 5, first half: the Euler trace is recomputed and the enclosure
/// of `log h` (`log h R` for `D > 0`) follows from the class number
/// formula. Returns it with the cut-off `X`.
fn check_euler(e: &EulerTrace, order: &OrderOk, cond: &ConductorOk) -> Check<(Interval, u64)> {
    if registry::lookup(&e.theorem).map(|t| t.id) == Some(registry::ERFC_SERIES) {
        return check_series(e, order, cond);
    }
    if registry::lookup(&e.theorem).map(|t| t.id) != Some(registry::BELABAS_FRIEDMAN) {
        return reject(
            Reason::UnknownTheorem,
            format!(
                "{:?} is not an Euler-product theorem in the registry",
                e.theorem
            ),
        );
    }
    let x = e.x;
    if !(euler::MIN_X..=MAX_EULER_X).contains(&x) {
        return reject(
            Reason::EulerXOutOfRange,
            format!("X = {x} must lie in [{}, {MAX_EULER_X}]", euler::MIN_X),
        );
    }
    let bad = || reject(Reason::OverLimit, "interval arithmetic failed");
    let Some(log_delta) = Interval::int(&order.abs_d).ln() else {
        return bad();
    };
    let Some(err) = euler::error_bound(x, &log_delta) else {
        return bad();
    };
    let ln2 = Interval::ln2();
    if Interval::u64(2).mul(&err).hi >= ln2.lo {
        return reject(
            Reason::EulerXTooSmall,
            format!(
                "at X = {x} the error term is {:.4}; twice it must stay below log 2",
                err.hi.to_f64()
            ),
        );
    }
    if e.checkpoints.len() > MAX_CHECKPOINTS {
        return reject(Reason::OverLimit, "too many Euler checkpoints");
    }
    let limits: Vec<u64> = e.checkpoints.iter().map(|c| c.limit).collect();
    if limits.windows(2).any(|w| w.first() >= w.get(1)) || limits.iter().any(|&l| l > x) {
        return reject(
            Reason::EulerTraceMismatch,
            "checkpoint limits must increase and not exceed X",
        );
    }
    let ds = &cond.d_small;
    let chi = |p: u64| kronecker_prime(ds, p);
    let Some(res) = euler::compute(x, &cond.trial_primes, &chi, &limits, &log_delta) else {
        return bad();
    };
    for (claimed, mine) in e.checkpoints.iter().zip(res.checkpoints.iter()) {
        let (Some(a), Some(c)) = (
            Interval::from_bounds(&claimed.a),
            Interval::from_bounds(&claimed.c),
        ) else {
            return reject(
                Reason::EulerTraceMismatch,
                "a checkpoint interval is out of range",
            );
        };
        if !a.contains(&mine.a) || !c.contains(&mine.c) {
            return reject(
                Reason::EulerTraceMismatch,
                format!("the partial sums up to {} disagree with the recomputation (A in [{:.12}, {:.12}])", mine.limit, mine.a.lo.to_f64(), mine.a.hi.to_f64()),
            );
        }
    }
    stated_contains(
        &e.log_l,
        &res.log_l,
        Reason::EulerIntervalUnderstated,
        "enclosure of log L(1, chi)",
    )?;
    let Some(log_h) = log_h_enclosure(&order.d, order.w, &res.log_l, &cond.conductor, ds, x) else {
        return bad();
    };
    Ok((log_h, x))
}

/// A stated enclosure must contain the verifier's own (`reason` if not).
fn stated_contains(
    stated: &classcert_format::Bounds,
    mine: &Interval,
    reason: Reason,
    what: &str,
) -> Check<Interval> {
    let Some(claimed) = Interval::from_bounds(stated) else {
        return reject(reason, format!("the stated {what} is out of range"));
    };
    if !claimed.contains(mine) {
        return reject(
            reason,
            format!(
                "the stated {what} [{:.15}, {:.15}] does not contain the rigorous enclosure [{:.15}, {:.15}]",
                claimed.lo.to_f64(),
                claimed.hi.to_f64(),
                mine.lo.to_f64(),
                mine.hi.to_f64()
            ),
        );
    }
    Ok(claimed)
}

/// Section 7: `h` itself from the series of [`crate::series`], without
/// GRH, for a maximal order of discriminant `D < -4`. The stated
/// `log-l` must contain `log L(1, χ) = log(2 π h / (w sqrt|D|))`.
fn check_series(e: &EulerTrace, order: &OrderOk, cond: &ConductorOk) -> Check<(Interval, u64)> {
    if order.real || order.d > -5 || !cond.maximal {
        return reject(
            Reason::GenerationTheoremNotApplicable,
            "the unconditional series applies to maximal orders with D < -4 only",
        );
    }
    let n = e.x;
    if n == 0 || n > MAX_SERIES_TERMS || !e.checkpoints.is_empty() {
        return reject(
            Reason::EulerXOutOfRange,
            format!("the series needs 1 to {MAX_SERIES_TERMS} terms and no checkpoints"),
        );
    }
    let bad = || reject(Reason::OverLimit, "interval arithmetic failed");
    let Some(h) = series::class_number(&order.d, n) else {
        return bad();
    };
    if h.lo <= 0 {
        return reject(
            Reason::EulerXTooSmall,
            format!("{n} terms do not bound h away from 0"),
        );
    }
    let Some(log_h) = h.ln() else { return bad() };
    let Some(log_l) = series::log_l_from_log_h(&log_h, order.w, &order.abs_d) else {
        return bad();
    };
    stated_contains(
        &e.log_l,
        &log_l,
        Reason::EulerIntervalUnderstated,
        "enclosure of log L(1, chi)",
    )?;
    Ok((log_h, n))
}

fn check_analytic(
    body: &Body,
    order: &OrderOk,
    cond: &ConductorOk,
    lat: &LatticeOk,
    units: Option<&UnitsOk>,
) -> Check<AnalyticOk> {
    let (log_h, x) = check_euler(&body.euler, order, cond)?;
    let bad = || reject(Reason::OverLimit, "interval arithmetic failed");
    let ln2 = Interval::ln2();
    let hs = Interval::int(&lat.h_star);
    let Some(mut log_hs) = hs.ln() else {
        return bad();
    };
    if let Some(u) = units {
        let Some(log_r) = u.regulator.ln() else {
            return bad();
        };
        log_hs = log_hs.add(&log_r);
    }
    // h* R* = k h R with k >= 1 (R = R* = 1 for D < 0). If
    // log h* R* < lo(log h R) + log 2 then k = 1.
    if log_hs.hi >= log_h.add(&ln2).lo {
        if units.is_some() {
            return reject(
                Reason::ClassNumberRegulatorNotConfirmed,
                format!(
                    "h* R* is too large: log h* R* = {:.6} but log h R <= {:.6} + log 2 is all the analytic bound allows for h = h*, R = R*",
                    log_hs.hi.to_f64(),
                    log_h.lo.to_f64()
                ),
            );
        }
        return reject(
            Reason::ClassNumberNotConfirmed,
            format!(
                "h* = {} is too large: log h* = {:.6} but log h <= {:.6} + log 2 is all the analytic bound allows for k = 1",
                lat.h_star,
                log_hs.hi.to_f64(),
                log_h.lo.to_f64()
            ),
        );
    }
    if log_hs.hi < log_h.lo {
        return reject(
            Reason::AnalyticInconsistent,
            format!("h* R* = {} · {:.6} is below the analytic lower bound exp({:.6}): relations and GRH cannot both hold", lat.h_star, units.map_or(1.0, |u| u.regulator.mid_f64()), log_h.lo.to_f64()),
        );
    }
    Ok(AnalyticOk { log_h, x })
}

/// Checks a decoded certificate body.
pub fn verify_body(body: &Body) -> Check<Verified> {
    let order = check_order(&body.order)?;
    let Some(gen_theorem) = registry::lookup(&body.generation_theorem) else {
        return reject(
            Reason::UnknownTheorem,
            format!(
                "{:?} is not in the theorem registry",
                body.generation_theorem
            ),
        );
    };
    let Some(bound) = registry::generation_bound(gen_theorem.id, &order.abs_d) else {
        return reject(
            Reason::UnknownTheorem,
            format!("{:?} is not a generation bound", gen_theorem.id),
        );
    };
    let series = body.euler.theorem == registry::ERFC_SERIES;
    let x = if series { 0 } else { body.euler.x };
    let trial_bound = bound.max(x);
    if trial_bound > MAX_SIEVE {
        return reject(
            Reason::OverLimit,
            format!("the trial-division bound {trial_bound} exceeds {MAX_SIEVE}"),
        );
    }
    let cond = check_conductor_and_maximality(
        &body.conductor_small,
        &body.maximality,
        &order,
        trial_bound,
    )?;
    if (gen_theorem.id == registry::BACH_FIELD || gen_theorem.id == registry::REDUCED_FORMS)
        && !cond.maximal
    {
        return reject(
            Reason::GenerationTheoremNotApplicable,
            "the field bound applies only to a maximal order, and maximality is not certified",
        );
    }
    let gen = check_generation(body, &order, &cond, bound, gen_theorem)?;
    let raw = check_raw_relations(body, &order)?;
    let lat = check_lattice(body, &order, &gen, raw.as_ref())?;
    let claim = check_claim(body, &order, &gen, &lat)?;
    let units = check_units(body, &order)?;
    let analytic = check_analytic(body, &order, &cond, &lat, units.as_ref())?;
    let _ = mod_small;

    let analytic_theorem = registry::lookup(&body.euler.theorem);
    let grh = gen_theorem.hypothesis == Hypothesis::Grh
        || analytic_theorem.is_none_or(|t| t.hypothesis == Hypothesis::Grh);
    let mut assumptions = Vec::new();
    if grh {
        assumptions.push(Assumption::Grh);
    }
    if cond.bpsw_assumed {
        assumptions.push(Assumption::BpswProbablePrime);
    }
    let mut theorems: Vec<&'static Theorem> = vec![gen.theorem];
    let ids: &[&str] = if order.real {
        &[
            registry::ELEMENT_RELATIONS,
            registry::LATTICE_INDEX,
            registry::UNIT_INDEX,
            registry::BELABAS_FRIEDMAN,
            registry::CLASS_NUMBER_FORMULA_REAL,
        ]
    } else {
        if series {
            &[registry::LATTICE_INDEX, registry::ERFC_SERIES]
        } else {
            &[
                registry::LATTICE_INDEX,
                registry::BELABAS_FRIEDMAN,
                registry::CLASS_NUMBER_FORMULA,
            ]
        }
    };
    for id in ids {
        if let Some(t) = registry::lookup(id) {
            theorems.push(t);
        }
    }
    if cond.maximal {
        if let Some(t) = registry::lookup(registry::BPSW_SMALL) {
            theorems.push(t);
        }
    }
    for (used, id) in [
        (cond.proofs.pocklington, registry::POCKLINGTON),
        (cond.proofs.morrison, registry::MORRISON),
    ] {
        if let (true, Some(t)) = (used, registry::lookup(id)) {
            theorems.push(t);
        }
    }
    Ok(Verified {
        class_number: lat.h_star,
        invariants: claim.invariants,
        generators: claim.generators,
        unit: units.map(|u| UnitSummary {
            regulator: u.regulator,
            norm: u.norm,
            compact_length: u.length,
        }),
        maximal: cond.maximal,
        assumptions,
        theorems,
        w: order.w,
        euler_x: analytic.x,
        generation_bound: gen.bound,
        log_h: analytic.log_h,
        factor_base_size: gen.forms.len(),
        order_witness: false,
        proof: crate::verdict::AllChecksPassed(()),
    })
}

/// Checks an order-witness certificate (design note, section 6): `g` has
/// exact order `H`, so `H | #Cl` (Lagrange); the Euler product bounds
/// `#Cl < 2H`; hence `Cl ≅ Z/H`, generated by `g`. Imaginary orders only.
pub fn verify_witness(w: &WitnessBody) -> Check<Verified> {
    let order = check_order(&w.order)?;
    if order.real {
        return reject(
            Reason::UnsupportedOrder,
            "order witnesses are checked for D < 0 only (the unit group is needed for D > 0)",
        );
    }
    let x = w.euler.x;
    if x > MAX_SIEVE {
        return reject(Reason::OverLimit, format!("X = {x} exceeds {MAX_SIEVE}"));
    }
    let cond = check_conductor_and_maximality(&w.conductor_small, &w.maximality, &order, x)?;
    let h = &w.class_number;
    if *h < 1 || h.significant_bits() > MAX_ENTRY_BITS {
        return reject(
            Reason::OrderWitnessFactorisation,
            "H must be a positive integer within the limits",
        );
    }
    let mut work = MAX_PROOF_POWERS;
    let mut used = cond.proofs;
    let h_bpsw = check_factorisation(
        &w.h_factors,
        h,
        "H",
        Reason::OrderWitnessFactorisation,
        &mut work,
        &mut used,
    )?;
    // The witnesses: reduced primitive forms g_i of exact orders d_i,
    // d_1 | d_2 | ..., prod d_i = H.
    let d = &order.d;
    if w.generators.len() > MAX_RANK {
        return reject(Reason::OverLimit, "too many witnesses");
    }
    let mut prod = Integer::from(1);
    let mut forms = Vec::with_capacity(w.generators.len());
    for (i, wg) in w.generators.iter().enumerate() {
        let f = &wg.form;
        let Ok(g) = Form::new(f.a.clone(), f.b.clone(), d) else {
            return reject(
                Reason::OrderWitnessForm,
                format!("witness {i} is not a form of discriminant D"),
            );
        };
        let primitive = Integer::from(g.a.gcd_ref(&g.b)).gcd(&g.c) == 1;
        if g.c != f.c || !g.is_reduced() || !primitive {
            return reject(
                Reason::OrderWitnessForm,
                format!("witness {i} must be a reduced primitive form of discriminant D"),
            );
        }
        let ok_order = wg.order > 1
            && wg.order.significant_bits() <= MAX_ENTRY_BITS
            && forms
                .last()
                .is_none_or(|(prev, _): &(Integer, Form)| wg.order.is_divisible(prev));
        if !ok_order {
            return reject(
                Reason::OrderWitnessFactorisation,
                "the witnesses' orders must exceed 1 and divide each other in turn",
            );
        }
        prod *= &wg.order;
        if prod.significant_bits() > MAX_ENTRY_BITS {
            return reject(Reason::OverLimit, "the witnesses' orders are too large");
        }
        forms.push((wg.order.clone(), g));
    }
    if prod != *h {
        return reject(
            Reason::OrderWitnessFactorisation,
            format!("the witnesses' orders multiply to {prod}, not H = {h}"),
        );
    }
    // g_i^(d_i) = 1 and g_i^(d_i/q) != 1 for every prime q | d_i
    let mut budget = Budget(MAX_COMPOSITIONS);
    let principal = Form::principal(d);
    let power = |g: &Form, e: &Integer, budget: &mut Budget| -> Check<Form> {
        budget.charge(&[e])?;
        match g.pow(e, d) {
            Ok(x) => Ok(x),
            Err(_) => reject(Reason::OrderWitnessForm, "form arithmetic failed"),
        }
    };
    for (i, (di, g)) in forms.iter().enumerate() {
        if power(g, di, &mut budget)? != principal {
            return reject(
                Reason::OrderWitnessPower,
                format!(
                    "g_{i}^{di} is not the principal form: {di} is not a multiple of its order"
                ),
            );
        }
        for pp in w.h_factors.iter().filter(|pp| di.is_divisible(&pp.prime)) {
            let e = Integer::from(di / &pp.prime);
            if power(g, &e, &mut budget)? == principal {
                return reject(
                    Reason::OrderWitnessNotExact,
                    format!(
                        "g_{i}^({di}/{}) is the principal form: g_{i} has order below {di}",
                        pp.prime
                    ),
                );
            }
        }
    }
    // Independence: the map ⊕ Z/d_i -> Cl is injective iff it is on the
    // p-socle for every prime p | H (a nonzero kernel has an element of
    // prime order; common practice): no nonzero c in (Z/p)^r with
    // ∏ (g_i^(d_i/p))^(c_i) = 1, checked by brute force.
    let mut combos: u64 = 0;
    for pp in &w.h_factors {
        let p = &pp.prime;
        let socle: Vec<Form> = forms
            .iter()
            .filter(|(di, _)| di.is_divisible(p))
            .map(|(di, g)| power(g, &Integer::from(di / p), &mut budget))
            .collect::<Check<Vec<Form>>>()?;
        if socle.len() < 2 {
            continue; // one element of order p is independent by itself
        }
        let Some(pu) = p.to_u64() else {
            return reject(Reason::OverLimit, "a socle too large to search");
        };
        let mut size: u64 = 1;
        for _ in 0..socle.len() {
            size = size.saturating_mul(pu);
        }
        combos = combos.saturating_add(size);
        if combos > MAX_SOCLE_COMBINATIONS {
            return reject(Reason::OverLimit, "a socle too large to search");
        }
        // all c in (Z/p)^r \ {0}, as counters
        let mut c = vec![0u64; socle.len()];
        for _ in 1..size {
            // next c
            for slot in c.iter_mut() {
                *slot += 1;
                if *slot < pu {
                    break;
                }
                *slot = 0;
            }
            let terms: Vec<(&Form, Integer)> = socle
                .iter()
                .zip(c.iter())
                .map(|(f, ci)| (f, Integer::from(*ci)))
                .collect();
            let refs: Vec<(&Form, &Integer)> = terms.iter().map(|(f, e)| (*f, e)).collect();
            let exps: Vec<&Integer> = refs.iter().map(|(_, e)| *e).collect();
            budget.charge(&exps)?;
            let Ok(x) = Form::product(&refs, d) else {
                return reject(Reason::OrderWitnessForm, "form arithmetic failed");
            };
            if x == principal {
                return reject(
                    Reason::OrderWitnessDependent,
                    format!(
                        "the witnesses are not independent: a combination of order {p} is trivial"
                    ),
                );
            }
        }
    }
    // #Cl = k H with k >= 1, and log #Cl <= hi(log h): k = 1 when
    // log H > hi(log h) - log 2.
    let (log_h, x) = check_euler(&w.euler, &order, &cond)?;
    let Some(log_big_h) = Interval::int(h).ln() else {
        return reject(Reason::OverLimit, "interval arithmetic failed");
    };
    let ln2 = Interval::ln2();
    if log_big_h.lo > log_h.hi {
        return reject(
            Reason::AnalyticInconsistent,
            format!(
                "H = {h} exceeds the analytic upper bound exp({:.6}): the witness and GRH cannot both hold",
                log_h.hi.to_f64()
            ),
        );
    }
    if log_big_h.lo <= log_h.sub(&ln2).hi {
        return reject(
            Reason::ClassNumberNotConfirmed,
            format!(
                "H = {h} is too small: log H = {:.6}, but #Cl may be as large as exp({:.6}), so #Cl = k H with k >= 2 is not excluded",
                log_big_h.lo.to_f64(),
                log_h.hi.to_f64()
            ),
        );
    }
    let mut assumptions = vec![Assumption::Grh];
    if cond.bpsw_assumed || h_bpsw {
        assumptions.push(Assumption::BpswProbablePrime);
    }
    let mut theorems: Vec<&'static Theorem> = Vec::new();
    let mut ids = vec![
        registry::ORDER_WITNESS,
        registry::BELABAS_FRIEDMAN,
        registry::CLASS_NUMBER_FORMULA,
        registry::BPSW_SMALL,
    ];
    if used.pocklington {
        ids.push(registry::POCKLINGTON);
    }
    if used.morrison {
        ids.push(registry::MORRISON);
    }
    for id in ids {
        if let Some(t) = registry::lookup(id) {
            theorems.push(t);
        }
    }
    Ok(Verified {
        class_number: h.clone(),
        invariants: forms.iter().map(|(di, _)| di.clone()).collect(),
        generators: forms
            .iter()
            .map(|(_, g)| GeneratorView::Form(g.a.clone(), g.b.clone(), g.c.clone()))
            .collect(),
        unit: None,
        maximal: cond.maximal,
        assumptions,
        theorems,
        w: order.w,
        euler_x: x,
        generation_bound: 0,
        log_h,
        factor_base_size: 0,
        order_witness: true,
        proof: crate::verdict::AllChecksPassed(()),
    })
}
