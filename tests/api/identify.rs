//! `POST /api/v1/identify`, per the contract.

use axum::http::StatusCode;

use crate::helpers::TestApp;

#[tokio::test]
async fn observations_in_scored_candidates_out() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app
        .identify(r#"{"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["black"], "setting": "granite"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let v = r.json();
    let cands = v["candidates"].as_array().expect("candidates");
    // Every entry of the contract's base (26) is scored. A black mica whose
    // flakes spring back, in granite, is biotite: the everyday field call
    // (common practice), which the base's biotite entry encodes.
    assert_eq!(cands.len(), 26);
    assert_eq!(cands[0]["id"], "biotite");
    for key in [
        "id",
        "name",
        "probability",
        "sheet_silicate",
        "agrees",
        "conflicts",
    ] {
        assert!(cands[0].get(key).is_some(), "candidate lacks {key}");
    }
    let total: f64 = cands
        .iter()
        .map(|c| c["probability"].as_f64().expect("p"))
        .sum::<f64>()
        + v["outside_base"].as_f64().expect("outside");
    // The contract: candidates plus outside_base sum to 1 (± 0.001).
    assert!((total - 1.0).abs() <= 0.001, "{total}");
    assert!(
        v["groups"]
            .as_array()
            .expect("groups")
            .iter()
            .any(|g| g["id"] == "mica")
    );
    let q = &v["next_questions"][0];
    assert!(q["property"].is_string() && q["expected_gain_bits"].as_f64().expect("gain") > 0.0);
    // Our own floor for "says how": a sentence, not a bare label.
    assert!(q["how"].as_str().expect("how").len() > 20);
    assert!(v["cautions"].is_array());
    assert!(
        v["base_version"]
            .as_str()
            .expect("version")
            .starts_with("base-")
    );
}

#[tokio::test]
async fn an_empty_object_is_a_valid_request() {
    let app = TestApp::new().await;
    let r = app.identify("{}").await;
    assert_eq!(r.status, StatusCode::OK);
    // Nothing observed: every one of the contract's 14 properties is asked.
    assert_eq!(
        r.json()["next_questions"]
            .as_array()
            .expect("questions")
            .len(),
        14
    );
}

#[tokio::test]
async fn charset_parameters_are_allowed() {
    let app = TestApp::new().await;
    let r = app
        .post_raw(
            "/api/v1/identify",
            Some("application/json; charset=utf-8"),
            "{}",
        )
        .await;
    assert_eq!(r.status, StatusCode::OK);
}

