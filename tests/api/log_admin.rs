//! Projects and the CSV upload page.

use axum::http::StatusCode;

use crate::helpers::{Session, TestApp};

const BOUNDARY: &str = "basal-test-boundary-7f3a";

/// A multipart/form-data body (RFC 7578) with text fields and one file.
fn multipart(fields: &[(&str, &str)], file: Option<&str>) -> Vec<u8> {
    let mut b = String::new();
    for (k, v) in fields {
        b.push_str(&format!(
            "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{k}\"\r\n\r\n{v}\r\n"
        ));
    }
    if let Some(csv) = file {
        b.push_str(&format!(
            "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"log.csv\"\r\nContent-Type: text/csv\r\n\r\n{csv}\r\n"
        ));
    }
    b.push_str(&format!("--{BOUNDARY}--\r\n"));
    b.into_bytes()
}

async fn upload(
    s: &mut Session<'_>,
    project: &str,
    dry: bool,
    csv: Option<&str>,
) -> crate::helpers::Reply {
    s.get("/samples/import").await;
    let token = s.token();
    let mut fields = vec![("_csrf", token.as_str()), ("project", project)];
    if dry {
        fields.push(("dry_run", "1"));
    }
    s.post_with(
        "/samples/import",
        &format!("multipart/form-data; boundary={BOUNDARY}"),
        multipart(&fields, csv),
    )
    .await
}

async fn count(app: &TestApp, project: &str) -> usize {
    let v = app
        .get(&format!("/api/v1/samples?project={project}&limit=500"))
        .await
        .json();
    v["samples"].as_array().map_or(0, Vec::len)
}

#[tokio::test]
async fn a_project_is_added_with_a_code_scheme_and_listed() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/projects").await;
    let r = s
        .submit(
            "/projects",
            "code=ridge-26&name=Ridge+survey+%28invented%29&code_scheme=RG-%7Byy%7D-%7Bseq%3A3%7D",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    assert!(s.get("/projects").await.text().contains("ridge-26"));
    let v = app.get("/api/v1/projects").await.json();
    let codes: Vec<&str> = v["projects"]
        .as_array()
        .expect("list")
        .iter()
        .filter_map(|p| p["code"].as_str())
        .collect();
    assert!(
        codes.contains(&"ridge-26") && codes.contains(&"default"),
        "{codes:?}"
    );
    // A sample can now be filed under it.
    let r = app
        .post_raw(
            "/api/v1/samples",
            Some("application/json"),
            r#"{"project": "ridge-26", "sample_code": "RG-26-001"}"#,
        )
        .await;
    assert_eq!(r.status, StatusCode::CREATED);
}

#[tokio::test]
async fn bad_project_fields_come_back_with_messages_and_values() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/projects").await;
    let cases = [
        (
            "code=Ridge&name=R&code_scheme=%7Bseq%3A3%7D",
            "err-code",
            "value=\"Ridge\"",
        ),
        (
            "code=ridge&name=&code_scheme=%7Bseq%3A3%7D",
            "err-name",
            "value=\"ridge\"",
        ),
        (
            "code=ridge&name=R&code_scheme=RG-only",
            "err-scheme",
            "value=\"RG-only\"",
        ),
        (
            "code=default&name=R&code_scheme=%7Bseq%3A3%7D",
            "err-code",
            "value=\"default\"",
        ),
    ];
    for (body, marker, kept) in cases {
        let r = s.submit("/projects", body).await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{body}");
        let html = r.text();
        assert!(html.contains(marker), "{body}: no message");
        assert!(html.contains(kept), "{body}: value not kept");
    }
    let r = s
        .post_form("/projects", "code=sneaky&name=S&code_scheme=%7Bseq%3A3%7D")
        .await;
    assert_eq!(r.status, StatusCode::FORBIDDEN);
}

#[tokio::test]
async fn an_uploaded_csv_is_imported_when_every_row_is_good() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let csv = "sample_code,collected_on,station,notes\nBV-001,2026-06-01,Ridge cut 3,\"first, with a comma\"\nBV-002,2026-06-02,Ridge cut 4,\n";
    let r = upload(&mut s, "bv", false, Some(csv)).await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert!(r.text().contains("2 samples were added"));
    assert_eq!(count(&app, "bv").await, 2);
}

