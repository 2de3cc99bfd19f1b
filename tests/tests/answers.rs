//! Answers about one class (`classcert ask`, `classcert-verify --answer`):
//! the exponents `e` with `[I] = ∏ g_i^{e_i}` over a certificate's
//! generators, and the order of `[I]`.
//!
//! Every answer is checked three ways: by the verifier's library against
//! the verified certificate; by composing `∏ g_i^{e_i}` here with a naive
//! composition (Dirichlet's united forms and plain reduction, written below
//! from the definitions, sharing no code with either crate's composition)
//! and comparing reduced forms; and the order by its definition, `[I]^n =
//! 1` and `[I]^(n/q) ≠ 1` for each prime `q | n`, with the same naive
//! arithmetic (or, for small `D`, by composing `[I]` with itself until the
//! principal form appears).

// Tests report failures by panicking (the panic-free set is the
// verifier's rule for its library, not for tests).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use classcert_format::{Answer, Form as StatedForm, PrimeIdeal};
use classcert_prover::ask::{ask, prime_form, Asked};
use classcert_prover::{Options, ProveError};
use classcert_tests::oracle;
use classcert_tests::support::{factor_u64, SplitMix};
use classcert_verifier::report::{GeneratorView, Report};
use rug::ops::RemRounding;
use rug::Integer;

// ---------------------------------------------------------------- naive forms

type Big = (Integer, Integer, Integer);

/// Plain reduction of a positive definite form: `b` into `(-a, a]`, then
/// swap `a` and `c` while `a > c`; `b ≥ 0` when `a = c`.
fn reduce(f: &Big, d: &Integer) -> Big {
    let (mut a, mut b) = (f.0.clone(), f.1.clone());
    assert!(a > 0, "positive definite forms only");
    loop {
        let two_a = Integer::from(&a * 2u32);
        let mut r = b.clone().rem_euc(&two_a);
        if r > a {
            r -= &two_a;
        }
        b = r;
        let c = (Integer::from(b.square_ref()) - d) / Integer::from(&a * 4u32);
        if a > c {
            (a, b) = (c, -b);
            continue;
        }
        if a == c && b < 0 {
            b = -b;
        }
        return (a, b, c);
    }
}

/// Dirichlet composition of primitive forms of discriminant `d`: with
/// `e = gcd(a1, a2, (b1 + b2)/2) = u a1 + v a2 + w (b1 + b2)/2`, the united
/// form is `(a1 a2 / e^2, B, ·)` with
/// `B = (u a1 b2 + v a2 b1 + w (b1 b2 + d)/2) / e` (mod `2 a1 a2 / e^2`);
/// its three defining congruences are asserted, then it is reduced.
fn compose(f: &Big, g: &Big, d: &Integer) -> Big {
    let (a1, b1) = (&f.0, &f.1);
    let (a2, b2) = (&g.0, &g.1);
    let beta = Integer::from(b1 + b2) / 2u32;
    let (g12, u0, v0) = a1.clone().extended_gcd(a2.clone(), Integer::new());
    let (e, s, w) = g12.extended_gcd(beta.clone(), Integer::new());
    let (u, v) = (u0 * &s, v0 * &s);
    let a3 = Integer::from(a1 * a2) / Integer::from(e.square_ref());
    let num = u * a1 * b2 + v * a2 * b1 + w * ((Integer::from(b1 * b2) + d) / 2u32);
    assert!(num.is_divisible(&e));
    let two_a3 = Integer::from(&a3 * 2u32);
    let bb = (num / &e).rem_euc(&two_a3);
    // B ≡ b1 (mod 2 a1/e), B ≡ b2 (mod 2 a2/e), B^2 ≡ d (mod 4 a3)
    assert!(Integer::from(&bb - b1).is_divisible(&(Integer::from(a1 * 2u32) / &e)));
    assert!(Integer::from(&bb - b2).is_divisible(&(Integer::from(a2 * 2u32) / &e)));
    assert!((Integer::from(bb.square_ref()) - d).is_divisible(&Integer::from(&a3 * 4u32)));
    let c3 = (Integer::from(bb.square_ref()) - d) / Integer::from(&a3 * 4u32);
    reduce(&(a3, bb, c3), d)
}

