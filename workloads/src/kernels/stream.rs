//! `stream`: a read-only reduction over an array, `passes` times.
//!
//! Data: the array `stream_data` is filled with the 8-byte words of fill 0
//! (see [fills](super#fills)); elements of `elem` bytes are
//! read from it as unsigned little-endian values.
//!
//! Kernel: `footprint / (elem * unroll)` iterations per pass; each loads
//! `unroll` consecutive elements and adds element `u` of the iteration to
//! accumulator `u % 4` (four independent add chains).
//!
//! Checksum: the sum of all elements read, over all passes (wrapping).

use crate::asm::{FillSource, emit, fill_words};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, elem_ops, elem_spec, passes_spec, start};
use crate::params::{ParamSpec, Params};

/// Load destinations, rotated.
const TEMPS: [&str; 8] = ["t0", "t1", "t2", "t3", "t4", "t5", "t6", "a2"];
/// Accumulators.
const ACCS: [&str; 4] = ["s2", "s3", "s4", "s5"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "footprint",
            "bytes read per pass (rounded down to whole unrolled iterations)",
            128,
            MAX_FOOTPRINT,
            32 << 10,
        ),
        elem_spec(),
        ParamSpec::int("unroll", "elements loaded per loop iteration", 1, 16, 4),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint");
    let (elem, load, _) = elem_ops(p);
    let unroll = p.uint("unroll");
    let passes = p.uint("passes");
    let step = elem * unroll;
    let iters = footprint / step;
    if iters == 0 {
        return Err(p.constraint(
            "footprint",
            format!("must be at least elem * unroll = {step} bytes, got {footprint}"),
        ));
    }
    let bytes = iters * step;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {bytes} bytes = {} elements of {elem} bytes, {iters} iterations per pass",
        bytes / elem
    ));
    a.array("stream_data", bytes);
    a.comment("---- init ----");
    let mut fills = FillSource::new(p.uint("seed"));
    a.fill_dwords("stream_data", fill_words(bytes), fills.next_fill());

    a.measure_start();
    for acc in ACCS {
        emit!(a, "li {acc}, 0");
    }
    a.li("s1", passes);
    let pass = a.fresh("pass");
    let body = a.fresh("body");
    a.label(&pass);
    emit!(a, "la a0, stream_data");
    a.li("a1", bytes);
    emit!(a, "add a1, a0, a1");
    a.label(&body);
    for u in 0..unroll {
        let t = TEMPS[u as usize % TEMPS.len()];
        let acc = ACCS[u as usize % ACCS.len()];
        emit!(a, "{load} {t}, {}(a0)", u * elem);
        emit!(a, "add {acc}, {acc}, {t}");
    }
    emit!(a, "addi a0, a0, {step}");
    emit!(a, "bltu a0, a1, {body}");
    emit!(a, "addi s1, s1, -1");
    emit!(a, "bnez s1, {pass}");
    emit!(a, "add s2, s2, s3");
    emit!(a, "add s4, s4, s5");
    emit!(a, "add s2, s2, s4");
    a.exit_with("s2");
    Ok(a.finish())
}
