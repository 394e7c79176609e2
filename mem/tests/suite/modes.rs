//! The cache organisation switch: blocking, hit-under-miss, miss-under-miss,
//! and miss-register targets.
//!
//! Source for the behaviour of each mode: the project brief (DESIGN.md §5),
//! which states the common-practice definitions: "blocking: while a miss is
//! outstanding the cache serves nothing else (lock-up)"; "hit-under-miss: one
//! miss outstanding; hits are served under it; the next miss waits";
//! "miss-under-miss: up to N misses outstanding; hits are served; when all
//! registers are busy the next miss waits".

use overlap_mem::{AccessOutcome, CacheId, CacheMode, Level, Refusal};

use crate::util::{
    build, drain, load, next_line_prefetching, occupancy_integral, store, wait_for, with_l1d,
};

const A: u64 = 0x10_0000;
const B: u64 = 0x20_0000;
const C: u64 = 0x30_0000;

#[test]
fn blocking_refuses_a_hit_while_a_miss_is_outstanding() {
    // Source: DESIGN.md §5, blocking: "serves nothing else (lock-up)".
    let mut h = build(&with_l1d(CacheMode::Blocking, 8));
    h.access(0, load(1, A)).unwrap();
    let warm = wait_for(&mut h, 1).cycle;

    let t = warm + 1;
    h.advance(t, &mut Vec::new());
    let miss = h.access(t, load(2, B)).unwrap();
    assert_eq!(miss.outcome, AccessOutcome::PrimaryMiss);
    assert!(h.is_locked(CacheId::L1d));
    assert_eq!(h.free_mshrs(CacheId::L1d), 0);
    // A is present, yet the locked cache refuses it.
    assert_eq!(h.access(t + 1, load(3, A)), Err(Refusal::Locked));
    // Even a secondary miss to the outstanding line is refused.
    assert_eq!(h.access(t + 1, load(4, B + 8)), Err(Refusal::Locked));

    let fill = wait_for(&mut h, 2).cycle;
    assert!(!h.is_locked(CacheId::L1d));
    let hit = h.access(fill, load(5, A)).unwrap();
    assert_eq!(hit.outcome, AccessOutcome::Hit);

    let s = h.stats(fill);
    assert_eq!(s.l1d.refused_locked, 2);
    // The lock lasted exactly as long as the two misses.
    assert_eq!(s.l1d.lockup_cycles, warm + (fill - t));
    assert_eq!(s.l1d.hits_under_miss, 0);
}

#[test]
fn hit_under_miss_serves_hits_and_refuses_a_second_primary_miss() {
    // Source: DESIGN.md §5, hit-under-miss.
    let mut h = build(&with_l1d(CacheMode::HitUnderMiss, 8));
    h.access(0, load(1, A)).unwrap();
    let t = wait_for(&mut h, 1).cycle;

    assert_eq!(
        h.access(t, load(2, B)).unwrap().outcome,
        AccessOutcome::PrimaryMiss
    );
    assert!(!h.is_locked(CacheId::L1d));
    let hit = h.access(t + 1, load(3, A)).unwrap();
    assert_eq!(hit.outcome, AccessOutcome::Hit);
    assert_eq!(hit.ready_at, Some(t + 1 + 4));
    assert_eq!(h.access(t + 1, load(4, C)), Err(Refusal::MshrsBusy));
    // The outstanding line itself merges.
    let merged = h.access(t + 2, load(5, B + 16)).unwrap();
    assert_eq!(merged.outcome, AccessOutcome::SecondaryMiss);

    let (done, end) = drain(&mut h);
    assert_eq!(done.iter().map(|c| c.id).collect::<Vec<_>>(), [2, 5]);
    let s = h.stats(end);
    assert_eq!(s.l1d.hits_under_miss, 1);
    assert_eq!(s.l1d.refused_mshrs, 1);
    assert_eq!(s.l1d.lockup_cycles, 0);
}

