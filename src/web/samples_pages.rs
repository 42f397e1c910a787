//! The sample log's pages: the log (filtered, newest first, keyset
//! pages), the new-sample form (optionally carrying a finished
//! identification's observations), the record with its identification
//! snapshot and full history, the edit form with optimistic concurrency,
//! and tombstone / restore.
//!
//! The forms use the contract's keys (`project`, `sample_code`,
//! `collected_on`, `latitude`, ...) and are validated by the same
//! [`SampleInput::validate`] as the JSON API. Each POST is checked against
//! forgery ([`super::csrf`]) and answered with 303 See Other; a refusal
//! re-renders the form with status 422, the typed values and a message
//! beside the field; a stale edit (someone else saved meanwhile) answers
//! 409 with both versions side by side and overwrites nothing.

use askama::Template;
use askama_web::WebTemplate;
use axum::Router;
use axum::body::Bytes;
use axum::extract::{Extension, Path, RawQuery, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::{get, post};

use super::AppState;
use super::csrf::{self, CsrfToken};
use super::error::PageError;
use super::forms::{FieldMessages, FormData};
use super::samples_api::{DEFAULT_LIMIT, parse_query};
use super::views::{self, CautionView, LeaderView};
use crate::base::vocab::{Setting, Vocab};
use crate::engine::input::observations_from_json;
use crate::engine::{FieldError, Identification, Observations, Property};
use crate::samples::{Axis, SampleInput, ValidSample, dms, parse_coordinate};
use crate::store::StoreError;
use crate::store::drafts;
use crate::store::samples::{self as db, Action, Filter, NewState, SampleRecord, WriteError};

/// How many leading candidates the record page shows with bars.
const LEADERS: usize = 5;

/// Longest "edited by" kept for the history, characters (the same limit as
/// the JSON API's other short texts).
const MAX_AUTHOR: usize = 200;

/// Routes of the sample pages.
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/samples", get(log_page).post(create))
        .route("/samples/new", get(new_form))
        .route("/samples/{id}", get(record))
        .route("/samples/{id}/edit", get(edit_form).post(edit))
        .route("/samples/{id}/reexamine", post(reexamine))
        .route("/samples/{id}/delete", post(remove))
        .route("/samples/{id}/restore", post(restore))
}

type PageResult<T> = Result<T, PageError>;

fn base_version(st: &AppState) -> String {
    st.engine.base().version.clone()
}

// ---------------------------------------------------------------------------
// Shared pieces: typed values, options, display rows
// ---------------------------------------------------------------------------

/// The sample form as typed: every value a string, so that a refused form
/// comes back exactly as the person left it.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Typed {
    /// Project code.
    pub project: String,
    /// Sample code.
    pub sample_code: String,
    /// Date, `YYYY-MM-DD`.
    pub collected_on: String,
    /// Collector.
    pub collector: String,
    /// Station.
    pub station: String,
    /// Latitude, decimal degrees.
    pub latitude: String,
    /// Longitude, decimal degrees.
    pub longitude: String,
    /// Uncertainty, metres.
    pub coordinate_uncertainty_m: String,
    /// Setting (contract value).
    pub setting: String,
    /// Lithology.
    pub lithology: String,
    /// Field identification (entry id), empty for "not identified".
    pub field_id: String,
    /// Notes.
    pub notes: String,
    /// The observations as the identify request object, JSON (hidden).
    pub observations: String,
    /// Who makes the change.
    pub edited_by: String,
    /// The identification (draft id) the observations came from, if any
    /// (hidden), so the drafts list can link to the saved sample.
    pub draft: String,
}

fn num_text(x: Option<f64>) -> String {
    x.map(|v| v.to_string()).unwrap_or_default()
}

fn observations_json(o: &Observations) -> String {
    if o.is_empty() {
        return String::new();
    }
    serde_json::to_string(o).unwrap_or_default()
}

impl Typed {
    /// What the form says.
    fn from_form(form: &FormData) -> Typed {
        let g = |k: &str| form.get(k).unwrap_or("").to_string();
        Typed {
            project: g("project"),
            sample_code: g("sample_code"),
            collected_on: g("collected_on"),
            collector: g("collector"),
            station: g("station"),
            latitude: g("latitude"),
            longitude: g("longitude"),
            coordinate_uncertainty_m: g("coordinate_uncertainty_m"),
            setting: g("setting"),
            lithology: g("lithology"),
            field_id: g("field_id"),
            notes: g("notes"),
            observations: g("observations"),
            edited_by: g("edited_by"),
            draft: g("draft"),
        }
    }

    /// A stored record, as the edit form shows it.
    fn from_record(r: &SampleRecord) -> Typed {
        let s = |v: &Option<String>| v.clone().unwrap_or_default();
        Typed {
            project: r.project.clone(),
            sample_code: r.sample_code.clone(),
            collected_on: s(&r.collected_on),
            collector: s(&r.collector),
            station: s(&r.station),
            latitude: num_text(r.latitude),
            longitude: num_text(r.longitude),
            coordinate_uncertainty_m: num_text(r.coordinate_uncertainty_m),
            setting: r
                .setting
                .map(|x| x.as_str().to_string())
                .unwrap_or_default(),
            lithology: s(&r.lithology),
            field_id: s(&r.field_id),
            notes: s(&r.notes),
            observations: observations_json(&r.observations),
            edited_by: String::new(),
            draft: String::new(),
        }
    }

    /// The author for the history, if given.
    fn author(&self) -> Option<String> {
        let a: String = self.edited_by.trim().chars().take(MAX_AUTHOR).collect();
        (!a.is_empty()).then_some(a)
    }

