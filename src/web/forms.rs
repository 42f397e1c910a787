//! HTML form fields to the contract's observations, and back.
//!
//! The forms use the contract's keys and values (`cleavage=one_perfect`,
//! `colour` as repeated checkboxes, `hardness_min`/`hardness_max`,
//! `scratch_fingernail`, `scratches_glass`, `dry_mass_g`/`submerged_mass_g`).
//! A form is turned into the identify request object and validated by the
//! same strict parser as the JSON API, so both refuse exactly the same
//! things, with the same words; the field path is mapped back to the form
//! field that holds the mistake.

use std::collections::BTreeMap;

use serde_json::{Map, Value, json};

use crate::engine::input::{describe_observation_field, object_from_json};
use crate::engine::{Observations, Property};

/// The submitted pairs of an `application/x-www-form-urlencoded` body.
#[derive(Clone, Debug, Default)]
pub struct FormData {
    pairs: Vec<(String, String)>,
}

impl FormData {
    /// Parses a form body; malformed escapes are decoded leniently.
    pub fn parse(body: &[u8]) -> FormData {
        FormData {
            pairs: form_urlencoded::parse(body)
                .map(|(k, v)| (k.into_owned(), v.into_owned()))
                .collect(),
        }
    }

    /// The first non-blank value of a field, trimmed.
    pub fn get(&self, key: &str) -> Option<&str> {
        self.pairs
            .iter()
            .filter(|(k, _)| k == key)
            .map(|(_, v)| v.trim())
            .find(|v| !v.is_empty())
    }

    /// Every non-blank value of a field (checkboxes).
    pub fn all(&self, key: &str) -> Vec<&str> {
        self.pairs
            .iter()
            .filter(|(k, _)| k == key)
            .map(|(_, v)| v.trim())
            .filter(|v| !v.is_empty())
            .collect()
    }

    /// What was typed into each field, for showing the form again.
    pub fn raw(&self) -> BTreeMap<String, Vec<String>> {
        let mut m: BTreeMap<String, Vec<String>> = BTreeMap::new();
        for (k, v) in &self.pairs {
            m.entry(k.clone()).or_default().push(v.clone());
        }
        m
    }
}

/// Messages per form field.
pub type FieldMessages = BTreeMap<String, String>;

/// The form fields that answer a property.
pub fn fields_of(p: Property) -> &'static [&'static str] {
    match p {
        Property::Hardness => &[
            "hardness_min",
            "hardness_max",
            "scratch_fingernail",
            "scratch_copper",
            "scratch_steel",
            "scratches_glass",
        ],
        Property::SpecificGravity => &[
            "specific_gravity",
            "dry_mass_g",
            "submerged_mass_g",
            "balance_resolution_g",
            "water_temp_c",
        ],
        Property::Cleavage => &["cleavage"],
        Property::Tenacity => &["tenacity"],
        Property::Colour => &["colour"],
        Property::Luster => &["luster"],
        Property::Habit => &["habit"],
        Property::Feel => &["feel"],
        Property::WetBehaviour => &["wet_behaviour"],
        Property::Streak => &["streak"],
        Property::Diaphaneity => &["diaphaneity"],
        Property::Magnetic => &["magnetic"],
        Property::AcidReaction => &["acid_reaction"],
        Property::Setting => &["setting"],
    }
}

/// The contract keys a property occupies in the observations object.
fn json_keys(p: Property) -> &'static [&'static str] {
    match p {
        Property::Hardness => &["hardness", "scratch", "scratches_glass"],
        Property::Cleavage => &["cleavage"],
        Property::Tenacity => &["tenacity"],
        Property::Colour => &["colour"],
        Property::Luster => &["luster"],
        Property::Habit => &["habit"],
        Property::Feel => &["feel"],
        Property::WetBehaviour => &["wet_behaviour"],
        Property::Streak => &["streak"],
        Property::Diaphaneity => &["diaphaneity"],
        Property::SpecificGravity => &["specific_gravity"],
        Property::Magnetic => &["magnetic"],
        Property::AcidReaction => &["acid_reaction"],
        Property::Setting => &["setting"],
    }
}

/// A number as people type it: `2.5`, `2,5` (decimal comma), ` 3 `.
fn number(form: &FormData, key: &str, errors: &mut FieldMessages) -> Option<Value> {
    let raw = form.get(key)?;
    match raw.replace(',', ".").parse::<f64>() {
        Ok(v) if v.is_finite() => Some(json!(v)),
        _ => {
            errors.insert(
                key.to_string(),
                format!("\"{raw}\" is not a number; type a number such as 2.5"),
            );
            None
        }
    }
}

