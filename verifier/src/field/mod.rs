//! Number fields `K = Q[x]/(F)`: the polynomial arithmetic their checks
//! rest on. Over Z (`zpoly`: products, division, resultants, discriminants)
//! and over `F_p` (`fppoly`: distinct-degree factorisation, degree
//! patterns, Rabin's irreducibility test). The design note is
//! `general-fields.md`.

pub mod fppoly;
pub mod linmodp;
pub mod order;
pub mod prime;
pub mod roots;
pub mod zpoly;

/// A small deterministic generator for the tests (SplitMix64, common
/// practice), so that random cases are the same on every run.
#[cfg(test)]
pub(crate) struct TestRng(u64);

#[cfg(test)]
impl TestRng {
    pub(crate) fn new(seed: u64) -> Self {
        TestRng(seed)
    }

    pub(crate) fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// Uniform-ish in `[lo, hi]`.
    pub(crate) fn range(&mut self, lo: i64, hi: i64) -> i64 {
        lo + (self.next() % (hi - lo + 1) as u64) as i64
    }
}
