//! Configuration of the memory pipeline: one [`CacheConfig`] per cache, the
//! [`DramConfig`], the [`PrefetchConfig`] and the [`HierarchyConfig`] that
//! holds them all, each with a `Default` taken from common practice and a
//! `validate` method that reports every invalid value at once, with its path.
//!
//! Configurations are plain data (serde, unknown fields rejected); nothing here
//! knows about time. [`crate::Hierarchy::new`] validates before it builds.

use serde::{Deserialize, Serialize};

/// How a cache behaves while it has a miss outstanding.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum CacheMode {
    /// While a miss is outstanding the cache serves nothing else, hits included
    /// (it is locked up until the fill). One miss at a time.
    Blocking,
    /// One miss outstanding; hits are served under it and requests for the
    /// missing line merge into it; the next primary miss waits.
    HitUnderMiss,
    /// Up to `mshrs` primary misses outstanding; hits are served; when every
    /// register is busy the next primary miss waits.
    MissUnderMiss,
}

/// Which line of a full set a fill evicts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Replacement {
    /// Least recently used (exact, with per-line recency stamps).
    Lru,
    /// Tree pseudo-LRU: one bit per inner node of a binary tree over the ways
    /// (needs a power-of-two number of ways, at most 64).
    TreePlru,
    /// A uniformly drawn way, from a generator seeded with [`CacheConfig::seed`].
    Random,
}

/// One cache: geometry, latency, bandwidth, replacement and miss handling.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CacheConfig {
    /// Capacity in bytes (a multiple of `line_bytes`).
    pub size_bytes: u64,
    /// Associativity: lines per set. Must divide the number of lines, and the
    /// resulting number of sets must be a power of two.
    pub ways: u32,
    /// Line size in bytes (a power of two; equal at every level).
    pub line_bytes: u32,
    /// Tag check and data access time in cycles (at least 1). A hit is ready
    /// `hit_cycles` after it is accepted; a miss is sent down after it.
    pub hit_cycles: u32,
    /// Accesses accepted per cycle (at least 1).
    pub ports: u32,
    /// Victim selection.
    pub replacement: Replacement,
    /// Seed of the victim generator when `replacement` is `Random`.
    pub seed: u64,
    /// Behaviour while a miss is outstanding.
    pub mode: CacheMode,
    /// Miss-holding registers, used in `MissUnderMiss` mode; the other modes
    /// have exactly one.
    pub mshrs: u32,
    /// Requests one register can hold for its line (the primary included).
    pub mshr_targets: u32,
}

impl Default for CacheConfig {
    fn default() -> Self {
        Self::l1d()
    }
}

impl CacheConfig {
    /// First-level data cache: 32 KiB, 8-way, 64 B lines, 4 cycles, 2 ports,
    /// 8 miss registers of 4 targets, miss-under-miss.
    // common practice
    pub fn l1d() -> Self {
        Self {
            size_bytes: 32 * 1024,
            ways: 8,
            line_bytes: 64,
            hit_cycles: 4,
            ports: 2,
            replacement: Replacement::Lru,
            seed: 1,
            mode: CacheMode::MissUnderMiss,
            mshrs: 8,
            mshr_targets: 4,
        }
    }

    /// First-level instruction cache: 32 KiB, 8-way, 64 B lines, 1 cycle,
    /// 1 port, 2 miss registers of 4 targets.
    // common practice
    pub fn l1i() -> Self {
        Self {
            size_bytes: 32 * 1024,
            ways: 8,
            line_bytes: 64,
            hit_cycles: 1,
            ports: 1,
            replacement: Replacement::Lru,
            seed: 1,
            mode: CacheMode::MissUnderMiss,
            mshrs: 2,
            mshr_targets: 4,
        }
    }

    /// Second-level cache: 1 MiB, 16-way, 64 B lines, 14 cycles, 1 port,
    /// 16 miss registers of 8 targets.
    // common practice
    pub fn l2() -> Self {
        Self {
            size_bytes: 1024 * 1024,
            ways: 16,
            line_bytes: 64,
            hit_cycles: 14,
            ports: 1,
            replacement: Replacement::Lru,
            seed: 1,
            mode: CacheMode::MissUnderMiss,
            mshrs: 16,
            mshr_targets: 8,
        }
    }

