//! Readiness, headers, pages, and one smoke test over a real socket.

use axum::http::{StatusCode, header};

use crate::helpers::TestApp;

#[tokio::test]
async fn healthz_answers_ok_once_the_database_is_open() {
    let app = TestApp::new().await;
    let r = app.get("/healthz").await;
    assert_eq!(r.status, StatusCode::OK);
    assert_eq!(r.text(), "ok");
}

#[tokio::test]
async fn every_response_forbids_scripts() {
    let app = TestApp::new().await;
    for uri in [
        "/",
        "/healthz",
        "/api/v1/minerals",
        "/no-such-page",
        "/static/basal.css",
    ] {
        let r = app.get(uri).await;
        let csp = r
            .headers
            .get(header::CONTENT_SECURITY_POLICY)
            .and_then(|v| v.to_str().ok())
            .unwrap_or("");
        assert!(
            csp.contains("script-src 'none'") && csp.contains("frame-ancestors 'none'"),
            "{uri}: {csp}"
        );
        assert_eq!(
            r.headers
                .get(header::X_CONTENT_TYPE_OPTIONS)
                .map(|v| v.as_bytes()),
            Some(&b"nosniff"[..])
        );
        assert!(!r.text().to_lowercase().contains("<script"), "{uri}");
    }
}

#[tokio::test]
async fn the_home_page_lists_the_base() {
    let app = TestApp::new().await;
    let r = app.get("/").await;
    assert_eq!(r.status, StatusCode::OK);
    assert!(
        r.headers[header::CONTENT_TYPE]
            .to_str()
            .expect("ct")
            .starts_with("text/html")
    );
    assert!(r.text().contains("Molybdenite"));
}

#[tokio::test]
async fn an_unknown_page_is_a_404_page() {
    let app = TestApp::new().await;
    let r = app.get("/nowhere").await;
    assert_eq!(r.status, StatusCode::NOT_FOUND);
    assert!(r.text().contains("/nowhere"));
}

#[tokio::test]
async fn the_service_answers_over_a_real_socket_and_shuts_down() {
    let dir = tempfile::tempdir().expect("tempdir");
    let db = basal::store::open(&dir.path().join("s.sqlite"))
        .await
        .expect("db");
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
        .await
        .expect("bind");
    let addr = listener.local_addr().expect("addr");
    let state = basal::web::AppState {
        db,
        engine: basal::engine::Engine::builtin(),
        config: std::sync::Arc::new(basal::cli::Config::new(addr, dir.path().join("s.sqlite"))),
    };
    let (tx, rx) = tokio::sync::oneshot::channel::<()>();
    let server = tokio::spawn(basal::web::run(listener, state, async {
        let _ = rx.await;
    }));
    // A minimal HTTP/1.1 exchange on the socket, no client library needed.
    use tokio::io::{AsyncReadExt, AsyncWriteExt};
    let mut s = tokio::net::TcpStream::connect(addr).await.expect("connect");
    s.write_all(b"GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n")
        .await
        .expect("write");
    let mut buf = String::new();
    s.read_to_string(&mut buf).await.expect("read");
    assert!(buf.starts_with("HTTP/1.1 200"), "{buf}");
    assert!(buf.ends_with("ok"), "{buf}");
    tx.send(()).expect("shutdown");
    server.await.expect("join").expect("served");
}