#[test]
fn miss_under_miss_accepts_n_primary_misses_then_refuses() {
    // Source: DESIGN.md §5, miss-under-miss with N registers.
    for n in [1u32, 2, 4, 8] {
        let mut cfg = with_l1d(CacheMode::MissUnderMiss, n);
        cfg.l1d.ports = 16;
        let mut h = build(&cfg);
        for i in 0..u64::from(n) {
            let a = h.access(0, load(i, A + i * 4096)).unwrap();
            assert_eq!(a.outcome, AccessOutcome::PrimaryMiss);
            assert_eq!(h.free_mshrs(CacheId::L1d), n - 1 - i as u32);
        }
        assert_eq!(h.outstanding_misses(CacheId::L1d), n);
        assert_eq!(h.outstanding_demand_misses(CacheId::L1d), n);
        assert_eq!(h.access(0, load(99, B)), Err(Refusal::MshrsBusy));
        // Hits and merges still go through while the registers are full.
        assert_eq!(
            h.access(0, load(100, A + 8)).unwrap().outcome,
            AccessOutcome::SecondaryMiss
        );
        let (done, _) = drain(&mut h);
        assert_eq!(done.len(), n as usize + 1);
    }
}

#[test]
fn secondary_misses_merge_up_to_the_target_count() {
    // Source: DESIGN.md §5: "how many requests each one can hold for the same
    // line (secondary misses merge)".
    for targets in [1u32, 2, 4] {
        let mut cfg = with_l1d(CacheMode::MissUnderMiss, 4);
        cfg.l1d.mshr_targets = targets;
        cfg.l1d.ports = 16;
        let mut h = build(&cfg);
        let first = h.access(0, load(0, A)).unwrap();
        assert_eq!(first.source, Level::Dram);
        for i in 1..u64::from(targets) {
            let a = h.access(0, store(i, A + 8 * i)).unwrap();
            assert_eq!(a.outcome, AccessOutcome::SecondaryMiss);
            assert_eq!(
                a.source,
                Level::Dram,
                "a secondary miss reports the primary's source"
            );
            assert_eq!(a.ready_at, None);
        }
        assert_eq!(h.access(0, load(50, A + 1)), Err(Refusal::TargetsFull));
        let (done, end) = drain(&mut h);
        // Every target completes once, in the same cycle, ordered by id.
        assert_eq!(done.len(), targets as usize);
        assert!(
            done.iter()
                .all(|c| c.cycle == done[0].cycle && c.source == Level::Dram)
        );
        assert_eq!(
            done.iter().map(|c| c.id).collect::<Vec<_>>(),
            (0..u64::from(targets)).collect::<Vec<_>>()
        );
        let s = h.stats(end);
        assert_eq!(s.l1d.misses, 1);
        assert_eq!(s.l1d.merged, u64::from(targets) - 1);
        assert_eq!(s.l1d.refused_targets, 1);
        // A merged miss creates no extra request below.
        assert_eq!(s.l2.accesses, 1);
        assert_eq!(s.dram.reads, 1);
    }
}

#[test]
fn merged_misses_create_no_extra_dram_request_in_any_mode() {
    // Source: DESIGN.md §5 (secondary misses merge into the register).
    for mode in [CacheMode::HitUnderMiss, CacheMode::MissUnderMiss] {
        let mut cfg = with_l1d(mode, 4);
        cfg.l1d.ports = 4;
        let mut h = build(&cfg);
        for i in 0..4 {
            h.access(0, load(i, A + i * 8)).unwrap();
        }
        let (done, end) = drain(&mut h);
        assert_eq!(done.len(), 4);
        assert_eq!(h.stats(end).dram.reads, 1, "{mode:?}");
    }
}

#[test]
fn a_refusal_changes_nothing_but_its_counter() {
    // Source: the memory interface contract (project brief, task statement):
    // "A refused request changes nothing except refusal counters".
    let mut cfg = with_l1d(CacheMode::MissUnderMiss, 1);
    cfg.l1d.ports = 1;
    let mut h = build(&cfg);
    h.access(0, load(1, A)).unwrap();
    let before = h.stats(0);
    let next = h.next_event();
    assert_eq!(h.access(0, load(2, B)), Err(Refusal::PortsBusy));
    assert_eq!(h.access(1, load(3, B)), Err(Refusal::MshrsBusy));
    let mut after = h.stats(0);
    assert_eq!(after.l1d.refused_ports, 1);
    assert_eq!(after.l1d.refused_mshrs, 1);
    after.l1d.refused_ports = 0;
    after.l1d.refused_mshrs = 0;
    assert_eq!(after, before);
    assert_eq!(h.next_event(), next);
}

