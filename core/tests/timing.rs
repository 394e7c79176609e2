//! Known-timing checks of the out-of-order core: each expected figure is
//! worked out in the comment beside it.

mod common;
use common::*;
use overlap_core::{Config, Observer, PredictorKind, RunOptions, run_with};
use overlap_isa::DynInst;

#[test]
fn dependent_add_chain_takes_about_one_cycle_each() {
    // n adds each reading the previous result: one-cycle ALU latency, so the chain
    // issues one add per cycle: about n cycles, plus the pipeline fill (front end 5 deep)
    // and the exit sequence. Common practice.
    let n = 2000;
    let body: String = (0..n).map(|_| "    add a1, a1, a2\n").collect();
    let src = format!("    .text\n_start:\n    li a2, 1\n{body}{EXIT}");
    let r = run(&preset("miss-under-miss"), &asm(&src));
    assert!(
        r.cycles >= n && r.cycles <= n + n / 50 + 40,
        "cycles {}",
        r.cycles
    );
    assert_eq!(r.exit_code, Some(0));
}

#[test]
fn independent_adds_reach_the_alu_limit() {
    // Independent adds are limited by the 3 ALUs (fetch and dispatch are 4 wide): IPC -> 3.
    // Common practice.
    let n = 6000;
    let regs = ["t0", "t1", "t2", "t3", "t4", "t5", "t6", "s1"];
    let body: String = (0..n)
        .map(|i| format!("    add {}, a1, a2\n", regs[i % regs.len()]))
        .collect();
    let src = format!("    .text\n_start:\n    li a1, 3\n    li a2, 4\n{body}{EXIT}");
    let r = run(&preset("miss-under-miss"), &asm(&src));
    assert!(r.ipc > 2.85 && r.ipc <= 3.0 + 1e-9, "ipc {}", r.ipc);
}

#[test]
fn dependent_divides_take_the_divider_latency_each() {
    // The divider is unpipelined with a 20-cycle latency, and each divide needs the previous
    // quotient: n divides take about n * 20 cycles. Common practice.
    let n = 200;
    let body: String = (0..n).map(|_| "    div a1, a1, a2\n").collect();
    let src = format!("    .text\n_start:\n    li a1, 1000\n    li a2, 1\n{body}{EXIT}");
    let r = run(&preset("miss-under-miss"), &asm(&src));
    let expect = n * 20;
    assert!(
        r.cycles >= expect && r.cycles <= expect + expect / 50 + 40,
        "cycles {}",
        r.cycles
    );
    assert_eq!(overlap_core::report::SCHEMA_VERSION, r.schema);
}

#[test]
fn pointer_chase_costs_the_full_miss_latency_per_hop() {
    // Each hop's address is the previous hop's data, and every node is on a cold line, so
    // the hops cannot overlap: each costs L1 (4) + L2 (14) + DRAM (200) cycles plus a little
    // for address generation and the line transfer: about n * 218. Common practice.
    let n = 100;
    let src = format!(
        "    .text\n_start:\n    la a0, chain0_0\n    li s11, {}\n1:\n    ld a0, 0(a0)\n    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n{}",
        n - 1,
        chain_data(0, n, 4160)
    );
    let r = run(&preset("miss-under-miss"), &asm(&src));
    let per_hop = r.cycles as f64 / (n - 1) as f64;
    assert!(
        (218.0 * 0.95..218.0 * 1.15).contains(&per_hop),
        "{per_hop} cycles per hop"
    );
    // The loop's own instructions run ahead, so the memory station fills with waiting
    // loads: the window stops on it, and the oldest instruction waits for DRAM.
    assert_eq!(dominant_stall(&r), "rs.mem", "{:?}", r.ledger);
    assert!(
        r.waiting["rs.mem"]["load.dram"] > r.cycles / 2,
        "{:?}",
        r.waiting
    );
}

fn nested_loops() -> String {
    // An outer loop of 100 around an inner loop of 10 iterations.
    "    .text\n_start:\n    li s0, 100\n2:\n    li s1, 10\n1:\n    addi s1, s1, -1\n    bnez s1, 1b\n    addi s0, s0, -1\n    bnez s0, 2b\n    li a0, 0\n    li a7, 93\n    ecall\n".to_string()
}

#[test]
fn bimodal_mispredicts_a_loop_once_per_exit() {
    // Source: J. E. Smith, "A study of branch prediction strategies", ISCA 1981 (two-bit
    // counters). The inner loop branch, entered 100 times from a cold strongly-not-taken
    // counter, mispredicts 2 times while warming up plus once per exit: 102. The outer loop
    // branch (99 taken, then not taken) adds 2 warm-up mispredictions and its exit: 3.
    let mut cfg = preset("miss-under-miss");
    cfg.predictor.kind = PredictorKind::Bimodal;
    let r = run(&cfg, &asm(&nested_loops()));
    assert_eq!(r.branches.conditional_mispredicts, 102 + 3);
    assert_eq!(r.branches.conditional, 100 * 10 + 100);
}

