//! Scenario tests of the cycle ledger: each microbenchmark is built so one
//! structure should stop the machine, and the ledger must name it.

mod common;
use common::*;
use overlap_core::Config;
use overlap_mem::CacheMode;

/// A loop of independent loads, each to a new (cold) line: every load misses to DRAM.
fn independent_misses(n: u64) -> String {
    format!(
        "    .text\n_start:\n    la a0, buf\n    li s11, {n}\n1:\n    ld t1, 0(a0)\n    addi a0, a0, 64\n    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n    .balign 64\nbuf:\n    .space {}\n",
        n * 64 + 64
    )
}

#[test]
fn blocking_cache_stalls_are_lockups() {
    // Common practice: a blocking cache serves nothing while a miss is outstanding, so the
    // next load is refused by the locked cache long before the window fills.
    let r = run(&preset("blocking"), &asm(&independent_misses(300)));
    assert_eq!(dominant_stall(&r), "lockup.l1d", "{:?}", r.ledger);
}

#[test]
fn two_mshrs_stall_on_mshrs() {
    // With 2 miss registers the third independent miss is refused: the MSHRs fill first.
    let mut cfg = preset("miss-under-miss");
    cfg.l1d.mshrs = 2;
    let r = run(&cfg, &asm(&independent_misses(300)));
    assert_eq!(dominant_stall(&r), "mshr.l1d", "{:?}", r.ledger);
}

#[test]
fn many_mshrs_and_a_small_rob_stall_on_the_rob() {
    // With 32 miss registers and a 32-entry ROB, only 8 loads (4 instructions per
    // iteration) fit in the window: the ROB fills before the MSHRs.
    let mut cfg = preset("miss-under-miss");
    cfg.l1d.mshrs = 32;
    cfg.l2.mshrs = 32;
    cfg.core.rob_entries = 32;
    let r = run(&cfg, &asm(&independent_misses(300)));
    assert_eq!(dominant_stall(&r), "rob", "{:?}", r.ledger);
}

#[test]
fn dependants_of_a_miss_fill_the_station_first() {
    // Common practice: a missing load followed by a long chain that needs its value fills
    // the 32-entry integer station before the 128-entry ROB: the station takes the cycles.
    let chain: String = (0..100).map(|_| "    add t1, t1, t2\n").collect();
    let body = format!("    ld t1, 0(a0)\n{chain}    addi a0, a0, 64\n");
    let src = format!(
        "    .text\n_start:\n    la a0, buf\n    li s11, 20\n1:\n{body}    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n    .balign 64\nbuf:\n    .space 4096\n"
    );
    let r = run(&preset("miss-under-miss"), &asm(&src));
    assert_eq!(dominant_stall(&r), "rs.int", "{:?}", r.ledger);
}

#[test]
fn stores_to_new_lines_fill_a_small_store_queue() {
    // Stores keep their queue entry until they have written the cache; a store to a new
    // line waits for the line (write-allocate), so a 4-entry store queue fills.
    let mut cfg = preset("miss-under-miss");
    cfg.core.sq_entries = 4;
    let src = format!(
        "    .text\n_start:\n    la a0, buf\n    li s11, 300\n1:\n    sd s11, 0(a0)\n    addi a0, a0, 64\n    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n    .balign 64\nbuf:\n    .space {}\n",
        301 * 64
    );
    let r = run(&cfg, &asm(&src));
    assert_eq!(dominant_stall(&r), "sq", "{:?}", r.ledger);
}

#[test]
fn unpredictable_branches_stall_the_front_end() {
    // A branch on pseudo-random bits (xorshift64, Marsaglia 2003, computed in registers)
    // is taken half the time at random: mispredictions lead the stalls.
    let body = "    slli t0, s0, 13\n    xor s0, s0, t0\n    srli t0, s0, 7\n    xor s0, s0, t0\n    slli t0, s0, 17\n    xor s0, s0, t0\n    andi t1, s0, 1\n    beqz t1, 2f\n    addi a1, a1, 1\n2:\n";
    let src = looped(3000, body).replace("_start:\n", "_start:\n    li s0, 88172645463325252\n");
    let r = run(&preset("miss-under-miss"), &asm(&src));
    assert_eq!(dominant_stall(&r), "frontend.mispredict", "{:?}", r.ledger);
}

