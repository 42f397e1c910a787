//! Sample records of the log: the contract's fields, validated.
//!
//! Pure domain code (no I/O, no axum, no sqlx): the web layer parses a
//! request into [`SampleInput`], [`SampleInput::validate`] checks every
//! field and names the first one that is wrong, and the store saves the
//! resulting [`ValidSample`] with its identification snapshot.

use serde::{Deserialize, Serialize};

use crate::base::vocab::Setting;
use crate::engine::{FieldError, Observations};

/// Longest free-text field (station, collector, lithology), characters.
pub const MAX_SHORT_TEXT: usize = 200;
/// Longest notes, characters.
pub const MAX_NOTES: usize = 10_000;
/// Longest sample code, characters.
pub const MAX_SAMPLE_CODE: usize = 64;
/// Largest coordinate uncertainty accepted, metres (a third of the Earth's
/// circumference is already no location at all).
pub const MAX_UNCERTAINTY_M: f64 = 20_000_000.0;

/// The CSV columns: the contract's field names, then two conveniences for
/// spreadsheets (the top candidate of the stored identification).
pub const CSV_COLUMNS: &[&str] = &[
    "id",
    "project",
    "sample_code",
    "collected_on",
    "collector",
    "station",
    "latitude",
    "longitude",
    "coordinate_uncertainty_m",
    "setting",
    "lithology",
    "field_id",
    "notes",
    "observations",
    "created_at",
    "updated_at",
    "revision",
    "base_version",
    "identification",
    "top_candidate",
    "top_probability",
];

/// Columns that hold numbers. A cell of one of them that reads as a number
/// goes out as it is (a western longitude stays `-20.306`); every other
/// cell goes through [`csv_cell_out`].
pub const CSV_NUMBER_COLUMNS: &[&str] = &[
    "latitude",
    "longitude",
    "coordinate_uncertainty_m",
    "revision",
    "top_probability",
];

/// First characters that make a spreadsheet read a cell as a formula
/// (OWASP, "CSV Injection": `=`, `+`, `-`, `@`, tab, carriage return).
const FORMULA_START: &[char] = &['=', '+', '-', '@', '\t', '\r'];

/// Whether `s`, after any single quotes it starts with, begins with a
/// formula character.
fn quoted_formula(s: &str) -> bool {
    s.trim_start_matches('\'').starts_with(FORMULA_START)
}

/// A text cell for the CSV export, safe to open in a spreadsheet: a cell
/// that starts with a formula character gets a single quote in front, as
/// OWASP's CSV Injection guidance says, so the spreadsheet shows it as
/// text. A cell that already starts with single quotes before such a
/// character gets one more, so that [`csv_cell_in`], which takes exactly
/// one away, gives back what was stored whatever it was.
pub fn csv_cell_out(column: &str, cell: String) -> String {
    if CSV_NUMBER_COLUMNS.contains(&column) && cell.parse::<f64>().is_ok() {
        return cell;
    }
    if quoted_formula(&cell) {
        format!("'{cell}")
    } else {
        cell
    }
}

/// A cell as the import reads it: one leading single quote before a
/// formula character (after any further quotes) is taken away, undoing
/// [`csv_cell_out`]. Any other cell is left as it is.
pub fn csv_cell_in(cell: &str) -> &str {
    match cell.strip_prefix('\'') {
        Some(rest) if quoted_formula(rest) => rest,
        _ => cell,
    }
}

