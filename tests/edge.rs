//! The server edge over a real socket: header and idle timeouts, the
//! connection cap, a lying Content-Length, and a body that panics halfway.

use std::sync::Arc;
use std::time::{Duration, Instant};

use axum::Router;
use axum::body::{Body, Bytes};
use axum::routing::get;
use basal::cli::Config;
use basal::web::AppState;
use futures_util::StreamExt;
use tokio::io::{AsyncReadExt, AsyncWriteExt};
use tokio::net::TcpStream;

struct Server {
    addr: std::net::SocketAddr,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    task: Option<tokio::task::JoinHandle<std::io::Result<()>>>,
    _dir: tempfile::TempDir,
}

impl Server {
    async fn start(adjust: impl FnOnce(&mut Config), extra: Router<AppState>) -> Server {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = dir.path().join("edge.sqlite");
        let db = basal::store::open(&path).await.expect("db");
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind");
        let addr = listener.local_addr().expect("addr");
        let mut config = Config {
            listen: addr,
            db: path,
            ..Default::default()
        };
        adjust(&mut config);
        let config = Arc::new(config);
        let state = AppState {
            db,
            engine: basal::engine::Engine::builtin(),
            config: config.clone(),
        };
        let router = basal::web::with_edge(extra.route("/healthz", get(|| async { "ok" })), state);
        let (tx, rx) = tokio::sync::oneshot::channel::<()>();
        let task = tokio::spawn(async move {
            basal::web::serve_router(listener, router, &config, async {
                let _ = rx.await;
            })
            .await
        });
        Server {
            addr,
            stop: Some(tx),
            task: Some(task),
            _dir: dir,
        }
    }

    async fn stop(mut self) {
        if let Some(tx) = self.stop.take() {
            let _ = tx.send(());
        }
        if let Some(t) = self.task.take() {
            tokio::time::timeout(Duration::from_secs(10), t)
                .await
                .expect("shuts down")
                .expect("join")
                .expect("served");
        }
    }
}

/// Reads until the server closes the connection; the time it took.
async fn closed_within(s: &mut TcpStream, limit: Duration) -> Option<Duration> {
    let t = Instant::now();
    let mut buf = [0u8; 4096];
    tokio::time::timeout(limit, async {
        loop {
            match s.read(&mut buf).await {
                Ok(0) | Err(_) => return,
                Ok(_) => {}
            }
        }
    })
    .await
    .ok()
    .map(|()| t.elapsed())
}

async fn get_healthz(addr: std::net::SocketAddr) -> String {
    let mut s = TcpStream::connect(addr).await.expect("connect");
    s.write_all(b"GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n")
        .await
        .expect("write");
    let mut out = String::new();
    s.read_to_string(&mut out).await.expect("read");
    out
}

fn short(c: &mut Config) {
    c.header_timeout = Duration::from_millis(800);
}

#[tokio::test]
async fn half_a_request_line_is_closed_by_the_server_within_the_header_timeout() {
    // Arrange
    let server = Server::start(short, Router::new()).await;
    let mut s = TcpStream::connect(server.addr).await.expect("connect");
    // Act
    s.write_all(b"GET /heal").await.expect("write");
    // Assert: closed after the 0.8 s timeout, long before 10 s.
    let took = closed_within(&mut s, Duration::from_secs(10))
        .await
        .expect("the server closed the connection");
    assert!(took < Duration::from_secs(5), "closed after {took:?}");
    server.stop().await;
}

#[tokio::test]
async fn an_idle_keep_alive_connection_is_closed_after_the_timeout() {
    let server = Server::start(short, Router::new()).await;
    let mut s = TcpStream::connect(server.addr).await.expect("connect");
    s.write_all(b"GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n")
        .await
        .expect("write");
    let mut buf = [0u8; 1024];
    let n = s.read(&mut buf).await.expect("read");
    assert!(
        buf[..n].starts_with(b"HTTP/1.1 200"),
        "{}",
        String::from_utf8_lossy(&buf[..n])
    );
    let took = closed_within(&mut s, Duration::from_secs(10))
        .await
        .expect("the idle connection was closed");
    assert!(took < Duration::from_secs(5), "closed after {took:?}");
    server.stop().await;
}

