//! `branchy`: one data-dependent conditional branch per iteration, taken with
//! probability `taken` percent: 0 and 100 are perfectly predictable, 50 is a
//! coin toss. No memory accesses, so only the branch predictor matters.
//!
//! Data: a xorshift64 generator (Marsaglia 2003, shifts 13, 7, 17) in a
//! register, started at `x_0 = (first output of fill source) | 1` (see
//! [fills](super#fills)).
//!
//! Kernel: `count` iterations; each advances the generator and branches on
//! `(x >> 32) < threshold`, where `threshold = taken * 2^32 / 100`. Taken:
//! add `x >> 32` to sum T. Not taken: add 1 to count N.
//!
//! Checksum: T + N (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, start};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "taken",
            "percent of iterations in which the branch is taken",
            0,
            100,
            50,
        ),
        ParamSpec::int(
            "count",
            "iterations (one data-dependent branch each)",
            1,
            MAX_COUNT,
            10_000,
        ),
    ]
}

/// The comparison threshold for a taken percentage.
pub(crate) fn threshold(taken: u64) -> u64 {
    (taken << 32) / 100
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let taken = p.uint("taken");
    let count = p.uint("count");
    let x0 = FillSource::new(p.uint("seed")).next_u64() | 1;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: threshold {:#x} of 2^32, xorshift64 start {x0:#x}",
        threshold(taken)
    ));
    a.comment("---- no init ----");
    a.measure_start();
    a.li("s0", x0);
    a.li("s1", threshold(taken));
    a.li("s2", count);
    a.clear(&["a1", "a2"]);
    let top = a.fresh("iter");
    let yes = a.fresh("taken");
    let join = a.fresh("join");
    a.label(&top);
    emit!(a, "slli t0, s0, 13");
    emit!(a, "xor s0, s0, t0");
    emit!(a, "srli t0, s0, 7");
    emit!(a, "xor s0, s0, t0");
    emit!(a, "slli t0, s0, 17");
    emit!(a, "xor s0, s0, t0");
    emit!(a, "srli t1, s0, 32");
    emit!(a, "bltu t1, s1, {yes}");
    emit!(a, "addi a1, a1, 1");
    emit!(a, "j {join}");
    a.label(&yes);
    emit!(a, "add a2, a2, t1");
    a.label(&join);
    a.count_down("s2", &top);
    emit!(a, "add a1, a1, a2");
    Ok(a.finish("a1"))
}
