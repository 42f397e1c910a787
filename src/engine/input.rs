//! Strict JSON input: the bytes of a request body to validated
//! [`Observations`], or an error naming the offending field by its dotted
//! path and saying in plain words what is allowed.
//!
//! The contract sorts failures in two: a body that is not well-formed UTF-8
//! JSON ([`InputError::Malformed`], HTTP 400) and anything well-formed but
//! not allowed ([`InputError::Invalid`], HTTP 422). This module only
//! classifies; the status codes are the web layer's business.

use serde::Deserialize;
use serde::de::DeserializeOwned;
use serde_path_to_error::Segment;

use super::observe::{FieldError, Observations};
use crate::base::vocab::{
    Cleavage, Colour, Diaphaneity, Feel, Habit, Luster, Setting, Streak, Tenacity, Vocab,
    WetBehaviour,
};

/// Why a body was refused.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum InputError {
    /// Not well-formed UTF-8 JSON.
    Malformed(FieldError),
    /// Well-formed, but not allowed.
    Invalid(FieldError),
}

impl InputError {
    /// The field error inside.
    pub fn field_error(&self) -> &FieldError {
        match self {
            InputError::Malformed(e) | InputError::Invalid(e) => e,
        }
    }
}

/// Parses and validates an identify request body.
pub fn observations_from_json(bytes: &[u8]) -> Result<Observations, InputError> {
    let obs: Observations = object_from_json(bytes, describe_observation_field)?;
    obs.validate().map_err(InputError::Invalid)?;
    Ok(obs)
}

/// Parses a JSON object into `T` strictly, describing fields with `describe`
/// (a function from a dotted path with indices removed to plain words on
/// what that field allows).
pub fn object_from_json<T: DeserializeOwned>(
    bytes: &[u8],
    describe: fn(&str) -> String,
) -> Result<T, InputError> {
    // Well-formedness first, on its own: serde_json reports some wrong
    // types (a number where an enum goes) as syntax errors, so the typed
    // pass below cannot tell the two apart by itself.
    if let Err(e) = std::str::from_utf8(bytes) {
        return Err(InputError::Malformed(FieldError::new(
            "",
            format!("the body is not valid UTF-8 ({e}); send UTF-8 JSON"),
        )));
    }
    let mut check = serde_json::Deserializer::from_slice(bytes);
    if let Err(e) = serde::de::IgnoredAny::deserialize(&mut check).and_then(|_| check.end()) {
        return Err(InputError::Malformed(FieldError::new(
            "",
            format!("the body is not well-formed JSON ({e}); send one JSON object"),
        )));
    }
    let first = bytes.iter().find(|b| !b.is_ascii_whitespace()).copied();
    if first != Some(b'{') {
        return Err(InputError::Invalid(FieldError::new(
            "",
            format!("the body must be a JSON object: {}", describe("")),
        )));
    }
    let mut de = serde_json::Deserializer::from_slice(bytes);
    let value: T = match serde_path_to_error::deserialize(&mut de) {
        Ok(v) => v,
        Err(err) => return Err(classify(err, describe)),
    };
    Ok(value)
}

/// Dotted path from the deserializer's segments, `hardness.min`, `colour[1]`.
fn dotted(path: &serde_path_to_error::Path) -> String {
    let mut s = String::new();
    for seg in path.iter() {
        match seg {
            Segment::Seq { index } => s.push_str(&format!("[{index}]")),
            Segment::Map { key } | Segment::Enum { variant: key } => {
                if !s.is_empty() {
                    s.push('.');
                }
                s.push_str(key);
            }
            Segment::Unknown => {}
        }
    }
    s
}

/// `colour[1]` → `colour[]`, so descriptions can be looked up by shape.
fn shape_of(path: &str) -> String {
    let mut out = String::new();
    let mut in_index = false;
    for c in path.chars() {
        match c {
            '[' => {
                in_index = true;
                out.push_str("[]");
            }
            ']' => in_index = false,
            _ if in_index => {}
            _ => out.push(c),
        }
    }
    out
}

fn between_backticks(msg: &str) -> Option<&str> {
    let start = msg.find('`')? + 1;
    let len = msg[start..].find('`')?;
    Some(&msg[start..start + len])
}

fn join(parent: &str, child: &str) -> String {
    if parent.is_empty() {
        child.to_string()
    } else {
        format!("{parent}.{child}")
    }
}

