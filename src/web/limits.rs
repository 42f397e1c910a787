//! Limits and last-resort answers at the edge.
//!
//! - A declared `Content-Length` over the route's limit is refused at once
//!   (413), before a byte of the body is read.
//! - Form bodies (`application/x-www-form-urlencoded` POSTs to the pages)
//!   are read here and refused with 400 when a field is not UTF-8 once
//!   percent-decoded: the forms' parser would otherwise store U+FFFD in
//!   place of what was typed.
//! - Error answers that left a layer bare (axum's 405 with an empty body,
//!   its text/plain 413, the timeout's 408, the 500 after a caught panic)
//!   get the error shape under `/api/` and the error page elsewhere, with
//!   their headers (`Allow`) kept.
//! - [`PanicGuard`] turns a panic while a response body is polled into a
//!   body error: the connection is cut, so a chunked response never ends
//!   with the terminating chunk that would make it look complete.

use std::panic::AssertUnwindSafe;
use std::pin::Pin;
use std::task::{Context, Poll};

use axum::body::{Body, Bytes};
use axum::extract::Request;
use axum::http::{Method, StatusCode, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};
use futures_util::StreamExt;
use hyper::body::{Frame, SizeHint};

use super::error::ApiError;
use super::pages::error_page;
use crate::engine::FieldError;

/// Largest form body of the pages: 2 MiB, axum's default body limit, which
/// every form route keeps (a sample with long notes is a few KiB).
pub const FORM_LIMIT: usize = 2 * 1024 * 1024;

/// The body limit of a path; keep it in step with the routes'
/// `DefaultBodyLimit`s (the API's 64 KiB, the CSV upload's 64 MiB).
pub fn body_limit(path: &str) -> usize {
    if path.starts_with("/api/") {
        super::api::BODY_LIMIT
    } else if path == "/samples/import" {
        super::log_admin::UPLOAD_LIMIT
    } else if path == "/identify" || path.starts_with("/identify/") {
        // The questioning forms take what the JSON API takes.
        super::flow::FORM_LIMIT
    } else {
        FORM_LIMIT
    }
}

fn size(bytes: usize) -> String {
    if bytes >= 1024 * 1024 {
        format!("{} MiB", bytes / (1024 * 1024))
    } else {
        format!("{} KiB", bytes / 1024)
    }
}

fn is_api(path: &str) -> bool {
    path.starts_with("/api/")
}

/// The 413 answer of a path.
fn too_large(path: &str) -> Response {
    if is_api(path) {
        return ApiError::TooLarge.into_response();
    }
    error_page(
        StatusCode::PAYLOAD_TOO_LARGE,
        "Too large",
        format!(
            "What was sent is larger than basal takes here (at most {}), so it was refused and nothing was saved. \
             Go back and send less: shorter notes, or a CSV file split into parts.",
            size(body_limit(path))
        ),
    )
}

/// Middleware: 413 at once for a declared length over the limit.
pub async fn declared_length(req: Request, next: Next) -> Response {
    let declared = req
        .headers()
        .get(header::CONTENT_LENGTH)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.trim().parse::<u64>().ok());
    let path = req.uri().path();
    if declared.is_some_and(|n| n > body_limit(path) as u64) {
        return too_large(path);
    }
    next.run(req).await
}

fn is_form(req: &Request) -> bool {
    req.headers()
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.split(';').next())
        .is_some_and(|m| {
            m.trim()
                .eq_ignore_ascii_case("application/x-www-form-urlencoded")
        })
}

fn hex(b: u8) -> Option<u8> {
    match b {
        b'0'..=b'9' => Some(b - b'0'),
        b'a'..=b'f' => Some(b - b'a' + 10),
        b'A'..=b'F' => Some(b - b'A' + 10),
        _ => None,
    }
}

/// Percent-decodes one name or value the way forms are decoded (`+` is a
/// space, a `%` without two hex digits stays as it is).
fn percent_decode(raw: &[u8]) -> Vec<u8> {
    let mut out = Vec::with_capacity(raw.len());
    let mut i = 0;
    while i < raw.len() {
        match raw[i] {
            b'+' => out.push(b' '),
            b'%' => {
                if let (Some(h), Some(l)) = (
                    raw.get(i + 1).copied().and_then(hex),
                    raw.get(i + 2).copied().and_then(hex),
                ) {
                    out.push(h * 16 + l);
                    i += 3;
                    continue;
                }
                out.push(b'%');
            }
            b => out.push(b),
        }
        i += 1;
    }
    out
}

