//! Hostile inputs for the verifier: random bytes, truncations and bit
//! flips of the golden certificates, size bombs, and certificates that are
//! well formed (canonical, right digest) but ask for as much work as their
//! caps allow. Each input is made from a seed or a golden certificate by a
//! [`Case`]'s `build`, so nothing large is stored; the binary
//! `hostile-inputs` writes them with a manifest, `tests/hostile.sh`
//! measures the verifier on them, and `tests/tests/hostile.rs` checks the
//! small ones.
//!
//! An expected outcome is derived from the order of the checks
//! (`docs/certificates.md`, `verifier/src/pipeline.rs`) and the decoder's
//! rules, never read off the verifier's output. Inputs whose mathematics
//! is true expect [`Expect::VerifiedOrOverLimit`]: a verifier may decline
//! the work, but may not call them false.

use crate::support::{vectors_dir, SplitMix};
use classcert_format::{
    Body, Document, EulerTrace, Form, Lattice, PocklingtonFactor, PrimalityEvidence, PrimeIdeal,
    PrimePower, Smith, WitnessBody, WitnessGenerator,
};
use classcert_prover::fb::FactorBase;
use classcert_prover::setup::to_bounds;
use classcert_verifier::math::euler;
use classcert_verifier::math::{kronecker_prime, primes_up_to, small_conductor, Interval};
use classcert_verifier::registry;
use rug::integer::Order;
use rug::Integer;

/// What the verifier must say about an input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Expect {
    /// Refused with this reason code.
    Rejected(&'static str),
    /// Refused with some reason code (the bytes are random, and which
    /// decoding rule they break first is not fixed).
    RejectedAny,
    /// The mathematics is true: verified, or refused as `over-limit`.
    VerifiedOrOverLimit,
}

impl Expect {
    /// The manifest's column: `rejected:<code>`, `rejected:any` or
    /// `verified-or-over-limit`.
    pub fn word(self) -> String {
        match self {
            Expect::Rejected(code) => format!("rejected:{code}"),
            Expect::RejectedAny => "rejected:any".to_string(),
            Expect::VerifiedOrOverLimit => "verified-or-over-limit".to_string(),
        }
    }

    /// Whether a verdict (`None` verified, `Some(code)` refused) is the
    /// one expected.
    pub fn admits(self, verdict: Option<&str>) -> bool {
        match (self, verdict) {
            (Expect::Rejected(code), Some(got)) => code == got,
            (Expect::RejectedAny, Some(_)) => true,
            (Expect::VerifiedOrOverLimit, None) => true,
            (Expect::VerifiedOrOverLimit, Some(got)) => got == "over-limit",
            _ => false,
        }
    }
}

/// One hostile input.
pub struct Case {
    /// File name (without `.cert`).
    pub name: String,
    pub what: String,
    pub expect: Expect,
    /// Above about 5 MB (or slow to make): written by the binary and
    /// measured by the script, not built by the test suite.
    pub big: bool,
    pub build: Box<dyn Fn() -> Vec<u8>>,
}

fn case(
    name: &str,
    what: &str,
    expect: Expect,
    big: bool,
    build: impl Fn() -> Vec<u8> + 'static,
) -> Case {
    Case {
        name: name.to_string(),
        what: what.to_string(),
        expect,
        big,
        build: Box::new(build),
    }
}

/// The golden certificates the bytes-level damage starts from.
const DAMAGED: &[&str] = &[
    "minus-3299",
    "plus-999997",
    "witness-minus-1000003",
    "minus-46588222708",
];

/// The work inputs that are slow to make (a sieve to `5·10^7`, `10^7`
/// series terms, a 4096-bit prime with a smooth `P - 1`, a 4000-bit `D`'s
/// Euler trace: about 75 s in all) and small to keep: stored in
/// `vectors/hostile/` by `hostile-inputs vectors/hostile --stored`, read
/// from there by the tests, and compared with a fresh build by an ignored
/// test (`cargo test --release -p classcert-tests --test hostile -- --ignored`).
pub const STORED: &[&str] = &[
    "euler-x-5e7",
    "series-1e7",
    "pocklington-414",
    "witness-2-rank-19",
];

/// The stored bytes of the work input `name` (one of [`STORED`]).
pub fn stored(name: &str) -> Vec<u8> {
    vector("hostile", name)
}