#[tokio::test]
async fn chrysotile_carries_the_asbestos_caution() {
    let app = TestApp::new().await;
    let r = app
        .identify(r#"{"habit": "fibrous", "luster": "silky", "setting": "ultramafic"}"#)
        .await;
    let v = r.json();
    // Silky fibres in an ultramafic rock are fibrous serpentine, chrysotile
    // (common practice; the base's chrysotile entry encodes it).
    assert_eq!(v["candidates"][0]["id"], "chrysotile");
    assert_eq!(v["cautions"][0]["code"], "asbestos");
}

#[tokio::test]
async fn wrong_content_types_get_415_with_the_error_shape() {
    let app = TestApp::new().await;
    for ct in [
        None,
        Some("text/plain"),
        Some("application/x-www-form-urlencoded"),
        Some("application/jsonx"),
    ] {
        let r = app.post_raw("/api/v1/identify", ct, "{}").await;
        assert_eq!(r.status, StatusCode::UNSUPPORTED_MEDIA_TYPE, "{ct:?}");
        r.error();
    }
}

#[tokio::test]
async fn an_oversized_body_gets_413() {
    let app = TestApp::new().await;
    let big = format!(r#"{{"cleavage": "one_perfect"{}}}"#, " ".repeat(70 * 1024));
    let r = app.identify(&big).await;
    assert_eq!(r.status, StatusCode::PAYLOAD_TOO_LARGE);
    r.error();
}

#[tokio::test]
async fn a_body_just_under_the_limit_is_read() {
    let app = TestApp::new().await;
    let body = format!(r#"{{"cleavage": "one_perfect"{}}}"#, " ".repeat(60 * 1024));
    assert_eq!(app.identify(&body).await.status, StatusCode::OK);
}

#[tokio::test]
async fn malformed_json_gets_400_with_the_error_shape() {
    let app = TestApp::new().await;
    for body in [
        "{",
        "",
        "cleavage=one_perfect",
        "{\"cleavage\": }",
        "{} trailing",
        "{'cleavage': 1}",
    ] {
        let r = app.identify(body).await;
        assert_eq!(r.status, StatusCode::BAD_REQUEST, "{body:?}: {}", r.text());
        assert_eq!(r.error().0, "", "{body:?}");
    }
    let r = app
        .post_raw(
            "/api/v1/identify",
            Some("application/json"),
            b"{\"colour\": [\"gr\xffen\"]}".to_vec(),
        )
        .await;
    assert_eq!(r.status, StatusCode::BAD_REQUEST);
}

#[tokio::test]
async fn every_refusal_names_its_field() {
    let app = TestApp::new().await;
    // (body, field) pairs; every one must be 422 with the contract's shape.
    let cases = [
        (r#"[]"#, ""),
        (r#""one_perfect""#, ""),
        (r#"null"#, ""),
        (r#"{"lustre": "pearly"}"#, "lustre"),
        (r#"{"cleavage": "perfect"}"#, "cleavage"),
        (r#"{"cleavage": "ONE_PERFECT"}"#, "cleavage"),
        (r#"{"cleavage": 1}"#, "cleavage"),
        (
            r#"{"cleavage": "one_perfect", "cleavage": "two_directions"}"#,
            "cleavage",
        ),
        (r#"{"tenacity": "bendy"}"#, "tenacity"),
        (r#"{"colour": ["green", "teal"]}"#, "colour[1]"),
        (r#"{"colour": []}"#, "colour"),
        (r#"{"colour": "green"}"#, "colour"),
        (r#"{"hardness": {}}"#, "hardness"),
        (r#"{"hardness": {"min": 0}}"#, "hardness.min"),
        (r#"{"hardness": {"max": 10.5}}"#, "hardness.max"),
        (r#"{"hardness": {"min": 5, "max": 3}}"#, "hardness.min"),
        (r#"{"hardness": {"min": "2"}}"#, "hardness.min"),
        (r#"{"hardness": {"min": 2, "avg": 3}}"#, "hardness.avg"),
        (r#"{"hardness": 3}"#, "hardness"),
        (r#"{"hardness": {"min": 1e400}}"#, "hardness.min"),
        (r#"{"scratch": {"copper": "yes"}}"#, "scratch.copper"),
        (r#"{"scratch": {"quartz": true}}"#, "scratch.quartz"),
        (r#"{"scratches_glass": "no"}"#, "scratches_glass"),
        (r#"{"luster": "shiny"}"#, "luster"),
        (r#"{"habit": "platy"}"#, "habit"),
        (r#"{"feel": "slippery"}"#, "feel"),
        (r#"{"wet_behaviour": "sticky"}"#, "wet_behaviour"),
        (r#"{"streak": "purple"}"#, "streak"),
        (r#"{"diaphaneity": "clear"}"#, "diaphaneity"),
        (r#"{"specific_gravity": 9}"#, "specific_gravity"),
        (r#"{"specific_gravity": 0.9}"#, "specific_gravity"),
        (r#"{"specific_gravity": "2.8"}"#, "specific_gravity"),
        (
            r#"{"specific_gravity": {"dry_mass_g": 5, "submerged_mass_g": 6}}"#,
            "specific_gravity.submerged_mass_g",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": 5}}"#,
            "specific_gravity.submerged_mass_g",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": -5, "submerged_mass_g": 1}}"#,
            "specific_gravity.dry_mass_g",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": 20000, "submerged_mass_g": 1}}"#,
            "specific_gravity.dry_mass_g",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": 5, "submerged_mass_g": 3, "balance_resolution_g": 0}}"#,
            "specific_gravity.balance_resolution_g",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": 5, "submerged_mass_g": 3, "water_temp_c": 45}}"#,
            "specific_gravity.water_temp_c",
        ),
        (
            r#"{"specific_gravity": {"dry_mass_g": 5, "submerged_mass_g": 3, "salinity": 1}}"#,
            "specific_gravity.salinity",
        ),
        (r#"{"magnetic": "true"}"#, "magnetic"),
        (r#"{"acid_reaction": 0}"#, "acid_reaction"),
        (r#"{"setting": "volcano"}"#, "setting"),
    ];
    for (body, field) in cases {
        let r = app.identify(body).await;
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            r.text()
        );
        let (f, message) = r.error();
        assert_eq!(f, field, "{body}: {message}");
    }
}

#[tokio::test]
async fn enum_refusals_list_the_allowed_values() {
    let app = TestApp::new().await;
    let (_, m) = app.identify(r#"{"diaphaneity": "clear"}"#).await.error();
    assert!(
        m.contains("transparent") && m.contains("translucent") && m.contains("opaque"),
        "{m}"
    );
}

#[tokio::test]
async fn get_on_identify_is_not_allowed() {
    let app = TestApp::new().await;
    assert_eq!(
        app.get("/api/v1/identify").await.status,
        StatusCode::METHOD_NOT_ALLOWED
    );
}