/// A sample record as a client sends it (create or whole-record update).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SampleInput {
    /// Project code; `default` when omitted.
    #[serde(default)]
    pub project: Option<String>,
    /// The crew's own label, unique within the project. Required.
    #[serde(default)]
    pub sample_code: Option<String>,
    /// ISO 8601 calendar date, `YYYY-MM-DD`.
    #[serde(default)]
    pub collected_on: Option<String>,
    /// Who collected it.
    #[serde(default)]
    pub collector: Option<String>,
    /// Station or outcrop label.
    #[serde(default)]
    pub station: Option<String>,
    /// WGS 84 latitude, decimal degrees.
    #[serde(default)]
    pub latitude: Option<f64>,
    /// WGS 84 longitude, decimal degrees.
    #[serde(default)]
    pub longitude: Option<f64>,
    /// Coordinate uncertainty, metres.
    #[serde(default)]
    pub coordinate_uncertainty_m: Option<f64>,
    /// Geological setting.
    #[serde(default)]
    pub setting: Option<Setting>,
    /// Rock description, free text.
    #[serde(default)]
    pub lithology: Option<String>,
    /// The identify request object.
    #[serde(default)]
    pub observations: Option<Observations>,
    /// The entry the geologist names it as, or null for "not identified".
    #[serde(default)]
    pub field_id: Option<String>,
    /// Notes.
    #[serde(default)]
    pub notes: Option<String>,
    /// Who makes this change, for the record's history (free text; basal
    /// has no accounts).
    #[serde(default)]
    pub edited_by: Option<String>,
    /// On update: the revision the client started from.
    #[serde(default)]
    pub revision: Option<i64>,
    /// Read-only fields that the service adds (`id`, `created_at`,
    /// `updated_at`, `identification`, `base_version`, `deleted`), as sent.
    /// A create refuses each of them; a whole-record update accepts them
    /// only when they equal the stored record's (so a fetched record can be
    /// sent back whole) and refuses, by name, one that differs. `null` is
    /// the same as leaving the field out.
    #[serde(default, skip_serializing)]
    pub id: Option<serde_json::Value>,
    /// Read-only: see [`SampleInput::id`].
    #[serde(default, skip_serializing)]
    pub created_at: Option<serde_json::Value>,
    /// Read-only: see [`SampleInput::id`].
    #[serde(default, skip_serializing)]
    pub updated_at: Option<serde_json::Value>,
    /// Read-only: see [`SampleInput::id`].
    #[serde(default, skip_serializing)]
    pub identification: Option<serde_json::Value>,
    /// Read-only: see [`SampleInput::id`].
    #[serde(default, skip_serializing)]
    pub base_version: Option<serde_json::Value>,
    /// Read-only: see [`SampleInput::id`].
    #[serde(default, skip_serializing)]
    pub deleted: Option<serde_json::Value>,
}

/// A validated sample, ready to store.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ValidSample {
    /// Project code.
    pub project: String,
    /// Sample code.
    pub sample_code: String,
    /// ISO 8601 date.
    pub collected_on: Option<String>,
    /// Collector.
    pub collector: Option<String>,
    /// Station.
    pub station: Option<String>,
    /// Latitude.
    pub latitude: Option<f64>,
    /// Longitude.
    pub longitude: Option<f64>,
    /// Uncertainty, metres.
    pub coordinate_uncertainty_m: Option<f64>,
    /// Setting.
    pub setting: Option<Setting>,
    /// Lithology.
    pub lithology: Option<String>,
    /// Observations (empty when none).
    pub observations: Observations,
    /// Field identification.
    pub field_id: Option<String>,
    /// Notes.
    pub notes: Option<String>,
}

/// A project code: 1 to 16 of `a-z 0-9 _ -`, starting with a letter or digit.
pub fn valid_project_code(code: &str) -> bool {
    let mut chars = code.chars();
    matches!(chars.next(), Some(c) if c.is_ascii_lowercase() || c.is_ascii_digit())
        && code.len() <= 16
        && chars.all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_' || c == '-')
}

fn is_leap(y: i32) -> bool {
    (y % 4 == 0 && y % 100 != 0) || y % 400 == 0
}

/// Checks an ISO 8601 calendar date in the extended format `YYYY-MM-DD`.
pub fn valid_iso_date(s: &str) -> bool {
    let b = s.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return false;
    }
    let digits = |r: std::ops::Range<usize>| -> Option<i32> {
        s.get(r)
            .filter(|t| t.bytes().all(|c| c.is_ascii_digit()))
            .and_then(|t| t.parse().ok())
    };
    let (Some(y), Some(m), Some(d)) = (digits(0..4), digits(5..7), digits(8..10)) else {
        return false;
    };
    let days = match m {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if is_leap(y) => 29,
        2 => 28,
        _ => return false,
    };
    (1000..=9999).contains(&y) && (1..=days).contains(&d)
}