/// Every hostile input, small and big, in a fixed order.
pub fn cases() -> Vec<Case> {
    let mut out = Vec::new();
    random_cases(&mut out);
    damage_cases(&mut out);
    bomb_cases(&mut out);
    work_cases(&mut out);
    out
}

// ---------------------------------------------------------------- helpers

/// `vectors/<dir>/<name>.cert`.
fn vector(dir: &str, name: &str) -> Vec<u8> {
    let p = vectors_dir().join(dir).join(format!("{name}.cert"));
    std::fs::read(&p).unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()))
}

fn golden(name: &str) -> Vec<u8> {
    vector("golden", name)
}

fn golden_document(name: &str) -> Document {
    classcert_format::decode_document(&golden(name))
        .expect("a golden certificate decodes")
        .document
}

fn golden_body(name: &str) -> Body {
    match golden_document(name) {
        Document::Relations(b) => *b,
        _ => panic!("{name} is not a full certificate"),
    }
}

fn golden_witness(name: &str) -> WitnessBody {
    match golden_document(name) {
        Document::OrderWitness(w) => *w,
        _ => panic!("{name} is not an order witness"),
    }
}

fn encode_body(b: &Body) -> Vec<u8> {
    classcert_format::encode_file(b).expect("encodes").0
}

fn encode_witness(w: WitnessBody) -> Vec<u8> {
    classcert_format::encode_document(&Document::OrderWitness(Box::new(w)))
        .expect("encodes")
        .0
}

fn random_bytes(seed: u64, len: usize) -> Vec<u8> {
    let mut rng = SplitMix::new(seed);
    let mut out = Vec::with_capacity(len + 8);
    while out.len() < len {
        out.extend_from_slice(&rng.next_u64().to_le_bytes());
    }
    out.truncate(len);
    out
}

/// A random integer of exactly `bits` bits.
fn random_integer(rng: &mut SplitMix, bits: u32) -> Integer {
    let words: Vec<u64> = (0..bits.div_ceil(64)).map(|_| rng.next_u64()).collect();
    let mut x = Integer::from_digits(&words, Order::Lsf);
    x.keep_bits_mut(bits);
    x.set_bit(bits - 1, true);
    x
}

/// The envelope `{"body": <body>, "format": 1, "body-sha256": 32 zero
/// bytes}` in the canonical key order, around raw `body` bytes: past the
/// first-byte check, so the decoder must walk the body.
fn envelope(body: &[u8]) -> Vec<u8> {
    let mut out = vec![0xa3, 0x64];
    out.extend_from_slice(b"body");
    out.extend_from_slice(body);
    out.push(0x66);
    out.extend_from_slice(b"format");
    out.push(0x01);
    out.push(0x6b);
    out.extend_from_slice(b"body-sha256");
    out.extend_from_slice(&[0x58, 0x20]);
    out.extend_from_slice(&[0u8; 32]);
    out
}

/// The Euler trace of `d` (with conductor data `d_small`) at cut-off `x`,
/// computed as the verifier recomputes it, and the conductor's small
/// primes up to `trial` (at least `x`).
fn true_trace(d: &Integer, x: u64, trial: u64) -> (EulerTrace, Vec<(u64, u32)>) {
    let primes = primes_up_to(trial.max(x));
    let (conductor, d_small) = small_conductor(d, &primes);
    let abs_d = Integer::from(d.abs_ref());
    let log_delta = Interval::int(&abs_d).ln().expect("|D| > 0");
    let limits = [x / 4, x / 2];
    let chi = |p: u64| kronecker_prime(&d_small, p);
    let res = euler::compute(x, &primes, &chi, &limits, &log_delta).expect("Euler product");
    let trace = classcert_prover::setup::euler_trace(&res, x);
    (trace, conductor)
}

/// The smallest `X` of a fixed ladder whose error term lets the verifier
/// conclude (twice it below `log 2`, with a margin) for `|D| = abs_d`.
fn workable_x(abs_d: &Integer) -> u64 {
    let log_delta = Interval::int(abs_d).ln().expect("|D| > 0");
    let ladder = [
        100_000, 300_000, 1_000_000, 3_000_000, 10_000_000, 20_000_000, 50_000_000,
    ];
    ladder
        .into_iter()
        .find(|&x| {
            let e = euler::error_bound(x, &log_delta).expect("error term");
            2.0 * e.hi.to_f64() < 0.6
        })
        .expect("some X of the ladder is enough")
}

// ---------------------------------------------------------------- random bytes

