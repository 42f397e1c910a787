//! End to end in a real browser: a geologist walks one specimen from
//! `/identify` to its results by filling and submitting the actual HTML
//! forms in headless Chromium, driven over WebDriver.
//!
//! What it specifies:
//! - the question pages can be answered with plain form controls (radios,
//!   checkboxes, text inputs and the "Record and continue" button) and the
//!   flow reaches the results page by itself or through `#to-results`;
//! - the results page ranks a greenschist chlorite first, carries one
//!   `data-entry-id` / `data-probability` marker per entry of the base, in
//!   rank order, and contains no `<script>` element;
//! - a refused answer (`hardness_min = soft`) comes back with the message
//!   beside the field and the user's text still in the input;
//! - nothing is left running afterwards (chromedriver, Chromium, server).
//!
//! It also saves screenshots to `target/screenshots/` for a person to look at.
//!
//! - every page a person reaches (home, `/identify`, a question, results,
//!   the mineral list and a mineral, the sample log, the new-sample form, a
//!   record, projects, import) has no axe-core accessibility violation;
//! - the sample log's CSV and GeoJSON links download through the browser's
//!   session as a browser would (gzip accepted) and parse.
//!
//! It needs Debian's `chromium` and `chromium-driver` packages
//! (`/usr/bin/chromium`, `/usr/bin/chromedriver`) and axe-core from the npm
//! registry (`.ci/test` installs both; the script path is `BASAL_AXE_JS`,
//! by default `target/axe/node_modules/axe-core/axe.min.js`). Under plain
//! `cargo test`, without them, it prints a `skipped:` line naming
//! `.ci/test` and passes; with `BASAL_REQUIRE_BROWSER=1` (set by
//! `.ci/test`, so CI never skips silently) it fails.

use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::sync::Arc;
use std::time::{Duration, Instant};

use basal::cli::Config;
use basal::engine::Engine;
use basal::web::AppState;
use fantoccini::{Client, ClientBuilder, Locator};
use hyper_util::client::legacy::connect::HttpConnector;
use tokio::io::AsyncWriteExt;
use tokio::net::{TcpListener, TcpStream};
use tokio::process::{Child, Command};
use tokio::sync::oneshot;

const CHROMIUM: &str = "/usr/bin/chromium";
const CHROMEDRIVER: &str = "/usr/bin/chromedriver";
const INSTALL_HINT: &str = "install Debian's chromium and chromium-driver packages \
     (apt-get install -y chromium chromium-driver)";

/// How long chromedriver may take to listen, and a page to load after a
/// click. Generous for a loaded 2-core CI machine; a page here loads in
/// tens of milliseconds (common practice: bound every wait).
const START_WAIT: Duration = Duration::from_secs(10);
const PAGE_WAIT: Duration = Duration::from_secs(10);
/// How long each process may take to stop once asked.
const STOP_WAIT: Duration = Duration::from_secs(5);
/// The flow has 14 questions; one spare so a loop that repeats a question
/// is still bounded and shows up as a failure, not a hang.
const MAX_QUESTIONS: usize = 15;
/// Entries in the property base: the `[[entry]]` tables of
/// `src/base/base.toml`, each of which gets a marker on the results page.
const ENTRIES_IN_BASE: usize = 26;

/// One thing the geologist does to answer a question.
enum Act {
    /// Click the radio or checkbox `input[name=..][value=..]`.
    Click(&'static str, &'static str),
    /// Type into the text input `input[name=..]`.
    Type(&'static str, &'static str),
}

