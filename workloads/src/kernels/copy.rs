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

use crate::asm::emit;
use crate::error::WorkloadError;
use crate::kernels::streaming::{
    Sweep, Unrolled, acc, add_first_and_last, clear_accs, per_array_footprint_spec, sum_accs, temp,
};
use crate::kernels::{passes_spec, start, unroll_spec};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        per_array_footprint_spec(),
        unroll_spec("words copied per loop iteration", 16, 4),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let size = Unrolled::from_params(p, 8, "8")?;
    let passes = p.uint("passes");
    let bytes = size.bytes;

    let mut a = start(p, description);
    a.note(format_args!("derived: {}", size.words_per_array()));
    a.filled_arrays(
        bytes,
        &["copy_src", "copy_dst"],
        &["copy_src"],
        p.uint("seed"),
    );

    a.measure_start();
    clear_accs(&mut a);
    a.li("s1", passes);
    let sweep = Sweep {
        pointers: &[("a0", "copy_src"), ("a1", "copy_dst")],
        lead: "a0",
        end: "a2",
        size,
    };
    sweep.emit(
        &mut a,
        |a, u| {
            let (t, acc) = (temp(u, "a3"), acc(u));
            emit!(a, "ld {t}, {}(a0)", 8 * u);
            emit!(a, "sd {t}, {}(a1)", 8 * u);
            emit!(a, "add {acc}, {acc}, {t}");
        },
        |_| {},
    );
    let sum = sum_accs(&mut a);
    add_first_and_last(&mut a, sum, "copy_dst", "a1", bytes);
    Ok(a.finish(sum))
}
