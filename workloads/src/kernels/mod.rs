//! The kernels, one module each. A module's documentation says exactly what
//! data its program builds, what the kernel loop does and what the exit
//! checksum is, so a result can be recomputed independently (the crate's
//! tests do so in plain Rust).
//!
//! # Data conventions
//!
//! ## Fills
//!
//! A *fill* is an arithmetic sequence of 8-byte words: word `i` holds
//! `start + i * step` (wrapping). The fills of a workload come from a
//! SplitMix64 generator run when the source is generated, with state
//! `!seed` (bitwise not): fill 0 takes its first two outputs as `start` and
//! `step | 1`, fill 1 the next two, and so on. Kernels that need other
//! constants take raw outputs of the same generator, in the order their
//! documentation gives. The fill loop stores eight words per iteration and
//! covers whole 64-byte lines of its array. A *sparse fill* writes fill word
//! `r` to word 0 of each record `r` of a strided region and nothing else.
//!
//! ## In-program randomness
//!
//! Random choices (permutations, indices, keys) are made by the program
//! itself, running SplitMix64 with state `seed` (the first output is the
//! SplitMix64 mix of `seed + 0x9e3779b97f4a7c15`). A number below `n` is
//! taken from an output `x` as `mulhu(x, n)` (Lemire's multiply-shift). A
//! *shuffle* of an `n`-entry table is Durstenfeld's Fisher-Yates: for `i`
//! from `n - 1` down to 1, `j = mulhu(next(), i + 1)`, swap entries `i` and `j`.
//!
//! ## Layout
//!
//! Arrays live in `.data` under the labels the kernel names, each aligned to
//! 64 bytes, reserved in whole 64-byte lines and followed by 192 bytes of
//! padding, so arrays whose sizes are multiples of a page do not start in the
//! same cache set. The init phase writes them; untouched bytes read as zero.

pub mod alu;
pub mod branchy;
pub mod chase;
pub mod copy;
pub mod divchain;
pub mod fill;
pub mod gather;
pub mod hashprobe;
pub mod hitmiss;
pub mod listwalk;
pub mod matmul;
pub mod stencil;
pub mod stream;
mod streaming;
pub mod stride;
pub mod triad;

use crate::asm::Asm;
use crate::params::{ParamSpec, Params};

/// Largest footprint any workload accepts, and the most bytes one array
/// may take: 256 MiB.
pub(crate) const MAX_FOOTPRINT: i64 = 256 << 20;

/// Largest repetition count (hops, loads, probes, ...) any workload accepts.
pub(crate) const MAX_COUNT: i64 = 1 << 30;

/// Largest number of passes over the data.
pub(crate) const MAX_PASSES: i64 = 1 << 20;

/// A `footprint` parameter: bytes of data, from `min` to [`MAX_FOOTPRINT`].
pub(crate) fn footprint_spec(description: &'static str, min: i64, default: i64) -> ParamSpec {
    ParamSpec::int("footprint", description, min, MAX_FOOTPRINT, default)
}

/// An `unroll` parameter: work items per loop iteration, 1 to `max`.
pub(crate) fn unroll_spec(description: &'static str, max: i64, default: i64) -> ParamSpec {
    ParamSpec::int("unroll", description, 1, max, default)
}

/// The node orders of the linked kernels (`chase`, `listwalk`).
const LAYOUT_CHOICES: &[&str] = &["random", "stride"];

/// A `layout` parameter: a random permutation of the nodes (the default),
/// or consecutive nodes.
pub(crate) fn layout_spec(description: &'static str) -> ParamSpec {
    ParamSpec::choice("layout", description, LAYOUT_CHOICES, "random")
}

/// Whether the `layout` parameter asks for a random node order.
pub(crate) fn random_layout(p: &Params) -> bool {
    p.choice("layout") == "random"
}

/// A `passes` parameter.
pub(crate) fn passes_spec(default: i64) -> ParamSpec {
    ParamSpec::int("passes", "passes over the data", 1, MAX_PASSES, default)
}

/// The element-size choice shared by `stream` and `fill`.
pub(crate) const ELEM_CHOICES: &[&str] = &["1", "2", "4", "8"];

/// An `elem` parameter: access size in bytes.
pub(crate) fn elem_spec() -> ParamSpec {
    ParamSpec::choice("elem", "access size in bytes", ELEM_CHOICES, "8")
}

/// The value of an `elem` parameter and its unsigned load and store mnemonics.
pub(crate) fn elem_ops(p: &Params) -> (u64, &'static str, &'static str) {
    match p.choice("elem") {
        "1" => (1, "lbu", "sb"),
        "2" => (2, "lhu", "sh"),
        "4" => (4, "lwu", "sw"),
        _ => (8, "ld", "sd"),
    }
}

/// The loop of the register-chain kernels (`alu`, `divchain`): `iters`
/// iterations, counted down in `counter`, of `rounds` rounds each; a round
/// runs `step(a, round, reg)` once per chain register, in chain order. The
/// loop's label is a fresh one named after `stem`.
pub(crate) fn chain_rounds(
    a: &mut Asm,
    counter: &str,
    stem: &str,
    iters: u64,
    rounds: u64,
    chains: &[&str],
    mut step: impl FnMut(&mut Asm, u64, &str),
) {
    a.li(counter, iters);
    let top = a.fresh(stem);
    a.label(&top);
    for round in 0..rounds {
        for reg in chains {
            step(a, round, reg);
        }
    }
    a.count_down(counter, &top);
}

/// A new program for the workload of `p`, with the parameter summary in
/// its header.
pub(crate) fn start(p: &Params, description: &str) -> Asm {
    Asm::new(p.workload(), description, &p.summary())
}

/// Checks that `value` is a multiple of `of`, naming `param` otherwise.
pub(crate) fn require_multiple(
    p: &Params,
    param: &str,
    of: u64,
) -> Result<u64, crate::WorkloadError> {
    let value = p.uint(param);
    if value % of != 0 {
        return Err(p.constraint(param, format!("must be a multiple of {of}, got {value}")));
    }
    Ok(value)
}
