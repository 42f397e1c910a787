//! The identify response: what the engine concluded and why.
//!
//! These types serialise to the contract's JSON shape and deserialise back,
//! so a stored identification snapshot reads as it was written.

use std::sync::Arc;

use serde::{Deserialize, Serialize};

use super::Property;
use crate::base::vocab::Group;

/// One base entry with its probability and reasons.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Candidate {
    /// Entry id (shared with the engine, not copied).
    #[schema(value_type = String)]
    pub id: Arc<str>,
    /// Entry name.
    #[schema(value_type = String)]
    pub name: Arc<str>,
    /// Posterior probability.
    pub probability: f64,
    /// False for the lookalikes.
    pub sheet_silicate: bool,
    /// The entry's group.
    pub group: Group,
    /// Observed fields that raised this candidate's score.
    pub agrees: Vec<Property>,
    /// Observed fields that lowered it.
    pub conflicts: Vec<Property>,
    /// Every observed field's weight of evidence for this candidate, in bits
    /// against a mineral outside the base that fits what was seen (positive
    /// raises, negative lowers).
    pub evidence: Vec<Evidence>,
}

/// The weight of one observation for one candidate.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Evidence {
    /// The observed property.
    pub property: Property,
    /// log2 of the likelihood ratio against the outside-the-base model.
    pub bits: f64,
}

/// Probability summed over a group.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct GroupProbability {
    /// Group id.
    pub id: Group,
    /// Summed probability.
    pub probability: f64,
}

/// An unanswered observation ranked by what it would tell.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Question {
    /// The contract field to observe.
    pub property: Property,
    /// Expected reduction of the posterior entropy, in bits.
    pub expected_gain_bits: f64,
    /// How to do the test in the field.
    pub how: String,
}

/// Caution codes of the contract.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize, utoipa::ToSchema,
)]
#[serde(rename_all = "snake_case")]
pub enum CautionCode {
    /// Asbestiform minerals.
    Asbestos,
    /// Acid.
    Acid,
    /// Dust.
    Dust,
}

/// A hazard warning.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Caution {
    /// Contract code.
    pub code: CautionCode,
    /// Plain words.
    pub message: String,
}

/// What one outcome of the separating test would mean: an answer typical
/// of one candidate and not of the other.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Outcome {
    /// The answer, as the contract value (`"brittle"`), or for hardness and
    /// specific gravity the favoured candidate's range (`"2–2.5"`).
    pub answer: String,
    /// Which of the two candidates it favours, by id.
    pub favours: String,
    /// How strongly: the likelihood ratio between the two under the model.
    pub ratio: f64,
}

/// The single test that best separates the two leading candidates, offered
/// only when both are plausible (see `engine::questions::PLAUSIBLE_RATIO`)
/// and the test passes `engine::lookalikes::contrast` for the pair.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct SeparatingTest {
    /// Leading candidate id.
    pub first: String,
    /// Second candidate id.
    pub second: String,
    /// The property to test.
    pub property: Property,
    /// Expected information gain between the two, in bits.
    pub expected_gain_bits: f64,
    /// How to do the test.
    pub how: String,
    /// The outcomes that tell them apart most.
    pub outcomes: Vec<Outcome>,
    /// What the leading candidate typically shows for this property, for
    /// people (`"flexible (stays bent)"`, `"2–2.5"`).
    #[serde(default)]
    pub first_typical: String,
    /// What the second candidate typically shows.
    #[serde(default)]
    pub second_typical: String,
}

/// Two plausible leaders that no hand-sample test separates (nothing
/// either typically shows tells them apart).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct NoHandTest {
    /// Leading candidate id.
    pub first: String,
    /// Second candidate id.
    pub second: String,
    /// What a laboratory method would settle, from the base's notes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub laboratory: Option<String>,
}

/// Quantities the engine derived from the raw observations.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Derived {
    /// The Mohs interval scored, from hardness, scratch tests and glass
    /// (`null` bounds are open).
    #[serde(skip_serializing_if = "Option::is_none")]
    #[schema(value_type = Option<Vec<Option<f64>>>)]
    pub hardness: Option<[Option<f64>; 2]>,
    /// Specific gravity scored and its standard uncertainty.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub specific_gravity: Option<SgDerived>,
}

/// A specific gravity and its uncertainty.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct SgDerived {
    /// Value.
    pub value: f64,
    /// Standard uncertainty.
    pub uncertainty: f64,
}

/// The identify response.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, utoipa::ToSchema)]
pub struct Identification {
    /// Every base entry, most probable first.
    pub candidates: Vec<Candidate>,
    /// Probabilities summed by group, most probable first.
    pub groups: Vec<GroupProbability>,
    /// Probability that the specimen is none of the base entries.
    pub outside_base: f64,
    /// Unanswered observations, most informative first.
    pub next_questions: Vec<Question>,
    /// Hazard cautions.
    pub cautions: Vec<Caution>,
    /// Version of the property base used.
    pub base_version: String,
    /// Disagreements between observations that were combined rather than refused.
    #[serde(default)]
    pub observation_conflicts: Vec<String>,
    /// The test that best separates the two leading candidates, if any remains.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub separating_test: Option<SeparatingTest>,
    /// Set when the two leaders are both plausible and no hand-sample test
    /// separates them at all.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub no_hand_test: Option<NoHandTest>,
    /// What a laboratory method would settle, when the leaders cannot be told
    /// apart in hand sample.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub laboratory: Option<String>,
    /// Derived measurements.
    #[serde(default)]
    pub derived: Derived,
}
