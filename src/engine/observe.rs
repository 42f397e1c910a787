//! Observations of one specimen: the identify request object of the contract.
//!
//! Every field is optional; `None` means "not observed". Deserialisation
//! (serde, `deny_unknown_fields`) checks shape and vocabulary;
//! [`Observations::validate`] checks ranges and consistency and names the
//! offending field by its dotted path.

use serde::de::{self, Deserializer, MapAccess, Visitor};
use serde::{Deserialize, Serialize};

use crate::base::vocab::{
    Cleavage, Colour, Diaphaneity, Feel, Habit, Luster, Setting, Streak, Tenacity, WetBehaviour,
};

/// One field that is not allowed, with plain words saying what is.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, utoipa::ToSchema)]
pub struct FieldError {
    /// Dotted JSON path (`hardness.min`, `colour[1]`), or `""` for the whole body.
    pub field: String,
    /// What is wrong and what is allowed.
    pub message: String,
}

impl FieldError {
    /// A field error at `field`.
    pub fn new(field: impl Into<String>, message: impl Into<String>) -> Self {
        FieldError {
            field: field.into(),
            message: message.into(),
        }
    }
}

impl std::fmt::Display for FieldError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.field.is_empty() {
            f.write_str(&self.message)
        } else {
            write!(f, "{}: {}", self.field, self.message)
        }
    }
}

/// A Mohs hardness interval; either bound may be open, not both.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HardnessObs {
    /// Lower bound (Mohs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min: Option<f64>,
    /// Upper bound (Mohs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max: Option<f64>,
}

/// Scratch tests: `true` when the tool scratches the specimen.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScratchObs {
    /// A fingernail scratches the specimen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fingernail: Option<bool>,
    /// A copper coin or wire scratches the specimen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub copper: Option<bool>,
    /// A steel knife blade scratches the specimen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steel: Option<bool>,
}

impl ScratchObs {
    /// True when no test was recorded.
    pub fn is_empty(&self) -> bool {
        self.fingernail.is_none() && self.copper.is_none() && self.steel.is_none()
    }
}

/// Two hydrostatic weighings on a pocket balance.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Weighings {
    /// Mass in air, grams.
    pub dry_mass_g: f64,
    /// Apparent mass fully submerged in water, grams.
    pub submerged_mass_g: f64,
    /// Readability of the balance, grams (default 0.01).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub balance_resolution_g: Option<f64>,
    /// Water temperature, °C (default 20).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub water_temp_c: Option<f64>,
}

/// Specific gravity: a number, or weighings to compute it from.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum SgObs {
    /// A specific gravity read off directly.
    Value(f64),
    /// Hydrostatic weighings.
    Weighings(Weighings),
}

impl<'de> Deserialize<'de> for SgObs {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = SgObs;
            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("a number or an object of weighings")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<SgObs, E> {
                Ok(SgObs::Value(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<SgObs, E> {
                Ok(SgObs::Value(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<SgObs, E> {
                Ok(SgObs::Value(v as f64))
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<SgObs, A::Error> {
                Weighings::deserialize(de::value::MapAccessDeserializer::new(map))
                    .map(SgObs::Weighings)
            }
        }
        d.deserialize_any(V)
    }
}

/// Deserialises an optional struct from a JSON object only: serde's derive
/// would also take an array of the fields in order, which the contract does
/// not allow (`"hardness": [2, 3]` is a wrong type, not a hardness).
fn object_only<'de, D, T>(d: D) -> Result<Option<T>, D::Error>
where
    D: Deserializer<'de>,
    T: Deserialize<'de>,
{
    use std::marker::PhantomData;
    struct Opt<T>(PhantomData<T>);
    struct Obj<T>(PhantomData<T>);
    impl<'de, T: Deserialize<'de>> Visitor<'de> for Obj<T> {
        type Value = T;
        fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str("an object")
        }
        fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<T, A::Error> {
            T::deserialize(de::value::MapAccessDeserializer::new(map))
        }
    }
    impl<'de, T: Deserialize<'de>> Visitor<'de> for Opt<T> {
        type Value = Option<T>;
        fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str("an object or null")
        }
        fn visit_none<E: de::Error>(self) -> Result<Option<T>, E> {
            Ok(None)
        }
        fn visit_unit<E: de::Error>(self) -> Result<Option<T>, E> {
            Ok(None)
        }
        fn visit_some<D2: Deserializer<'de>>(self, d: D2) -> Result<Option<T>, D2::Error> {
            d.deserialize_map(Obj(PhantomData)).map(Some)
        }
    }
    d.deserialize_option(Opt(PhantomData))
}

