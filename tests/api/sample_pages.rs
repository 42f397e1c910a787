//! The sample log's pages: new sample, record with history, edit with
//! optimistic concurrency, tombstones, the filtered history with keyset
//! pages, and saving an identification as a sample.
//!
//! The data is an invented scenario: collectors "Field crew A" and "Field
//! crew B", stations "Ridge cut 3" and the like. Coordinates are arbitrary
//! points in open ocean chosen for the test, not places anyone sampled.

use axum::http::StatusCode;
use serde_json::json;

use crate::helpers::{Reply, Session, TestApp};

/// Undoes askama's HTML escaping of attribute values and text.
fn unescape(s: &str) -> String {
    s.replace("&quot;", "\"")
        .replace("&#34;", "\"")
        .replace("&#x27;", "'")
        .replace("&#39;", "'")
        .replace("&lt;", "<")
        .replace("&#60;", "<")
        .replace("&gt;", ">")
        .replace("&#62;", ">")
        .replace("&amp;", "&")
        .replace("&#38;", "&")
}

/// The `value` of the input named `name` (inputs write name before value).
fn input_value(html: &str, name: &str) -> Option<String> {
    let at = html.find(&format!("name=\"{name}\" value=\""))?;
    let rest = &html[at + format!("name=\"{name}\" value=\"").len()..];
    Some(unescape(&rest[..rest.find('"')?]))
}

/// The selected option of the select named `name`.
fn selected(html: &str, name: &str) -> Option<String> {
    let start = html.find(&format!("name=\"{name}\""))?;
    let rest = &html[start..html[start..].find("</select>")? + start];
    let opt = rest.find(" selected>")?;
    let before = &rest[..opt];
    let v = before.rfind("value=\"")? + "value=\"".len();
    Some(unescape(&before[v..opt - 1]))
}

/// The sample id of a record page, read from the contract's marker on the
/// page's `<main>` element.
fn sample_id(html: &str) -> String {
    let at = html
        .find("<main id=\"main\" data-sample-id=\"")
        .expect("a data-sample-id marker on <main>")
        + "<main id=\"main\" data-sample-id=\"".len();
    html[at..at + 36].to_string()
}

/// The first `data-entry-id` of a page (the leading candidate).
fn first_entry(html: &str) -> String {
    let at = html.find("data-entry-id=\"").expect("a candidate marker") + "data-entry-id=\"".len();
    html[at..at + html[at..].find('"').expect("quote")].to_string()
}

fn encode(pairs: &[(&str, &str)]) -> String {
    let mut s = form_urlencoded::Serializer::new(String::new());
    for (k, v) in pairs {
        s.append_pair(k, v);
    }
    s.finish()
}

/// Every field of the form for one invented sample.
fn full_form(code: &str) -> Vec<(&'static str, String)> {
    vec![
        ("project", "default".into()),
        ("sample_code", code.into()),
        ("collected_on", "2026-06-09".into()),
        ("collector", "Field crew A".into()),
        ("station", "Ridge cut 3".into()),
        ("latitude", "-41.5012".into()),
        ("longitude", "-20.3021".into()),
        ("coordinate_uncertainty_m", "10".into()),
        ("setting", "greenschist".into()),
        ("lithology", "chlorite schist".into()),
        ("field_id", "chlorite".into()),
        ("notes", "Green flakes along the foliation.".into()),
        ("edited_by", "Field crew A".into()),
    ]
}