/// `true`/`false` radio buttons.
fn boolean(form: &FormData, key: &str, errors: &mut FieldMessages) -> Option<Value> {
    match form.get(key)? {
        "true" => Some(json!(true)),
        "false" => Some(json!(false)),
        other => {
            errors.insert(
                key.to_string(),
                format!("\"{other}\" is not allowed; choose yes or no"),
            );
            None
        }
    }
}

/// The part of the observations object one property's fields give, or
/// `None` when the form leaves the property unanswered ("not tested").
fn property_json(
    p: Property,
    form: &FormData,
    errors: &mut FieldMessages,
) -> Option<Vec<(&'static str, Value)>> {
    let mut out = Vec::new();
    match p {
        Property::Hardness => {
            let mut h = Map::new();
            if let Some(v) = number(form, "hardness_min", errors) {
                h.insert("min".into(), v);
            }
            if let Some(v) = number(form, "hardness_max", errors) {
                h.insert("max".into(), v);
            }
            if !h.is_empty() {
                out.push(("hardness", Value::Object(h)));
            }
            let mut s = Map::new();
            for (field, key) in [
                ("scratch_fingernail", "fingernail"),
                ("scratch_copper", "copper"),
                ("scratch_steel", "steel"),
            ] {
                if let Some(v) = boolean(form, field, errors) {
                    s.insert(key.into(), v);
                }
            }
            if !s.is_empty() {
                out.push(("scratch", Value::Object(s)));
            }
            if let Some(v) = boolean(form, "scratches_glass", errors) {
                out.push(("scratches_glass", v));
            }
        }
        Property::SpecificGravity => {
            let value = number(form, "specific_gravity", errors);
            let mut w = Map::new();
            for key in [
                "dry_mass_g",
                "submerged_mass_g",
                "balance_resolution_g",
                "water_temp_c",
            ] {
                if let Some(v) = number(form, key, errors) {
                    w.insert(key.into(), v);
                }
            }
            let weighed = w.contains_key("dry_mass_g") || w.contains_key("submerged_mass_g");
            match (value, weighed) {
                (Some(_), true) => {
                    errors.insert(
                        "specific_gravity".into(),
                        "give either a specific gravity or the two weighings, not both".into(),
                    );
                }
                (Some(v), false) => out.push(("specific_gravity", v)),
                (None, true) => out.push(("specific_gravity", Value::Object(w))),
                (None, false) => {}
            }
        }
        Property::Colour => {
            let colours = form.all("colour");
            if !colours.is_empty() {
                out.push(("colour", json!(colours)));
            }
        }
        Property::Magnetic => {
            if let Some(v) = boolean(form, "magnetic", errors) {
                out.push(("magnetic", v));
            }
        }
        Property::AcidReaction => {
            if let Some(v) = boolean(form, "acid_reaction", errors) {
                out.push(("acid_reaction", v));
            }
        }
        _ => {
            let key = json_keys(p)[0];
            if let Some(v) = form.get(key) {
                out.push((key, json!(v)));
            }
        }
    }
    (!out.is_empty()).then_some(out)
}

/// Maps a contract field path to the form field holding it.
fn form_field(path: &str) -> String {
    let base = path.split('[').next().unwrap_or(path);
    match base {
        "hardness" | "hardness.min" => "hardness_min".into(),
        "hardness.max" => "hardness_max".into(),
        "scratch.fingernail" | "scratch" => "scratch_fingernail".into(),
        "scratch.copper" => "scratch_copper".into(),
        "scratch.steel" => "scratch_steel".into(),
        "specific_gravity.submerged_mass_g" => "submerged_mass_g".into(),
        "specific_gravity.dry_mass_g" => "dry_mass_g".into(),
        "specific_gravity.balance_resolution_g" => "balance_resolution_g".into(),
        "specific_gravity.water_temp_c" => "water_temp_c".into(),
        other => other.to_string(),
    }
}

/// The outcome of applying a form to a draft's observations.
#[derive(Debug)]
pub struct Applied {
    /// The observations after the form.
    pub observations: Observations,
    /// Properties the form left unanswered ("not tested").
    pub not_tested: Vec<Property>,
}