fn random_cases(out: &mut Vec<Case>) {
    out.push(case(
        "random-empty",
        "an empty file",
        Expect::Rejected("not-a-certificate"),
        false,
        Vec::new,
    ));
    for (i, len) in [1usize, 7, 64, 1000, 65_536, 1 << 20]
        .into_iter()
        .enumerate()
    {
        let seed = 0x6e6f_6973_6500 + i as u64;
        // The first byte is moved off 0xa3 (the head of every certificate),
        // so the refusal is at the first byte.
        out.push(case(
            &format!("random-{len}"),
            &format!("{len} random bytes (seed {seed:#x}), first byte not 0xa3"),
            Expect::Rejected("not-a-certificate"),
            false,
            move || {
                let mut b = random_bytes(seed, len);
                if b[0] == 0xa3 {
                    b[0] = 0xa2;
                }
                b
            },
        ));
        out.push(case(
            &format!("random-a3-{len}"),
            &format!("0xa3 then {} random bytes (seed {seed:#x})", len - 1),
            Expect::RejectedAny,
            false,
            move || {
                let mut b = random_bytes(seed ^ 0xa3, len);
                b[0] = 0xa3;
                b
            },
        ));
    }
    out.push(case(
        "random-100mb",
        "100,000,000 random bytes (seed 0x100): over the file cap",
        Expect::Rejected("over-limit"),
        true,
        || random_bytes(0x100, 100_000_000),
    ));
}

// ---------------------------------------------------------------- damage

fn damage_cases(out: &mut Vec<Case>) {
    for (g, &name) in DAMAGED.iter().enumerate() {
        let len = golden(name).len();
        // Cuts at the first and last bytes and at seeded places between.
        let mut rng = SplitMix::new(0x7472_756e + g as u64);
        let mut cuts = vec![1, 2, len / 2, len - 1];
        cuts.extend((0..4).map(|_| rng.range(1, len as u64) as usize));
        cuts.sort_unstable();
        cuts.dedup();
        for cut in cuts {
            out.push(case(
                &format!("{name}--truncated-{cut}"),
                &format!("golden {name}, its first {cut} of {len} bytes"),
                Expect::Rejected("decode-truncated"),
                false,
                move || golden(name)[..cut].to_vec(),
            ));
        }
        out.push(case(
            &format!("{name}--cut-to-0"),
            &format!("golden {name}, cut to nothing"),
            Expect::Rejected("not-a-certificate"),
            false,
            Vec::new,
        ));
        let mut rng = SplitMix::new(0x666c_6970 + g as u64);
        for _ in 0..8 {
            let bit = rng.range(8, 8 * len as u64) as usize;
            out.push(case(
                &format!("{name}--bit-{bit}"),
                &format!("golden {name} with bit {bit} flipped (the first byte kept)"),
                Expect::RejectedAny,
                false,
                move || {
                    let mut b = golden(name);
                    b[bit / 8] ^= 1 << (bit % 8);
                    b
                },
            ));
        }
        // Bit flips of the first byte: another head.
        out.push(case(
            &format!("{name}--bit-0"),
            &format!("golden {name} with the lowest bit of its first byte flipped"),
            Expect::Rejected("not-a-certificate"),
            false,
            move || {
                let mut b = golden(name);
                b[0] ^= 1;
                b
            },
        ));
    }
}

// ---------------------------------------------------------------- size bombs

