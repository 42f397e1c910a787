//! Engine benchmarks (criterion). Targets on the 2-core reference machine
//! (DEVELOPERS.md, "Benchmarks"): identify with every property observed
//! < 20 µs; next-question ranking with nothing observed < 200 µs.
//!
//! `cargo bench --bench engine`
//!
//! `.ci/bench-guard` runs the two targeted benchmarks in a quick mode and
//! fails when either takes more than three times its target: a guard
//! against gross regressions on a noisy shared machine, not a timed test.
//! The benchmark ids below are what it reads back
//! (`$CRITERION_HOME/<id>/new/estimates.json`); keep them in step with
//! [`TARGETS_NS`].

/// (benchmark id, target in nanoseconds), as DEVELOPERS.md states them.
pub const TARGETS_NS: [(&str, f64); 2] = [
    ("identify_every_property_observed", 20_000.0),
    ("identify_nothing_observed_ranks_all_questions", 200_000.0),
];

use basal::engine::Engine;
use basal::engine::input::observations_from_json;
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

fn benches(c: &mut Criterion) {
    let engine = Engine::builtin();
    let full = observations_from_json(
        br#"{"cleavage": "one_perfect", "tenacity": "elastic", "hardness": {"min": 2.5, "max": 3},
            "scratch": {"fingernail": false, "copper": true}, "scratches_glass": false,
            "colour": ["colourless", "silvery"], "luster": "pearly", "habit": "books", "feel": "smooth",
            "wet_behaviour": "unchanged", "streak": "white", "diaphaneity": "transparent",
            "specific_gravity": {"dry_mass_g": 14.2, "submerged_mass_g": 9.19}, "magnetic": false,
            "acid_reaction": false, "setting": "pegmatite"}"#,
    )
    .expect("valid");
    let empty = observations_from_json(b"{}").expect("valid");
    c.bench_function(TARGETS_NS[0].0, |b| {
        b.iter(|| engine.identify(black_box(&full)))
    });
    c.bench_function(TARGETS_NS[1].0, |b| {
        b.iter(|| engine.identify(black_box(&empty)))
    });
    let mut no_intervals = full.clone();
    no_intervals.hardness = None;
    no_intervals.scratch = None;
    no_intervals.scratches_glass = None;
    no_intervals.specific_gravity = None;
    c.bench_function(
        "identify_every_categorical_property_no_hardness_or_sg",
        |b| b.iter(|| engine.identify(black_box(&no_intervals))),
    );
    c.bench_function("parse_and_validate_a_full_json_request", |b| {
        let body = serde_json::to_vec(&full).expect("json");
        b.iter(|| observations_from_json(black_box(&body)))
    });
}

criterion_group!(engine_benches, benches);
criterion_main!(engine_benches);
