//! Hazard cautions: asbestiform minerals, acid and dust.
//!
//! A caution is raised whenever a candidate with probability of at least
//! [`CAUTION_THRESHOLD`] carries a hazard in the base, or an observation
//! calls for one (a fibrous habit; the acid test). The wording defers to
//! local regulations and licensed practice; basal never claims a specimen
//! is safe.

use super::observe::Observations;
use super::result::{Candidate, Caution, CautionCode};
use crate::base::Base;
use crate::base::vocab::{Habit, Hazard};

/// Candidates at or above this probability raise their hazards (contract).
pub const CAUTION_THRESHOLD: f64 = 0.05;

/// Text of the asbestos caution.
pub const ASBESTOS: &str = "This specimen may be asbestiform (fibrous serpentine, chrysotile, is an asbestos mineral). \
Do not break, scrape, grind or saw it dry, and do not blow on it. Wet it, seal it in a labelled bag, and wash your hands. \
Collecting, transport, storage and disposal follow local regulations; confirming asbestos is laboratory work \
(polarised-light or electron microscopy) for an accredited laboratory, and removal is for licensed practitioners.";

/// Text of the acid caution.
pub const ACID: &str = "Dilute hydrochloric acid burns eyes and skin: wear eye protection and gloves, use one drop at a time \
from a dropper bottle, rinse the specimen and your hands with water afterwards, and carry and store the acid as local rules require.";

/// Text of the dust caution.
pub const DUST: &str = "Powdered clay, talc and fibrous clay minerals make fine dust that can be breathed in, and some talc carries \
asbestiform fibres. Keep powder damp, do not grind or blow it dry, work in the open or with ventilation, and follow local \
occupational exposure rules.";

/// The cautions for these candidates and observations, in code order.
pub fn cautions(base: &Base, candidates: &[Candidate], o: &Observations) -> Vec<Caution> {
    let hazards_of = |h: Hazard| {
        candidates
            .iter()
            .filter(|c| c.probability >= CAUTION_THRESHOLD)
            .filter_map(|c| base.entry(&c.id))
            .any(|e| e.hazards.contains(&h))
    };
    let mut out = Vec::new();
    if hazards_of(Hazard::Asbestos) || o.habit == Some(Habit::Fibrous) {
        out.push(Caution {
            code: CautionCode::Asbestos,
            message: ASBESTOS.to_string(),
        });
    }
    if o.acid_reaction.is_some() {
        out.push(Caution {
            code: CautionCode::Acid,
            message: ACID.to_string(),
        });
    }
    if hazards_of(Hazard::Dust) {
        out.push(Caution {
            code: CautionCode::Dust,
            message: DUST.to_string(),
        });
    }
    out
}
