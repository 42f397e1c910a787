//! One name for one thing: every page says the same thing with the same
//! words. Each row fetches a page, requires the chosen name and refuses
//! the names it replaced, so a page that drifts back fails here.

use axum::http::StatusCode;

use crate::helpers::{Session, TestApp};

/// One page and what it must and must not say.
struct Row {
    uri: String,
    status: StatusCode,
    must: Vec<&'static str>,
    must_not: Vec<&'static str>,
}

fn row(uri: impl Into<String>, must: &[&'static str], must_not: &[&'static str]) -> Row {
    Row {
        uri: uri.into(),
        status: StatusCode::OK,
        must: must.to_vec(),
        must_not: must_not.to_vec(),
    }
}

/// The text a person reads: the page with every tag (and so every
/// attribute: form field names and wire values) taken out.
fn prose(html: &str) -> String {
    let mut out = String::with_capacity(html.len());
    let mut in_tag = false;
    for ch in html.chars() {
        match ch {
            '<' => in_tag = true,
            '>' if in_tag => {
                in_tag = false;
                out.push(' ');
            }
            _ if !in_tag => out.push(ch),
            _ => {}
        }
    }
    out
}

fn title(html: &str) -> &str {
    let start = html.find("<title>").expect("a title") + "<title>".len();
    let end = html[start..].find("</title>").expect("the title ends") + start;
    &html[start..end]
}

/// Starts an identification through the start page's form.
async fn started(s: &mut Session<'_>) -> String {
    s.get("/identify").await;
    let r = s.submit("/identify", "").await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    r.location()
        .strip_prefix("/identify/")
        .expect("a draft URL")
        .to_string()
}

/// A fibrous, silky specimen from an ultramafic rock: chrysotile leads and
/// the asbestos caution shows.
async fn asbestiform(s: &mut Session<'_>) -> String {
    let id = started(s).await;
    let r = s
        .submit(
            &format!("/identify/{id}/all"),
            "habit=fibrous&luster=silky&setting=ultramafic",
        )
        .await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    id
}

/// Saves an invented sample through the form, changed by "Field crew A",
/// then edits it once (a second revision). Returns its id.
async fn sample(s: &mut Session<'_>) -> String {
    s.get("/samples/new").await;
    let fields = "project=default&sample_code=NM-1&collected_on=2026-06-09&collector=Crew+lead&station=Ridge+cut+3&field_id=chlorite&edited_by=Field+crew+A";
    let r = s.submit("/samples", fields).await;
    assert_eq!(r.status, StatusCode::SEE_OTHER, "{}", r.text());
    r.location()
        .strip_prefix("/samples/")
        .expect("a record URL")
        .to_string()
}

