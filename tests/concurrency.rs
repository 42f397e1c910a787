//! Thirty-two writers at once against one SQLite file: no "database is
//! locked", no lost write, and optimistic concurrency refuses stale edits
//! instead of overwriting them.

use std::sync::Arc;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use http_body_util::BodyExt;
use serde_json::{Value, json};
use tower::ServiceExt;

const WRITERS: usize = 32;
const CREATES_EACH: usize = 8;

async fn app() -> (axum::Router, tempfile::TempDir) {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("busy.sqlite");
    let db = basal::store::open(&path).await.expect("open");
    let state = basal::web::AppState {
        db,
        engine: basal::engine::Engine::builtin(),
        config: Arc::new(basal::cli::Config {
            listen: "127.0.0.1:0".parse().expect("addr"),
            db: path,
            ..Default::default()
        }),
    };
    (basal::web::app(state), dir)
}

async fn call(
    app: &axum::Router,
    method: &str,
    uri: &str,
    body: Option<Value>,
) -> (StatusCode, Value) {
    let mut b = Request::builder().method(method).uri(uri);
    if body.is_some() {
        b = b.header(header::CONTENT_TYPE, "application/json");
    }
    let req = b
        .body(body.map_or_else(Body::empty, |v| Body::from(v.to_string())))
        .expect("request");
    let resp = app.clone().oneshot(req).await.expect("infallible");
    let status = resp.status();
    let bytes = resp.into_body().collect().await.expect("body").to_bytes();
    let v = serde_json::from_slice(&bytes).unwrap_or(Value::Null);
    (status, v)
}

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn thirty_two_concurrent_writers_lose_nothing() {
    // Arrange: one shared record every writer will also edit.
    let (app, _dir) = app().await;
    let (s, shared) = call(
        &app,
        "POST",
        "/api/v1/samples",
        Some(json!({"sample_code": "SHARED", "notes": ""})),
    )
    .await;
    assert_eq!(s, StatusCode::CREATED);
    let shared_id = shared["id"].as_str().expect("id").to_string();

    // Act: every writer creates its own records and appends its mark to the
    // shared record, retrying on 409 with the fresh revision.
    let mut tasks = Vec::new();
    for w in 0..WRITERS {
        let app = app.clone();
        let shared_id = shared_id.clone();
        tasks.push(tokio::spawn(async move {
            let mut created = Vec::new();
            for i in 0..CREATES_EACH {
                let code = format!("W{w:02}-{i:02}");
                let (s, v) = call(
                    &app,
                    "POST",
                    "/api/v1/samples",
                    Some(json!({"sample_code": code, "notes": format!("writer {w}")})),
                )
                .await;
                assert_eq!(s, StatusCode::CREATED, "{code}: {v}");
                created.push((v["id"].as_str().expect("id").to_string(), code));
            }
            let mut conflicts = 0;
            loop {
                let (_, cur) =
                    call(&app, "GET", &format!("/api/v1/samples/{shared_id}"), None).await;
                let mut rec = cur.clone();
                let notes = format!("{} w{w:02}", cur["notes"].as_str().unwrap_or(""));
                rec["notes"] = json!(notes.trim());
                let (s, v) = call(
                    &app,
                    "PUT",
                    &format!("/api/v1/samples/{shared_id}"),
                    Some(rec),
                )
                .await;
                match s {
                    StatusCode::OK => break,
                    StatusCode::CONFLICT => conflicts += 1,
                    other => panic!("writer {w}: {other} {v}"),
                }
                assert!(conflicts < 500, "writer {w} never got through");
            }
            (created, conflicts)
        }));
    }
    let mut all = Vec::new();
    let mut conflicts = 0;
    for t in tasks {
        let (created, c) = t.await.expect("writer finished");
        all.extend(created);
        conflicts += c;
    }

    // Assert: every acknowledged record is there, intact.
    assert_eq!(all.len(), WRITERS * CREATES_EACH);
    for (id, code) in &all {
        let (s, v) = call(&app, "GET", &format!("/api/v1/samples/{id}"), None).await;
        assert_eq!(s, StatusCode::OK);
        assert_eq!(v["sample_code"], code.as_str());
    }
    // Every writer's mark is on the shared record, and its history holds
    // one revision per successful edit: nothing was overwritten.
    let (_, shared) = call(&app, "GET", &format!("/api/v1/samples/{shared_id}"), None).await;
    let notes = shared["notes"].as_str().expect("notes");
    for w in 0..WRITERS {
        assert!(
            notes.contains(&format!("w{w:02}")),
            "writer {w}'s edit was lost: {notes}"
        );
    }
    assert_eq!(shared["revision"], json!(1 + WRITERS));
    let (_, revs) = call(
        &app,
        "GET",
        &format!("/api/v1/samples/{shared_id}/revisions"),
        None,
    )
    .await;
    assert_eq!(
        revs["revisions"].as_array().expect("revisions").len(),
        1 + WRITERS
    );
    println!(
        "{} records, {} stale edits refused and retried",
        all.len(),
        conflicts
    );
}
