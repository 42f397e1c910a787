//! Sample records of the log: the contract's fields, validated.
//!
//! Pure domain code (no I/O, no axum, no sqlx): the web layer parses a
//! request into [`SampleInput`], [`SampleInput::check`] checks every
//! field and names every one that is wrong ([`SampleInput::validate`] the
//! first, for the JSON API's one-error shape), and the store saves the
//! resulting [`ValidSample`] with its identification snapshot.
//!
//! "Today" comes in as a parameter (the date where the person is, which
//! the web layer computes from its configured time zone), so a collection
//! date in the future is refused here and the check stays pure. Typed
//! coordinates in degrees, minutes and seconds are read by
//! [`parse_coordinate`]; the records keep WGS 84 decimal degrees.

use jiff::civil::Date;
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

/// Which coordinate a typed value is: it decides the hemisphere letters
/// and the range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Axis {
    /// North–south, −90 to 90, letters N and S.
    Latitude,
    /// East–west, −180 to 180, letters E and W.
    Longitude,
}

impl Axis {
    fn name(self) -> &'static str {
        match self {
            Axis::Latitude => "latitude",
            Axis::Longitude => "longitude",
        }
    }

    fn limit(self) -> f64 {
        match self {
            Axis::Latitude => 90.0,
            Axis::Longitude => 180.0,
        }
    }

    /// (positive letter, negative letter).
    fn letters(self) -> (char, char) {
        match self {
            Axis::Latitude => ('N', 'S'),
            Axis::Longitude => ('E', 'W'),
        }
    }

    /// The forms [`parse_coordinate`] reads, for messages.
    pub fn accepted_forms(self) -> String {
        let (p, n) = self.letters();
        let (d, m, s) = match self {
            Axis::Latitude => ("41", "30", "18"),
            Axis::Longitude => ("172", "38", "05"),
        };
        format!(
            "decimal degrees (−{d}.505 or {d}.505 {n}), degrees and decimal minutes ({d} {m}.3 {n} or \
             {d}°{m}.300′{n}) or degrees, minutes and seconds ({d} {m} {s} {n}, {d}°{m}′{s}″{n}, {n}{d} {m} {s} \
             or −{d} {m} {s}); the letter is {p} or {n}, minutes and seconds are below 60"
        )
    }
}

/// What a mark after a number says it is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Mark {
    Degrees,
    Minutes,
    Seconds,
}

fn mark_of(c: char) -> Option<Mark> {
    match c {
        // Degree sign, and the ordinal and ring that keyboards offer in
        // its place.
        '°' | 'º' | '˚' => Some(Mark::Degrees),
        // Apostrophe, prime, and the typographic quote that text editors
        // put in for an apostrophe.
        '\'' | '′' | '’' => Some(Mark::Minutes),
        // Quotation mark, double prime, typographic closing quote.
        '"' | '″' | '”' => Some(Mark::Seconds),
        _ => None,
    }
}