fn principal(d: &Integer) -> Big {
    let b = Integer::from(d.is_odd());
    let c = (Integer::from(b.square_ref()) - d) / 4u32;
    (Integer::from(1), b, c)
}

fn inverse(f: &Big) -> Big {
    (f.0.clone(), Integer::from(-&f.1), f.2.clone())
}

/// `f^n`, `n ≥ 0`, by square and multiply with [`compose`].
fn power(f: &Big, n: &Integer, d: &Integer) -> Big {
    let mut acc = principal(d);
    for i in (0..n.significant_bits()).rev() {
        acc = compose(&acc, &acc, d);
        if n.get_bit(i) {
            acc = compose(&acc, f, d);
        }
    }
    acc
}

fn big(f: &StatedForm) -> Big {
    (f.a.clone(), f.b.clone(), f.c.clone())
}

fn stated(f: &Big) -> StatedForm {
    StatedForm {
        a: f.0.clone(),
        b: f.1.clone(),
        c: f.2.clone(),
    }
}

// ---------------------------------------------------------------- helpers

/// Proves `d`, and verifies the certificate: its bytes and the report.
fn certificate(d: &Integer) -> (Vec<u8>, Report) {
    let body = classcert_prover::prove(d, &Options::default())
        .unwrap_or_else(|e| panic!("prove({d}) failed: {e}"));
    let bytes = classcert_format::encode_file(&body).unwrap().0;
    let report = classcert_verifier::verify_bytes(&bytes);
    assert!(report.is_verified(), "the certificate of {d} verifies");
    (bytes, report)
}

/// The verified generators (reduced forms) and invariants.
fn structure(report: &Report) -> (Vec<Big>, Vec<Integer>) {
    let v = report.outcome.as_ref().unwrap();
    let gens = v.generators().iter().map(|g| match g {
        GeneratorView::Form(a, b, c) => (a.clone(), b.clone(), c.clone()),
        _ => panic!("D < 0: generators are forms"),
    });
    (gens.collect(), v.invariants().to_vec())
}

/// The verifier's verdict on `answer` (`None`: verified).
fn answer_reason(report: &Report, answer: &[u8]) -> Option<&'static str> {
    let checked = report.clone().check_answer(Some(answer));
    let a = checked.summary.answer.expect("an answer was checked");
    a.outcome.err().map(|r| r.reason.code())
}

/// `∏ g_i^{e_i}`, naively.
fn class_of(gens: &[Big], e: &[Integer], d: &Integer) -> Big {
    let mut acc = principal(d);
    for (g, e) in gens.iter().zip(e) {
        acc = compose(&acc, &power(g, e, d), d);
    }
    acc
}

/// Checks one answer every way (module docs); `order_by_iteration` when
/// the order is small enough to count.
fn check(report: &Report, asked: &Asked, d: &Integer, small: bool) {
    let (gens, inv) = structure(report);
    let a = &asked.answer;
    assert_eq!(
        answer_reason(report, &asked.bytes),
        None,
        "the answer verifies"
    );
    assert_eq!(a.exponents.len(), inv.len());
    for (e, di) in a.exponents.iter().zip(&inv) {
        assert!(*e >= 0 && e < di, "0 <= e_i < d_i");
    }
    let reduced = reduce(&big(&a.form), d);
    assert_eq!(
        class_of(&gens, &a.exponents, d),
        reduced,
        "∏ g_i^e_i is [I]"
    );
    let one = principal(d);
    if small {
        let mut x = reduced.clone();
        let mut n = 1u64;
        while x != one {
            x = compose(&x, &reduced, d);
            n += 1;
        }
        assert_eq!(a.order, n, "the order of {reduced:?} by iteration");
    } else {
        let n = a.order.to_u64().expect("an order below h < 2^64");
        assert_eq!(power(&reduced, &a.order, d), one, "[I]^n = 1");
        for (q, _) in factor_u64(n) {
            let part = Integer::from(n / q);
            assert_ne!(power(&reduced, &part, d), one, "[I]^(n/{q}) != 1");
        }
    }
}

