//! The suites: every entry builds and runs to exit on the functional model.

use overlap_workloads::{suite, suite_names};

use crate::util::run_phases;

fn build_entry(e: &overlap_workloads::SuiteEntry) -> overlap_workloads::Built {
    overlap_workloads::build(e.workload, &e.overrides)
        .unwrap_or_else(|err| panic!("{}: {err}", e.label))
}

#[test]
fn quick_suite_runs_to_exit() {
    assert_eq!(suite_names(), ["quick", "standard"]);
    let mut total = 0;
    for e in suite("quick").unwrap() {
        let built = build_entry(&e);
        let (_, insts, init) = run_phases(&built);
        println!(
            "quick    {:<14} {insts:>9} instructions ({init:>8} init)",
            e.label
        );
        assert!(
            (20_000..=200_000).contains(&insts),
            "{}: {insts} dynamic instructions, outside 20k..200k",
            e.label
        );
        total += insts;
    }
    println!("quick total {total}");
}

/// Slow in a debug build: run with `cargo test --release -- --ignored`.
#[test]
#[ignore]
fn standard_suite_runs_to_exit() {
    let mut outside = Vec::new();
    for e in suite("standard").unwrap() {
        let built = build_entry(&e);
        let (_, insts, init) = run_phases(&built);
        println!(
            "standard {:<14} {insts:>9} instructions ({init:>8} init)",
            e.label
        );
        if !(1_000_000..=6_000_000).contains(&insts) {
            outside.push((e.label, insts));
        }
    }
    assert!(
        outside.is_empty(),
        "dynamic instructions outside 1M..6M: {outside:?}"
    );
}
