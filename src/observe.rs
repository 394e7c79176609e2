//! Observers the command line attaches to a run: activity per cycle over a
//! window (for timelines), each instruction's pipeline events over a window
//! (for the text pipeline view), and a tracing observer attached only when
//! trace-level logging is on. All of them use bounded memory: a window of
//! `n` cycles costs `O(n)`, and instructions in flight are bounded by the
//! machine's own capacity.

use overlap_core::{CycleState, Observer};
use overlap_isa::{DynInst, Inst};
use overlap_mem::Refusal;
use std::collections::VecDeque;

/// Where a recording window starts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WindowStart {
    /// At this cycle.
    Cycle(u64),
    /// `offset` cycles after the first instruction at `pc` retires (the
    /// kernel start, when `pc` is the kernel's first instruction).
    AfterFirstCommitAt {
        /// The instruction's address.
        pc: u64,
        /// Cycles from its retirement to the window start.
        offset: u64,
    },
}

/// Resolves a [`WindowStart`] as events arrive.
#[derive(Clone, Debug)]
struct Window {
    start: WindowStart,
    from: Option<u64>,
    len: u64,
}

impl Window {
    fn new(start: WindowStart, len: u64) -> Window {
        let from = match start {
            WindowStart::Cycle(c) => Some(c),
            WindowStart::AfterFirstCommitAt { .. } => None,
        };
        Window { start, from, len }
    }

    fn on_commit(&mut self, cycle: u64, pc: u64) {
        if let WindowStart::AfterFirstCommitAt { pc: at, offset } = self.start
            && self.from.is_none()
            && pc == at
        {
            self.from = Some(cycle.saturating_add(offset));
        }
    }

    fn end(&self) -> Option<u64> {
        self.from.map(|f| f.saturating_add(self.len))
    }
}

/// Activity of each cycle of a window: instructions retired, outstanding
/// L1D demand misses and outstanding DRAM demand reads at the end of the cycle.
#[derive(Clone, Debug)]
pub struct Activity {
    window: Window,
    /// Instructions retired, one entry per cycle of the window.
    pub retired: Vec<u32>,
    /// Outstanding L1D demand misses.
    pub l1d_misses: Vec<u32>,
    /// Outstanding DRAM demand reads.
    pub dram_reads: Vec<u32>,
    /// Cycles of the window the run reached (the run may end inside it).
    pub observed: u64,
}

impl Activity {
    /// A recorder of `len` cycles starting at `start`.
    pub fn new(start: WindowStart, len: u64) -> Activity {
        let n = len as usize;
        Activity {
            window: Window::new(start, len),
            retired: vec![0; n],
            l1d_misses: vec![0; n],
            dram_reads: vec![0; n],
            observed: 0,
        }
    }

    /// First cycle of the window, once known.
    pub fn from(&self) -> Option<u64> {
        self.window.from
    }
}

impl Observer for Activity {
    fn commit(&mut self, cycle: u64, _seq: u64, inst: &DynInst) {
        self.window.on_commit(cycle, inst.pc);
    }

    fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {
        let (Some(from), Some(end)) = (self.window.from, self.window.end()) else {
            return;
        };
        let lo = first.max(from);
        let hi = first.saturating_add(count).min(end);
        if lo >= hi {
            return;
        }
        // A stretch of `count` identical cycles: every one of them had this state.
        for c in lo..hi {
            let i = (c - from) as usize;
            self.retired[i] = state.commits;
            self.l1d_misses[i] = state.l1d_misses;
            self.dram_reads[i] = state.dram_reads;
        }
        self.observed = self.observed.max(hi - from);
    }
}

/// Marker of an event that has not happened.
const NONE: u64 = u64::MAX;

#[derive(Clone, Copy, Debug)]
struct InFlight {
    seq: u64,
    pc: u64,
    inst: Inst,
    fetch: u64,
    dispatch: u64,
    issue: u64,
    complete: u64,
}

