//! Where relations come from, and the plain data they travel in.
//!
//! A [`RelationSource`] is built over one factor base with one seed and,
//! asked for relations, hands them out as a [`RelationBatch`]: a header
//! saying where they came from (format version, `D`, seed, the source and
//! its parameters, a digest of the factor base, the index range) and the
//! relations themselves, each a sparse exponent vector with its witness
//! data. Drivers only see the trait and the batch, so a sieve, threads or
//! a cluster can take the place of today's searches:
//!
//! - [`forms`]: random products of prime forms, reduced (`D < 0`);
//! - [`siqs`]: the self-initialising quadratic sieve, with single large
//!   primes and special-q eliminations (both signs of `D`, large `|D|`);
//! - [`elements`]: elements of small norm in products of prime ideals,
//!   kept when trial division factors the norm (`D > 0`).
//!
//! Indices count the relations a source has handed out since it was built,
//! eliminations and relations separately (an elimination's index is its
//! factor-base index). Today's sources draw everything from one seeded
//! generator in turn, so a range is reproduced by replaying the same
//! requests from the same seed; a source whose relation `j` is a pure
//! function of `(D, seed, j)` can serve any range in any order.
//!
//! A batch is serialised as canonical CBOR through
//! [`classcert_format::cbor`]. Nothing in a batch is trusted: a driver that
//! reads one from elsewhere must check every relation (by its norm, or by
//! reducing the form) before using it.

pub mod carried;
pub mod elements;
pub mod forms;
pub mod siqs;

use ciborium::Value;
use classcert_format::cbor::{self, DecodeError, MapReader, WalkLimits};
use rug::Integer;
use std::collections::BTreeMap;
use std::ops::Range;

/// A sparse exponent vector over factor-base indices.
pub type Sparse = BTreeMap<usize, i64>;

/// The version written into every batch header. Version 2: the sieve's
/// relations carry their elements for `D < 0` too (version 1 batches had
/// none there, and a run resumed from them would not give the bytes of a
/// fresh one, so they are refused).
pub const BATCH_FORMAT_VERSION: u64 = 2;

/// The element `(x + y sqrt D)/2` whose principal ideal a relation states.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Element {
    pub x: Integer,
    pub y: Integer,
}

/// One relation: exponents over the factor base (`+e` for `P^e`, `-e` for
/// `conj(P)^e`) and what witnesses it. For `D < 0` the vector alone (the
/// verifier reduces the product of prime forms); for `D > 0` the element.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FoundRelation {
    pub exponents: Sparse,
    pub element: Option<Element>,
}

/// What a batch answers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BatchKind {
    /// One relation per factor-base index `i` in the range, with
    /// coefficient `+1` at `i` and support on indices below `i`.
    Eliminations,
    /// Relations over the whole factor base; the range counts them.
    Relations,
}

impl BatchKind {
    fn name(self) -> &'static str {
        match self {
            BatchKind::Eliminations => "eliminations",
            BatchKind::Relations => "relations",
        }
    }
}

/// Where a batch came from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BatchHeader {
    pub version: u64,
    pub discriminant: Integer,
    pub seed: u64,
    /// Which search made the relations (e.g. `"form-products"`).
    pub source: String,
    /// The search's parameters: the number of essential ideals that make
    /// up its random products or polynomials.
    pub essential: u64,
    /// SHA-256 of the factor base ([`crate::fb::FactorBase::digest`]).
    pub factor_base: [u8; 32],
    pub kind: BatchKind,
    /// The indices the relations stand at: `first..end`, one each.
    pub first: u64,
    pub end: u64,
}

/// Relations with the header that says where they came from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RelationBatch {
    pub header: BatchHeader,
    pub relations: Vec<FoundRelation>,
}

/// A search for relations over one factor base, seeded once.
pub trait RelationSource {
    /// Eliminations for the factor-base indices in `ideals`, in order,
    /// each within `attempts` candidates. The batch stops short at the
    /// first index for which none was found (its range says so).
    fn eliminations(&mut self, ideals: Range<usize>, attempts: u64) -> RelationBatch;

