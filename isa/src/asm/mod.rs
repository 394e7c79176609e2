//! The assembler: RISC-V assembly text (RV64IM) to a loadable [`Program`].
//!
//! ```
//! use overlap_isa::asm::assemble;
//! let program = assemble(
//!     "
//!     .text
//! _start:
//!     li   a0, 42        # exit code
//!     li   a7, 93        # exit
//!     ecall
//!     ",
//!     "exit.s",
//! )
//! .unwrap();
//! assert_eq!(program.entry, overlap_isa::asm::TEXT_BASE);
//! assert_eq!(program.symbols["_start"], program.entry);
//! ```
//!
//! Syntax: one statement per line (or several separated by `;`), comments
//! from `#` or `//` to the end of the line, labels `name:` and numeric local
//! labels `1:` (referenced as `1b` backward and `1f` forward). Registers are
//! `x0`..`x31` or ABI names (`zero`, `ra`, `sp`, `a0`, `t1`, `s2`, `fp`, ...).
//! Operands are `rd, rs1, imm`, `rd, offset(rs1)` for loads, `rs2,
//! offset(rs1)` for stores, and labels or plain byte offsets for branch and
//! jump targets (`beq a0, a1, loop` or `beq a0, a1, +8`). Immediates are
//! constant expressions (see the `expr` module) with `%hi(sym)` and `%lo(sym)`.
//!
//! Every real RV64IM mnemonic is accepted, plus the pseudo-instructions listed
//! in the `pseudo` module and the directives listed in the `directives`
//! module.
//!
//! Memory layout: `.text` starts at [`TEXT_BASE`]; `.rodata`, `.data` and
//! `.bss` follow in that order, each starting on a fresh [`SECTION_ALIGN`]
//! page (or a larger alignment if one of its `.align`s asks for it). Empty
//! sections get no segment. `.text` is executable and read-only, `.rodata`
//! read-only, `.data` and `.bss` writable. Only initialised bytes are stored:
//! `.zero`, `.space` and `.bss` cost nothing however large. The entry point is
//! `_start` if defined, else the start of `.text`; [`Program::symbols`] holds
//! every named label (not `.equ` symbols or numeric local labels).
//!
//! The assembler runs two passes (see the `layout` module), so labels may be
//! used before they are defined. Every statement's size is fixed in the first
//! pass; in particular the constant of `li` must be known where the `li` is
//! (a literal or an `.equ` defined above it).
//!
//! All errors of a file are reported, each with its line, column and source
//! line, in an [`AsmErrors`].

mod directives;
mod error;
mod expr;
mod instructions;
mod layout;
mod lexer;
mod parser;
mod pseudo;

pub use error::{AsmError, AsmErrors};

use crate::program::Program;

/// Address of the first byte of `.text`.
pub const TEXT_BASE: u64 = 0x1_0000;

/// Sections after `.text` start on a multiple of this (4 KiB).
pub const SECTION_ALIGN: u64 = 0x1000;

/// Largest size of one section (1 TiB); reserved space counts.
pub const MAX_SECTION_BYTES: u64 = 1 << 40;

/// Largest `.space n, fill` with a nonzero fill (such bytes are stored).
pub const MAX_FILL_BYTES: u64 = 1 << 26;

/// Assembles `source`; `file_name` is used in error messages only.
///
/// Returns every error of the file, not just the first.
pub fn assemble(source: &str, file_name: &str) -> Result<Program, AsmErrors> {
    layout::Asm::run(source, file_name)
}
