//! The web edge: the axum router, its layers, and serving.
//!
//! Handlers are thin: parse into the contract types, call the domain,
//! render. Errors become HTTP responses only here ([`error`]).

pub mod api;
pub mod csrf;
pub mod error;
pub mod flow;
pub mod forms;
pub mod host;
pub mod limits;
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
    let routes = Router::new()
        .merge(api::router())
        .merge(pages::router())
        .merge(reference::router())
        .merge(flow::router())
        .merge(samples_api::router())
        .merge(samples_pages::router())
        .merge(log_admin::router())
        .merge(openapi::router())
        .fallback(pages::not_found);
    with_edge(routes, state)
}

tokio::task_local! {
    /// Whether the pages rendered in this request must warn that anyone on
    /// the network can use the log (set per request by [`with_edge`]).
    static OPEN_TO_THE_NETWORK: bool;
}

/// True while a page is rendered for a service that listens where other
/// computers can reach it, with `--allow-anyone-on-the-network`. The
/// layout reads it for its footer warning.
pub fn open_to_the_network() -> bool {
    OPEN_TO_THE_NETWORK.try_with(|b| *b).unwrap_or(false)
}

/// Puts the edge around `routes`: the host check, the limits, the
/// forgery checks, the security headers, panic catching, compression and
/// tracing. Public so that a test can put a route of its own behind
/// exactly the same edge.
pub fn with_edge(routes: Router<AppState>, state: AppState) -> Router {
    let open = state.config.allow_anyone_on_the_network && state.config.exposed();
    routes
        .with_state(state.clone())
        .layer(axum::middleware::from_fn(limits::form_body))
        .layer(axum::middleware::from_fn(csrf::layer))
        .layer(tower_http::catch_panic::CatchPanicLayer::custom(
            limits::panicked,
        ))
        .layer(axum::middleware::from_fn(limits::declared_length))
        .layer(tower_http::timeout::TimeoutLayer::with_status_code(
            axum::http::StatusCode::REQUEST_TIMEOUT,
            Duration::from_secs(30),
        ))
        .layer(axum::middleware::from_fn(limits::shape_bare_errors))
        .layer(axum::middleware::from_fn_with_state(state, host::layer))
        .layer(axum::middleware::from_fn(
            move |req: Request, next: axum::middleware::Next| {
                OPEN_TO_THE_NETWORK.scope(open, next.run(req))
            },
        ))
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
        .layer(axum::middleware::map_response(
            |r: axum::response::Response| async move { limits::guard_body(r) },
        ))
        .layer(tower_http::compression::CompressionLayer::new())
        .layer(
            TraceLayer::new_for_http()
                .make_span_with(|req: &Request| {
                    let path = req
                        .extensions()
                        .get::<MatchedPath>()
                        .map(MatchedPath::as_str)
                        .unwrap_or("unmatched");
                    tracing::info_span!("http", http.method = %req.method(), http.route = path)
                })
                // Failures are logged once where they happen (the error
                // types, the export, the panic hook), not again here.
                .on_failure(
                    tower_http::trace::DefaultOnFailure::new().level(tracing::Level::DEBUG),
                ),
        )
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
    /// The options do not allow starting.
    #[error("{0}")]
    Start(#[from] crate::cli::StartError),
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

/// Logs a panic once, as one error line in the span of the request it
/// happened in; the request itself is answered by the edge.
fn log_panics() {
    std::panic::set_hook(Box::new(|info| {
        let message = info.payload_as_str().unwrap_or("(no message)");
        let at = info
            .location()
            .map(|l| format!("{}:{}", l.file(), l.line()))
            .unwrap_or_default();
        tracing::error!(
            panic.message = %message,
            panic.location = %at,
            "panic: {message}; the request was answered with an error and the service goes on"
        );
    }));
}

/// Checks the options, binds, opens and migrates the database, then
/// prints the URL (the first log line, once basal is ready) and serves
/// until Ctrl-C or SIGTERM.
pub async fn serve(config: Config) -> Result<(), ServeError> {
    config.check_start()?;
    let listener = TcpListener::bind(config.listen)
        .await
        .map_err(|source| ServeError::Bind {
            addr: config.listen,
            source,
        })?;
    let addr = listener.local_addr()?;
    let db = crate::store::open(&config.db).await?;
    let engine = Engine::builtin();
    let previous = crate::store::note_base_version(&db, &engine.base().version).await?;
    tracing::info!(url = %format!("http://{addr}/"), "basal listening on http://{addr}/");
    tracing::info!(
        db.path = %config.db.display(),
        base.version = %engine.base().version,
        base.previous = previous.as_deref().unwrap_or("none"),
        "database open and migrated; ready"
    );
    if config.exposed() {
        let names = if config.listen.ip().is_unspecified() {
            "Other computers must use a name or address given with --public-host (such as this computer's \
             address on the network); any other name is refused."
                .to_string()
        } else {
            format!(
                "Other computers must use {} or a name given with --public-host; any other name is refused.",
                config.listen.ip()
            )
        };
        tracing::warn!(
            "WARNING: basal listens on {addr}, where other computers can reach it, and has no accounts yet: \
             anyone on this network can read, change, delete and export the whole log \
             (--allow-anyone-on-the-network). {names}"
        );
    }
    log_panics();
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
    let config = state.config.clone();
    serve_router(listener, app(state), &config, shutdown).await
}

/// The accept loop: HTTP/1.1 with TCP_NODELAY, at most
/// `config.max_connections` connections at once (the others wait in the
/// kernel's accept queue), each closed when it takes longer than
/// `config.header_timeout` to send a request head or stays idle that long
/// between requests. On `shutdown` it stops accepting, lets the requests
/// in flight finish and closes idle connections.
pub async fn serve_router(
    listener: TcpListener,
    router: Router,
    config: &Config,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    use hyper_util::rt::{TokioIo, TokioTimer};
    let slots = config.max_connections.clamp(1, 1 << 20);
    let free = Arc::new(tokio::sync::Semaphore::new(slots));
    let (stop, stopping) = tokio::sync::watch::channel(false);
    let mut http = hyper::server::conn::http1::Builder::new();
    http.timer(TokioTimer::new())
        .header_read_timeout(config.header_timeout)
        .keep_alive(true);
    let mut shutdown = std::pin::pin!(shutdown);
    loop {
        let permit = tokio::select! {
            p = free.clone().acquire_owned() => match p {
                Ok(p) => p,
                Err(_) => break,
            },
            () = &mut shutdown => break,
        };
        let tcp = tokio::select! {
            r = listener.accept() => match r {
                Ok((tcp, _peer)) => tcp,
                Err(e) => {
                    // Out of file descriptors and the like: wait a moment
                    // instead of spinning.
                    tracing::warn!(error = %e, "accepting a connection failed");
                    tokio::time::sleep(Duration::from_millis(100)).await;
                    continue;
                }
            },
            () = &mut shutdown => break,
        };
        // Without TCP_NODELAY small responses wait on Nagle's algorithm
        // and delayed ACKs.
        let _ = tcp.set_nodelay(true);
        let conn = http.serve_connection(
            TokioIo::new(tcp),
            hyper_util::service::TowerToHyperService::new(router.clone()),
        );
        let mut stopping = stopping.clone();
        tokio::spawn(async move {
            let _slot = permit;
            let mut conn = std::pin::pin!(conn);
            tokio::select! {
                r = conn.as_mut() => {
                    if let Err(e) = r {
                        tracing::debug!(error = %e, "connection closed with an error");
                    }
                }
                () = async { let _ = stopping.wait_for(|s| *s).await; } => {
                    conn.as_mut().graceful_shutdown();
                    let _ = conn.await;
                }
            }
        });
    }
    drop(listener);
    let _ = stop.send(true);
    // Every connection gives its slot back when it is done.
    let _ = free.acquire_many(slots as u32).await;
    Ok(())
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
