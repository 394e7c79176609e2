//! The cycle ledger: every cycle charged to exactly one bucket.
//!
//! The ledger is an observer. From each cycle's [`CycleState`] it decides:
//!
//! 1. `commit` when at least one instruction retired;
//! 2. otherwise, when some structure refused a request (or has one waiting
//!    for it), the refusing structure whose *full period* started first. A full
//!    period starts at the first cycle in which the structure refuses and ends
//!    at the first cycle in which it has a free entry and nobody waits for one.
//!    Ties go to the structure closest to memory (lowest id);
//! 3. otherwise the front end (`frontend.mispredict`, `frontend.icache`,
//!    `frontend.other`) when the window is empty, or when fetch waits behind a
//!    mispredicted branch and the oldest instruction does not wait on memory;
//! 4. otherwise `latency.memory` or `latency.execute`, by what the oldest
//!    instruction waits for.
//!
//! Alongside, each non-commit cycle is crossed with what the oldest
//! instruction waited for (the waiting matrix), and stall episodes (maximal
//! runs of non-commit cycles) are measured.
//!
//! Invariant: the buckets sum to the number of cycles observed, exactly.

use crate::observer::{CycleState, FrontState, Observer, StructSet, StructureId, Waiting};
use indexmap::IndexMap;
use serde::{Deserialize, Serialize};

/// The buckets that do not depend on the configuration, in report order
/// (structure buckets follow them, named by [`crate::structure_names`]).
pub const FIXED_BUCKETS: [&str; 6] = [
    "commit",
    "frontend.mispredict",
    "frontend.icache",
    "frontend.other",
    "latency.memory",
    "latency.execute",
];
const COMMIT: usize = 0;
const FE_MISPREDICT: usize = 1;
const FE_ICACHE: usize = 2;
const FE_OTHER: usize = 3;
const LAT_MEMORY: usize = 4;
const LAT_EXECUTE: usize = 5;

/// Upper bounds (inclusive) of the episode-length histogram's bins; the last
/// bin is open.
const EPISODE_BINS: [u64; 12] = [1, 2, 4, 8, 16, 32, 64, 128, 256, 512, 1024, 4096];

/// The cycle ledger observer.
#[derive(Clone, Debug)]
pub struct Ledger {
    /// Bucket names: the fixed ones, then one per structure.
    names: Vec<String>,
    cycles: Vec<u64>,
    waiting: Vec<[u64; Waiting::ALL.len()]>,
    /// Start of each structure's current full period (valid where `open` has its bit).
    full_since: Vec<u64>,
    open: StructSet,
    total: u64,
    episode_start: Option<u64>,
    episode_charged: StructSet,
    episodes: u64,
    episode_cycles: u64,
    episode_max: u64,
    episode_hist: [u64; EPISODE_BINS.len() + 1],
    fill_delay: Vec<(u64, u64)>,
}

impl Ledger {
    /// A ledger for the structures named (by id) in `structures`
    /// (see [`crate::structure_names`]).
    pub fn new(structures: &[String]) -> Ledger {
        let mut names: Vec<String> = FIXED_BUCKETS.iter().map(|s| s.to_string()).collect();
        names.extend(structures.iter().cloned());
        let n = names.len();
        Ledger {
            names,
            cycles: vec![0; n],
            waiting: vec![[0; Waiting::ALL.len()]; n],
            full_since: vec![0; structures.len()],
            open: StructSet::EMPTY,
            total: 0,
            episode_start: None,
            episode_charged: StructSet::EMPTY,
            episodes: 0,
            episode_cycles: 0,
            episode_max: 0,
            episode_hist: [0; EPISODE_BINS.len() + 1],
            fill_delay: vec![(0, 0); n],
        }
    }

