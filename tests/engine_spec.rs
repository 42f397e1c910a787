//! The engine, specified: what a geologist may rely on.
//!
//! Check values name their source: "HoM" is Anthony, Bideaux, Bladh &
//! Nichols (eds.), Handbook of Mineralogy (Mineral Data Publishing /
//! Mineralogical Society of America), per-mineral data sheets.

use basal::base::vocab::{
    Cleavage, Colour, Diaphaneity, Feel, Habit, Luster, Setting, Streak, Tenacity, Vocab,
    WetBehaviour,
};
use basal::engine::input::observations_from_json;
use basal::engine::result::CautionCode;
use basal::engine::{Engine, Identification, Observations, Property};
use proptest::prelude::*;
use serde_json::{Value, json};

fn identify(v: Value) -> Identification {
    let bytes = serde_json::to_vec(&v).expect("json");
    let obs = observations_from_json(&bytes).unwrap_or_else(|e| panic!("{v}: {e:?}"));
    Engine::builtin().identify(&obs)
}

fn rank_of(id: &Identification, entry: &str) -> usize {
    id.candidates
        .iter()
        .position(|c| &*c.id == entry)
        .map_or(usize::MAX, |i| i + 1)
}

/// Classic specimens, each described from its HoM data sheet (hardness,
/// density, colour, luster, tenacity, cleavage, streak, occurrence) plus
/// field readings of common practice.
fn classics() -> Vec<(&'static str, Value)> {
    vec![
        // HoM muscovite: laminae flexible and elastic; H 2.5–3 on {001}; D 2.77–2.88;
        // colourless to grey; vitreous to pearly; streak white; in granite pegmatites.
        (
            "muscovite",
            json!({"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["colourless", "silvery"],
            "luster": "pearly", "habit": "books", "streak": "white", "diaphaneity": "transparent",
            "scratch": {"fingernail": false, "copper": true}, "specific_gravity": 2.83, "setting": "pegmatite"}),
        ),
        // HoM annite/biotite: black to dark brown, elastic laminae, H 2.5–3, D 2.8–3.3 (series).
        (
            "biotite",
            json!({"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["black", "brown"],
            "luster": "vitreous", "habit": "flakes", "diaphaneity": "translucent", "specific_gravity": 3.05,
            "setting": "granite"}),
        ),
        // HoM clinochlore: green, laminae flexible but not elastic, H 2–2.5, D 2.6–3.0, greenish streak.
        (
            "chlorite",
            json!({"cleavage": "one_perfect", "tenacity": "flexible", "colour": ["green", "dark_green"],
            "luster": "pearly", "habit": "foliated", "streak": "greenish", "setting": "greenschist"}),
        ),
        // HoM talc: H 1, greasy/soapy feel, pearly, white to pale green, D 2.58–2.83.
        (
            "talc",
            json!({"hardness": {"max": 1.5}, "feel": "soapy", "luster": "pearly", "colour": ["white", "pale_green"],
            "tenacity": "sectile", "habit": "foliated", "setting": "ultramafic"}),
        ),
        // HoM graphite: H 1–2, D 2.09–2.23, black streak, metallic, greasy feel.
        (
            "graphite",
            json!({"cleavage": "one_perfect", "colour": ["black", "grey"], "luster": "metallic",
            "streak": "black", "feel": "greasy", "specific_gravity": 2.2, "setting": "schist_gneiss"}),
        ),
        // HoM molybdenite: H 1–1.5, D 4.62–5.06, lead-grey, metallic, flexible laminae.
        (
            "molybdenite",
            json!({"cleavage": "one_perfect", "colour": ["grey", "silvery"], "luster": "metallic",
            "feel": "greasy", "tenacity": "flexible", "specific_gravity": 4.8, "setting": "hydrothermal_vein"}),
        ),
        // HoM gypsum: H 2, D 2.31–2.33, flexible inelastic laminae, colourless to white, evaporites.
        (
            "gypsum",
            json!({"cleavage": "one_perfect", "tenacity": "flexible", "colour": ["colourless", "white"],
            "luster": "vitreous", "scratch": {"fingernail": true}, "specific_gravity": 2.32, "acid_reaction": false,
            "setting": "evaporite"}),
        ),
        // HoM chrysotile (as serpentine asbestos): fibrous, silky, green-white, in serpentinite.
        (
            "chrysotile",
            json!({"habit": "fibrous", "luster": "silky", "tenacity": "flexible",
            "colour": ["pale_green", "white"], "setting": "ultramafic"}),
        ),
        // HoM hematite (specular): black to steel-grey, metallic, streak red-brown, D 5.26, H 5–6.
        (
            "hematite",
            json!({"colour": ["black", "silvery"], "luster": "metallic", "streak": "red_brown",
            "habit": "flakes", "specific_gravity": 5.2, "diaphaneity": "opaque"}),
        ),
        // HoM chloritoid: dark green, brittle, H 6.5, D 3.46–3.80, in pelitic schist.
        (
            "chloritoid",
            json!({"cleavage": "one_perfect", "tenacity": "brittle", "colour": ["dark_green"],
            "scratches_glass": true, "specific_gravity": 3.55, "setting": "schist_gneiss"}),
        ),
    ]
}

