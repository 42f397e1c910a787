//! The specimen suite: hand specimens described from handbook data sheets
//! (tests/data/specimens.json, written without reference to our own base),
//! scored by the engine. This is how we measure ourselves.
//!
//! Run `cargo test --test specimens -- --nocapture` for the per-case table.
//! Source keys of each case are defined in the file's `sources`: the
//! Handbook of Mineralogy, common practice, or from memory.

use basal::engine::Engine;
use basal::engine::input::observations_from_json;
use serde::Deserialize;

#[derive(Deserialize)]
struct Suite {
    sources: std::collections::BTreeMap<String, String>,
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Case {
    name: String,
    category: String,
    observations: serde_json::Value,
    expect: Option<String>,
    #[serde(default)]
    also_acceptable: Vec<String>,
    /// Source keys joined by `+` ("hom+practice"), each a key of `sources`.
    source: String,
}

/// The "outside the base" answer, as the suite writes an absent `expect`.
const OUTSIDE: &str = "(outside)";

fn suite() -> Suite {
    serde_json::from_str(include_str!("data/specimens.json")).expect("suite parses")
}

struct Scored {
    rank: usize,
    lenient_first: bool,
}

fn score(engine: &Engine, case: &Case) -> (Scored, String) {
    let bytes = serde_json::to_vec(&case.observations).expect("serialises");
    let obs = observations_from_json(&bytes)
        .unwrap_or_else(|e| panic!("{}: suite case is not a valid request: {e:?}", case.name));
    let id = engine.identify(&obs);
    // Rank among the candidates plus "outside the base".
    let mut ranked: Vec<(String, f64)> = id
        .candidates
        .iter()
        .map(|c| (c.id.to_string(), c.probability))
        .collect();
    ranked.push(("(outside)".to_string(), id.outside_base));
    ranked.sort_by(|a, b| b.1.total_cmp(&a.1));
    let want = case.expect.as_deref().unwrap_or(OUTSIDE);
    // Every entry and the outside entry are ranked, so an expected id that
    // is not found names no entry: a broken case, not a miss.
    let rank = ranked
        .iter()
        .position(|(i, _)| i == want)
        .map(|i| i + 1)
        .unwrap_or_else(|| panic!("{}: expected {want} is not ranked", case.name));
    let lenient_first = rank == 1 || case.also_acceptable.contains(&ranked[0].0);
    let top: Vec<String> = ranked
        .iter()
        .take(3)
        .map(|(i, p)| format!("{i} {p:.2}"))
        .collect();
    (
        Scored {
            rank,
            lenient_first,
        },
        top.join(", "),
    )
}

#[test]
fn the_engine_names_handbook_specimens() {
    let suite = suite();
    let engine = Engine::builtin();
    let mut first = 0;
    let mut lenient = 0;
    let mut top3 = 0;
    let mut by_cat: std::collections::BTreeMap<&str, (usize, usize, usize)> = Default::default();
    for case in &suite.cases {
        let (s, top) = score(engine, case);
        let ok = if s.rank == 1 {
            "  "
        } else if s.rank <= 3 {
            "~ "
        } else {
            "X "
        };
        println!(
            "{ok}{:<12} {:<58} want {:<12} rank {:>2}  [{top}]",
            case.category,
            case.name.chars().take(58).collect::<String>(),
            case.expect.as_deref().unwrap_or("(outside)"),
            s.rank
        );
        let e = by_cat.entry(case.category.as_str()).or_default();
        e.0 += 1;
        if s.rank == 1 {
            first += 1;
            e.1 += 1;
        }
        if s.rank <= 3 {
            top3 += 1;
            e.2 += 1;
        }
        if s.lenient_first {
            lenient += 1;
        }
    }
    let n = suite.cases.len() as f64;
    for (cat, (count, f, t)) in &by_cat {
        println!("{cat:<14} {count:>3} cases  first {f:>3}  top-3 {t:>3}");
    }
    let (f, l, t) = (first as f64 / n, lenient as f64 / n, top3 as f64 / n);
    println!(
        "first {f:.3}  first-or-acceptable {l:.3}  top-3 {t:.3}  ({} cases)",
        suite.cases.len()
    );
    // The acceptance targets of the identification core.
    assert!(
        f >= 0.80,
        "right entry first in {f:.3} of cases, want at least 0.80"
    );
    assert!(
        t >= 0.95,
        "right entry in the top three in {t:.3} of cases, want at least 0.95"
    );
}

#[test]
fn every_case_names_entries_of_the_base_and_sources_of_the_suite() {
    let suite = suite();
    let base = Engine::builtin().base();
    let mut problems = Vec::new();
    for case in &suite.cases {
        let named = case.expect.iter().chain(&case.also_acceptable);
        for id in named {
            if base.entry(id).is_none() {
                problems.push(format!("{}: {id} is not an entry of the base", case.name));
            }
        }
        for key in case.source.split('+') {
            if !suite.sources.contains_key(key) {
                problems.push(format!("{}: source {key:?} is not defined", case.name));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}
