//! Command-line options and the service configuration they produce.
//!
//! `basal` with no subcommand serves, exactly like `basal serve`; options
//! fall back to environment variables, then to defaults that need no flags
//! on a first run.

use std::net::SocketAddr;
use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// Identify sheet silicates and their lookalikes in hand specimens, and keep
/// the sample log, on this laptop with no network.
#[derive(Debug, Parser)]
#[command(name = "basal", version, about, long_about = None)]
pub struct Cli {
    /// What to do; `serve` when left out.
    #[command(subcommand)]
    pub command: Option<Command>,
    /// Options of the service.
    #[command(flatten)]
    pub serve: ServeArgs,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Start the web service (the default): open or create the database,
    /// migrate it, and listen for browsers and API clients.
    Serve,
    /// Write a consistent copy of the database to PATH, safely while the
    /// service runs (SQLite's VACUUM INTO). PATH must not exist yet.
    Backup {
        /// Where to write the copy.
        path: PathBuf,
    },
    /// Load the invented demo project (a made-up crew, stations and
    /// specimens) so that a newcomer sees a filled log. Run it again and
    /// nothing is duplicated.
    Demo,
}

/// Where to listen and which database file to use.
#[derive(Debug, Clone, clap::Args)]
pub struct ServeArgs {
    /// Address and port to listen on.
    #[arg(
        long,
        env = "BASAL_LISTEN",
        default_value = "127.0.0.1:8080",
        global = true
    )]
    pub listen: SocketAddr,
    /// The SQLite database file; created with its folder and migrated on
    /// start when missing. Default: basal.sqlite in the user's data folder
    /// (on Linux $XDG_DATA_HOME/basal, usually ~/.local/share/basal).
    #[arg(long, env = "BASAL_DB", global = true)]
    pub db: Option<PathBuf>,
}

/// The configuration the service runs with.
#[derive(Debug, Clone)]
pub struct Config {
    /// Listening address.
    pub listen: SocketAddr,
    /// Database file.
    pub db: PathBuf,
}

impl ServeArgs {
    /// Resolves defaults into a [`Config`].
    pub fn config(&self) -> Config {
        Config {
            listen: self.listen,
            db: self.db.clone().unwrap_or_else(default_db_path),
        }
    }
}

/// `basal.sqlite` under the user's data directory, or the current folder
/// when the platform has none.
pub fn default_db_path() -> PathBuf {
    dirs::data_dir()
        .map(|d| d.join("basal"))
        .unwrap_or_else(|| PathBuf::from("."))
        .join("basal.sqlite")
}

/// Why a command failed.
#[derive(Debug, thiserror::Error)]
pub enum CommandError {
    /// The backup target exists already.
    #[error("{0} exists already; choose a new file name for the backup (nothing was written)")]
    TargetExists(String),
    /// The store failed.
    #[error("{0}")]
    Store(#[from] crate::store::StoreError),
    /// Writing a demo sample failed.
    #[error("{0}")]
    Write(#[from] crate::store::samples::WriteError),
}

/// `basal backup PATH`.
pub async fn backup(config: &Config, path: &std::path::Path) -> Result<u64, CommandError> {
    if path.exists() {
        return Err(CommandError::TargetExists(path.display().to_string()));
    }
    let pool = crate::store::open(&config.db).await?;
    crate::store::backup_to(&pool, path).await?;
    pool.close().await;
    Ok(std::fs::metadata(path).map(|m| m.len()).unwrap_or(0))
}

/// `basal demo`: returns how many samples were added.
pub async fn demo(config: &Config) -> Result<usize, CommandError> {
    let pool = crate::store::open(&config.db).await?;
    let n = crate::demo::load(&pool, crate::engine::Engine::builtin()).await?;
    pool.close().await;
    Ok(n)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_arguments_means_serve_on_the_defaults() {
        let cli = Cli::try_parse_from(["basal"]).expect("parses");
        assert!(cli.command.is_none());
        let cfg = cli.serve.config();
        assert_eq!(cfg.listen.to_string(), "127.0.0.1:8080");
        assert!(cfg.db.ends_with("basal/basal.sqlite"), "{:?}", cfg.db);
    }

    #[test]
    fn serve_takes_listen_and_db() {
        let cli = Cli::try_parse_from([
            "basal",
            "serve",
            "--listen",
            "127.0.0.1:9999",
            "--db",
            "/tmp/x.sqlite",
        ])
        .expect("parses");
        assert!(matches!(cli.command, Some(Command::Serve)));
        let cfg = cli.serve.config();
        assert_eq!(cfg.listen.port(), 9999);
        assert_eq!(cfg.db, PathBuf::from("/tmp/x.sqlite"));
    }

    #[tokio::test]
    async fn a_backup_is_a_consistent_copy_and_never_overwrites() {
        let dir = tempfile::tempdir().expect("tempdir");
        let config = Config {
            listen: "127.0.0.1:0".parse().expect("addr"),
            db: dir.path().join("live.sqlite"),
        };
        let added = demo(&config).await.expect("demo");
        assert!(added >= 10);
        assert_eq!(
            demo(&config).await.expect("again"),
            0,
            "a second demo adds nothing"
        );
        let target = dir.path().join("copy.sqlite");
        assert!(backup(&config, &target).await.expect("backup") > 0);
        let copy = crate::store::open(&target).await.expect("open copy");
        let page = crate::store::samples::list(&copy, &Default::default(), 500, None)
            .await
            .expect("list");
        assert_eq!(page.samples.len(), added);
        assert!(matches!(
            backup(&config, &target).await,
            Err(CommandError::TargetExists(_))
        ));
    }

    #[test]
    fn a_bad_address_is_refused_with_a_message() {
        let err = Cli::try_parse_from(["basal", "serve", "--listen", "nowhere"]).expect_err("bad");
        assert!(err.to_string().contains("--listen"));
    }
}