fn bomb_cases(out: &mut Vec<Case>) {
    const DEEP: usize = 100_000;
    // [[[...[0]...]]], DEEP arrays deep
    let nested = || {
        let mut b = vec![0x81; DEEP];
        b.push(0x00);
        b
    };
    out.push(case(
        "nesting-arrays-bare",
        "100,000 nested one-element arrays, no envelope",
        Expect::Rejected("not-a-certificate"),
        false,
        nested,
    ));
    out.push(case(
        "nesting-arrays-100000",
        "the certificate envelope with a body of 100,000 nested one-element arrays",
        Expect::Rejected("over-limit"),
        false,
        move || envelope(&nested()),
    ));
    out.push(case(
        "nesting-maps-100000",
        "the envelope with a body of 100,000 nested one-entry maps {0: {0: ...}}",
        Expect::Rejected("over-limit"),
        false,
        || {
            let mut body = Vec::with_capacity(2 * DEEP + 1);
            for _ in 0..DEEP {
                body.extend_from_slice(&[0xa1, 0x00]);
            }
            body.push(0x00);
            envelope(&body)
        },
    ));
    for (name, what, head) in [
        (
            "declared-bytes-2^64",
            "a body that is a byte string declaring 2^64 - 1 bytes",
            vec![0x5b, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff],
        ),
        (
            "declared-array-2^63",
            "a body that is an array declaring 2^63 items",
            vec![0x9b, 0x80, 0, 0, 0, 0, 0, 0, 0],
        ),
        (
            "declared-map-2^62",
            "a body that is a map declaring 2^62 entries",
            vec![0xbb, 0x40, 0, 0, 0, 0, 0, 0, 0],
        ),
        (
            "declared-bignum-2^32",
            "a body that is a bignum declaring 2^32 bytes",
            vec![0xc2, 0x5b, 0, 0, 0, 1, 0, 0, 0, 0],
        ),
    ] {
        out.push(case(
            name,
            &format!("the envelope with {what}, the file ending right after it"),
            Expect::Rejected("decode-truncated"),
            false,
            move || envelope(&head),
        ));
    }
    out.push(case(
        "array-bomb-50mb",
        "the envelope with a body of 25,000,000 one-element arrays [0] (50 MB)",
        Expect::Rejected("over-limit"),
        true,
        || {
            const N: u32 = 25_000_000;
            let mut body = Vec::with_capacity(2 * N as usize + 5);
            body.push(0x9a);
            body.extend_from_slice(&N.to_be_bytes());
            for _ in 0..N {
                body.extend_from_slice(&[0x81, 0x00]);
            }
            envelope(&body)
        },
    ));
    out.push(case(
        "bignum-discriminant-1mb",
        "minus-3299 with D replaced by a 1 MB (8,388,608-bit) negative number, canonical, right digest",
        Expect::Rejected("over-limit"),
        false,
        || {
            let mut b = golden_body("minus-3299");
            let mut rng = SplitMix::new(0x0062_6967);
            let big = random_integer(&mut rng, 8 << 20);
            b.order = classcert_format::Order::Quadratic {
                discriminant: -(big << 2u32) + 1u32,
            };
            encode_body(&b)
        },
    ));
    out.push(case(
        "witness-form-1.6e9-bits",
        "witness-minus-1000003 with its generator form's c replaced by a 1.6·10^9-bit number (200 MB), canonical, right digest",
        Expect::Rejected("over-limit"),
        true,
        || {
            let mut w = golden_witness("witness-minus-1000003");
            let mut rng = SplitMix::new(0x6332);
            let c = random_integer(&mut rng, 1_600_000_000);
            w.generators[0].form.c = c;
            encode_witness(w)
        },
    ));
}

// ---------------------------------------------------------------- work

fn work_cases(out: &mut Vec<Case>) {
    out.push(case(
        "euler-x-5e7",
        "minus-3299 with the Euler cut-off raised to X = 5·10^7 and its trace recomputed (true)",
        Expect::VerifiedOrOverLimit,
        false,
        || {
            let mut b = golden_body("minus-3299");
            let d = Integer::from(-3299);
            let bound = registry::generation_bound(&b.generation_theorem, &Integer::from(3299))
                .expect("bound");
            let (trace, conductor) = true_trace(&d, 50_000_000, bound);
            b.euler = trace;
            b.conductor_small = conductor;
            encode_body(&b)
        },
    ));
    out.push(case(
        "series-1e7",
        "unconditional-minus-3299 with the class number series raised to 10^7 terms and its enclosure recomputed (true)",
        Expect::VerifiedOrOverLimit,
        false,
        || {
            let mut b = golden_body("unconditional-minus-3299");
            let d = Integer::from(-3299);
            let n = 10_000_000;
            let h = classcert_verifier::math::series::class_number(&d, n).expect("series");
            let log_h = h.ln().expect("h > 0");
            // w = 2 for D = -3299 < -4
            let log_l = classcert_verifier::math::series::log_l_from_log_h(
                &log_h,
                2,
                &Integer::from(3299),
            )
            .expect("log L");
            b.euler.x = n;
            b.euler.log_l = to_bounds(&log_l).expect("finite");
            encode_body(&b)
        },
    ));
    out.push(case(
        "pocklington-414",
        "D = -P for a 4096-bit prime P whose maximality claim carries a valid Pocklington proof with about 400 factors of P - 1; the rest of minus-18544966547 with an empty factor base (false: no factor base), its proof's powerings over the work budget",
        Expect::Rejected("over-limit"),
        false,
        || encode_body(&pocklington_body()),
    ));
    out.push(case(
        "witness-2-rank-19",
        "an order witness claiming Cl = (Z/2)^19 with 19 independent forms (p_i, 0, m/p_i) of order 2, D = -4m, m a product of 20 primes of 199 bits, true Euler trace; the 2^19 socle combinations of 4000-bit forms are over the work budget",
        Expect::Rejected("over-limit"),
        false,
        || encode_witness(two_rank_witness()),
    ));
    out.push(case(
        "factor-base-4096",
        "D = -P for a 4096-bit prime P with the complete factor base to the generation bound 12 log^2|D| (about 2.8 million ideals), true Euler trace, an empty lattice; its decoded tree (three values per ideal) is over the decoder's 256 MiB cap",
        Expect::Rejected("over-limit"),
        true,
        || encode_body(&factor_base_body()),
    ));
    for (name, bits, big) in [
        ("real-generator-exponent-16k", 16_000u32, false),
        ("real-generator-exponent-32m", 32_000_000, false),
    ] {
        out.push(case(
            name,
            &format!("plus-999997 with a generator's exponent raised by a {bits}-bit multiple of the group exponent (the same class, so true)"),
            Expect::VerifiedOrOverLimit,
            big,
            move || {
                let mut b = golden_body("plus-999997");
                let m: Integer = b.lattice.smith.diagonal.iter().product();
                let mut rng = SplitMix::new(0x0065_7870 + u64::from(bits));
                let k = random_integer(&mut rng, bits);
                let g = b.claim.generators.first_mut().expect("h = 2: one generator");
                g.exponents[0] += k * m;
                encode_body(&b)
            },
        ));
    }
}

