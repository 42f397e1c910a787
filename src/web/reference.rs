//! Reference pages: `/minerals` and `/minerals/{id}`.

use axum::Router;

use super::AppState;

/// Routes of the reference pages.
pub fn router() -> Router<AppState> {
    Router::new()
}
