//! The self-initialising quadratic sieve over binary quadratic forms, with
//! single large primes: S. Contini, "Factoring integers with the
//! self-initializing quadratic sieve" (thesis, 1997) for the polynomial
//! switching; M. J. Jacobson, Math. Comp. 68 (1999) for sieving forms;
//! J.-F. Biasse, Adv. Math. Commun. 4 (2010) for large primes in class group
//! computations; `shared/design/sieving.md` §§1, 2 and 5.
//!
//! **One relation.** For `u ≡ D (mod 2)` the element `α = (u + √D)/2` has
//! norm `(u² - D)/4`. When that factors over the factor base,
//! `(α) = ∏ P_i^{s_i v_i}` with `s_i = +1` exactly when `u ≡ b_i (mod 2p_i)`
//! (ramified primes have `v_i = 1`).
//!
//! **Polynomials.** A *family* is one `a = q_1 ⋯ q_s` (split factor-base
//! primes) with `B_j ≡ √D (mod q_j)`, `B_j ≡ 0 (mod q_i)` for `i ≠ j`; its
//! `2^{s-1}` polynomials `g(x) = a x² + b x + c` take `b = ±B_1 ± ⋯ ± B_s`
//! (first sign fixed, `b ≡ D (mod 2)`) and `c = (b² - D)/(4a)`, so that
//! `u = 2ax + b` gives `N(α) = a·g(x)`. Consecutive `b` in Gray-code order
//! differ by `±2B_j`, which moves each root modulo `p` by a precomputed
//! `±2B_j (2a)⁻¹`: the self-initialising step.
//!
//! **Large primes.** A value whose cofactor is one prime `ℓ` above the factor
//! base (and below [`LARGE_MULTIPLIER`] times the largest sieving prime) is
//! a partial relation. Two partials with the same `ℓ` lie in the same prime
//! above `ℓ` or in conjugate ones (orientation from `u mod ℓ`); the
//! difference or the sum of their vectors is a relation without `ℓ` (it is
//! the relation of `α₁ᾱ₂/ℓ` or `α₁α₂/ℓ`).
//!
//! **Determinism.** Family `k` is a pure function of `(D, seed, k)`.
//! Families are sieved in rounds of [`FAMILIES_PER_ROUND`] on every core;
//! a round's findings are merged in order of `(k, polynomial, x)`, so the
//! relations handed out never depend on the number of threads.

use super::{add, Element, FoundRelation, Origin, RelationBatch, RelationSource, Sparse};
use crate::checkpoint::{Checkpoint, CheckpointError};
use crate::fb::{sqrt_mod, FactorBase};
use crate::rng::Rng;
use ciborium::Value;
use classcert_format::cbor::{self, WalkLimits};
use classcert_verifier::math::mod_small;
use rug::ops::Pow;
use rug::Integer;
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, BTreeSet, VecDeque};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Mutex;

/// Primes below this are not sieved (their roots are dense and their
/// logarithms small: about 40 % of the sieve's updates for 6 bits of
/// expected logarithm); candidates are divided by them instead and the
/// threshold is lowered to match ([`SMALL_PRIME_SLACK`]). Measured with
/// `examples/sieve_rate.rs` over 640 families at 60 digits and 128 at 80:
/// 30 and no slack gave 262 and 2.1 relations per second of one thread,
/// 256 and 13 bits 284 and 2.7.
const SMALL_PRIME: u64 = 256;

/// Bits by which the threshold is lowered for the primes not sieved.
const SMALL_PRIME_SLACK: u32 = 13;

/// A cofactor up to this many times the largest sieving prime is a
/// partial relation (30–100 is common practice for one large prime).
pub const LARGE_MULTIPLIER: u64 = 64;

/// Families sieved per round: the unit of work split among threads, of
/// merging and of checkpoints.
pub const FAMILIES_PER_ROUND: u64 = 16;

/// `D > 0`: bits of slack below the mean of `log₂|g|` beyond those of
/// `D < 0`. Measured at 50 digits (12,000 relations, 1,000 sieving
/// primes): 0, 2, 4 and 6 bits took 1,328, 1,056, 880 and 768 families
/// in about the same time (0.9–1.3 s on 2 shared cores); more partials
/// make more combined relations, each with a larger element.
const REAL_EXTRA_SLACK: f64 = 2.0;

/// `D > 0`: the sieve threshold, one for the whole interval. Here `g`
/// changes sign: with `a ≈ √(D/2)/M`,
/// `|g(x)| = |(2ax + b)² - D|/(4a) ≈ G·|1 - 2(x/M)²|` with
/// `G = D/(4a) ≈ M√(D/2)/2`, largest at the centre and at the ends and
/// far smaller near the roots `x ≈ ±M/√2`. The mean of
/// `log₂|1 - 2t²|` over `0 ≤ t ≤ 1` is `-1.087` (numerical integration),
/// so the threshold is `log₂ G - 1.09` less the large primes and the
/// slack. A threshold that follows `log₂|g|` in blocks of 64 positions
/// (down to 8 bits below `log₂ G` near the roots) took 2–5% more families
/// for the same number of relations at 50 digits with every slack tried
/// above, and no less time, so the simpler rule stays.
fn real_threshold(d: &Integer, params: &Params, large_bound: u64) -> u8 {
    let (mantissa, exp) = d.to_f64_exp();
    // log₂ G = log₂ D - 2 - log₂ a, for a of a_bits bits
    let log_g = mantissa.log2() + exp as f64 - 2.0 - params.a_bits as f64 - 1.087;
    (log_g - (large_bound as f64).log2() - params.slack as f64 - 2.0 - REAL_EXTRA_SLACK)
        .clamp(1.0, 120.0) as u8
}

/// The sieve's parameters, fixed before any sieving (they determine every
/// relation, so they are part of a checkpoint's identity).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Params {
    /// Sieve over `-m ≤ x < m`.
    pub m: u32,
    /// Sieve with the factor-base primes at positions `0..primes`.
    pub primes: usize,
    /// Primes per `a`.
    pub s: u32,
    /// Bits of the target `a`.
    pub a_bits: u32,
    /// How far below `log₂ g` the sieve threshold lies, in bits.
    pub slack: u32,
}

impl Params {
    /// `(bits of |D|, sieving primes, half-width)`: the row of the tuning
    /// table for `|D|` of `bits` bits (`D < 0`).
    fn row(bits: u32) -> (u32, usize, u32) {
        const TABLE: [(u32, usize, u32); 10] = [
            (100, 400, 1 << 14),
            (133, 700, 1 << 15),
            (150, 1000, 1 << 15),
            (166, 1600, 1 << 15),
            (183, 2400, 1 << 15),
            (199, 3600, 3 << 14),
            (232, 9000, 1 << 16),
            (250, 16000, 1 << 16),
            (283, 24000, 1 << 16),
            (333, 40000, 1 << 17),
        ];
        *TABLE
            .iter()
            .rev()
            .find(|r| bits >= r.0)
            .unwrap_or(&TABLE[0])
    }

    /// The prime ideals the sieve wants in the factor base for `D < 0`
    /// (the factor base is extended past the generation bound to hold
    /// them).
    pub fn sieving_primes_for(d: &Integer) -> usize {
        Params::row(d.significant_bits()).1
    }

    /// The tuning table, by the bit length of `|D|` (`n` prime ideals in the
    /// factor base). Measured on this project's benchmark discriminants (see
    /// `BENCHMARKS.md`); the starting points were the factoring sieve's
    /// usual sizes (from memory).
    pub fn for_discriminant(d: &Integer, n: usize) -> Params {
        let bits = d.significant_bits();
        let row = Params::row(bits);
        let primes = row.1.min(n);
        let m = row.2;
        // a ≈ √|D| / (2m) balances |D|/(4a) at the centre against a m² at
        // the ends (D < 0); a ≈ √(D/2)/m for D > 0
        let half = bits as f64 / 2.0;
        let a_bits = if *d < 0 {
            half - (2.0 * m as f64).log2()
        } else {
            half - 0.5 - (m as f64).log2()
        }
        .max(8.0);
        // primes of about 11 bits in a (at least 2, so that a varies)
        let s = ((a_bits / 11.0).round() as u32).max(2);
        Params {
            m,
            primes,
            s,
            a_bits: a_bits.round() as u32,
            slack: SMALL_PRIME_SLACK,
        }
    }
}

