//! The order of the checks, and the only place a verified result is made.
//!
//! ```text
//! order/        discriminant → conductor (trial division) → maximality
//! ideals/       the generation statement → factor base coverage
//! relations/    raw relations by element witnesses, then derived relations
//!               as combinations of those before them (D > 0)
//! lattice/      rows of H → Smith form → eliminations → the claim
//! units/        the unit's compact representation, R* > 0 (D > 0)
//! analytic/     Euler product or series → log h → h = h*, R = R*
//! ```
//!
//! Fail closed: each step returns a token that only its own module can
//! build (its fields are private there), and [`Verified`] is built here,
//! from all the tokens of one path, by the two private functions at the
//! end of this file. A skipped step does not compile, and every word the
//! verdict says (the theorems, the hypotheses, the cut-off) is read off the
//! tokens, so it is what was checked.

use crate::analytic::class_number_formula::{check_conclusion, AnalyticOk};
use crate::analytic::field::{check_field_bound, FieldFacts};
use crate::analytic::interval::Interval;
use crate::analytic::{self, Method};
use crate::ideals::field::{check_field_generation, field_bound, FieldArith};
use crate::ideals::generation::{self, GenerationOk};
use crate::ideals::quadratic::{QuadraticIdeal, QuadraticOrder};
use crate::lattice::claim::{check_claim, ClaimOk};
use crate::lattice::{check_lattice, LatticeOk};
use crate::limits::MAX_SIEVE;
use crate::order::field::{check_field_maximality, check_field_order};
use crate::order::ConductorOk;
use crate::order::{check_conductor, check_discriminant, check_maximality, MaximalityOk, OrderOk};
use crate::registry;
use crate::registry::{Hypothesis, Theorem};
use crate::relations::{check_raw_relations, RawOk, Witnesses};
use crate::report::reason::{reject, reject_if, Check, Reason};
use crate::report::view::{Assumption, CertificateKind, FieldSummary, GeneratorView, UnitSummary};
use crate::units::field::check_field_units;
use crate::units::{check_units, UnitsOk};
use crate::witness::{
    check_h, check_witness_bound, check_witnesses, FactorsOk, WitnessBoundOk, WitnessesOk,
};
use classcert_format::{Body, FieldBody, WitnessBody};
use rug::Integer;

/// What is known once every check of one path has passed. Built only in
/// this module, from the tokens; read through its accessors.
#[derive(Debug, Clone)]
pub struct Verified {
    kind: CertificateKind,
    class_number: Integer,
    invariants: Vec<Integer>,
    generators: Vec<GeneratorView>,
    unit: Option<UnitSummary>,
    maximal: bool,
    assumptions: Vec<Assumption>,
    theorems: Vec<&'static Theorem>,
    w: u32,
    method: Method,
    generation_bound: Option<u64>,
    log_h: Interval,
    factor_base_size: Option<usize>,
    field: Option<FieldSummary>,
}

impl Verified {
    /// Number fields: the field, its order and the regulator.
    pub fn field(&self) -> Option<&FieldSummary> {
        self.field.as_ref()
    }
    pub fn kind(&self) -> CertificateKind {
        self.kind
    }
    pub fn class_number(&self) -> &Integer {
        &self.class_number
    }
    /// `d_1 | d_2 | …`, all `> 1` (empty for the trivial group).
    pub fn invariants(&self) -> &[Integer] {
        &self.invariants
    }
    /// One generator per invariant.
    pub fn generators(&self) -> &[GeneratorView] {
        &self.generators
    }
    /// `D > 0`: the fundamental unit and the regulator.
    pub fn unit(&self) -> Option<&UnitSummary> {
        self.unit.as_ref()
    }
    /// Whether the order was certified to be the maximal one.
    pub fn maximal(&self) -> bool {
        self.maximal
    }
    /// The hypotheses the result rests on (empty: unconditional).
    pub fn assumptions(&self) -> &[Assumption] {
        &self.assumptions
    }
    /// Every registry entry the checks used.
    pub fn theorems(&self) -> &[&'static Theorem] {
        &self.theorems
    }
    /// Roots of unity in the order.
    pub fn w(&self) -> u32 {
        self.w
    }
    /// How the analytic bound was obtained.
    pub fn method(&self) -> Method {
        self.method
    }
    /// The generation bound the factor base was checked against (none for
    /// order witnesses, which need no generation statement).
    pub fn generation_bound(&self) -> Option<u64> {
        self.generation_bound
    }
    /// The enclosure of `log h` (`log h R` for `D > 0`).
    pub fn log_h(&self) -> &Interval {
        &self.log_h
    }
    /// Prime ideals in the factor base (relations certificates).
    pub fn factor_base_size(&self) -> Option<usize> {
        self.factor_base_size
    }
}

