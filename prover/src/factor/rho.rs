//! Pollard's rho method with Brent's cycle finding and batched gcds, under
//! a step budget.

use rug::Integer;

/// Number of products `|x - y|` accumulated before one gcd is taken (Brent's
/// batching parameter `m`).
const GCD_BATCH: u64 = 128;

/// Finds a non-trivial divisor of the odd composite, non-prime-power `n`
/// by Pollard's rho method with Brent's cycle detection and batched gcds
/// (Brent 1980, Section 7). Retries with a new polynomial `x² + c` when a
/// run collapses to the trivial divisor `n`. Returns `None` if the budget
/// is exhausted.
pub(super) fn pollard_brent(n: &Integer, budget: &mut u64, seed: &mut u64) -> Option<Integer> {
    if n.is_even() {
        return Some(Integer::from(2));
    }
    loop {
        // Choose the polynomial constant and starting point deterministically.
        let c = Integer::from(*seed) % n;
        let y0 = Integer::from(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 1) % n;
        *seed = seed.wrapping_add(1);
        if let Some(d) = brent_run(n, &c, y0, budget)? {
            return Some(d);
        }
    }
}

/// One run of Brent's algorithm. Result: `None` = budget
/// exhausted, `Some(None)` = run failed (gcd was `n`), `Some(Some(d))` = found.
fn brent_run(n: &Integer, c: &Integer, y0: Integer, budget: &mut u64) -> Option<Option<Integer>> {
    let f = |v: &mut Integer| {
        v.square_mut();
        *v += c;
        *v %= n;
    };

    let mut y = y0;
    let mut x = Integer::new();
    let mut ys = Integer::new();
    let mut q = Integer::from(1);
    let mut g = Integer::from(1);
    let mut r: u64 = 1;
    let mut diff = Integer::new();

    while g == 1 {
        x.clone_from(&y);
        for _ in 0..r {
            spend(budget)?;
            f(&mut y);
        }
        let mut k: u64 = 0;
        while k < r && g == 1 {
            ys.clone_from(&y);
            let batch = GCD_BATCH.min(r - k);
            for _ in 0..batch {
                spend(budget)?;
                f(&mut y);
                diff.assign_diff_abs(&x, &y);
                q *= &diff;
                q %= n;
            }
            g = Integer::from(q.gcd_ref(n));
            k += batch;
        }
        r = r.checked_mul(2)?;
    }

    if g == *n {
        // The batch overshot: step again from the saved point one at a time.
        loop {
            spend(budget)?;
            f(&mut ys);
            diff.assign_diff_abs(&x, &ys);
            g = Integer::from(diff.gcd_ref(n));
            if g != 1 {
                break;
            }
        }
    }
    if g == *n {
        Some(None)
    } else {
        Some(Some(g))
    }
}

/// Uses one rho iteration from the budget; `None` when it is exhausted.
fn spend(budget: &mut u64) -> Option<()> {
    *budget = budget.checked_sub(1)?;
    Some(())
}

/// Helper: `self = |a - b|`.
trait AssignDiffAbs {
    fn assign_diff_abs(&mut self, a: &Integer, b: &Integer);
}

impl AssignDiffAbs for Integer {
    fn assign_diff_abs(&mut self, a: &Integer, b: &Integer) {
        use rug::Assign;
        self.assign(a - b);
        self.abs_mut();
    }
}