fn classify(
    err: serde_path_to_error::Error<serde_json::Error>,
    describe: fn(&str) -> String,
) -> InputError {
    let path = dotted(err.path());
    let msg = err.into_inner().to_string();
    // serde_json appends " at line L column C"; the path says where instead.
    let msg = msg.split(" at line ").next().unwrap_or(&msg).to_string();
    if matches!(
        msg.as_str(),
        "lone leading surrogate in hex escape"
            | "unexpected end of hex escape"
            | "invalid unicode code point"
    ) {
        // A \uD800-\uDFFF escape without its partner: well-formed JSON
        // (RFC 8259, section 8.2), but no character of Unicode.
        let what = if path.is_empty() {
            "a field name".to_string()
        } else {
            "this text".to_string()
        };
        return InputError::Invalid(FieldError::new(
            path.clone(),
            format!(
                "{what} holds half of a UTF-16 surrogate pair (a \\u escape from D800 to DFFF without its partner), which is no character; \
                 write the character itself, or both halves of the pair. Expected {}",
                describe(&shape_of(&path))
            ),
        ));
    }
    if msg.starts_with("number out of range") {
        // Well-formed JSON, but not a finite f64.
        return InputError::Invalid(FieldError::new(
            path.clone(),
            format!(
                "the number is too large to be finite; expected {}",
                describe(&shape_of(&path))
            ),
        ));
    }
    if let Some(rest) = msg.strip_prefix("unknown field ") {
        let name = between_backticks(rest).unwrap_or("");
        // The path may or may not already end with the unknown key.
        let parent = path
            .strip_suffix(name)
            .map(|p| p.trim_end_matches('.'))
            .unwrap_or(&path)
            .to_string();
        let field = join(&parent, name);
        return InputError::Invalid(FieldError::new(
            field,
            format!(
                "\"{name}\" is not a known field here; allowed: {}",
                describe(&shape_of(&parent))
            ),
        ));
    }
    if let Some(rest) = msg.strip_prefix("duplicate field ") {
        let name = between_backticks(rest).unwrap_or("");
        let parent = path
            .strip_suffix(name)
            .map(|p| p.trim_end_matches('.'))
            .unwrap_or(&path)
            .to_string();
        return InputError::Invalid(FieldError::new(
            join(&parent, name),
            format!("\"{name}\" is given more than once; give each field once"),
        ));
    }
    let allowed = describe(&shape_of(&path));
    if let Some(rest) = msg.strip_prefix("unknown variant ") {
        let got = between_backticks(rest).unwrap_or("");
        return InputError::Invalid(FieldError::new(
            path,
            format!(
                "\"{got}\" is not allowed (values are lower case, as listed); expected {allowed}"
            ),
        ));
    }
    if let Some(rest) = msg.strip_prefix("invalid type: ") {
        let got = rest.split(", expected").next().unwrap_or(rest);
        return InputError::Invalid(FieldError::new(
            path,
            format!("got {got}; expected {allowed}"),
        ));
    }
    if msg.starts_with("missing field") {
        let name = between_backticks(&msg).unwrap_or("");
        return InputError::Invalid(FieldError::new(
            join(&path, name),
            format!(
                "\"{name}\" is required here; expected {}",
                describe(&shape_of(&path))
            ),
        ));
    }
    InputError::Invalid(FieldError::new(path, format!("{msg}; expected {allowed}")))
}

fn one_of<T: Vocab>() -> String {
    format!("one of {}", T::allowed())
}