/// The stage names passed to a progress observer, in order (an order
/// witness passes "order", "lattice" for its classes, "analytic bound";
/// a long stage repeats its name now and then).
pub const STAGES: &[&str] = &[
    "order",
    "factor base",
    "relations",
    "lattice",
    "units",
    "analytic bound",
];

/// Checks a full certificate. `progress` is told each stage as it starts.
pub(crate) fn verify_relations(body: &Body, progress: &mut dyn FnMut(&str)) -> Check<Verified> {
    progress("order");
    let order = check_discriminant(&body.order)?;
    let statement = generation::statement(&body.generation_theorem, &order)?;
    let trial_bound = statement.bound().max(analytic::primes_needed(&body.euler));
    reject_if(
        trial_bound > MAX_SIEVE,
        Reason::OverLimit,
        format_args!("the trial-division bound {trial_bound} exceeds {MAX_SIEVE}"),
    )?;
    let cond = check_conductor(&body.conductor_small, order.d(), trial_bound)?;
    let maximality = check_maximality(&body.maximality, order.d())?;
    // The analytic bound needs only the order and the Euler trace: it runs
    // on a second thread while the relations are checked, and is joined
    // after them, so a rejection names the same first failure as before.
    let (bound, checked) = alongside(
        || analytic::check_bound(&body.euler, &order, &cond, &maximality, &mut || {}),
        |progress| check_algebra(body, &order, &cond, &maximality, statement, progress),
        progress,
    );
    let (gen, raw, elements, lat, claim, units) = checked?;
    let bound = bound?;
    let analytic = check_conclusion(bound, lat.h_star(), units.unit().map(|u| u.regulator()))?;
    Ok(from_relations(
        order, maximality, gen, raw, elements, lat, claim, units, analytic,
    ))
}

/// What [`check_algebra`] hands on.
type Algebra<'a> = (
    GenerationOk<QuadraticIdeal>,
    RawOk<'a>,
    Option<&'static Theorem>,
    LatticeOk,
    ClaimOk,
    UnitsOk,
);

/// The factor base, relations, lattice, claim and units of a full
/// certificate.
fn check_algebra<'a>(
    body: &'a Body,
    order: &OrderOk,
    cond: &ConductorOk,
    maximality: &MaximalityOk,
    statement: generation::Statement,
    progress: &mut dyn FnMut(&str),
) -> Check<Algebra<'a>> {
    progress("factor base");
    let arith = QuadraticOrder::new(order.d(), cond);
    let gen = generation::check_generation(
        &arith,
        statement,
        maximality,
        &body.factor_base,
        cond.trial_primes(),
    )?;
    progress("relations");
    let raw = check_raw_relations(
        &arith,
        gen.ideals(),
        &body.lattice.raw_relations,
        &body.lattice.derived_relations,
        order.is_real(),
        &mut || progress("relations"),
    )?;
    progress("lattice");
    let forms = gen.ideals().iter().map(|i| &i.form).collect();
    let mut witnesses = Witnesses::new(&raw, forms, order.d());
    let lat = check_lattice(&body.lattice, gen.ideals().len(), &mut witnesses)?;
    let elements = witnesses.theorem();
    let labels: Vec<_> = gen.ideals().iter().map(|i| (i.p, i.b)).collect();
    let forms: Vec<_> = gen.ideals().iter().map(|i| &i.form).collect();
    let claim = check_claim(
        &body.claim,
        &body.lattice,
        &lat,
        &labels,
        &forms,
        order.d(),
        !order.is_real(),
    )?;
    progress("units");
    let units = check_units(&body.units, order.d(), order.is_real())?;
    Ok((gen, raw, elements, lat, claim, units))
}

