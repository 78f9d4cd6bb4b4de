//! Sign-off that proves who gave it: a reviewer signs a filed version's
//! `manifest.json` with an SSH key, as a detached signature in the SSH signature
//! format (SSHSIG, as OpenSSH's `ssh-keygen -Y sign` writes it) under candor's own
//! namespace [`NAMESPACE`], stored beside the manifest as `manifest.json.sig`.
//! `verify` checks it against an allowed-signers file in OpenSSH's format. The SSH
//! formats and Ed25519 are the `ssh-key` crate's; nothing here computes a signature.
//!
//! The manifest holds the hash of every file of the version, its sign-off and the
//! previous version's manifest hash, so one signature covers the memo, its inputs and
//! the history before it.

use super::*;
use crate::files::strict::{self, StrictError};
use ssh_key::{HashAlg, LineEnding, PrivateKey, PublicKey, SshSig};

/// The SSHSIG namespace of a candor sign-off: a signature made for anything else (a
/// git commit, a file signed with `-n file`) is not a sign-off.
pub(crate) const NAMESPACE: &str = "signoff@candor";

/// Largest key or allowed-signers file read, in bytes.
const MAX_KEY_BYTES: u64 = 1024 * 1024;

/// What a version's signature says.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SignatureState {
    /// No `manifest.json.sig`.
    NotSigned,
    /// A valid signature by a key the allowed-signers file lists for candor's namespace.
    SignedBy {
        /// The principals the allowed-signers file gives that key, comma-separated.
        principal: String,
        /// The key's SHA-256 fingerprint.
        fingerprint: String,
    },
    /// A valid signature, but no allowed-signers file was given to say whose key it is.
    SignedUnchecked {
        /// The key's SHA-256 fingerprint.
        fingerprint: String,
    },
    /// A signature that fails: the sentence says why (a problem).
    Bad(String),
}

/// One usable line of an allowed-signers file.
#[derive(Debug, Clone)]
pub struct AllowedSigner {
    /// The principals (patterns), as written.
    pub principals: String,
    /// The key.
    pub key: PublicKey,
    /// The namespaces the line allows (`namespaces="..."`), or `None` for all.
    pub namespaces: Option<Vec<String>>,
    /// The first moment the key is valid (`valid-after`), UTC.
    pub valid_after: Option<NaiveDateTime>,
    /// The moment the key stops being valid (`valid-before`), UTC.
    pub valid_before: Option<NaiveDateTime>,
}

/// An allowed-signers file read: its usable lines, and one sentence for each line
/// that could not be used.
#[derive(Debug, Clone, Default)]
pub struct AllowedSigners {
    /// The lines candor can use.
    pub signers: Vec<AllowedSigner>,
    /// One sentence per line left out (a certificate authority, an unknown option, a
    /// key that cannot be read), with its line number.
    pub skipped: Vec<String>,
}

/// Reads an allowed-signers file (OpenSSH's format, see `ssh-keygen(1)`, "ALLOWED
/// SIGNERS"): per line the principals, optional options, the key type and the key in
/// base64, then an optional comment; blank lines and `#` comments are skipped.
pub(crate) fn read_allowed_signers(path: &Path) -> Result<AllowedSigners, Diagnostic> {
    let bytes = strict::read_named(path, MAX_KEY_BYTES)
        .map_err(|e| archive_error(format!("the allowed-signers file {}", e.words()), path))?;
    let text = String::from_utf8(bytes)
        .map_err(|_| archive_error("the allowed-signers file is not UTF-8 text", path))?;
    Ok(parse_allowed_signers(&text))
}

/// Splits a line into fields at blanks, keeping text in double quotes together (the
/// quotes stay, and are removed where a value is read).
fn fields(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current = String::new();
    let mut quoted = false;
    for c in line.chars() {
        match c {
            '"' => {
                quoted = !quoted;
                current.push(c);
            }
            ' ' | '\t' if !quoted => {
                if !current.is_empty() {
                    out.push(std::mem::take(&mut current));
                }
            }
            _ => current.push(c),
        }
    }
    if !current.is_empty() {
        out.push(current);
    }
    out
}