/// Everything observed on one specimen. `None` is "not observed".
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Observations {
    /// Best cleavage seen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cleavage: Option<Cleavage>,
    /// Tenacity.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tenacity: Option<Tenacity>,
    /// Mohs hardness interval.
    #[serde(
        default,
        deserialize_with = "object_only",
        skip_serializing_if = "Option::is_none"
    )]
    pub hardness: Option<HardnessObs>,
    /// Scratch tests.
    #[serde(
        default,
        deserialize_with = "object_only",
        skip_serializing_if = "Option::is_none"
    )]
    pub scratch: Option<ScratchObs>,
    /// The specimen scratches window glass.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scratches_glass: Option<bool>,
    /// One or more colours.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub colour: Option<Vec<Colour>>,
    /// Luster.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub luster: Option<Luster>,
    /// Habit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub habit: Option<Habit>,
    /// Feel.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub feel: Option<Feel>,
    /// A pinch worked with water.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wet_behaviour: Option<WetBehaviour>,
    /// Streak.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub streak: Option<Streak>,
    /// Diaphaneity.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub diaphaneity: Option<Diaphaneity>,
    /// Specific gravity or weighings.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub specific_gravity: Option<SgObs>,
    /// Attracted to a hand magnet.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub magnetic: Option<bool>,
    /// Fizzes in cold dilute HCl.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub acid_reaction: Option<bool>,
    /// Where it was found.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub setting: Option<Setting>,
}

/// Limits the contract sets on numbers, in one place.
pub mod limits {
    /// Mohs scale.
    pub const MOHS: (f64, f64) = (1.0, 10.0);
    /// Specific gravity given as a number.
    pub const SG: (f64, f64) = (1.0, 8.0);
    /// Largest mass a weighing may report, grams.
    pub const MAX_MASS_G: f64 = 10_000.0;
    /// Largest balance resolution, grams.
    pub const MAX_RESOLUTION_G: f64 = 1.0;
    /// Water temperature range, °C.
    pub const WATER_TEMP_C: (f64, f64) = (0.0, 40.0);
}

fn in_range(field: &str, v: f64, (lo, hi): (f64, f64), what: &str) -> Result<(), FieldError> {
    if v.is_finite() && lo <= v && v <= hi {
        Ok(())
    } else {
        Err(FieldError::new(
            field,
            format!("{what} must be a number from {lo} to {hi}, got {v}"),
        ))
    }
}

impl Observations {
    /// Checks ranges and consistency; the first problem found is returned.
    pub fn validate(&self) -> Result<(), FieldError> {
        if let Some(h) = &self.hardness {
            match (h.min, h.max) {
                (None, None) => {
                    return Err(FieldError::new(
                        "hardness",
                        "give min, max or both (Mohs 1 to 10); leave hardness out if it was not tested",
                    ));
                }
                (min, max) => {
                    if let Some(v) = min {
                        in_range("hardness.min", v, limits::MOHS, "Mohs hardness")?;
                    }
                    if let Some(v) = max {
                        in_range("hardness.max", v, limits::MOHS, "Mohs hardness")?;
                    }
                    if let (Some(a), Some(b)) = (min, max)
                        && a > b
                    {
                        return Err(FieldError::new(
                            "hardness.min",
                            format!("min ({a}) must not exceed max ({b})"),
                        ));
                    }
                }
            }
        }
        if let Some(colours) = &self.colour {
            if colours.is_empty() {
                return Err(FieldError::new(
                    "colour",
                    "give at least one colour, or leave colour out if it was not noted",
                ));
            }
            for (i, c) in colours.iter().enumerate() {
                if colours[..i].contains(c) {
                    return Err(FieldError::new(
                        format!("colour[{i}]"),
                        format!("{c} is listed twice"),
                    ));
                }
            }
        }
        if let Some(sg) = &self.specific_gravity {
            match sg {
                SgObs::Value(v) => {
                    in_range("specific_gravity", *v, limits::SG, "specific gravity")?
                }
                SgObs::Weighings(w) => validate_weighings(w)?,
            }
        }
        Ok(())
    }

    /// True when nothing at all was observed.
    pub fn is_empty(&self) -> bool {
        *self == Observations::default()
    }

    /// True when hardness was addressed in any of its three forms.
    pub fn has_hardness(&self) -> bool {
        self.hardness.is_some()
            || self.scratch.is_some_and(|s| !s.is_empty())
            || self.scratches_glass.is_some()
    }
}