    /// The contract's input, and a message per form field that cannot be
    /// read at all (a coordinate or number that is not one, an unknown
    /// setting); such a field is left out of the input, so that the
    /// validation still looks at every other field.
    fn to_input(&self) -> (SampleInput, FieldMessages) {
        let mut errors = FieldMessages::new();
        let mut coordinate = |key: &str, raw: &str, axis: Axis| -> Option<f64> {
            if raw.trim().is_empty() {
                return None;
            }
            parse_coordinate(raw, axis)
                .map_err(|m| errors.insert(key.to_string(), m))
                .ok()
        };
        let latitude = coordinate("latitude", &self.latitude, Axis::Latitude);
        let longitude = coordinate("longitude", &self.longitude, Axis::Longitude);
        let mut number = |key: &str, raw: &str, example: &str| -> Option<f64> {
            let t = raw.trim();
            if t.is_empty() {
                return None;
            }
            match t.replace(',', ".").replace('−', "-").parse::<f64>() {
                Ok(v) if v.is_finite() => Some(v),
                _ => {
                    errors.insert(
                        key.to_string(),
                        format!("\"{t}\" is not a number; type a number such as {example}"),
                    );
                    None
                }
            }
        };
        let uncertainty = number(
            "coordinate_uncertainty_m",
            &self.coordinate_uncertainty_m,
            "10",
        );
        let setting = match self.setting.as_str() {
            "" => None,
            s => {
                let parsed = Setting::parse(s);
                if parsed.is_none() {
                    errors.insert(
                        "setting".to_string(),
                        format!(
                            "\"{s}\" is not a setting; choose one of {}",
                            Setting::allowed()
                        ),
                    );
                }
                parsed
            }
        };
        let observations = match self.observations.trim() {
            "" => None,
            json => match observations_from_json(json.as_bytes()) {
                Ok(o) => Some(o),
                Err(e) => {
                    let fe = e.field_error();
                    errors.insert(
                        "observations".to_string(),
                        format!(
                            "the carried-over observations could not be read ({}: {}); start the identification again",
                            fe.field, fe.message
                        ),
                    );
                    None
                }
            },
        };
        let opt = |s: &str| (!s.trim().is_empty()).then(|| s.to_string());
        // A coordinate that could not be read is not "missing": leave the
        // pair out, so that the other one is not asked for.
        let (latitude, longitude) =
            if errors.contains_key("latitude") || errors.contains_key("longitude") {
                (None, None)
            } else {
                (latitude, longitude)
            };
        let input = SampleInput {
            project: opt(&self.project),
            sample_code: opt(&self.sample_code),
            collected_on: opt(&self.collected_on),
            collector: opt(&self.collector),
            station: opt(&self.station),
            latitude,
            longitude,
            coordinate_uncertainty_m: uncertainty,
            setting,
            lithology: opt(&self.lithology),
            observations,
            field_id: opt(&self.field_id).filter(|f| f != "none"),
            notes: opt(&self.notes),
            edited_by: self.author(),
            ..Default::default()
        };
        (input, errors)
    }

    /// "read as −41.505000° (41°30′18.0″ S)" for each coordinate typed in
    /// a form that parses, so the person sees what was understood.
    fn readings(&self) -> FieldMessages {
        let mut out = FieldMessages::new();
        for (key, raw, axis, (p, n)) in [
            ("latitude", &self.latitude, Axis::Latitude, ('N', 'S')),
            ("longitude", &self.longitude, Axis::Longitude, ('E', 'W')),
        ] {
            if raw.trim().is_empty() {
                continue;
            }
            if let Ok(x) = parse_coordinate(raw, axis) {
                out.insert(
                    key.to_string(),
                    format!("read as {} ({})", precise_degrees(x), dms(x, p, n)),
                );
            }
        }
        out
    }
}

/// The form field that holds the value a [`FieldError`] names.
fn form_field(path: &str) -> String {
    if path.starts_with("observations") {
        "observations".to_string()
    } else {
        path.to_string()
    }
}

/// Reads and validates the whole form at once: the validated sample, or a
/// message beside every field that is wrong, the sample code's clash
/// with another record of the project included (checked even when other
/// fields are wrong, so one save shows everything to correct). `own` is
/// the record being edited, whose own code is no clash.
async fn validate(
    st: &AppState,
    typed: &Typed,
    own: Option<&SampleRecord>,
) -> PageResult<Result<ValidSample, FieldMessages>> {
    let (input, mut errors) = typed.to_input();
    let base = st.engine.base();
    let checked = input.check(|id| base.entry(id).is_some(), Some(st.config.today()));
    if let Err(all) = &checked {
        for e in all {
            // The reading's message (why a typed value is not a number or
            // coordinate) is the more telling one; keep it.
            errors
                .entry(form_field(&e.field))
                .or_insert_with(|| e.message.clone());
        }
    }
    if !errors.contains_key("project") && !errors.contains_key("sample_code") {
        let project = input.project.as_deref().map_or("default", str::trim);
        let project = if project.is_empty() {
            "default"
        } else {
            project
        };
        if db::project(&st.db, project).await?.is_none() {
            errors.insert(
                "project".to_string(),
                format!("there is no project {project}; choose one from the list"),
            );
        } else if let Some(code) = input.sample_code.as_deref().map(str::trim)
            && code_taken(st, project, code, own).await?
        {
            let next = suggest(st, project).await?;
            errors.insert("sample_code".to_string(), taken_message(next.as_ref()));
        }
    }
    Ok(match checked {
        Ok(v) if errors.is_empty() => Ok(v),
        _ => Err(errors),
    })
}

/// Whether another record of the project (deleted ones included: a code
/// stays reserved) already has this code.
async fn code_taken(
    st: &AppState,
    project: &str,
    code: &str,
    own: Option<&SampleRecord>,
) -> Result<bool, StoreError> {
    if own.is_some_and(|r| r.project == project && r.sample_code == code) {
        return Ok(false);
    }
    let similar = db::codes_with_prefix(&st.db, project, code).await?;
    Ok(similar.iter().any(|c| c == code))
}

/// One `<option>` of a select.
pub struct OptionView {
    /// Submitted value.
    pub value: String,
    /// Text shown.
    pub label: String,
    /// Whether it is the current choice.
    pub selected: bool,
}

fn project_options(projects: &[db::Project], current: &str) -> Vec<OptionView> {
    let mut out: Vec<OptionView> = projects
        .iter()
        .map(|p| OptionView {
            value: p.code.clone(),
            label: format!("{} — {}", p.code, p.name),
            selected: p.code == current,
        })
        .collect();
    // A typed code that is not a project stays visible, so the refusal
    // beside the field refers to something the person can see.
    if !current.is_empty() && !projects.iter().any(|p| p.code == current) {
        out.push(OptionView {
            value: current.to_string(),
            label: format!("{current} (not a project)"),
            selected: true,
        });
    }
    out
}

fn setting_options(current: &str) -> Vec<OptionView> {
    Setting::ALL
        .iter()
        .map(|s| OptionView {
            value: s.as_str().to_string(),
            label: s.label().to_string(),
            selected: s.as_str() == current,
        })
        .collect()
}

fn entry_options(st: &AppState, current: &str) -> Vec<OptionView> {
    st.engine
        .base()
        .entries
        .iter()
        .map(|e| OptionView {
            value: e.id.clone(),
            label: e.name.clone(),
            selected: e.id == current,
        })
        .collect()
}

fn entry_name(st: &AppState, id: &str) -> String {
    st.engine
        .base()
        .entry(id)
        .map_or_else(|| id.to_string(), |e| e.name.clone())
}

/// A stored UTC timestamp (`2026-12-04T01:05:00.000Z`) for people, in the
/// configured zone with its offset: `2026-12-04 14:05 +13:00`. Text that
/// is not a timestamp is shown as it is, marked UTC.
pub fn local_time(zone: &jiff::tz::TimeZone, ts: &str) -> String {
    match ts.parse::<jiff::Timestamp>() {
        Ok(t) => t
            .to_zoned_datetime(zone.clone())
            .strftime("%Y-%m-%d %H:%M %:z")
            .to_string(),
        Err(_) => {
            let t: String = ts.replace('T', " ").chars().take(16).collect();
            if t.is_empty() { t } else { format!("{t} UTC") }
        }
    }
}

