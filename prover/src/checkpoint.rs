//! The checkpoint directory behind `classcert prove … --resume DIR`: the
//! rounds of a long relation search kept on disk, so that a run stopped in
//! any way (a signal, a crash, a power cut) continues from its last
//! complete round.
//!
//! This layer handles bytes only: it never interprets a round's payload.
//! The caller names its run by a `key`, a SHA-256 of everything that
//! determines the rounds' content (the discriminant, the seed, the search
//! and its parameters, the factor base, the prover version), and a
//! one-line description `what` for messages.
//!
//! # On-disk layout (format version 1)
//!
//! All integers are unsigned big-endian. `DIR` holds:
//!
//! * `checkpoint.manifest`, written once when the directory is new or
//!   empty:
//!
//!   | bytes | content |
//!   | --- | --- |
//!   | 8 | magic `CCCKPT-M` |
//!   | 4 | format version, 1 |
//!   | 32 | the run's key |
//!   | 4 | `n`, the length of the description (at most 4096) |
//!   | `n` | the description `what`, UTF-8 |
//!   | 32 | SHA-256 of all the bytes above |
//!
//! * `round-NNNNNN.ckpt` for round `r` (`r` in decimal, at least six digits
//!   with leading zeros: `round-000000.ckpt`, `round-1234567.ckpt`):
//!
//!   | bytes | content |
//!   | --- | --- |
//!   | 8 | magic `CCCKPT-R` |
//!   | 4 | format version, 1 |
//!   | 32 | the run's key |
//!   | 8 | the round number `r` |
//!   | 8 | `m`, the payload's length |
//!   | `m` | the payload |
//!   | 32 | SHA-256 of all the bytes above |
//!
//! * while a file is being written, `tmp-<pid>-<final name>`; `open`
//!   removes any such file it finds (a crash left it behind).
//!
//! A round file is used only when its size is exactly `92 + m`, its magic,
//! version and digest check out, its key is the directory's and its round
//! number is the one its name gives. So a file with one byte changed
//! anywhere, truncated, extended, renamed to another round's name or copied
//! from another run's directory is refused ([`CheckpointError::Corrupt`]),
//! never used. Other files in the directory are ignored.
//!
//! # Atomicity
//!
//! Every file is written to its temporary name, flushed to disk
//! (`fsync`), renamed over its final name, and then the directory itself is
//! flushed (on Unix; elsewhere the rename is the last step). A crash at any
//! point leaves either no file under the final name or a complete one.
//! One process at a time per directory: there is no lock.
//!
//! # Merging
//!
//! [`combine`] merges directories of the same run (rounds sieved on
//! several machines with `classcert collect`) into one: every round file
//! is checked as [`Checkpoint::load`] checks it before anything is written,
//! missing rounds are copied and identical ones skipped.

use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, BTreeSet};
use std::fmt;
use std::fs::{self, File};
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

/// The manifest's file name.
pub const MANIFEST: &str = "checkpoint.manifest";
const MANIFEST_MAGIC: [u8; 8] = *b"CCCKPT-M";
const ROUND_MAGIC: [u8; 8] = *b"CCCKPT-R";
/// The on-disk format version this build writes and reads.
pub const FORMAT_VERSION: u32 = 1;
/// Bytes of `what` kept in the manifest (a longer one is cut at a
/// character boundary).
pub const MAX_WHAT: usize = 4096;
const DIGEST_LEN: usize = 32;
/// Magic, version, key, description length.
const MANIFEST_HEAD: usize = 8 + 4 + 32 + 4;
/// Magic, version, key, round number, payload length.
const ROUND_HEAD: usize = 8 + 4 + 32 + 8 + 8;
const TMP_PREFIX: &str = "tmp-";

/// Why a checkpoint directory cannot be used. Display gives one clear
/// sentence naming the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum CheckpointError {
    /// The directory cannot be created, read or written (path, io error
    /// text).
    Io { path: PathBuf, why: String },
    /// The directory holds a run of another computation (different key):
    /// says which run it holds (its `what`) and which was asked.
    Mismatch {
        dir: PathBuf,
        stored: String,
        wanted: String,
    },
    /// A file whose digest, name, size or header does not check out: never
    /// used.
    Corrupt { path: PathBuf, why: String },
    /// [`combine`] cannot take `path`: a directory of another computation
    /// (or the target itself, or no checkpoint directory at all), or a
    /// round file that passes its checks but differs from another copy of
    /// the same round.
    Conflict { path: PathBuf, why: String },
}

impl fmt::Display for CheckpointError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CheckpointError::Io { path, why } => {
                write!(f, "checkpoint directory: {} {why}", path.display())
            }
            CheckpointError::Mismatch {
                dir,
                stored,
                wanted,
            } if stored == wanted => write!(
                f,
                "the checkpoint directory {} holds the rounds of another computation, with the same description ({stored}) but another key (something else that fixes the rounds differs, such as the prover version); give another directory, or remove this one to start afresh",
                dir.display()
            ),
            CheckpointError::Mismatch {
                dir,
                stored,
                wanted,
            } => write!(
                f,
                "the checkpoint directory {} holds the rounds of another computation ({stored}), not of this one ({wanted}); give another directory, or remove this one to start afresh",
                dir.display()
            ),
            CheckpointError::Corrupt { path, why } => write!(
                f,
                "checkpoint file {} is refused, and nothing in it was used: {why}",
                path.display()
            ),
            CheckpointError::Conflict { path, why } => {
                write!(f, "cannot combine {}: {why}", path.display())
            }
        }
    }
}

impl std::error::Error for CheckpointError {}

/// An open checkpoint directory for one run.
#[derive(Debug)]
pub struct Checkpoint {
    dir: PathBuf,
    key: [u8; 32],
}