    /// The next `count` relations over the whole factor base, each within
    /// `attempts` candidates; fewer when the attempts ran out.
    fn relations(&mut self, count: usize, attempts: u64) -> RelationBatch;

    /// Candidates tried so far (for progress lines).
    fn candidates(&self) -> u64;

    /// Why the search stopped, when it was its checkpoint directory that
    /// failed (searches without one never fail so).
    fn take_error(&mut self) -> Option<crate::checkpoint::CheckpointError> {
        None
    }

    /// A relation with `+1` at factor-base index `ideal`, from the search's
    /// attempts numbered `from` on, with the number of the attempt that
    /// gave it: calls from the next number on give others. `None` when
    /// the search has no such attempts (the trial-division searches) or
    /// found none.
    fn naming(&mut self, _ideal: usize, _from: u64) -> Option<(u64, FoundRelation)> {
        None
    }

    /// Eliminations for the listed factor-base indices (ascending), each
    /// within `attempts` candidates; `None` where none was found.
    fn eliminations_for(&mut self, ideals: &[usize], attempts: u64) -> Vec<Option<FoundRelation>> {
        ideals
            .iter()
            .map(|&i| self.eliminations(i..i + 1, attempts).relations.pop())
            .collect()
    }
}

/// The fixed part of a source's headers (everything but kind and range),
/// and the count of relations handed out so far.
#[derive(Debug, Clone)]
pub(crate) struct Origin {
    pub discriminant: Integer,
    pub seed: u64,
    pub source: &'static str,
    pub essential: u64,
    pub factor_base: [u8; 32],
    /// Relations handed out so far: the next relation's index.
    pub produced: usize,
}

impl Origin {
    fn batch(&self, kind: BatchKind, first: usize, relations: Vec<FoundRelation>) -> RelationBatch {
        RelationBatch {
            header: BatchHeader {
                version: BATCH_FORMAT_VERSION,
                discriminant: self.discriminant.clone(),
                seed: self.seed,
                source: self.source.to_string(),
                essential: self.essential,
                factor_base: self.factor_base,
                kind,
                first: first as u64,
                end: (first + relations.len()) as u64,
            },
            relations,
        }
    }

    /// The eliminations found for the ideals from `first` on.
    pub fn eliminations(&self, first: usize, found: Vec<FoundRelation>) -> RelationBatch {
        self.batch(BatchKind::Eliminations, first, found)
    }

    /// The next relations, numbered on from those handed out before.
    pub fn relations(&mut self, found: Vec<FoundRelation>) -> RelationBatch {
        let first = self.produced;
        self.produced += found.len();
        self.batch(BatchKind::Relations, first, found)
    }
}

/// What `find` gives for each of `indices` in turn, up to the first index
/// it finds nothing for.
/// A `D < 0` search that finds one plain relation (an exponent vector,
/// checked by form reduction) at a time; the batch plumbing of
/// [`RelationSource`] is shared by every such search.
pub(crate) trait OneAtATime {
    /// An elimination for factor-base index `i`: `+1` at `i`, support below.
    fn elimination(&mut self, i: usize, attempts: u64) -> Option<Sparse>;
    /// A relation over the whole factor base.
    fn relation(&mut self, attempts: u64) -> Option<Sparse>;
    fn origin(&mut self) -> &mut Origin;
    /// Candidates looked at so far.
    fn looked_at(&self) -> u64;
}

impl<T: OneAtATime> RelationSource for T {
    fn eliminations(&mut self, ideals: Range<usize>, attempts: u64) -> RelationBatch {
        let first = ideals.start;
        let found = gather(ideals, |i| self.elimination(i, attempts).map(plain));
        self.origin().eliminations(first, found)
    }

    fn relations(&mut self, count: usize, attempts: u64) -> RelationBatch {
        let found = gather(0..count, |_| self.relation(attempts).map(plain));
        self.origin().relations(found)
    }

    fn candidates(&self) -> u64 {
        self.looked_at()
    }
}

