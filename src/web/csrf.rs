//! Cross-site request forgery protection for the HTML forms.
//!
//! Two independent checks, so that one mistake does not open the door:
//!
//! 1. Every non-API request that changes state must come from this origin:
//!    when the browser says where a request comes from (`Sec-Fetch-Site`,
//!    `Origin`), it must be this service.
//! 2. Every POST form carries a token (`_csrf`) that must equal the
//!    `basal_csrf` cookie (double submit). Another site can neither read
//!    the cookie nor set it for this origin, so it cannot fill the field.
//!
//! The JSON API has no token; every request that may change state there
//! (POST, PUT, PATCH, DELETE) must not come from another site either
//! (403, the error shape), and a body it carries must be
//! `application/json` (415), which no cross-site form or simple request
//! can send. A request with no body (DELETE, restore) may leave the
//! content type out. Programs such as curl send no `Origin` and pass.
//!
//! Every HTML page this layer hands a token is sent with
//! `Cache-Control: no-store`, so the token never sits in a cache.

use axum::extract::Request;
use axum::http::{HeaderMap, HeaderValue, Method, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use super::error::{ApiError, PageError};
use crate::engine::FieldError;

/// Name of the cookie and of the hidden form field.
pub const COOKIE: &str = "basal_csrf";
/// Name of the hidden form field.
pub const FIELD: &str = "_csrf";

/// The token of this browser, for the forms of the page being rendered.
#[derive(Clone, Debug)]
pub struct CsrfToken(pub String);

fn cookie_token(headers: &HeaderMap) -> Option<String> {
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|kv| kv.trim().split_once('='))
        .find(|(k, _)| *k == COOKIE)
        .map(|(_, v)| v.to_string())
        .filter(|v| v.len() >= 32 && v.chars().all(|c| c.is_ascii_hexdigit()))
}

/// Whether the browser's own statement of origin allows this request.
/// `Sec-Fetch-Site`, where the browser sends it, is the authority; older
/// browsers are judged by `Origin` against `Host`.
pub(crate) fn same_origin(headers: &HeaderMap) -> bool {
    if let Some(site) = headers.get("sec-fetch-site").and_then(|v| v.to_str().ok()) {
        return matches!(site, "same-origin" | "none");
    }
    if let Some(origin) = headers.get(header::ORIGIN).and_then(|v| v.to_str().ok()) {
        if origin == "null" {
            return false;
        }
        let host = headers
            .get(header::HOST)
            .and_then(|v| v.to_str().ok())
            .unwrap_or("");
        let origin_host = origin.split_once("://").map_or(origin, |(_, h)| h);
        return origin_host == host;
    }
    true
}

/// Whether a request carries a body (or says it does).
fn has_body(headers: &HeaderMap) -> bool {
    headers.contains_key(header::TRANSFER_ENCODING)
        || headers.contains_key(header::CONTENT_TYPE)
        || headers
            .get(header::CONTENT_LENGTH)
            .and_then(|v| v.to_str().ok())
            .is_some_and(|v| v.trim() != "0")
}

/// The API's refusal of a write, if it must be refused.
fn refuse_api_write(method: &Method, headers: &HeaderMap) -> Option<Response> {
    if !matches!(
        *method,
        Method::POST | Method::PUT | Method::PATCH | Method::DELETE
    ) {
        return None;
    }
    if !same_origin(headers) {
        return Some(
            ApiError::Status(
                axum::http::StatusCode::FORBIDDEN,
                FieldError::new(
                    "",
                    "this request came from another site (its Origin or Sec-Fetch-Site says so), and other sites may not use basal's API; nothing was changed. Send it from a program (curl, a script), which sends no Origin, or use basal's own pages",
                ),
            )
            .into_response(),
        );
    }
    if has_body(headers) && super::api::require_json(headers).is_err() {
        return Some(ApiError::UnsupportedMediaType.into_response());
    }
    None
}

/// Middleware: hands every page a token (setting the cookie when the
/// browser has none), refuses cross-site POSTs to the pages and
/// cross-site or non-JSON writes to the API.
pub async fn layer(mut req: Request, next: Next) -> Response {
    let is_api = req.uri().path().starts_with("/api/");
    if is_api && let Some(refusal) = refuse_api_write(req.method(), req.headers()) {
        return refusal;
    }
    if !is_api && req.method() == Method::POST && !same_origin(req.headers()) {
        return PageError::Forbidden(
            "This form was sent from another site or page, not from basal itself, so it was refused and nothing was changed. \
             Open basal in your browser and submit the form from there."
                .to_string(),
        )
        .into_response();
    }
    let existing = cookie_token(req.headers());
    let token = existing
        .clone()
        .unwrap_or_else(|| uuid::Uuid::new_v4().simple().to_string());
    req.extensions_mut().insert(CsrfToken(token.clone()));
    let mut resp = next.run(req).await;
    let html = resp
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.starts_with("text/html"));
    if !is_api && html {
        resp.headers_mut()
            .entry(header::CACHE_CONTROL)
            .or_insert(HeaderValue::from_static("no-store"));
    }
    if existing.is_none()
        && !is_api
        && let Ok(v) = HeaderValue::from_str(&format!(
            "{COOKIE}={token}; Path=/; HttpOnly; SameSite=Strict"
        ))
    {
        resp.headers_mut().append(header::SET_COOKIE, v);
    }
    resp
}

/// Checks the submitted token against this browser's.
pub fn verify(token: &CsrfToken, submitted: Option<&str>) -> Result<(), PageError> {
    match submitted {
        Some(s) if !token.0.is_empty() && s == token.0 => Ok(()),
        _ => Err(PageError::Forbidden(
            "This form's security token is missing or out of date (the page may be old, or cookies are blocked), \
             so it was refused and nothing was changed. Go back, reload the page and submit it again."
                .to_string(),
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn headers(pairs: &[(&'static str, &str)]) -> HeaderMap {
        let mut h = HeaderMap::new();
        for (k, v) in pairs {
            h.append(*k, HeaderValue::from_str(v).expect("header"));
        }
        h
    }

    #[test]
    fn the_cookie_token_is_read_among_other_cookies() {
        let t = "0123456789abcdef0123456789abcdef";
        let h = headers(&[("cookie", &format!("a=1; {COOKIE}={t}; b=2"))]);
        assert_eq!(cookie_token(&h).as_deref(), Some(t));
        assert_eq!(
            cookie_token(&headers(&[("cookie", "basal_csrf=short")])),
            None
        );
    }

    #[test]
    fn cross_site_requests_are_told_apart() {
        assert!(same_origin(&headers(&[])));
        assert!(same_origin(&headers(&[("sec-fetch-site", "same-origin")])));
        assert!(!same_origin(&headers(&[("sec-fetch-site", "cross-site")])));
        assert!(same_origin(&headers(&[
            ("origin", "http://127.0.0.1:8080"),
            ("host", "127.0.0.1:8080")
        ])));
        assert!(!same_origin(&headers(&[
            ("origin", "http://evil.example"),
            ("host", "127.0.0.1:8080")
        ])));
        assert!(!same_origin(&headers(&[
            ("origin", "null"),
            ("host", "127.0.0.1:8080")
        ])));
    }

    #[test]
    fn a_token_must_match() {
        let t = CsrfToken("abc".into());
        assert!(verify(&t, Some("abc")).is_ok());
        assert!(verify(&t, Some("abd")).is_err());
        assert!(verify(&t, None).is_err());
    }
}
