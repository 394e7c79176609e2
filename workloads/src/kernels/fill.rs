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
use crate::kernels::streaming::{Sweep, Unrolled};
use crate::kernels::{elem_ops, elem_spec, footprint_spec, passes_spec, start, unroll_spec};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes stored per pass (rounded down to whole unrolled iterations)",
            128,
            32 << 10,
        ),
        elem_spec(),
        unroll_spec("stores per loop iteration", 16, 4),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let (elem, load, store) = elem_ops(p);
    let size = Unrolled::from_params(p, elem, "elem")?;
    let passes = p.uint("passes");
    let bytes = size.bytes;
    let stores = size.iters * size.unroll * passes;
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
    let sweep = Sweep {
        pointers: &[("a0", "fill_buf")],
        lead: "a0",
        end: "a1",
        size,
    };
    sweep.emit(
        &mut a,
        |a, u| emit!(a, "{store} s2, {}(a0)", u * elem),
        |a| emit!(a, "add s2, s2, s3"),
    );
    emit!(a, "la a0, fill_buf");
    emit!(a, "{load} t0, 0(a0)");
    a.offset("t1", "a0", bytes - elem);
    emit!(a, "{load} t1, 0(t1)");
    emit!(a, "add t0, t0, t1");
    a.li("t2", stores);
    emit!(a, "add t0, t0, t2");
    Ok(a.finish("t0"))
}
