//! Links in input files: cycles of soft and hard links are searched once (with one
//! warning), a dangling or unresolvable link where a sector member should be is an error
//! naming the link, and an external link is followed read-only with a warning naming the
//! other file. Expected messages: our own wording (common practice, no source).

use crate::util::{fails_naming, run_binary};
use ndarray::{Array1, Array2};
use std::path::Path;

/// A valid sector of `n` states in `g`: energies 0..n and the identity as eigenvectors.
fn sector(g: &hdf5::Group, n: usize, with_vectors: bool) {
    g.new_dataset_builder()
        .with_data(&Array1::from_iter((0..n).map(|i| i as f64)))
        .create("energies")
        .unwrap();
    if with_vectors {
        let eye = Array2::from_shape_fn((n, n), |(i, j)| if i == j { 1.0 } else { 0.0 });
        g.new_dataset_builder()
            .with_data(&eye)
            .create("eigenvectors")
            .unwrap();
    }
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

#[test]
fn link_cycles_are_searched_once_with_one_warning() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("cycles.h5");
    {
        let f = crate::util::create_h5(&p);
        let a = f.create_group("a").unwrap();
        sector(&a, 8, true);
        // soft links back to the group itself and to the root; a hard link cycle below b
        a.link_soft("/a", "self").unwrap();
        a.link_soft("/", "up").unwrap();
        let b = f.create_group("b").unwrap();
        let c = b.create_group("c").unwrap();
        sector(&c, 8, true);
        c.link_hard("/b", "back").unwrap();
    }
    let (code, out, err) = run_binary(&["inspect", s(&p)]);
    assert_eq!(code, Some(0), "{err}");
    // each sector listed once
    assert_eq!(out.matches("sector a (group /a)").count(), 1, "{out}");
    assert_eq!(out.matches("sector b/c (group /b/c)").count(), 1, "{out}");
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 1, "one warning: {err}");
    assert!(
        lines[0].starts_with("warning: ")
            && lines[0].contains("leads to the group already searched as")
            && lines[0].contains("and 2 more"),
        "{err}"
    );
    let (code, _, err) = run_binary(&["levels", s(&p), "--window", "0:1", "--json"]);
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn dangling_and_unresolvable_links_as_members_are_errors_naming_the_link() {
    let dir = tempfile::tempdir().unwrap();
    let soft = dir.path().join("dangling.h5");
    {
        let f = crate::util::create_h5(&soft);
        sector(&f, 4, false);
        f.link_soft("/nowhere", "eigenvectors").unwrap();
    }
    for cmd in ["inspect", "levels"] {
        fails_naming(
            &[cmd, s(&soft)],
            &["/eigenvectors: dangling soft link: its target does not exist"],
        );
    }
    // an external link to a file that is not HDF5
    let junk = dir.path().join("junk.txt");
    std::fs::write(&junk, "not an HDF5 file\n").unwrap();
    let ext = dir.path().join("external_junk.h5");
    {
        let f = crate::util::create_h5(&ext);
        sector(&f, 4, false);
        f.link_external(s(&junk), "/eigenvectors", "eigenvectors")
            .unwrap();
    }
    fails_naming(
        &["inspect", "--verify", s(&ext)],
        &["/eigenvectors: external link whose target cannot be opened"],
    );
}

#[test]
fn external_links_are_followed_read_only_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let other = dir.path().join("vectors.h5");
    {
        let f = crate::util::create_h5(&other);
        sector(&f, 4, true);
    }
    let main = dir.path().join("main.h5");
    {
        let f = crate::util::create_h5(&main);
        sector(&f, 4, false);
        f.link_external(s(&other), "/eigenvectors", "eigenvectors")
            .unwrap();
    }
    let before = std::fs::read(&other).unwrap();
    let (code, out, err) = run_binary(&["inspect", "--verify", s(&main)]);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("orthonormality"), "{out}");
    assert!(out.contains("external link /eigenvectors -> "), "{out}");
    assert!(
        err.starts_with("warning: ")
            && err.contains("/eigenvectors: an external link: the data are read (read-only) from")
            && err.contains("vectors.h5:/eigenvectors"),
        "{err}"
    );
    assert_eq!(
        std::fs::read(&other).unwrap(),
        before,
        "the other file is unchanged"
    );
}
