//! The web edge: the axum router, its layers, and serving.
//!
//! Handlers are thin: parse into the contract types, call the domain,
//! render. Errors become HTTP responses only here ([`error`]).

pub mod api;
pub mod csrf;
pub mod error;
pub mod flow;
pub mod forms;
pub mod log_admin;
pub mod openapi;
pub mod pages;
pub mod reference;
pub mod samples_api;
pub mod samples_pages;
pub mod views;

use std::future::Future;
use std::sync::Arc;
use std::time::Duration;

use axum::Router;
use axum::extract::{MatchedPath, Request};
use axum::http::{HeaderName, HeaderValue, header};
use axum::serve::ListenerExt;
use sqlx::SqlitePool;
use tokio::net::TcpListener;
use tower_http::set_header::SetResponseHeaderLayer;
use tower_http::trace::TraceLayer;

use crate::cli::Config;
use crate::engine::Engine;

/// Shared state of every handler.
#[derive(Clone)]
pub struct AppState {
    /// The database pool.
    pub db: SqlitePool,
    /// The scoring engine over the compiled-in base (built once).
    pub engine: &'static Engine,
    /// The configuration the service runs with.
    pub config: Arc<Config>,
}

/// The Content-Security-Policy every response carries: no scripts at all,
/// styles and images only from this service, forms only back to it, and no
/// framing.
pub const CSP: &str = "default-src 'none'; script-src 'none'; style-src 'self'; img-src 'self' data:; \
form-action 'self'; frame-ancestors 'none'; base-uri 'none'";

/// The whole application.
pub fn app(state: AppState) -> Router {
    Router::new()
        .merge(api::router())
        .merge(pages::router())
        .merge(reference::router())
        .merge(flow::router())
        .merge(samples_api::router())
        .merge(samples_pages::router())
        .merge(log_admin::router())
        .merge(openapi::router())
        .fallback(pages::not_found)
        .with_state(state)
        .layer(axum::middleware::from_fn(csrf::layer))
        .layer(SetResponseHeaderLayer::if_not_present(
            header::CONTENT_SECURITY_POLICY,
            HeaderValue::from_static(CSP),
        ))
        .layer(SetResponseHeaderLayer::if_not_present(
            header::X_CONTENT_TYPE_OPTIONS,
            HeaderValue::from_static("nosniff"),
        ))
        // `same-origin`, not `no-referrer`: with `no-referrer` browsers send
        // `Origin: null` on our own form posts, which the forgery check
        // must refuse.
        .layer(SetResponseHeaderLayer::if_not_present(
            header::REFERRER_POLICY,
            HeaderValue::from_static("same-origin"),
        ))
        .layer(SetResponseHeaderLayer::if_not_present(
            HeaderName::from_static("x-frame-options"),
            HeaderValue::from_static("DENY"),
        ))
        .layer(tower_http::timeout::TimeoutLayer::with_status_code(
            axum::http::StatusCode::REQUEST_TIMEOUT,
            Duration::from_secs(30),
        ))
        .layer(tower_http::compression::CompressionLayer::new())
        .layer(TraceLayer::new_for_http().make_span_with(|req: &Request| {
            let path = req
                .extensions()
                .get::<MatchedPath>()
                .map(MatchedPath::as_str)
                .unwrap_or("unmatched");
            tracing::info_span!("http", http.method = %req.method(), http.route = path)
        }))
}

/// Starts tracing: `RUST_LOG` if set, else info for basal and tower_http.
pub fn init_tracing() {
    use tracing_subscriber::EnvFilter;
    let filter = EnvFilter::try_from_default_env()
        .unwrap_or_else(|_| EnvFilter::new("basal=info,tower_http=warn"));
    // Colours only on a terminal: a log file or a pipe gets plain text.
    let ansi = std::io::IsTerminal::is_terminal(&std::io::stdout());
    let _ = tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_target(false)
        .with_ansi(ansi)
        .try_init();
}

/// Why the service could not start or stopped.
#[derive(Debug, thiserror::Error)]
pub enum ServeError {
    /// The address is taken or not ours.
    #[error("cannot listen on {addr}: {source}")]
    Bind {
        /// The address.
        addr: std::net::SocketAddr,
        /// The I/O error.
        source: std::io::Error,
    },
    /// The database could not be opened or migrated.
    #[error("{0}")]
    Store(#[from] crate::store::StoreError),
    /// The server failed while running.
    #[error("the server stopped: {0}")]
    Io(#[from] std::io::Error),
}

/// Binds, prints the URL (the first log line), opens and migrates the
/// database, then serves until Ctrl-C or SIGTERM.
pub async fn serve(config: Config) -> Result<(), ServeError> {
    let listener = TcpListener::bind(config.listen)
        .await
        .map_err(|source| ServeError::Bind {
            addr: config.listen,
            source,
        })?;
    let addr = listener.local_addr()?;
    tracing::info!(url = %format!("http://{addr}/"), "basal listening on http://{addr}/");
    let db = crate::store::open(&config.db).await?;
    let engine = Engine::builtin();
    let previous = crate::store::note_base_version(&db, &engine.base().version).await?;
    tracing::info!(
        db.path = %config.db.display(),
        base.version = %engine.base().version,
        base.previous = previous.as_deref().unwrap_or("none"),
        "database open and migrated; ready"
    );
    let state = AppState {
        db: db.clone(),
        engine,
        config: Arc::new(config),
    };
    run(listener, state, shutdown_signal()).await?;
    db.close().await;
    tracing::info!("basal stopped");
    Ok(())
}

/// Serves `state` on an already bound listener until `shutdown` resolves.
/// Tests pass a listener on port 0 and their own shutdown future.
pub async fn run(
    listener: TcpListener,
    state: AppState,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    // axum 0.8 no longer sets TCP_NODELAY; without it small responses wait
    // on Nagle's algorithm and delayed ACKs.
    let listener = listener.tap_io(|tcp| {
        let _ = tcp.set_nodelay(true);
    });
    axum::serve(listener, app(state))
        .with_graceful_shutdown(shutdown)
        .await
}

/// Resolves on Ctrl-C or SIGTERM.
pub async fn shutdown_signal() {
    let ctrl_c = async {
        let _ = tokio::signal::ctrl_c().await;
    };
    #[cfg(unix)]
    let term = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut s) => {
                s.recv().await;
            }
            Err(_) => std::future::pending::<()>().await,
        }
    };
    #[cfg(not(unix))]
    let term = std::future::pending::<()>();
    tokio::select! {
        () = ctrl_c => {},
        () = term => {},
    }
    tracing::info!("shutting down: finishing requests in flight");
}