#[test]
fn gshare_learns_the_loop_exit() {
    // Common practice: with more history bits (12) than the loop has iterations (10), the
    // global history pattern identifies the last iteration; gshare mispredicts far less.
    let cfg = preset("miss-under-miss");
    let r = run(&cfg, &asm(&nested_loops()));
    assert!(
        r.branches.conditional_mispredicts < 105 / 3,
        "{:?}",
        r.branches
    );
}

/// Count and rolling hash of committed pcs, and a check of program order.
#[derive(Default)]
struct CommitLog {
    count: u64,
    hash: u64,
    next_seq: u64,
    out_of_order: bool,
}

fn roll(hash: u64, pc: u64) -> u64 {
    (hash ^ pc).wrapping_mul(0x100_0000_01b3).rotate_left(5)
}

impl Observer for CommitLog {
    fn commit(&mut self, _cycle: u64, seq: u64, inst: &DynInst) {
        self.out_of_order |= seq != self.next_seq;
        self.next_seq = seq + 1;
        self.count += 1;
        self.hash = roll(self.hash, inst.pc);
    }
}

fn functional_log(p: &overlap_isa::Program) -> (u64, u64) {
    let mut m = overlap_isa::Machine::new(p, Default::default()).unwrap();
    let (mut count, mut hash) = (0, 0);
    while m.exit_code().is_none() {
        let d = m.step().unwrap();
        count += 1;
        hash = roll(hash, d.pc);
    }
    (count, hash)
}

pub fn test_programs() -> Vec<String> {
    vec![
        nested_loops(),
        looped(300, "    ld t0, -16(sp)\n    sd t0, -8(sp)\n    ld t1, -8(sp)\n    add t2, t0, t1\n    mul t3, t2, t2\n    div t4, t3, s11"),
        format!(
            "    .text\n_start:\n    la a0, chain0_0\n    li s11, 40\n1:\n    ld a0, 0(a0)\n    sd s11, 8(a0)\n    addi s11, s11, -1\n    bnez s11, 1b\n{EXIT}    .data\n{}",
            chain_data(0, 41, 4160)
        ),
        // Calls and returns.
        "    .text\n_start:\n    li s0, 50\n1:\n    call f\n    addi s0, s0, -1\n    bnez s0, 1b\n    li a0, 0\n    li a7, 93\n    ecall\nf:\n    addi a1, a1, 1\n    ret\n".to_string(),
    ]
}

#[test]
fn every_instruction_commits_once_in_program_order() {
    for src in test_programs() {
        let p = asm(&src);
        let expected = functional_log(&p);
        for name in overlap_core::config::PRESETS {
            let cfg = preset(name);
            let (summary, log) =
                run_with(&cfg, &p, &RunOptions::default(), CommitLog::default()).unwrap();
            assert!(!log.out_of_order, "{name}");
            assert_eq!((log.count, log.hash), expected, "{name}:\n{src}");
            assert_eq!(summary.instructions, expected.0);
        }
    }
}

#[test]
fn timing_is_the_same_with_and_without_observers() {
    for src in test_programs() {
        let p = asm(&src);
        let cfg = Config::default();
        let (bare, _) =
            run_with(&cfg, &p, &RunOptions::default(), overlap_core::NoObserver).unwrap();
        let r = run(&cfg, &p);
        assert_eq!(bare.cycles, r.cycles);
        assert_eq!(bare.instructions, r.instructions);
    }
}

#[test]
fn idle_skipping_changes_nothing() {
    for src in test_programs() {
        let p = asm(&src);
        for name in overlap_core::config::PRESETS {
            let cfg = preset(name);
            assert_eq!(
                run(&cfg, &p).without_host(),
                run_stepped(&cfg, &p).without_host(),
                "{name}"
            );
        }
    }
}

#[test]
fn watchdog_reports_a_model_deadlock() {
    // A one-cycle watchdog cannot survive a DRAM miss: the error names the stall.
    let mut cfg = preset("miss-under-miss");
    cfg.core.watchdog_cycles = 50;
    let src = format!(
        "    .text\n_start:\n    la a0, chain0_0\n    ld a0, 0(a0)\n{EXIT}    .data\n{}",
        chain_data(0, 2, 4160)
    );
    let err = overlap_core::simulate(&cfg, &asm(&src), &RunOptions::default()).unwrap_err();
    let text = err.to_string();
    assert!(text.contains("model deadlock"), "{text}");
    assert!(text.contains("oldest instructions"), "{text}");
    assert!(text.contains("outstanding misses"), "{text}");
}

