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
    /// Import samples from a CSV file (the columns of the CSV export) into
    /// a project. Every row is checked first and every bad row reported
    /// with its line number; only a file with no bad row is written, all
    /// of it in one transaction.
    Import {
        /// The CSV file.
        file: PathBuf,
        /// The project to import into (created when it does not exist).
        #[arg(long)]
        project: String,
        /// Check and report only; write nothing.
        #[arg(long)]
        dry_run: bool,
        /// Who makes the import: the "changed by" of each record's first
        /// revision. `--author`, its earlier name, still works (hidden).
        #[arg(long = "changed-by", alias = "author", value_name = "NAME")]
        changed_by: Option<String>,
        /// The sample-code scheme of a project the import creates (default
        /// {seq:4}); refused when the project exists with another.
        #[arg(long)]
        scheme: Option<String>,
        /// The name of a project the import creates (default: its code);
        /// refused when the project exists with another.
        #[arg(long)]
        name: Option<String>,
    },
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
    /// A host name (or address) browsers may use to reach this service,
    /// besides localhost and the loopback addresses; repeat it for several
    /// names (the environment variable takes them comma-separated). Any
    /// other name in a request's Host is refused (421), which keeps pages
    /// on other sites from reaching the log through DNS rebinding.
    #[arg(
        long = "public-host",
        value_name = "NAME",
        env = "BASAL_PUBLIC_HOST",
        value_delimiter = ',',
        global = true
    )]
    pub public_host: Vec<String>,
    /// Allow listening on an address other computers can reach. basal has
    /// no accounts yet: anyone on the network can then read, change,
    /// delete and export the whole log.
    #[arg(
        long = "allow-anyone-on-the-network",
        env = "BASAL_ALLOW_ANYONE_ON_THE_NETWORK",
        global = true
    )]
    pub allow_anyone_on_the_network: bool,
    /// The time zone where the people using this service are, as an IANA
    /// name such as Pacific/Auckland or Europe/Oslo: it gives "today" for
    /// new samples and the offset beside every time shown (a browser does
    /// not send its own). Default: this computer's zone (TZ, or
    /// /etc/localtime). Times are stored in UTC whatever the zone.
    #[arg(
        long,
        env = "BASAL_TZ",
        value_name = "IANA_NAME",
        value_parser = parse_time_zone,
        global = true
    )]
    pub time_zone: Option<jiff::tz::TimeZone>,
}

/// Reads an IANA time zone name (`--time-zone`, `BASAL_TZ`).
pub fn parse_time_zone(name: &str) -> Result<jiff::tz::TimeZone, String> {
    let n = name.trim();
    if n.is_empty() {
        return Err("give an IANA time zone name such as Pacific/Auckland or UTC".into());
    }
    jiff::tz::TimeZone::get(n).map_err(|_| {
        format!(
            "\"{n}\" is not a time zone of the IANA database; give a name such as Pacific/Auckland, \
             America/Santiago, Europe/Oslo or UTC (region/city, as in /usr/share/zoneinfo)"
        )
    })
}

/// What time it is: the system's clock, or a fixed instant (tests, so that
/// "today" does not depend on when they run).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum Clock {
    /// The system clock.
    #[default]
    System,
    /// Always this instant.
    Fixed(jiff::Timestamp),
}

/// The configuration the service runs with.
#[derive(Debug, Clone)]
pub struct Config {
    /// Listening address.
    pub listen: SocketAddr,
    /// Database file.
    pub db: PathBuf,
    /// Host names accepted in requests besides the loopback names and the
    /// listening address (`--public-host`), lower case.
    pub public_hosts: Vec<String>,
    /// `--allow-anyone-on-the-network`: the operator accepts that a
    /// non-loopback listener lets anyone on the network use the log; every
    /// page then says so in its footer.
    pub allow_anyone_on_the_network: bool,
    /// How long a connection may take to send a complete request head,
    /// and how long an idle keep-alive connection is kept. Short, so that
    /// sockets that never finish a request give their slot back soon.
    pub header_timeout: std::time::Duration,
    /// Connections served at once; further ones wait in the kernel's
    /// accept queue until a slot frees up.
    pub max_connections: usize,
    /// Where the people are: "today" and the times shown are in this zone.
    pub time_zone: jiff::tz::TimeZone,
    /// Where "now" comes from.
    pub clock: Clock,
}

/// Default of [`Config::header_timeout`]: 10 s. A browser sends its whole
/// request head in one packet, in milliseconds even over a poor camp
/// network (common practice); a keep-alive connection idle for 10 s is
/// opened again at the cost of one TCP handshake.
pub const HEADER_TIMEOUT: std::time::Duration = std::time::Duration::from_secs(10);