fn form_body(fields: &[(&'static str, String)]) -> String {
    let pairs: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
    encode(&pairs)
}

fn with(
    fields: &[(&'static str, String)],
    key: &'static str,
    value: &str,
) -> Vec<(&'static str, String)> {
    let mut out: Vec<(&'static str, String)> =
        fields.iter().filter(|(k, _)| *k != key).cloned().collect();
    out.push((key, value.to_string()));
    out
}

/// Opens the new-sample form (to get the cookie) and saves `fields`.
async fn create(s: &mut Session<'_>, fields: &[(&'static str, String)]) -> Reply {
    let r = s.get("/samples/new").await;
    assert_eq!(r.status, StatusCode::OK);
    s.submit("/samples", &form_body(fields)).await
}

/// Creates a sample through the form and returns its id.
async fn created(s: &mut Session<'_>, code: &str) -> String {
    let r = create(s, &full_form(code)).await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    r.location()
        .strip_prefix("/samples/")
        .expect("a record URL")
        .to_string()
}

fn assert_no_script(html: &str) {
    assert!(!html.to_lowercase().contains("<script"), "a script element");
}

#[tokio::test]
async fn a_sample_saved_with_the_form_gets_a_record_page_with_dms() {
    // Arrange
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let form = s.get("/samples/new").await;
    assert_eq!(form.status, StatusCode::OK);
    let html = form.text();
    assert_no_script(&html);
    // The default project's scheme is S-{seq:4} (migration 0003).
    assert_eq!(input_value(&html, "sample_code").as_deref(), Some("S-0001"));
    for name in [
        "project",
        "collected_on",
        "latitude",
        "longitude",
        "coordinate_uncertainty_m",
        "setting",
        "lithology",
        "field_id",
        "notes",
    ] {
        assert!(
            html.contains(&format!("for=\"f-{name}\"")),
            "{name} has a label"
        );
    }
    // Act
    let r = s.submit("/samples", &form_body(&full_form("S-0001"))).await;
    // Assert
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let loc = r.location();
    let page = s.get(&loc).await;
    assert_eq!(page.status, StatusCode::OK);
    let html = page.text();
    assert_no_script(&html);
    assert_eq!(format!("/samples/{}", sample_id(&html)), loc);
    // -41.5012° = 41° 30′ 04.32″ S; -20.3021° = 20° 18′ 07.56″ W (arithmetic).
    assert!(html.contains("41°30′04.3″ S"), "{html}");
    assert!(html.contains("20°18′07.6″ W"));
    assert!(html.contains("± 10 m"));
    assert!(html.contains("Ridge cut 3") && html.contains("Field crew A"));
    assert!(html.contains("Revision 1"));
    assert!(html.contains("action=\"/samples/") && html.contains("/delete\""));
    // The API sees the same record.
    let api = app.get(&format!("/api/v1{loc}")).await.json();
    assert_eq!(api["sample_code"], "S-0001");
    assert_eq!(api["latitude"], json!(-41.5012));
    assert_eq!(api["field_id"], "chlorite");
}

#[tokio::test]
async fn a_taken_code_is_refused_beside_the_field_with_the_next_free_one() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    created(&mut s, "S-0001").await;
    let again = with(&full_form("S-0001"), "station", "Ridge cut 4");
    let r = create(&mut s, &again).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    assert!(
        html.contains("that code is taken in this project"),
        "{html}"
    );
    assert!(html.contains("the next free one is S-0002"));
    assert_eq!(
        input_value(&html, "station").as_deref(),
        Some("Ridge cut 4")
    );
    assert_eq!(input_value(&html, "sample_code").as_deref(), Some("S-0001"));
    // Nothing new was saved.
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(list["samples"].as_array().map(Vec::len), Some(1));
}

#[tokio::test]
async fn the_suggestion_follows_the_projects_scheme() {
    let app = TestApp::new().await;
    let pool = app.pool().await;
    assert!(
        basal::store::samples::create_project(&pool, "rc", "Ridge cuts (invented)", "RC-{seq:3}")
            .await
            .expect("project")
    );
    for code in ["RC-001", "RC-007", "RC-x"] {
        let r = app
            .post_json(
                "/api/v1/samples",
                &json!({"project": "rc", "sample_code": code}).to_string(),
            )
            .await;
        assert_eq!(r.status, StatusCode::CREATED);
    }
    let mut s = Session::new(&app);
    let html = s.get("/samples/new?project=rc").await.text();
    assert_eq!(input_value(&html, "sample_code").as_deref(), Some("RC-008"));
    assert_eq!(selected(&html, "project").as_deref(), Some("rc"));
    // The "suggest" button re-renders for the chosen project, saving nothing.
    let r = s
        .submit(
            "/samples",
            &encode(&[
                ("project", "rc"),
                ("sample_code", ""),
                ("station", "Ridge cut 3"),
                ("then", "suggest"),
            ]),
        )
        .await;
    assert_eq!(r.status, StatusCode::OK);
    let html = r.text();
    assert_eq!(input_value(&html, "sample_code").as_deref(), Some("RC-008"));
    assert_eq!(
        input_value(&html, "station").as_deref(),
        Some("Ridge cut 3")
    );
}

#[tokio::test]
async fn bad_values_are_refused_beside_their_fields_and_kept() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // (field, typed value, words the message must contain)
    let cases = [
        ("latitude", "95", "a latitude is at most 90°"),
        ("latitude", "north", "cannot be read as a latitude"),
        ("latitude", "41 30 18 E", "E marks a longitude"),
        ("longitude", "20 61 00 W", "61 minutes is not below 60"),
        ("collected_on", "2026-02-30", "is not a calendar date"),
        ("collected_on", "09/06/2026", "YYYY-MM-DD"),
        ("coordinate_uncertainty_m", "-3", "greater than 0"),
        ("sample_code", "", "a sample code is required"),
        ("setting", "volcano", "is not a setting"),
        ("field_id", "mica", "is not an entry of the property base"),
    ];
    for (field, value, words) in cases {
        let fields = with(&full_form("S-0009"), field, value);
        let r = create(&mut s, &fields).await;
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field}={value}"
        );
        let html = r.text();
        let err = html
            .find(&format!("id=\"e-{field}\""))
            .unwrap_or_else(|| panic!("{field}={value}: no message beside the field"));
        assert!(
            html[err..].contains(words),
            "{field}={value}: {}",
            &html[err..err + 300]
        );
        if matches!(
            field,
            "latitude" | "longitude" | "collected_on" | "coordinate_uncertainty_m"
        ) {
            assert_eq!(
                input_value(&html, field).as_deref(),
                Some(value),
                "{field} kept"
            );
        }
        assert_eq!(
            input_value(&html, "station").as_deref(),
            Some("Ridge cut 3")
        );
    }
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(
        list["samples"].as_array().map(Vec::len),
        Some(0),
        "nothing saved"
    );
}