impl Params {
    /// The parameters for `D > 0` (`n` prime ideals in the factor base),
    /// by the bit length of `D`. The sieving primes are the real driver's
    /// essential block, whose exact linear algebra (combinations of raw
    /// relations) costs far more than the sieve at these sizes, so the
    /// block is smaller than for `D < 0`. Starting values, tried only on
    /// the `bench_d N real` discriminants at 25–40 digits: at 30 digits 250,
    /// 300 and 400 primes gave certificates of the same size (see
    /// `drivers/real.rs`); 400 primes at 40 digits left special-q
    /// eliminations without a relation. The row for 190 bits was measured
    /// on the 60-digit discriminant (198 bits; one thread, full relations
    /// per second: 700 primes 33, 1500 primes 308, 2500 primes 874, 3600
    /// primes 1248; 700 primes left a special-q elimination at p = 12281
    /// without a relation; 1100 and 1500 primes took 84 s and 36 s for the
    /// whole proof and left 256 and 290 dense columns in the essential
    /// block, which decide the certificate's size).
    pub fn for_real(d: &Integer, n: usize) -> Params {
        // (bits of D, sieving primes, half-width)
        const TABLE: [(u32, usize, u32); 5] = [
            (70, 300, 1 << 14),
            (100, 400, 1 << 14),
            (116, 500, 1 << 15),
            (133, 700, 1 << 15),
            (190, 1500, 1 << 15),
        ];
        let bits = d.significant_bits();
        let row = TABLE
            .iter()
            .rev()
            .find(|r| bits >= r.0)
            .unwrap_or(&TABLE[0]);
        let (primes, m) = (row.1.min(n), row.2);
        // a ≈ √(D/2)/m puts the roots of g at ±m/√2
        let a_bits = (bits as f64 / 2.0 - 0.5 - (m as f64).log2()).max(8.0);
        // primes of about 11 bits in a (at least 2, so that a varies)
        let s = ((a_bits / 11.0).round() as u32).max(2);
        Params {
            m,
            primes,
            s,
            a_bits: a_bits.round() as u32,
            slack: 0,
        }
    }
}

/// One smooth or partial value: `N((u + √D)/2) = ± ∏ p_i^{v_i} · large`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Found {
    pub u: Integer,
    /// `(factor-base index, v_i)` by increasing index.
    pub factors: Vec<(u32, u32)>,
    /// 1 for a full relation, else the large prime.
    pub large: u64,
}

/// The sieve for one discriminant, factor base and seed (read-only once
/// built: threads share it).
pub struct Siqs<'a> {
    d: Integer,
    fb: &'a FactorBase,
    seed: u64,
    pub params: Params,
    /// `√D mod p` (0 for p = 2 and ramified p).
    roots: Vec<u32>,
    logs: Vec<u8>,
    /// Indices of split primes from which `a` is drawn.
    pool: Vec<usize>,
    /// Largest sieving prime, and the large-prime bound.
    pmax: u64,
    large_bound: u64,
    threshold: u8,
}

/// What one family needs per prime, and the sieve array (one per thread).
struct Workspace {
    sieve: Vec<u8>,
    pos1: Vec<u32>,
    pos2: Vec<u32>,
    /// `2 B_j (2a)^{-1} mod p`, `s` rows.
    deltas: Vec<Vec<u32>>,
    /// The runs of indices the sieve walks: those of the sieving primes
    /// past the small ones, less the primes of `a`.
    runs: Vec<std::ops::Range<usize>>,
}

/// `lo..kp` less the indices in `q`, as ascending runs.
fn sieved_runs(lo: usize, kp: usize, q: &[usize]) -> Vec<std::ops::Range<usize>> {
    let mut cuts: Vec<usize> = q.iter().copied().filter(|i| (lo..kp).contains(i)).collect();
    cuts.sort_unstable();
    let mut runs = Vec::with_capacity(cuts.len() + 1);
    let mut start = lo;
    for c in cuts {
        if c > start {
            runs.push(start..c);
        }
        start = start.max(c + 1);
    }
    if start < kp {
        runs.push(start..kp);
    }
    runs
}