pub(crate) fn gather(
    indices: Range<usize>,
    find: impl FnMut(usize) -> Option<FoundRelation>,
) -> Vec<FoundRelation> {
    indices.map_while(find).collect()
}

/// Adds `e` to the exponent at `i`, dropping it when it becomes zero.
pub(crate) fn add(v: &mut Sparse, i: usize, e: i64) {
    let x = v.entry(i).or_insert(0);
    *x += e;
    if *x == 0 {
        v.remove(&i);
    }
}

/// A relation witnessed by its exponent vector alone (`D < 0`).
pub(crate) fn plain(exponents: Sparse) -> FoundRelation {
    FoundRelation {
        exponents,
        element: None,
    }
}

/// Limits for decoding a batch: deep enough for its three levels, and
/// room for a few million numbers.
const BATCH_LIMITS: WalkLimits = WalkLimits {
    max_depth: 8,
    max_items: 1 << 26,
    max_tree_bytes: u64::MAX,
    tree_bytes_per_input_byte: u64::MAX,
};

fn bad(what: &str) -> DecodeError {
    DecodeError::Schema(format!("relation batch: {what}"))
}

impl RelationBatch {
    /// The batch as canonical CBOR: a map with the header's fields and
    /// `"relations"`, an array of maps `{"exponents": [[index, exponent],
    /// …], "element": [x, y]}` (`"element"` only when there is one).
    pub fn to_cbor(&self) -> Result<Vec<u8>, DecodeError> {
        let h = &self.header;
        let relations = self
            .relations
            .iter()
            .map(|r| {
                let exps = r
                    .exponents
                    .iter()
                    .map(|(&i, &e)| Value::Array(vec![cbor::uint(i as u64), cbor::sint(e)]))
                    .collect();
                let mut fields = vec![("exponents", Value::Array(exps))];
                if let Some(el) = &r.element {
                    fields.push((
                        "element",
                        Value::Array(vec![cbor::int(&el.x), cbor::int(&el.y)]),
                    ));
                }
                cbor::map(fields)
            })
            .collect();
        let v = cbor::map(vec![
            ("version", cbor::uint(h.version)),
            ("discriminant", cbor::int(&h.discriminant)),
            ("seed", cbor::uint(h.seed)),
            ("source", Value::Text(h.source.clone())),
            ("essential", cbor::uint(h.essential)),
            ("factor-base", Value::Bytes(h.factor_base.to_vec())),
            ("kind", Value::Text(h.kind.name().to_string())),
            ("first", cbor::uint(h.first)),
            ("end", cbor::uint(h.end)),
            ("relations", Value::Array(relations)),
        ]);
        cbor::from_value(&v)
    }

