//! The run report: what one simulation measured, serialisable as the stable
//! JSON schema documented in the README (`schema` is its version).

use crate::counters::Branches;
use crate::ledger::Episodes;
use indexmap::IndexMap;
use overlap_mem::{CacheStats, DramStats};
use serde::{Deserialize, Serialize};

/// Version of the report schema; bumped on any incompatible change.
pub const SCHEMA_VERSION: u32 = 1;

/// Everything one run measured.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// Schema version ([`SCHEMA_VERSION`]).
    pub schema: u32,
    /// Simulated cycles.
    pub cycles: u64,
    /// Retired instructions.
    pub instructions: u64,
    /// Instructions per cycle.
    pub ipc: f64,
    /// The cycle ledger: bucket key to cycles, summing to `cycles`.
    pub ledger: IndexMap<String, u64>,
    /// The waiting matrix: bucket key to (what the oldest instruction waited for, to cycles).
    pub waiting: IndexMap<String, IndexMap<String, u64>>,
    /// Stall episodes.
    pub episodes: Episodes,
    /// Memory-level parallelism.
    pub mlp: Mlp,
    /// Per-cache counters, keyed `l1i`, `l1d`, `l2`, `l3` (present levels only).
    pub caches: IndexMap<String, CacheStats>,
    /// DRAM counters.
    pub dram: DramStats,
    /// Branch prediction.
    pub branches: Branches,
    /// Retired instructions per op class.
    pub retired_by_class: IndexMap<String, u64>,
    /// The program's exit code (`None` when the run stopped at an instruction limit).
    pub exit_code: Option<i64>,
    /// The run stopped at the instruction limit.
    pub truncated: bool,
    /// The warm-up left out of every figure above, when measurement started at
    /// the program's marker (`null` when the whole run was measured).
    pub warmup: Option<Warmup>,
    /// Host time and speed of the simulation.
    pub host: Host,
}

/// Memory-level parallelism: average outstanding misses over the cycles with
/// at least one outstanding (Chou, Fahs and Abraham, ISCA 2004).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Mlp {
    /// Outstanding L1D demand misses.
    pub l1d: f64,
    /// Outstanding DRAM demand reads.
    pub dram: f64,
    /// Cycles with k outstanding L1D misses, index k.
    pub l1d_histogram: Vec<u64>,
    /// Cycles with k outstanding DRAM reads, index k.
    pub dram_histogram: Vec<u64>,
}

/// What ran before measurement started.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Warmup {
    /// Cycles before the region of interest.
    pub cycles: u64,
    /// Instructions retired before the region of interest.
    pub instructions: u64,
}

/// Host-side figures: they vary between runs and are excluded from comparisons.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Host {
    /// Wall time of the simulation itself, without loading the program.
    pub seconds: f64,
    /// Simulated millions of instructions per host second (warm-up included:
    /// it was simulated too).
    pub mips: f64,
}

/// `num / den` as a float, 0 when `den` is 0 (an empty run has no rates).
pub fn ratio(num: u64, den: u64) -> f64 {
    if den == 0 {
        0.0
    } else {
        num as f64 / den as f64
    }
}

impl Report {
    /// The report with host figures zeroed, for comparing runs.
    pub fn without_host(&self) -> Report {
        Report {
            host: Host::default(),
            ..self.clone()
        }
    }
}