/// Splits options at commas outside double quotes.
fn options(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current = String::new();
    let mut quoted = false;
    for c in text.chars() {
        match c {
            '"' => {
                quoted = !quoted;
                current.push(c);
            }
            ',' if !quoted => out.push(std::mem::take(&mut current)),
            _ => current.push(c),
        }
    }
    out.push(current);
    out
}

fn unquote(text: &str) -> &str {
    text.strip_prefix('"')
        .and_then(|t| t.strip_suffix('"'))
        .unwrap_or(text)
}

/// A time of `valid-after` / `valid-before`: `YYYYMMDD`, `YYYYMMDDHHMM` or
/// `YYYYMMDDHHMMSS`, with an optional `Z`; read as UTC either way.
fn signer_time(text: &str) -> Option<NaiveDateTime> {
    let digits = text.strip_suffix('Z').unwrap_or(text);
    if !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let padded = match digits.len() {
        8 => format!("{digits}000000"),
        12 => format!("{digits}00"),
        14 => digits.to_string(),
        _ => return None,
    };
    NaiveDateTime::parse_from_str(&padded, "%Y%m%d%H%M%S").ok()
}

fn is_key_type(field: &str) -> bool {
    field.starts_with("ssh-") || field.starts_with("ecdsa-") || field.starts_with("sk-")
}

/// [`read_allowed_signers`] on text.
pub(crate) fn parse_allowed_signers(text: &str) -> AllowedSigners {
    let mut out = AllowedSigners::default();
    'lines: for (i, line) in text.lines().enumerate() {
        let number = i + 1;
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let f = fields(line);
        let principals = unquote(&f[0]).to_string();
        let (opts, at) = match f.get(1) {
            Some(k) if is_key_type(k) => (None, 1),
            Some(o) => (Some(o.as_str()), 2),
            None => (None, 1),
        };
        let (Some(kind), Some(data)) = (f.get(at), f.get(at + 1)) else {
            out.skipped.push(format!(
                "line {number}: no key type and key after the principals"
            ));
            continue;
        };
        let mut signer = AllowedSigner {
            principals,
            key: match PublicKey::from_openssh(&format!("{kind} {data}")) {
                Ok(k) => k,
                Err(e) => {
                    out.skipped
                        .push(format!("line {number}: the key cannot be read ({e})"));
                    continue;
                }
            },
            namespaces: None,
            valid_after: None,
            valid_before: None,
        };
        for option in opts.map(options).unwrap_or_default() {
            let (name, value) = match option.split_once('=') {
                Some((n, v)) => (n.to_ascii_lowercase(), Some(unquote(v).to_string())),
                None => (option.to_ascii_lowercase(), None),
            };
            match (name.as_str(), value) {
                ("namespaces", Some(v)) => {
                    signer.namespaces = Some(v.split(',').map(str::to_string).collect());
                }
                ("valid-after", Some(v)) | ("valid-before", Some(v)) => {
                    let Some(t) = signer_time(&v) else {
                        out.skipped.push(format!(
                            "line {number}: `{name}` is not a time candor reads"
                        ));
                        continue 'lines;
                    };
                    if name == "valid-after" {
                        signer.valid_after = Some(t);
                    } else {
                        signer.valid_before = Some(t);
                    }
                }
                ("cert-authority", None) => {
                    out.skipped.push(format!(
                        "line {number}: a certificate authority; candor checks plain keys only"
                    ));
                    continue 'lines;
                }
                _ => {
                    out.skipped.push(format!(
                        "line {number}: the option `{option}` is not one candor reads"
                    ));
                    continue 'lines;
                }
            }
        }
        out.signers.push(signer);
    }
    out
}

