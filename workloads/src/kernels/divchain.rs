//! `divchain`: chains of dependent unsigned divides, the longest and
//! usually unpipelined integer latency.
//!
//! Data: registers only. From the fill source (see
//! [fills](super#fills)) come, in order: the dividend
//! `N = x | 2^62`, then each chain's start `d_c = (x >> 32) | 1`.
//!
//! Kernel: `divs / (4 * chains)` iterations (at least one); each runs 4
//! rounds, and each round, for every chain in order, `d = N / d + 3` (`divu`
//! then `addi`), so each divide waits for the previous one of its chain.
//!
//! Checksum: the sum of the chains' final values (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, chain_rounds, start};
use crate::params::{ParamSpec, Params};

/// Rounds per loop iteration.
pub(crate) const ROUNDS: u64 = 4;

const CHAINS: [&str; 4] = ["a0", "a1", "a2", "a3"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int("chains", "independent divide chains", 1, 4, 1),
        ParamSpec::int(
            "divs",
            "divides in all (rounded down to whole iterations of 4 * chains)",
            1,
            MAX_COUNT,
            4000,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let chains = p.uint("chains") as usize;
    let iters = (p.uint("divs") / (ROUNDS * chains as u64)).max(1);
    let mut fills = FillSource::new(p.uint("seed"));
    let dividend = fills.next_u64() | 1 << 62;
    let starts: Vec<u64> = (0..chains).map(|_| (fills.next_u64() >> 32) | 1).collect();

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {iters} iterations of {} divides, dividend {dividend:#x}",
        ROUNDS * chains as u64
    ));
    a.comment("---- init: dividend and chain starts ----");
    a.li("s0", dividend);
    for (reg, v) in CHAINS.iter().zip(&starts) {
        a.li(reg, *v);
    }
    a.measure_start();
    chain_rounds(
        &mut a,
        "s1",
        "divide",
        iters,
        ROUNDS,
        &CHAINS[..chains],
        |a, _, reg| {
            emit!(a, "divu {reg}, s0, {reg}");
            emit!(a, "addi {reg}, {reg}, 3");
        },
    );
    a.add_all("a0", &CHAINS[1..chains]);
    Ok(a.finish("a0"))
}
