//! `alu`: integer ALU (or multiply) work in `chains` independent dependence
//! chains, the instruction-level-parallelism knob: 1 is fully dependent, 8 is
//! eight chains the core may run side by side.
//!
//! Data: registers only. From the fill source (see
//! [fills](super#fills)) come, in order: the start value
//! of each chain's accumulator `acc_0..acc_{chains-1}`, then constants `K`,
//! `L` and `M` (`M` with its low bit set).
//!
//! Kernel: `ops / (8 * chains)` iterations (at least one); each runs 8
//! rounds, and each round one instruction per chain, in chain order: with
//! `op=add`, `add acc, acc, K` in even rounds and `xor acc, acc, L` in odd
//! rounds; with `op=mul`, `mul acc, acc, M`.
//!
//! Checksum: the sum of the accumulators (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, chain_rounds, start};
use crate::params::{ParamSpec, Params};

/// Rounds per loop iteration.
pub(crate) const ROUNDS: u64 = 8;

const ACCS: [&str; 8] = ["s0", "s1", "s2", "s3", "s4", "s5", "s6", "s7"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int("chains", "independent dependence chains (ILP)", 1, 8, 1),
        ParamSpec::choice("op", "operation of the chains", &["add", "mul"], "add"),
        ParamSpec::int(
            "ops",
            "chain instructions in all (rounded down to whole iterations of 8 * chains)",
            1,
            MAX_COUNT,
            40_000,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let chains = p.uint("chains") as usize;
    let mul = p.choice("op") == "mul";
    let iters = (p.uint("ops") / (ROUNDS * chains as u64)).max(1);
    let mut fills = FillSource::new(p.uint("seed"));
    let starts: Vec<u64> = (0..chains).map(|_| fills.next_u64()).collect();
    let (k, l, m) = (fills.next_u64(), fills.next_u64(), fills.next_u64() | 1);

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {iters} iterations of {} chain instructions",
        ROUNDS * chains as u64
    ));
    a.comment("---- init: accumulators and constants ----");
    for (acc, v) in ACCS.iter().zip(&starts) {
        a.li(acc, *v);
    }
    a.li("t0", k);
    a.li("t1", l);
    a.li("t2", m);
    a.measure_start();
    chain_rounds(
        &mut a,
        "a0",
        "round",
        iters,
        ROUNDS,
        &ACCS[..chains],
        |a, r, acc| {
            if mul {
                emit!(a, "mul {acc}, {acc}, t2");
            } else if r % 2 == 0 {
                emit!(a, "add {acc}, {acc}, t0");
            } else {
                emit!(a, "xor {acc}, {acc}, t1");
            }
        },
    );
    a.add_all("s0", &ACCS[1..chains]);
    Ok(a.finish("s0"))
}
