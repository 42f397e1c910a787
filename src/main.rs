//! The `basal` binary: parse options, start tracing, open the database,
//! serve until Ctrl-C or SIGTERM.

use clap::Parser;

use basal::cli::{Cli, Command};

#[tokio::main]
async fn main() -> std::process::ExitCode {
    let cli = Cli::parse();
    basal::web::init_tracing();
    let result = match cli.command.unwrap_or(Command::Serve) {
        Command::Serve => basal::web::serve(cli.serve.config()).await,
    };
    match result {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("basal: {e}");
            std::process::ExitCode::FAILURE
        }
    }
}
