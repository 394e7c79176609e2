//! The observer interface: how the mechanics report what happened.
//!
//! The pipeline never reads statistics. It reports events (fetch, dispatch,
//! issue, completion, commit, branch outcomes, cache refusals) and, at the end
//! of every cycle or skipped stretch of identical cycles, a [`CycleState`]
//! summary. The cycle ledger and the counters are observers; a run with no
//! observer ([`NoObserver`]) has exactly the same timing.

use overlap_isa::DynInst;
use overlap_mem::{Level, Refusal};

/// Index of a structure that can refuse an instruction, in tie-break order:
/// lower indices are closer to memory and win ties.
pub type StructureId = u8;

/// A set of structures, one bit per [`StructureId`].
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct StructSet(pub u64);

impl StructSet {
    /// The empty set.
    pub const EMPTY: StructSet = StructSet(0);

    /// Add a structure.
    pub fn insert(&mut self, s: StructureId) {
        self.0 |= 1 << s;
    }

    /// Whether the set holds a structure.
    pub fn contains(self, s: StructureId) -> bool {
        self.0 & (1 << s) != 0
    }

    /// True when empty.
    pub fn is_empty(self) -> bool {
        self.0 == 0
    }

    /// The members, lowest id first.
    pub fn iter(self) -> impl Iterator<Item = StructureId> {
        let mut bits = self.0;
        std::iter::from_fn(move || {
            if bits == 0 {
                return None;
            }
            let s = bits.trailing_zeros() as StructureId;
            bits &= bits - 1;
            Some(s)
        })
    }
}

/// Why fetch is not delivering instructions.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FrontState {
    /// Fetching normally.
    Running,
    /// Stopped behind a mispredicted branch that has not executed yet.
    Mispredict,
    /// Refilling after a misprediction was resolved.
    MispredictRefill,
    /// Waiting for an instruction-cache miss (or refilling after one).
    Icache,
    /// The front-end queue is full (dispatch is stalled).
    Backpressure,
    /// The program has no more instructions.
    Drained,
}

/// What the oldest instruction in the window is waiting for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Waiting {
    /// Nothing in the window.
    Empty,
    /// Not issued: a source operand is not ready.
    Operands,
    /// Not issued: ready, but no unit or issue slot was free.
    Issue,
    /// An ALU operation in flight.
    Alu,
    /// A branch or jump in flight.
    Branch,
    /// A multiply in flight.
    Mul,
    /// A divide in flight.
    Div,
    /// Address generation of a load or store.
    Agu,
    /// A load served by the L1D.
    LoadL1,
    /// A load served by the L2.
    LoadL2,
    /// A load served by the L3.
    LoadL3,
    /// A load served by DRAM.
    LoadDram,
    /// A load refused by a locked (blocking) cache, waiting to retry.
    LoadLockup,
    /// A load refused by busy miss-holding registers, waiting to retry.
    LoadMshr,
    /// A load waiting for an older store (address, data to forward, or its write).
    LoadStore,
    /// Completed, waiting to retire.
    Retire,
    /// The window is empty but retired stores are still writing the cache.
    StoreDrain,
}

impl Waiting {
    /// Every kind, in report order.
    pub const ALL: [Waiting; 17] = [
        Waiting::LoadL1,
        Waiting::LoadL2,
        Waiting::LoadL3,
        Waiting::LoadDram,
        Waiting::LoadLockup,
        Waiting::LoadMshr,
        Waiting::LoadStore,
        Waiting::Agu,
        Waiting::Alu,
        Waiting::Branch,
        Waiting::Mul,
        Waiting::Div,
        Waiting::Operands,
        Waiting::Issue,
        Waiting::Retire,
        Waiting::StoreDrain,
        Waiting::Empty,
    ];

    /// The key used in reports.
    pub fn key(self) -> &'static str {
        match self {
            Waiting::Empty => "window.empty",
            Waiting::Operands => "operands",
            Waiting::Issue => "issue",
            Waiting::Alu => "exec.alu",
            Waiting::Branch => "exec.branch",
            Waiting::Mul => "exec.mul",
            Waiting::Div => "exec.div",
            Waiting::Agu => "exec.agu",
            Waiting::LoadL1 => "load.l1d",
            Waiting::LoadL2 => "load.l2",
            Waiting::LoadL3 => "load.l3",
            Waiting::LoadDram => "load.dram",
            Waiting::LoadLockup => "load.lockup",
            Waiting::LoadMshr => "load.mshr",
            Waiting::LoadStore => "load.store",
            Waiting::Retire => "retire",
            Waiting::StoreDrain => "store.drain",
        }
    }

    /// True when the oldest instruction waits on a memory access.
    pub fn is_memory(self) -> bool {
        matches!(
            self,
            Waiting::LoadL1
                | Waiting::LoadL2
                | Waiting::LoadL3
                | Waiting::LoadDram
                | Waiting::LoadLockup
                | Waiting::LoadMshr
                | Waiting::LoadStore
                | Waiting::StoreDrain
        )
    }

    /// The waiting kind of a load whose data comes from `level`.
    pub fn load_from(level: Level) -> Waiting {
        match level {
            Level::L1 => Waiting::LoadL1,
            Level::L2 => Waiting::LoadL2,
            Level::L3 => Waiting::LoadL3,
            Level::Dram => Waiting::LoadDram,
        }
    }
}