/// Default of [`Config::max_connections`]: 512. A browser opens at most 6
/// connections to one host, so this serves 80 browsers at once, far more
/// than a crew; it stays well under the usual limit of 1024 open files per
/// process with room for the database and the log. With the 10 s header
/// timeout a flood of idle sockets holds each slot at most 10 s.
pub const MAX_CONNECTIONS: usize = 512;

impl Default for Config {
    fn default() -> Self {
        Config {
            listen: SocketAddr::from(([127, 0, 0, 1], 8080)),
            db: default_db_path(),
            public_hosts: Vec::new(),
            allow_anyone_on_the_network: false,
            header_timeout: HEADER_TIMEOUT,
            max_connections: MAX_CONNECTIONS,
            time_zone: jiff::tz::TimeZone::system(),
            clock: Clock::System,
        }
    }
}

impl Config {
    /// A configuration on `listen` and `db`, in this computer's time zone
    /// on the system clock; set the other fields after, as needed.
    pub fn new(listen: SocketAddr, db: PathBuf) -> Config {
        Config {
            listen,
            db,
            ..Config::default()
        }
    }

    /// Now, in the configured zone.
    pub fn now(&self) -> jiff::ZonedDateTime {
        let t = match self.clock {
            Clock::System => jiff::Timestamp::now(),
            Clock::Fixed(t) => t,
        };
        t.to_zoned_datetime(self.time_zone.clone())
    }

    /// Today's date where the people are.
    pub fn today(&self) -> jiff::civil::Date {
        self.now().date()
    }
}

impl ServeArgs {
    /// Resolves defaults into a [`Config`].
    pub fn config(&self) -> Config {
        let mut c = Config::new(self.listen, self.db.clone().unwrap_or_else(default_db_path));
        c.public_hosts = self
            .public_host
            .iter()
            .map(|h| h.trim().trim_end_matches('.').to_ascii_lowercase())
            .filter(|h| !h.is_empty())
            .collect();
        c.allow_anyone_on_the_network = self.allow_anyone_on_the_network;
        if let Some(z) = &self.time_zone {
            c.time_zone = z.clone();
        }
        c
    }
}

/// Why `basal serve` refuses to start with these options.
#[derive(Debug, thiserror::Error)]
pub enum StartError {
    /// A non-loopback listening address without the explicit consent.
    #[error(
        "refusing to listen on {0}: that address can be reached from other computers, and basal has no accounts yet, \
         so anyone on the network could read, change, delete and export the whole log. Listen on 127.0.0.1 \
         (the default) to use basal on this computer only, or, if everyone on this network may do all that, \
         start again with --allow-anyone-on-the-network (or BASAL_ALLOW_ANYONE_ON_THE_NETWORK=true)"
    )]
    Exposed(SocketAddr),
    /// A `--public-host` that is not a bare host name or address.
    #[error(
        "--public-host {0:?} is not a host name or address: give the bare name browsers use, such as \
         basal.camp or 192.168.1.20, with no scheme, port or path"
    )]
    PublicHost(String),
}

impl Config {
    /// Checks the options before anything is opened or bound: a listener
    /// other computers can reach needs `--allow-anyone-on-the-network`,
    /// and every `--public-host` must be a bare name.
    pub fn check_start(&self) -> Result<(), StartError> {
        if !self.listen.ip().is_loopback() && !self.allow_anyone_on_the_network {
            return Err(StartError::Exposed(self.listen));
        }
        for h in &self.public_hosts {
            let bare = h.parse::<std::net::IpAddr>().is_ok()
                || (h.len() <= 253
                    && h.split('.').all(|label| {
                        !label.is_empty()
                            && label.len() <= 63
                            && label.chars().all(|c| c.is_ascii_alphanumeric() || c == '-')
                    }));
            if !bare {
                return Err(StartError::PublicHost(h.clone()));
            }
        }
        Ok(())
    }