    /// Third-level cache: 8 MiB, 16-way, 64 B lines, 40 cycles, 1 port,
    /// 32 miss registers of 8 targets.
    // common practice
    pub fn l3() -> Self {
        Self {
            size_bytes: 8 * 1024 * 1024,
            ways: 16,
            line_bytes: 64,
            hit_cycles: 40,
            ports: 1,
            replacement: Replacement::Lru,
            seed: 1,
            mode: CacheMode::MissUnderMiss,
            mshrs: 32,
            mshr_targets: 8,
        }
    }

    /// Number of lines (0 when the geometry is invalid).
    pub fn lines(&self) -> u64 {
        if self.line_bytes == 0 {
            0
        } else {
            self.size_bytes / u64::from(self.line_bytes)
        }
    }

    /// Number of sets (0 when the geometry is invalid).
    pub fn sets(&self) -> u64 {
        if self.ways == 0 {
            0
        } else {
            self.lines() / u64::from(self.ways)
        }
    }

    /// Miss registers this cache really has: one in `Blocking` and
    /// `HitUnderMiss` mode, `mshrs` in `MissUnderMiss` mode.
    pub fn mshr_capacity(&self) -> u32 {
        match self.mode {
            CacheMode::Blocking | CacheMode::HitUnderMiss => 1,
            CacheMode::MissUnderMiss => self.mshrs,
        }
    }

    /// Push every invalid value of this cache to `out`, each prefixed by
    /// `path` (for example `l1d.ways: must divide the number of lines, got 6`).
    pub fn validate(&self, path: &str, out: &mut Vec<ConfigProblem>) {
        let mut bad = |field: &str, message: String| {
            out.push(ConfigProblem::new(format!("{path}.{field}"), message));
        };
        let line_ok = self.line_bytes.is_power_of_two() && (4..=4096).contains(&self.line_bytes);
        if !line_ok {
            bad(
                "line_bytes",
                format!(
                    "must be a power of two from 4 to 4096, got {}",
                    self.line_bytes
                ),
            );
        }
        let mut size_ok = true;
        if self.size_bytes == 0 {
            bad("size_bytes", "must be at least one line, got 0".into());
            size_ok = false;
        } else if line_ok && self.size_bytes % u64::from(self.line_bytes) != 0 {
            bad(
                "size_bytes",
                format!(
                    "must be a multiple of line_bytes ({}), got {}",
                    self.line_bytes, self.size_bytes
                ),
            );
            size_ok = false;
        }
        if self.ways == 0 {
            bad("ways", "must be at least 1, got 0".into());
        } else if line_ok && size_ok {
            let lines = self.lines();
            if lines % u64::from(self.ways) != 0 {
                bad(
                    "ways",
                    format!("must divide the number of lines, got {}", self.ways),
                );
            } else if !self.sets().is_power_of_two() {
                bad(
                    "size_bytes",
                    format!(
                        "must give a power-of-two number of sets, got {} sets of {} ways",
                        self.sets(),
                        self.ways
                    ),
                );
            }
        }
        if self.replacement == Replacement::TreePlru
            && self.ways != 0
            && (!self.ways.is_power_of_two() || self.ways > 64)
        {
            bad(
                "ways",
                format!(
                    "must be a power of two of at most 64 for TreePlru, got {}",
                    self.ways
                ),
            );
        }
        if self.hit_cycles == 0 {
            bad("hit_cycles", "must be at least 1, got 0".into());
        }
        if self.ports == 0 {
            bad("ports", "must be at least 1, got 0".into());
        }
        if self.mshrs == 0 || self.mshrs > MAX_MSHRS {
            bad(
                "mshrs",
                format!("must be from 1 to {MAX_MSHRS}, got {}", self.mshrs),
            );
        }
        if self.mshr_targets == 0 || self.mshr_targets > MAX_TARGETS {
            bad(
                "mshr_targets",
                format!("must be from 1 to {MAX_TARGETS}, got {}", self.mshr_targets),
            );
        }
    }
}

/// Largest accepted `mshrs` (registers are pre-allocated).
pub const MAX_MSHRS: u32 = 4096;
/// Largest accepted `mshr_targets` (target lists are pre-allocated).
pub const MAX_TARGETS: u32 = 1024;
/// Largest accepted prefetch `degree`.
pub const MAX_PREFETCH_DEGREE: u32 = 64;