#[tokio::test]
async fn an_edit_makes_revision_two_and_the_history_shows_the_difference() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = created(&mut s, "S-0001").await;
    let edit = s.get(&format!("/samples/{id}/edit")).await;
    assert_eq!(edit.status, StatusCode::OK);
    let html = edit.text();
    assert_eq!(input_value(&html, "revision").as_deref(), Some("1"));
    assert_eq!(input_value(&html, "latitude").as_deref(), Some("-41.5012"));
    assert_eq!(selected(&html, "field_id").as_deref(), Some("chlorite"));
    let mut fields = with(
        &full_form("S-0001"),
        "notes",
        "Green flakes; chlorite, checked at camp.",
    );
    fields = with(&fields, "edited_by", "Field crew B");
    fields.push(("revision", "1".into()));
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&fields))
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    assert_eq!(r.location(), format!("/samples/{id}"));
    let html = s.get(&format!("/samples/{id}")).await.text();
    assert!(html.contains("Revision 2"), "{html}");
    assert!(html.contains("by Field crew B"));
    let hist = &html[html.find("id=\"hist-h\"").expect("history")..];
    assert!(
        hist.contains("Green flakes along the foliation."),
        "the old notes"
    );
    assert!(
        hist.contains("Green flakes; chlorite, checked at camp."),
        "the new notes"
    );
    assert!(hist.contains("created"));
}

#[tokio::test]
async fn a_stale_edit_shows_both_versions_and_overwrites_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = created(&mut s, "S-0001").await;
    // Theirs: saved first, from revision 1.
    let mut theirs = with(&full_form("S-0001"), "notes", "Theirs: foliation measured.");
    theirs.push(("revision", "1".into()));
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&theirs))
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    // Yours: also from revision 1, saved second.
    let mut yours = with(&full_form("S-0001"), "notes", "Yours: sample bagged twice.");
    yours.push(("revision", "1".into()));
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&yours))
        .await;
    assert_eq!(r.status, StatusCode::CONFLICT);
    let html = r.text();
    assert_no_script(&html);
    assert!(html.contains("Theirs: foliation measured."));
    assert!(html.contains("Yours: sample bagged twice."));
    assert!(html.contains("Nothing was overwritten"));
    assert_eq!(
        input_value(&html, "revision").as_deref(),
        Some("2"),
        "re-apply on top of theirs"
    );
    let api = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(api["revision"], 2);
    assert_eq!(api["notes"], "Theirs: foliation measured.");
    // Re-applying mine on top of revision 2 works.
    let mut again = with(&full_form("S-0001"), "notes", "Yours: sample bagged twice.");
    again.push(("revision", "2".into()));
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&again))
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    let api = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(api["revision"], 3);
    assert_eq!(api["notes"], "Yours: sample bagged twice.");
}

