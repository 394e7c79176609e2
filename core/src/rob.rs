//! The reorder buffer: a fixed-capacity ring of in-flight instructions in
//! program order.
//!
//! Per cycle, dispatch appends at the tail and commit removes from the head;
//! issue and completion update entries in place. Entries are addressed by
//! sequence number (masked to the slot array), which works because sequence numbers
//! are handed out in program order and no wrong-path instruction ever enters.

use crate::rename::{NO_REG, PhysReg};
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

/// The reorder buffer.
#[derive(Debug)]
pub(crate) struct Rob {
    /// A power of two long; `capacity` bounds the live entries.
    slots: Vec<Option<RobEntry>>,
    mask: u64,
    capacity: usize,
    head_seq: u64,
    len: usize,
}

impl Rob {
    pub(crate) fn new(capacity: usize) -> Rob {
        let n = capacity.next_power_of_two();
        Rob {
            slots: vec![None; n],
            mask: n as u64 - 1,
            capacity,
            head_seq: 0,
            len: 0,
        }
    }

    pub(crate) fn is_empty(&self) -> bool {
        self.len == 0
    }

    pub(crate) fn is_full(&self) -> bool {
        self.len == self.capacity
    }

    fn slot(&self, seq: u64) -> usize {
        (seq & self.mask) as usize
    }

    /// Append the next instruction in program order.
    pub(crate) fn push(&mut self, entry: RobEntry) {
        debug_assert!(!self.is_full());
        if self.len == 0 {
            self.head_seq = entry.seq;
        }
        debug_assert_eq!(entry.seq, self.head_seq + self.len as u64, "program order");
        let slot = self.slot(entry.seq);
        self.slots[slot] = Some(entry);
        self.len += 1;
    }

    pub(crate) fn head(&self) -> Option<&RobEntry> {
        if self.len == 0 {
            None
        } else {
            self.slots[self.slot(self.head_seq)].as_ref()
        }
    }

    pub(crate) fn pop_head(&mut self) -> RobEntry {
        let slot = self.slot(self.head_seq);
        let e = self.slots[slot].take().expect("head present");
        self.head_seq += 1;
        self.len -= 1;
        e
    }

    pub(crate) fn get(&self, seq: u64) -> &RobEntry {
        self.slots[self.slot(seq)]
            .as_ref()
            .expect("instruction in the window")
    }

    pub(crate) fn get_mut(&mut self, seq: u64) -> &mut RobEntry {
        let slot = self.slot(seq);
        self.slots[slot]
            .as_mut()
            .expect("instruction in the window")
    }

    /// The entries from oldest to youngest.
    pub(crate) fn iter(&self) -> impl Iterator<Item = &RobEntry> {
        (0..self.len as u64).map(move |i| self.get(self.head_seq + i))
    }
}
