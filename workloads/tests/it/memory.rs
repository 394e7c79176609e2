//! Memory behaviour of the kernels on a cold cache: the functional model's
//! load and store addresses after `measure_start` are fed to an
//! `overlap_mem::Hierarchy` built fresh (cold) for the test, or simply
//! counted as distinct lines where that is the claim.

use std::collections::BTreeSet;

use overlap_isa::{OpClass, Reg};
use overlap_mem::{
    AccessKind, AccessOutcome, CacheId, Completion, Hierarchy, HierarchyConfig, Request,
};

use crate::util::{build, trace_kernel};

/// Drives a hierarchy one access at a time: each access completes before the
/// next is offered, so the counts are those of a functional cache.
struct Serial {
    mem: Hierarchy,
    now: u64,
    done: Vec<Completion>,
    next_id: u64,
}

impl Serial {
    fn new(cfg: &HierarchyConfig) -> Serial {
        Serial {
            mem: Hierarchy::new(cfg).expect("valid config"),
            now: 0,
            done: Vec::new(),
            next_id: 0,
        }
    }

    fn access(&mut self, kind: AccessKind, addr: u64, size: u8, pc: u64) -> AccessOutcome {
        self.next_id += 1;
        let id = self.next_id;
        loop {
            self.mem.advance(self.now, &mut self.done);
            match self.mem.access(
                self.now,
                Request {
                    id,
                    kind,
                    addr,
                    size,
                    pc,
                },
            ) {
                Ok(acc) => {
                    match acc.ready_at {
                        Some(t) => self.now = t,
                        None => self.wait_for(id),
                    }
                    return acc.outcome;
                }
                Err(_) => {
                    let next = self.mem.next_event().unwrap_or(self.now + 1);
                    self.now = next.max(self.now + 1);
                }
            }
        }
    }

    fn wait_for(&mut self, id: u64) {
        loop {
            let t = self.mem.next_event().expect("a miss has an event ahead");
            self.mem.advance(t, &mut self.done);
            self.now = t;
            if self.done.iter().any(|c| c.id == id) {
                self.done.clear();
                return;
            }
        }
    }
}

/// Feeds every kernel load and store of a workload to a cold serial
/// hierarchy of the default configuration; returns (L1D accesses, L1D hits).
fn l1d_counts(name: &str, overrides: &[(&str, &str)]) -> (u64, u64) {
    let built = build(name, overrides);
    let mut s = Serial::new(&HierarchyConfig::default());
    trace_kernel(&built, |d| {
        let kind = match d.class {
            OpClass::Load => AccessKind::Load,
            OpClass::Store => AccessKind::Store,
            _ => return,
        };
        s.access(kind, d.mem_addr, d.mem_size, d.pc);
    });
    let st = s.mem.stats(s.now);
    (st.l1d.accesses, st.l1d.hits)
}

/// Distinct `line_bytes` lines touched by the kernel's loads and stores.
fn distinct_lines(name: &str, overrides: &[(&str, &str)], line_bytes: u64) -> usize {
    let built = build(name, overrides);
    let mut lines = BTreeSet::new();
    trace_kernel(&built, |d| {
        if d.class.is_mem() {
            lines.insert(d.mem_addr / line_bytes);
        }
    });
    lines.len()
}

#[test]
fn stream_touches_footprint_over_line_size() {
    // A stream over F bytes touches F / line-size lines (common practice);
    // arrays are line-aligned, so the count is exact.
    for elem in ["1", "8"] {
        let o = [("footprint", "64K"), ("elem", elem), ("passes", "1")];
        assert_eq!(distinct_lines("stream", &o, 64), 1024, "elem={elem}");
        assert_eq!(distinct_lines("stream", &o, 128), 512, "elem={elem}");
    }
    // On a cold 32 KiB L1D, one pass over 64 KiB misses once per line.
    let (accesses, hits) = l1d_counts("stream", &[("footprint", "64K"), ("passes", "1")]);
    assert_eq!(accesses, 8192);
    assert_eq!(accesses - hits, 1024);
}

#[test]
fn fill_allocates_one_line_per_64_bytes() {
    // Write-allocate: every new line stored to is fetched once (common practice).
    let (accesses, hits) = l1d_counts(
        "fill",
        &[("footprint", "128K"), ("passes", "1"), ("elem", "8")],
    );
    // 16384 stores, then two read-back loads (first and last element).
    assert_eq!(accesses, 16384 + 2);
    assert_eq!(
        accesses - hits,
        2048 + 1,
        "the first line was evicted before the read-back"
    );
}

#[test]
fn stride_touches_footprint_over_stride() {
    // With a stride of at least a line that divides F, the loads revisit
    // F / stride lines.
    let o = [("footprint", "256K"), ("stride", "1024"), ("loads", "4096")];
    assert_eq!(distinct_lines("stride", &o, 64), 256);
    let o = [("footprint", "256K"), ("stride", "64"), ("loads", "1024")];
    assert_eq!(distinct_lines("stride", &o, 64), 1024);
}

