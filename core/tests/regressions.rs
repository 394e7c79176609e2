//! Regression tests for model errors found in review, each named after what it guards.

mod common;
use common::*;
use overlap_core::config::UnitKind;
use overlap_core::{Config, PredictorKind};

fn unit_latency(cfg: &mut Config, kind: UnitKind, latency: u32) {
    cfg.core
        .units
        .iter_mut()
        .filter(|u| u.class == kind)
        .for_each(|u| u.latency = latency);
}

fn same_either_way(cfg: &Config, src: &str) -> overlap_core::Report {
    let p = asm(src);
    let skipped = run(cfg, &p);
    assert_eq!(skipped.without_host(), run_stepped(cfg, &p).without_host());
    skipped
}

#[test]
fn store_address_time_wakes_a_waiting_load_when_skipping() {
    // A store whose data waits on a DRAM miss gets its address after a 30-cycle store unit;
    // the younger load waits for that address. Skipping must stop at it.
    let mut cfg = Config::default();
    unit_latency(&mut cfg, UnitKind::Store, 30);
    let src = format!(
        "    .text\n_start:\n    la s0, buf\n    la s1, buf2\n    ld t0, 0(s0)\n    sd t0, 0(s1)\n    ld t1, 256(s1)\n    add t2, t1, t1\n{EXIT}    .data\n    .balign 64\nbuf:\n    .space 4096\nbuf2:\n    .space 4096\n"
    );
    same_either_way(&cfg, &src);
}

#[test]
fn a_fetch_group_crossing_a_line_with_one_icache_port_does_not_deadlock() {
    let mut cfg = Config::default();
    let mut l1i = overlap_mem::CacheConfig::l1i();
    l1i.ports = 1;
    cfg.l1i = Some(l1i);
    cfg.core.watchdog_cycles = 5000;
    let mut src = String::from("    .text\n_start:\n    li s11, 3\n    j target\n    .balign 64\n");
    src.push_str(&"    nop\n".repeat(15));
    src.push_str("target:\n    addi t0, t0, 1\n    addi t1, t1, 1\n    addi s11, s11, -1\n    bnez s11, back\n");
    src.push_str(EXIT);
    src.push_str("back:\n    j target\n");
    let r = same_either_way(&cfg, &src);
    assert_eq!(r.exit_code, Some(0));
}

#[test]
fn a_mispredicted_branch_in_flight_is_charged_to_the_front_end() {
    // With a 10-cycle branch unit and a not-taken predictor, every loop-back branch is
    // mispredicted; while it executes, fetch is stopped by an unresolved misprediction and
    // the oldest instruction does not wait on memory: front end, not execution latency.
    let mut cfg = Config::default();
    cfg.predictor.kind = PredictorKind::NotTaken;
    unit_latency(&mut cfg, UnitKind::Branch, 10);
    let r = same_either_way(&cfg, &looped(100, ""));
    assert!(
        bucket(&r, "frontend.mispredict") > 10 * bucket(&r, "latency.execute"),
        "{:?}",
        r.ledger
    );
}

#[test]
fn the_refill_after_an_icache_miss_is_charged_to_the_icache() {
    let cfg = Config {
        l1i: Some(overlap_mem::CacheConfig::l1i()),
        ..Config::default()
    };
    let src = format!("    .text\n_start:\n{}{EXIT}", "    nop\n".repeat(61));
    let r = same_either_way(&cfg, &src);
    assert!(bucket(&r, "frontend.other") <= 8, "{:?}", r.ledger);
    assert!(bucket(&r, "frontend.icache") > 0, "{:?}", r.ledger);
}

#[test]
fn a_zero_front_end_depth_is_rejected() {
    let mut cfg = Config::default();
    cfg.core.frontend_depth = 0;
    let e = cfg.validate().unwrap_err().to_string();
    assert!(e.contains("core.frontend_depth"), "{e}");
}

#[test]
fn stores_retired_before_exit_still_reach_the_cache() {
    // Twelve stores to distinct lines: all twelve write the L1D before the run ends.
    let stores: String = (0..12)
        .map(|i| format!("    sd s0, {}(s0)\n", i * 128))
        .collect();
    let src = format!(
        "    .text\n_start:\n    la s0, buf\n{stores}{EXIT}    .data\n    .balign 64\nbuf:\n    .space 4096\n"
    );
    let r = same_either_way(&preset("miss-under-miss"), &src);
    assert_eq!(r.caches["l1d"].accesses, 12, "{:?}", r.caches["l1d"]);
    assert_eq!(r.dram.reads, 12);
    assert!(
        r.waiting
            .values()
            .any(|row| row.contains_key("store.drain")),
        "{:?}",
        r.waiting
    );
}

#[test]
fn consecutive_stores_to_one_line_coalesce_into_one_write() {
    // Eight 8-byte stores fill each new line; the store queue merges each run into one
    // write, so no miss register runs out of targets and misses to different lines overlap.
    let body = "    sd s11, 0(a0)\n    sd s11, 8(a0)\n    sd s11, 16(a0)\n    sd s11, 24(a0)\n    addi a0, a0, 32\n";
    let src = looped(512, body).replace("_start:\n", "_start:\n    la a0, buf\n")
        + "    .data\n    .balign 64\nbuf:\n    .space 16448\n";
    let r = same_either_way(&preset("miss-under-miss"), &src);
    let l1d = &r.caches["l1d"];
    assert_eq!((l1d.refused_targets, l1d.merged), (0, 0), "{l1d:?}");
    assert_eq!(l1d.misses, 256);
    assert!(r.mlp.l1d > 2.0, "{:?}", r.mlp);
}
