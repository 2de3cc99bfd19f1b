//! Units of real quadratic orders: the regulator from the relations'
//! kernel ([`regulator`]: logarithms of power products, a real Euclid, an
//! expansion modulo a prime) and the fundamental unit's compact
//! representation from the regulator alone ([`compact`]).

pub mod compact;
pub mod regulator;

pub use compact::compact;
pub use regulator::{expand, log_abs, log_power_product, unit_gcd, Factor};
