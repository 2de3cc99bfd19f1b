//! Prime ideals `P = pO + πO` of an order, checked from the data the
//! certificate gives (`field-spec.md`): `p`, `e`, `f`, `π`, a generator of
//! the residue field and an anti-uniformiser `γ`. Then valuations
//! `v_P(α)`, and the check that a list of primes is all of those above `p`.
//!
//! Everything is linear algebra in `O/pO` (`n`-dimensional over `F_p`) and
//! products in `O`; each check below names the fact it rests on.

use super::fppoly::Fp;
use super::linmodp;
use super::order::{combine, unit, FieldOrder, OrderError};
use crate::arith::mod_small;
use crate::primality::bpsw::{primality_evidence, Evidence};
use rug::Integer;

/// Why a prime ideal or a decomposition was refused.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PrimeError {
    /// `p` is not a prime below `2^63`.
    NotPrime(u64),
    /// `e` or `f` is 0, or `e·f > n`.
    Degrees { e: u32, f: u32 },
    /// `π`, the generator or `γ` does not have `n` coordinates.
    Length,
    /// `O` is not `p`-maximal, so valuations at primes above `p` are not
    /// defined by these checks.
    NotMaximal,
    /// The `p`-maximality test failed.
    Order(OrderError),
    /// `P/pO` has dimension `rank`, not `n - f`.
    Norm { rank: usize, f: u32 },
    /// `1, g, …, g^{f-1}` are dependent modulo `P`.
    Generator,
    /// The minimal polynomial of the generator modulo `P` is reducible.
    Reducible,
    /// `γ ∈ pO`.
    AntiInPO,
    /// `γ·π ∉ pO`.
    AntiNotKilling,
    /// `v_P(p)` is not the claimed `e` (`None`: above it).
    Ramification { claimed: u32, found: Option<u32> },
    /// A listed prime lies above another rational prime or was checked on
    /// an order of another degree.
    OtherPrime { index: usize },
    /// Two listed primes are the same ideal.
    Repeated { first: usize, second: usize },
    /// `Σ e_i f_i` over the list is not `n`.
    DegreeSum { n: usize },
}

impl std::fmt::Display for PrimeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&match self {
            Self::NotPrime(p) => format!("{p} is not a prime below 2^63"),
            Self::Degrees { e, f } => {
                format!("e = {e}, f = {f}: both must be positive with e·f at most the degree")
            }
            Self::Length => "an element does not have one coordinate per basis element".into(),
            Self::NotMaximal => "the order is not maximal at p".into(),
            Self::Order(e) => e.to_string(),
            Self::Norm { rank, f } => {
                format!("P/pO has dimension {rank}, which does not give residue degree {f}")
            }
            Self::Generator => "the powers of the generator below f are dependent modulo P".into(),
            Self::Reducible => {
                "the minimal polynomial of the generator modulo P is reducible".into()
            }
            Self::AntiInPO => "the anti-uniformiser lies in pO".into(),
            Self::AntiNotKilling => "the anti-uniformiser times π is not in pO".into(),
            Self::Ramification { claimed, found } => match found {
                Some(v) => format!("v_P(p) is {v}, not {claimed}"),
                None => format!("v_P(p) exceeds {claimed}"),
            },
            Self::OtherPrime { index } => {
                format!("prime {index} of the list lies above another p or order")
            }
            Self::Repeated { first, second } => {
                format!("primes {first} and {second} of the list are equal")
            }
            Self::DegreeSum { n } => format!("the sum of e·f over the list is not {n}"),
        })
    }
}

/// A prime ideal checked by [`check_prime`] (only it builds one).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CheckedPrime {
    p: u64,
    e: u32,
    f: u32,
    degree: usize,
    /// `π` and `γ`, reduced mod `p` (which changes neither `P` nor the
    /// properties of `γ`).
    pi: Vec<Integer>,
    anti: Vec<Integer>,
    /// `γ ω_j` for each basis element `ω_j`: multiplication by `γ` as `n²`
    /// products instead of `n³`.
    anti_rows: Vec<Vec<Integer>>,
    /// `P/pO` in reduced echelon form over `F_p`.
    rows: Vec<Vec<Integer>>,
    /// The minimal polynomial of the generator in `O/P`, monic, low to high.
    residue: Vec<u64>,
}

impl CheckedPrime {
    pub fn p(&self) -> u64 {
        self.p
    }
    pub fn e(&self) -> u32 {
        self.e
    }
    pub fn f(&self) -> u32 {
        self.f
    }
}

