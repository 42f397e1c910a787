//! Engine benchmarks (criterion). Targets on the 2-core reference machine:
//! identify with every property observed < 20 µs; next-question ranking
//! with nothing observed < 200 µs.
//!
//! `cargo bench --bench engine`

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
    c.bench_function("identify: every property observed", |b| {
        b.iter(|| engine.identify(black_box(&full)))
    });
    c.bench_function("identify: nothing observed (ranks all 14 questions)", |b| {
        b.iter(|| engine.identify(black_box(&empty)))
    });
    let mut no_intervals = full.clone();
    no_intervals.hardness = None;
    no_intervals.scratch = None;
    no_intervals.scratches_glass = None;
    no_intervals.specific_gravity = None;
    c.bench_function(
        "identify: every categorical property, no hardness or SG",
        |b| b.iter(|| engine.identify(black_box(&no_intervals))),
    );
    c.bench_function("parse and validate a full JSON request", |b| {
        let body = serde_json::to_vec(&full).expect("json");
        b.iter(|| observations_from_json(black_box(&body)))
    });
}

criterion_group!(engine_benches, benches);
criterion_main!(engine_benches);
