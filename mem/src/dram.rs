//! Main memory: channels interleaved by line, each with a data bus that moves
//! one line per `transfer_cycles`, and optionally banks with an open row.
//!
//! An access arriving at cycle `t` is scheduled at once, in arrival order:
//!
//! ```text
//! start = max(t, bank ready)                  (t without a bank model)
//! data  = start + latency_cycles + row time   (row time 0 without banks)
//! begin = max(data, channel bus free)         (requests keep arrival order)
//! done  = begin + transfer_cycles             (the line is delivered)
//! ```
//!
//! so an unloaded read costs `latency_cycles + transfer_cycles` and a stream
//! of reads to one channel is limited to one line per `transfer_cycles`. The
//! state read and written per access is the channel's bus-free cycle and the
//! bank's open row and ready cycle. Reads and writes are scheduled alike.

use std::collections::VecDeque;

use crate::Cycle;
use crate::config::{BankConfig, DramConfig};
use crate::stats::{DramStats, Occupancy, busy_cycles, mean_when_busy};

#[derive(Debug, Clone, Default)]
struct Bank {
    open_row: Option<u64>,
    ready_at: Cycle,
}

#[derive(Debug, Clone, Default)]
struct Channel {
    bus_free: Cycle,
    /// Transfers (begin, end) not yet folded into `busy_done`.
    transfers: VecDeque<(Cycle, Cycle)>,
    banks: Vec<Bank>,
}

/// Row-buffer outcome of one access.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum RowOutcome {
    Hit,
    Miss,
    Conflict,
}

/// DRAM timing and counters.
#[derive(Debug, Clone)]
pub(crate) struct Dram {
    latency: u64,
    transfer: u64,
    line_bytes: u64,
    banks: Option<BankConfig>,
    channels: Vec<Channel>,
    /// Busy channel-cycles of transfers already folded.
    busy_done: u64,
    /// Cycle from which statistics are counted (after a reset).
    since: Cycle,
    demand: Occupancy,
    stats: DramStats,
}

impl Dram {
    /// Idle memory for a validated configuration; `max_demand` bounds the
    /// number of demand reads that can be outstanding at once.
    pub fn new(cfg: &DramConfig, line_bytes: u32, max_demand: u32) -> Self {
        let nbanks = cfg.banks.as_ref().map_or(0, |b| b.banks as usize);
        let channel = Channel {
            bus_free: 0,
            transfers: VecDeque::with_capacity(64),
            banks: vec![Bank::default(); nbanks],
        };
        Self {
            latency: u64::from(cfg.latency_cycles),
            transfer: u64::from(cfg.transfer_cycles),
            line_bytes: u64::from(line_bytes),
            banks: cfg.banks.clone(),
            channels: vec![channel; cfg.channels as usize],
            busy_done: 0,
            since: 0,
            demand: Occupancy::new(max_demand),
            stats: DramStats::default(),
        }
    }

    /// Schedule one line access arriving at `t`; returns the cycle the
    /// transfer ends.
    fn schedule(&mut self, t: Cycle, line: u64) -> Cycle {
        let nch = self.channels.len() as u64;
        let ch = &mut self.channels[(line % nch) as usize];
        let local_line = line / nch;
        let mut start = t;
        let mut array = self.latency;
        if let Some(b) = &self.banks {
            let row = local_line * self.line_bytes / b.row_bytes;
            let bank_idx = (row % u64::from(b.banks)) as usize;
            let row_id = row / u64::from(b.banks);
            let bank = &mut ch.banks[bank_idx];
            start = t.max(bank.ready_at);
            let (outcome, cycles) = match bank.open_row {
                Some(r) if r == row_id => (RowOutcome::Hit, b.row_hit_cycles),
                Some(_) => (RowOutcome::Conflict, b.row_conflict_cycles),
                None => (RowOutcome::Miss, b.row_miss_cycles),
            };
            match outcome {
                RowOutcome::Hit => self.stats.row_hits += 1,
                RowOutcome::Miss => self.stats.row_misses += 1,
                RowOutcome::Conflict => self.stats.row_conflicts += 1,
            }
            bank.open_row = Some(row_id);
            bank.ready_at = start + u64::from(cycles);
            array += u64::from(cycles);
        }
        let data = start + array;
        let begin = data.max(ch.bus_free);
        let end = begin + self.transfer;
        ch.bus_free = end;
        self.stats.queue_cycles_total += (start - t) + (begin - data);
        // Fold transfers that ended by now into the running total.
        while let Some(&(b, e)) = ch.transfers.front() {
            if e > t {
                break;
            }
            self.busy_done += e.saturating_sub(b.max(self.since));
            ch.transfers.pop_front();
        }
        ch.transfers.push_back((begin, end));
        self.stats.bytes += self.line_bytes;
        end
    }

