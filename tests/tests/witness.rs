//! Order-witness certificates (`docs/certificates.md`, section 6): a claimed class
//! number H, a class of exact order H and the analytic bound #Cl < 2H.
//! Every H here is computed independently in the test (the oracle's count
//! of reduced forms, or the relation prover for a large D), never taken
//! from the witness prover; wrong claims are refused, forged files
//! rejected with the code named beside them.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{decode_document, encode_document, Document, WitnessBody};
use classcert_prover::witness::{prove_witness, prove_witness_to_bytes};
use classcert_prover::Options;
use classcert_tests::oracle;
use classcert_tests::support::{read_published, SplitMix};
use classcert_verifier::verify_bytes;
use rug::Integer;

fn witness(d: i64, h: u64) -> WitnessBody {
    prove_witness(
        &Integer::from(d),
        &Integer::from(h),
        None,
        None,
        &Options::default(),
    )
    .unwrap_or_else(|e| panic!("witness for h({d}) = {h}: {e}"))
}

fn code(w: &WitnessBody) -> Option<&'static str> {
    let (bytes, _) =
        encode_document(&Document::OrderWitness(Box::new(w.clone()))).expect("encodes");
    verify_bytes(&bytes).outcome.err().map(|r| r.reason.code())
}

#[test]
fn published_class_numbers_by_order_witness() {
    // OEIS A006203 (h = 3, fundamental D < 0; see vectors/published), each
    // row's h recounted by the oracle
    for &(d, h) in &read_published("class-number-3.txt").rows {
        assert_eq!(oracle::class_number_by_counting(d), h);
        let (bytes, _) = prove_witness_to_bytes(
            &Integer::from(d),
            &Integer::from(h),
            None,
            None,
            &Options::default(),
        )
        .unwrap_or_else(|e| panic!("D = {d}: {e}"));
        let v = verify_bytes(&bytes).outcome.expect("verifies");
        assert_eq!(*v.class_number(), h);
        assert_eq!(
            v.kind(),
            classcert_verifier::report::CertificateKind::OrderWitness
        );
    }
}

#[test]
fn random_cyclic_groups_by_order_witness_and_wrong_claims_refused() {
    let mut rng = SplitMix::new(0x5eed_0008);
    let mut cyclic = 0;
    let mut noncyclic = 0;
    while cyclic < 25 {
        let d = -(rng.log_range(1000, 3_000_000) as i64);
        if !oracle::is_discriminant(d) {
            continue;
        }
        let inv = oracle::group_invariants_bruteforce(d);
        let h = oracle::class_number_by_counting(d);
        let opts = Options::default();
        if inv.len() > 1 {
            // not cyclic: no class has order h
            assert!(
                prove_witness(&Integer::from(d), &Integer::from(h), None, None, &opts).is_err()
            );
            // with the true invariants (oracle), a witness per invariant,
            // when the prover's random search finds independent ones
            let inv: Vec<Integer> = inv.iter().map(|&x| Integer::from(x)).collect();
            if let Ok(w) =
                prove_witness(&Integer::from(d), &Integer::from(h), None, Some(inv), &opts)
            {
                assert_eq!(code(&w), None, "D = {d}");
                noncyclic += 1;
            }
            continue;
        }
        cyclic += 1;
        let w = witness(d, h);
        assert_eq!(code(&w), None, "D = {d}, h = {h}");
        // a doubled claim is refused
        let e = prove_witness(&Integer::from(d), &Integer::from(2 * h), None, None, &opts);
        assert!(e.is_err(), "D = {d}: 2h accepted");
        // a proper divisor is refused (by the analytic bound, or for lack
        // of a class of that exact order... a class of order h exists)
        for q in [2u64, 3, 5] {
            if h.is_multiple_of(q) {
                let e = prove_witness(&Integer::from(d), &Integer::from(h / q), None, None, &opts);
                assert!(e.is_err(), "D = {d}: h/{q} accepted");
            }
        }
    }
    assert!(
        noncyclic > 0,
        "no non-cyclic group was certified by witnesses"
    );
}

