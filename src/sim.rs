//! Running one simulation for a command: the core's `simulate_with` with an
//! optional observer of the command's own, the tracing observer attached
//! only when trace logging is on, and errors given their context.

use crate::cli::RunArgs;
use crate::configs::NamedConfig;
use crate::observe::Trace;
use crate::programs::Loaded;
use anyhow::{Context, Result};
use overlap_core::{NoObserver, Observer, Report, RunOptions, RunSummary, simulate_with};

/// What one run produced.
pub struct Outcome<O> {
    /// The report.
    pub report: Report,
    /// The program's output and exit code.
    pub summary: RunSummary,
    /// The extra observer, after the run.
    pub observer: O,
}

/// Run `program` on `config` with an extra observer.
pub fn run_with<O: Observer>(
    program: &Loaded,
    config: &NamedConfig,
    opts: &RunOptions,
    observer: O,
) -> Result<Outcome<O>> {
    tracing::info!(program = %program.label, config = %config.label, "simulating");
    let context = || {
        format!(
            "simulating '{}' on configuration '{}'",
            program.label, config.label
        )
    };
    let (report, summary, observer) = if tracing::enabled!(tracing::Level::TRACE) {
        let (r, s, (o, _)) =
            simulate_with(&config.config, &program.program, opts, (observer, Trace))
                .with_context(context)?;
        (r, s, o)
    } else {
        simulate_with(&config.config, &program.program, opts, observer).with_context(context)?
    };
    tracing::info!(
        program = %program.label,
        config = %config.label,
        cycles = report.cycles,
        instructions = report.instructions,
        seconds = report.host.seconds,
        "finished"
    );
    Ok(Outcome {
        report,
        summary,
        observer,
    })
}

/// Run `program` on `config`.
pub fn run(
    program: &Loaded,
    config: &NamedConfig,
    opts: &RunOptions,
) -> Result<Outcome<NoObserver>> {
    run_with(program, config, opts, NoObserver)
}

/// Options from the common flags for `program`: measured from its kernel
/// marker unless `whole_run`.
pub fn options(run: &RunArgs, program: &Loaded) -> RunOptions {
    let opts = RunOptions {
        max_insts: run.max_insts,
        step_every_cycle: run.step_every_cycle,
        ..RunOptions::default()
    };
    if run.whole_run {
        opts
    } else {
        opts.measure_from_marker(&program.program)
    }
}

/// Show what the simulated program printed on our standard error, cut to a
/// few lines, so it never mixes with a report on standard output.
pub fn echo_program_output(label: &str, summary: &RunSummary) {
    const LIMIT: usize = 2048;
    for (name, bytes) in [("stdout", &summary.stdout), ("stderr", &summary.stderr)] {
        if bytes.is_empty() {
            continue;
        }
        let shown = &bytes[..bytes.len().min(LIMIT)];
        let text = String::from_utf8_lossy(shown);
        eprintln!("── {label} wrote {} bytes to its {name}:", bytes.len());
        eprint!("{text}");
        if !text.ends_with('\n') {
            eprintln!();
        }
        if bytes.len() > LIMIT {
            eprintln!("── ({} more bytes not shown)", bytes.len() - LIMIT);
        }
    }
}
