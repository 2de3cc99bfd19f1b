//! Real quadratic orders (`D > 0`): published class numbers and regulators,
//! the Pell example `D = 61`, independent oracles on random discriminants,
//! non-maximal orders, and forged certificates, each rejected with the
//! reason code named beside it.

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_prover::show::unit_coordinates;
use classcert_tests::support::{
    encode, expect_verified, prove_and_verify, prove_body, read_published, rejection_code,
    vectors_dir, SplitMix,
};
use classcert_tests::{forge, oracle};
use rug::Integer;

/// The verified regulator as the JSON prints it, parsed.
fn regulator(report: &classcert_verifier::report::Report, what: &str) -> (f64, String) {
    let v = expect_verified(report, what);
    let u = v
        .unit()
        .unwrap_or_else(|| panic!("{what}: a real order's verdict has a unit"));
    let text = u.regulator_text();
    (text.parse().expect("a decimal"), text)
}

fn significant_digits(s: &str) -> usize {
    s.trim_start_matches(['-', '0', '.'])
        .chars()
        .filter(|c| c.is_ascii_digit())
        .count()
}

#[test]
fn class_numbers_of_real_fields_oeis_a003649() {
    let table = read_published("real-class-numbers.txt");
    for &(d, h) in &table.rows {
        assert_eq!(
            oracle::class_number_real_finite_formula(d),
            h,
            "the table says h({d}) = {h}; the oracle's finite formula disagrees"
        );
        let (body, report) = prove_and_verify(d);
        let v = expect_verified(&report, &format!("D = {d}"));
        assert_eq!(*v.class_number(), Integer::from(h), "h({d})");
        assert!(
            v.maximal(),
            "D = {d} is fundamental; maximality is certified"
        );
        assert!(body.units.is_some());
        // R from the continued fraction of ω (oracle) against the verdict
        let (r, _) = regulator(&report, &format!("D = {d}"));
        let want = oracle::regulator_by_continued_fraction(d);
        assert!(
            (r - want).abs() < 1e-9 * want,
            "R({d}): verified {r}, continued fraction {want}"
        );
    }
}

#[test]
fn regulators_from_cohen_tables() {
    let path = vectors_dir().join("published").join("real-regulators.txt");
    let text = std::fs::read_to_string(&path).expect("the regulator table");
    assert!(text.contains("# source:"));
    let mut n = 0;
    for line in text
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
    {
        let mut it = line.split_whitespace();
        let d: i64 = it.next().unwrap().parse().unwrap();
        let want: f64 = it.next().unwrap().parse().unwrap();
        let (_, report) = prove_and_verify(d);
        let (r, text) = regulator(&report, &format!("D = {d}"));
        assert!(
            (r - want).abs() < 6e-10,
            "R({d}) = {text}, the table says {want}"
        );
        assert!(
            significant_digits(&text) >= 20,
            "R({d}) = {text}: fewer than 20 significant digits"
        );
        assert!((oracle::regulator_by_continued_fraction(d) - want).abs() < 6e-10);
        n += 1;
    }
    assert_eq!(n, 6);
}

/// `(x1 + y1 sqrt D)/2 · (x2 + y2 sqrt D)/2`, as `(x + y sqrt D)/2`.
fn mul_half(d: i64, a: &(Integer, Integer), b: &(Integer, Integer)) -> (Integer, Integer) {
    let x = (Integer::from(&a.0 * &b.0) + Integer::from(&a.1 * &b.1) * d) / 2;
    let y = (Integer::from(&a.0 * &b.1) + Integer::from(&a.1 * &b.0)) / 2;
    (x, y)
}