/// Checks that every name and value of a form body is UTF-8 once decoded;
/// the error names the first field that is not (as far as it can be read).
pub fn check_form_utf8(body: &[u8]) -> Result<(), String> {
    for pair in body.split(|b| *b == b'&').filter(|p| !p.is_empty()) {
        let (name, value) = match pair.iter().position(|b| *b == b'=') {
            Some(i) => (&pair[..i], &pair[i + 1..]),
            None => (pair, &pair[pair.len()..]),
        };
        let name = percent_decode(name);
        let value = percent_decode(value);
        if std::str::from_utf8(&name).is_err() || std::str::from_utf8(&value).is_err() {
            return Err(String::from_utf8_lossy(&name).chars().take(60).collect());
        }
    }
    Ok(())
}

/// Middleware: reads a page's form body (within the limit) and refuses it
/// when it is not UTF-8, before any handler sees it.
pub async fn form_body(req: Request, next: Next) -> Response {
    if req.method() != Method::POST || is_api(req.uri().path()) || !is_form(&req) {
        return next.run(req).await;
    }
    let path = req.uri().path().to_string();
    let limit = body_limit(&path);
    let (parts, body) = req.into_parts();
    let mut data = body.into_data_stream();
    let mut bytes = Vec::new();
    while let Some(chunk) = data.next().await {
        match chunk {
            Ok(c) if bytes.len() + c.len() <= limit => bytes.extend_from_slice(&c),
            Ok(_) => return too_large(&path),
            Err(e) => {
                tracing::debug!(error = %e, "a form body could not be read");
                return error_page(
                    StatusCode::BAD_REQUEST,
                    "Form refused",
                    "The form did not arrive whole (the connection broke off), so nothing was saved. Send it again."
                        .to_string(),
                );
            }
        }
    }
    if let Err(field) = check_form_utf8(&bytes) {
        return error_page(
            StatusCode::BAD_REQUEST,
            "Form refused",
            format!(
                "The form field \"{field}\" held bytes that are not UTF-8 text, so the form was refused and nothing \
                 was saved (storing it would have replaced what was typed with \u{FFFD}). basal's own pages always \
                 send UTF-8; a program that posts this form must encode its text as UTF-8."
            ),
        );
    }
    next.run(Request::from_parts(parts, Body::from(bytes)))
        .await
}

/// Middleware: gives bare error answers the error shape or the error page.
pub async fn shape_bare_errors(req: Request, next: Next) -> Response {
    let path = req.uri().path().to_string();
    let method = req.method().clone();
    let resp = next.run(req).await;
    let status = resp.status();
    if !(status.is_client_error() || status.is_server_error()) {
        return resp;
    }
    let content_type = resp
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    let bare = content_type.is_empty()
        || (status == StatusCode::PAYLOAD_TOO_LARGE && content_type.starts_with("text/plain"));
    if !bare {
        return resp;
    }
    let allow = resp.headers().get(header::ALLOW).cloned();
    let allowed = allow
        .as_ref()
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .replace(',', ", ");
    let (title, message) = match status {
        StatusCode::METHOD_NOT_ALLOWED => (
            "Not allowed here",
            // The router adds `Allow` after this layer has run, so it is
            // often not known here; the answer carries it all the same.
            if allowed.is_empty() {
                format!(
                    "{path} does not take {method} requests (the Allow header lists the ones it takes). Use the \
                     links and forms on basal's pages, or the methods the API contract lists."
                )
            } else {
                format!(
                    "{path} does not take {method} requests; it takes {allowed}. Use the links and forms on \
                     basal's pages, or the methods the API contract lists."
                )
            },
        ),
        StatusCode::PAYLOAD_TOO_LARGE => return too_large(&path),
        StatusCode::NOT_FOUND => ("Not found", format!("There is nothing at {path}.")),
        StatusCode::REQUEST_TIMEOUT => (
            "Too slow",
            "The request did not arrive in time, so it was given up and nothing was saved. Send it again."
                .to_string(),
        ),
        s if s.is_server_error() => (
            "Something went wrong",
            "Something went wrong on the server and the request was given up; it has been logged. Try again; if it \
             keeps happening, restart basal (your records are safe in its database file)."
                .to_string(),
        ),
        s => (
            "Refused",
            format!(
                "The request was refused ({}).",
                s.canonical_reason().unwrap_or("an error")
            ),
        ),
    };
    let mut shaped = if is_api(&path) {
        ApiError::Status(status, FieldError::new("", message)).into_response()
    } else {
        error_page(status, title, message)
    };
    if let Some(a) = allow {
        shaped.headers_mut().insert(header::ALLOW, a);
    }
    shaped
}

