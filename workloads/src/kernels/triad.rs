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

use crate::asm::emit;
use crate::error::WorkloadError;
use crate::kernels::streaming::{
    Sweep, Unrolled, acc, add_first_and_last, clear_accs, per_array_footprint_spec, sum_accs,
};
use crate::kernels::{passes_spec, start, unroll_spec};
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

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        per_array_footprint_spec(),
        unroll_spec("elements computed per loop iteration", 8, 2),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let size = Unrolled::from_params(p, 8, "8")?;
    let passes = p.uint("passes");
    let bytes = size.bytes;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {}, s = {SCALAR}",
        size.words_per_array()
    ));
    let arrays = ["triad_a", "triad_b", "triad_c"];
    a.filled_arrays(bytes, &arrays, &arrays[1..], p.uint("seed"));

    a.measure_start();
    clear_accs(&mut a);
    a.li("s6", SCALAR);
    a.li("s1", passes);
    let sweep = Sweep {
        pointers: &[("a0", "triad_a"), ("a1", "triad_b"), ("a2", "triad_c")],
        lead: "a1",
        end: "a3",
        size,
    };
    sweep.emit(
        &mut a,
        |a, u| {
            let ((tb, tc), acc) = (PAIRS[u as usize], acc(u));
            let off = 8 * u;
            emit!(a, "ld {tb}, {off}(a1)");
            emit!(a, "ld {tc}, {off}(a2)");
            emit!(a, "mul {tc}, {tc}, s6");
            emit!(a, "add {tb}, {tb}, {tc}");
            emit!(a, "sd {tb}, {off}(a0)");
            emit!(a, "add {acc}, {acc}, {tb}");
        },
        |_| {},
    );
    let sum = sum_accs(&mut a);
    add_first_and_last(&mut a, sum, "triad_a", "a0", bytes);
    Ok(a.finish(sum))
}
