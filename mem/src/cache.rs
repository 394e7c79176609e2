//! One cache of the hierarchy: tag array, miss-holding registers, ports, the
//! input queue of a lower level, and its counters.
//!
//! In one cycle a cache accepts up to `ports` accesses. Each reads the tags
//! of one set: a hit touches the replacement state (and sets the dirty bit
//! for a store); a miss reads the registers' line numbers and either merges
//! into the register holding the line (one more target) or takes a free
//! register. A blocking cache with a register in use accepts nothing. The
//! hierarchy ([`crate::Hierarchy`]) decides what travels between caches and
//! when; this module only keeps the state and the counts consistent.

use std::collections::VecDeque;

use crate::Cycle;
use crate::config::{CacheConfig, CacheMode};
use crate::mshr::MshrFile;
use crate::request::{CacheId, Refusal};
use crate::stats::{CacheStats, Occupancy, busy_cycles, mean_when_busy, weighted_sum};
use crate::tags::TagArray;

/// A request from an upper cache queued at a lower one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Queued {
    /// The missing line.
    pub line: u64,
    /// The cache that sent it.
    pub from: CacheId,
}

/// State of one cache.
#[derive(Debug, Clone)]
pub(crate) struct CacheLevel {
    /// Which cache.
    pub id: CacheId,
    /// Behaviour under a miss.
    pub mode: CacheMode,
    /// Hit latency.
    pub hit_cycles: u64,
    ports: u32,
    port_cycle: Cycle,
    port_used: u32,
    /// Tags and replacement.
    pub tags: TagArray,
    /// Miss registers.
    pub mshrs: MshrFile,
    /// Requests from above waiting for a register or a port (lower levels).
    pub queue: VecDeque<Queued>,
    /// Cycle of the scheduled queue retry, if any.
    pub drain_at: Option<Cycle>,
    /// Registers in use over time.
    pub occupancy: Occupancy,
    /// Registers serving demand accesses over time.
    pub demand_occupancy: Occupancy,
    /// Plain counters (time-weighted fields are filled in by `stats`).
    pub counters: CacheStats,
}

impl CacheLevel {
    /// An empty cache for a validated configuration.
    pub fn new(id: CacheId, cfg: &CacheConfig) -> Self {
        let first_level = matches!(id, CacheId::L1i | CacheId::L1d);
        let mshrs = MshrFile::new(cfg, first_level);
        let cap = mshrs.capacity();
        Self {
            id,
            mode: cfg.mode,
            hit_cycles: u64::from(cfg.hit_cycles),
            ports: cfg.ports,
            port_cycle: Cycle::MAX,
            port_used: 0,
            tags: TagArray::new(cfg),
            mshrs,
            queue: VecDeque::with_capacity(64),
            drain_at: None,
            occupancy: Occupancy::new(cap),
            demand_occupancy: Occupancy::new(cap),
            counters: CacheStats::default(),
        }
    }

    /// A blocking cache with a miss outstanding.
    #[inline]
    pub fn locked(&self) -> bool {
        self.mode == CacheMode::Blocking && self.mshrs.used() > 0
    }

    /// Whether a port is left at cycle `now`.
    #[inline]
    pub fn port_free(&self, now: Cycle) -> bool {
        self.port_cycle != now || self.port_used < self.ports
    }

    /// Use one port at cycle `now`.
    #[inline]
    pub fn use_port(&mut self, now: Cycle) {
        if self.port_cycle != now {
            self.port_cycle = now;
            self.port_used = 0;
        }
        self.port_used += 1;
    }

    /// Count a refusal.
    pub fn count_refusal(&mut self, r: Refusal) {
        let c = &mut self.counters;
        match r {
            Refusal::Locked => c.refused_locked += 1,
            Refusal::MshrsBusy => c.refused_mshrs += 1,
            Refusal::TargetsFull => c.refused_targets += 1,
            Refusal::PortsBusy => c.refused_ports += 1,
        }
    }

    /// Bring the occupancy histograms up to date after registers changed at
    /// cycle `at`.
    #[inline]
    pub fn note_registers(&mut self, at: Cycle) {
        self.occupancy.set(at, self.mshrs.used());
        self.demand_occupancy.set(at, self.mshrs.demand());
    }

    /// Mark register `idx` as serving a demand access at `at`; returns whether
    /// it did not before.
    pub fn promote(&mut self, idx: usize, at: Cycle) -> bool {
        let flipped = self.mshrs.mark_demand(idx);
        if flipped {
            self.note_registers(at);
        }
        flipped
    }

    /// Zero the counters and restart the time-weighted figures at `now`.
    pub fn reset_stats(&mut self, now: Cycle) {
        self.counters = CacheStats::default();
        self.occupancy.restart(now);
        self.demand_occupancy.restart(now);
    }

    /// Counters with time-weighted figures closed at `now`.
    pub fn stats(&self, now: Cycle) -> CacheStats {
        let mut s = self.counters.clone();
        s.outstanding_hist = self.occupancy.closed(now);
        s.demand_outstanding_hist = self.demand_occupancy.closed(now);
        s.mshr_occupancy_cycles = weighted_sum(&s.outstanding_hist);
        s.lockup_cycles = if self.mode == CacheMode::Blocking {
            busy_cycles(&s.outstanding_hist)
        } else {
            0
        };
        s.mlp = mean_when_busy(&s.demand_outstanding_hist);
        s.mlp_cycles = busy_cycles(&s.demand_outstanding_hist);
        s.avg_miss_latency = if s.fills == 0 {
            0.0
        } else {
            s.miss_latency_total as f64 / s.fills as f64
        };
        s
    }
}
