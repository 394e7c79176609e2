//! The reorder buffer: a fixed-capacity ring of in-flight instructions in
//! program order.
//!
//! Per cycle, dispatch appends at the tail and commit removes from the head;
//! issue and completion update entries in place. Entries are addressed by
//! sequence number, which works because sequence numbers
//! are handed out in program order and no wrong-path instruction ever enters.

use crate::rename::{NO_REG, PhysReg};
use crate::ring::Ring;
use overlap_isa::DynInst;

/// "Not known yet" for a cycle field.
pub(crate) const NOT_YET: u64 = u64::MAX;

/// One in-flight instruction.
#[derive(Clone, Copy, Debug)]
pub(crate) struct RobEntry {
    pub inst: DynInst,
    pub seq: u64,
    /// Cycle at which the result is ready (and the instruction may retire).
    pub done: u64,
    pub issued: bool,
    /// Physical sources (`NO_REG` for none).
    pub srcs: [PhysReg; 2],
    /// Physical destination and the mapping it replaced (`NO_REG` for none).
    pub dst: PhysReg,
    pub prev: PhysReg,
    /// Index in the load or store queue for memory operations.
    pub lsq: u64,
    /// The front end mispredicted this control instruction.
    pub mispredicted: bool,
}

impl RobEntry {
    pub(crate) fn new(inst: DynInst, seq: u64) -> RobEntry {
        RobEntry {
            inst,
            seq,
            done: NOT_YET,
            issued: false,
            srcs: [NO_REG; 2],
            dst: NO_REG,
            prev: NO_REG,
            lsq: 0,
            mispredicted: false,
        }
    }
}

/// The reorder buffer: a ring indexed by sequence number.
#[derive(Debug)]
pub(crate) struct Rob(Ring<RobEntry>);

impl Rob {
    pub(crate) fn new(capacity: usize) -> Rob {
        Rob(Ring::new(capacity))
    }

    pub(crate) fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    pub(crate) fn is_full(&self) -> bool {
        self.0.is_full()
    }

    /// Append the next instruction in program order.
    pub(crate) fn push(&mut self, entry: RobEntry) {
        let index = self.0.push(entry);
        debug_assert_eq!(index, entry.seq, "program order");
    }

    pub(crate) fn head(&self) -> Option<&RobEntry> {
        (!self.0.is_empty()).then(|| self.0.get(self.0.head))
    }

    pub(crate) fn pop_head(&mut self) -> RobEntry {
        self.0.pop()
    }

    pub(crate) fn get(&self, seq: u64) -> &RobEntry {
        self.0.get(seq)
    }

    pub(crate) fn get_mut(&mut self, seq: u64) -> &mut RobEntry {
        self.0.get_mut(seq)
    }

    /// The entries from oldest to youngest.
    pub(crate) fn iter(&self) -> impl Iterator<Item = &RobEntry> {
        self.0.iter()
    }
}