/// Reads a coordinate as people type it from a map or a field GPS unit:
/// decimal degrees (`-41.505`, `41,505 S`), degrees and decimal minutes
/// (`41 30.3 S`, `41°30.300'S`) or degrees, minutes and seconds
/// (`41°30'18"S`, `41 30 18 S`, `41°30′18″S`, `S41 30 18`, `-41 30 18`),
/// into WGS 84 decimal degrees, negative to the south and west. The
/// hemisphere letter, before or after, must belong to the axis; a sign and
/// a letter together, minutes or seconds of 60 or more, a fraction before
/// the last number, and values beyond the axis's range are refused with a
/// message that shows the accepted forms.
pub fn parse_coordinate(raw: &str, axis: Axis) -> Result<f64, String> {
    let t = raw.trim();
    let refuse = |why: String| {
        Err(format!(
            "\"{t}\" cannot be read as a {}: {why}. Type {}",
            axis.name(),
            axis.accepted_forms()
        ))
    };
    if t.is_empty() {
        return refuse("it is empty".into());
    }
    let (pos, neg) = axis.letters();
    let mut body: &str = t;
    let mut negative = false;
    let mut letter: Option<char> = None;
    // A hemisphere letter at either end.
    let first = body.chars().next().map(|c| c.to_ascii_uppercase());
    let last = body.chars().next_back().map(|c| c.to_ascii_uppercase());
    let is_hemi = |c: Option<char>| matches!(c, Some('N' | 'S' | 'E' | 'W'));
    if is_hemi(first) {
        letter = first;
        body = &body[1..];
    }
    if is_hemi(last) && !body.is_empty() {
        if letter.is_some() {
            return refuse("it has a hemisphere letter at both ends; give one".into());
        }
        letter = last;
        body = &body[..body.len() - 1];
    }
    if let Some(l) = letter {
        if l == neg {
            negative = true;
        } else if l != pos {
            let other = match axis {
                Axis::Latitude => "a longitude (E or W)",
                Axis::Longitude => "a latitude (N or S)",
            };
            return refuse(format!("{l} marks {other}"));
        }
    }
    let mut body = body.trim();
    if let Some(rest) = body
        .strip_prefix('-')
        .or_else(|| body.strip_prefix('−'))
        .or_else(|| body.strip_prefix('+'))
    {
        if letter.is_some() {
            return refuse(format!(
                "it has both a sign and a hemisphere letter; give one (a letter {neg} or a minus sign)"
            ));
        }
        negative = body.starts_with(['-', '−']);
        body = rest.trim_start();
    }
    // Numbers, each with the mark after it, if any.
    let mut parts: Vec<(String, Option<Mark>)> = Vec::new();
    let mut current = String::new();
    let mut current_open = false;
    for c in body.chars() {
        if c.is_ascii_digit() || c == '.' || c == ',' {
            if !current_open {
                current.clear();
                current_open = true;
            }
            current.push(if c == ',' { '.' } else { c });
        } else if c.is_whitespace() {
            if current_open {
                parts.push((std::mem::take(&mut current), None));
                current_open = false;
            }
        } else if let Some(m) = mark_of(c) {
            if current_open {
                parts.push((std::mem::take(&mut current), Some(m)));
                current_open = false;
            } else if let Some(last) = parts.last_mut().filter(|p| p.1.is_none()) {
                last.1 = Some(m);
            } else {
                return refuse(format!("the mark {c} follows no number"));
            }
        } else if c == '-' || c == '−' || c == '+' {
            return refuse("a sign belongs only before the degrees".into());
        } else {
            return refuse(format!("\"{c}\" is not part of a coordinate"));
        }
    }
    if current_open {
        parts.push((current, None));
    }
    if parts.is_empty() {
        return refuse("it has no number".into());
    }
    if parts.len() > 3 {
        return refuse("it has more than three numbers".into());
    }
    let order = [Mark::Degrees, Mark::Minutes, Mark::Seconds];
    let mut values = [0.0_f64; 3];
    for (i, (text, mark)) in parts.iter().enumerate() {
        if let Some(m) = mark
            && *m != order[i]
        {
            let names = ["degrees", "minutes", "seconds"];
            return refuse(format!(
                "its number {} is marked as {} but stands where the {} go",
                text,
                names[order.iter().position(|o| o == m).unwrap_or(0)],
                names[i]
            ));
        }
        let well_formed = {
            let mut pieces = text.split('.');
            let whole = pieces.next().unwrap_or("");
            let frac = pieces.next();
            !whole.is_empty() && pieces.next().is_none() && frac.is_none_or(|f| !f.is_empty())
        };
        if !well_formed {
            return refuse(format!("{text} is not a number"));
        }
        if text.contains('.') && i + 1 < parts.len() {
            return refuse(format!(
                "only the last number may have a fraction, but {text} is followed by more"
            ));
        }
        values[i] = text
            .parse::<f64>()
            .map_err(|_| format!("{text} is not a number"))
            .or_else(refuse)?;
    }
    let [d, m, s] = values;
    if m >= 60.0 {
        return refuse(format!("{m} minutes is not below 60"));
    }
    if s >= 60.0 {
        return refuse(format!("{s} seconds is not below 60"));
    }
    let value = d + m / 60.0 + s / 3600.0;
    if !value.is_finite() || value > axis.limit() {
        return refuse(format!(
            "a {} is at most {}° from the equator or the prime meridian",
            axis.name(),
            axis.limit()
        ));
    }
    Ok(if negative { -value } else { value })
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
/// message names the character by its code point (U+202E, say) and says
/// what is allowed. Used for every text a person types into the log (API,
/// forms, import, projects).
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

/// Keeps the value of a field that passed, or notes its error.
fn take<T>(r: Result<T, FieldError>, errors: &mut Vec<FieldError>) -> Option<T> {
    r.map_err(|e| errors.push(e)).ok()
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
    /// entry, and `today` is the date where the person is (a collection
    /// date after it is refused; `None` skips that check, for a file whose
    /// dates were written elsewhere). The first problem found is returned:
    /// the JSON API's error shape names one field.
    pub fn validate(
        &self,
        known_entry: impl Fn(&str) -> bool,
        today: Option<Date>,
    ) -> Result<ValidSample, FieldError> {
        self.check(known_entry, today).map_err(|all| {
            all.into_iter()
                .next()
                .unwrap_or_else(|| FieldError::new("", "the record could not be read"))
        })
    }

    /// Validates every field like [`SampleInput::validate`], and returns
    /// every problem found (never an empty list), in form order, so that a
    /// form can show each beside its field at once.
    pub fn check(
        &self,
        known_entry: impl Fn(&str) -> bool,
        today: Option<Date>,
    ) -> Result<ValidSample, Vec<FieldError>> {
        let mut errors = Vec::new();
        let project = take(self.project_field(), &mut errors);
        let sample_code = take(self.sample_code_field(), &mut errors);
        let collected_on = take(self.collected_on_field(today), &mut errors);
        let collector = take(
            text("collector", &self.collector, MAX_SHORT_TEXT),
            &mut errors,
        );
        let station = take(text("station", &self.station, MAX_SHORT_TEXT), &mut errors);
        let position = take(self.position_field(), &mut errors);
        let coordinate_uncertainty_m = take(self.uncertainty_field(), &mut errors);
        let lithology = take(
            text("lithology", &self.lithology, MAX_SHORT_TEXT),
            &mut errors,
        );
        let observations = take(self.observations_field(), &mut errors);
        let field_id = take(self.field_id_field(&known_entry), &mut errors);
        let notes = take(text("notes", &self.notes, MAX_NOTES), &mut errors);
        if let Some(a) = &self.edited_by {
            take(check_text("edited_by", a.trim(), Lines::One), &mut errors);
        }
        match (
            project,
            sample_code,
            collected_on,
            collector,
            station,
            position,
            coordinate_uncertainty_m,
            lithology,
            observations,
            field_id,
            notes,
        ) {
            (
                Some(project),
                Some(sample_code),
                Some(collected_on),
                Some(collector),
                Some(station),
                Some((latitude, longitude)),
                Some(coordinate_uncertainty_m),
                Some(lithology),
                Some(observations),
                Some(field_id),
                Some(notes),
            ) if errors.is_empty() => Ok(ValidSample {
                project,
                sample_code,
                collected_on,
                collector,
                station,
                latitude,
                longitude,
                coordinate_uncertainty_m,
                setting: self.setting,
                lithology,
                observations,
                field_id,
                notes,
            }),
            _ => Err(errors),
        }
    }

    fn project_field(&self) -> Result<String, FieldError> {
        let project = match self.project.as_deref().map(str::trim) {
            None | Some("") => "default".to_string(),
            Some(p) => {
                check_project_code("project", p)?;
                p.to_string()
            }
        };
        Ok(project)
    }

    fn sample_code_field(&self) -> Result<String, FieldError> {
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
        Ok(sample_code)
    }

    fn collected_on_field(&self, today: Option<Date>) -> Result<Option<String>, FieldError> {
        let collected_on = match self.collected_on.as_deref().map(str::trim) {
            None | Some("") => None,
            Some(d) if valid_iso_date(d) => {
                // ISO 8601 calendar dates of four-digit years sort as text.
                if let Some(t) = today.map(|t| t.strftime("%Y-%m-%d").to_string())
                    && d > t.as_str()
                {
                    return Err(FieldError::new(
                        "collected_on",
                        format!(
                            "{d} is after today ({t}); a sample cannot be collected in the future"
                        ),
                    ));
                }
                Some(d.to_string())
            }
            Some(d) => {
                return Err(FieldError::new(
                    "collected_on",
                    format!(
                        "\"{d}\" is not a calendar date; write it as YYYY-MM-DD (ISO 8601), e.g. 2026-07-14"
                    ),
                ));
            }
        };
        Ok(collected_on)
    }

    fn position_field(&self) -> Result<(Option<f64>, Option<f64>), FieldError> {
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
        Ok((latitude, longitude))
    }

    fn uncertainty_field(&self) -> Result<Option<f64>, FieldError> {
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
        Ok(coordinate_uncertainty_m)
    }

    fn observations_field(&self) -> Result<Observations, FieldError> {
        let observations = self.observations.clone().unwrap_or_default();
        if let Err(e) = observations.validate() {
            return Err(FieldError::new(
                format!("observations.{}", e.field).trim_end_matches('.'),
                e.message,
            ));
        }
        Ok(observations)
    }

    fn field_id_field(
        &self,
        known_entry: impl Fn(&str) -> bool,
    ) -> Result<Option<String>, FieldError> {
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
        Ok(field_id)
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
        .validate(known, None)
        .expect("valid");
        assert_eq!(s.project, "default");
        assert_eq!(s.sample_code, "BV-001");
        let e = SampleInput::default()
            .validate(known, None)
            .expect_err("no code");
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
            .validate(known, None)
            .expect_err("bad");
            assert_eq!(e.field, field, "{lat:?} {lon:?}");
        }
        let ok = SampleInput {
            latitude: Some(-90.0),
            longitude: Some(180.0),
            ..base
        }
        .validate(known, None);
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
            .validate(known, None)
            .is_ok()
        );
        let e = SampleInput {
            field_id: Some("mica".into()),
            ..base
        }
        .validate(known, None)
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
        .validate(known, None)
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
    fn every_bad_field_is_reported_at_once() {
        let today = Date::constant(2026, 12, 4);
        let errors = SampleInput {
            sample_code: Some(String::new()),
            collected_on: Some("2026-02-30".into()),
            latitude: Some(95.0),
            longitude: Some(10.0),
            coordinate_uncertainty_m: Some(-1.0),
            field_id: Some("mica".into()),
            notes: Some("bell\u{7}".into()),
            ..Default::default()
        }
        .check(known, Some(today))
        .expect_err("bad");
        let fields: Vec<&str> = errors.iter().map(|e| e.field.as_str()).collect();
        assert_eq!(
            fields,
            [
                "sample_code",
                "collected_on",
                "latitude",
                "coordinate_uncertainty_m",
                "field_id",
                "notes"
            ]
        );
        // `validate` names the first of them, for the API's one-error shape.
        let first = SampleInput {
            collected_on: Some("2026-02-30".into()),
            ..Default::default()
        }
        .validate(known, Some(today))
        .expect_err("bad");
        assert_eq!(first.field, "sample_code");
    }

    #[test]
    fn a_collection_date_after_today_is_refused() {
        let today = Date::constant(2026, 12, 4);
        let on = |d: &str| SampleInput {
            sample_code: Some("x".into()),
            collected_on: Some(d.into()),
            ..Default::default()
        };
        assert!(on("2026-12-04").validate(known, Some(today)).is_ok());
        assert!(on("1999-01-01").validate(known, Some(today)).is_ok());
        for future in ["2026-12-05", "2027-01-01", "9999-12-31"] {
            let e = on(future).validate(known, Some(today)).expect_err(future);
            assert_eq!(e.field, "collected_on");
            assert!(e.message.contains("2026-12-04"), "{}", e.message);
        }
        // Without a "today" (a file written elsewhere) any real date passes.
        assert!(on("2027-01-01").validate(known, None).is_ok());
    }

    /// One degree is 3600″; 0.5″ of arc, the tolerance below.
    const HALF_SECOND: f64 = 0.5 / 3600.0;

    #[test]
    fn coordinates_are_read_in_the_forms_field_units_show() {
        use Axis::{Latitude as Lat, Longitude as Lon};
        // 41°30′18″ = 41 + 30/60 + 18/3600 = 41.505 (arithmetic).
        let cases: &[(&str, Axis, f64)] = &[
            ("-41.505", Lat, -41.505),
            ("−41.505", Lat, -41.505),
            ("41,505", Lat, 41.505),
            ("41.505 S", Lat, -41.505),
            ("41.505°S", Lat, -41.505),
            ("S 41.505", Lat, -41.505),
            ("41°30'18\"S", Lat, -41.505),
            ("41 30 18 S", Lat, -41.505),
            ("41°30′18″S", Lat, -41.505),
            ("41° 30′ 18″ S", Lat, -41.505),
            ("41º30’18”S", Lat, -41.505),
            ("S41 30 18", Lat, -41.505),
            ("s41 30 18", Lat, -41.505),
            ("41 30 18 n", Lat, 41.505),
            ("-41 30 18", Lat, -41.505),
            ("−41°30′18″", Lat, -41.505),
            ("+41 30 18", Lat, 41.505),
            // 30.3′ = 0.505° (arithmetic).
            ("41 30.3 S", Lat, -41.505),
            ("41°30.300'S", Lat, -41.505),
            ("41°30,3'S", Lat, -41.505),
            ("41 30", Lat, 41.5),
            ("41 30 18.36 S", Lat, -(41.0 + 30.0 / 60.0 + 18.36 / 3600.0)),
            ("0 0 0", Lat, 0.0),
            ("90 S", Lat, -90.0),
            // 172°38′05″ = 172.634722… (arithmetic).
            ("172 38 05 E", Lon, 172.0 + 38.0 / 60.0 + 5.0 / 3600.0),
            ("W172°38′05″", Lon, -(172.0 + 38.0 / 60.0 + 5.0 / 3600.0)),
            ("180 W", Lon, -180.0),
            ("-7.25", Lon, -7.25),
        ];
        for (raw, axis, want) in cases {
            let got = parse_coordinate(raw, *axis).unwrap_or_else(|e| panic!("{raw}: {e}"));
            assert!((got - want).abs() < 1e-9, "{raw}: {got} != {want}");
        }
    }

    #[test]
    fn ambiguous_or_impossible_coordinates_are_refused_with_the_forms() {
        use Axis::{Latitude as Lat, Longitude as Lon};
        let cases: &[(&str, Axis, &str)] = &[
            ("41 30 18 E", Lat, "E marks a longitude"),
            ("41 30 18 N", Lon, "N marks a latitude"),
            ("-41 30 18 S", Lat, "both a sign and a hemisphere letter"),
            ("S 41 30 18 S", Lat, "both ends"),
            ("41 60 00 S", Lat, "60 minutes is not below 60"),
            ("41 30 60 S", Lat, "60 seconds is not below 60"),
            ("41 75.5", Lat, "not below 60"),
            ("41.5 30", Lat, "only the last number may have a fraction"),
            (
                "41 30.5 18",
                Lat,
                "only the last number may have a fraction",
            ),
            ("41 30 18 7", Lat, "more than three numbers"),
            ("30' 41°", Lat, "marked as minutes"),
            ("41\" S", Lat, "marked as seconds"),
            ("41..5", Lat, "is not a number"),
            ("41.", Lat, "is not a number"),
            ("41 -30 18", Lat, "a sign belongs only before the degrees"),
            ("north-ish", Lat, "not part of a coordinate"),
            ("41 30 18 X", Lat, "not part of a coordinate"),
            ("91", Lat, "at most 90°"),
            ("90 0 1 N", Lat, "at most 90°"),
            ("180 0 1 E", Lon, "at most 180°"),
            ("S", Lat, "no number"),
            ("°", Lat, "follows no number"),
            ("", Lat, "empty"),
        ];
        for (raw, axis, why) in cases {
            let e = parse_coordinate(raw, *axis).expect_err(raw);
            assert!(e.contains(why), "{raw}: {e}");
            assert!(e.contains(&axis.accepted_forms()), "{raw}: {e}");
        }
    }

    proptest::proptest! {
        #[test]
        fn dms_as_shown_reads_back_within_half_a_second(
            lat in -90.0_f64..=90.0,
            lon in -180.0_f64..=180.0,
        ) {
            for (x, axis, p, n) in [(lat, Axis::Latitude, 'N', 'S'), (lon, Axis::Longitude, 'E', 'W')] {
                let shown = dms(x, p, n);
                let back = parse_coordinate(&shown, axis)
                    .map_err(proptest::test_runner::TestCaseError::fail)?;
                proptest::prop_assert!((back - x).abs() <= HALF_SECOND, "{} -> {} -> {}", x, shown, back);
                // The same in plain ASCII, as a GPS menu shows it.
                let ascii = shown.replace(['°', '′', '″'], " ");
                let back = parse_coordinate(&ascii, axis)
                    .map_err(proptest::test_runner::TestCaseError::fail)?;
                proptest::prop_assert!((back - x).abs() <= HALF_SECOND, "{} -> {} -> {}", x, ascii, back);
            }
        }
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