#[tokio::test]
async fn every_page_uses_the_one_name_for_each_thing() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let draft = asbestiform(&mut s).await;
    let sample = sample(&mut s).await;
    let missing = "00000000-0000-4000-8000-000000000000";
    const ONE_FORM: &str = "Every observation on one form";
    const OLD_ONE_FORM: [&str; 3] = [
        "Enter everything at once",
        "Enter every observation",
        "Edit every observation",
    ];
    let rows = vec![
        row(
            "/",
            &["<title>basal</title>", ">Unfinished identifications</a>"],
            &["basal · basal", ">Unfinished</a>"],
        ),
        row(
            "/identify",
            &[ONE_FORM, ">Unfinished identifications</a>"],
            &OLD_ONE_FORM,
        ),
        row(
            format!("/identify/{draft}?ask=cleavage"),
            &[
                ONE_FORM,
                "Leading candidates",
                "hazard-asbestos",
                "Asbestos mineral",
            ],
            &[OLD_ONE_FORM[0], "Possible asbestos"],
        ),
        row(
            format!("/identify/{draft}/all"),
            &[
                "<title>Every observation on one form · basal</title>",
                "<h1>Every observation on one form</h1>",
                r#"<th scope="col">Yes: scratches</th><th scope="col">No: does not scratch</th>"#,
            ],
            &[OLD_ONE_FORM[1], r#"<th scope="col">Result</th>"#],
        ),
        row(
            format!("/identify/{draft}/results"),
            &[
                ONE_FORM,
                "Asbestos mineral",
                r#"class="caution caution-asbestos hazard-asbestos""#,
            ],
            &[
                OLD_ONE_FORM[2],
                "Possible asbestos",
                "<title>Results · basal</title>",
            ],
        ),
        row(
            "/identify/drafts",
            &[
                "<h1>Unfinished identifications</h1>",
                r#"<th scope="col">Leading candidate</th>"#,
            ],
            &[r#"<th scope="col">Leading</th>"#, "open draft"],
        ),
        row(
            format!("/identify/{draft}?ask=diaphaneity"),
            &[
                "Does light pass through a thin edge?",
                "<legend>Diaphaneity</legend>",
            ],
            &["thin flake?"],
        ),
        row(
            format!("/identify/{draft}?ask=luster"),
            &["<legend>Lustre</legend>", r#"name="luster""#],
            &[],
        ),
        row(
            "/samples",
            &[
                ">Filter the log</button>",
                ">Identify a specimen</a>",
                r#"<th scope="col">Sample code</th>"#,
                r#"<th scope="col">Leading candidate</th>"#,
            ],
            &[
                ">Show</button>",
                "Identify a specimen first",
                "Leading candidate when saved",
                r#"<th scope="col">Code</th>"#,
            ],
        ),
        row(
            format!("/samples/{sample}"),
            &[
                r#"<h2 id="hist-h">Revisions</h2>"#,
                "Leading candidates when saved",
                "changed by Field crew A",
            ],
            &[">History</h2>", "Identification when saved"],
        ),
        row(
            "/samples/new",
            &["Changed by (optional)", "in the record's revisions"],
            &["Recorded by", "record's history"],
        ),
        row(
            "/projects",
            &[
                r#"<th scope="col">Project code</th>"#,
                "<label>Project code <input",
                ">sample log</a>",
            ],
            &[
                ">history</a>",
                r#"<th scope="col">Code</th>"#,
                "<label>Code <input",
            ],
        ),
        row(
            "/minerals",
            &[
                r#"<span class="tag tag-hazard hazard-asbestos">Asbestos mineral</span>"#,
                r#"<span class="tag tag-hazard hazard-dust">Fine dust</span>"#,
            ],
            &["asbestiform fibres", "respirable dust"],
        ),
        row(
            "/minerals/chrysotile",
            &[
                r#"<aside class="caution hazard-asbestos""#,
                "Asbestos mineral",
                "Other names: white asbestos; serpentine asbestos.",
            ],
            &["Caution: asbestos mineral", "Also logged under this name"],
        ),
        row(
            "/minerals/talc",
            &[r#"<aside class="caution hazard-dust""#, "Fine dust</h2>"],
            &["Caution: fine dust"],
        ),
        Row {
            uri: format!("/identify/{missing}"),
            status: StatusCode::NOT_FOUND,
            must: vec![
                "There is no unfinished identification",
                "Unfinished identifications are listed at /identify/drafts",
            ],
            must_not: vec!["open identification", "unfinished ones"],
        },
        Row {
            uri: format!("/samples/new?draft={missing}"),
            status: StatusCode::NOT_FOUND,
            must: vec!["Unfinished identifications are listed at /identify/drafts"],
            must_not: vec!["Open drafts", "open draft"],
        },
    ];
    for r in rows {
        let reply = s.get(&r.uri).await;
        assert_eq!(reply.status, r.status, "{}", r.uri);
        let html = reply.text();
        for m in &r.must {
            assert!(html.contains(m), "{} lacks {m:?}", r.uri);
        }
        for m in &r.must_not {
            assert!(!html.contains(m), "{} still says {m:?}", r.uri);
        }
        // British spelling in what people read; the wire values (attribute
        // values, form field names) are left as the contract has them.
        let text = prose(&html).to_lowercase();
        for american in ["luster", "color", "polariz", "gray"] {
            assert!(
                !text.contains(american),
                "{} says {american:?} in its prose",
                r.uri
            );
        }
    }
}

#[tokio::test]
async fn the_results_page_is_titled_with_the_leader_and_the_identification() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let draft = asbestiform(&mut s).await;
    let html = s.get(&format!("/identify/{draft}/results")).await.text();
    // The first candidate on the page is the leader.
    let at =
        html.find(r#"class="cand-name">"#).expect("a candidate") + r#"class="cand-name">"#.len();
    let leader = &html[at..at + html[at..].find('<').expect("the name ends")];
    let pct_at = html.find(r#"<span class="bar-pct">"#).expect("a percent")
        + r#"<span class="bar-pct">"#.len();
    let pct = &html[pct_at..pct_at + html[pct_at..].find('<').expect("the percent ends")];
    assert_eq!(leader, "Chrysotile", "the fibrous specimen's leader");
    assert_eq!(
        title(&html),
        format!("{leader} {pct} · identification {}… · basal", &draft[..8])
    );
}

#[tokio::test]
async fn asbestos_carries_one_name_and_one_class_on_every_page() {
    let app = TestApp::new().await;
    let mut s = Session::new(&app);
    let draft = asbestiform(&mut s).await;
    for uri in [
        format!("/identify/{draft}/results"),
        format!("/identify/{draft}?ask=cleavage"),
        "/minerals/chrysotile".to_string(),
        "/minerals".to_string(),
    ] {
        let html = s.get(&uri).await.text();
        let at = html
            .find("hazard-asbestos")
            .unwrap_or_else(|| panic!("{uri} has no hazard-asbestos"));
        let after = &html[at..(at + 400).min(html.len())];
        assert!(after.contains("Asbestos mineral"), "{uri}: {after}");
    }
    // The class is drawn in the red danger colour, whatever the page's
    // own stylesheet does with a caution box.
    let css = app.get("/static/basal.css").await.text();
    assert!(
        css.contains(".caution.hazard-asbestos { background: var(--danger-bg); border-color: var(--danger-line);"),
        "{css}"
    );
    assert!(css.contains(
        ".tag.hazard-asbestos { background: var(--danger-bg); border-color: var(--danger-line);"
    ));
}

#[tokio::test]
async fn the_source_kinds_differ_by_border_and_the_page_says_what_each_means() {
    let app = TestApp::new().await;
    let html = app.get("/minerals/muscovite").await.text();
    assert!(html.contains(r#"<dl class="src-legend""#));
    for (class, meaning) in [
        ("src-handbook", "read in the cited reference (solid border)"),
        (
            "src-practice",
            "a rule of thumb of field work (dashed border)",
        ),
        (
            "src-memory",
            "recalled without a copy at hand; the first to review (dotted border)",
        ),
    ] {
        assert!(html.contains(&format!(r#"class="src {class}""#)), "{class}");
        assert!(html.contains(meaning), "{meaning}");
    }
    let css = app.get("/static/reference.css").await.text();
    assert!(css.contains(".src-handbook { border-style: solid; }"));
    assert!(css.contains(".src-practice { border-style: dashed; }"));
    assert!(css.contains(".src-memory { border-style: dotted;"));
    // No kind has a hue of its own: none sets a colour or a background.
    for class in ["src-handbook", "src-practice", "src-memory"] {
        let rule_at = css.find(&format!(".{class} {{")).expect(class);
        let rule = &css[rule_at..rule_at + css[rule_at..].find('}').expect("rule ends")];
        assert!(
            !rule.contains("color") && !rule.contains("background"),
            "{rule}"
        );
    }
}
