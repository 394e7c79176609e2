//! Counters of the memory side and the time-weighted occupancy histogram
//! they are built from.
//!
//! Time-weighted figures are integrated from the cycles at which a count
//! changes, never by sampling each cycle, so a run that advances one cycle at
//! a time and one that jumps between events produce identical numbers.
//! Convention: a miss accepted at cycle `a` and filled at cycle `f` is
//! outstanding during cycles `a..f`, that is for `f - a` cycles, its latency.

use serde::{Deserialize, Serialize};

use crate::Cycle;

/// Time-weighted histogram of a count: `hist[k]` is the number of cycles in
/// which the count was `k`, from cycle 0 to the last change.
#[derive(Debug, Clone)]
pub(crate) struct Occupancy {
    current: u32,
    since: Cycle,
    hist: Vec<u64>,
}

impl Occupancy {
    /// A count of 0 from cycle 0, for counts up to `max`.
    pub fn new(max: u32) -> Self {
        Self {
            current: 0,
            since: 0,
            hist: vec![0; max as usize + 1],
        }
    }

    /// The count now.
    pub fn current(&self) -> u32 {
        self.current
    }

    /// The count becomes `k` at cycle `at` (not before the last change).
    pub fn set(&mut self, at: Cycle, k: u32) {
        debug_assert!(at >= self.since, "occupancy changed back in time");
        if k == self.current {
            return;
        }
        self.hist[self.current as usize] += at - self.since;
        self.since = at;
        self.current = k;
        if self.hist.len() <= k as usize {
            self.hist.resize(k as usize + 1, 0);
        }
    }

    /// Forget the history: count from cycle `at` on, keeping the current count.
    pub fn restart(&mut self, at: Cycle) {
        self.hist.iter_mut().for_each(|h| *h = 0);
        self.since = self.since.max(at);
    }

    /// The histogram closed at cycle `now`.
    pub fn closed(&self, now: Cycle) -> Vec<u64> {
        let mut h = self.hist.clone();
        h[self.current as usize] += now.saturating_sub(self.since);
        h
    }
}

/// Sum of `k * hist[k]`: count-cycles.
pub(crate) fn weighted_sum(hist: &[u64]) -> u64 {
    hist.iter().enumerate().map(|(k, &c)| k as u64 * c).sum()
}

/// Cycles with a count of at least 1.
pub(crate) fn busy_cycles(hist: &[u64]) -> u64 {
    hist.iter().skip(1).sum()
}

/// Average count over the cycles in which it was at least 1 (0 if never).
pub(crate) fn mean_when_busy(hist: &[u64]) -> f64 {
    let busy = busy_cycles(hist);
    if busy == 0 {
        0.0
    } else {
        weighted_sum(hist) as f64 / busy as f64
    }
}

