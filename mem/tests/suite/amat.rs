//! Average memory access time.
//!
//! Source: Hennessy and Patterson, "Computer Architecture: A Quantitative
//! Approach", memory hierarchy chapter: AMAT = hit time + miss rate x miss
//! penalty, and for two levels AMAT = hit time L1 + miss rate L1 x (hit time
//! L2 + local miss rate L2 x miss penalty L2). With a blocking L1 and each
//! access waiting for the previous one, the average measured time per access
//! must equal it exactly.

use overlap_mem::{CacheMode, HierarchyConfig};

use crate::util::{build, load, run_serial, with_l1d};

/// Eight 8-byte loads per line over `lines` consecutive lines from `base`.
fn sweep(first_id: u64, base: u64, lines: u64) -> impl Iterator<Item = overlap_mem::Request> {
    (0..lines * 8).map(move |i| load(first_id + i, base + i * 8))
}

#[test]
fn blocking_l1_matches_amat() {
    let cfg = with_l1d(CacheMode::Blocking, 1);
    let mut h = build(&cfg);
    let lines = 512;
    let accesses = lines * 8;
    let end = run_serial(&mut h, sweep(0, 0x100_0000, lines));

    let s = h.stats(end);
    // Known miss rate: one miss per line, 1/8 of the accesses.
    assert_eq!(s.l1d.misses * 8, s.l1d.accesses);
    let hit_time = f64::from(cfg.l1d.hit_cycles);
    // Miss penalty beyond the L1 hit time: L2 tag check, DRAM, one transfer.
    let penalty = f64::from(cfg.l2.hit_cycles + cfg.dram.latency_cycles + cfg.dram.transfer_cycles);
    let amat = hit_time + (1.0 / 8.0) * penalty;
    let measured = end as f64 / accesses as f64;
    assert!(
        (measured - amat).abs() < 1e-9,
        "measured {measured}, AMAT {amat}"
    );
    // The blocking cache was locked exactly during the misses.
    assert_eq!(s.l1d.lockup_cycles, s.l1d.miss_latency_total);
}

#[test]
fn two_level_amat_with_l2_hits() {
    // 1024 lines (64 KiB) overflow the 32 KiB L1 but fit the 1 MiB L2: a
    // second sweep misses in the L1 once per line and always hits in the L2.
    let cfg = with_l1d(CacheMode::Blocking, 1);
    let mut h = build(&cfg);
    let lines = 1024;
    let first = run_serial(&mut h, sweep(0, 0, lines));
    let before = h.stats(first);
    let second = run_serial(&mut h, sweep(1 << 20, 0, lines));
    let after = h.stats(second);

    let l2_accesses = after.l2.accesses - before.l2.accesses;
    let l2_hits = after.l2.hits - before.l2.hits;
    assert_eq!((l2_accesses, l2_hits), (lines, lines));
    let l1_miss_rate = (after.l1d.misses - before.l1d.misses) as f64 / (lines * 8) as f64;
    assert_eq!(l1_miss_rate, 1.0 / 8.0);
    let l2_local_miss_rate = 0.0;
    let amat = f64::from(cfg.l1d.hit_cycles)
        + l1_miss_rate
            * (f64::from(cfg.l2.hit_cycles)
                + l2_local_miss_rate
                    * f64::from(cfg.dram.latency_cycles + cfg.dram.transfer_cycles));
    let measured = (second - first) as f64 / (lines * 8) as f64;
    assert!(
        (measured - amat).abs() < 1e-9,
        "measured {measured}, AMAT {amat}"
    );
    assert_eq!(amat, 5.75);
}

#[test]
fn amat_holds_for_other_miss_rates() {
    // One miss per `per_line` accesses: miss rate 1/per_line.
    for per_line in [1u64, 2, 4] {
        let cfg = HierarchyConfig {
            l1d: overlap_mem::CacheConfig {
                mode: CacheMode::Blocking,
                ..Default::default()
            },
            ..HierarchyConfig::default()
        };
        let mut h = build(&cfg);
        let lines = 256;
        let step = 64 / per_line;
        let reqs = (0..lines * per_line).map(|i| load(i, 0x40_0000 + i * step));
        let end = run_serial(&mut h, reqs);
        let penalty =
            f64::from(cfg.l2.hit_cycles + cfg.dram.latency_cycles + cfg.dram.transfer_cycles);
        let amat = f64::from(cfg.l1d.hit_cycles) + penalty / per_line as f64;
        let measured = end as f64 / (lines * per_line) as f64;
        assert!(
            (measured - amat).abs() < 1e-9,
            "1/{per_line}: measured {measured}, AMAT {amat}"
        );
    }
}
