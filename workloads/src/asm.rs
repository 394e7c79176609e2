//! A small writer for generated assembly: instructions, labels, comments, a
//! data section of zero-filled arrays, and the shared code snippets the
//! kernels use to build their data (fills, identity tables, shuffles, the
//! SplitMix64 step).
//!
//! Register conventions of the snippets: they may clobber every `t*` and `a*`
//! register; the in-program SplitMix64 keeps its state in `s8` and its
//! constants in `s9`..`s11`. Kernels keep long-lived init values in `s0`..`s7`.

use std::fmt::{self, Write as _};

use crate::rng::{GOLDEN, MIX1, MIX2, SplitMix64};

/// Emits one instruction line: `emit!(asm, "ld {p}, 0({p})")`.
macro_rules! emit {
    ($asm:expr, $($fmt:tt)*) => {
        $asm.ins(format_args!($($fmt)*))
    };
}
pub(crate) use emit;

/// Padding placed after every data array (three 64-byte lines), so that
/// arrays whose sizes are multiples of a page do not start in the same cache
/// set and equal indices into them do not conflict.
pub(crate) const ARRAY_PAD_BYTES: u64 = 192;

/// Alignment of every data array (a cache line under common practice).
pub(crate) const ARRAY_ALIGN_BYTES: u64 = 64;

/// An assembly program being written.
#[derive(Debug)]
pub(crate) struct Asm {
    header: String,
    text: String,
    data: String,
    next_label: u32,
}

impl Asm {
    /// A program whose header comment names the workload and its parameters.
    pub(crate) fn new(workload: &str, description: &str, summary: &str) -> Asm {
        let mut header = String::new();
        let _ = writeln!(header, "# overlap workload `{workload}`: {description}");
        let _ = writeln!(header, "# parameters: {summary}");
        Asm {
            header,
            text: String::new(),
            data: String::new(),
            next_label: 0,
        }
    }

    /// Adds a line to the header comment (derived sizes, data layout).
    pub(crate) fn note(&mut self, args: fmt::Arguments<'_>) {
        let _ = writeln!(self.header, "# {args}");
    }

    /// One instruction (indented).
    pub(crate) fn ins(&mut self, args: fmt::Arguments<'_>) {
        let _ = writeln!(self.text, "    {args}");
    }

    /// A comment line in the text.
    pub(crate) fn comment(&mut self, text: &str) {
        let _ = writeln!(self.text, "    # {text}");
    }

    /// A label definition.
    pub(crate) fn label(&mut self, name: &str) {
        let _ = writeln!(self.text, "{name}:");
    }

    /// A label name not used before: `stem_N`.
    pub(crate) fn fresh(&mut self, stem: &str) -> String {
        self.next_label += 1;
        format!("{stem}_{}", self.next_label)
    }

    /// `li reg, value`, written in hex for large values so constants are
    /// recognisable in the listing.
    pub(crate) fn li(&mut self, reg: &str, value: u64) {
        if value < 1 << 16 {
            emit!(self, "li {reg}, {value}");
        } else if (value as i64) < 0 && (value as i64) > -(1 << 16) {
            emit!(self, "li {reg}, {}", value as i64);
        } else {
            emit!(self, "li {reg}, {value:#x}");
        }
    }

    /// The `measure_start` marker: the kernel begins here.
    pub(crate) fn measure_start(&mut self) {
        self.comment("---- kernel ----");
        self.label("measure_start");
    }

    /// Exit with the value of `reg` as the exit code (ECALL 93).
    pub(crate) fn exit_with(&mut self, reg: &str) {
        if reg != "a0" {
            emit!(self, "mv a0, {reg}");
        }
        emit!(self, "li a7, 93");
        emit!(self, "ecall");
    }

