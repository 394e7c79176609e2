//! What the streaming kernels (`stream`, `copy`, `triad`, `fill`, and the
//! accumulators of `gather`) share: the footprint rounded down to whole
//! unrolled iterations, the pass loop that walks one or more arrays side by
//! side, the four rotating accumulators `s2`..`s5` with their final sum, and
//! the read-back of an output array's first and last word.
//!
//! Register conventions: the pass loop counts passes down in `s1`, which the
//! kernel loads before emitting it; the accumulators are `s2`..`s5`; loop
//! pointers and temporaries are the kernel's choice.

use crate::asm::{Asm, emit};
use crate::error::WorkloadError;
use crate::kernels::footprint_spec;
use crate::params::{ParamSpec, Params};

/// The `footprint` of the kernels over arrays of 8-byte words (`copy`,
/// `triad`): bytes per array, 16 KiB by default.
pub(crate) fn per_array_footprint_spec() -> ParamSpec {
    footprint_spec(
        "bytes per array (rounded down to whole unrolled iterations)",
        128,
        16 << 10,
    )
}

/// The four accumulators, element `u` of an iteration going to `u % 4`
/// (four independent add chains).
const ACCS: [&str; 4] = ["s2", "s3", "s4", "s5"];

/// The accumulator of element `u` of an iteration.
pub(crate) fn acc(u: u64) -> &'static str {
    ACCS[u as usize % ACCS.len()]
}

/// `li acc, 0` for the four accumulators.
pub(crate) fn clear_accs(a: &mut Asm) {
    a.clear(&ACCS);
}

/// Adds the four accumulators pairwise into `s2` and returns `"s2"`.
pub(crate) fn sum_accs(a: &mut Asm) -> &'static str {
    emit!(a, "add s2, s2, s3");
    emit!(a, "add s4, s4, s5");
    emit!(a, "add s2, s2, s4");
    "s2"
}

/// The temporary of element `u` of an iteration: `t0`..`t6` then `spare`,
/// rotating every eight elements.
pub(crate) fn temp(u: u64, spare: &'static str) -> &'static str {
    const T: [&str; 7] = ["t0", "t1", "t2", "t3", "t4", "t5", "t6"];
    T.get(u as usize % 8).copied().unwrap_or(spare)
}

/// The `footprint` parameter rounded down to whole loop iterations of
/// `unroll` elements of `elem` bytes each.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Unrolled {
    /// Elements per iteration (the `unroll` parameter).
    pub unroll: u64,
    /// Bytes per iteration, `elem * unroll`.
    pub step: u64,
    /// Iterations per pass.
    pub iters: u64,
    /// Bytes walked per pass, `iters * step`.
    pub bytes: u64,
}

impl Unrolled {
    /// Reads `footprint` and `unroll`; refuses a footprint smaller than one
    /// iteration, naming the element size as `elem_name` in the message.
    pub(crate) fn from_params(
        p: &Params,
        elem: u64,
        elem_name: &str,
    ) -> Result<Unrolled, WorkloadError> {
        let footprint = p.uint("footprint");
        let unroll = p.uint("unroll");
        let step = elem * unroll;
        let iters = footprint / step;
        if iters == 0 {
            return Err(p.constraint(
                "footprint",
                format!("must be at least {elem_name} * unroll = {step} bytes, got {footprint}"),
            ));
        }
        Ok(Unrolled {
            unroll,
            step,
            iters,
            bytes: iters * step,
        })
    }

    /// `B bytes per array (W words), I iterations per pass`, for the
    /// header of a kernel over arrays of 8-byte words.
    pub(crate) fn words_per_array(&self) -> String {
        format!(
            "{} bytes per array ({} words), {} iterations per pass",
            self.bytes,
            self.bytes / 8,
            self.iters
        )
    }
}

/// A pass loop over arrays walked side by side, one unrolled iteration of
/// [`Unrolled::step`] bytes per array at a time, repeated while the pass
/// counter `s1` is not zero.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Sweep<'a> {
    /// `(pointer register, array label)`: each pointer is set to its array's
    /// start at every pass and advanced by the step at every iteration.
    pub pointers: &'a [(&'a str, &'a str)],
    /// The pointer compared with `end`.
    pub lead: &'a str,
    /// Register holding the end of the lead pointer's array.
    pub end: &'a str,
    /// The iteration shape.
    pub size: Unrolled,
}

impl Sweep<'_> {
    /// Emits the loop: `element(a, u)` writes element `u` of the unrolled
    /// body (addressed at `u * elem` from the pointers), `after_pass(a)`
    /// anything to do once per pass after the walk.
    pub(crate) fn emit(
        &self,
        a: &mut Asm,
        mut element: impl FnMut(&mut Asm, u64),
        after_pass: impl FnOnce(&mut Asm),
    ) {
        let pass = a.fresh("pass");
        let body = a.fresh("body");
        a.label(&pass);
        for (reg, label) in self.pointers {
            emit!(a, "la {reg}, {label}");
        }
        a.offset(self.end, self.lead, self.size.bytes);
        a.label(&body);
        for u in 0..self.size.unroll {
            element(a, u);
        }
        for (reg, _) in self.pointers {
            emit!(a, "addi {reg}, {reg}, {}", self.size.step);
        }
        emit!(a, "bltu {}, {}, {body}", self.lead, self.end);
        after_pass(a);
        a.count_down("s1", &pass);
    }
}

/// Adds the first and the last 8-byte word of the `bytes`-byte array at
/// `label` to `sum`, with `base` left pointing at the array (clobbers `t0`
/// and `t1`).
pub(crate) fn add_first_and_last(a: &mut Asm, sum: &str, label: &str, base: &str, bytes: u64) {
    emit!(a, "la {base}, {label}");
    emit!(a, "ld t0, 0({base})");
    emit!(a, "add {sum}, {sum}, t0");
    a.offset("t1", base, bytes - 8);
    emit!(a, "ld t0, 0(t1)");
    emit!(a, "add {sum}, {sum}, t0");
}
