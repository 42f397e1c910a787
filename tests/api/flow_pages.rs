//! The questioning flow in HTML, page by page and error by error.

use axum::http::{StatusCode, header};

use crate::helpers::{Session, TestApp};

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

/// Opens the start page and submits its form with nothing answered: the
/// POST creates the draft. Returns the draft id.
async fn started(s: &mut Session<'_>) -> String {
    let r = s.get("/identify").await;
    assert_eq!(r.status, StatusCode::OK);
    let r = s.submit("/identify", "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let loc = r.location();
    let id = loc
        .strip_prefix("/identify/")
        .unwrap_or_else(|| panic!("redirected to {loc}"))
        .to_string();
    assert!(uuid::Uuid::try_parse(&id).is_ok(), "{loc}");
    id
}

/// Rows in the drafts table, discarded or not.
async fn draft_rows(app: &TestApp) -> i64 {
    let pool = app.pool().await;
    let n = sqlx::query_scalar("SELECT count(*) FROM drafts")
        .fetch_one(&pool)
        .await
        .expect("count");
    pool.close().await;
    n
}

#[tokio::test]
async fn gets_and_heads_of_identify_store_nothing() {
    // Arrange: a browser with a cookie and one without (a prefetch, a
    // crawler, another site's image tag).
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // Act: 100 page views.
    for i in 0..100 {
        let status = match i % 3 {
            0 => s.get("/identify").await.status,
            1 => app.get("/identify").await.status,
            _ => {
                app.send(
                    axum::http::Request::head("/identify")
                        .body(axum::body::Body::empty())
                        .expect("request"),
                )
                .await
                .status
            }
        };
        assert_eq!(status, StatusCode::OK, "request {i}");
    }
    // Assert: the table is empty.
    assert_eq!(draft_rows(&app).await, 0);
}

#[tokio::test]
async fn the_start_form_creates_the_draft_with_its_first_answer() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let html = s.get("/identify").await.text();
    assert!(
        html.contains("action=\"/identify\""),
        "the form posts to /identify"
    );
    assert!(
        html.contains("name=\"question\" value=\""),
        "no first question"
    );
    assert_eq!(draft_rows(&app).await, 0);
    let r = s
        .submit(
            "/identify",
            "question=setting&setting=greenschist&then=next",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let url = r.location();
    assert_eq!(draft_rows(&app).await, 1);
    let results = s.get(&format!("{url}/results")).await.text();
    assert!(results.contains("greenschist") || results.contains("Greenschist"));
    // A bad first answer comes back with the message and stores nothing.
    let r = s
        .submit("/identify", "question=hardness&hardness_min=soft")
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(r.text().contains("value=\"soft\""));
    assert_eq!(draft_rows(&app).await, 1);
    // "Every observation on one form" from the start page is a POST too.
    let r = s.submit("/identify", "then=all").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert!(r.location().ends_with("/all"), "{}", r.location());
}

#[tokio::test]
async fn a_cross_site_post_to_identify_is_refused_and_creates_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/identify").await;
    // Another site's page posting the start form, with the right token.
    let req = axum::http::Request::post("/identify")
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .header(header::COOKIE, s.cookie.clone().expect("cookie"))
        .header("sec-fetch-site", "cross-site")
        .body(axum::body::Body::from(format!("_csrf={}", s.token())))
        .expect("request");
    assert_eq!(app.send(req).await.status, StatusCode::FORBIDDEN);
    // No token, and a cookie-less client.
    assert_eq!(
        s.post_form("/identify", "then=next").await.status,
        StatusCode::FORBIDDEN
    );
    assert_eq!(
        Session::new(&app)
            .post_form("/identify", "_csrf=x")
            .await
            .status,
        StatusCode::FORBIDDEN
    );
    assert_eq!(draft_rows(&app).await, 0);
}

#[tokio::test]
async fn an_oversized_start_form_is_refused_and_creates_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/identify").await;
    let big = format!(
        "question=setting&setting=granite&pad={}",
        "x".repeat(100 * 1024)
    );
    let r = s.submit("/identify", &big).await;
    assert_eq!(r.status, StatusCode::PAYLOAD_TOO_LARGE);
    assert_eq!(draft_rows(&app).await, 0);
}

#[tokio::test]
async fn drafts_with_nothing_observed_are_not_listed() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let empty = started(&mut s).await;
    let full = started(&mut s).await;
    s.submit(&format!("/identify/{full}"), "question=habit&habit=books")
        .await;
    let list = s.get("/identify/drafts").await.text();
    assert!(list.contains(&format!("/identify/{full}\"")));
    assert!(!list.contains(&empty), "an empty draft is listed");
}