    /// Reads a batch written by [`RelationBatch::to_cbor`]; refuses unknown
    /// fields, a version other than [`BATCH_FORMAT_VERSION`], a range that
    /// does not match the relations, and any second encoding of the same
    /// data.
    pub fn from_cbor(bytes: &[u8]) -> Result<RelationBatch, DecodeError> {
        let v = cbor::to_value(bytes, BATCH_LIMITS)?;
        let mut m = MapReader::new(&v, "batch")?;
        let version = cbor::get_u64(m.req("version")?, "batch.version")?;
        if version != BATCH_FORMAT_VERSION {
            return Err(bad(&format!(
                "version {version} is not {BATCH_FORMAT_VERSION}"
            )));
        }
        let discriminant = cbor::get_int(m.req("discriminant")?, "batch.discriminant")?;
        let seed = cbor::get_u64(m.req("seed")?, "batch.seed")?;
        let source = cbor::get_text(m.req("source")?, "batch.source")?.to_string();
        let essential = cbor::get_u64(m.req("essential")?, "batch.essential")?;
        let factor_base: [u8; 32] = cbor::get_bytes(m.req("factor-base")?, "batch.factor-base")?
            .try_into()
            .map_err(|_| bad("the factor-base digest must have 32 bytes"))?;
        let kind = match cbor::get_text(m.req("kind")?, "batch.kind")? {
            "eliminations" => BatchKind::Eliminations,
            "relations" => BatchKind::Relations,
            other => return Err(bad(&format!("unknown kind '{other}'"))),
        };
        let first = cbor::get_u64(m.req("first")?, "batch.first")?;
        let end = cbor::get_u64(m.req("end")?, "batch.end")?;
        let items = cbor::get_array(m.req("relations")?, "batch.relations")?;
        m.finish()?;
        if end.checked_sub(first) != Some(items.len() as u64) {
            return Err(bad(
                "the index range does not match the number of relations",
            ));
        }
        let mut relations = Vec::with_capacity(items.len());
        for item in items {
            let mut r = MapReader::new(item, "batch.relations[]")?;
            let mut exponents = Sparse::new();
            for pair in cbor::get_array(r.req("exponents")?, "batch.relations[].exponents")? {
                let [i, e] = cbor::get_array(pair, "an exponent")? else {
                    return Err(bad("an exponent must be [index, exponent]"));
                };
                let i = usize::try_from(cbor::get_u64(i, "an index")?)
                    .map_err(|_| bad("an index is too large"))?;
                let e = cbor::get_i64(e, "an exponent")?;
                let previous = exponents.last_key_value().map(|(&j, _)| j);
                if e == 0 || previous.is_some_and(|j| j >= i) {
                    return Err(bad("exponents must be nonzero, by increasing index"));
                }
                exponents.insert(i, e);
            }
            let element = match r.opt("element") {
                None => None,
                Some(el) => {
                    let [x, y] = cbor::get_array(el, "an element")? else {
                        return Err(bad("an element must be [x, y]"));
                    };
                    Some(Element {
                        x: cbor::get_int(x, "element.x")?,
                        y: cbor::get_int(y, "element.y")?,
                    })
                }
            };
            r.finish()?;
            relations.push(FoundRelation { exponents, element });
        }
        let batch = RelationBatch {
            header: BatchHeader {
                version,
                discriminant,
                seed,
                source,
                essential,
                factor_base,
                kind,
                first,
                end,
            },
            relations,
        };
        if batch.to_cbor()? != bytes {
            return Err(DecodeError::NonCanonical("relation batch"));
        }
        Ok(batch)
    }
}

#[cfg(test)]
mod tests {
    use super::elements::ElementSearch;
    use super::forms::FormSearch;
    use super::*;
    use crate::fb::FactorBase;
    use classcert_verifier::math::{primes_up_to, Form};
    use rug::ops::Pow;

    /// Prime ideals of norm below 200, the first 8 essential.
    fn small_fb(d: i64) -> (Integer, FactorBase) {
        let d = Integer::from(d);
        let fb = FactorBase::new(&d, &primes_up_to(200), 200, &[]);
        (d, fb)
    }

    fn sparse(pairs: &[(usize, i64)]) -> Sparse {
        pairs.iter().copied().collect()
    }

    #[test]
    fn batches_round_trip_through_cbor() {
        let (d, fb) = small_fb(-3299);
        let mut forms = FormSearch::new(&d, &fb, 8, 1);
        let (e, r) = (
            forms.eliminations(8..12, 2_000_000),
            forms.relations(6, 5_000_000),
        );
        let (d2, fb2) = small_fb(316);
        let mut elements = ElementSearch::new(&d2, &fb2, 8, 1);
        let (e2, r2) = (
            elements.eliminations(8..12, 2_000_000),
            elements.relations(6, 5_000_000),
        );
        for batch in [&e, &r, &e2, &r2] {
            let bytes = batch.to_cbor().unwrap();
            let back = RelationBatch::from_cbor(&bytes).unwrap();
            assert_eq!(&back, batch);
            assert_eq!(back.to_cbor().unwrap(), bytes);
        }
        assert_eq!(
            (e.header.kind, e.header.first, e.header.end),
            (BatchKind::Eliminations, 8, 12)
        );
        assert_eq!(
            (r.header.kind, r.header.first, r.header.end),
            (BatchKind::Relations, 0, 6)
        );
        assert_eq!(r.header.factor_base, fb.digest());
        assert_ne!(fb.digest(), fb2.digest());
        assert_eq!((r.header.seed, r.header.essential), (1, 8));
        assert_eq!(r2.header.discriminant, 316);
        assert!(r2.relations.iter().all(|x| x.element.is_some()));
        // the next batch continues the index range
        let more = forms.relations(2, 5_000_000);
        assert_eq!((more.header.first, more.header.end), (6, 8));
    }

