//! The user's reference (`docs/api.md`) and the OpenAPI description
//! (`GET /api/v1/openapi.json`) against the code.
//!
//! The list of routes comes from the source itself: every `.route("…", …)`
//! call under `src/` is parsed, with its methods, and each one is then
//! probed on the real router (a method it does not take must answer 405),
//! so a parse that went wrong fails here too. A router built any other way
//! (`route_service`, `nest`, …) fails the test until this file learns it,
//! so a route cannot be added without the documentation noticing.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

use axum::body::Body;
use axum::http::{Method, Request, StatusCode};
use basal::base::vocab::{self, Vocab};

use crate::helpers::TestApp;

const ROOT: &str = env!("CARGO_MANIFEST_DIR");

fn doc() -> String {
    std::fs::read_to_string(Path::new(ROOT).join("docs/api.md")).expect("docs/api.md exists")
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("src/ can be listed") {
        let path = entry.expect("a directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The text with `//` comments blanked (string literals kept), so a
/// commented-out route is not taken for one.
fn without_line_comments(src: &str) -> String {
    let mut out = String::with_capacity(src.len());
    for line in src.lines() {
        let mut in_str = false;
        let mut prev = ' ';
        let mut cut = line.len();
        for (i, ch) in line.char_indices() {
            match ch {
                '"' if prev != '\\' => in_str = !in_str,
                '/' if !in_str && prev == '/' => {
                    cut = i - 1;
                    break;
                }
                _ => {}
            }
            prev = if prev == '\\' && ch == '\\' { ' ' } else { ch };
        }
        out.push_str(&line[..cut]);
        out.push('\n');
    }
    out
}

/// The method-router expression after the path: text up to the `)` that
/// closes the `.route(` call.
fn call_argument(rest: &str) -> &str {
    let mut depth = 0i32;
    let mut in_str = false;
    let mut prev = ' ';
    for (i, ch) in rest.char_indices() {
        match ch {
            '"' if prev != '\\' => in_str = !in_str,
            '(' | '[' | '{' if !in_str => depth += 1,
            ')' | ']' | '}' if !in_str => {
                if depth == 0 {
                    return &rest[..i];
                }
                depth -= 1;
            }
            _ => {}
        }
        prev = ch;
    }
    panic!(
        "unclosed .route( call near: {}",
        &rest[..rest.len().min(80)]
    );
}

/// Functions called at the top level of an expression:
/// `post(identify).layer(DefaultBodyLimit::max(N))` gives `post`, `layer`.
fn top_level_calls(expr: &str) -> Vec<String> {
    let mut calls = Vec::new();
    let mut depth = 0i32;
    let mut ident = String::new();
    for ch in expr.chars() {
        match ch {
            '(' => {
                if depth == 0 && !ident.is_empty() {
                    calls.push(ident.clone());
                }
                ident.clear();
                depth += 1;
            }
            ')' => depth -= 1,
            c if c.is_alphanumeric() || c == '_' => ident.push(c),
            _ => ident.clear(),
        }
    }
    calls
}

/// Every route the source registers: path -> methods, plus the prefixes
/// mounted with `nest_service` (the stylesheets).
struct Routes {
    routes: BTreeMap<String, BTreeSet<String>>,
    mounted: Vec<String>,
}

fn routes_from_source() -> Routes {
    let mut files = Vec::new();
    rust_files(&Path::new(ROOT).join("src"), &mut files);
    files.sort();
    let mut routes: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    let mut mounted = Vec::new();
    for file in &files {
        let src = without_line_comments(&std::fs::read_to_string(file).expect("readable source"));
        let name = file
            .strip_prefix(ROOT)
            .unwrap_or(file)
            .display()
            .to_string();
        for unknown in [
            ".route_service(",
            ".nest(",
            ".fallback_service(",
            ".route_layer(",
        ] {
            assert!(
                !src.contains(unknown),
                "{name} builds routes with {unknown}: teach tests/api/docs.rs to read it, so its routes are checked against docs/api.md"
            );
        }
        for (at, _) in src.match_indices(".nest_service(") {
            let rest = src[at + ".nest_service(".len()..].trim_start();
            let path = rest
                .strip_prefix('"')
                .and_then(|r| r.split_once('"'))
                .map(|(p, _)| p.to_string())
                .unwrap_or_else(|| panic!("{name}: .nest_service( without a literal path"));
            mounted.push(path);
        }
        for (at, _) in src.match_indices(".route(") {
            let rest = src[at + ".route(".len()..].trim_start();
            let Some((path, after)) = rest.strip_prefix('"').and_then(|r| r.split_once('"')) else {
                panic!(
                    "{name}: a .route( call without a literal path: {}",
                    &rest[..rest.len().min(60)]
                )
            };
            let after = after
                .trim_start()
                .strip_prefix(',')
                .unwrap_or_else(|| panic!("{name}: .route(\"{path}\" without a method router"));
            let methods = routes.entry(path.to_string()).or_default();
            for call in top_level_calls(call_argument(after)) {
                match call.as_str() {
                    "get" | "post" | "put" | "delete" | "patch" => {
                        methods.insert(call.to_ascii_uppercase());
                    }
                    "layer" => {}
                    other => panic!(
                        "{name}: route {path} uses {other}(…), which tests/api/docs.rs does not know; teach it"
                    ),
                }
            }
            assert!(!methods.is_empty(), "{name}: route {path} has no method");
        }
    }
    assert!(
        routes.contains_key("/api/v1/identify") && routes.len() > 20,
        "the route parser found too little: {routes:?}"
    );
    Routes { routes, mounted }
}

/// A concrete URI for a route pattern.
fn concrete(path: &str) -> String {
    path.split('/')
        .map(|seg| {
            if seg.starts_with('{') {
                "00000000-0000-4000-8000-000000000000"
            } else {
                seg
            }
        })
        .collect::<Vec<_>>()
        .join("/")
}

#[tokio::test]
async fn every_parsed_route_is_registered_on_the_router_with_those_methods() {
    // Arrange
    let app = TestApp::new().await;
    let found = routes_from_source();
    // Act / Assert: a method the route does not take is 405, which only a
    // registered path answers (an unknown one is the 404 page).
    for (path, methods) in &found.routes {
        let unused = ["PATCH", "PUT", "DELETE", "POST", "GET"]
            .into_iter()
            .find(|m| !methods.contains(*m))
            .unwrap_or_else(|| panic!("{path} takes every method"));
        let req = Request::builder()
            .method(Method::from_bytes(unused.as_bytes()).expect("a method"))
            .uri(concrete(path))
            .body(Body::empty())
            .expect("a request");
        let r = app.send(req).await;
        assert_eq!(
            r.status,
            StatusCode::METHOD_NOT_ALLOWED,
            "{unused} {path}: the source registers it for {methods:?}, so another method must be 405"
        );
    }
}

#[test]
fn the_reference_lists_every_route_of_the_router() {
    let doc = doc();
    let found = routes_from_source();
    let mut missing = Vec::new();
    for (path, methods) in &found.routes {
        for m in methods {
            let needle = format!("`{m} {path}`");
            if !doc.contains(&needle) {
                missing.push(needle);
            }
        }
    }
    for prefix in &found.mounted {
        let needle = format!("`GET {prefix}/");
        if !doc.contains(&needle) {
            missing.push(format!("{needle}…`"));
        }
    }
    assert!(
        missing.is_empty(),
        "docs/api.md does not document these routes: {missing:?}"
    );
}

#[test]
fn the_route_index_of_the_reference_lists_only_routes_that_exist() {
    let doc = doc();
    let found = routes_from_source();
    let index = doc
        .split("## Route index")
        .nth(1)
        .expect("docs/api.md has a Route index");
    let mut rows = 0;
    for line in index.lines().filter(|l| l.starts_with("| `")) {
        let cell = line[3..].split('`').next().unwrap_or("");
        let (method, path) = cell.split_once(' ').unwrap_or(("", cell));
        rows += 1;
        let known = found.routes.get(path).is_some_and(|ms| ms.contains(method))
            || (method == "GET"
                && found
                    .mounted
                    .iter()
                    .any(|p| path.starts_with(&format!("{p}/"))));
        assert!(
            known,
            "docs/api.md's Route index lists {cell}, which the router does not have"
        );
    }
    let total: usize =
        found.routes.values().map(BTreeSet::len).sum::<usize>() + found.mounted.len();
    assert_eq!(
        rows, total,
        "the Route index should have one row per route and method"
    );
}

/// Every `Variant = "wire": "label"` of each `vocab!` block in
/// `src/base/vocab.rs`, by enum name.
fn vocab_from_source() -> BTreeMap<String, Vec<String>> {
    let src = std::fs::read_to_string(Path::new(ROOT).join("src/base/vocab.rs"))
        .expect("src/base/vocab.rs");
    let src = without_line_comments(&src);
    let mut out = BTreeMap::new();
    for block in src.split("vocab! {").skip(1) {
        let body = block.split("\n}\n").next().unwrap_or(block);
        let name = body
            .lines()
            .map(str::trim)
            .find(|l| !l.is_empty() && !l.starts_with('#'))
            .and_then(|l| l.split_whitespace().next())
            .expect("an enum name")
            .to_string();
        let values: Vec<String> = body
            .lines()
            .filter_map(|l| l.split_once("= \""))
            .filter_map(|(_, rest)| rest.split_once("\":").map(|(wire, _)| wire.to_string()))
            .collect();
        assert!(!values.is_empty(), "vocab {name} has no values");
        out.insert(name, values);
    }
    out
}

fn wires<T: Vocab>() -> Vec<String> {
    T::ALL.iter().map(|v| v.as_str().to_string()).collect()
}

#[test]
fn the_reference_explains_every_vocabulary_value_in_a_table() {
    let doc = doc();
    let parsed = vocab_from_source();
    // The parse is checked against the enums themselves, so it cannot
    // quietly read nothing.
    let known: [(&str, Vec<String>); 13] = [
        ("Cleavage", wires::<vocab::Cleavage>()),
        ("Tenacity", wires::<vocab::Tenacity>()),
        ("Colour", wires::<vocab::Colour>()),
        ("Luster", wires::<vocab::Luster>()),
        ("Habit", wires::<vocab::Habit>()),
        ("Feel", wires::<vocab::Feel>()),
        ("WetBehaviour", wires::<vocab::WetBehaviour>()),
        ("Streak", wires::<vocab::Streak>()),
        ("Diaphaneity", wires::<vocab::Diaphaneity>()),
        ("Setting", wires::<vocab::Setting>()),
        ("YesNo", wires::<vocab::YesNo>()),
        ("Group", wires::<vocab::Group>()),
        ("Hazard", wires::<vocab::Hazard>()),
    ];
    for (name, values) in &known {
        assert_eq!(parsed.get(*name), Some(values), "vocab.rs parse of {name}");
    }
    let mut missing = Vec::new();
    for (name, values) in &parsed {
        for v in values {
            if !doc.contains(&format!("| `{v}` |")) {
                missing.push(format!("{name}::{v}"));
            }
        }
    }
    for p in basal::engine::Property::ALL {
        let v = serde_json::to_value(p).expect("a property serialises");
        let v = v.as_str().expect("as a string");
        if !doc.contains(&format!("| `{v}` |")) {
            missing.push(format!("Property::{v}"));
        }
    }
    for id in basal::base::REQUIRED_IDS {
        if !doc.contains(&format!("`{id}`")) {
            missing.push(format!("entry id {id}"));
        }
    }
    assert!(
        missing.is_empty(),
        "docs/api.md lacks a table row (| `value` | meaning |) for: {missing:?}"
    );
}

#[test]
fn the_reference_lists_every_export_column_and_start_up_option() {
    let doc = doc();
    for col in basal::samples::CSV_COLUMNS {
        assert!(
            doc.contains(&format!("| `{col}` |")),
            "docs/api.md lacks the CSV column {col}"
        );
    }
    for opt in [
        "`--listen ADDR`",
        "`BASAL_LISTEN`",
        "`--db PATH`",
        "`BASAL_DB`",
        "`basal serve`",
        "`basal demo`",
        "`basal backup PATH`",
        "`basal import FILE",
        "`--name NAME`",
        "`--scheme SCHEME`",
        "`--time-zone NAME`",
        "`BASAL_TZ`",
        "`--public-host NAME`",
        "`BASAL_PUBLIC_HOST`",
        "`--allow-anyone-on-the-network`",
        "`BASAL_ALLOW_ANYONE_ON_THE_NETWORK`",
    ] {
        assert!(doc.contains(opt), "docs/api.md lacks {opt}");
    }
}

#[test]
fn no_file_points_users_at_a_document_outside_the_repository() {
    let mut files = Vec::new();
    rust_files(&Path::new(ROOT).join("src"), &mut files);
    files.push(Path::new(ROOT).join("README.md"));
    files.push(Path::new(ROOT).join("DEVELOPERS.md"));
    files.push(Path::new(ROOT).join("src/base/base.toml"));
    for f in files {
        let text = std::fs::read_to_string(&f).expect("readable");
        for bad in ["shared/contract", "identify-api.md", "see the API contract"] {
            assert!(
                !text.contains(bad),
                "{} mentions {bad}, which a user who clones the repository does not have; point at docs/api.md",
                f.display()
            );
        }
    }
}

// ---------------------------------------------------------------------------
// The OpenAPI description

async fn openapi(app: &TestApp) -> serde_json::Value {
    let r = app.get("/api/v1/openapi.json").await;
    assert_eq!(r.status, StatusCode::OK);
    r.json()
}

#[tokio::test]
async fn the_openapi_description_lists_exactly_the_api_routes_of_the_router() {
    // Arrange
    let app = TestApp::new().await;
    let found = routes_from_source();
    // Act
    let doc = openapi(&app).await;
    // Assert
    assert_eq!(doc["openapi"], "3.1.0");
    let paths = doc["paths"].as_object().expect("paths");
    for (path, methods) in found.routes.iter().filter(|(p, _)| p.starts_with("/api/")) {
        for m in methods {
            assert!(
                paths
                    .get(path)
                    .and_then(|item| item.get(m.to_ascii_lowercase()))
                    .is_some(),
                "{m} {path} is served but missing from GET /api/v1/openapi.json (src/web/openapi.rs)"
            );
        }
    }
    for (path, item) in paths {
        for method in item.as_object().expect("a path item").keys() {
            let m = method.to_ascii_uppercase();
            assert!(
                found.routes.get(path).is_some_and(|ms| ms.contains(&m)),
                "the OpenAPI description lists {m} {path}, which the router does not serve"
            );
        }
    }
}

#[tokio::test]
async fn the_openapi_description_is_get_only_with_the_usual_headers() {
    let app = TestApp::new().await;
    for method in [Method::POST, Method::PUT, Method::DELETE] {
        let req = Request::builder()
            .method(method.clone())
            .uri("/api/v1/openapi.json")
            .header("content-type", "application/json")
            .body(Body::from("{}"))
            .expect("a request");
        assert_eq!(
            app.send(req).await.status,
            StatusCode::METHOD_NOT_ALLOWED,
            "{method} /api/v1/openapi.json"
        );
    }
    let req = Request::get("/api/v1/openapi.json")
        .body(Body::empty())
        .expect("a request");
    let r = app.send(req).await;
    assert_eq!(
        r.headers.get("content-type").and_then(|v| v.to_str().ok()),
        Some("application/json")
    );
    assert!(r.headers.contains_key("content-security-policy"));
    assert!(r.headers.contains_key("x-content-type-options"));
}

/// A JSON Schema (2020-12) subset validator: enough for the description
/// basal serves. A keyword it does not know fails the test, so a schema can
/// never pass by being ignored; `pattern` and `format` are not checked.
struct Validator<'a> {
    schemas: &'a serde_json::Map<String, serde_json::Value>,
}

impl Validator<'_> {
    fn check(
        &self,
        schema: &serde_json::Value,
        v: &serde_json::Value,
        at: &str,
        errs: &mut Vec<String>,
    ) {
        use serde_json::Value;
        let Some(obj) = schema.as_object() else {
            if schema == &Value::Bool(false) {
                errs.push(format!("{at}: nothing is allowed here"));
            }
            return;
        };
        for (k, s) in obj {
            match k.as_str() {
                "$ref" => {
                    let name = s
                        .as_str()
                        .and_then(|r| r.strip_prefix("#/components/schemas/"))
                        .unwrap_or_else(|| panic!("{at}: unsupported $ref {s}"));
                    let target = self
                        .schemas
                        .get(name)
                        .unwrap_or_else(|| panic!("{at}: $ref to missing schema {name}"));
                    self.check(target, v, at, errs);
                }
                "type" => {
                    let types: Vec<&str> = match s {
                        Value::String(t) => vec![t.as_str()],
                        Value::Array(ts) => ts.iter().filter_map(Value::as_str).collect(),
                        _ => panic!("{at}: bad type {s}"),
                    };
                    let ok = types.iter().any(|t| match *t {
                        "null" => v.is_null(),
                        "boolean" => v.is_boolean(),
                        "object" => v.is_object(),
                        "array" => v.is_array(),
                        "string" => v.is_string(),
                        "number" => v.is_number(),
                        "integer" => v.is_i64() || v.is_u64(),
                        other => panic!("{at}: unknown type {other}"),
                    });
                    if !ok {
                        errs.push(format!("{at}: {v} is not of type {s}"));
                    }
                }
                "enum" => {
                    if !s.as_array().expect("enum is a list").contains(v) {
                        errs.push(format!("{at}: {v} is not one of {s}"));
                    }
                }
                "properties" => {
                    if let Some(o) = v.as_object() {
                        for (name, sub) in s.as_object().expect("properties") {
                            if let Some(x) = o.get(name) {
                                self.check(sub, x, &format!("{at}.{name}"), errs);
                            }
                        }
                    }
                }
                "required" => {
                    if let Some(o) = v.as_object() {
                        for name in s
                            .as_array()
                            .expect("required")
                            .iter()
                            .filter_map(Value::as_str)
                        {
                            if !o.contains_key(name) {
                                errs.push(format!("{at}: required field {name} is missing"));
                            }
                        }
                    }
                }
                "additionalProperties" => {
                    if let Some(o) = v.as_object() {
                        let known = obj.get("properties").and_then(Value::as_object);
                        for (name, x) in o {
                            if known.is_some_and(|k| k.contains_key(name)) {
                                continue;
                            }
                            match s {
                                Value::Bool(false) => {
                                    errs.push(format!("{at}: unknown field {name}"))
                                }
                                Value::Bool(true) => {}
                                sub => self.check(sub, x, &format!("{at}.{name}"), errs),
                            }
                        }
                    }
                }
                "minProperties" => {
                    if let Some(o) = v.as_object()
                        && (o.len() as u64) < s.as_u64().expect("a count")
                    {
                        errs.push(format!("{at}: fewer than {s} fields"));
                    }
                }
                "items" => {
                    if let Some(a) = v.as_array() {
                        for (i, x) in a.iter().enumerate() {
                            self.check(s, x, &format!("{at}[{i}]"), errs);
                        }
                    }
                }
                "minItems" | "maxItems" => {
                    if let Some(a) = v.as_array() {
                        let n = s.as_u64().expect("a count");
                        let len = a.len() as u64;
                        if (k == "minItems" && len < n) || (k == "maxItems" && len > n) {
                            errs.push(format!("{at}: {len} items breaks {k} {n}"));
                        }
                    }
                }
                "minLength" | "maxLength" => {
                    if let Some(t) = v.as_str() {
                        let n = s.as_u64().expect("a length");
                        let len = t.chars().count() as u64;
                        if (k == "minLength" && len < n) || (k == "maxLength" && len > n) {
                            errs.push(format!("{at}: length {len} breaks {k} {n}"));
                        }
                    }
                }
                "minimum" | "maximum" | "exclusiveMinimum" | "exclusiveMaximum" => {
                    if let Some(x) = v.as_f64() {
                        let b = s.as_f64().expect("a bound");
                        let ok = match k.as_str() {
                            "minimum" => x >= b,
                            "maximum" => x <= b,
                            "exclusiveMinimum" => x > b,
                            _ => x < b,
                        };
                        if !ok {
                            errs.push(format!("{at}: {x} breaks {k} {b}"));
                        }
                    }
                }
                "oneOf" | "anyOf" => {
                    let passing = s
                        .as_array()
                        .expect("a list of schemas")
                        .iter()
                        .filter(|sub| {
                            let mut e = Vec::new();
                            self.check(sub, v, at, &mut e);
                            e.is_empty()
                        })
                        .count();
                    if (k == "oneOf" && passing != 1) || (k == "anyOf" && passing == 0) {
                        errs.push(format!(
                            "{at}: {v} matches {passing} of the {k} alternatives"
                        ));
                    }
                }
                "allOf" => {
                    for sub in s.as_array().expect("a list of schemas") {
                        self.check(sub, v, at, errs);
                    }
                }
                "description" | "format" | "title" | "default" | "example" | "examples"
                | "pattern" | "deprecated" | "readOnly" | "writeOnly" => {}
                other => {
                    panic!("{at}: the test's validator does not know the keyword {other}; teach it")
                }
            }
        }
    }
}

fn validate(doc: &serde_json::Value, schema: &str, value: &serde_json::Value) -> Vec<String> {
    let schemas = doc["components"]["schemas"]
        .as_object()
        .expect("components.schemas");
    let v = Validator { schemas };
    let mut errs = Vec::new();
    v.check(
        schemas
            .get(schema)
            .unwrap_or_else(|| panic!("no schema {schema}")),
        value,
        "$",
        &mut errs,
    );
    errs
}

#[track_caller]
fn assert_valid(doc: &serde_json::Value, schema: &str, value: &serde_json::Value) {
    let errs = validate(doc, schema, value);
    assert!(errs.is_empty(), "{value} against {schema}: {errs:?}");
}

/// The JSON after `-d '` in the README's identify example.
fn readme_identify_example() -> serde_json::Value {
    let readme = std::fs::read_to_string(Path::new(ROOT).join("README.md")).expect("README.md");
    let at = readme
        .find("/api/v1/identify -H")
        .expect("the README has its identify example");
    let body = readme[at..]
        .split("-d '")
        .nth(1)
        .and_then(|r| r.split('\'').next())
        .expect("the example has a -d '…' body");
    serde_json::from_str(body).expect("the README's example body is JSON")
}

#[tokio::test]
async fn the_readme_identify_example_and_its_answer_validate_against_the_description() {
    // Arrange
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    let example = readme_identify_example();
    // Act
    let r = app.identify(&example.to_string()).await;
    // Assert
    assert_valid(&doc, "Observations", &example);
    assert_eq!(r.status, StatusCode::OK);
    assert_valid(&doc, "Identification", &r.json());
    // A full set of observations, weighings included, validates too.
    let full = serde_json::json!({
        "cleavage": "one_perfect", "tenacity": "elastic", "hardness": {"min": 2.5, "max": 3},
        "scratch": {"fingernail": false, "copper": true, "steel": true}, "scratches_glass": false,
        "colour": ["silvery", "colourless"], "luster": "pearly", "habit": "books", "feel": "smooth",
        "wet_behaviour": "unchanged", "streak": "white", "diaphaneity": "transparent",
        "specific_gravity": {"dry_mass_g": 12.5, "submerged_mass_g": 8.1, "water_temp_c": 18},
        "magnetic": false, "acid_reaction": null, "setting": "pegmatite"
    });
    assert_valid(&doc, "Observations", &full);
    let r = app.identify(&full.to_string()).await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_valid(&doc, "Identification", &r.json());
}

#[tokio::test]
async fn what_the_service_refuses_the_description_refuses_too() {
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    for bad in [
        r#"{"cleavage":"perfect"}"#,
        r#"{"lustre":"pearly"}"#,
        r#"{"hardness":{"min":11}}"#,
        r#"{"hardness":{}}"#,
        r#"{"colour":[]}"#,
        r#"{"specific_gravity":9.5}"#,
        r#"{"scratch":{"knife":true}}"#,
        r#"[]"#,
    ] {
        let value: serde_json::Value = serde_json::from_str(bad).expect("JSON");
        assert!(
            !validate(&doc, "Observations", &value).is_empty(),
            "the description accepts {bad}"
        );
        let r = app.identify(bad).await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{bad}");
        assert_valid(&doc, "ErrorBody", &r.json());
    }
    let r = app
        .post_json("/api/v1/samples", r#"{"sample_code":"X-1","colour":"red"}"#)
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        !validate(
            &doc,
            "SampleInput",
            &serde_json::json!({"sample_code": "X-1", "colour": "red"})
        )
        .is_empty()
    );
}

#[tokio::test]
async fn a_sample_body_and_every_sample_answer_validate_against_the_description() {
    // Arrange: a sample with every field a client may send.
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    let body = serde_json::json!({
        "project": "default",
        "sample_code": "RV-0042",
        "collected_on": "2026-07-14",
        "collector": "Field party B",
        "station": "Ridge cut 3",
        "latitude": 46.512,
        "longitude": 9.331,
        "coordinate_uncertainty_m": 8.5,
        "setting": "greenschist",
        "lithology": "green phyllite",
        "observations": readme_identify_example(),
        "field_id": "chlorite",
        "notes": "flakes on a joint face",
        "edited_by": "logger 2"
    });
    assert_valid(&doc, "SampleInput", &body);
    // Act / Assert: create, read, list, update, revisions, delete, restore.
    let r = app.post_json("/api/v1/samples", &body.to_string()).await;
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    let rec = r.json();
    assert_valid(&doc, "SampleRecord", &rec);
    let id = rec["id"].as_str().expect("an id").to_string();
    let got = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_valid(&doc, "SampleRecord", &got);
    assert_valid(&doc, "SamplePage", &app.get("/api/v1/samples").await.json());
    // A fetched record sent back whole is a valid update body, and not a
    // valid create body (it carries the fields the service sets).
    let mut back = got.clone();
    back["notes"] = serde_json::json!("re-read under the lens");
    assert_valid(&doc, "SampleReplace", &back);
    assert!(!validate(&doc, "SampleInput", &back).is_empty());
    let r = app
        .put_json(&format!("/api/v1/samples/{id}"), &back.to_string())
        .await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_valid(&doc, "SampleRecord", &r.json());
    let r = app
        .put_json(&format!("/api/v1/samples/{id}"), &back.to_string())
        .await;
    assert_eq!(r.status, StatusCode::CONFLICT, "a stale edit");
    assert_valid(&doc, "StaleBody", &r.json());
    assert_valid(
        &doc,
        "RevisionList",
        &app.get(&format!("/api/v1/samples/{id}/revisions"))
            .await
            .json(),
    );
    assert_valid(
        &doc,
        "SampleRecord",
        &app.delete(&format!("/api/v1/samples/{id}")).await.json(),
    );
    let r = app
        .post_json(&format!("/api/v1/samples/{id}/restore"), "")
        .await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_valid(&doc, "SampleRecord", &r.json());
    let projects = app.get("/api/v1/projects").await.json();
    assert!(!projects["projects"].as_array().expect("a list").is_empty());
    assert_valid(&doc, "ProjectList", &projects);
    assert_valid(
        &doc,
        "MineralList",
        &app.get("/api/v1/minerals").await.json(),
    );
    assert_valid(
        &doc,
        "MineralOne",
        &app.get("/api/v1/minerals/talc").await.json(),
    );
    assert_valid(
        &doc,
        "ErrorBody",
        &app.get("/api/v1/minerals/no_such").await.json(),
    );
}

#[tokio::test]
async fn every_reference_in_the_description_resolves() {
    fn walk(
        v: &serde_json::Value,
        schemas: &serde_json::Map<String, serde_json::Value>,
        refs: &mut usize,
    ) {
        match v {
            serde_json::Value::Object(o) => {
                if let Some(r) = o.get("$ref").and_then(|r| r.as_str()) {
                    *refs += 1;
                    let name = r
                        .strip_prefix("#/components/schemas/")
                        .unwrap_or_else(|| panic!("a reference outside the components: {r}"));
                    assert!(schemas.contains_key(name), "$ref {r} names no schema");
                }
                o.values().for_each(|x| walk(x, schemas, refs));
            }
            serde_json::Value::Array(a) => a.iter().for_each(|x| walk(x, schemas, refs)),
            _ => {}
        }
    }
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    let schemas = doc["components"]["schemas"].as_object().expect("schemas");
    let mut refs = 0;
    walk(&doc, schemas, &mut refs);
    assert!(refs > 20, "only {refs} references");
}

#[tokio::test]
async fn a_create_with_a_field_the_service_sets_is_refused_by_the_service_and_the_description() {
    // Arrange
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    for (field, value) in [
        (
            "id",
            serde_json::json!("00000000-0000-4000-8000-000000000000"),
        ),
        ("created_at", serde_json::json!("2026-01-01T00:00:00Z")),
        ("updated_at", serde_json::json!("2026-01-01T00:00:00Z")),
        ("revision", serde_json::json!(1)),
        ("identification", serde_json::json!({})),
        ("base_version", serde_json::json!("x")),
        ("deleted", serde_json::json!(false)),
    ] {
        let mut body = serde_json::json!({"sample_code": format!("SV-{field}")});
        body[field] = value;
        // Act
        let r = app.post_json("/api/v1/samples", &body.to_string()).await;
        // Assert
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{body}");
        assert_eq!(r.json()["error"]["field"], field, "{body}");
        assert_valid(&doc, "ErrorBody", &r.json());
        assert!(
            !validate(&doc, "SampleInput", &body).is_empty(),
            "the description accepts {body}"
        );
        // null is "left out", for the service and the description alike.
        body[field] = serde_json::Value::Null;
        assert_valid(&doc, "SampleInput", &body);
        let r = app.post_json("/api/v1/samples", &body.to_string()).await;
        assert_eq!(r.status, StatusCode::CREATED, "{body}: {}", r.text());
    }
    // A read-only field that differs on PUT is refused by name.
    let rec = app
        .post_json("/api/v1/samples", r#"{"sample_code":"SV-put"}"#)
        .await
        .json();
    let id = rec["id"].as_str().expect("an id").to_string();
    let mut back = rec.clone();
    back["created_at"] = serde_json::json!("2001-01-01T00:00:00Z");
    assert_valid(&doc, "SampleReplace", &back);
    let r = app
        .put_json(&format!("/api/v1/samples/{id}"), &back.to_string())
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", r.text());
    assert_eq!(r.json()["error"]["field"], "created_at");
    // Without a revision the description and the service both refuse it.
    let mut no_rev = rec.clone();
    no_rev
        .as_object_mut()
        .expect("an object")
        .remove("revision");
    assert!(!validate(&doc, "SampleReplace", &no_rev).is_empty());
    let r = app
        .put_json(&format!("/api/v1/samples/{id}"), &no_rev.to_string())
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.json()["error"]["field"], "revision");
}

#[tokio::test]
async fn a_project_edit_body_and_its_answers_validate_against_the_description() {
    // Arrange
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    let got = app.get("/api/v1/projects/default").await;
    assert_eq!(got.status, StatusCode::OK);
    let got = got.json();
    assert_valid(&doc, "Project", &got);
    // Act: the fetched project sent back with a new name and scheme.
    let mut body = got.clone();
    body["name"] = serde_json::json!("Ridge survey");
    body["code_scheme"] = serde_json::json!("RS-{yy}-{seq:3}");
    assert_valid(&doc, "ProjectInput", &body);
    let r = app
        .put_json("/api/v1/projects/default", &body.to_string())
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_valid(&doc, "Project", &r.json());
    assert_eq!(r.json()["name"], "Ridge survey");
    assert_valid(
        &doc,
        "ProjectList",
        &app.get("/api/v1/projects").await.json(),
    );
    let r = app.get("/api/v1/projects/nope").await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    assert_valid(&doc, "ErrorBody", &r.json());
    // What the service refuses, the description refuses too.
    for bad in [
        serde_json::json!({"name": "A"}),
        serde_json::json!({"code_scheme": "{seq:4}"}),
        serde_json::json!({"name": "A", "code_scheme": "{seq:4}", "colour": "red"}),
        serde_json::json!({"name": 5, "code_scheme": "{seq:4}"}),
        serde_json::json!({"name": "", "code_scheme": "{seq:4}"}),
        serde_json::json!({"name": "A", "code_scheme": "x".repeat(41)}),
        serde_json::json!([]),
    ] {
        assert!(
            !validate(&doc, "ProjectInput", &bad).is_empty(),
            "the description accepts {bad}"
        );
        let r = app
            .put_json("/api/v1/projects/default", &bad.to_string())
            .await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{bad}");
        assert_valid(&doc, "ErrorBody", &r.json());
    }
    // A read-only field sent changed is refused by name.
    let mut changed = got.clone();
    changed["code"] = serde_json::json!("other");
    let r = app
        .put_json("/api/v1/projects/default", &changed.to_string())
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.json()["error"]["field"], "code");
}