/// A prime `P ≡ 3 (mod 4)` of 4096 bits with `P - 1 = 2 ∏ q` over
/// distinct odd primes `q < 4000`, found by a seeded search, and those `q`.
pub fn smooth_prime() -> (Integer, Vec<u64>) {
    let small: Vec<u64> = primes_up_to(4000).into_iter().skip(1).collect();
    let top = Integer::from(1) << 4096u32;
    let low = Integer::from(1) << 4095u32;
    for attempt in 0u64.. {
        let mut rng = SplitMix::new(0x706f_636b + attempt);
        let mut pool = small.clone();
        // Fisher–Yates with the seeded generator.
        for i in (1..pool.len()).rev() {
            let j = rng.range(0, i as u64 + 1) as usize;
            pool.swap(i, j);
        }
        let mut f = Integer::from(2);
        let mut used = Vec::new();
        for q in pool {
            let next = Integer::from(&f * q);
            if next < top {
                f = next;
                used.push(q);
            }
        }
        let p = f + 1u32;
        if p >= low && p.is_probably_prime(30) != rug::integer::IsPrime::No {
            used.sort_unstable();
            return (p, used);
        }
    }
    unreachable!("the search runs until it finds a prime")
}

/// A Pocklington proof of `p` from the odd prime factors `qs` of
/// `(p - 1)/2`: for each `q` (and 2) the smallest base `a` with
/// `a^(p-1) ≡ 1` and `gcd(a^((p-1)/q) - 1, p) = 1`.
fn pocklington(p: &Integer, qs: &[u64]) -> PrimalityEvidence {
    let n1 = Integer::from(p - 1u32);
    let mut factors = Vec::new();
    for q in std::iter::once(2).chain(qs.iter().copied()) {
        let e = Integer::from(&n1 / q);
        let base = (2u32..)
            .map(Integer::from)
            .find(|a| {
                let t = a.clone().pow_mod(&e, p).expect("p > 0") - 1u32;
                t.gcd(p) == 1 && a.clone().pow_mod(&n1, p).expect("p > 0") == 1
            })
            .expect("p is prime, so a base exists");
        factors.push(PocklingtonFactor {
            q: Integer::from(q),
            e: 1,
            base,
            evidence: Box::new(PrimalityEvidence::Bpsw),
        });
    }
    PrimalityEvidence::Pocklington { factors }
}

fn pocklington_body() -> Body {
    let (p, qs) = smooth_prime();
    let mut b = golden_body("minus-18544966547");
    b.order = classcert_format::Order::Quadratic {
        discriminant: -p.clone(),
    };
    b.maximality = Some(vec![PrimePower {
        evidence: pocklington(&p, &qs),
        prime: p,
        exponent: 1,
    }]);
    // No small prime divides P: the conductor has no small part.
    b.conductor_small = Vec::new();
    b.factor_base = Vec::new();
    b
}

