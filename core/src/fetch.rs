//! The front end: fetch along the predicted path into a queue that models the
//! front-end pipeline depth.
//!
//! Per cycle, fetch takes up to `fetch_width` instructions from the
//! functional model, predicts each control instruction, and stops at a taken
//! branch (one fetch block per cycle). A mispredicted branch stops fetch until
//! it executes; fetch then restarts, and the first new instruction reaches
//! dispatch `frontend_depth` cycles later. With an instruction cache, a new
//! line is looked up before its first instruction is fetched, and a miss stops
//! fetch until the line arrives. Instructions wait in the queue until their
//! arrival cycle; the queue holds `fetch_width * (frontend_depth + 1)` of them,
//! so a stalled dispatch stops fetch.

use crate::config::CoreConfig;
use crate::observer::{FrontState, Observer};
use crate::pipeline::Pipeline;
use crate::predictor::Predictor;
use overlap_isa::{DynInst, OpClass};
use overlap_mem::{AccessKind, AccessOutcome, Request};
use std::collections::VecDeque;

/// An instruction in the front-end pipeline.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Fetched {
    pub inst: DynInst,
    pub seq: u64,
    /// First cycle at which it may dispatch.
    pub arrival: u64,
    pub mispredicted: bool,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Fetch {
    Running,
    /// Behind the mispredicted branch with this sequence number.
    WaitBranch(u64),
    /// The branch resolved; fetch restarts at this cycle.
    Redirect(u64),
    /// Waiting for an instruction-cache line.
    Icache,
    /// The instruction cache refused the lookup; retry when memory changes.
    IcacheRetry(u64),
    Drained,
}

#[derive(Debug)]
pub(crate) struct FrontEnd {
    pub queue: VecDeque<Fetched>,
    capacity: usize,
    width: u32,
    depth: u64,
    state: Fetch,
    refill_until: u64,
    /// Why the front end is refilling until `refill_until`.
    refill: FrontState,
    next_seq: u64,
    max_insts: Option<u64>,
    pub truncated: bool,
    line_bytes: Option<u64>,
    line: u64,
    fetch_ids: u64,
    pub predictor: Option<Predictor>,
}

impl FrontEnd {
    pub(crate) fn new(core: &CoreConfig, line_bytes: Option<u64>, max_insts: Option<u64>) -> Self {
        let capacity = (core.fetch_width * (core.frontend_depth + 1)) as usize;
        FrontEnd {
            queue: VecDeque::with_capacity(capacity),
            capacity,
            width: core.fetch_width,
            depth: u64::from(core.frontend_depth),
            state: Fetch::Running,
            refill_until: 0,
            refill: FrontState::Running,
            next_seq: 0,
            max_insts,
            truncated: false,
            line_bytes,
            line: u64::MAX,
            fetch_ids: 0,
            predictor: None,
        }
    }

    pub(crate) fn is_drained(&self) -> bool {
        self.state == Fetch::Drained && self.queue.is_empty()
    }

    /// The mispredicted branch `seq` resolves at `cycle`.
    pub(crate) fn resolve(&mut self, seq: u64, cycle: u64) {
        if self.state == Fetch::WaitBranch(seq) {
            self.state = Fetch::Redirect(cycle);
        }
    }

    /// The instruction-cache line arrived at `cycle`: fetch restarts, and the
    /// first instruction reaches dispatch `depth` cycles later.
    pub(crate) fn icache_filled(&mut self, cycle: u64) {
        if self.state == Fetch::Icache {
            self.state = Fetch::Running;
            self.refill = FrontState::Icache;
            self.refill_until = cycle + self.depth;
        }
    }

    /// The front end's state for the ledger at the end of cycle `now`.
    pub(crate) fn state(&self, now: u64) -> FrontState {
        match self.state {
            Fetch::WaitBranch(_) => FrontState::Mispredict,
            // Issued but not executed yet: still an unresolved misprediction.
            Fetch::Redirect(at) if now < at => FrontState::Mispredict,
            Fetch::Redirect(_) => FrontState::MispredictRefill,
            Fetch::Icache | Fetch::IcacheRetry(_) => FrontState::Icache,
            Fetch::Drained => FrontState::Drained,
            Fetch::Running if now < self.refill_until => self.refill,
            Fetch::Running if self.queue.len() >= self.capacity => FrontState::Backpressure,
            Fetch::Running => FrontState::Running,
        }
    }