// ---------------------------------------------------------------- tests

/// `D = -3·5·7·11·13·17·19·q`, `q = 20619215665655294138279` prime: a
/// fundamental discriminant of 30 digits with eight prime factors, so its
/// class group has 2-rank 7 (genus theory, common practice) and the answers
/// use seven generators.
const D30: &str = "-100000000000000000000061716755";

#[test]
fn discrete_logs_of_a_hundred_random_forms_of_a_30_digit_order() {
    let d: Integer = D30.parse().unwrap();
    let (bytes, report) = certificate(&d);
    let (_, inv) = structure(&report);
    assert!(inv.len() >= 7, "2-rank 7 at least: {inv:?}");
    let body = classcert_format::decode_file(&bytes).unwrap().body;
    let primes: Vec<Big> = (body.factor_base.iter().take(60))
        .map(|PrimeIdeal::QuadraticForm { p, b }| {
            let (p, b) = (Integer::from(*p), Integer::from(*b));
            let c = (Integer::from(b.square_ref()) - &d) / Integer::from(&p * 4u32);
            (p, b, c)
        })
        .collect();
    let mut rng = SplitMix::new(30);
    let mut trivial = 0;
    for k in 0..100 {
        // a random product of prime forms with random exponents
        let mut f = principal(&d);
        for _ in 0..rng.range(1, 6) {
            let p = &primes[rng.range(0, primes.len() as u64) as usize];
            let p = if rng.range(0, 2) == 0 {
                p.clone()
            } else {
                inverse(p)
            };
            f = compose(&f, &power(&p, &Integer::from(rng.range(1, 1000)), &d), &d);
        }
        let asked = ask(&bytes, &stated(&f), k).unwrap_or_else(|e| panic!("form {k}: {e}"));
        check(&report, &asked, &d, false);
        trivial += usize::from(asked.answer.order == 1);
    }
    assert!(trivial < 10, "the forms are not all principal");
}

/// `D = -4·5·7·11·13 = -20020`: fundamental, five prime factors, so the
/// 2-rank is 4 and the group is far from cyclic. Every reduced form (the
/// oracle lists them) is answered, and its order counted by iteration.
#[test]
fn every_class_of_a_non_cyclic_group_and_its_order() {
    let dv = -4 * 5 * 7 * 11 * 13;
    let d = Integer::from(dv);
    let (bytes, report) = certificate(&d);
    let (_, inv) = structure(&report);
    let forms = oracle::reduced_forms(dv);
    assert_eq!(
        inv.iter().product::<Integer>(),
        forms.len() as u64,
        "h = #reduced forms"
    );
    assert!(inv.len() >= 4, "2-rank 4: {inv:?}");
    let mut orders = Vec::new();
    for (k, &(a, b, c)) in forms.iter().enumerate() {
        let f = StatedForm {
            a: Integer::from(a),
            b: Integer::from(b),
            c: Integer::from(c),
        };
        let asked = ask(&bytes, &f, k as u64).unwrap();
        check(&report, &asked, &d, true);
        // and with the oracle's own composition (machine words)
        let mut x = (a, b, c);
        let mut n = 1u64;
        while x != oracle::principal_form(dv) {
            x = oracle::compose_naive(x, (a, b, c), dv);
            n += 1;
        }
        assert_eq!(asked.answer.order, n);
        orders.push(n);
    }
    // the principal form alone has order 1; the exponent of the group is
    // the largest invariant
    assert_eq!(orders.iter().filter(|&&n| n == 1).count(), 1);
    assert_eq!(
        orders.iter().max().copied().map(Integer::from),
        inv.last().cloned()
    );
}