/// Degrees, minutes and seconds for people: `46°30′44.3″ N`.
pub fn dms(value: f64, positive: char, negative: char) -> String {
    let hemi = if value < 0.0 { negative } else { positive };
    let total = (value.abs() * 3600.0 * 10.0).round() / 10.0;
    let deg = (total / 3600.0).floor();
    let min = ((total - deg * 3600.0) / 60.0).floor();
    let sec = total - deg * 3600.0 - min * 60.0;
    format!("{deg:.0}°{min:02.0}′{sec:04.1}″ {hemi}")
}

/// Characters that change the direction or order in which text is shown
/// without being visible themselves (Unicode Standard Annex #9, "Unicode
/// Bidirectional Algorithm", table 4 and sections 2.1 to 2.6): embeddings,
/// overrides and their pop (U+202A to U+202E), isolates and their pop
/// (U+2066 to U+2069), and the marks U+200E, U+200F and U+061C. A sample code
/// or a note holding one can read differently on screen from what is stored.
const BIDI_CONTROLS: &[(char, &str)] = &[
    ('\u{061C}', "arabic letter mark"),
    ('\u{200E}', "left-to-right mark"),
    ('\u{200F}', "right-to-left mark"),
    ('\u{202A}', "left-to-right embedding"),
    ('\u{202B}', "right-to-left embedding"),
    ('\u{202C}', "pop directional formatting"),
    ('\u{202D}', "left-to-right override"),
    ('\u{202E}', "right-to-left override"),
    ('\u{2066}', "left-to-right isolate"),
    ('\u{2067}', "right-to-left isolate"),
    ('\u{2068}', "first strong isolate"),
    ('\u{2069}', "pop directional isolate"),
];

/// Which line structure a text field may have.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Lines {
    /// One line: codes, names, station, collector, lithology.
    One,
    /// Several lines (the notes): line feeds and tabs are allowed, and a
    /// carriage return only as part of a CR LF line end (what browsers send
    /// for a line break in a text area).
    Many,
}

/// The first character of `s` that a text field may not hold, with its
/// position (0-based, in characters): Unicode control characters (general
/// category Cc: U+0000 to U+001F and U+007F to U+009F), except the line
/// ends and tabs that [`Lines::Many`] allows, and the bidirectional controls.
pub fn forbidden_char(s: &str, lines: Lines) -> Option<(usize, char)> {
    let mut chars = s.chars().enumerate().peekable();
    while let Some((i, c)) = chars.next() {
        let allowed = match c {
            '\n' | '\t' => lines == Lines::Many,
            '\r' => lines == Lines::Many && matches!(chars.peek(), Some((_, '\n'))),
            c if c.is_control() => false,
            c => !BIDI_CONTROLS.iter().any(|(b, _)| *b == c),
        };
        if !allowed {
            return Some((i, c));
        }
    }
    None
}

/// A character named for a message: `U+202E (right-to-left override)`.
pub fn describe_char(c: char) -> String {
    let name = match c {
        '\n' => "line feed",
        '\r' => "carriage return",
        '\t' => "tab",
        '\0' => "null",
        c => BIDI_CONTROLS
            .iter()
            .find(|(b, _)| *b == c)
            .map_or("a control character", |(_, n)| n),
    };
    format!("U+{:04X} ({name})", u32::from(c))
}

/// Checks that `s` holds no character that [`forbidden_char`] refuses; the
/// message names the character as U+XXXX and says what is allowed. Used for
/// every text a person types into the log (API, forms, import, projects).
pub fn check_text(field: &str, s: &str, lines: Lines) -> Result<(), FieldError> {
    match forbidden_char(s, lines) {
        None => Ok(()),
        Some((at, c)) => {
            let kind = if BIDI_CONTROLS.iter().any(|(b, _)| *b == c) {
                "an invisible character that changes the order in which text is shown"
            } else {
                "a control character"
            };
            let allowed = match lines {
                Lines::One => "one line of text without control characters",
                Lines::Many => "text without control characters (line breaks and tabs are fine)",
            };
            Err(FieldError::new(
                field,
                format!(
                    "character {} at position {} is {kind}; remove it. Allowed: {allowed}",
                    describe_char(c),
                    at + 1
                ),
            ))
        }
    }
}