#[test]
fn chase_chains_are_independent() {
    // Register dataflow in the dynamic stream: the address of every kernel
    // load was produced by the previous execution of the same static load
    // (its own chain), never by another chain or by ALU work.
    for (k, work) in [(1u64, 0u64), (4, 3), (16, 1)] {
        let built = build(
            "chase",
            &[
                ("footprint", 256 << 10),
                ("k", k),
                ("work", work),
                ("hops", 4000),
            ],
        );
        let mut last_writer: [Option<(u64, OpClass)>; 32] = [None; 32];
        let mut load_pcs = BTreeSet::new();
        let mut loads = 0u64;
        trace_kernel(&built, |d| {
            if d.class == OpClass::Load {
                let base: Reg = d.inst.rs1;
                if let Some((pc, class)) = last_writer[base.index()] {
                    assert_eq!(class, OpClass::Load, "k={k}: load address from a non-load");
                    assert_eq!(pc, d.pc, "k={k}: load address from another chain's load");
                }
                load_pcs.insert(d.pc);
                loads += 1;
            }
            if let Some(r) = d.dst {
                last_writer[r.index()] = Some((d.pc, d.class));
            }
        });
        assert_eq!(load_pcs.len() as u64, k, "one static load per chain");
        assert_eq!(loads, 4000 / k * k);
    }
}

#[test]
fn chase_offers_k_misses_at_once() {
    // Issue each iteration's k loads together (they are independent, see
    // above) to a cold hierarchy with enough ports and registers: k misses
    // are outstanding at once, and the L1D's memory-level parallelism is
    // about k (Chou, Fahs and Abraham, ISCA 2004: average outstanding misses
    // over cycles with at least one).
    for k in [1usize, 2, 4, 8] {
        let built = build("chase", &[("footprint", 4 << 20), ("k", k), ("hops", 2048)]);
        let mut addrs = Vec::new();
        trace_kernel(&built, |d| {
            if d.class == OpClass::Load {
                addrs.push((d.pc, d.mem_addr));
            }
        });
        let mut cfg = HierarchyConfig::default();
        cfg.l1d.ports = 16;
        cfg.l1d.mshrs = 16;
        let mut mem = Hierarchy::new(&cfg).expect("valid");
        let mut done = Vec::new();
        let mut now = 0;
        let mut max_out = 0;
        for (i, window) in addrs.chunks(k).enumerate() {
            mem.advance(now, &mut done);
            for (j, (pc, addr)) in window.iter().enumerate() {
                let id = (i * k + j) as u64;
                let req = Request {
                    id,
                    kind: AccessKind::Load,
                    addr: *addr,
                    size: 8,
                    pc: *pc,
                };
                mem.access(now, req).expect("ports and registers suffice");
            }
            max_out = max_out.max(mem.outstanding_demand_misses(CacheId::L1d));
            while let Some(t) = mem.next_event() {
                mem.advance(t, &mut done);
                now = t;
            }
        }
        let st = mem.stats(now);
        assert_eq!(max_out as usize, k, "k={k}");
        assert!(st.l1d.mlp > k as f64 * 0.75, "k={k}: mlp {}", st.l1d.mlp);
        assert!(st.l1d.mlp <= k as f64, "k={k}: mlp {}", st.l1d.mlp);
    }
}

#[test]
fn hitmiss_misses_once_per_far_load() {
    // Each far load misses (first touch of its granule, one per line); the
    // hot loads hit after the hot array's first touch.
    let (accesses, hits) = l1d_counts(
        "hitmiss",
        &[("footprint", "1M"), ("misses", "4096"), ("hits", "4")],
    );
    assert_eq!(accesses, 4096 * 5);
    // 4096 far lines plus the hot array's first line (4 words = one line).
    assert_eq!(accesses - hits, 4096 + 1);
}

#[test]
fn hashprobe_hit_knob_moves_l1d_hit_rate() {
    // A table far larger than the L1D, so the first slot a lookup reads
    // misses. A lookup that finds its key then reads its flow record, a
    // second line at a random place (another miss); a lookup for an absent
    // key only walks on through its probe cluster, mostly within the line it
    // already fetched (hits). So more present keys mean more misses per
    // access: the L1D hit rate falls as `hit` rises.
    let mut rates = Vec::new();
    for hit in ["0", "50", "100"] {
        let (accesses, hits) = l1d_counts(
            "hashprobe",
            &[
                ("footprint", "1M"),
                ("load", "50"),
                ("hit", hit),
                ("probes", "3000"),
            ],
        );
        rates.push(hits as f64 / accesses as f64);
    }
    println!("hashprobe L1D hit rate for hit=0,50,100: {rates:?}");
    assert!(
        rates[0] > rates[1] + 0.02 && rates[1] > rates[2] + 0.02,
        "L1D hit rates {rates:?}"
    );
}