impl<'a> Siqs<'a> {
    pub fn new(d: &Integer, fb: &'a FactorBase, params: Params, seed: u64) -> Siqs<'a> {
        let k = params.primes.min(fb.len()).max(1);
        let roots = fb
            .primes
            .iter()
            .map(|&p| {
                if p == 2 {
                    0
                } else {
                    sqrt_mod(mod_small(d, p), p) as u32
                }
            })
            .collect::<Vec<_>>();
        let logs = fb
            .primes
            .iter()
            .map(|&p| (p as f64).log2().round() as u8)
            .collect();
        let pmax = fb.primes[k - 1];
        // a's primes: split, odd, about 2^(a_bits / s), at least 3 times s
        // of them (more when the base allows), from the sieving primes
        let want = (params.a_bits as f64 / params.s as f64).exp2();
        let split: Vec<usize> = (0..k)
            .filter(|&i| fb.primes[i] > SMALL_PRIME && roots[i] != 0)
            .collect();
        let centre = split.partition_point(|&i| (fb.primes[i] as f64) < want);
        let width = (4 * params.s as usize).max(40);
        let lo = centre.saturating_sub(width / 2);
        let hi = (lo + width).min(split.len());
        let lo = hi.saturating_sub(width);
        let pool = split[lo..hi].to_vec();
        let large_bound = (LARGE_MULTIPLIER * pmax).min(pmax.saturating_mul(pmax));
        // log₂ of the typical |g(x)|: M √|D| / 2 to M √|D| for D < 0
        let log_g = (params.m as f64).log2() + d.significant_bits() as f64 / 2.0 - 0.5;
        let threshold = if *d > 0 {
            real_threshold(d, &params, large_bound)
        } else {
            (log_g - (large_bound as f64).log2() - params.slack as f64 - 2.0).clamp(1.0, 120.0)
                as u8
        };
        Siqs {
            d: d.clone(),
            fb,
            seed,
            params,
            roots,
            logs,
            pool,
            pmax,
            large_bound,
            threshold,
        }
    }

    fn sieving_primes(&self) -> usize {
        self.params.primes.min(self.fb.len())
    }

    /// `s - 1` distinct pool primes at random (all `s` but the last factor
    /// of an `a`), with the sum of their `log₂`.
    fn draw(&self, rng: &mut Rng, s: usize) -> (Vec<usize>, f64) {
        let mut chosen: Vec<usize> = Vec::with_capacity(s);
        let mut bits = 0.0;
        while chosen.len() + 1 < s {
            let j = self.pool[rng.below(self.pool.len() as u64) as usize];
            if !chosen.contains(&j) {
                chosen.push(j);
                bits += (self.fb.primes[j] as f64).log2();
            }
        }
        (chosen, bits)
    }

    /// The factor-base indices of `a` for family `k`: `s - 1` distinct
    /// primes from the pool at random, and the pool prime that brings the
    /// product closest to `2^a_bits`.
    pub fn a_primes(&self, k: u64) -> Vec<usize> {
        let mut rng = Rng::new(
            self.seed
                .wrapping_mul(0x9e37_79b9_7f4a_7c15)
                .wrapping_add(k.wrapping_mul(0xd1b5_4a32_d192_ed03)),
        );
        let s = (self.params.s as usize).min(self.pool.len());
        let (mut chosen, bits) = self.draw(&mut rng, s);
        let goal = self.params.a_bits as f64 - bits;
        let last = self
            .pool
            .iter()
            .copied()
            .filter(|j| !chosen.contains(j))
            .min_by(|&x, &y| {
                let dx = ((self.fb.primes[x] as f64).log2() - goal).abs();
                let dy = ((self.fb.primes[y] as f64).log2() - goal).abs();
                dx.total_cmp(&dy).then(x.cmp(&y))
            });
        if let Some(j) = last {
            chosen.push(j);
        }
        chosen.sort_unstable();
        chosen
    }

    fn workspace(&self) -> Workspace {
        let k = self.sieving_primes();
        Workspace {
            sieve: vec![0; 2 * self.params.m as usize],
            pos1: vec![0; k],
            pos2: vec![0; k],
            deltas: vec![vec![0; k]; self.params.s as usize],
            runs: Vec::new(),
        }
    }

    /// Sieves every polynomial of family `k`; the smooth and partial
    /// values in order of (polynomial, x).
    fn family(&self, k: u64, w: &mut Workspace) -> Vec<Found> {
        let q = self.a_primes(k);
        self.polynomials(&q, w, |_| false)
    }

    /// Sieves the polynomials of the family with `a = ∏ q` in Gray-code
    /// order until `enough` holds for the findings so far.
    fn polynomials(
        &self,
        q: &[usize],
        w: &mut Workspace,
        enough: impl Fn(&[Found]) -> bool,
    ) -> Vec<Found> {
        let fb = self.fb;
        let mut out = Vec::new();
        if q.is_empty() {
            return out;
        }
        let a: Integer = q.iter().map(|&i| Integer::from(fb.primes[i])).product();
        // B_j = (a/q_j)·(t_j (a/q_j)^{-1} mod q_j)
        let bj: Vec<Integer> = q
            .iter()
            .map(|&i| {
                let qj = fb.primes[i];
                let cof = Integer::from(&a / qj);
                let inv = inv_mod(cof.mod_u(qj as u32) as u64, qj);
                let g = self.roots[i] as u64 * inv % qj;
                cof * g
            })
            .collect();
        let mut b: Integer = bj.iter().sum();
        if b.is_odd() != self.d.is_odd() {
            b += &a;
        }
        let m = self.params.m as u64;
        let kp = self.sieving_primes();
        // a special prime with its companions may make one prime more
        // than the parameters' s
        if w.deltas.len() < q.len() {
            w.deltas.resize(q.len(), vec![0; kp]);
        }
        for i in 0..kp {
            let p = fb.primes[i];
            if p < SMALL_PRIME || q.contains(&i) {
                continue;
            }
            let inv2a = inv_mod(a.mod_u(p as u32) as u64 * 2 % p, p);
            let bp = b.mod_u(p as u32) as u64;
            let t = self.roots[i] as u64;
            let mp = m % p;
            w.pos1[i] = (((p + t - bp) % p * inv2a + mp) % p) as u32;
            w.pos2[i] = (((2 * p - t - bp) % p * inv2a + mp) % p) as u32;
            for (j, bjv) in bj.iter().enumerate() {
                w.deltas[j][i] = (2 * bjv.mod_u(p as u32) as u64 % p * inv2a % p) as u32;
            }
        }
        // the primes of a and the small primes are not sieved: the others
        // lie in a few runs of indices, walked without a test per prime
        w.runs = sieved_runs(fb.primes[..kp].partition_point(|&p| p < SMALL_PRIME), kp, q);
        let s = q.len();
        let polys = 1u64 << (s - 1);
        for poly in 0..polys {
            if poly > 0 {
                let v = poly.trailing_zeros() as usize;
                let j = v + 1;
                let gray = poly ^ (poly >> 1);
                let plus = gray >> v & 1 == 0;
                let two_bj = Integer::from(&bj[j] * 2u32);
                if plus {
                    b += two_bj;
                } else {
                    b -= two_bj;
                }
                for run in &w.runs {
                    let steps = &w.deltas[j][run.clone()];
                    let roots = w.pos1[run.clone()]
                        .iter_mut()
                        .zip(w.pos2[run.clone()].iter_mut());
                    let primes = &fb.primes[run.clone()];
                    if plus {
                        for (((r1, r2), &d), &p) in roots.zip(steps).zip(primes) {
                            *r1 = sub_mod(*r1, d, p as u32);
                            *r2 = sub_mod(*r2, d, p as u32);
                        }
                    } else {
                        for (((r1, r2), &d), &p) in roots.zip(steps).zip(primes) {
                            *r1 = add_mod(*r1, d, p as u32);
                            *r2 = add_mod(*r2, d, p as u32);
                        }
                    }
                }
            }
            self.sieve_one(&a, &b, q, w, &mut out);
            if enough(&out) {
                break;
            }
        }
        out
    }

    /// A relation with `+1` at factor-base index `i`, from families whose
    /// `a` contains `p_i` (special-q), tried in a fixed order. Beyond the
    /// sieving primes it is an elimination: its support lies below `i`.
    /// Among the sieving primes any other support will do (it names a
    /// column no relation of the sieve has named). For `D > 0` it carries
    /// its element: `(u + √D)/2`, or `(-u + √D)/2` (the conjugate up to
    /// sign) when the vector was negated.
    pub fn elimination(&self, i: usize, families: u64) -> Option<FoundRelation> {
        self.elimination_from(i, 0..families).map(|(_, rel)| rel)
    }

    /// [`Siqs::elimination`] from the families numbered in `families`, and
    /// the number of the family that gave it (a later call from the next
    /// number on finds another relation for `i`).
    pub fn elimination_from(
        &self,
        i: usize,
        families: std::ops::Range<u64>,
    ) -> Option<(u64, FoundRelation)> {
        let mut w = self.workspace();
        let kp = self.sieving_primes();
        // (a ramified p_i works too: b ≡ 0 (mod p_i) and p_i ∤ c, so p_i
        // divides N(α) exactly once)
        if i >= self.fb.len() || self.fb.primes[i] == 2 {
            return None;
        }
        let below_only = i >= kp;
        let qbits = (self.fb.primes[i] as f64).log2();
        let fits = |f: &Found| {
            f.large == 1
                && f.factors.iter().all(|&(j, v)| {
                    if j as usize == i {
                        v == 1
                    } else {
                        !below_only || (j as usize) < i
                    }
                })
                && f.factors.iter().any(|&(j, _)| j as usize == i)
        };
        for t in families {
            // the special prime first: its sign is the fixed one, so a
            // ramified p_i (whose B is 0) repeats no polynomial
            let mut q = vec![i];
            q.extend(self.companions(qbits, (i as u64) << 20 | t));
            if q[1..].contains(&i) {
                // a sieving prime of the pool drew itself: a is not squarefree
                continue;
            }
            let found = self.polynomials(&q, &mut w, |out| out.iter().any(fits));
            if let Some(f) = found.iter().find(|f| fits(f)) {
                let v = self.vector(f);
                let flip = v.get(&i) == Some(&-1);
                let exponents = if flip {
                    v.iter().map(|(&j, &e)| (j, -e)).collect()
                } else {
                    v
                };
                // -ᾱ = (-u + √D)/2 generates the conjugate ideal
                let element = self.element(f).map(|mut el| {
                    if flip {
                        el.x = -el.x;
                    }
                    el
                });
                let rel = FoundRelation { exponents, element };
                debug_assert!(self.element_holds(&rel), "{rel:?}");
                return Some((t, rel));
            }
        }
        None
    }

    /// Pool primes to go with a special prime of `qbits` bits, for the
    /// attempt named by `salt`: as in [`Siqs::a_primes`] with one prime
    /// fewer.
    fn companions(&self, qbits: f64, salt: u64) -> Vec<usize> {
        let mut rng = Rng::new(
            self.seed
                .wrapping_mul(0xa076_1d64_78bd_642f)
                .wrapping_add(salt.wrapping_mul(0xe703_7ed1_a0b4_28db)),
        );
        let rest = self.params.a_bits as f64 - qbits;
        let s = ((rest / 11.0).round() as usize).clamp(1, self.pool.len());
        let (mut chosen, bits) = self.draw(&mut rng, s);
        let goal = rest - bits;
        let cands: Vec<usize> = self
            .pool
            .iter()
            .copied()
            .filter(|j| !chosen.contains(j))
            .collect();
        let mut by_fit = cands.clone();
        by_fit.sort_by(|&x, &y| {
            let dx = ((self.fb.primes[x] as f64).log2() - goal).abs();
            let dy = ((self.fb.primes[y] as f64).log2() - goal).abs();
            dx.total_cmp(&dy).then(x.cmp(&y))
        });
        // one of the best few, so that attempts differ
        if !by_fit.is_empty() {
            let pick = rng.below(by_fit.len().min(4) as u64) as usize;
            chosen.push(by_fit[pick]);
        }
        chosen.sort_unstable();
        chosen
    }

    /// Eliminations for `ideals`, each from at most `families` special-q
    /// families, on up to `threads` threads; stops at the first index
    /// without one.
    pub fn eliminations(
        &self,
        ideals: std::ops::Range<usize>,
        families: u64,
        threads: usize,
    ) -> Vec<FoundRelation> {
        let list: Vec<usize> = ideals.collect();
        self.eliminations_for(&list, families, threads)
            .into_iter()
            .map_while(|e| e)
            .collect()
    }

    /// Eliminations for the listed ideals, each found independently (so
    /// the answer does not depend on `threads`); `None` where none was
    /// found.
    pub fn eliminations_for(
        &self,
        list: &[usize],
        families: u64,
        threads: usize,
    ) -> Vec<Option<FoundRelation>> {
        in_order(
            list.len(),
            threads,
            || (),
            |_, t| self.elimination(list[t], families),
        )
    }

    /// Sieves `g(x) = a x² + b x + c` over `-m ≤ x < m` with the roots in
    /// `w` and appends the values that factor.
    fn sieve_one(
        &self,
        a: &Integer,
        b: &Integer,
        q: &[usize],
        w: &mut Workspace,
        out: &mut Vec<Found>,
    ) {
        let fb = self.fb;
        let width = w.sieve.len();
        // bytes start at 128 - threshold: a byte reaches 128 exactly when
        // the logarithms sieved into it reach the threshold
        let start = 128u8.wrapping_sub(self.threshold);
        w.sieve.iter_mut().for_each(|v| *v = start);
        let sieve = &mut w.sieve[..];
        for run in &w.runs {
            let roots = w.pos1[run.clone()].iter().zip(&w.pos2[run.clone()]);
            let primes = fb.primes[run.clone()].iter().zip(&self.logs[run.clone()]);
            for ((&p, &lg), (&r1, &r2)) in primes.zip(roots) {
                let p = p as usize;
                let mut j = r1 as usize;
                while j < width {
                    sieve[j] = sieve[j].wrapping_add(lg);
                    j += p;
                }
                if r2 != r1 {
                    let mut j = r2 as usize;
                    while j < width {
                        sieve[j] = sieve[j].wrapping_add(lg);
                        j += p;
                    }
                }
            }
        }
        let c = {
            let num = Integer::from(b.square_ref()) - &self.d;
            debug_assert!(num.is_divisible(&Integer::from(a * 4u32)));
            num / Integer::from(a * 4u32)
        };
        let m = self.params.m as i64;
        for (chunk, word) in w.sieve.chunks_exact(8).enumerate() {
            let bytes: [u8; 8] = word.try_into().unwrap_or([0; 8]);
            if u64::from_le_bytes(bytes) & 0x8080_8080_8080_8080 == 0 {
                continue;
            }
            for (t, &v) in word.iter().enumerate() {
                if v & 0x80 == 0 {
                    continue;
                }
                let j = 8 * chunk + t;
                if let Some(f) = self.confirm(a, b, &c, q, j, j as i64 - m, w) {
                    out.push(f);
                }
            }
        }
    }

    /// Divides `g(x)` by the primes whose roots hit position `j`, the small
    /// primes and those of `a`; a full or partial value, or `None`.
    #[allow(clippy::too_many_arguments)]
    fn confirm(
        &self,
        a: &Integer,
        b: &Integer,
        c: &Integer,
        q: &[usize],
        j: usize,
        x: i64,
        w: &Workspace,
    ) -> Option<Found> {
        let fb = self.fb;
        let mut g = Integer::from(a * x);
        g += b;
        g *= x;
        g += c;
        if g.is_zero() {
            return None;
        }
        let mut factors: BTreeMap<u32, u32> = BTreeMap::new();
        let mut divide = |g: &mut Integer, i: usize| {
            let p = fb.primes[i] as u32;
            let mut e = 0;
            while g.is_divisible_u(p) {
                g.div_exact_u_mut(p);
                e += 1;
            }
            if e > 0 {
                *factors.entry(i as u32).or_insert(0) += e;
            }
        };
        let kp = self.sieving_primes();
        for i in 0..kp {
            let p = fb.primes[i];
            if p < SMALL_PRIME || q.contains(&i) {
                divide(&mut g, i);
                continue;
            }
            let r = (j % p as usize) as u32;
            if r == w.pos1[i] || r == w.pos2[i] {
                divide(&mut g, i);
            }
        }
        for &i in q.iter().filter(|&&i| i >= kp) {
            divide(&mut g, i);
        }
        // N(α) = a·g(x): the primes of a once more
        for &i in q {
            *factors.entry(i as u32).or_insert(0) += 1;
        }
        let cof = g.abs();
        let large = match cof.to_u64() {
            Some(1) => 1,
            Some(l) if l <= self.large_bound => {
                if l <= self.pmax {
                    return None;
                }
                match self.fb.index_of(l) {
                    // a factor-base prime beyond the sieving primes
                    Some(i) => {
                        *factors.entry(i as u32).or_insert(0) += 1;
                        1
                    }
                    None => {
                        let last = *self.fb.primes.last()?;
                        // a prime above the factor base's bound (the bound
                        // is at least the last prime), not dividing D
                        if l <= last
                            || Integer::from(l).is_probably_prime(20) == rug::integer::IsPrime::No
                            || mod_small(&self.d, l) == 0
                        {
                            return None;
                        }
                        l
                    }
                }
            }
            _ => return None,
        };
        let mut u = Integer::from(a * (2 * x));
        u += b;
        Some(Found {
            u,
            factors: factors.into_iter().collect(),
            large,
        })
    }

    /// The findings of families `first..first + count`, in order, sieved
    /// on up to `threads` threads.
    pub fn round(&self, first: u64, count: u64, threads: usize) -> Vec<Vec<Found>> {
        in_order(
            count as usize,
            threads,
            || self.workspace(),
            |w, t| self.family(first + t as u64, w),
        )
    }

    /// The exponent vector of a full value: `s_i v_i` with `s_i = +1` when
    /// `u ≡ b_i (mod 2 p_i)` or `p_i` ramifies.
    pub fn vector(&self, f: &Found) -> Sparse {
        let mut rel = Sparse::new();
        for &(i, v) in &f.factors {
            let i = i as usize;
            let p = self.fb.primes[i];
            let beta = self.fb.bs[i];
            let ramified = beta.is_multiple_of(p);
            let sign = if ramified || f.u.mod_u((2 * p) as u32) as u64 == beta % (2 * p) {
                1
            } else {
                -1
            };
            add(&mut rel, i, sign * v as i64);
        }
        rel
    }

    /// The orientation of a partial value's large prime `ℓ`: `+1` when
    /// `u mod ℓ` is the smaller square root of `D` modulo `ℓ`.
    pub fn orientation(&self, f: &Found) -> i64 {
        let l = f.large;
        let t = sqrt_mod(mod_small(&self.d, l), l);
        let t = t.min(l - t);
        if f.u.mod_u(l as u32) as u64 == t {
            1
        } else {
            -1
        }
    }

    /// The element `α = (u + √D)/2` of a value, for either sign of `D`:
    /// for `D > 0` it feeds the units, and for `D < 0` an elimination that
    /// is a single sieved relation carries it, so the verifier checks it by
    /// its norm instead of composing forms (`sieving.md`, section 1).
    pub fn element(&self, f: &Found) -> Option<Element> {
        Some(Element {
            x: f.u.clone(),
            y: Integer::from(1),
        })
    }

    /// The element of the relation `combo` made of two partial
    /// values `α_j = (u_j + √D)/2` (vectors `r_j`) with the same large
    /// prime `ℓ`.
    ///
    /// With `same` (both in the same prime `L` above `ℓ`), `combo = r₁ - r₂`
    /// and `α₁ᾱ₂ ∈ L·L̄ = ℓO`; from `4α₁ᾱ₂ = (u₁u₂ - D) + (u₂ - u₁)√D`,
    /// `α₁ᾱ₂/ℓ = (x + y√D)/2` with `x = (u₁u₂ - D)/(2ℓ)`,
    /// `y = (u₂ - u₁)/(2ℓ)` (integers: `u₁ ≡ u₂ (mod 2ℓ)` and
    /// `u² ≡ D (mod 4ℓ)`). Otherwise `combo = r₁ + r₂` and `α₁α₂/ℓ`, with
    /// `x = (u₁u₂ + D)/(2ℓ)`, `y = (u₁ + u₂)/(2ℓ)` (`u₂ ≡ -u₁ (mod 2ℓ)`).
    /// Norms multiply: `N = N(α₁)N(α₂)/ℓ²`.
    ///
    /// Where the two contribute a prime `P` and its conjugate, their product
    /// holds `(p) = P·P̄` (also `P² = (p)` for ramified `P`), which `combo`
    /// no longer names: the element is divided by
    /// `g = ∏ p_i^{(|e₁| + |e₂| - |c_i|)/2}` over the two contributions
    /// `e₁, e₂` and their sum `c_i`, leaving exactly the ideal of `combo`.
    /// `None` when a division is not exact (which the argument above rules
    /// out).
    pub fn combined_element(
        &self,
        first: (&Integer, &Sparse),
        second: (&Integer, &Sparse),
        l: u64,
        same: bool,
        combo: &Sparse,
    ) -> Option<Element> {
        let ((u1, r1), (u2, r2)) = (first, second);
        let uu = Integer::from(u1 * u2);
        let (mut x, mut y) = if same {
            (uu - &self.d, Integer::from(u2 - u1))
        } else {
            (uu + &self.d, Integer::from(u1 + u2))
        };
        let two_l = Integer::from(l) * 2u32;
        if !x.is_divisible(&two_l) || !y.is_divisible(&two_l) {
            return None;
        }
        x.div_exact_mut(&two_l);
        y.div_exact_mut(&two_l);
        let sign = if same { -1 } else { 1 };
        let mut g = Integer::from(1);
        let support: BTreeSet<usize> = r1.keys().chain(r2.keys()).copied().collect();
        for i in support {
            let e1 = r1.get(&i).copied().unwrap_or(0);
            let e2 = sign * r2.get(&i).copied().unwrap_or(0);
            let c = combo.get(&i).copied().unwrap_or(0);
            debug_assert_eq!(e1 + e2, c);
            let twice = e1.abs() + e2.abs() - c.abs();
            if twice > 0 {
                g *= Integer::from(self.fb.primes[i]).pow((twice / 2) as u32);
            }
        }
        if !x.is_divisible(&g) || !y.is_divisible(&g) {
            return None;
        }
        x.div_exact_mut(&g);
        y.div_exact_mut(&g);
        Some(Element { x, y })
    }

    /// Whether `rel`'s element `α = (x + y√D)/2` generates the ideal its
    /// vector names, checked as the verifier checks an element witness
    /// (`verifier/src/relations/elements.rs`): `x ≡ yD (mod 2)`, `|N(α)|`
    /// is `∏ p_i^{|e_i|}` exactly, and for a split `p_i` the element does
    /// not lie in the prime above `p_i` that the vector does not name
    /// (`α ∈ P` iff `p | (x - yb)/2`, `α ∈ P̄` iff `p | (x + yb)/2`).
    pub fn element_holds(&self, rel: &FoundRelation) -> bool {
        let Some(Element { x, y }) = &rel.element else {
            return false;
        };
        let yd = Integer::from(y * &self.d);
        if Integer::from(x - &yd).is_odd() {
            return false;
        }
        let mut norm = Integer::from(x.square_ref()) - Integer::from(y * &yd);
        norm >>= 2;
        if norm.is_zero() {
            return false;
        }
        for (&i, &e) in &rel.exponents {
            let (Some(&p), Some(&b)) = (self.fb.primes.get(i), self.fb.bs.get(i)) else {
                return false;
            };
            let pe = Integer::from(p).pow(e.unsigned_abs() as u32);
            if e == 0 || !norm.is_divisible(&pe) {
                return false;
            }
            norm.div_exact_mut(&pe);
            if !self.d.is_divisible_u(p as u32) {
                let yb = Integer::from(y * b);
                let t = if e > 0 { x + yb } else { x - yb };
                if (t >> 1u32).is_divisible_u(p as u32) {
                    return false;
                }
            }
        }
        norm.abs() == 1
    }

    /// Whether `f` is what it says: `(u² - D)/4 = ±∏ p_i^{v_i}·large` with
    /// `u ≡ D (mod 2)`. Relations read back from a checkpoint pass this
    /// before they are used.
    pub fn holds_by_norm(&self, f: &Found) -> bool {
        if f.u.is_odd() != self.d.is_odd() || f.large == 0 {
            return false;
        }
        let mut n = Integer::from(f.u.square_ref()) - &self.d;
        n >>= 2;
        let mut prod = Integer::from(f.large);
        let mut last = None;
        for &(i, v) in &f.factors {
            let Some(&p) = self.fb.primes.get(i as usize) else {
                return false;
            };
            if v == 0 || v > 256 || last.is_some_and(|l| l >= i) {
                return false;
            }
            last = Some(i);
            prod *= Integer::from(p).pow(v);
        }
        n.abs() == prod
    }
}

/// Limits for reading a round back: a few levels, and room for a few
/// hundred thousand findings.
const ROUND_LIMITS: WalkLimits = WalkLimits {
    max_depth: 8,
    max_items: 1 << 24,
    max_tree_bytes: u64::MAX,
    tree_bytes_per_input_byte: u64::MAX,
};

/// A round's findings as CBOR: an array with one array per family, of
/// `[u, [[index, v], …], large]` per finding (the payload of a checkpoint
/// round).
pub fn encode_round(families: &[Vec<Found>]) -> Vec<u8> {
    let fams = families
        .iter()
        .map(|fam| {
            Value::Array(
                fam.iter()
                    .map(|f| {
                        let factors = f
                            .factors
                            .iter()
                            .map(|&(i, v)| {
                                Value::Array(vec![cbor::uint(i as u64), cbor::uint(v as u64)])
                            })
                            .collect();
                        Value::Array(vec![
                            cbor::int(&f.u),
                            Value::Array(factors),
                            cbor::uint(f.large),
                        ])
                    })
                    .collect(),
            )
        })
        .collect();
    cbor::from_value(&Value::Array(fams)).unwrap_or_default()
}

impl Siqs<'_> {
    /// Reads a round written by [`encode_round`] and checks every finding
    /// by its norm ([`Siqs::holds_by_norm`]); `Err` names the first
    /// problem, and nothing of a refused round is used.
    pub fn decode_round(&self, bytes: &[u8], families: u64) -> Result<Vec<Vec<Found>>, String> {
        let v = cbor::to_value(bytes, ROUND_LIMITS).map_err(|e| e.to_string())?;
        let fams = cbor::get_array(&v, "round").map_err(|e| e.to_string())?;
        if fams.len() as u64 != families {
            return Err(format!(
                "{} families where {families} were expected",
                fams.len()
            ));
        }
        let mut out = Vec::with_capacity(fams.len());
        for (k, fam) in fams.iter().enumerate() {
            let items = cbor::get_array(fam, "family").map_err(|e| e.to_string())?;
            let mut found = Vec::with_capacity(items.len());
            for item in items {
                let [u, factors, large] =
                    cbor::get_array(item, "finding").map_err(|e| e.to_string())?
                else {
                    return Err("a finding is not [u, factors, large]".into());
                };
                let u = cbor::get_int(u, "u").map_err(|e| e.to_string())?;
                let large = cbor::get_u64(large, "large").map_err(|e| e.to_string())?;
                let mut fs = Vec::new();
                for pair in cbor::get_array(factors, "factors").map_err(|e| e.to_string())? {
                    let [i, e] = cbor::get_array(pair, "factor").map_err(|e| e.to_string())? else {
                        return Err("a factor is not [index, exponent]".into());
                    };
                    let i = cbor::get_u64(i, "index").map_err(|e| e.to_string())?;
                    let e = cbor::get_u64(e, "exponent").map_err(|e| e.to_string())?;
                    let (Ok(i), Ok(e)) = (u32::try_from(i), u32::try_from(e)) else {
                        return Err("a factor is out of range".into());
                    };
                    fs.push((i, e));
                }
                let f = Found {
                    u,
                    factors: fs,
                    large,
                };
                if !self.holds_by_norm(&f) || (f.large > 1 && !self.is_large_prime(f.large)) {
                    return Err(format!(
                        "a finding of family {k} does not have the norm it states"
                    ));
                }
                found.push(f);
            }
            out.push(found);
        }
        if encode_round(&out) != bytes {
            return Err("not the canonical encoding".into());
        }
        Ok(out)
    }

