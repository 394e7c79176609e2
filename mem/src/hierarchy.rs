//! The memory hierarchy: the caches, DRAM and the prefetcher wired together
//! and driven by an event queue.
//!
//! # What happens when
//!
//! - A demand access offered at cycle `now` is answered at once. The L1
//!   checks, in this order: lock-up (blocking cache with a miss out), ports,
//!   tags (hit: ready at `now + hit_cycles`), the register holding the line
//!   (merge, or `TargetsFull`), a free register (primary miss, or
//!   `MshrsBusy`). A refused access changes nothing but a refusal counter.
//! - A primary miss takes its register at `now` and, after the L1's tag check,
//!   arrives at the L2 at `now + l1.hit_cycles`. A lower cache accepts up to
//!   `ports` arrivals per cycle and checks lock-up, tags, registers like the
//!   L1; a request it cannot take yet waits in its first-in first-out input
//!   queue (behind any earlier one), retried when a port is free next cycle or
//!   when one of its registers frees. The L1's register stays occupied.
//! - A lower hit returns the line `hit_cycles` after it was accepted; a lower
//!   miss goes on after its tag check, to the L3 or to DRAM.
//! - DRAM schedules each read on arrival: fixed latency, optional bank time,
//!   then a transfer slot on the line's channel's data bus, in arrival order.
//! - The returning line fills every level it passed that missed, in the same
//!   cycle, from the bottom up; each filled register completes its targets
//!   and frees. So, unloaded:
//!
//! ```text
//! L1 hit              l1.hit
//! L2 hit              l1.hit + l2.hit
//! L3 hit              l1.hit + l2.hit + l3.hit
//! DRAM                l1.hit + l2.hit [+ l3.hit] + dram.latency [+ row time] + dram.transfer
//! ```
//!
//! plus any wait for ports, registers, banks or the data bus.
//!
//! A fill installs the line and may evict one; a dirty victim is written to
//! the next level in the same cycle (a lower cache allocates it without
//! reading memory; DRAM gives it a transfer slot). The hierarchy is
//! non-inclusive: lower evictions do not touch upper copies. The write-back
//! path has no buffer limit and uses no ports.
//!
//! Prefetches (L1D, `MissUnderMiss` mode only: in the other modes a prefetch
//! would hold the only register and so refuse demand accesses) take a free
//! register or are dropped, and travel like demand misses.
//!
//! Exactness: every state change happens either in `access` at `now` or while
//! processing an event at the event's own cycle, and time-weighted figures
//! are integrated between those cycles, so calling `advance` at extra cycles
//! changes nothing.

use crate::cache::{CacheLevel, Queued};
use crate::config::{CacheMode, ConfigProblem, HierarchyConfig};
use crate::dram::Dram;
use crate::events::EventQueue;
use crate::mshr::{CoreTarget, UpperTarget};
use crate::prefetch::{Prefetcher, Trigger};
use crate::request::{
    Accepted, AccessKind, AccessOutcome, CacheId, Completion, Level, Refusal, Request,
};
use crate::stats::HierarchyStats;
use crate::tags::{DIRTY, PREFETCHED};
use crate::{Addr, Cycle};

/// Something scheduled for a future cycle.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Event {
    /// A request for `line` from cache `from` reaches cache `at`.
    Arrive {
        at: CacheId,
        from: CacheId,
        line: u64,
    },
    /// The data of `line`, supplied by `source`, reaches cache `at`.
    Fill {
        at: CacheId,
        line: u64,
        source: Level,
    },
    /// The last-level cache `llc`'s read of `line` reaches DRAM.
    DramArrive { llc: CacheId, line: u64 },
    /// Retry the input queue of cache `at` (a port is free again).
    Drain { at: CacheId },
}

/// What lies below a cache.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Below {
    Cache(CacheId),
    Dram,
}

type Caches = [Option<CacheLevel>; 4];

#[inline]
fn get(caches: &Caches, id: CacheId) -> &CacheLevel {
    caches[id.index()]
        .as_ref()
        .unwrap_or_else(|| panic!("cache {id} is not configured"))
}