/// Plain words on what an observation field allows, by path shape.
pub fn describe_observation_field(shape: &str) -> String {
    match shape {
        "" => "an object with any of the fields cleavage, tenacity, hardness, scratch, scratches_glass, colour, \
               luster, habit, feel, wet_behaviour, streak, diaphaneity, specific_gravity, magnetic, acid_reaction, setting"
            .to_string(),
        "cleavage" => one_of::<Cleavage>(),
        "tenacity" => one_of::<Tenacity>(),
        "colour" => format!("an array of one or more of {}", Colour::allowed()),
        "colour[]" => one_of::<Colour>(),
        "luster" => one_of::<Luster>(),
        "habit" => one_of::<Habit>(),
        "feel" => one_of::<Feel>(),
        "wet_behaviour" => one_of::<WetBehaviour>(),
        "streak" => one_of::<Streak>(),
        "diaphaneity" => one_of::<Diaphaneity>(),
        "setting" => one_of::<Setting>(),
        "hardness" => "an object {\"min\": number, \"max\": number} on the Mohs scale from 1 to 10; either bound may be left out, not both".to_string(),
        "hardness.min" | "hardness.max" => "a number on the Mohs scale from 1 to 10".to_string(),
        "scratch" => "an object with any of fingernail, copper, steel, each true (the tool scratches the specimen) or false".to_string(),
        "scratch.fingernail" | "scratch.copper" | "scratch.steel" => {
            "true (the tool scratches the specimen) or false (it does not)".to_string()
        }
        "scratches_glass" => "true (the specimen scratches window glass) or false".to_string(),
        "magnetic" => "true (attracted to a hand magnet) or false".to_string(),
        "acid_reaction" => "true (fizzes in cold dilute HCl) or false".to_string(),
        "specific_gravity" => "a number from 1.0 to 8.0, or weighings {\"dry_mass_g\": a, \"submerged_mass_g\": b} with a > b > 0 (grams, at most 10000), optional \"balance_resolution_g\" (0 < r ≤ 1) and \"water_temp_c\" (0 to 40)".to_string(),
        "specific_gravity.dry_mass_g" => "the mass in air in grams, greater than 0 and at most 10000".to_string(),
        "specific_gravity.submerged_mass_g" => "the mass fully under water in grams, greater than 0 and less than the dry mass".to_string(),
        "specific_gravity.balance_resolution_g" => "the balance readability in grams, greater than 0 and at most 1".to_string(),
        "specific_gravity.water_temp_c" => "the water temperature in °C, from 0 to 40".to_string(),
        _ => "a field of the identify request (see docs/api.md or GET /api/v1/openapi.json)".to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn invalid(json: &str) -> FieldError {
        match observations_from_json(json.as_bytes()) {
            Err(InputError::Invalid(e)) => e,
            other => panic!("{json}: expected Invalid, got {other:?}"),
        }
    }

    fn malformed(json: &[u8]) -> FieldError {
        match observations_from_json(json) {
            Err(InputError::Malformed(e)) => e,
            other => panic!("{json:?}: expected Malformed, got {other:?}"),
        }
    }

    #[test]
    fn refusals_name_the_field_by_its_dotted_path() {
        let cases = [
            (r#"{"cleavage": "perfect"}"#, "cleavage"),
            (r#"{"cleavage": "One_Perfect"}"#, "cleavage"),
            (r#"{"colour": ["green", "mauve"]}"#, "colour[1]"),
            (r#"{"colour": "green"}"#, "colour"),
            (r#"{"hardness": {"min": "soft"}}"#, "hardness.min"),
            (r#"{"hardness": {"min": 2, "mid": 3}}"#, "hardness.mid"),
            (r#"{"hardness": [2, 3]}"#, "hardness"),
            (r#"{"scratch": {"copper": "yes"}}"#, "scratch.copper"),
            (r#"{"scratch": {"brass": true}}"#, "scratch.brass"),
            (r#"{"sparkle": true}"#, "sparkle"),
            (r#"{"magnetic": 1}"#, "magnetic"),
            (r#"{"specific_gravity": "2.8"}"#, "specific_gravity"),
            (r#"{"specific_gravity": [2.8]}"#, "specific_gravity"),
            (
                r#"{"specific_gravity": {"dry_mass_g": 10}}"#,
                "specific_gravity.submerged_mass_g",
            ),
            (
                r#"{"specific_gravity": {"dry_mass_g": 10, "submerged_mass_g": 6, "bath": 1}}"#,
                "specific_gravity.bath",
            ),
            (r#"{"hardness": {"min": 1e999}}"#, "hardness.min"),
            (
                r#"{"cleavage": "one_perfect", "cleavage": "none_visible"}"#,
                "cleavage",
            ),
            (
                r#"{"scratch": {"steel": true, "steel": false}}"#,
                "scratch.steel",
            ),
        ];
        for (json, field) in cases {
            let e = invalid(json);
            assert_eq!(e.field, field, "{json}: {e:?}");
            assert!(!e.message.is_empty());
        }
    }

    #[test]
    fn messages_say_what_is_allowed() {
        let e = invalid(r#"{"streak": "purple"}"#);
        assert!(e.message.contains("red_brown"), "{}", e.message);
        let e = invalid(r#"{"sparkle": true}"#);
        assert!(e.message.contains("diaphaneity"), "{}", e.message);
        let e = invalid(r#"{"hardness": {"min": "soft"}}"#);
        assert!(e.message.contains("1 to 10"), "{}", e.message);
    }

    #[test]
    fn a_body_that_is_not_an_object_is_refused_as_a_whole() {
        for json in ["[]", "[1, 2]", "\"talc\"", "3", "null", "true"] {
            assert_eq!(invalid(json).field, "", "{json}");
        }
    }

    #[test]
    fn a_body_that_is_not_json_is_malformed() {
        for body in [
            &b"{"[..],
            b"",
            b"cleavage=one_perfect",
            b"{\"cleavage\": }",
            b"{} {}",
            b"\xff\xfe{}",
        ] {
            assert_eq!(malformed(body).field, "", "{body:?}");
        }
        malformed(b"{\"colour\": [\"gr\xffen\"]}");
    }

    #[test]
    fn valid_bodies_parse() {
        let o = observations_from_json(
            br#"{"cleavage": "one_perfect", "colour": ["green", "dark_green"], "hardness": {"max": 2.5}, "luster": null}"#,
        )
        .expect("valid");
        assert_eq!(o.colour.map(|c| c.len()), Some(2));
        assert!(o.luster.is_none());
    }
}
