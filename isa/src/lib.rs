//! The RV64IM instruction set for overlap: decoded instructions, a 32-bit
//! decoder and encoder, a 16-bit decoder for compressed (RV64C) code, an
//! assembler for `.s` text, a loader for static RV64 ELF executables, and the
//! functional model that executes a program and yields its stream of dynamic
//! instructions.
//!
//! Invariants: this crate knows nothing of time. It decides *what* a program
//! does; the timing core decides *when*. The functional model is the oracle:
//! every [`DynInst`] it yields is architecturally exact.
#![deny(missing_docs)]

pub mod asm;
pub mod compressed;
pub mod decode;
pub mod dyninst;
pub mod elf;
pub mod encode;
pub mod inst;
pub mod machine;
pub mod memory;
pub mod program;

pub use asm::{AsmError, AsmErrors, assemble};
pub use compressed::decode_compressed;
pub use decode::{DecodeError, decode};
pub use dyninst::DynInst;
pub use elf::{ElfError, load_elf};
pub use encode::{ImmError, check_imm, encode};
pub use inst::{Format, Inst, Op, OpClass, Reg};
pub use machine::{ExecError, Machine, MachineConfig};
pub use memory::{MemError, Memory};
pub use program::{Program, Segment};
