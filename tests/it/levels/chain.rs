//! Level statistics of the mixed-field Ising chain: resolved vs unresolved reflection symmetry.

use eigentherm::analysis::levels::{analyze, Ensemble, LevelOptions};
use eigentherm::model::{build_chain, Boundary, ChainModel, ChainSpec, Reflection};
use eigentherm::window::{Window, WindowSpec};

fn spec(reflection: Reflection) -> ChainSpec {
    ChainSpec {
        // Bañuls, Cirac, Hastings, PRL 106, 050405 (2011): g = 0.9045, h = 0.8090 is strongly
        // non-integrable (from memory)
        model: ChainModel::MixedFieldIsing {
            j: 1.0,
            g: 0.9045,
            h: 0.8090,
        },
        sites: 12,
        boundary: Boundary::Open,
        reflection,
        site: None,
        sz: None,
        disorder: None,
    }
}

#[test]
fn unresolved_reflection_symmetry_is_flagged() {
    let w = WindowSpec::Fraction(Window::LEVELS);
    let o = LevelOptions::default();
    let resolved = build_chain(&spec(Reflection::Resolve)).unwrap();
    // one spectrum holding both parities: the union of the two sectors' spectra is the
    // spectrum of the unresolved chain (checked in tests/model_chain.rs)
    let mut merged: Vec<f64> = resolved
        .iter()
        .flat_map(|s| s.energies.iter().copied())
        .collect();
    merged.sort_by(f64::total_cmp);
    let r = analyze(&merged, &w, &o).unwrap();
    // REFERENCE-VALUES.md: open chains keep the reflection symmetry; unresolved, the spectrum
    // is a superposition and <r̃> falls well below GOE 0.5307 (Atas et al. 2013, from memory)
    assert!(r.mean_r < 0.5307 - 0.05, "{}", r.mean_r);
    assert!(
        r.warnings.iter().any(|w| w.contains("superposition")),
        "{:?}",
        r.warnings
    );
    // resolved into even and odd sectors: each is GOE-like
    for sector in &resolved {
        let r = analyze(&sector.energies, &w, &o).unwrap();
        // Atas et al. 2013: GOE 0.5307 (from memory); generous tolerance for ~500 levels
        assert!(
            (r.mean_r - 0.5307).abs() < 3.0 * r.mean_r_stderr + 0.02,
            "{}: {}",
            sector.group,
            r.mean_r
        );
        assert_eq!(r.ratio_class.nearest, Ensemble::Goe);
    }
    // the transverse-field chain (h = 0) is integrable (Pfeuty 1970): resolved sectors are not GOE
    let tfi = ChainSpec {
        model: ChainModel::TransverseFieldIsing { j: 1.0, g: 0.9045 },
        ..spec(Reflection::Resolve)
    };
    for sector in build_chain(&tfi).unwrap() {
        let r = analyze(&sector.energies, &w, &o).unwrap();
        // Atas et al. 2013: GOE 0.5307 (from memory); an integrable spectrum lies well below
        assert!(r.mean_r < 0.5307 - 0.05, "{}: {}", sector.group, r.mean_r);
        assert_ne!(r.nearest_ensemble, Ensemble::Goe, "{}", sector.group);
    }
}
