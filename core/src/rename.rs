//! Register renaming: the map from architectural to physical registers, the
//! free list, and the cycle at which each physical register's value is ready.
//!
//! Dispatch reads the map for sources and takes a free register for a
//! destination; commit returns the register the destination replaced (it is
//! free once the next writer of the same architectural register retires).

use overlap_isa::Reg;

/// A physical register number.
pub(crate) type PhysReg = u16;
/// No register: always ready (used for `x0` and unused sources).
pub(crate) const NO_REG: PhysReg = PhysReg::MAX;

#[derive(Debug)]
pub(crate) struct Rename {
    map: [PhysReg; 32],
    free: Vec<PhysReg>,
    ready: Vec<u64>,
}

impl Rename {
    pub(crate) fn new(phys_regs: usize) -> Rename {
        let mut map = [0; 32];
        for (i, m) in map.iter_mut().enumerate() {
            *m = i as PhysReg;
        }
        // Pop from the end: the lowest free numbers are handed out first.
        let free = (32..phys_regs as PhysReg).rev().collect();
        Rename {
            map,
            free,
            ready: vec![0; phys_regs],
        }
    }

    pub(crate) fn free_count(&self) -> usize {
        self.free.len()
    }

    /// The physical register holding `r`'s current value.
    pub(crate) fn source(&self, r: Reg) -> PhysReg {
        if r.0 == 0 {
            NO_REG
        } else {
            self.map[r.index()]
        }
    }

    /// Cycle at which a physical register's value is ready.
    pub(crate) fn ready_at(&self, p: PhysReg) -> u64 {
        if p == NO_REG {
            0
        } else {
            self.ready[p as usize]
        }
    }

    pub(crate) fn set_ready(&mut self, p: PhysReg, cycle: u64) {
        if p != NO_REG {
            self.ready[p as usize] = cycle;
        }
    }

    /// Give `r` a fresh physical register, not ready; returns (new, replaced).
    pub(crate) fn allocate(&mut self, r: Reg) -> Option<(PhysReg, PhysReg)> {
        let p = self.free.pop()?;
        self.ready[p as usize] = crate::rob::NOT_YET;
        let prev = std::mem::replace(&mut self.map[r.index()], p);
        Some((p, prev))
    }

    pub(crate) fn release(&mut self, p: PhysReg) {
        if p != NO_REG {
            self.free.push(p);
        }
    }
}