    #[test]
    fn batches_that_do_not_describe_themselves_are_refused() {
        let (d, fb) = small_fb(-3299);
        let mut batch = FormSearch::new(&d, &fb, 8, 1).relations(3, 5_000_000);
        batch.header.end = 4;
        let bytes = batch.to_cbor().unwrap();
        assert!(
            RelationBatch::from_cbor(&bytes).is_err(),
            "range longer than the relations"
        );
        batch.header.end = 3;
        for version in [1, BATCH_FORMAT_VERSION + 1] {
            batch.header.version = version;
            assert!(
                RelationBatch::from_cbor(&batch.to_cbor().unwrap()).is_err(),
                "version {version}: the previous one and an unknown one"
            );
        }
        batch.header.version = BATCH_FORMAT_VERSION;
        let mut bytes = batch.to_cbor().unwrap();
        bytes.push(0);
        assert!(RelationBatch::from_cbor(&bytes).is_err(), "trailing byte");
    }

    /// The first relations of the form search for D = -3299, seed 1, over
    /// the prime ideals below 200 with 8 essential: regression values
    /// printed by `Searcher::elimination` / `Searcher::relation` of
    /// `prover/src/search.rs` at commit 754551b, before the trait existed
    /// (not mathematical facts: `form_relations_hold` checks those).
    #[test]
    fn form_search_gives_the_relations_it_gave_before() {
        let (d, fb) = small_fb(-3299);
        let mut s = FormSearch::new(&d, &fb, 8, 1);
        let e = s.eliminations(8..12, 2_000_000);
        let r = s.relations(6, 5_000_000);
        let want_e = [
            sparse(&[(0, 2), (1, -2), (2, -1), (4, -1), (6, -1), (7, -2), (8, 1)]),
            sparse(&[(0, -1), (2, 1), (5, -1), (7, 1), (9, 1)]),
            sparse(&[(1, -2), (2, 3), (3, 1), (5, 1), (6, 2), (7, 1), (10, 1)]),
            sparse(&[(0, -3), (3, 1), (4, 1), (5, 3), (11, 1)]),
        ];
        let want_r = [
            sparse(&[(0, 1), (1, 1), (2, -1), (3, -1), (4, 3), (6, 1)]),
            sparse(&[(1, 1), (2, -3), (6, -1), (7, -1)]),
            sparse(&[(0, -2), (1, -1), (3, 3), (4, -1), (6, 1), (7, 1)]),
            sparse(&[(4, 1), (5, -1), (6, 1)]),
            sparse(&[(0, -1), (1, 2), (2, 1), (3, -1), (4, 2), (6, -1), (7, -1)]),
            sparse(&[(4, 1), (5, -1), (6, 1)]),
        ];
        let got = |b: &RelationBatch| -> Vec<Sparse> {
            b.relations.iter().map(|x| x.exponents.clone()).collect()
        };
        assert_eq!(got(&e), want_e);
        assert_eq!(got(&r), want_r);
        assert_eq!(s.candidates(), 10);
    }