fn validate_weighings(w: &Weighings) -> Result<(), FieldError> {
    let mass = |field: &str, v: f64| -> Result<(), FieldError> {
        if v.is_finite() && v > 0.0 && v <= limits::MAX_MASS_G {
            Ok(())
        } else {
            Err(FieldError::new(
                field,
                format!(
                    "a mass in grams greater than 0 and at most {}, got {v}",
                    limits::MAX_MASS_G
                ),
            ))
        }
    };
    mass("specific_gravity.dry_mass_g", w.dry_mass_g)?;
    mass("specific_gravity.submerged_mass_g", w.submerged_mass_g)?;
    if w.submerged_mass_g >= w.dry_mass_g {
        return Err(FieldError::new(
            "specific_gravity.submerged_mass_g",
            format!(
                "the submerged mass ({} g) must be less than the dry mass ({} g): a mineral that sinks weighs less in water",
                w.submerged_mass_g, w.dry_mass_g
            ),
        ));
    }
    if let Some(r) = w.balance_resolution_g
        && !(r.is_finite() && r > 0.0 && r <= limits::MAX_RESOLUTION_G)
    {
        return Err(FieldError::new(
            "specific_gravity.balance_resolution_g",
            format!("the balance resolution must be greater than 0 and at most 1 g, got {r}"),
        ));
    }
    if let Some(t) = w.water_temp_c {
        in_range(
            "specific_gravity.water_temp_c",
            t,
            limits::WATER_TEMP_C,
            "water temperature (°C)",
        )?;
    }
    let sg = super::measure::sg_from_weighings(w);
    if !(limits::SG.0..=limits::SG.1).contains(&sg.value) {
        return Err(FieldError::new(
            "specific_gravity",
            format!(
                "these weighings give a specific gravity of {:.2}, outside 1 to 8: check that the submerged mass is the reading with the specimen fully under water",
                sg.value
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn obs(json: &str) -> Observations {
        serde_json::from_str(json).expect("valid test JSON")
    }

    #[test]
    fn an_empty_object_is_valid_and_observes_nothing() {
        let o = obs("{}");
        assert!(o.validate().is_ok());
        assert!(o.is_empty());
    }

    #[test]
    fn null_means_not_observed() {
        let o = obs(r#"{"cleavage": null, "hardness": null}"#);
        assert!(o.is_empty());
    }

    #[test]
    fn hardness_needs_a_bound_and_an_order() {
        let cases = [
            (r#"{"hardness": {}}"#, "hardness"),
            (r#"{"hardness": {"min": 0.5}}"#, "hardness.min"),
            (r#"{"hardness": {"max": 11}}"#, "hardness.max"),
            (r#"{"hardness": {"min": 4, "max": 3}}"#, "hardness.min"),
        ];
        for (json, field) in cases {
            let err = obs(json).validate().expect_err(json);
            assert_eq!(err.field, field, "{json}");
        }
        assert!(obs(r#"{"hardness": {"min": 2.5}}"#).validate().is_ok());
    }

    #[test]
    fn weighings_must_be_consistent() {
        let cases = [
            (
                r#"{"specific_gravity": {"dry_mass_g": 10, "submerged_mass_g": 10}}"#,
                "specific_gravity.submerged_mass_g",
            ),
            (
                r#"{"specific_gravity": {"dry_mass_g": 0, "submerged_mass_g": -1}}"#,
                "specific_gravity.dry_mass_g",
            ),
            (
                r#"{"specific_gravity": {"dry_mass_g": 20000, "submerged_mass_g": 1}}"#,
                "specific_gravity.dry_mass_g",
            ),
            (
                r#"{"specific_gravity": {"dry_mass_g": 10, "submerged_mass_g": 9, "balance_resolution_g": 2}}"#,
                "specific_gravity.balance_resolution_g",
            ),
            (
                r#"{"specific_gravity": {"dry_mass_g": 10, "submerged_mass_g": 6, "water_temp_c": 60}}"#,
                "specific_gravity.water_temp_c",
            ),
            // 10 / (10 - 9.9) = 100: not a mineral.
            (
                r#"{"specific_gravity": {"dry_mass_g": 10, "submerged_mass_g": 9.9}}"#,
                "specific_gravity",
            ),
            (r#"{"specific_gravity": 0.5}"#, "specific_gravity"),
        ];
        for (json, field) in cases {
            let err = obs(json).validate().expect_err(json);
            assert_eq!(err.field, field, "{json}");
        }
    }

    #[test]
    fn a_colour_listed_twice_is_named_by_its_index() {
        let err = obs(r#"{"colour": ["green", "black", "green"]}"#)
            .validate()
            .expect_err("duplicate");
        assert_eq!(err.field, "colour[2]");
    }

    #[test]
    fn observations_round_trip_through_json() {
        let json = r#"{"cleavage":"one_perfect","hardness":{"min":2.0,"max":3.0},"scratch":{"fingernail":false},"colour":["green"],"specific_gravity":{"dry_mass_g":12.0,"submerged_mass_g":7.7},"magnetic":false}"#;
        let o = obs(json);
        assert_eq!(serde_json::to_string(&o).expect("serialises"), json);
    }
}