/// Runs `analytic` on a scoped second thread while `algebra` runs here,
/// then joins it (reporting "analytic bound" while it is still running).
/// Its result comes second, so a rejection names the same first failure
/// as on one thread; a thread that stopped early is a rejection.
fn alongside<B: Send, A>(
    analytic: impl FnOnce() -> Check<B> + Send,
    algebra: impl FnOnce(&mut dyn FnMut(&str)) -> Check<A>,
    progress: &mut dyn FnMut(&str),
) -> (Check<B>, Check<A>) {
    std::thread::scope(|scope| {
        let handle = scope.spawn(analytic);
        let checked = algebra(progress);
        progress("analytic bound");
        while !handle.is_finished() {
            progress("analytic bound");
            std::thread::sleep(std::time::Duration::from_millis(20));
        }
        let bound = handle.join().unwrap_or_else(|_| {
            reject(
                Reason::AnalyticInconsistent,
                "the analytic check stopped before its end",
            )
        });
        (bound, checked)
    })
}

/// Checks an order-witness certificate (`D < 0` only).
pub(crate) fn verify_order_witness(
    w: &WitnessBody,
    progress: &mut dyn FnMut(&str),
) -> Check<Verified> {
    let order = check_discriminant(&w.order)?;
    reject_if(
        order.is_real(),
        Reason::UnsupportedOrder,
        "order witnesses are checked for D < 0 only (the unit group is needed for D > 0)",
    )?;
    let trial_bound = analytic::primes_needed(&w.euler);
    reject_if(
        trial_bound > MAX_SIEVE,
        Reason::OverLimit,
        format_args!("X = {trial_bound} exceeds {MAX_SIEVE}"),
    )?;
    progress("order");
    let cond = check_conductor(&w.conductor_small, order.d(), trial_bound)?;
    let maximality = check_maximality(&w.maximality, order.d())?;
    let h = check_h(&w.class_number, &w.h_factors)?;
    progress("lattice");
    let witnesses = check_witnesses(&w.generators, &h, order.d())?;
    progress("analytic bound");
    let bound = analytic::check_bound(&w.euler, &order, &cond, &maximality, &mut || {
        progress("analytic bound")
    })?;
    let bound = check_witness_bound(bound, &w.class_number)?;
    Ok(from_order_witness(order, maximality, h, witnesses, bound))
}

