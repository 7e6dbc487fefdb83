//! The JSON Schema of `docs/schema/eigentherm.schema.json` and every command's `--json`
//! validated against it, by a small validator of the part of JSON Schema (2020-12) the file
//! uses: `type`, `properties`, `required`, `additionalProperties`, `items`, `enum`, `const`,
//! `minimum`, `allOf`, `anyOf` and local `$ref`s (`#/$defs/NAME`). The validator is tested on its own
//! below.

use serde_json::Value;

/// Errors of `value` against `schema` (resolving `$ref`s in `root`), each with the JSON
/// path of the offending value; empty when it validates.
pub fn validate(root: &Value, schema: &Value, value: &Value, path: &str) -> Vec<String> {
    let mut errs = Vec::new();
    let Some(s) = schema.as_object() else {
        if schema == &Value::Bool(false) {
            errs.push(format!("{path}: not allowed"));
        }
        return errs;
    };
    if let Some(r) = s.get("$ref").and_then(Value::as_str) {
        match r
            .strip_prefix("#/$defs/")
            .and_then(|name| root["$defs"].get(name))
        {
            Some(target) => errs.extend(validate(root, target, value, path)),
            None => errs.push(format!("{path}: unresolved $ref {r}")),
        }
    }
    if let Some(t) = s.get("type") {
        let types: Vec<&str> = match t {
            Value::String(x) => vec![x.as_str()],
            Value::Array(xs) => xs.iter().filter_map(Value::as_str).collect(),
            _ => Vec::new(),
        };
        if !types.iter().any(|t| has_type(value, t)) {
            errs.push(format!("{path}: {value:.60} is not of type {types:?}"));
            return errs;
        }
    }
    if let Some(e) = s.get("enum").and_then(Value::as_array) {
        if !e.contains(value) {
            errs.push(format!("{path}: {value} not in {e:?}"));
        }
    }
    if let Some(c) = s.get("const") {
        if c != value {
            errs.push(format!("{path}: {value} is not {c}"));
        }
    }
    if let (Some(m), Some(x)) = (s.get("minimum").and_then(Value::as_f64), value.as_f64()) {
        if x < m {
            errs.push(format!("{path}: {x} below {m}"));
        }
    }
    for all in s
        .get("allOf")
        .and_then(Value::as_array)
        .into_iter()
        .flatten()
    {
        errs.extend(validate(root, all, value, path));
    }
    if let Some(any) = s.get("anyOf").and_then(Value::as_array) {
        if !any
            .iter()
            .any(|a| validate(root, a, value, path).is_empty())
        {
            errs.push(format!("{path}: matches none of anyOf"));
        }
    }
    if let Some(obj) = value.as_object() {
        let props = s.get("properties").and_then(Value::as_object);
        for req in s
            .get("required")
            .and_then(Value::as_array)
            .into_iter()
            .flatten()
        {
            if let Some(k) = req.as_str() {
                if !obj.contains_key(k) {
                    errs.push(format!("{path}: missing key {k}"));
                }
            }
        }
        for (k, v) in obj {
            let sub = format!("{path}.{k}");
            match props.and_then(|p| p.get(k)) {
                Some(ps) => errs.extend(validate(root, ps, v, &sub)),
                None => {
                    if let Some(extra) = s.get("additionalProperties") {
                        errs.extend(validate(root, extra, v, &sub));
                    }
                }
            }
        }
    }
    if let (Some(items), Some(arr)) = (s.get("items"), value.as_array()) {
        for (i, v) in arr.iter().enumerate() {
            errs.extend(validate(root, items, v, &format!("{path}[{i}]")));
        }
    }
    errs
}

fn has_type(v: &Value, t: &str) -> bool {
    match t {
        "null" => v.is_null(),
        "boolean" => v.is_boolean(),
        "object" => v.is_object(),
        "array" => v.is_array(),
        "string" => v.is_string(),
        "number" => v.is_number(),
        "integer" => v.is_i64() || v.is_u64(),
        _ => false,
    }
}

