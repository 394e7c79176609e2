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

use crate::asm::emit;
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, MAX_FOOTPRINT, footprint_spec, require_multiple, start};
use crate::params::{ParamSpec, Params};

/// Loads per loop iteration.
pub(crate) const UNROLL: u64 = 4;

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes of the array the offsets wrap around (rounded down to a multiple of 8)",
            64,
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
    a.filled_arrays(
        footprint,
        &["stride_data"],
        &["stride_data"],
        p.uint("seed"),
    );

    a.measure_start();
    emit!(a, "la s0, stride_data");
    a.li("s1", footprint);
    a.li("s2", stride);
    a.li("s3", iters);
    a.clear(&["a0", "a1"]);
    let top = a.fresh("strided");
    a.label(&top);
    for u in 0..UNROLL {
        let t = ["t0", "t1", "t2", "t3"][u as usize];
        emit!(a, "add {t}, s0, a0");
        emit!(a, "ld {t}, 0({t})");
        emit!(a, "add a1, a1, {t}");
        a.wrap_add("a0", "s2", "s1", "t4");
    }
    a.count_down("s3", &top);
    Ok(a.finish("a1"))
}
