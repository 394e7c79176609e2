//! The memory pipeline for overlap: set-associative caches, miss-holding
//! registers, DRAM and prefetchers.
//!
//! Invariants: this crate knows nothing of instructions or of the reorder
//! buffer. It sees requests (id, kind, address, size, pc) and answers them with
//! acceptance or a refusal reason, then completions at cycles. It never
//! samples time: every figure comes from the cycles at which something
//! happened, so the caller may skip idle stretches.
//!
//! The main types:
//!
//! - [`HierarchyConfig`] (with [`CacheConfig`], [`DramConfig`],
//!   [`PrefetchConfig`]): what to build; `validate` lists every problem.
//! - [`Hierarchy`]: the caches, DRAM and prefetcher. [`Hierarchy::access`]
//!   answers a [`Request`] at once with [`Accepted`] or a [`Refusal`];
//!   [`Hierarchy::advance`] moves time and yields [`Completion`]s;
//!   [`Hierarchy::next_event`] says when anything will next happen.
//! - [`HierarchyStats`]: counters per cache and for DRAM, including
//!   memory-level parallelism and occupancy histograms.
//!
//! Latency of an unloaded access (see [`hierarchy`] for the full rules):
//! an L1 hit costs `l1.hit_cycles`; a miss that hits in the L2 costs
//! `l1.hit_cycles + l2.hit_cycles`; one that goes to DRAM adds (the L3's hit
//! time if there is one, then) `dram.latency_cycles + dram.transfer_cycles`.
//!
//! ```
//! use overlap_mem::{AccessKind, AccessOutcome, Hierarchy, HierarchyConfig, Level, Request};
//!
//! let mut mem = Hierarchy::new(&HierarchyConfig::default()).expect("valid defaults");
//! let load = |id, addr| Request { id, kind: AccessKind::Load, addr, size: 8, pc: 0x400 };
//!
//! // A cold load misses all the way to DRAM; a second one to the same line merges.
//! let first = mem.access(0, load(1, 0x8000)).unwrap();
//! assert_eq!((first.outcome, first.source), (AccessOutcome::PrimaryMiss, Level::Dram));
//! let second = mem.access(0, load(2, 0x8008)).unwrap();
//! assert_eq!(second.outcome, AccessOutcome::SecondaryMiss);
//!
//! // Jump from event to event until both complete.
//! let mut done = Vec::new();
//! while let Some(t) = mem.next_event() {
//!     mem.advance(t, &mut done);
//! }
//! // 4 (L1) + 14 (L2) + 200 (DRAM) + 8 (transfer) cycles.
//! assert_eq!(done.iter().map(|c| (c.id, c.cycle)).collect::<Vec<_>>(), [(1, 226), (2, 226)]);
//!
//! // Now the line is present: a hit, ready after the L1's 4 cycles.
//! let third = mem.access(226, load(3, 0x8010)).unwrap();
//! assert_eq!(third.ready_at, Some(230));
//! assert_eq!(mem.stats(226).dram.reads, 1);
//! ```
#![deny(missing_docs)]

mod cache;
pub mod config;
mod dram;
mod events;
pub mod hierarchy;
mod mshr;
mod prefetch;
pub mod request;
pub mod stats;
mod tags;

/// A cycle number of the simulation, counted from 0.
pub type Cycle = u64;
/// A byte address.
pub type Addr = u64;

pub use config::{
    BankConfig, CacheConfig, CacheMode, ConfigProblem, DramConfig, HierarchyConfig, PrefetchConfig,
    PrefetchKind, Replacement,
};
pub use hierarchy::Hierarchy;
pub use request::{
    Accepted, AccessKind, AccessOutcome, CacheId, Completion, Level, Refusal, Request,
};
pub use stats::{CacheStats, DramStats, HierarchyStats};
