//! The error type of the web edge and its HTTP responses.
//!
//! API errors always have the contract's shape
//! `{"error": {"field": "...", "message": "..."}}`; 5xx bodies never show
//! internals (the cause is logged instead).

use axum::Json;
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use serde::Serialize;

use crate::engine::FieldError;
use crate::engine::input::InputError;

/// Result of a web handler.
pub type Result<T, E = ApiError> = std::result::Result<T, E>;

/// An error answered to an API client.
#[derive(Debug, thiserror::Error)]
pub enum ApiError {
    /// 400: the body is not well-formed JSON.
    #[error("bad request: {0}")]
    BadRequest(FieldError),
    /// 404: no such resource.
    #[error("not found: {0}")]
    NotFound(FieldError),
    /// 409: the change conflicts with what is stored.
    #[error("conflict: {0}")]
    Conflict(FieldError),
    /// 413: the body is over the limit.
    #[error("payload too large")]
    TooLarge,
    /// 415: not `application/json`.
    #[error("unsupported media type")]
    UnsupportedMediaType,
    /// 422: well-formed but not allowed.
    #[error("unprocessable: {0}")]
    Invalid(FieldError),
    /// 500: a fault of ours; the cause is logged, never shown.
    #[error("internal error: {0}")]
    Internal(String),
    /// Any other status the edge answers with the error shape (403 for a
    /// cross-site write, 405, 408, 421 for a foreign host name, a 500 after
    /// a panic that was logged already).
    #[error("{0}: {1}")]
    Status(StatusCode, FieldError),
}

impl From<InputError> for ApiError {
    fn from(e: InputError) -> Self {
        match e {
            InputError::Malformed(f) => ApiError::BadRequest(f),
            InputError::Invalid(f) => ApiError::Invalid(f),
        }
    }
}

#[derive(Serialize)]
struct Body<'a> {
    error: &'a FieldError,
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        let (status, err) = match self {
            ApiError::BadRequest(f) => (StatusCode::BAD_REQUEST, f),
            ApiError::NotFound(f) => (StatusCode::NOT_FOUND, f),
            ApiError::Conflict(f) => (StatusCode::CONFLICT, f),
            ApiError::TooLarge => (
                StatusCode::PAYLOAD_TOO_LARGE,
                FieldError::new(
                    "",
                    format!(
                        "the body is larger than {} KiB; send at most that",
                        super::api::BODY_LIMIT / 1024
                    ),
                ),
            ),
            ApiError::UnsupportedMediaType => (
                StatusCode::UNSUPPORTED_MEDIA_TYPE,
                FieldError::new("", "send the body as Content-Type: application/json"),
            ),
            ApiError::Invalid(f) => (StatusCode::UNPROCESSABLE_ENTITY, f),
            ApiError::Status(status, f) => (status, f),
            ApiError::Internal(cause) => {
                tracing::error!(error.cause = %cause, "internal error");
                (
                    StatusCode::INTERNAL_SERVER_ERROR,
                    FieldError::new(
                        "",
                        "something went wrong on the server; nothing was changed. Try again, and report it if it persists.",
                    ),
                )
            }
        };
        (status, Json(Body { error: &err })).into_response()
    }
}

/// An error answered with an HTML page (the pages' counterpart of
/// [`ApiError`]).
#[derive(Debug, thiserror::Error)]
pub enum PageError {
    /// 404: no such page or record.
    #[error("not found: {0}")]
    NotFound(String),
    /// 403: a forged or stale form.
    #[error("forbidden: {0}")]
    Forbidden(String),
    /// 500: a fault of ours; the cause is logged, never shown.
    #[error("internal error: {0}")]
    Internal(String),
}

impl From<crate::store::StoreError> for PageError {
    fn from(e: crate::store::StoreError) -> Self {
        PageError::Internal(e.to_string())
    }
}

impl From<crate::store::StoreError> for ApiError {
    fn from(e: crate::store::StoreError) -> Self {
        ApiError::Internal(e.to_string())
    }
}

impl IntoResponse for PageError {
    fn into_response(self) -> Response {
        let (status, title, message) = match self {
            PageError::NotFound(m) => (StatusCode::NOT_FOUND, "Not found", m),
            PageError::Forbidden(m) => (StatusCode::FORBIDDEN, "Form refused", m),
            PageError::Internal(cause) => {
                tracing::error!(error.cause = %cause, "internal error");
                (
                    StatusCode::INTERNAL_SERVER_ERROR,
                    "Something went wrong",
                    "Something went wrong on the server and nothing was changed. Try again; if it keeps happening, \
                     restart basal (your records are safe in its database file)."
                        .to_string(),
                )
            }
        };
        super::pages::error_page(status, title, message)
    }
}
