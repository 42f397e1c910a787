//! The questioning flow in HTML, page by page and error by error.

use axum::http::{StatusCode, header};

use crate::helpers::{Session, TestApp};

/// The draft id in a question page's form action.
fn draft_of(html: &str) -> String {
    let start = html
        .find("action=\"/identify/")
        .expect("a form posting to a draft")
        + "action=\"/identify/".len();
    html[start..start + 36].to_string()
}

/// (entry id, probability) of every results marker, in page order.
fn markers(html: &str) -> Vec<(String, f64)> {
    html.match_indices("data-entry-id=\"")
        .map(|(i, _)| {
            let rest = &html[i + "data-entry-id=\"".len()..];
            let id = rest[..rest.find('"').expect("closing quote")].to_string();
            let p = rest.find("data-probability=\"").expect("probability")
                + "data-probability=\"".len();
            let num = &rest[p..p + rest[p..].find('"').expect("closing quote")];
            (id, num.parse().expect("a number"))
        })
        .collect()
}

async fn started(s: &mut Session<'_>) -> String {
    let r = s.get("/identify").await;
    assert_eq!(r.status, StatusCode::OK);
    draft_of(&r.text())
}

#[tokio::test]
async fn starting_shows_a_question_form_for_a_new_stored_draft() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let r = s.get("/identify").await;
    assert_eq!(r.status, StatusCode::OK);
    let html = r.text();
    assert!(html.contains("<form method=\"post\""));
    assert!(html.contains("name=\"_csrf\""));
    assert!(html.contains("name=\"question\""));
    assert!(!html.to_lowercase().contains("<script"));
    assert!(
        r.headers[header::CONTENT_SECURITY_POLICY]
            .to_str()
            .expect("csp")
            .contains("script-src 'none'")
    );
    let cookie = r.headers[header::SET_COOKIE].to_str().expect("cookie");
    assert!(
        cookie.contains("HttpOnly") && cookie.contains("SameSite=Strict"),
        "{cookie}"
    );
    // The draft has its own URL, which shows a question too.
    let id = draft_of(&html);
    assert_eq!(
        s.get(&format!("/identify/{id}")).await.status,
        StatusCode::OK
    );
}

#[tokio::test]
async fn a_specimen_walks_from_questions_to_ranked_results() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let url = format!("/identify/{id}");
    for fields in [
        "question=setting&setting=greenschist",
        "question=cleavage&cleavage=one_perfect",
        "question=tenacity&tenacity=flexible",
        "question=colour&colour=green&colour=dark_green",
        "question=streak&streak=greenish",
    ] {
        let r = s.submit(&url, fields).await;
        assert_eq!(r.status, StatusCode::SEE_OTHER, "{fields}: {}", r.text());
        assert_eq!(r.location(), url);
    }
    let r = s.get(&format!("{url}/results")).await;
    assert_eq!(r.status, StatusCode::OK);
    let html = r.text();
    // Answers so far, each with a change link.
    assert!(
        html.contains(&format!("{url}?q=tenacity")),
        "no change link"
    );
    let m = markers(&html);
    assert_eq!(m.len(), 26, "every entry has a marker");
    // Green flakes that bend and stay bent, with a greenish streak, in a
    // greenschist: chlorite (Handbook of Mineralogy, clinochlore sheet:
    // green, laminae flexible but inelastic, greenish white streak, in
    // chlorite schists, as the base cites it; the field call is common
    // practice).
    assert_eq!(m[0].0, "chlorite");
    assert!(
        m.windows(2).all(|w| w[0].1 >= w[1].1),
        "markers in rank order"
    );
    // The markers are the engine's probabilities for these answers (to the
    // four decimals the page prints), and with "outside the base" they sum
    // to 1 ± 0.001, as the contract says of the API.
    let same = basal::engine::input::observations_from_json(
        br#"{"setting": "greenschist", "cleavage": "one_perfect", "tenacity": "flexible",
            "colour": ["green", "dark_green"], "streak": "greenish"}"#,
    )
    .expect("valid");
    let engine = basal::engine::Engine::builtin().identify(&same);
    for (id, p) in &m {
        let c = engine
            .candidates
            .iter()
            .find(|c| &*c.id == id)
            .unwrap_or_else(|| panic!("{id} is not a candidate"));
        assert!(
            (c.probability - p).abs() <= 5e-5,
            "{id}: page {p}, engine {}",
            c.probability
        );
    }
    let total: f64 = m.iter().map(|(_, p)| p).sum::<f64>() + engine.outside_base;
    assert!((total - 1.0).abs() <= 0.001, "{total}");
    assert!(html.contains("To tell Chlorite from"), "a separating test");
}

