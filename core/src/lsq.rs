//! The load/store queue and the memory stage.
//!
//! Loads and stores take an entry at dispatch, in program order. Per cycle the
//! memory stage (a) lets each load whose address is ready either take its
//! data from the youngest older store that covers it (forwarding), wait for an
//! older store that overlaps it only partly to write the cache, or access the
//! L1D, retrying after a refusal once the memory side has changed; and (b)
//! sends the oldest committed store to the L1D. A load's entry is freed when it
//! retires; a store's entry only once it has written the cache.

use crate::observer::{Observer, StructSet};
use crate::pipeline::{Pipeline, Structure};
use crate::ring::Ring;
use crate::rob::NOT_YET;
use overlap_mem::{AccessKind, AccessOutcome, Level, Refusal, Request};

/// Where a load is in its life.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum LoadState {
    /// In a station, not issued.
    Waiting,
    /// Address generation finishes at this cycle; then the access.
    Agu(u64),
    /// Must access the cache at the next opportunity.
    Access,
    /// Refused by the L1D; retries when the memory side changes (`stamp` differs).
    Refused(Refusal, u64),
    /// Waits for the older store with this index to write the cache.
    StoreWrite(u64),
    /// Waits for the data of the older store with this index, to forward it.
    StoreData(u64),
    /// Data comes from an older store.
    Forwarded,
    /// Accepted by the cache; data comes from this level.
    InFlight(Level),
}

#[derive(Clone, Copy, Debug)]
pub(crate) struct LoadEntry {
    pub seq: u64,
    pub addr: u64,
    pub size: u8,
    pub pc: u64,
    /// Stores with a smaller index are older than this load.
    pub older_stores: u64,
    pub state: LoadState,
}

#[derive(Clone, Copy, Debug)]
pub(crate) struct StoreEntry {
    pub seq: u64,
    pub addr: u64,
    pub size: u8,
    pub pc: u64,
    /// Cycle at which the address is known (`NOT_YET` before issue).
    pub addr_at: u64,
    /// Cycle at which the data is known (`NOT_YET` until its producer has issued).
    pub data_at: u64,
    /// Cycle at which the cache has the data (`NOT_YET` until known).
    pub written_at: u64,
    /// Refused by the L1D when sent; retries when the memory side changes.
    pub refused: Option<(Refusal, u64)>,
    /// Coalesced into the in-flight write of this (older) store to the same line.
    pub merged_into: Option<u64>,
}

/// The store queue with its commit and send pointers:
/// `head <= sent <= committed <= tail`.
#[derive(Debug)]
pub(crate) struct StoreQueue {
    pub ring: Ring<StoreEntry>,
    /// Stores below this index have retired.
    pub committed: u64,
    /// Stores below this index have been accepted by the cache.
    pub sent: u64,
}

/// The structure a refusal charges: a locked cache or the miss registers.
fn note_refusal(set: &mut StructSet, why: Refusal) {
    match why {
        Refusal::Locked => set.insert(Structure::LOCKUP),
        Refusal::MshrsBusy | Refusal::TargetsFull => set.insert(Structure::MSHR),
        Refusal::PortsBusy => {}
    }
}

fn overlaps(a: u64, asz: u8, b: u64, bsz: u8) -> bool {
    a < b + u64::from(bsz) && b < a + u64::from(asz)
}

fn covers(store: u64, ssz: u8, load: u64, lsz: u8) -> bool {
    store <= load && load + u64::from(lsz) <= store + u64::from(ssz)
}