/// Applies the answers to `props` in `form` on top of `current`: each of
/// those properties is replaced by what the form says, or removed when the
/// form leaves it blank. Refusals come back per form field.
pub fn apply(
    current: &Observations,
    props: &[Property],
    form: &FormData,
) -> Result<Applied, FieldMessages> {
    let mut obj = match serde_json::to_value(current) {
        Ok(Value::Object(m)) => m,
        _ => Map::new(),
    };
    let mut errors = FieldMessages::new();
    let mut not_tested = Vec::new();
    for &p in props {
        for k in json_keys(p) {
            obj.remove(*k);
        }
        match property_json(p, form, &mut errors) {
            Some(parts) => {
                for (k, v) in parts {
                    obj.insert(k.to_string(), v);
                }
            }
            None => not_tested.push(p),
        }
    }
    if !errors.is_empty() {
        return Err(errors);
    }
    let bytes = serde_json::to_vec(&Value::Object(obj)).map_err(|e| {
        FieldMessages::from([(String::new(), format!("the answers could not be read: {e}"))])
    })?;
    let parsed: Result<Observations, _> = object_from_json(&bytes, describe_observation_field);
    let observations = parsed
        .and_then(|o| {
            o.validate()
                .map_err(crate::engine::input::InputError::Invalid)
                .map(|()| o)
        })
        .map_err(|e| {
            let fe = e.field_error();
            FieldMessages::from([(form_field(&fe.field), fe.message.clone())])
        })?;
    Ok(Applied {
        observations,
        not_tested,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::vocab::{Cleavage, Colour};

    fn form(s: &str) -> FormData {
        FormData::parse(s.as_bytes())
    }

    #[test]
    fn a_choice_replaces_the_earlier_answer() {
        let now = Observations {
            cleavage: Some(Cleavage::NoneVisible),
            ..Default::default()
        };
        let a = apply(&now, &[Property::Cleavage], &form("cleavage=one_perfect")).expect("valid");
        assert_eq!(a.observations.cleavage, Some(Cleavage::OnePerfect));
        assert!(a.not_tested.is_empty());
    }

    #[test]
    fn a_blank_answer_is_not_tested_and_clears_the_earlier_one() {
        let now = Observations {
            cleavage: Some(Cleavage::NoneVisible),
            ..Default::default()
        };
        let a = apply(&now, &[Property::Cleavage], &form("cleavage=&_csrf=x")).expect("valid");
        assert_eq!(a.observations.cleavage, None);
        assert_eq!(a.not_tested, vec![Property::Cleavage]);
    }

    #[test]
    fn colours_are_repeated_checkboxes() {
        let a = apply(
            &Observations::default(),
            &[Property::Colour],
            &form("colour=green&colour=black"),
        )
        .expect("valid");
        assert_eq!(
            a.observations.colour,
            Some(vec![Colour::Green, Colour::Black])
        );
    }

    #[test]
    fn hardness_takes_numbers_scratch_tests_and_glass_with_a_decimal_comma() {
        let a = apply(
            &Observations::default(),
            &[Property::Hardness],
            &form("hardness_min=2,5&hardness_max=&scratch_copper=true&scratches_glass=false"),
        )
        .expect("valid");
        let h = a.observations.hardness.expect("hardness");
        assert_eq!(h.min, Some(2.5));
        assert_eq!(h.max, None);
        assert_eq!(a.observations.scratch.and_then(|s| s.copper), Some(true));
        assert_eq!(a.observations.scratches_glass, Some(false));
    }

    #[test]
    fn refusals_name_the_form_field() {
        let cases = [
            ("hardness_min=soft", Property::Hardness, "hardness_min"),
            (
                "hardness_min=4&hardness_max=3",
                Property::Hardness,
                "hardness_min",
            ),
            ("hardness_max=12", Property::Hardness, "hardness_max"),
            ("scratch_copper=maybe", Property::Hardness, "scratch_copper"),
            (
                "dry_mass_g=10&submerged_mass_g=12",
                Property::SpecificGravity,
                "submerged_mass_g",
            ),
            (
                "specific_gravity=2.8&dry_mass_g=10&submerged_mass_g=6",
                Property::SpecificGravity,
                "specific_gravity",
            ),
            (
                "specific_gravity=12",
                Property::SpecificGravity,
                "specific_gravity",
            ),
            ("cleavage=perfect", Property::Cleavage, "cleavage"),
            ("colour=green&colour=mauve", Property::Colour, "colour"),
            ("magnetic=perhaps", Property::Magnetic, "magnetic"),
        ];
        for (body, p, field) in cases {
            let e = apply(&Observations::default(), &[p], &form(body)).expect_err(body);
            assert!(e.contains_key(field), "{body}: {e:?}");
        }
    }

    #[test]
    fn weighings_become_a_specific_gravity_object() {
        let a = apply(
            &Observations::default(),
            &[Property::SpecificGravity],
            &form("specific_gravity=&dry_mass_g=12.0&submerged_mass_g=7.7&water_temp_c=18"),
        )
        .expect("valid");
        assert!(matches!(
            a.observations.specific_gravity,
            Some(crate::engine::observe::SgObs::Weighings(_))
        ));
    }
}