/// Checks that `P = pO + πO` is a prime ideal of `O` with residue degree
/// `f` and ramification index `e`, and that `γ = anti` is an
/// anti-uniformiser:
///
/// 1. `p` is prime (Baillie–PSW, a proof below `2^64`) and `p < 2^63`;
///    `e, f ≥ 1`, `e·f ≤ n`;
/// 2. `O` is `p`-maximal: `p^2 ∤ disc(O)` (as `disc(O) = [O_K : O]^2 d_K`,
///    common practice), or else [`FieldOrder::is_p_maximal`]; valuations
///    need it;
/// 3. `P/pO` is the image of `x ↦ πx` on `O/pO`, spanned by the `π ω_j`;
///    its dimension is `n - f`, so `|O/P| = p^f` and `P ≠ O`;
/// 4. `O/P` is a field: the images of `1, g, …, g^{f-1}` (`g` the
///    generator) are independent modulo `P/pO`, so they are a basis of
///    `O/P`, and the dependence of `g^f` on them gives a monic `m` of degree
///    `f` with `m(g) ∈ P`. Then `F_p[x] → O/P`, `x ↦ g` is onto (its image
///    is a subring containing a basis), its kernel contains `(m)`, and as
///    `F_p[x]/(m)` and `O/P` both have dimension `f` it is an isomorphism
///    `F_p[x]/(m) ≅ O/P`. `m` is irreducible by Rabin's test, so `O/P` is a
///    field: `P` is a maximal ideal above `p` with `N(P) = p^f`;
/// 5. `γ ∉ pO` and `γπ ∈ pO`, so `γP ⊆ pO`: `β = γ/p` has `βP ⊆ O` and
///    `β ∉ O`, which in the Dedekind ring `O_(p)` means `v_P(β) = -1` and
///    `v_Q(β) ≥ 0` at the other primes `Q` above `p` (see [`valuation`]);
/// 6. `v_P(p) = e` by [`valuation`].
pub fn check_prime(
    order: &FieldOrder,
    p: u64,
    e: u32,
    f: u32,
    pi: &[Integer],
    generator: &[Integer],
    anti: &[Integer],
) -> Result<CheckedPrime, PrimeError> {
    let n = order.degree();
    let fu = usize::try_from(f).unwrap_or(usize::MAX);
    if e == 0 || f == 0 || u64::from(e) * u64::from(f) > n as u64 {
        return Err(PrimeError::Degrees { e, f });
    }
    let pz = Integer::from(p);
    let field = Fp::new(p)
        .filter(|_| primality_evidence(&pz) == Evidence::ProvenPrime)
        .ok_or(PrimeError::NotPrime(p))?;
    if [pi, generator, anti].iter().any(|v| v.len() != n) {
        return Err(PrimeError::Length);
    }
    // Step 2.
    if order
        .discriminant()
        .is_divisible(&Integer::from(pz.square_ref()))
        && !order.is_p_maximal(&pz).map_err(PrimeError::Order)?
    {
        return Err(PrimeError::NotMaximal);
    }
    // Steps 3 and 4 in machine words: p < 2^63 (`field`).
    let words = |v: &[Integer]| -> Vec<u64> { v.iter().map(|c| mod_small(c, p)).collect() };
    let pi = linmodp::reduce(pi, &pz);
    let images: Vec<Vec<u64>> = (0..n)
        .map(|j| words(&order.mul(&pi, &unit(n, j))))
        .collect();
    let rows = linmodp::echelon_words(images, field).ok_or(PrimeError::NotPrime(p))?;
    if rows.len() + fu != n {
        return Err(PrimeError::Norm {
            rank: rows.len(),
            f,
        });
    }
    // Step 4: powers[j] = g^j mod p, j = 0..=f.
    let g = linmodp::reduce(generator, &pz);
    let mut power = linmodp::reduce(&order.one(), &pz);
    let mut powers = vec![words(&power)];
    for _ in 0..f {
        power = linmodp::reduce(&order.mul(&power, &g), &pz);
        powers.push(words(&power));
    }
    let mut low: Vec<Vec<u64>> = powers.iter().take(fu).cloned().collect();
    low.extend(rows.iter().cloned());
    if linmodp::echelon_words(low, field).map(|e| e.len()) != Some(n) {
        return Err(PrimeError::Generator);
    }
    // The n + 1 vectors g^0..g^f and the rows have rank n: a kernel of
    // dimension 1, whose coordinate at g^f is non-zero (the others are
    // independent).
    let mut all = powers;
    all.extend(rows.iter().cloned());
    let kernel = linmodp::kernel_words(&all, field).ok_or(PrimeError::NotPrime(p))?;
    let [relation] = kernel.as_slice() else {
        return Err(PrimeError::Generator);
    };
    let lead = relation.get(fu).and_then(|&c| field.inv_c(c));
    let lead = lead.ok_or(PrimeError::Generator)?;
    let residue: Vec<u64> = relation
        .iter()
        .take(fu + 1)
        .map(|&c| field.mul_c(c, lead))
        .collect();
    if field.is_irreducible(&residue) != Some(true) {
        return Err(PrimeError::Reducible);
    }
    // Step 5.
    let anti = linmodp::reduce(anti, &pz);
    if order.is_zero(&anti) {
        return Err(PrimeError::AntiInPO);
    }
    if !order.divisible_by(&order.mul(&anti, &pi), &pz) {
        return Err(PrimeError::AntiNotKilling);
    }
    let anti_rows = (0..n).map(|j| order.mul(&unit(n, j), &anti)).collect();
    let prime = CheckedPrime {
        p,
        e,
        f,
        degree: n,
        pi,
        anti,
        anti_rows,
        rows: rows
            .into_iter()
            .map(|r| r.into_iter().map(Integer::from).collect())
            .collect(),
        residue,
    };
    // Step 6.
    let p_element: Vec<Integer> = order.one().into_iter().map(|c| c * &pz).collect();
    let found = valuation(order, &prime, &p_element, e);
    if found != Some(e) {
        return Err(PrimeError::Ramification { claimed: e, found });
    }
    Ok(prime)
}