#[inline]
fn get_mut(caches: &mut Caches, id: CacheId) -> &mut CacheLevel {
    caches[id.index()]
        .as_mut()
        .unwrap_or_else(|| panic!("cache {id} is not configured"))
}

/// The memory side of the simulator. See the [module docs](self) for the
/// timing and [`crate`] for an example. Cloning snapshots the whole state.
#[derive(Clone)]
pub struct Hierarchy {
    caches: Caches,
    has_l3: bool,
    dram: Dram,
    prefetcher: Prefetcher,
    prefetch_active: bool,
    candidates: Vec<u64>,
    events: EventQueue<Event>,
    done: Vec<Completion>,
    now: Cycle,
    line_shift: u32,
}

impl Hierarchy {
    /// Build an idle hierarchy, or list every problem of `cfg`.
    pub fn new(cfg: &HierarchyConfig) -> Result<Hierarchy, Vec<ConfigProblem>> {
        cfg.check()?;
        let mut caches: Caches = [None, None, None, None];
        if let Some(c) = &cfg.l1i {
            caches[CacheId::L1i.index()] = Some(CacheLevel::new(CacheId::L1i, c));
        }
        caches[CacheId::L1d.index()] = Some(CacheLevel::new(CacheId::L1d, &cfg.l1d));
        caches[CacheId::L2.index()] = Some(CacheLevel::new(CacheId::L2, &cfg.l2));
        if let Some(c) = &cfg.l3 {
            caches[CacheId::L3.index()] = Some(CacheLevel::new(CacheId::L3, c));
        }
        let llc = cfg.l3.as_ref().unwrap_or(&cfg.l2);
        let line_bytes = cfg.l1d.line_bytes;
        let prefetcher = Prefetcher::new(&cfg.prefetch, line_bytes);
        let registers: u32 = caches.iter().flatten().map(|c| c.mshrs.capacity()).sum();
        Ok(Hierarchy {
            caches,
            has_l3: cfg.l3.is_some(),
            dram: Dram::new(&cfg.dram, line_bytes, llc.mshr_capacity()),
            prefetch_active: prefetcher.enabled() && cfg.l1d.mode == CacheMode::MissUnderMiss,
            candidates: Vec::with_capacity(prefetcher.max_candidates()),
            prefetcher,
            events: EventQueue::with_capacity(4 * registers as usize + 16),
            done: Vec::with_capacity(64),
            now: 0,
            line_shift: line_bytes.trailing_zeros(),
        })
    }

