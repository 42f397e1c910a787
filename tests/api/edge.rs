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
