//! Commit: retire completed instructions in program order.
//!
//! Per cycle, up to `commit_width` instructions at the head of the ROB whose
//! results are ready retire: each frees the physical register its destination
//! replaced, a load frees its load-queue entry, and a store becomes eligible to
//! write the cache (it keeps its store-queue entry until it has written).

use crate::observer::Observer;
use crate::pipeline::Pipeline;
use overlap_isa::OpClass;

impl<O: Observer> Pipeline<'_, O> {
    pub(crate) fn commit_stage(&mut self, now: u64) {
        for _ in 0..self.cfg.core.commit_width {
            match self.rob.head() {
                Some(e) if e.done <= now => {}
                _ => break,
            }
            let e = self.rob.pop_head();
            if self.measure_pc == Some(e.inst.pc) && self.roi.is_none() {
                self.roi = Some((now, self.retired));
                self.obs.measure_start(now);
                self.mem.reset_stats(now);
            }
            match e.inst.class {
                OpClass::Load => {
                    debug_assert_eq!(self.lq.head, e.lsq, "loads retire in order");
                    self.lq.pop();
                }
                OpClass::Store => {
                    debug_assert_eq!(self.sq.committed, e.lsq, "stores retire in order");
                    self.sq.committed += 1;
                }
                _ => {}
            }
            self.rename.release(e.prev);
            self.commits += 1;
            self.retired += 1;
            self.last_commit = now;
            self.active = true;
            self.obs.commit(now, e.seq, &e.inst);
        }
    }
}