/// One instruction's life in the pipeline.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PipeRow {
    /// Sequence number (program order).
    pub seq: u64,
    /// Address.
    pub pc: u64,
    /// Disassembly.
    pub text: String,
    /// Cycle it entered the front end.
    pub fetch: u64,
    /// Cycle it entered the window (`None` if it never did).
    pub dispatch: Option<u64>,
    /// Cycle it issued.
    pub issue: Option<u64>,
    /// Cycle its result was ready.
    pub complete: Option<u64>,
    /// Cycle it retired.
    pub commit: u64,
}

/// Records fetch, dispatch, issue, complete and commit cycles of the
/// instructions in flight during a window, up to `max_rows` of them, and
/// counts the others.
#[derive(Clone, Debug)]
pub struct Pipeline {
    window: Window,
    in_flight: VecDeque<InFlight>,
    /// Recorded instructions, in program order.
    pub rows: Vec<PipeRow>,
    /// `None`: record nothing, count nothing.
    max_rows: Option<usize>,
    /// Instructions of the window not recorded because `max_rows` was reached.
    pub dropped: u64,
}

impl Pipeline {
    /// A recorder for `len` cycles from `start`, keeping at most `max_rows`
    /// rows (and counting every instruction of the window, shown or not);
    /// with `None` it tracks nothing at all.
    pub fn new(start: WindowStart, len: u64, max_rows: Option<usize>) -> Pipeline {
        Pipeline {
            window: Window::new(start, len),
            in_flight: VecDeque::with_capacity(if max_rows.is_some() { 256 } else { 0 }),
            rows: Vec::new(),
            max_rows,
            dropped: 0,
        }
    }

    /// Instructions in flight during the window: shown plus not shown.
    pub fn in_window(&self) -> u64 {
        self.rows.len() as u64 + self.dropped
    }

    fn slot(&mut self, seq: u64) -> Option<&mut InFlight> {
        let i = self.in_flight.binary_search_by_key(&seq, |f| f.seq).ok()?;
        self.in_flight.get_mut(i)
    }
}

impl Observer for Pipeline {
    fn fetch(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
        if self.max_rows.is_none() {
            return; // Nothing to record: track nothing.
        }
        if let Some(end) = self.window.end()
            && cycle >= end
        {
            return;
        }
        self.in_flight.push_back(InFlight {
            seq,
            pc: inst.pc,
            inst: inst.inst,
            fetch: cycle,
            dispatch: NONE,
            issue: NONE,
            complete: NONE,
        });
    }

    fn dispatch(&mut self, cycle: u64, seq: u64) {
        if let Some(f) = self.slot(seq) {
            f.dispatch = cycle;
        }
    }

    fn issue(&mut self, cycle: u64, seq: u64) {
        if let Some(f) = self.slot(seq) {
            f.issue = cycle;
        }
    }

    fn complete(&mut self, cycle: u64, seq: u64) {
        if let Some(f) = self.slot(seq) {
            f.complete = cycle;
        }
    }

    fn commit(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
        self.window.on_commit(cycle, inst.pc);
        // Retirement is in order: everything older than `seq` has left.
        while self.in_flight.front().is_some_and(|f| f.seq < seq) {
            self.in_flight.pop_front();
        }
        let Some(f) = self.in_flight.front().copied().filter(|f| f.seq == seq) else {
            return;
        };
        self.in_flight.pop_front();
        let (Some(from), Some(end)) = (self.window.from, self.window.end()) else {
            return;
        };
        if cycle < from || f.fetch >= end {
            return;
        }
        if self.rows.len() >= self.max_rows.unwrap_or(0) {
            self.dropped += 1;
            return;
        }
        let opt = |c: u64| (c != NONE).then_some(c);
        self.rows.push(PipeRow {
            seq: f.seq,
            pc: f.pc,
            text: f.inst.to_string(),
            fetch: f.fetch,
            dispatch: opt(f.dispatch),
            issue: opt(f.issue),
            complete: opt(f.complete),
            commit: cycle,
        });
    }
}

/// Emits every pipeline event as a `trace`-level log record. Attach it only
/// when trace logging is enabled: it formats on every event.
#[derive(Clone, Copy, Debug, Default)]
pub struct Trace;