/// [`local_time`] in the service's zone.
fn when(st: &AppState, ts: &str) -> String {
    local_time(&st.config.time_zone, ts)
}

fn degrees(x: f64) -> String {
    format!("{x:.5}°").replace('-', "−")
}

/// Six decimals (about 0.1 m), for what a typed coordinate was read as.
fn precise_degrees(x: f64) -> String {
    format!("{x:.6}°").replace('-', "−")
}

/// A position for people: decimal degrees, DMS and the uncertainty.
pub struct CoordsView {
    /// `−41.50120°, −20.30210°`.
    pub decimal: String,
    /// `41°30′04.3″ S, 20°18′07.6″ W`.
    pub dms: String,
    /// `± 10 m`, when recorded.
    pub uncertainty: Option<String>,
}

/// The coordinates in decimal degrees and in DMS, with the uncertainty.
fn coordinates(lat: Option<f64>, lon: Option<f64>, unc: Option<f64>) -> Option<CoordsView> {
    let (lat, lon) = (lat?, lon?);
    Some(CoordsView {
        decimal: format!("{}, {}", degrees(lat), degrees(lon)),
        dms: format!("{}, {}", dms(lat, 'N', 'S'), dms(lon, 'E', 'W')),
        uncertainty: unc.map(|u| format!("± {u} m")),
    })
}

/// The observations in words, property by property.
fn observed(o: &Observations) -> Vec<(&'static str, String)> {
    Property::ALL
        .iter()
        .filter_map(|&p| views::observed_text(o, p).map(|t| (p.label(), t)))
        .collect()
}

fn observed_line(o: &Observations) -> String {
    let words: Vec<String> = observed(o)
        .into_iter()
        .map(|(l, t)| format!("{l}: {t}"))
        .collect();
    if words.is_empty() {
        "none".to_string()
    } else {
        words.join("; ")
    }
}

/// A labelled value of a record, for the record page, the history's
/// differences and the side-by-side comparison.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldRow {
    /// Label.
    pub label: &'static str,
    /// Value for people; empty when not recorded.
    pub value: String,
}

/// Every field of a record, labelled, in form order.
fn record_rows(st: &AppState, r: &SampleRecord) -> Vec<FieldRow> {
    let t = |v: &Option<String>| v.clone().unwrap_or_default();
    vec![
        FieldRow {
            label: "Project",
            value: r.project.clone(),
        },
        FieldRow {
            label: "Sample code",
            value: r.sample_code.clone(),
        },
        FieldRow {
            label: "Collected on",
            value: t(&r.collected_on),
        },
        FieldRow {
            label: "Collector",
            value: t(&r.collector),
        },
        FieldRow {
            label: "Station",
            value: t(&r.station),
        },
        FieldRow {
            label: "Latitude",
            value: r.latitude.map(degrees).unwrap_or_default(),
        },
        FieldRow {
            label: "Longitude",
            value: r.longitude.map(degrees).unwrap_or_default(),
        },
        FieldRow {
            label: "Coordinate uncertainty",
            value: r
                .coordinate_uncertainty_m
                .map(|u| format!("{u} m"))
                .unwrap_or_default(),
        },
        FieldRow {
            label: "Setting",
            value: r.setting.map(|s| s.label().to_string()).unwrap_or_default(),
        },
        FieldRow {
            label: "Lithology",
            value: t(&r.lithology),
        },
        FieldRow {
            label: "Field identification",
            value: r
                .field_id
                .as_deref()
                .map_or_else(|| "not identified".to_string(), |id| entry_name(st, id)),
        },
        FieldRow {
            label: "Notes",
            value: t(&r.notes),
        },
        FieldRow {
            label: "Observations",
            value: observed_line(&r.observations),
        },
    ]
}

/// The same rows for what someone typed (the "yours" side of a conflict).
fn typed_rows(st: &AppState, t: &Typed) -> Vec<FieldRow> {
    let number = |raw: &str, unit: &str| {
        let s = raw.trim();
        match s.replace(',', ".").parse::<f64>() {
            Ok(x) => format!("{x}{unit}"),
            Err(_) => s.to_string(),
        }
    };
    let coordinate = |raw: &str, axis: Axis| match raw.trim() {
        "" => String::new(),
        s => parse_coordinate(s, axis).map_or_else(|_| s.to_string(), degrees),
    };
    let obs = match t.observations.trim() {
        "" => "none".to_string(),
        json => observations_from_json(json.as_bytes())
            .map_or_else(|_| json.to_string(), |o| observed_line(&o)),
    };
    vec![
        FieldRow {
            label: "Project",
            value: if t.project.is_empty() {
                "default".to_string()
            } else {
                t.project.clone()
            },
        },
        FieldRow {
            label: "Sample code",
            value: t.sample_code.clone(),
        },
        FieldRow {
            label: "Collected on",
            value: t.collected_on.clone(),
        },
        FieldRow {
            label: "Collector",
            value: t.collector.clone(),
        },
        FieldRow {
            label: "Station",
            value: t.station.clone(),
        },
        FieldRow {
            label: "Latitude",
            value: coordinate(&t.latitude, Axis::Latitude),
        },
        FieldRow {
            label: "Longitude",
            value: coordinate(&t.longitude, Axis::Longitude),
        },
        FieldRow {
            label: "Coordinate uncertainty",
            value: if t.coordinate_uncertainty_m.is_empty() {
                String::new()
            } else {
                number(&t.coordinate_uncertainty_m, " m")
            },
        },
        FieldRow {
            label: "Setting",
            value: Setting::parse(&t.setting)
                .map_or_else(|| t.setting.clone(), |s| s.label().to_string()),
        },
        FieldRow {
            label: "Lithology",
            value: t.lithology.clone(),
        },
        FieldRow {
            label: "Field identification",
            value: match t.field_id.as_str() {
                "" | "none" => "not identified".to_string(),
                id => entry_name(st, id),
            },
        },
        FieldRow {
            label: "Notes",
            value: t.notes.clone(),
        },
        FieldRow {
            label: "Observations",
            value: obs,
        },
    ]
}

// ---------------------------------------------------------------------------
// Sample codes from a project's scheme
// ---------------------------------------------------------------------------

/// A code scheme expanded for one year: the literal text before and after
/// the sequence number, and the sequence's width (`None` when the scheme
/// has no `{seq:N}`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Scheme {
    /// Text before the sequence number.
    pub prefix: String,
    /// Zero-padded width of the sequence number.
    pub width: Option<usize>,
    /// Text after it.
    pub suffix: String,
}

