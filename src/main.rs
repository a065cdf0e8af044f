//! The `pathsieve` command: parses arguments, calls the library, renders the result.
//! Exit codes: 0 success (or a clean cycle), 1 leaks found or no design, 2 usage or input error,
//! 3 design interrupted (best cycle so far written, marked not proven minimal), 130 interrupted
//! by SIGINT/SIGTERM (nothing written, temporaries removed).

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args = cli::Cli::parse();
    cli::signals::install();
    match cli::run(args) {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            if cli::is_broken_pipe(&e) {
                return ExitCode::SUCCESS;
            }
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}
