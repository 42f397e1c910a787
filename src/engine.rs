//! The identification engine: observations in, a scored and explained
//! identification out.
//!
//! - [`observe`]: the observation vocabulary and its validation.
//! - [`input`]: strict JSON parsing of observations with field paths.
//! - [`measure`]: scratch tests and weighings to intervals, and the
//!   closed-form interval likelihood.
//! - [`model`]: likelihood tables built from the base, the log-space
//!   posterior, the outside-the-base entry, agreements and conflicts.
//! - [`questions`]: next questions by expected information gain.
//! - [`cautions`]: hazards and their cautions.
//! - [`result`]: the response types (the contract's identify response).
//!
//! Pure: no I/O, no axum, no sqlx.

pub mod cautions;
pub mod input;
pub mod lookalikes;
pub mod measure;
pub mod model;
pub mod observe;
pub mod questions;
pub mod result;

pub use model::Engine;
pub use observe::{FieldError, Observations};
pub use result::Identification;

use serde::{Deserialize, Serialize};

/// A property the engine scores and can ask about. Names are the contract's
/// observation fields; `hardness` covers `hardness`, `scratch` and
/// `scratches_glass`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Property {
    /// Best cleavage.
    Cleavage,
    /// Tenacity.
    Tenacity,
    /// Mohs hardness (numbers, scratch tests or glass).
    Hardness,
    /// Colour.
    Colour,
    /// Luster.
    Luster,
    /// Habit.
    Habit,
    /// Feel.
    Feel,
    /// A pinch with water.
    WetBehaviour,
    /// Streak.
    Streak,
    /// Diaphaneity.
    Diaphaneity,
    /// Specific gravity.
    SpecificGravity,
    /// Hand magnet.
    Magnetic,
    /// Dilute HCl.
    AcidReaction,
    /// Geological setting.
    Setting,
}

impl Property {
    /// Every property, in the order forms list them.
    pub const ALL: [Property; 14] = [
        Property::Setting,
        Property::Habit,
        Property::Cleavage,
        Property::Tenacity,
        Property::Colour,
        Property::Luster,
        Property::Diaphaneity,
        Property::Streak,
        Property::Hardness,
        Property::Feel,
        Property::WetBehaviour,
        Property::SpecificGravity,
        Property::Magnetic,
        Property::AcidReaction,
    ];

