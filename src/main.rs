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
        Command::Import {
            file,
            project,
            dry_run,
            changed_by,
            scheme,
            name,
        } => match basal::cli::import_new(
            &config,
            &file,
            &project,
            &basal::import::NewProject {
                name,
                code_scheme: scheme,
            },
            dry_run,
            changed_by.as_deref(),
        )
        .await
        {
            Err(e) => Err(e.into()),
            Ok(r) if !r.errors.is_empty() => {
                for e in &r.errors {
                    eprintln!("{e}");
                }
                Err(format!(
                        "{} of {} rows refused; nothing was written. Fix them and import again (--dry-run checks without writing).",
                        r.errors.len(),
                        r.errors.len() + r.valid
                    )
                    .into())
            }
            Ok(r) if dry_run => {
                println!(
                    "dry run: all {} rows are valid; nothing was written",
                    r.valid
                );
                Ok(())
            }
            Ok(r) => {
                println!(
                    "imported {} samples into project {project} of {}",
                    r.written,
                    config.db.display()
                );
                Ok(())
            }
        },
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