fn text(field: &str, v: &Option<String>, max: usize) -> Result<Option<String>, FieldError> {
    let Some(s) = v else { return Ok(None) };
    let t = s.trim();
    if t.is_empty() {
        return Ok(None);
    }
    if t.chars().count() > max {
        return Err(FieldError::new(field, format!("at most {max} characters")));
    }
    let lines = if field == "notes" {
        Lines::Many
    } else {
        Lines::One
    };
    check_text(field, t, lines)?;
    Ok(Some(t.to_string()))
}

/// Longest project name, characters.
pub const MAX_PROJECT_NAME: usize = 120;

/// A project name: trimmed, 1 to [`MAX_PROJECT_NAME`] characters of one
/// line of text.
pub fn valid_project_name(name: &str) -> Result<String, FieldError> {
    let t = name.trim();
    if t.is_empty() || t.chars().count() > MAX_PROJECT_NAME {
        return Err(FieldError::new(
            "name",
            format!("give the project a name of 1 to {MAX_PROJECT_NAME} characters"),
        ));
    }
    check_text("name", t, Lines::One)?;
    Ok(t.to_string())
}

/// A project code, checked with a message that names a character that
/// does not belong.
pub fn check_project_code(field: &str, code: &str) -> Result<(), FieldError> {
    check_text(field, code, Lines::One)?;
    if valid_project_code(code) {
        Ok(())
    } else {
        Err(FieldError::new(
            field,
            format!(
                "\"{code}\" is not a project code: use 1 to 16 lower-case letters, digits, - or _, starting with a letter or digit"
            ),
        ))
    }
}

/// Longest code scheme, characters.
pub const MAX_CODE_SCHEME: usize = 40;

/// Checks a sample-code scheme: literal text with `{year}`, `{yy}` and
/// exactly one `{seq:N}` (N from 1 to 12) or `{seq}` (one digit), at most
/// [`MAX_CODE_SCHEME`] characters, one line without control characters. The
/// message says what is allowed.
pub fn valid_code_scheme(scheme: &str) -> Result<(), FieldError> {
    let field = "code_scheme";
    if scheme.chars().count() > MAX_CODE_SCHEME {
        return Err(FieldError::new(
            field,
            format!("at most {MAX_CODE_SCHEME} characters"),
        ));
    }
    check_text(field, scheme, Lines::One)?;
    let mut seqs = 0;
    let mut rest = scheme;
    while let Some(open) = rest.find(['{', '}']) {
        let after = &rest[open..];
        let token_end = after.find('}').filter(|_| after.starts_with('{'));
        let Some(end) = token_end else {
            return Err(FieldError::new(
                field,
                "only {year}, {yy} and one {seq:N} are placeholders; remove the other braces",
            ));
        };
        let token = &after[1..end];
        match token {
            "year" | "yy" => {}
            "seq" => seqs += 1,
            t if t.starts_with("seq:") => {
                let ok = t[4..]
                    .parse::<usize>()
                    .ok()
                    .is_some_and(|n| (1..=12).contains(&n))
                    && t[4..].bytes().all(|b| b.is_ascii_digit());
                if !ok {
                    return Err(FieldError::new(
                        field,
                        "the sequence number needs a width from 1 to 12 digits: {seq:N}, e.g. {seq:4}",
                    ));
                }
                seqs += 1;
            }
            _ => {
                return Err(FieldError::new(
                    field,
                    "only {year}, {yy} and one {seq:N} are placeholders; remove the other braces",
                ));
            }
        }
        rest = &after[end + 1..];
    }
    match seqs {
        0 => Err(FieldError::new(
            field,
            "the scheme needs a sequence number: {seq:N} with N from 1 to 12 digits, e.g. BV-{yy}-{seq:4}",
        )),
        1 => Ok(()),
        _ => Err(FieldError::new(
            field,
            "give exactly one {seq:N}; only {year}, {yy} and one {seq:N} are placeholders",
        )),
    }
}