#[test]
fn measurement_starts_at_the_marker() {
    // A warm-up loop that writes a buffer, then the measured loop reading it back. The
    // report covers only the second part: its instruction count is exactly the measured
    // loop's, and the ledger still sums to the measured cycles.
    let src = format!(
        "    .text\n_start:\n    la a0, buf\n    li s11, 64\n1:\n    sd s11, 0(a0)\n    addi a0, a0, 64\n    addi s11, s11, -1\n    bnez s11, 1b\nmeasure_start:\n    la a0, buf\n    li s11, 64\n2:\n    ld t0, 0(a0)\n    addi a0, a0, 64\n    addi s11, s11, -1\n    bnez s11, 2b\n{EXIT}    .data\n    .balign 64\nbuf:\n    .space 4096\n"
    );
    let p = asm(&src);
    let cfg = preset("miss-under-miss");
    let whole = run(&cfg, &p);
    let opts = RunOptions::default().measure_from_marker(&p);
    assert!(opts.measure_from.is_some());
    let roi = overlap_core::simulate(&cfg, &p, &opts).unwrap();
    // la (2) + li (1) + 64 * 4 + exit (3) instructions from the marker on.
    assert_eq!(roi.instructions, 2 + 1 + 64 * 4 + 3);
    let warm = roi.warmup.clone().expect("warm-up recorded");
    assert_eq!(warm.instructions + roi.instructions, whole.instructions);
    assert_eq!(warm.cycles + roi.cycles, whole.cycles);
    assert_eq!(roi.ledger.values().sum::<u64>(), roi.cycles);
    // The buffer was written during the warm-up, so the measured loads mostly hit; only
    // warm-up stores still draining when measurement starts may miss.
    let (w, m) = (&whole.caches["l1d"], &roi.caches["l1d"]);
    assert!(m.accesses < w.accesses && m.misses < w.misses, "{m:?}");
    assert!(m.hits >= 32, "{m:?}");
    let stepped = overlap_core::simulate(
        &cfg,
        &p,
        &RunOptions {
            step_every_cycle: true,
            ..opts.clone()
        },
    )
    .unwrap();
    assert_eq!(roi.without_host(), stepped.without_host());
}

#[test]
fn perfect_disambiguation_lets_a_load_pass_an_unknown_store_address() {
    // Common practice: under conservative disambiguation a load waits until every older
    // store has its address. Here each store's address waits for a 20-cycle divide of the
    // previous iteration's loaded value, and each load (to another line) feeds the next
    // divide. Conservative: load, then divide, then the next store address, then the next
    // load: about 20 + 5 cycles per iteration. Perfect: loads do not wait for the stores,
    // so only the divides chain: about 20 + a few.
    let body = "    div t0, t2, a2\n    add t1, a0, t0\n    sd s11, 0(t1)\n    ld t2, 64(a0)\n";
    let src = looped(200, body).replace(
        "_start:\n",
        "_start:\n    la a0, buf\n    li a2, 1000\n    li t2, 0\n",
    ) + "    .data\n    .balign 64\nbuf:\n    .space 256\n";
    let p = asm(&src);
    let mut cfg = preset("miss-under-miss");
    let conservative = run(&cfg, &p).cycles;
    cfg.core.disambiguation = overlap_core::Disambiguation::Perfect;
    let perfect = run(&cfg, &p).cycles;
    assert!(
        (perfect as f64) < 0.9 * conservative as f64,
        "perfect {perfect} vs conservative {conservative}"
    );
}

#[test]
fn a_load_after_a_store_to_the_same_bytes_is_forwarded() {
    // Store-to-load forwarding (common practice): the load takes the store's data from the
    // store queue and never asks the cache, so the L1D sees only the stores (fewer, since
    // stores to one line coalesce).
    let n = 300;
    let body = "    sd s11, 0(a0)\n    ld t2, 0(a0)\n    add a3, a3, t2\n";
    let src = looped(n, body).replace("_start:\n", "_start:\n    la a0, buf\n")
        + "    .data\n    .balign 64\nbuf:\n    .space 64\n";
    let r = run(&preset("miss-under-miss"), &asm(&src));
    assert!(r.caches["l1d"].accesses <= n, "{:?}", r.caches["l1d"]);
    assert_eq!(r.exit_code, Some(0));
}

#[test]
fn prefetchers_run_ahead_of_a_stream_with_free_miss_registers() {
    // Common practice: a stream held back by the load queue leaves miss registers free;
    // next-line and stride prefetchers use them to fetch lines ahead, and the loop runs
    // faster. The prefetches count as issued, and most are useful or late.
    let body = "    ld t0, 0(a0)\n    ld t1, 8(a0)\n    ld t2, 16(a0)\n    ld t3, 24(a0)\n    addi a0, a0, 32\n";
    let src = looped(8192, body).replace("_start:\n", "_start:\n    la a0, buf\n")
        + "    .data\n    .balign 64\nbuf:\n    .space 262208\n";
    let p = asm(&src);
    let mut cfg = preset("miss-under-miss");
    let none = run(&cfg, &p).cycles;
    for kind in [
        overlap_mem::PrefetchKind::NextLine,
        overlap_mem::PrefetchKind::Stride,
    ] {
        cfg.prefetch.kind = kind;
        let r = run(&cfg, &p);
        let l1d = &r.caches["l1d"];
        assert!(
            (r.cycles as f64) < 0.85 * none as f64,
            "{kind:?}: {} vs {none}",
            r.cycles
        );
        assert!(l1d.prefetch_issued > 1000, "{kind:?}: {l1d:?}");
        assert!(
            l1d.prefetch_useful + l1d.prefetch_late > l1d.prefetch_issued / 2,
            "{l1d:?}"
        );
    }
}
