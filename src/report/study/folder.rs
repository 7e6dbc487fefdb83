//! Putting a study folder into place without ever mixing two runs or touching an input.
//!
//! The files are written into a fresh sibling folder `.NAME.eigentherm-PID-N` next to the
//! requested `NAME`, then renamed into place: an existing `NAME` is first renamed aside and
//! removed only after the new folder stands. At every moment `NAME` is either the whole old
//! run or the whole new one (briefly absent between the two renames); a killed run leaves
//! only its hidden sibling, which the next run removes once its process has ended. Each
//! finished folder carries the marker file [`MARKER`]; an existing `NAME` is replaced only
//! when it is empty, carries the marker or holds `results.json` and `report.html` (a study
//! folder of an earlier version), and never when an input of the study lies inside it or is
//! `NAME` itself.

use crate::error::{Error, Result};
use std::path::{Path, PathBuf};

/// The file that marks a folder as written by a study.
pub const MARKER: &str = ".eigentherm-study";

/// Longest file name written (bytes), below the 255 of common file systems.
pub const MAX_NAME_BYTES: usize = 200;

/// Checks that a study may write `out`: not an input file, not holding an input, and, when
/// it exists, a directory that is empty or was written by a study.
pub fn check_target(out: &Path, inputs: &[PathBuf]) -> Result<()> {
    let abs = |p: &Path| std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf());
    let target = abs(out);
    for i in inputs.iter().map(|i| abs(i)) {
        if i == target {
            return Err(Error::file(
                out,
                "is an input of this study; choose another --out folder",
            ));
        }
        if i.starts_with(&target) {
            return Err(Error::file(
                out,
                format!(
                    "holds the input {}; the study replaces this folder as a whole, so choose another --out folder",
                    i.display()
                ),
            ));
        }
    }
    let meta = match std::fs::symlink_metadata(out) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => return Err(Error::io(out, e)),
        Ok(m) => m,
    };
    if !meta.is_dir() {
        return Err(Error::file(
            out,
            "exists and is not a directory (a study writes a folder); choose another --out",
        ));
    }
    let mut entries = std::fs::read_dir(out).map_err(|e| Error::io(out, e))?;
    // a folder of an earlier version (before the marker) holds results.json and report.html
    let earlier = out.join("results.json").is_file() && out.join("report.html").is_file();
    if entries.next().is_none() || out.join(MARKER).is_file() || earlier {
        return Ok(());
    }
    Err(Error::file(
        out,
        format!(
            "exists, is not empty and was not written by eigentherm study (no {MARKER}); choose another --out or empty it"
        ),
    ))
}

/// A fresh hidden sibling folder of `out` to write into.
pub fn staging(out: &Path) -> Result<PathBuf> {
    let parent = parent_of(out);
    std::fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, e))?;
    remove_stale(out);
    let stem = file_name(out);
    for n in 0..1000 {
        let p = parent.join(format!(".{stem}.eigentherm-{}-{n}", std::process::id()));
        match std::fs::create_dir(&p) {
            Ok(()) => return Ok(p),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(Error::io(&p, e)),
        }
    }
    Err(Error::file(
        out,
        "cannot create a temporary folder beside it",
    ))
}

/// Moves the finished `staged` folder to `out` (see the module documentation).
pub fn move_into_place(staged: &Path, out: &Path) -> Result<()> {
    std::fs::write(staged.join(MARKER), b"written by eigentherm study\n")
        .map_err(|e| Error::io(staged, e))?;
    let aside = match std::fs::symlink_metadata(out) {
        Ok(_) => {
            let a = PathBuf::from(format!("{}.old", staged.display()));
            std::fs::rename(out, &a).map_err(|e| Error::io(out, e))?;
            Some(a)
        }
        Err(_) => None,
    };
    if let Err(e) = std::fs::rename(staged, out) {
        if let Some(a) = &aside {
            let _ = std::fs::rename(a, out);
        }
        return Err(Error::io(out, e));
    }
    if let Some(a) = aside {
        let _ = std::fs::remove_dir_all(a);
    }
    Ok(())
}

/// Removes the staging folders (and folders set aside) of earlier runs for `out` whose
/// process no longer runs.
fn remove_stale(out: &Path) {
    let prefix = format!(".{}.eigentherm-", file_name(out));
    let Ok(entries) = std::fs::read_dir(parent_of(out)) else {
        return;
    };
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(rest) = name.strip_prefix(&prefix) else {
            continue;
        };
        let pid = rest.split('-').next().and_then(|p| p.parse::<u32>().ok());
        let alive = pid.is_some_and(|p| Path::new(&format!("/proc/{p}")).exists());
        if !alive && e.path().is_dir() {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

fn parent_of(out: &Path) -> PathBuf {
    match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn file_name(out: &Path) -> String {
    out.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "study".to_string())
}

/// File stems made unique and short: a stem longer than [`MAX_NAME_BYTES`] − 16 bytes is
/// cut on a character boundary, and a stem equal (ignoring case, as case-insensitive file
/// systems do) to an earlier one gets `-` and 8 hex digits of the SHA-256 of `(stem, key)`.
pub fn unique_stems(stems: &[(String, String)]) -> Vec<String> {
    use sha2::{Digest, Sha256};
    let hash = |s: &str, k: &str| {
        let d = Sha256::digest(format!("{s}\u{0}{k}").as_bytes());
        d.iter()
            .take(4)
            .map(|b| format!("{b:02x}"))
            .collect::<String>()
    };
    let mut seen = std::collections::HashSet::new();
    let mut out = Vec::with_capacity(stems.len());
    for (stem, key) in stems {
        let limit = MAX_NAME_BYTES - 16;
        let mut s = stem.clone();
        if s.len() > limit {
            let mut cut = limit;
            while !s.is_char_boundary(cut) {
                cut -= 1;
            }
            s = format!("{}-{}", &s[..cut], hash(stem, key));
        }
        let mut salt = 0usize;
        let mut candidate = s.clone();
        while !seen.insert(candidate.to_lowercase()) {
            candidate = format!("{s}-{}", hash(stem, &format!("{key}{salt}")));
            salt += 1;
        }
        out.push(candidate);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stems_are_made_unique_and_short() {
        // common practice, no source: case-insensitive uniqueness, a stable suffix
        let got = unique_stems(&[
            ("diag_sz".into(), "a".into()),
            ("Diag_SZ".into(), "b".into()),
            ("diag_sz".into(), "c".into()),
            ("x".repeat(300), "d".into()),
        ]);
        assert_eq!(got[0], "diag_sz");
        assert!(got[1].starts_with("Diag_SZ-") && got[1].len() == "Diag_SZ-".len() + 8);
        assert!(got[2].starts_with("diag_sz-") && got[2] != got[1]);
        assert!(got[3].len() <= MAX_NAME_BYTES);
        // the same input gives the same names
        assert_eq!(
            got,
            unique_stems(&[
                ("diag_sz".into(), "a".into()),
                ("Diag_SZ".into(), "b".into()),
                ("diag_sz".into(), "c".into()),
                ("x".repeat(300), "d".into()),
            ])
        );
    }
}