    /// Offer a demand access at cycle `now` (at or after the last
    /// [`advance`](Self::advance)). Load and Store go to the L1D, Fetch to the
    /// L1I. The access sees the state after every event of cycle `now`: if
    /// `advance(now)` was not called, due events are processed first and their
    /// completions are handed out by the next `advance`.
    ///
    /// # Panics
    ///
    /// On a Fetch when no L1I is configured.
    pub fn access(&mut self, now: Cycle, req: Request) -> Result<Accepted, Refusal> {
        debug_assert!(now >= self.now, "access at {now} before cycle {}", self.now);
        self.process_until(now);
        let id = match req.kind {
            AccessKind::Fetch => CacheId::L1i,
            AccessKind::Load | AccessKind::Store => CacheId::L1d,
        };
        let line = req.addr >> self.line_shift;
        let store = req.kind == AccessKind::Store;
        let c = get_mut(&mut self.caches, id);
        if c.locked() {
            c.count_refusal(Refusal::Locked);
            return Err(Refusal::Locked);
        }
        if !c.port_free(now) {
            c.count_refusal(Refusal::PortsBusy);
            return Err(Refusal::PortsBusy);
        }

        if let Some(slot) = c.tags.lookup(line) {
            c.use_port(now);
            c.counters.accesses += 1;
            c.counters.hits += 1;
            if c.mshrs.demand() > 0 {
                c.counters.hits_under_miss += 1;
            }
            c.tags.touch(slot);
            if store {
                c.tags.set_flag(slot, DIRTY);
            }
            let mut trigger = Trigger::Hit;
            if c.tags.flags(slot) & PREFETCHED != 0 {
                c.tags.clear_flag(slot, PREFETCHED);
                c.counters.prefetch_useful += 1;
                trigger = Trigger::PrefetchedHit;
            }
            let ready = now + c.hit_cycles;
            if id == CacheId::L1d {
                self.train_prefetcher(now, req.pc, req.addr, trigger);
            }
            return Ok(Accepted {
                outcome: AccessOutcome::Hit,
                source: Level::L1,
                ready_at: Some(ready),
            });
        }

        if let Some(idx) = c.mshrs.find(line) {
            if !c.mshrs.has_room(idx) {
                c.count_refusal(Refusal::TargetsFull);
                return Err(Refusal::TargetsFull);
            }
            c.use_port(now);
            c.counters.accesses += 1;
            c.counters.merged += 1;
            let m = c.mshrs.get_mut(idx);
            m.core.push(CoreTarget {
                id: req.id,
                kind: req.kind,
            });
            m.dirty_on_fill |= store;
            let source = m.source;
            // A demand catching an unused prefetch in flight is that prefetch's first
            // use: it trains the prefetcher like a first hit on a prefetched line, so a
            // stream keeps it running even when its prefetches arrive late.
            let late_prefetch = m.prefetch && !m.demand;
            if late_prefetch {
                c.counters.prefetch_late += 1;
            }
            if c.promote(idx, now) {
                self.promote_below(now, self.below(id), line, id);
            }
            if id == CacheId::L1d {
                let trigger = if late_prefetch {
                    Trigger::PrefetchedHit
                } else {
                    Trigger::Merged
                };
                self.train_prefetcher(now, req.pc, req.addr, trigger);
            }
            return Ok(Accepted {
                outcome: AccessOutcome::SecondaryMiss,
                source,
                ready_at: None,
            });
        }

        if !c.mshrs.has_free() {
            c.count_refusal(Refusal::MshrsBusy);
            return Err(Refusal::MshrsBusy);
        }
        let below = self.below(id);
        let source = self.predict(below, line);
        let c = get_mut(&mut self.caches, id);
        c.use_port(now);
        c.counters.accesses += 1;
        c.counters.misses += 1;
        let idx = c.mshrs.allocate(line, now, source, false);
        let m = c.mshrs.get_mut(idx);
        m.core.push(CoreTarget {
            id: req.id,
            kind: req.kind,
        });
        m.dirty_on_fill = store;
        c.mshrs.mark_demand(idx);
        c.note_registers(now);
        let sent = now + c.hit_cycles;
        self.send_down(id, below, line, sent);
        if id == CacheId::L1d {
            self.train_prefetcher(now, req.pc, req.addr, Trigger::Miss);
        }
        Ok(Accepted {
            outcome: AccessOutcome::PrimaryMiss,
            source,
            ready_at: None,
        })
    }

    /// Process every internal event with cycle `<= now` and push the
    /// completions they produced (each exactly once, ordered by cycle, then
    /// by id). Call with non-decreasing `now`; jumping over many cycles gives
    /// the same result as stepping through them.
    pub fn advance(&mut self, now: Cycle, out: &mut Vec<Completion>) {
        debug_assert!(now >= self.now, "advance to {now} after cycle {}", self.now);
        self.process_until(now);
        self.now = self.now.max(now);
        self.done.sort_unstable_by_key(|c| (c.cycle, c.id));
        out.extend_from_slice(&self.done);
        self.done.clear();
    }