#[test]
fn pell_61_fundamental_unit_and_its_sixth_power() {
    // The fundamental unit of Q(sqrt 61) is (39 + 5 sqrt 61)/2, of norm -1,
    // and its 6th power is 1766319049 + 226153980 sqrt 61, the smallest
    // solution of x^2 - 61 y^2 = 1 (a commonly quoted Pell table).
    let (body, report) = prove_and_verify(61);
    let v = expect_verified(&report, "D = 61");
    let u = v.unit().expect("a unit");
    assert_eq!(u.norm, -1, "the fundamental unit of Q(sqrt 61) has norm -1");
    let (x, y) = unit_coordinates(&body).expect("a unit of 2 digits is expanded");
    // ε = x + y ω with ω = (1 + sqrt 61)/2, i.e. (2x + y + y sqrt 61)/2
    let eps = (Integer::from(&x * 2) + &y, y.clone());
    assert_eq!(
        eps,
        (Integer::from(39), Integer::from(5)),
        "ε = {x} + {y} ω"
    );
    let mut p = eps.clone();
    for _ in 1..6 {
        p = mul_half(61, &p, &eps);
    }
    assert_eq!(
        p,
        (
            Integer::from(2 * 1_766_319_049i64),
            Integer::from(2 * 226_153_980i64)
        )
    );
    // The regulator is log ε.
    let (r, _) = regulator(&report, "D = 61");
    assert!((r - ((39.0 + 5.0 * 61f64.sqrt()) / 2.0).ln()).abs() < 1e-12);
    // The verifier's JSON carries the unit: norm, regulator and steps.
    let json = report.to_json().render();
    assert!(json.contains("\"regulator\": \"3.66421846088643"), "{json}");
    assert!(json.contains("\"norm\": \"-1\""), "{json}");
    assert!(json.contains("\"compact_steps\": "), "{json}");
}

#[test]
fn oeis_a349419_fundamental_units_of_norm_one() {
    // OEIS A349419 (checked against the stored entry): Q(sqrt 79), D = 316,
    // has class number 3 and fundamental unit 80 + 9 sqrt 79 of norm 1;
    // D = 321 has class number 3 and fundamental unit 215 + 12 sqrt 321.
    for (d, x, y) in [(316i64, 80i64, 9i64), (321, 215, 12)] {
        let (body, report) = prove_and_verify(d);
        let v = expect_verified(&report, &format!("D = {d}"));
        assert_eq!(*v.class_number(), 3);
        assert_eq!(v.unit().as_ref().unwrap().norm, 1);
        let (ux, uy) = unit_coordinates(&body).expect("a small unit is expanded");
        // x + y ω; for D = 316, ω = sqrt 79; for D = 321, ω = (1 + sqrt 321)/2
        let (big_x, big_y) = if d % 2 == 0 {
            (Integer::from(&ux * 2), Integer::from(&uy))
        } else {
            (Integer::from(&ux * 2) + &uy, uy.clone())
        };
        // (X + Y sqrt D)/2 against x + y sqrt(D/4) or (2x + 2y sqrt D)/2
        let want = if d % 2 == 0 {
            (Integer::from(2 * x), Integer::from(y))
        } else {
            (Integer::from(2 * x), Integer::from(2 * y))
        };
        assert_eq!((big_x, big_y), want, "fundamental unit of D = {d}");
    }
}

#[test]
fn random_fundamental_discriminants_against_independent_oracles() {
    // Regulator from the continued fraction of ω (exact integers), h from
    // the finite formula h R = -(1/2) Σ χ(a) log sin(π a / D); both in
    // tests/src/oracle.rs, sharing no code with the prover or verifier.
    let mut rng = SplitMix::new(0x5eed_0003);
    let mut done = 0;
    while done < 10 {
        let d = rng.log_range(1_000, 1_000_000) as i64;
        if !oracle::is_fundamental(d) {
            continue;
        }
        let (_, report) = prove_and_verify(d);
        let v = expect_verified(&report, &format!("D = {d}"));
        assert_eq!(
            *v.class_number(),
            Integer::from(oracle::class_number_real_finite_formula(d)),
            "h({d})"
        );
        let (r, _) = regulator(&report, &format!("D = {d}"));
        let want = oracle::regulator_by_continued_fraction(d);
        assert!((r - want).abs() < 1e-9 * want, "R({d}): {r} vs {want}");
        done += 1;
    }
}

