//! Round trip through the binary: `generate` writes a file, `inspect --verify` reads it back
//! through the reader and checks the eigenbasis.

use std::process::Command;

#[test]
fn generate_then_inspect_verify() {
    let dir = tempfile::tempdir().unwrap();
    let bin = env!("CARGO_BIN_EXE_eigentherm");
    for (model, extra) in [
        ("xxz", vec!["--sites", "8", "--j2", "0.3"]),
        (
            "mixed-field-ising",
            vec!["--sites", "9", "--boundary", "periodic"],
        ),
        ("gue", vec!["--dim", "200", "--seed", "3"]),
    ] {
        let path = dir.path().join(format!("{model}.h5"));
        let out = Command::new(bin)
            .args(["generate", "--model", model, "--out"])
            .arg(&path)
            .args(&extra)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let out = Command::new(bin)
            .args(["inspect", "--verify", "--json"])
            .arg(&path)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let sectors = json["files"][0]["sectors"].as_array().unwrap();
        assert!(!sectors.is_empty());
        for s in sectors {
            let v = &s["verify"];
            // orthonormality of eigenvectors from a Hermitian eigensolver: VᴴV = 1 to rounding
            // (common practice, no source; the issue asks for 1e-10)
            let ortho = v["orthonormality"]["max_error"].as_f64().unwrap();
            assert!(ortho < 1e-10, "{model}: {ortho}");
            // residuals ‖Hv − Ev‖ at rounding level relative to the spectral scale (common practice)
            if let Some(r) = v["residual"]["max_residual"].as_f64() {
                assert!(r < 1e-10, "{model}: {r}");
            }
            assert_eq!(s["n_states"], s["dim"], "{model}: full eigenbasis");
        }
    }
}
