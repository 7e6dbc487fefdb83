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
        sites: 11,
        boundary: Boundary::Open,
        reflection,
        site: None,
    }
}

#[test]
fn unresolved_reflection_symmetry_is_flagged() {
    let w = WindowSpec::Fraction(Window::LEVELS);
    let o = LevelOptions::default();
    // one sector holding both parities: a superposition of two independent spectra
    let mixed = build_chain(&spec(Reflection::Ignore)).unwrap();
    assert_eq!(mixed.len(), 1);
    let r = analyze(&mixed[0].energies, &w, &o).unwrap();
    // REFERENCE-VALUES.md: open chains keep the reflection symmetry; unresolved, the spectrum
    // is a superposition and <r̃> falls well below GOE 0.5307 (Atas et al. 2013, from memory)
    assert!(r.mean_r < 0.5307 - 0.05, "{}", r.mean_r);
    assert!(
        r.warnings.iter().any(|w| w.contains("superposition")),
        "{:?}",
        r.warnings
    );
    // resolved into even and odd sectors: each is GOE-like
    for sector in build_chain(&spec(Reflection::Resolve)).unwrap() {
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
}
