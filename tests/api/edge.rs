//! The server edge: compressed exports, panics, the host check, cross-site
//! API writes, bare error answers, form bodies, cache headers and the
//! network warning.

use std::io::Read;

use axum::body::Body;
use axum::http::{Method, Request, StatusCode, header};
use serde_json::json;

use crate::helpers::{Reply, TestApp};

async fn add_samples(app: &TestApp, n: usize) {
    for i in 0..n {
        let body = json!({
            "sample_code": format!("GZ-{i:02}"),
            "notes": "a line that repeats, so that gzip has something to fold",
            "latitude": 46.0 + i as f64 / 100.0,
            "longitude": 7.5,
        });
        let r = app.post_json("/api/v1/samples", &body.to_string()).await;
        assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    }
}

async fn get_with(app: &TestApp, uri: &str, headers: &[(&str, &str)]) -> Reply {
    let mut b = Request::get(uri);
    for (k, v) in headers {
        b = b.header(*k, *v);
    }
    app.send(b.body(Body::empty()).expect("request")).await
}

fn gunzip(bytes: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    flate2::read::GzDecoder::new(bytes)
        .read_to_end(&mut out)
        .expect("a whole gzip stream");
    out
}

#[tokio::test]
async fn both_exports_come_whole_when_the_client_accepts_gzip() {
    // Arrange
    let app = TestApp::new().await;
    add_samples(&app, 12).await;
    for uri in ["/export/samples.csv", "/export/samples.geojson"] {
        // Act
        let plain = get_with(&app, uri, &[]).await;
        let zipped = get_with(&app, uri, &[("accept-encoding", "gzip")]).await;
        // Assert
        assert_eq!(plain.status, StatusCode::OK, "{uri}");
        assert_eq!(zipped.status, StatusCode::OK, "{uri}");
        assert_eq!(
            zipped
                .headers
                .get(header::CONTENT_ENCODING)
                .map(|v| v.as_bytes()),
            Some(&b"gzip"[..]),
            "{uri}: compressed"
        );
        assert!(plain.body.len() > 500, "{uri}: {} bytes", plain.body.len());
        assert_eq!(
            gunzip(&zipped.body),
            plain.body,
            "{uri}: the gzip download is the identity download"
        );
    }
}

async fn send(
    app: &TestApp,
    method: Method,
    uri: &str,
    headers: &[(&str, &str)],
    body: impl Into<Body>,
) -> Reply {
    let mut b = Request::builder().method(method).uri(uri);
    for (k, v) in headers {
        b = b.header(*k, *v);
    }
    app.send(b.body(body.into()).expect("request")).await
}

fn is_html(r: &Reply) -> bool {
    r.headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.starts_with("text/html"))
}

// ------------------------------------------------------------------ panics

async fn boom() -> &'static str {
    panic!("a test handler breaks on purpose")
}

#[tokio::test]
async fn a_panicking_handler_is_answered_with_the_error_page_or_shape_and_the_app_goes_on() {
    use axum::routing::get;
    // Arrange: a route of the test's own behind the service's edge.
    let app = TestApp::new().await;
    let state = app.state.clone();
    let routes = axum::Router::new()
        .route("/boom", get(boom))
        .route("/api/v1/boom", get(boom))
        .route("/fine", get(|| async { "fine" }));
    let router = basal::web::with_edge(routes, state);
    let call = |uri: &'static str| {
        let router = router.clone();
        async move {
            use http_body_util::BodyExt;
            use tower::ServiceExt;
            let r = router
                .oneshot(Request::get(uri).body(Body::empty()).expect("request"))
                .await
                .expect("infallible");
            let status = r.status();
            let ct = r
                .headers()
                .get(header::CONTENT_TYPE)
                .and_then(|v| v.to_str().ok())
                .unwrap_or("")
                .to_string();
            let body = r.into_body().collect().await.expect("body").to_bytes();
            (status, ct, String::from_utf8_lossy(&body).into_owned())
        }
    };
    // Act
    let page = call("/boom").await;
    let api = call("/api/v1/boom").await;
    let fine = call("/fine").await;
    // Assert
    assert_eq!(page.0, StatusCode::INTERNAL_SERVER_ERROR);
    assert!(page.1.starts_with("text/html"), "{}", page.1);
    assert!(page.2.contains("Something went wrong"), "{}", page.2);
    assert_eq!(api.0, StatusCode::INTERNAL_SERVER_ERROR);
    let v: serde_json::Value = serde_json::from_str(&api.2).expect("JSON");
    assert!(
        v["error"]["message"]
            .as_str()
            .is_some_and(|m| !m.is_empty()),
        "{v}"
    );
    assert!(!api.2.contains("on purpose"), "no internals shown");
    assert_eq!((fine.0, fine.2.as_str()), (StatusCode::OK, "fine"));
}