    /// Earliest cycle after the last advanced one at which anything will
    /// happen (an arrival, a fill and so a completion, a register freeing, a
    /// lock lifting), or `None` when the memory side is idle. Completions
    /// already produced but not yet handed out by `advance` count too.
    pub fn next_event(&self) -> Option<Cycle> {
        let waiting = self.done.iter().map(|c| c.cycle).min();
        match (waiting, self.events.peek_cycle()) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        }
    }

    /// The last cycle passed to [`advance`](Self::advance).
    pub fn now(&self) -> Cycle {
        self.now
    }

    /// Line size in bytes (equal at every level).
    pub fn line_bytes(&self) -> u32 {
        1 << self.line_shift
    }

    /// The line number (address divided by the line size) of `addr`.
    pub fn line_of(&self, addr: Addr) -> u64 {
        addr >> self.line_shift
    }

    /// Whether `cache` is configured.
    pub fn has_cache(&self, cache: CacheId) -> bool {
        self.caches[cache.index()].is_some()
    }

    /// Whether `cache` is a blocking cache with a miss outstanding (false if
    /// it is not configured).
    pub fn is_locked(&self, cache: CacheId) -> bool {
        self.caches[cache.index()]
            .as_ref()
            .is_some_and(|c| c.locked())
    }

    /// Registers of `cache` left for new primary misses (one in total in
    /// `Blocking` and `HitUnderMiss` mode); 0 if it is not configured.
    pub fn free_mshrs(&self, cache: CacheId) -> u32 {
        self.caches[cache.index()]
            .as_ref()
            .map_or(0, |c| c.mshrs.capacity() - c.mshrs.used())
    }

    /// Registers of `cache` in use (demand and prefetch).
    pub fn outstanding_misses(&self, cache: CacheId) -> u32 {
        self.caches[cache.index()]
            .as_ref()
            .map_or(0, |c| c.mshrs.used())
    }

    /// Registers of `cache` serving at least one demand access.
    pub fn outstanding_demand_misses(&self, cache: CacheId) -> u32 {
        self.caches[cache.index()]
            .as_ref()
            .map_or(0, |c| c.mshrs.demand())
    }

    /// Demand reads in DRAM now (arrived, data not yet delivered).
    pub fn outstanding_dram_reads(&self) -> u32 {
        self.dram.outstanding_demand()
    }

    /// One line per outstanding miss, queued request and busy structure, for
    /// deadlock dumps. Empty when idle.
    pub fn describe_outstanding(&self) -> Vec<String> {
        let mut out = Vec::new();
        for c in self.caches.iter().flatten() {
            if c.locked() {
                out.push(format!("{}: locked up by its outstanding miss", c.id));
            }
            for (i, m) in c.mshrs.iter() {
                out.push(format!(
                    "{} miss register {i}: line {:#x} since cycle {} ({}), {} waiting, \
                     expected from {}{}",
                    c.id,
                    m.line << self.line_shift,
                    m.since,
                    if m.demand { "demand" } else { "prefetch" },
                    m.targets(),
                    m.source,
                    if m.in_dram { ", read in DRAM" } else { "" },
                ));
            }
            for q in &c.queue {
                out.push(format!(
                    "{} input queue: line {:#x} from {}",
                    c.id,
                    q.line << self.line_shift,
                    q.from
                ));
            }
        }
        let reads = self.dram.outstanding_demand();
        if reads > 0 {
            out.push(format!("dram: {reads} demand reads outstanding"));
        }
        for (ch, free) in self.dram.bus_free().enumerate() {
            if free > self.now {
                out.push(format!("dram channel {ch}: bus busy until cycle {free}"));
            }
        }
        out
    }

    /// Start counting afresh at cycle `now`: every counter goes to zero and the
    /// time-weighted figures restart, while the caches, registers and DRAM
    /// keep their state (for measuring a region of interest after a warm-up).
    /// Misses in flight at `now` count their whole latency when they fill.
    pub fn reset_stats(&mut self, now: Cycle) {
        for c in self.caches.iter_mut().flatten() {
            c.reset_stats(now);
        }
        self.dram.reset_stats(now);
    }

    /// Counters, with time-weighted figures closed at cycle `now` (normally
    /// the last advanced cycle).
    pub fn stats(&self, now: Cycle) -> HierarchyStats {
        let s = |id: CacheId| self.caches[id.index()].as_ref().map(|c| c.stats(now));
        HierarchyStats {
            l1i: s(CacheId::L1i),
            l1d: s(CacheId::L1d).unwrap_or_default(),
            l2: s(CacheId::L2).unwrap_or_default(),
            l3: s(CacheId::L3),
            dram: self.dram.stats(now),
        }
    }

    // ----- internals -------------------------------------------------------

    fn below(&self, id: CacheId) -> Below {
        match id {
            CacheId::L1i | CacheId::L1d => Below::Cache(CacheId::L2),
            CacheId::L2 if self.has_l3 => Below::Cache(CacheId::L3),
            CacheId::L2 | CacheId::L3 => Below::Dram,
        }
    }

    /// Probe tags and registers from `below` down: the level expected to
    /// supply `line`. Reads only.
    fn predict(&self, below: Below, line: u64) -> Level {
        let mut b = below;
        loop {
            match b {
                Below::Dram => return Level::Dram,
                Below::Cache(at) => {
                    let c = get(&self.caches, at);
                    if c.tags.lookup(line).is_some() {
                        return at.level();
                    }
                    if let Some(i) = c.mshrs.find(line) {
                        return c.mshrs.get(i).source;
                    }
                    b = self.below(at);
                }
            }
        }
    }

    /// Send the miss of `from` for `line` to what lies below, arriving at `at`.
    fn send_down(&mut self, from: CacheId, below: Below, line: u64, at: Cycle) {
        let ev = match below {
            Below::Cache(c) => Event::Arrive { at: c, from, line },
            Below::Dram => Event::DramArrive { llc: from, line },
        };
        self.events.push(at, ev);
    }

    /// The register of `from` for `line` became a demand miss at `t`: mark
    /// the matching targets below as demand too, down to DRAM.
    fn promote_below(&mut self, t: Cycle, below: Below, line: u64, from: CacheId) {
        let mut b = below;
        let mut from = from;
        while let Below::Cache(at) = b {
            let c = get_mut(&mut self.caches, at);
            let Some(idx) = c.mshrs.find(line) else {
                // Still travelling or queued: it reads the flag on arrival.
                return;
            };
            let m = c.mshrs.get_mut(idx);
            let Some(target) = m.upper.iter_mut().find(|u| u.from == from) else {
                return;
            };
            target.demand = true;
            if !c.promote(idx, t) {
                return;
            }
            if c.mshrs.get(idx).in_dram {
                self.dram.demand_started(t);
            }
            from = at;
            b = self.below(at);
        }
    }

    /// Whether the register of `from` waiting for `line` serves a demand.
    fn upper_demand(&self, from: CacheId, line: u64) -> bool {
        let c = get(&self.caches, from);
        let idx = c.mshrs.find(line);
        debug_assert!(idx.is_some(), "{from} sent {line:#x} without a register");
        idx.is_some_and(|i| c.mshrs.get(i).demand)
    }

    fn train_prefetcher(&mut self, now: Cycle, pc: Addr, addr: Addr, trigger: Trigger) {
        if !self.prefetch_active {
            return;
        }
        let mut cands = std::mem::take(&mut self.candidates);
        cands.clear();
        self.prefetcher.train(pc, addr, trigger, &mut cands);
        for &line in &cands {
            self.issue_prefetch(now, line);
        }
        self.candidates = cands;
    }

    fn issue_prefetch(&mut self, now: Cycle, line: u64) {
        let c = get_mut(&mut self.caches, CacheId::L1d);
        if c.tags.lookup(line).is_some() || c.mshrs.find(line).is_some() {
            return;
        }
        if !c.mshrs.has_free() {
            c.counters.prefetch_dropped += 1;
            return;
        }
        let below = self.below(CacheId::L1d);
        let source = self.predict(below, line);
        let c = get_mut(&mut self.caches, CacheId::L1d);
        c.mshrs.allocate(line, now, source, true);
        c.note_registers(now);
        c.counters.prefetch_issued += 1;
        let sent = now + c.hit_cycles;
        self.send_down(CacheId::L1d, below, line, sent);
    }

    /// Handle every event due at or before `now`, in (cycle, sequence) order.
    #[inline]
    fn process_until(&mut self, now: Cycle) {
        while let Some((t, ev)) = self.events.pop_until(now) {
            self.handle(t, ev);
        }
    }

    fn handle(&mut self, t: Cycle, ev: Event) {
        match ev {
            Event::Arrive { at, from, line } => self.arrive(t, at, Queued { line, from }),
            Event::Fill { at, line, source } => self.fill(t, at, line, source),
            Event::DramArrive { llc, line } => self.dram_arrive(t, llc, line),
            Event::Drain { at } => {
                get_mut(&mut self.caches, at).drain_at = None;
                self.drain(t, at);
            }
        }
    }

    fn schedule_drain(&mut self, at: CacheId, when: Cycle) {
        let c = get_mut(&mut self.caches, at);
        if c.drain_at != Some(when) {
            c.drain_at = Some(when);
            self.events.push(when, Event::Drain { at });
        }
    }

    fn arrive(&mut self, t: Cycle, at: CacheId, q: Queued) {
        let c = get_mut(&mut self.caches, at);
        if !c.queue.is_empty() {
            c.queue.push_back(q);
            return;
        }
        if !c.port_free(t) {
            c.queue.push_back(q);
            self.schedule_drain(at, t + 1);
            return;
        }
        if let Err(r) = self.lower_try(t, at, q) {
            let c = get_mut(&mut self.caches, at);
            c.count_refusal(r);
            c.queue.push_back(q);
        }
    }

    /// Retry the input queue of `at` in order until it is empty, a port is
    /// lacking (retry next cycle) or the head is refused (retry when a
    /// register frees).
    fn drain(&mut self, t: Cycle, at: CacheId) {
        loop {
            let c = get_mut(&mut self.caches, at);
            let Some(&q) = c.queue.front() else { break };
            if !c.port_free(t) {
                self.schedule_drain(at, t + 1);
                break;
            }
            match self.lower_try(t, at, q) {
                Ok(()) => {
                    get_mut(&mut self.caches, at).queue.pop_front();
                }
                Err(r) => {
                    get_mut(&mut self.caches, at).count_refusal(r);
                    break;
                }
            }
        }
    }

    /// One access at a lower cache at cycle `t` (a port is free).
    fn lower_try(&mut self, t: Cycle, at: CacheId, q: Queued) -> Result<(), Refusal> {
        let demand = self.upper_demand(q.from, q.line);
        let below = self.below(at);
        let c = get_mut(&mut self.caches, at);
        if c.locked() {
            return Err(Refusal::Locked);
        }
        if let Some(slot) = c.tags.lookup(q.line) {
            c.use_port(t);
            c.counters.accesses += 1;
            c.counters.hits += 1;
            if c.mshrs.demand() > 0 {
                c.counters.hits_under_miss += 1;
            }
            c.tags.touch(slot);
            let ready = t + c.hit_cycles;
            self.events.push(
                ready,
                Event::Fill {
                    at: q.from,
                    line: q.line,
                    source: at.level(),
                },
            );
            return Ok(());
        }
        if let Some(idx) = c.mshrs.find(q.line) {
            if !c.mshrs.has_room(idx) {
                return Err(Refusal::TargetsFull);
            }
            c.use_port(t);
            c.counters.accesses += 1;
            c.counters.merged += 1;
            c.mshrs.get_mut(idx).upper.push(UpperTarget {
                from: q.from,
                demand,
            });
            if demand && c.promote(idx, t) {
                if c.mshrs.get(idx).in_dram {
                    self.dram.demand_started(t);
                }
                self.promote_below(t, below, q.line, at);
            }
            return Ok(());
        }
        if !c.mshrs.has_free() {
            return Err(Refusal::MshrsBusy);
        }
        let source = self.predict(below, q.line);
        let c = get_mut(&mut self.caches, at);
        c.use_port(t);
        c.counters.accesses += 1;
        c.counters.misses += 1;
        let idx = c.mshrs.allocate(q.line, t, source, !demand);
        c.mshrs.get_mut(idx).upper.push(UpperTarget {
            from: q.from,
            demand,
        });
        if demand {
            c.mshrs.mark_demand(idx);
        }
        c.note_registers(t);
        let sent = t + c.hit_cycles;
        self.send_down(at, below, q.line, sent);
        Ok(())
    }

    fn dram_arrive(&mut self, t: Cycle, llc: CacheId, line: u64) {
        let c = get_mut(&mut self.caches, llc);
        let idx = c
            .mshrs
            .find(line)
            .expect("DRAM read without a register in the last-level cache");
        let m = c.mshrs.get_mut(idx);
        m.in_dram = true;
        let demand = m.demand;
        let done = self.dram.read(t, line, demand);
        self.events.push(
            done,
            Event::Fill {
                at: llc,
                line,
                source: Level::Dram,
            },
        );
    }

    /// The data of `line` reaches cache `at` at `t`: complete and free its
    /// register, pass the line up, install it, write back the victim and
    /// retry the input queue.
    fn fill(&mut self, t: Cycle, at: CacheId, line: u64, source: Level) {
        let below = self.below(at);
        let first_level = matches!(at, CacheId::L1i | CacheId::L1d);
        let c = get_mut(&mut self.caches, at);
        let Some(idx) = c.mshrs.find(line) else {
            debug_assert!(false, "fill of {line:#x} at {at} without a register");
            return;
        };
        let m = c.mshrs.get(idx);
        let mut flags = 0;
        if m.dirty_on_fill {
            flags |= DIRTY;
        }
        if first_level && m.prefetch && !m.demand {
            flags |= PREFETCHED;
        }
        let dram_demand = m.in_dram && m.demand;
        let latency = t - m.since;
        for target in &m.core {
            self.done.push(Completion {
                id: target.id,
                kind: target.kind,
                cycle: t,
                source,
            });
        }
        for target in &m.upper {
            self.events.push(
                t,
                Event::Fill {
                    at: target.from,
                    line,
                    source,
                },
            );
        }
        c.mshrs.free(idx);
        c.note_registers(t);
        c.counters.fills += 1;
        c.counters.miss_latency_total += latency;
        let evicted = c.tags.install(line, flags);
        if dram_demand {
            self.dram.demand_done(t);
        }
        if let Some(ev) = evicted {
            if ev.flags & PREFETCHED != 0 {
                c.counters.prefetch_unused += 1;
            }
            if ev.flags & DIRTY != 0 {
                c.counters.writebacks += 1;
                self.write_back(t, below, ev.line);
            }
        }
        if !first_level {
            self.drain(t, at);
        }
    }

    /// A dirty `line` leaves a cache at `t` for `below`.
    fn write_back(&mut self, t: Cycle, below: Below, line: u64) {
        let mut b = below;
        let mut line = line;
        loop {
            let at = match b {
                Below::Dram => {
                    self.dram.write(t, line);
                    return;
                }
                Below::Cache(at) => at,
            };
            let next = self.below(at);
            let c = get_mut(&mut self.caches, at);
            c.counters.writebacks_received += 1;
            if let Some(slot) = c.tags.lookup(line) {
                c.tags.set_flag(slot, DIRTY);
                return;
            }
            if let Some(idx) = c.mshrs.find(line) {
                c.mshrs.get_mut(idx).dirty_on_fill = true;
                return;
            }
            match c.tags.install(line, DIRTY) {
                Some(ev) if ev.flags & DIRTY != 0 => {
                    c.counters.writebacks += 1;
                    line = ev.line;
                    b = next;
                }
                _ => return,
            }
        }
    }
}

impl std::fmt::Debug for Hierarchy {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Hierarchy")
            .field("now", &self.now)
            .field("pending_events", &self.events.len())
            .field("outstanding", &self.describe_outstanding())
            .finish()
    }
}
