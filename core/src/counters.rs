//! Run counters kept by an observer: retired instructions by class and branch
//! prediction outcomes (the caches count their own refusals).

use crate::observer::Observer;
use overlap_isa::{DynInst, OpClass};
use serde::{Deserialize, Serialize};

/// Branch prediction figures.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Branches {
    /// Conditional branches fetched.
    pub conditional: u64,
    /// Conditional branches mispredicted.
    pub conditional_mispredicts: u64,
    /// Jumps (JAL, JALR) fetched.
    pub jumps: u64,
    /// Jumps whose target was mispredicted.
    pub jump_mispredicts: u64,
    /// All mispredictions per thousand retired instructions.
    pub mpki: f64,
}

/// Counts kept while a run goes.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Counters {
    /// Retired instructions per op class (`Alu`, `Load`, ...).
    pub retired_by_class: [u64; 8],
    /// Branch figures.
    pub branches: Branches,
}

impl Observer for Counters {
    fn measure_start(&mut self, _cycle: u64) {
        *self = Counters::default();
    }

    fn branch(&mut self, _cycle: u64, _seq: u64, inst: &DynInst, correct: bool) {
        let b = &mut self.branches;
        if inst.class == OpClass::Branch {
            b.conditional += 1;
            b.conditional_mispredicts += u64::from(!correct);
        } else {
            b.jumps += 1;
            b.jump_mispredicts += u64::from(!correct);
        }
    }

    fn commit(&mut self, _cycle: u64, _seq: u64, inst: &DynInst) {
        self.retired_by_class[inst.class as usize] += 1;
    }
}