/// The schema file of the repository.
pub fn schema() -> Value {
    let path =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/schema/eigentherm.schema.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

#[test]
fn the_validator_rejects_what_it_should() {
    // JSON Schema 2020-12 validation vocabulary (json-schema.org, from memory): each
    // keyword below must reject the counter-example and accept the example.
    let root = serde_json::json!({
        "$defs": {"n": {"type": "integer", "minimum": 0}},
        "type": "object",
        "required": ["a"],
        "properties": {
            "a": {"$ref": "#/$defs/n"},
            "b": {"type": ["string", "null"], "enum": ["x", null]},
            "c": {"type": "array", "items": {"const": 1}},
            "d": {"anyOf": [{"type": "boolean"}, {"type": "number"}]},
            "f": {"allOf": [{"type": "number"}, {"minimum": 1}]}
        },
        "additionalProperties": false
    });
    let ok = serde_json::json!({"a": 3, "b": null, "c": [1, 1], "d": 2.5});
    assert!(validate(&root, &root, &ok, "$").is_empty());
    for bad in [
        serde_json::json!({"b": "x"}),
        serde_json::json!({"a": 1.5}),
        serde_json::json!({"a": -1}),
        serde_json::json!({"a": 1, "b": "y"}),
        serde_json::json!({"a": 1, "c": [1, 2]}),
        serde_json::json!({"a": 1, "d": "s"}),
        serde_json::json!({"a": 1, "e": 0}),
        serde_json::json!({"a": 1, "f": 0.5}),
        serde_json::json!([1]),
    ] {
        assert!(
            !validate(&root, &root, &bad, "$").is_empty(),
            "accepted {bad}"
        );
    }
    let dangling = serde_json::json!({"$ref": "#/$defs/none"});
    assert!(!validate(&root, &dangling, &ok, "$").is_empty());
}

/// Keys that hold a dimension or a count wherever they appear: integers (or null).
const INTEGER_KEYS: &[&str] = &[
    "dimension",
    "dim",
    "n_states",
    "states",
    "pairs",
    "count",
    "realizations",
    "dof",
    "degenerate_pairs",
    "size",
    "memory_budget",
];

/// Cross-command conventions the schema states in words (checked on every object):
/// integer dimensions and counts, string `sector`s, no `_err` keys, `microcanonical` of a
/// quench always an object.
fn convention_errors(v: &Value, path: &str, in_quench: bool, errs: &mut Vec<String>) {
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                let p = format!("{path}.{k}");
                if INTEGER_KEYS.contains(&k.as_str()) && !(x.is_u64() || x.is_null()) {
                    // local exponents sit between two dimensions (their geometric mean);
                    // inspect lists the names of the stored initial states as `states`
                    let local = k == "dimension" && path.contains(".local[");
                    let names = k == "states"
                        && x.as_array().is_some_and(|a| a.iter().all(Value::is_string));
                    if !(local || names) {
                        errs.push(format!("{p}: {x:.40} is not an integer"));
                    }
                }
                if k == "sector" && !x.is_string() {
                    errs.push(format!("{p}: not a string"));
                }
                if k.ends_with("_err") {
                    errs.push(format!("{p}: error keys end in _stderr"));
                }
                if in_quench && k == "microcanonical" && !(x.is_object() || x.is_null()) {
                    errs.push(format!("{p}: not the microcanonical object"));
                }
                let q = in_quench
                    || k == "quench"
                    || k == "files" && m.contains_key("schema_version") && path == "$";
                convention_errors(x, &p, q, errs);
            }
        }
        Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                convention_errors(x, &format!("{path}[{i}]"), in_quench, errs);
            }
        }
        _ => {}
    }
}

#[test]
fn every_command_s_json_validates_against_the_schema() {
    // The schema file is the contract of the README (common practice, no source); this
    // checks each command's --json against its own definition and against the whole schema.
    use crate::util::{mixed_field_chains, mixed_field_spec};
    use eigentherm::model::{build_chain, write_file, Reflection};
    let root = schema();
    let dir = tempfile::tempdir().unwrap();
    let files: Vec<String> = mixed_field_chains(dir.path(), &[6, 8])
        .iter()
        .map(|p| p.to_str().unwrap().to_string())
        .collect();
    // a full space stores the basis configurations entanglement needs
    let full = dir.path().join("full6.h5");
    let mut spec = mixed_field_spec(6);
    spec.reflection = Reflection::Ignore;
    write_file(&full, &build_chain(&spec).unwrap()).unwrap();
    let out = dir.path().join("study");
    let (a, b) = (files[0].as_str(), files[1].as_str());
    let quench = ["--state", "product:x+", "--times", "lin:0:5:6"];
    let mut runs: Vec<(&str, Vec<&str>)> = vec![
        ("levels", vec!["levels", a, b]),
        (
            "diagonal",
            vec!["diagonal", a, b, "--observable", "sz_site"],
        ),
        (
            "offdiagonal",
            vec!["offdiagonal", a, b, "--observable", "sx_site"],
        ),
        ("gauge", vec!["gauge", a, "--perturbation", "sz_site"]),
        ("entanglement", vec!["entanglement", full.to_str().unwrap()]),
        ("inspect", vec!["inspect", a, b]),
        ("scaling", vec!["scaling", a, b, "--observable", "sz_site"]),
    ];
    let mut q = vec!["quench", a, b, "--observable", "sz_site"];
    q.extend(quench);
    runs.push(("quench", q));
    let mut st = vec![
        "study",
        a,
        b,
        "--observable",
        "sz_site",
        "--out",
        out.to_str().unwrap(),
    ];
    st.extend(quench);
    runs.push(("study", st));
    for (def, mut args) in runs {
        args.push("--json");
        let (code, stdout, err) = crate::util::run_binary(&args);
        assert_eq!(code, Some(0), "{def}: {err}");
        let mut docs = vec![(
            def.to_string(),
            serde_json::from_str::<Value>(&stdout).unwrap(),
        )];
        if def == "study" {
            let file = std::fs::read_to_string(out.join("results.json")).unwrap();
            docs.push(("results.json".into(), serde_json::from_str(&file).unwrap()));
        }
        for (what, doc) in docs {
            assert_eq!(doc["schema_version"], 2, "{what}");
            let own = serde_json::json!({ "$ref": format!("#/$defs/{def}") });
            let errs = validate(&root, &own, &doc, "$");
            assert!(
                errs.is_empty(),
                "{what}: {:#?}",
                &errs[..errs.len().min(10)]
            );
            assert!(validate(&root, &root, &doc, "$").is_empty(), "{what}");
            let mut conv = Vec::new();
            convention_errors(&doc, "$", def == "quench", &mut conv);
            assert!(
                conv.is_empty(),
                "{what}: {:#?}",
                &conv[..conv.len().min(10)]
            );
        }
    }
}