#[tokio::test]
async fn delete_shows_a_tombstone_with_restore_and_restore_brings_it_back() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = created(&mut s, "S-0001").await;
    let r = s.submit(&format!("/samples/{id}/delete"), "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert_eq!(r.location(), format!("/samples/{id}"));
    let html = s.get(&format!("/samples/{id}")).await.text();
    assert!(html.contains("Deleted on"), "{html}");
    assert!(html.contains(&format!("action=\"/samples/{id}/restore\"")));
    assert!(!html.contains(&format!("href=\"/samples/{id}/edit\"")));
    assert!(html.contains("deleted"), "the history says so");
    assert!(
        !s.get("/samples").await.text().contains(&id),
        "not in the log"
    );
    // Editing a tombstone is refused without a 500.
    assert_eq!(
        s.get(&format!("/samples/{id}/edit")).await.status,
        StatusCode::CONFLICT
    );
    let r = s.submit(&format!("/samples/{id}/restore"), "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    let html = s.get(&format!("/samples/{id}")).await.text();
    assert!(!html.contains("Deleted on"));
    assert!(html.contains("Revision 3"));
    assert!(
        s.get("/samples").await.text().contains(&id),
        "back in the log"
    );
}

/// Creates invented samples through the API (faster than the form).
async fn seed(app: &TestApp) {
    let pool = app.pool().await;
    basal::store::samples::create_project(&pool, "rc", "Ridge cuts (invented)", "RC-{seq:3}")
        .await
        .expect("project");
    for i in 1..=7 {
        let (project, notes) = if i % 2 == 0 {
            ("rc", "talc schist, soapy")
        } else {
            ("default", "biotite granite")
        };
        let body = json!({
            "project": project,
            "sample_code": format!("H-{i:03}"),
            "collected_on": format!("2026-06-{:02}", i),
            "collector": "Field crew A",
            "station": format!("Ridge cut {i}"),
            "notes": notes,
        });
        let r = app.post_json("/api/v1/samples", &body.to_string()).await;
        assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    }
}

/// The sample codes listed on a history page, in order.
fn codes(html: &str) -> Vec<String> {
    html.match_indices("data-sample-row=\"")
        .map(|(i, _)| {
            let rest = &html[i..];
            let a = rest.find("\">H-").expect("a code link") + 2;
            rest[a..a + 5].to_string()
        })
        .collect()
}

fn next_link(html: &str) -> Option<String> {
    let at = html.find("rel=\"next\"")?;
    let before = &html[..at];
    let h = before.rfind("href=\"")? + "href=\"".len();
    Some(unescape(&before[h..before[h..].find('"')? + h]))
}

#[tokio::test]
async fn the_history_filters_and_its_pages_cover_every_row_once() {
    let app = TestApp::new().await;
    seed(&app).await;
    let mut s = Session::new(&app);
    // Everything, newest first.
    let html = s.get("/samples").await.text();
    assert_no_script(&html);
    assert_eq!(
        codes(&html),
        [
            "H-007", "H-006", "H-005", "H-004", "H-003", "H-002", "H-001"
        ]
    );
    assert!(html.contains("href=\"/export/samples.csv\""));
    // Filters (table-driven): query, expected codes.
    let cases: [(&str, &[&str]); 5] = [
        ("project=rc", &["H-006", "H-004", "H-002"]),
        ("q=talc", &["H-006", "H-004", "H-002"]),
        (
            "from=2026-06-03&to=2026-06-05",
            &["H-005", "H-004", "H-003"],
        ),
        ("project=default&from=2026-06-04", &["H-007", "H-005"]),
        (
            "field_id=none&collector=Field+crew+A&q=granite",
            &["H-007", "H-005", "H-003", "H-001"],
        ),
    ];
    for (q, want) in cases {
        let r = s.get(&format!("/samples?{q}")).await;
        assert_eq!(r.status, StatusCode::OK, "{q}");
        let html = r.text();
        assert_eq!(codes(&html), want, "{q}");
        assert!(
            html.contains("/export/samples.csv?"),
            "{q}: a filtered export link"
        );
    }
    let html = s.get("/samples?project=rc&q=talc").await.text();
    let csv = html
        .find("href=\"/export/samples.csv?")
        .expect("an export link")
        + 6;
    let href = unescape(&html[csv..csv + html[csv..].find('"').expect("quote")]);
    assert_eq!(href, "/export/samples.csv?project=rc&q=talc");
    assert_eq!(selected(&html, "project").as_deref(), Some("rc"));
    assert_eq!(input_value(&html, "q").as_deref(), Some("talc"));
    // Keyset pages of 3: every row once, in order, then no next link.
    let mut seen = Vec::new();
    let mut url = "/samples?limit=3".to_string();
    let mut pages = 0;
    loop {
        let html = s.get(&url).await.text();
        seen.extend(codes(&html));
        pages += 1;
        match next_link(&html) {
            Some(n) => {
                assert!(n.contains("cursor="), "{n}");
                url = n;
            }
            None => break,
        }
    }
    assert_eq!(pages, 3);
    assert_eq!(
        seen,
        [
            "H-007", "H-006", "H-005", "H-004", "H-003", "H-002", "H-001"
        ]
    );
}

#[tokio::test]
async fn a_bad_filter_is_a_422_page_with_the_message_beside_the_field() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let cases = [
        ("from=2026-13-01&q=ridge", "from", "is not a date"),
        ("to=yesterday", "to", "is not a date"),
        (
            "from=2026-06-05&to=2026-06-01",
            "to",
            "before the start date",
        ),
        ("setting=volcano", "setting", "is not a setting"),
    ];
    for (q, field, words) in cases {
        let r = s.get(&format!("/samples?{q}")).await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{q}");
        let html = r.text();
        let at = html
            .find(&format!("id=\"e-{field}\""))
            .unwrap_or_else(|| panic!("{q}: no message"));
        assert!(html[at..].contains(words), "{q}");
    }
    let html = s.get("/samples?from=2026-13-01&q=ridge").await.text();
    assert_eq!(
        input_value(&html, "from").as_deref(),
        Some("2026-13-01"),
        "typed value kept"
    );
    assert_eq!(input_value(&html, "q").as_deref(), Some("ridge"));
    // Unknown parameters and bad cursors are named too, never a 500.
    for q in ["colour=green", "cursor=abc", "limit=0"] {
        let r = s.get(&format!("/samples?{q}")).await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{q}");
        assert!(r.text().contains("class=\"form-error\""), "{q}");
    }
}

#[tokio::test]
async fn forged_posts_are_refused_and_change_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let id = created(&mut s, "S-0001").await;
    for (uri, body) in [
        ("/samples".to_string(), form_body(&full_form("S-0002"))),
        (format!("/samples/{id}/delete"), String::new()),
        (
            format!("/samples/{id}/edit"),
            form_body(&with(&full_form("S-0001"), "revision", "1")),
        ),
    ] {
        let r = s.post_form(&uri, &body).await;
        assert_eq!(r.status, StatusCode::FORBIDDEN, "{uri}");
        let r = s
            .post_form(
                &uri,
                &format!("_csrf=0123456789abcdef0123456789abcdef&{body}"),
            )
            .await;
        assert_eq!(r.status, StatusCode::FORBIDDEN, "{uri}: a wrong token");
    }
    let api = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(api["revision"], 1);
    assert_eq!(
        app.get("/api/v1/samples").await.json()["samples"]
            .as_array()
            .map(Vec::len),
        Some(1)
    );
}

