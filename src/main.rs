//! The `basal` binary: parse options, start tracing, open the database,
//! serve until Ctrl-C or SIGTERM.

use clap::Parser;

use basal::cli::{Cli, Command};

#[tokio::main]
async fn main() -> std::process::ExitCode {
    let cli = Cli::parse();
    basal::web::init_tracing();
    let config = cli.serve.config();
    let result: Result<(), Box<dyn std::error::Error>> = match cli.command.unwrap_or(Command::Serve)
    {
        Command::Serve => basal::web::serve(config).await.map_err(Into::into),
        Command::Backup { path } => basal::cli::backup(&config, &path)
            .await
            .map_err(Into::into)
            .map(|bytes| {
                println!(
                    "backup of {} written to {} ({bytes} bytes)",
                    config.db.display(),
                    path.display()
                );
            }),
        Command::Demo => basal::cli::demo(&config)
            .await
            .map_err(Into::into)
            .map(|n| {
                println!(
                    "loaded {n} demo samples into project \"demo\" of {}",
                    config.db.display()
                );
            }),
    };
    match result {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("basal: {e}");
            std::process::ExitCode::FAILURE
        }
    }
}