#[test]
fn ports_limit_accesses_per_cycle() {
    // common practice: a cache with P ports accepts P accesses per cycle.
    let mut cfg = with_l1d(CacheMode::MissUnderMiss, 8);
    cfg.l1d.ports = 2;
    let mut h = build(&cfg);
    assert!(h.access(0, load(1, A)).is_ok());
    assert!(h.access(0, load(2, A + 8)).is_ok());
    assert_eq!(h.access(0, load(3, B)), Err(Refusal::PortsBusy));
    h.advance(1, &mut Vec::new());
    assert!(h.access(1, load(3, B)).is_ok());
}

#[test]
fn blocking_serialises_independent_misses_and_miss_under_miss_overlaps_them() {
    // Source: DESIGN.md §9, facts of the trade: "with a blocking cache, two
    // independent misses cost about two full miss latencies; with
    // miss-under-miss they overlap and cost about one latency plus a little;
    // four overlapped misses cost about one penalty plus a little".
    let latency = 4 + 14 + 200 + 8;
    let run = |mode, n: u64| {
        let mut cfg = with_l1d(mode, 8);
        cfg.l1d.ports = 4;
        let mut h = build(&cfg);
        let mut pending: Vec<u64> = (0..n).collect();
        let mut t = 0;
        let mut last = 0;
        while !pending.is_empty() || h.next_event().is_some() {
            pending.retain(|&i| h.access(t, load(i, A + i * 4096)).is_err());
            let mut out = Vec::new();
            t = match (h.next_event(), pending.is_empty()) {
                (Some(e), _) => e,
                (None, false) => t + 1,
                (None, true) => break,
            };
            h.advance(t, &mut out);
            if let Some(c) = out.last() {
                last = c.cycle;
            }
        }
        last
    };
    assert_eq!(run(CacheMode::Blocking, 1), latency);
    assert_eq!(run(CacheMode::Blocking, 2), 2 * latency);
    // Overlapped: one latency plus one more DRAM transfer per extra line.
    assert_eq!(run(CacheMode::MissUnderMiss, 2), latency + 8);
    assert_eq!(run(CacheMode::MissUnderMiss, 4), latency + 3 * 8);
    assert_eq!(run(CacheMode::HitUnderMiss, 2), 2 * latency);
}

#[test]
fn prefetches_use_free_registers_only() {
    // Source: DESIGN.md §5: "prefetches use free miss-holding registers only".
    use overlap_mem::PrefetchKind;
    let mut cfg = with_l1d(CacheMode::MissUnderMiss, 2);
    cfg.prefetch.kind = PrefetchKind::NextLine;
    cfg.prefetch.degree = 4;
    let mut h = build(&cfg);
    // The demand miss takes one register; the prefetcher may take the other
    // and must drop the rest.
    assert_eq!(
        h.access(0, load(1, A)).unwrap().outcome,
        AccessOutcome::PrimaryMiss
    );
    assert_eq!(h.outstanding_misses(CacheId::L1d), 2);
    assert_eq!(h.outstanding_demand_misses(CacheId::L1d), 1);
    let s = h.stats(0);
    assert_eq!((s.l1d.prefetch_issued, s.l1d.prefetch_dropped), (1, 3));

    // In a blocking cache the only register belongs to demand misses.
    let mut h = next_line_prefetching(CacheMode::Blocking, 2);
    h.access(0, load(1, A)).unwrap();
    let (_, end) = drain(&mut h);
    assert_eq!(h.stats(end).l1d.prefetch_issued, 0);
}