#[test]
fn non_cyclic_3299_by_two_witnesses() {
    // Cl(-3299) ≅ Z/3 x Z/9 (the oracle's brute force agrees)
    let d = -3299;
    assert_eq!(oracle::group_invariants_bruteforce(d), vec![3, 9]);
    let inv = vec![Integer::from(3), Integer::from(9)];
    let opts = Options::default();
    let w = prove_witness(
        &Integer::from(d),
        &Integer::from(27),
        None,
        Some(inv),
        &opts,
    )
    .expect("two independent witnesses");
    assert_eq!(code(&w), None);
    // Z/27 is refused: no class of order 27
    let z27 = Some(vec![Integer::from(27)]);
    assert!(prove_witness(&Integer::from(d), &Integer::from(27), None, z27, &opts).is_err());
    // a dependent pair: the order-3 witness replaced by the cube of the
    // order-9 one
    let mut bad = w.clone();
    let dd = Integer::from(d);
    let g9 = &w.generators[1].form;
    let g9 = classcert_verifier::math::Form::new(g9.a.clone(), g9.b.clone(), &dd).unwrap();
    let cube = g9.pow(&Integer::from(3), &dd).unwrap();
    bad.generators[0].form = classcert_format::Form {
        a: cube.a,
        b: cube.b,
        c: cube.c,
    };
    assert_eq!(code(&bad), Some("order-witness-dependent"));
}

#[test]
fn forged_witnesses_are_rejected() {
    // h(-1000003) = 105 = 3 · 5 · 7, cyclic (oracle)
    let d = -1_000_003;
    let h = oracle::class_number_by_counting(d);
    assert_eq!(oracle::group_invariants_bruteforce(d), vec![h]);
    let honest = witness(d, h);
    assert_eq!(code(&honest), None);

    // the witness replaced by its cube: order 35, not 105
    let mut w = honest.clone();
    let f0 = &honest.generators[0].form;
    let g =
        classcert_verifier::math::Form::new(f0.a.clone(), f0.b.clone(), &Integer::from(d)).unwrap();
    let g3 = g.pow(&Integer::from(3), &Integer::from(d)).unwrap();
    w.generators[0].form = classcert_format::Form {
        a: g3.a,
        b: g3.b,
        c: g3.c,
    };
    assert_eq!(code(&w), Some("order-witness-not-exact"));

    // H doubled, with 2 added to its factorisation and to g's order:
    // g^(2H/2) = g^H = 1
    let mut w = honest.clone();
    w.class_number *= 2;
    w.generators[0].order *= 2;
    w.h_factors.insert(
        0,
        classcert_format::PrimePower {
            prime: Integer::from(2),
            exponent: 1,
            evidence: classcert_format::PrimalityEvidence::Bpsw,
        },
    );
    assert_eq!(code(&w), Some("order-witness-not-exact"));

    // H divided by 3, factorisation to match: g^(H/3) is not 1
    let mut w = honest.clone();
    w.class_number = Integer::from(h / 3);
    w.generators[0].order = Integer::from(h / 3);
    w.h_factors.remove(0);
    assert_eq!(code(&w), Some("order-witness-power"));

    // the factorisation does not multiply to H
    let mut w = honest.clone();
    w.h_factors.pop();
    assert_eq!(code(&w), Some("order-witness-factorisation"));

    // a composite listed as a prime factor: 105 = 15 · 7
    let mut w = honest.clone();
    w.h_factors = vec![
        classcert_format::PrimePower {
            prime: Integer::from(7),
            exponent: 1,
            evidence: classcert_format::PrimalityEvidence::Bpsw,
        },
        classcert_format::PrimePower {
            prime: Integer::from(15),
            exponent: 1,
            evidence: classcert_format::PrimalityEvidence::Bpsw,
        },
    ];
    assert_eq!(code(&w), Some("order-witness-factorisation"));

    // not a reduced form
    let mut w = honest.clone();
    let f = &mut w.generators[0].form;
    f.b += Integer::from(&f.a * 2);
    f.c = (Integer::from(f.b.square_ref()) - d) / (Integer::from(&f.a * 4));
    assert_eq!(code(&w), Some("order-witness-form"));

    // the Euler trace's stated interval narrowed
    let mut w = honest.clone();
    w.euler.log_l.lo.mantissa += 1;
    w.euler.log_l.hi.mantissa -= 1;
    assert!(code(&w).is_some());

    // the file round-trips through the strict decoder
    let (bytes, id) = encode_document(&Document::OrderWitness(Box::new(honest.clone()))).unwrap();
    let back = decode_document(&bytes).unwrap();
    assert_eq!(back.id, id);
    assert_eq!(back.document, Document::OrderWitness(Box::new(honest)));
}