/// Expands `{year}` (four digits) and `{yy}` (two) and finds `{seq:N}`
/// (or `{seq}`, width 1). Anything else is literal text.
pub fn parse_scheme(scheme: &str, year: i32) -> Scheme {
    let mut out = Scheme {
        prefix: String::new(),
        width: None,
        suffix: String::new(),
    };
    let mut rest = scheme;
    while !rest.is_empty() {
        let (token, len) = if rest.starts_with("{year}") {
            (Some(format!("{year:04}")), "{year}".len())
        } else if rest.starts_with("{yy}") {
            (Some(format!("{:02}", year.rem_euclid(100))), "{yy}".len())
        } else if let Some(after) = rest.strip_prefix("{seq")
            && let Some(end) = after.find('}')
            && out.width.is_none()
        {
            let spec = &after[..end];
            let width = match spec.strip_prefix(':') {
                Some(n) => n.parse::<usize>().ok().filter(|n| (1..=12).contains(n)),
                None if spec.is_empty() => Some(1),
                None => None,
            };
            match width {
                Some(w) => {
                    out.width = Some(w);
                    rest = &after[end + 1..];
                    continue;
                }
                None => (None, 1),
            }
        } else {
            (None, rest.chars().next().map_or(1, char::len_utf8))
        };
        let text = token.unwrap_or_else(|| rest[..len].to_string());
        if out.width.is_some() {
            out.suffix.push_str(&text);
        } else {
            out.prefix.push_str(&text);
        }
        rest = &rest[len..];
    }
    out
}

/// The smallest sequence number above the largest used, formatted by the
/// scheme; `used` are the project's codes that start with the prefix.
pub fn next_code(s: &Scheme, used: &[String]) -> String {
    let Some(width) = s.width else {
        return s.prefix.clone();
    };
    let highest = used
        .iter()
        .filter_map(|c| c.strip_prefix(&s.prefix)?.strip_suffix(&s.suffix))
        .filter(|d| !d.is_empty() && d.bytes().all(|b| b.is_ascii_digit()))
        .filter_map(|d| d.parse::<u64>().ok())
        .max()
        .unwrap_or(0);
    format!(
        "{}{:0width$}{}",
        s.prefix,
        highest.saturating_add(1),
        s.suffix
    )
}

/// The next free code of a project, with its scheme; `None` when the
/// project does not exist.
async fn suggest(st: &AppState, project: &str) -> Result<Option<(String, String)>, StoreError> {
    let code = if project.trim().is_empty() {
        "default"
    } else {
        project.trim()
    };
    let Some(p) = db::project(&st.db, code).await? else {
        return Ok(None);
    };
    let scheme = parse_scheme(&p.code_scheme, i32::from(st.config.today().year()));
    let used = db::codes_with_prefix(&st.db, code, &scheme.prefix).await?;
    Ok(Some((p.code_scheme.clone(), next_code(&scheme, &used))))
}

// ---------------------------------------------------------------------------
// The sample form (new and edit share its fields)
// ---------------------------------------------------------------------------

/// What `sample_fields.html` needs: values, choices and messages.
pub struct FormView {
    /// Anti-forgery token.
    pub csrf: String,
    /// Where the form posts.
    pub action: String,
    /// The submit button's text.
    pub submit: String,
    /// The values as typed.
    pub v: Typed,
    /// Messages per form field.
    pub errors: FieldMessages,
    /// What each typed coordinate was read as, per field.
    pub readings: FieldMessages,
    /// Projects to choose from.
    pub projects: Vec<OptionView>,
    /// Settings to choose from.
    pub settings: Vec<OptionView>,
    /// Base entries for the field identification.
    pub entries: Vec<OptionView>,
    /// The next free code of the chosen project and the scheme it comes from.
    pub suggestion: Option<(String, String)>,
    /// The carried observations in words.
    pub observed: Vec<(&'static str, String)>,
    /// On edit: the revision the form started from.
    pub revision: Option<i64>,
    /// Whether this is the new-sample form (it offers the suggestion button).
    pub is_new: bool,
}

impl FormView {
    /// The message beside a field, if any.
    pub fn err(&self, field: &str) -> Option<&str> {
        self.errors.get(field).map(String::as_str)
    }

    /// What a typed coordinate was read as, when it was read and has no
    /// message.
    pub fn reading(&self, field: &str) -> Option<&str> {
        if self.errors.contains_key(field) {
            return None;
        }
        self.readings.get(field).map(String::as_str)
    }

    /// `aria-invalid` and `aria-describedby` for an input with a message.
    pub fn invalid(&self, field: &str) -> bool {
        self.errors.contains_key(field)
    }

    /// Messages of fields the form does not show beside an input.
    pub fn general(&self) -> Vec<&str> {
        const SHOWN: &[&str] = &[
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
            "edited_by",
        ];
        self.errors
            .iter()
            .filter(|(k, _)| !SHOWN.contains(&k.as_str()))
            .map(|(_, v)| v.as_str())
            .collect()
    }
}

struct FormSpec<'a> {
    action: String,
    submit: &'a str,
    revision: Option<i64>,
    is_new: bool,
}

async fn form_view(
    st: &AppState,
    csrf: &CsrfToken,
    spec: FormSpec<'_>,
    v: Typed,
    errors: FieldMessages,
) -> PageResult<FormView> {
    let projects = db::projects(&st.db).await?;
    let suggestion = suggest(st, &v.project).await?;
    let observed = match v.observations.trim() {
        "" => Vec::new(),
        json => observations_from_json(json.as_bytes())
            .map(|o| observed(&o))
            .unwrap_or_default(),
    };
    let current_project = if v.project.is_empty() {
        "default".to_string()
    } else {
        v.project.clone()
    };
    Ok(FormView {
        csrf: csrf.0.clone(),
        action: spec.action,
        submit: spec.submit.to_string(),
        projects: project_options(&projects, &current_project),
        settings: setting_options(&v.setting),
        entries: entry_options(st, &v.field_id),
        suggestion,
        observed,
        revision: spec.revision,
        is_new: spec.is_new,
        readings: v.readings(),
        v,
        errors,
    })
}

/// The new-sample page.
#[derive(Template, WebTemplate)]
#[template(path = "sample_new.html")]
pub struct NewPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// The form.
    pub form: FormView,
    /// Whether the observations come from an identification.
    pub from_draft: bool,
}

async fn new_page(
    st: &AppState,
    csrf: &CsrfToken,
    v: Typed,
    errors: FieldMessages,
) -> PageResult<NewPage> {
    let from_draft = !v.observations.trim().is_empty();
    let form = form_view(
        st,
        csrf,
        FormSpec {
            action: "/samples".to_string(),
            submit: "Save the sample",
            revision: None,
            is_new: true,
        },
        v,
        errors,
    )
    .await?;
    Ok(NewPage {
        title: "New sample",
        base_version: base_version(st),
        form,
        from_draft,
    })
}

fn query_value(raw: Option<&str>, key: &str) -> Option<String> {
    form_urlencoded::parse(raw.unwrap_or("").as_bytes())
        .find(|(k, v)| k == key && !v.trim().is_empty())
        .map(|(_, v)| v.trim().to_string())
}

