//! Test harness: a fresh app over a temporary, migrated SQLite file.

use std::sync::Arc;

use axum::Router;
use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use basal::cli::Config;
use basal::engine::Engine;
use basal::web::{AppState, app};
use http_body_util::BodyExt;
use tower::ServiceExt;

/// An app and the temporary folder that holds its database.
pub struct TestApp {
    pub router: Router,
    /// The state the router was built over.
    pub state: AppState,
    pub _dir: tempfile::TempDir,
}

/// A response, collected.
pub struct Reply {
    pub status: StatusCode,
    pub headers: axum::http::HeaderMap,
    pub body: Vec<u8>,
}

impl Reply {
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_slice(&self.body)
            .unwrap_or_else(|e| panic!("not JSON ({e}): {}", String::from_utf8_lossy(&self.body)))
    }
    pub fn text(&self) -> String {
        String::from_utf8_lossy(&self.body).into_owned()
    }
    /// Asserts the contract's error shape and returns (field, message).
    pub fn error(&self) -> (String, String) {
        let v = self.json();
        let e = v
            .get("error")
            .unwrap_or_else(|| panic!("no error object: {v}"));
        let field = e["field"]
            .as_str()
            .unwrap_or_else(|| panic!("no field: {v}"))
            .to_string();
        let message = e["message"]
            .as_str()
            .unwrap_or_else(|| panic!("no message: {v}"))
            .to_string();
        assert!(!message.is_empty(), "empty message: {v}");
        (field, message)
    }
}

impl TestApp {
    pub async fn new() -> TestApp {
        TestApp::with_config(|_| {}).await
    }

    /// An app whose configuration `adjust` changes first (a time zone, a
    /// fixed clock).
    pub async fn with_config(adjust: impl FnOnce(&mut Config)) -> TestApp {
        let dir = tempfile::tempdir().expect("tempdir");
        let db_path = dir.path().join("basal.sqlite");
        let db = basal::store::open(&db_path).await.expect("open db");
        let mut config = Config::new("127.0.0.1:0".parse().expect("addr"), db_path);
        adjust(&mut config);
        let state = AppState {
            db,
            engine: Engine::builtin(),
            config: Arc::new(config),
        };
        TestApp {
            router: app(state.clone()),
            state,
            _dir: dir,
        }
    }

    pub async fn send(&self, req: Request<Body>) -> Reply {
        let resp = self.router.clone().oneshot(req).await.expect("infallible");
        let status = resp.status();
        let headers = resp.headers().clone();
        let body = resp
            .into_body()
            .collect()
            .await
            .expect("body")
            .to_bytes()
            .to_vec();
        Reply {
            status,
            headers,
            body,
        }
    }

    pub async fn get(&self, uri: &str) -> Reply {
        self.send(Request::get(uri).body(Body::empty()).expect("request"))
            .await
    }

    pub async fn post_raw(
        &self,
        uri: &str,
        content_type: Option<&str>,
        body: impl Into<Body>,
    ) -> Reply {
        let mut b = Request::post(uri);
        if let Some(ct) = content_type {
            b = b.header(header::CONTENT_TYPE, ct);
        }
        self.send(b.body(body.into()).expect("request")).await
    }

    pub async fn identify(&self, body: &str) -> Reply {
        self.post_raw(
            "/api/v1/identify",
            Some("application/json"),
            body.to_string(),
        )
        .await
    }
}

/// A browser session against the app: keeps the anti-forgery cookie.
pub struct Session<'a> {
    pub app: &'a TestApp,
    pub cookie: Option<String>,
}

impl<'a> Session<'a> {
    pub fn new(app: &'a TestApp) -> Self {
        Session { app, cookie: None }
    }

    fn remember(&mut self, r: &Reply) {
        if let Some(v) = r
            .headers
            .get(header::SET_COOKIE)
            .and_then(|v| v.to_str().ok())
            && let Some(kv) = v.split(';').next()
        {
            self.cookie = Some(kv.to_string());
        }
    }

    pub async fn get(&mut self, uri: &str) -> Reply {
        let mut b = Request::get(uri);
        if let Some(c) = &self.cookie {
            b = b.header(header::COOKIE, c);
        }
        let r = self.app.send(b.body(Body::empty()).expect("request")).await;
        self.remember(&r);
        r
    }

    /// The anti-forgery token this session's pages carry.
    pub fn token(&self) -> String {
        self.cookie
            .as_deref()
            .and_then(|c| c.split_once('='))
            .map(|(_, v)| v.to_string())
            .expect("a page has set the cookie")
    }

    /// POSTs a form body (already urlencoded) with the session's cookie.
    pub async fn post_form(&mut self, uri: &str, body: &str) -> Reply {
        let mut b =
            Request::post(uri).header(header::CONTENT_TYPE, "application/x-www-form-urlencoded");
        if let Some(c) = &self.cookie {
            b = b.header(header::COOKIE, c);
        }
        let r = self
            .app
            .send(b.body(Body::from(body.to_string())).expect("request"))
            .await;
        self.remember(&r);
        r
    }

    /// POSTs any body with the session's cookie.
    pub async fn post_with(&mut self, uri: &str, content_type: &str, body: Vec<u8>) -> Reply {
        let mut b = Request::post(uri).header(header::CONTENT_TYPE, content_type);
        if let Some(c) = &self.cookie {
            b = b.header(header::COOKIE, c);
        }
        let r = self
            .app
            .send(b.body(Body::from(body)).expect("request"))
            .await;
        self.remember(&r);
        r
    }

    /// POSTs a form with the right token added.
    pub async fn submit(&mut self, uri: &str, fields: &str) -> Reply {
        let body = format!("_csrf={}&{fields}", self.token());
        self.post_form(uri, &body).await
    }
}

impl Reply {
    pub fn location(&self) -> String {
        self.headers
            .get(header::LOCATION)
            .and_then(|v| v.to_str().ok())
            .unwrap_or_else(|| panic!("no Location on {}", self.status))
            .to_string()
    }
}

impl TestApp {
    /// Sends `body` with `method` and a JSON content type.
    pub async fn send_json(&self, method: axum::http::Method, uri: &str, body: &str) -> Reply {
        self.send(
            Request::builder()
                .method(method)
                .uri(uri)
                .header(header::CONTENT_TYPE, "application/json")
                .body(Body::from(body.to_string()))
                .expect("request"),
        )
        .await
    }

    /// POSTs a JSON body.
    pub async fn post_json(&self, uri: &str, body: &str) -> Reply {
        self.send_json(axum::http::Method::POST, uri, body).await
    }

    /// PUTs a JSON body.
    pub async fn put_json(&self, uri: &str, body: &str) -> Reply {
        self.send_json(axum::http::Method::PUT, uri, body).await
    }

    /// DELETE without a body.
    pub async fn delete(&self, uri: &str) -> Reply {
        self.send(Request::delete(uri).body(Body::empty()).expect("request"))
            .await
    }

    /// A second pool on the test database, for set-up the API does not
    /// offer yet (creating a project).
    pub async fn pool(&self) -> sqlx::SqlitePool {
        basal::store::open(&self._dir.path().join("basal.sqlite"))
            .await
            .expect("open db")
    }
}