#[test]
fn classic_handbook_specimens_rank_first() {
    for (want, obs) in classics() {
        let id = identify(obs.clone());
        assert_eq!(
            &*id.candidates[0].id,
            want,
            "{obs}: got {:?}",
            &id.candidates[..3]
        );
        assert!(
            id.candidates[0].conflicts.is_empty(),
            "{want}: {:?}",
            id.candidates[0].conflicts
        );
    }
}

/// Every other value of a categorical observation, as JSON.
fn alternatives(field: &str) -> Vec<Value> {
    fn all<T: Vocab>() -> Vec<Value> {
        T::ALL.iter().map(|v| json!(v.as_str())).collect()
    }
    match field {
        "cleavage" => all::<Cleavage>(),
        "tenacity" => all::<Tenacity>(),
        "luster" => all::<Luster>(),
        "habit" => all::<Habit>(),
        "feel" => all::<Feel>(),
        "wet_behaviour" => all::<WetBehaviour>(),
        "streak" => all::<Streak>(),
        "diaphaneity" => all::<Diaphaneity>(),
        "setting" => all::<Setting>(),
        "colour" => Colour::ALL.iter().map(|c| json!([c.as_str()])).collect(),
        "magnetic" | "acid_reaction" | "scratches_glass" => vec![json!(true), json!(false)],
        _ => vec![],
    }
}

#[test]
fn a_single_wrong_observation_does_not_push_the_right_answer_out_of_the_top_three() {
    let mut tried = 0;
    let mut failures = Vec::new();
    for (want, obs) in classics() {
        let Value::Object(map) = &obs else {
            unreachable!()
        };
        for (field, value) in map {
            for alt in alternatives(field) {
                if &alt == value {
                    continue;
                }
                let mut changed = map.clone();
                changed.insert(field.clone(), alt.clone());
                tried += 1;
                let id = identify(Value::Object(changed));
                if rank_of(&id, want) > 3 {
                    failures.push(format!("{want}: {field} = {alt}"));
                }
            }
        }
    }
    assert!(tried > 300, "the perturbation set is too small ({tried})");
    assert!(
        failures.is_empty(),
        "{} of {tried} single changes lost the answer: {failures:#?}",
        failures.len()
    );
}

#[test]
fn a_specimen_that_contradicts_every_entry_goes_outside_the_base() {
    // Quartz-like: harder than glass, no cleavage, glassy, SG 2.65 (HoM quartz: H 7, D 2.65).
    let quartz = identify(
        json!({"cleavage": "none_visible", "tenacity": "brittle", "scratches_glass": true,
        "luster": "vitreous", "colour": ["colourless"], "habit": "crystals", "specific_gravity": 2.65,
        "streak": "white", "diaphaneity": "transparent"}),
    );
    assert!(quartz.outside_base > 0.5, "outside {}", quartz.outside_base);
    // Galena-like: heavy, cubic cleavage, metallic (HoM galena: D 7.58, H 2.5).
    let galena = identify(
        json!({"cleavage": "three_or_more", "luster": "metallic", "colour": ["grey"],
        "specific_gravity": 7.5, "streak": "grey", "habit": "crystals", "tenacity": "brittle"}),
    );
    assert!(galena.outside_base > 0.5, "outside {}", galena.outside_base);
    // A plain muscovite keeps it small.
    let mica = identify(classics()[0].1.clone());
    assert!(mica.outside_base < 0.05, "outside {}", mica.outside_base);
}

#[test]
fn probabilities_sum_to_one_and_groups_match() {
    for (_, obs) in classics() {
        let id = identify(obs);
        let total: f64 = id.candidates.iter().map(|c| c.probability).sum::<f64>() + id.outside_base;
        assert!((total - 1.0).abs() < 1e-9, "{total}");
        let groups: f64 = id.groups.iter().map(|g| g.probability).sum();
        assert!((groups + id.outside_base - 1.0).abs() < 1e-9);
        assert!(
            id.groups
                .windows(2)
                .all(|w| w[0].probability >= w[1].probability)
        );
    }
}