/// A namespace pattern of an allowed-signers line: `*` and `?` as wildcards.
fn pattern_matches(pattern: &str, text: &str) -> bool {
    fn go(p: &[char], t: &[char]) -> bool {
        match p.split_first() {
            None => t.is_empty(),
            Some(('*', rest)) => (0..=t.len()).any(|i| go(rest, &t[i..])),
            Some(('?', rest)) => !t.is_empty() && go(rest, &t[1..]),
            Some((c, rest)) => t.first() == Some(c) && go(rest, &t[1..]),
        }
    }
    let p: Vec<char> = pattern.chars().collect();
    let t: Vec<char> = text.chars().collect();
    go(&p, &t)
}

/// Checks the signature beside a version's manifest (`manifest_bytes`, as read):
/// its namespace, the signature itself with the key it names, and that key against the
/// allowed signers at time `now` (when given).
pub(crate) fn check_signature(
    dir: &Path,
    manifest_bytes: &[u8],
    allowed: Option<&AllowedSigners>,
    now: NaiveDateTime,
) -> SignatureState {
    let text = match strict::read_inside(dir, SIGNATURE, crate::limits::MAX_SIGNATURE_BYTES) {
        Ok(b) => b,
        Err(StrictError::Io(e)) if e.kind() == std::io::ErrorKind::NotFound => {
            return SignatureState::NotSigned
        }
        Err(e) => return SignatureState::Bad(format!("{SIGNATURE} {}", e.words())),
    };
    let sig = match SshSig::from_pem(&text) {
        Ok(s) => s,
        Err(e) => return SignatureState::Bad(format!("{SIGNATURE} is not an SSH signature ({e})")),
    };
    if sig.namespace() != NAMESPACE {
        return SignatureState::Bad(format!(
            "{SIGNATURE} was made for the namespace `{}`, not candor's `{NAMESPACE}`: it is not \
             a sign-off",
            sig.namespace()
        ));
    }
    let key = PublicKey::from(sig.public_key().clone());
    let fingerprint = key.fingerprint(HashAlg::Sha256).to_string();
    if let Err(e) = key.verify(NAMESPACE, manifest_bytes, &sig) {
        return SignatureState::Bad(format!(
            "{SIGNATURE} does not verify against {MANIFEST} with the key {fingerprint} it names \
             ({e}): the manifest changed after it was signed, or the signature is not of it"
        ));
    }
    let Some(allowed) = allowed else {
        return SignatureState::SignedUnchecked { fingerprint };
    };
    let mut reasons = Vec::new();
    let mut principals = Vec::new();
    for s in allowed
        .signers
        .iter()
        .filter(|s| s.key.key_data() == key.key_data())
    {
        if let Some(ns) = &s.namespaces {
            if !ns.iter().any(|p| pattern_matches(p, NAMESPACE)) {
                reasons.push(format!(
                    "the allowed-signers file lists the key for {} only for the namespaces {}",
                    s.principals,
                    ns.join(",")
                ));
                continue;
            }
        }
        if s.valid_after.is_some_and(|t| now < t) || s.valid_before.is_some_and(|t| now >= t) {
            reasons.push(format!(
                "the allowed-signers file lists the key for {} but not as valid now",
                s.principals
            ));
            continue;
        }
        principals.push(s.principals.clone());
    }
    if principals.is_empty() {
        let why = if reasons.is_empty() {
            "the allowed-signers file does not list it".to_string()
        } else {
            reasons.join("; ")
        };
        return SignatureState::Bad(format!(
            "{SIGNATURE} is signed by the key {fingerprint}, which is not an allowed signer: {why}"
        ));
    }
    SignatureState::SignedBy {
        principal: principals.join(", "),
        fingerprint,
    }
}