/// `GET /samples/new[?project=..][&draft=<uuid>]`: the form, with the next
/// free code; a draft's observations are carried over and its leading
/// candidate preselected as the field identification.
async fn new_form(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    RawQuery(raw): RawQuery,
) -> PageResult<NewPage> {
    let mut v = Typed {
        project: query_value(raw.as_deref(), "project").unwrap_or_else(|| "default".into()),
        // The date where the person is: the browser sends no zone, so it
        // is the service's configured one (`--time-zone`).
        collected_on: st.config.today().strftime("%Y-%m-%d").to_string(),
        ..Default::default()
    };
    if let Some(draft) = query_value(raw.as_deref(), "draft") {
        from_draft(&st, &draft, &mut v).await?;
    }
    if let Some((_, code)) = suggest(&st, &v.project).await? {
        v.sample_code = code;
    }
    new_page(&st, &csrf, v, FieldMessages::new()).await
}

fn taken_message(next: Option<&(String, String)>) -> String {
    match next {
        Some((_, code)) => {
            format!("that code is taken in this project; the next free one is {code}")
        }
        None => "that code is taken in this project; choose another".to_string(),
    }
}

/// `POST /samples`: validate, identify, create, 303 to the record. The
/// "suggest a code" button re-renders the form with the chosen project's
/// next free code and saves nothing.
async fn create(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let mut typed = Typed::from_form(&form);
    if form.get("then") == Some("suggest") {
        if let Some((_, code)) = suggest(&st, &typed.project).await? {
            typed.sample_code = code;
        }
        return Ok(new_page(&st, &csrf, typed, FieldMessages::new())
            .await?
            .into_response());
    }
    let refuse = |page: NewPage| (StatusCode::UNPROCESSABLE_ENTITY, page).into_response();
    let v = match validate(&st, &typed, None).await? {
        Ok(v) => v,
        Err(errors) => return Ok(refuse(new_page(&st, &csrf, typed, errors).await?)),
    };
    let ident = st.engine.identify(&v.observations);
    let author = typed.author();
    let saved = db::create(
        &st.db,
        NewState {
            sample: &v,
            identification: &ident,
            author: author.as_deref(),
        },
        None,
    )
    .await;
    match saved {
        Ok(rec) => {
            saved_from_draft(&st, &typed, &rec.id).await?;
            Ok(Redirect::to(&format!("/samples/{}", rec.id)).into_response())
        }
        Err(WriteError::CodeTaken { project, .. }) => {
            let next = suggest(&st, &project).await?;
            let errors =
                FieldMessages::from([("sample_code".to_string(), taken_message(next.as_ref()))]);
            Ok(refuse(new_page(&st, &csrf, typed, errors).await?))
        }
        Err(WriteError::UnknownProject(p)) => {
            let errors = FieldMessages::from([(
                "project".to_string(),
                format!("there is no project {p}; choose one from the list"),
            )]);
            Ok(refuse(new_page(&st, &csrf, typed, errors).await?))
        }
        Err(e) => Err(write_page_error(e)),
    }
}

/// Records on the draft the form came from (if any) that it was saved as
/// this sample, for the drafts list. A stale or unknown draft id is ignored:
/// the sample is saved either way.
async fn saved_from_draft(st: &AppState, typed: &Typed, sample_id: &str) -> PageResult<()> {
    let draft = typed.draft.trim();
    if uuid::Uuid::try_parse(draft).is_ok() {
        drafts::mark_saved(&st.db, draft, sample_id).await?;
    }
    Ok(())
}

/// Turns the write refusals a page does not handle itself into pages.
fn write_page_error(e: WriteError) -> PageError {
    match e {
        WriteError::NotFound(id) => not_found(&id),
        WriteError::Store(e) => PageError::from(e),
        other => PageError::Internal(other.to_string()),
    }
}

fn not_found(id: &str) -> PageError {
    PageError::NotFound(format!(
        "There is no sample {id}. The sample log is at /samples."
    ))
}

async fn load(st: &AppState, id: &str) -> PageResult<SampleRecord> {
    if uuid::Uuid::try_parse(id).is_err() {
        return Err(not_found(id));
    }
    db::get(&st.db, id).await?.ok_or_else(|| not_found(id))
}

fn deleted_page(st: &AppState, rec: &SampleRecord) -> Response {
    super::pages::error_page(
        StatusCode::CONFLICT,
        "This sample is deleted",
        format!(
            "Sample {} was deleted on {}, so it cannot be edited. Restore it first from its page, /samples/{}.",
            rec.sample_code,
            rec.deleted_at
                .as_deref()
                .map_or_else(String::new, |t| when(st, t)),
            rec.id
        ),
    )
}

// ---------------------------------------------------------------------------
// The record page
// ---------------------------------------------------------------------------

/// One field changed between two revisions.
pub struct ChangeView {
    /// Field label.
    pub label: &'static str,
    /// Value before (empty when it was not recorded).
    pub old: String,
    /// Value after.
    pub new: String,
}

/// One revision of a record.
pub struct RevisionView {
    /// Revision number.
    pub revision: i64,
    /// When, for people.
    pub when: String,
    /// Who, as given.
    pub who: String,
    /// What kind of change, in words.
    pub action: &'static str,
    /// Fields that differ from the revision before.
    pub changes: Vec<ChangeView>,
}

fn action_words(a: Action) -> &'static str {
    match a {
        Action::Create => "created",
        Action::Update => "edited",
        Action::Delete => "deleted",
        Action::Restore => "restored",
        Action::Import => "imported",
    }
}

/// The fields that differ between two states, old → new.
fn changes(before: &[FieldRow], after: &[FieldRow]) -> Vec<ChangeView> {
    before
        .iter()
        .zip(after)
        .filter(|(a, b)| a.value != b.value)
        .map(|(a, b)| ChangeView {
            label: b.label,
            old: a.value.clone(),
            new: b.value.clone(),
        })
        .collect()
}

fn history_views(st: &AppState, revs: &[db::Revision]) -> Vec<RevisionView> {
    let rows: Vec<Vec<FieldRow>> = revs.iter().map(|r| record_rows(st, &r.record)).collect();
    let mut out: Vec<RevisionView> = revs
        .iter()
        .enumerate()
        .map(|(i, r)| RevisionView {
            revision: r.revision,
            when: when(st, &r.recorded_at),
            who: r.author.clone().unwrap_or_default(),
            action: action_words(r.action),
            changes: match i.checked_sub(1) {
                Some(prev) => changes(&rows[prev], &rows[i]),
                None => Vec::new(),
            },
        })
        .collect();
    out.reverse();
    out
}

/// The stored identification, as the record page shows it.
pub struct SnapshotView {
    /// Leading candidates with bars and markers.
    pub leaders: Vec<LeaderView>,
    /// The outside-the-base entry.
    pub outside: LeaderView,
    /// The base version it was made with.
    pub base_version: String,
    /// Whether the current base is another version.
    pub outdated: bool,
    /// Whether anything had been observed.
    pub observed_anything: bool,
}