    /// As above for the element search, D = 316, seed 1: regression values
    /// from `Sieve::elimination` / `Sieve::relation` of
    /// `prover/src/real.rs` at commit 754551b.
    #[test]
    fn element_search_gives_the_relations_it_gave_before() {
        let (d, fb) = small_fb(316);
        assert_eq!(fb.len(), 21);
        let mut s = ElementSearch::new(&d, &fb, 8, 1);
        let e = s.eliminations(8..12, 2_000_000);
        let r = s.relations(6, 5_000_000);
        let want_e: [(Sparse, i64); 4] = [
            (sparse(&[(0, 1), (1, 1), (2, -1), (8, 1)]), -94),
            (sparse(&[(1, -2), (2, 1), (9, 1)]), -116),
            (sparse(&[(10, 1)]), 0),
            (sparse(&[(2, 2), (11, 1)]), -96),
        ];
        let want_r: [(Sparse, i64); 6] = [
            (sparse(&[(0, 1), (1, 2), (2, 2)]), -46),
            (sparse(&[(1, 1), (2, 2), (16, 1)]), -196),
            (sparse(&[(1, -1), (2, 1), (3, 1), (9, -1)]), -176),
            (sparse(&[(0, 1), (1, 3), (2, 1), (3, 1), (4, 1)]), 314),
            (sparse(&[(0, 1), (1, 2), (3, 1), (8, -1)]), -190),
            (sparse(&[(0, 1), (1, -1), (2, -1)]), -14),
        ];
        for (batch, want) in [(&e, &want_e[..]), (&r, &want_r[..])] {
            assert_eq!(batch.relations.len(), want.len());
            for (rel, (v, x)) in batch.relations.iter().zip(want) {
                assert_eq!(&rel.exponents, v);
                let el = rel.element.as_ref().unwrap();
                assert_eq!(
                    (el.x.clone(), el.y.clone()),
                    (Integer::from(*x), Integer::from(1))
                );
            }
        }
        assert_eq!(s.candidates(), 13);
    }

    /// Whether the product of the prime forms to the exponents of `rel`
    /// reduces to the principal form (the definition of a relation for
    /// `D < 0`, common practice).
    pub(crate) fn composes_to_principal(d: &Integer, fb: &FactorBase, rel: &Sparse) -> bool {
        let exps: Vec<Integer> = rel.values().map(|&e| Integer::from(e)).collect();
        let terms: Vec<(&Form, &Integer)> =
            rel.keys().map(|&i| &fb.forms[i]).zip(exps.iter()).collect();
        Form::product(&terms, d).is_ok_and(|f| f == Form::principal(d))
    }

    /// Every relation from the form search is one: the product of the
    /// prime forms to its exponents is the principal class (the
    /// definition of a relation, common practice).
    #[test]
    fn form_relations_hold() {
        for dv in [-3299, -1000003, -4 * 1009] {
            let (d, fb) = small_fb(dv);
            let k = fb.len().min(10);
            let mut s = FormSearch::new(&d, &fb, k, 5);
            let mut rels = s.eliminations(k..fb.len(), 2_000_000).relations;
            assert_eq!(rels.len(), fb.len() - k);
            rels.extend(s.relations(20, 5_000_000).relations);
            for rel in rels {
                assert!(
                    composes_to_principal(&d, &fb, &rel.exponents),
                    "D = {dv}: {:?}",
                    rel.exponents
                );
            }
        }
    }

    /// Every relation from the element search has an element whose norm
    /// `(x² - D y²)/4` is `± ∏ p^|e|` (the norm of a principal ideal is the
    /// absolute norm of its generator, common practice).
    #[test]
    fn element_relations_hold() {
        for dv in [316, 999_997, 4 * 1019] {
            let (d, fb) = small_fb(dv);
            let k = fb.len().min(10);
            let mut s = ElementSearch::new(&d, &fb, k, 5);
            let mut rels = s.eliminations(k..fb.len(), 2_000_000).relations;
            assert_eq!(rels.len(), fb.len() - k);
            rels.extend(s.relations(20, 5_000_000).relations);
            for rel in rels {
                let el = rel.element.unwrap();
                let dy2: Integer = &d * Integer::from(el.y.square_ref());
                let norm: Integer = (Integer::from(el.x.square_ref()) - dy2) / 4u32;
                let prod: Integer = rel
                    .exponents
                    .iter()
                    .map(|(&i, &e)| Integer::from(fb.primes[i]).pow(e.unsigned_abs() as u32))
                    .product();
                assert_eq!(norm.abs(), prod, "D = {dv}: {:?}", rel.exponents);
            }
        }
    }
}