#[tokio::test]
async fn the_unfinished_list_shows_times_in_the_configured_zone_with_the_offset() {
    // Asia/Kolkata is UTC+05:30 all year (IANA), whatever day this runs.
    let app = TestApp::with_config(|c| {
        c.time_zone = jiff::tz::TimeZone::get("Asia/Kolkata").expect("zone");
    })
    .await;
    let mut s = Session::new(&app);
    let draft = started(&mut s).await;
    s.submit(&format!("/identify/{draft}"), "question=habit&habit=books")
        .await;
    let list = s.get("/identify/drafts").await.text();
    assert!(list.contains(&format!("/identify/{draft}\"")), "{list}");
    assert!(
        list.contains(" +05:30"),
        "no offset beside the time: {list}"
    );
    assert!(
        !list.contains("UTC"),
        "times are no longer shown in UTC: {list}"
    );
}

#[tokio::test]
async fn a_draft_saved_as_a_sample_links_to_it_on_the_list() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let draft = started(&mut s).await;
    let url = format!("/identify/{draft}");
    s.submit(&url, "question=setting&setting=greenschist").await;
    s.submit(&url, "question=tenacity&tenacity=flexible").await;
    // The new-sample form carries the draft along.
    let form = s.get(&format!("/samples/new?draft={draft}")).await.text();
    assert!(
        form.contains(&format!("name=\"draft\" value=\"{draft}\"")),
        "the sample form does not carry the draft"
    );
    let r = s
        .submit(
            "/samples",
            &format!(
                "project=default&sample_code=FLOW-1&setting=greenschist&draft={draft}\
                 &observations=%7B%22setting%22%3A%22greenschist%22%2C%22tenacity%22%3A%22flexible%22%7D"
            ),
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let sample = r.location();
    let list = s.get("/identify/drafts").await.text();
    assert!(
        list.contains(&format!("href=\"{sample}\"")),
        "no link to {sample} on the list"
    );
    assert!(list.contains("FLOW-1"));
    assert!(!list.contains("(done)"));
}

#[tokio::test]
async fn starting_shows_a_question_form_and_the_post_gives_the_draft_its_own_url() {
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
    let id = started(&mut s).await;
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
    // Chlorite leads by far more than ten to one: no separating test is
    // offered against a candidate that is not plausible.
    assert!(m[0].1 > 10.0 * m[1].1, "{m:?}");
    assert!(
        !html.contains("To tell Chlorite from"),
        "a test against {}",
        m[1].0
    );
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

/// A pale mica with the tests a geologist makes first (typical muscovite
/// values, Handbook of Mineralogy muscovite sheet as the base cites it),
/// one question form each: after these, no remaining question is expected
/// to tell 0.05 bits.
const PALE_MICA: [&str; 8] = [
    "question=cleavage&cleavage=one_perfect",
    "question=tenacity&tenacity=elastic",
    "question=colour&colour=colourless&colour=silvery",
    "question=luster&luster=pearly",
    "question=habit&habit=books",
    "question=streak&streak=white",
    "question=hardness&hardness_min=2.5&hardness_max=3",
    "question=setting&setting=pegmatite",
];

/// What a geologist answers to each of the questions PALE_MICA leaves open.
const REST: [(&str, &str, &str); 6] = [
    ("specific_gravity", "specific_gravity=2.83", "2.83"),
    ("feel", "feel=smooth", "smooth"),
    ("acid_reaction", "acid_reaction=false", "no fizz in acid"),
    ("diaphaneity", "diaphaneity=transparent", "transparent"),
    ("magnetic", "magnetic=false", "not pulled by the magnet"),
    ("wet_behaviour", "wet_behaviour=unchanged", "unchanged"),
];

async fn pale_mica(s: &mut Session<'_>) -> String {
    let id = started(s).await;
    let url = format!("/identify/{id}");
    for fields in PALE_MICA {
        let r = s.submit(&url, fields).await;
        assert_eq!(r.status, StatusCode::SEE_OTHER, "{fields}: {}", r.text());
        assert_eq!(r.location(), url, "{fields}");
    }
    id
}

#[tokio::test]
async fn below_the_threshold_the_question_page_stays_and_offers_results_and_every_question() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = pale_mica(&mut s).await;
    let r = s.get(&format!("/identify/{id}")).await;
    // Advice, not an end: the page is a question page, not a redirect.
    assert_eq!(
        r.status,
        StatusCode::OK,
        "redirected to {:?}",
        r.headers.get(header::LOCATION)
    );
    let html = r.text();
    assert!(html.contains("unlikely to change"), "no advice");
    assert!(html.contains(&format!("href=\"/identify/{id}/results\"")));
    assert!(html.contains("name=\"question\""), "no question form");
    for (p, _, _) in REST {
        assert!(
            html.contains(&format!("href=\"/identify/{id}?ask={p}\"")),
            "no link to ask {p}"
        );
    }
}

