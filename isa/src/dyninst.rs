//! The dynamic-instruction record: one executed instruction as the functional
//! model saw it, with everything the timing core needs to schedule it.

use crate::inst::{Inst, OpClass, Reg};

/// One executed instruction of the program's dynamic stream.
///
/// The timing core never computes values: it only reads these records.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DynInst {
    /// Address of the instruction.
    pub pc: u64,
    /// The decoded instruction.
    pub inst: Inst,
    /// Its op class (cached from `inst.op`).
    pub class: OpClass,
    /// Source registers actually read; `x0` stands for "no source".
    pub srcs: [Reg; 2],
    /// Destination register actually written, `None` for none or `x0`.
    pub dst: Option<Reg>,
    /// Effective address of a load or store, 0 otherwise.
    pub mem_addr: u64,
    /// Access size in bytes of a load or store (1, 2, 4 or 8), 0 otherwise.
    pub mem_size: u8,
    /// For branches and jumps: whether control left the fall-through path.
    pub taken: bool,
    /// The address of the next instruction executed.
    pub next_pc: u64,
}

impl DynInst {
    /// The sources that create a dependence (never `x0`).
    pub fn sources(&self) -> impl Iterator<Item = Reg> + '_ {
        self.srcs.iter().copied().filter(|r| r.0 != 0)
    }

    /// Address of the sequentially next instruction.
    pub fn fall_through(&self) -> u64 {
        self.pc.wrapping_add(u64::from(self.inst.len))
    }
}