fn snapshot(st: &AppState, id: &Identification, observed_anything: bool) -> SnapshotView {
    SnapshotView {
        leaders: views::leaders(id, LEADERS),
        outside: views::outside(id),
        base_version: id.base_version.clone(),
        outdated: id.base_version != st.engine.base().version,
        observed_anything,
    }
}

/// The record page.
#[derive(Template, WebTemplate)]
#[template(path = "sample_record.html")]
pub struct RecordPage {
    /// Page title.
    pub title: String,
    /// Base version for the footer.
    pub base_version: String,
    /// Anti-forgery token (edit, delete, restore forms).
    pub csrf: String,
    /// The record's UUID.
    pub id: String,
    /// Sample code.
    pub code: String,
    /// Project code.
    pub project: String,
    /// Revision number.
    pub revision: i64,
    /// Every field, labelled.
    pub rows: Vec<FieldRow>,
    /// Coordinates in decimal degrees and DMS with the uncertainty.
    pub coordinates: Option<CoordsView>,
    /// Field identification: (entry id, name).
    pub field_id: Option<(String, String)>,
    /// The stored identification.
    pub snap: SnapshotView,
    /// The observations in words.
    pub observed: Vec<(&'static str, String)>,
    /// Cautions of the stored identification.
    pub cautions: Vec<CautionView>,
    /// When deleted, for people.
    pub deleted_on: Option<String>,
    /// Created and last changed, for people.
    pub created: String,
    /// Last change.
    pub updated: String,
    /// Every revision, newest first.
    pub revisions: Vec<RevisionView>,
}

/// `GET /samples/{id}`.
async fn record(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
) -> PageResult<RecordPage> {
    let rec = load(&st, &id).await?;
    let revs = db::revisions(&st.db, &id).await?;
    Ok(RecordPage {
        title: format!("Sample {}", rec.sample_code),
        base_version: base_version(&st),
        csrf: csrf.0.clone(),
        code: rec.sample_code.clone(),
        project: rec.project.clone(),
        revision: rec.revision,
        rows: record_rows(&st, &rec),
        coordinates: coordinates(rec.latitude, rec.longitude, rec.coordinate_uncertainty_m),
        field_id: rec
            .field_id
            .as_deref()
            .map(|f| (f.to_string(), entry_name(&st, f))),
        snap: snapshot(&st, &rec.identification, !rec.observations.is_empty()),
        observed: observed(&rec.observations),
        cautions: views::cautions(&rec.identification),
        deleted_on: rec.deleted_at.as_deref().map(|t| when(&st, t)),
        created: when(&st, &rec.created_at),
        updated: when(&st, &rec.updated_at),
        revisions: history_views(&st, &revs),
        id: rec.id,
    })
}

// ---------------------------------------------------------------------------
// Edit, stale edits, delete and restore
// ---------------------------------------------------------------------------

/// The edit page.
#[derive(Template, WebTemplate)]
#[template(path = "sample_edit.html")]
pub struct EditPage {
    /// Page title.
    pub title: String,
    /// Base version for the footer.
    pub base_version: String,
    /// The record's UUID.
    pub id: String,
    /// The form.
    pub form: FormView,
    /// Whether the observations come from a re-examination just made.
    pub from_draft: bool,
}

async fn edit_page(
    st: &AppState,
    csrf: &CsrfToken,
    rec: &SampleRecord,
    revision: i64,
    v: Typed,
    errors: FieldMessages,
) -> PageResult<EditPage> {
    let form = form_view(
        st,
        csrf,
        FormSpec {
            action: format!("/samples/{}/edit", rec.id),
            submit: "Save the changes",
            revision: Some(revision),
            is_new: false,
        },
        v,
        errors,
    )
    .await?;
    Ok(EditPage {
        title: format!("Edit {}", rec.sample_code),
        base_version: base_version(st),
        id: rec.id.clone(),
        form,
        from_draft: false,
    })
}

/// Puts a draft's observations into a form: its observations, its
/// setting when it recorded one, and its leading candidate as the field
/// identification.
async fn from_draft(st: &AppState, draft: &str, v: &mut Typed) -> PageResult<()> {
    let missing = || {
        PageError::NotFound(format!(
            "There is no identification {draft} to take the observations from: it may have been discarded. Unfinished identifications are listed at /identify/drafts."
        ))
    };
    if uuid::Uuid::try_parse(draft).is_err() {
        return Err(missing());
    }
    let d = drafts::get(&st.db, draft).await?.ok_or_else(missing)?;
    let id = st.engine.identify(&d.observations);
    v.field_id = if d.observations.is_empty() {
        String::new()
    } else {
        id.candidates
            .first()
            .map(|c| c.id.to_string())
            .unwrap_or_default()
    };
    if let Some(s) = d.observations.setting {
        v.setting = s.as_str().to_string();
    }
    v.draft = d.id.clone();
    v.observations = if d.observations.is_empty() {
        String::new()
    } else {
        observations_json(&d.observations)
    };
    Ok(())
}

/// `GET /samples/{id}/edit[?draft=<uuid>]`: the form with the record's
/// values; with a draft (the sample tested again), its observations and
/// leading candidate in place of the saved ones.
async fn edit_form(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
    RawQuery(raw): RawQuery,
) -> PageResult<Response> {
    let rec = load(&st, &id).await?;
    if rec.deleted {
        return Ok(deleted_page(&st, &rec));
    }
    let mut v = Typed::from_record(&rec);
    let draft = query_value(raw.as_deref(), "draft");
    if let Some(d) = &draft {
        from_draft(&st, d, &mut v).await?;
    }
    let mut page = edit_page(&st, &csrf, &rec, rec.revision, v, FieldMessages::new()).await?;
    page.from_draft = draft.is_some();
    Ok(page.into_response())
}

/// `POST /samples/{id}/reexamine`: starts the questions again from the
/// sample's recorded answers; the results offer to put the new ones into
/// the sample (through its edit form, as a new revision).
async fn reexamine(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let rec = load(&st, &id).await?;
    if rec.deleted {
        return Ok(deleted_page(&st, &rec));
    }
    let d = drafts::create_for_sample(&st.db, &rec.id, &rec.observations).await?;
    Ok(Redirect::to(&format!("/identify/{}", d.id)).into_response())
}

/// The 409 page: someone else saved the record after this form was opened.
#[derive(Template, WebTemplate)]
#[template(path = "sample_stale.html")]
pub struct StalePage {
    /// Page title.
    pub title: String,
    /// Base version for the footer.
    pub base_version: String,
    /// The record's UUID.
    pub id: String,
    /// The revision the form started from.
    pub yours_from: i64,
    /// The current revision.
    pub theirs_revision: i64,
    /// When it was saved, for people.
    pub theirs_when: String,
    /// (label, theirs, yours, differs), in form order.
    pub rows: Vec<(&'static str, String, String, bool)>,
    /// The form to save yours on top of the current revision.
    pub form: FormView,
}

/// `POST /samples/{id}/edit`: a new revision when the form's `revision` is
/// the current one; 409 with both versions when it is not.
async fn edit(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    let form = FormData::parse(&body);
    csrf::verify(&csrf, form.get(csrf::FIELD))?;
    let rec = load(&st, &id).await?;
    if rec.deleted {
        return Ok(deleted_page(&st, &rec));
    }
    let typed = Typed::from_form(&form);
    let refuse = |page: EditPage| (StatusCode::UNPROCESSABLE_ENTITY, page).into_response();
    let Some(expected) = form.get("revision").and_then(|r| r.parse::<i64>().ok()) else {
        let errors = FieldMessages::from([(
            "revision".to_string(),
            "the form did not say which revision it started from; the values are kept below, check them and save again"
                .to_string(),
        )]);
        return Ok(refuse(
            edit_page(&st, &csrf, &rec, rec.revision, typed, errors).await?,
        ));
    };
    let v = match validate(&st, &typed, Some(&rec)).await? {
        Ok(v) => v,
        Err(errors) => {
            return Ok(refuse(
                edit_page(&st, &csrf, &rec, expected, typed, errors).await?,
            ));
        }
    };
    let ident = st.engine.identify(&v.observations);
    let author = typed.author();
    let saved = db::update(
        &st.db,
        &id,
        expected,
        NewState {
            sample: &v,
            identification: &ident,
            author: author.as_deref(),
        },
    )
    .await;
    match saved {
        Ok(rec) => {
            saved_from_draft(&st, &typed, &rec.id).await?;
            Ok(Redirect::to(&format!("/samples/{}", rec.id)).into_response())
        }
        Err(WriteError::Stale { current, .. }) => {
            let page = stale_page(&st, &csrf, &current, expected, typed).await?;
            Ok((StatusCode::CONFLICT, page).into_response())
        }
        Err(WriteError::CodeTaken { project, .. }) => {
            let next = suggest(&st, &project).await?;
            let errors =
                FieldMessages::from([("sample_code".to_string(), taken_message(next.as_ref()))]);
            Ok(refuse(
                edit_page(&st, &csrf, &rec, expected, typed, errors).await?,
            ))
        }
        Err(WriteError::UnknownProject(p)) => {
            let errors = FieldMessages::from([(
                "project".to_string(),
                format!("there is no project {p}; choose one from the list"),
            )]);
            Ok(refuse(
                edit_page(&st, &csrf, &rec, expected, typed, errors).await?,
            ))
        }
        Err(WriteError::Deleted(_)) => Ok(deleted_page(&st, &rec)),
        Err(e) => Err(write_page_error(e)),
    }
}

async fn stale_page(
    st: &AppState,
    csrf: &CsrfToken,
    current: &SampleRecord,
    yours_from: i64,
    yours: Typed,
) -> PageResult<StalePage> {
    let theirs = record_rows(st, current);
    let mine = typed_rows(st, &yours);
    let rows = theirs
        .into_iter()
        .zip(mine)
        .map(|(t, y)| {
            let differs = t.value != y.value;
            (t.label, t.value, y.value, differs)
        })
        .collect();
    let form = form_view(
        st,
        csrf,
        FormSpec {
            action: format!("/samples/{}/edit", current.id),
            submit: "Save my version on top of theirs",
            revision: Some(current.revision),
            is_new: false,
        },
        yours,
        FieldMessages::new(),
    )
    .await?;
    Ok(StalePage {
        title: format!("{} was changed meanwhile", current.sample_code),
        base_version: base_version(st),
        id: current.id.clone(),
        yours_from,
        theirs_revision: current.revision,
        theirs_when: when(st, &current.updated_at),
        rows,
        form,
    })
}

async fn tombstone(
    st: &AppState,
    csrf: &CsrfToken,
    id: &str,
    body: &[u8],
    delete: bool,
) -> PageResult<Response> {
    let form = FormData::parse(body);
    csrf::verify(csrf, form.get(csrf::FIELD))?;
    if uuid::Uuid::try_parse(id).is_err() {
        return Err(not_found(id));
    }
    let author = Typed::from_form(&form).author();
    let done = if delete {
        db::delete(&st.db, id, author.as_deref()).await
    } else {
        db::restore(&st.db, id, author.as_deref()).await
    };
    match done {
        Ok(rec) => Ok(Redirect::to(&format!("/samples/{}", rec.id)).into_response()),
        Err(e) => Err(write_page_error(e)),
    }
}

/// `POST /samples/{id}/delete`: a restorable tombstone.
async fn remove(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    tombstone(&st, &csrf, &id, &body, true).await
}

/// `POST /samples/{id}/restore`.
async fn restore(
    State(st): State<AppState>,
    Extension(csrf): Extension<CsrfToken>,
    Path(id): Path<String>,
    body: Bytes,
) -> PageResult<Response> {
    tombstone(&st, &csrf, &id, &body, false).await
}

// ---------------------------------------------------------------------------
// The sample log page
// ---------------------------------------------------------------------------

/// The log's filter form as typed.
#[derive(Clone, Debug, Default)]
pub struct FilterTyped {
    /// Project code.
    pub project: String,
    /// Entry id, `none`, or empty for any.
    pub field_id: String,
    /// Collector.
    pub collector: String,
    /// Setting.
    pub setting: String,
    /// From date.
    pub from: String,
    /// To date.
    pub to: String,
    /// Free text.
    pub q: String,
}

impl FilterTyped {
    fn from_query(raw: Option<&str>) -> FilterTyped {
        let get = |k: &str| query_value(raw, k).unwrap_or_default();
        FilterTyped {
            project: get("project"),
            field_id: get("field_id"),
            collector: get("collector"),
            setting: get("setting"),
            from: get("from"),
            to: get("to"),
            q: get("q"),
        }
    }
}

/// The query string of a filter (for the next page and the exports).
fn filter_query(f: &Filter) -> String {
    let mut s = form_urlencoded::Serializer::new(String::new());
    for (k, v) in [
        ("project", f.project.clone()),
        ("field_id", f.field_id.clone()),
        ("collector", f.collector.clone()),
        ("setting", f.setting.map(|s| s.as_str().to_string())),
        ("from", f.from.clone()),
        ("to", f.to.clone()),
        ("q", f.q.clone()),
    ] {
        if let Some(v) = v {
            s.append_pair(k, &v);
        }
    }
    s.finish()
}

/// A row of the log.
pub struct SampleLine {
    /// UUID.
    pub id: String,
    /// Sample code.
    pub code: String,
    /// Project.
    pub project: String,
    /// Date collected.
    pub date: String,
    /// Collector.
    pub collector: String,
    /// Station.
    pub station: String,
    /// Field identification name, or "not identified".
    pub field_name: String,
    /// The stored identification's leader and its probability.
    pub leader: String,
}

fn line(st: &AppState, r: &db::SampleRecord<db::Leader>) -> SampleLine {
    let t = |v: &Option<String>| v.clone().unwrap_or_default();
    SampleLine {
        id: r.id.clone(),
        code: r.sample_code.clone(),
        project: r.project.clone(),
        date: t(&r.collected_on),
        collector: t(&r.collector),
        station: t(&r.station),
        field_name: r
            .field_id
            .as_deref()
            .map_or_else(|| "not identified".to_string(), |f| entry_name(st, f)),
        leader: r
            .identification
            .0
            .as_ref()
            .filter(|_| !r.observations.is_empty())
            .map_or_else(
                || "nothing observed".to_string(),
                |c| format!("{} {}", c.name, views::percent(c.probability)),
            ),
    }
}

/// The sample log page (`GET /samples`).
#[derive(Template, WebTemplate)]
#[template(path = "samples.html")]
pub struct LogPage {
    /// Page title.
    pub title: &'static str,
    /// Base version for the footer.
    pub base_version: String,
    /// The filters as typed.
    pub f: FilterTyped,
    /// Messages per filter field.
    pub errors: FieldMessages,
    /// Projects for the select.
    pub projects: Vec<OptionView>,
    /// Entries for the identification select.
    pub entries: Vec<OptionView>,
    /// Settings for the select.
    pub settings: Vec<OptionView>,
    /// The rows of this page.
    pub rows: Vec<SampleLine>,
    /// Link to the following page.
    pub next_href: Option<String>,
    /// Whether this is a later page (offers "back to the newest").
    pub later_page: bool,
    /// The filter query, for the export links and the first page.
    pub query: String,
    /// Whether any filter is set.
    pub filtered: bool,
}

impl LogPage {
    /// The message beside a filter field, if any.
    pub fn err(&self, field: &str) -> Option<&str> {
        self.errors.get(field).map(String::as_str)
    }