#[tokio::test]
async fn a_blank_answer_records_not_tested_and_is_not_asked_again() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let url = format!("/identify/{id}");
    let first = s.get(&url).await.text();
    let asked = first
        .split("name=\"question\" value=\"")
        .nth(1)
        .and_then(|r| r.split('"').next())
        .expect("a question")
        .to_string();
    let r = s.submit(&url, &format!("question={asked}")).await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    let next = s.get(&url).await.text();
    assert!(
        !next.contains(&format!("name=\"question\" value=\"{asked}\"")),
        "asked {asked} again"
    );
    assert!(next.contains("Not tested:"));
}

#[tokio::test]
async fn a_bad_value_comes_back_with_the_typed_value_and_a_message_and_saves_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let url = format!("/identify/{id}");
    s.submit(&url, "question=cleavage&cleavage=one_perfect")
        .await;
    let cases = [
        (
            "question=hardness&hardness_min=soft",
            "value=\"soft\"",
            "not a number",
        ),
        (
            "question=hardness&hardness_min=4&hardness_max=3",
            "value=\"4\"",
            "must not exceed",
        ),
        (
            "question=specific_gravity&dry_mass_g=10&submerged_mass_g=12",
            "value=\"12\"",
            "less than the dry mass",
        ),
        // The valid colour stays ticked beside the refused one.
        (
            "question=colour&colour=green&colour=mauve",
            "value=\"green\" checked",
            "not allowed",
        ),
        // A radio group cannot hold a value outside its choices: the
        // message quotes the typed value back.
        (
            "question=cleavage&cleavage=perfect",
            "&#34;perfect&#34; is not allowed",
            "one_perfect",
        ),
    ];
    for (fields, kept, message) in cases {
        let r = s.submit(&url, fields).await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{fields}");
        let html = r.text();
        assert!(html.contains("class=\"field-error\""), "{fields}");
        assert!(html.contains(message), "{fields}: {message}");
        assert!(
            !kept.is_empty() && html.contains(kept),
            "{fields}: value not kept"
        );
    }
    // The earlier answer is intact.
    let results = s.get(&format!("{url}/results")).await.text();
    assert!(results.contains("one perfect cleavage"));
}

#[tokio::test]
async fn forged_posts_are_refused_with_a_clear_page() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let url = format!("/identify/{id}");
    // Wrong token.
    let r = s
        .post_form(
            &url,
            "_csrf=0123456789abcdef0123456789abcdef&question=cleavage&cleavage=one_perfect",
        )
        .await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
    assert!(r.text().contains("nothing was changed"));
    // No token.
    let r = s
        .post_form(&url, "question=cleavage&cleavage=one_perfect")
        .await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
    // A cookie-less client.
    let mut stranger = Session::new(&app);
    let r = stranger
        .post_form(&url, "_csrf=x&question=cleavage&cleavage=one_perfect")
        .await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
    // Another site's page, right token or not.
    let req = axum::http::Request::post(&url)
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .header(header::COOKIE, s.cookie.clone().expect("cookie"))
        .header("sec-fetch-site", "cross-site")
        .body(axum::body::Body::from(format!(
            "_csrf={}&question=cleavage&cleavage=one_perfect",
            s.token()
        )))
        .expect("request");
    assert_eq!(app.send(req).await.status, StatusCode::FORBIDDEN);
    // Nothing was recorded.
    assert!(
        !s.get(&format!("{url}/results"))
            .await
            .text()
            .contains("one perfect cleavage")
    );
}

#[tokio::test]
async fn unknown_drafts_and_questions_are_404_pages() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    for uri in [
        "/identify/00000000-0000-4000-8000-000000000000",
        "/identify/not-a-uuid",
        "/identify/00000000-0000-4000-8000-000000000000/results",
        "/identify/00000000-0000-4000-8000-000000000000/all",
    ] {
        let r = s.get(uri).await;
        assert_eq!(r.status, StatusCode::NOT_FOUND, "{uri}");
        assert!(r.text().contains("/identify/drafts"), "{uri}");
    }
    let id = started(&mut s).await;
    let r = s.get(&format!("/identify/{id}?q=sparkle")).await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
}

#[tokio::test]
async fn a_change_link_shows_the_recorded_answer_selected() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let url = format!("/identify/{id}");
    s.submit(&url, "question=luster&luster=pearly").await;
    let html = s.get(&format!("{url}?q=luster")).await.text();
    assert!(
        html.contains("value=\"pearly\" checked"),
        "pearly not selected"
    );
}

