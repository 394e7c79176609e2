//! Helpers shared by the core's integration tests.
#![allow(dead_code)]

use overlap_core::{Config, Report, RunOptions, simulate};
use overlap_isa::Program;

/// Assemble a test program; panics with the assembler's messages.
pub fn asm(src: &str) -> Program {
    overlap_isa::asm::assemble(src, "test.s").unwrap_or_else(|e| panic!("{e}\n{src}"))
}

/// Simulate with idle skipping on, and check the ledger adds up.
pub fn run(cfg: &Config, p: &Program) -> Report {
    let r = simulate(cfg, p, &RunOptions::default()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        r.ledger.values().sum::<u64>(),
        r.cycles,
        "ledger sums to cycles"
    );
    r
}

/// Simulate stepping every cycle.
pub fn run_stepped(cfg: &Config, p: &Program) -> Report {
    let opts = RunOptions {
        step_every_cycle: true,
        ..RunOptions::default()
    };
    simulate(cfg, p, &opts).unwrap_or_else(|e| panic!("{e}"))
}

pub fn preset(name: &str) -> Config {
    Config::preset(name).unwrap()
}

/// Cycles charged to a bucket (0 when absent).
pub fn bucket(r: &Report, key: &str) -> u64 {
    r.ledger.get(key).copied().unwrap_or(0)
}

/// The non-commit bucket with the most cycles.
pub fn dominant_stall(r: &Report) -> String {
    r.ledger
        .iter()
        .filter(|(k, _)| k.as_str() != "commit")
        .max_by_key(|(_, v)| **v)
        .map(|(k, _)| k.clone())
        .unwrap_or_default()
}

/// A loop of `n` iterations around `body`, counting down in `s11`.
pub fn looped(n: u64, body: &str) -> String {
    format!(
        "    .text\n_start:\n    li s11, {n}\n1:\n{body}\n    addi s11, s11, -1\n    bnez s11, 1b\n    li a0, 0\n    li a7, 93\n    ecall\n"
    )
}

/// Exit sequence.
pub const EXIT: &str = "    li a0, 0\n    li a7, 93\n    ecall\n";

/// A chain of `n` nodes in `.data`, each `stride` bytes apart, node i holding
/// the address of node i+1 (the last holds 0). Labelled `chainK_0` ...
pub fn chain_data(k: usize, n: usize, stride: usize) -> String {
    let mut s = String::new();
    s.push_str("    .balign 64\n");
    for i in 0..n {
        s.push_str(&format!("chain{k}_{i}:\n"));
        if i + 1 < n {
            s.push_str(&format!("    .dword chain{k}_{}\n", i + 1));
        } else {
            s.push_str("    .dword 0\n");
        }
        s.push_str(&format!("    .zero {}\n", stride - 8));
    }
    s
}
