//! The suites: every entry builds and runs to exit on the functional model.

use overlap_workloads::{suite, suite_names};

use crate::util::run_phases;

/// Builds and runs every entry of suite `name`, printing each one's dynamic
/// instruction count; returns `(label, instructions)` per entry.
fn run_suite(name: &str) -> Vec<(String, u64)> {
    let mut counts = Vec::new();
    for e in suite(name).unwrap() {
        let built = overlap_workloads::build(e.workload, &e.overrides)
            .unwrap_or_else(|err| panic!("{}: {err}", e.label));
        let (_, insts, init) = run_phases(&built);
        println!(
            "{name:<8} {:<14} {insts:>9} instructions ({init:>8} init)",
            e.label
        );
        counts.push((e.label, insts));
    }
    counts
}

/// The entries of `counts` whose instruction count lies outside `range`.
fn outside(counts: Vec<(String, u64)>, range: std::ops::RangeInclusive<u64>) -> Vec<(String, u64)> {
    counts
        .into_iter()
        .filter(|(_, insts)| !range.contains(insts))
        .collect()
}

#[test]
fn quick_suite_runs_to_exit() {
    assert_eq!(suite_names(), ["quick", "standard"]);
    let counts = run_suite("quick");
    println!("quick total {}", counts.iter().map(|(_, n)| n).sum::<u64>());
    let outside = outside(counts, 20_000..=200_000);
    assert!(
        outside.is_empty(),
        "dynamic instructions outside 20k..200k: {outside:?}"
    );
}

/// Slow in a debug build: run with `cargo test --release -- --ignored`.
#[test]
#[ignore]
fn standard_suite_runs_to_exit() {
    let outside = outside(run_suite("standard"), 1_000_000..=6_000_000);
    assert!(
        outside.is_empty(),
        "dynamic instructions outside 1M..6M: {outside:?}"
    );
}