/// The hypotheses behind `theorems`, and "BPSW probable prime" when a
/// prime rests on that test alone.
fn assumptions(theorems: &[&'static Theorem], bpsw: bool) -> Vec<Assumption> {
    let mut out = Vec::new();
    if theorems.iter().any(|t| t.hypothesis == Hypothesis::Grh) {
        out.push(Assumption::Grh);
    }
    if bpsw {
        out.push(Assumption::BpswProbablePrime);
    }
    out
}

/// Appends the theorems of the analytic bound and of the maximality
/// evidence; returns whether a prime rests on BPSW alone.
fn add_bound_and_maximality(
    theorems: &mut Vec<&'static Theorem>,
    analytic: &AnalyticOk,
    maximality: &MaximalityOk,
) -> bool {
    for t in analytic.bound().theorems() {
        push_unique(theorems, t);
    }
    let evidence = maximality.evidence().copied();
    for t in evidence.iter().flat_map(|e| e.theorems()) {
        push_unique(theorems, t);
    }
    evidence.is_some_and(|e| e.bpsw_assumed)
}

/// Appends `t` unless it is listed already.
fn push_unique(list: &mut Vec<&'static Theorem>, t: &'static Theorem) {
    if !list.iter().any(|s| s.id == t.id) {
        list.push(t);
    }
}

#[allow(clippy::too_many_arguments)]
fn from_relations(
    order: OrderOk,
    maximality: MaximalityOk,
    gen: GenerationOk<QuadraticIdeal>,
    raw: RawOk,
    elements: Option<&'static Theorem>,
    lat: LatticeOk,
    claim: ClaimOk,
    units: UnitsOk,
    analytic: AnalyticOk,
) -> Verified {
    let mut theorems = vec![gen.theorem()];
    let optional = [raw.theorem(), elements, lat.theorem(), units.theorem()];
    for t in optional.into_iter().flatten() {
        push_unique(&mut theorems, t);
    }
    let bpsw = add_bound_and_maximality(&mut theorems, &analytic, &maximality);
    let bound = analytic.into_bound();
    Verified {
        kind: CertificateKind::Relations,
        class_number: lat.h_star().clone(),
        invariants: claim.invariants().to_vec(),
        generators: claim.into_generators(),
        unit: units.into_unit().map(|u| UnitSummary {
            regulator: u.regulator().clone(),
            norm: u.norm(),
            compact_length: u.steps(),
        }),
        maximal: maximality.is_maximal(),
        assumptions: assumptions(&theorems, bpsw),
        theorems,
        w: order.w(),
        method: bound.method(),
        generation_bound: Some(gen.bound()),
        log_h: bound.log_h().clone(),
        factor_base_size: Some(gen.ideals().len()),
        field: None,
    }
}

fn from_order_witness(
    order: OrderOk,
    maximality: MaximalityOk,
    h: FactorsOk,
    witnesses: WitnessesOk,
    bound: WitnessBoundOk,
) -> Verified {
    let max_evidence = maximality.evidence().copied();
    let mut theorems = Vec::new();
    for t in (witnesses.theorem().into_iter())
        .chain(bound.bound().theorems().iter().copied())
        .chain(max_evidence.iter().flat_map(|e| e.theorems()))
        .chain(h.evidence().theorems())
    {
        push_unique(&mut theorems, t);
    }
    let bpsw = h.evidence().bpsw_assumed || max_evidence.is_some_and(|e| e.bpsw_assumed);
    let invariants = witnesses.invariants();
    Verified {
        kind: CertificateKind::OrderWitness,
        class_number: h.h().clone(),
        generators: witnesses.generators(),
        invariants,
        unit: None,
        maximal: maximality.is_maximal(),
        assumptions: assumptions(&theorems, bpsw),
        theorems,
        w: order.w(),
        method: bound.bound().method(),
        generation_bound: None,
        log_h: bound.bound().log_h().clone(),
        factor_base_size: None,
        field: None,
    }
}

/// Checks a number-field certificate (`general-fields.md`): the order and
/// its maximality, the factor base, the relations and the lattice, the
/// units, then the analytic bound, in that order.
pub(crate) fn verify_field(body: &FieldBody, progress: &mut dyn FnMut(&str)) -> Check<Verified> {
    progress("order");
    let o = check_field_order(&body.order, &body.roots)?;
    let maximality = check_field_maximality(&body.maximality, body.unfactored.as_ref(), &o)?;
    let order = o.order();
    let abs_disc = Integer::from(order.discriminant().abs_ref());
    let statement = field_bound(&body.generation_theorem, &abs_disc)?;
    let trial_bound = statement.1.max(body.euler.x);
    reject_if(
        trial_bound > MAX_SIEVE,
        Reason::OverLimit,
        format_args!("the prime bound {trial_bound} exceeds {MAX_SIEVE}"),
    )?;
    let primes = crate::arith::primes_up_to(trial_bound);
    progress("factor base");
    let arith = FieldArith { order };
    let gen = check_field_generation(
        &arith,
        statement,
        &maximality,
        &body.factor_base,
        &primes,
        o.disc_f(),
        body.euler.x,
    )?;
    // The Euler product needs the splitting of each p (the checked factor
    // base) and the signature: it runs on a second thread while the
    // relations, the lattice and the units are checked. It takes the
    // stated w, which the unit check then confirms before anything is
    // concluded.
    let splitting = |p: u64| gen.splitting(p).map(<[_]>::to_vec);
    let facts = FieldFacts {
        polynomial: order.polynomial(),
        abs_disc: &abs_disc,
        signature: o.roots().signature(),
        w: body.units.w,
        splitting: &splitting,
    };
    let (bound, checked) = alongside(
        || check_field_bound(&body.euler, &facts, &primes, &mut || {}),
        |progress| check_field_algebra(body, &arith, &gen, o.roots(), o.disc_f(), progress),
        progress,
    );
    let (lat, claim, units) = checked?;
    let bound = bound?;
    let analytic = check_conclusion(bound, lat.h_star(), Some(units.regulator()))?;

    let mut theorems = vec![gen.theorem()];
    let ids = [
        registry::FIELD_ORDER,
        registry::FIELD_PRIMES,
        registry::FIELD_RELATIONS,
        registry::LATTICE_INDEX,
        registry::FIELD_ROOTS,
        registry::FIELD_UNITS,
        registry::FIELD_TORSION,
    ];
    for t in ids.iter().filter_map(|id| registry::lookup(id)) {
        push_unique(&mut theorems, t);
    }
    let bpsw = add_bound_and_maximality(&mut theorems, &analytic, &maximality);
    let mut assumed = assumptions(&theorems, bpsw);
    if body.unfactored.is_some() {
        assumed.push(Assumption::SquarefreeCofactor);
    }
    let bound = analytic.into_bound();
    Ok(Verified {
        kind: CertificateKind::Relations,
        class_number: lat.h_star().clone(),
        invariants: claim.invariants().to_vec(),
        generators: claim
            .into_generators()
            .into_iter()
            .map(|g| match g {
                GeneratorView::Ideals(v) => GeneratorView::FieldIdeals(v),
                g => g,
            })
            .collect(),
        unit: None,
        maximal: maximality.is_maximal(),
        assumptions: assumed,
        theorems,
        w: units.w(),
        method: bound.method(),
        generation_bound: Some(gen.bound()),
        log_h: bound.log_h().clone(),
        factor_base_size: Some(gen.ideals().len()),
        field: Some(FieldSummary {
            polynomial: order.polynomial().to_vec(),
            signature: units.signature(),
            discriminant: order.discriminant().clone(),
            index: order.index().clone(),
            unfactored: body.unfactored.clone(),
            regulator: units.regulator().clone(),
        }),
    })
}

/// The relations, the lattice, the claim and the units of a number-field
/// certificate.
fn check_field_algebra(
    body: &FieldBody,
    arith: &FieldArith,
    gen: &crate::ideals::field::FieldGenerationOk,
    roots: &crate::field::roots::Roots,
    disc_f: &Integer,
    progress: &mut dyn FnMut(&str),
) -> Check<(LatticeOk, ClaimOk, crate::units::field::FieldUnitsOk)> {
    progress("relations");
    let raw = check_raw_relations(
        arith,
        gen.ideals(),
        &body.lattice.raw_relations,
        &body.lattice.derived_relations,
        true,
        &mut || progress("relations"),
    )?;
    progress("lattice");
    let mut witnesses = Witnesses::new(&raw, Vec::new(), arith.order.discriminant());
    let lat = check_lattice(&body.lattice, gen.ideals().len(), &mut witnesses)?;
    let labels = (gen.ideals().iter().enumerate()).map(|(k, q)| (q.p(), k as u64));
    let labels: Vec<_> = labels.collect();
    let claim = check_claim(
        &body.claim,
        &body.lattice,
        &lat,
        &labels,
        &[],
        arith.order.discriminant(),
        false,
    )?;
    progress("units");
    let raw_list = body.lattice.raw_relations.as_deref().unwrap_or_default();
    let units = check_field_units(&body.units, roots, arith.order, disc_f, raw_list)?;
    Ok((lat, claim, units))
}