impl Observer for Trace {
    fn fetch(&mut self, cycle: u64, seq: u64, inst: &DynInst) {
        tracing::trace!(cycle, seq, pc = format_args!("{:#x}", inst.pc), inst = %inst.inst, "fetch");
    }
    fn branch(&mut self, cycle: u64, seq: u64, _inst: &DynInst, correct: bool) {
        tracing::trace!(cycle, seq, correct, "branch predicted");
    }
    fn dispatch(&mut self, cycle: u64, seq: u64) {
        tracing::trace!(cycle, seq, "dispatch");
    }
    fn issue(&mut self, cycle: u64, seq: u64) {
        tracing::trace!(cycle, seq, "issue");
    }
    fn complete(&mut self, cycle: u64, seq: u64) {
        tracing::trace!(cycle, seq, "complete");
    }
    fn commit(&mut self, cycle: u64, seq: u64, _inst: &DynInst) {
        tracing::trace!(cycle, seq, "commit");
    }
    fn refusal(&mut self, cycle: u64, seq: u64, why: Refusal) {
        tracing::trace!(cycle, seq, %why, "L1D refused");
    }
    fn cycles(&mut self, first: u64, count: u64, state: &CycleState) {
        tracing::trace!(
            first,
            count,
            commits = state.commits,
            l1d_misses = state.l1d_misses,
            dram_reads = state.dram_reads,
            oldest = state.oldest.key(),
            "cycles"
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use overlap_core::Waiting;
    use overlap_core::observer::{FrontState, StructSet};

    fn state(commits: u32, l1d: u32) -> CycleState {
        CycleState {
            commits,
            refusing: StructSet::EMPTY,
            has_free: StructSet::EMPTY,
            front: FrontState::Running,
            oldest: Waiting::LoadDram,
            l1d_misses: l1d,
            dram_reads: l1d,
        }
    }

    /// `addi x0, x0, 0` at `pc`.
    fn inst(pc: u64) -> DynInst {
        let inst = overlap_isa::decode(0x0000_0013).expect("nop decodes");
        DynInst {
            pc,
            inst,
            class: inst.op.class(),
            srcs: [overlap_isa::Reg(0); 2],
            dst: None,
            mem_addr: 0,
            mem_size: 0,
            taken: false,
            next_pc: pc + 4,
        }
    }

    /// Feed instructions `0..n`, one fetched per cycle and retired 10
    /// cycles later, to `p`.
    fn feed(p: &mut Pipeline, n: u64) {
        for seq in 0..n {
            p.fetch(seq, seq, &inst(0x1000 + 4 * seq));
        }
        for seq in 0..n {
            p.commit(seq + 10, seq, &inst(0x1000 + 4 * seq));
        }
    }

    #[test]
    fn the_count_in_the_window_does_not_depend_on_the_row_limit() {
        let counts: Vec<u64> = [0, 1, 5, 1000]
            .into_iter()
            .map(|rows| {
                let mut p = Pipeline::new(WindowStart::Cycle(20), 10, Some(rows));
                feed(&mut p, 100);
                assert_eq!(p.rows.len(), rows.min(p.in_window() as usize));
                p.in_window()
            })
            .collect();
        // Retired in 20..: fetched before the window end 30: seqs 10..=29.
        assert_eq!(counts, [20, 20, 20, 20]);
        let mut off = Pipeline::new(WindowStart::Cycle(20), 10, None);
        feed(&mut off, 100);
        assert_eq!(off.in_window(), 0);
    }

    #[test]
    fn a_skipped_stretch_fills_every_cycle_it_covers() {
        let mut a = Activity::new(WindowStart::Cycle(10), 10);
        a.cycles(0, 12, &state(0, 3)); // covers window cycles 10 and 11
        a.cycles(12, 1, &state(2, 1));
        a.cycles(13, 100, &state(0, 4)); // runs past the window end
        assert_eq!(a.l1d_misses, vec![3, 3, 1, 4, 4, 4, 4, 4, 4, 4]);
        assert_eq!(a.retired, vec![0, 0, 2, 0, 0, 0, 0, 0, 0, 0]);
        assert_eq!(a.observed, 10);
    }
}
