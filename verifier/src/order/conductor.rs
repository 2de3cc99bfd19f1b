//! The primes of the conductor up to the trial-division bound.
//!
//! `D = f² d` with `d` fundamental. A prime `p` divides `f` exactly when
//! `p² | D` and `D/p²` is still a discriminant (`≡ 0, 1 mod 4`) (common
//! practice; Cox §7). The checks that follow need only primes up to
//! `max(B_gen, X)`, so trial division to that bound finds every conductor
//! prime they can meet; larger ones are folded into the analytic error
//! (see `analytic/class_number_formula.rs`). No factorisation of `D` is
//! needed (`docs/certificates.md`, section 0).

use crate::arith::{primes_up_to, small_conductor};
use crate::report::reason::{reject_if, Check, Reason};
use crate::report::view::prime_powers_text;
use rug::Integer;

/// Token: the conductor primes up to the bound, as stated.
#[derive(Debug)]
pub(crate) struct ConductorOk {
    trial_primes: Vec<u64>,
    d_small: Integer,
    conductor: Vec<(u64, u32)>,
}

impl ConductorOk {
    /// Every prime up to the trial-division bound, increasing.
    pub(crate) fn trial_primes(&self) -> &[u64] {
        &self.trial_primes
    }

    /// `d_s = D / f_s²`, where `f_s` is the conductor's part found.
    pub(crate) fn d_small(&self) -> &Integer {
        &self.d_small
    }

    /// `(p, e)` with `p^e ‖ f`, for `p` up to the bound.
    pub(crate) fn primes(&self) -> &[(u64, u32)] {
        &self.conductor
    }

    pub(crate) fn divides_conductor(&self, p: u64) -> bool {
        self.conductor.iter().any(|(q, _)| *q == p)
    }
}

/// Trial division to `bound` (the caller caps it) must find exactly the
/// conductor primes the certificate states.
pub(crate) fn check_conductor(
    stated: &[(u64, u32)],
    d: &Integer,
    bound: u64,
) -> Check<ConductorOk> {
    let trial_primes = primes_up_to(bound);
    let (conductor, d_small) = small_conductor(d, &trial_primes);
    reject_if(
        conductor != stated,
        Reason::ConductorMismatch,
        format_args!(
            "trial division to {bound} finds the conductor's prime powers {}; the certificate states {}",
            prime_powers_text(&conductor),
            prime_powers_text(stated)
        ),
    )?;
    Ok(ConductorOk {
        trial_primes,
        d_small,
        conductor,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stated_conductor_must_match_trial_division() {
        // -300 = 10² · -3 (common practice)
        let d = Integer::from(-300);
        let ok = check_conductor(&[(2, 1), (5, 1)], &d, 100).unwrap();
        assert_eq!(ok.d_small(), &Integer::from(-3));
        assert!(ok.divides_conductor(5) && !ok.divides_conductor(3));
        let e = check_conductor(&[(2, 1)], &d, 100).unwrap_err();
        assert_eq!(e.reason, Reason::ConductorMismatch);
        assert!(e.detail.contains("2 · 5"), "{}", e.detail);
        // a conductor prime beyond the bound is not looked for
        assert!(check_conductor(&[(2, 1)], &d, 4).is_ok());
    }
}