#[tokio::test]
async fn one_bad_row_refuses_the_whole_file_and_names_its_line() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let csv = "sample_code,latitude,longitude\nBV-001,45.5,7.1\nBV-002,95,7.1\nBV-003,45.5,7.2\n";
    let r = upload(&mut s, "bv", false, Some(csv)).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    let html = r.text();
    assert!(html.contains("line 3: latitude"), "{html}");
    assert!(html.contains("nothing was written"));
    assert_eq!(count(&app, "bv").await, 0);
}

#[tokio::test]
async fn a_dry_run_checks_and_writes_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let r = upload(&mut s, "default", true, Some("sample_code\nDR-1\nDR-2\n")).await;
    assert_eq!(r.status, StatusCode::OK);
    assert!(r.text().contains("All 2 rows are fine"));
    assert_eq!(count(&app, "default").await, 0);
}

#[tokio::test]
async fn an_upload_without_a_file_or_token_is_refused() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let r = upload(&mut s, "default", false, None).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(r.text().contains("choose a CSV file"));
    let r = upload(&mut s, "default", false, Some("colour\ngreen\n")).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(r.text().contains("unknown column"));
    let forged = s
        .post_with(
            "/samples/import",
            &format!("multipart/form-data; boundary={BOUNDARY}"),
            multipart(&[("project", "default")], Some("sample_code\nX-1\n")),
        )
        .await;
    assert_eq!(forged.status, StatusCode::FORBIDDEN);
    assert_eq!(count(&app, "default").await, 0);
}

#[tokio::test]
async fn an_export_uploaded_again_names_every_row_whose_id_is_already_in_the_log() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    for code in ["EX-1", "EX-2"] {
        let r = app
            .post_json(
                "/api/v1/samples",
                &format!(r#"{{"project":"default","sample_code":"{code}","notes":"ridge"}}"#),
            )
            .await;
        assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    }
    let export = app.get("/export/samples.csv?project=default").await;
    assert_eq!(export.status, StatusCode::OK);
    // Into another project the codes are free, but the ids are this log's.
    let csv = export.text().replace(",default,", ",other,");
    let r = upload(&mut s, "other", false, Some(&csv)).await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", r.text());
    let html = r.text();
    assert!(html.contains("line 2: id"), "{html}");
    assert!(html.contains("line 3: id"), "{html}");
    assert!(html.contains("already in the log"), "{html}");
    assert_eq!(count(&app, "other").await, 0);
    assert_eq!(count(&app, "default").await, 2);
}

// ---------------------------------------------------------------- editing a project

async fn project(app: &TestApp, code: &str) -> serde_json::Value {
    let r = app.get(&format!("/api/v1/projects/{code}")).await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    r.json()
}

async fn next_code(s: &mut Session<'_>, project: &str) -> String {
    let html = s
        .get(&format!("/samples/new?project={project}"))
        .await
        .text();
    let start =
        html.find("class=\"next-code\">").expect("a suggested code") + "class=\"next-code\">".len();
    let len = html[start..].find('<').expect("end of the code");
    html[start..start + len].to_string()
}

#[tokio::test]
async fn a_renamed_project_with_a_new_scheme_suggests_new_codes_and_keeps_the_old_ones() {
    // Arrange: a project whose codes follow RG-{seq:3}, with one sample.
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/projects").await;
    let r = s
        .submit(
            "/projects",
            "code=ridge&name=Ridge+survey&code_scheme=RG-%7Bseq%3A3%7D",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER);
    assert_eq!(next_code(&mut s, "ridge").await, "RG-001");
    let first = app
        .post_json(
            "/api/v1/samples",
            r#"{"project": "ridge", "sample_code": "RG-001"}"#,
        )
        .await;
    assert_eq!(first.status, StatusCode::CREATED);
    assert!(project(&app, "ridge").await["updated_at"].is_null());
    // Act
    let page = s.get("/projects/ridge/edit").await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(
        page.text().contains("value=\"RG-{seq:3}\""),
        "the form starts from the stored scheme"
    );
    let r = s
        .submit(
            "/projects/ridge/edit",
            "name=Ridge+survey+north&code_scheme=RIDGE%2F%7Bseq%3A2%7D",
        )
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    assert_eq!(r.location(), "/projects");
    let p = project(&app, "ridge").await;
    assert_eq!(p["name"], "Ridge survey north");
    assert_eq!(p["code_scheme"], "RIDGE/{seq:2}");
    assert!(p["updated_at"].is_string(), "{p}");
    assert_eq!(next_code(&mut s, "ridge").await, "RIDGE/01");
    let id = first.json()["id"].as_str().expect("id").to_string();
    let old = app.get(&format!("/api/v1/samples/{id}")).await.json();
    assert_eq!(
        old["sample_code"], "RG-001",
        "codes already written never change"
    );
    let trace = s.get("/projects/ridge/edit").await.text();
    assert!(
        trace.contains("RG-{seq:3}") && trace.contains("Ridge survey<"),
        "earlier state kept: {trace}"
    );
}

