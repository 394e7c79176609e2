//! The out-of-order timing core for overlap: configuration, the cycle-level
//! machine, the cycle ledger and run statistics.
//!
//! The functional model in `overlap-isa` yields the program's dynamic
//! instructions; this crate decides *when* each one is fetched, dispatched,
//! issued, completed and retired, through a front end with branch prediction,
//! rename, reservation stations, functional units, a load/store queue and the
//! `overlap-mem` hierarchy. The mechanics report events to an [`Observer`];
//! the [`Ledger`] and the [`Counters`] are observers.
//!
//! Invariants: the core never computes values (the functional model does);
//! it reaches memory only through `overlap-mem`'s interface; the mechanics
//! never read statistics; a run is deterministic and idle skipping changes
//! nothing in its results.
//!
//! ```no_run
//! use overlap_core::{Config, RunOptions, simulate};
//! # fn program() -> overlap_isa::Program { unimplemented!() }
//! let config = Config::preset("miss-under-miss").unwrap();
//! let report = simulate(&config, &program(), &RunOptions::default()).unwrap();
//! assert_eq!(report.ledger.values().sum::<u64>(), report.cycles);
//! ```
#![deny(missing_docs)]

mod commit;
pub mod config;
mod counters;
mod dispatch;
mod fetch;
pub mod ledger;
mod lsq;
pub mod observer;
mod pipeline;
pub mod predictor;
mod rename;
pub mod report;
mod ring;
mod rob;
mod stations;
mod units;

pub use config::{Config, ConfigError, CoreConfig, Disambiguation, PredictorConfig, PredictorKind};
pub use counters::{Branches, Counters};
pub use ledger::{FIXED_BUCKETS, Ledger, LedgerReport};
pub use observer::{CycleState, NoObserver, Observer, Waiting};
pub use pipeline::structure_names;
pub use report::{Host, Mlp, Report, SCHEMA_VERSION, Warmup};

use indexmap::IndexMap;
use overlap_isa::Program;
use overlap_isa::machine::{ExecError, Machine, MachineConfig};
use overlap_mem::{Hierarchy, HierarchyStats};
use std::fmt;
use std::time::Instant;

/// How to run (as opposed to what machine to model).
#[derive(Clone, Debug, Default)]
pub struct RunOptions {
    /// Stop fetching after this many instructions.
    pub max_insts: Option<u64>,
    /// Simulate every cycle instead of jumping over idle stretches (for tests:
    /// the results are identical either way).
    pub step_every_cycle: bool,
    /// The functional model's settings (memory cap, stack).
    pub machine: MachineConfig,
    /// Measure from the first retirement of the instruction at this pc (the
    /// region of interest); everything before is a warm-up that runs in the
    /// timing model but is left out of the report. `None` measures the whole run.
    pub measure_from: Option<u64>,
}

impl RunOptions {
    /// Measure from the program's `measure_start` symbol when it has one
    /// (the built-in workloads put it after their data set-up).
    pub fn measure_from_marker(mut self, program: &Program) -> RunOptions {
        self.measure_from = program.symbols.get(MEASURE_MARKER).copied();
        self
    }
}

/// The symbol that marks the start of a program's region of interest.
pub const MEASURE_MARKER: &str = "measure_start";

/// Why a run failed.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// The configuration is invalid.
    #[error(transparent)]
    Config(#[from] ConfigError),
    /// The program could not be loaded.
    #[error("{0}")]
    Load(ExecError),
    /// The functional model stopped with an error (illegal instruction, bad address...).
    #[error("the program failed: {0}")]
    Exec(ExecError),
    /// The timing model stopped retiring instructions.
    #[error("{0}")]
    Deadlock(Box<DeadlockDump>),
}

/// The state of the machine when the watchdog fired.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DeadlockDump {
    /// Cycle at which the watchdog fired.
    pub cycle: u64,
    /// Cycle of the last commit.
    pub last_commit: u64,
    /// The oldest instructions in the window with their state.
    pub oldest: Vec<String>,
    /// Structures with no free entry.
    pub full: Vec<String>,
    /// What the front end is doing.
    pub front_end: String,
    /// Outstanding misses in the memory pipeline.
    pub outstanding: Vec<String>,
}

impl fmt::Display for DeadlockDump {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "model deadlock: no instruction retired from cycle {} to cycle {}",
            self.last_commit, self.cycle
        )?;
        writeln!(f, "front end: {}", self.front_end)?;
        writeln!(f, "oldest instructions in the window:")?;
        if self.oldest.is_empty() {
            writeln!(f, "  none: the window is empty")?;
        }
        for line in &self.oldest {
            writeln!(f, "  {line}")?;
        }
        writeln!(
            f,
            "full structures: {}",
            if self.full.is_empty() {
                "none".to_string()
            } else {
                self.full.join(", ")
            }
        )?;
        write!(f, "outstanding misses:")?;
        if self.outstanding.is_empty() {
            write!(f, " none")?;
        }
        for line in &self.outstanding {
            write!(f, "\n  {line}")?;
        }
        Ok(())
    }
}