#[tokio::test]
async fn a_lying_content_length_gets_413_at_once() {
    // Default timeouts: the answer must not wait for the 30 s request
    // timeout or the body that never comes.
    let server = Server::start(|_| {}, Router::new()).await;
    for (path, ct, shape) in [
        ("/api/v1/samples", "application/json", "\"error\""),
        ("/samples", "application/x-www-form-urlencoded", "<html"),
    ] {
        let mut s = TcpStream::connect(server.addr).await.expect("connect");
        s.write_all(
            format!(
                "POST {path} HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: {ct}\r\nContent-Length: 99999999999\r\n\r\nab"
            )
            .as_bytes(),
        )
        .await
        .expect("write");
        let mut buf = vec![0u8; 16384];
        let n = tokio::time::timeout(Duration::from_secs(5), s.read(&mut buf))
            .await
            .expect("answered at once")
            .expect("read");
        let head = String::from_utf8_lossy(&buf[..n]).into_owned();
        assert!(head.starts_with("HTTP/1.1 413"), "{path}: {head}");
        let mut rest = String::new();
        let _ = tokio::time::timeout(Duration::from_secs(5), s.read_to_string(&mut rest)).await;
        let whole = head + &rest;
        assert!(whole.contains(shape), "{path}: {whole}");
    }
    server.stop().await;
}

#[tokio::test]
async fn when_idle_sockets_fill_every_slot_a_real_request_is_still_served() {
    // Arrange: three slots, all taken by sockets that never send a byte
    // (and one that sends half a request line).
    let server = Server::start(
        |c| {
            short(c);
            c.max_connections = 3;
        },
        Router::new(),
    )
    .await;
    let mut idle = Vec::new();
    for i in 0..3 {
        let mut s = TcpStream::connect(server.addr).await.expect("connect");
        if i == 0 {
            s.write_all(b"GET / HT").await.expect("write");
        }
        idle.push(s);
    }
    tokio::time::sleep(Duration::from_millis(100)).await;
    // Act: a real user arrives while the slots are full.
    let t = Instant::now();
    let answer = tokio::time::timeout(Duration::from_secs(10), get_healthz(server.addr))
        .await
        .expect("the real request was served");
    // Assert: served once the idle sockets timed out, and they were closed.
    assert!(answer.starts_with("HTTP/1.1 200"), "{answer}");
    assert!(t.elapsed() < Duration::from_secs(5), "{:?}", t.elapsed());
    for s in &mut idle {
        assert!(
            closed_within(s, Duration::from_secs(1)).await.is_some(),
            "an idle socket still open"
        );
    }
    // And with free slots a request is served at once.
    assert!(get_healthz(server.addr).await.starts_with("HTTP/1.1 200"));
    server.stop().await;
}

async fn breaking_stream() -> Body {
    // The pause lets the head and the first rows reach the client, as in
    // a long export that breaks halfway.
    let rows = futures_util::stream::iter(0..3).then(|i| async move {
        if i == 2 {
            tokio::time::sleep(Duration::from_millis(200)).await;
            panic!("a test stream breaks on purpose");
        }
        Ok::<_, std::io::Error>(Bytes::from(format!("row {i}\n")))
    });
    Body::from_stream(rows)
}

#[tokio::test]
async fn a_body_that_panics_cuts_the_response_off_instead_of_ending_it_cleanly() {
    let server = Server::start(|_| {}, Router::new().route("/breaks", get(breaking_stream))).await;
    for accept in ["identity", "gzip"] {
        let mut s = TcpStream::connect(server.addr).await.expect("connect");
        s.write_all(
            format!("GET /breaks HTTP/1.1\r\nHost: 127.0.0.1\r\nAccept-Encoding: {accept}\r\n\r\n")
                .as_bytes(),
        )
        .await
        .expect("write");
        let mut raw = Vec::new();
        let read = tokio::time::timeout(Duration::from_secs(10), s.read_to_end(&mut raw)).await;
        assert!(read.is_ok(), "{accept}: the server cut the connection");
        let text = String::from_utf8_lossy(&raw).to_lowercase();
        assert!(text.starts_with("http/1.1 200"), "{accept}: {text}");
        assert!(
            text.contains("transfer-encoding: chunked"),
            "{accept}: {text}"
        );
        if accept == "identity" {
            assert!(text.contains("row 0"), "{text}");
        }
        assert!(
            !text.ends_with("0\r\n\r\n"),
            "{accept}: a clean last chunk would make the cut response look whole: {text:?}"
        );
    }
    // The service goes on.
    assert!(get_healthz(server.addr).await.starts_with("HTTP/1.1 200"));
    server.stop().await;
}

#[tokio::test]
async fn shutdown_closes_idle_connections_and_returns() {
    let server = Server::start(|_| {}, Router::new()).await;
    let mut s = TcpStream::connect(server.addr).await.expect("connect");
    s.write_all(b"GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n")
        .await
        .expect("write");
    let mut buf = [0u8; 1024];
    let _ = s.read(&mut buf).await.expect("read");
    let addr = server.addr;
    server.stop().await;
    assert!(
        closed_within(&mut s, Duration::from_secs(2))
            .await
            .is_some()
    );
    assert!(
        TcpStream::connect(addr).await.is_err(),
        "no longer listening"
    );
}