#[tokio::test]
async fn a_bad_project_edit_comes_back_with_the_values_kept_and_changes_nothing() {
    // Arrange
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/projects/default/edit").await;
    let before = project(&app, "default").await;
    let cases = [
        (
            "name=Kept+name&code_scheme=ONLY-TEXT",
            "err-scheme",
            "value=\"ONLY-TEXT\"",
            "value=\"Kept name\"",
        ),
        (
            "name=Kept+name&code_scheme=%7Bseq%3A99%7D",
            "err-scheme",
            "value=\"{seq:99}\"",
            "value=\"Kept name\"",
        ),
        (
            "name=&code_scheme=D-%7Bseq%3A3%7D",
            "err-name",
            "value=\"D-{seq:3}\"",
            "value=\"\"",
        ),
        (
            "name=Ridge%E2%80%AE&code_scheme=D-%7Bseq%3A3%7D",
            "U+202E",
            "value=\"D-{seq:3}\"",
            "Ridge",
        ),
    ];
    for (body, marker, kept, kept_too) in cases {
        // Act
        let r = s.submit("/projects/default/edit", body).await;
        // Assert
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{body}");
        let html = r.text();
        assert!(html.contains(marker), "{body}: no message in {html}");
        assert!(
            html.contains(kept) && html.contains(kept_too),
            "{body}: values not kept"
        );
    }
    assert_eq!(
        project(&app, "default").await,
        before,
        "nothing was changed"
    );
    let forged = s
        .post_form("/projects/default/edit", "name=X&code_scheme=%7Bseq%3A3%7D")
        .await;
    assert_eq!(forged.status, StatusCode::FORBIDDEN);
    let missing = s
        .submit("/projects/nowhere/edit", "name=X&code_scheme=%7Bseq%3A3%7D")
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
    assert_eq!(
        s.get("/projects/nowhere/edit").await.status,
        StatusCode::NOT_FOUND
    );
}

