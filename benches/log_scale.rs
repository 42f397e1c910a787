//! Sample-log scale benchmark: builds logs of 10 k, 100 k and 1 M samples
//! and measures the server time of the list API and the history page with
//! filters (p50 and p99 over repeated requests), then the import rate of a
//! 100 k-row CSV against the sqlite3 shell's `.import` of the same file
//! into a plain table.
//!
//!     cargo bench --bench log_scale
//!     BASAL_SCALE_SIZES=10000,100000 cargo bench --bench log_scale
//!
//! Targets: p50 < 10 ms at 1 M, and growth from 10 k to 1 M below 2×;
//! import at least half the rate of `.import`. The data is invented.

use std::sync::Arc;
use std::time::{Duration, Instant};

use axum::body::Body;
use axum::http::Request;
use basal::engine::Engine;
use basal::engine::input::observations_from_json;
use basal::samples::SampleInput;
use basal::store::samples::{ImportItem, Kept, Packed, import_all};
use http_body_util::BodyExt;
use tower::ServiceExt;

const BATCH: usize = 10_000;

/// Invented specimen templates (observations), cycled through.
fn templates(
    engine: &Engine,
) -> Vec<(
    basal::engine::Observations,
    basal::engine::Identification,
    &'static str,
)> {
    let raw = [
        (
            r#"{"cleavage":"one_perfect","tenacity":"elastic","colour":["colourless"],"setting":"pegmatite"}"#,
            "muscovite",
        ),
        (
            r#"{"cleavage":"one_perfect","tenacity":"elastic","colour":["black"],"setting":"granite"}"#,
            "biotite",
        ),
        (
            r#"{"cleavage":"one_perfect","tenacity":"flexible","colour":["green"],"streak":"greenish","setting":"greenschist"}"#,
            "chlorite",
        ),
        (
            r#"{"feel":"soapy","scratch":{"fingernail":true},"setting":"ultramafic"}"#,
            "talc",
        ),
        (
            r#"{"habit":"earthy","wet_behaviour":"plastic","colour":["white"],"setting":"weathering_profile"}"#,
            "kaolinite",
        ),
        (
            r#"{"luster":"metallic","streak":"red_brown","specific_gravity":5.2}"#,
            "hematite",
        ),
    ];
    raw.iter()
        .map(|(json, id)| {
            let o = observations_from_json(json.as_bytes()).expect("template");
            let ident = engine.identify(&o);
            (o, ident, *id)
        })
        .collect()
}

const SETTINGS: [&str; 6] = [
    "pegmatite",
    "granite",
    "greenschist",
    "ultramafic",
    "weathering_profile",
    "hydrothermal_vein",
];
const WORDS: [&str; 8] = [
    "foliated",
    "schist",
    "vein",
    "saprolite",
    "gneiss",
    "phyllite",
    "quartzite",
    "marble",
];

async fn fill(pool: &sqlx::SqlitePool, engine: &Engine, from: usize, to: usize) {
    let t = templates(engine);
    let packed: Vec<Packed> = t.iter().map(|(_, ident, _)| Packed::of(ident)).collect();
    let mut i = from;
    while i < to {
        let end = (i + BATCH).min(to);
        let items: Vec<ImportItem> = (i..end)
            .map(|n| {
                let (obs, _, id) = &t[n % t.len()];
                let input = SampleInput {
                    project: Some(if n % 10 == 0 {
                        "default".into()
                    } else {
                        "bench".into()
                    }),
                    sample_code: Some(format!("B-{n:07}")),
                    collected_on: Some(format!(
                        "20{:02}-{:02}-{:02}",
                        20 + n % 7,
                        1 + n % 12,
                        1 + n % 28
                    )),
                    collector: Some(format!("Crew {}", (b'A' + (n % 5) as u8) as char)),
                    station: Some(format!("Station {}", n % 997)),
                    latitude: Some(-41.0 - (n % 1000) as f64 / 1000.0),
                    longitude: Some(-20.0 - (n % 777) as f64 / 1000.0),
                    setting: basal::base::vocab::Vocab::parse(SETTINGS[n % SETTINGS.len()]),
                    lithology: Some(format!("{} {}", WORDS[n % 8], WORDS[(n / 8) % 8])),
                    observations: Some(obs.clone()),
                    field_id: Some((*id).into()),
                    notes: Some(format!(
                        "bench record {n}, {} with {}",
                        WORDS[(n / 3) % 8],
                        WORDS[(n / 5) % 8]
                    )),
                    ..Default::default()
                };
                ImportItem {
                    sample: input.validate(|_| true).expect("valid"),
                    snapshot: packed[n % t.len()].clone(),
                    keep: Kept::default(),
                }
            })
            .collect();
        import_all(pool, &items, Some("bench"), &|_| {})
            .await
            .expect("fill");
        i = end;
    }
}

fn pct(sorted: &[Duration], p: f64) -> Duration {
    sorted[((sorted.len() as f64 - 1.0) * p).round() as usize]
}

async fn time_requests(app: &axum::Router, uri: &str, n: usize) -> (Duration, Duration) {
    let mut times = Vec::with_capacity(n);
    for _ in 0..n {
        let t = Instant::now();
        let resp = app
            .clone()
            .oneshot(Request::get(uri).body(Body::empty()).expect("req"))
            .await
            .expect("resp");
        assert!(resp.status().is_success(), "{uri}: {}", resp.status());
        let _ = resp.into_body().collect().await.expect("body");
        times.push(t.elapsed());
    }
    times.sort();
    (pct(&times, 0.5), pct(&times, 0.99))
}