/// Signs the filed version in `dir` with the OpenSSH private key `key_text` (Ed25519,
/// without a passphrase), after checking the version with [`super::verify_version`]:
/// writes `manifest.json.sig` beside the manifest, never over one already there.
/// Returns the key's fingerprint.
pub(crate) fn sign_version(dir: &Path, key_path: &Path) -> Result<String, Diagnostic> {
    let key_text = strict::read_named(key_path, MAX_KEY_BYTES)
        .map_err(|e| archive_error(format!("the key file {}", e.words()), key_path))?;
    let key = PrivateKey::from_openssh(&key_text).map_err(|e| {
        archive_error(format!("not an OpenSSH private key ({e})"), key_path)
            .with_hint("give the private key file, such as ~/.ssh/id_ed25519, not the .pub file")
    })?;
    let by_ssh_keygen = format!(
        "ssh-keygen -Y sign -n {NAMESPACE} -f KEY {MANIFEST} (in the version's folder) writes the \
         same signature file, with a passphrase, an agent or a hardware key"
    );
    if key.is_encrypted() {
        return Err(archive_error(
            "the key is protected by a passphrase, which candor does not read",
            key_path,
        )
        .with_hint(by_ssh_keygen));
    }
    let sig_kind = strict::EntryKind::at(&dir.join(SIGNATURE));
    if sig_kind.is_ok() {
        return Err(archive_error(
            format!("{SIGNATURE} is already there; a signature is never replaced"),
            dir,
        ));
    }
    let mut report = VerifyReport::default();
    verify_version(dir, &mut report, &VerifyOptions::default());
    if !report.problems.is_empty() {
        return Err(archive_error(
            format!(
                "the version does not verify, so it is not signed: {}",
                report.problems.join("; ")
            ),
            dir,
        ));
    }
    let manifest_bytes = read_manifest_bytes(dir).map_err(|why| archive_error(why, dir))?;
    let sig = key
        .sign(NAMESPACE, HashAlg::Sha512, &manifest_bytes)
        .map_err(|e| {
            archive_error(format!("the key cannot sign ({e})"), key_path)
                .with_hint(by_ssh_keygen.clone())
        })?;
    let pem = sig
        .to_pem(LineEnding::LF)
        .map_err(|e| archive_error(format!("cannot write the signature ({e})"), dir))?;
    let target = dir.join(SIGNATURE);
    output::write_atomically_with(&target, pem.as_bytes(), &mut output::Disk)
        .map_err(|e| archive_error(format!("cannot write {SIGNATURE}: {}", io_words(&e)), dir))?;
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        let _ = std::fs::set_permissions(&target, std::fs::Permissions::from_mode(0o444));
    }
    Ok(key.public_key().fingerprint(HashAlg::Sha256).to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    // An Ed25519 key made with `ssh-keygen -t ed25519` for these tests only.
    const PUBLIC: &str =
        "ssh-ed25519 AAAAC3NzaC1lZDI1NTE5AAAAIEBiIo0vCEfJs0Thu8Ak5D/q/Q7dgkdobB4a8JVn+m2D";

    #[test]
    fn allowed_signers_lines_are_read_as_openssh_writes_them() {
        let text = format!(
            "# reviewers\n\
             \n\
             ana@example.org {PUBLIC}\n\
             ben@example.org,\"Ben K\" namespaces=\"signoff@candor,file\",valid-after=\"20260101\" {PUBLIC} laptop\n\
             ca@example.org cert-authority {PUBLIC}\n\
             bad@example.org ssh-ed25519 AAAA\n\
             odd@example.org no-touch-required {PUBLIC}\n"
        );
        let a = parse_allowed_signers(&text);
        assert_eq!(a.signers.len(), 2, "{:?}", a.skipped);
        assert_eq!(a.signers[0].principals, "ana@example.org");
        assert_eq!(
            a.signers[1].namespaces.as_deref(),
            Some(&["signoff@candor".to_string(), "file".to_string()][..])
        );
        assert_eq!(a.signers[1].valid_after, signer_time("20260101000000"));
        assert_eq!(a.skipped.len(), 3, "{:?}", a.skipped);
        assert!(a.skipped[0].starts_with("line 5: a certificate authority"));
        assert!(pattern_matches("signoff@*", NAMESPACE));
        assert!(!pattern_matches("file", NAMESPACE));
    }
}