/// End-of-cycle summary: everything the ledger needs to charge the cycle.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct CycleState {
    /// Instructions retired this cycle.
    pub commits: u32,
    /// Structures that refused a request this cycle or have a request
    /// waiting for them (a load that was refused and has not been accepted yet).
    pub refusing: StructSet,
    /// Structures with at least one free entry at the end of the cycle.
    pub has_free: StructSet,
    /// The front end's state.
    pub front: FrontState,
    /// What the oldest instruction waits for.
    pub oldest: Waiting,
    /// Outstanding L1D demand misses at the end of the cycle.
    pub l1d_misses: u32,
    /// Outstanding DRAM demand reads at the end of the cycle.
    pub dram_reads: u32,
}

/// Receives the pipeline's events. Every method does nothing by default.
///
/// Cycle numbers start at 0. `cycles` is called once per simulated cycle, or
/// once for a stretch of `count` identical cycles when idle skipping jumps
/// over them; either way the counts add up to the run's total cycles.
#[allow(unused_variables)]
pub trait Observer {
    /// An instruction entered the front end.
    fn fetch(&mut self, cycle: u64, seq: u64, inst: &DynInst) {}
    /// A branch or jump was predicted at fetch; `correct` tells whether the
    /// prediction matched the functional model.
    fn branch(&mut self, cycle: u64, seq: u64, inst: &DynInst, correct: bool) {}
    /// An instruction entered the window.
    fn dispatch(&mut self, cycle: u64, seq: u64) {}
    /// An instruction issued to a functional unit.
    fn issue(&mut self, cycle: u64, seq: u64) {}
    /// The result of an instruction is ready at `cycle` (reported once known,
    /// which for a load is when its data arrives).
    fn complete(&mut self, cycle: u64, seq: u64) {}
    /// An instruction retired.
    fn commit(&mut self, cycle: u64, seq: u64, inst: &DynInst) {}
    /// The L1D refused a load or store.
    fn refusal(&mut self, cycle: u64, seq: u64, why: Refusal) {}
    /// `count` cycles starting at `first` ended in `state`.
    fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {}
    /// Measurement starts at `cycle` (the region of interest begins): forget
    /// everything recorded before it. Called at most once, during the cycle,
    /// before that cycle's `cycles` call.
    fn measure_start(&mut self, cycle: u64) {}
}

/// An observer that records nothing.
#[derive(Clone, Copy, Debug, Default)]
pub struct NoObserver;

impl Observer for NoObserver {}

macro_rules! fan_out {
    ($($t:ident . $i:tt),+) => {
        impl<$($t: Observer),+> Observer for ($($t,)+) {
            fn fetch(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
                $(self.$i.fetch(cycle, seq, inst);)+
            }
            fn branch(&mut self, cycle: u64, seq: u64, inst: &DynInst, correct: bool) {
                $(self.$i.branch(cycle, seq, inst, correct);)+
            }
            fn dispatch(&mut self, cycle: u64, seq: u64) {
                $(self.$i.dispatch(cycle, seq);)+
            }
            fn issue(&mut self, cycle: u64, seq: u64) {
                $(self.$i.issue(cycle, seq);)+
            }
            fn complete(&mut self, cycle: u64, seq: u64) {
                $(self.$i.complete(cycle, seq);)+
            }
            fn commit(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
                $(self.$i.commit(cycle, seq, inst);)+
            }
            fn refusal(&mut self, cycle: u64, seq: u64, why: Refusal) {
                $(self.$i.refusal(cycle, seq, why);)+
            }
            fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {
                $(self.$i.cycles(first, count, state);)+
            }
            fn measure_start(&mut self, cycle: u64) {
                $(self.$i.measure_start(cycle);)+
            }
        }
    };
}

fan_out!(A.0, B.1);
fan_out!(A.0, B.1, C.2);
fan_out!(A.0, B.1, C.2, D.3);

impl<O: Observer + ?Sized> Observer for &mut O {
    fn fetch(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
        (**self).fetch(cycle, seq, inst)
    }
    fn branch(&mut self, cycle: u64, seq: u64, inst: &DynInst, correct: bool) {
        (**self).branch(cycle, seq, inst, correct)
    }
    fn dispatch(&mut self, cycle: u64, seq: u64) {
        (**self).dispatch(cycle, seq)
    }
    fn issue(&mut self, cycle: u64, seq: u64) {
        (**self).issue(cycle, seq)
    }
    fn complete(&mut self, cycle: u64, seq: u64) {
        (**self).complete(cycle, seq)
    }
    fn commit(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
        (**self).commit(cycle, seq, inst)
    }
    fn refusal(&mut self, cycle: u64, seq: u64, why: Refusal) {
        (**self).refusal(cycle, seq, why)
    }
    fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {
        (**self).cycles(first, count, state)
    }
    fn measure_start(&mut self, cycle: u64) {
        (**self).measure_start(cycle)
    }
}
