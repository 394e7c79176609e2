//! `gather`: sums table entries picked through an index array; every table
//! load is independent of the others, so misses can overlap freely.
//!
//! Data: `gather_table` holds `footprint / 8` words of fill 0 (see
//! [fills](super#fills)); `gather_idx` holds `count` 32-bit
//! indices, index `i` being `mulhu(x_i, n)` for the `i`-th output `x_i` of the
//! in-program SplitMix64 with state `seed` (uniform over the table).
//!
//! Kernel: `count / unroll` iterations (count rounded down to a multiple of
//! `unroll`, at least one iteration); each loads `unroll` indices
//! (sequential, `lwu`), scales them, loads the table words and adds them to
//! accumulator `u % 4`.
//!
//! Checksum: the sum of the gathered words (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::streaming::{acc, clear_accs, sum_accs, temp};
use crate::kernels::{footprint_spec, start, unroll_spec};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes of the table gathered from (rounded down to 8-byte words)",
            64,
            64 << 10,
        ),
        ParamSpec::int(
            "count",
            "gathers (rounded down to a multiple of unroll, at least unroll)",
            1,
            1 << 26,
            4096,
        ),
        unroll_spec("gathers per loop iteration", 8, 4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let words = p.uint("footprint") / 8;
    let unroll = p.uint("unroll");
    let iters = (p.uint("count") / unroll).max(1);
    let count = iters * unroll;
    let seed = p.uint("seed");

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: table of {words} words ({} bytes), {count} gathers in {iters} iterations",
        words * 8
    ));
    a.array("gather_table", words * 8);
    a.array("gather_idx", count * 4);

    a.comment("---- init: table fill, then random indices ----");
    let mut fills = FillSource::new(seed);
    a.fill_array("gather_table", words * 8, fills.next_fill());
    a.splitmix_setup(seed);
    let gen_top = a.fresh("index");
    a.span("t0", "t1", "gather_idx", count * 4);
    a.li("t2", words);
    a.label(&gen_top);
    a.splitmix_step("a0", "a1");
    emit!(a, "mulhu a0, a0, t2");
    emit!(a, "sw a0, 0(t0)");
    emit!(a, "addi t0, t0, 4");
    emit!(a, "bltu t0, t1, {gen_top}");

    a.measure_start();
    clear_accs(&mut a);
    emit!(a, "la s0, gather_table");
    a.span("a0", "a1", "gather_idx", count * 4);
    let body = a.fresh("gather");
    a.label(&body);
    for u in 0..unroll {
        let (t, acc) = (temp(u, "a2"), acc(u));
        emit!(a, "lwu {t}, {}(a0)", 4 * u);
        emit!(a, "slli {t}, {t}, 3");
        emit!(a, "add {t}, s0, {t}");
        emit!(a, "ld {t}, 0({t})");
        emit!(a, "add {acc}, {acc}, {t}");
    }
    emit!(a, "addi a0, a0, {}", 4 * unroll);
    emit!(a, "bltu a0, a1, {body}");
    let sum = sum_accs(&mut a);
    Ok(a.finish(sum))
}
