//! Shared helpers: request builders, small configurations, and drivers that
//! run a trace through a hierarchy.

use overlap_mem::{
    AccessKind, AccessOutcome, CacheConfig, CacheMode, Completion, Cycle, DramConfig, Hierarchy,
    HierarchyConfig, PrefetchConfig, PrefetchKind, Refusal, Replacement, Request,
};

/// A load of `addr` with identifier `id`.
pub fn load(id: u64, addr: u64) -> Request {
    Request {
        id,
        kind: AccessKind::Load,
        addr,
        size: 8,
        pc: 0x1000,
    }
}

/// A store to `addr` with identifier `id`.
pub fn store(id: u64, addr: u64) -> Request {
    Request {
        kind: AccessKind::Store,
        ..load(id, addr)
    }
}

/// The default hierarchy with the L1D in `mode` and `mshrs` registers.
pub fn with_l1d(mode: CacheMode, mshrs: u32) -> HierarchyConfig {
    let mut cfg = HierarchyConfig::default();
    cfg.l1d.mode = mode;
    cfg.l1d.mshrs = mshrs;
    cfg
}

/// A fully associative LRU cache of `lines` 64-byte lines.
pub fn fully_associative(lines: u32) -> CacheConfig {
    CacheConfig {
        size_bytes: u64::from(lines) * 64,
        ways: lines,
        replacement: Replacement::Lru,
        ..CacheConfig::l1d()
    }
}

/// A hierarchy whose DRAM has `latency` cycles and `transfer` cycles per
/// line, with no prefetcher.
pub fn with_dram(latency: u32, channels: u32, transfer: u32) -> HierarchyConfig {
    HierarchyConfig {
        dram: DramConfig {
            latency_cycles: latency,
            channels,
            transfer_cycles: transfer,
            banks: None,
        },
        prefetch: PrefetchConfig::default(),
        ..HierarchyConfig::default()
    }
}

/// The default hierarchy with the L1D in `mode` with `mshrs` registers and a
/// next-line prefetcher, built.
pub fn next_line_prefetching(mode: CacheMode, mshrs: u32) -> Hierarchy {
    let mut cfg = with_l1d(mode, mshrs);
    cfg.prefetch.kind = PrefetchKind::NextLine;
    // One line, right after the missing one: the worked examples assume it.
    cfg.prefetch.degree = 1;
    cfg.prefetch.distance = 1;
    build(&cfg)
}

/// The time-integral of an occupancy histogram (`hist[k]`: cycles with `k`
/// outstanding), that is the sum over cycles of the number outstanding.
pub fn occupancy_integral(hist: &[u64]) -> u64 {
    hist.iter().enumerate().map(|(k, &c)| k as u64 * c).sum()
}

pub fn build(cfg: &HierarchyConfig) -> Hierarchy {
    match Hierarchy::new(cfg) {
        Ok(h) => h,
        Err(problems) => panic!("invalid test config: {problems:?}"),
    }
}

/// Advance event by event until the completion of `id` shows up; returns it.
pub fn wait_for(h: &mut Hierarchy, id: u64) -> Completion {
    let mut out = Vec::new();
    loop {
        let t = h
            .next_event()
            .unwrap_or_else(|| panic!("idle while waiting for request {id}"));
        h.advance(t, &mut out);
        if let Some(c) = out.iter().find(|c| c.id == id) {
            return *c;
        }
    }
}

/// Advance event by event until nothing is pending; returns every
/// completion and the last cycle reached.
pub fn drain(h: &mut Hierarchy) -> (Vec<Completion>, Cycle) {
    let mut out = Vec::new();
    while let Some(t) = h.next_event() {
        h.advance(t, &mut out);
    }
    (out, h.now())
}

/// Run `reqs` one at a time, each issued when the previous one's data is
/// ready (a dependent chain, as in pointer chasing). Returns the cycle the
/// last one's data is ready.
pub fn run_serial(h: &mut Hierarchy, reqs: impl IntoIterator<Item = Request>) -> Cycle {
    let mut t = h.now();
    for r in reqs {
        let a = loop {
            match h.access(t, r) {
                Ok(a) => break a,
                Err(Refusal::PortsBusy) => t += 1,
                Err(e) => {
                    let next = h.next_event().unwrap_or_else(|| panic!("stuck: {e}"));
                    h.advance(next, &mut Vec::new());
                    t = next;
                }
            }
        };
        t = match a.outcome {
            AccessOutcome::Hit => a.ready_at.expect("a hit has a ready cycle"),
            _ => wait_for(h, r.id).cycle,
        };
        // Bring the hierarchy up to the issue cycle of the next access.
        let mut sink = Vec::new();
        h.advance(t, &mut sink);
    }
    t
}

/// Tiny seeded generator for traces (SplitMix64, Steele, Lea and Flood 2014).
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    pub fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}