#[test]
fn a_30_digit_class_number_from_the_relation_prover() {
    // D = -4p, p the first prime ≡ 1 mod 4 above 2.5·10^28 (bench_d 30)
    let d: Integer = "-100000000000000000000000000148".parse().unwrap();
    let body = classcert_prover::prove(&d, &Options::default()).expect("relations prove");
    let h = body.claim.class_number.clone();
    let (bytes, _) = prove_witness_to_bytes(&d, &h, None, None, &Options::default())
        .unwrap_or_else(|e| panic!("witness for h = {h}: {e}"));
    let v = verify_bytes(&bytes).outcome.expect("verifies");
    assert_eq!(*v.class_number(), h);
    // the relation prover's group is cyclic here: one invariant
    assert_eq!(body.claim.invariants.len(), 1);
    let doubled = Integer::from(&h * 2);
    assert!(prove_witness(&d, &doubled, None, None, &Options::default()).is_err());
}

/// No size cap below the verifier's (issue 9, acceptance 4): `D = -4f²`
/// with `f ≡ 3 (mod 4)` a prime of about 252 bits, so `|D|` has 505 bits.
/// The class number formula for orders (D. A. Cox, *Primes of the form
/// x² + ny²*, Theorem 7.24) gives `h(-4f²) = h(-4) f (1 - (-4/f)/f) /
/// [O_K^* : O^*] = f (1 + 1/f) / 2 = (f + 1)/2`, since `h(-4) = 1`,
/// `(-4/f) = -1` and `O_K^*` has 4 elements against 2. `f` is chosen so
/// that `(f + 1)/2 = 2 · t · ∏ p` (odd primes p up to a bound) factors;
/// primality of `f` is GMP's test (the reference library), and the class
/// number comes from the formula, never from the prover.
#[test]
fn order_witness_beyond_the_old_400_bit_cap() {
    let mut m = Integer::from(1);
    let mut factors: Vec<Integer> = Vec::new();
    let mut p = Integer::from(3);
    while Integer::from(&m * &p).significant_bits() <= 250 {
        m *= &p;
        factors.push(p.clone());
        p.next_prime_mut();
    }
    let (f, t) = (1u32..1000)
        .map(|t| (Integer::from(&m * t) * 4u32 - 1u32, t))
        .find(|(f, _)| f.is_probably_prime(40) != rug::integer::IsPrime::No)
        .expect("a prime f = 4 t m - 1 with t < 1000");
    assert_eq!(f.mod_u(4), 3);
    let d = -(Integer::from(f.square_ref()) * 4u32);
    assert!(d.significant_bits() > 500, "{} bits", d.significant_bits());
    let h = Integer::from(&f + 1u32) / 2u32;
    // H = 2 · t · ∏ p, with the factors of t found by trial division
    factors.push(Integer::from(2));
    factors.extend(factors_of(&Integer::from(t)));
    factors.sort();
    assert_eq!(factors.iter().product::<Integer>(), h);
    let (bytes, _) = prove_witness_to_bytes(&d, &h, Some(factors), None, &Options::default())
        .unwrap_or_else(|e| panic!("witness for h(-4f^2) = (f+1)/2: {e}"));
    let report = verify_bytes(&bytes);
    let v = report.outcome.as_ref().expect("verifies");
    assert_eq!(*v.class_number(), h);
    assert_eq!(
        v.invariants(),
        std::slice::from_ref(&h),
        "the group is cyclic"
    );
    assert!(!v.maximal());
    // twice the class number is refuted (no class has order 2H)
    let mut twice = factors_of(&h);
    twice.push(Integer::from(2));
    twice.sort();
    let err = prove_witness_to_bytes(&d, &(h * 2u32), Some(twice), None, &Options::default())
        .expect_err("2H is not the class number");
    assert!(
        matches!(err, classcert_prover::ProveError::Refuted(_)),
        "{err}"
    );
}

/// The prime factors of a product of small primes, by trial division.
fn factors_of(n: &Integer) -> Vec<Integer> {
    let mut out = Vec::new();
    let mut rest = n.clone();
    let mut q = Integer::from(2);
    while rest > 1 {
        while rest.is_divisible(&q) {
            rest /= &q;
            out.push(q.clone());
        }
        q.next_prime_mut();
    }
    out
}