impl Checkpoint {
    /// Opens `dir` for the run identified by `key` (a SHA-256 the caller
    /// computes from everything that determines the rounds' content),
    /// creating it (and a manifest file) when it does not exist or is
    /// empty. `what` is a one-line human description stored in the
    /// manifest (e.g. "D = -1234..., seed 1, sieve parameters ...") used
    /// in Mismatch messages.
    ///
    /// Stray temporary files (`tmp-<pid>-<name>`) are removed. A directory
    /// that has other files but no manifest is refused (`Corrupt`, naming
    /// the missing manifest): it is not a checkpoint directory.
    pub fn open(dir: &Path, key: [u8; 32], what: &str) -> Result<Checkpoint, CheckpointError> {
        match fs::metadata(dir) {
            Ok(m) if !m.is_dir() => {
                return Err(CheckpointError::Io {
                    path: dir.to_path_buf(),
                    why: "is not a directory".into(),
                })
            }
            Ok(_) => {}
            Err(e) if e.kind() == io::ErrorKind::NotFound => {
                fs::create_dir_all(dir).map_err(|e| io_error(dir, "cannot be created", &e))?;
                // best effort: make the new directory's own entry durable
                if let Some(parent) = dir.parent() {
                    let parent = if parent.as_os_str().is_empty() {
                        Path::new(".")
                    } else {
                        parent
                    };
                    let _ = sync_dir(parent);
                }
            }
            Err(e) => return Err(io_error(dir, "cannot be read", &e)),
        }
        let cp = Checkpoint {
            dir: dir.to_path_buf(),
            key,
        };
        let mut others = Vec::new();
        for name in names_in(dir)? {
            if is_temporary(&name) {
                let path = dir.join(&name);
                fs::remove_file(&path).map_err(|e| {
                    io_error(
                        &path,
                        "is a stray temporary file that cannot be removed",
                        &e,
                    )
                })?;
            } else if name != MANIFEST {
                others.push(name);
            }
        }
        match read_manifest(dir)? {
            Some((stored_key, stored_what)) => {
                if stored_key != key {
                    return Err(CheckpointError::Mismatch {
                        dir: dir.to_path_buf(),
                        stored: stored_what,
                        wanted: what.to_string(),
                    });
                }
            }
            None => {
                if !others.is_empty() {
                    return Err(not_a_checkpoint(dir, others));
                }
                let what = cut(what, MAX_WHAT);
                let head = manifest_head(&key, what);
                let digest = Sha256::new()
                    .chain_update(&head)
                    .chain_update(what.as_bytes())
                    .finalize();
                cp.write_atomically(MANIFEST, &[&head, what.as_bytes(), &digest])?;
            }
        }
        Ok(cp)
    }

    /// The stored bytes of round `r` (rounds count from 0), or None when it
    /// was never stored. Every file is verified before its bytes are
    /// returned (digest over header+payload, key matches, round number
    /// matches the file name, length matches); anything wrong ->
    /// Err(Corrupt).
    pub fn load(&self, r: u64) -> Result<Option<Vec<u8>>, CheckpointError> {
        let path = self.dir.join(round_name(r));
        let bytes = match fs::read(&path) {
            Ok(b) => b,
            Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(None),
            Err(e) => return Err(io_error(&path, "cannot be read", &e)),
        };
        match verify_round(bytes, &self.key, r) {
            Ok(payload) => Ok(Some(payload)),
            Err(why) => Err(CheckpointError::Corrupt {
                path,
                why: format!("{why}; remove it and that round is computed again"),
            }),
        }
    }

    /// Stores round `r` atomically: write a temporary file in the same
    /// directory, fsync it, rename it over the final name, fsync the
    /// directory. A crash at any point leaves either no file or a complete
    /// one (a stray temporary file is ignored and cleaned up by the next
    /// `open`). A round stored before is replaced.
    pub fn store(&self, r: u64, payload: &[u8]) -> Result<(), CheckpointError> {
        let mut head = Vec::with_capacity(ROUND_HEAD);
        head.extend_from_slice(&ROUND_MAGIC);
        head.extend_from_slice(&FORMAT_VERSION.to_be_bytes());
        head.extend_from_slice(&self.key);
        head.extend_from_slice(&r.to_be_bytes());
        head.extend_from_slice(&(payload.len() as u64).to_be_bytes());
        let digest = Sha256::new()
            .chain_update(&head)
            .chain_update(payload)
            .finalize();
        self.write_atomically(&round_name(r), &[&head, payload, &digest])
    }