#[tokio::test]
async fn unknown_samples_and_drafts_are_404_pages() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    for uri in [
        "/samples/00000000-0000-4000-8000-000000000000",
        "/samples/not-a-uuid",
        "/samples/00000000-0000-4000-8000-000000000000/edit",
        "/samples/new?draft=00000000-0000-4000-8000-000000000000",
        "/samples/new?draft=nonsense",
    ] {
        let r = s.get(uri).await;
        assert_eq!(r.status, StatusCode::NOT_FOUND, "{uri}");
        assert!(r.text().contains("<h1>Not found</h1>"), "{uri}");
    }
    let r = s.get("/samples/new").await;
    assert_eq!(r.status, StatusCode::OK);
    let r = s
        .submit("/samples/00000000-0000-4000-8000-000000000000/delete", "")
        .await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
}

#[tokio::test]
async fn saving_from_the_results_carries_the_observations_and_the_leader() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // An identification in the flow (typical chlorite answers, from memory).
    // The start page stores nothing; its form's POST creates the draft.
    s.get("/identify").await;
    let url = s.submit("/identify", "").await.location();
    let draft = url["/identify/".len()..].to_string();
    for fields in [
        "question=setting&setting=greenschist",
        "question=cleavage&cleavage=one_perfect",
        "question=tenacity&tenacity=flexible",
        "question=colour&colour=green",
    ] {
        assert_eq!(s.submit(&url, fields).await.status, StatusCode::SEE_OTHER);
    }
    let results = s.get(&format!("{url}/results")).await.text();
    let leader = first_entry(&results);
    let link = format!("href=\"/samples/new?draft={draft}\"");
    assert!(results.contains(&link), "a Save as a sample link");
    // The new-sample form carries the observations and preselects the leader.
    let form = s.get(&format!("/samples/new?draft={draft}")).await;
    assert_eq!(form.status, StatusCode::OK);
    let html = form.text();
    assert_eq!(
        selected(&html, "field_id").as_deref(),
        Some(leader.as_str())
    );
    assert_eq!(selected(&html, "setting").as_deref(), Some("greenschist"));
    let obs = input_value(&html, "observations").expect("hidden observations");
    let parsed: serde_json::Value = serde_json::from_str(&obs).expect("JSON");
    assert_eq!(parsed["tenacity"], "flexible");
    let code = input_value(&html, "sample_code").expect("a suggested code");
    let r = s
        .submit(
            "/samples",
            &encode(&[
                ("project", "default"),
                ("sample_code", &code),
                ("field_id", &leader),
                ("setting", "greenschist"),
                ("station", "Ridge cut 3"),
                ("observations", &obs),
            ]),
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let record = s.get(&r.location()).await.text();
    assert_eq!(
        first_entry(&record),
        leader,
        "the stored leader is the draft's"
    );
    assert!(
        record.contains("flexible (stays bent)"),
        "observations in words"
    );
    let api = app
        .get(&format!("/api/v1/samples/{}", sample_id(&record)))
        .await
        .json();
    assert_eq!(api["observations"]["tenacity"], "flexible");
    assert_eq!(api["identification"]["candidates"][0]["id"], json!(leader));
}