#[tokio::test]
async fn every_write_of_the_description_names_the_refusals_of_the_edge() {
    // The layers in front of the handlers answer these whatever the route;
    // the description must say so for each operation.
    let app = TestApp::new().await;
    let doc = openapi(&app).await;
    for (path, item) in doc["paths"].as_object().expect("paths") {
        for (method, op) in item.as_object().expect("a path item") {
            let responses = op["responses"].as_object().expect("responses");
            let mut expected = vec!["421", "408", "500"];
            if method != "get" {
                expected.extend(["403", "413", "415"]);
            }
            for status in expected {
                assert!(
                    responses.contains_key(status),
                    "{method} {path} does not list {status}"
                );
            }
        }
    }
    // And the service does answer them: a cross-site write is 403 with
    // the error shape, a text body 415.
    let req = Request::put("/api/v1/projects/default")
        .header("content-type", "application/json")
        .header("sec-fetch-site", "cross-site")
        .body(Body::from(r#"{"name":"A","code_scheme":"{seq:4}"}"#))
        .expect("a request");
    let r = app.send(req).await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
    assert_valid(&doc, "ErrorBody", &r.json());
    let message = r.json()["error"]["message"]
        .as_str()
        .expect("a message")
        .to_string();
    assert!(
        message.contains("another site") && !message.contains("  "),
        "the refusal reads as one sentence: {message:?}"
    );
    let req = Request::put("/api/v1/projects/default")
        .header("content-type", "text/plain")
        .body(Body::from(r#"{"name":"A","code_scheme":"{seq:4}"}"#))
        .expect("a request");
    let r = app.send(req).await;
    assert_eq!(r.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    assert_valid(&doc, "ErrorBody", &r.json());
    // A list parameter given twice is 400, as the description says.
    let r = app.get("/api/v1/samples?limit=1&limit=2").await;
    assert_eq!(r.status, StatusCode::BAD_REQUEST);
    assert_valid(&doc, "ErrorBody", &r.json());
    assert!(
        doc["paths"]["/api/v1/samples"]["get"]["responses"]
            .get("400")
            .is_some()
    );
}