/// DRAM banks with an open-row policy, per channel. Omitted fields take
/// their defaults.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct BankConfig {
    /// Banks per channel.
    pub banks: u32,
    /// Row (page) size in bytes of channel-local address space; a power of
    /// two, at least one line.
    pub row_bytes: u64,
    /// Array time when the row is already open.
    pub row_hit_cycles: u32,
    /// Array time when no row is open in the bank (activate + read).
    pub row_miss_cycles: u32,
    /// Array time when another row is open (precharge + activate + read).
    pub row_conflict_cycles: u32,
}

impl Default for BankConfig {
    /// 8 banks of 8 KiB rows; 42 / 84 / 126 cycles, i.e. one, two and three
    /// times 14 ns at 3 GHz (recalled from memory: typical DDR4 CL, tRCD and
    /// tRP are each about 14 ns).
    fn default() -> Self {
        Self {
            banks: 8,
            row_bytes: 8 * 1024,
            row_hit_cycles: 42,
            row_miss_cycles: 84,
            row_conflict_cycles: 126,
        }
    }
}

/// Main memory: a fixed access latency plus bandwidth.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DramConfig {
    /// Fixed part of every access (controller, wires, and the array when
    /// `banks` is `None`).
    pub latency_cycles: u32,
    /// Independent channels, interleaved by line.
    pub channels: u32,
    /// Cycles one line occupies its channel's data bus (at least 1).
    pub transfer_cycles: u32,
    /// Optional banks with open-row latencies, added to `latency_cycles`.
    #[serde(default)]
    pub banks: Option<BankConfig>,
}

impl Default for DramConfig {
    /// 200 cycles, 1 channel, 8 cycles per line, no bank model.
    // common practice
    fn default() -> Self {
        Self {
            latency_cycles: 200,
            channels: 1,
            transfer_cycles: 8,
            banks: None,
        }
    }
}

impl DramConfig {
    /// Push every invalid value to `out`, under the path `dram`.
    pub fn validate(&self, out: &mut Vec<ConfigProblem>) {
        if self.channels == 0 || self.channels > 1024 {
            out.push(ConfigProblem::new(
                "dram.channels",
                format!("must be from 1 to 1024, got {}", self.channels),
            ));
        }
        if self.transfer_cycles == 0 {
            out.push(ConfigProblem::new(
                "dram.transfer_cycles",
                "must be at least 1, got 0",
            ));
        }
        if let Some(b) = &self.banks {
            if b.banks == 0 || b.banks > 1024 {
                out.push(ConfigProblem::new(
                    "dram.banks.banks",
                    format!("must be from 1 to 1024, got {}", b.banks),
                ));
            }
            if !b.row_bytes.is_power_of_two() {
                out.push(ConfigProblem::new(
                    "dram.banks.row_bytes",
                    format!("must be a power of two, got {}", b.row_bytes),
                ));
            }
        }
    }
}

/// Which prefetcher watches the L1D demand stream.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum PrefetchKind {
    /// No prefetching.
    None,
    /// On a demand miss, and on the first demand hit to a prefetched line,
    /// fetch the `degree` lines starting `distance` lines ahead.
    NextLine,
    /// A PC-indexed table learns each load's or store's address stride; once
    /// the stride repeats, fetch `degree` strides starting `distance` ahead.
    Stride,
}

/// The L1D prefetcher.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PrefetchConfig {
    /// Which prefetcher.
    pub kind: PrefetchKind,
    /// Lines (or strides) fetched per trigger.
    pub degree: u32,
    /// How far ahead the first prefetch is, in lines (or strides).
    pub distance: u32,
    /// Entries of the stride table (direct-mapped by PC).
    pub table_entries: u32,
}

impl Default for PrefetchConfig {
    /// No prefetcher; when one is chosen: 2 lines per trigger, starting 4
    /// lines (or strides) ahead, so a stream's prefetches can arrive before
    /// its loads (common practice; a distance of 1 is almost always late).
    fn default() -> Self {
        Self {
            kind: PrefetchKind::None,
            degree: 2,
            distance: 4,
            table_entries: 16,
        }
    }
}

