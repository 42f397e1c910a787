//! The JSON API of the contract: identify, the property base, readiness.

use axum::body::Bytes;
use axum::extract::rejection::BytesRejection;
use axum::extract::{DefaultBodyLimit, Path, State};
use axum::http::{HeaderMap, StatusCode, header};
use axum::response::IntoResponse;
use axum::routing::{get, post};
use axum::{Json, Router};
use serde::Serialize;
use std::collections::BTreeMap;

use super::AppState;
use super::error::{ApiError, Result};
use crate::base::{Entry, Source};
use crate::engine::input::observations_from_json;
use crate::engine::{FieldError, Identification};

/// Largest request body the API reads (contract: 64 KiB).
pub const BODY_LIMIT: usize = 64 * 1024;

/// Routes of the API and readiness.
pub fn router() -> Router<AppState> {
    Router::new()
        .route("/healthz", get(healthz))
        .route(
            "/api/v1/identify",
            post(identify).layer(DefaultBodyLimit::max(BODY_LIMIT)),
        )
        .route("/api/v1/minerals", get(minerals))
        .route("/api/v1/minerals/{id}", get(mineral))
}

/// `200 ok` once the database answers; 503 otherwise.
async fn healthz(State(st): State<AppState>) -> impl IntoResponse {
    match crate::store::ping(&st.db).await {
        Ok(()) => (StatusCode::OK, "ok"),
        Err(e) => {
            tracing::error!(error = %e, "health check failed");
            (StatusCode::SERVICE_UNAVAILABLE, "database unavailable")
        }
    }
}

/// Accepts `application/json`, with parameters such as `charset=utf-8`.
pub fn require_json(headers: &HeaderMap) -> Result<()> {
    let ok = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.split(';').next())
        .is_some_and(|m| m.trim().eq_ignore_ascii_case("application/json"));
    if ok {
        Ok(())
    } else {
        Err(ApiError::UnsupportedMediaType)
    }
}

/// Maps a body-reading failure: over the limit is 413, anything else 400.
pub fn body_bytes(body: std::result::Result<Bytes, BytesRejection>) -> Result<Bytes> {
    body.map_err(|rej| {
        if rej.status() == StatusCode::PAYLOAD_TOO_LARGE {
            ApiError::TooLarge
        } else {
            ApiError::BadRequest(FieldError::new(
                "",
                format!("the body could not be read: {rej}"),
            ))
        }
    })
}

/// `POST /api/v1/identify`: observations in, scored candidates out.
async fn identify(
    State(st): State<AppState>,
    headers: HeaderMap,
    body: std::result::Result<Bytes, BytesRejection>,
) -> Result<Json<Identification>> {
    require_json(&headers)?;
    let bytes = body_bytes(body)?;
    let obs = observations_from_json(&bytes)?;
    Ok(Json(st.engine.identify(&obs)))
}

/// One property's source, resolved.
#[derive(Serialize)]
struct SourceView<'a> {
    key: &'a str,
    #[serde(flatten)]
    source: &'a Source,
}

/// An entry with its sources resolved and its ideal composition computed.
#[derive(Serialize)]
struct MineralView<'a> {
    #[serde(flatten)]
    entry: &'a Entry,
    /// Property -> source (replaces the entry's key map).
    sources: BTreeMap<&'a str, SourceView<'a>>,
    /// Ideal composition of the end member.
    ideal_composition: Option<crate::base::IdealComposition>,
}

fn view<'a>(st: &'a AppState, e: &'a Entry) -> MineralView<'a> {
    let base = st.engine.base();
    let sources = e
        .sources
        .iter()
        .filter_map(|(prop, key)| {
            base.sources
                .get(key)
                .map(|s| (prop.as_str(), SourceView { key, source: s }))
        })
        .collect();
    MineralView {
        entry: e,
        sources,
        ideal_composition: e.ideal_composition(),
    }
}

#[derive(Serialize)]
struct MineralList<'a> {
    base_version: &'a str,
    minerals: Vec<MineralView<'a>>,
}

#[derive(Serialize)]
struct MineralOne<'a> {
    base_version: &'a str,
    mineral: MineralView<'a>,
}

/// `GET /api/v1/minerals`: the whole base.
async fn minerals(State(st): State<AppState>) -> impl IntoResponse {
    let base = st.engine.base();
    let body = MineralList {
        base_version: &base.version,
        minerals: base.entries.iter().map(|e| view(&st, e)).collect(),
    };
    Json(serde_json::to_value(body).unwrap_or_default())
}

/// `GET /api/v1/minerals/{id}`: one entry, or 404 with the error shape.
async fn mineral(State(st): State<AppState>, Path(id): Path<String>) -> Result<impl IntoResponse> {
    let base = st.engine.base();
    let e = base.entry(&id).ok_or_else(|| {
        ApiError::NotFound(FieldError::new(
            "id",
            format!("no mineral with id \"{id}\"; GET /api/v1/minerals lists every id"),
        ))
    })?;
    let body = MineralOne {
        base_version: &base.version,
        mineral: view(&st, e),
    };
    Ok(Json(serde_json::to_value(body).unwrap_or_default()))
}
