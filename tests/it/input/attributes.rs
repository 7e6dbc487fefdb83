//! `--attribute [FILE:]NAME=VALUE`: sector attributes supplied on the command line for
//! files that lack them.

use crate::util::{mixed_field_spec, run_binary};
use eigentherm::model::{build_chain, write_file};

/// `eigentherm scaling --json` on the chains of `dir` (L = 6, 8) with `extra` flags, the
/// folder's path replaced by `DIR`.
fn scaling_json(dir: &std::path::Path, extra: &[String]) -> serde_json::Value {
    let files: Vec<String> = [6, 8]
        .iter()
        .map(|l| {
            dir.join(format!("chain{l}.h5"))
                .to_str()
                .unwrap()
                .to_string()
        })
        .collect();
    let mut args: Vec<String> = vec!["scaling".into()];
    args.extend(files);
    args.extend(["--observable", "sz_site", "--json"].map(String::from));
    args.extend(extra.iter().cloned());
    let argv: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    let (code, out, err) = run_binary(&argv);
    assert_eq!(code, Some(0), "{err}");
    serde_json::from_str(&out.replace(dir.to_str().unwrap(), "DIR")).unwrap()
}

#[test]
fn attributes_on_the_command_line_replace_missing_ones() {
    // Files stripped of size and model, given them back with --attribute, must give the
    // document of the files that carry them (exact identity, common practice, no source).
    let full = tempfile::tempdir().unwrap();
    let bare = tempfile::tempdir().unwrap();
    let mut model = String::new();
    for l in [6, 8] {
        let mut sectors = build_chain(&mixed_field_spec(l)).unwrap();
        write_file(&full.path().join(format!("chain{l}.h5")), &sectors).unwrap();
        for s in &mut sectors {
            if let Some((_, v)) = s.attributes.iter().find(|(k, _)| k == "model") {
                model = v.clone();
            }
            s.attributes.retain(|(k, _)| k != "model");
            s.typed_attributes.retain(|(k, _)| k != "size");
        }
        write_file(&bare.path().join(format!("chain{l}.h5")), &sectors).unwrap();
    }
    assert!(!model.is_empty());
    let reference = scaling_json(full.path(), &[]);
    let stripped = scaling_json(bare.path(), &[]);
    assert_ne!(
        reference, stripped,
        "the stripped files must differ without the flags"
    );
    let p = |l: usize| {
        bare.path()
            .join(format!("chain{l}.h5"))
            .to_str()
            .unwrap()
            .to_string()
    };
    let flags: Vec<String> = vec![
        "--attribute".into(),
        format!("{}:size=6", p(6)),
        "--attribute".into(),
        format!("{}:size=8", p(8)),
        "--attribute".into(),
        format!("model={model}"),
    ];
    assert_eq!(reference, scaling_json(bare.path(), &flags));
}

#[test]
fn bad_attribute_flags_are_one_line_usage_errors() {
    // our own wording (common practice, no source)
    let f = "fixtures/good.h5";
    for (flag, message) in [
        ("size", "error: --attribute 'size': expected [FILE:]NAME=VALUE"),
        (
            "colour=red",
            "error: --attribute 'colour=red': unknown attribute 'colour' (known: size, model, label, symmetry_class, disorder, realization)",
        ),
        ("size=twelve", "error: --attribute 'size=twelve': 'twelve' is not a valid size"),
        (
            "symmetry_class=symplectic",
            "error: --attribute 'symmetry_class=symplectic': 'symplectic' is not a valid symmetry_class",
        ),
    ] {
        let (code, _, err) = run_binary(&["levels", f, "--attribute", flag]);
        assert_eq!(code, Some(2), "{flag}: {err}");
        assert_eq!(err.trim_end(), message);
    }
}