#[tokio::test]
async fn every_unanswered_property_can_be_asked_and_its_answer_is_recorded() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = pale_mica(&mut s).await;
    let url = format!("/identify/{id}");
    for (p, fields, _) in REST {
        let page = s.get(&format!("{url}?ask={p}")).await;
        assert_eq!(page.status, StatusCode::OK, "{p}");
        let html = page.text();
        assert!(
            html.contains(&format!("name=\"question\" value=\"{p}\"")),
            "?ask={p} asks something else"
        );
        // A hand-picked low-value question says so in words, not as 0.00.
        assert!(!html.contains("0.00 bits"), "{p}: 0.00 bits");
        assert!(
            html.contains("unlikely to change the answer"),
            "{p}: wording"
        );
        let r = s.submit(&url, &format!("question={p}&{fields}")).await;
        assert_eq!(r.status, StatusCode::SEE_OTHER, "{p}: {}", r.text());
    }
    let results = s.get(&format!("{url}/results")).await.text();
    for (p, _, shown) in REST {
        assert!(
            results.contains(&format!("{url}?q={p}")),
            "{p} is not among the answers"
        );
        assert!(results.contains(shown), "{p}: {shown} not shown");
    }
    // Nothing is left to ask, so the question page now goes to the results.
    let r = s.get(&url).await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert_eq!(r.location(), format!("{url}/results"));
}

#[tokio::test]
async fn the_results_page_lists_the_unanswered_questions_with_working_links() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = pale_mica(&mut s).await;
    // One recorded as not tested is listed too, and says so.
    s.submit(&format!("/identify/{id}"), "question=magnetic")
        .await;
    let html = s.get(&format!("/identify/{id}/results")).await.text();
    let section = &html[html.find("Not observed yet").expect("the list")..];
    for (p, _, _) in REST {
        let href = format!("/identify/{id}?ask={p}");
        assert!(
            section.contains(&format!("href=\"{href}\"")),
            "{p} not listed"
        );
        let page = s.get(&href).await;
        assert_eq!(page.status, StatusCode::OK, "{href}");
        assert!(
            page.text()
                .contains(&format!("name=\"question\" value=\"{p}\""))
        );
    }
    assert!(section.contains("recorded as not tested"));
    // An observed property is not in the list.
    assert!(!section.contains("?ask=cleavage"));
}

#[tokio::test]
async fn a_question_worth_asking_states_its_gain_in_bits() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = started(&mut s).await;
    let html = s.get(&format!("/identify/{id}")).await.text();
    assert!(html.contains("Expected to tell about"), "no figure");
    assert!(!html.contains("unlikely to change"));
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
async fn the_results_name_a_separating_test_only_between_plausible_leaders() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // A green flake of unknown tenacity: chlorite and biotite stay close.
    let id = started(&mut s).await;
    s.submit(
        &format!("/identify/{id}/all"),
        "cleavage=one_perfect&colour=dark_green&luster=vitreous&habit=flakes",
    )
    .await;
    let html = s.get(&format!("/identify/{id}/results")).await.text();
    let m = markers(&html);
    assert_eq!(
        (m[0].0.as_str(), m[1].0.as_str()),
        ("chlorite", "biotite"),
        "{m:?}"
    );
    assert!(html.contains("To tell Chlorite from Biotite"), "no test");
    // Biotite elastic, chlorite flexible (Handbook of Mineralogy, annite and
    // clinochlore sheets, tenacity; from memory).
    assert!(html.contains("<strong>Tenacity.</strong>"));
    assert!(html.contains("elastic (springs back) → typical of Biotite, not of Chlorite"));
    assert!(html.contains(&format!("/identify/{id}?ask=tenacity")));
    // A soapy, soft, white, pearly specimen: talc and pyrophyllite, which no
    // hand test separates (Klein & Dutrow, Manual of Mineral Science,
    // pyrophyllite; from memory): said plainly, with the laboratory note.
    let talc = started(&mut s).await;
    s.submit(
        &format!("/identify/{talc}/all"),
        "feel=soapy&hardness_max=1.5&colour=white&luster=pearly",
    )
    .await;
    let html = s.get(&format!("/identify/{talc}/results")).await.text();
    assert!(
        html.contains("No hand-sample test tells Talc from Pyrophyllite apart"),
        "not said plainly"
    );
    assert!(html.contains("In the laboratory:"));
    assert!(html.contains("cobalt nitrate"));
    assert!(!html.contains("To tell Talc from"));
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
