//! Reference pages (`/minerals`, `/minerals/{id}`).

use axum::http::{StatusCode, header};
use basal::base::REQUIRED_IDS;

use crate::helpers::{Reply, TestApp};

#[path = "../common/handbook.rs"]
mod handbook;

/// Asserts what every HTML page of ours must be: HTML, under the CSP that
/// forbids scripts, with no script in it, in the layout, with our stylesheet.
fn assert_is_reference_html(r: &Reply, uri: &str) {
    let ct = r
        .headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    assert!(ct.starts_with("text/html"), "{uri}: content type {ct}");
    let csp = r
        .headers
        .get(header::CONTENT_SECURITY_POLICY)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    assert!(csp.contains("script-src 'none'"), "{uri}: CSP {csp:?}");
    let body = r.text();
    assert!(
        !body.to_ascii_lowercase().contains("<script"),
        "{uri} has a script"
    );
    assert!(
        body.contains("class=\"masthead\""),
        "{uri}: not in the layout"
    );
    assert!(
        body.contains(r#"<link rel="stylesheet" href="/static/reference.css">"#),
        "{uri}: no reference stylesheet"
    );
}

/// The text of the `n` table cells that follow the first `marker` in
/// `html` (attributes ignored, inner tags dropped).
fn cells_after(html: &str, marker: &str, n: usize) -> Vec<String> {
    let Some(start) = html.find(marker) else {
        panic!("{marker} not found");
    };
    let mut rest = &html[start + marker.len()..];
    let mut out = Vec::new();
    while out.len() < n {
        let Some(open) = rest.find("<td") else { break };
        let Some(gt) = rest[open..].find('>') else {
            break;
        };
        let inner_start = open + gt + 1;
        let Some(close) = rest[inner_start..].find("</td>") else {
            break;
        };
        let inner = &rest[inner_start..inner_start + close];
        let mut text = String::new();
        let mut in_tag = false;
        for c in inner.chars() {
            match c {
                '<' => in_tag = true,
                '>' => in_tag = false,
                c if !in_tag => text.push(c),
                _ => {}
            }
        }
        out.push(text.trim().to_string());
        rest = &rest[inner_start + close..];
    }
    out
}

#[tokio::test]
async fn the_list_page_links_every_entry_of_the_base() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app.get("/minerals").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_is_reference_html(&r, "/minerals");
    let body = r.text();
    for id in REQUIRED_IDS {
        assert!(
            body.contains(&format!("href=\"/minerals/{id}\"")),
            "no link to {id}"
        );
    }
    // The contract's 26 entries, each linked once.
    assert_eq!(body.matches("href=\"/minerals/").count(), 26);
    // Grouped: a heading per group, with the ranges in a table.
    for heading in [
        "<h2 id=\"mica\">",
        "<h2 id=\"serpentine\">",
        "<h2 id=\"not_sheet_silicate\">",
    ] {
        assert!(body.contains(heading), "no {heading}");
    }
    assert!(body.contains(r#"<th scope="col">Formula</th>"#));
    // Talc's display formula, and muscovite's ranges as the handbook sheet
    // prints them (`handbook::MUSCOVITE`, read once): its single hardness
    // figure widened by the base's ± 0.5 rule, and its D(meas.) range.
    assert!(body.contains("Mg₃Si₄O₁₀(OH)₂"));
    let sheet = &handbook::MUSCOVITE;
    let half = handbook::SINGLE_FIGURE_HARDNESS_HALF_WIDTH;
    let hardness = format!("{}–{}", sheet.hardness - half, sheet.hardness + half);
    let [d_lo, d_hi] = sheet.density_measured;
    let density = format!("{d_lo}–{d_hi}");
    let muscovite = r#"<a href="/minerals/muscovite">Muscovite</a>"#;
    assert_eq!(
        cells_after(&body, muscovite, 3),
        ["KAl₂(AlSi₃O₁₀)(OH,F)₂", hardness.as_str(), density.as_str()],
        "{}",
        sheet.citation
    );
    // Chrysotile is tagged with its hazard in the list, under the one name
    // and class the results and mineral pages use.
    assert!(
        body.contains(r#"<span class="tag tag-hazard hazard-asbestos">Asbestos mineral</span>"#)
    );
    assert!(!body.contains("asbestiform fibres"));
}

#[tokio::test]
async fn a_mineral_page_shows_formula_composition_sources_and_lookalikes() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app.get("/minerals/talc").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_is_reference_html(&r, "/minerals/talc");
    let body = r.text();
    assert!(body.contains("<h1>Talc</h1>"));
    // Display and ideal formula.
    assert!(body.contains("Mg₃Si₄O₁₀(OH)₂"));
    assert!(body.contains("<code>Mg3Si4O10(OH)2</code>"));
    // Talc Mg3Si4O10(OH)2, ideal: SiO2 63.37, MgO 31.88, H2O 4.75 wt %
    // (Handbook of Mineralogy, talc data sheet, 2001, version 1.2,
    // Chemistry column (3), the ideal-formula column).
    let oxides = &body[body.find("Oxides, wt %").expect("oxide table")..];
    for (oxide, wt) in [("SiO₂", "63.37"), ("MgO", "31.88"), ("H₂O", "4.75")] {
        let marker = format!(r#"<th scope="row">{oxide}</th>"#);
        assert_eq!(cells_after(oxides, &marker, 1), [wt], "{oxide}");
    }
    assert!(body.contains("IUPAC/CIAAW 2021"));
    // Every scored property has a row; sources are resolved to their kind
    // and citation (talc cites the handbook and common practice).
    for label in [
        "Cleavage",
        "Tenacity",
        "Hardness",
        "Specific gravity",
        "With a drop of water",
        "Setting",
    ] {
        assert!(
            body.contains(&format!(r#"<th scope="row">{label}</th>"#)),
            "no row for {label}"
        );
    }
    assert!(body.contains(">handbook</a>"));
    assert!(body.contains(">common practice</a>"));
    assert!(body.contains(r#"id="source-hom""#));
    assert!(body.contains("Handbook of Mineralogy"));
    // Lookalikes link to their pages; talc and pyrophyllite are the classic
    // pair (common practice).
    assert!(body.contains(r#"<a href="/minerals/pyrophyllite">Pyrophyllite</a>"#));
    assert!(body.contains("Nearest lookalikes"));
    // Talc carries the dust caution, not the asbestos one.
    assert!(body.contains(r#"<aside class="caution hazard-dust""#));
    assert!(body.contains("Fine dust</h2>"));
    assert!(!body.contains("hazard-asbestos"));
}

#[tokio::test]
async fn the_separating_tests_say_what_each_mineral_shows() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app.get("/minerals/chlorite").await;
    // Assert: chlorite flakes stay bent, muscovite flakes spring back
    // (common practice; the base's tenacity values).
    assert_eq!(r.status, StatusCode::OK);
    let body = r.text();
    assert!(body.contains(r#"<a href="/minerals/muscovite">Muscovite</a>"#));
    let muscovite = body
        .find(r#"<a href="/minerals/muscovite">Muscovite</a>"#)
        .expect("muscovite is a lookalike");
    assert_eq!(
        cells_after(&body[muscovite..], r#"<th scope="row">Tenacity</th>"#, 2),
        ["flexible (stays bent)", "elastic (springs back)"]
    );
}

#[tokio::test]
async fn white_micas_are_said_to_need_the_laboratory() {
    // Muscovite and paragonite cannot be told apart in hand specimen (from
    // memory; the base's notes say so).
    let app = TestApp::new().await;
    let body = app.get("/minerals/muscovite").await.text();
    assert!(body.contains(r#"<a href="/minerals/paragonite">Paragonite</a>"#));
    assert!(body.contains("No hand test separates Muscovite from Paragonite well."));
    assert!(!body.contains("class=\"caution\""));
}

#[tokio::test]
async fn talc_and_pyrophyllite_are_said_to_have_no_hand_test_and_no_weak_table() {
    // Pyrophyllite cannot be told from talc in hand specimen; XRD or the
    // cobalt nitrate test does (Klein & Dutrow, Manual of Mineral Science,
    // pyrophyllite; from memory). The tests offered follow the results
    // page's rule (engine::lookalikes::contrast), so no "weak" table either.
    let app = TestApp::new().await;
    let body = app.get("/minerals/talc").await.text();
    let at = body
        .find(r#"<a href="/minerals/pyrophyllite">Pyrophyllite</a>"#)
        .expect("pyrophyllite is talc's lookalike");
    let section = &body[at..at + body[at..].find("</section>").expect("section end")];
    assert!(section.contains("No hand test separates Talc from Pyrophyllite well."));
    assert!(section.contains("cobalt nitrate"), "{section}");
    assert!(!section.contains("<table"), "{section}");
}

#[tokio::test]
async fn chrysotile_shows_the_asbestos_caution() {
    // Arrange
    let app = TestApp::new().await;
    // Act
    let r = app.get("/minerals/chrysotile").await;
    // Assert
    assert_eq!(r.status, StatusCode::OK);
    let body = r.text();
    assert!(body.contains(r#"<aside class="caution hazard-asbestos""#));
    assert!(body.contains("Asbestos mineral"));
    assert!(!body.contains("Caution: asbestos mineral"));
    for words in [
        "Do not break, scrape, grind or saw it dry",
        "Wet it, seal it in a labelled bag",
        "local regulations",
        "licensed practitioners",
    ] {
        assert!(body.contains(words), "caution lacks {words:?}");
    }
    // The caution comes before the properties.
    let caution = body.find("Asbestos mineral</h2>").unwrap_or(usize::MAX);
    let props = body.find("id=\"properties\"").unwrap_or(0);
    assert!(caution < props);
}

#[tokio::test]
async fn a_halogen_bearing_entry_shows_its_correction() {
    // Fluorapophyllite KCa4Si8O20F·8H2O: F 2.09, −O = F2 0.88 wt %
    // (Handbook of Mineralogy, fluorapophyllite data sheet, 2001, version
    // 1.2, Chemistry column (2)).
    let app = TestApp::new().await;
    let body = app.get("/minerals/apophyllite").await.text();
    let oxides = &body[body.find("Oxides, wt %").expect("oxide table")..];
    assert_eq!(
        cells_after(oxides, r#"<th scope="row">F</th>"#, 1),
        ["2.09"]
    );
    assert_eq!(
        cells_after(oxides, r#"<th scope="row">less O ≡ F, Cl</th>"#, 1),
        ["−0.88"]
    );
}

#[tokio::test]
async fn every_entry_has_a_page() {
    let app = TestApp::new().await;
    for id in REQUIRED_IDS {
        let uri = format!("/minerals/{id}");
        let r = app.get(&uri).await;
        assert_eq!(r.status, StatusCode::OK, "{uri}");
        assert_is_reference_html(&r, &uri);
        assert!(r.text().contains("Nearest lookalikes"), "{uri}");
    }
}

#[tokio::test]
async fn an_unknown_id_gives_a_404_page_in_the_layout() {
    // Arrange
    let app = TestApp::new().await;
    for uri in [
        "/minerals/unobtainium",
        "/minerals/Muscovite",
        "/minerals/%3Cb%3Ebold%3C%2Fb%3E",
        "/minerals/%FF%FE",
    ] {
        // Act
        let r = app.get(uri).await;
        // Assert
        assert_eq!(r.status, StatusCode::NOT_FOUND, "{uri}");
        assert_is_reference_html(&r, uri);
        let body = r.text();
        assert!(body.contains("No such mineral"), "{uri}");
        assert!(
            body.contains(r#"<a href="/minerals">See every mineral in the base</a>"#),
            "{uri}"
        );
        assert!(!body.contains("<b>"), "{uri}: the id is not escaped");
    }
    let body = app.get("/minerals/unobtainium").await.text();
    assert!(body.contains("unobtainium"));
}

#[tokio::test]
async fn the_reference_stylesheet_is_served() {
    let app = TestApp::new().await;
    let r = app.get("/static/reference.css").await;
    assert_eq!(r.status, StatusCode::OK);
    let ct = r
        .headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    assert!(ct.starts_with("text/css"), "{ct}");
    assert!(r.text().contains("@media (max-width: 40rem)"));
}