#[tokio::test]
async fn testing_a_saved_sample_again_puts_the_new_answers_into_it_as_a_new_revision() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // Saved first as a pale mica (answers typical of muscovite, from memory).
    let r = app
        .post_json(
            "/api/v1/samples",
            &json!({
                "sample_code": "RX-1",
                "station": "Ridge cut 5",
                "notes": "Pale flakes in the quartz vein.",
                "observations": {"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["colourless"]},
                "field_id": "muscovite"
            })
            .to_string(),
        )
        .await;
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    let id = r.json()["id"].as_str().expect("id").to_string();
    let record = s.get(&format!("/samples/{id}")).await.text();
    assert!(record.contains(&format!("action=\"/samples/{id}/reexamine\"")));

    // A forged start changes nothing and starts no draft.
    let forged = s
        .post_form(&format!("/samples/{id}/reexamine"), "_csrf=wrong")
        .await;
    assert_eq!(forged.status, StatusCode::FORBIDDEN);

    let r = s.submit(&format!("/samples/{id}/reexamine"), "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let url = r.location();
    let draft = url
        .strip_prefix("/identify/")
        .expect("a draft URL")
        .to_string();
    let question = s.get(&url).await.text();
    assert!(
        question.contains("Testing a saved sample again"),
        "{question}"
    );
    assert!(question.contains(&format!("href=\"/samples/{id}\"")));
    // The saved answers are the starting point.
    let all = s.get(&format!("{url}/all")).await.text();
    assert!(all.contains("value=\"one_perfect\" checked"), "{all}");

    // Looked at again: dark, a book of flakes, with a copper-coin scratch
    // (typical of biotite, from memory).
    let r = s
        .submit(
            &format!("{url}/all"),
            "cleavage=one_perfect&tenacity=elastic&colour=black&colour=brown&luster=vitreous&habit=books\
             &scratch_fingernail=false&scratch_copper=true&setting=granite",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let results = s.get(&format!("{url}/results")).await.text();
    let leader = first_entry(&results);
    assert_eq!(leader, "biotite");
    let into = format!("href=\"/samples/{id}/edit?draft={draft}\"");
    assert!(results.contains(&into), "{results}");
    assert!(results.contains("Put these into sample RX-1"));
    assert!(results.contains(&format!("href=\"/samples/new?draft={draft}\"")));

    // Nothing is changed until the edit form is saved.
    assert_eq!(
        app.get(&format!("/api/v1/samples/{id}")).await.json()["revision"],
        1
    );
    let edit = s.get(&format!("/samples/{id}/edit?draft={draft}")).await;
    assert_eq!(edit.status, StatusCode::OK);
    let html = edit.text();
    assert!(html.contains("come from the tests you just went through"));
    assert_eq!(selected(&html, "field_id").as_deref(), Some("biotite"));
    assert_eq!(selected(&html, "setting").as_deref(), Some("granite"));
    assert_eq!(
        input_value(&html, "station").as_deref(),
        Some("Ridge cut 5")
    );
    assert_eq!(input_value(&html, "revision").as_deref(), Some("1"));
    let obs = input_value(&html, "observations").expect("hidden observations");
    let r = s
        .submit(
            &format!("/samples/{id}/edit"),
            &encode(&[
                ("revision", "1"),
                ("project", "default"),
                ("sample_code", "RX-1"),
                ("station", "Ridge cut 5"),
                ("setting", "granite"),
                ("notes", "Pale flakes in the quartz vein."),
                ("field_id", "biotite"),
                ("observations", &obs),
                ("edited_by", "Field crew B"),
            ]),
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let api = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(api["revision"], 2);
    assert_eq!(api["field_id"], "biotite");
    assert_eq!(api["observations"]["colour"], json!(["black", "brown"]));
    assert_eq!(api["identification"]["candidates"][0]["id"], "biotite");
    // The earlier answers and conclusion stay in the history.
    let revs = app
        .get(&format!("/api/v1/samples/{id}/revisions"))
        .await
        .json();
    let first = &revs["revisions"].as_array().expect("revisions")[0]["record"];
    assert_eq!(first["observations"]["colour"], json!(["colourless"]));
    assert_eq!(first["field_id"], "muscovite");
    // An unknown draft in the edit link is a 404 page, not a silent blank.
    let missing = s
        .get(&format!(
            "/samples/{id}/edit?draft=00000000-0000-4000-8000-000000000000"
        ))
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}

/// The message beside `field` (the text of its `e-FIELD` element), if any.
fn message_beside(html: &str, field: &str) -> Option<String> {
    let at = html.find(&format!("id=\"e-{field}\">"))? + format!("id=\"e-{field}\">").len();
    Some(unescape(&html[at..at + html[at..].find("</p>")?]))
}

/// The "read as" line beside a coordinate field, if any.
fn reading_beside(html: &str, field: &str) -> Option<String> {
    let at = html.find(&format!("id=\"r-{field}\">"))? + format!("id=\"r-{field}\">").len();
    Some(unescape(&html[at..at + html[at..].find("</p>")?]))
}

/// An app in `zone` whose clock stands at `instant` (UTC).
async fn app_at(zone: &str, instant: &str) -> TestApp {
    let zone = jiff::tz::TimeZone::get(zone).expect("zone");
    let at: jiff::Timestamp = instant.parse().expect("instant");
    TestApp::with_config(|c| {
        c.time_zone = zone;
        c.clock = basal::cli::Clock::Fixed(at);
    })
    .await
}

#[tokio::test]
async fn every_bad_field_is_reported_at_once_beside_its_field_with_the_values_kept() {
    // Arrange: S-0001 exists; a second form repeats its code and also has
    // an impossible date and a latitude with 75 minutes.
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    created(&mut s, "S-0001").await;
    let fields = with(
        &with(
            &with(&full_form("S-0001"), "collected_on", "2026-02-30"),
            "latitude",
            "41 75 00 S",
        ),
        "station",
        "Ridge cut 4",
    );
    // Act
    let r = create(&mut s, &fields).await;
    // Assert: three messages, each beside its own field, in one answer.
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    let date = message_beside(&html, "collected_on").expect("a message beside the date");
    assert!(date.contains("is not a calendar date"), "{date}");
    let lat = message_beside(&html, "latitude").expect("a message beside the latitude");
    assert!(lat.contains("75 minutes is not below 60"), "{lat}");
    let code = message_beside(&html, "sample_code").expect("a message beside the code");
    assert!(code.contains("that code is taken"), "{code}");
    assert!(code.contains("S-0002"), "{code}");
    for (name, typed) in [
        ("collected_on", "2026-02-30"),
        ("latitude", "41 75 00 S"),
        ("sample_code", "S-0001"),
        ("station", "Ridge cut 4"),
        ("longitude", "-20.3021"),
    ] {
        assert_eq!(
            input_value(&html, name).as_deref(),
            Some(typed),
            "{name} kept"
        );
    }
    // The longitude was fine, and the page says what it was read as.
    assert_eq!(message_beside(&html, "longitude"), None);
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(
        list["samples"].as_array().map(Vec::len),
        Some(1),
        "nothing saved"
    );

    // The edit form does the same: S-0002 renamed to S-0001 with the same
    // two bad values gets all three messages, and stays as it was.
    let id = created(&mut s, "S-0002").await;
    let edit = s.get(&format!("/samples/{id}/edit")).await;
    assert_eq!(edit.status, StatusCode::OK);
    let fields = with(
        &with(
            &with(&full_form("S-0001"), "collected_on", "2026-02-30"),
            "latitude",
            "41 75 00 S",
        ),
        "revision",
        "1",
    );
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&fields))
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    for field in ["collected_on", "latitude", "sample_code"] {
        assert!(
            message_beside(&html, field).is_some(),
            "edit: no message beside {field}"
        );
    }
    // Its own code is no clash: the same bad date alone gives one message.
    let fields = with(
        &with(&full_form("S-0002"), "collected_on", "2026-02-30"),
        "revision",
        "1",
    );
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&fields))
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    assert!(message_beside(&html, "collected_on").is_some());
    assert_eq!(
        message_beside(&html, "sample_code"),
        None,
        "its own code is not taken"
    );
    let rec = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(
        (rec["sample_code"].as_str(), rec["revision"].as_i64()),
        (Some("S-0002"), Some(1))
    );
}