/// Counters of one cache.
///
/// At a first-level cache, `accesses`, `hits`, `misses`, `merged` and the
/// refusals count demand requests from the core; prefetches are counted apart.
/// At a lower level they count requests from the caches above (prefetches
/// included), and refusals count failed attempts of queued requests.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct CacheStats {
    /// Accepted accesses (`hits + misses + merged`).
    pub accesses: u64,
    /// Accesses that found their line.
    pub hits: u64,
    /// Primary misses (a register was allocated).
    pub misses: u64,
    /// Secondary misses (merged into a register already holding the line).
    pub merged: u64,
    /// Hits served while at least one demand miss was outstanding.
    pub hits_under_miss: u64,
    /// Refusals because a blocking cache was locked up.
    pub refused_locked: u64,
    /// Refusals because every miss register was busy.
    pub refused_mshrs: u64,
    /// Refusals because the line's register had no free target.
    pub refused_targets: u64,
    /// Refusals because every port was used that cycle.
    pub refused_ports: u64,
    /// Cycles during which a blocking cache was locked up.
    pub lockup_cycles: u64,
    /// Dirty lines evicted and written to the next level.
    pub writebacks: u64,
    /// Dirty lines received from the level above.
    pub writebacks_received: u64,
    /// Prefetches sent (each took a free register).
    pub prefetch_issued: u64,
    /// Prefetched lines later hit by a demand access (each counted once).
    pub prefetch_useful: u64,
    /// Demand accesses that merged into a prefetch still in flight.
    pub prefetch_late: u64,
    /// Prefetch candidates dropped because no register was free.
    pub prefetch_dropped: u64,
    /// Prefetched lines evicted before any demand access used them.
    pub prefetch_unused: u64,
    /// Registers freed by a fill (demand and prefetch).
    pub fills: u64,
    /// Sum over fills of (fill cycle - allocation cycle).
    pub miss_latency_total: u64,
    /// `miss_latency_total / fills` (0 without fills).
    pub avg_miss_latency: f64,
    /// `outstanding_hist[k]`: cycles with `k` registers in use (demand and
    /// prefetch).
    pub outstanding_hist: Vec<u64>,
    /// `demand_outstanding_hist[k]`: cycles with `k` registers serving a
    /// demand access.
    pub demand_outstanding_hist: Vec<u64>,
    /// Register-cycles: sum of `k * outstanding_hist[k]`. Once every miss has
    /// been filled it equals `miss_latency_total` (Little's law).
    pub mshr_occupancy_cycles: u64,
    /// Memory-level parallelism: average number of outstanding demand misses
    /// over the cycles with at least one (Chou, Fahs and Abraham, ISCA 2004).
    pub mlp: f64,
    /// Cycles with at least one demand miss outstanding.
    pub mlp_cycles: u64,
}

/// Counters of main memory.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct DramStats {
    /// Line reads.
    pub reads: u64,
    /// Line reads that served a demand access when they entered DRAM.
    pub demand_reads: u64,
    /// Line writes (dirty evictions of the last-level cache).
    pub writes: u64,
    /// Bytes moved by reads and writes.
    pub bytes: u64,
    /// Channel-cycles the data buses spent transferring, up to the cycle the
    /// statistics were closed (summed over channels).
    pub busy_cycles: u64,
    /// Bytes transferred per cycle, up to the cycle the statistics were closed.
    pub bandwidth_bytes_per_cycle: f64,
    /// Sum over reads of (end of the line's transfer - arrival cycle).
    pub read_latency_total: u64,
    /// Sum over accesses of cycles spent waiting for a busy bank or bus.
    pub queue_cycles_total: u64,
    /// Accesses to an open row.
    pub row_hits: u64,
    /// Accesses to a bank with no open row.
    pub row_misses: u64,
    /// Accesses to a bank with another row open.
    pub row_conflicts: u64,
    /// Average number of outstanding demand reads over the cycles with at
    /// least one (Chou, Fahs and Abraham, ISCA 2004).
    pub mlp: f64,
    /// Cycles with at least one demand read outstanding.
    pub mlp_cycles: u64,
    /// `outstanding_hist[k]`: cycles with `k` demand reads outstanding.
    pub outstanding_hist: Vec<u64>,
}

/// Counters of the whole memory side.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct HierarchyStats {
    /// Instruction cache, when configured.
    pub l1i: Option<CacheStats>,
    /// First-level data cache.
    pub l1d: CacheStats,
    /// Second-level cache.
    pub l2: CacheStats,
    /// Third-level cache, when configured.
    pub l3: Option<CacheStats>,
    /// Main memory.
    pub dram: DramStats,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn histogram_integrates_between_changes() {
        let mut o = Occupancy::new(2);
        o.set(10, 1);
        o.set(15, 2);
        o.set(15, 1);
        o.set(20, 0);
        let h = o.closed(30);
        assert_eq!(h, vec![20, 10, 0]);
        assert_eq!(weighted_sum(&h), 10);
        assert_eq!(h.iter().sum::<u64>(), 30);
    }
}
