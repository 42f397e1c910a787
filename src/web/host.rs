//! The host check: basal answers only to the names it is meant to be
//! reached by.
//!
//! A page on another site can point a name of its own at 127.0.0.1 (DNS
//! rebinding) and then read and write the log as if it were basal's own
//! page: the browser thinks both have the same origin. The one thing such a
//! request cannot hide is the name it used, in `Host`. So every request
//! must name localhost, a loopback address, the address basal listens on
//! (when that is a specific address), or a name given with
//! `--public-host`; anything else gets 421 Misdirected Request and nothing
//! else happens. `/healthz` is checked like every other path.
//!
//! A request with no `Host` at all (HTTP/1.0, or a program writing to the
//! socket by hand) is let through: browsers always send `Host`, so a
//! rebinding page cannot make such a request, and a program that reaches
//! the socket could send any name it liked anyway.

use std::net::IpAddr;

use axum::extract::{Request, State};
use axum::http::{StatusCode, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use super::AppState;
use super::error::ApiError;
use crate::cli::Config;
use crate::engine::FieldError;

/// The host name of a request: the authority of an absolute-form target
/// (which RFC 9112 §3.2.2 puts before `Host`), else `Host`. `Some("")`
/// when the header is there but unreadable.
fn request_host(req: &Request) -> Option<String> {
    if let Some(a) = req.uri().authority() {
        return Some(a.host().to_string());
    }
    let raw = req.headers().get(header::HOST)?;
    let Ok(text) = raw.to_str() else {
        return Some(String::new());
    };
    Some(strip_port(text.trim()).to_string())
}

/// `name:port` -> `name`, `[v6]:port` -> `[v6]`.
fn strip_port(authority: &str) -> &str {
    if authority.starts_with('[') {
        return authority
            .find(']')
            .map_or(authority, |end| &authority[..=end]);
    }
    match authority.rsplit_once(':') {
        Some((name, port)) if port.chars().all(|c| c.is_ascii_digit()) => name,
        _ => authority,
    }
}

/// Whether basal answers to `host` (a bare name or address, as a request
/// names it: IPv6 in brackets).
pub fn allowed(host: &str, config: &Config) -> bool {
    let name = host.trim_end_matches('.').to_ascii_lowercase();
    if name.is_empty() {
        return false;
    }
    let ip = name
        .strip_prefix('[')
        .and_then(|n| n.strip_suffix(']'))
        .map_or_else(|| name.parse::<IpAddr>(), |v6| v6.parse::<IpAddr>());
    if let Ok(ip) = ip {
        // An IPv6 address must come in brackets, as URLs write it.
        if ip.is_ipv6() && !name.starts_with('[') {
            return false;
        }
        return ip.is_loopback()
            || (!config.listen.ip().is_unspecified() && ip == config.listen.ip())
            || config
                .public_hosts
                .iter()
                .any(|h| h.parse::<IpAddr>().is_ok_and(|p| p == ip));
    }
    name == "localhost" || config.public_hosts.contains(&name)
}

/// Middleware: 421 for a request that names a host basal does not answer to.
pub async fn layer(State(st): State<AppState>, req: Request, next: Next) -> Response {
    let Some(host) = request_host(&req) else {
        return next.run(req).await;
    };
    if allowed(&host, &st.config) {
        return next.run(req).await;
    }
    let shown: String = host.chars().take(80).collect();
    let port = st.config.listen.port();
    let message = format!(
        "basal was asked for under the name \"{shown}\", which it does not answer to. It answers only to localhost, \
         the loopback addresses and the names it was started with, so that a page on another site cannot reach \
         your log through a name of its own that points at this computer. Open http://127.0.0.1:{port}/ instead, \
         or, if \"{shown}\" is a name this service is meant to be reached by, start basal with --public-host {shown} \
         (or BASAL_PUBLIC_HOST={shown})."
    );
    tracing::warn!(http.host = %shown, "refused a request for a foreign host name");
    if req.uri().path().starts_with("/api/") {
        return ApiError::Status(
            StatusCode::MISDIRECTED_REQUEST,
            FieldError::new("", message),
        )
        .into_response();
    }
    super::pages::error_page(StatusCode::MISDIRECTED_REQUEST, "Wrong host name", message)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn config(listen: &str, public: &[&str]) -> Config {
        Config {
            listen: listen.parse().expect("addr"),
            public_hosts: public.iter().map(|s| s.to_string()).collect(),
            ..Config::default()
        }
    }

    #[test]
    fn ports_are_stripped_from_names_and_addresses() {
        assert_eq!(strip_port("localhost:8080"), "localhost");
        assert_eq!(strip_port("127.0.0.1"), "127.0.0.1");
        assert_eq!(strip_port("[::1]:8080"), "[::1]");
        assert_eq!(strip_port("[::1]"), "[::1]");
        assert_eq!(strip_port("evil.example:80x"), "evil.example:80x");
    }

    #[test]
    fn loopback_names_are_always_allowed_and_nothing_else_by_default() {
        let c = config("127.0.0.1:8080", &[]);
        for ok in [
            "localhost",
            "LOCALHOST",
            "localhost.",
            "127.0.0.1",
            "127.8.9.10",
            "[::1]",
        ] {
            assert!(allowed(ok, &c), "{ok}");
        }
        for bad in [
            "evil.example",
            "localhost.evil.example",
            "192.168.1.20",
            "::1",
            "",
            "[::2]",
            "0.0.0.0",
        ] {
            assert!(!allowed(bad, &c), "{bad}");
        }
    }

    #[test]
    fn the_listening_address_and_public_hosts_are_allowed() {
        let c = config("192.168.1.20:8080", &["basal.camp", "10.0.0.7"]);
        for ok in [
            "192.168.1.20",
            "basal.camp",
            "Basal.Camp",
            "10.0.0.7",
            "localhost",
        ] {
            assert!(allowed(ok, &c), "{ok}");
        }
        assert!(!allowed("evil.example", &c));
        // A wildcard listener is no name of its own.
        let any = config("0.0.0.0:8080", &[]);
        assert!(!allowed("0.0.0.0", &any));
        assert!(!allowed("192.168.1.20", &any));
    }
}
