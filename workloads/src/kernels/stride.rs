//! `stride`: loads at a fixed byte stride through an array, wrapping around
//! its end.
//!
//! Data: `stride_data` holds fill 0 (see [fills](super#fills)).
//!
//! Kernel: with `F` the footprint rounded down to a multiple of 8, load
//! number `i` reads the 8-byte word at offset `o_i`, where `o_0 = 0` and
//! `o_{i+1} = (o_i + stride) mod F` (computed without a branch). `loads` is
//! rounded down to a multiple of 4 (at least 4): the loop does four loads
//! per iteration. When `stride` divides `F` the same `F / stride` words are
//! revisited, the classic way to size a working set with a stride.
//!
//! Checksum: the sum of the words loaded (wrapping).

use crate::asm::{FillSource, emit, fill_words};
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, MAX_FOOTPRINT, require_multiple, start};
use crate::params::{ParamSpec, Params};

/// Loads per loop iteration.
pub(crate) const UNROLL: u64 = 4;

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "footprint",
            "bytes of the array the offsets wrap around (rounded down to a multiple of 8)",
            64,
            MAX_FOOTPRINT,
            64 << 10,
        ),
        ParamSpec::int(
            "stride",
            "bytes between consecutive loads, a multiple of 8 and less than the footprint",
            8,
            MAX_FOOTPRINT,
            64,
        ),
        ParamSpec::int(
            "loads",
            "loads (rounded down to a multiple of 4, at least 4)",
            1,
            MAX_COUNT,
            16_384,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint") / 8 * 8;
    let stride = require_multiple(p, "stride", 8)?;
    if stride >= footprint {
        return Err(p.constraint(
            "stride",
            format!("must be less than the footprint ({footprint} bytes), got {stride}"),
        ));
    }
    let iters = (p.uint("loads") / UNROLL).max(1);

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {footprint} bytes, {} loads in {iters} iterations",
        iters * UNROLL
    ));
    a.array("stride_data", footprint);
    a.comment("---- init ----");
    let mut fills = FillSource::new(p.uint("seed"));
    a.fill_dwords("stride_data", fill_words(footprint), fills.next_fill());

    a.measure_start();
    emit!(a, "la s0, stride_data");
    a.li("s1", footprint);
    a.li("s2", stride);
    a.li("s3", iters);
    emit!(a, "li a0, 0");
    emit!(a, "li a1, 0");
    let top = a.fresh("strided");
    a.label(&top);
    for u in 0..UNROLL {
        let t = ["t0", "t1", "t2", "t3"][u as usize];
        emit!(a, "add {t}, s0, a0");
        emit!(a, "ld {t}, 0({t})");
        emit!(a, "add a1, a1, {t}");
        // o = o + stride; if o >= F { o -= F } without a branch.
        emit!(a, "add a0, a0, s2");
        emit!(a, "sltu t4, a0, s1");
        emit!(a, "addi t4, t4, -1");
        emit!(a, "and t4, t4, s1");
        emit!(a, "sub a0, a0, t4");
    }
    emit!(a, "addi s3, s3, -1");
    emit!(a, "bnez s3, {top}");
    a.exit_with("a1");
    Ok(a.finish())
}