    /// How many consecutive rounds 0..n are stored (stops at the first
    /// missing one), verifying each.
    pub fn stored_prefix(&self) -> Result<u64, CheckpointError> {
        let mut n = 0;
        while self.load(n)?.is_some() {
            n += 1;
        }
        Ok(n)
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Writes `parts` under `name`: temporary file, fsync, rename, fsync of
    /// the directory. On failure the temporary file is removed.
    fn write_atomically(&self, name: &str, parts: &[&[u8]]) -> Result<(), CheckpointError> {
        let path = self.dir.join(name);
        let tmp = self
            .dir
            .join(format!("{TMP_PREFIX}{}-{name}", std::process::id()));
        let written = (|| -> io::Result<()> {
            let mut f = io::BufWriter::new(File::create(&tmp)?);
            for part in parts {
                f.write_all(part)?;
            }
            let f = f.into_inner().map_err(|e| e.into_error())?;
            f.sync_all()?;
            drop(f);
            fs::rename(&tmp, &path)?;
            sync_dir(&self.dir)
        })();
        written.map_err(|e| {
            let _ = fs::remove_file(&tmp);
            io_error(&path, "cannot be written", &e)
        })
    }
}

fn io_error(path: &Path, doing: &str, e: &io::Error) -> CheckpointError {
    CheckpointError::Io {
        path: path.to_path_buf(),
        why: format!("{doing}: {e}"),
    }
}

/// The names of the entries of `dir` (not UTF-8 ones shown lossily).
fn names_in(dir: &Path) -> Result<Vec<String>, CheckpointError> {
    let entries = fs::read_dir(dir).map_err(|e| io_error(dir, "cannot be listed", &e))?;
    entries
        .map(|entry| {
            entry
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .map_err(|e| io_error(dir, "cannot be listed", &e))
        })
        .collect()
}

/// The key and description of `dir`'s manifest, or None when it has none
/// (or `dir` does not exist); a manifest that does not check out is
/// refused.
fn read_manifest(dir: &Path) -> Result<Option<([u8; 32], String)>, CheckpointError> {
    let path = dir.join(MANIFEST);
    match read_at_most(&path, MANIFEST_HEAD + MAX_WHAT + DIGEST_LEN) {
        Ok(bytes) => parse_manifest(&bytes)
            .map(Some)
            .map_err(|why| CheckpointError::Corrupt {
                path,
                why: format!("{why}; remove the directory to start afresh"),
            }),
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(io_error(&path, "cannot be read", &e)),
    }
}

/// The refusal of a directory that holds `others` (files other than
/// temporary ones) but no manifest.
fn not_a_checkpoint(dir: &Path, mut others: Vec<String>) -> CheckpointError {
    others.sort();
    let shown = others
        .iter()
        .take(3)
        .map(|s| format!("'{s}'"))
        .collect::<Vec<_>>()
        .join(", ");
    let more = if others.len() > 3 { ", ..." } else { "" };
    CheckpointError::Corrupt {
        path: dir.join(MANIFEST),
        why: format!(
            "it is missing, but the directory is not empty (it holds {shown}{more}), so it is not a checkpoint directory; give a new or empty directory"
        ),
    }
}

/// Flushes a directory's entries to disk (Unix; a no-op elsewhere, where a
/// directory cannot be opened as a file).
fn sync_dir(dir: &Path) -> io::Result<()> {
    #[cfg(unix)]
    {
        File::open(dir)?.sync_all()
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
        Ok(())
    }
}

/// The file name of round `r`.
pub fn round_name(r: u64) -> String {
    format!("round-{r:06}.ckpt")
}

/// The round a file name stands for, when it is exactly `round_name(r)`.
fn parse_round_name(name: &str) -> Option<u64> {
    let digits = name.strip_prefix("round-")?.strip_suffix(".ckpt")?;
    if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let r = digits.parse().ok()?;
    (round_name(r) == name).then_some(r)
}

/// Whether `name` is a temporary file this module writes:
/// `tmp-<pid>-<final name>`.
fn is_temporary(name: &str) -> bool {
    let Some(rest) = name.strip_prefix(TMP_PREFIX) else {
        return false;
    };
    let Some((pid, target)) = rest.split_once('-') else {
        return false;
    };
    !pid.is_empty()
        && pid.bytes().all(|b| b.is_ascii_digit())
        && (target == MANIFEST || parse_round_name(target).is_some())
}

/// The longest prefix of `s` of at most `max` bytes that ends on a
/// character boundary.
fn cut(s: &str, max: usize) -> &str {
    let mut end = s.len().min(max);
    while !s.is_char_boundary(end) {
        end -= 1;
    }
    &s[..end]
}

fn manifest_head(key: &[u8; 32], what: &str) -> Vec<u8> {
    let mut head = Vec::with_capacity(MANIFEST_HEAD);
    head.extend_from_slice(&MANIFEST_MAGIC);
    head.extend_from_slice(&FORMAT_VERSION.to_be_bytes());
    head.extend_from_slice(key);
    head.extend_from_slice(&(what.len() as u32).to_be_bytes());
    head
}

/// Reads a file of at most `max` bytes (a longer one is read only as far
/// as `max + 1` bytes, enough to refuse it).
fn read_at_most(path: &Path, max: usize) -> io::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    File::open(path)?
        .take(max as u64 + 1)
        .read_to_end(&mut bytes)?;
    Ok(bytes)
}

/// Big-endian integer fields read from checked offsets.
fn be_u32(b: &[u8], at: usize) -> u32 {
    u32::from_be_bytes(b[at..at + 4].try_into().unwrap())
}

fn be_u64(b: &[u8], at: usize) -> u64 {
    u64::from_be_bytes(b[at..at + 8].try_into().unwrap())
}

/// Checks the size, magic and version shared by both kinds of file, then
/// that the file is as long as its header says (`body` bytes after `head`)
/// and that its digest matches.
fn check_envelope(
    bytes: &[u8],
    magic: &[u8; 8],
    kind: &str,
    head: usize,
    body: impl Fn(&[u8]) -> u64,
) -> Result<(), String> {
    let min = head + DIGEST_LEN;
    if bytes.len() < min {
        return Err(format!(
            "it is {} bytes long, shorter than any {kind} ({min} bytes at least): truncated",
            bytes.len()
        ));
    }
    if bytes[..8] != magic[..] {
        return Err(format!("it does not begin as a {kind} does"));
    }
    let version = be_u32(bytes, 8);
    if version != FORMAT_VERSION {
        return Err(format!(
            "it has format version {version}, and this build reads version {FORMAT_VERSION}"
        ));
    }
    let announced = body(bytes);
    let expected = (min as u64).checked_add(announced);
    if expected != Some(bytes.len() as u64) {
        return Err(format!(
            "its header announces {announced} bytes of content, so it should be {} bytes long, but it is {} bytes: truncated or extended",
            expected.map_or_else(|| "more than 2^64".to_string(), |e| e.to_string()),
            bytes.len()
        ));
    }
    let (covered, digest) = bytes.split_at(bytes.len() - DIGEST_LEN);
    if Sha256::digest(covered)[..] != digest[..] {
        return Err("its SHA-256 does not match its contents: altered or damaged".into());
    }
    Ok(())
}