fn two_rank_witness() -> WitnessBody {
    let mut rng = SplitMix::new(0x0032_7261_6e6b);
    let mut ps = Vec::new();
    while ps.len() < 20 {
        let p = random_integer(&mut rng, 199).next_prime();
        if !ps.contains(&p) {
            ps.push(p);
        }
    }
    // m ≡ 1 (mod 4), so -4m is a fundamental discriminant (D/4 ≡ 3 mod 4).
    let m = loop {
        let m: Integer = ps.iter().product();
        if m.mod_u(4) == 1 {
            break m;
        }
        let last = ps.pop().expect("20 primes");
        ps.push((last + 1u32).next_prime());
    };
    let d = Integer::from(-4) * &m;
    let abs_d = Integer::from(d.abs_ref());
    let x = workable_x(&abs_d);
    let (euler, conductor) = true_trace(&d, x, x);
    let mut w = golden_witness("witness-minus-1000003");
    w.order = classcert_format::Order::Quadratic { discriminant: d };
    w.class_number = Integer::from(1) << 19u32;
    w.h_factors = vec![PrimePower {
        prime: Integer::from(2),
        exponent: 19,
        evidence: PrimalityEvidence::Bpsw,
    }];
    // (p, 0, m/p) is reduced (p < m/p) and ambiguous, so of order 2; no
    // product of a nonempty subset of 19 of the 20 primes is 1 or m, so
    // the classes are independent (Gauss's genus theory).
    w.generators = ps[..19]
        .iter()
        .map(|p| WitnessGenerator {
            order: Integer::from(2),
            form: Form {
                a: p.clone(),
                b: Integer::new(),
                c: Integer::from(&m / p),
            },
        })
        .collect();
    w.conductor_small = conductor;
    w.maximality = None;
    w.euler = euler;
    w
}

fn factor_base_body() -> Body {
    let mut rng = SplitMix::new(0x6662_3430_3936);
    // P ≡ 3 (mod 4), so D = -P ≡ 1 (mod 4).
    let p = loop {
        let p = random_integer(&mut rng, 4096).next_prime();
        if p.mod_u(4) == 3 && p.significant_bits() == 4096 {
            break p;
        }
    };
    let d = -p.clone();
    let theorem = registry::ORDER_GENERATION;
    let bound = registry::generation_bound(theorem, &p).expect("bound");
    let x = workable_x(&p);
    let (euler, conductor) = true_trace(&d, x, bound);
    let primes = primes_up_to(bound.max(x));
    let cond: Vec<u64> = conductor.iter().map(|(q, _)| *q).collect();
    let fb = FactorBase::new(&d, &primes, bound, &cond);
    let mut b = golden_body("minus-3299");
    b.order = classcert_format::Order::Quadratic { discriminant: d };
    b.claim.class_number = Integer::from(1);
    b.claim.invariants = Vec::new();
    b.claim.generators = Vec::new();
    b.conductor_small = conductor;
    b.maximality = None;
    b.generation_theorem = theorem.to_string();
    b.factor_base = fb
        .primes
        .iter()
        .zip(&fb.bs)
        .map(|(&p, &b)| PrimeIdeal::QuadraticForm { p, b })
        .collect();
    b.lattice = Lattice {
        generators: Vec::new(),
        relations: Vec::new(),
        relation_witness: b.lattice.relation_witness.clone(),
        smith: Smith {
            u: Vec::new(),
            u_inv: Vec::new(),
            v: Vec::new(),
            v_inv: Vec::new(),
            diagonal: Vec::new(),
        },
        eliminations: Vec::new(),
        raw_relations: None,
        derived_relations: None,
    };
    b.euler = euler;
    b
}

/// The manifest `hostile.txt`: a header, then one line per case: name,
/// expected outcome, what it is.
pub fn manifest(cases: &[Case], sizes: &[usize]) -> String {
    let mut s = String::from(
        "# Hostile inputs written by `cargo run --release -p classcert-tests --bin hostile-inputs`.\n\
         # file bytes expected what (expected: rejected:<code>, rejected:any, verified-or-over-limit)\n",
    );
    for (c, n) in cases.iter().zip(sizes) {
        s.push_str(&format!(
            "{}.cert {} {} {}\n",
            c.name,
            n,
            c.expect.word(),
            c.what
        ));
    }
    s
}