    /// Declares a zero-filled, line-aligned array of `bytes` bytes (rounded
    /// up to whole lines) followed by [`ARRAY_PAD_BYTES`] of padding.
    /// Returns the reserved size.
    pub(crate) fn array(&mut self, label: &str, bytes: u64) -> u64 {
        let reserved = bytes.div_ceil(ARRAY_ALIGN_BYTES).max(1) * ARRAY_ALIGN_BYTES;
        let _ = writeln!(self.data, "    .balign {ARRAY_ALIGN_BYTES}");
        let _ = writeln!(self.data, "{label}:");
        let _ = writeln!(self.data, "    .zero {reserved}");
        let _ = writeln!(self.data, "    .zero {ARRAY_PAD_BYTES}");
        reserved
    }

    /// The complete source text.
    pub(crate) fn finish(self) -> String {
        let mut out = self.header;
        out.push_str("\n    .text\n_start:\n");
        out.push_str(&self.text);
        if !self.data.is_empty() {
            out.push_str("\n    .data\n");
            out.push_str(&self.data);
        }
        out
    }

    /// Loads the in-program SplitMix64: state `s8 = seed`, constants in `s9`..`s11`.
    pub(crate) fn splitmix_setup(&mut self, seed: u64) {
        self.comment("in-program SplitMix64: state s8 = seed, constants in s9..s11");
        self.li("s8", seed);
        self.li("s9", GOLDEN);
        self.li("s10", MIX1);
        self.li("s11", MIX2);
    }

    /// One SplitMix64 step: advances `s8` and leaves the output in `out`
    /// (clobbers `tmp`). Nine instructions.
    pub(crate) fn splitmix_step(&mut self, out: &str, tmp: &str) {
        emit!(self, "add s8, s8, s9");
        emit!(self, "srli {tmp}, s8, 30");
        emit!(self, "xor {out}, s8, {tmp}");
        emit!(self, "mul {out}, {out}, s10");
        emit!(self, "srli {tmp}, {out}, 27");
        emit!(self, "xor {out}, {out}, {tmp}");
        emit!(self, "mul {out}, {out}, s11");
        emit!(self, "srli {tmp}, {out}, 31");
        emit!(self, "xor {out}, {out}, {tmp}");
    }

    /// Fills `dwords` 8-byte words at `label` with the arithmetic sequence
    /// `start + i * step` (wrapping). `dwords` must be a multiple of 8: the
    /// loop stores eight words per iteration (2.25 instructions per word).
    pub(crate) fn fill_dwords(&mut self, label: &str, dwords: u64, fill: Fill) {
        assert!(dwords > 0 && dwords % 8 == 0, "fill of {dwords} words");
        let top = self.fresh("fill");
        self.comment(&format!(
            "fill {label}[0..{dwords}] = {:#x} + i * {:#x}",
            fill.start, fill.step
        ));
        emit!(self, "la t0, {label}");
        self.li("t1", dwords * 8);
        emit!(self, "add t1, t0, t1");
        self.li("t2", fill.start);
        self.li("t3", fill.step);
        self.label(&top);
        for i in 0..8 {
            emit!(self, "sd t2, {}(t0)", i * 8);
            emit!(self, "add t2, t2, t3");
        }
        emit!(self, "addi t0, t0, 64");
        emit!(self, "bltu t0, t1, {top}");
    }

    /// Writes word 0 of each of `count` records of `spacing` bytes at `label`
    /// with fill word `r` for record `r` (a sparse fill: one store per record,
    /// four instructions each).
    pub(crate) fn sparse_fill(&mut self, label: &str, count: u64, spacing: u64, fill: Fill) {
        assert!(count > 0);
        let top = self.fresh("sparse_fill");
        self.comment(&format!(
            "{label}: word 0 of record r (every {spacing} bytes) = {:#x} + r * {:#x}, r < {count}",
            fill.start, fill.step
        ));
        emit!(self, "la t0, {label}");
        self.li("t1", count * spacing);
        emit!(self, "add t1, t0, t1");
        self.li("t2", fill.start);
        self.li("t3", fill.step);
        self.li("t4", spacing);
        self.label(&top);
        emit!(self, "sd t2, 0(t0)");
        emit!(self, "add t2, t2, t3");
        emit!(self, "add t0, t0, t4");
        emit!(self, "bltu t0, t1, {top}");
    }