#[tokio::test]
async fn the_project_json_route_edits_name_and_scheme_and_refuses_what_it_does_not_take() {
    use axum::body::Body;
    use axum::http::{Request, header};
    // Arrange
    let app = TestApp::new().await;
    let uri = "/api/v1/projects/default";
    // Act
    let r = app
        .put_json(uri, r#"{"name": "Camp log", "code_scheme": "CL-{seq:5}"}"#)
        .await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let v = r.json();
    assert_eq!(
        (v["name"].as_str(), v["code_scheme"].as_str()),
        (Some("Camp log"), Some("CL-{seq:5}"))
    );
    // A GET body sent back with a new name is fine; the service's fields must be unchanged.
    let mut back = project(&app, "default").await;
    back["name"] = serde_json::json!("Camp log 2");
    let r = app.put_json(uri, &back.to_string()).await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let cases = [
        (
            r#"{"name": "X", "code_scheme": "no-sequence"}"#,
            "code_scheme",
        ),
        (r#"{"name": "", "code_scheme": "{seq:3}"}"#, "name"),
        (r#"{"name": "X\u202e", "code_scheme": "{seq:3}"}"#, "name"),
        (r#"{"code_scheme": "{seq:3}"}"#, "name"),
        (r#"{"name": "X"}"#, "code_scheme"),
        (
            r#"{"name": "X", "code_scheme": "{seq:3}", "colour": "red"}"#,
            "colour",
        ),
        (
            r#"{"name": "X", "code_scheme": "{seq:3}", "code": "other"}"#,
            "code",
        ),
        (
            r#"{"name": "X", "code_scheme": "{seq:3}", "created_at": "2020-01-01T00:00:00.000Z"}"#,
            "created_at",
        ),
    ];
    for (body, field) in cases {
        let r = app.put_json(uri, body).await;
        assert_eq!(
            r.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            r.text()
        );
        assert_eq!(r.error().0, field, "{body}");
    }
    assert_eq!(
        project(&app, "default").await["name"],
        "Camp log 2",
        "nothing changed"
    );
    let missing = app
        .put_json(
            "/api/v1/projects/nowhere",
            r#"{"name": "X", "code_scheme": "{seq:3}"}"#,
        )
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
    missing.error();
    let form = app
        .send(
            Request::put(uri)
                .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
                .body(Body::from("name=X&code_scheme=%7Bseq%3A3%7D"))
                .expect("request"),
        )
        .await;
    assert_eq!(form.status, StatusCode::UNSUPPORTED_MEDIA_TYPE);
    let cross = app
        .send(
            Request::put(uri)
                .header(header::CONTENT_TYPE, "application/json")
                .header("sec-fetch-site", "cross-site")
                .body(Body::from(r#"{"name": "X", "code_scheme": "{seq:3}"}"#))
                .expect("request"),
        )
        .await;
    assert_eq!(cross.status, StatusCode::FORBIDDEN);
    cross.error();
    let big = format!(
        r#"{{"name": "{}", "code_scheme": "{{seq:3}}"}}"#,
        "x".repeat(70 * 1024)
    );
    assert_eq!(
        app.put_json(uri, &big).await.status,
        StatusCode::PAYLOAD_TOO_LARGE
    );
    assert_eq!(
        project(&app, "default").await["name"],
        "Camp log 2",
        "nothing changed"
    );
}

// ---------------------------------------------------------------- the upload names a new project

async fn upload_new(
    s: &mut Session<'_>,
    fields: &[(&str, &str)],
    csv: &str,
) -> crate::helpers::Reply {
    s.get("/samples/import").await;
    let token = s.token();
    let mut all = vec![("_csrf", token.as_str())];
    all.extend_from_slice(fields);
    s.post_with(
        "/samples/import",
        &format!("multipart/form-data; boundary={BOUNDARY}"),
        multipart(&all, Some(csv)),
    )
    .await
}

#[tokio::test]
async fn the_upload_page_presets_no_project() {
    let app = TestApp::new().await;
    let html = app.get("/samples/import").await.text();
    assert!(html.contains("name=\"project\" value=\"\""), "{html}");
    assert!(!html.contains("name=\"project\" value=\"default\""));
    let mut s = Session::new(&app);
    let r = upload_new(&mut s, &[("project", "")], "sample_code\nX-1\n").await;
    assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        r.text().contains("give the code of the project"),
        "{}",
        r.text()
    );
    assert_eq!(count(&app, "default").await, 0);
}

#[tokio::test]
async fn an_upload_creates_its_project_with_the_name_and_scheme_given() {
    // Arrange
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    // Act
    let r = upload_new(
        &mut s,
        &[
            ("project", "moor"),
            ("name", "Moor traverse"),
            ("code_scheme", "MT-{seq:3}"),
        ],
        "sample_code\nMT-001\n",
    )
    .await;
    // Assert
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    let p = project(&app, "moor").await;
    assert_eq!(
        (p["name"].as_str(), p["code_scheme"].as_str()),
        (Some("Moor traverse"), Some("MT-{seq:3}"))
    );
    assert_eq!(next_code(&mut s, "moor").await, "MT-002");
}

#[tokio::test]
async fn an_upload_into_an_existing_project_refuses_another_name_or_scheme_and_writes_nothing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    for fields in [
        [
            ("project", "default"),
            ("name", "Renamed"),
            ("code_scheme", ""),
        ],
        [
            ("project", "default"),
            ("name", ""),
            ("code_scheme", "Z-{seq:2}"),
        ],
    ] {
        let r = upload_new(&mut s, &fields, "sample_code\nX-1\n").await;
        assert_eq!(r.status, StatusCode::UNPROCESSABLE_ENTITY, "{fields:?}");
        assert!(r.text().contains("exists already"), "{}", r.text());
    }
    let bad = upload_new(
        &mut s,
        &[("project", "fresh"), ("code_scheme", "no-seq")],
        "sample_code\nX-1\n",
    )
    .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(bad.text().contains("sequence number"), "{}", bad.text());
    assert_eq!(count(&app, "default").await, 0);
    assert_eq!(
        app.get("/api/v1/projects/fresh").await.status,
        StatusCode::NOT_FOUND
    );
    // The project's own name and scheme, given again, are fine.
    let p = project(&app, "default").await;
    let r = upload_new(
        &mut s,
        &[
            ("project", "default"),
            ("name", p["name"].as_str().expect("name")),
            ("code_scheme", p["code_scheme"].as_str().expect("scheme")),
        ],
        "sample_code\nX-1\n",
    )
    .await;
    assert_eq!(r.status, StatusCode::OK, "{}", r.text());
    assert_eq!(count(&app, "default").await, 1);
}
