//! A small writer for generated assembly: instructions, labels, comments, a
//! data section of zero-filled arrays, the short idioms every kernel loop
//! uses (count-down loops, address spans, wrapping offsets, register sums),
//! and the shared code snippets the kernels use to build their data (fills,
//! identity tables, shuffles, linked node orders, the SplitMix64 step).
//!
//! Register conventions of the data snippets: they may clobber every `t*`
//! and `a*` register; the in-program SplitMix64 keeps its state in `s8` and
//! its constants in `s9`..`s11`. Kernels keep long-lived init values in
//! `s0`..`s7`. The idioms touch only the registers they are given.

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

    /// `li reg, 0` for each of `regs`, in order.
    pub(crate) fn clear(&mut self, regs: &[&str]) {
        for reg in regs {
            emit!(self, "li {reg}, 0");
        }
    }

    /// `add dst, dst, r` for each `r` of `regs`, in order.
    pub(crate) fn add_all(&mut self, dst: &str, regs: &[&str]) {
        for reg in regs {
            emit!(self, "add {dst}, {dst}, {reg}");
        }
    }

    /// The bottom of a counted loop: decrements `counter` and branches back
    /// to `top` while it is not zero.
    pub(crate) fn count_down(&mut self, counter: &str, top: &str) {
        emit!(self, "addi {counter}, {counter}, -1");
        emit!(self, "bnez {counter}, {top}");
    }

    /// `dst = base + bytes` for a constant of any size (`li` then `add`).
    pub(crate) fn offset(&mut self, dst: &str, base: &str, bytes: u64) {
        debug_assert_ne!(dst, base, "offset would overwrite its base");
        self.li(dst, bytes);
        emit!(self, "add {dst}, {base}, {dst}");
    }

    /// `ptr = &label`, `end = ptr + bytes`: the bounds of a walk over the
    /// first `bytes` bytes of an array.
    pub(crate) fn span(&mut self, ptr: &str, end: &str, label: &str, bytes: u64) {
        emit!(self, "la {ptr}, {label}");
        self.offset(end, ptr, bytes);
    }

    /// `off = (off + step) mod limit` without a branch, for `off < limit`
    /// and `step < limit` (clobbers `tmp`): add, then subtract `limit` when
    /// the sum reached it.
    pub(crate) fn wrap_add(&mut self, off: &str, step: &str, limit: &str, tmp: &str) {
        emit!(self, "add {off}, {off}, {step}");
        emit!(self, "sltu {tmp}, {off}, {limit}");
        emit!(self, "addi {tmp}, {tmp}, -1");
        emit!(self, "and {tmp}, {tmp}, {limit}");
        emit!(self, "sub {off}, {off}, {tmp}");
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

    /// Declares the arrays `names`, `bytes` bytes each, and starts the init
    /// phase by filling the arrays of `filled` (in that order) with the
    /// successive fills of `seed`'s [`FillSource`]; the others start zero.
    pub(crate) fn filled_arrays(&mut self, bytes: u64, names: &[&str], filled: &[&str], seed: u64) {
        for name in names {
            self.array(name, bytes);
        }
        self.comment("---- init ----");
        let mut fills = FillSource::new(seed);
        for name in filled {
            debug_assert!(names.contains(name), "{name} is not declared");
            self.fill_array(name, bytes, fills.next_fill());
        }
    }

    /// Exits with the value of `checksum` as the exit code (ECALL 93) and
    /// returns the complete source text.
    pub(crate) fn finish(mut self, checksum: &str) -> String {
        if checksum != "a0" {
            emit!(self, "mv a0, {checksum}");
        }
        emit!(self, "li a7, 93");
        emit!(self, "ecall");
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

    /// Fills the array at `label` with the arithmetic sequence of 8-byte
    /// words `start + i * step` (wrapping), covering its first `bytes` bytes
    /// rounded up to whole 64-byte lines ([`Asm::array`] reserves whole
    /// lines, so the rounding stays inside the array). The loop stores eight
    /// words per iteration (2.25 instructions per word).
    pub(crate) fn fill_array(&mut self, label: &str, bytes: u64, fill: Fill) {
        let dwords = bytes.div_ceil(64).max(1) * 8;
        let top = self.fresh("fill");
        self.comment(&format!(
            "fill {label}[0..{dwords}] = {:#x} + i * {:#x}",
            fill.start, fill.step
        ));
        self.span("t0", "t1", label, dwords * 8);
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
        self.span("t0", "t1", label, count * spacing);
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
    fn identity_u32(&mut self, label: &str, n: u64) {
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

    /// The `n`-entry 32-bit table at `label` as a node order: the identity,
    /// then, when `random`, shuffled ([`Asm::shuffle_u32`]) by an in-program
    /// SplitMix64 with state `seed`.
    pub(crate) fn node_order(&mut self, label: &str, n: u64, random: bool, seed: u64) {
        self.identity_u32(label, n);
        if random {
            self.splitmix_setup(seed);
            self.shuffle_u32(label, n);
        }
    }

    /// Links `count >= 2` nodes in the order of a 32-bit node-index table:
    /// word 0 of node `order[g]` gets the address of node `order[g + 1]`,
    /// and word 0 of the last node gets the value of `tail` (`zero` ends a
    /// list, the head's register closes a cycle). Expects `t0` pointing at
    /// `order[0]`, the nodes' base address in `s1` and the node size in
    /// `s2`; leaves the first node's address in `head` and the last one's in
    /// `a1`, and advances `t0` to the last entry (clobbers `t1` and `t6`).
    pub(crate) fn link_nodes(&mut self, count: u64, head: &str, tail: &str) {
        assert!(count >= 2, "a list of {count} nodes");
        self.li("t6", count - 1);
        self.node_address("a1", 0);
        emit!(self, "mv {head}, a1");
        let link = self.fresh("link");
        self.label(&link);
        self.node_address("t1", 4);
        emit!(self, "sd t1, 0(a1)");
        emit!(self, "mv a1, t1");
        emit!(self, "addi t0, t0, 4");
        self.count_down("t6", &link);
        emit!(self, "sd {tail}, 0(a1)");
    }

    /// `dst = s1 + s2 * order` for the 32-bit node index at `offset(t0)`
    /// (see [`Asm::link_nodes`]).
    fn node_address(&mut self, dst: &str, offset: u64) {
        emit!(self, "lwu {dst}, {offset}(t0)");
        emit!(self, "mul {dst}, {dst}, s2");
        emit!(self, "add {dst}, s1, {dst}");
    }

    /// Shuffles the `n` 32-bit entries at `label` with the Fisher-Yates
    /// algorithm (Durstenfeld's in-place form) driven by the in-program
    /// SplitMix64 (set up by [`Asm::splitmix_setup`] first): for `i` from
    /// `n-1` down to 1, `j = mulhu(next(), i + 1)` (Lemire's multiply-shift
    /// range reduction), then swap entries `i` and `j`.
    fn shuffle_u32(&mut self, label: &str, n: u64) {
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
        self.count_down("t1", &top);
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