#[test]
fn non_maximal_real_orders() {
    // For D = f^2 d: h(D) R(D) = h(d) R(d) f ∏_{p | f} (1 - χ_d(p)/p)
    // (`docs/certificates.md`, section 5; Cox, Thm 7.24), with R(D) / R(d) a positive
    // integer; R(D) from the oracle's continued fraction of the order.
    for (d0, f) in [
        (5i64, 2i64),
        (5, 3),
        (5, 5),
        (8, 3),
        (13, 2),
        (12, 2),
        (21, 3),
        (61, 2),
    ] {
        let d = f * f * d0;
        let (_, report) = prove_and_verify(d);
        let v = expect_verified(&report, &format!("D = {d}"));
        assert!(!v.maximal());
        let (r, _) = regulator(&report, &format!("D = {d}"));
        let r_order = oracle::regulator_by_continued_fraction(d);
        assert!((r - r_order).abs() < 1e-9 * r_order, "R({d})");
        let h0 = oracle::class_number_real_finite_formula(d0) as f64;
        let r0 = oracle::regulator_by_continued_fraction(d0);
        let mut euler = f as f64;
        for p in 2..=f {
            if f % p == 0 && (2..p).all(|q| p % q != 0) {
                euler *= 1.0 - oracle::kronecker(d0, p) as f64 / p as f64;
            }
        }
        let h = (h0 * r0 * euler / r_order).round();
        assert_eq!(*v.class_number(), Integer::from(h as u64), "h({d})");
    }
}

// ---------------------------------------------------------------- forgeries

#[test]
fn forged_real_certificates_are_rejected_each_for_its_own_reason() {
    // The forgeries of tests/src/forge.rs whose base is a real order, on a
    // fresh proof (the stored copies are checked by tests/tests/vectors.rs).
    let genuine = prove_body(forge::REAL);
    assert_eq!(
        rejection_code(&encode(&genuine)),
        None,
        "the genuine certificate verifies"
    );
    let mut seen = std::collections::BTreeMap::new();
    for f in forge::CATALOGUE.iter().filter(|f| f.base > 0) {
        let got = rejection_code(&(f.apply)(&genuine));
        assert_eq!(got, Some(f.code), "{}: {}", f.name, f.what);
        seen.insert(f.code, f.name);
    }
    // issue 3's cases, each with its own code: a forged unit, the
    // regulator twice too small and twice too large, an α changed, and
    // h and R traded against each other
    for (name, code) in [
        ("real-unit-step-changed", "unit-chain-mismatch"),
        ("real-unit-chain-cut", "unit-chain-mismatch"),
        ("real-regulator-halved", "regulator-mismatch"),
        ("real-unit-squared", "class-number-regulator-not-confirmed"),
        ("real-alpha-changed", "relation-witness-invalid"),
        ("real-h-and-r-traded", "class-number-mismatch"),
    ] {
        assert_eq!(forge::find(name).code, code);
        assert!(seen.contains_key(code), "{code}");
    }
}

#[test]
fn bit_flips_in_a_real_certificate_never_verify_and_never_panic() {
    let file = encode(&prove_body(61));
    assert_eq!(rejection_code(&file), None);
    let n = file.len();
    for i in 0..n {
        for bit in 0..8 {
            let mut f = file.clone();
            f[i] ^= 1 << bit;
            let out = std::panic::catch_unwind(|| rejection_code(&f));
            match out {
                Err(_) => panic!("verifier panicked on byte {i} bit {bit}"),
                Ok(None) => panic!("byte {i} bit {bit} flipped, yet verified"),
                Ok(Some(_)) => {}
            }
        }
    }
}

