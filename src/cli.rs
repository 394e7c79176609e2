//! Command-line definitions and dispatch. Parsing happens in two steps:
//! clap turns the arguments into these raw, typed flags; each command in
//! [`crate::cmd`] then builds the objects it needs (programs, configurations)
//! and reports errors with the flag that caused them.

use crate::cmd;
use anyhow::Result;
use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;
use std::process::ExitCode;

/// Cycle-level out-of-order core and memory pipeline simulator with exact stall attribution.
#[derive(Parser, Debug)]
#[command(name = "overlap", version, about)]
pub struct Cli {
    /// More log output on standard error (-v: info, -vv: debug, -vvv: every
    /// pipeline event). RUST_LOG, when set, takes precedence.
    #[arg(short, long, action = clap::ArgAction::Count, global = true)]
    pub verbose: u8,
    #[command(subcommand)]
    pub command: Command,
}

/// Output formats of the tabular commands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned text for a terminal.
    Table,
    /// JSON (the documented report schema).
    Json,
    /// CSV with a header row.
    Csv,
}

/// PROGRAM and its workload parameters.
#[derive(Args, Debug, Clone)]
pub struct ProgramArgs {
    /// Workload parameter NAME=VALUE (repeatable).
    #[arg(long = "param", value_name = "NAME=VALUE")]
    pub params: Vec<String>,
}

/// How to run: limits, stepping and the measured region.
#[derive(Args, Debug, Clone, Default)]
pub struct RunArgs {
    /// Stop after this many instructions, counted from the program's start
    /// (set-up included); the report is marked truncated.
    #[arg(long, value_name = "N")]
    pub max_insts: Option<u64>,
    /// Simulate every cycle instead of jumping over idle stretches (the
    /// results are identical; this is for testing the model).
    #[arg(long)]
    pub step_every_cycle: bool,
    /// Report the whole run. By default, when the program marks its kernel
    /// with a `measure_start` label (every built-in workload does), the
    /// set-up before it runs in the timing model as a warm-up and is left
    /// out of the figures.
    #[arg(long)]
    pub whole_run: bool,
}

/// Configurations and overrides.
#[derive(Args, Debug, Clone)]
pub struct ConfigArgs {
    /// A preset (blocking, hit-under-miss, miss-under-miss) or a RON file
    /// (repeatable where several configurations make sense).
    #[arg(long = "config", value_name = "PRESET|FILE.ron")]
    pub configs: Vec<String>,
    /// Override one field, PATH=RON-VALUE (e.g. l1d.mshrs=4, l1d.mode=Blocking);
    /// repeatable, applied in order after the configuration is loaded.
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub sets: Vec<String>,
}

/// What every simulating command takes besides PROGRAM: its workload
/// parameters, the configurations and how to run.
#[derive(Args, Debug, Clone)]
pub struct SimArgs {
    #[command(flatten)]
    pub program_args: ProgramArgs,
    #[command(flatten)]
    pub config: ConfigArgs,
    #[command(flatten)]
    pub run: RunArgs,
}