impl SampleInput {
    /// Validates every field; `known_entry` says whether an id names a base
    /// entry. The first problem found is returned.
    pub fn validate(&self, known_entry: impl Fn(&str) -> bool) -> Result<ValidSample, FieldError> {
        let project = match self.project.as_deref().map(str::trim) {
            None | Some("") => "default".to_string(),
            Some(p) => {
                check_project_code("project", p)?;
                p.to_string()
            }
        };
        let sample_code = match self.sample_code.as_deref().map(str::trim) {
            None | Some("") => {
                return Err(FieldError::new(
                    "sample_code",
                    "a sample code is required (the crew's own label)",
                ));
            }
            Some(c) if c.chars().count() > MAX_SAMPLE_CODE => {
                return Err(FieldError::new(
                    "sample_code",
                    format!("at most {MAX_SAMPLE_CODE} characters"),
                ));
            }
            Some(c) => {
                check_text("sample_code", c, Lines::One)?;
                c.to_string()
            }
        };
        let collected_on = match self.collected_on.as_deref().map(str::trim) {
            None | Some("") => None,
            Some(d) if valid_iso_date(d) => Some(d.to_string()),
            Some(d) => {
                return Err(FieldError::new(
                    "collected_on",
                    format!(
                        "\"{d}\" is not a calendar date; write it as YYYY-MM-DD (ISO 8601), e.g. 2026-07-14"
                    ),
                ));
            }
        };
        let coord = |field: &str,
                     v: Option<f64>,
                     lim: f64,
                     what: &str|
         -> Result<Option<f64>, FieldError> {
            match v {
                None => Ok(None),
                Some(x) if x.is_finite() && x.abs() <= lim => Ok(Some(x)),
                Some(x) => Err(FieldError::new(
                    field,
                    format!(
                        "{what} must be decimal degrees from −{lim} to {lim} (WGS 84), got {x}"
                    ),
                )),
            }
        };
        let latitude = coord("latitude", self.latitude, 90.0, "latitude")?;
        let longitude = coord("longitude", self.longitude, 180.0, "longitude")?;
        if latitude.is_some() != longitude.is_some() {
            let missing = if latitude.is_none() {
                "latitude"
            } else {
                "longitude"
            };
            return Err(FieldError::new(
                missing,
                "give latitude and longitude together, or neither",
            ));
        }
        let coordinate_uncertainty_m = match self.coordinate_uncertainty_m {
            None => None,
            Some(u) if u.is_finite() && u > 0.0 && u <= MAX_UNCERTAINTY_M => Some(u),
            Some(u) => {
                return Err(FieldError::new(
                    "coordinate_uncertainty_m",
                    format!("the uncertainty must be a distance in metres greater than 0, got {u}"),
                ));
            }
        };
        let observations = self.observations.clone().unwrap_or_default();
        if let Err(e) = observations.validate() {
            return Err(FieldError::new(
                format!("observations.{}", e.field).trim_end_matches('.'),
                e.message,
            ));
        }
        let field_id = match self.field_id.as_deref().map(str::trim) {
            None | Some("") => None,
            Some(id) if known_entry(id) => Some(id.to_string()),
            Some(id) => {
                return Err(FieldError::new(
                    "field_id",
                    format!(
                        "\"{id}\" is not an entry of the property base (GET /api/v1/minerals lists them); use null for \"not identified\""
                    ),
                ));
            }
        };
        if let Some(a) = &self.edited_by {
            check_text("edited_by", a.trim(), Lines::One)?;
        }
        Ok(ValidSample {
            project,
            sample_code,
            collected_on,
            collector: text("collector", &self.collector, MAX_SHORT_TEXT)?,
            station: text("station", &self.station, MAX_SHORT_TEXT)?,
            latitude,
            longitude,
            coordinate_uncertainty_m,
            setting: self.setting,
            lithology: text("lithology", &self.lithology, MAX_SHORT_TEXT)?,
            observations,
            field_id,
            notes: text("notes", &self.notes, MAX_NOTES)?,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn known(id: &str) -> bool {
        id == "muscovite"
    }

    #[test]
    fn only_the_sample_code_is_required() {
        let s = SampleInput {
            sample_code: Some(" BV-001 ".into()),
            ..Default::default()
        }
        .validate(known)
        .expect("valid");
        assert_eq!(s.project, "default");
        assert_eq!(s.sample_code, "BV-001");
        let e = SampleInput::default().validate(known).expect_err("no code");
        assert_eq!(e.field, "sample_code");
    }

    #[test]
    fn iso_dates_are_checked_for_real_calendar_days() {
        for ok in ["2026-07-14", "2024-02-29", "2000-02-29", "1999-12-31"] {
            assert!(valid_iso_date(ok), "{ok}");
        }
        for bad in [
            "2026-02-29",
            "1900-02-29",
            "2026-13-01",
            "2026-04-31",
            "26-07-14",
            "2026/07/14",
            "14.07.2026",
            "2026-7-14",
            "2026-07-14T10:00",
        ] {
            assert!(!valid_iso_date(bad), "{bad}");
        }
    }

    #[test]
    fn coordinates_stay_within_wgs84_and_come_in_pairs() {
        let base = SampleInput {
            sample_code: Some("x".into()),
            ..Default::default()
        };
        let cases = [
            (Some(91.0), Some(0.0), "latitude"),
            (Some(-90.5), Some(0.0), "latitude"),
            (Some(10.0), Some(180.5), "longitude"),
            (Some(10.0), None, "longitude"),
            (None, Some(10.0), "latitude"),
        ];
        for (lat, lon, field) in cases {
            let e = SampleInput {
                latitude: lat,
                longitude: lon,
                ..base.clone()
            }
            .validate(known)
            .expect_err("bad");
            assert_eq!(e.field, field, "{lat:?} {lon:?}");
        }
        let ok = SampleInput {
            latitude: Some(-90.0),
            longitude: Some(180.0),
            ..base
        }
        .validate(known);
        assert!(ok.is_ok());
    }

    #[test]
    fn field_ids_must_name_a_base_entry() {
        let base = SampleInput {
            sample_code: Some("x".into()),
            ..Default::default()
        };
        assert!(
            SampleInput {
                field_id: Some("muscovite".into()),
                ..base.clone()
            }
            .validate(known)
            .is_ok()
        );
        let e = SampleInput {
            field_id: Some("mica".into()),
            ..base
        }
        .validate(known)
        .expect_err("bad");
        assert_eq!(e.field, "field_id");
    }

    #[test]
    fn bad_observations_are_named_under_observations() {
        let obs: Observations =
            serde_json::from_str(r#"{"hardness": {"min": 0.2}}"#).expect("json");
        let e = SampleInput {
            sample_code: Some("x".into()),
            observations: Some(obs),
            ..Default::default()
        }
        .validate(known)
        .expect_err("bad");
        assert_eq!(e.field, "observations.hardness.min");
    }

    #[test]
    fn degrees_minutes_seconds() {
        // 46.5123° = 46° 30′ 44.28″ (arithmetic).
        assert_eq!(dms(46.5123, 'N', 'S'), "46°30′44.3″ N");
        assert_eq!(dms(-7.25, 'E', 'W'), "7°15′00.0″ W");
    }

    #[test]
    fn project_codes_are_short_and_plain() {
        assert!(valid_project_code("default"));
        assert!(valid_project_code("bv-26"));
        assert!(!valid_project_code("BV"));
        assert!(!valid_project_code("-x"));
        assert!(!valid_project_code("a-very-long-project-code"));
    }

    #[test]
    fn text_refuses_control_and_bidirectional_characters_with_their_code_point() {
        for (text, lines, code) in [
            ("a\u{202A}b", Lines::Many, "U+202A"),
            ("a\u{202E}", Lines::Many, "U+202E"),
            ("\u{2066}a", Lines::One, "U+2066"),
            ("a\u{2069}", Lines::One, "U+2069"),
            ("a\u{200E}", Lines::One, "U+200E"),
            ("a\u{200F}", Lines::One, "U+200F"),
            ("a\u{061C}", Lines::One, "U+061C"),
            ("a\u{0000}", Lines::Many, "U+0000"),
            ("a\u{001B}[31m", Lines::Many, "U+001B"),
            ("a\u{007F}", Lines::Many, "U+007F"),
            ("a\u{009B}", Lines::Many, "U+009B"),
            ("a\nb", Lines::One, "U+000A"),
            ("a\tb", Lines::One, "U+0009"),
            ("a\rb", Lines::Many, "U+000D"),
            ("a\r", Lines::Many, "U+000D"),
        ] {
            let e = check_text("notes", text, lines).expect_err(text);
            assert_eq!(e.field, "notes");
            assert!(e.message.contains(code), "{text:?}: {}", e.message);
        }
        for ok in ["plain", "Ünïcødé – ok", "שלום", "a\u{200D}b"] {
            assert!(check_text("notes", ok, Lines::One).is_ok(), "{ok:?}");
        }
        for ok in ["two\nlines", "tab\there", "crlf\r\nline"] {
            assert!(check_text("notes", ok, Lines::Many).is_ok(), "{ok:?}");
        }
    }

    #[test]
    fn project_names_and_codes_use_the_same_character_rule() {
        assert_eq!(
            valid_project_name("  Ridge survey  ").as_deref().ok(),
            Some("Ridge survey")
        );
        assert_eq!(valid_project_name("").expect_err("empty").field, "name");
        let e = valid_project_name("Ridge\u{202E}").expect_err("bidi");
        assert!(e.message.contains("U+202E"), "{}", e.message);
        let e = check_project_code("project", "bv\u{202E}").expect_err("bidi");
        assert!(e.message.contains("U+202E"), "{}", e.message);
        assert!(check_project_code("project", "bv-26").is_ok());
    }

    #[test]
    fn code_schemes_need_one_sequence_and_known_placeholders() {
        for ok in [
            "{seq:4}",
            "BV-{yy}-{seq:4}",
            "{year}/{seq:3}a",
            "S{seq}",
            "X-{seq:12}",
        ] {
            assert!(valid_code_scheme(ok).is_ok(), "{ok}");
        }
        for bad in [
            "BV-",
            "{seq:0}",
            "{seq:13}",
            "{seq:x}",
            "{seq:4}-{seq:2}",
            "{month}-{seq:4}",
            "{seq:4",
            "a}{seq:4}",
            "BV\u{202E}{seq:4}",
            "{seq:4}{seq:4}{seq:4}{seq:4}{seq:4}{seq:4}x",
        ] {
            let e = valid_code_scheme(bad).expect_err(bad);
            assert_eq!(e.field, "code_scheme");
        }
    }
    #[test]
    fn csv_cells_that_a_spreadsheet_would_run_are_quoted_and_come_back_as_stored() {
        // (stored, exported) for a text column.
        let table = [
            ("=1+1", "'=1+1"),
            (
                "=HYPERLINK(\"http://example.invalid\",\"x\")",
                "'=HYPERLINK(\"http://example.invalid\",\"x\")",
            ),
            ("'=x", "''=x"),
            ("''@y", "'''@y"),
            ("'plain", "'plain"),
            ("-", "'-"),
            ("-5 m", "'-5 m"),
            ("@home", "'@home"),
            ("\tx", "'\tx"),
            ("\rx", "'\rx"),
            ("+", "'+"),
            ("'", "'"),
            ("plain", "plain"),
            ("", ""),
        ];
        for (stored, exported) in table {
            assert_eq!(
                csv_cell_out("notes", stored.to_string()),
                exported,
                "{stored:?}"
            );
            assert_eq!(csv_cell_in(exported), stored, "{exported:?}");
        }
        // Numbers in number columns stay numbers; text in them does not.
        assert_eq!(csv_cell_out("longitude", "-20.306".into()), "-20.306");
        assert_eq!(csv_cell_out("latitude", "-5 m".into()), "'-5 m");
        assert_eq!(csv_cell_out("notes", "-20.306".into()), "'-20.306");
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(2000))]
        #[test]
        fn every_text_cell_round_trips_and_never_starts_a_formula(
            s in "['=+@\\t\\ra-z -]{0,6}"
        ) {
            let out = csv_cell_out("notes", s.clone());
            proptest::prop_assert!(!out.starts_with(FORMULA_START), "{:?}", out);
            proptest::prop_assert_eq!(csv_cell_in(&out), s.as_str());
        }
    }
}
