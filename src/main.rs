//! `overlap`: the command line. Glue between the user and the crates: it
//! parses arguments, loads programs and configurations, runs the simulator
//! and writes reports. Only this package does file I/O and output formats.
//!
//! Exit status: 0 on success, 1 when `overlap check` finds a metric moved
//! beyond its tolerance, 2 on any error (with a message on standard error).

mod cli;
mod cmd;
mod configs;
mod metrics;
mod observe;
mod output;
mod programs;
mod render;
mod sim;
mod svg;
mod table;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args = cli::Cli::parse();
    init_logging(args.verbose);
    match cli::dispatch(args) {
        Ok(code) => code,
        Err(err) => {
            eprintln!("error: {err:#}");
            ExitCode::from(2)
        }
    }
}

/// Log to standard error: `RUST_LOG` when set, else by `-v` count. Colours
/// only when standard error is a terminal, so a log redirected to a file
/// holds plain text.
fn init_logging(verbose: u8) {
    use std::io::IsTerminal;
    use tracing_subscriber::EnvFilter;
    let filter = match std::env::var("RUST_LOG") {
        Ok(spec) if !spec.is_empty() => EnvFilter::new(spec),
        _ => EnvFilter::new(match verbose {
            0 => "warn",
            1 => "info",
            2 => "debug",
            _ => "trace",
        }),
    };
    tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr)
        .with_ansi(std::io::stderr().is_terminal())
        .with_target(false)
        .init();
}
