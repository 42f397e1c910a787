//! The sample log's JSON API and the exports, per the contract's "Sample
//! records" section.

use axum::body::{Body, Bytes};
use axum::extract::rejection::BytesRejection;
use axum::extract::{DefaultBodyLimit, Path, RawQuery, State};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use axum::routing::{get, post};
use axum::{Json, Router};
use serde_json::json;

use super::AppState;
use super::api::{BODY_LIMIT, body_bytes, require_json};
use super::error::{ApiError, Result};
use crate::base::vocab::{Setting, Vocab};
use crate::engine::FieldError;
use crate::engine::input::{describe_observation_field, object_from_json};
use crate::samples::{SampleInput, valid_iso_date};
use crate::store::samples::{self as db, Filter, NewState, SampleRecord, WriteError};

/// Default and largest page size of the list.
pub const DEFAULT_LIMIT: i64 = 50;
/// Largest page size of the list.
pub const MAX_LIMIT: i64 = 500;
/// Rows fetched per round trip while exporting.
const EXPORT_BATCH: i64 = 1000;

/// Routes of the sample API and the exports.
pub fn router() -> Router<AppState> {
    Router::new()
        .route(
            "/api/v1/samples",
            post(create)
                .get(list)
                .layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
        .route(
            "/api/v1/samples/{id}",
            get(read)
                .put(replace)
                .delete(remove)
                .layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
        .route("/api/v1/samples/{id}/revisions", get(revisions))
        .route("/api/v1/samples/{id}/restore", post(restore))
        .route("/export/samples.csv", get(export_csv))
        .route("/export/samples.geojson", get(export_geojson))
}

/// Plain words on what a sample field allows, by path shape.
pub fn describe_sample_field(shape: &str) -> String {
    if let Some(rest) = shape.strip_prefix("observations.") {
        return describe_observation_field(rest);
    }
    match shape {
        "" => "an object with sample_code (required) and any of project, collected_on, collector, station, latitude, \
               longitude, coordinate_uncertainty_m, setting, lithology, observations, field_id, notes, edited_by (and revision on update, \
               where the fields a GET returns may also be sent back unchanged)"
            .to_string(),
        "project" => "a project code: 1 to 16 lower-case letters, digits, - or _".to_string(),
        "sample_code" | "collector" | "station" | "lithology" | "notes" | "field_id" | "edited_by" => "text".to_string(),
        "collected_on" => "an ISO 8601 date, YYYY-MM-DD".to_string(),
        "latitude" => "WGS 84 decimal degrees from -90 to 90".to_string(),
        "longitude" => "WGS 84 decimal degrees from -180 to 180".to_string(),
        "coordinate_uncertainty_m" => "a distance in metres greater than 0".to_string(),
        "setting" => format!("one of {}", Setting::allowed()),
        "observations" => describe_observation_field(""),
        "revision" => "the whole number of the revision you started from".to_string(),
        _ => "a field of the sample record (see docs/api.md or GET /api/v1/openapi.json)".to_string(),
    }
}

fn parse_input(bytes: &[u8]) -> Result<(SampleInput, Option<String>)> {
    let input: SampleInput = object_from_json(bytes, describe_sample_field)?;
    let author = input
        .edited_by
        .as_deref()
        .map(|s| s.trim().chars().take(200).collect::<String>())
        .filter(|s| !s.is_empty());
    Ok((input, author))
}

/// The fields a GET returns that the service sets itself, as the input
/// holds them.
fn read_only(input: &SampleInput) -> [(&'static str, Option<&serde_json::Value>); 6] {
    [
        ("id", input.id.as_ref()),
        ("created_at", input.created_at.as_ref()),
        ("updated_at", input.updated_at.as_ref()),
        ("identification", input.identification.as_ref()),
        ("base_version", input.base_version.as_ref()),
        ("deleted", input.deleted.as_ref()),
    ]
}

/// A create takes only the fields it stores: the ones the service sets
/// (its id among them) are refused by name.
fn refuse_service_fields(input: &SampleInput) -> Result<()> {
    if let Some((name, _)) = read_only(input).into_iter().find(|(_, v)| v.is_some()) {
        let why = match name {
            "id" => {
                "the service assigns every new record its id (a UUID that never changes) and returns it in the response"
            }
            "identification" | "base_version" => {
                "the service computes the identification from observations when the record is saved"
            }
            "deleted" => "a new record is never deleted; DELETE /api/v1/samples/{id} deletes one",
            _ => "the service sets the record's times itself",
        };
        return Err(ApiError::Invalid(FieldError::new(
            name,
            format!("\"{name}\" cannot be given when creating a record: {why}; leave it out"),
        )));
    }
    if input.revision.is_some() {
        return Err(ApiError::Invalid(FieldError::new(
            "revision",
            "\"revision\" cannot be given when creating a record: a new record is revision 1; leave it out",
        )));
    }
    Ok(())
}

/// A whole-record update may carry the fields a GET returned: each is
/// accepted when it equals the stored record's and refused by name when it
/// differs (the service sets them; a changed one would be silently lost).
fn same_service_fields(input: &SampleInput, stored: &SampleRecord) -> Result<()> {
    let stored = serde_json::to_value(stored).map_err(|e| ApiError::Internal(e.to_string()))?;
    for (name, given) in read_only(input) {
        let Some(given) = given else { continue };
        let current = stored.get(name).unwrap_or(&serde_json::Value::Null);
        if given != current {
            let shown = match current {
                serde_json::Value::String(s) => format!("\"{s}\""),
                serde_json::Value::Object(_) => "the stored one".to_string(),
                v => v.to_string(),
            };
            return Err(ApiError::Invalid(FieldError::new(
                name,
                format!(
                    "\"{name}\" is set by the service and cannot be changed; it differs from the stored record's ({shown}). Send it back as GET returned it, or leave it out"
                ),
            )));
        }
    }
    Ok(())
}

fn not_found(id: &str) -> ApiError {
    ApiError::NotFound(FieldError::new("id", format!("there is no sample {id}")))
}

fn write_error(e: WriteError) -> Response {
    match e {
        WriteError::CodeTaken { project, code } => ApiError::Conflict(FieldError::new(
            "sample_code",
            format!("the sample code {code} is already used in project {project}; choose another (GET /api/v1/samples?project={project} lists the codes in use)"),
        ))
        .into_response(),
        WriteError::UnknownProject(p) => ApiError::Invalid(FieldError::new(
            "project",
            format!("there is no project {p}; create it first or leave project out for the default project"),
        ))
        .into_response(),
        WriteError::NotFound(id) => not_found(&id).into_response(),
        WriteError::Deleted(id) => ApiError::Conflict(FieldError::new(
            "id",
            format!("sample {id} is deleted; restore it first (POST /api/v1/samples/{id}/restore)"),
        ))
        .into_response(),
        WriteError::Stale { expected, current } => (
            StatusCode::CONFLICT,
            Json(json!({
                "error": {
                    "field": "revision",
                    "message": format!(
                        "you edited revision {expected}, but the record is now at revision {}: someone else changed it. \
                         Nothing was overwritten; compare with the current record below and send your change again with revision {}.",
                        current.revision, current.revision
                    ),
                },
                "current": current,
            })),
        )
            .into_response(),
        WriteError::ImportConflict => ApiError::Conflict(FieldError::new(
            "sample_code",
            WriteError::ImportConflict.to_string(),
        ))
        .into_response(),
        WriteError::Store(e) => ApiError::from(e).into_response(),
    }
}

async fn save_new(
    st: &AppState,
    input: &SampleInput,
    author: Option<&str>,
) -> std::result::Result<SampleRecord, Response> {
    let base = st.engine.base();
    let v = input
        .validate(|id| base.entry(id).is_some(), Some(st.config.today()))
        .map_err(|e| ApiError::Invalid(e).into_response())?;
    let ident = st.engine.identify(&v.observations);
    db::create(
        &st.db,
        NewState {
            sample: &v,
            identification: &ident,
            author,
        },
        None,
    )
    .await
    .map_err(write_error)
}

/// `POST /api/v1/samples`: 201 with the record.
async fn create(
    State(st): State<AppState>,
    headers: HeaderMap,
    body: std::result::Result<Bytes, BytesRejection>,
) -> Response {
    let parsed = require_json(&headers)
        .and_then(|()| body_bytes(body))
        .and_then(|b| parse_input(&b));
    let (input, author) = match parsed.and_then(|(i, a)| refuse_service_fields(&i).map(|()| (i, a)))
    {
        Ok(x) => x,
        Err(e) => return e.into_response(),
    };
    match save_new(&st, &input, author.as_deref()).await {
        Ok(rec) => {
            let mut resp = (StatusCode::CREATED, Json(&rec)).into_response();
            if let Ok(v) = HeaderValue::from_str(&format!("/api/v1/samples/{}", rec.id)) {
                resp.headers_mut().insert(header::LOCATION, v);
            }
            resp
        }
        Err(r) => r,
    }
}

fn uuid_or_404(id: &str) -> Result<()> {
    uuid::Uuid::try_parse(id)
        .map(|_| ())
        .map_err(|_| not_found(id))
}

/// `GET /api/v1/samples/{id}`.
async fn read(State(st): State<AppState>, Path(id): Path<String>) -> Result<Json<SampleRecord>> {
    uuid_or_404(&id)?;
    let rec = db::get(&st.db, &id).await?.ok_or_else(|| not_found(&id))?;
    if rec.deleted {
        return Err(ApiError::NotFound(FieldError::new(
            "id",
            format!(
                "sample {id} was deleted at {}; it can be restored with POST /api/v1/samples/{id}/restore, and its revisions are at /api/v1/samples/{id}/revisions",
                rec.deleted_at.as_deref().unwrap_or("an earlier time")
            ),
        )));
    }
    Ok(Json(rec))
}

/// `PUT /api/v1/samples/{id}`: the whole record, a new revision.
async fn replace(
    State(st): State<AppState>,
    Path(id): Path<String>,
    headers: HeaderMap,
    body: std::result::Result<Bytes, BytesRejection>,
) -> Response {
    if let Err(e) = uuid_or_404(&id) {
        return e.into_response();
    }
    let parsed = require_json(&headers)
        .and_then(|()| body_bytes(body))
        .and_then(|b| parse_input(&b));
    let (input, author) = match parsed {
        Ok(x) => x,
        Err(e) => return e.into_response(),
    };
    if let Some(given) = &input.id
        && given.as_str() != Some(id.as_str())
    {
        return ApiError::Invalid(FieldError::new(
            "id",
            "the id in the body differs from the id in the URL; ids never change",
        ))
        .into_response();
    }
    let Some(expected) = input.revision else {
        return ApiError::Invalid(FieldError::new(
            "revision",
            "give the revision you started from (the record's current \"revision\"), so that no one else's change is overwritten",
        ))
        .into_response();
    };
    // The fields the service sets are compared with the record the client
    // says it started from; when that is not the current revision the
    // store answers 409 with the current record instead.
    match db::get(&st.db, &id).await {
        Ok(None) => return not_found(&id).into_response(),
        Ok(Some(current)) if !current.deleted && current.revision == expected => {
            if let Err(e) = same_service_fields(&input, &current) {
                return e.into_response();
            }
        }
        Ok(Some(_)) => {}
        Err(e) => return ApiError::from(e).into_response(),
    }
    let base = st.engine.base();
    let v = match input.validate(|e| base.entry(e).is_some(), Some(st.config.today())) {
        Ok(v) => v,
        Err(e) => return ApiError::Invalid(e).into_response(),
    };
    let ident = st.engine.identify(&v.observations);
    match db::update(
        &st.db,
        &id,
        expected,
        NewState {
            sample: &v,
            identification: &ident,
            author: author.as_deref(),
        },
    )
    .await
    {
        Ok(rec) => Json(rec).into_response(),
        Err(e) => write_error(e),
    }
}

/// `DELETE /api/v1/samples/{id}`: a tombstone; the record comes back with
/// `deleted: true`.
async fn remove(State(st): State<AppState>, Path(id): Path<String>) -> Response {
    if let Err(e) = uuid_or_404(&id) {
        return e.into_response();
    }
    match db::delete(&st.db, &id, None).await {
        Ok(rec) => Json(rec).into_response(),
        Err(e) => write_error(e),
    }
}

/// `POST /api/v1/samples/{id}/restore`.
async fn restore(State(st): State<AppState>, Path(id): Path<String>) -> Response {
    if let Err(e) = uuid_or_404(&id) {
        return e.into_response();
    }
    match db::restore(&st.db, &id, None).await {
        Ok(rec) => Json(rec).into_response(),
        Err(e) => write_error(e),
    }
}

/// `GET /api/v1/samples/{id}/revisions`: every state, oldest first.
async fn revisions(
    State(st): State<AppState>,
    Path(id): Path<String>,
) -> Result<impl IntoResponse> {
    uuid_or_404(&id)?;
    let revs = db::revisions(&st.db, &id).await?;
    if revs.is_empty() {
        return Err(not_found(&id));
    }
    Ok(Json(json!({ "id": id, "revisions": revs })))
}

/// Parsed list and export parameters.
pub struct ListQuery {
    /// Filters.
    pub filter: Filter,
    /// Page size.
    pub limit: i64,
    /// Keyset cursor.
    pub cursor: Option<i64>,
}

/// Parses `project=&field_id=&collector=&setting=&from=&to=&q=&limit=&cursor=`.
pub fn parse_query(raw: Option<&str>) -> std::result::Result<ListQuery, FieldError> {
    let mut q = ListQuery {
        filter: Filter::default(),
        limit: DEFAULT_LIMIT,
        cursor: None,
    };
    for (k, v) in form_urlencoded::parse(raw.unwrap_or("").as_bytes()) {
        let v = v.trim().to_string();
        if v.is_empty() {
            continue;
        }
        match k.as_ref() {
            "project" => q.filter.project = Some(v),
            "field_id" => q.filter.field_id = Some(v),
            "collector" => q.filter.collector = Some(v),
            "q" => q.filter.q = Some(v),
            "setting" => {
                q.filter.setting = Some(Setting::parse(&v).ok_or_else(|| {
                    FieldError::new(
                        "setting",
                        format!(
                            "\"{v}\" is not a setting; use one of {}",
                            Setting::allowed()
                        ),
                    )
                })?)
            }
            "from" | "to" => {
                if !valid_iso_date(&v) {
                    return Err(FieldError::new(
                        k.as_ref(),
                        format!("\"{v}\" is not a date; write YYYY-MM-DD"),
                    ));
                }
                if k == "from" {
                    q.filter.from = Some(v);
                } else {
                    q.filter.to = Some(v);
                }
            }
            "limit" => {
                q.limit = v
                    .parse::<i64>()
                    .ok()
                    .filter(|n| (1..=MAX_LIMIT).contains(n))
                    .ok_or_else(|| {
                        FieldError::new("limit", format!("a whole number from 1 to {MAX_LIMIT}"))
                    })?
            }
            "cursor" => {
                q.cursor = Some(v.parse::<i64>().ok().filter(|n| *n > 0).ok_or_else(|| {
                    FieldError::new(
                        "cursor",
                        "not a cursor of this list; use the next_cursor of the page before",
                    )
                })?)
            }
            other => {
                return Err(FieldError::new(
                    other,
                    format!(
                        "\"{other}\" is not a filter; use project, field_id, collector, setting, from, to, q, limit or cursor"
                    ),
                ));
            }
        }
    }
    if let (Some(a), Some(b)) = (&q.filter.from, &q.filter.to)
        && a > b
    {
        return Err(FieldError::new(
            "to",
            format!("the end date {b} is before the start date {a}"),
        ));
    }
    Ok(q)
}

/// The first parameter given more than once in a query string.
pub fn repeated_parameter(raw: Option<&str>) -> Option<String> {
    let mut seen = std::collections::HashSet::new();
    form_urlencoded::parse(raw.unwrap_or("").as_bytes())
        .map(|(k, _)| k.into_owned())
        .find(|k| !seen.insert(k.clone()))
}

/// The list and export parameters of the API: a parameter given twice is
/// a 400 naming it (one value each; nothing is picked silently), a bad
/// value a 422.
pub fn parse_api_query(raw: Option<&str>) -> Result<ListQuery> {
    if let Some(k) = repeated_parameter(raw) {
        return Err(ApiError::BadRequest(FieldError::new(
            k.clone(),
            format!("the parameter \"{k}\" is given more than once; give each parameter once"),
        )));
    }
    parse_query(raw).map_err(ApiError::Invalid)
}

/// `GET /api/v1/samples`: newest first, with `next_cursor`.
async fn list(State(st): State<AppState>, RawQuery(raw): RawQuery) -> Result<impl IntoResponse> {
    let q = parse_api_query(raw.as_deref())?;
    // The stored identifications go out as they were written.
    let page = db::list_as::<db::Raw>(&st.db, &q.filter, q.limit, q.cursor).await?;
    Ok(Json(page))
}

/// The CSV columns (one list for the export and the import).
pub use crate::samples::CSV_COLUMNS;

fn opt_num(x: Option<f64>) -> String {
    x.map(|v| v.to_string()).unwrap_or_default()
}

/// One CSV row of a record, every text cell safe to open in a
/// spreadsheet ([`crate::samples::csv_cell_out`]).
pub fn csv_row(r: &SampleRecord) -> Vec<String> {
    csv_cells(r)
        .into_iter()
        .zip(CSV_COLUMNS)
        .map(|(cell, column)| crate::samples::csv_cell_out(column, cell))
        .collect()
}

/// The cells of a record, as stored, in [`CSV_COLUMNS`] order.
fn csv_cells(r: &SampleRecord) -> Vec<String> {
    let top = r.identification.candidates.first();
    vec![
        r.id.clone(),
        r.project.clone(),
        r.sample_code.clone(),
        r.collected_on.clone().unwrap_or_default(),
        r.collector.clone().unwrap_or_default(),
        r.station.clone().unwrap_or_default(),
        opt_num(r.latitude),
        opt_num(r.longitude),
        opt_num(r.coordinate_uncertainty_m),
        r.setting.map(|s| s.to_string()).unwrap_or_default(),
        r.lithology.clone().unwrap_or_default(),
        r.field_id.clone().unwrap_or_default(),
        r.notes.clone().unwrap_or_default(),
        serde_json::to_string(&r.observations).unwrap_or_default(),
        r.created_at.clone(),
        r.updated_at.clone(),
        r.revision.to_string(),
        r.base_version.clone(),
        serde_json::to_string(&r.identification).unwrap_or_default(),
        top.map(|c| c.id.to_string()).unwrap_or_default(),
        top.map(|c| format!("{:.4}", c.probability))
            .unwrap_or_default(),
    ]
}

fn geojson_feature(r: &SampleRecord) -> Option<geojson::Feature> {
    let (lat, lon) = (r.latitude?, r.longitude?);
    let mut props = serde_json::Map::new();
    for (k, v) in [
        ("project", json!(r.project)),
        ("sample_code", json!(r.sample_code)),
        ("collected_on", json!(r.collected_on)),
        ("collector", json!(r.collector)),
        ("station", json!(r.station)),
        (
            "coordinate_uncertainty_m",
            json!(r.coordinate_uncertainty_m),
        ),
        ("setting", json!(r.setting)),
        ("lithology", json!(r.lithology)),
        ("field_id", json!(r.field_id)),
        ("notes", json!(r.notes)),
        ("revision", json!(r.revision)),
        ("base_version", json!(r.base_version)),
        (
            "top_candidate",
            json!(
                r.identification
                    .candidates
                    .first()
                    .map(|c| c.id.to_string())
            ),
        ),
        (
            "top_probability",
            json!(r.identification.candidates.first().map(|c| c.probability)),
        ),
    ] {
        props.insert(k.to_string(), v);
    }
    Some(geojson::Feature {
        bbox: None,
        // RFC 7946: positions are [longitude, latitude] in WGS 84.
        geometry: Some(geojson::Geometry::new_point([lon, lat])),
        id: Some(geojson::feature::Id::String(r.id.clone())),
        properties: Some(props),
        foreign_members: None,
    })
}

/// Streams every matching record, in keyset batches, through `write`.
fn export_stream<F>(st: AppState, filter: Filter, mut write: F) -> Body
where
    F: FnMut(&[SampleRecord], bool, bool) -> std::result::Result<Vec<u8>, String> + Send + 'static,
{
    let (tx, rx) = tokio::sync::mpsc::channel::<std::result::Result<Bytes, std::io::Error>>(4);
    tokio::spawn(async move {
        let mut cursor = None;
        let mut first = true;
        loop {
            let page = match db::list(&st.db, &filter, EXPORT_BATCH, cursor).await {
                Ok(p) => p,
                Err(e) => {
                    tracing::error!(error = %e, "export failed");
                    let _ = tx.send(Err(std::io::Error::other("export failed"))).await;
                    return;
                }
            };
            let last = page.next_cursor.is_none();
            match write(&page.samples, first, last) {
                Ok(bytes) => {
                    if tx.send(Ok(Bytes::from(bytes))).await.is_err() {
                        return; // the client went away
                    }
                }
                Err(e) => {
                    tracing::error!(error = %e, "export failed");
                    let _ = tx.send(Err(std::io::Error::other("export failed"))).await;
                    return;
                }
            }
            first = false;
            match page.next_cursor.and_then(|c| c.parse().ok()) {
                Some(c) => cursor = Some(c),
                None => return,
            }
        }
    });
    // A stream straight over the receiver: once the sender is gone it
    // answers `None` on every poll, however often it is polled. (The
    // compression layer polls once more after the end; a stream built
    // with `unfold` panics then, and the download came back empty.)
    let mut rx = rx;
    let stream = futures_util::stream::poll_fn(move |cx| rx.poll_recv(cx));
    Body::from_stream(stream)
}

fn download(content_type: &'static str, name: &'static str, body: Body) -> Response {
    let mut resp = Response::new(body);
    resp.headers_mut()
        .insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    if let Ok(v) = HeaderValue::from_str(&format!("attachment; filename=\"{name}\"")) {
        resp.headers_mut().insert(header::CONTENT_DISPOSITION, v);
    }
    resp
}

/// `GET /export/samples.csv`: RFC 4180, a header row, one row per sample.
async fn export_csv(State(st): State<AppState>, RawQuery(raw): RawQuery) -> Response {
    let q = match parse_api_query(raw.as_deref()) {
        Ok(q) => q,
        Err(e) => return e.into_response(),
    };
    let body = export_stream(st, q.filter, |batch, first, _last| {
        let mut w = csv::WriterBuilder::new()
            .terminator(csv::Terminator::CRLF)
            .from_writer(Vec::new());
        if first {
            w.write_record(CSV_COLUMNS).map_err(|e| e.to_string())?;
        }
        for r in batch {
            w.write_record(csv_row(r)).map_err(|e| e.to_string())?;
        }
        w.into_inner().map_err(|e| e.to_string())
    });
    download(
        "text/csv; charset=utf-8; header=present",
        "samples.csv",
        body,
    )
}

/// `GET /export/samples.geojson`: an RFC 7946 FeatureCollection of the
/// samples with coordinates.
async fn export_geojson(State(st): State<AppState>, RawQuery(raw): RawQuery) -> Response {
    let q = match parse_api_query(raw.as_deref()) {
        Ok(q) => q,
        Err(e) => return e.into_response(),
    };
    let mut written = 0usize;
    let body = export_stream(st, q.filter, move |batch, first, last| {
        let mut out = Vec::new();
        if first {
            out.extend_from_slice(b"{\"type\":\"FeatureCollection\",\"features\":[");
        }
        for f in batch.iter().filter_map(geojson_feature) {
            if written > 0 {
                out.push(b',');
            }
            serde_json::to_writer(&mut out, &f).map_err(|e| e.to_string())?;
            written += 1;
        }
        if last {
            out.extend_from_slice(b"]}");
        }
        Ok(out)
    });
    download("application/geo+json", "samples.geojson", body)
}
