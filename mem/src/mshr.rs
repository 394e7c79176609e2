//! Miss-holding registers of one cache.
//!
//! A register holds one missing line from the cycle the miss is accepted to
//! the cycle its fill arrives, together with the requests waiting for that
//! line (its targets). In one cycle a lookup reads every valid register's line
//! number; an allocation writes the lowest-numbered free register; a merge
//! appends one target; a fill frees the register. Target lists are allocated
//! once, at construction, and reused.

use crate::request::{AccessKind, CacheId, Level};
use crate::{Cycle, config::CacheConfig};

/// A demand request from the core waiting in a first-level register.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct CoreTarget {
    /// The core's request identifier.
    pub id: u64,
    /// Its kind.
    pub kind: AccessKind,
}

/// A request from the cache above waiting in a lower-level register.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct UpperTarget {
    /// The cache that asked.
    pub from: CacheId,
    /// Whether that request serves a demand access (not only a prefetch).
    pub demand: bool,
}

/// One register.
#[derive(Debug, Clone)]
pub(crate) struct Mshr {
    /// Whether the register is in use.
    pub valid: bool,
    /// The missing line.
    pub line: u64,
    /// Cycle the primary miss was accepted.
    pub since: Cycle,
    /// Level predicted to supply the line when the primary was accepted.
    pub source: Level,
    /// Some target serves a demand access.
    pub demand: bool,
    /// The primary was a prefetch.
    pub prefetch: bool,
    /// Install the line dirty (a store waits on it, or a dirty copy was
    /// written back into this cache while the line was in flight).
    pub dirty_on_fill: bool,
    /// The read for this line is in DRAM now (last-level cache only).
    pub in_dram: bool,
    /// Waiting core requests (first-level caches).
    pub core: Vec<CoreTarget>,
    /// Waiting upper-cache requests (lower-level caches).
    pub upper: Vec<UpperTarget>,
}

impl Mshr {
    /// Number of targets held.
    pub fn targets(&self) -> usize {
        self.core.len() + self.upper.len()
    }
}

/// The registers of one cache.
#[derive(Debug, Clone)]
pub(crate) struct MshrFile {
    slots: Vec<Mshr>,
    used: u32,
    demand: u32,
    max_targets: usize,
}

impl MshrFile {
    /// `cfg.mshr_capacity()` free registers of `cfg.mshr_targets` targets.
    pub fn new(cfg: &CacheConfig, first_level: bool) -> Self {
        let targets = cfg.mshr_targets as usize;
        let slot = Mshr {
            valid: false,
            line: 0,
            since: 0,
            source: Level::Dram,
            demand: false,
            prefetch: false,
            dirty_on_fill: false,
            in_dram: false,
            core: Vec::with_capacity(if first_level { targets } else { 0 }),
            upper: Vec::with_capacity(if first_level { 0 } else { targets }),
        };
        Self {
            slots: vec![slot; cfg.mshr_capacity() as usize],
            used: 0,
            demand: 0,
            max_targets: targets,
        }
    }

    /// Registers in total.
    pub fn capacity(&self) -> u32 {
        self.slots.len() as u32
    }

    /// Registers in use.
    pub fn used(&self) -> u32 {
        self.used
    }

    /// Registers in use that serve a demand access.
    pub fn demand(&self) -> u32 {
        self.demand
    }

    /// Whether a new primary miss can get a register.
    pub fn has_free(&self) -> bool {
        self.used < self.capacity()
    }

    /// The register holding `line`, if any.
    #[inline]
    pub fn find(&self, line: u64) -> Option<usize> {
        if self.used == 0 {
            return None;
        }
        self.slots.iter().position(|m| m.valid && m.line == line)
    }

    /// Whether register `idx` can take one more target.
    pub fn has_room(&self, idx: usize) -> bool {
        self.slots[idx].targets() < self.max_targets
    }

    /// Register `idx`.
    pub fn get(&self, idx: usize) -> &Mshr {
        &self.slots[idx]
    }

    /// Register `idx`, to change.
    pub fn get_mut(&mut self, idx: usize) -> &mut Mshr {
        &mut self.slots[idx]
    }

    /// Every register in use, lowest number first.
    pub fn iter(&self) -> impl Iterator<Item = (usize, &Mshr)> {
        self.slots.iter().enumerate().filter(|(_, m)| m.valid)
    }

    /// Take a free register for `line`, with no target yet. The caller
    /// checked [`MshrFile::has_free`].
    pub fn allocate(&mut self, line: u64, since: Cycle, source: Level, prefetch: bool) -> usize {
        let idx = self
            .slots
            .iter()
            .position(|m| !m.valid)
            .expect("allocate called with no free miss register");
        let m = &mut self.slots[idx];
        m.valid = true;
        m.line = line;
        m.since = since;
        m.source = source;
        m.demand = false;
        m.prefetch = prefetch;
        m.dirty_on_fill = false;
        m.in_dram = false;
        m.core.clear();
        m.upper.clear();
        self.used += 1;
        idx
    }

    /// Mark register `idx` as serving a demand access. Returns whether it
    /// did not before.
    pub fn mark_demand(&mut self, idx: usize) -> bool {
        let m = &mut self.slots[idx];
        if m.demand {
            return false;
        }
        m.demand = true;
        self.demand += 1;
        true
    }

    /// Release register `idx` (its targets stay readable until it is reused).
    pub fn free(&mut self, idx: usize) {
        let m = &mut self.slots[idx];
        debug_assert!(m.valid);
        m.valid = false;
        self.used -= 1;
        if m.demand {
            self.demand -= 1;
        }
    }
}
