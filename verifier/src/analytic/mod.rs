//! Step 5: the analytic bound (`docs/certificates.md`, sections 5 and 7).
//!
//! An enclosure of `log h` (`log h R` for `D > 0`) comes either from the
//! Euler product of Belabas and Friedman under GRH ([`euler`]) or, without
//! GRH for small `D < 0`, from an exact series ([`series`]); the class
//! number formula and the conclusion step are in
//! [`class_number_formula`]. All of it is computed in outward-rounded
//! intervals ([`interval`]).

pub(crate) mod class_number_formula;
pub(crate) mod euler;
pub(crate) mod field;
pub(crate) mod interval;
pub(crate) mod series;

use crate::order::{ConductorOk, MaximalityOk, OrderOk};
use crate::registry::{self, Theorem};
use crate::report::reason::{reject, Check, Reason};
use classcert_format::EulerTrace;
use interval::Interval;

/// How the enclosure of `log h` was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// The Euler product to the cut-off `x` (GRH).
    EulerProduct { x: u64 },
    /// The unconditional series with `terms` terms and a tail bound.
    Series { terms: u64 },
}

/// Token: a rigorous enclosure of `log h` (`log h R` for `D > 0`), with
/// the registry entries it rests on.
#[derive(Debug, Clone)]
pub(crate) struct BoundOk {
    log_h: Interval,
    method: Method,
    theorems: Vec<&'static Theorem>,
}

impl BoundOk {
    pub(crate) fn log_h(&self) -> &Interval {
        &self.log_h
    }

    pub(crate) fn method(&self) -> Method {
        self.method
    }

    pub(crate) fn theorems(&self) -> &[&'static Theorem] {
        &self.theorems
    }
}

/// The largest prime the analytic side needs by trial division: `X` for
/// the Euler product, none for the series.
pub(crate) fn primes_needed(e: &EulerTrace) -> u64 {
    if e.theorem == registry::ERFC_SERIES {
        0
    } else {
        e.x
    }
}

/// Recomputes the enclosure the trace `e` states, by the theorem it names;
/// `beat` is called now and then while it runs (progress only).
pub(crate) fn check_bound(
    e: &EulerTrace,
    order: &OrderOk,
    cond: &ConductorOk,
    maximality: &MaximalityOk,
    beat: &mut dyn FnMut(),
) -> Check<BoundOk> {
    let (method, ids): (Method, &[&str]) = match registry::lookup(&e.theorem).map(|t| t.id) {
        Some(registry::ERFC_SERIES) => (Method::Series { terms: e.x }, &[registry::ERFC_SERIES]),
        Some(registry::BELABAS_FRIEDMAN) if order.is_real() => (
            Method::EulerProduct { x: e.x },
            &[
                registry::BELABAS_FRIEDMAN,
                registry::CLASS_NUMBER_FORMULA_REAL,
            ],
        ),
        Some(registry::BELABAS_FRIEDMAN) => (
            Method::EulerProduct { x: e.x },
            &[registry::BELABAS_FRIEDMAN, registry::CLASS_NUMBER_FORMULA],
        ),
        _ => {
            return reject(
                Reason::UnknownTheorem,
                format!(
                    "\"{}\" is not an analytic theorem in the registry",
                    registry::short_id(&e.theorem)
                ),
            )
        }
    };
    let log_h = match method {
        Method::Series { .. } => series::check_series(e, order, maximality.is_maximal(), beat)?,
        Method::EulerProduct { .. } => euler::check_trace(e, order, cond, beat)?,
    };
    Ok(BoundOk {
        log_h,
        method,
        theorems: ids.iter().copied().filter_map(registry::lookup).collect(),
    })
}
