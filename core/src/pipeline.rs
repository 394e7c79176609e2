//! The cycle loop: the order of the stages within a cycle, the end-of-cycle
//! summary for the observers, exact idle skipping and the watchdog.
//!
//! One cycle, in order: memory completions arrive; stores that reached the
//! cache free their entries; commit; the memory stage (loads, then the oldest
//! committed store); issue; dispatch; fetch. Then the cycle's
//! [`CycleState`] goes to the observers.
//!
//! Idle skipping: a cycle in which no stage changed any state is followed by
//! identical cycles until the next cycle at which something is scheduled (a
//! result, an address, a store write, a unit freeing, a memory event, an
//! instruction reaching dispatch, fetch restarting, the watchdog). That cycle
//! is found by scanning the window only when a cycle was idle, so busy
//! stretches pay nothing for it. Those cycles are reported to the
//! observers in one call and jumped over; the results are bit-identical to
//! stepping every cycle.

use crate::config::{Config, UnitKind};
use crate::fetch::FrontEnd;
use crate::lsq::{LoadEntry, LoadState, StoreQueue};
use crate::observer::{CycleState, Observer, StructSet, StructureId, Waiting};
use crate::rename::Rename;
use crate::ring::Ring;
use crate::rob::{NOT_YET, Rob};
use crate::stations::{Station, stations_by_class};
use crate::units::UnitPool;
use overlap_isa::OpClass;
use overlap_isa::machine::Machine;
use overlap_mem::{AccessKind, CacheId, Completion, Hierarchy};

/// Structure ids, in tie-break order (closest to memory first). Stations
/// follow the store queue, one id each; then the register file, then the ROB.
pub(crate) struct Structure;

impl Structure {
    pub(crate) const LOCKUP: StructureId = 0;
    pub(crate) const MSHR: StructureId = 1;
    pub(crate) const LQ: StructureId = 2;
    pub(crate) const SQ: StructureId = 3;
    pub(crate) const FIRST_STATION: StructureId = 4;
}

/// The ledger keys of every structure of a configuration, indexed by id.
pub fn structure_names(cfg: &Config) -> Vec<String> {
    let mut names: Vec<String> = ["lockup.l1d", "mshr.l1d", "lq", "sq"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    names.extend(cfg.core.stations.iter().map(|s| format!("rs.{}", s.name)));
    names.push("regs".into());
    names.push("rob".into());
    names
}

/// The whole timing machine for one run.
pub(crate) struct Pipeline<'a, O: Observer> {
    pub cfg: &'a Config,
    pub obs: O,
    pub machine: Machine,
    pub mem: Hierarchy,
    pub front: FrontEnd,
    pub rob: Rob,
    pub rename: Rename,
    pub stations: Vec<Station>,
    pub class_stations: [Vec<u8>; 8],
    pub units: [Option<UnitPool>; 6],
    pub lq: Ring<LoadEntry>,
    pub sq: StoreQueue,
    /// Loads that issued and still need the memory stage, oldest first.
    pub pending_loads: Vec<u64>,
    /// Stores whose address is generated but whose data's ready time is unknown.
    pub pending_store_data: Vec<u64>,
    /// Structure ids of the register file and the ROB.
    pub regs_id: StructureId,
    pub rob_id: StructureId,
    /// Changes whenever the memory side may answer differently.
    pub mem_gen: u64,
    /// Some stage changed state this cycle.
    pub active: bool,
    /// Structures that refused dispatch this cycle.
    pub refused: StructSet,
    /// Structures that loads or the oldest committed store wait for after a refusal.
    pub mem_waiting: StructSet,
    pub commits: u32,
    pub retired: u64,
    pub last_commit: u64,
    /// Measurement starts when the instruction at this pc first retires.
    pub measure_pc: Option<u64>,
    /// (cycle, instructions retired before) at the start of measurement.
    pub roi: Option<(u64, u64)>,
    completions: Vec<Completion>,
    scratch: Vec<(u64, u8, u32)>,
}

/// What a finished run produced, apart from the observers' records.
pub(crate) struct Finished {
    /// Cycles and instructions measured (from the start of measurement).
    pub cycles: u64,
    pub instructions: u64,
    /// Cycle at which the run ended (one past the last cycle).
    pub end: u64,
    /// Cycles and instructions before measurement started.
    pub warmup: Option<(u64, u64)>,
}