#[tokio::test]
async fn coordinates_typed_as_field_gps_units_show_them_are_saved_as_decimal_degrees() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // 41°30′18″ = 41.505°; 20°18′07.56″ = 20.3021° (arithmetic).
    let cases = [
        ("41°30'18\"S", "20°18'07.56\"W"),
        ("41 30 18 S", "20 18 7.56 W"),
        ("41°30′18″S", "20°18′07.56″W"),
        ("S41 30 18", "W20 18 07.56"),
        ("-41 30 18", "-20 18 07.56"),
        ("41 30.3 S", "20 18.126 W"),
        ("41°30.300'S", "20°18.126'W"),
        ("-41.505", "-20.3021"),
    ];
    for (i, (lat, lon)) in cases.iter().enumerate() {
        let code = format!("S-{:04}", i + 1);
        let fields = with(&with(&full_form(&code), "latitude", lat), "longitude", lon);
        let r = create(&mut s, &fields).await;
        assert_eq!(r.status, StatusCode::SEE_OTHER, "{lat} {lon}: {}", r.text());
        let rec = app.get(&format!("/api/v1{}", r.location())).await.json();
        let (y, x) = (
            rec["latitude"].as_f64().expect("latitude"),
            rec["longitude"].as_f64().expect("longitude"),
        );
        assert!((y + 41.505).abs() < 1e-9, "{lat} saved as {y}");
        assert!((x + 20.3021).abs() < 1e-9, "{lon} saved as {x}");
        // The record page shows decimal degrees and DMS as before.
        let page = s.get(&r.location()).await.text();
        assert!(
            page.contains("−41.50500°") && page.contains("41°30′18.0″ S"),
            "{lat}"
        );
    }
    // A refused form says beside the coordinate what it was read as.
    let fields = with(
        &with(&full_form("S-0100"), "latitude", "41°30′18″S"),
        "collected_on",
        "someday",
    );
    let r = create(&mut s, &fields).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    let read = reading_beside(&html, "latitude").expect("a reading beside the latitude");
    assert!(read.contains("read as −41.505000°"), "{read}");
    assert!(read.contains("41°30′18.0″ S"), "{read}");
    assert_eq!(
        input_value(&html, "latitude").as_deref(),
        Some("41°30′18″S")
    );
    // An unreadable one gets the accepted forms instead, and no reading.
    let fields = with(&full_form("S-0100"), "latitude", "41 30 18 S 5");
    let html = create(&mut s, &fields).await.text();
    let msg = message_beside(&html, "latitude").expect("a message");
    assert!(
        msg.contains("41°30′18″S") && msg.contains("41 30.3 S"),
        "{msg}"
    );
    assert_eq!(reading_beside(&html, "latitude"), None);
}

