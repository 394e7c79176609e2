//! Reservation stations: named pools of entries, each accepting some op
//! classes, holding dispatched instructions until they issue.
//!
//! Dispatch appends an entry (entries stay in age order); issue scans every
//! station for entries whose sources are ready and removes the ones it picks.

use crate::config::{StationConfig, UnitKind};
use crate::rename::PhysReg;
use overlap_isa::OpClass;

#[derive(Clone, Copy, Debug)]
pub(crate) struct StationEntry {
    pub seq: u64,
    pub srcs: [PhysReg; 2],
    pub unit: UnitKind,
    pub class: OpClass,
}

#[derive(Debug)]
pub(crate) struct Station {
    pub capacity: usize,
    pub entries: Vec<StationEntry>,
}

impl Station {
    pub(crate) fn new(cfg: &StationConfig) -> Station {
        let capacity = cfg.entries as usize;
        Station {
            capacity,
            entries: Vec::with_capacity(capacity),
        }
    }

    pub(crate) fn is_full(&self) -> bool {
        self.entries.len() >= self.capacity
    }
}

/// Which stations accept each op class, in configuration order.
pub(crate) fn stations_by_class(cfgs: &[StationConfig]) -> [Vec<u8>; 8] {
    let mut out: [Vec<u8>; 8] = Default::default();
    for (i, s) in cfgs.iter().enumerate() {
        for c in &s.accepts {
            let list = &mut out[*c as usize];
            if !list.contains(&(i as u8)) {
                list.push(i as u8);
            }
        }
    }
    out
}
