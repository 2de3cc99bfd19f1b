//! The exit statuses of `classcert` and the one way to leave with a
//! message.

use classcert_prover::checkpoint::CheckpointError;
use classcert_prover::ProveError;
use std::process::ExitCode;

/// Exit statuses of `classcert` (1 is deliberately unused, so that a
/// generic failure of a wrapper or shell is never read as one of these).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Exit {
    Success = 0,
    Usage = 2,
    Refuted = 3,
    Failed = 4,
    Internal = 5,
    Rejected = 6,
}

impl From<Exit> for ExitCode {
    fn from(e: Exit) -> ExitCode {
        ExitCode::from(e as u8)
    }
}

impl Exit {
    pub fn of(e: &ProveError) -> Exit {
        match e {
            ProveError::InvalidInput(_) | ProveError::Unsupported(_) | ProveError::TooCostly(_) => {
                Exit::Usage
            }
            ProveError::Refuted(_) => Exit::Refuted,
            ProveError::SearchFailed(_) => Exit::Failed,
            ProveError::SelfCheckFailed(_) => Exit::Internal,
            // the user pointed --resume at the wrong or a damaged directory
            // (or combine was given directories or rounds that do not agree)
            ProveError::Checkpoint(CheckpointError::Mismatch { .. })
            | ProveError::Checkpoint(CheckpointError::Corrupt { .. })
            | ProveError::Checkpoint(CheckpointError::Conflict { .. }) => Exit::Usage,
            // reading or writing it failed during the run
            ProveError::Checkpoint(CheckpointError::Io { .. }) => Exit::Failed,
        }
    }
}

pub const EXIT_HELP: &str = "\
Exit status:
  0  success
  2  usage: bad arguments, an invalid discriminant, an option out of range,
     an output path that cannot be written, a --resume or --into DIR that
     is not a directory or cannot be created, a file that is not a
     certificate (show) -- all checked before any work starts -- a request
     this prover cannot serve for this D, a --resume or collect directory
     that holds another computation's rounds or a damaged file, or a
     combine refused (a source of another computation, a round file that
     fails its check or differs from another copy; nothing is copied)
  3  the claim is refuted: --claim-class-number was shown false
  4  the computation failed: the search gave up, or writing the file or
     the checkpoint directory failed
  5  internal error: the verifier rejected the prover's own certificate
     (a bug; please report it)
  6  a certificate did not verify (table, show --format markdown|latex|
     csv): nothing was tabulated
  1 is not used.";

/// Prints `msg` on stderr and returns `code`.
pub fn fail(code: Exit, msg: &str) -> ExitCode {
    eprintln!("classcert: {msg}");
    code.into()
}
