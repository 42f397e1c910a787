//! The sample log's pages: new sample, record with history, edit, history.

use axum::Router;

use super::AppState;

/// Routes of the sample pages.
pub fn router() -> Router<AppState> {
    Router::new()
}
