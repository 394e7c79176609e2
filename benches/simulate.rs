//! Whole-run simulation speed (simulated instructions per host second) on
//! three kernels, with the full ledger and with no observer at all.

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use overlap_core::{Config, NoObserver, RunOptions, run_with, simulate};
use overlap_isa::Program;

fn program(body: &str, data: &str, iters: u64) -> Program {
    let src = format!(
        "    .text\n_start:\n    la a0, buf\n    li a1, 3\n    li a2, 5\n    li s11, {iters}\n1:\n{body}\n    addi s11, s11, -1\n    bnez s11, 1b\n    li a0, 0\n    li a7, 93\n    ecall\n    .data\n    .balign 64\nbuf:\n{data}"
    );
    overlap_isa::assemble(&src, "bench.s").expect("bench program assembles")
}

/// An ALU loop: eight independent adds and the loop overhead.
fn alu() -> Program {
    let body: String = ["t0", "t1", "t2", "t3", "t4", "t5", "t6", "s1"]
        .iter()
        .map(|r| format!("    add {r}, {r}, a1\n"))
        .collect();
    program(&body, "    .space 64\n", 100_000)
}

/// A streaming read over 8 MiB, one load per 8 bytes.
fn stream() -> Program {
    program(
        "    ld t0, 0(a0)\n    add t1, t1, t0\n    addi a0, a0, 8\n",
        "    .space 8388608\n",
        1 << 20,
    )
}

/// A pointer chase over a cyclic chain of 4096 nodes, 4160 bytes apart.
fn chase() -> Program {
    let mut data = String::new();
    for i in 0..4096 {
        data.push_str(&format!(
            "n{i}:\n    .dword n{}\n    .zero 4152\n",
            (i + 1) % 4096
        ));
    }
    program("    ld a0, 0(a0)\n", &data, 50_000)
}

fn bench(c: &mut Criterion) {
    let cfg = Config::default();
    let opts = RunOptions::default();
    let mut group = c.benchmark_group("simulate");
    group.sample_size(10);
    for (name, p) in [("alu", alu()), ("stream", stream()), ("chase", chase())] {
        let insts = simulate(&cfg, &p, &opts).expect("runs").instructions;
        group.throughput(Throughput::Elements(insts));
        group.bench_function(format!("{name}/ledger"), |b| {
            b.iter(|| simulate(&cfg, &p, &opts).expect("runs"))
        });
        group.bench_function(format!("{name}/bare"), |b| {
            b.iter(|| run_with(&cfg, &p, &opts, NoObserver).expect("runs"))
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