// -------------------------------------------------------------- host check

#[tokio::test]
async fn a_foreign_host_name_gets_421_on_pages_and_api_and_loopback_names_pass() {
    let app = TestApp::with_config(|c| c.public_hosts = vec!["basal.camp".into()]).await;
    for uri in ["/", "/samples", "/healthz", "/export/samples.csv"] {
        let r = get_with(&app, uri, &[("host", "evil.example:8080")]).await;
        assert_eq!(r.status, StatusCode::MISDIRECTED_REQUEST, "{uri}");
        assert!(is_html(&r), "{uri}: an error page");
        let text = r.text();
        assert!(
            text.contains("evil.example") && text.contains("--public-host"),
            "{uri}: says why and how to allow it: {text}"
        );
    }
    let api = get_with(&app, "/api/v1/samples", &[("host", "evil.example")]).await;
    assert_eq!(api.status, StatusCode::MISDIRECTED_REQUEST);
    let (field, message) = api.error();
    assert_eq!(field, "");
    assert!(message.contains("--public-host"), "{message}");
    // A write with a foreign name changes nothing.
    let w = send(
        &app,
        Method::POST,
        "/api/v1/samples",
        &[
            ("host", "evil.example"),
            ("content-type", "application/json"),
        ],
        r#"{"sample_code":"X-1"}"#,
    )
    .await;
    assert_eq!(w.status, StatusCode::MISDIRECTED_REQUEST);
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(list["samples"].as_array().map(Vec::len), Some(0));
    for ok in [
        "localhost",
        "localhost:8080",
        "127.0.0.1",
        "127.0.0.1:8080",
        "[::1]:8080",
        "basal.camp",
        "BASAL.camp:8080",
    ] {
        let r = get_with(&app, "/healthz", &[("host", ok)]).await;
        assert_eq!(r.status, StatusCode::OK, "{ok}");
    }
}

#[tokio::test]
async fn an_absolute_request_target_is_judged_by_its_own_host() {
    let app = TestApp::new().await;
    let r = get_with(
        &app,
        "http://evil.example/healthz",
        &[("host", "127.0.0.1")],
    )
    .await;
    assert_eq!(r.status, StatusCode::MISDIRECTED_REQUEST);
    let r = get_with(&app, "http://localhost:8080/healthz", &[]).await;
    assert_eq!(r.status, StatusCode::OK);
}

#[tokio::test]
async fn a_request_without_host_is_served_because_no_browser_can_send_one() {
    // HTTP/1.0 without Host: only a program writing to the socket does
    // that, and it could name any host it liked.
    let app = TestApp::new().await;
    let r = app
        .send(
            Request::get("/healthz")
                .version(axum::http::Version::HTTP_10)
                .body(Body::empty())
                .expect("request"),
        )
        .await;
    assert_eq!(r.status, StatusCode::OK);
}

// ------------------------------------------------------ cross-site writes