/// `v_P(α)` for a non-zero `α ∈ O` (coordinates, length `n`): the largest
/// `k ≤ cap` with `α γ^k ∈ p^k O`, found by `α ← αγ/p` while `αγ ∈ pO`.
/// `None` if `α = 0`, has another length, or `v_P(α) > cap`. At most
/// `min(cap, v_P(α)) + 1` products; each step adds at most
/// `bits(table) + 6` bits to the coordinates (`γ` is reduced mod `p`), and
/// `v_P(α) ≤ log_p |N(α)|`. `prime` must come from [`check_prime`] on the
/// same order.
///
/// Why: `O` is `p`-maximal ([`check_prime`] step 2), so its localisation
/// `O_(p)` is a Dedekind ring whose primes are those above `p`, and an
/// element of `K` lies in `O` iff it lies in `O_(p)` and is integral at the
/// other primes. With `β = γ/p`, `v_P(β) = -1` and `v_Q(β) ≥ 0` for the
/// other `Q | p` (step 5), and `αβ^k` is integral away from `p`; so
/// `αβ^k ∈ O` iff `v_P(α) ≥ k`.
pub fn valuation(
    order: &FieldOrder,
    prime: &CheckedPrime,
    alpha: &[Integer],
    cap: u32,
) -> Option<u32> {
    if alpha.len() != order.degree() || order.is_zero(alpha) {
        return None;
    }
    let p = Integer::from(prime.p);
    let mut a = alpha.to_vec();
    for k in 0..=cap {
        // b = α γ = Σ_j α_j (γ ω_j)
        let b = combine(&a, &prime.anti_rows, a.len());
        if !order.divisible_by(&b, &p) {
            return Some(k);
        }
        a = b.into_iter().map(|c| c.div_exact(&p)).collect();
    }
    None
}