/// What the timing model measured, before the observers' reports are added.
#[derive(Clone, Debug)]
pub struct RunSummary {
    /// Simulated cycles.
    pub cycles: u64,
    /// Retired instructions.
    pub instructions: u64,
    /// The program's exit code, if it exited.
    pub exit_code: Option<i64>,
    /// Bytes the program wrote to its standard output.
    pub stdout: Vec<u8>,
    /// Bytes the program wrote to its standard error.
    pub stderr: Vec<u8>,
    /// The run stopped at the instruction limit.
    pub truncated: bool,
    /// Cycles and instructions of the warm-up left out of the figures
    /// (`None` when the whole run was measured).
    pub warmup: Option<(u64, u64)>,
    /// Memory pipeline counters.
    pub memory: HierarchyStats,
    /// Wall time of the simulation loop.
    pub host_seconds: f64,
}

/// Run the timing model with any observer.
pub fn run_with<O: Observer>(
    config: &Config,
    program: &Program,
    opts: &RunOptions,
    observer: O,
) -> Result<(RunSummary, O), RunError> {
    config.validate()?;
    let machine = Machine::new(program, opts.machine.clone()).map_err(RunError::Load)?;
    let mem = Hierarchy::new(&config.hierarchy())
        .map_err(|p| RunError::Config(ConfigError::Invalid(p)))?;
    let mut pipe = pipeline::Pipeline::new(config, machine, mem, opts.max_insts, observer);
    pipe.front.predictor = Some(predictor::Predictor::new(&config.predictor));
    pipe.measure_pc = opts.measure_from;
    let start = Instant::now();
    let finished = pipe.run(opts.step_every_cycle)?;
    let host_seconds = start.elapsed().as_secs_f64();
    let summary = RunSummary {
        cycles: finished.cycles,
        instructions: finished.instructions,
        exit_code: pipe.machine.exit_code(),
        stdout: pipe.machine.stdout().to_vec(),
        stderr: pipe.machine.stderr().to_vec(),
        truncated: pipe.front.truncated,
        warmup: finished.warmup,
        memory: pipe.mem.stats(finished.end),
        host_seconds,
    };
    Ok((summary, pipe.obs))
}

/// Run with the ledger and the counters, plus an extra observer of your own
/// (pass [`NoObserver`] for none), and build the report.
pub fn simulate_with<O: Observer>(
    config: &Config,
    program: &Program,
    opts: &RunOptions,
    extra: O,
) -> Result<(Report, RunSummary, O), RunError> {
    let ledger = Ledger::new(&structure_names(config));
    let (summary, (ledger, counters, extra)) =
        run_with(config, program, opts, (ledger, Counters::default(), extra))?;
    let end = summary.cycles + summary.warmup.map_or(0, |(cycles, _)| cycles);
    let report = build_report(&summary, ledger.finish(end), counters);
    Ok((report, summary, extra))
}

/// Run with the ledger and the counters and build the report.
pub fn simulate(config: &Config, program: &Program, opts: &RunOptions) -> Result<Report, RunError> {
    simulate_with(config, program, opts, NoObserver).map(|(r, _, _)| r)
}

fn build_report(s: &RunSummary, ledger: LedgerReport, counters: Counters) -> Report {
    let m = &s.memory;
    let mut caches = IndexMap::new();
    if let Some(c) = &m.l1i {
        caches.insert("l1i".to_string(), c.clone());
    }
    caches.insert("l1d".to_string(), m.l1d.clone());
    caches.insert("l2".to_string(), m.l2.clone());
    if let Some(c) = &m.l3 {
        caches.insert("l3".to_string(), c.clone());
    }
    let mut branches = counters.branches;
    let wrong = branches.conditional_mispredicts + branches.jump_mispredicts;
    branches.mpki = report::ratio(wrong * 1000, s.instructions);
    let retired_by_class = overlap_isa::OpClass::ALL
        .iter()
        .map(|c| {
            (
                format!("{c:?}").to_lowercase(),
                counters.retired_by_class[*c as usize],
            )
        })
        .collect();
    Report {
        schema: SCHEMA_VERSION,
        cycles: s.cycles,
        instructions: s.instructions,
        ipc: report::ratio(s.instructions, s.cycles),
        ledger: ledger.ledger,
        waiting: ledger.waiting,
        episodes: ledger.episodes,
        mlp: Mlp {
            l1d: m.l1d.mlp,
            dram: m.dram.mlp,
            l1d_histogram: m.l1d.outstanding_hist.clone(),
            dram_histogram: m.dram.outstanding_hist.clone(),
        },
        caches,
        dram: m.dram.clone(),
        branches,
        retired_by_class,
        exit_code: s.exit_code,
        truncated: s.truncated,
        warmup: s.warmup.map(|(cycles, instructions)| Warmup {
            cycles,
            instructions,
        }),
        host: Host {
            seconds: s.host_seconds,
            // Every simulated instruction took host time, warm-up included.
            mips: if s.host_seconds > 0.0 {
                (s.instructions + s.warmup.map_or(0, |(_, i)| i)) as f64 / s.host_seconds / 1e6
            } else {
                0.0
            },
        },
    }
}
