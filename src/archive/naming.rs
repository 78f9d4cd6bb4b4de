//! The name of a deal's folder in the archive: from the deal file's name (or the deal's
//! optional stable `deal.id`), so that a deal keeps its folder when its name changes,
//! and every name, in any script, gives a folder of its own.

use crate::memo::sha256_hex;

/// Longest folder name, in characters.
const MAX_FOLDER_CHARS: usize = 80;

/// The folder of a deal filed from the file `deal_file_name` (a name without folders):
/// `id` when the deal gives one, else the file's name without its extension, as
/// [`folder_slug`] writes it.
pub(crate) fn folder_name(deal_file_name: &str, id: Option<&str>) -> String {
    if let Some(id) = id {
        return folder_slug(id);
    }
    let stem = match deal_file_name.rsplit_once('.') {
        Some((stem, _)) if !stem.is_empty() => stem,
        _ => deal_file_name,
    };
    folder_slug(stem)
}

/// A folder name for `text`: its letters and digits in any script, in lower case, with
/// every run of other characters as one `-`, at most 80 characters. Letters are kept
/// as they are (Greek stays Greek, Cyrillic stays Cyrillic), so names in different
/// scripts never meet in one folder. Text with no letter or digit at all gets `deal-`
/// and the first 12 hex digits of its SHA-256, distinct for distinct text; a name of
/// digits only gets `deal-` in front, so it is never taken for a version folder.
pub(crate) fn folder_slug(text: &str) -> String {
    let mut out = String::new();
    let mut count = 0;
    for c in text.chars() {
        if count >= MAX_FOLDER_CHARS {
            break;
        }
        if c.is_alphanumeric() {
            for l in c.to_lowercase() {
                out.push(l);
            }
            count += 1;
        } else if !out.is_empty() && !out.ends_with('-') {
            out.push('-');
            count += 1;
        }
    }
    let out = out.trim_end_matches('-').to_string();
    if out.is_empty() {
        let hash = sha256_hex(text.as_bytes());
        format!("deal-{}", &hash[..12])
    } else if out.chars().all(|c| c.is_ascii_digit()) {
        format!("deal-{out}")
    } else {
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_script_keeps_its_letters_and_no_two_names_share_a_fallback() {
        assert_eq!(folder_name("tollgate-depot.yaml", None), "tollgate-depot");
        assert_eq!(folder_name("Harbour Row.yml", None), "harbour-row");
        assert_eq!(folder_name("x.yaml", Some("North Quay 7")), "north-quay-7");
        // Greek and Cyrillic names keep their letters, in lower case.
        assert_eq!(folder_name("Λιμάνι Βόλου.yaml", None), "λιμάνι-βόλου");
        assert_eq!(folder_name("Северный порт.yaml", None), "северный-порт");
        assert_ne!(
            folder_name("Λιμάνι.yaml", None),
            folder_name("Порт.yaml", None)
        );
        // No letter at all: a fallback of the name's own hash, never one shared name.
        let a = folder_slug("+++");
        let b = folder_slug("---");
        assert!(a.starts_with("deal-") && b.starts_with("deal-"));
        assert_ne!(a, b);
        assert_eq!(folder_slug("2027"), "deal-2027");
        assert_eq!(folder_slug(&"a".repeat(200)).chars().count(), 80);
    }
}