/// Random changes to the numbers that only real orders have, re-encoded
/// with a correct digest: whatever still verifies must state the true
/// class number and regulator (oracles), and nothing panics.
#[test]
fn random_changes_to_real_certificates_never_verify_a_false_claim() {
    let d = forge::REAL;
    let honest = prove_body(d);
    let h_true = Integer::from(oracle::class_number_real_finite_formula(d));
    let r_true = oracle::regulator_by_continued_fraction(d);
    let mut rng = SplitMix::new(0x5eed_0004);
    let mut rejected = 0;
    for round in 0..300 {
        let mut b = honest.clone();
        let delta = Integer::from(match rng.range(0, 4) {
            0 => 1,
            1 => -1,
            2 => 2,
            _ => rng.range(3, 1000) as i64,
        });
        let raw = b.lattice.raw_relations.as_mut().unwrap();
        let units = b.units.as_mut().unwrap();
        let derived = b.lattice.derived_relations.as_mut();
        let what = match rng.range(0, 8) {
            0 => {
                let j = rng.range(0, raw.len() as u64) as usize;
                if let classcert_format::Witness::Element { x, y } = &mut raw[j].witness {
                    if rng.range(0, 2) == 0 {
                        *x += &delta;
                    } else {
                        *y += &delta;
                    }
                }
                "element witness"
            }
            1 => {
                let j = rng.range(0, raw.len() as u64) as usize;
                if let Some(e) = raw[j].entries.first_mut() {
                    e.1 += &delta;
                }
                "raw relation entry"
            }
            2 => {
                let k = rng.range(0, b.lattice.eliminations.len() as u64) as usize;
                if let classcert_format::Witness::Combination { terms } =
                    &mut b.lattice.eliminations[k].relation.witness
                {
                    let t = rng.range(0, terms.len() as u64) as usize;
                    terms[t].1 += &delta;
                }
                "combination coefficient"
            }
            3 => {
                let t = rng.range(0, units.steps.len() as u64) as usize;
                let s = &mut units.steps[t];
                match rng.range(0, 5) {
                    0 => s.a += &delta,
                    1 => s.b += Integer::from(&delta * 2),
                    2 => s.x += Integer::from(&delta * 2),
                    3 => s.y += Integer::from(&delta * 2),
                    _ => s.s += &delta,
                }
                "compact step"
            }
            4 => {
                units.regulator.hi.mantissa += &delta;
                "regulator bound"
            }
            5 => {
                units.norm = -units.norm;
                "unit norm"
            }
            6 => {
                let derived = derived.expect("this certificate has derived relations");
                let m = rng.range(0, derived.len() as u64) as usize;
                if rng.range(0, 2) == 0 {
                    if let Some(e) = derived[m].entries.first_mut() {
                        e.1 += &delta;
                    }
                    "derived relation entry"
                } else {
                    if let classcert_format::Witness::Combination { terms } =
                        &mut derived[m].witness
                    {
                        let t = rng.range(0, terms.len() as u64) as usize;
                        terms[t].1 += &delta;
                    }
                    "derived relation coefficient"
                }
            }
            _ => {
                b.claim.class_number += &delta;
                "class number"
            }
        };
        if b == honest {
            continue;
        }
        let bytes = encode(&b);
        let out = std::panic::catch_unwind(|| classcert_verifier::verify_bytes(&bytes).outcome);
        match out {
            Err(_) => panic!("round {round}: verifier panicked after changing the {what}"),
            Ok(Err(_)) => rejected += 1,
            Ok(Ok(v)) => {
                assert_eq!(*v.class_number(), h_true, "round {round}: changed {what}");
                let r: f64 = v.unit().unwrap().regulator_text().parse().unwrap();
                assert!((r - r_true).abs() < 1e-9 * r_true, "round {round}: {what}");
            }
        }
    }
    assert!(
        rejected > 200,
        "only {rejected} of 300 changes were rejected"
    );
}

/// The sieve's path from 150 bits, where the real driver harvests the large
/// primes' eliminations from the sieve's relations and writes the dense
/// block's Hermite rows as short combinations found by lattice reduction:
/// `D` the first prime ≡ 1 (mod 4) above 2^150 (46 digits, our choice)
/// proves and verifies. For a prime `p ≡ 1 (mod 4)` the fundamental unit
/// of Q(√p) has norm -1 (the negative Pell equation is solvable; Dirichlet,
/// common practice) and the class number is odd (genus theory: the 2-rank
/// of the class group of a prime discriminant is 0; D. A. Cox, from
/// memory); both are checked on the verified result.
#[test]
fn a_46_digit_prime_discriminant_on_the_short_combinations_path() {
    let mut d = Integer::from(1) << 150u32;
    loop {
        d += 1u32;
        if d.mod_u(4) == 1 && d.is_probably_prime(30) != rug::integer::IsPrime::No {
            break;
        }
    }
    let body = classcert_prover::prove(&d, &classcert_prover::Options::default())
        .unwrap_or_else(|e| panic!("prove({d}) failed: {e}"));
    let report = classcert_verifier::verify_bytes(&encode(&body));
    let v = expect_verified(&report, &format!("D = {d}"));
    let unit = v.unit().expect("a real order has a unit section");
    assert_eq!(unit.norm, -1, "D = {d}: the unit of a prime D ≡ 1 (mod 4)");
    assert!(
        v.class_number().is_odd(),
        "D = {d}: h = {}",
        v.class_number()
    );
}
