//! The demo project: an invented mapping crew's first week, so a newcomer
//! sees a filled log.
//!
//! Everything here is made up: the project, the crew (named only by role),
//! the station labels and the coordinates, which lie in open ocean on
//! purpose so that no real site is implied. The specimens are described as
//! a careful geologist would record them.

use serde_json::json;
use sqlx::SqlitePool;

use crate::engine::Engine;
use crate::engine::input::observations_from_json;
use crate::samples::SampleInput;
use crate::store::samples::{self as db, NewState, WriteError};

/// Project code of the demo.
pub const PROJECT: &str = "demo";

/// (code, date, collector, station, lat, lon, setting, lithology, field id, notes, observations)
type DemoSample = (
    &'static str,
    &'static str,
    &'static str,
    &'static str,
    f64,
    f64,
    &'static str,
    &'static str,
    Option<&'static str>,
    &'static str,
    serde_json::Value,
);

fn samples() -> Vec<DemoSample> {
    vec![
        (
            "DM-26-0001",
            "2026-06-08",
            "Demo mapper A",
            "Ridge cut 1",
            -41.5012,
            -20.3021,
            "pegmatite",
            "coarse quartz-feldspar pegmatite",
            Some("muscovite"),
            "Books up to 4 cm in the core zone.",
            json!({"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["colourless", "silvery"], "luster": "pearly", "habit": "books", "streak": "white", "specific_gravity": 2.83, "setting": "pegmatite"}),
        ),
        (
            "DM-26-0002",
            "2026-06-08",
            "Demo mapper A",
            "Ridge cut 1",
            -41.5013,
            -20.3019,
            "granite",
            "biotite granite, medium grained",
            Some("biotite"),
            "Fresh road cut; flakes pick out a weak foliation.",
            json!({"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["black", "brown"], "luster": "vitreous", "habit": "flakes", "setting": "granite"}),
        ),
        (
            "DM-26-0003",
            "2026-06-09",
            "Demo mapper B",
            "Creek bed 3",
            -41.5102,
            -20.2950,
            "greenschist",
            "chlorite-actinolite schist",
            Some("chlorite"),
            "Green flaky schist; flakes bend and stay bent.",
            json!({"cleavage": "one_perfect", "tenacity": "flexible", "colour": ["green", "dark_green"], "streak": "greenish", "setting": "greenschist"}),
        ),
        (
            "DM-26-0004",
            "2026-06-09",
            "Demo mapper B",
            "Creek bed 4",
            -41.5110,
            -20.2941,
            "ultramafic",
            "sheared serpentinite",
            Some("lizardite"),
            "Massive waxy serpentine; no fibres seen.",
            json!({"habit": "massive", "luster": "waxy", "colour": ["green"], "cleavage": "none_visible", "setting": "ultramafic"}),
        ),
        (
            "DM-26-0005",
            "2026-06-10",
            "Demo mapper A",
            "Shear zone 2",
            -41.5150,
            -20.2990,
            "ultramafic",
            "talc-carbonate rock",
            Some("talc"),
            "Soapy, fingernail scratches it.",
            json!({"feel": "soapy", "scratch": {"fingernail": true}, "luster": "pearly", "colour": ["white", "pale_green"], "setting": "ultramafic"}),
        ),
        (
            "DM-26-0006",
            "2026-06-10",
            "Demo mapper C",
            "Quarry face 1",
            -41.4980,
            -20.3105,
            "weathering_profile",
            "saprolite over granite",
            Some("kaolinite"),
            "White plastic clay; bagged damp.",
            json!({"habit": "earthy", "wet_behaviour": "plastic", "colour": ["white"], "luster": "dull", "setting": "weathering_profile"}),
        ),
        (
            "DM-26-0007",
            "2026-06-11",
            "Demo mapper C",
            "Vein 7",
            -41.4955,
            -20.3150,
            "hydrothermal_vein",
            "quartz vein in schist",
            Some("hematite"),
            "Specular flakes; red-brown streak.",
            json!({"luster": "metallic", "streak": "red_brown", "colour": ["black", "silvery"], "habit": "flakes", "specific_gravity": 5.2, "setting": "hydrothermal_vein"}),
        ),
        (
            "DM-26-0008",
            "2026-06-11",
            "Demo mapper C",
            "Vein 8",
            -41.4950,
            -20.3160,
            "hydrothermal_vein",
            "quartz vein with sulfides",
            Some("molybdenite"),
            "Soft heavy grey flakes; weighed a clean piece.",
            json!({"luster": "metallic", "colour": ["grey"], "feel": "greasy", "tenacity": "flexible", "specific_gravity": {"dry_mass_g": 6.2, "submerged_mass_g": 4.93}, "setting": "hydrothermal_vein"}),
        ),
        (
            "DM-26-0009",
            "2026-06-12",
            "Demo mapper A",
            "Marble lens 1",
            -41.5201,
            -20.2880,
            "marble",
            "dolomitic marble",
            Some("phlogopite"),
            "Golden-brown mica in marble; acid fizz is the matrix.",
            json!({"cleavage": "one_perfect", "tenacity": "elastic", "colour": ["bronze", "brown"], "setting": "marble", "acid_reaction": true}),
        ),
        (
            "DM-26-0010",
            "2026-06-12",
            "Demo mapper B",
            "Schist knoll 2",
            -41.5230,
            -20.2810,
            "schist_gneiss",
            "chloritoid-bearing pelitic schist",
            Some("chloritoid"),
            "Dark green plates that scratch glass.",
            json!({"cleavage": "one_perfect", "tenacity": "brittle", "colour": ["dark_green"], "scratches_glass": true, "setting": "schist_gneiss"}),
        ),
        (
            "DM-26-0011",
            "2026-06-13",
            "Demo mapper B",
            "Creek bed 5",
            -41.5120,
            -20.2935,
            "ultramafic",
            "serpentinite with cross-fibre veins",
            Some("chrysotile"),
            "Cross-fibre vein; wetted and double-bagged, not broken. Handle per local rules.",
            json!({"habit": "fibrous", "luster": "silky", "colour": ["pale_green", "white"], "setting": "ultramafic"}),
        ),
        (
            "DM-26-0012",
            "2026-06-13",
            "Demo mapper A",
            "Terrace 1",
            -41.5050,
            -20.3060,
            "sediment_soil",
            "greensand",
            None,
            "Green pellets; not yet identified, check with a hand lens at camp.",
            json!({"habit": "pellets", "colour": ["green"], "setting": "sediment_soil"}),
        ),
    ]
}

/// Loads the demo project; returns how many samples were added (0 when it
/// is already loaded).
pub async fn load(pool: &SqlitePool, engine: &Engine) -> Result<usize, WriteError> {
    db::create_project(
        pool,
        PROJECT,
        "Invented mapping crew, first field week (demo)",
        "DM-{yy}-{seq:4}",
    )
    .await?;
    let mut added = 0;
    for (code, date, who, station, lat, lon, setting, litho, field_id, notes, obs) in samples() {
        let bytes = serde_json::to_vec(&obs).map_err(|e| {
            WriteError::Store(crate::store::StoreError::Corrupt {
                what: "demo observations",
                id: code.into(),
                detail: e.to_string(),
            })
        })?;
        let observations = observations_from_json(&bytes).map_err(|e| {
            WriteError::Store(crate::store::StoreError::Corrupt {
                what: "demo observations",
                id: code.into(),
                detail: e.field_error().to_string(),
            })
        })?;
        let input = SampleInput {
            project: Some(PROJECT.into()),
            sample_code: Some(code.into()),
            collected_on: Some(date.into()),
            collector: Some(who.into()),
            station: Some(station.into()),
            latitude: Some(lat),
            longitude: Some(lon),
            coordinate_uncertainty_m: Some(10.0),
            setting: crate::base::vocab::Vocab::parse(setting),
            lithology: Some(litho.into()),
            observations: Some(observations),
            field_id: field_id.map(Into::into),
            notes: Some(notes.into()),
            ..Default::default()
        };
        let v = input
            .validate(|id| engine.base().entry(id).is_some(), None)
            .map_err(|e| {
                WriteError::Store(crate::store::StoreError::Corrupt {
                    what: "demo sample",
                    id: code.into(),
                    detail: e.to_string(),
                })
            })?;
        let ident = engine.identify(&v.observations);
        match db::create(
            pool,
            NewState {
                sample: &v,
                identification: &ident,
                author: Some("basal demo"),
            },
            None,
        )
        .await
        {
            Ok(_) => added += 1,
            Err(WriteError::CodeTaken { .. }) => {}
            Err(e) => return Err(e),
        }
    }
    Ok(added)
}
