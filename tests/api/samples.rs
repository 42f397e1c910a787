//! The sample log's API and exports, per the contract's "Sample records".
//!
//! The data is an invented demo scenario: project `bv`, stations `BV-..`,
//! collectors "Field crew A" and "Field crew B". Coordinates are arbitrary
//! points chosen for the test, not places anyone sampled.

use axum::http::{StatusCode, header};
use serde_json::{Value, json};

use crate::helpers::{Reply, TestApp};

const SAMPLES: &str = "/api/v1/samples";

/// Observations a chlorite answers best: flexible flakes, green, pearly,
/// hardness 2–2.5, greenschist (typical chlorite properties, from memory;
/// the same values the base lists as typical).
fn chlorite_observations() -> Value {
    json!({
        "cleavage": "one_perfect",
        "tenacity": "flexible",
        "colour": ["green"],
        "luster": "pearly",
        "habit": "foliated",
        "hardness": {"min": 2.0, "max": 2.5},
        "setting": "greenschist"
    })
}

/// A record with every contract field filled in.
fn full_record() -> Value {
    json!({
        "project": "default",
        "sample_code": "BV-12-001",
        "collected_on": "2026-07-14",
        "collector": "Field crew A",
        "station": "BV-12",
        "latitude": 46.5123,
        "longitude": -7.25,
        "coordinate_uncertainty_m": 8.0,
        "setting": "greenschist",
        "lithology": "green phyllite with quartz veinlets",
        "observations": chlorite_observations(),
        "field_id": "chlorite",
        "notes": "flakes bend and stay bent"
    })
}

async fn create(app: &TestApp, body: &Value) -> Value {
    let r = app.post_json(SAMPLES, &body.to_string()).await;
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    r.json()
}

async fn create_code(app: &TestApp, code: &str) -> Value {
    create(app, &json!({ "sample_code": code })).await
}

fn url(id: &Value) -> String {
    format!("{SAMPLES}/{}", id.as_str().expect("id is a string"))
}

fn assert_iso_timestamp(v: &Value, key: &str) {
    let s = v[key]
        .as_str()
        .unwrap_or_else(|| panic!("{key} missing: {v}"));
    // YYYY-MM-DDTHH:MM:SS(.fff)Z (ISO 8601 UTC, common practice).
    let b = s.as_bytes();
    assert!(
        s.len() >= 20
            && b[4] == b'-'
            && b[7] == b'-'
            && b[10] == b'T'
            && b[13] == b':'
            && b[16] == b':'
            && s.ends_with('Z'),
        "{key} is not an ISO 8601 UTC timestamp: {s}"
    );
}

fn codes(page: &Value) -> Vec<String> {
    page["samples"]
        .as_array()
        .expect("samples array")
        .iter()
        .map(|s| s["sample_code"].as_str().expect("code").to_string())
        .collect()
}

async fn list_codes(app: &TestApp, query: &str) -> Vec<String> {
    let r = app.get(&format!("{SAMPLES}?{query}")).await;
    assert_eq!(r.status, StatusCode::OK, "{query}: {}", r.text());
    codes(&r.json())
}

fn content_type(r: &Reply) -> String {
    r.headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .to_string()
}

// ---------------------------------------------------------------- create

#[tokio::test]
async fn a_sample_code_alone_creates_a_record_with_everything_the_service_adds() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app
        .post_json(SAMPLES, r#"{"sample_code": "BV-12-001"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    let v = r.json();
    let id = v["id"].as_str().expect("id");
    assert!(uuid::Uuid::try_parse(id).is_ok(), "{id}");
    assert_eq!(r.location(), format!("{SAMPLES}/{id}"));
    assert_eq!(v["project"], "default");
    assert_eq!(v["sample_code"], "BV-12-001");
    assert_eq!(v["revision"], 1);
    assert_iso_timestamp(&v, "created_at");
    assert_iso_timestamp(&v, "updated_at");
    assert!(v["identification"]["candidates"].is_array(), "{v}");
    assert!(
        v["base_version"]
            .as_str()
            .expect("base_version")
            .starts_with("base-")
    );
    assert_eq!(v["field_id"], Value::Null);
}

#[tokio::test]
async fn every_contract_field_round_trips_and_the_observations_are_identified() {
    // Arrange
    let app = TestApp::new().await;
    let sent = full_record();
    // Act
    let created = create(&app, &sent).await;
    let fetched = app.get(&url(&created["id"])).await;
    // Assert
    assert_eq!(fetched.status, StatusCode::OK);
    let v = fetched.json();
    for key in [
        "project",
        "sample_code",
        "collected_on",
        "collector",
        "station",
        "latitude",
        "longitude",
        "coordinate_uncertainty_m",
        "setting",
        "lithology",
        "field_id",
        "notes",
    ] {
        assert_eq!(v[key], sent[key], "{key}");
    }
    for (k, want) in sent["observations"].as_object().expect("obs") {
        assert_eq!(&v["observations"][k], want, "observations.{k}");
    }
    assert_eq!(v["identification"]["candidates"][0]["id"], "chlorite");
    assert_eq!(v["identification"]["base_version"], v["base_version"]);
    assert_eq!(v, created, "GET returns what POST returned");
}