impl<'a, O: Observer> Pipeline<'a, O> {
    pub(crate) fn new(
        cfg: &'a Config,
        machine: Machine,
        mem: Hierarchy,
        max_insts: Option<u64>,
        obs: O,
    ) -> Self {
        let core = &cfg.core;
        let mut units: [Option<UnitPool>; 6] = Default::default();
        for u in &core.units {
            units[u.class.index()] = Some(UnitPool::new(u));
        }
        let n_stations = core.stations.len() as StructureId;
        let line_bytes = cfg.l1i.as_ref().map(|c| u64::from(c.line_bytes));
        Pipeline {
            cfg,
            obs,
            machine,
            mem,
            front: FrontEnd::new(core, line_bytes, max_insts),
            rob: Rob::new(core.rob_entries as usize),
            rename: Rename::new(core.phys_regs as usize),
            stations: core.stations.iter().map(Station::new).collect(),
            class_stations: stations_by_class(&core.stations),
            units,
            lq: Ring::new(core.lq_entries as usize),
            sq: StoreQueue {
                ring: Ring::new(core.sq_entries as usize),
                committed: 0,
                sent: 0,
            },
            pending_loads: Vec::with_capacity(core.lq_entries as usize),
            pending_store_data: Vec::with_capacity(core.sq_entries as usize),
            regs_id: Structure::FIRST_STATION + n_stations,
            rob_id: Structure::FIRST_STATION + n_stations + 1,
            mem_gen: 0,
            active: false,
            refused: StructSet::EMPTY,
            mem_waiting: StructSet::EMPTY,
            commits: 0,
            retired: 0,
            last_commit: 0,
            measure_pc: None,
            roi: None,
            completions: Vec::with_capacity(64),
            scratch: Vec::with_capacity(64),
        }
    }

    /// The result of instruction `seq` is ready at `cycle`.
    pub(crate) fn finish(&mut self, seq: u64, cycle: u64) {
        let e = self.rob.get_mut(seq);
        e.done = cycle;
        let dst = e.dst;
        self.rename.set_ready(dst, cycle);
        self.active = true;
        self.obs.complete(cycle, seq);
    }

    /// Run to the end of the program (or the instruction limit).
    pub(crate) fn run(&mut self, step_every_cycle: bool) -> Result<Finished, crate::RunError> {
        let mut now = 0u64;
        loop {
            self.cycle(now)?;
            let state = self.summary(now);
            if self.front.is_drained() && self.rob.is_empty() && self.sq.ring.is_empty() {
                self.obs.cycles(now, 1, &state);
                let (start, before) = self.roi.unwrap_or((0, 0));
                return Ok(Finished {
                    cycles: now + 1 - start,
                    instructions: self.retired - before,
                    end: now + 1,
                    warmup: self.roi,
                });
            }
            let deadline = self.last_commit + self.cfg.core.watchdog_cycles;
            if now >= deadline {
                self.obs.cycles(now, 1, &state);
                return Err(crate::RunError::Deadlock(Box::new(self.deadlock_dump(now))));
            }
            let next = if self.active || step_every_cycle {
                now + 1
            } else {
                self.next_event(now).min(deadline).max(now + 1)
            };
            self.obs.cycles(now, next - now, &state);
            now = next;
        }
    }

    /// The earliest cycle after `now` at which anything is scheduled.
    fn next_event(&mut self, now: u64) -> u64 {
        // Results, addresses and store writes scheduled for later cycles.
        let later = |t: u64| if t > now { t } else { NOT_YET };
        let mut next = self
            .rob
            .iter()
            .map(|e| later(e.done))
            .min()
            .unwrap_or(NOT_YET);
        for &li in &self.pending_loads {
            if let LoadState::Agu(at) = self.lq.get(li).state {
                next = next.min(later(at));
            }
        }
        for si in self.sq.ring.head..self.sq.ring.tail {
            let s = self.sq.ring.get(si);
            next = next.min(later(s.written_at)).min(later(s.addr_at));
        }
        for pool in self.units.iter().flatten() {
            next = next.min(later(pool.busy_until()));
        }
        if let Some(t) = self.mem.next_event() {
            next = next.min(t);
        }
        if let Some(t) = self.front.next_event(now) {
            next = next.min(t);
        }
        next
    }