impl<O: Observer> Pipeline<'_, O> {
    /// Whether disambiguation lets the load with queue index `li` issue at `now`.
    pub(crate) fn load_may_issue(&self, li: u64, now: u64) -> bool {
        let load = self.lq.get(li);
        let perfect = self.cfg.core.disambiguation == crate::config::Disambiguation::Perfect;
        (self.sq.ring.head..load.older_stores).all(|si| {
            let s = self.sq.ring.get(si);
            s.addr_at <= now || (perfect && !overlaps(s.addr, s.size, load.addr, load.size))
        })
    }

    /// Free store-queue entries whose data has reached the cache.
    pub(crate) fn retire_written_stores(&mut self, now: u64) {
        while self.sq.ring.head < self.sq.sent
            && self.sq.ring.get(self.sq.ring.head).written_at <= now
        {
            self.sq.ring.pop();
            self.active = true;
        }
    }

    /// The memory stage: loads access the L1D (or forward), then the oldest
    /// committed store is sent.
    pub(crate) fn memory_stage(&mut self, now: u64) {
        self.resolve_store_data();
        let mut waiting = StructSet::EMPTY;
        let mut i = 0;
        while i < self.pending_loads.len() {
            let li = self.pending_loads[i];
            if self.try_load(li, now) {
                self.pending_loads.remove(i);
            } else {
                if let LoadState::Refused(why, _) = self.lq.get(li).state {
                    note_refusal(&mut waiting, why);
                }
                i += 1;
            }
        }
        self.send_store(now);
        if self.sq.sent < self.sq.committed
            && let Some((why, _)) = self.sq.ring.get(self.sq.sent).refused
        {
            note_refusal(&mut waiting, why);
        }
        self.mem_waiting = waiting;
    }

    /// Stores whose address is generated complete once the time their data is
    /// ready is known (its producer has issued, or its load has its data).
    fn resolve_store_data(&mut self) {
        let mut i = 0;
        while i < self.pending_store_data.len() {
            let seq = self.pending_store_data[i];
            let e = self.rob.get(seq);
            let ready = self.rename.ready_at(e.srcs[1]);
            if ready == NOT_YET {
                i += 1;
                continue;
            }
            let si = e.lsq;
            let s = self.sq.ring.get_mut(si);
            s.data_at = ready;
            let done = ready.max(s.addr_at);
            self.pending_store_data.swap_remove(i);
            self.finish(seq, done);
        }
    }

    /// Try to make progress on one load; true when it no longer needs the stage.
    fn try_load(&mut self, li: u64, now: u64) -> bool {
        let load = *self.lq.get(li);
        match load.state {
            LoadState::Agu(at) if at > now => return false,
            LoadState::Refused(_, stamp) if stamp == self.mem_gen => return false,
            LoadState::StoreWrite(si) if self.sq.ring.head <= si => return false,
            LoadState::StoreData(si)
                if self.sq.ring.head <= si && self.sq.ring.get(si).data_at > now =>
            {
                return false;
            }
            LoadState::Agu(_)
            | LoadState::Access
            | LoadState::Refused(..)
            | LoadState::StoreData(_) => {
                // The youngest older store that overlaps decides: it forwards when it
                // covers the load and its data is there, it makes the load wait for its
                // data when it covers it, and for its write to the cache otherwise.
                for si in (self.sq.ring.head..load.older_stores).rev() {
                    let s = *self.sq.ring.get(si);
                    if !overlaps(s.addr, s.size, load.addr, load.size) {
                        continue;
                    }
                    debug_assert!(
                        s.addr_at <= now,
                        "disambiguation let a load pass an unknown store"
                    );
                    let state = if !covers(s.addr, s.size, load.addr, load.size) {
                        LoadState::StoreWrite(si)
                    } else if s.data_at <= now {
                        let ready = now + u64::from(self.cfg.core.forward_cycles);
                        self.lq.get_mut(li).state = LoadState::Forwarded;
                        self.finish(load.seq, ready);
                        return true;
                    } else {
                        LoadState::StoreData(si)
                    };
                    if self.lq.get(li).state != state {
                        self.lq.get_mut(li).state = state;
                        self.active = true;
                    }
                    return false;
                }
            }
            LoadState::StoreWrite(_) => {}
            LoadState::Waiting | LoadState::Forwarded | LoadState::InFlight(_) => return true,
        }
        let req = Request {
            id: load.seq,
            kind: AccessKind::Load,
            addr: load.addr,
            size: load.size,
            pc: load.pc,
        };
        match self.mem.access(now, req) {
            Ok(acc) => {
                self.active = true;
                self.lq.get_mut(li).state = LoadState::InFlight(acc.source);
                if let Some(ready) = acc.ready_at {
                    self.finish(load.seq, ready);
                }
                debug_assert!(acc.ready_at.is_some() || acc.outcome != AccessOutcome::Hit);
                true
            }
            Err(why) => {
                self.obs.refusal(now, load.seq, why);
                let state = if why == Refusal::PortsBusy {
                    LoadState::Access
                } else {
                    LoadState::Refused(why, self.mem_gen)
                };
                if self.lq.get(li).state != state {
                    self.active = true;
                }
                self.lq.get_mut(li).state = state;
                false
            }
        }
    }

    fn send_store(&mut self, now: u64) {
        if self.sq.sent >= self.sq.committed {
            return;
        }
        let si = self.sq.sent;
        let s = *self.sq.ring.get(si);
        if let Some((_, stamp)) = s.refused
            && stamp == self.mem_gen
        {
            return;
        }
        // Store coalescing: a store to the line that the store just before it is
        // still writing joins that write instead of asking the cache again
        // (common practice for store buffers; it spares miss-register targets).
        if si > self.sq.ring.head {
            let line = u64::from(self.cfg.l1d.line_bytes);
            let prev = *self.sq.ring.get(si - 1);
            let last_byte = s.addr + u64::from(s.size) - 1;
            let same_line = prev.addr / line == s.addr / line && last_byte / line == s.addr / line;
            if same_line && prev.written_at > now {
                let e = self.sq.ring.get_mut(si);
                e.merged_into = Some(prev.merged_into.unwrap_or(prev.seq));
                e.written_at = prev.written_at;
                e.refused = None;
                self.sq.sent += 1;
                self.active = true;
                return;
            }
        }
        let req = Request {
            id: s.seq,
            kind: AccessKind::Store,
            addr: s.addr,
            size: s.size,
            pc: s.pc,
        };
        match self.mem.access(now, req) {
            Ok(acc) => {
                self.active = true;
                let e = self.sq.ring.get_mut(si);
                e.refused = None;
                e.written_at = acc.ready_at.unwrap_or(NOT_YET);
                self.sq.sent += 1;
            }
            Err(why) => {
                self.obs.refusal(now, s.seq, why);
                if why == Refusal::PortsBusy {
                    // Retry next cycle; the reason of an earlier refusal no longer holds.
                    self.sq.ring.get_mut(si).refused = None;
                    self.active = true;
                } else {
                    let e = self.sq.ring.get_mut(si);
                    if e.refused.map(|r| r.0) != Some(why) {
                        self.active = true;
                    }
                    e.refused = Some((why, self.mem_gen));
                }
            }
        }
    }

    /// A store's write reached the cache (a miss completed).
    pub(crate) fn store_written(&mut self, seq: u64, cycle: u64) {
        for si in self.sq.ring.head..self.sq.sent {
            let e = self.sq.ring.get_mut(si);
            if e.seq == seq || e.merged_into == Some(seq) {
                e.written_at = cycle;
            }
        }
    }
}