/// `D = -56`: the class number of discriminant `-4·14` is 4 (OEIS A000003,
/// a(14) = 4; H. Cohen, A Course in Computational Algebraic Number Theory,
/// p. 514, is the table it cites), and the group is cyclic (two prime
/// factors of `D`, so 2-rank 1: genus theory, common practice). The four
/// reduced forms have orders 1, 2, 4, 4.
#[test]
fn published_class_number_of_minus_56_and_the_orders_of_its_forms() {
    let d = Integer::from(-56);
    let (bytes, report) = certificate(&d);
    let (_, inv) = structure(&report);
    assert_eq!(inv, vec![Integer::from(4)]);
    let forms = oracle::reduced_forms(-56);
    assert_eq!(forms, vec![(1, 0, 14), (2, 0, 7), (3, -2, 5), (3, 2, 5)]);
    let mut orders = Vec::new();
    for &(a, b, c) in &forms {
        let f = StatedForm {
            a: Integer::from(a),
            b: Integer::from(b),
            c: Integer::from(c),
        };
        let asked = ask(&bytes, &f, 1).unwrap();
        check(&report, &asked, &d, true);
        orders.push(asked.answer.order.to_u64().unwrap());
    }
    assert_eq!(orders, vec![1, 2, 4, 4]);
    // the prime ideal above 3 with the smaller b is (3, 2, 5), a generator
    let p3 = prime_form(&d, 3).unwrap();
    assert_eq!(
        big(&p3),
        (Integer::from(3), Integer::from(2), Integer::from(5))
    );
    check(&report, &ask(&bytes, &p3, 1).unwrap(), &d, true);
}

#[test]
fn principal_forms_have_exponents_zero_and_order_one() {
    let d: Integer = Integer::from(-3299 * 4);
    let (bytes, report) = certificate(&d);
    let one = principal(&d);
    // the principal form, and an unreduced form of its class
    // (x -> x + 5y turns (1, 0, 3299) into (1, 10, 3324))
    let shifted = (Integer::from(1), Integer::from(10), Integer::from(3324));
    for f in [one, shifted] {
        let asked = ask(&bytes, &stated(&f), 7).unwrap();
        assert!(asked.answer.exponents.iter().all(|e| *e == 0));
        assert_eq!(asked.answer.order, 1);
        check(&report, &asked, &d, true);
    }
}

#[test]
fn forged_answers_are_rejected() {
    let d: Integer = Integer::from(-3299 * 4);
    let (bytes, report) = certificate(&d);
    let (_, inv) = structure(&report);
    let p = prime_form(&d, 5).unwrap();
    let asked = ask(&bytes, &p, 1).unwrap();
    assert_eq!(answer_reason(&report, &asked.bytes), None);
    let forged = |change: &dyn Fn(&mut Answer)| {
        let mut a = asked.answer.clone();
        change(&mut a);
        a.encode().unwrap()
    };
    // one exponent changed (still in range)
    let e = forged(&|a| {
        let last = a.exponents.len() - 1;
        a.exponents[last] = (a.exponents[last].clone() + 1u32) % &inv[last];
    });
    assert_eq!(answer_reason(&report, &e), Some("answer-not-principal"));
    // an exponent out of range, and one too few
    let e = forged(&|a| a.exponents[0] += &inv[0]);
    assert_eq!(answer_reason(&report, &e), Some("answer-invalid"));
    let e = forged(&|a| {
        a.exponents.pop();
    });
    assert_eq!(answer_reason(&report, &e), Some("answer-invalid"));
    // the order
    let e = forged(&|a| a.order *= 2u32);
    assert_eq!(answer_reason(&report, &e), Some("answer-order-mismatch"));
    // another certificate's id
    let e = forged(&|a| a.certificate[0] ^= 1);
    assert_eq!(answer_reason(&report, &e), Some("answer-mismatch"));
    // a form of another discriminant, and one that is not primitive
    let e = forged(&|a| a.form.c += 1u32);
    assert_eq!(answer_reason(&report, &e), Some("answer-invalid"));
    let e = forged(&|a| {
        a.form = StatedForm {
            a: Integer::from(2),
            b: Integer::from(0),
            c: Integer::from(3299 * 2),
        }
    });
    // (2, 0, 6598) has discriminant -4·13196 = -52784: another D
    assert_eq!(answer_reason(&report, &e), Some("answer-invalid"));
    // bytes that are not the canonical encoding, or not an answer
    let mut long = asked.bytes.clone();
    long.push(0);
    assert_eq!(answer_reason(&report, &long), Some("decode-trailing-data"));
    let not_an_answer = answer_reason(&report, &bytes).unwrap();
    assert!(["decode-malformed", "over-limit"].contains(&not_an_answer));
    // an answer to a certificate that does not verify is not checked
    let mut damaged = bytes.clone();
    let last = damaged.len() - 1;
    damaged[last] ^= 1;
    let rejected = classcert_verifier::verify_bytes(&damaged);
    assert!(!rejected.is_verified());
    assert_eq!(
        answer_reason(&rejected, &asked.bytes),
        rejected.outcome.as_ref().err().map(|r| r.reason.code())
    );
}

