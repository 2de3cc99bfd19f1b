//! `classcert keygen` and `classcert sign`.

use super::exit::{fail, Exit};
use classcert_prover::sign;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// `KEY.pub` beside `KEY`.
fn public_path(key: &Path) -> PathBuf {
    let mut s = key.as_os_str().to_owned();
    s.push(".pub");
    PathBuf::from(s)
}

/// Creates `path` with `text`, never over an existing file; `secret`
/// files are readable by their owner only.
fn create(path: &Path, text: &str, secret: bool) -> std::io::Result<()> {
    let mut o = std::fs::OpenOptions::new();
    o.write(true).create_new(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.mode(if secret { 0o600 } else { 0o644 });
    }
    let mut f = o.open(path)?;
    f.write_all(text.as_bytes())?;
    f.sync_all()
}

pub fn keygen(out: &Path) -> ExitCode {
    let public = public_path(out);
    for p in [out, public.as_path()] {
        if p.exists() {
            return fail(
                Exit::Usage,
                &format!("{} exists; keygen never overwrites a key", p.display()),
            );
        }
    }
    let key = match sign::new_key() {
        Ok(k) => k,
        Err(e) => return fail(Exit::Failed, &format!("no random bytes: {e}")),
    };
    let (secret, public_pem) = match sign::to_pem(&key) {
        Ok(p) => p,
        Err(e) => return fail(Exit::Internal, &e),
    };
    if let Err(e) = create(out, &secret, true) {
        return fail(Exit::Usage, &format!("cannot write {}: {e}", out.display()));
    }
    if let Err(e) = create(&public, &public_pem, false) {
        return fail(
            Exit::Usage,
            &format!("cannot write {}: {e}", public.display()),
        );
    }
    println!(
        "wrote {} (secret) and {} (public), fingerprint {}",
        out.display(),
        public.display(),
        sign::fingerprint_hex(&key)
    );
    Exit::Success.into()
}

pub fn sign(file: &Path, key: &Path, out: &Path) -> ExitCode {
    let read = |p: &Path| std::fs::read(p).map_err(|e| format!("cannot read {}: {e}", p.display()));
    let (cert, key_bytes) = match (read(file), read(key)) {
        (Ok(c), Ok(k)) => (c, k),
        (Err(e), _) | (_, Err(e)) => return fail(Exit::Usage, &e),
    };
    let key = match sign::from_pem(&String::from_utf8_lossy(&key_bytes)) {
        Ok(k) => k,
        Err(e) => return fail(Exit::Usage, &format!("{}: {e}", key.display())),
    };
    let signed = match sign::sign(&cert, &key) {
        Ok(s) => s,
        Err(e) => return fail(Exit::Usage, &format!("{}: {e}", file.display())),
    };
    if let Err(e) = std::fs::write(out, &signed) {
        return fail(
            Exit::Failed,
            &format!("cannot write {}: {e}", out.display()),
        );
    }
    println!(
        "wrote {} ({} bytes), signed by {}",
        out.display(),
        signed.len(),
        sign::fingerprint_hex(&key)
    );
    Exit::Success.into()
}