impl PrefetchConfig {
    /// Push every invalid value to `out`, under the path `prefetch`.
    pub fn validate(&self, out: &mut Vec<ConfigProblem>) {
        if self.degree == 0 || self.degree > MAX_PREFETCH_DEGREE {
            out.push(ConfigProblem::new(
                "prefetch.degree",
                format!(
                    "must be from 1 to {MAX_PREFETCH_DEGREE}, got {}",
                    self.degree
                ),
            ));
        }
        if self.distance == 0 || self.distance > 1 << 16 {
            out.push(ConfigProblem::new(
                "prefetch.distance",
                format!("must be from 1 to 65536, got {}", self.distance),
            ));
        }
        if self.table_entries == 0 || self.table_entries > 1 << 16 {
            out.push(ConfigProblem::new(
                "prefetch.table_entries",
                format!("must be from 1 to 65536, got {}", self.table_entries),
            ));
        }
    }
}

/// The whole memory side: caches, DRAM and prefetcher.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HierarchyConfig {
    /// Instruction cache; `None` means instruction fetch is not modelled here.
    #[serde(default)]
    pub l1i: Option<CacheConfig>,
    /// First-level data cache.
    pub l1d: CacheConfig,
    /// Second-level cache, shared by the L1I and the L1D.
    pub l2: CacheConfig,
    /// Optional third-level cache.
    #[serde(default)]
    pub l3: Option<CacheConfig>,
    /// Main memory.
    pub dram: DramConfig,
    /// L1D prefetcher.
    #[serde(default)]
    pub prefetch: PrefetchConfig,
}

impl Default for HierarchyConfig {
    fn default() -> Self {
        Self {
            l1i: None,
            l1d: CacheConfig::l1d(),
            l2: CacheConfig::l2(),
            l3: None,
            dram: DramConfig::default(),
            prefetch: PrefetchConfig::default(),
        }
    }
}

impl HierarchyConfig {
    /// Push every invalid value of every part to `out`, with paths `l1i`,
    /// `l1d`, `l2`, `l3`, `dram` and `prefetch`. Every level must use the
    /// L1D's line size (the hierarchy moves whole lines between levels).
    pub fn validate(&self, out: &mut Vec<ConfigProblem>) {
        if let Some(c) = &self.l1i {
            c.validate("l1i", out);
        }
        self.l1d.validate("l1d", out);
        self.l2.validate("l2", out);
        if let Some(c) = &self.l3 {
            c.validate("l3", out);
        }
        self.dram.validate(out);
        self.prefetch.validate(out);
        let line = self.l1d.line_bytes;
        let others = [
            ("l1i", self.l1i.as_ref()),
            ("l2", Some(&self.l2)),
            ("l3", self.l3.as_ref()),
        ];
        for (name, c) in others {
            if let Some(c) = c
                && c.line_bytes != line
            {
                out.push(ConfigProblem::new(
                    format!("{name}.line_bytes"),
                    format!("must equal l1d.line_bytes ({line}), got {}", c.line_bytes),
                ));
            }
        }
        if let Some(b) = &self.dram.banks
            && b.row_bytes.is_power_of_two()
            && b.row_bytes < u64::from(line)
        {
            out.push(ConfigProblem::new(
                "dram.banks.row_bytes",
                format!(
                    "must be at least one line ({line} bytes), got {}",
                    b.row_bytes
                ),
            ));
        }
    }

    /// Every problem of [`HierarchyConfig::validate`], or `Ok` when there is none.
    pub fn check(&self) -> Result<(), Vec<ConfigProblem>> {
        let mut out = Vec::new();
        self.validate(&mut out);
        if out.is_empty() { Ok(()) } else { Err(out) }
    }
}

/// One invalid value: `path: message`, e.g.
/// `l1d.ways: must divide the number of lines, got 6`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{path}: {message}")]
pub struct ConfigProblem {
    /// Dotted path of the field, e.g. `l1d.ways`.
    pub path: String,
    /// What is wrong, ending with the value found.
    pub message: String,
}

impl ConfigProblem {
    /// A problem at `path`.
    pub fn new(path: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            path: path.into(),
            message: message.into(),
        }
    }
}
