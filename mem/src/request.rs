//! The vocabulary between the core and the memory side: a [`Request`] goes in,
//! an [`Accepted`] or a [`Refusal`] comes straight back, and for every
//! accepted miss exactly one [`Completion`] follows later.
//!
//! Plain data; no state and no time of its own.

use std::fmt;

use serde::{Deserialize, Serialize};

use crate::{Addr, Cycle};

/// What a request does.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum AccessKind {
    /// A data read (goes to the L1D).
    Load,
    /// A data write (goes to the L1D; write-allocate, marks the line dirty).
    Store,
    /// An instruction fetch (goes to the L1I).
    Fetch,
}

/// One demand access offered by the core.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Request {
    /// Caller's identifier, echoed in the [`Completion`].
    pub id: u64,
    /// Load, store or fetch.
    pub kind: AccessKind,
    /// Byte address. The access is charged to the line holding this byte.
    pub addr: Addr,
    /// Access size in bytes (informational).
    pub size: u8,
    /// Address of the instruction that made the access (trains the stride
    /// prefetcher).
    pub pc: Addr,
}

/// Where the data of an access came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Level {
    /// The first-level cache that was asked.
    L1,
    /// The second-level cache.
    L2,
    /// The third-level cache.
    L3,
    /// Main memory.
    Dram,
}

impl fmt::Display for Level {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Level::L1 => "L1",
            Level::L2 => "L2",
            Level::L3 => "L3",
            Level::Dram => "DRAM",
        })
    }
}

/// Names one cache of the hierarchy.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum CacheId {
    /// First-level instruction cache.
    L1i,
    /// First-level data cache.
    L1d,
    /// Second-level cache.
    L2,
    /// Third-level cache.
    L3,
}

impl CacheId {
    /// All caches, from the core outwards.
    pub const ALL: [CacheId; 4] = [CacheId::L1i, CacheId::L1d, CacheId::L2, CacheId::L3];

    /// Position in [`CacheId::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }

    /// The level this cache is at.
    pub fn level(self) -> Level {
        match self {
            CacheId::L1i | CacheId::L1d => Level::L1,
            CacheId::L2 => Level::L2,
            CacheId::L3 => Level::L3,
        }
    }

    /// Lower-case name, as used in configuration paths (`l1d`).
    pub fn name(self) -> &'static str {
        match self {
            CacheId::L1i => "l1i",
            CacheId::L1d => "l1d",
            CacheId::L2 => "l2",
            CacheId::L3 => "l3",
        }
    }
}

impl fmt::Display for CacheId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// How an accepted access was handled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum AccessOutcome {
    /// The line was present.
    Hit,
    /// The line was absent and a miss register was allocated for it.
    PrimaryMiss,
    /// The line was already being fetched; the access merged into that
    /// register as one more target.
    SecondaryMiss,
}

/// The answer to an accepted access.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Accepted {
    /// Hit, primary or secondary miss.
    pub outcome: AccessOutcome,
    /// Level expected to supply the data, decided at accept time by probing
    /// the tags (and in-flight misses) down the hierarchy; for a secondary
    /// miss, the primary's. The [`Completion`] carries the actual level.
    pub source: Level,
    /// `Some(now + hit_cycles)` for a hit (no completion follows); `None` for
    /// a miss (exactly one completion follows).
    pub ready_at: Option<Cycle>,
}

/// Why an access was refused. A refused access changes nothing but the
/// refusal counters; the caller retries later.
#[derive(
    Debug,
    Clone,
    Copy,
    PartialEq,
    Eq,
    Hash,
    PartialOrd,
    Ord,
    Serialize,
    Deserialize,
    thiserror::Error,
)]
pub enum Refusal {
    /// A blocking cache has a miss outstanding and serves nothing.
    #[error("cache locked up by an outstanding miss")]
    Locked,
    /// Every miss register is busy and this access would need a new one.
    #[error("all miss-holding registers busy")]
    MshrsBusy,
    /// The register holding this line has no target slot left.
    #[error("miss-holding register for this line has no free target")]
    TargetsFull,
    /// The cache already accepted `ports` accesses this cycle.
    #[error("all cache ports used this cycle")]
    PortsBusy,
}

/// A miss has been served: its data is available at `cycle`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Completion {
    /// The request's identifier.
    pub id: u64,
    /// The request's kind.
    pub kind: AccessKind,
    /// Cycle at which the data arrived in the first-level cache.
    pub cycle: Cycle,
    /// Level that actually supplied the line.
    pub source: Level,
}
