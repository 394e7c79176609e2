//! Latency composition, data sources, write-backs and the lower levels.
//!
//! The composition itself is this crate's documented design (see the
//! `hierarchy` module docs): an L1 miss that hits in the L2 costs
//! l1.hit + l2.hit; one that goes to DRAM costs l1.hit + l2.hit [+ l3.hit]
//! + dram latency + one line transfer, plus queueing.

use overlap_mem::{
    AccessOutcome, BankConfig, CacheConfig, CacheId, CacheMode, HierarchyConfig, Level,
};

use crate::util::{build, drain, load, run_serial, store, wait_for, with_dram};

#[test]
fn unloaded_latencies_add_up_level_by_level() {
    // Source: this crate's latency composition (hierarchy module docs).
    let mut h = build(&HierarchyConfig::default());
    let a = h.access(0, load(1, 0x4000)).unwrap();
    assert_eq!(
        (a.outcome, a.source),
        (AccessOutcome::PrimaryMiss, Level::Dram)
    );
    let c = wait_for(&mut h, 1);
    assert_eq!((c.cycle, c.source), (4 + 14 + 200 + 8, Level::Dram));

    // Evict the line from the L1 only (9 lines of one L1 set; the L2 has
    // more sets), then miss again: now the L2 supplies it.
    let l1_set_stride = 32 * 1024 / 8;
    let t = run_serial(
        &mut h,
        (1..=8).map(|i| load(10 + i, 0x4000 + i * l1_set_stride)),
    );
    let a = h.access(t, load(2, 0x4000)).unwrap();
    assert_eq!(
        (a.outcome, a.source),
        (AccessOutcome::PrimaryMiss, Level::L2)
    );
    let c = wait_for(&mut h, 2);
    assert_eq!((c.cycle - t, c.source), (4 + 14, Level::L2));
}

#[test]
fn an_l3_adds_its_hit_time() {
    // Source: this crate's latency composition (hierarchy module docs).
    let cfg = HierarchyConfig {
        l3: Some(CacheConfig::l3()),
        ..HierarchyConfig::default()
    };
    let mut h = build(&cfg);
    h.access(0, load(1, 0x4000)).unwrap();
    let c = wait_for(&mut h, 1);
    assert_eq!(c.cycle, 4 + 14 + 40 + 200 + 8);
    let s = h.stats(c.cycle);
    let l3 = s.l3.expect("l3 configured");
    assert_eq!((s.l2.misses, l3.misses, s.dram.reads), (1, 1, 1));
}

#[test]
fn the_instruction_cache_shares_the_l2() {
    // Source: DESIGN.md §5 (optional L1I; L2 below both first-level caches).
    use overlap_mem::{AccessKind, Request};
    let cfg = HierarchyConfig {
        l1i: Some(CacheConfig::l1i()),
        ..HierarchyConfig::default()
    };
    let mut h = build(&cfg);
    let fetch = Request {
        id: 1,
        kind: AccessKind::Fetch,
        addr: 0x8000,
        size: 4,
        pc: 0x8000,
    };
    h.access(0, fetch).unwrap();
    let c = wait_for(&mut h, 1);
    assert_eq!(c.cycle, 1 + 14 + 200 + 8);
    // The data side finds the line in the L2.
    let a = h.access(c.cycle, load(2, 0x8000)).unwrap();
    assert_eq!(a.source, Level::L2);
    let s = h.stats(c.cycle);
    assert_eq!(s.l1i.expect("l1i").misses, 1);
    assert_eq!(s.dram.reads, 1);
}

#[test]
fn dirty_victims_are_written_back_and_cost_dram_bandwidth() {
    // Source: DESIGN.md §5 "write-back + write-allocate with dirty
    // writebacks"; common practice: a clean victim is dropped silently.
    let mut cfg = with_dram(100, 1, 8);
    // A tiny L2 (2 lines, fully associative) makes L2 evictions easy.
    cfg.l2 = CacheConfig {
        size_bytes: 128,
        ways: 2,
        ..CacheConfig::l2()
    };
    cfg.l1d = CacheConfig {
        size_bytes: 128,
        ways: 2,
        ..CacheConfig::l1d()
    };
    let mut h = build(&cfg);
    let t = run_serial(&mut h, [store(1, 0), load(2, 64), load(3, 128)]);
    let s = h.stats(t);
    // The third fill evicted line 0 (dirty) from the L1 into the L2, and the
    // L2 in turn had to evict to make room.
    assert_eq!(s.l1d.writebacks, 1);
    assert_eq!(s.l2.writebacks_received, 1);
    let t = run_serial(&mut h, [load(4, 192), load(5, 256), load(6, 320)]);
    let (_, end) = drain(&mut h);
    let s = h.stats(end.max(t));
    assert_eq!(
        s.dram.writes, 1,
        "the dirty line finally leaves the L2 for DRAM"
    );
    assert_eq!(s.dram.bytes, (s.dram.reads + s.dram.writes) * 64);
    assert_eq!(s.l2.writebacks, 1);
}