#[test]
fn prefetch_useful_and_late_are_counted() {
    // Source: DESIGN.md §5 and the memory task statement: useful = a later
    // demand hit on a prefetched line, counted once; late = a demand that
    // arrived while the prefetch was in flight (it merges).
    let mut h = next_line_prefetching(CacheMode::MissUnderMiss, 8);
    let line = 64;
    h.access(0, load(1, A)).unwrap(); // prefetches A + 64
    // Late: the demand for A + 64 arrives while its prefetch is in flight.
    let late = h.access(1, load(2, A + line)).unwrap();
    assert_eq!(late.outcome, AccessOutcome::SecondaryMiss);
    assert_eq!(h.outstanding_demand_misses(CacheId::L1d), 2);
    let (_, end) = drain(&mut h);
    let s = h.stats(end);
    assert_eq!(s.l1d.prefetch_late, 1);
    assert_eq!(s.l1d.prefetch_useful, 0);

    // The miss on A + 64 (now a hit) ... use a fresh line to see usefulness:
    // a miss on B prefetches B + 64; once filled, two hits count once.
    h.access(end, load(3, B)).unwrap();
    let (_, end) = drain(&mut h);
    for (i, off) in [(4, 0), (5, 8)] {
        let a = h.access(end, load(i, B + line + off)).unwrap();
        assert_eq!(a.outcome, AccessOutcome::Hit);
    }
    let s = h.stats(end);
    assert_eq!(s.l1d.prefetch_useful, 1);
}

#[test]
fn a_late_demand_turns_an_in_flight_prefetch_into_a_demand_miss_down_to_dram() {
    // Source: Chou, Fahs and Abraham, ISCA 2004: MLP counts outstanding
    // *demand* misses; a prefetch becomes one when a demand waits on it.
    let mut h = next_line_prefetching(CacheMode::MissUnderMiss, 8);
    h.access(0, load(1, A)).unwrap(); // demand A, prefetch A + 64
    h.advance(100, &mut Vec::new());
    assert_eq!(h.outstanding_misses(CacheId::L1d), 2);
    assert_eq!(h.outstanding_demand_misses(CacheId::L1d), 1);
    assert_eq!(h.outstanding_demand_misses(CacheId::L2), 1);
    assert_eq!(h.outstanding_dram_reads(), 1);

    h.access(100, load(2, A + 64)).unwrap();
    assert_eq!(h.outstanding_demand_misses(CacheId::L1d), 2);
    assert_eq!(h.outstanding_demand_misses(CacheId::L2), 2);
    assert_eq!(h.outstanding_dram_reads(), 2);

    let (done, end) = drain(&mut h);
    // Demand A: in DRAM from 4 + 14 = 18 to 226. The prefetch reached the
    // single-ported L2 one cycle later (19 in DRAM), waited for the bus and
    // finished at 234; it counts as a demand read from cycle 100 on.
    assert_eq!(
        done.iter().map(|c| (c.id, c.cycle)).collect::<Vec<_>>(),
        [(1, 226), (2, 234)]
    );
    let s = h.stats(end);
    let demand_read_cycles = occupancy_integral(&s.dram.outstanding_hist);
    assert_eq!(demand_read_cycles, (226 - 18) + (234 - 100));
    assert_eq!(
        s.dram.demand_reads, 1,
        "counted as demand when it entered DRAM"
    );
    assert_eq!(s.l1d.prefetch_late, 1);
    // L1D demand-miss cycles: A for 226, A + 64 from 100 to 234.
    let l1_demand = occupancy_integral(&s.l1d.demand_outstanding_hist);
    assert_eq!(l1_demand, 226 + (234 - 100));
    assert_eq!(s.l1d.mlp_cycles, 234);
}

#[test]
fn a_late_prefetch_still_keeps_the_stream_going() {
    // Common practice: a demand that catches its prefetch in flight is that
    // prefetch's first use, so a next-line prefetcher goes on to the following
    // line; otherwise it would prefetch only every other line of a stream.
    let mut h = next_line_prefetching(CacheMode::MissUnderMiss, 8);
    let mut done = Vec::new();
    for i in 0..200u64 {
        let t = i * 40;
        h.advance(t, &mut done);
        h.access(t, load(i, A + 64 * i)).unwrap();
    }
    let (_, end) = drain(&mut h);
    let s = h.stats(end).l1d;
    assert_eq!(s.misses, 1, "{s:?}");
    assert_eq!(s.prefetch_late, 199, "{s:?}");
}