    /// Whether `l` can be a large prime: above the factor base, below the
    /// large-prime bound, prime and not dividing `D`.
    fn is_large_prime(&self, l: u64) -> bool {
        let Some(&last) = self.fb.primes.last() else {
            return false;
        };
        l > last
            && l <= self.large_bound
            && Integer::from(l).is_probably_prime(20) != rug::integer::IsPrime::No
            && mod_small(&self.d, l) != 0
    }

    /// What names a run of this sieve in a checkpoint directory: the key
    /// (SHA-256 of everything that fixes the rounds' content) and a line
    /// for messages.
    pub fn run_identity(&self) -> ([u8; 32], String) {
        let p = &self.params;
        let v = Value::Array(vec![
            Value::Text("classcert sieve rounds".into()),
            Value::Text(env!("CARGO_PKG_VERSION").into()),
            cbor::int(&self.d),
            cbor::uint(self.seed),
            Value::Bytes(self.fb.digest().to_vec()),
            cbor::uint(p.m as u64),
            cbor::uint(p.primes as u64),
            cbor::uint(p.s as u64),
            cbor::uint(p.a_bits as u64),
            cbor::uint(p.slack as u64),
            cbor::uint(FAMILIES_PER_ROUND),
            cbor::uint(LARGE_MULTIPLIER),
        ]);
        let bytes = cbor::from_value(&v).unwrap_or_default();
        let key = Sha256::digest(bytes).into();
        let what = format!(
            "D = {}, seed {}, sieve half-width {}, {} sieving primes, {} primes per a",
            classcert_verifier::report::short_number(&self.d),
            self.seed,
            p.m,
            p.primes,
            p.s
        );
        (key, what)
    }
}