    /// The contract's field name.
    pub fn as_str(self) -> &'static str {
        match self {
            Property::Cleavage => "cleavage",
            Property::Tenacity => "tenacity",
            Property::Hardness => "hardness",
            Property::Colour => "colour",
            Property::Luster => "luster",
            Property::Habit => "habit",
            Property::Feel => "feel",
            Property::WetBehaviour => "wet_behaviour",
            Property::Streak => "streak",
            Property::Diaphaneity => "diaphaneity",
            Property::SpecificGravity => "specific_gravity",
            Property::Magnetic => "magnetic",
            Property::AcidReaction => "acid_reaction",
            Property::Setting => "setting",
        }
    }

    /// Parses a contract field name.
    pub fn parse(s: &str) -> Option<Property> {
        Property::ALL.into_iter().find(|p| p.as_str() == s)
    }

    /// A short label for people.
    pub fn label(self) -> &'static str {
        match self {
            Property::Cleavage => "Cleavage",
            Property::Tenacity => "Tenacity",
            Property::Hardness => "Hardness",
            Property::Colour => "Colour",
            Property::Luster => "Lustre",
            Property::Habit => "Habit",
            Property::Feel => "Feel",
            Property::WetBehaviour => "With a drop of water",
            Property::Streak => "Streak",
            Property::Diaphaneity => "Diaphaneity",
            Property::SpecificGravity => "Specific gravity",
            Property::Magnetic => "Hand magnet",
            Property::AcidReaction => "Dilute acid",
            Property::Setting => "Setting",
        }
    }

    /// How to make this observation in the field, in plain words.
    pub fn how(self) -> &'static str {
        match self {
            Property::Cleavage => {
                "Look at a broken edge with the hand lens and try to lift a flake with a needle or the knife point. \
                 If it peels into thin sheets it has one perfect cleavage; otherwise count the directions of flat, \
                 shiny breaks. Massive, fibrous or very fine material shows none."
            }
            Property::Tenacity => {
                "Peel off a thin flake (or tease out a fibre) and bend it with a needle. Springs back: elastic. \
                 Stays bent: flexible. Snaps or crumbles: brittle. If there is no flake, shave a corner with the \
                 knife: a mineral that cuts into curls like wax is sectile."
            }
            Property::Hardness => {
                "On a fresh cleavage face, softest tool first: a fingernail (about 2.5), a copper coin (about 3.5), \
                 a steel knife blade (about 5.5). Rub the mark: a real scratch is a groove, not a smear of the tool. \
                 Or test whether a sharp edge of the specimen scratches window glass (about 5.5)."
            }
            Property::Colour => {
                "Look at a freshly broken surface in daylight, not at a weathered or stained one, and pick every \
                 colour that applies."
            }
            Property::Luster => {
                "Tilt a fresh cleavage face (or else a fresh break) under the light and judge the shine: glassy, \
                 pearly, silky, waxy, greasy, dull, nearly metallic or metallic."
            }
            Property::Habit => {
                "With the hand lens, see how the mineral sits in the rock: stacked books, scattered flakes, platy \
                 masses, fibres, compact masses, soft powder, rounded pellets, rosettes, blades, grains or \
                 well-formed crystals."
            }
            Property::Feel => {
                "Rub a clean surface between finger and thumb: slippery like soap, slippery and marking the fingers, \
                 just smooth, or gritty."
            }
            Property::WetBehaviour => {
                "Work a pinch of the powdered material with one drop of water in the palm. Does it mould like putty, \
                 swell, fall apart, or stay as it was? Keep the dust damp and wash your hands afterwards."
            }
            Property::Streak => {
                "Draw the specimen firmly across the rough back of an unglazed porcelain tile and judge the colour of \
                 the powder line, not of the specimen. Minerals harder than the tile (about 6.5) leave none."
            }
            Property::Diaphaneity => {
                "Hold a thin flake or a sharp edge against the light: objects seen through it (transparent), only \
                 light coming through (translucent), or nothing (opaque)."
            }
            Property::SpecificGravity => {
                "On a pocket balance, weigh a clean, solid piece of a few grams dry, then hanging on a thread fully \
                 under water with no bubbles. Enter both readings (SG = dry ÷ (dry − submerged)), or a value you \
                 already have."
            }
            Property::Magnetic => {
                "Bring a strong hand magnet close to the specimen, or hang the specimen on a thread next to it, and \
                 watch for a pull. A grain of magnetite inside can cause one."
            }
            Property::AcidReaction => {
                "Put one drop of cold dilute hydrochloric acid (about 10 %) on a fresh surface and watch with the lens \
                 for fizzing. A carbonate matrix fizzes too, so test the mineral itself. Wear eye protection and \
                 gloves; rinse afterwards."
            }
            Property::Setting => {
                "Note the rock the specimen came from: granite, pegmatite, schist or gneiss, greenschist, ultramafic \
                 rock, marble, skarn, mafic volcanic rock, hydrothermal vein, evaporite, sediment or soil, or a \
                 weathering profile."
            }
        }
    }

    /// Whether this property has been observed.
    pub fn is_observed(self, o: &Observations) -> bool {
        match self {
            Property::Cleavage => o.cleavage.is_some(),
            Property::Tenacity => o.tenacity.is_some(),
            Property::Hardness => o.has_hardness(),
            Property::Colour => o.colour.as_ref().is_some_and(|c| !c.is_empty()),
            Property::Luster => o.luster.is_some(),
            Property::Habit => o.habit.is_some(),
            Property::Feel => o.feel.is_some(),
            Property::WetBehaviour => o.wet_behaviour.is_some(),
            Property::Streak => o.streak.is_some(),
            Property::Diaphaneity => o.diaphaneity.is_some(),
            Property::SpecificGravity => o.specific_gravity.is_some(),
            Property::Magnetic => o.magnetic.is_some(),
            Property::AcidReaction => o.acid_reaction.is_some(),
            Property::Setting => o.setting.is_some(),
        }
    }
}

impl std::fmt::Display for Property {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}
