//! `overlap run`: one program on one configuration.

use crate::cli::{Format, OutputArgs, SimArgs};
use crate::configs::DEFAULT_CONFIG;
use crate::output;
use crate::render::{self, Row, Truncation};
use crate::sim;
use anyhow::{Result, bail};
use overlap_core::Report;
use serde::Serialize;
use std::collections::BTreeMap;
use std::process::ExitCode;

/// `run --format json`: the report's own keys at the top level (the
/// documented schema), followed by what names the run.
#[derive(Serialize)]
struct JsonRun<'a> {
    #[serde(flatten)]
    report: &'a Report,
    program: &'a str,
    params: &'a BTreeMap<String, String>,
    config: &'a str,
    set: &'a [String],
}

/// Run the command.
pub fn run(program: &str, sim: &SimArgs, output: &OutputArgs) -> Result<ExitCode> {
    if sim.config.configs.len() > 1 {
        bail!("run takes one --config; use `overlap compare` for several");
    }
    let (mut named, loaded) = super::resolve(Some(program), sim, &[DEFAULT_CONFIG])?;
    let named = named.remove(0);
    let (run, out) = (&sim.run, output.out.as_deref());
    if let Some(p) = out {
        output::check_writable_dir(p)?;
    }
    let opts = sim::options(run, &loaded);
    let outcome = sim::run(&loaded, &named, &opts)?;
    sim::echo_program_output(&loaded.label, &outcome.summary);
    let r = &outcome.report;
    let text = match output.format {
        Format::Table => {
            let kind = Truncation::of(r, loaded.kernel_start().is_some() && !run.whole_run);
            render::run_table(
                &loaded.title(),
                &named.described(),
                &named.config,
                r,
                render::truncation_note("the run", kind, run.max_insts),
            )
        }
        Format::Json => {
            let doc = JsonRun {
                program: &loaded.label,
                params: &loaded.params,
                config: &named.label,
                set: &named.sets,
                report: r,
            };
            serde_json::to_string_pretty(&doc)? + "\n"
        }
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