/// Hands out relations from rounds of families, combining partial values
/// with the same large prime, in a fixed order. Every relation carries its
/// element ([`Siqs::element`], [`Siqs::combined_element`]).
pub struct Collector {
    /// The first partial seen for each large prime: its vector, orientation
    /// and `u`.
    partials: BTreeMap<u64, (Sparse, i64, Integer)>,
    emitted: BTreeSet<Sparse>,
    queue: VecDeque<FoundRelation>,
    pub next_family: u64,
    pub fulls: u64,
    pub combined: u64,
    pub partial_count: u64,
}

impl Default for Collector {
    fn default() -> Self {
        Collector::new()
    }
}

impl Collector {
    pub fn new() -> Collector {
        Collector {
            partials: BTreeMap::new(),
            emitted: BTreeSet::new(),
            queue: VecDeque::new(),
            next_family: 0,
            fulls: 0,
            combined: 0,
            partial_count: 0,
        }
    }

    /// Takes the findings of the next families, in order.
    pub fn absorb(&mut self, siqs: &Siqs, families: Vec<Vec<Found>>) {
        for fam in families {
            self.next_family += 1;
            for f in fam {
                let v = siqs.vector(&f);
                if f.large == 1 {
                    self.fulls += 1;
                    let rel = FoundRelation {
                        exponents: v,
                        element: siqs.element(&f),
                    };
                    debug_assert!(siqs.element_holds(&rel), "{rel:?}");
                    self.queue.push_back(rel);
                    continue;
                }
                self.partial_count += 1;
                let s = siqs.orientation(&f);
                match self.partials.get(&f.large) {
                    Some((v1, s1, u1)) => {
                        // r1 - s1 s2 r2: the relation of α₁ᾱ₂/ℓ or α₁α₂/ℓ
                        let mut combo = v1.clone();
                        for (&i, &e) in &v {
                            add(&mut combo, i, -s1 * s * e);
                        }
                        if combo.is_empty() {
                            continue;
                        }
                        let element =
                            siqs.combined_element((u1, v1), (&f.u, &v), f.large, *s1 == s, &combo);
                        debug_assert!(element.is_some(), "no element for ℓ = {}", f.large);
                        if element.is_none() {
                            continue;
                        }
                        let rel = FoundRelation {
                            exponents: combo,
                            element,
                        };
                        debug_assert!(siqs.element_holds(&rel), "{rel:?}");
                        self.combined += 1;
                        self.queue.push_back(rel);
                    }
                    None => {
                        self.partials.insert(f.large, (v, s, f.u.clone()));
                    }
                }
            }
        }
    }

