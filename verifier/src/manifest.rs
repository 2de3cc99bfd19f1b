//! Manifests: the list of a batch's certificates and their ids, one
//! `<SHA-256 in hex>  <file>` line each under the line [`HEAD`], files
//! named relative to the manifest's directory. A manifest may be signed
//! like a certificate (its text is then the COSE payload).

/// The first line of every manifest.
pub const HEAD: &str = "# classcert manifest 1";

/// One certificate of a manifest.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Entry {
    /// The certificate's id: 64 lowercase hex digits.
    pub id: String,
    /// Relative to the manifest, without `..` (a manifest cannot point
    /// outside its directory).
    pub file: String,
}

/// Reads a manifest; at most [`crate::limits::MAX_MANIFEST_ENTRIES`].
pub fn parse(text: &str) -> Result<Vec<Entry>, String> {
    let mut lines = text.lines().enumerate();
    if lines.next().map(|(_, l)| l.trim_end()) != Some(HEAD) {
        return Err(format!("a manifest begins with the line {HEAD}"));
    }
    let mut out = Vec::new();
    for (i, line) in lines.filter(|(_, l)| !l.trim().is_empty()) {
        let err = |what: &str| format!("manifest line {}: {what}", i + 1);
        if out.len() == crate::limits::MAX_MANIFEST_ENTRIES {
            return Err(err("too many entries"));
        }
        let (id, file) = line
            .split_once("  ")
            .ok_or_else(|| err("expected <sha256>  <file>"))?;
        let hex = id.len() == 64 && id.bytes().all(|b| matches!(b, b'0'..=b'9' | b'a'..=b'f'));
        let file = file.trim();
        let outside = file.starts_with('/') || file.split(['/', '\\']).any(|c| c == "..");
        match (hex, file.is_empty() || outside) {
            (false, _) => return Err(err("the id is not 64 lowercase hex digits")),
            (_, true) => return Err(err("a file inside the manifest's directory is expected")),
            _ => out.push(Entry {
                id: id.into(),
                file: file.into(),
            }),
        }
    }
    Ok(out)
}

/// The text of a manifest of `entries`.
pub fn render(entries: &[Entry]) -> String {
    let lines: Vec<String> = entries
        .iter()
        .map(|e| format!("{}  {}\n", e.id, e.file))
        .collect();
    format!("{HEAD}\n{}", lines.concat())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_manifest_reads_back_and_refuses_what_it_should() {
        let e = vec![Entry {
            id: "ab".repeat(32),
            file: "d-23.cert".into(),
        }];
        assert_eq!(parse(&render(&e)), Ok(e));
        for bad in [
            "no head\n",
            "# classcert manifest 1\nab  x.cert\n",
            "# classcert manifest 1\nABABABABABABABABABABABABABABABABABABABABABABABABABABABABABABABAB  x\n",
            &format!("{HEAD}\n{}  ../x.cert\n", "ab".repeat(32)),
            &format!("{HEAD}\n{}  /etc/x.cert\n", "ab".repeat(32)),
            &format!("{HEAD}\n{} x.cert\n", "ab".repeat(32)),
        ] {
            assert!(parse(bad).is_err(), "{bad}");
        }
    }
}
