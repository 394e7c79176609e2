//! Rename and dispatch: move instructions from the front-end queue into the
//! window, in program order.
//!
//! Per cycle, up to `dispatch_width` instructions whose arrival cycle has come
//! each take a ROB entry, an entry in a station that accepts their class, a
//! load- or store-queue entry for memory operations, and a physical register
//! when they write one. The first instruction that cannot have all of them
//! stops dispatch for the cycle, and every structure it lacked is reported as
//! refusing.

use crate::config::UnitKind;
use crate::lsq::{LoadEntry, LoadState, StoreEntry};
use crate::observer::{Observer, StructSet, StructureId};
use crate::pipeline::{Pipeline, Structure};
use crate::rob::{NOT_YET, RobEntry};
use crate::stations::StationEntry;
use overlap_isa::OpClass;

impl<O: Observer> Pipeline<'_, O> {
    pub(crate) fn dispatch_stage(&mut self, now: u64) {
        for _ in 0..self.cfg.core.dispatch_width {
            let Some(f) = self.front.queue.front() else {
                break;
            };
            if f.arrival > now {
                break;
            }
            let f = *f;
            let d = f.inst;
            let mut lacking = StructSet::EMPTY;
            if self.rob.is_full() {
                lacking.insert(self.rob_id);
            }
            let station = self.class_stations[d.class as usize]
                .iter()
                .copied()
                .find(|&s| !self.stations[s as usize].is_full());
            if station.is_none() {
                for &s in &self.class_stations[d.class as usize] {
                    lacking.insert(Structure::FIRST_STATION + s as StructureId);
                }
            }
            match d.class {
                OpClass::Load if self.lq.is_full() => lacking.insert(Structure::LQ),
                OpClass::Store if self.sq.ring.is_full() => lacking.insert(Structure::SQ),
                _ => {}
            }
            if d.dst.is_some() && self.rename.free_count() == 0 {
                lacking.insert(self.regs_id);
            }
            if !lacking.is_empty() {
                self.refused.0 |= lacking.0;
                break;
            }
            self.front.queue.pop_front();
            self.active = true;
            let mut e = RobEntry::new(d, f.seq);
            e.mispredicted = f.mispredicted;
            let mut srcs = [crate::rename::NO_REG; 2];
            for (i, r) in d.srcs.iter().enumerate() {
                srcs[i] = self.rename.source(*r);
            }
            e.srcs = srcs;
            if let Some(rd) = d.dst {
                let (p, prev) = self.rename.allocate(rd).expect("free register checked");
                e.dst = p;
                e.prev = prev;
            }
            match d.class {
                OpClass::Load => {
                    e.lsq = self.lq.push(LoadEntry {
                        seq: f.seq,
                        addr: d.mem_addr,
                        size: d.mem_size,
                        pc: d.pc,
                        older_stores: self.sq.ring.tail,
                        state: LoadState::Waiting,
                    });
                }
                OpClass::Store => {
                    e.lsq = self.sq.ring.push(StoreEntry {
                        seq: f.seq,
                        addr: d.mem_addr,
                        size: d.mem_size,
                        pc: d.pc,
                        addr_at: NOT_YET,
                        data_at: NOT_YET,
                        written_at: NOT_YET,
                        refused: None,
                        merged_into: None,
                    });
                }
                _ => {}
            }
            self.rob.push(e);
            let s = station.expect("station checked") as usize;
            // A store issues on its address operand; its data may come later.
            let issue_srcs = if d.class == OpClass::Store {
                [srcs[0], crate::rename::NO_REG]
            } else {
                srcs
            };
            self.stations[s].entries.push(StationEntry {
                seq: f.seq,
                srcs: issue_srcs,
                unit: UnitKind::for_class(d.class),
                class: d.class,
            });
            self.obs.dispatch(now, f.seq);
        }
    }
}