#[tokio::test]
async fn the_new_form_prefills_today_where_the_person_is() {
    // 2026-12-04 12:30 UTC is 01:30 on 5 December in Auckland (UTC+13 in
    // December) and 04:30 on the 4th in Los Angeles (UTC−8); 02:00 UTC is
    // 18:00 on the 3rd in Los Angeles (IANA rules; arithmetic).
    for (zone, instant, today) in [
        ("Pacific/Auckland", "2026-12-04T12:30:00Z", "2026-12-05"),
        ("UTC", "2026-12-04T12:30:00Z", "2026-12-04"),
        ("America/Los_Angeles", "2026-12-04T12:30:00Z", "2026-12-04"),
        ("America/Los_Angeles", "2026-12-04T02:00:00Z", "2026-12-03"),
    ] {
        let app = app_at(zone, instant).await;
        let html = app.get("/samples/new").await.text();
        assert_eq!(
            input_value(&html, "collected_on").as_deref(),
            Some(today),
            "{zone} at {instant}"
        );
    }
}

#[tokio::test]
async fn a_collection_date_in_the_future_is_refused_on_the_form_and_the_api() {
    // Auckland is already on 5 December at 2026-12-04 12:30 UTC.
    let app = app_at("Pacific/Auckland", "2026-12-04T12:30:00Z").await;
    let mut s = Session::new(&app);
    let r = create(
        &mut s,
        &with(&full_form("S-0001"), "collected_on", "2026-12-06"),
    )
    .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    let msg = message_beside(&html, "collected_on").expect("a message beside the date");
    assert!(msg.contains("after today (2026-12-05)"), "{msg}");
    assert_eq!(
        input_value(&html, "collected_on").as_deref(),
        Some("2026-12-06")
    );
    // Today there is accepted, although it is still the 4th in UTC.
    let r = create(
        &mut s,
        &with(&full_form("S-0001"), "collected_on", "2026-12-05"),
    )
    .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let id = r.location().trim_start_matches("/samples/").to_string();

    // The JSON API refuses it too, on create and on update.
    let r = app
        .post_json(
            "/api/v1/samples",
            r#"{"sample_code": "A-1", "collected_on": "2026-12-06"}"#,
        )
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let (field, message) = r.error();
    assert_eq!(field, "collected_on");
    assert!(message.contains("2026-12-05"), "{message}");
    let r = app
        .put_json(
            &format!("/api/v1/samples/{id}"),
            r#"{"sample_code": "S-0001", "collected_on": "2027-01-01", "revision": 1}"#,
        )
        .await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(r.error().0, "collected_on");
    let r = app
        .post_json(
            "/api/v1/samples",
            r#"{"sample_code": "A-1", "collected_on": "2026-12-05"}"#,
        )
        .await;
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
}

#[tokio::test]
async fn times_on_the_record_and_its_history_are_shown_in_the_zone_with_the_offset() {
    // Asia/Kolkata is UTC+05:30 all year (IANA), whatever day this runs.
    let app = TestApp::with_config(|c| {
        c.time_zone = jiff::tz::TimeZone::get("Asia/Kolkata").expect("zone");
    })
    .await;
    let mut s = Session::new(&app);
    let id = created(&mut s, "S-0001").await;
    let fields = with(
        &with(&full_form("S-0001"), "station", "Ridge cut 9"),
        "revision",
        "1",
    );
    let r = s
        .submit(&format!("/samples/{id}/edit"), &form_body(&fields))
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    let html = s.get(&format!("/samples/{id}")).await.text();
    // Created, last changed, and the two revisions of the history.
    assert!(html.matches(" +05:30").count() >= 4, "{html}");
    assert!(
        !html.contains(" UTC"),
        "times are no longer shown in UTC: {html}"
    );
    // The stored times stay UTC.
    let rec = app.get(&format!("/api/v1/samples/{id}")).await.json();
    let created_at = rec["created_at"].as_str().expect("created_at");
    assert!(created_at.ends_with('Z'), "{created_at}");
    let shown = basal::web::samples_pages::local_time(
        &jiff::tz::TimeZone::get("Asia/Kolkata").expect("zone"),
        created_at,
    );
    assert!(html.contains(&format!("created {shown}")), "{shown}");
}

#[test]
fn a_bad_time_zone_name_stops_the_service_at_start_with_a_clear_message() {
    let dir = tempfile::tempdir().expect("tempdir");
    for (env, args) in [
        (Some("Mars/Olympus_Mons"), vec![]),
        (None, vec!["--time-zone", "Mars/Olympus_Mons"]),
    ] {
        let mut cmd = std::process::Command::new(env!("CARGO_BIN_EXE_basal"));
        cmd.args(["serve", "--listen", "127.0.0.1:0", "--db"])
            .arg(dir.path().join("tz.sqlite"))
            .args(&args)
            .env_remove("BASAL_TZ");
        if let Some(v) = env {
            cmd.env("BASAL_TZ", v);
        }
        let out = cmd.output().expect("runs");
        assert!(!out.status.success(), "{env:?} {args:?}: started");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("Mars/Olympus_Mons"), "{err}");
        assert!(
            err.contains("is not a time zone of the IANA database"),
            "{err}"
        );
        assert!(err.contains("Pacific/Auckland"), "{err}");
        assert!(!dir.path().join("tz.sqlite").exists(), "nothing was opened");
    }
}
