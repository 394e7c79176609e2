//! `fill`: store-only fill of a buffer, `passes` times; every first-pass
//! store goes to a line never touched before (write-allocate), and the
//! stores leave the store queue as fast as the cache takes them.
//!
//! Data: none; `fill_buf` starts zero and untouched (there is no init phase).
//!
//! Kernel: `footprint / (elem * unroll)` iterations per pass, each storing
//! `unroll` elements of `elem` bytes. Pass `q` stores the low `elem` bytes of
//! `v_q = start + q * step` everywhere, with (start, step) fill 0 (see
//! [fills](super#fills)).
//!
//! Checksum: the first and the last element read back (unsigned) after the
//! last pass, plus the number of stores (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, elem_ops, elem_spec, passes_spec, start};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "footprint",
            "bytes stored per pass (rounded down to whole unrolled iterations)",
            128,
            MAX_FOOTPRINT,
            32 << 10,
        ),
        elem_spec(),
        ParamSpec::int("unroll", "stores per loop iteration", 1, 16, 4),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint");
    let (elem, load, store) = elem_ops(p);
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
    let stores = iters * unroll * passes;
    let fill = FillSource::new(p.uint("seed")).next_fill();

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {bytes} bytes = {} elements of {elem} bytes per pass, {stores} stores in all",
        bytes / elem
    ));
    a.array("fill_buf", bytes);

    a.measure_start();
    a.li("s1", passes);
    a.li("s2", fill.start);
    a.li("s3", fill.step);
    let pass = a.fresh("pass");
    let body = a.fresh("body");
    a.label(&pass);
    emit!(a, "la a0, fill_buf");
    a.li("a1", bytes);
    emit!(a, "add a1, a0, a1");
    a.label(&body);
    for u in 0..unroll {
        emit!(a, "{store} s2, {}(a0)", u * elem);
    }
    emit!(a, "addi a0, a0, {step}");
    emit!(a, "bltu a0, a1, {body}");
    emit!(a, "add s2, s2, s3");
    emit!(a, "addi s1, s1, -1");
    emit!(a, "bnez s1, {pass}");
    emit!(a, "la a0, fill_buf");
    emit!(a, "{load} t0, 0(a0)");
    a.li("t1", bytes - elem);
    emit!(a, "add t1, a0, t1");
    emit!(a, "{load} t1, 0(t1)");
    emit!(a, "add t0, t0, t1");
    a.li("t2", stores);
    emit!(a, "add t0, t0, t2");
    a.exit_with("t0");
    Ok(a.finish())
}