    /// A one-line description for deadlock dumps.
    pub(crate) fn describe(&self, now: u64) -> String {
        format!(
            "{:?} ({:?}), {} instructions queued for dispatch, {} fetched",
            self.state,
            self.state(now),
            self.queue.len(),
            self.next_seq
        )
    }

    /// The next cycle after `now` at which the front end changes by itself.
    pub(crate) fn next_event(&self, now: u64) -> Option<u64> {
        let mut next = None::<u64>;
        let mut consider = |t: u64| {
            if t > now {
                next = Some(next.map_or(t, |n| n.min(t)));
            }
        };
        if let Fetch::Redirect(at) = self.state {
            consider(at);
        }
        if let Some(f) = self.queue.front() {
            consider(f.arrival);
        }
        consider(self.refill_until);
        next
    }
}

impl<O: Observer> Pipeline<'_, O> {
    /// The fetch stage.
    pub(crate) fn fetch_stage(&mut self, now: u64) -> Result<(), crate::RunError> {
        match self.front.state {
            Fetch::Redirect(at) if at <= now => {
                self.front.state = Fetch::Running;
                self.front.refill_until = at + self.front.depth;
                self.front.refill = FrontState::MispredictRefill;
                self.active = true;
            }
            Fetch::IcacheRetry(stamp) if stamp != self.mem_gen => {
                self.front.state = Fetch::Running;
                self.active = true;
            }
            _ => {}
        }
        if self.front.state != Fetch::Running {
            return Ok(());
        }
        for _ in 0..self.front.width {
            if self.front.queue.len() >= self.front.capacity {
                break;
            }
            if self
                .front
                .max_insts
                .is_some_and(|m| self.front.next_seq >= m)
            {
                self.front.state = Fetch::Drained;
                self.front.truncated = true;
                self.active = true;
                break;
            }
            if let Some(line_bytes) = self.front.line_bytes {
                let pc = self.machine.pc();
                let line = pc / line_bytes;
                if line != self.front.line {
                    let id = self.front.fetch_ids;
                    let req = Request {
                        id,
                        kind: AccessKind::Fetch,
                        addr: pc,
                        size: 4,
                        pc,
                    };
                    match self.mem.access(now, req) {
                        Ok(acc) => {
                            self.front.fetch_ids += 1;
                            self.active = true;
                            self.front.line = line;
                            if acc.outcome != AccessOutcome::Hit {
                                self.front.state = Fetch::Icache;
                                break;
                            }
                        }
                        Err(overlap_mem::Refusal::PortsBusy) => {
                            // One line per cycle: look it up again next cycle.
                            self.active = true;
                            break;
                        }
                        Err(_) => {
                            self.front.state = Fetch::IcacheRetry(self.mem_gen);
                            self.active = true;
                            break;
                        }
                    }
                }
            }
            let inst = self.machine.step().map_err(crate::RunError::Exec)?;
            let seq = self.front.next_seq;
            self.front.next_seq += 1;
            self.active = true;
            self.obs.fetch(now, seq, &inst);
            let mut mispredicted = false;
            if matches!(inst.class, OpClass::Branch | OpClass::Jump) {
                let correct = self
                    .front
                    .predictor
                    .as_mut()
                    .expect("predictor installed")
                    .predict_and_train(&inst);
                self.obs.branch(now, seq, &inst, correct);
                mispredicted = !correct;
            }
            let arrival = now + self.front.depth;
            self.front.queue.push_back(Fetched {
                inst,
                seq,
                arrival,
                mispredicted,
            });
            if self.machine.exit_code().is_some() {
                self.front.state = Fetch::Drained;
                break;
            }
            if mispredicted {
                self.front.state = Fetch::WaitBranch(seq);
                break;
            }
            if inst.taken {
                break;
            }
        }
        Ok(())
    }
}
