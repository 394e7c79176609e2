//! Functional units: per kind, a count, a latency, pipelined or not.
//!
//! Per cycle, a pipelined pool accepts up to `count` operations; an unpipelined
//! unit accepts one operation and stays busy for its whole latency.

use crate::config::UnitConfig;

#[derive(Debug)]
pub(crate) struct UnitPool {
    pub latency: u64,
    pipelined: bool,
    count: u32,
    cycle: u64,
    used: u32,
    busy_until: Vec<u64>,
}

impl UnitPool {
    pub(crate) fn new(cfg: &UnitConfig) -> UnitPool {
        UnitPool {
            latency: u64::from(cfg.latency),
            pipelined: cfg.pipelined,
            count: cfg.count,
            cycle: u64::MAX,
            used: 0,
            busy_until: vec![0; cfg.count as usize],
        }
    }

    /// Take a unit at `now` if one is free.
    pub(crate) fn try_take(&mut self, now: u64) -> bool {
        if self.pipelined {
            if self.cycle != now {
                self.cycle = now;
                self.used = 0;
            }
            if self.used < self.count {
                self.used += 1;
                return true;
            }
            return false;
        }
        match self.busy_until.iter_mut().find(|b| **b <= now) {
            Some(unit) => {
                *unit = now + self.latency;
                true
            }
            None => false,
        }
    }

    /// The cycle at which an unpipelined unit of the pool is next free
    /// (0 for pipelined pools, which never stay busy).
    pub(crate) fn busy_until(&self) -> u64 {
        self.busy_until.iter().copied().min().unwrap_or(0)
    }
}
