//! The figures every tabular output shares: the canonical order of ledger
//! buckets and waiting kinds, and the flat metric set of a run (used by
//! `compare`, `sweep`, `baseline`, `check` and the CSV columns), so every
//! command names and computes a figure the same way.

use indexmap::IndexMap;
use overlap_core::{Config, FIXED_BUCKETS, Report, Waiting, structure_names};
use serde::{Deserialize, Serialize};

/// Every bucket a set of configurations can produce, in a stable order: the
/// fixed ones, then each structure (closest to memory first), then any key
/// found in `reports` that is not known yet.
pub fn bucket_order<'a>(
    configs: impl IntoIterator<Item = &'a Config>,
    reports: impl IntoIterator<Item = &'a Report>,
) -> Vec<String> {
    let mut order: Vec<String> = FIXED_BUCKETS.iter().map(|s| s.to_string()).collect();
    let push = |name: &str, order: &mut Vec<String>| {
        if !order.iter().any(|o| o == name) {
            order.push(name.to_string());
        }
    };
    for c in configs {
        for s in structure_names(c) {
            push(&s, &mut order);
        }
    }
    for r in reports {
        for k in r.ledger.keys() {
            push(k, &mut order);
        }
    }
    order
}

/// The buckets of [`bucket_order`] that hold at least one cycle in one of
/// `reports`, in that order.
pub fn buckets_in_use<'a>(
    configs: impl IntoIterator<Item = &'a Config>,
    reports: &'a [Report],
) -> Vec<String> {
    bucket_order(configs, reports)
        .into_iter()
        .filter(|b| {
            reports
                .iter()
                .any(|r| r.ledger.get(b).is_some_and(|&c| c > 0))
        })
        .collect()
}

/// Waiting kinds that appear in any report, in the core's report order.
pub fn waiting_order<'a>(reports: impl IntoIterator<Item = &'a Report> + Clone) -> Vec<String> {
    let mut order: Vec<String> = Vec::new();
    let present = |k: &str| {
        reports.clone().into_iter().any(|r| {
            r.waiting
                .values()
                .any(|row| row.get(k).is_some_and(|&v| v > 0))
        })
    };
    for w in Waiting::ALL {
        if present(w.key()) {
            order.push(w.key().to_string());
        }
    }
    for r in reports {
        for row in r.waiting.values() {
            for k in row.keys() {
                if !order.iter().any(|o| o == k) {
                    order.push(k.clone());
                }
            }
        }
    }
    order
}

/// A metric value: counts stay integers in JSON.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Num {
    /// A count.
    Int(u64),
    /// A ratio or mean.
    Real(f64),
}

impl Num {
    /// As a float.
    pub fn get(self) -> f64 {
        match self {
            Num::Int(v) => v as f64,
            Num::Real(v) => v,
        }
    }

    /// Text for CSV and tables (integers without grouping).
    pub fn text(self) -> String {
        match self {
            Num::Int(v) => v.to_string(),
            Num::Real(v) => crate::output::num(v),
        }
    }
}

/// The scalar metrics of a run, before the ledger buckets.
pub const SCALARS: [&str; 12] = [
    "cycles",
    "instructions",
    "ipc",
    "l1d_accesses",
    "l1d_misses",
    "l1d_miss_rate",
    "l1d_avg_miss_latency",
    "l1d_mlp",
    "dram_mlp",
    "dram_reads",
    "mispredicts",
    "mpki",
];

/// L1D primary misses over accepted accesses (0 without accesses).
pub fn l1d_miss_rate(r: &Report) -> f64 {
    r.caches
        .get("l1d")
        .map_or(0.0, |c| ratio(c.misses, c.accesses))
}

/// Average L1D miss latency in cycles.
pub fn l1d_miss_latency(r: &Report) -> f64 {
    r.caches.get("l1d").map_or(0.0, |c| c.avg_miss_latency)
}

/// `a / b`, 0 when `b` is 0.
pub fn ratio(a: u64, b: u64) -> f64 {
    if b == 0 { 0.0 } else { a as f64 / b as f64 }
}

/// Every metric of a run: [`SCALARS`], then `ledger.<bucket>` (cycles) for
/// each bucket of `buckets` (zero when the run has none).
pub fn of(r: &Report, buckets: &[String]) -> IndexMap<String, Num> {
    let l1d = r.caches.get("l1d");
    let mut m = IndexMap::new();
    m.insert("cycles".into(), Num::Int(r.cycles));
    m.insert("instructions".into(), Num::Int(r.instructions));
    m.insert("ipc".into(), Num::Real(r.ipc));
    m.insert(
        "l1d_accesses".into(),
        Num::Int(l1d.map_or(0, |c| c.accesses)),
    );
    m.insert("l1d_misses".into(), Num::Int(l1d.map_or(0, |c| c.misses)));
    m.insert("l1d_miss_rate".into(), Num::Real(l1d_miss_rate(r)));
    m.insert(
        "l1d_avg_miss_latency".into(),
        Num::Real(l1d_miss_latency(r)),
    );
    m.insert("l1d_mlp".into(), Num::Real(r.mlp.l1d));
    m.insert("dram_mlp".into(), Num::Real(r.mlp.dram));
    m.insert("dram_reads".into(), Num::Int(r.dram.reads));
    m.insert(
        "mispredicts".into(),
        Num::Int(r.branches.conditional_mispredicts + r.branches.jump_mispredicts),
    );
    m.insert("mpki".into(), Num::Real(r.branches.mpki));
    for b in buckets {
        m.insert(
            format!("ledger.{b}"),
            Num::Int(r.ledger.get(b).copied().unwrap_or(0)),
        );
    }
    m
}