/// Checks that `primes` (each from [`check_prime`] on this order) are all
/// the primes above `p`, each once: they lie above `p`, are pairwise
/// different ideals (different echelon forms of `P/pO`), and
/// `Σ e_i f_i = n`.
///
/// Why: for `O` `p`-maximal, the primes above `p` and their `e`, `f` are
/// those of `O_K` (the localisations at `p` agree), and
/// `Σ_{P | p} e_P f_P = n` (J. Neukirch, Algebraic Number Theory,
/// Proposition I.8.2; common practice). Each listed `P_i` is such a prime
/// with `e_i = v_{P_i}(p)` (checked by [`check_prime`]), so the listed sum
/// is at most `n`, and equals `n` only if no prime above `p` is missing.
pub fn check_decomposition(
    order: &FieldOrder,
    p: u64,
    primes: &[&CheckedPrime],
) -> Result<(), PrimeError> {
    let n = order.degree();
    let mut sum = 0u64;
    // Every e·f ≥ 1, so this stops after at most n + 1 entries.
    for (index, prime) in primes.iter().enumerate() {
        if prime.p != p || prime.degree != n {
            return Err(PrimeError::OtherPrime { index });
        }
        sum += u64::from(prime.e) * u64::from(prime.f);
        if sum > n as u64 {
            return Err(PrimeError::DegreeSum { n });
        }
    }
    if sum != n as u64 {
        return Err(PrimeError::DegreeSum { n });
    }
    for (first, a) in primes.iter().enumerate() {
        for (second, b) in primes.iter().enumerate().skip(first + 1) {
            if a.rows == b.rows {
                return Err(PrimeError::Repeated { first, second });
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    use rug::ops::Pow;

    impl CheckedPrime {
        /// `N(P) = p^f`.
        pub fn norm(&self) -> Integer {
            Integer::from(self.p).pow(self.f)
        }
        pub fn pi(&self) -> &[Integer] {
            &self.pi
        }
        pub fn anti(&self) -> &[Integer] {
            &self.anti
        }
        /// `P/pO` in reduced echelon form.
        pub fn rows(&self) -> &[Vec<Integer>] {
            &self.rows
        }
        /// The minimal polynomial over `F_p` of the generator modulo `P`.
        pub fn residue_polynomial(&self) -> &[u64] {
            &self.residue
        }
    }
    use crate::arith::primes_up_to;
    use crate::field::order::tests::{dedekind_maximal, factor_brute, lift, power_order, z};
    use crate::field::{zpoly, TestRng};

    /// The coordinates in `Z[θ]` (or any order containing it) of a
    /// polynomial in `θ`.
    fn el(o: &FieldOrder, poly: &[Integer]) -> Vec<Integer> {
        o.from_power_basis(poly, &Integer::from(1)).unwrap()
    }

    fn eli(o: &FieldOrder, poly: &[i64]) -> Vec<Integer> {
        el(o, &z(poly))
    }

    /// `(P, e, f, π, generator, γ)` for the Dedekind–Kummer prime `(p, t(θ))`
    /// of `Z[θ]` with `F ≡ t^e · h` mod `p`: generator θ, `γ = h(θ)` lifted
    /// (then `γ t(θ) ≡ F(θ) = 0` and `γ ∉ pO` as `deg h < n`).
    fn kummer(o: &FieldOrder, p: u64, t: &[u64], fbar: &[u64]) -> (Vec<Integer>, Vec<Integer>) {
        let k = Fp::new(p).unwrap();
        let (h, r) = k.divrem(fbar, t).unwrap();
        assert!(r.is_empty());
        (el(o, &lift(t)), el(o, &lift(&h)))
    }

    #[test]
    fn primes_of_pure_cubic() {
        // x^3 - 2 (Z[θ] is maximal: disc -108 is the field discriminant,
        // see order.rs).
        let o = power_order(&[-2, 0, 0, 1]);
        let theta = eli(&o, &[0, 1]);
        let k5 = Fp::new(5).unwrap();
        // Mod 5: 3^3 = 27 ≡ 2, x^3 - 2 ≡ (x - 3)(x^2 + 3x + 4) (by hand; the
        // quadratic has discriminant 9 - 16 ≡ 3, a non-square mod 5).
        assert_eq!(k5.mul(&[2, 1], &[4, 3, 1]), k5.reduce(&z(&[-2, 0, 0, 1])));
        let p1 = check_prime(
            &o,
            5,
            1,
            1,
            &eli(&o, &[-3, 1]),
            &theta,
            &eli(&o, &[4, 3, 1]),
        )
        .unwrap();
        let p2 = check_prime(
            &o,
            5,
            1,
            2,
            &eli(&o, &[4, 3, 1]),
            &theta,
            &eli(&o, &[-3, 1]),
        )
        .unwrap();
        assert_eq!((p2.p(), p2.e(), p2.f()), (5, 1, 2));
        // π and γ are kept reduced mod 5: θ - 3 → (2, 1, 0).
        assert_eq!(
            (p1.pi(), p1.anti()),
            (&z(&[2, 1, 0])[..], &z(&[4, 3, 1])[..])
        );
        assert_eq!(p1.residue_polynomial(), &[2, 1]);
        assert_eq!(p2.residue_polynomial(), &[4, 3, 1]);
        assert_eq!(
            (p1.norm(), p2.norm()),
            (Integer::from(5), Integer::from(25))
        );
        assert_eq!(check_decomposition(&o, 5, &[&p1, &p2]), Ok(()));
        assert_eq!(
            check_decomposition(&o, 5, &[&p1]),
            Err(PrimeError::DegreeSum { n: 3 })
        );
        assert_eq!(
            check_decomposition(&o, 5, &[&p2, &p1, &p1]),
            Err(PrimeError::DegreeSum { n: 3 })
        );
        // Mod 3: x^3 - 2 ≡ x^3 + 1 ≡ (x + 1)^3 (by hand): 3 = P^3 with
        // P = (3, θ + 1), totally ramified; N(θ + 1) = -F(-1) = 3, so
        // v_P(θ + 1) = 1.
        let k3 = Fp::new(3).unwrap();
        assert_eq!(
            k3.mul(&k3.mul(&[1, 1], &[1, 1]), &[1, 1]),
            k3.reduce(&z(&[-2, 0, 0, 1]))
        );
        let u = eli(&o, &[1, 1]);
        let anti = o.mul(&u, &u);
        let p3 = check_prime(&o, 3, 3, 1, &u, &theta, &anti).unwrap();
        assert_eq!(o.norm(&u), 3);
        assert_eq!(valuation(&o, &p3, &u, 10), Some(1));
        assert_eq!(check_decomposition(&o, 3, &[&p3]), Ok(()));
        assert_eq!(
            check_prime(&o, 3, 2, 1, &u, &theta, &anti),
            Err(PrimeError::Ramification {
                claimed: 2,
                found: None
            })
        );
        // Mod 2: x^3: 2 = (2, θ)^3 (θ^3 = 2).
        let p2r = check_prime(&o, 2, 3, 1, &theta, &theta, &eli(&o, &[0, 0, 1])).unwrap();
        assert_eq!(check_decomposition(&o, 2, &[&p2r]), Ok(()));
        // 31: 2 is a cube mod 31 (4^3 = 64 ≡ 2) and 31 ≡ 1 mod 3, so three
        // roots (common practice); found by search.
        let roots: Vec<i64> = (0..31).filter(|r| (r * r * r - 2) % 31 == 0).collect();
        assert!(roots.contains(&4) && roots.len() == 3, "{roots:?}");
        let split: Vec<CheckedPrime> = roots
            .iter()
            .map(|&r| {
                let others: Vec<i64> = roots.iter().copied().filter(|&s| s != r).collect();
                let gamma = o.mul(&eli(&o, &[-others[0], 1]), &eli(&o, &[-others[1], 1]));
                check_prime(&o, 31, 1, 1, &eli(&o, &[-r, 1]), &theta, &gamma).unwrap()
            })
            .collect();
        let refs: Vec<&CheckedPrime> = split.iter().collect();
        assert_eq!(check_decomposition(&o, 31, &refs), Ok(()));
        assert_eq!(
            check_decomposition(&o, 31, &refs[..2]),
            Err(PrimeError::DegreeSum { n: 3 })
        );
        assert_eq!(
            check_decomposition(&o, 5, &refs),
            Err(PrimeError::OtherPrime { index: 0 })
        );
        // The product of two of them as a "prime" of degree 2: norm 31^2,
        // 1 and θ independent modulo it, but the minimal polynomial of θ is
        // (x - r1)(x - r2): O/P ≅ F_31 × F_31 is not a field.
        let (r1, r2, r3) = (roots[0], roots[1], roots[2]);
        let pi = o.mul(&eli(&o, &[-r1, 1]), &eli(&o, &[-r2, 1]));
        assert_eq!(
            check_prime(&o, 31, 1, 2, &pi, &theta, &eli(&o, &[-r3, 1])),
            Err(PrimeError::Reducible)
        );
        // The same prime listed twice, with e f summing to n otherwise.
        let twice = [&split[0], &split[1], &split[1]];
        assert_eq!(
            check_decomposition(&o, 31, &twice),
            Err(PrimeError::Repeated {
                first: 1,
                second: 2
            })
        );
    }

    #[test]
    fn refusals() {
        let o = power_order(&[-2, 0, 0, 1]);
        let theta = eli(&o, &[0, 1]);
        let (pi, anti) = (eli(&o, &[-3, 1]), eli(&o, &[4, 3, 1]));
        let check = |p, e, f, pi: &[Integer], g: &[Integer], a: &[Integer]| {
            check_prime(&o, p, e, f, pi, g, a).err()
        };
        // Wrong anti-uniformisers: 1 and θ do not kill π mod 5; 5·γ is in 5O.
        assert_eq!(
            check(5, 1, 1, &pi, &theta, &o.one()),
            Some(PrimeError::AntiNotKilling)
        );
        assert_eq!(
            check(5, 1, 1, &pi, &theta, &theta),
            Some(PrimeError::AntiNotKilling)
        );
        let five_anti: Vec<Integer> = anti.iter().map(|c| Integer::from(c * 5)).collect();
        assert_eq!(
            check(5, 1, 1, &pi, &theta, &five_anti),
            Some(PrimeError::AntiInPO)
        );
        // A generator of the wrong degree: 3 lies in F_5, so 1 and 3 are
        // dependent modulo the degree-2 prime.
        let (pi2, anti2) = (eli(&o, &[4, 3, 1]), eli(&o, &[-3, 1]));
        assert_eq!(
            check(5, 1, 2, &pi2, &eli(&o, &[3]), &anti2),
            Some(PrimeError::Generator)
        );
        // Norms that do not match f: P1 claimed of degree 2; π = 1 (P = O).
        assert_eq!(
            check(5, 1, 2, &pi, &theta, &anti),
            Some(PrimeError::Norm { rank: 2, f: 2 })
        );
        assert_eq!(
            check(5, 1, 1, &o.one(), &theta, &anti),
            Some(PrimeError::Norm { rank: 3, f: 1 })
        );
        assert_eq!(
            check(5, 1, 0, &pi, &theta, &anti),
            Some(PrimeError::Degrees { e: 1, f: 0 })
        );
        assert_eq!(
            check(5, 2, 2, &pi, &theta, &anti),
            Some(PrimeError::Degrees { e: 2, f: 2 })
        );
        assert_eq!(
            check(5, 2, 1, &pi, &theta, &anti),
            Some(PrimeError::Ramification {
                claimed: 2,
                found: Some(1)
            })
        );
        for p in [0, 1, 35, u64::MAX] {
            assert_eq!(
                check(p, 1, 1, &pi, &theta, &anti),
                Some(PrimeError::NotPrime(p))
            );
        }
        assert_eq!(
            check(5, 1, 1, &pi[..2], &theta, &anti),
            Some(PrimeError::Length)
        );
        // Z[θ] for x^3 - 10 is not 3-maximal (order.rs): (3, θ - 1) with
        // x^3 - 10 ≡ (x - 1)^3 mod 3 is refused.
        let o10 = power_order(&[-10, 0, 0, 1]);
        let u = eli(&o10, &[-1, 1]);
        assert_eq!(
            check_prime(&o10, 3, 3, 1, &u, &u, &o10.mul(&u, &u)),
            Err(PrimeError::NotMaximal)
        );
        // Valuations: 0 and wrong lengths give None, as does a cap exceeded.
        let p1 = check_prime(&o, 5, 1, 1, &pi, &theta, &anti).unwrap();
        assert_eq!(valuation(&o, &p1, &z(&[0, 0, 0]), 5), None);
        assert_eq!(valuation(&o, &p1, &z(&[1, 1]), 5), None);
        let p125: Vec<Integer> = o.one().into_iter().map(|c| c * 125).collect();
        assert_eq!(valuation(&o, &p1, &p125, 3), Some(3));
        assert_eq!(valuation(&o, &p1, &p125, 2), None);
        for e in [
            PrimeError::Ramification {
                claimed: 2,
                found: None,
            },
            PrimeError::Repeated {
                first: 0,
                second: 1,
            },
        ] {
            assert!(!e.to_string().is_empty() && !e.to_string().contains('{'));
        }
    }

    #[test]
    fn primes_above_an_index_divisor() {
        // The maximal order of Q(10^(1/3)) with basis 1, θ, (1+θ+θ^2)/3
        // (order.rs): 3 divides the index, so Dedekind–Kummer does not
        // apply. For m ≡ ±1 mod 9, 3 = P^2 Q (Alaca and Williams, from
        // memory). Search O/3O for every (π, γ) that check_prime accepts
        // with f = 1, e ∈ {1, 2}, generator 1: exactly two ideals, with
        // e = 2 and e = 1, and together they pass check_decomposition.
        let o = FieldOrder::new(
            &z(&[-10, 0, 0, 1]),
            &[z(&[3, 0, 0]), z(&[0, 3, 0]), z(&[1, 1, 1])],
            &Integer::from(3),
        )
        .unwrap();
        let found = search_primes(&o, 3);
        let es: Vec<u32> = found.iter().map(|q| q.e()).collect();
        assert_eq!(es, vec![1, 2], "{found:?}");
        let refs: Vec<&CheckedPrime> = found.iter().collect();
        assert_eq!(check_decomposition(&o, 3, &refs), Ok(()));
        // Z[θ, θ^2/2] for x^3 - 12 (maximal, order.rs): 2 | 12 is totally
        // ramified in a pure cubic field (common practice): one prime, e = 3.
        let o = FieldOrder::new(
            &z(&[-12, 0, 0, 1]),
            &[z(&[2, 0, 0]), z(&[0, 2, 0]), z(&[0, 0, 1])],
            &Integer::from(2),
        )
        .unwrap();
        let found = search_primes(&o, 2);
        assert_eq!(found.iter().map(|q| q.e()).collect::<Vec<_>>(), vec![3]);
        assert_eq!(check_decomposition(&o, 2, &[&found[0]]), Ok(()));
    }

    /// Every distinct prime of residue degree 1 above `p` that
    /// [`check_prime`] accepts with some `π, γ ∈ O/pO`, `e ≤ 3` and
    /// generator 1, sorted by `e`.
    fn search_primes(o: &FieldOrder, p: u64) -> Vec<CheckedPrime> {
        let n = o.degree() as u32;
        let all: Vec<Vec<Integer>> = (0..p.pow(n))
            .map(|i| (0..n).map(|j| Integer::from(i / p.pow(j) % p)).collect())
            .collect();
        let mut found: Vec<CheckedPrime> = Vec::new();
        for pi in &all {
            for gamma in &all {
                for e in 1..=3 {
                    if let Ok(q) = check_prime(o, p, e, 1, pi, &o.one(), gamma) {
                        if !found.iter().any(|x| x.rows() == q.rows()) {
                            found.push(q);
                        }
                    }
                }
            }
        }
        found.sort_by_key(|q| q.e());
        found
    }

    #[test]
    fn dedekind_kummer() {
        // A second method (Dedekind–Kummer, common practice): for p with
        // Z[θ] p-maximal (Dedekind's criterion in order.rs), the primes above
        // p are (p, t(θ)) for the irreducible factors t of F mod p, found
        // here by search, with e the multiplicity and f = deg t. check_prime
        // accepts each with generator θ (minimal polynomial t), the list
        // passes check_decomposition, and fails it with one prime left out
        // or with a wrong e.
        let mut rng = TestRng::new(41);
        let (mut ramified, mut inert, mut checked, mut refused) = (0, 0, 0, 0);
        for _ in 0..60 {
            let n = rng.range(3, 4) as usize;
            let mut c: Vec<i64> = (0..n).map(|_| rng.range(-8, 8)).collect();
            c.push(1);
            let fz = z(&c);
            if zpoly::discriminant(&fz) == Some(Integer::new()) {
                continue;
            }
            let o = power_order(&c);
            let theta = eli(&o, &[0, 1]);
            for p in primes_up_to(13) {
                let k = Fp::new(p).unwrap();
                let fbar = k.reduce(&fz);
                let factors = factor_brute(p, &fbar);
                let data: Vec<_> = factors
                    .iter()
                    .map(|(t, e)| (t, *e, kummer(&o, p, t, &fbar)))
                    .collect();
                if !dedekind_maximal(&fz, p) {
                    let (t, e, (pi, gamma)) = &data[0];
                    let f = t.len() as u32 - 1;
                    assert_eq!(
                        check_prime(&o, p, *e, f, pi, &theta, gamma),
                        Err(PrimeError::NotMaximal)
                    );
                    refused += 1;
                    continue;
                }
                let mut primes = Vec::new();
                for (t, e, (pi, gamma)) in &data {
                    let f = t.len() as u32 - 1;
                    let q = check_prime(&o, p, *e, f, pi, &theta, gamma).unwrap();
                    assert_eq!(q.residue_polynomial(), &t[..]);
                    if *e > 1 {
                        ramified += 1;
                        let wrong = check_prime(&o, p, e - 1, f, pi, &theta, gamma);
                        assert!(matches!(wrong, Err(PrimeError::Ramification { .. })));
                    }
                    inert += usize::from(f as usize == n);
                    primes.push(q);
                }
                let refs: Vec<&CheckedPrime> = primes.iter().collect();
                assert_eq!(check_decomposition(&o, p, &refs), Ok(()));
                for skip in 0..refs.len() {
                    let fewer: Vec<&CheckedPrime> = refs
                        .iter()
                        .enumerate()
                        .filter(|(i, _)| *i != skip)
                        .map(|(_, q)| *q)
                        .collect();
                    assert_eq!(
                        check_decomposition(&o, p, &fewer),
                        Err(PrimeError::DegreeSum { n })
                    );
                }
                checked += 1;
            }
        }
        assert!(
            checked > 200 && ramified > 10 && inert > 10 && refused > 5,
            "{checked} {ramified} {inert} {refused}"
        );
    }

    #[test]
    fn valuations_of_linear_elements() {
        // α = a - bθ with gcd(a, b) = 1 and a ≡ b r mod p for a root r of F
        // mod p lies in P = (p, θ - r) and in no other prime above p, so
        // v_P(α) = v_p(N α) (general-fields.md, from Σ_{Q|p} f_Q v_Q(α) =
        // v_p(N α), common practice). To reach higher valuations, r is
        // lifted by search to a root mod p^k when it is simple.
        let mut rng = TestRng::new(42);
        let mut deep = 0;
        for _ in 0..40 {
            let n = rng.range(3, 5) as usize;
            let mut c: Vec<i64> = (0..n).map(|_| rng.range(-9, 9)).collect();
            c.push(1);
            let fz = z(&c);
            if zpoly::discriminant(&fz) == Some(Integer::new()) {
                continue;
            }
            let o = power_order(&c);
            let theta = eli(&o, &[0, 1]);
            for p in [2u64, 3, 5, 7] {
                if !dedekind_maximal(&fz, p) {
                    continue;
                }
                let k = Fp::new(p).unwrap();
                let fbar = k.reduce(&fz);
                for (t, e) in factor_brute(p, &fbar)
                    .into_iter()
                    .filter(|(t, _)| t.len() == 2)
                {
                    let (pi, gamma) = kummer(&o, p, &t, &fbar);
                    let q = check_prime(&o, p, e, 1, &pi, &theta, &gamma).unwrap();
                    let r = (p - t[0]) % p;
                    // A root mod p^kk: r + p·j for the j that works, by search.
                    let kk = if e == 1 { 3 } else { 1 };
                    let pk = p.pow(kk) as i64;
                    let root = (0..p.pow(kk - 1) as i64)
                        .map(|j| r as i64 + p as i64 * j)
                        .find(|x| zpoly::eval(&fz, &Integer::from(*x)).is_divisible_u(pk as u32))
                        .unwrap();
                    for _ in 0..15 {
                        let b = rng.range(1, 200);
                        let a = b * root + pk * rng.range(-300, 300);
                        if Integer::from(a).gcd(&Integer::from(b)) != 1 || b % p as i64 == 0 {
                            continue;
                        }
                        let alpha = eli(&o, &[a, -b]);
                        // N(a - bθ) = Res(F, a - bx) for monic F (common practice).
                        let norm = zpoly::resultant(&fz, &z(&[a, -b]));
                        assert_eq!(o.norm(&alpha), norm);
                        let vp = (0..64)
                            .take_while(|&i| norm.is_divisible(&Integer::from(p).pow(i + 1)))
                            .count() as u32;
                        assert_eq!(valuation(&o, &q, &alpha, 64), Some(vp), "{c:?} {p} {a} {b}");
                        deep += usize::from(vp >= 3);
                        // v_P(p^2 α) = 2e + v_P(α).
                        let scaled: Vec<Integer> =
                            alpha.iter().map(|x| Integer::from(x * (p * p))).collect();
                        assert_eq!(valuation(&o, &q, &scaled, 64), Some(vp + 2 * e));
                        // a' = a + 1 breaks the congruence: valuation 0.
                        let other = eli(&o, &[a + 1, -b]);
                        assert_eq!(valuation(&o, &q, &other, 64), Some(0));
                    }
                }
            }
        }
        assert!(deep > 20, "{deep}");
    }
}
