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