    fn cycle(&mut self, now: u64) -> Result<(), crate::RunError> {
        self.active = false;
        self.refused = StructSet::EMPTY;
        self.commits = 0;
        if self.mem.next_event().is_some_and(|t| t <= now) {
            self.deliver(now);
        }
        self.retire_written_stores(now);
        self.commit_stage(now);
        self.memory_stage(now);
        self.issue_stage(now);
        self.dispatch_stage(now);
        self.fetch_stage(now)?;
        Ok(())
    }

    /// Take the memory side's completions up to `now`.
    fn deliver(&mut self, now: u64) {
        let mut completions = std::mem::take(&mut self.completions);
        self.mem.advance(now, &mut completions);
        self.mem_gen += 1;
        self.active = true;
        for c in completions.drain(..) {
            match c.kind {
                AccessKind::Load => self.finish(c.id, c.cycle),
                AccessKind::Store => self.store_written(c.id, c.cycle),
                AccessKind::Fetch => self.front.icache_filled(c.cycle),
            }
        }
        self.completions = completions;
    }

    /// The issue stage: oldest ready entries first, up to the issue width and
    /// the free units.
    fn issue_stage(&mut self, now: u64) {
        let mut cands = std::mem::take(&mut self.scratch);
        cands.clear();
        for (si, st) in self.stations.iter().enumerate() {
            for (ei, e) in st.entries.iter().enumerate() {
                if e.srcs.iter().all(|&p| self.rename.ready_at(p) <= now)
                    && (e.class != OpClass::Load
                        || self.load_may_issue(self.rob.get(e.seq).lsq, now))
                {
                    cands.push((e.seq, si as u8, ei as u32));
                }
            }
        }
        cands.sort_unstable_by_key(|c| c.0);
        let mut issued = 0;
        let mut taken_any = false;
        for &(seq, si, ei) in cands.iter() {
            if issued == self.cfg.core.issue_width {
                break;
            }
            let entry = self.stations[si as usize].entries[ei as usize];
            let Some(pool) = self.units[entry.unit.index()].as_mut() else {
                continue;
            };
            if !pool.try_take(now) {
                continue;
            }
            let latency = pool.latency;
            issued += 1;
            taken_any = true;
            // Mark for removal; entries are compacted after the loop.
            self.stations[si as usize].entries[ei as usize].seq = u64::MAX;
            self.execute(seq, entry.unit, now, latency);
        }
        if taken_any {
            for st in &mut self.stations {
                st.entries.retain(|e| e.seq != u64::MAX);
            }
        }
        self.scratch = cands;
    }

    /// Start executing an issued instruction.
    fn execute(&mut self, seq: u64, unit: UnitKind, now: u64, latency: u64) {
        self.active = true;
        self.obs.issue(now, seq);
        let e = self.rob.get_mut(seq);
        e.issued = true;
        let lsq = e.lsq;
        let mispredicted = e.mispredicted;
        let done = now + latency;
        match unit {
            UnitKind::Load => {
                self.lq.get_mut(lsq).state = LoadState::Agu(done);
                let pos = self.pending_loads.partition_point(|&li| li < lsq);
                self.pending_loads.insert(pos, lsq);
            }
            UnitKind::Store => {
                // The address is ready at `done`; the store completes when its data is.
                let data = self.rob.get(seq).srcs[1];
                let ready = self.rename.ready_at(data);
                let s = self.sq.ring.get_mut(lsq);
                s.addr_at = done;
                if ready == NOT_YET {
                    self.pending_store_data.push(seq);
                } else {
                    s.data_at = ready;
                    self.finish(seq, done.max(ready));
                }
            }
            _ => {
                self.finish(seq, done);
                if mispredicted {
                    self.front.resolve(seq, done);
                }
            }
        }
    }