/// The prepared description: a chlorite specimen from a greenschist in an
/// invented field area, described the way a geologist would in the field.
/// The values are typical chlorite properties recalled without a source at
/// hand (from memory); the specific gravity 2.75 sits inside the usual
/// chlorite range (from memory). An empty answer leaves the form blank,
/// which the contract records as "not tested".
fn answer_for(question: &str) -> Vec<Act> {
    use Act::{Click, Type};
    match question {
        "setting" => vec![Click("setting", "greenschist")],
        "cleavage" => vec![Click("cleavage", "one_perfect")],
        "tenacity" => vec![Click("tenacity", "flexible")],
        "colour" => vec![Click("colour", "green"), Click("colour", "dark_green")],
        "luster" => vec![Click("luster", "pearly")],
        "habit" => vec![Click("habit", "foliated")],
        "streak" => vec![Click("streak", "greenish")],
        "hardness" => vec![
            Click("scratch_fingernail", "false"),
            Click("scratch_copper", "true"),
        ],
        "diaphaneity" => vec![Click("diaphaneity", "translucent")],
        "feel" => vec![Click("feel", "smooth")],
        "magnetic" => vec![Click("magnetic", "false")],
        // Not tested in the field: no acid in the pack that day.
        "acid_reaction" => vec![],
        "specific_gravity" => vec![Type("specific_gravity", "2.75")],
        "wet_behaviour" => vec![Click("wet_behaviour", "unchanged")],
        other => panic!("the prepared description has no answer for question {other:?}"),
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_chlorite_is_identified_by_filling_in_the_real_forms() {
    let started = Instant::now();
    let Some(axe) = browser_prerequisites() else {
        return;
    };
    let shots = screenshot_dir();

    let server = Server::start().await;
    let browser = Browser::start().await;
    println!(
        "browser session ready after {:.1} s",
        started.elapsed().as_secs_f64()
    );

    // The scenario runs in its own task so that a failed assertion still
    // lets us close the browser and stop every process before re-raising it.
    let scenario = tokio::spawn(scenario(
        browser.client.clone(),
        server.base.clone(),
        shots.clone(),
        axe,
    ));
    let outcome = scenario.await;

    browser.stop().await;
    server.stop().await;
    println!("whole test took {:.1} s", started.elapsed().as_secs_f64());

    if let Err(e) = outcome {
        if e.is_panic() {
            std::panic::resume_unwind(e.into_panic());
        }
        panic!("the scenario task did not finish: {e}");
    }
}

/// The user's side: everything done through the browser.
async fn scenario(c: Client, base: String, shots: PathBuf, axe: String) {
    walk_a_specimen_to_its_results(&c, &base, &shots).await;
    check_the_results_page(&c, &shots).await;
    a_refused_answer_keeps_what_was_typed(&c, &base, &shots).await;
    every_page_passes_axe(&c, &base, &axe).await;
    the_exports_download_and_parse(&c, &base).await;
}

/// Step 2: from `/identify`, answer whatever is asked until the flow
/// reaches the results (or the question budget runs out).
async fn walk_a_specimen_to_its_results(c: &Client, base: &str, shots: &Path) {
    c.goto(&format!("{base}/identify"))
        .await
        .expect("the browser opens /identify");
    let mut asked: Vec<String> = Vec::new();
    while !on_results(c).await && asked.len() < MAX_QUESTIONS {
        let question = current_question(c).await;
        assert!(
            !asked.contains(&question),
            "the flow asked {question:?} twice; asked so far: {asked:?}"
        );
        match asked.len() {
            0 => screenshot(c, shots, "1-first-question").await,
            2 => {
                screenshot(c, shots, "2-mid-flow-question").await;
                phone_screenshot(c, shots, "3-phone-question").await;
            }
            _ => {}
        }
        for act in answer_for(&question) {
            perform(c, &act).await;
        }
        asked.push(question);
        click_and_wait_for_next_page(c, r#"button[name="then"][value="next"]"#).await;
    }
    println!("questions asked ({}): {}", asked.len(), asked.join(", "));
    if !on_results(c).await {
        // Still questions worth asking after the budget: the page's own link.
        click_and_wait_for_next_page(c, "#to-results").await;
    }
    assert!(
        on_results(c).await,
        "expected the results page, got {}",
        current_path(c).await
    );
}

/// Step 3: the markers on the results page, read from the rendered DOM.
async fn check_the_results_page(c: &Client, shots: &Path) {
    screenshot(c, shots, "5-results").await;
    let mut markers: Vec<(String, f64)> = Vec::new();
    for el in c
        .find_all(Locator::Css("[data-entry-id]"))
        .await
        .expect("the results page can be searched for markers")
    {
        let id = el
            .attr("data-entry-id")
            .await
            .expect("a marker's id can be read")
            .expect("the selector guarantees the attribute");
        let raw = el
            .attr("data-probability")
            .await
            .expect("a marker's probability can be read")
            .unwrap_or_else(|| panic!("marker {id} has no data-probability"));
        let p: f64 = raw.parse().unwrap_or_else(|e| {
            panic!("marker {id}: data-probability {raw:?} is not a number: {e}")
        });
        assert!(
            (0.0..=1.0).contains(&p),
            "marker {id}: probability {p} outside 0..1"
        );
        markers.push((id, p));
    }
    println!(
        "leaders: {}",
        markers
            .iter()
            .take(3)
            .map(|(id, p)| format!("{id} {p}"))
            .collect::<Vec<_>>()
            .join(", ")
    );
    assert_eq!(
        markers.len(),
        ENTRIES_IN_BASE,
        "one marker per entry: {markers:?}"
    );
    assert_eq!(markers[0].0, "chlorite", "ranking: {markers:?}");
    assert!(
        markers.windows(2).all(|w| w[0].1 >= w[1].1),
        "markers are not in rank order: {markers:?}"
    );
    // The contract: no page contains a script element. Checked on the text
    // of the page the browser holds, without running any script ourselves.
    let html = c.source().await.expect("the page source can be read");
    assert!(
        !html.to_ascii_lowercase().contains("<script"),
        "the results page contains a <script> element"
    );
}

/// Step 4: a hardness typed as a word is refused beside the field, and
/// the input keeps the user's text so it can be corrected.
async fn a_refused_answer_keeps_what_was_typed(c: &Client, base: &str, shots: &Path) {
    c.goto(&format!("{base}/identify"))
        .await
        .expect("the browser opens a fresh /identify");
    // The start page stores nothing; submitting its first question (left
    // blank: "not tested") creates the draft and lands on its own URL.
    click_and_wait_for_next_page(c, r#"button[name="then"][value="next"]"#).await;
    let path = current_path(c).await;
    let draft = path
        .strip_prefix("/identify/")
        .unwrap_or_else(|| panic!("the start form leads to a draft URL, not {path:?}"));
    c.goto(&format!("{base}/identify/{draft}?q=hardness"))
        .await
        .expect("the browser opens the hardness question");
    assert_eq!(current_question(c).await, "hardness");
    perform(c, &Act::Type("hardness_min", "soft")).await;
    click_and_wait_for_next_page(c, r#"button[name="then"][value="next"]"#).await;

    let error = c
        .find(Locator::Css(".field-error"))
        .await
        .expect("the refusal shows a message beside the field")
        .text()
        .await
        .expect("the message can be read");
    assert!(!error.trim().is_empty(), "the field error is empty");
    println!("field error: {error}");
    let kept = c
        .find(Locator::Css(r#"input[name="hardness_min"]"#))
        .await
        .expect("the refused form is shown again")
        .prop("value")
        .await
        .expect("the input's value can be read");
    assert_eq!(
        kept.as_deref(),
        Some("soft"),
        "the input lost what was typed"
    );
    screenshot(c, shots, "4-refusal").await;
}

// ---------------------------------------------------------------------------
// Prerequisites: skip under plain `cargo test`, fail under `.ci/test`

/// Where `.ci/test` installs axe-core (pinned there).
fn axe_path() -> PathBuf {
    std::env::var_os("BASAL_AXE_JS").map_or_else(
        || {
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("target/axe/node_modules/axe-core/axe.min.js")
        },
        PathBuf::from,
    )
}

/// The axe-core source when everything the test needs is there. Otherwise
/// `None` after a `skipped:` line, or a panic when
/// `BASAL_REQUIRE_BROWSER=1` says this run must not skip.
fn browser_prerequisites() -> Option<String> {
    let axe = axe_path();
    let mut missing = Vec::new();
    for (path, package) in [(CHROMIUM, "chromium"), (CHROMEDRIVER, "chromium-driver")] {
        if !Path::new(path).exists() {
            missing.push(format!("{path} (Debian package {package})"));
        }
    }
    let source = match std::fs::read_to_string(&axe) {
        Ok(s) if !s.is_empty() => Some(s),
        _ => {
            missing.push(format!("{} (axe-core from npm)", axe.display()));
            None
        }
    };
    if missing.is_empty() {
        return source;
    }
    let what = missing.join(", ");
    if std::env::var("BASAL_REQUIRE_BROWSER").is_ok_and(|v| v == "1") {
        panic!(
            "BASAL_REQUIRE_BROWSER=1 and the browser test cannot run: missing {what}; {INSTALL_HINT}, or run bash .ci/test"
        );
    }
    // Straight to stderr, not through `eprintln!`: the test harness
    // captures the print macros of a passing test, and this line must be
    // seen.
    let line = format!(
        "skipped: tests/browser.rs (the browser walk and the axe-core audit): missing {what}; run bash .ci/test\n"
    );
    let _ = std::io::Write::write_all(&mut std::io::stderr(), line.as_bytes());
    None
}

// ---------------------------------------------------------------------------
// Accessibility: axe-core on every page

/// Step 5: every page a person reaches, audited by axe-core in the test
/// browser. The script is injected over WebDriver (Chromium runs it
/// whatever the page's `script-src 'none'` says); the service never serves
/// it.
///
/// Each page is also laid out at a phone's width (390 CSS pixels): none
/// may scroll sideways (`scrollWidth <= innerWidth`), and a screenshot of
/// each is kept at both widths in target/screenshots.
/// The sample code the audit saves: 48 characters without a space.
const LONG_CODE: &str = "AXE-0001-RIDGECUT3-NORTHFACE-LOWERBENCH-BLOCK-07";

async fn every_page_passes_axe(c: &Client, base: &str, axe: &str) {
    let mut failures = Vec::new();
    let mut too_wide = Vec::new();
    let mut audited = Vec::new();
    let shots = screenshot_dir();
    let mut audit_here = async |c: &Client, label: &str| {
        let found = axe_violations(c, axe).await;
        audited.push(format!("{label} ({})", current_path(c).await));
        let name: String = label
            .chars()
            .map(|ch| if ch.is_ascii_alphanumeric() { ch } else { '-' })
            .collect();
        screenshot(c, &shots, &format!("page-{name}")).await;
        if let Some(wide) = wider_than_a_phone(c, &shots, &name).await {
            too_wide.push(format!("{label} at {}: {wide}", current_path(c).await));
        }
        if !found.is_empty() {
            failures.push(format!(
                "{label} at {}:\n{}",
                current_path(c).await,
                found.join("\n")
            ));
        }
    };

    goto(c, &format!("{base}/")).await;
    audit_here(c, "home").await;

    goto(c, &format!("{base}/identify")).await;
    audit_here(c, "/identify").await;
    if c.find(Locator::Css(r#"input[type="hidden"][name="question"]"#))
        .await
        .is_err()
    {
        // A start page: its first button begins the questions.
        click_and_wait_for_next_page(c, "main form button[type=submit]").await;
    }
    let _ = current_question(c).await;
    audit_here(c, "a question page").await;
    click_and_wait_for_next_page(c, r#"button[name="then"][value="results"]"#).await;
    assert!(
        on_results(c).await,
        "expected results, got {}",
        current_path(c).await
    );
    audit_here(c, "results").await;
    let results = current_path(c).await;
    goto(c, &format!("{base}{}", results.replace("/results", "/all"))).await;
    audit_here(c, "the one-form page").await;
    goto(c, &format!("{base}/identify/drafts")).await;
    audit_here(c, "/identify/drafts").await;

    goto(c, &format!("{base}/minerals")).await;
    audit_here(c, "/minerals").await;
    goto(c, &format!("{base}/minerals/chlorite")).await;
    audit_here(c, "a mineral page").await;
    goto(c, &format!("{base}/minerals/chrysotile")).await;
    audit_here(c, "an asbestos mineral page").await;

    goto(c, &format!("{base}/samples/new")).await;
    audit_here(c, "the new-sample form").await;
    // An invented sample code, to reach a record page: a long one with no
    // break in it, so the phone-width check sees it wrap on the record
    // page and in the log.
    let code = c
        .find(Locator::Css(r#"input[name="sample_code"]"#))
        .await
        .expect("the new-sample form has a sample code input");
    code.clear()
        .await
        .expect("the suggested code can be cleared");
    code.send_keys(LONG_CODE)
        .await
        .expect("a sample code can be typed");
    click_and_wait_for_next_page(c, "form.sample-form .actions button[type=submit]").await;
    assert!(
        c.find(Locator::Css("[data-sample-id]")).await.is_ok(),
        "saving the new sample did not lead to its record page: {}",
        page_text(c).await
    );
    audit_here(c, "a record page").await;
    let record = current_path(c).await;
    goto(c, &format!("{base}{record}/edit")).await;
    audit_here(c, "the edit form").await;

    goto(c, &format!("{base}/samples")).await;
    audit_here(c, "/samples").await;
    goto(c, &format!("{base}/projects")).await;
    audit_here(c, "/projects").await;
    goto(c, &format!("{base}/samples/import")).await;
    audit_here(c, "/samples/import").await;

    println!(
        "axe-core audited {} pages: {}",
        audited.len(),
        audited.join(", ")
    );
    assert!(
        failures.is_empty(),
        "axe-core found accessibility violations:\n{}",
        failures.join("\n")
    );
    assert!(
        too_wide.is_empty(),
        "pages that scroll sideways at 390 px:\n{}",
        too_wide.join("\n")
    );
}

/// Lays the current page out at 390 x 844 CSS pixels, keeps a screenshot,
/// and says how far it scrolls sideways (None when it does not), naming
/// the widest elements that stick out; then restores the desktop size.
async fn wider_than_a_phone(c: &Client, shots: &Path, name: &str) -> Option<String> {
    c.set_window_size(390, 844)
        .await
        .expect("the window can be resized to phone width");
    let measured = c
        .execute(
            r#"const inner = window.innerWidth;
               const scroll = document.documentElement.scrollWidth;
               if (scroll <= inner) { return null; }
               const out = [];
               for (const el of document.querySelectorAll("body *")) {
                 const r = el.getBoundingClientRect();
                 if (r.right > inner + 0.5) {
                   out.push(el.tagName.toLowerCase() + (el.className ? "." + String(el.className).trim().replace(/\s+/g, ".") : "") + " right=" + Math.round(r.right));
                 }
               }
               return "scrollWidth " + scroll + " > innerWidth " + inner + "; sticking out: " + out.slice(0, 8).join(", ");"#,
            Vec::new(),
        )
        .await
        .expect("the page's widths can be read through WebDriver");
    screenshot(c, shots, &format!("phone-{name}")).await;
    c.set_window_size(1280, 800)
        .await
        .expect("the window can be resized back");
    measured.as_str().map(str::to_string)
}

/// Injects axe-core into the current page, runs it, and returns one line
/// per violating node: rule id, impact, the node's selector and its HTML.
async fn axe_violations(c: &Client, axe: &str) -> Vec<String> {
    c.execute(axe, Vec::new())
        .await
        .expect("axe-core can be injected through WebDriver");
    let result = c
        .execute_async(
            r#"const done = arguments[arguments.length - 1];
               axe.run(document, { resultTypes: ["violations"] })
                 .then(r => done(JSON.stringify(r.violations)))
                 .catch(e => done(JSON.stringify({ error: String(e) })));"#,
            Vec::new(),
        )
        .await
        .expect("axe-core runs in the page");
    let raw = result.as_str().expect("axe-core answers a JSON string");
    let parsed: serde_json::Value = serde_json::from_str(raw).expect("axe-core's answer is JSON");
    if let Some(e) = parsed.get("error") {
        panic!("axe-core failed on {}: {e}", current_path(c).await);
    }
    let mut lines = Vec::new();
    for v in parsed.as_array().expect("a list of violations") {
        let id = v["id"].as_str().unwrap_or("?");
        let impact = v["impact"].as_str().unwrap_or("?");
        let help = v["help"].as_str().unwrap_or("");
        for node in v["nodes"].as_array().map(Vec::as_slice).unwrap_or_default() {
            lines.push(format!(
                "  {id} [{impact}] {help}: {} {}",
                node["target"],
                node["html"].as_str().unwrap_or("")
            ));
        }
    }
    lines
}

async fn goto(c: &Client, url: &str) {
    c.goto(url)
        .await
        .unwrap_or_else(|e| panic!("the browser opens {url}: {e}"));
}

// ---------------------------------------------------------------------------
// Exports through the browser's session

/// Step 6: the sample log's CSV and GeoJSON links, fetched with the
/// browser's cookies and `Accept-Encoding: gzip` as a browser sends them;
/// each body is decoded as the browser would and must parse.
async fn the_exports_download_and_parse(c: &Client, base: &str) {
    goto(c, &format!("{base}/samples")).await;
    let cookies: Vec<String> = c
        .get_all_cookies()
        .await
        .expect("the browser's cookies can be read")
        .iter()
        .map(|k| format!("{}={}", k.name(), k.value()))
        .collect();
    for (label, css) in [
        ("CSV", r#"p.exports a[href^="/export/samples.csv"]"#),
        ("GeoJSON", r#"p.exports a[href^="/export/samples.geojson"]"#),
    ] {
        let href = c
            .find(Locator::Css(css))
            .await
            .unwrap_or_else(|e| panic!("the sample log has a {label} export link ({css}): {e}"))
            .attr("href")
            .await
            .expect("the link's href can be read")
            .expect("the export link has an href");
        let body = fetch_as_browser(&format!("{base}{href}"), &cookies).await;
        assert!(!body.is_empty(), "the {label} export is empty");
        match label {
            "CSV" => {
                let mut reader = csv::Reader::from_reader(body.as_slice());
                let header = reader.headers().expect("the CSV has a header row").clone();
                assert!(
                    header.iter().any(|h| h == "sample_code"),
                    "the CSV header lacks sample_code: {header:?}"
                );
                let rows: Vec<csv::StringRecord> = reader
                    .records()
                    .collect::<Result<_, _>>()
                    .expect("every CSV row parses");
                assert!(
                    rows.iter().any(|r| r.iter().any(|f| f == LONG_CODE)),
                    "the CSV lacks the sample saved in the browser"
                );
            }
            _ => {
                let doc: serde_json::Value =
                    serde_json::from_slice(&body).expect("the GeoJSON export is JSON");
                assert_eq!(doc["type"], "FeatureCollection", "GeoJSON: {doc}");
                assert!(
                    doc["features"].is_array(),
                    "GeoJSON without features: {doc}"
                );
            }
        }
        println!("{label} export: {} bytes decoded, parses", body.len());
    }
}

/// GET `url` over a plain HTTP client the way the browser asks for a
/// download (its cookies, `Accept-Encoding: gzip`), decoding gzip.
async fn fetch_as_browser(url: &str, cookies: &[String]) -> Vec<u8> {
    use http_body_util::BodyExt;
    use std::io::Read;
    let client: hyper_util::client::legacy::Client<_, http_body_util::Empty<axum::body::Bytes>> =
        hyper_util::client::legacy::Client::builder(hyper_util::rt::TokioExecutor::new())
            .build(HttpConnector::new());
    let mut req = axum::http::Request::get(url)
        .header("accept-encoding", "gzip, deflate")
        .header("accept", "*/*");
    if !cookies.is_empty() {
        req = req.header("cookie", cookies.join("; "));
    }
    let res = client
        .request(
            req.body(http_body_util::Empty::new())
                .expect("a valid request"),
        )
        .await
        .unwrap_or_else(|e| panic!("GET {url}: {e}"));
    assert!(res.status().is_success(), "GET {url}: {}", res.status());
    let gzip = res
        .headers()
        .get("content-encoding")
        .is_some_and(|v| v.as_bytes().eq_ignore_ascii_case(b"gzip"));
    let raw = res
        .into_body()
        .collect()
        .await
        .unwrap_or_else(|e| panic!("reading the body of {url}: {e}"))
        .to_bytes();
    if !gzip {
        return raw.to_vec();
    }
    let mut out = Vec::new();
    flate2::read::GzDecoder::new(raw.as_ref())
        .read_to_end(&mut out)
        .unwrap_or_else(|e| panic!("the gzip body of {url} does not decode: {e}"));
    out
}

// ---------------------------------------------------------------------------
// Page helpers

async fn current_path(c: &Client) -> String {
    c.current_url()
        .await
        .expect("the browser reports its URL")
        .path()
        .to_string()
}

/// The visible text of the page's main element, for failure messages.
async fn page_text(c: &Client) -> String {
    match c.find(Locator::Css("main")).await {
        Ok(main) => main
            .text()
            .await
            .unwrap_or_else(|e| format!("(unreadable: {e})")),
        Err(e) => format!("(no main element: {e})"),
    }
}

async fn on_results(c: &Client) -> bool {
    current_path(c).await.ends_with("/results")
}

/// Which question the page asks: its hidden `question` input.
async fn current_question(c: &Client) -> String {
    let input = match c
        .find(Locator::Css(r#"input[type="hidden"][name="question"]"#))
        .await
    {
        Ok(input) => input,
        Err(e) => panic!(
            "expected a question page at {}, found no question input ({e}); the page says: {}",
            current_path(c).await,
            page_text(c).await
        ),
    };
    input
        .attr("value")
        .await
        .expect("the question input can be read")
        .expect("the question input has a value")
}

async fn perform(c: &Client, act: &Act) {
    match *act {
        Act::Click(name, value) => {
            let css = format!(r#"input[name="{name}"][value="{value}"]"#);
            let input = c
                .find(Locator::Css(&css))
                .await
                .unwrap_or_else(|e| panic!("no control {css} on the page: {e}"));
            input
                .click()
                .await
                .unwrap_or_else(|e| panic!("cannot click {css}: {e}"));
            assert!(
                input
                    .is_selected()
                    .await
                    .expect("the control's state can be read"),
                "{css} is not checked after clicking it"
            );
        }
        Act::Type(name, text) => {
            let css = format!(r#"input[name="{name}"]"#);
            let input = c
                .find(Locator::Css(&css))
                .await
                .unwrap_or_else(|e| panic!("no input {css} on the page: {e}"));
            input
                .send_keys(text)
                .await
                .unwrap_or_else(|e| panic!("cannot type into {css}: {e}"));
        }
    }
}

/// Whether an error says the element's document has been replaced.
/// Chromium reports it as a stale element reference, or, when the old
/// document is torn down mid-call, as an inspector error about the node.
fn is_gone(e: &fantoccini::error::CmdError) -> bool {
    if e.is_stale_element_reference() {
        return true;
    }
    let text = e.to_string();
    text.contains("does not belong to the document") || text.contains("No node with given id")
}

/// Clicks what `css` selects and waits until the browser holds a new,
/// fully parsed document. The URL alone cannot tell: answering a question
/// posts to the draft's URL and is redirected back to the same URL. So
/// wait until the old document's root goes stale, then for the footer that
/// every page ends with.
async fn click_and_wait_for_next_page(c: &Client, css: &str) {
    let old_root = c
        .find(Locator::Css("html"))
        .await
        .expect("the page has a root element");
    c.find(Locator::Css(css))
        .await
        .unwrap_or_else(|e| panic!("nothing to click at {css}: {e}"))
        .click()
        .await
        .unwrap_or_else(|e| panic!("cannot click {css}: {e}"));
    let deadline = Instant::now() + PAGE_WAIT;
    loop {
        match old_root.tag_name().await {
            Err(e) if is_gone(&e) => break,
            Ok(_) => {}
            Err(e) => panic!("waiting for the page after {css}: {e}"),
        }
        assert!(
            Instant::now() < deadline,
            "no new page within {PAGE_WAIT:?} after clicking {css}"
        );
        tokio::time::sleep(Duration::from_millis(25)).await;
    }
    c.wait()
        .at_most(PAGE_WAIT)
        .for_element(Locator::Css("footer.foot"))
        .await
        .unwrap_or_else(|e| panic!("the page after {css} did not finish loading: {e}"));
}

// ---------------------------------------------------------------------------
// Screenshots

fn screenshot_dir() -> PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&dir).expect("target/screenshots can be created");
    dir
}

async fn screenshot(c: &Client, dir: &Path, name: &str) {
    let png = c
        .screenshot()
        .await
        .expect("the browser takes a screenshot");
    let path = dir.join(format!("browser-{name}.png"));
    std::fs::write(&path, png).expect("the screenshot can be written");
    println!("screenshot: {}", path.display());
}

/// The same page at a phone's width (390 x 844 CSS pixels, the size of a
/// common current phone, from memory), then back to the desktop size.
async fn phone_screenshot(c: &Client, dir: &Path, name: &str) {
    c.set_window_size(390, 844)
        .await
        .expect("the window can be resized to phone width");
    screenshot(c, dir, name).await;
    c.set_window_size(1280, 800)
        .await
        .expect("the window can be resized back");
}

// ---------------------------------------------------------------------------
// The app under test

/// The app on a real socket, over a fresh migrated SQLite in a temp dir.
struct Server {
    base: String,
    stop: oneshot::Sender<()>,
    task: tokio::task::JoinHandle<std::io::Result<()>>,
    _dir: tempfile::TempDir,
}

impl Server {
    async fn start() -> Server {
        let dir = tempfile::tempdir().expect("a temp dir for the database");
        let db_path = dir.path().join("basal.sqlite");
        let db = basal::store::open(&db_path)
            .await
            .expect("the temp database opens and migrates");
        let listener = TcpListener::bind("127.0.0.1:0")
            .await
            .expect("a free local port for the app");
        let addr = listener.local_addr().expect("the app's address");
        let state = AppState {
            db,
            engine: Engine::builtin(),
            config: Arc::new(Config::new(addr, db_path)),
        };
        let (stop, stopped) = oneshot::channel::<()>();
        let task = tokio::spawn(basal::web::run(listener, state, async {
            let _ = stopped.await;
        }));
        Server {
            base: format!("http://{addr}"),
            stop,
            task,
            _dir: dir,
        }
    }

    /// Graceful shutdown: the browser is gone, so no request is in flight.
    async fn stop(self) {
        let _ = self.stop.send(());
        match tokio::time::timeout(STOP_WAIT, self.task).await {
            Ok(Ok(Ok(()))) => {}
            Ok(Ok(Err(e))) => panic!("the server stopped with an error: {e}"),
            Ok(Err(e)) => panic!("the server task failed: {e}"),
            Err(_) => panic!("the server did not stop within {STOP_WAIT:?}"),
        }
    }
}

// ---------------------------------------------------------------------------
// The browser

/// chromedriver as a child process and one WebDriver session on it.
struct Browser {
    client: Client,
    driver: Child,
    port: u16,
    profile: tempfile::TempDir,
}

impl Browser {
    async fn start() -> Browser {
        for (path, package) in [(CHROMIUM, "chromium"), (CHROMEDRIVER, "chromium-driver")] {
            assert!(
                Path::new(path).exists(),
                "{path} is missing (package {package}): this test needs a real browser; {INSTALL_HINT}"
            );
        }
        let port = free_port();
        let mut driver = Command::new(CHROMEDRIVER)
            .arg(format!("--port={port}"))
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .kill_on_drop(true)
            .spawn()
            .unwrap_or_else(|e| panic!("cannot start {CHROMEDRIVER}: {e}; {INSTALL_HINT}"));
        wait_for_port(port, &mut driver).await;

        // A fresh profile per run: no state from an earlier run, and the
        // processes of this session can be recognised by its path.
        let profile = tempfile::tempdir().expect("a temp dir for the browser profile");
        let caps = serde_json::json!({
            "goog:chromeOptions": {
                "binary": CHROMIUM,
                "args": [
                    "--headless",
                    "--no-sandbox",
                    "--disable-gpu",
                    "--disable-quic",
                    "--disable-background-networking",
                    "--disable-component-update",
                    "--disable-sync",
                    "--no-first-run",
                    "--disable-dev-shm-usage",
                    "--window-size=1280,800",
                    format!("--user-data-dir={}", profile.path().display()),
                ]
            }
        });
        let caps = caps
            .as_object()
            .cloned()
            .expect("the capabilities are a JSON object");
        let client = ClientBuilder::new(HttpConnector::new())
            .capabilities(caps)
            .connect(&format!("http://127.0.0.1:{port}"))
            .await
            .unwrap_or_else(|e| {
                panic!("chromedriver could not start {CHROMIUM}: {e}; {INSTALL_HINT}")
            });
        Browser {
            client,
            driver,
            port,
            profile,
        }
    }

    /// Ends the session (chromedriver closes Chromium), asks chromedriver
    /// to shut down, and checks no browser process of ours is left.
    async fn stop(mut self) {
        if let Err(e) = self.client.close().await {
            eprintln!("closing the WebDriver session failed: {e}");
        }
        // chromedriver's own shutdown command also closes any session still
        // open; killing it outright could orphan a Chromium.
        if let Ok(mut s) = TcpStream::connect(("127.0.0.1", self.port)).await {
            let _ = s
                .write_all(
                    b"GET /shutdown HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n",
                )
                .await;
        }
        match tokio::time::timeout(STOP_WAIT, self.driver.wait()).await {
            Ok(_) => {}
            Err(_) => {
                eprintln!("chromedriver did not stop within {STOP_WAIT:?}; killing it");
                let _ = self.driver.kill().await;
            }
        }
        let deadline = Instant::now() + STOP_WAIT;
        loop {
            let left = processes_mentioning(self.profile.path());
            if left.is_empty() {
                break;
            }
            assert!(
                Instant::now() < deadline,
                "browser processes left behind: {left:?}"
            );
            tokio::time::sleep(Duration::from_millis(100)).await;
        }
    }
}

/// A port nobody listens on now (the OS picks it; chromedriver binds it a
/// moment later).
fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .expect("a free local port for chromedriver")
        .port()
}

/// Waits, bounded, until chromedriver accepts connections; fails early if
/// it exits instead.
async fn wait_for_port(port: u16, driver: &mut Child) {
    let deadline = Instant::now() + START_WAIT;
    loop {
        if TcpStream::connect(("127.0.0.1", port)).await.is_ok() {
            return;
        }
        if let Ok(Some(status)) = driver.try_wait() {
            panic!("chromedriver exited ({status}) before listening on {port}; {INSTALL_HINT}");
        }
        assert!(
            Instant::now() < deadline,
            "chromedriver did not listen on {port} within {START_WAIT:?}"
        );
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
}

/// Pids whose command line mentions `dir` (Linux `/proc`; elsewhere none).
fn processes_mentioning(dir: &Path) -> Vec<u32> {
    let needle = dir.to_string_lossy().into_owned();
    let Ok(entries) = std::fs::read_dir("/proc") else {
        return Vec::new();
    };
    entries
        .filter_map(Result::ok)
        .filter_map(|e| e.file_name().to_str()?.parse::<u32>().ok())
        .filter(|pid| {
            std::fs::read(format!("/proc/{pid}/cmdline"))
                .map(|c| String::from_utf8_lossy(&c).contains(&needle))
                .unwrap_or(false)
        })
        .collect()
}
