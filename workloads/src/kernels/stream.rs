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

use crate::asm::emit;
use crate::error::WorkloadError;
use crate::kernels::streaming::{Sweep, Unrolled, acc, clear_accs, sum_accs, temp};
use crate::kernels::{elem_ops, elem_spec, footprint_spec, passes_spec, start, unroll_spec};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes read per pass (rounded down to whole unrolled iterations)",
            128,
            32 << 10,
        ),
        elem_spec(),
        unroll_spec("elements loaded per loop iteration", 16, 4),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let (elem, load, _) = elem_ops(p);
    let size = Unrolled::from_params(p, elem, "elem")?;
    let passes = p.uint("passes");
    let (iters, bytes) = (size.iters, size.bytes);

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {bytes} bytes = {} elements of {elem} bytes, {iters} iterations per pass",
        bytes / elem
    ));
    a.filled_arrays(bytes, &["stream_data"], &["stream_data"], p.uint("seed"));

    a.measure_start();
    clear_accs(&mut a);
    a.li("s1", passes);
    let sweep = Sweep {
        pointers: &[("a0", "stream_data")],
        lead: "a0",
        end: "a1",
        size,
    };
    sweep.emit(
        &mut a,
        |a, u| {
            let (t, acc) = (temp(u, "a2"), acc(u));
            emit!(a, "{load} {t}, {}(a0)", u * elem);
            emit!(a, "add {acc}, {acc}, {t}");
        },
        |_| {},
    );
    let sum = sum_accs(&mut a);
    Ok(a.finish(sum))
}
