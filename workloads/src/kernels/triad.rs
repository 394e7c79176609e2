//! `triad`: `a[i] = b[i] + 3 * c[i]` over arrays of 8-byte words, `passes`
//! times.
//!
//! Data: `triad_b` holds fill 0 and `triad_c` fill 1 (see
//! [fills](super#fills)); `triad_a` starts zero.
//!
//! Kernel: `footprint / (8 * unroll)` iterations per pass; each computes
//! `unroll` elements (`ld b`, `ld c`, `mul`, `add`, `sd a`) and adds element
//! `u`'s result to accumulator `u % 4`.
//!
//! Checksum: the sum of every `a[i]` written over all passes, plus `a[0]`
//! and the last `a[i]` read back after the last pass (wrapping).

use crate::asm::{FillSource, emit, fill_words};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, passes_spec, start};
use crate::params::{ParamSpec, Params};

/// The scalar multiplier `s`.
pub(crate) const SCALAR: u64 = 3;

/// Pairs of temporaries (loaded `b`, loaded `c`).
const PAIRS: [(&str, &str); 8] = [
    ("t0", "t1"),
    ("t2", "t3"),
    ("t4", "t5"),
    ("t6", "a4"),
    ("a5", "a6"),
    ("a7", "s7"),
    ("s8", "s9"),
    ("s10", "s11"),
];
const ACCS: [&str; 4] = ["s2", "s3", "s4", "s5"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "footprint",
            "bytes per array (rounded down to whole unrolled iterations)",
            128,
            MAX_FOOTPRINT,
            16 << 10,
        ),
        ParamSpec::int("unroll", "elements computed per loop iteration", 1, 8, 2),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint");
    let unroll = p.uint("unroll");
    let passes = p.uint("passes");
    let step = 8 * unroll;
    let iters = footprint / step;
    if iters == 0 {
        return Err(p.constraint(
            "footprint",
            format!("must be at least 8 * unroll = {step} bytes, got {footprint}"),
        ));
    }
    let bytes = iters * step;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {bytes} bytes per array ({} words), {iters} iterations per pass, s = {SCALAR}",
        bytes / 8
    ));
    a.array("triad_a", bytes);
    a.array("triad_b", bytes);
    a.array("triad_c", bytes);
    a.comment("---- init ----");
    let mut fills = FillSource::new(p.uint("seed"));
    a.fill_dwords("triad_b", fill_words(bytes), fills.next_fill());
    a.fill_dwords("triad_c", fill_words(bytes), fills.next_fill());

    a.measure_start();
    for acc in ACCS {
        emit!(a, "li {acc}, 0");
    }
    a.li("s6", SCALAR);
    a.li("s1", passes);
    let pass = a.fresh("pass");
    let body = a.fresh("body");
    a.label(&pass);
    emit!(a, "la a0, triad_a");
    emit!(a, "la a1, triad_b");
    emit!(a, "la a2, triad_c");
    a.li("a3", bytes);
    emit!(a, "add a3, a1, a3");
    a.label(&body);
    for u in 0..unroll {
        let (tb, tc) = PAIRS[u as usize];
        let acc = ACCS[u as usize % ACCS.len()];
        let off = 8 * u;
        emit!(a, "ld {tb}, {off}(a1)");
        emit!(a, "ld {tc}, {off}(a2)");
        emit!(a, "mul {tc}, {tc}, s6");
        emit!(a, "add {tb}, {tb}, {tc}");
        emit!(a, "sd {tb}, {off}(a0)");
        emit!(a, "add {acc}, {acc}, {tb}");
    }
    emit!(a, "addi a0, a0, {step}");
    emit!(a, "addi a1, a1, {step}");
    emit!(a, "addi a2, a2, {step}");
    emit!(a, "bltu a1, a3, {body}");
    emit!(a, "addi s1, s1, -1");
    emit!(a, "bnez s1, {pass}");
    emit!(a, "add s2, s2, s3");
    emit!(a, "add s4, s4, s5");
    emit!(a, "add s2, s2, s4");
    emit!(a, "la a0, triad_a");
    emit!(a, "ld t0, 0(a0)");
    emit!(a, "add s2, s2, t0");
    a.li("t1", bytes - 8);
    emit!(a, "add t1, a0, t1");
    emit!(a, "ld t0, 0(t1)");
    emit!(a, "add s2, s2, t0");
    a.exit_with("s2");
    Ok(a.finish())
}