/// The key and description of a manifest, or why it is refused.
fn parse_manifest(bytes: &[u8]) -> Result<([u8; 32], String), String> {
    check_envelope(
        bytes,
        &MANIFEST_MAGIC,
        "checkpoint manifest",
        MANIFEST_HEAD,
        |b| u64::from(be_u32(b, 44)),
    )?;
    let key: [u8; 32] = bytes[12..44].try_into().unwrap();
    let what = std::str::from_utf8(&bytes[MANIFEST_HEAD..bytes.len() - DIGEST_LEN])
        .map_err(|_| "its description is not UTF-8".to_string())?;
    Ok((key, what.to_string()))
}

/// The payload of round file `bytes` read under the name of round `r`, or
/// why it is refused.
fn verify_round(mut bytes: Vec<u8>, key: &[u8; 32], r: u64) -> Result<Vec<u8>, String> {
    check_round(&bytes, key, r)?;
    bytes.truncate(bytes.len() - DIGEST_LEN);
    bytes.drain(..ROUND_HEAD);
    Ok(bytes)
}

/// Whether round file `bytes`, read under the name of round `r`, checks
/// out for the run `key`, or why it is refused.
fn check_round(bytes: &[u8], key: &[u8; 32], r: u64) -> Result<(), String> {
    check_envelope(
        bytes,
        &ROUND_MAGIC,
        "checkpoint round file",
        ROUND_HEAD,
        |b| be_u64(b, 52),
    )?;
    if bytes[12..44] != key[..] {
        return Err(
            "it belongs to another computation (its key is not this directory's): copied from another checkpoint directory?"
                .into(),
        );
    }
    let stored = be_u64(bytes, 44);
    if stored != r {
        return Err(format!(
            "it holds round {stored}, not round {r} as its name says: renamed or copied?"
        ));
    }
    Ok(())
}

/// What [`combine`] did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Combined {
    /// Round files copied into the target.
    pub copied: u64,
    /// Round files of the sources that the target, or a source named
    /// before, already held byte for byte (skipped).
    pub identical: u64,
    /// Rounds `0 .. prefix` are all in the target now: what a run resumed
    /// from it reads back.
    pub prefix: u64,
    /// Round files in the target now.
    pub rounds: u64,
    /// Whether the target was made anew, with the first source's manifest.
    pub created: bool,
}

/// Merges the rounds of the checkpoint directories `sources` into the
/// checkpoint directory `target`, so that a run resumed from `target` reads
/// rounds sieved elsewhere (each round is a pure function of the run's
/// key and its number, so any machine writes the same bytes).
///
/// Every source must have a manifest with the target's key (the first
/// source's manifest is copied when `target` is missing or empty). Every
/// round file of a source is checked as [`Checkpoint::load`] checks it
/// (size, magic, version, SHA-256, key, round number against the name);
/// one the target (or a source named before) holds already must be the
/// same bytes, and is then skipped. All of this is checked before
/// anything is written, so a refusal ([`CheckpointError::Corrupt`] or
/// [`CheckpointError::Conflict`], naming the file) leaves the target as it
/// was. Then the missing rounds are copied, each written atomically as
/// [`Checkpoint::store`] writes. Sources are only read; files other than
/// round files and the manifest are ignored.
pub fn combine(target: &Path, sources: &[impl AsRef<Path>]) -> Result<Combined, CheckpointError> {
    // the target as it is, read only
    let mut held = BTreeSet::new();
    let mut manifest = None;
    match fs::metadata(target) {
        Ok(m) if !m.is_dir() => {
            return Err(CheckpointError::Io {
                path: target.to_path_buf(),
                why: "is not a directory".into(),
            })
        }
        Ok(_) => {
            let names = names_in(target)?;
            manifest = read_manifest(target)?;
            if manifest.is_none() {
                let others: Vec<String> = names.into_iter().filter(|n| !is_temporary(n)).collect();
                if !others.is_empty() {
                    return Err(not_a_checkpoint(target, others));
                }
            } else {
                held = names.iter().filter_map(|n| parse_round_name(n)).collect();
            }
        }
        Err(e) if e.kind() == io::ErrorKind::NotFound => {}
        Err(e) => return Err(io_error(target, "cannot be read", &e)),
    }
    let created = manifest.is_none();
    let itself = fs::canonicalize(target).ok();
    let mut inputs = Vec::with_capacity(sources.len());
    for s in sources {
        let s = s.as_ref();
        if itself.is_some() && fs::canonicalize(s).ok() == itself {
            return Err(CheckpointError::Conflict {
                path: s.to_path_buf(),
                why: "it is the target directory itself; nothing was copied".into(),
            });
        }
        let Some((key, what)) = read_manifest(s)? else {
            return Err(CheckpointError::Conflict {
                path: s.to_path_buf(),
                why: format!(
                    "it has no {MANIFEST}, so it is not a checkpoint directory; nothing was copied"
                ),
            });
        };
        let mut rounds: Vec<u64> = names_in(s)?
            .iter()
            .filter_map(|n| parse_round_name(n))
            .collect();
        rounds.sort_unstable();
        inputs.push((s, key, what, rounds));
    }
    // whose key the others must have: the target's, else the first source's
    let owner = if created {
        inputs.first().map_or(target, |i| i.0)
    } else {
        target
    };
    let Some((key, what)) = manifest.or_else(|| inputs.first().map(|i| (i.1, i.2.clone()))) else {
        return Ok(Combined {
            copied: 0,
            identical: 0,
            prefix: 0,
            rounds: 0,
            created: false,
        });
    };
    for (s, k, w, _) in &inputs {
        if *k != key {
            let same = if *w == what {
                ", with the same description but another key (something else that fixes the rounds differs, such as the prover version)"
            } else {
                ""
            };
            return Err(CheckpointError::Conflict {
                path: s.to_path_buf(),
                why: format!(
                    "it holds the rounds of another computation ({w}), not those of {} ({what}){same}; nothing was copied",
                    owner.display()
                ),
            });
        }
    }
    // every round file checked, and compared with the copies before it
    let mut first: BTreeMap<u64, (PathBuf, [u8; 32])> = BTreeMap::new();
    let mut identical = 0;
    for (s, _, _, rounds) in &inputs {
        for &r in rounds {
            let path = s.join(round_name(r));
            let bytes = checked_round_file(&path, &key, r)?;
            let digest: [u8; 32] = Sha256::digest(&bytes).into();
            if let Some((other, d)) = first.get(&r) {
                if *d != digest {
                    return Err(differs(&path, other, r));
                }
                identical += 1;
                continue;
            }
            if held.contains(&r) {
                let there = target.join(round_name(r));
                if checked_round_file(&there, &key, r)? != bytes {
                    return Err(differs(&path, &there, r));
                }
                identical += 1;
                first.insert(r, (there, digest));
                continue;
            }
            first.insert(r, (path, digest));
        }
    }
    let cp = Checkpoint::open(target, key, &what)?;
    let mut copied = 0;
    for (&r, (path, digest)) in first.iter().filter(|(r, _)| !held.contains(r)) {
        let bytes = fs::read(path).map_err(|e| io_error(path, "cannot be read", &e))?;
        if Sha256::digest(&bytes)[..] != digest[..] {
            return Err(CheckpointError::Conflict {
                path: path.clone(),
                why: format!(
                    "it changed while the rounds were combined ({copied} rounds were copied before it); combine again"
                ),
            });
        }
        cp.write_atomically(&round_name(r), &[&bytes])?;
        copied += 1;
    }
    let rounds = names_in(target)?
        .iter()
        .filter(|n| parse_round_name(n).is_some())
        .count() as u64;
    Ok(Combined {
        copied,
        identical,
        prefix: cp.stored_prefix()?,
        rounds,
        created,
    })
}