/// Where and in which format a tabular command writes its output.
#[derive(Args, Debug, Clone)]
pub struct OutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Write the output to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Simulate one program on one configuration and report the cycle ledger,
    /// the waiting matrix, memory-level parallelism, caches and branches.
    Run {
        /// A built-in workload name, an assembly file (.s) or an RV64 ELF executable.
        program: String,
        #[command(flatten)]
        sim: SimArgs,
        #[command(flatten)]
        output: OutputArgs,
    },
    /// Run one program on several configurations in parallel (default: the
    /// three presets) and compare them side by side.
    Compare {
        /// A built-in workload name, an assembly file (.s) or an RV64 ELF
        /// executable (default: hitmiss with 8 hits after each independent
        /// miss, where the three presets differ clearly).
        program: Option<String>,
        #[command(flatten)]
        sim: SimArgs,
        #[command(flatten)]
        output: OutputArgs,
        /// Also draw the ledgers as stacked bars into this SVG file.
        #[arg(long, value_name = "FILE")]
        svg: Option<PathBuf>,
    },
    /// Run a grid of configurations (every combination of --vary values) in
    /// parallel, appending one JSON line per finished point.
    Sweep(cmd::sweep::SweepArgs),
    /// Join sweep result files (shards) into one, without duplicates, in point order.
    Merge {
        /// Result files written by `overlap sweep --out`.
        #[arg(required = true)]
        inputs: Vec<PathBuf>,
        /// The merged file (not overwritten unless --force).
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// Replace --out if it exists.
        #[arg(long)]
        force: bool,
    },
    /// Record a baseline: every entry of a suite on every configuration.
    Baseline {
        /// Suite name (quick, standard).
        #[arg(long)]
        suite: String,
        #[command(flatten)]
        config: ConfigArgs,
        /// The baseline file to write.
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// Parallel runs (default: one per core).
        #[arg(long, value_name = "N")]
        jobs: Option<usize>,
    },
    /// Re-run a baseline and show every metric that moved. Exit status 0 when
    /// all moves are within tolerance, 1 when one is beyond it, 2 on an error.
    Check {
        /// A file written by `overlap baseline`.
        file: PathBuf,
        /// Largest allowed change, in percent of the recorded value ("2%" or "2").
        #[arg(long, default_value = "0%")]
        tolerance: String,
        /// Metrics to compare, comma-separated (default: all recorded ones;
        /// `ledger` stands for every ledger bucket).
        #[arg(long, value_delimiter = ',')]
        metrics: Vec<String>,
        /// Use the current definition of this configuration (a preset or RON
        /// file whose label was recorded) instead of the recorded one.
        #[arg(long = "config", value_name = "PRESET|FILE.ron")]
        configs: Vec<String>,
        /// Override a field of every recorded configuration, PATH=VALUE.
        #[arg(long = "set", value_name = "PATH=VALUE")]
        sets: Vec<String>,
        /// Parallel runs (default: one per core).
        #[arg(long, value_name = "N")]
        jobs: Option<usize>,
    },
    /// Draw, per configuration, instructions retired per cycle above
    /// outstanding misses per cycle over a window of cycles.
    Timeline(cmd::timeline::TimelineArgs),
    /// Write a self-contained HTML page comparing configurations on one program.
    Report(cmd::report::ReportArgs),
    /// List the built-in workloads and their parameters.
    Workloads {
        /// Output format (table or json).
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
    },
    /// List the built-in configuration presets.
    Presets,
    /// Print a preset's full configuration as RON (a starting point for a file).
    Preset {
        /// Preset name.
        name: String,
    },
    /// Run a program on the functional model only; print its output, exit code and
    /// instruction count. Exits with the program's exit code.
    Exec {
        /// A built-in workload name, an assembly file (.s) or an RV64 ELF executable.
        program: String,
        #[command(flatten)]
        program_args: ProgramArgs,
        /// Stop with an error after this many instructions.
        #[arg(long)]
        max_insts: Option<u64>,
    },
}

/// Run the command; the exit code is 0 on success unless the command says
/// otherwise (`check`: 1 for a regression; `exec`: the program's code).
pub fn dispatch(cli: Cli) -> Result<ExitCode> {
    match cli.command {
        Command::Run {
            program,
            sim,
            output,
        } => cmd::run::run(&program, &sim, &output),
        Command::Compare {
            program,
            sim,
            output,
            svg,
        } => cmd::compare::compare(program.as_deref(), &sim, &output, svg.as_deref()),
        Command::Sweep(args) => cmd::sweep::sweep(&args),
        Command::Merge { inputs, out, force } => cmd::sweep::merge(&inputs, &out, force),
        Command::Baseline {
            suite,
            config,
            out,
            jobs,
        } => cmd::baseline::record(&suite, &config, &out, jobs),
        Command::Check {
            file,
            tolerance,
            metrics,
            configs,
            sets,
            jobs,
        } => cmd::baseline::check(&file, &tolerance, &metrics, &configs, &sets, jobs),
        Command::Timeline(args) => cmd::timeline::timeline(&args),
        Command::Report(args) => cmd::report::report(&args),
        Command::Workloads { format } => cmd::listing::workloads(format),
        Command::Presets => cmd::listing::presets(),
        Command::Preset { name } => cmd::listing::preset(&name),
        Command::Exec {
            program,
            program_args,
            max_insts,
        } => cmd::listing::exec(&program, &program_args, max_insts),
    }
}
