//! `overlap run`: one program on one configuration.

use crate::cli::{ConfigArgs, Format, ProgramArgs, RunArgs};
use crate::configs::{self, DEFAULT_CONFIG};
use crate::output;
use crate::render::{self, Row};
use crate::sim;
use anyhow::{Result, bail};
use std::path::Path;
use std::process::ExitCode;

/// Run the command.
pub fn run(
    program: &str,
    program_args: &ProgramArgs,
    config: &ConfigArgs,
    run: &RunArgs,
    format: Format,
    out: Option<&Path>,
) -> Result<ExitCode> {
    if config.configs.len() > 1 {
        bail!("run takes one --config; use `overlap compare` for several");
    }
    let overrides = configs::parse_overrides(&config.sets)?;
    let named = configs::resolve(&config.configs, &overrides, &[DEFAULT_CONFIG])?.remove(0);
    let loaded = super::load_program(Some(program), program_args)?;
    if let Some(p) = out {
        output::check_writable_dir(p)?;
    }
    let opts = sim::options(run, &loaded);
    let outcome = sim::run(&loaded, &named, &opts)?;
    sim::echo_program_output(&loaded.label, &outcome.summary);
    let r = &outcome.report;
    let text = match format {
        Format::Table => render::run_table(&loaded.title(), &named.label, &named.config, r),
        Format::Json => serde_json::to_string_pretty(r)? + "\n",
        Format::Csv => render::csv(&[Row {
            program: &loaded.label,
            config: &named.label,
            machine: &named.config,
            report: r,
        }]),
    };
    output::emit(out, &text)?;
    Ok(ExitCode::SUCCESS)
}
