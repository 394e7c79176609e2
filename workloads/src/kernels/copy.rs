//! `copy`: copies one array of 8-byte words into another, `passes` times.
//!
//! Data: `copy_src` holds fill 0 (see [fills](super#fills));
//! `copy_dst` starts zero.
//!
//! Kernel: `footprint / (8 * unroll)` iterations per pass; each copies
//! `unroll` words (`ld` then `sd`) and adds word `u` to accumulator `u % 4`,
//! one ALU add per word that makes the copied values part of the checksum.
//!
//! Checksum: the sum of all words copied over all passes, plus the first and
//! the last word read back from `copy_dst` after the last pass (wrapping).

use crate::asm::{FillSource, emit, fill_words};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, passes_spec, start};
use crate::params::{ParamSpec, Params};

const TEMPS: [&str; 8] = ["t0", "t1", "t2", "t3", "t4", "t5", "t6", "a3"];
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
        ParamSpec::int("unroll", "words copied per loop iteration", 1, 16, 4),
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
        "derived: {bytes} bytes per array ({} words), {iters} iterations per pass",
        bytes / 8
    ));
    a.array("copy_src", bytes);
    a.array("copy_dst", bytes);
    a.comment("---- init ----");
    let mut fills = FillSource::new(p.uint("seed"));
    a.fill_dwords("copy_src", fill_words(bytes), fills.next_fill());

    a.measure_start();
    for acc in ACCS {
        emit!(a, "li {acc}, 0");
    }
    a.li("s1", passes);
    let pass = a.fresh("pass");
    let body = a.fresh("body");
    a.label(&pass);
    emit!(a, "la a0, copy_src");
    emit!(a, "la a1, copy_dst");
    a.li("a2", bytes);
    emit!(a, "add a2, a0, a2");
    a.label(&body);
    for u in 0..unroll {
        let t = TEMPS[u as usize % TEMPS.len()];
        let acc = ACCS[u as usize % ACCS.len()];
        emit!(a, "ld {t}, {}(a0)", 8 * u);
        emit!(a, "sd {t}, {}(a1)", 8 * u);
        emit!(a, "add {acc}, {acc}, {t}");
    }
    emit!(a, "addi a0, a0, {step}");
    emit!(a, "addi a1, a1, {step}");
    emit!(a, "bltu a0, a2, {body}");
    emit!(a, "addi s1, s1, -1");
    emit!(a, "bnez s1, {pass}");
    emit!(a, "add s2, s2, s3");
    emit!(a, "add s4, s4, s5");
    emit!(a, "add s2, s2, s4");
    emit!(a, "la a1, copy_dst");
    emit!(a, "ld t0, 0(a1)");
    emit!(a, "add s2, s2, t0");
    a.li("t1", bytes - 8);
    emit!(a, "add t1, a1, t1");
    emit!(a, "ld t0, 0(t1)");
    emit!(a, "add s2, s2, t0");
    a.exit_with("s2");
    Ok(a.finish())
}
