//! Branch prediction at fetch: a direction predictor (perfect, static
//! not-taken, bimodal two-bit counters, gshare), a return-address stack and an
//! indirect-target table.
//!
//! Per fetched control instruction it reads the tables, compares the
//! prediction with the functional model's outcome, and trains at once (the
//! model is trained in program order at fetch, since no wrong-path
//! instructions exist). Direct jumps (JAL) are always predicted correctly:
//! their target is known when they are decoded.

use crate::config::{PredictorConfig, PredictorKind};
use overlap_isa::{DynInst, Op, OpClass};

/// Strongly not taken, the state every two-bit counter starts in.
const STRONG_NOT_TAKEN: u8 = 0;

/// The branch predictor state.
#[derive(Clone, Debug)]
pub struct Predictor {
    kind: PredictorKind,
    counters: Vec<u8>,
    counter_mask: u64,
    history: u64,
    history_mask: u64,
    ras: Vec<u64>,
    ras_top: usize,
    ras_len: usize,
    targets: Vec<u64>,
    target_mask: u64,
}

impl Predictor {
    /// A cold predictor: counters strongly not taken, empty history and stacks.
    pub fn new(cfg: &PredictorConfig) -> Predictor {
        let counters = 1usize << cfg.table_bits;
        let targets = 1usize << cfg.target_bits;
        Predictor {
            kind: cfg.kind,
            counters: vec![STRONG_NOT_TAKEN; counters],
            counter_mask: counters as u64 - 1,
            history: 0,
            history_mask: (1u64 << cfg.history_bits) - 1,
            ras: vec![0; cfg.ras_entries as usize],
            ras_top: 0,
            ras_len: 0,
            targets: vec![0; targets],
            target_mask: targets as u64 - 1,
        }
    }

    /// Predict a control instruction, then train on its real outcome.
    /// Returns whether the prediction (direction and target) was correct.
    pub fn predict_and_train(&mut self, d: &DynInst) -> bool {
        match d.class {
            OpClass::Branch => self.conditional(d),
            OpClass::Jump => self.jump(d),
            _ => true,
        }
    }

    fn conditional(&mut self, d: &DynInst) -> bool {
        let pc = d.pc >> 1;
        let index = match self.kind {
            PredictorKind::Perfect => return true,
            PredictorKind::NotTaken => return !d.taken,
            PredictorKind::Bimodal => pc & self.counter_mask,
            PredictorKind::Gshare => (pc ^ self.history) & self.counter_mask,
        } as usize;
        let counter = &mut self.counters[index];
        let predicted = *counter >= 2;
        if d.taken {
            *counter = (*counter + 1).min(3);
        } else {
            *counter = counter.saturating_sub(1);
        }
        self.history = ((self.history << 1) | u64::from(d.taken)) & self.history_mask;
        predicted == d.taken
    }

    fn jump(&mut self, d: &DynInst) -> bool {
        let inst = &d.inst;
        let perfect = self.kind == PredictorKind::Perfect;
        let correct = if inst.op == Op::Jal {
            true
        } else if inst.is_return() && !self.ras.is_empty() {
            let predicted = self.pop();
            perfect || predicted == Some(d.next_pc)
        } else {
            let slot = ((d.pc >> 1) & self.target_mask) as usize;
            let predicted = self.targets[slot];
            self.targets[slot] = d.next_pc;
            perfect || predicted == d.next_pc
        };
        if inst.is_call() && !self.ras.is_empty() {
            self.push(d.fall_through());
        }
        correct
    }

    fn push(&mut self, addr: u64) {
        let n = self.ras.len();
        self.ras_top = (self.ras_top + 1) % n;
        self.ras[self.ras_top] = addr;
        self.ras_len = (self.ras_len + 1).min(n);
    }

    fn pop(&mut self) -> Option<u64> {
        if self.ras_len == 0 {
            return None;
        }
        let n = self.ras.len();
        let addr = self.ras[self.ras_top];
        self.ras_top = (self.ras_top + n - 1) % n;
        self.ras_len -= 1;
        Some(addr)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use overlap_isa::{Inst, Reg};

    fn branch(pc: u64, taken: bool) -> DynInst {
        DynInst {
            pc,
            inst: Inst {
                op: Op::Bne,
                rd: Reg(0),
                rs1: Reg(5),
                rs2: Reg(0),
                imm: -8,
                len: 4,
            },
            class: OpClass::Branch,
            srcs: [Reg(5), Reg(0)],
            dst: None,
            mem_addr: 0,
            mem_size: 0,
            taken,
            next_pc: if taken { pc - 8 } else { pc + 4 },
        }
    }

    #[test]
    fn bimodal_loop_exit_mispredicts_once_per_exit() {
        // Source: J. E. Smith, "A study of branch prediction strategies", ISCA 1981 (two-bit
        // saturating counters). A 10-iteration loop branch (taken 9 times, then not taken)
        // entered 100 times from a cold strongly-not-taken counter: the first entry costs 2
        // warm-up mispredictions plus the exit, every later entry only its exit: 3 + 99 = 102.
        let mut p = Predictor::new(&PredictorConfig {
            kind: PredictorKind::Bimodal,
            ..PredictorConfig::default()
        });
        let mut wrong = 0;
        for _ in 0..100 {
            for i in 0..10 {
                if !p.predict_and_train(&branch(0x1000, i < 9)) {
                    wrong += 1;
                }
            }
        }
        assert_eq!(wrong, 102);
    }

    #[test]
    fn gshare_learns_a_short_loop_exit() {
        // Common practice: with more history bits than the loop has iterations, the global
        // history identifies the last iteration, so the exit is learned.
        let mut p = Predictor::new(&PredictorConfig::default());
        let mut wrong = 0;
        for _ in 0..100 {
            for i in 0..10 {
                if !p.predict_and_train(&branch(0x1000, i < 9)) {
                    wrong += 1;
                }
            }
        }
        assert!(wrong < 30, "gshare mispredicted {wrong} times");
    }
}