#[tokio::test]
async fn everything_at_once_goes_straight_to_the_results() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let all = s.get(&format!("/identify/{id}/all")).await;
    assert_eq!(all.status, StatusCode::OK);
    assert_eq!(all.text().matches("<fieldset").count(), 14);
    let r = s
        .submit(
            &format!("/identify/{id}/all"),
            "cleavage=one_perfect&tenacity=elastic&colour=black&colour=brown&luster=vitreous&habit=books\
             &scratch_fingernail=false&scratch_copper=true&specific_gravity=3.0&setting=granite&magnetic=",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    assert_eq!(r.location(), format!("/identify/{id}/results"));
    let m = markers(&s.get(&r.location()).await.text());
    assert_eq!(m[0].0, "biotite");
    // A bad value keeps every typed value and saves nothing.
    let bad = s
        .submit(
            &format!("/identify/{id}/all"),
            "cleavage=none_visible&hardness_max=eleven",
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(bad.text().contains("value=\"none_visible\" checked"));
    assert_eq!(
        markers(&s.get(&format!("/identify/{id}/results")).await.text())[0].0,
        "biotite"
    );
}

#[tokio::test]
async fn the_flow_ends_by_itself_when_no_question_is_worth_asking() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    s.submit(
        &format!("/identify/{id}/all"),
        "cleavage=one_perfect&tenacity=elastic&colour=colourless&colour=silvery&luster=pearly&habit=books\
         &streak=white&diaphaneity=transparent&hardness_min=2.5&hardness_max=3&specific_gravity=2.83\
         &setting=pegmatite&feel=smooth&wet_behaviour=unchanged&magnetic=false&acid_reaction=false",
    )
    .await;
    let r = s.get(&format!("/identify/{id}")).await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert_eq!(r.location(), format!("/identify/{id}/results"));
}

#[tokio::test]
async fn drafts_are_listed_and_can_be_discarded() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    s.submit(&format!("/identify/{id}"), "question=habit&habit=fibrous")
        .await;
    let list = s.get("/identify/drafts").await.text();
    assert!(
        list.contains(&format!("/identify/{id}")),
        "draft not listed"
    );
    let r = s.submit(&format!("/identify/{id}/discard"), "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert!(
        !s.get("/identify/drafts")
            .await
            .text()
            .contains(&format!("/identify/{id}\""))
    );
    assert_eq!(
        s.get(&format!("/identify/{id}")).await.status,
        StatusCode::NOT_FOUND
    );
    // Discarding needs the token too.
    let other = started(&mut s).await;
    let r = s.post_form(&format!("/identify/{other}/discard"), "").await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
}

#[tokio::test]
async fn an_asbestiform_specimen_shows_the_caution_box_and_the_lab_line() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    s.submit(
        &format!("/identify/{id}/all"),
        "habit=fibrous&luster=silky&setting=ultramafic",
    )
    .await;
    let html = s.get(&format!("/identify/{id}/results")).await.text();
    assert!(html.contains("caution-asbestos"));
    assert!(html.contains("Do not break"));
    assert!(html.contains("local regulations"));
    let serp = started(&mut s).await;
    s.submit(
        &format!("/identify/{serp}/all"),
        "habit=massive&luster=waxy&colour=green&setting=ultramafic",
    )
    .await;
    let html = s.get(&format!("/identify/{serp}/results")).await.text();
    assert!(html.contains("In the laboratory:"), "no lab line");
    assert!(html.contains("XRD"));
}

#[tokio::test]
async fn outside_the_base_is_said_plainly_when_large() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    s.submit(
        &format!("/identify/{id}/all"),
        "cleavage=none_visible&tenacity=brittle&scratches_glass=true&luster=vitreous&colour=colourless\
         &habit=crystals&specific_gravity=2.65",
    )
    .await;
    let html = s.get(&format!("/identify/{id}/results")).await.text();
    assert!(
        html.contains("fit none of the minerals in the base"),
        "no outside warning"
    );
}

#[tokio::test]
async fn a_real_browser_s_same_origin_post_is_accepted() {
    // What Chromium sends on a form post to the page's own origin.
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let req = axum::http::Request::post(format!("/identify/{id}"))
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .header(header::COOKIE, s.cookie.clone().expect("cookie"))
        .header(header::HOST, "127.0.0.1:8080")
        .header(header::ORIGIN, "http://127.0.0.1:8080")
        .header("sec-fetch-site", "same-origin")
        .body(axum::body::Body::from(format!(
            "_csrf={}&question=cleavage&cleavage=one_perfect",
            s.token()
        )))
        .expect("request");
    assert_eq!(app.send(req).await.status, StatusCode::SEE_OTHER);
}