#[tokio::test]
async fn a_taken_sample_code_in_the_same_project_is_a_conflict() {
    // Arrange
    let app = TestApp::new().await;
    create_code(&app, "BV-12-001").await;
    // Act
    let r = app
        .post_json(SAMPLES, r#"{"sample_code": "BV-12-001", "notes": "again"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::CONFLICT);
    assert_eq!(r.error().0, "sample_code");
    assert_eq!(list_codes(&app, "").await, ["BV-12-001"]);
}

#[tokio::test]
async fn the_same_sample_code_in_another_project_is_fine() {
    // Arrange: there is no project API yet, so the project is made in the store.
    let app = TestApp::new().await;
    let pool = app.pool().await;
    assert!(
        basal::store::samples::create_project(&pool, "bv", "Demo valley", "BV-{seq:3}")
            .await
            .expect("project")
    );
    create_code(&app, "BV-12-001").await;
    // Act
    let r = app
        .post_json(SAMPLES, r#"{"project": "bv", "sample_code": "BV-12-001"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    assert_eq!(r.json()["project"], "bv");
    assert_eq!(list_codes(&app, "project=bv").await, ["BV-12-001"]);
    assert_eq!(list_codes(&app, "project=default").await, ["BV-12-001"]);
}

#[tokio::test]
async fn an_unknown_project_is_refused_on_the_project_field() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app
        .post_json(SAMPLES, r#"{"project": "nowhere", "sample_code": "X-1"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.error().0, "project");
}

#[tokio::test]
async fn each_bad_field_is_refused_with_422_naming_its_path() {
    // Arrange
    let app = TestApp::new().await;
    let cases: &[(&str, &str)] = &[
        (r#"{}"#, "sample_code"),
        (r#"{"sample_code": "   "}"#, "sample_code"),
        (
            r#"{"sample_code": "A", "collected_on": "2026-02-30"}"#,
            "collected_on",
        ),
        (
            r#"{"sample_code": "A", "collected_on": "14/07/2026"}"#,
            "collected_on",
        ),
        (
            r#"{"sample_code": "A", "latitude": 91, "longitude": 0}"#,
            "latitude",
        ),
        (
            r#"{"sample_code": "A", "latitude": 0, "longitude": -181}"#,
            "longitude",
        ),
        (r#"{"sample_code": "A", "latitude": 10}"#, "longitude"),
        (r#"{"sample_code": "A", "longitude": 10}"#, "latitude"),
        (
            r#"{"sample_code": "A", "coordinate_uncertainty_m": 0}"#,
            "coordinate_uncertainty_m",
        ),
        (
            r#"{"sample_code": "A", "coordinate_uncertainty_m": -5}"#,
            "coordinate_uncertainty_m",
        ),
        (r#"{"sample_code": "A", "setting": "volcano"}"#, "setting"),
        (r#"{"sample_code": "A", "field_id": "mica"}"#, "field_id"),
        (
            r#"{"sample_code": "A", "observations": {"hardness": {"min": 0.5}}}"#,
            "observations.hardness.min",
        ),
        (r#"{"sample_code": "A", "colour": "green"}"#, "colour"),
        (r#"{"sample_code": 12}"#, "sample_code"),
        (r#"{"sample_code": "A", "latitude": "46.5"}"#, "latitude"),
        (r#"{"sample_code": "A", "notes": ["a", "b"]}"#, "notes"),
        (r#"{"sample_code": "A", "sample_code": "B"}"#, "sample_code"),
    ];
    for (body, field) in cases {
        // Act
        let r = app.post_json(SAMPLES, body).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            r.text()
        );
        assert_eq!(r.error().0, *field, "{body}");
    }
    assert!(list_codes(&app, "").await.is_empty(), "nothing was saved");
}

#[tokio::test]
async fn a_body_that_is_not_json_gets_415_and_broken_json_gets_400() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let plain = app
        .post_raw(SAMPLES, Some("text/plain"), r#"{"sample_code": "A"}"#)
        .await;
    let none = app.post_raw(SAMPLES, None, r#"{"sample_code": "A"}"#).await;
    let broken = app.post_json(SAMPLES, r#"{"sample_code": "A""#).await;
    // Assert
    assert_eq!(plain.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    plain.error();
    assert_eq!(none.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    none.error();
    assert_eq!(broken.status, StatusCode::BAD_REQUEST);
    broken.error();
}

// ---------------------------------------------------------------- read

#[tokio::test]
async fn an_unknown_or_malformed_id_is_404_with_the_error_shape() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let unknown = app
        .get(&format!("{SAMPLES}/{}", uuid::Uuid::new_v4()))
        .await;
    let not_uuid = app.get(&format!("{SAMPLES}/not-a-uuid")).await;
    // Assert
    assert_eq!(unknown.status, StatusCode::NOT_FOUND);
    assert_eq!(unknown.error().0, "id");
    assert_eq!(not_uuid.status, StatusCode::NOT_FOUND);
    not_uuid.error();
}

// ---------------------------------------------------------------- update

#[tokio::test]
async fn a_whole_record_with_the_current_revision_makes_revision_two() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut body = full_record();
    body["notes"] = json!("flakes bend and stay bent; chlorite schist");
    body["revision"] = json!(1);
    // Act
    let r = app.put_json(&url(&rec["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let v = r.json();
    assert_eq!(v["revision"], 2);
    assert_eq!(v["id"], rec["id"]);
    assert_eq!(v["created_at"], rec["created_at"]);
    assert_eq!(v["notes"], "flakes bend and stay bent; chlorite schist");
    assert_eq!(app.get(&url(&rec["id"])).await.json(), v);
}

#[tokio::test]
async fn a_stale_revision_is_a_conflict_that_shows_the_current_record_and_overwrites_nothing() {
    // Arrange: crew A and crew B both start from revision 1; A saves first.
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut a = full_record();
    a["notes"] = json!("crew A's version");
    a["revision"] = json!(1);
    let first = app.put_json(&url(&rec["id"]), &a.to_string()).await;
    assert_eq!(first.status, StatusCode::OK);
    let mut b = full_record();
    b["notes"] = json!("crew B's version");
    b["revision"] = json!(1);
    // Act
    let r = app.put_json(&url(&rec["id"]), &b.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::CONFLICT, "{}", r.text());
    assert_eq!(r.error().0, "revision");
    let v = r.json();
    assert_eq!(v["current"]["revision"], 2);
    assert_eq!(v["current"]["notes"], "crew A's version");
    let now = app.get(&url(&rec["id"])).await.json();
    assert_eq!(now["revision"], 2);
    assert_eq!(now["notes"], "crew A's version");
}

#[tokio::test]
async fn an_update_without_a_revision_is_refused_on_the_revision_field() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    // Act
    let r = app
        .put_json(&url(&rec["id"]), &full_record().to_string())
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.error().0, "revision");
    assert_eq!(app.get(&url(&rec["id"])).await.json()["revision"], 1);
}

#[tokio::test]
async fn a_fetched_record_can_be_sent_back_whole_with_one_change() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut fetched = app.get(&url(&rec["id"])).await.json();
    fetched["station"] = json!("BV-13");
    // Act
    let r = app.put_json(&url(&rec["id"]), &fetched.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let v = r.json();
    assert_eq!(v["revision"], 2);
    assert_eq!(v["station"], "BV-13");
    assert_eq!(v["notes"], rec["notes"]);
}

#[tokio::test]
async fn an_id_in_the_body_that_differs_from_the_url_is_refused() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut body = app.get(&url(&rec["id"])).await.json();
    body["id"] = json!(uuid::Uuid::new_v4().to_string());
    // Act
    let r = app.put_json(&url(&rec["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.error().0, "id");
}

// ---------------------------------------------------------------- delete and restore

#[tokio::test]
async fn a_deleted_record_is_a_restorable_tombstone() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let id_url = url(&rec["id"]);
    // Act
    let deleted = app.delete(&id_url).await;
    // Assert: gone from reading and listing, history kept.
    assert_eq!(deleted.status, StatusCode::OK, "{}", deleted.text());
    assert_eq!(deleted.json()["deleted"], true);
    assert_eq!(deleted.json()["revision"], 2);
    let gone = app.get(&id_url).await;
    assert_eq!(gone.status, StatusCode::NOT_FOUND);
    let (_, message) = gone.error();
    assert!(message.contains("restore"), "{message}");
    assert!(list_codes(&app, "").await.is_empty());
    let revs = app.get(&format!("{id_url}/revisions")).await;
    assert_eq!(revs.status, StatusCode::OK);
    assert_eq!(revs.json()["revisions"].as_array().expect("revs").len(), 2);
    // Act: restore
    let restored = app.post_raw(&format!("{id_url}/restore"), None, "").await;
    // Assert
    assert_eq!(restored.status, StatusCode::OK, "{}", restored.text());
    assert_eq!(restored.json()["deleted"], false);
    assert_eq!(restored.json()["revision"], 3);
    let back = app.get(&id_url).await;
    assert_eq!(back.status, StatusCode::OK);
    assert_eq!(back.json()["notes"], rec["notes"]);
    assert_eq!(list_codes(&app, "").await, ["BV-12-001"]);
}

#[tokio::test]
async fn each_delete_and_restore_adds_a_revision() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create_code(&app, "BV-12-002").await;
    let id_url = url(&rec["id"]);
    // Act
    for _ in 0..2 {
        assert_eq!(app.delete(&id_url).await.status, StatusCode::OK);
        let r = app.post_raw(&format!("{id_url}/restore"), None, "").await;
        assert_eq!(r.status, StatusCode::OK);
    }
    // Assert
    assert_eq!(app.get(&id_url).await.json()["revision"], 5);
    let revs = app.get(&format!("{id_url}/revisions")).await.json();
    let actions: Vec<&str> = revs["revisions"]
        .as_array()
        .expect("revs")
        .iter()
        .map(|r| r["action"].as_str().expect("action"))
        .collect();
    assert_eq!(
        actions,
        ["create", "delete", "restore", "delete", "restore"]
    );
}

#[tokio::test]
async fn a_deleted_record_cannot_be_updated() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let id_url = url(&rec["id"]);
    assert_eq!(app.delete(&id_url).await.status, StatusCode::OK);
    let mut body = full_record();
    body["revision"] = json!(2);
    // Act
    let r = app.put_json(&id_url, &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::CONFLICT, "{}", r.text());
    r.error();
}

#[tokio::test]
async fn deleting_an_unknown_sample_is_404() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app
        .delete(&format!("{SAMPLES}/{}", uuid::Uuid::new_v4()))
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    r.error();
}

// ---------------------------------------------------------------- revisions

#[tokio::test]
async fn a_typo_fixed_the_next_evening_keeps_what_was_first_written() {
    // Arrange: a note written in the field, with a typo.
    let app = TestApp::new().await;
    let mut body = full_record();
    body["notes"] = json!("chlorite flakes in quartz vien");
    let rec = create(&app, &body).await;
    let id_url = url(&rec["id"]);
    body["notes"] = json!("chlorite flakes in quartz vein");
    body["revision"] = json!(1);
    body["edited_by"] = json!("Field crew B");
    // Act
    let put = app.put_json(&id_url, &body.to_string()).await;
    assert_eq!(put.status, StatusCode::OK, "{}", put.text());
    let r = app.get(&format!("{id_url}/revisions")).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    let v = r.json();
    assert_eq!(v["id"], rec["id"]);
    let revs = v["revisions"].as_array().expect("revisions");
    assert_eq!(revs.len(), 2);
    assert_eq!(revs[0]["revision"], 1);
    assert_eq!(revs[0]["action"], "create");
    assert_eq!(revs[0]["record"]["notes"], "chlorite flakes in quartz vien");
    assert_eq!(revs[1]["revision"], 2);
    assert_eq!(revs[1]["action"], "update");
    assert_eq!(revs[1]["author"], "Field crew B");
    assert_eq!(revs[1]["record"]["notes"], "chlorite flakes in quartz vein");
    assert!(revs[1]["record"].get("edited_by").is_none());
}

#[tokio::test]
async fn the_revisions_of_an_unknown_sample_are_404() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app
        .get(&format!("{SAMPLES}/{}/revisions", uuid::Uuid::new_v4()))
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    r.error();
}

// ---------------------------------------------------------------- list

/// Four samples of the demo scenario, created in this order.
async fn scenario(app: &TestApp) {
    for body in [
        json!({
            "sample_code": "BV-01", "collected_on": "2026-07-10", "collector": "Field crew A",
            "station": "BV-3", "setting": "granite", "lithology": "coarse pink granite",
            "field_id": "biotite", "notes": "biotite books near the contact",
            "latitude": 46.1, "longitude": 7.1
        }),
        json!({
            "sample_code": "BV-02", "collected_on": "2026-07-12", "collector": "Field crew B",
            "station": "BV-12", "setting": "greenschist", "lithology": "green phyllite",
            "field_id": "chlorite", "notes": "scaly green masses"
        }),
        json!({
            "sample_code": "BV-03", "collected_on": "2026-07-14", "collector": "Field crew A",
            "station": "BV-12", "setting": "greenschist", "lithology": "phyllite",
            "notes": "unsure, maybe talc", "latitude": -12.5, "longitude": 130.25
        }),
        json!({
            "sample_code": "BV-04", "collector": "Field crew B",
            "station": "BV-20", "lithology": "quartz vein"
        }),
    ] {
        create(app, &body).await;
    }
}

#[tokio::test]
async fn the_list_is_newest_first() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    // Act
    let r = app.get(SAMPLES).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    let v = r.json();
    assert_eq!(codes(&v), ["BV-04", "BV-03", "BV-02", "BV-01"]);
    assert_eq!(v["next_cursor"], Value::Null);
}

#[tokio::test]
async fn each_filter_narrows_the_list() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    let cases: &[(&str, &[&str])] = &[
        ("project=default", &["BV-04", "BV-03", "BV-02", "BV-01"]),
        ("field_id=chlorite", &["BV-02"]),
        ("field_id=none", &["BV-04", "BV-03"]),
        ("collector=Field+crew+A", &["BV-03", "BV-01"]),
        ("setting=greenschist", &["BV-03", "BV-02"]),
        ("from=2026-07-12", &["BV-03", "BV-02"]),
        ("to=2026-07-12", &["BV-02", "BV-01"]),
        ("from=2026-07-11&to=2026-07-13", &["BV-02"]),
        ("q=phyllite", &["BV-03", "BV-02"]),
        ("q=phyl", &[]),
        ("q=phyl*", &["BV-03", "BV-02"]),
        ("q=BV-12", &["BV-03", "BV-02"]),
        ("q=talc", &["BV-03"]),
        ("q=green+phyllite", &["BV-02"]),
        ("q=nothing-like-this", &[]),
        ("collector=Field+crew+B&field_id=none", &["BV-04"]),
    ];
    for (query, want) in cases {
        // Act
        let got = list_codes(&app, query).await;
        // Assert
        assert_eq!(&got, want, "{query}");
    }
}

#[tokio::test]
async fn free_text_search_follows_an_edited_note() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(
        &app,
        &json!({"sample_code": "BV-05", "notes": "garnet porphyroblasts"}),
    )
    .await;
    let body = json!({"sample_code": "BV-05", "notes": "staurolite crosses", "revision": 1});
    // Act
    let r = app.put_json(&url(&rec["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    assert!(list_codes(&app, "q=garnet").await.is_empty());
    assert_eq!(list_codes(&app, "q=staurolite").await, ["BV-05"]);
}

#[tokio::test]
async fn pages_cover_every_record_exactly_once() {
    // Arrange: 7 records, pages of 3.
    let app = TestApp::new().await;
    for i in 1..=7 {
        create_code(&app, &format!("BV-P{i}")).await;
    }
    let mut seen = Vec::new();
    let mut cursor: Option<String> = None;
    let mut pages = 0;
    // Act
    loop {
        let uri = match &cursor {
            Some(c) => format!("{SAMPLES}?limit=3&cursor={c}"),
            None => format!("{SAMPLES}?limit=3"),
        };
        let r = app.get(&uri).await;
        assert_eq!(r.status, StatusCode::OK, "{uri}: {}", r.text());
        let v = r.json();
        let page = codes(&v);
        assert!(page.len() <= 3);
        seen.extend(page);
        pages += 1;
        assert!(pages <= 10, "pagination does not end");
        match v["next_cursor"].as_str() {
            Some(c) => cursor = Some(c.to_string()),
            None => break,
        }
    }
    // Assert
    assert_eq!(pages, 3);
    let want: Vec<String> = (1..=7).rev().map(|i| format!("BV-P{i}")).collect();
    assert_eq!(seen, want);
}

#[tokio::test]
async fn a_full_last_page_has_no_next_cursor() {
    // Arrange
    let app = TestApp::new().await;
    for i in 1..=4 {
        create_code(&app, &format!("BV-Q{i}")).await;
    }
    // Act
    let first = app.get(&format!("{SAMPLES}?limit=2")).await.json();
    let c = first["next_cursor"].as_str().expect("a second page");
    let second = app
        .get(&format!("{SAMPLES}?limit=2&cursor={c}"))
        .await
        .json();
    // Assert
    assert_eq!(codes(&first), ["BV-Q4", "BV-Q3"]);
    assert_eq!(codes(&second), ["BV-Q2", "BV-Q1"]);
    assert_eq!(second["next_cursor"], Value::Null);
}

#[tokio::test]
async fn bad_list_parameters_are_refused_with_422_naming_the_parameter() {
    // Arrange
    let app = TestApp::new().await;
    let cases = [
        ("limit=0", "limit"),
        ("limit=1000", "limit"),
        ("limit=ten", "limit"),
        ("cursor=abc", "cursor"),
        ("cursor=-4", "cursor"),
        ("from=2026-02-30", "from"),
        ("to=14%2F07%2F2026", "to"),
        ("from=2026-07-13&to=2026-07-11", "to"),
        ("setting=volcano", "setting"),
        ("colour=green", "colour"),
    ];
    for (query, field) in cases {
        // Act
        let r = app.get(&format!("{SAMPLES}?{query}")).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{query}: {}",
            r.text()
        );
        assert_eq!(r.error().0, field, "{query}");
    }
}

// ---------------------------------------------------------------- CSV export

#[tokio::test]
async fn the_csv_export_has_a_header_and_one_row_per_live_sample() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    let awkward = "contact, sharp; \"fresh\" surface\nsecond line";
    let extra = create(
        &app,
        &json!({"sample_code": "BV-05", "notes": awkward, "latitude": 46.5123, "longitude": -7.25}),
    )
    .await;
    let gone = create_code(&app, "BV-06").await;
    assert_eq!(app.delete(&url(&gone["id"])).await.status, StatusCode::OK);
    // Act
    let r = app.get("/export/samples.csv").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    assert!(
        content_type(&r).starts_with("text/csv"),
        "{}",
        content_type(&r)
    );
    let mut rd = csv::Reader::from_reader(r.body.as_slice());
    let headers = rd.headers().expect("header row").clone();
    for name in [
        "id",
        "project",
        "sample_code",
        "collected_on",
        "collector",
        "station",
        "latitude",
        "longitude",
        "coordinate_uncertainty_m",
        "setting",
        "lithology",
        "observations",
        "field_id",
        "notes",
    ] {
        assert!(headers.iter().any(|h| h == name), "no column {name}");
    }
    let col = |name: &str| headers.iter().position(|h| h == name).expect("column");
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.expect("row")).collect();
    let mut codes: Vec<&str> = rows.iter().map(|r| &r[col("sample_code")]).collect();
    codes.sort();
    assert_eq!(codes, ["BV-01", "BV-02", "BV-03", "BV-04", "BV-05"]);
    let row = rows
        .iter()
        .find(|r| &r[col("sample_code")] == "BV-05")
        .expect("BV-05");
    assert_eq!(&row[col("id")], extra["id"].as_str().expect("id"));
    assert_eq!(&row[col("notes")], awkward);
    let lat: f64 = row[col("latitude")].parse().expect("latitude");
    let lon: f64 = row[col("longitude")].parse().expect("longitude");
    assert_eq!((lat, lon), (46.5123, -7.25));
    let bv2 = rows
        .iter()
        .find(|r| &r[col("sample_code")] == "BV-02")
        .expect("BV-02");
    assert_eq!(&bv2[col("field_id")], "chlorite");
    assert_eq!(&bv2[col("collector")], "Field crew B");
    assert_eq!(&bv2[col("setting")], "greenschist");
}

#[tokio::test]
async fn the_csv_export_takes_the_list_filters() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    // Act
    let r = app
        .get("/export/samples.csv?project=default&q=phyllite")
        .await;
    let bad = app.get("/export/samples.csv?limit=zero").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    let mut rd = csv::Reader::from_reader(r.body.as_slice());
    let i = rd
        .headers()
        .expect("headers")
        .iter()
        .position(|h| h == "sample_code")
        .expect("sample_code column");
    let mut got: Vec<String> = rd
        .records()
        .map(|r| r.expect("row")[i].to_string())
        .collect();
    got.sort();
    assert_eq!(got, ["BV-02", "BV-03"]);
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(bad.error().0, "limit");
}

#[tokio::test]
async fn an_empty_csv_export_still_has_its_header_row() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app.get("/export/samples.csv").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    let mut rd = csv::Reader::from_reader(r.body.as_slice());
    assert!(
        rd.headers()
            .expect("headers")
            .iter()
            .any(|h| h == "sample_code")
    );
    assert_eq!(rd.records().count(), 0);
}

// ---------------------------------------------------------------- GeoJSON export

#[tokio::test]
async fn the_geojson_export_holds_the_located_samples_as_longitude_latitude_points() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    // Act
    let r = app.get("/export/samples.geojson").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    assert!(
        content_type(&r).starts_with("application/geo+json"),
        "{}",
        content_type(&r)
    );
    let gj: geojson::GeoJson = r.text().parse().expect("GeoJSON");
    let geojson::GeoJson::FeatureCollection(fc) = gj else {
        panic!("not a FeatureCollection: {}", r.text());
    };
    let mut points: Vec<(String, Vec<f64>)> = fc
        .features
        .iter()
        .map(|f| {
            let code = f
                .property("sample_code")
                .and_then(Value::as_str)
                .expect("sample_code")
                .to_string();
            let geom = f.geometry.as_ref().expect("geometry");
            let geojson::GeometryValue::Point { coordinates: p } = &geom.value else {
                panic!("not a point: {geom:?}");
            };
            (code, p.as_slice().to_vec())
        })
        .collect();
    points.sort_by(|a, b| a.0.cmp(&b.0));
    assert_eq!(
        points,
        [
            ("BV-01".to_string(), vec![7.1, 46.1]),
            ("BV-03".to_string(), vec![130.25, -12.5]),
        ]
    );
}

#[tokio::test]
async fn the_geojson_export_takes_the_list_filters_and_may_be_empty() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    // Act
    let some = app.get("/export/samples.geojson?q=talc").await;
    let none = app.get("/export/samples.geojson?field_id=chlorite").await;
    // Assert
    let count = |r: &Reply| -> usize {
        match r.text().parse::<geojson::GeoJson>().expect("GeoJSON") {
            geojson::GeoJson::FeatureCollection(fc) => fc.features.len(),
            other => panic!("not a FeatureCollection: {other}"),
        }
    };
    assert_eq!(some.status, StatusCode::OK);
    assert_eq!(count(&some), 1);
    assert_eq!(none.status, StatusCode::OK);
    assert_eq!(count(&none), 0, "BV-02 has no coordinates");
}

// ---------------------------------------------------------------- concurrency

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn concurrent_edits_of_one_revision_give_one_success_and_conflicts_never_a_500() {
    // Arrange: eight people send an edit of revision 1 at the same moment,
    // over and over.
    let app = std::sync::Arc::new(TestApp::new().await);
    for round in 0..5 {
        let rec = create_code(&app, &format!("BV-C{round}")).await;
        let id_url = url(&rec["id"]);
        // Act
        let mut tasks = Vec::new();
        for n in 0..8 {
            let app = app.clone();
            let id_url = id_url.clone();
            let body = json!({
                "sample_code": format!("BV-C{round}"),
                "notes": format!("edit {n}"),
                "revision": 1
            })
            .to_string();
            tasks.push(tokio::spawn(
                async move { app.put_json(&id_url, &body).await },
            ));
        }
        let mut statuses = Vec::new();
        for t in tasks {
            let r = t.await.expect("task");
            statuses.push((r.status, r.text()));
        }
        // Assert
        let ok = statuses
            .iter()
            .filter(|(s, _)| *s == StatusCode::OK)
            .count();
        for (s, body) in &statuses {
            assert!(
                *s == StatusCode::OK || *s == StatusCode::CONFLICT,
                "round {round}: {s} {body}"
            );
        }
        assert_eq!(ok, 1, "round {round}: {statuses:?}");
        assert_eq!(app.get(&id_url).await.json()["revision"], 2);
    }
}

#[tokio::test]
async fn renaming_a_sample_to_a_taken_code_is_a_conflict_and_changes_nothing() {
    // Arrange
    let app = TestApp::new().await;
    create_code(&app, "BV-R1").await;
    let second = create_code(&app, "BV-R2").await;
    let body = json!({"sample_code": "BV-R1", "revision": 1});
    // Act
    let r = app.put_json(&url(&second["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::CONFLICT, "{}", r.text());
    assert_eq!(r.error().0, "sample_code");
    let now = app.get(&url(&second["id"])).await.json();
    assert_eq!(
        (now["sample_code"].as_str(), now["revision"].as_i64()),
        (Some("BV-R2"), Some(1))
    );
}

#[tokio::test]
async fn exports_larger_than_one_batch_hold_every_sample_once() {
    // Arrange: more rows than the export reads per round trip (1000,
    // `EXPORT_BATCH` in src/web/samples_api.rs).
    let app = TestApp::new().await;
    let n = 1003;
    for i in 0..n {
        let body =
            json!({"sample_code": format!("BV-E{i:04}"), "latitude": 46.0, "longitude": 7.0});
        let r = app.post_json(SAMPLES, &body.to_string()).await;
        assert_eq!(r.status, StatusCode::CREATED);
    }
    // Act
    let csv_reply = app.get("/export/samples.csv").await;
    let geo_reply = app.get("/export/samples.geojson").await;
    // Assert
    let mut rd = csv::Reader::from_reader(csv_reply.body.as_slice());
    let i = rd
        .headers()
        .expect("headers")
        .iter()
        .position(|h| h == "sample_code")
        .expect("column");
    let mut rows: Vec<String> = rd
        .records()
        .map(|r| r.expect("row")[i].to_string())
        .collect();
    rows.sort();
    rows.dedup();
    assert_eq!(rows.len(), n, "one CSV row per sample, no header repeated");
    let gj: geojson::GeoJson = geo_reply.text().parse().expect("GeoJSON");
    let geojson::GeoJson::FeatureCollection(fc) = gj else {
        panic!("not a FeatureCollection");
    };
    let mut ids: Vec<String> = fc
        .features
        .iter()
        .map(|f| {
            f.property("sample_code")
                .and_then(Value::as_str)
                .expect("code")
                .to_string()
        })
        .collect();
    ids.sort();
    ids.dedup();
    assert_eq!(ids.len(), n);
}

// ---------------------------------------------------------------- fields the service sets

#[tokio::test]
async fn a_create_refuses_every_field_the_service_sets_by_name() {
    // Arrange
    let app = TestApp::new().await;
    let cases: &[(&str, Value)] = &[
        ("id", json!(uuid::Uuid::new_v4().to_string())),
        ("created_at", json!("2026-07-14T09:30:00.000Z")),
        ("updated_at", json!("2026-07-14T09:30:00.000Z")),
        ("identification", json!({"candidates": []})),
        ("base_version", json!("base-1")),
        ("deleted", json!(false)),
        ("revision", json!(1)),
    ];
    for (field, value) in cases {
        let mut body = json!({"sample_code": format!("BV-{field}")});
        body[*field] = value.clone();
        // Act
        let r = app.post_json(SAMPLES, &body.to_string()).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field}: {}",
            r.text()
        );
        let (f, message) = r.error();
        assert_eq!(f, *field);
        assert!(message.contains("leave it out"), "{message}");
        if *field == "id" {
            assert!(message.contains("assigns"), "{message}");
        }
    }
    assert!(list_codes(&app, "").await.is_empty(), "nothing was saved");
}

#[tokio::test]
async fn a_field_the_record_does_not_have_is_refused_on_create_and_update() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut body = app.get(&url(&rec["id"])).await.json();
    body["deleted_at"] = json!("2026-07-14T09:30:00.000Z");
    // Act
    let post = app
        .post_json(SAMPLES, r#"{"sample_code": "X1", "top_candidate": "talc"}"#)
        .await;
    let put = app.put_json(&url(&rec["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(post.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(post.error().0, "top_candidate");
    assert_eq!(put.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(put.error().0, "deleted_at");
}

#[tokio::test]
async fn an_update_refuses_each_changed_field_the_service_sets_by_name() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let fetched = app.get(&url(&rec["id"])).await.json();
    let cases: &[(&str, Value)] = &[
        ("created_at", json!("2020-01-01T00:00:00.000Z")),
        ("updated_at", json!("2020-01-01T00:00:00.000Z")),
        ("identification", json!({"candidates": []})),
        ("base_version", json!("base-0")),
        ("deleted", json!(true)),
        ("id", json!(uuid::Uuid::new_v4().to_string())),
    ];
    for (field, value) in cases {
        let mut body = fetched.clone();
        body[*field] = value.clone();
        body["notes"] = json!("changed");
        // Act
        let r = app.put_json(&url(&rec["id"]), &body.to_string()).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field}: {}",
            r.text()
        );
        assert_eq!(r.error().0, *field);
    }
    let now = app.get(&url(&rec["id"])).await.json();
    assert_eq!(now["revision"], 1, "nothing was saved");
    assert_eq!(now["notes"], rec["notes"]);
}

#[tokio::test]
async fn a_fetched_record_sent_back_unchanged_but_for_its_note_makes_a_new_revision() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let mut body = app.get(&url(&rec["id"])).await.json();
    for field in [
        "id",
        "created_at",
        "updated_at",
        "identification",
        "base_version",
        "deleted",
    ] {
        assert!(body.get(field).is_some(), "a GET returns {field}");
    }
    body["notes"] = json!("flakes bend and stay bent; pale green streak");
    // Act
    let r = app.put_json(&url(&rec["id"]), &body.to_string()).await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let v = r.json();
    assert_eq!(v["revision"], 2);
    assert_eq!(v["notes"], "flakes bend and stay bent; pale green streak");
    assert_eq!(v["id"], rec["id"]);
    assert_eq!(v["created_at"], rec["created_at"]);
}

#[tokio::test]
async fn a_stale_record_sent_back_whole_is_still_a_conflict_not_a_refusal() {
    // Arrange
    let app = TestApp::new().await;
    let rec = create(&app, &full_record()).await;
    let old = app.get(&url(&rec["id"])).await.json();
    let mut first = old.clone();
    first["station"] = json!("BV-13");
    assert_eq!(
        app.put_json(&url(&rec["id"]), &first.to_string())
            .await
            .status,
        StatusCode::OK
    );
    let mut second = old;
    second["notes"] = json!("late edit");
    // Act
    let r = app.put_json(&url(&rec["id"]), &second.to_string()).await;
    // Assert: updated_at differs now, but the answer is the 409 that shows
    // the current record.
    assert_eq!(r.status, StatusCode::CONFLICT, "{}", r.text());
    assert_eq!(r.error().0, "revision");
}

// ---------------------------------------------------------------- invisible and control characters

#[tokio::test]
async fn bidirectional_and_control_characters_are_refused_naming_field_and_character() {
    // Arrange
    let app = TestApp::new().await;
    let cases: &[(&str, &str, &str)] = &[
        ("sample_code", "BV-\u{202E}100", "U+202E"),
        ("sample_code", "BV-\u{2066}1", "U+2066"),
        ("sample_code", "BV-\u{200F}1", "U+200F"),
        ("sample_code", "BV-\u{0007}1", "U+0007"),
        ("project", "bv\u{202D}", "U+202D"),
        ("station", "BV\u{061C}-12", "U+061C"),
        ("collector", "Field crew\u{200E} A", "U+200E"),
        ("collector", "Field\tcrew", "U+0009"),
        ("lithology", "phyl\u{0085}lite", "U+0085"),
        ("lithology", "two\nlines", "U+000A"),
        ("notes", "flakes \u{202B}bend", "U+202B"),
        ("notes", "bell\u{0007}", "U+0007"),
        ("notes", "lone\rreturn", "U+000D"),
        ("edited_by", "crew\u{2069}", "U+2069"),
    ];
    for (field, value, code) in cases {
        let mut body = json!({"sample_code": "BV-1"});
        body[*field] = json!(value);
        // Act
        let r = app.post_json(SAMPLES, &body.to_string()).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field} {value:?}: {}",
            r.text()
        );
        let (f, message) = r.error();
        assert_eq!(f, *field, "{value:?}");
        assert!(message.contains(code), "{field}: {message}");
    }
    assert!(list_codes(&app, "").await.is_empty(), "nothing was saved");
}

#[tokio::test]
async fn notes_keep_their_line_breaks_and_tabs() {
    let app = TestApp::new().await;
    let notes = "first line\r\nsecond\tline\nthird";
    let rec = create(&app, &json!({"sample_code": "BV-1", "notes": notes})).await;
    assert_eq!(rec["notes"], notes);
}

#[tokio::test]
async fn a_lone_surrogate_is_refused_naming_its_field_in_plain_words() {
    // Arrange
    let app = TestApp::new().await;
    for (body, field) in [
        (r#"{"sample_code": "BV-1", "notes": "a\ud800b"}"#, "notes"),
        (r#"{"sample_code": "BV-1", "station": "\udc00"}"#, "station"),
        (r#"{"sample_code": "\ud800"}"#, "sample_code"),
    ] {
        // Act
        let r = app.post_json(SAMPLES, body).await;
        // Assert
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            r.text()
        );
        let (f, message) = r.error();
        assert_eq!(f, field, "{body}");
        assert!(message.contains("surrogate"), "{message}");
        assert!(
            !message.contains("hex escape"),
            "our words, not the parser's: {message}"
        );
    }
    let r = app.identify(r#"{"colour": ["\ud800"]}"#).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", r.text());
    assert_eq!(r.error().0, "colour[0]");
    assert!(!r.error().1.contains("hex escape"), "{}", r.error().1);
}

// ---------------------------------------------------------------- repeated query parameters

#[tokio::test]
async fn a_repeated_query_parameter_is_refused_with_400_naming_it() {
    // Arrange
    let app = TestApp::new().await;
    scenario(&app).await;
    for uri in [
        format!("{SAMPLES}?project=bv&project=default"),
        format!("{SAMPLES}?limit=2&q=chlorite&limit=3"),
        "/export/samples.csv?field_id=chlorite&field_id=talc".to_string(),
        "/export/samples.geojson?setting=greenschist&setting=".to_string(),
    ] {
        // Act
        let r = app.get(&uri).await;
        // Assert
        assert_eq!(r.status, StatusCode::BAD_REQUEST, "{uri}: {}", r.text());
        let (field, message) = r.error();
        let name = uri
            .split(['?', '&'])
            .nth(1)
            .and_then(|kv| kv.split('=').next())
            .expect("first parameter");
        let repeated = if uri.contains("limit=2") {
            "limit"
        } else {
            name
        };
        assert_eq!(field, repeated, "{uri}");
        assert!(message.contains("once"), "{message}");
    }
}

// ---------------------------------------------------------------- formulas in the CSV export

#[tokio::test]
async fn csv_cells_a_spreadsheet_would_run_are_quoted_and_an_import_gives_the_same_records() {
    // Arrange: text a spreadsheet would take for a formula, in every free
    // text field, and a western longitude.
    let app = TestApp::new().await;
    let tricky = [
        "=1+1",
        "'=x",
        "'plain",
        "-",
        "@home",
        "+",
        "-5 m",
        "=HYPERLINK(\"http://example.invalid\",\"open\")",
        "''+2",
    ];
    for (i, t) in tricky.iter().enumerate() {
        create(
            &app,
            &json!({
                "sample_code": if i == 0 { (*t).to_string() } else { format!("BV-{i:02}") },
                "collector": t,
                "station": t,
                "lithology": t,
                "notes": format!("{t}\nsecond line"),
                "latitude": 64.1,
                "longitude": -20.306,
            }),
        )
        .await;
    }
    create(
        &app,
        &json!({"sample_code": "BV-tab", "notes": "'\tx", "latitude": 64.1, "longitude": -20.306}),
    )
    .await;
    let before = app.get(&format!("{SAMPLES}?limit=500")).await.json();
    // Act
    let r = app.get("/export/samples.csv").await;
    // Assert: the cells as a spreadsheet sees them.
    assert_eq!(r.status, StatusCode::OK);
    let mut rd = csv::Reader::from_reader(r.body.as_slice());
    let headers = rd.headers().expect("header").clone();
    let col = |name: &str| headers.iter().position(|h| h == name).expect("column");
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.expect("row")).collect();
    for row in &rows {
        for (i, cell) in row.iter().enumerate() {
            let column = &headers[i];
            let numeric = [
                "latitude",
                "longitude",
                "coordinate_uncertainty_m",
                "revision",
                "top_probability",
            ]
            .contains(&column)
                && cell.parse::<f64>().is_ok();
            assert!(
                numeric || !cell.starts_with(['=', '+', '-', '@', '\t', '\r']),
                "{column} starts a formula: {cell:?}"
            );
        }
        assert_eq!(&row[col("longitude")], "-20.306");
    }
    let first = rows
        .iter()
        .find(|r| &r[col("sample_code")] == "'=1+1")
        .expect("the =1+1 row, quoted");
    assert_eq!(&first[col("station")], "'=1+1");
    let quoted = rows
        .iter()
        .find(|r| &r[col("sample_code")] == "BV-01")
        .expect("BV-01");
    assert_eq!(&quoted[col("collector")], "''=x");
    let plain = rows
        .iter()
        .find(|r| &r[col("sample_code")] == "BV-02")
        .expect("BV-02");
    assert_eq!(&plain[col("collector")], "'plain");

    // Act: import the file into an empty log.
    let other = TestApp::new().await;
    let pool = other.pool().await;
    let report = basal::import::run(
        &pool,
        &r.body,
        "default",
        &Default::default(),
        false,
        None,
        &|| {},
        &|_| {},
    )
    .await
    .expect("import");
    // Assert: the same records, field for field.
    assert!(report.errors.is_empty(), "{:?}", report.errors);
    let after = other.get(&format!("{SAMPLES}?limit=500")).await.json();
    assert_eq!(after["samples"], before["samples"]);
}

#[tokio::test]
async fn the_sample_form_refuses_the_same_characters_with_the_same_message_and_keeps_the_values() {
    // Arrange
    let app = TestApp::new().await;
    let mut s = crate::helpers::Session::new(&app);
    s.get("/samples/new").await;
    for (fields, code) in [
        ("sample_code=BV-%E2%80%AE9&notes=kept+note", "U+202E"),
        ("sample_code=BV-9&notes=kept+note%E2%81%A6", "U+2066"),
        ("sample_code=BV-9&station=BV%07&notes=kept+note", "U+0007"),
        (
            "sample_code=BV-9&notes=kept+note&edited_by=crew%E2%80%8F",
            "U+200F",
        ),
    ] {
        // Act
        let r = s
            .submit("/samples", &format!("project=default&{fields}"))
            .await;
        // Assert
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{fields}");
        let html = r.text();
        assert!(html.contains(code), "{fields}: no message naming {code}");
        assert!(html.contains("kept note"), "{fields}: the values are kept");
    }
    assert!(list_codes(&app, "").await.is_empty(), "nothing was saved");
}