fn entropy_over_entries(id: &Identification) -> f64 {
    let z: f64 = id.candidates.iter().map(|c| c.probability).sum();
    -id.candidates
        .iter()
        .map(|c| c.probability / z)
        .filter(|p| *p > 0.0)
        .map(|p| p * p.log2())
        .sum::<f64>()
}

#[test]
fn asking_the_top_question_reduces_expected_entropy_by_the_stated_gain() {
    let engine = Engine::builtin();
    let starts = [
        json!({}),
        json!({"colour": ["green"]}),
        json!({"cleavage": "one_perfect", "setting": "schist_gneiss"}),
    ];
    for start in starts {
        let now = identify(start.clone());
        let h_now = entropy_over_entries(&now);
        for q in now
            .next_questions
            .iter()
            .filter(|q| !matches!(q.property, Property::Hardness | Property::SpecificGravity))
        {
            // Recompute by answering: Σₐ P(a) H(π | a), with P(a) the engine's predictive.
            let mut expected = 0.0;
            for (answer, pa) in engine.predictive(&now, q.property) {
                let value = match q.property {
                    Property::Colour => json!([answer]),
                    Property::Magnetic | Property::AcidReaction => json!(answer == "true"),
                    _ => json!(answer),
                };
                let mut obs = start.clone();
                obs[q.property.as_str()] = value;
                expected += pa * entropy_over_entries(&identify(obs));
            }
            let gain = h_now - expected;
            assert!(
                (gain - q.expected_gain_bits).abs() < 2e-3,
                "{start} {:?}: stated {} recomputed {gain}",
                q.property,
                q.expected_gain_bits
            );
        }
        let top = &now.next_questions[0];
        assert!(top.expected_gain_bits > 0.0);
        assert!(
            now.next_questions
                .windows(2)
                .all(|w| w[0].expected_gain_bits >= w[1].expected_gain_bits)
        );
    }
}

#[test]
fn answered_properties_are_not_asked_again_and_a_full_record_leaves_nothing_to_ask() {
    let id = identify(json!({"cleavage": "one_perfect", "scratch": {"copper": true}}));
    assert!(
        id.next_questions
            .iter()
            .all(|q| q.property != Property::Cleavage && q.property != Property::Hardness)
    );
    let full = identify(
        json!({"cleavage": "one_perfect", "tenacity": "elastic", "hardness": {"min": 2.5, "max": 3},
        "colour": ["colourless"], "luster": "pearly", "habit": "books", "feel": "smooth", "wet_behaviour": "unchanged",
        "streak": "white", "diaphaneity": "transparent", "specific_gravity": 2.8, "magnetic": false,
        "acid_reaction": false, "setting": "pegmatite"}),
    );
    assert!(full.next_questions.is_empty());
    assert!(full.separating_test.is_none());
}

#[test]
fn every_question_says_how_to_do_the_test() {
    for q in identify(json!({})).next_questions {
        assert!(q.how.len() > 60, "{:?}", q.property);
    }
}

#[test]
fn a_fibrous_serpentine_raises_the_asbestos_caution_and_acid_its_own() {
    let id = identify(
        json!({"habit": "fibrous", "luster": "silky", "setting": "ultramafic", "acid_reaction": false}),
    );
    let codes: Vec<CautionCode> = id.cautions.iter().map(|c| c.code).collect();
    assert!(codes.contains(&CautionCode::Asbestos), "{codes:?}");
    assert!(codes.contains(&CautionCode::Acid), "{codes:?}");
    let asbestos = &id.cautions[0].message;
    assert!(
        asbestos.contains("dry") && asbestos.contains("regulations"),
        "{asbestos}"
    );
    // A clean mica raises none.
    assert!(identify(classics()[0].1.clone()).cautions.is_empty());
}

#[test]
fn a_clay_raises_the_dust_caution() {
    let id = identify(
        json!({"habit": "earthy", "wet_behaviour": "plastic", "colour": ["white"], "feel": "smooth",
        "setting": "weathering_profile"}),
    );
    assert_eq!(
        &*id.candidates[0].id,
        "kaolinite",
        "{:?}",
        &id.candidates[..3]
    );
    assert!(id.cautions.iter().any(|c| c.code == CautionCode::Dust));
}