    /// The next relation whose vector was not handed out before (up to
    /// sign).
    pub fn pop(&mut self) -> Option<FoundRelation> {
        while let Some(rel) = self.queue.pop_front() {
            let v = &rel.exponents;
            let normal: Sparse = if v.values().next().is_some_and(|&e| e < 0) {
                v.iter().map(|(&i, &e)| (i, -e)).collect()
            } else {
                v.clone()
            };
            if self.emitted.insert(normal) {
                return Some(rel);
            }
        }
        None
    }
}

/// Special-q families tried for one elimination.
const ELIMINATION_FAMILIES: u64 = 200;

/// Rounds in a row without a new relation before the search gives up.
const EMPTY_ROUNDS: u32 = 8;

/// A [`RelationSource`] at research sizes: relations from the sieve above
/// (rounds on every core), eliminations beyond the sieving primes from
/// special-q families of the same sieve. For `D < 0` the relations are
/// plain vectors; for `D > 0` each carries its element.
pub struct SiqsSource<'a> {
    pub siqs: Siqs<'a>,
    pub collector: Collector,
    threads: usize,
    origin: Origin,
    checkpoint: Option<Checkpoint>,
    /// Rounds stored in the checkpoint when it was opened (read back, not
    /// sieved).
    stored: u64,
    /// Rounds read back from the checkpoint so far.
    pub resumed: u64,
    /// A checkpoint failure: the search stops and the driver reports it.
    error: Option<CheckpointError>,
    /// Where to say that the rounds read back are done (on a resume).
    notify: Option<crate::progress::Progress>,
}

impl<'a> SiqsSource<'a> {
    pub fn new(d: &Integer, fb: &'a FactorBase, params: Params, seed: u64) -> SiqsSource<'a> {
        let k = params.primes.min(fb.len());
        let threads = std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
            .min(8);
        SiqsSource {
            siqs: Siqs::new(d, fb, params, seed),
            collector: Collector::new(),
            threads,
            checkpoint: None,
            stored: 0,
            resumed: 0,
            error: None,
            notify: None,
            origin: Origin {
                discriminant: d.clone(),
                seed,
                source: "self-initialising-sieve",
                essential: k as u64,
                factor_base: fb.digest(),
                produced: 0,
            },
        }
    }

    /// Keeps rounds in `dir` and reads back those already there; refuses a
    /// directory of another run or with a corrupt file before any work.
    fn keep_rounds_in(&mut self, dir: &std::path::Path) -> Result<(), CheckpointError> {
        let (key, what) = self.siqs.run_identity();
        let c = Checkpoint::open(dir, key, &what)?;
        self.stored = c.stored_prefix()?;
        self.checkpoint = Some(c);
        Ok(())
    }

    /// `--resume DIR`: keeps rounds in `dir`, when there is one
    /// (`keep_rounds_in`), and says how many it holds
    /// already.
    pub fn resume(
        &mut self,
        dir: Option<&std::path::Path>,
        progress: &crate::progress::Progress,
    ) -> Result<(), CheckpointError> {
        let Some(dir) = dir else {
            return Ok(());
        };
        self.keep_rounds_in(dir)?;
        if self.stored > 0 {
            self.notify = Some(crate::progress::Progress::new(progress.hook()));
            progress.note(&format!(
                "resuming: {} rounds of the sieve are in {} (each is checked by its norms as it is read)",
                self.stored,
                dir.display()
            ));
        }
        Ok(())
    }

    /// Sieves the next round of families (or reads it back from the
    /// checkpoint) and merges it; `false` after a checkpoint failure.
    fn next_round(&mut self) -> bool {
        let first = self.collector.next_family;
        let r = first / FAMILIES_PER_ROUND;
        if let Some(c) = &self.checkpoint {
            if r < self.stored {
                let stored = read_round(&self.siqs, c, r).and_then(|found| {
                    found.ok_or_else(|| CheckpointError::Corrupt {
                        path: c.dir().join(crate::checkpoint::round_name(r)),
                        why: "the round vanished while the run was reading it".into(),
                    })
                });
                match stored {
                    Ok(found) => {
                        self.resumed += 1;
                        self.collector.absorb(&self.siqs, found);
                        if self.resumed == self.stored {
                            if let Some(p) = self.notify.take() {
                                p.note(&format!(
                                    "read back the {} stored rounds ({} full and {} combined relations); any further rounds are sieved afresh",
                                    self.stored, self.collector.fulls, self.collector.combined
                                ));
                            }
                        }
                        return true;
                    }
                    Err(e) => {
                        self.error = Some(e);
                        return false;
                    }
                }
            }
        }
        let found = self.siqs.round(first, FAMILIES_PER_ROUND, self.threads);
        if let Some(c) = &self.checkpoint {
            if let Err(e) = c.store(r, &encode_round(&found)) {
                self.error = Some(e);
                return false;
            }
        }
        self.collector.absorb(&self.siqs, found);
        true
    }

    /// `classcert collect`: sieves the rounds of `rounds` that `dir`
    /// lacks and stores them there, as a run with `--resume dir` would, and
    /// hands out no relation. A round already there is checked as a
    /// resumed run checks it (the file, then every finding by its norm);
    /// a directory of another run or a round that fails is refused before
    /// any sieving. Returns the rounds written and those already there.
    pub fn fill(
        &self,
        dir: &std::path::Path,
        rounds: std::ops::Range<u64>,
        progress: &crate::progress::Progress,
    ) -> Result<(u64, u64), CheckpointError> {
        let (key, what) = self.siqs.run_identity();
        let c = Checkpoint::open(dir, key, &what)?;
        let mut missing = Vec::new();
        for r in rounds.clone() {
            if read_round(&self.siqs, &c, r)?.is_none() {
                missing.push(r);
            }
        }
        let kept = rounds.end - rounds.start - missing.len() as u64;
        progress.phase(&format!(
            "sieving {} rounds of {} families into {} ({kept} of rounds {}..{} are there already)",
            missing.len(),
            FAMILIES_PER_ROUND,
            dir.display(),
            rounds.start,
            rounds.end
        ));
        for (done, &r) in missing.iter().enumerate() {
            let found = self
                .siqs
                .round(r * FAMILIES_PER_ROUND, FAMILIES_PER_ROUND, self.threads);
            c.store(r, &encode_round(&found))?;
            progress.tick(done as u64 + 1, Some(missing.len() as u64));
        }
        Ok((missing.len() as u64, kept))
    }

    fn relation(&mut self) -> Option<FoundRelation> {
        let mut empty = 0;
        loop {
            if let Some(rel) = self.collector.pop() {
                return Some(rel);
            }
            if empty >= EMPTY_ROUNDS {
                return None;
            }
            empty += 1;
            if !self.next_round() {
                return None;
            }
        }
    }
}

impl RelationSource for SiqsSource<'_> {
    fn eliminations(&mut self, ideals: std::ops::Range<usize>, _attempts: u64) -> RelationBatch {
        let first = ideals.start;
        let found = self
            .siqs
            .eliminations(ideals, ELIMINATION_FAMILIES, self.threads);
        self.origin.eliminations(first, found)
    }