/// The answer of a handler that panicked: a bare 500, which
/// [`shape_bare_errors`] dresses. The panic itself is logged once, by the
/// panic hook [`super::serve`] installs.
pub fn panicked(_payload: Box<dyn std::any::Any + Send + 'static>) -> Response {
    StatusCode::INTERNAL_SERVER_ERROR.into_response()
}

/// A response body that turns a panic of the body it wraps into an error.
pub struct PanicGuard {
    inner: Body,
    failed: bool,
}

impl PanicGuard {
    /// Wraps a body.
    pub fn new(inner: Body) -> Self {
        PanicGuard {
            inner,
            failed: false,
        }
    }
}

impl hyper::body::Body for PanicGuard {
    type Data = Bytes;
    type Error = axum::Error;

    fn poll_frame(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, axum::Error>>> {
        let this = &mut *self;
        if this.failed {
            return Poll::Ready(None);
        }
        let inner = &mut this.inner;
        match std::panic::catch_unwind(AssertUnwindSafe(|| Pin::new(inner).poll_frame(cx))) {
            Ok(poll) => poll,
            Err(_) => {
                // Logged by the panic hook; the error makes hyper cut the
                // connection instead of finishing the body.
                this.failed = true;
                Poll::Ready(Some(Err(axum::Error::new(
                    "the response body panicked; the response was cut off",
                ))))
            }
        }
    }

    fn is_end_stream(&self) -> bool {
        self.failed || self.inner.is_end_stream()
    }

    fn size_hint(&self) -> SizeHint {
        self.inner.size_hint()
    }
}

/// Response mapper: every body behind a [`PanicGuard`].
pub fn guard_body(resp: Response) -> Response {
    resp.map(|b| Body::new(PanicGuard::new(b)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use http_body_util::BodyExt;

    #[test]
    fn form_fields_must_be_utf8_once_decoded() {
        assert!(check_form_utf8(b"a=1&notes=caf%C3%A9+au+lait&x").is_ok());
        assert!(check_form_utf8("notes=café".as_bytes()).is_ok());
        assert!(check_form_utf8(b"bad%=100%&q=%zz").is_ok(), "stray % stays");
        assert_eq!(check_form_utf8(b"a=1&notes=%FF%FE"), Err("notes".into()));
        assert_eq!(check_form_utf8(b"x%C3=1"), Err("x\u{FFFD}".into()));
        assert_eq!(check_form_utf8(b"raw=\xff"), Err("raw".into()));
    }

    #[test]
    fn percent_decoding_follows_the_form_rules() {
        assert_eq!(percent_decode(b"a+b%20c%41%4"), b"a b cA%4");
        assert_eq!(percent_decode(b"%"), b"%");
        assert_eq!(percent_decode(b"%e2%82%ac"), "€".as_bytes());
    }

    #[tokio::test]
    async fn a_body_that_panics_ends_with_an_error_not_with_its_end() {
        let stream = futures_util::stream::iter(0..3).map(|i| {
            if i == 1 {
                panic!("a test stream breaks on purpose");
            }
            Ok::<_, std::io::Error>(Bytes::from_static(b"row\n"))
        });
        let mut body = PanicGuard::new(Body::from_stream(stream));
        let first = body.frame().await.expect("a frame").expect("data");
        assert_eq!(first.into_data().expect("data"), "row\n");
        let second = body.frame().await.expect("a frame, not the end");
        assert!(second.is_err(), "the panic became an error");
        assert!(body.frame().await.is_none(), "nothing after the error");
        assert!(hyper::body::Body::is_end_stream(&body));
    }
}