#[test]
fn a_blocking_l2_queues_requests_from_above() {
    // Source: DESIGN.md §5 (the switch applies per cache) and the memory task
    // statement: a request the next level cannot take waits in a FIFO there
    // while the upper register stays occupied.
    let mut cfg = HierarchyConfig::default();
    cfg.l2.mode = CacheMode::Blocking;
    cfg.l1d.ports = 2;
    let mut h = build(&cfg);
    h.access(0, load(1, 0x1_0000)).unwrap();
    h.access(0, load(2, 0x2_0000)).unwrap();
    assert_eq!(h.outstanding_misses(CacheId::L1d), 2);
    let (done, end) = drain(&mut h);
    let l = 4 + 14 + 200 + 8;
    let first = done[0].cycle;
    let second = done[1].cycle;
    assert_eq!(first, l);
    // The second waits for the L2 to unlock at `first`, then pays the L2 and
    // DRAM part of the latency.
    assert_eq!(second, first + 14 + 200 + 8);
    let s = h.stats(end);
    assert!(s.l2.refused_locked >= 1);
    assert_eq!(s.l2.lockup_cycles, (l - 4) + (second - first));
}

#[test]
fn l2_register_limit_applies_to_requests_from_above() {
    // Source: DESIGN.md §5 (each cache has its own registers); the queued
    // request is retried when a register frees.
    let mut cfg = HierarchyConfig::default();
    cfg.l2.mshrs = 1;
    let mut h = build(&cfg);
    h.access(0, load(1, 0x1_0000)).unwrap();
    h.access(0, load(2, 0x2_0000)).unwrap();
    let (done, end) = drain(&mut h);
    assert_eq!(done[1].cycle, done[0].cycle + 14 + 200 + 8);
    assert!(h.stats(end).l2.refused_mshrs >= 1);
    assert!(h.describe_outstanding().is_empty());
}

#[test]
fn dram_banks_distinguish_row_hits_and_conflicts() {
    // Source: common practice (open-page policy): a second access to the open
    // row costs the row-hit time; another row in the same bank costs the
    // conflict time.
    let mut cfg = with_dram(50, 1, 4);
    cfg.dram.banks = Some(BankConfig {
        banks: 4,
        row_bytes: 1024,
        row_hit_cycles: 10,
        row_miss_cycles: 20,
        row_conflict_cycles: 30,
    });
    let mut h = build(&cfg);
    let base = 4 + 14 + 50 + 4;
    let times: Vec<u64> = [0u64, 64, 4 * 1024]
        .iter()
        .enumerate()
        .map(|(i, &addr)| {
            let t = h.now();
            h.access(t, load(i as u64, addr)).unwrap();
            wait_for(&mut h, i as u64).cycle - t
        })
        .collect();
    assert_eq!(times, vec![base + 20, base + 10, base + 30]);
    let s = h.stats(h.now());
    assert_eq!(
        (s.dram.row_misses, s.dram.row_hits, s.dram.row_conflicts),
        (1, 1, 1)
    );
}

#[test]
fn describe_outstanding_names_every_busy_register() {
    let mut h = build(&HierarchyConfig::default());
    h.access(0, load(1, 0x1000)).unwrap();
    h.advance(30, &mut Vec::new());
    let d = h.describe_outstanding();
    assert!(
        d.iter()
            .any(|l| l.starts_with("l1d miss register 0: line 0x1000")),
        "{d:?}"
    );
    assert!(
        d.iter()
            .any(|l| l.starts_with("l2 miss register 0") && l.contains("in DRAM")),
        "{d:?}"
    );
    assert!(
        d.iter().any(|l| l == "dram: 1 demand reads outstanding"),
        "{d:?}"
    );
    assert_eq!(h.outstanding_dram_reads(), 1);
    assert_eq!(
        h.access(30, load(2, 0x1000)).map(|a| a.outcome),
        Ok(AccessOutcome::SecondaryMiss)
    );
}

#[test]
fn access_without_advance_sees_the_same_state() {
    // Contract of `access`: it sees every event of its cycle, whether or not
    // `advance(now)` ran first; the completions come with the next `advance`.
    let run = |advance_first: bool| {
        let mut cfg = HierarchyConfig::default();
        cfg.l1d.mode = CacheMode::Blocking;
        let mut h = build(&cfg);
        h.access(0, load(1, 0x1000)).unwrap();
        let fill = 4 + 14 + 200 + 8;
        let mut out = Vec::new();
        if advance_first {
            h.advance(fill, &mut out);
        }
        let a = h.access(fill, load(2, 0x1008)).unwrap();
        // Completions waiting to be handed out count as something due.
        assert_eq!(
            h.next_event(),
            if advance_first { None } else { Some(fill) }
        );
        h.advance(fill, &mut out);
        (a, out, h.stats(fill))
    };
    let (a, out, stats) = run(false);
    assert_eq!(
        a.outcome,
        AccessOutcome::Hit,
        "the lock lifted at the fill cycle"
    );
    assert_eq!(out.len(), 1);
    assert_eq!((a, out, stats), run(true));
}

#[test]
fn reset_stats_keeps_the_state_and_counts_afresh() {
    // After a reset the counters start from zero, while the caches keep their lines:
    // a line loaded before the reset hits after it, and only post-reset cycles are counted.
    let mut mem = overlap_mem::Hierarchy::new(&HierarchyConfig::default()).unwrap();
    mem.access(0, load(1, 0x8000)).unwrap();
    let mut done = Vec::new();
    while let Some(t) = mem.next_event() {
        mem.advance(t, &mut done);
    }
    let t = mem.now();
    mem.reset_stats(t);
    let hit = mem.access(t, load(2, 0x8008)).unwrap();
    assert_eq!(hit.outcome, AccessOutcome::Hit);
    let s = mem.stats(t + 10);
    assert_eq!((s.l1d.accesses, s.l1d.hits, s.l1d.misses), (1, 1, 0));
    assert_eq!(s.dram.reads, 0);
    assert_eq!(s.l1d.outstanding_hist.iter().sum::<u64>(), 10);
    assert_eq!(s.dram.busy_cycles, 0);
}