    /// True when the service listens where other computers can reach it.
    pub fn exposed(&self) -> bool {
        !self.listen.ip().is_loopback()
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
    /// The file cannot be read.
    #[error("cannot read {0}: {1}")]
    Read(String, String),
    /// The file as a whole cannot be imported.
    #[error("{0}")]
    Import(String),
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

pub use crate::import::ImportReport;

/// `basal import FILE --project CODE [--dry-run]`.
pub async fn import(
    config: &Config,
    file: &std::path::Path,
    project: &str,
    dry_run: bool,
    author: Option<&str>,
) -> Result<ImportReport, CommandError> {
    import_new(config, file, project, &Default::default(), dry_run, author).await
}

/// `basal import FILE --project CODE [--name NAME] [--scheme SCHEME] [--dry-run]`:
/// `new` names the project and its scheme when the import creates it.
pub async fn import_new(
    config: &Config,
    file: &std::path::Path,
    project: &str,
    new: &crate::import::NewProject,
    dry_run: bool,
    author: Option<&str>,
) -> Result<ImportReport, CommandError> {
    let data = std::fs::read(file)
        .map_err(|e| CommandError::Read(file.display().to_string(), e.to_string()))?;
    let pool = crate::store::open(&config.db).await?;
    let rows = data
        .iter()
        .filter(|b| **b == b'\n')
        .count()
        .saturating_sub(1) as u64;
    let checking = progress_bar(rows, "checking");
    let writing = progress_bar(rows, "writing");
    let report = crate::import::run(
        &pool,
        &data,
        project,
        new,
        dry_run,
        author,
        &|| checking.inc(1),
        &|n| {
            if !checking.is_finished() {
                checking.finish_and_clear();
            }
            writing.set_position(n);
        },
    )
    .await;
    checking.finish_and_clear();
    writing.finish_and_clear();
    pool.close().await;
    report.map_err(|e| match e {
        crate::import::RunError::File(e) => CommandError::Import(e.to_string()),
        crate::import::RunError::Project(e) => CommandError::Import(format!(
            "--{}: {}",
            if e.field == "name" { "name" } else { "scheme" },
            e.message
        )),
        crate::import::RunError::Write(e) => CommandError::Write(e),
        crate::import::RunError::Store(e) => CommandError::Store(e),
    })
}

fn progress_bar(len: u64, what: &'static str) -> indicatif::ProgressBar {
    let bar = indicatif::ProgressBar::new(len);
    if let Ok(style) = indicatif::ProgressStyle::with_template(
        "{msg:>9} [{bar:40}] {pos}/{len} rows ({per_sec}, {eta} left)",
    ) {
        bar.set_style(style.progress_chars("=> "));
    }
    bar.set_message(what);
    bar
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
    use clap::CommandFactory;

    #[test]
    fn no_arguments_means_serve_on_the_defaults() {
        let cli = Cli::try_parse_from(["basal"]).expect("parses");
        assert!(cli.command.is_none());
        let cfg = cli.serve.config();
        assert_eq!(cfg.listen.to_string(), "127.0.0.1:8080");
        assert!(cfg.db.ends_with("basal/basal.sqlite"), "{:?}", cfg.db);
    }

    fn import_changed_by(args: &[&str]) -> (Option<String>, String) {
        let cli = Cli::try_parse_from(args).expect("parses");
        let Some(Command::Import { changed_by, .. }) = cli.command else {
            panic!("not an import: {args:?}");
        };
        let help = Cli::command()
            .find_subcommand_mut("import")
            .expect("import subcommand")
            .render_long_help()
            .to_string();
        (changed_by, help)
    }

    #[test]
    fn import_takes_changed_by_and_still_the_old_author() {
        let (who, help) = import_changed_by(&[
            "basal",
            "import",
            "x.csv",
            "--project",
            "P",
            "--changed-by",
            "Crew A",
        ]);
        assert_eq!(who.as_deref(), Some("Crew A"));
        assert!(help.contains("--changed-by"), "{help}");
        assert!(
            !help.contains("--author <"),
            "the old name stays hidden: {help}"
        );
        let (who, _) = import_changed_by(&[
            "basal",
            "import",
            "x.csv",
            "--project",
            "P",
            "--author",
            "Crew B",
        ]);
        assert_eq!(who.as_deref(), Some("Crew B"), "old scripts keep working");
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
        let config = Config::new(
            "127.0.0.1:0".parse().expect("addr"),
            dir.path().join("live.sqlite"),
        );
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

    #[tokio::test]
    async fn an_export_imports_into_an_empty_database_as_the_same_records() {
        let dir = tempfile::tempdir().expect("tempdir");
        let first = Config::new(
            "127.0.0.1:0".parse().expect("addr"),
            dir.path().join("a.sqlite"),
        );
        demo(&first).await.expect("demo");
        let pool = crate::store::open(&first.db).await.expect("open");
        let filter = crate::store::samples::Filter {
            project: Some("demo".into()),
            ..Default::default()
        };
        let before = crate::store::samples::list(&pool, &filter, 500, None)
            .await
            .expect("list")
            .samples;
        let mut w = csv::Writer::from_writer(Vec::new());
        w.write_record(crate::web::samples_api::CSV_COLUMNS)
            .expect("header");
        for r in &before {
            w.write_record(crate::web::samples_api::csv_row(r))
                .expect("row");
        }
        let file = dir.path().join("export.csv");
        std::fs::write(&file, w.into_inner().expect("csv")).expect("write");

        let second = Config::new(first.listen, dir.path().join("b.sqlite"));
        let dry = import(&second, &file, "demo", true, None)
            .await
            .expect("dry run");
        assert_eq!((dry.valid, dry.written), (before.len(), 0));
        let report = import(&second, &file, "demo", false, Some("round trip"))
            .await
            .expect("import");
        assert!(report.errors.is_empty(), "{:?}", report.errors);
        assert_eq!(report.written, before.len());
        let pool = crate::store::open(&second.db).await.expect("open");
        let after = crate::store::samples::list(&pool, &filter, 500, None)
            .await
            .expect("list")
            .samples;
        assert_eq!(after.len(), before.len());
        for (a, b) in after.iter().zip(&before) {
            let (va, vb) = (
                serde_json::to_value(a).expect("json"),
                serde_json::to_value(b).expect("json"),
            );
            for (k, x) in va.as_object().expect("object") {
                assert_eq!(
                    Some(x),
                    vb.get(k),
                    "{}: field {k} differs after the round trip",
                    b.sample_code
                );
            }
        }
        // A second import of the same file is refused whole: every code is taken.
        let again = import(&second, &file, "demo", false, None)
            .await
            .expect("checked");
        assert_eq!((again.written, again.errors.len()), (0, before.len()));
    }

    #[test]
    fn the_time_zone_is_an_iana_name_and_a_bad_one_is_refused_at_start() {
        let cli = Cli::try_parse_from(["basal", "serve", "--time-zone", "Pacific/Auckland"])
            .expect("parses");
        let cfg = cli.serve.config();
        assert_eq!(cfg.time_zone.iana_name(), Some("Pacific/Auckland"));
        // 2026-12-04 12:30 UTC is 01:30 on the 5th in Auckland (NZDT, UTC+13;
        // arithmetic from the IANA rules).
        let cfg = Config {
            clock: Clock::Fixed("2026-12-04T12:30:00Z".parse().expect("instant")),
            ..cfg
        };
        assert_eq!(cfg.today().to_string(), "2026-12-05");
        for bad in ["Pacific/Aukland", "Mars/Olympus_Mons", "", "+13"] {
            let err = Cli::try_parse_from(["basal", "--time-zone", bad]).expect_err(bad);
            let text = err.to_string();
            assert!(text.contains("--time-zone"), "{bad}: {text}");
            assert!(text.contains("Pacific/Auckland"), "{bad}: {text}");
        }
    }

    #[test]
    fn a_listener_other_computers_can_reach_needs_the_explicit_flag() {
        for addr in ["0.0.0.0:8080", "192.168.1.20:8080", "[::]:8080"] {
            let cli = Cli::try_parse_from(["basal", "serve", "--listen", addr]).expect("parses");
            let err = cli.serve.config().check_start().expect_err(addr);
            let msg = err.to_string();
            assert!(
                msg.contains("--allow-anyone-on-the-network") && msg.contains("no accounts"),
                "{addr}: {msg}"
            );
            let cli = Cli::try_parse_from([
                "basal",
                "serve",
                "--listen",
                addr,
                "--allow-anyone-on-the-network",
            ])
            .expect("parses");
            let cfg = cli.serve.config();
            assert!(cfg.allow_anyone_on_the_network && cfg.exposed());
            assert!(cfg.check_start().is_ok(), "{addr} with the flag");
        }
        for addr in ["127.0.0.1:8080", "127.0.0.2:9000", "[::1]:8080"] {
            let cli = Cli::try_parse_from(["basal", "serve", "--listen", addr]).expect("parses");
            assert!(cli.serve.config().check_start().is_ok(), "{addr}");
        }
    }

    #[test]
    fn public_hosts_repeat_and_must_be_bare_names() {
        let cli = Cli::try_parse_from([
            "basal",
            "--public-host",
            "Basal.Camp.",
            "--public-host",
            "192.168.1.20",
        ])
        .expect("parses");
        let cfg = cli.serve.config();
        assert_eq!(cfg.public_hosts, ["basal.camp", "192.168.1.20"]);
        assert!(cfg.check_start().is_ok());
        for bad in ["http://basal.camp", "basal.camp:8080", "a b", "x/y"] {
            let cli = Cli::try_parse_from(["basal", "--public-host", bad]).expect("parses");
            let err = cli.serve.config().check_start().expect_err(bad);
            assert!(err.to_string().contains("--public-host"), "{bad}: {err}");
        }
    }

    #[test]
    fn a_bad_address_is_refused_with_a_message() {
        let err = Cli::try_parse_from(["basal", "serve", "--listen", "nowhere"]).expect_err("bad");
        assert!(err.to_string().contains("--listen"));
    }
}