/// `k` loads per iteration to cold lines, all needed before the next iteration's addresses
/// are known: node i of chain 0 holds the address of node i+1, the other chains hold zeros.
fn grouped_misses(k: usize, n: usize) -> String {
    let mut body = String::from("    ld t0, 0(a0)\n");
    for j in 1..k {
        body.push_str(&format!("    ld t{j}, {}(a0)\n", j * 512));
    }
    for j in 1..k {
        body.push_str(&format!("    add t0, t0, t{j}\n"));
    }
    body.push_str("    mv a0, t0\n");
    // Nodes 4096 + 64 bytes apart; the other loads of a group hit distinct lines inside it.
    format!(
        "    .text\n_start:\n    la a0, chain0_0\n    li s11, {}\n1:\n{body}    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n{}",
        n - 1,
        chain_data(0, n, 4160)
    )
}

fn per_group(mode: CacheMode, k: usize) -> f64 {
    let mut cfg = Config::default();
    cfg.l1d.mode = mode;
    let r = run(&cfg, &asm(&grouped_misses(k, 60)));
    r.cycles as f64 / 59.0
}

#[test]
fn overlapped_pairs_cost_about_one_miss() {
    // Common practice: with a blocking cache two independent misses cost about two full
    // miss latencies; with miss-under-miss they overlap and cost about one plus a little.
    let blocking = per_group(CacheMode::Blocking, 2);
    let mum = per_group(CacheMode::MissUnderMiss, 2);
    let ratio = mum / blocking;
    assert!(
        (0.45..=0.65).contains(&ratio),
        "pair ratio {ratio} ({mum} vs {blocking})"
    );
    // Hit-under-miss serves hits under a miss, but the second miss waits: in between.
    let hum = per_group(CacheMode::HitUnderMiss, 2);
    assert!(
        hum <= blocking && hum >= mum,
        "hum {hum} blocking {blocking} mum {mum}"
    );
}

#[test]
fn four_overlapped_misses_cost_about_one_penalty() {
    // Common practice: four overlapped misses cost about one penalty plus a little, not four.
    let ratio = per_group(CacheMode::MissUnderMiss, 4) / per_group(CacheMode::Blocking, 4);
    assert!((0.2..=0.4).contains(&ratio), "ratio {ratio}");
}

/// `k` independent pointer chains, interleaved in one loop.
fn chains(k: usize, n: usize) -> String {
    let regs = ["a0", "a1", "a2", "a3", "a4", "a5", "a6", "a7"];
    let mut start = String::new();
    let mut body = String::new();
    let mut data = String::new();
    for (c, reg) in regs.iter().enumerate().take(k) {
        start.push_str(&format!("    la {reg}, chain{c}_0\n"));
        body.push_str(&format!("    ld {reg}, 0({reg})\n"));
        data.push_str(&chain_data(c, n, 4160 + 64 * c));
    }
    format!(
        "    .text\n_start:\n{start}    li s11, {}\n1:\n{body}    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n{data}",
        n - 1
    )
}

#[test]
fn k_independent_chains_give_mlp_k() {
    // Source: Chou, Fahs and Abraham, ISCA 2004 (MLP = average outstanding misses over the
    // cycles with at least one outstanding). k independent chains with at least k miss
    // registers keep k DRAM reads in flight: MLP within 10% of k.
    for k in [1usize, 2, 4, 8] {
        let r = run(&preset("miss-under-miss"), &asm(&chains(k, 80)));
        let mlp = r.mlp.dram;
        assert!(
            (mlp - k as f64).abs() <= 0.1 * k as f64,
            "k={k}: dram mlp {mlp}"
        );
    }
}

#[test]
fn blocking_cache_has_mlp_one() {
    // Common practice: a blocking cache has at most one miss outstanding.
    let r = run(&preset("blocking"), &asm(&chains(4, 40)));
    assert_eq!(r.mlp.dram, 1.0);
    assert_eq!(r.mlp.l1d, 1.0);
}