    /// The bucket a cycle in `state` belongs to, updating full periods.
    fn charge(&mut self, first: u64, s: &CycleState) -> usize {
        for id in StructSet(s.refusing.0 & !self.open.0).iter() {
            self.full_since[id as usize] = first;
        }
        self.open.0 |= s.refusing.0;
        let bucket = if s.commits > 0 {
            COMMIT
        } else if let Some(id) = s
            .refusing
            .iter()
            .min_by_key(|&id| (self.full_since[id as usize], id))
        {
            FIXED_BUCKETS.len() + id as usize
        } else if s.oldest == Waiting::Empty {
            match s.front {
                FrontState::Mispredict | FrontState::MispredictRefill => FE_MISPREDICT,
                FrontState::Icache => FE_ICACHE,
                _ => FE_OTHER,
            }
        } else if s.front == FrontState::Mispredict && !s.oldest.is_memory() {
            FE_MISPREDICT
        } else if s.oldest.is_memory() {
            LAT_MEMORY
        } else {
            LAT_EXECUTE
        };
        // A period ends when the structure has room and nobody waits for it.
        self.open.0 &= !(!s.refusing.0 & s.has_free.0);
        bucket
    }

    fn close_episode(&mut self, end: u64) {
        if let Some(start) = self.episode_start.take() {
            let len = end - start;
            self.episodes += 1;
            self.episode_cycles += len;
            self.episode_max = self.episode_max.max(len);
            let bin = EPISODE_BINS
                .iter()
                .position(|&b| len <= b)
                .unwrap_or(EPISODE_BINS.len());
            self.episode_hist[bin] += 1;
            self.episode_charged = StructSet::EMPTY;
        }
    }

    /// Close the ledger at the end of a run (`end` = one past the last cycle)
    /// and build its report.
    pub fn finish(mut self, end: u64) -> LedgerReport {
        self.close_episode(end);
        debug_assert_eq!(self.cycles.iter().sum::<u64>(), self.total);
        let mut ledger = IndexMap::new();
        let mut waiting = IndexMap::new();
        for (i, name) in self.names.iter().enumerate() {
            if self.cycles[i] > 0 || i == COMMIT {
                ledger.insert(name.clone(), self.cycles[i]);
            }
            if i != COMMIT && self.cycles[i] > 0 {
                let row: IndexMap<String, u64> = Waiting::ALL
                    .iter()
                    .filter(|w| self.waiting[i][**w as usize] > 0)
                    .map(|w| (w.key().to_string(), self.waiting[i][*w as usize]))
                    .collect();
                waiting.insert(name.clone(), row);
            }
        }
        let mut histogram = Vec::new();
        let mut lo = 1;
        for (i, &count) in self.episode_hist.iter().enumerate() {
            let hi = EPISODE_BINS.get(i).copied();
            histogram.push(EpisodeBin {
                min_cycles: lo,
                max_cycles: hi,
                count,
            });
            lo = hi.map_or(lo, |h| h + 1);
        }
        while histogram.last().is_some_and(|b| b.count == 0) {
            histogram.pop();
        }
        let fill_delay = self
            .names
            .iter()
            .enumerate()
            .skip(FIXED_BUCKETS.len())
            .filter(|(i, _)| self.fill_delay[*i].1 > 0)
            .map(|(i, n)| {
                let (sum, count) = self.fill_delay[i];
                (n.clone(), crate::report::ratio(sum, count))
            })
            .collect();
        LedgerReport {
            ledger,
            waiting,
            episodes: Episodes {
                count: self.episodes,
                mean_cycles: crate::report::ratio(self.episode_cycles, self.episodes),
                max_cycles: self.episode_max,
                histogram,
                fill_delay,
            },
        }
    }
}

impl Observer for Ledger {
    fn measure_start(&mut self, _cycle: u64) {
        // Full periods are physical state and carry on; the counts start afresh.
        *self = Ledger {
            full_since: self.full_since.clone(),
            open: self.open,
            ..Ledger::new(&self.names[FIXED_BUCKETS.len()..])
        };
    }

    fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {
        let bucket = self.charge(first, state);
        self.cycles[bucket] += count;
        self.total += count;
        if bucket == COMMIT {
            self.close_episode(first);
            return;
        }
        self.waiting[bucket][state.oldest as usize] += count;
        if self.episode_start.is_none() {
            self.episode_start = Some(first);
        }
        if bucket >= FIXED_BUCKETS.len() {
            let id = (bucket - FIXED_BUCKETS.len()) as StructureId;
            if !self.episode_charged.contains(id) {
                self.episode_charged.insert(id);
                let start = self.episode_start.expect("open");
                let since = if self.open.contains(id) {
                    self.full_since[id as usize]
                } else {
                    first
                };
                let delay = since.saturating_sub(start);
                let slot = &mut self.fill_delay[bucket];
                slot.0 += delay;
                slot.1 += 1;
            }
        }
    }
}

/// The ledger's part of a run report.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LedgerReport {
    /// Bucket key to cycles; sums to the run's cycles.
    pub ledger: IndexMap<String, u64>,
    /// Bucket key to (waiting kind to cycles), non-commit buckets only.
    pub waiting: IndexMap<String, IndexMap<String, u64>>,
    /// Stall episodes.
    pub episodes: Episodes,
}

/// Stall episodes: maximal runs of cycles without a commit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Episodes {
    /// Number of episodes.
    pub count: u64,
    /// Mean length in cycles.
    pub mean_cycles: f64,
    /// Longest episode.
    pub max_cycles: u64,
    /// Length distribution.
    pub histogram: Vec<EpisodeBin>,
    /// Per structure bucket: mean cycles from an episode's start until that
    /// structure filled (how long the window hid the stall before it ran out).
    pub fill_delay: IndexMap<String, f64>,
}

/// One bin of the episode-length histogram.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EpisodeBin {
    /// Shortest length in the bin.
    pub min_cycles: u64,
    /// Longest length in the bin (`None` for the open last bin).
    pub max_cycles: Option<u64>,
    /// Episodes in the bin.
    pub count: u64,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn state(commits: u32, refusing: &[StructureId], free: &[StructureId]) -> CycleState {
        let mut r = StructSet::EMPTY;
        refusing.iter().for_each(|&s| r.insert(s));
        let mut f = StructSet::EMPTY;
        free.iter().for_each(|&s| f.insert(s));
        CycleState {
            commits,
            refusing: r,
            has_free: f,
            front: FrontState::Running,
            oldest: Waiting::LoadDram,
            l1d_misses: 0,
            dram_reads: 0,
        }
    }

    fn names() -> Vec<String> {
        [
            "lockup.l1d",
            "mshr.l1d",
            "lq",
            "sq",
            "rs.int",
            "regs",
            "rob",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    }

    #[test]
    fn first_filled_structure_takes_the_cycles() {
        let mut l = Ledger::new(&names());
        // MSHRs refuse from cycle 0, the ROB from cycle 2: both refuse at 3..10.
        l.cycles(0, 2, &state(0, &[1], &[6]));
        l.cycles(2, 8, &state(0, &[1, 6], &[]));
        let r = l.finish(10);
        assert_eq!(r.ledger["mshr.l1d"], 10);
        assert!(!r.ledger.contains_key("rob"));
    }

    #[test]
    fn period_survives_a_free_entry_that_is_retaken() {
        let mut l = Ledger::new(&names());
        l.cycles(0, 1, &state(0, &[1], &[]));
        l.cycles(1, 1, &state(0, &[6], &[]));
        // The MSHR freed and was taken again in the same cycle: no free entry at the end,
        // so its period goes on and it still filled before the ROB.
        l.cycles(2, 1, &state(0, &[1, 6], &[]));
        let r = l.finish(3);
        assert_eq!(r.ledger["mshr.l1d"], 2);
        assert_eq!(r.ledger["rob"], 1);
    }

    #[test]
    fn ties_go_closest_to_memory_and_buckets_sum() {
        let mut l = Ledger::new(&names());
        l.cycles(0, 3, &state(0, &[0, 6], &[]));
        l.cycles(3, 2, &state(2, &[], &[0, 6]));
        let r = l.finish(5);
        assert_eq!(r.ledger["lockup.l1d"], 3);
        assert_eq!(r.ledger["commit"], 2);
        assert_eq!(r.ledger.values().sum::<u64>(), 5);
        assert_eq!(r.episodes.count, 1);
        assert_eq!(r.episodes.max_cycles, 3);
    }
}
