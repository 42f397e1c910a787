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
        for bad in ["shared/contract", "identify-api.md"] {
            assert!(
                !text.contains(bad),
                "{} mentions {bad}, which a user who clones the repository does not have; point at docs/api.md",
                f.display()
            );
        }
    }
}