    /// Writes `table[i] = i` for `n` 32-bit entries at `label`.
    pub(crate) fn identity_u32(&mut self, label: &str, n: u64) {
        assert!(n > 0);
        let top = self.fresh("ident");
        self.comment(&format!("{label}[i] = i for i in 0..{n}"));
        emit!(self, "la t0, {label}");
        emit!(self, "li t1, 0");
        self.li("t2", n);
        self.label(&top);
        emit!(self, "sw t1, 0(t0)");
        emit!(self, "addi t1, t1, 1");
        emit!(self, "addi t0, t0, 4");
        emit!(self, "bltu t1, t2, {top}");
    }

    /// Shuffles the `n` 32-bit entries at `label` with the Fisher-Yates
    /// algorithm (Durstenfeld's in-place form) driven by the in-program
    /// SplitMix64 (set up by [`Asm::splitmix_setup`] first): for `i` from
    /// `n-1` down to 1, `j = mulhu(next(), i + 1)` (Lemire's multiply-shift
    /// range reduction), then swap entries `i` and `j`.
    pub(crate) fn shuffle_u32(&mut self, label: &str, n: u64) {
        assert!(n >= 2);
        let top = self.fresh("shuffle");
        self.comment(&format!("Fisher-Yates shuffle of {label}[0..{n}]"));
        emit!(self, "la t0, {label}");
        self.li("t1", n - 1);
        self.label(&top);
        self.splitmix_step("a0", "a1");
        emit!(self, "addi a1, t1, 1");
        emit!(self, "mulhu a1, a0, a1");
        emit!(self, "slli t2, t1, 2");
        emit!(self, "add t2, t0, t2");
        emit!(self, "slli a1, a1, 2");
        emit!(self, "add a1, t0, a1");
        emit!(self, "lwu t3, 0(t2)");
        emit!(self, "lwu t4, 0(a1)");
        emit!(self, "sw t4, 0(t2)");
        emit!(self, "sw t3, 0(a1)");
        emit!(self, "addi t1, t1, -1");
        emit!(self, "bnez t1, {top}");
    }
}

/// An arithmetic fill sequence: word `i` holds `start + i * step`.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Fill {
    /// Value of word 0.
    pub start: u64,
    /// Difference between consecutive words (odd).
    pub step: u64,
}

/// The generator of fill sequences for a seed: SplitMix64 with state
/// `!seed`; each [`FillSource::next_fill`] takes two outputs (start, then
/// step with its low bit set).
#[derive(Clone, Debug)]
pub(crate) struct FillSource {
    rng: SplitMix64,
}

impl FillSource {
    /// The fill source for `seed`.
    pub(crate) fn new(seed: u64) -> FillSource {
        FillSource {
            rng: SplitMix64::new(!seed),
        }
    }

    /// The next array's fill sequence.
    pub(crate) fn next_fill(&mut self) -> Fill {
        let start = self.rng.next_u64();
        let step = self.rng.next_u64() | 1;
        Fill { start, step }
    }

    /// The next raw output, for other seed-derived constants.
    pub(crate) fn next_u64(&mut self) -> u64 {
        self.rng.next_u64()
    }
}

/// Number of 8-byte words to fill to cover `bytes` bytes, rounded up to a
/// multiple of 8 words (what [`Asm::fill_dwords`] needs; [`Asm::array`]
/// reserves whole 64-byte lines, so the rounding stays inside the array).
pub(crate) fn fill_words(bytes: u64) -> u64 {
    bytes.div_ceil(64).max(1) * 8
}
