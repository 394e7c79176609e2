//! One module per command. Each turns the raw flags into programs and
//! configurations, runs the simulations and renders the output.

pub mod baseline;
pub mod compare;
pub mod listing;
pub mod report;
pub mod run;
pub mod sweep;
pub mod timeline;

use crate::cli::{ProgramArgs, SimArgs};
use crate::configs::{self, NamedConfig};
use crate::programs::{self, Loaded};
use anyhow::Result;

/// Load PROGRAM (or the default program when it is `None`) with its `--param`s.
pub fn load_program(spec: Option<&str>, args: &ProgramArgs) -> Result<Loaded> {
    let params = programs::parse_params(&args.params)?;
    programs::load_or_default(spec, &params)
}

/// The configurations of `--config` (`defaults` when none is named) with
/// the `--set` overrides applied, and PROGRAM (or the default program) with
/// its `--param`s; the flags are checked in that order.
pub fn resolve(
    program: Option<&str>,
    sim: &SimArgs,
    defaults: &[&str],
) -> Result<(Vec<NamedConfig>, Loaded)> {
    let overrides = configs::parse_overrides(&sim.config.sets)?;
    let named = configs::resolve(&sim.config.configs, &overrides, defaults)?;
    let loaded = load_program(program, &sim.program_args)?;
    Ok((named, loaded))
}

/// A rayon pool of `jobs` threads (default: one per core).
pub fn pool(jobs: Option<usize>) -> Result<rayon::ThreadPool> {
    let mut b = rayon::ThreadPoolBuilder::new();
    if let Some(n) = jobs {
        anyhow::ensure!(n > 0, "--jobs must be at least 1");
        b = b.num_threads(n);
    }
    Ok(b.build()?)
}