/// The bytes of the round file `path`, checked as round `r` of the run
/// `key`; a file that fails is refused before anything is copied.
fn checked_round_file(path: &Path, key: &[u8; 32], r: u64) -> Result<Vec<u8>, CheckpointError> {
    let bytes = fs::read(path).map_err(|e| io_error(path, "cannot be read", &e))?;
    check_round(&bytes, key, r).map_err(|why| CheckpointError::Corrupt {
        path: path.to_path_buf(),
        why: format!(
            "{why}; nothing was copied: remove the file (its round can be sieved again) and combine again"
        ),
    })?;
    Ok(bytes)
}

/// Two copies of round `r` that both pass their checks but differ.
fn differs(path: &Path, other: &Path, r: u64) -> CheckpointError {
    CheckpointError::Conflict {
        path: path.to_path_buf(),
        why: format!(
            "its round {r} differs from the copy in {}, though both pass their checks (their key and number agree, so one of them was not written by this computation's prover); nothing was copied",
            other.display()
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicUsize, Ordering};

    /// A fresh directory under the system's temporary directory, removed
    /// when dropped.
    struct Scratch(PathBuf);

    impl Scratch {
        fn new(test: &str) -> Scratch {
            static COUNT: AtomicUsize = AtomicUsize::new(0);
            let dir = std::env::temp_dir().join(format!(
                "classcert-checkpoint-{}-{test}-{}",
                std::process::id(),
                COUNT.fetch_add(1, Ordering::Relaxed)
            ));
            let _ = fs::remove_dir_all(&dir);
            Scratch(dir)
        }
    }

    impl Drop for Scratch {
        fn drop(&mut self) {
            let _ = fs::remove_dir_all(&self.0);
        }
    }

    fn key(tag: &str) -> [u8; 32] {
        Sha256::digest(tag.as_bytes()).into()
    }

    fn is_corrupt(r: &Result<Option<Vec<u8>>, CheckpointError>) -> bool {
        matches!(r, Err(CheckpointError::Corrupt { .. }))
    }

    #[test]
    fn round_trip() {
        let s = Scratch::new("round-trip");
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        assert_eq!(cp.dir(), s.0.as_path());
        assert!(s.0.join(MANIFEST).is_file());
        assert_eq!(cp.load(0).unwrap(), None);
        assert_eq!(cp.stored_prefix().unwrap(), 0);
        cp.store(0, b"first round").unwrap();
        cp.store(1, b"").unwrap();
        let big: Vec<u8> = (0..100_000u32).map(|i| (i * 7 + 3) as u8).collect();
        cp.store(2, &big).unwrap();
        assert_eq!(cp.load(0).unwrap().as_deref(), Some(&b"first round"[..]));
        assert_eq!(cp.load(1).unwrap().as_deref(), Some(&b""[..]));
        assert_eq!(cp.load(2).unwrap().as_deref(), Some(&big[..]));
        assert_eq!(cp.load(3).unwrap(), None);
        assert_eq!(cp.stored_prefix().unwrap(), 3);
        // storing again replaces the round
        cp.store(0, b"again").unwrap();
        assert_eq!(cp.load(0).unwrap().as_deref(), Some(&b"again"[..]));
        // no temporary file is left behind
        for e in fs::read_dir(&s.0).unwrap() {
            let name = e.unwrap().file_name().into_string().unwrap();
            assert!(!name.starts_with(TMP_PREFIX), "{name}");
        }
    }

    /// The file is laid out as the module documentation says: header,
    /// payload, SHA-256 of both.
    #[test]
    fn round_file_layout_is_the_documented_one() {
        let s = Scratch::new("layout");
        let k = key("layout");
        let cp = Checkpoint::open(&s.0, k, "layout").unwrap();
        cp.store(7, b"xyz").unwrap();
        let f = fs::read(s.0.join("round-000007.ckpt")).unwrap();
        assert_eq!(f.len(), 60 + 3 + 32);
        assert_eq!(&f[..8], b"CCCKPT-R");
        assert_eq!(f[8..12], [0, 0, 0, 1]);
        assert_eq!(f[12..44], k);
        assert_eq!(f[44..52], 7u64.to_be_bytes());
        assert_eq!(f[52..60], 3u64.to_be_bytes());
        assert_eq!(&f[60..63], b"xyz");
        assert_eq!(f[63..], Sha256::digest(&f[..63])[..]);
        let m = fs::read(s.0.join(MANIFEST)).unwrap();
        assert_eq!(&m[..8], b"CCCKPT-M");
        assert_eq!(m[12..44], k);
        assert_eq!(m[44..48], 6u32.to_be_bytes());
        assert_eq!(&m[48..54], b"layout");
        assert_eq!(m[54..], Sha256::digest(&m[..54])[..]);
        assert_eq!(round_name(1_234_567), "round-1234567.ckpt");
        assert_eq!(parse_round_name("round-1234567.ckpt"), Some(1_234_567));
        assert_eq!(parse_round_name("round-7.ckpt"), None);
        assert_eq!(parse_round_name("round-0000007.ckpt"), None);
    }

    #[test]
    fn reopen_with_the_same_key_sees_the_rounds() {
        let s = Scratch::new("reopen");
        {
            let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
            for r in 0..3 {
                cp.store(r, format!("round {r}").as_bytes()).unwrap();
            }
        }
        let manifest = fs::read(s.0.join(MANIFEST)).unwrap();
        // the description may differ: the key decides
        let cp = Checkpoint::open(&s.0, key("a"), "run a, described anew").unwrap();
        assert_eq!(fs::read(s.0.join(MANIFEST)).unwrap(), manifest);
        assert_eq!(cp.stored_prefix().unwrap(), 3);
        for r in 0..3 {
            assert_eq!(cp.load(r).unwrap(), Some(format!("round {r}").into_bytes()));
        }
    }

    #[test]
    fn another_key_is_a_mismatch() {
        let s = Scratch::new("mismatch");
        Checkpoint::open(&s.0, key("a"), "D = -23, seed 1")
            .unwrap()
            .store(0, b"a's round")
            .unwrap();
        let e = Checkpoint::open(&s.0, key("b"), "D = -23, seed 2").unwrap_err();
        assert_eq!(
            e,
            CheckpointError::Mismatch {
                dir: s.0.clone(),
                stored: "D = -23, seed 1".into(),
                wanted: "D = -23, seed 2".into(),
            }
        );
        let msg = e.to_string();
        assert!(msg.contains(&s.0.display().to_string()), "{msg}");
        assert!(msg.contains("seed 1") && msg.contains("seed 2"), "{msg}");
        // the same description with another key still says what differs
        let msg = Checkpoint::open(&s.0, key("b"), "D = -23, seed 1")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("another key"), "{msg}");
        // the directory is left as it was
        let cp = Checkpoint::open(&s.0, key("a"), "D = -23, seed 1").unwrap();
        assert_eq!(cp.load(0).unwrap().as_deref(), Some(&b"a's round"[..]));
    }

    #[test]
    fn every_single_byte_change_of_a_round_file_is_refused() {
        let s = Scratch::new("flip-round");
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        cp.store(0, b"0123456789").unwrap();
        let path = s.0.join(round_name(0));
        let good = fs::read(&path).unwrap();
        assert_eq!(good.len(), ROUND_HEAD + 10 + DIGEST_LEN);
        for i in 0..good.len() {
            for mask in [0x01u8, 0x80, 0xff] {
                let mut bad = good.clone();
                bad[i] ^= mask;
                fs::write(&path, &bad).unwrap();
                let r = cp.load(0);
                assert!(is_corrupt(&r), "byte {i} ^ {mask:#x}: {r:?}");
                assert!(
                    matches!(cp.stored_prefix(), Err(CheckpointError::Corrupt { .. })),
                    "byte {i}"
                );
            }
        }
        fs::write(&path, &good).unwrap();
        assert_eq!(cp.load(0).unwrap().as_deref(), Some(&b"0123456789"[..]));
        // the message names the file
        let mut bad = good.clone();
        bad[60] ^= 1;
        fs::write(&path, &bad).unwrap();
        let msg = cp.load(0).unwrap_err().to_string();
        assert!(msg.contains(&path.display().to_string()), "{msg}");
        assert!(msg.contains("SHA-256"), "{msg}");
    }

    #[test]
    fn every_single_byte_change_of_the_manifest_is_refused() {
        let s = Scratch::new("flip-manifest");
        Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        let path = s.0.join(MANIFEST);
        let good = fs::read(&path).unwrap();
        for i in 0..good.len() {
            let mut bad = good.clone();
            bad[i] ^= 0x01;
            fs::write(&path, &bad).unwrap();
            let r = Checkpoint::open(&s.0, key("a"), "run a");
            assert!(
                matches!(r, Err(CheckpointError::Corrupt { ref path, .. }) if path.ends_with(MANIFEST)),
                "byte {i}: {r:?}"
            );
        }
        for len in 0..good.len() {
            fs::write(&path, &good[..len]).unwrap();
            let r = Checkpoint::open(&s.0, key("a"), "run a");
            assert!(
                matches!(r, Err(CheckpointError::Corrupt { .. })),
                "{len}: {r:?}"
            );
        }
        fs::write(&path, &good).unwrap();
        Checkpoint::open(&s.0, key("a"), "run a").unwrap();
    }

    #[test]
    fn truncated_or_extended_round_files_are_refused() {
        let s = Scratch::new("truncate");
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        cp.store(3, b"some payload").unwrap();
        let path = s.0.join(round_name(3));
        let good = fs::read(&path).unwrap();
        for len in 0..good.len() {
            fs::write(&path, &good[..len]).unwrap();
            assert!(is_corrupt(&cp.load(3)), "truncated to {len}");
        }
        for extra in [&b"\0"[..], b"x", &good[..]] {
            let mut longer = good.clone();
            longer.extend_from_slice(extra);
            fs::write(&path, &longer).unwrap();
            assert!(is_corrupt(&cp.load(3)), "extended by {}", extra.len());
        }
        // an empty file under a round's name is not "no round"
        fs::write(&path, b"").unwrap();
        let msg = cp.load(3).unwrap_err().to_string();
        assert!(
            msg.contains("round-000003.ckpt") && msg.contains("0 bytes"),
            "{msg}"
        );
    }

    #[test]
    fn renamed_or_foreign_round_files_are_refused() {
        let s = Scratch::new("rename");
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        cp.store(0, b"zero").unwrap();
        cp.store(1, b"one").unwrap();
        // round 1's file under round 0's name, and round 0's under round 5's
        fs::copy(s.0.join(round_name(0)), s.0.join(round_name(5))).unwrap();
        fs::rename(s.0.join(round_name(1)), s.0.join(round_name(0))).unwrap();
        let e = cp.load(0).unwrap_err();
        assert!(e.to_string().contains("holds round 1, not round 0"), "{e}");
        assert!(is_corrupt(&cp.load(5)));
        assert!(matches!(
            cp.stored_prefix(),
            Err(CheckpointError::Corrupt { .. })
        ));
        // a round file from a run with another key, under the right name
        let other = Scratch::new("rename-other");
        let cq = Checkpoint::open(&other.0, key("b"), "run b").unwrap();
        cq.store(2, b"b's round two").unwrap();
        fs::copy(other.0.join(round_name(2)), s.0.join(round_name(2))).unwrap();
        let e = cp.load(2).unwrap_err();
        assert!(e.to_string().contains("another computation"), "{e}");
    }

    #[test]
    fn stray_temporary_files_are_removed_and_unknown_files_ignored() {
        let s = Scratch::new("stray");
        // a directory that holds only a temporary file counts as empty
        fs::create_dir_all(&s.0).unwrap();
        let stray_manifest = s.0.join(format!("tmp-99999-{MANIFEST}"));
        fs::write(&stray_manifest, b"half a manif").unwrap();
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        assert!(!stray_manifest.exists());
        cp.store(0, b"zero").unwrap();
        // a crash while round 1 was written leaves its temporary file
        let stray = s.0.join("tmp-12345-round-000001.ckpt");
        fs::write(&stray, b"CCCKPT-R half").unwrap();
        let notes = s.0.join("notes.txt");
        fs::write(&notes, b"the user's own file").unwrap();
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        assert!(!stray.exists(), "the temporary file was not cleaned up");
        assert!(notes.exists(), "an unknown file was touched");
        assert_eq!(cp.stored_prefix().unwrap(), 1);
        assert_eq!(cp.load(1).unwrap(), None);
    }

    #[test]
    fn stored_prefix_stops_at_a_gap() {
        let s = Scratch::new("gap");
        let cp = Checkpoint::open(&s.0, key("a"), "run a").unwrap();
        for r in [0, 1, 3, 4] {
            cp.store(r, &[r as u8; 5]).unwrap();
        }
        assert_eq!(cp.stored_prefix().unwrap(), 2);
        assert_eq!(cp.load(3).unwrap(), Some(vec![3u8; 5]));
        cp.store(2, b"2").unwrap();
        assert_eq!(cp.stored_prefix().unwrap(), 5);
    }

    #[test]
    fn unusable_directories_are_refused() {
        let s = Scratch::new("unusable");
        fs::create_dir_all(&s.0).unwrap();
        // a regular file
        let file = s.0.join("a-file");
        fs::write(&file, b"x").unwrap();
        let e = Checkpoint::open(&file, key("a"), "run a").unwrap_err();
        assert!(matches!(e, CheckpointError::Io { .. }), "{e:?}");
        assert!(e.to_string().contains("a-file"), "{e}");
        // a directory with other files and no manifest
        let e = Checkpoint::open(&s.0, key("a"), "run a").unwrap_err();
        assert!(matches!(e, CheckpointError::Corrupt { .. }), "{e:?}");
        assert!(e.to_string().contains("'a-file'"), "{e}");
        assert!(!s.0.join(MANIFEST).exists());
        // a missing directory is created, parents included
        let deep = s.0.join("x").join("y");
        Checkpoint::open(&deep, key("a"), "run a").unwrap();
        assert!(deep.join(MANIFEST).is_file());
    }

    #[test]
    fn long_descriptions_are_cut_at_a_character_boundary() {
        let s = Scratch::new("long-what");
        let what = "é".repeat(MAX_WHAT); // 2 bytes each
        Checkpoint::open(&s.0, key("a"), &what).unwrap();
        let e = Checkpoint::open(&s.0, key("b"), "b").unwrap_err();
        let CheckpointError::Mismatch { stored, .. } = e else {
            panic!("{e:?}")
        };
        assert_eq!(stored, "é".repeat(MAX_WHAT / 2));
    }

    /// The bytes of every file in `dir`, by name.
    fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
        fs::read_dir(dir)
            .unwrap()
            .map(|e| {
                let e = e.unwrap();
                (
                    e.file_name().into_string().unwrap(),
                    fs::read(e.path()).unwrap(),
                )
            })
            .collect()
    }

    #[test]
    fn combine_copies_the_missing_rounds_and_skips_identical_ones() {
        let (a, b, t) = (
            Scratch::new("combine-a"),
            Scratch::new("combine-b"),
            Scratch::new("combine-t"),
        );
        let ca = Checkpoint::open(&a.0, key("k"), "run k").unwrap();
        let cb = Checkpoint::open(&b.0, key("k"), "run k, elsewhere").unwrap();
        for r in [0, 1, 2] {
            ca.store(r, format!("round {r}").as_bytes()).unwrap();
        }
        for r in [2, 3, 5] {
            cb.store(r, format!("round {r}").as_bytes()).unwrap();
        }
        // a crash in b left a temporary file: b is only read
        fs::write(b.0.join("tmp-1-round-000004.ckpt"), b"half").unwrap();
        let (before_a, before_b) = (snapshot(&a.0), snapshot(&b.0));
        let c = combine(&t.0, &[&a.0, &b.0]).unwrap();
        assert_eq!(
            c,
            Combined {
                copied: 5,
                identical: 1,
                prefix: 4,
                rounds: 5,
                created: true
            }
        );
        assert_eq!(snapshot(&a.0), before_a);
        assert_eq!(snapshot(&b.0), before_b);
        // the target has the first source's manifest and the same files
        assert_eq!(fs::read(t.0.join(MANIFEST)).unwrap(), before_a[MANIFEST]);
        for r in [0, 1, 2] {
            assert_eq!(
                fs::read(t.0.join(round_name(r))).unwrap(),
                before_a[&round_name(r)]
            );
        }
        for r in [3, 5] {
            assert_eq!(
                fs::read(t.0.join(round_name(r))).unwrap(),
                before_b[&round_name(r)]
            );
        }
        let ct = Checkpoint::open(&t.0, key("k"), "run k").unwrap();
        assert_eq!(ct.stored_prefix().unwrap(), 4);
        assert_eq!(ct.load(5).unwrap().as_deref(), Some(&b"round 5"[..]));
        // again: nothing to copy, everything identical
        let again = combine(&t.0, &[&b.0, &a.0]).unwrap();
        assert_eq!(
            (again.copied, again.identical, again.created),
            (0, 6, false)
        );
        // the gap filled from a third directory
        let g = Scratch::new("combine-g");
        Checkpoint::open(&g.0, key("k"), "run k")
            .unwrap()
            .store(4, b"round 4")
            .unwrap();
        let filled = combine(&t.0, &[&g.0]).unwrap();
        assert_eq!((filled.copied, filled.prefix, filled.rounds), (1, 6, 6));
    }

    #[test]
    fn combine_refuses_and_copies_nothing() {
        let (a, b, t) = (
            Scratch::new("refuse-a"),
            Scratch::new("refuse-b"),
            Scratch::new("refuse-t"),
        );
        let ca = Checkpoint::open(&a.0, key("k"), "run k").unwrap();
        ca.store(0, b"zero").unwrap();
        ca.store(1, b"one").unwrap();
        let cb = Checkpoint::open(&b.0, key("other"), "run other").unwrap();
        cb.store(2, b"two").unwrap();
        // another computation, into a new target: nothing is created
        let e = combine(&t.0, &[&a.0, &b.0]).unwrap_err();
        assert!(
            matches!(e, CheckpointError::Conflict { ref path, .. } if *path == b.0),
            "{e:?}"
        );
        let msg = e.to_string();
        assert!(
            msg.contains("run other")
                && msg.contains("run k")
                && msg.contains("nothing was copied"),
            "{msg}"
        );
        assert!(!t.0.exists());
        // the same round with other bytes that pass their checks
        let c2 = Scratch::new("refuse-c");
        let cc = Checkpoint::open(&c2.0, key("k"), "run k").unwrap();
        cc.store(1, b"ONE").unwrap();
        cc.store(7, b"seven").unwrap();
        let e = combine(&t.0, &[&a.0, &c2.0]).unwrap_err();
        let msg = e.to_string();
        assert!(matches!(e, CheckpointError::Conflict { .. }), "{e:?}");
        assert!(
            msg.contains(&c2.0.join(round_name(1)).display().to_string())
                && msg.contains(&a.0.display().to_string())
                && msg.contains("differs"),
            "{msg}"
        );
        assert!(!t.0.exists());
        // ... and against the target's own copy
        combine(&t.0, &[&a.0]).unwrap();
        let before = snapshot(&t.0);
        let e = combine(&t.0, &[&c2.0]).unwrap_err();
        assert!(
            e.to_string()
                .contains(&t.0.join(round_name(1)).display().to_string()),
            "{e}"
        );
        assert_eq!(snapshot(&t.0), before);
        // one byte changed anywhere in a source's round file
        fs::remove_file(c2.0.join(round_name(1))).unwrap();
        let path = c2.0.join(round_name(7));
        let good = fs::read(&path).unwrap();
        for i in 0..good.len() {
            let mut bad = good.clone();
            bad[i] ^= 0x01;
            fs::write(&path, &bad).unwrap();
            let e = combine(&t.0, &[&c2.0]).unwrap_err();
            assert!(
                matches!(e, CheckpointError::Corrupt { path: ref p, .. } if *p == path),
                "byte {i}: {e:?}"
            );
            assert_eq!(snapshot(&t.0), before, "byte {i}");
        }
        // a round file renamed to another round's name
        fs::write(&path, &good).unwrap();
        let t2 = Scratch::new("refuse-t2");
        assert_eq!(combine(&t2.0, &[&c2.0]).unwrap().copied, 1);
        fs::rename(&path, c2.0.join(round_name(8))).unwrap();
        let e = combine(&t.0, &[&c2.0]).unwrap_err();
        assert!(e.to_string().contains("holds round 7, not round 8"), "{e}");
        assert_eq!(snapshot(&t.0), before);
        // the target itself, and a directory that is not a checkpoint
        let e = combine(&t.0, &[&t.0]).unwrap_err();
        assert!(e.to_string().contains("target directory itself"), "{e}");
        let plain = Scratch::new("refuse-plain");
        fs::create_dir_all(&plain.0).unwrap();
        fs::write(plain.0.join("notes.txt"), b"x").unwrap();
        let e = combine(&t.0, &[&plain.0]).unwrap_err();
        assert!(e.to_string().contains("not a checkpoint directory"), "{e}");
        // a target with files but no manifest
        let e = combine(&plain.0, &[&a.0]).unwrap_err();
        assert!(matches!(e, CheckpointError::Corrupt { .. }), "{e:?}");
        assert!(!plain.0.join(MANIFEST).exists());
    }
}