#[test]
fn conflicting_hardness_observations_are_reported_not_refused() {
    let id = identify(json!({"hardness": {"min": 2, "max": 3}, "scratches_glass": true}));
    assert_eq!(id.observation_conflicts.len(), 1);
}

#[test]
fn the_leaders_explain_themselves() {
    let id = identify(classics()[2].1.clone());
    let top = &id.candidates[0];
    assert!(top.agrees.contains(&Property::Tenacity));
    // Muscovite's flakes spring back and its streak is white: a bent green
    // flake with a greenish streak counts against it, and says so.
    let musc = id
        .candidates
        .iter()
        .find(|c| &*c.id == "muscovite")
        .expect("muscovite");
    assert!(musc.conflicts.contains(&Property::Streak), "{musc:?}");
    let tenacity = musc
        .evidence
        .iter()
        .find(|e| e.property == Property::Tenacity)
        .expect("scored");
    assert!(tenacity.bits < 0.0, "{musc:?}");
    // A separating test is offered only against a plausible second
    // candidate (within basal::engine::questions::PLAUSIBLE_RATIO).
    let second = &id.candidates[1];
    let plausible = basal::engine::questions::plausible_pair(top.probability, second.probability);
    match id.separating_test {
        Some(sep) => {
            assert!(plausible, "{second:?}");
            assert_eq!(sep.first, &*top.id);
            assert!(sep.expected_gain_bits > 0.0);
        }
        None => assert!(!plausible || id.no_hand_test.is_some(), "{second:?}"),
    }
}

fn arb_obs() -> impl Strategy<Value = Observations> {
    fn pick<T: Vocab + Clone + std::fmt::Debug>() -> impl Strategy<Value = Option<T>> {
        proptest::option::of(proptest::sample::select(T::ALL.to_vec()))
    }
    (
        (
            pick::<Cleavage>(),
            pick::<Tenacity>(),
            pick::<Luster>(),
            pick::<Habit>(),
            pick::<Feel>(),
        ),
        (
            pick::<WetBehaviour>(),
            pick::<Streak>(),
            pick::<Diaphaneity>(),
            pick::<Setting>(),
        ),
        proptest::option::of(proptest::sample::subsequence(Colour::ALL.to_vec(), 1..4)),
        proptest::option::of((1.0f64..10.0, 0.0f64..3.0)),
        proptest::option::of(1.0f64..8.0),
        (
            proptest::option::of(any::<bool>()),
            proptest::option::of(any::<bool>()),
            proptest::option::of(any::<bool>()),
        ),
        (
            proptest::option::of(any::<bool>()),
            proptest::option::of(any::<bool>()),
        ),
    )
        .prop_map(
            |((c, t, l, h, f), (w, s, d, set), col, hard, sg, (fing, cop, glass), (mag, acid))| {
                let mut o = Observations {
                    cleavage: c,
                    tenacity: t,
                    luster: l,
                    habit: h,
                    feel: f,
                    wet_behaviour: w,
                    streak: s,
                    diaphaneity: d,
                    setting: set,
                    colour: col,
                    scratches_glass: glass,
                    magnetic: mag,
                    acid_reaction: acid,
                    ..Default::default()
                };
                if let Some((lo, width)) = hard {
                    o.hardness = Some(basal::engine::observe::HardnessObs {
                        min: Some(lo),
                        max: Some((lo + width).min(10.0)),
                    });
                }
                if fing.is_some() || cop.is_some() {
                    o.scratch = Some(basal::engine::observe::ScratchObs {
                        fingernail: fing,
                        copper: cop,
                        steel: None,
                    });
                }
                o.specific_gravity = sg.map(basal::engine::observe::SgObs::Value);
                o
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn any_observation_set_gives_a_normalised_sorted_answer(o in arb_obs()) {
        prop_assert!(o.validate().is_ok());
        let id = Engine::builtin().identify(&o);
        let total: f64 = id.candidates.iter().map(|c| c.probability).sum::<f64>() + id.outside_base;
        prop_assert!((total - 1.0).abs() < 1e-9);
        prop_assert!(id.candidates.iter().all(|c| c.probability.is_finite() && c.probability >= 0.0));
        prop_assert!(id.candidates.windows(2).all(|w| w[0].probability >= w[1].probability));
        prop_assert_eq!(id.candidates.len(), Engine::builtin().base().entries.len());
        prop_assert!(id.next_questions.iter().all(|q| !q.property.is_observed(&o) && q.expected_gain_bits >= 0.0));
        prop_assert!(id.next_questions.windows(2).all(|w| w[0].expected_gain_bits >= w[1].expected_gain_bits));
    }
}