    /// Messages of parameters the form does not show (limit, cursor,
    /// unknown keys).
    pub fn general(&self) -> Vec<&str> {
        const SHOWN: &[&str] = &[
            "project",
            "field_id",
            "collector",
            "setting",
            "from",
            "to",
            "q",
        ];
        self.errors
            .iter()
            .filter(|(k, _)| !SHOWN.contains(&k.as_str()))
            .map(|(_, v)| v.as_str())
            .collect()
    }
}

/// `GET /samples?project=&field_id=&collector=&setting=&from=&to=&q=&limit=&cursor=`:
/// newest first, one keyset page at a time; a bad filter is a 422 page with
/// the message beside the field.
async fn log_page(State(st): State<AppState>, RawQuery(raw): RawQuery) -> PageResult<Response> {
    let f = FilterTyped::from_query(raw.as_deref());
    let parsed = parse_query(raw.as_deref()).and_then(|q| match (&q.filter.from, &q.filter.to) {
        (Some(a), Some(b)) if a > b => Err(FieldError::new(
            "to",
            format!("the end date {b} is before the start date {a}"),
        )),
        _ => Ok(q),
    });
    let projects = db::projects(&st.db).await?;
    let mut page = LogPage {
        title: "Sample log",
        base_version: base_version(&st),
        projects: project_options(&projects, &f.project),
        entries: entry_options(&st, &f.field_id),
        settings: setting_options(&f.setting),
        f,
        errors: FieldMessages::new(),
        rows: Vec::new(),
        next_href: None,
        later_page: false,
        query: String::new(),
        filtered: false,
    };
    let q = match parsed {
        Ok(q) => q,
        Err(e) => {
            page.errors.insert(e.field, e.message);
            return Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
        }
    };
    // A line shows only the stored leader: the rest of each snapshot is
    // skipped, not read.
    let list = db::list_as::<db::Leader>(&st.db, &q.filter, q.limit, q.cursor).await?;
    page.query = filter_query(&q.filter);
    page.filtered = q.filter != Filter::default();
    page.later_page = q.cursor.is_some();
    page.next_href = list.next_cursor.map(|c| {
        let mut s = form_urlencoded::Serializer::new(page.query.clone());
        if q.limit != DEFAULT_LIMIT {
            s.append_pair("limit", &q.limit.to_string());
        }
        s.append_pair("cursor", &c);
        format!("/samples?{}", s.finish())
    });
    page.rows = list.samples.iter().map(|r| line(&st, r)).collect();
    Ok(page.into_response())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn schemes_expand_the_year_and_find_the_sequence() {
        assert_eq!(
            parse_scheme("DM-{yy}-{seq:4}", 2026),
            Scheme {
                prefix: "DM-26-".into(),
                width: Some(4),
                suffix: String::new()
            }
        );
        assert_eq!(
            parse_scheme("{year}/{seq:3}a", 2026),
            Scheme {
                prefix: "2026/".into(),
                width: Some(3),
                suffix: "a".into()
            }
        );
        let plain = parse_scheme("fixed{seq:x}", 2026);
        assert_eq!(plain.width, None);
        assert_eq!(plain.prefix, "fixed{seq:x}");
    }

    #[test]
    fn the_next_code_is_one_above_the_highest_used() {
        let s = parse_scheme("S-{seq:4}", 2026);
        assert_eq!(next_code(&s, &[]), "S-0001");
        let used = ["S-0001", "S-0007", "S-0003", "S-00x9", "S-12345b"].map(String::from);
        assert_eq!(next_code(&s, &used), "S-0008");
        assert_eq!(next_code(&s, &["S-9999".to_string()]), "S-10000");
    }

    #[test]
    fn typed_numbers_that_are_not_numbers_are_named_by_field() {
        let t = Typed {
            sample_code: "X-1".into(),
            latitude: "north-ish".into(),
            longitude: "12,5".into(),
            ..Default::default()
        };
        let (input, e) = t.to_input();
        assert!(e.contains_key("latitude"));
        assert!(!e.contains_key("longitude"), "a decimal comma is read");
        assert_eq!(
            (input.latitude, input.longitude),
            (None, None),
            "an unreadable coordinate leaves the pair out, so the other is not reported missing"
        );
        assert_eq!(
            input.sample_code.as_deref(),
            Some("X-1"),
            "the rest is still read"
        );
    }

    #[test]
    fn stored_times_are_shown_in_the_zone_with_their_offset() {
        // Asia/Kolkata is UTC+05:30 all year; Pacific/Auckland is +13:00
        // in December (daylight time) and +12:00 in July (IANA rules).
        let zone = |n: &str| jiff::tz::TimeZone::get(n).expect("zone");
        assert_eq!(
            local_time(&zone("Pacific/Auckland"), "2026-12-04T01:05:00.000Z"),
            "2026-12-04 14:05 +13:00"
        );
        assert_eq!(
            local_time(&zone("Pacific/Auckland"), "2026-07-04T01:05:00.000Z"),
            "2026-07-04 13:05 +12:00"
        );
        assert_eq!(
            local_time(&zone("Asia/Kolkata"), "2026-12-04T20:00:00Z"),
            "2026-12-05 01:30 +05:30"
        );
        assert_eq!(local_time(&zone("UTC"), "garbled"), "garbled UTC");
    }
}