    /// What the oldest instruction waits for at the end of cycle `now`.
    fn oldest_waiting(&self, now: u64) -> Waiting {
        let Some(e) = self.rob.head() else {
            return if !self.sq.ring.is_empty() {
                Waiting::StoreDrain
            } else {
                Waiting::Empty
            };
        };
        if e.done <= now {
            return Waiting::Retire;
        }
        if e.inst.class == OpClass::Load {
            return match self.lq.get(e.lsq).state {
                LoadState::Waiting => {
                    if e.srcs.iter().any(|&p| self.rename.ready_at(p) > now) {
                        Waiting::Operands
                    } else if !self.load_may_issue(e.lsq, now) {
                        Waiting::LoadStore
                    } else {
                        Waiting::Issue
                    }
                }
                LoadState::Agu(_) | LoadState::Access => Waiting::Agu,
                LoadState::Refused(overlap_mem::Refusal::Locked, _) => Waiting::LoadLockup,
                LoadState::Refused(..) => Waiting::LoadMshr,
                LoadState::StoreWrite(_) | LoadState::StoreData(_) | LoadState::Forwarded => {
                    Waiting::LoadStore
                }
                LoadState::InFlight(level) => Waiting::load_from(level),
            };
        }
        if !e.issued {
            return if e.srcs.iter().any(|&p| self.rename.ready_at(p) > now) {
                Waiting::Operands
            } else {
                Waiting::Issue
            };
        }
        match UnitKind::for_class(e.inst.class) {
            UnitKind::Alu => Waiting::Alu,
            UnitKind::Branch => Waiting::Branch,
            UnitKind::Mul => Waiting::Mul,
            UnitKind::Div => Waiting::Div,
            UnitKind::Store if self.rename.ready_at(e.srcs[1]) > now => Waiting::Operands,
            UnitKind::Load | UnitKind::Store => Waiting::Agu,
        }
    }

    /// The end-of-cycle summary for the observers.
    fn summary(&self, now: u64) -> CycleState {
        let mut refusing = self.refused;
        refusing.0 |= self.mem_waiting.0;
        let mut has_free = StructSet::EMPTY;
        if !self.mem.is_locked(CacheId::L1d) {
            has_free.insert(Structure::LOCKUP);
        }
        if self.mem.free_mshrs(CacheId::L1d) > 0 {
            has_free.insert(Structure::MSHR);
        }
        if !self.lq.is_full() {
            has_free.insert(Structure::LQ);
        }
        if !self.sq.ring.is_full() {
            has_free.insert(Structure::SQ);
        }
        for (i, st) in self.stations.iter().enumerate() {
            if !st.is_full() {
                has_free.insert(Structure::FIRST_STATION + i as StructureId);
            }
        }
        if self.rename.free_count() > 0 {
            has_free.insert(self.regs_id);
        }
        if !self.rob.is_full() {
            has_free.insert(self.rob_id);
        }
        CycleState {
            commits: self.commits,
            refusing,
            has_free,
            front: self.front.state(now),
            oldest: self.oldest_waiting(now),
            l1d_misses: self.mem.outstanding_demand_misses(CacheId::L1d),
            dram_reads: self.mem.outstanding_dram_reads(),
        }
    }

    /// Everything a person needs to see why the model stopped retiring.
    fn deadlock_dump(&self, now: u64) -> crate::DeadlockDump {
        let names = structure_names(self.cfg);
        let state = self.summary(now);
        let full = names
            .iter()
            .enumerate()
            .filter(|(i, _)| !state.has_free.contains(*i as StructureId))
            .map(|(_, n)| n.clone())
            .collect();
        let oldest = self
            .rob
            .iter()
            .take(8)
            .map(|e| {
                let detail = if e.inst.class == OpClass::Load {
                    format!("{:?}", self.lq.get(e.lsq).state)
                } else if e.issued {
                    format!("issued, done at {}", e.done)
                } else {
                    "waiting to issue".to_string()
                };
                format!("#{} pc {:#x} {}: {}", e.seq, e.inst.pc, e.inst.inst, detail)
            })
            .collect();
        crate::DeadlockDump {
            cycle: now,
            last_commit: self.last_commit,
            oldest,
            full,
            front_end: self.front.describe(now),
            outstanding: self.mem.describe_outstanding(),
        }
    }
}
