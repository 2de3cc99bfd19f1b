//! Hard caps on input size and work. A certificate beyond any of them is
//! rejected with `over-limit` before the work it would cause is started.

/// Bits of `|D|`.
pub const MAX_DISCRIMINANT_BITS: u32 = 4096;
/// Largest Euler-product cut-off `X`.
pub const MAX_EULER_X: u64 = 50_000_000;
/// Largest trial-division / sieve bound `max(B_gen, X)`.
pub const MAX_SIEVE: u64 = 100_000_000;
/// Number of factor-base entries.
pub const MAX_FACTOR_BASE: usize = 6_000_000;
/// Rank of the generator block (size of the Smith form).
pub const MAX_RANK: usize = 64;
/// Bits of any matrix entry or exponent.
pub const MAX_ENTRY_BITS: u32 = 16_384;
/// Entries of one sparse relation.
pub const MAX_RELATION_ENTRIES: usize = 4096;
/// Total compositions the relation checks may cost (each exponent bit
/// costs at most two).
pub const MAX_COMPOSITIONS: u64 = 40_000_000;
/// Forms kept in the tables of powers for large exponents
/// (`relations/forms.rs`), all tables together; past it, square-and-multiply.
pub const MAX_TABLE_FORMS: usize = 1 << 15;
/// Euler-trace checkpoints.
pub const MAX_CHECKPOINTS: usize = 64;
/// Factors in a maximality claim.
pub const MAX_FACTORS: usize = 4096;
/// Raw relations with element witnesses (`D > 0`).
pub const MAX_RAW_RELATIONS: usize = 2_000_000;
/// Derived relations (`D > 0`): combinations of raw relations and earlier
/// derived ones, named by later combinations.
pub const MAX_DERIVED_RELATIONS: usize = 2_000_000;
/// Entries touched while adding up combinations of raw and derived
/// relations (one more per term), for the derived relations, the rows of
/// `H` and the eliminations together.
pub const MAX_COMBINATION_WORK: u64 = 200_000_000;
/// Steps of a unit's compact representation (about log2 of the regulator).
pub const MAX_COMPACT_STEPS: usize = 4096;
/// Depth of a primality proof tree.
pub const MAX_PROOF_DEPTH: u32 = 64;
/// Prime factors listed in one Pocklington step.
pub const MAX_PROOF_FACTORS: usize = 4096;
/// Bits of a Lucas parameter `P` or `Q` in an `N + 1` proof (so that
/// `P^2 - 4Q` fits a machine word).
pub const MAX_LUCAS_PARAMETER_BITS: u32 = 31;
/// Modular exponentiations all primality proofs of a certificate may cost.
pub const MAX_PROOF_POWERS: u64 = 100_000;
/// Terms of the unconditional class number series (its sieve of smallest
/// prime factors holds one u32 per term).
pub const MAX_SERIES_TERMS: u64 = 10_000_000;
/// Combinations an order witness's socle search may try.
pub const MAX_SOCLE_COMBINATIONS: u64 = 1_000_000;

/// The decoder's caps (the format crate applies them before anything else
/// is looked at): the largest file, and the nesting depth and item count
/// of its CBOR.
pub const DECODE: classcert_format::DecodeLimits = classcert_format::DecodeLimits {
    max_file_bytes: MAX_FILE_BYTES,
    walk: classcert_format::cbor::WalkLimits {
        max_depth: MAX_CBOR_DEPTH,
        max_items: MAX_CBOR_ITEMS,
        max_tree_bytes: MAX_TREE_BYTES,
        tree_bytes_per_input_byte: TREE_BYTES_PER_INPUT_BYTE,
    },
};
/// Bytes of a certificate file (a 100-digit certificate takes about 10 MB).
pub const MAX_FILE_BYTES: usize = 64 << 20;
/// Bytes the decoded value tree may take, in all and per byte of the file
/// (honest certificates take 9 to 23 per byte), so that decoding stays
/// within a small multiple of the file.
pub const MAX_TREE_BYTES: u64 = 256 << 20;
pub const TREE_BYTES_PER_INPUT_BYTE: u64 = 32;

/// Lines read from a policy file (`--policy`), and its size in bytes.
pub const MAX_POLICY_LINES: usize = 1000;
pub const MAX_POLICY_BYTES: u64 = 64 << 10;
/// Certificates one manifest may list.
pub const MAX_MANIFEST_ENTRIES: usize = 1_000_000;
/// Bytes read of a manifest file.
pub const MAX_MANIFEST_BYTES: u64 = 128 << 20;
/// Nesting depth of CBOR items.
pub const MAX_CBOR_DEPTH: usize = 24;
/// CBOR items in one file.
pub const MAX_CBOR_ITEMS: u64 = 50_000_000;

// Number fields: orders and prime ideals.
/// Smallest degree of the defining polynomial `F` of an order given by a
/// basis (`field/order.rs`); 2 is allowed so that quadratic fields can be
/// checked against the quadratic path.
pub const MIN_FIELD_DEGREE: usize = 2;
/// Largest degree of the defining polynomial `F` of an order.
pub const MAX_FIELD_DEGREE: usize = 6;
/// Bits of a coefficient of `F`, of the common denominator of an order's
/// basis and of an entry of its Hermite form.
pub const MAX_ORDER_ENTRY_BITS: u32 = 1024;
/// Bits of the prime `p` in the `p`-maximality test, run on machine words
/// (its Frobenius powers cost about `bits(p)·⌈log_p n⌉` squarings of an
/// element, for each of the `n` basis elements). The prover enlarges an
/// order only at primes below 2^63 too.
pub const MAX_MAXIMALITY_PRIME_BITS: u32 = 63;
/// Bits of a power `a^e` of an element, estimated before it is computed.
pub const MAX_POWER_BITS: u64 = 1 << 20;

// Number fields: roots and logarithms.
/// Degree of a polynomial whose root enclosures are checked.
pub const MAX_ROOT_DEGREE: usize = 6;
/// Bits of a coefficient of that polynomial.
pub const MAX_ROOT_COEFF_BITS: u32 = 1024;
/// Bits of the mantissa of an end point of a root enclosure.
pub const MAX_ROOT_ENDPOINT_BITS: u32 = 4096;
/// Largest `|exponent|` of an end point of a root enclosure.
pub const MAX_ROOT_EXPONENT: i64 = 4096;
/// Working precision (bits) of the root checks and the log embeddings.
pub const MAX_ROOT_PREC: u32 = 8192;
/// Size `r` of the `r × r` determinants of a regulator (`r = r1 + r2 - 1`).
pub const MAX_REGULATOR_RANK: usize = 5;

// Number fields: the polynomial, elements, torsion.
/// Bits of a coefficient of the defining polynomial `F`.
pub const MAX_FIELD_COEFF_BITS: u32 = 256;
/// Primes whose factorisation patterns of `F mod p` may be tried to show
/// `F` irreducible.
pub const MAX_IRREDUCIBILITY_PRIMES: usize = 200;
/// Bits of a coordinate of a relation's element, and of its exponents.
pub const MAX_ELEMENT_BITS: u32 = 4096;
/// Unramified primes tried to bound the roots of unity.
pub const MAX_TORSION_PRIMES: usize = 200;
/// The largest number of roots of unity accepted (degree 6 allows 18).
pub const MAX_W: u32 = 64;
