//! Step 4 (`D > 0`): the unit group and the regulator (`docs/certificates.md`,
//! section 4).
//!
//! The certificate states a unit `ε` in compact representation
//! ([`compact`]): a chain of ideal equations ending at the order proves
//! `(ε) = O`, so `ε` is a unit, and `R* = |log|ε||` is computed in
//! outward-rounded intervals. If `R* > 0`, then `R* = [O^* : <-1, ε>] R`
//! with the index a positive integer (registry entry `unit-index`); the
//! analytic check later shows the index is 1. [`regulator`] compares the
//! stated regulator and norm with what the chain shows.

pub(crate) mod compact;
pub(crate) mod field;
mod regulator;

pub(crate) use regulator::UnitFacts;

use crate::registry::{self, Theorem};
use crate::report::reason::{reject, Check, Reason};
use classcert_format::Units;
use rug::Integer;

/// Token: the unit section is what the order needs; for `D > 0` a unit of
/// infinite order with `R* = |log|ε|| > 0`.
#[derive(Debug)]
pub(crate) struct UnitsOk {
    unit: Option<UnitFacts>,
}

impl UnitsOk {
    pub(crate) fn unit(&self) -> Option<&UnitFacts> {
        self.unit.as_ref()
    }

    pub(crate) fn into_unit(self) -> Option<UnitFacts> {
        self.unit
    }

    pub(crate) fn theorem(&self) -> Option<&'static Theorem> {
        self.unit
            .as_ref()
            .and(registry::lookup(registry::UNIT_INDEX))
    }
}

/// `real`: `D > 0`, where the unit section is required; for `D < 0` it is
/// refused (the unit group is finite, of order `w`).
pub(crate) fn check_units(units: &Option<Units>, d: &Integer, real: bool) -> Check<UnitsOk> {
    let units = match (units, real) {
        (None, false) => return Ok(UnitsOk { unit: None }),
        (Some(u), true) => u,
        (Some(_), false) => return reject(Reason::UnitsShape, "a unit section is only for D > 0"),
        (None, true) => {
            return reject(
                Reason::UnitsShape,
                "D > 0 needs the fundamental unit and the regulator",
            )
        }
    };
    let chain = compact::check_chain(d, &units.steps)?;
    let facts = regulator::check_stated(units, &chain)?;
    Ok(UnitsOk { unit: Some(facts) })
}
