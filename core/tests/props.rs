//! Property tests over random small programs and random valid configurations:
//! no panic, no deadlock, every instruction commits once in order, the ledger
//! sums to the cycle count, and idle skipping changes nothing.

mod common;
use common::*;
use overlap_core::{Config, Disambiguation, PredictorKind, RunOptions, simulate};
use overlap_mem::{CacheMode, PrefetchKind, Replacement};
use proptest::prelude::*;

const REGS: [&str; 6] = ["t0", "t1", "t2", "t3", "t4", "t5"];

/// One random instruction (or a short idiom) of the program body.
fn op() -> impl Strategy<Value = String> {
    let r = || prop::sample::select(&REGS[..]);
    prop_oneof![
        4 => (r(), r(), r()).prop_map(|(d, a, b)| format!("add {d}, {a}, {b}")),
        2 => (r(), r(), -50i32..50).prop_map(|(d, a, i)| format!("addi {d}, {a}, {i}")),
        1 => (r(), r(), r()).prop_map(|(d, a, b)| format!("mul {d}, {a}, {b}")),
        1 => (r(), r(), r()).prop_map(|(d, a, b)| format!("div {d}, {a}, {b}")),
        1 => (r(), r(), r()).prop_map(|(d, a, b)| format!("remu {d}, {a}, {b}")),
        // Loads and stores inside a 64 KiB buffer: masked index plus base.
        3 => (r(), r(), prop::sample::select(vec!["ld", "lw", "lbu", "lh"])).prop_map(|(d, a, w)|
            format!("andi s3, {a}, 2040\n    slli s3, s3, 4\n    add s3, s3, s2\n    {w} {d}, 0(s3)")),
        3 => (r(), r(), prop::sample::select(vec!["sd", "sw", "sb", "sh"])).prop_map(|(v, a, w)|
            format!("andi s3, {a}, 2047\n    slli s3, s3, 5\n    add s3, s3, s2\n    {w} {v}, 0(s3)")),
        // A data-dependent forward branch over one instruction.
        2 => (r(), r(), r()).prop_map(|(a, d, b)|
            format!("andi s4, {a}, 1\n    beqz s4, 9f\n    add {d}, {d}, {b}\n9:")),
    ]
}

fn program() -> impl Strategy<Value = String> {
    (prop::collection::vec(op(), 1..30), 1u64..40, any::<u64>()).prop_map(|(ops, iters, seed)| {
        let body: String = ops.iter().map(|o| format!("    {o}\n")).collect();
        let init: String = REGS
            .iter()
            .enumerate()
            .map(|(i, r)| format!("    li {r}, {}\n", seed.rotate_left(i as u32 * 11) >> 3))
            .collect();
        looped(iters, &body).replace("_start:\n", &format!("_start:\n    la s2, buf\n{init}"))
            + "    .data\n    .balign 64\nbuf:\n    .space 70000\n"
    })
}

fn config() -> impl Strategy<Value = Config> {
    (
        (1u32..6, 1u32..6, 1u32..8, 1u32..6, 1u32..6),
        (2u32..96, 1u32..24, 1u32..24, 0u32..64, 2u32..20, 2u32..20),
        (
            prop::sample::select(vec![
                CacheMode::Blocking,
                CacheMode::HitUnderMiss,
                CacheMode::MissUnderMiss,
            ]),
            1u32..9,
            1u32..5,
            prop::sample::select(vec![
                Replacement::Lru,
                Replacement::TreePlru,
                Replacement::Random,
            ]),
            prop::sample::select(vec![
                PrefetchKind::None,
                PrefetchKind::NextLine,
                PrefetchKind::Stride,
            ]),
        ),
        (
            prop::sample::select(vec![
                PredictorKind::Perfect,
                PredictorKind::NotTaken,
                PredictorKind::Bimodal,
                PredictorKind::Gshare,
            ]),
            prop::sample::select(vec![Disambiguation::Conservative, Disambiguation::Perfect]),
            1u32..30,
            any::<bool>(),
            20u32..120,
        ),
        (any::<bool>(), 1u32..4, 1u32..12, 1u32..3),
    )
        .prop_map(|(w, s, m, p, f)| {
            let mut c = Config::default();
            c.core.fetch_width = w.0;
            c.core.dispatch_width = w.1;
            c.core.issue_width = w.2;
            c.core.commit_width = w.3;
            c.core.frontend_depth = w.4;
            c.core.rob_entries = s.0;
            c.core.lq_entries = s.1;
            c.core.sq_entries = s.2;
            c.core.phys_regs = 33 + s.3;
            c.core.stations[0].entries = s.4;
            c.core.stations[1].entries = s.5;
            c.l1d.mode = m.0;
            c.l1d.mshrs = m.1;
            c.l1d.mshr_targets = m.2;
            c.l1d.replacement = m.3;
            c.l1d.size_bytes = 4096;
            c.l1d.ways = 2;
            c.l2.size_bytes = 32768;
            c.prefetch.kind = m.4;
            c.predictor.kind = p.0;
            c.core.disambiguation = p.1;
            c.core.units[3].latency = p.2;
            c.core.units[3].pipelined = p.3;
            c.dram.latency_cycles = p.4;
            if f.0 {
                let mut l1i = overlap_mem::CacheConfig::l1i();
                l1i.size_bytes = 1024;
                l1i.ways = 2;
                l1i.ports = f.3;
                c.l1i = Some(l1i);
            }
            c.core.units[5].latency = f.1;
            c.core.units[1].latency = f.2;
            c
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 500, ..ProptestConfig::default() })]

    #[test]
    fn random_programs_on_random_machines(src in program(), cfg in config()) {
        cfg.validate().unwrap();
        let p = asm(&src);
        let mut m = overlap_isa::Machine::new(&p, Default::default()).unwrap();
        let expected_exit = m.run().unwrap();
        let expected_insts = m.retired();

        let skipped = simulate(&cfg, &p, &RunOptions::default()).unwrap_or_else(|e| panic!("{e}\n{src}"));
        prop_assert_eq!(skipped.ledger.values().sum::<u64>(), skipped.cycles);
        prop_assert_eq!(skipped.instructions, expected_insts);
        prop_assert_eq!(skipped.exit_code, Some(expected_exit));
        let stepped = run_stepped(&cfg, &p);
        prop_assert_eq!(skipped.without_host(), stepped.without_host());
    }
}