    fn relations(&mut self, count: usize, _attempts: u64) -> RelationBatch {
        let found: Vec<FoundRelation> = (0..count).map_while(|_| self.relation()).collect();
        self.origin.relations(found)
    }

    fn candidates(&self) -> u64 {
        self.collector.fulls + self.collector.partial_count
    }

    fn take_error(&mut self) -> Option<CheckpointError> {
        self.error.take()
    }

    fn eliminations_for(&mut self, ideals: &[usize], _attempts: u64) -> Vec<Option<FoundRelation>> {
        self.siqs
            .eliminations_for(ideals, ELIMINATION_FAMILIES, self.threads)
    }

    fn naming(&mut self, ideal: usize, from: u64) -> Option<(u64, FoundRelation)> {
        self.siqs
            .elimination_from(ideal, from..from + ELIMINATION_FAMILIES)
    }
}

/// Round `r` of `c`, read back and checked by its norms (None when it is
/// not stored); a round that fails is refused like a damaged file.
fn read_round(
    siqs: &Siqs,
    c: &Checkpoint,
    r: u64,
) -> Result<Option<Vec<Vec<Found>>>, CheckpointError> {
    let Some(bytes) = c.load(r)? else {
        return Ok(None);
    };
    siqs.decode_round(&bytes, FAMILIES_PER_ROUND)
        .map(Some)
        .map_err(|why| CheckpointError::Corrupt {
            path: c.dir().join(crate::checkpoint::round_name(r)),
            why,
        })
}

/// `job(workspace, t)` for `t` in `0..count` on up to `threads` threads,
/// each with its own workspace from `make`; the results in order of `t`,
/// whatever the number of threads (each job depends on `t` alone).
fn in_order<W, T: Default + Send>(
    count: usize,
    threads: usize,
    make: impl Fn() -> W + Sync,
    job: impl Fn(&mut W, usize) -> T + Sync,
) -> Vec<T> {
    let results: Vec<Mutex<T>> = (0..count).map(|_| Mutex::new(T::default())).collect();
    let next = AtomicU64::new(0);
    let work = || {
        let mut w = make();
        loop {
            let t = next.fetch_add(1, Ordering::Relaxed) as usize;
            if t >= count {
                break;
            }
            let r = job(&mut w, t);
            if let Ok(mut slot) = results[t].lock() {
                *slot = r;
            }
        }
    };
    let threads = threads.clamp(1, count.max(1));
    if threads == 1 {
        work();
    } else {
        std::thread::scope(|scope| {
            for _ in 0..threads {
                scope.spawn(work);
            }
        });
    }
    results
        .into_iter()
        .map(|m| m.into_inner().unwrap_or_default())
        .collect()
}

/// `x⁻¹ mod p` for `gcd(x, p) = 1` (extended Euclid).
fn inv_mod(x: u64, p: u64) -> u64 {
    let (mut r0, mut r1) = (p as i64, (x % p) as i64);
    let (mut t0, mut t1) = (0i64, 1i64);
    while r1 != 0 {
        let q = r0 / r1;
        (r0, r1) = (r1, r0 - q * r1);
        (t0, t1) = (t1, t0 - q * t1);
    }
    t0.rem_euclid(p as i64) as u64
}

fn add_mod(x: u32, y: u32, p: u32) -> u32 {
    let s = x + y;
    if s >= p {
        s - p
    } else {
        s
    }
}

