//! candor's sign-offs checked by OpenSSH itself: a signature `candor sign` writes is
//! accepted by `ssh-keygen -Y verify` with the same allowed-signers file and namespace,
//! and one `ssh-keygen -Y sign` writes is accepted by `candor verify` (the SSHSIG format
//! is OpenSSH's PROTOCOL.sshsig; the allowed-signers format is ssh-keygen(1)'s
//! "ALLOWED SIGNERS" section).
//!
//! ssh-keygen (openssh-client) is not a Rust crate, so `cargo test` leaves these tests
//! out (`#[ignore]`); `.ci/run` installs it and runs them with
//! `cargo test --test integration sshsig:: -- --ignored`.

use crate::support::{candor, root, s, text};
use crate::trust::pier_archive;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// A copy of a test key that only its owner may read, as ssh-keygen requires of a
/// private key (git does not keep the mode).
fn private_key(dir: &Path, name: &str) -> PathBuf {
    use std::os::unix::fs::PermissionsExt as _;
    let path = dir.join(name);
    std::fs::copy(root().join("tests/fixtures/keys").join(name), &path).unwrap();
    std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o600)).unwrap();
    path
}

fn allowed_signers(dir: &Path) -> PathBuf {
    let public = std::fs::read_to_string(root().join("tests/fixtures/keys/reviewer.pub")).unwrap();
    let path = dir.join("allowed_signers");
    std::fs::write(&path, format!("ana@example.org {}", public.trim())).unwrap();
    path
}

/// `ssh-keygen -Y verify` of `message` with `signature`: its exit status and output.
fn ssh_keygen_verify(
    allowed: &Path,
    namespace: &str,
    signature: &Path,
    message: &Path,
) -> (bool, String) {
    let out = Command::new("ssh-keygen")
        .args([
            "-Y",
            "verify",
            "-f",
            s(allowed),
            "-I",
            "ana@example.org",
            "-n",
            namespace,
            "-s",
            s(signature),
        ])
        .stdin(std::fs::File::open(message).unwrap())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .output()
        .unwrap_or_else(|e| panic!("ssh-keygen is needed (openssh-client): {e}"));
    (out.status.success(), text(&out.stdout) + &text(&out.stderr))
}

/// `ssh-keygen -Y sign` of the manifest of the version in `dir`, writing
/// `manifest.json.sig` beside it.
fn ssh_keygen_sign(key: &Path, namespace: &str, dir: &Path) {
    let made = Command::new("ssh-keygen")
        .args(["-Y", "sign", "-n", namespace, "-f", s(key), "manifest.json"])
        .current_dir(dir)
        .output()
        .expect("ssh-keygen runs");
    assert!(made.status.success(), "{}", text(&made.stderr));
}

#[test]
#[ignore = "needs ssh-keygen (openssh-client); .ci/run installs it and runs it"]
fn a_candor_signature_verifies_with_ssh_keygen() {
    let (dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join("pier").join("001");
    let key = private_key(dir.path(), "reviewer");
    let out = candor(&["sign", s(&v1), "--key", s(&key)]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let allowed = allowed_signers(dir.path());
    let manifest = v1.join("manifest.json");
    let signature = v1.join("manifest.json.sig");
    let (ok, said) = ssh_keygen_verify(&allowed, "signoff@candor", &signature, &manifest);
    assert!(ok, "{said}");
    assert!(
        said.contains("Good \"signoff@candor\" signature for ana@example.org"),
        "{said}"
    );
    // Under another namespace OpenSSH refuses it as well.
    let (ok, said) = ssh_keygen_verify(&allowed, "file", &signature, &manifest);
    assert!(!ok, "{said}");
}

#[test]
#[ignore = "needs ssh-keygen (openssh-client); .ci/run installs it and runs it"]
fn an_ssh_keygen_signature_is_a_candor_sign_off() {
    let (dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join("pier").join("001");
    let key = private_key(dir.path(), "reviewer");
    let allowed = allowed_signers(dir.path());
    // Signed as the README tells a reviewer whose key has a passphrase.
    ssh_keygen_sign(&key, "signoff@candor", &v1);
    let out = candor(&["verify", s(&archive), "--allowed-signers", s(&allowed)]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
    assert!(
        text(&out.stdout).contains("approved, signed by ana@example.org"),
        "{}",
        text(&out.stdout)
    );

    // A signature made for another namespace is not a sign-off.
    let (_dir2, _deal2, archive2) = pier_archive(1);
    let v = archive2.join("pier").join("001");
    ssh_keygen_sign(&key, "file", &v);
    let out = candor(&["verify", s(&archive2), "--allowed-signers", s(&allowed)]);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stdout)
            .contains("was made for the namespace `file`, not candor's `signoff@candor`"),
        "{}",
        text(&out.stdout)
    );
}