    /// A line read arriving at `t`; returns the cycle its data is delivered.
    /// A `demand` read counts as outstanding until [`Dram::demand_done`].
    pub fn read(&mut self, t: Cycle, line: u64, demand: bool) -> Cycle {
        let done = self.schedule(t, line);
        self.stats.reads += 1;
        self.stats.read_latency_total += done - t;
        if demand {
            self.stats.demand_reads += 1;
            self.demand_started(t);
        }
        done
    }

    /// A line write (dirty eviction) arriving at `t`.
    pub fn write(&mut self, t: Cycle, line: u64) {
        self.schedule(t, line);
        self.stats.writes += 1;
    }

    /// One more demand read is outstanding from `t` (also used when a read
    /// already in DRAM becomes a demand read).
    pub fn demand_started(&mut self, t: Cycle) {
        let k = self.demand.current() + 1;
        self.demand.set(t, k);
    }

    /// One demand read delivered its data at `t`.
    pub fn demand_done(&mut self, t: Cycle) {
        let k = self.demand.current() - 1;
        self.demand.set(t, k);
    }

    /// Demand reads outstanding now.
    pub fn outstanding_demand(&self) -> u32 {
        self.demand.current()
    }

    /// Cycle after which each channel's bus is free, for diagnostics.
    pub fn bus_free(&self) -> impl Iterator<Item = Cycle> + '_ {
        self.channels.iter().map(|c| c.bus_free)
    }

    /// Zero the counters and restart the time-weighted figures at `now`.
    pub fn reset_stats(&mut self, now: Cycle) {
        self.stats = DramStats::default();
        self.demand.restart(now);
        self.busy_done = 0;
        self.since = now;
    }

    /// Counters with time-weighted figures closed at `now`.
    pub fn stats(&self, now: Cycle) -> DramStats {
        let mut s = self.stats.clone();
        let mut busy = self.busy_done;
        for ch in &self.channels {
            for &(b, e) in &ch.transfers {
                busy += e.min(now).saturating_sub(b.max(self.since));
            }
        }
        s.busy_cycles = busy;
        let span = now.saturating_sub(self.since);
        s.bandwidth_bytes_per_cycle = if span == 0 {
            0.0
        } else {
            busy as f64 * self.line_bytes as f64 / self.transfer as f64 / span as f64
        };
        s.outstanding_hist = self.demand.closed(now);
        s.mlp = mean_when_busy(&s.outstanding_hist);
        s.mlp_cycles = busy_cycles(&s.outstanding_hist);
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dram(channels: u32, banks: Option<BankConfig>) -> Dram {
        let cfg = DramConfig {
            latency_cycles: 100,
            channels,
            transfer_cycles: 10,
            banks,
        };
        Dram::new(&cfg, 64, 8)
    }

    #[test]
    fn unloaded_read_costs_latency_plus_transfer() {
        let mut d = dram(1, None);
        assert_eq!(d.read(5, 0, true), 5 + 100 + 10);
    }

    #[test]
    fn one_channel_serialises_transfers() {
        // Bandwidth bound: one line per transfer time per channel.
        let mut d = dram(1, None);
        let done: Vec<_> = (0..4).map(|l| d.read(0, l, false)).collect();
        assert_eq!(done, vec![110, 120, 130, 140]);
        let s = d.stats(140);
        assert_eq!(s.busy_cycles, 40);
        assert_eq!(s.queue_cycles_total, 10 + 20 + 30);
    }

    #[test]
    fn channels_interleave_by_line() {
        let mut d = dram(2, None);
        let done: Vec<_> = (0..4).map(|l| d.read(0, l, false)).collect();
        assert_eq!(done, vec![110, 110, 120, 120]);
    }

    #[test]
    fn banks_track_open_rows() {
        let b = BankConfig {
            banks: 2,
            row_bytes: 128,
            row_hit_cycles: 10,
            row_miss_cycles: 20,
            row_conflict_cycles: 30,
        };
        let mut d = dram(1, Some(b));
        // Lines 0,1 are row 0 (bank 0); lines 2,3 row 1 (bank 1); lines 4,5
        // row 2 (bank 0 again, a different row).
        let t0 = d.read(0, 0, false);
        assert_eq!(t0, 100 + 20 + 10);
        let t1 = d.read(1000, 1, false);
        assert_eq!(t1, 1000 + 100 + 10 + 10);
        let t2 = d.read(2000, 4, false);
        assert_eq!(t2, 2000 + 100 + 30 + 10);
        let s = d.stats(3000);
        assert_eq!((s.row_hits, s.row_misses, s.row_conflicts), (1, 1, 1));
    }
}