#[tokio::main]
async fn main() {
    let sizes: Vec<usize> = std::env::var("BASAL_SCALE_SIZES")
        .unwrap_or_else(|_| "10000,100000,1000000".into())
        .split(',')
        .filter_map(|s| s.trim().parse().ok())
        .collect();
    let engine = Engine::builtin();
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("scale.sqlite");
    let pool = basal::store::open(&path).await.expect("open");
    basal::store::samples::create_project(&pool, "bench", "Bench (invented)", "B-{seq:7}")
        .await
        .expect("project");
    let state = basal::web::AppState {
        db: pool.clone(),
        engine,
        config: Arc::new(basal::cli::Config {
            listen: "127.0.0.1:0".parse().expect("addr"),
            db: path.clone(),
            ..Default::default()
        }),
    };
    let app = basal::web::app(state);
    let queries = [
        ("list, no filter", "/api/v1/samples?limit=50"),
        ("list, project", "/api/v1/samples?project=bench&limit=50"),
        (
            "list, field_id",
            "/api/v1/samples?field_id=chlorite&limit=50",
        ),
        (
            "list, collector+setting",
            "/api/v1/samples?collector=Crew%20C&setting=greenschist&limit=50",
        ),
        (
            "list, date range",
            "/api/v1/samples?from=2023-03-01&to=2023-06-30&limit=50",
        ),
        (
            "list, free text",
            "/api/v1/samples?q=phyllite%20vein&limit=50",
        ),
        (
            "list, deep cursor",
            "/api/v1/samples?limit=50&cursor=CURSOR",
        ),
        ("history page", "/samples"),
        (
            "history page, filters",
            "/samples?project=bench&field_id=biotite&q=schist",
        ),
    ];
    let mut filled = 0;
    println!("| samples | query | p50 | p99 |");
    println!("|---|---|---|---|");
    for &n in &sizes {
        let t = Instant::now();
        fill(&pool, engine, filled, n).await;
        filled = n;
        let build = t.elapsed();
        for (name, uri) in queries {
            let uri = uri.replace("CURSOR", &(n / 2).to_string());
            let (p50, p99) = time_requests(&app, &uri, 200).await;
            println!(
                "| {n} | {name} | {:.2} ms | {:.2} ms |",
                p50.as_secs_f64() * 1e3,
                p99.as_secs_f64() * 1e3
            );
        }
        let size = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
        eprintln!(
            "built {n} samples in {:.1} s; database {:.0} MB",
            build.as_secs_f64(),
            size as f64 / 1e6
        );
    }

    // Import rate: a 100 k-row CSV of the export's columns.
    let rows = 100_000usize.min(filled);
    let bench_only = basal::store::samples::Filter {
        project: Some("bench".into()),
        ..Default::default()
    };
    let page = basal::store::samples::list(&pool, &bench_only, rows as i64, None)
        .await
        .expect("rows");
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(basal::web::samples_api::CSV_COLUMNS)
        .expect("header");
    for r in &page.samples {
        w.write_record(basal::web::samples_api::csv_row(r))
            .expect("row");
    }
    let csv_path = dir.path().join("rows.csv");
    std::fs::write(&csv_path, w.into_inner().expect("csv")).expect("write csv");
    // BASAL_SCALE_KEEP_CSV=PATH keeps a copy of the file, to time or
    // profile `basal import` on its own.
    if let Ok(keep) = std::env::var("BASAL_SCALE_KEEP_CSV") {
        std::fs::copy(&csv_path, &keep).expect("keep the csv");
    }
    let fresh = dir.path().join("import.sqlite");
    let config = basal::cli::Config {
        listen: "127.0.0.1:0".parse().expect("addr"),
        db: fresh,
        ..Default::default()
    };
    let t = Instant::now();
    let report = basal::cli::import(&config, &csv_path, "bench", false, None)
        .await
        .expect("import");
    let ours = t.elapsed();
    assert!(report.errors.is_empty(), "{:?}", report.errors.first());
    assert_eq!(report.written, page.samples.len());
    let rows = page.samples.len();
    let plain = dir.path().join("plain.sqlite");
    let t = Instant::now();
    let status = std::process::Command::new("sqlite3")
        .arg(&plain)
        .arg("-cmd")
        .arg(".mode csv")
        .arg(format!(".import {} samples", csv_path.display()))
        .status();
    let theirs = t.elapsed();
    match status {
        Ok(s) if s.success() => {
            let (a, b) = (
                rows as f64 / ours.as_secs_f64(),
                rows as f64 / theirs.as_secs_f64(),
            );
            println!(
                "\nimport of {rows} rows: basal {a:.0} rows/s ({:.1} s); sqlite3 .import {b:.0} rows/s ({:.1} s); ratio {:.2}",
                ours.as_secs_f64(),
                theirs.as_secs_f64(),
                a / b
            );
        }
        _ => println!(
            "\nimport of {rows} rows: basal {:.0} rows/s; sqlite3 shell not available for comparison",
            rows as f64 / ours.as_secs_f64()
        ),
    }
}
