//! `GET /api/v1/minerals` and `/api/v1/minerals/{id}`.

use axum::http::StatusCode;

use crate::helpers::TestApp;

#[tokio::test]
async fn the_base_lists_every_contract_entry_with_sources() {
    let app = TestApp::new().await;
    let r = app.get("/api/v1/minerals").await;
    assert_eq!(r.status, StatusCode::OK);
    let v = r.json();
    let list = v["minerals"].as_array().expect("list");
    for id in basal::base::REQUIRED_IDS {
        let m = list
            .iter()
            .find(|m| m["id"] == *id)
            .unwrap_or_else(|| panic!("{id} missing"));
        assert!(m["ideal_formula"].is_string() && m["group"].is_string());
        let src = &m["sources"]["hardness"];
        assert!(
            src["citation"].as_str().is_some_and(|c| !c.is_empty()),
            "{id}: {src}"
        );
        assert!(src["kind"].is_string());
    }
    assert!(v["base_version"].is_string());
}

#[tokio::test]
async fn one_mineral_by_id() {
    let app = TestApp::new().await;
    let v = app.get("/api/v1/minerals/talc").await.json();
    assert_eq!(v["mineral"]["id"], "talc");
    assert_eq!(v["mineral"]["group"], "talc_pyrophyllite");
    assert_eq!(v["mineral"]["ideal_formula"], "Mg3Si4O10(OH)2");
    // Talc Mg3Si4O10(OH)2, ideal: SiO2 63.37, MgO 31.88, H2O 4.75 wt %
    // (Handbook of Mineralogy, talc data sheet, ideal-formula column).
    let oxides = v["mineral"]["ideal_composition"]["oxides"]
        .as_array()
        .expect("oxides");
    let wt = |name: &str| {
        oxides
            .iter()
            .find(|o| o[0] == name)
            .and_then(|o| o[1].as_f64())
            .expect("oxide")
    };
    assert!((wt("SiO2") - 63.37).abs() < 0.05);
    assert!((wt("MgO") - 31.88).abs() < 0.05);
    assert!((wt("H2O") - 4.75).abs() < 0.05);
}

#[tokio::test]
async fn an_unknown_id_is_404_with_the_error_shape() {
    let app = TestApp::new().await;
    let r = app.get("/api/v1/minerals/unobtainium").await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    let (field, message) = r.error();
    assert_eq!(field, "id");
    assert!(message.contains("unobtainium"));
}

#[tokio::test]
async fn an_unknown_api_path_is_404_with_the_error_shape() {
    let app = TestApp::new().await;
    let r = app.get("/api/v1/nothing-here").await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    r.error();
}