#[test]
fn the_prover_refuses_what_it_cannot_answer() {
    let d = Integer::from(-3299 * 4);
    let (bytes, _) = certificate(&d);
    let refused = |f: (i64, i64, i64)| {
        let f = stated(&(Integer::from(f.0), Integer::from(f.1), Integer::from(f.2)));
        ask(&bytes, &f, 1).err()
    };
    // another discriminant (-23), negative definite
    assert!(matches!(
        refused((2, 1, 3)),
        Some(ProveError::InvalidInput(_))
    ));
    assert!(matches!(
        refused((-1, 0, -3299)),
        Some(ProveError::InvalidInput(_))
    ));
    // (2, 2, 1650): b^2 - 4ac = 4 - 13200 = -13196, but gcd(2, 2, 1650) = 2
    assert!(matches!(
        refused((2, 2, 1650)),
        Some(ProveError::InvalidInput(_))
    ));
    // D > 0 and order witnesses: refused with a reason
    let (real, _) = certificate(&Integer::from(316));
    let one = stated(&(Integer::from(1), Integer::from(0), Integer::from(-79)));
    assert!(matches!(
        ask(&real, &one, 1),
        Err(ProveError::Unsupported(_))
    ));
    let (witness, _) = classcert_prover::witness::prove_witness_to_bytes(
        &Integer::from(-23),
        &Integer::from(3),
        None,
        None,
        &Options::default(),
    )
    .unwrap();
    let one = stated(&principal(&Integer::from(-23)));
    assert!(matches!(
        ask(&witness, &one, 1),
        Err(ProveError::Unsupported(_))
    ));
    // the verifier still checks an answer against an order witness, whose
    // classes of exact orders d_i (independent, prod d_i = h) are a basis
    // too: here Cl(-23) = <g> of order 3 (OEIS A006641: h(-23) = 3)
    let report = classcert_verifier::verify_bytes(&witness);
    let (gens, inv) = structure(&report);
    assert_eq!(inv, vec![Integer::from(3)]);
    let id = classcert_format::decode_document(&witness).unwrap().id;
    let g2 = compose(&gens[0], &gens[0], &Integer::from(-23));
    let answer = |e: u32, order: u32| Answer {
        certificate: id,
        form: stated(&g2),
        exponents: vec![Integer::from(e)],
        order: Integer::from(order),
        witness: classcert_format::Witness::FormReduction,
    };
    assert_eq!(
        answer_reason(&report, &answer(2, 3).encode().unwrap()),
        None
    );
    let wrong = answer(1, 3).encode().unwrap();
    assert_eq!(answer_reason(&report, &wrong), Some("answer-not-principal"));
    // no prime ideal of norm 7 ((-13196/7) = (6/7) = -1: 7 is inert), nor
    // an invertible one of norm 2 (2 divides the conductor: -13196/4 =
    // -3299 is a discriminant)
    assert!(matches!(
        prime_form(&d, 7),
        Err(ProveError::InvalidInput(_))
    ));
    assert!(matches!(
        prime_form(&d, 2),
        Err(ProveError::InvalidInput(_))
    ));
    assert!(prime_form(&d, 3).is_ok() && prime_form(&d, 9).is_err());
}
