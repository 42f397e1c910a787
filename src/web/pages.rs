//! HTML pages: the home page and the error pages. (The questioning flow and
//! the reference pages build on these.)

use askama::Template;
use askama_web::WebTemplate;
use axum::Router;
use axum::extract::State;
use axum::http::{StatusCode, Uri};
use axum::response::{IntoResponse, Response};
use axum::routing::get;
use tower_http::services::ServeDir;

use super::AppState;
use super::error::ApiError;
use crate::engine::FieldError;

/// Routes of the pages and the stylesheet.
pub fn router() -> Router<AppState> {
    Router::new().route("/", get(home)).nest_service(
        "/static",
        ServeDir::new(concat!(env!("CARGO_MANIFEST_DIR"), "/static")),
    )
}

/// A base entry as the home page lists it.
pub struct EntryLine {
    /// Id.
    pub id: String,
    /// Name.
    pub name: String,
    /// Group label.
    pub group: &'static str,
}

/// The home page.
#[derive(Template, WebTemplate)]
#[template(path = "home.html")]
pub struct HomePage {
    /// Page title.
    pub title: &'static str,
    /// Base version shown in the footer.
    pub base_version: String,
    /// Every entry.
    pub entries: Vec<EntryLine>,
}

async fn home(State(st): State<AppState>) -> HomePage {
    use crate::base::vocab::Vocab;
    let base = st.engine.base();
    HomePage {
        title: "basal",
        base_version: base.version.clone(),
        entries: base
            .entries
            .iter()
            .map(|e| EntryLine {
                id: e.id.clone(),
                name: e.name.clone(),
                group: e.group.label(),
            })
            .collect(),
    }
}

/// An error page.
#[derive(Template, WebTemplate)]
#[template(path = "error.html")]
pub struct ErrorPage {
    /// Page title.
    pub title: &'static str,
    /// Base version shown in the footer.
    pub base_version: String,
    /// What went wrong, in plain words.
    pub message: String,
}

/// Renders the error page with a status; plain text if rendering fails.
pub fn error_page(status: StatusCode, title: &'static str, message: String) -> Response {
    let page = ErrorPage {
        title,
        base_version: crate::engine::Engine::builtin().base().version.clone(),
        message,
    };
    match askama::Template::render(&page) {
        Ok(html) => (status, axum::response::Html(html)).into_response(),
        Err(e) => {
            tracing::error!(error = %e, "error page did not render");
            (status, page.message).into_response()
        }
    }
}

/// 404 for anything unrouted: the error shape under `/api/`, a page elsewhere.
pub async fn not_found(State(st): State<AppState>, uri: Uri) -> Response {
    if uri.path().starts_with("/api/") {
        return ApiError::NotFound(FieldError::new(
            "",
            format!(
                "no API endpoint at {}; see docs/api.md or GET /api/v1/openapi.json",
                uri.path()
            ),
        ))
        .into_response();
    }
    let page = ErrorPage {
        title: "Not found",
        base_version: st.engine.base().version.clone(),
        message: format!("There is no page at {}.", uri.path()),
    };
    (StatusCode::NOT_FOUND, page).into_response()
}
