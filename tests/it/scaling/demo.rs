//! The demo scenario end to end, at small sizes: verdicts for the chaotic and the
//! integrable chain, and the tables agreeing with the JSON.

use eigentherm::analysis::scaling::Verdict;
use eigentherm::pipeline::demo;
use eigentherm::pipeline::study::study;

#[test]
fn demo_verdicts_and_tables() {
    let dir = tempfile::tempdir().unwrap();
    let files = demo::build_files(dir.path(), &[7, 9, 11], |_| {}).unwrap();
    assert_eq!(files.len(), 6);
    let out = dir.path().join("report");
    // the demo's own study, without its quench
    let mut req = eigentherm::cli::demo::demo_request(files).unwrap();
    req.quench = None;
    let results = study(&req).unwrap();
    eigentherm::report::study::write_folder(&results, &out).unwrap();
    let verdicts = &results.scaling.verdicts;
    let find = |model: &str, sector: &str, obs: &str| {
        verdicts
            .iter()
            .find(|v| v.family == format!("{model} | {sector} | {obs}"))
            .unwrap_or_else(|| panic!("no family {model} {sector} {obs}"))
            .verdict
            .verdict
    };
    for sector in ["even", "odd"] {
        // Kim, Ikeda, Huse PRE 90, 052105 (2014) (from memory): the mixed-field chain with
        // g = 0.9045, h = 0.8090 thermalizes local observables; the rule is the README's.
        assert_eq!(
            find("mixed-field-ising", sector, "sz_site"),
            Verdict::Thermalizes,
            "{sector}"
        );
        // Pfeuty 1970: the transverse-field chain is integrable (free fermions): a local
        // observable of it must not be judged to thermalize.
        assert_ne!(
            find("transverse-field-ising", sector, "sx_site"),
            Verdict::Thermalizes,
            "{sector}"
        );
    }
    // The Markdown and CSV tables hold the JSON's numbers (common practice, no source).
    let csv = std::fs::read_to_string(out.join("scaling.csv")).unwrap();
    let md = std::fs::read_to_string(out.join("scaling.md")).unwrap();
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let rows = &results.scaling.rows;
    let csv_rows: Vec<&str> = csv.lines().skip(1).collect();
    assert_eq!(csv_rows.len(), rows.len());
    for (line, row) in csv_rows.iter().zip(rows) {
        // family names hold no commas, so a plain split is enough here
        let f: Vec<&str> = line.split(',').collect();
        let fv: f64 = f[col("fluct_variance")].parse().unwrap();
        assert_eq!(fv, row.fluct_variance);
        let d: f64 = f[col("dimension")].parse().unwrap();
        assert_eq!(d, row.dimension);
        assert!(md.contains(&format!("| {} |", row.dimension)));
    }
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("results.json")).unwrap()).unwrap();
    assert_eq!(
        json["scaling"]["rows"].as_array().unwrap().len(),
        rows.len()
    );
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("<svg") && !html.contains("class=\"figure-missing"));
}