/// Every state-changing API route, with a body it would accept.
async fn write_routes(app: &TestApp) -> Vec<(Method, String, Option<String>)> {
    let rec = app
        .post_json("/api/v1/samples", r#"{"sample_code":"CS-1"}"#)
        .await
        .json();
    let id = rec["id"].as_str().expect("id").to_string();
    assert_eq!(
        app.delete(&format!("/api/v1/samples/{id}")).await.status,
        StatusCode::OK
    );
    vec![
        (
            Method::POST,
            "/api/v1/samples".into(),
            Some(r#"{"sample_code":"CS-2"}"#.into()),
        ),
        (
            Method::PUT,
            format!("/api/v1/samples/{id}"),
            Some(r#"{"sample_code":"CS-1","revision":2}"#.into()),
        ),
        (Method::DELETE, format!("/api/v1/samples/{id}"), None),
        (Method::POST, format!("/api/v1/samples/{id}/restore"), None),
        (
            Method::POST,
            "/api/v1/identify".into(),
            Some(r#"{"cleavage":"one_perfect"}"#.into()),
        ),
    ]
}

#[tokio::test]
async fn every_api_write_refuses_cross_site_requests_with_403() {
    let app = TestApp::new().await;
    let routes = write_routes(&app).await;
    let cross: [&[(&str, &str)]; 4] = [
        &[("sec-fetch-site", "cross-site")],
        &[("sec-fetch-site", "same-site")],
        &[
            ("origin", "http://evil.example"),
            ("host", "127.0.0.1:8080"),
        ],
        &[("origin", "null"), ("host", "127.0.0.1:8080")],
    ];
    for (method, uri, body) in &routes {
        for headers in cross {
            let mut h = headers.to_vec();
            if body.is_some() {
                h.push(("content-type", "application/json"));
            }
            let r = send(
                &app,
                method.clone(),
                uri,
                &h,
                body.clone().unwrap_or_default(),
            )
            .await;
            assert_eq!(
                r.status,
                StatusCode::FORBIDDEN,
                "{method} {uri} {headers:?}"
            );
            let (field, message) = r.error();
            assert_eq!(field, "");
            assert!(message.contains("another site"), "{message}");
        }
    }
    // The deleted record is still deleted: the restore never ran.
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(list["samples"].as_array().map(Vec::len), Some(0), "{list}");
}

#[tokio::test]
async fn every_api_write_refuses_a_body_that_is_not_json_with_415() {
    let app = TestApp::new().await;
    let routes = write_routes(&app).await;
    for (method, uri, _) in &routes {
        for (ct, body) in [
            ("text/plain", "{\"sample_code\":\"TP-1\"}"),
            ("application/x-www-form-urlencoded", "sample_code=TP-1"),
            ("multipart/form-data; boundary=x", "--x--"),
        ] {
            let r = send(&app, method.clone(), uri, &[("content-type", ct)], body).await;
            assert_eq!(
                r.status,
                StatusCode::UNSUPPORTED_MEDIA_TYPE,
                "{method} {uri} {ct}"
            );
            r.error();
        }
    }
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(list["samples"].as_array().map(Vec::len), Some(0), "{list}");
}

#[tokio::test]
async fn same_origin_and_program_writes_still_work() {
    let app = TestApp::new().await;
    let r = send(
        &app,
        Method::POST,
        "/api/v1/samples",
        &[
            ("content-type", "application/json"),
            ("origin", "http://127.0.0.1:8080"),
            ("host", "127.0.0.1:8080"),
            ("sec-fetch-site", "same-origin"),
        ],
        r#"{"sample_code":"OK-1"}"#,
    )
    .await;
    assert_eq!(r.status, StatusCode::CREATED, "{}", r.text());
    let id = r.json()["id"].as_str().expect("id").to_string();
    // No body, no content type: a program's DELETE and restore.
    let d = app.delete(&format!("/api/v1/samples/{id}")).await;
    assert_eq!(d.status, StatusCode::OK);
    let back = app
        .post_raw(
            &format!("/api/v1/samples/{id}/restore"),
            None,
            Body::empty(),
        )
        .await;
    assert_eq!(back.status, StatusCode::OK, "{}", back.text());
}

// ------------------------------------------------------ declared lengths

#[tokio::test]
async fn a_declared_length_over_the_limit_is_refused_at_once() {
    let app = TestApp::new().await;
    let api = send(
        &app,
        Method::POST,
        "/api/v1/samples",
        &[
            ("content-type", "application/json"),
            ("content-length", "99999999999"),
        ],
        Body::empty(),
    )
    .await;
    assert_eq!(api.status, StatusCode::PAYLOAD_TOO_LARGE);
    assert!(api.error().1.contains("64 KiB"));
    let page = send(
        &app,
        Method::POST,
        "/samples",
        &[
            ("content-type", "application/x-www-form-urlencoded"),
            ("content-length", "99999999999"),
        ],
        Body::empty(),
    )
    .await;
    assert_eq!(page.status, StatusCode::PAYLOAD_TOO_LARGE);
    assert!(is_html(&page), "an error page");
    assert!(page.text().contains("2 MiB"), "{}", page.text());
    // The questioning forms are limited like the JSON API (64 KiB), and a
    // declared length over that is refused at once with that figure.
    for path in [
        "/identify",
        "/identify/00000000-0000-4000-8000-000000000000",
    ] {
        let page = send(
            &app,
            Method::POST,
            path,
            &[
                ("content-type", "application/x-www-form-urlencoded"),
                ("content-length", "100000"),
            ],
            Body::empty(),
        )
        .await;
        assert_eq!(page.status, StatusCode::PAYLOAD_TOO_LARGE, "{path}");
        assert!(is_html(&page), "{path}: an error page");
        assert!(page.text().contains("64 KiB"), "{path}: {}", page.text());
    }
}

// ------------------------------------------------------------ bare answers

#[tokio::test]
async fn a_wrong_method_gets_405_with_allow_and_a_page_or_the_error_shape() {
    let app = TestApp::new().await;
    let api = send(&app, Method::PATCH, "/api/v1/minerals", &[], Body::empty()).await;
    assert_eq!(api.status, StatusCode::METHOD_NOT_ALLOWED);
    let allow = api
        .headers
        .get(header::ALLOW)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    assert!(allow.contains("GET"), "Allow: {allow}");
    let (_, message) = api.error();
    assert!(message.contains("does not take PATCH"), "{message}");
    let put = send(&app, Method::PUT, "/api/v1/identify", &[], Body::empty()).await;
    assert_eq!(put.status, StatusCode::METHOD_NOT_ALLOWED);
    assert!(put.headers.get(header::ALLOW).is_some());
    put.error();
    for uri in ["/minerals", "/samples/new", "/static/basal.css"] {
        let page = send(&app, Method::DELETE, uri, &[], Body::empty()).await;
        assert_eq!(page.status, StatusCode::METHOD_NOT_ALLOWED, "{uri}");
        assert!(page.headers.get(header::ALLOW).is_some(), "{uri}: Allow");
        assert!(is_html(&page), "{uri}: a page");
        assert!(
            page.text().contains("does not take DELETE"),
            "{uri}: {}",
            page.text()
        );
    }
}

// ------------------------------------------------------------------ forms

#[tokio::test]
async fn a_form_with_text_that_is_not_utf8_is_refused_and_nothing_is_saved() {
    use crate::helpers::Session;
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    assert_eq!(s.get("/samples/new").await.status, StatusCode::OK);
    let r = s
        .submit(
            "/samples",
            "project=default&sample_code=U-1&notes=bad%FF%FEtext",
        )
        .await;
    assert_eq!(r.status, StatusCode::BAD_REQUEST, "{}", r.text());
    assert!(is_html(&r));
    let text = r.text();
    assert!(text.contains("notes") && text.contains("UTF-8"), "{text}");
    let list = app.get("/api/v1/samples").await.json();
    assert_eq!(list["samples"].as_array().map(Vec::len), Some(0), "{list}");
    // The same form in UTF-8 is saved.
    let ok = s
        .submit(
            "/samples",
            "project=default&sample_code=U-1&notes=caf%C3%A9",
        )
        .await;
    assert_eq!(ok.status, StatusCode::SEE_OTHER, "{}", ok.text());
}

#[tokio::test]
async fn a_form_over_the_limit_gets_the_413_page() {
    use crate::helpers::Session;
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    s.get("/samples/new").await;
    let notes = "a".repeat(3 * 1024 * 1024);
    let r = s
        .submit(
            "/samples",
            &format!("project=default&sample_code=L-1&notes={notes}"),
        )
        .await;
    assert_eq!(r.status, StatusCode::PAYLOAD_TOO_LARGE);
    assert!(is_html(&r), "not text/plain");
    assert!(r.text().contains("larger than basal takes"), "{}", r.text());
}

#[tokio::test]
async fn pages_with_a_form_token_are_not_stored_by_caches() {
    let app = TestApp::new().await;
    for uri in ["/", "/samples/new", "/identify", "/samples", "/nowhere"] {
        let r = app.get(uri).await;
        assert!(is_html(&r), "{uri}");
        assert_eq!(
            r.headers.get(header::CACHE_CONTROL).map(|v| v.as_bytes()),
            Some(&b"no-store"[..]),
            "{uri}"
        );
    }
    let api = app.get("/api/v1/minerals").await;
    assert!(api.headers.get(header::CACHE_CONTROL).is_none());
}

// ---------------------------------------------------------- network warning

#[tokio::test]
async fn every_page_warns_in_its_footer_when_anyone_on_the_network_may_use_it() {
    let open = TestApp::with_config(|c| {
        c.listen = "0.0.0.0:0".parse().expect("addr");
        c.allow_anyone_on_the_network = true;
    })
    .await;
    let closed = TestApp::new().await;
    for uri in ["/", "/samples", "/identify", "/nowhere"] {
        let r = open.get(uri).await;
        let text = r.text();
        let footer = &text[text.find("<footer").expect("a footer")..];
        assert!(
            footer.contains("anyone on this network can read, change, delete and export"),
            "{uri}: {footer}"
        );
        assert!(
            !closed
                .get(uri)
                .await
                .text()
                .contains("anyone on this network"),
            "{uri}: no warning on loopback"
        );
    }
}

#[tokio::test]
async fn a_missing_stylesheet_file_gets_the_404_page() {
    let app = TestApp::new().await;
    let r = app.get("/static/nothing-here.css").await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    assert!(is_html(&r), "a page, not an empty body");
    assert!(
        r.text().contains("/static/nothing-here.css"),
        "{}",
        r.text()
    );
}

async fn breaking_stream() -> Body {
    use futures_util::StreamExt;
    let rows = futures_util::stream::iter(0..3).map(|i| {
        if i == 1 {
            panic!("a test stream breaks on purpose");
        }
        Ok::<_, std::io::Error>(axum::body::Bytes::from("row\n"))
    });
    Body::from_stream(rows)
}

#[tokio::test]
async fn a_body_that_panics_behind_the_edge_ends_in_an_error_not_a_panic() {
    use axum::routing::get;
    use http_body_util::BodyExt;
    use tower::ServiceExt;
    // Arrange: a streaming route of the test's own behind the edge.
    let app = TestApp::new().await;
    let routes = axum::Router::new().route("/breaks", get(breaking_stream));
    let router = basal::web::with_edge(routes, app.state.clone());
    for accept in ["identity", "gzip"] {
        // Act
        let resp = router
            .clone()
            .oneshot(
                Request::get("/breaks")
                    .header("accept-encoding", accept)
                    .body(Body::empty())
                    .expect("request"),
            )
            .await
            .expect("infallible");
        assert_eq!(resp.status(), StatusCode::OK);
        // Assert: reading the body gives an error (hyper then cuts the
        // connection); the panic does not reach the task that reads it.
        let read = resp.into_body().collect().await;
        assert!(read.is_err(), "{accept}: the body ends in an error");
    }
}