fn sub_mod(x: u32, y: u32, p: u32) -> u32 {
    if x >= y {
        x - y
    } else {
        x + p - y
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sieved_runs_leave_out_the_primes_of_a() {
        assert_eq!(sieved_runs(2, 10, &[5, 3]), vec![2..3, 4..5, 6..10]);
        assert_eq!(sieved_runs(2, 10, &[2, 9, 12]), vec![3..9]);
        assert_eq!(
            sieved_runs(0, 4, &[0, 1, 2, 3]),
            Vec::<std::ops::Range<usize>>::new()
        );
        assert_eq!(sieved_runs(5, 5, &[]), Vec::<std::ops::Range<usize>>::new());
    }
    use crate::relations::RelationSource;
    use classcert_verifier::math::primes_up_to;

    /// Whether the product of the prime forms to `rel` reduces to the
    /// principal form: the definition of a relation (common practice).
    fn holds(fb: &FactorBase, d: &Integer, rel: &Sparse) -> bool {
        super::super::tests::composes_to_principal(d, fb, rel)
    }

    fn next_prime(from: Integer, residue: u32) -> Integer {
        let mut p = from;
        loop {
            p += 1u32;
            if p.mod_u(4) == residue && p.is_probably_prime(30) != rug::integer::IsPrime::No {
                return p;
            }
        }
    }

    /// About 25 digits: -4p with p ≡ 1 (mod 4) prime, and -10007·r with
    /// r ≡ 1 (mod 4) prime, whose ramified 10007 lies beyond the sieving
    /// primes (so its elimination is a special-q one with b ≡ 0 mod q).
    fn cases() -> Vec<Integer> {
        let big = Integer::from(Integer::u_pow_u(10, 24)) * 5u32 / 2u32;
        let small = Integer::from(Integer::u_pow_u(10, 21));
        vec![
            Integer::from(-4) * next_prime(big, 1),
            Integer::from(-10007) * next_prime(small, 1),
        ]
    }

    fn base(d: &Integer) -> FactorBase {
        let l = d.significant_bits() as f64 * std::f64::consts::LN_2;
        let bound = (6.0 * l * l) as u64;
        FactorBase::new(d, &primes_up_to(bound), bound, &[])
    }

    /// Every relation handed out (full ones and combined partials) is a
    /// relation, none repeats up to sign, and some come from partials.
    #[test]
    fn sieved_and_combined_relations_reduce_to_the_principal_form() {
        for d in cases() {
            let fb = base(&d);
            let params = Params::for_discriminant(&d, fb.len());
            let mut s = SiqsSource::new(&d, &fb, params, 5);
            let rels = s.relations(300, 0).relations;
            assert_eq!(rels.len(), 300, "D = {d}");
            let mut seen = BTreeSet::new();
            for r in &rels {
                assert!(holds(&fb, &d, &r.exponents), "D = {d}: {:?}", r.exponents);
                let neg: Sparse = r.exponents.iter().map(|(&i, &e)| (i, -e)).collect();
                assert!(!seen.contains(&neg) && seen.insert(r.exponents.clone()));
            }
            assert!(s.collector.combined > 0, "D = {d}: no partials combined");
        }
    }

    /// An elimination has coefficient +1 at its index and support below it,
    /// and is a relation, for every ideal beyond the sieving primes (the
    /// ramified 10007 included).
    #[test]
    fn eliminations_have_a_unit_pivot_and_lower_support() {
        for d in cases() {
            let fb = base(&d);
            let params = Params::for_discriminant(&d, fb.len());
            let k = params.primes;
            let s = Siqs::new(&d, &fb, params, 9);
            let ideals = k..fb.len();
            let elim = s.eliminations(ideals.clone(), ELIMINATION_FAMILIES, 2);
            assert_eq!(elim.len(), ideals.len(), "D = {d}");
            for (i, r) in ideals.zip(&elim) {
                let r = &r.exponents;
                assert_eq!(r.get(&i), Some(&1), "D = {d}, i = {i}: {r:?}");
                assert_eq!(r.keys().next_back(), Some(&i), "D = {d}, i = {i}");
                assert!(holds(&fb, &d, r), "D = {d}, i = {i}: {r:?}");
            }
            if let Some(i) = fb.index_of(10007) {
                assert!(
                    i >= k && fb.bs[i].is_multiple_of(10007),
                    "10007 ramifies beyond the sieve"
                );
            }
        }
    }

    /// A round's findings do not depend on the number of threads, and read
    /// back from their encoding they are accepted only when unaltered.
    #[test]
    fn rounds_are_thread_independent_and_checked_when_read_back() {
        let d = cases().remove(0);
        let fb = base(&d);
        let params = Params::for_discriminant(&d, fb.len());
        let s = Siqs::new(&d, &fb, params, 3);
        let one = s.round(4, 6, 1);
        assert_eq!(s.round(4, 6, 2), one);
        assert!(one.iter().map(Vec::len).sum::<usize>() > 0);
        let bytes = encode_round(&one);
        assert_eq!(s.decode_round(&bytes, 6).as_ref(), Ok(&one));
        assert!(s.decode_round(&bytes, 7).is_err(), "family count");
        // change u of one finding by 2 (still ≡ D mod 2): its norm is wrong
        let mut bad = one.clone();
        let f = bad.iter_mut().flatten().next().unwrap();
        f.u += 2u32;
        assert!(s.decode_round(&encode_round(&bad), 6).is_err(), "altered u");
        let mut bad = one.clone();
        let f = bad
            .iter_mut()
            .flatten()
            .find(|f| !f.factors.is_empty())
            .unwrap();
        f.factors[0].1 += 1;
        assert!(
            s.decode_round(&encode_round(&bad), 6).is_err(),
            "altered exponent"
        );
        for f in one.iter().flatten() {
            assert!(s.holds_by_norm(f));
        }
    }
}

#[cfg(test)]
mod real_tests {
    use super::super::tests::composes_to_principal;
    use super::*;
    use classcert_verifier::math::primes_up_to;

    /// The first prime `p ≡ 1 (mod 4)` above `start`.
    fn prime_1_mod_4_above(start: Integer) -> Integer {
        let mut p = start;
        loop {
            p += 1u32;
            if p.mod_u(4) == 1 && p.is_probably_prime(40) != rug::integer::IsPrime::No {
                return p;
            }
        }
    }

    /// The prime ideals of norm up to `6 log² |D|` (Bach's bound, common
    /// practice), none dividing a conductor (the test discriminants are
    /// fundamental).
    fn factor_base(d: &Integer) -> FactorBase {
        let l = d.to_f64().abs().ln();
        let bound = (6.0 * l * l) as u64;
        FactorBase::new(d, &primes_up_to(bound), bound, &[])
    }

    /// Whether `α = (x + y√D)/2` lies in the ideal `[A, (B + √D)/2]` (with
    /// `B² ≡ D (mod 4A)`): as a Z-module the ideal holds `α` exactly when
    /// `α - y(B + √D)/2 = (x - yB)/2` lies in `AZ`.
    fn in_ideal(x: &Integer, y: &Integer, a: &Integer, b: &Integer) -> bool {
        let t = x - Integer::from(y * b);
        t.is_even() && (t >> 1u32).is_divisible(a)
    }

    /// `B` with `B² ≡ D (mod 4p^e)` and `B ≡ b (mod 2p)`, so that
    /// `P^e = [p^e, (B + √D)/2]` for the split `P = [p, (b + √D)/2]`: one
    /// power at a time, trying every lift `B + 2tp^j`, `0 ≤ t < p`.
    fn power_root(d: &Integer, p: u64, b: u64, e: u32) -> Integer {
        let mut root = Integer::from(b);
        let mut pj = Integer::from(p);
        for _ in 1..e {
            let modulus = Integer::from(&pj * p) * 4u32;
            let lift = (0..p)
                .map(|t| &root + Integer::from(&pj * t) * 2u32)
                .find(|c| (Integer::from(c.square_ref()) - d).is_divisible(&modulus))
                .expect("a split prime's root lifts");
            root = lift;
            pj *= p;
        }
        root
    }

    /// Whether `(α) = ∏ P_i^{e_i}` (`e_i < 0`: the conjugate of `P_i`) for
    /// the relation's element, from the definitions: `α` lies in each
    /// `P_i^{e_i}`, so in their product (the ideals are coprime), and
    /// `|N(α)| = |x² - Dy²|/4` equals the product's norm `∏ p_i^{|e_i|}`,
    /// so the two ideals are equal. A ramified `P` has `P² = (p)`.
    fn generates(d: &Integer, fb: &FactorBase, rel: &FoundRelation) -> bool {
        let Some(Element { x, y }) = &rel.element else {
            return false;
        };
        if (x - Integer::from(y * d)).is_odd() {
            return false;
        }
        let norm = (Integer::from(x.square_ref()) - Integer::from(y.square_ref()) * d) / 4u32;
        let mut product = Integer::from(1);
        for (&i, &e) in &rel.exponents {
            let (p, b) = (fb.primes[i], fb.bs[i]);
            let f = e.unsigned_abs() as u32;
            product *= Integer::from(p).pow(f);
            let inside = if d.is_divisible_u(p as u32) {
                // P^f = p^(f/2) · P^(f mod 2)
                let q = Integer::from(p).pow(f / 2);
                if !x.is_divisible(&q) || !y.is_divisible(&q) {
                    return false;
                }
                let (x1, y1) = (Integer::from(x / &q), Integer::from(y / &q));
                (&x1 - Integer::from(&y1 * d)).is_even()
                    && (f.is_multiple_of(2)
                        || in_ideal(&x1, &y1, &Integer::from(p), &Integer::from(b)))
            } else {
                let root = power_root(d, p, b, f);
                let root = if e < 0 { -root } else { root };
                in_ideal(x, y, &Integer::from(p).pow(f), &root)
            };
            if !inside {
                return false;
            }
        }
        norm.abs() == product
    }

    /// Every relation of the sieve for `D > 0`, full or two partials
    /// combined, and every elimination carries an element that generates
    /// the ideal its vector names; the prover's own check agrees, and both
    /// refuse a relation with one exponent's sign flipped.
    #[test]
    fn real_relations_carry_their_elements() {
        // D prime ≡ 1 (mod 4) (as `bench_d 25 real` picks it), and
        // D = 4·3·7·11·q with q ≡ 1 (mod 4) prime, so 231q ≡ 3 (mod 4) and
        // D is fundamental with 2, 3, 7 and 11 ramified
        let ten = |e: u32| Integer::from(Integer::u_pow_u(10, e));
        let d1 = prime_1_mod_4_above(ten(24) * 5u32 / 2u32);
        let d2 = prime_1_mod_4_above(ten(22)) * 924u32;
        for d in [d1, d2] {
            let fb = factor_base(&d);
            let params = Params::for_real(&d, fb.len());
            let k = params.primes.min(fb.len());
            let mut src = SiqsSource::new(&d, &fb, params, 1);
            let rels = src.relations(1500, 0).relations;
            assert_eq!(rels.len(), 1500, "D = {d}");
            let combined = rels
                .iter()
                .filter(|r| r.element.as_ref().is_some_and(|e| e.y != 1))
                .count();
            assert!(combined > 0 && combined < rels.len(), "D = {d}: {combined}");
            assert!(src.collector.combined > 0);
            let ramified = rels
                .iter()
                .filter(|r| {
                    r.exponents
                        .keys()
                        .any(|&i| d.is_divisible_u(fb.primes[i] as u32))
                })
                .count();
            for rel in &rels {
                assert!(generates(&d, &fb, rel), "D = {d}: {rel:?}");
                assert!(src.siqs.element_holds(rel), "D = {d}: {rel:?}");
            }
            let elims = src.eliminations(k..k + 40, 0).relations;
            assert_eq!(elims.len(), 40);
            for (i, rel) in (k..).zip(&elims) {
                assert_eq!(rel.exponents.get(&i), Some(&1));
                assert!(rel.exponents.keys().all(|&j| j <= i));
                assert!(generates(&d, &fb, rel), "D = {d}: {rel:?}");
                assert!(src.siqs.element_holds(rel));
            }
            // a flipped sign at a split prime is caught by both checks
            let mut flipped = 0;
            for rel in &rels {
                let Some((&i, &e)) = rel
                    .exponents
                    .iter()
                    .find(|(&i, _)| !d.is_divisible_u(fb.primes[i] as u32))
                else {
                    continue;
                };
                let mut bad = rel.clone();
                bad.exponents.insert(i, -e);
                assert!(!generates(&d, &fb, &bad), "D = {d}: {bad:?}");
                assert!(!src.siqs.element_holds(&bad));
                flipped += 1;
            }
            assert!(flipped > 1000);
            if d.is_divisible_u(3) {
                assert!(ramified > 0);
            }
        }
    }

    /// For `D < 0` the sieve's relations stay plain vectors, and each is
    /// one: the product of the prime forms to its exponents reduces to the
    /// principal form (the definition of a relation, common practice).
    #[test]
    fn imaginary_relations_carry_elements_that_hold() {
        let p = prime_1_mod_4_above(Integer::from(Integer::u_pow_u(10, 23)) * 5u32 / 2u32);
        let d = Integer::from(-4) * p;
        let fb = factor_base(&d);
        let params = Params::for_discriminant(&d, fb.len());
        let k = params.primes.min(fb.len());
        let mut src = SiqsSource::new(&d, &fb, params, 1);
        let mut rels = src.relations(200, 0).relations;
        assert_eq!(rels.len(), 200);
        rels.extend(src.eliminations(k..k + 20, 0).relations);
        assert_eq!(rels.len(), 220);
        // the element check (the verifier's, by norms and residues) against
        // the definition, composing the prime forms
        let siqs = &src.siqs;
        for rel in rels {
            assert!(siqs.element_holds(&rel), "{rel:?}");
            assert!(
                composes_to_principal(&d, &fb, &rel.exponents),
                "{:?}",
                rel.exponents
            );
        }
    }
}
