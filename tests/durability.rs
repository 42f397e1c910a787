//! Power-cut durability: the server is killed with SIGKILL again and again
//! while clients create samples; after every restart each sample whose
//! creation was acknowledged (201) must be present and intact.
//!
//! By default this runs the binary cargo built for the test profile; CI
//! also runs it against the release build:
//! `BASAL_BIN=target/release/basal cargo test --test durability`.

use std::net::SocketAddr;
use std::path::Path;
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use tokio::io::{AsyncReadExt, AsyncWriteExt};
use tokio::process::{Child, Command};

const CYCLES: usize = 20;
const CLIENTS: usize = 6;

fn binary() -> String {
    std::env::var("BASAL_BIN").unwrap_or_else(|_| env!("CARGO_BIN_EXE_basal").to_string())
}

fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .map(|a| a.port())
        .expect("a free port")
}

/// One HTTP/1.1 exchange on a fresh connection: (status, body).
async fn http(addr: SocketAddr, method: &str, path: &str, body: &str) -> Option<(u16, String)> {
    let mut s = tokio::time::timeout(Duration::from_secs(2), tokio::net::TcpStream::connect(addr))
        .await
        .ok()?
        .ok()?;
    let req = format!(
        "{method} {path} HTTP/1.1\r\nHost: {addr}\r\nContent-Type: application/json\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
    s.write_all(req.as_bytes()).await.ok()?;
    let mut buf = Vec::new();
    tokio::time::timeout(Duration::from_secs(5), s.read_to_end(&mut buf))
        .await
        .ok()?
        .ok()?;
    let text = String::from_utf8_lossy(&buf).into_owned();
    let status = text.split_whitespace().nth(1)?.parse().ok()?;
    let body = text
        .split_once("\r\n\r\n")
        .map(|(_, b)| b.to_string())
        .unwrap_or_default();
    Some((status, body))
}

async fn start(db: &Path, port: u16) -> Child {
    let child = Command::new(binary())
        .args(["serve", "--listen", &format!("127.0.0.1:{port}"), "--db"])
        .arg(db)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .kill_on_drop(true)
        .spawn()
        .expect("the basal binary starts");
    let addr: SocketAddr = format!("127.0.0.1:{port}").parse().expect("addr");
    let deadline = Instant::now() + Duration::from_secs(20);
    while Instant::now() < deadline {
        if let Some((200, _)) = http(addr, "GET", "/healthz", "").await {
            return child;
        }
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    panic!("the server did not become ready");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn acknowledged_samples_survive_repeated_sigkill() {
    let dir = tempfile::tempdir().expect("tempdir");
    let db = dir.path().join("field.sqlite");
    let acked: Arc<Mutex<Vec<(String, String)>>> = Arc::default();
    let mut seq = 0usize;
    for cycle in 0..CYCLES {
        let port = free_port();
        let addr: SocketAddr = format!("127.0.0.1:{port}").parse().expect("addr");
        let mut child = start(&db, port).await;
        let stop = Arc::new(std::sync::atomic::AtomicBool::new(false));
        let mut clients = Vec::new();
        for c in 0..CLIENTS {
            let acked = acked.clone();
            let stop = stop.clone();
            let base = seq + c * 10_000;
            clients.push(tokio::spawn(async move {
                let mut n = 0;
                while !stop.load(std::sync::atomic::Ordering::Relaxed) {
                    let code = format!("C{cycle:02}-{c}-{:05}", base + n);
                    n += 1;
                    let body = format!(r#"{{"sample_code": "{code}", "notes": "written before the cut, cycle {cycle}"}}"#);
                    match http(addr, "POST", "/api/v1/samples", &body).await {
                        Some((201, resp)) => {
                            let v: serde_json::Value = serde_json::from_str(&resp).expect("201 carries the record");
                            let id = v["id"].as_str().expect("id").to_string();
                            acked.lock().expect("lock").push((id, code));
                        }
                        Some((status, resp)) => panic!("unexpected {status}: {resp}"),
                        None => break, // the server is gone
                    }
                }
            }));
        }
        // Let the clients write for a varying while, then cut the power.
        tokio::time::sleep(Duration::from_millis(150 + (cycle as u64 * 37) % 250)).await;
        child.start_kill().expect("SIGKILL");
        let _ = child.wait().await;
        stop.store(true, std::sync::atomic::Ordering::Relaxed);
        for c in clients {
            c.await.expect("client task");
        }
        seq += 100_000;
    }

    // Restart once more and check every acknowledged record.
    let port = free_port();
    let addr: SocketAddr = format!("127.0.0.1:{port}").parse().expect("addr");
    let mut child = start(&db, port).await;
    let acked = acked.lock().expect("lock").clone();
    assert!(
        acked.len() > CYCLES * 5,
        "too few writes were acknowledged to mean anything: {}",
        acked.len()
    );
    for (id, code) in &acked {
        let (status, body) = http(addr, "GET", &format!("/api/v1/samples/{id}"), "")
            .await
            .expect("answer");
        assert_eq!(
            status, 200,
            "acknowledged sample {code} ({id}) is missing after the cuts"
        );
        let v: serde_json::Value = serde_json::from_str(&body).expect("json");
        assert_eq!(v["sample_code"], code.as_str());
        assert_eq!(v["revision"], 1);
        assert!(
            v["notes"]
                .as_str()
                .is_some_and(|n| n.starts_with("written before the cut"))
        );
    }
    child.start_kill().expect("kill");
    let _ = child.wait().await;
    // The file itself passes SQLite's integrity check.
    let pool = basal::store::open(&db).await.expect("reopen");
    let check: String = sqlx::query_scalar("PRAGMA integrity_check")
        .fetch_one(&pool)
        .await
        .expect("check");
    assert_eq!(check, "ok");
    println!(
        "{} acknowledged samples over {CYCLES} SIGKILL cycles, all present",
        acked.len()
    );
}
