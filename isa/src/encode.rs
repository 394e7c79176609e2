//! The 32-bit encoder: turns an [`Inst`] into its instruction word, and
//! checks immediates against the range each encoding format can hold.
//!
//! Source for every field position and opcode: RISC-V unprivileged spec,
//! chapters "RV32I Base Integer Instruction Set" (formats and opcode map),
//! "RV64I Base Integer Instruction Set" (6-bit shift amounts, the W forms)
//! and "M Extension for Integer Multiplication and Division".

use crate::inst::{Format, Inst, Op};
use thiserror::Error;

/// Major opcodes (instruction bits 6..0).
pub(crate) mod opcode {
    pub const LOAD: u32 = 0x03;
    pub const MISC_MEM: u32 = 0x0f;
    pub const OP_IMM: u32 = 0x13;
    pub const AUIPC: u32 = 0x17;
    pub const OP_IMM_32: u32 = 0x1b;
    pub const STORE: u32 = 0x23;
    pub const OP: u32 = 0x33;
    pub const LUI: u32 = 0x37;
    pub const OP_32: u32 = 0x3b;
    pub const BRANCH: u32 = 0x63;
    pub const JALR: u32 = 0x67;
    pub const JAL: u32 = 0x6f;
    pub const SYSTEM: u32 = 0x73;
}

/// `(major opcode, funct3, funct7)` of an operation. For the immediate shifts
/// `funct7` is the value of bits 31..25 with the shift amount zero (SRAI and
/// SRAIW have 0x20 there). For FENCE, ECALL and EBREAK only the opcode and
/// funct3 matter.
pub(crate) fn fields(op: Op) -> (u32, u32, u32) {
    use Op::*;
    use opcode::*;
    match op {
        Lui => (LUI, 0, 0),
        Auipc => (AUIPC, 0, 0),
        Jal => (JAL, 0, 0),
        Jalr => (JALR, 0, 0),
        Beq => (BRANCH, 0, 0),
        Bne => (BRANCH, 1, 0),
        Blt => (BRANCH, 4, 0),
        Bge => (BRANCH, 5, 0),
        Bltu => (BRANCH, 6, 0),
        Bgeu => (BRANCH, 7, 0),
        Lb => (LOAD, 0, 0),
        Lh => (LOAD, 1, 0),
        Lw => (LOAD, 2, 0),
        Ld => (LOAD, 3, 0),
        Lbu => (LOAD, 4, 0),
        Lhu => (LOAD, 5, 0),
        Lwu => (LOAD, 6, 0),
        Sb => (STORE, 0, 0),
        Sh => (STORE, 1, 0),
        Sw => (STORE, 2, 0),
        Sd => (STORE, 3, 0),
        Addi => (OP_IMM, 0, 0),
        Slti => (OP_IMM, 2, 0),
        Sltiu => (OP_IMM, 3, 0),
        Xori => (OP_IMM, 4, 0),
        Ori => (OP_IMM, 6, 0),
        Andi => (OP_IMM, 7, 0),
        Slli => (OP_IMM, 1, 0),
        Srli => (OP_IMM, 5, 0),
        Srai => (OP_IMM, 5, 0x20),
        Add => (OP, 0, 0),
        Sub => (OP, 0, 0x20),
        Sll => (OP, 1, 0),
        Slt => (OP, 2, 0),
        Sltu => (OP, 3, 0),
        Xor => (OP, 4, 0),
        Srl => (OP, 5, 0),
        Sra => (OP, 5, 0x20),
        Or => (OP, 6, 0),
        And => (OP, 7, 0),
        Addiw => (OP_IMM_32, 0, 0),
        Slliw => (OP_IMM_32, 1, 0),
        Srliw => (OP_IMM_32, 5, 0),
        Sraiw => (OP_IMM_32, 5, 0x20),
        Addw => (OP_32, 0, 0),
        Subw => (OP_32, 0, 0x20),
        Sllw => (OP_32, 1, 0),
        Srlw => (OP_32, 5, 0),
        Sraw => (OP_32, 5, 0x20),
        Fence => (MISC_MEM, 0, 0),
        Ecall => (SYSTEM, 0, 0),
        Ebreak => (SYSTEM, 0, 0),
        Mul => (OP, 0, 1),
        Mulh => (OP, 1, 1),
        Mulhsu => (OP, 2, 1),
        Mulhu => (OP, 3, 1),
        Div => (OP, 4, 1),
        Divu => (OP, 5, 1),
        Rem => (OP, 6, 1),
        Remu => (OP, 7, 1),
        Mulw => (OP_32, 0, 1),
        Divw => (OP_32, 4, 1),
        Divuw => (OP_32, 5, 1),
        Remw => (OP_32, 6, 1),
        Remuw => (OP_32, 7, 1),
    }
}

/// Encodes a 32-bit instruction word. `inst.len` is ignored; fields the
/// operation's [`Format`] does not have are ignored too.
///
/// The immediate is truncated to the bits the format holds (the low bit of a
/// branch or jump offset is dropped, for LUI and AUIPC the low 12 bits are).
/// Call [`check_imm`] first, or use [`encode_checked`], to reject an
/// immediate that does not fit.
pub fn encode(inst: &Inst) -> u32 {
    let (opc, funct3, funct7) = fields(inst.op);
    let rd = u32::from(inst.rd.0 & 31) << 7;
    let rs1 = u32::from(inst.rs1.0 & 31) << 15;
    let rs2 = u32::from(inst.rs2.0 & 31) << 20;
    let f3 = funct3 << 12;
    let imm = inst.imm as u32;
    match inst.op.format() {
        Format::R => (funct7 << 25) | rs2 | rs1 | f3 | rd | opc,
        Format::I => ((imm & 0xfff) << 20) | rs1 | f3 | rd | opc,
        Format::Shift => (funct7 << 25) | ((imm & 0x3f) << 20) | rs1 | f3 | rd | opc,
        Format::ShiftW => (funct7 << 25) | ((imm & 0x1f) << 20) | rs1 | f3 | rd | opc,
        Format::S => ((imm >> 5 & 0x7f) << 25) | rs2 | rs1 | f3 | ((imm & 0x1f) << 7) | opc,
        Format::B => {
            ((imm >> 12 & 1) << 31)
                | ((imm >> 5 & 0x3f) << 25)
                | rs2
                | rs1
                | f3
                | ((imm >> 1 & 0xf) << 8)
                | ((imm >> 11 & 1) << 7)
                | opc
        }
        Format::U => (imm & 0xffff_f000) | rd | opc,
        Format::J => {
            ((imm >> 20 & 1) << 31)
                | ((imm >> 1 & 0x3ff) << 21)
                | ((imm >> 11 & 1) << 20)
                | ((imm >> 12 & 0xff) << 12)
                | rd
                | opc
        }
        // rd and rs1 of FENCE are reserved and encoded as zero.
        Format::Fence => ((imm & 0xfff) << 20) | f3 | opc,
        Format::System => {
            if inst.op == Op::Ebreak {
                (1 << 20) | opc
            } else {
                opc
            }
        }
    }
}

/// Encodes after checking the immediate with [`check_imm`] (for LUI and
/// AUIPC, `inst.imm` must have its low 12 bits clear).
pub fn encode_checked(inst: &Inst) -> Result<u32, ImmError> {
    let written = match inst.op.format() {
        Format::U => {
            if inst.imm & 0xfff != 0 {
                return Err(ImmError::LowBitsSet {
                    op: inst.op,
                    value: i64::from(inst.imm),
                });
            }
            i64::from((inst.imm as u32) >> 12)
        }
        _ => i64::from(inst.imm),
    };
    check_imm(inst.op, written)?;
    Ok(encode(inst))
}

/// The values an operation's immediate operand may take.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ImmRange {
    /// Smallest allowed value.
    pub min: i64,
    /// Largest allowed value.
    pub max: i64,
    /// Whether the value must be even (branch and jump offsets).
    pub even: bool,
}

impl ImmRange {
    /// Whether `value` is allowed.
    pub fn contains(&self, value: i64) -> bool {
        (self.min..=self.max).contains(&value) && (!self.even || value & 1 == 0)
    }
}

impl std::fmt::Display for ImmRange {
    /// `-2048..=2047`, or `-4096..=4094, even`.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}..={}", self.min, self.max)?;
        if self.even {
            f.write_str(", even")?;
        }
        Ok(())
    }
}

/// The immediate operand range of `op`, as written in assembly.
///
/// This is the value of [`Inst::imm`] for every operation except LUI and
/// AUIPC, whose operand is the 20-bit upper field (`0..=0xfffff`), i.e.
/// `Inst::imm >> 12` read as unsigned. ECALL and EBREAK take no immediate
/// (only 0 is accepted); FENCE's is the raw 12-bit `fm`/`pred`/`succ` field.
/// Source: RISC-V unprivileged spec, "Base Instruction Formats" and
/// "Immediate Encoding Variants"; RV64I chapter for the shift amounts.
pub fn imm_range(op: Op) -> ImmRange {
    let (min, max, even) = match op.format() {
        Format::I | Format::S | Format::Fence => (-2048, 2047, false),
        Format::Shift => (0, 63, false),
        Format::ShiftW => (0, 31, false),
        Format::B => (-4096, 4094, true),
        Format::J => (-(1 << 20), (1 << 20) - 2, true),
        Format::U => (0, 0xf_ffff, false),
        Format::R | Format::System => (0, 0, false),
    };
    ImmRange { min, max, even }
}

/// An immediate that the operation's encoding cannot hold.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Error)]
pub enum ImmError {
    /// The value lies outside the format's range.
    #[error("immediate {value} of {op} is out of range ({range})")]
    OutOfRange {
        /// The operation.
        op: Op,
        /// The value given.
        value: i64,
        /// What the format holds.
        range: ImmRange,
    },
    /// A branch or jump offset is odd.
    #[error("offset {value} of {op} must be even")]
    Odd {
        /// The operation.
        op: Op,
        /// The value given.
        value: i64,
    },
    /// An `Inst::imm` for LUI or AUIPC with some of its low 12 bits set.
    #[error("immediate {value:#x} of {op} has low 12 bits set")]
    LowBitsSet {
        /// The operation.
        op: Op,
        /// The value given.
        value: i64,
    },
}

/// Checks an immediate operand as written in assembly (see [`imm_range`] for
/// what that means for each operation).
///
/// ```
/// use overlap_isa::{Op, encode::check_imm};
/// assert!(check_imm(Op::Addi, 2047).is_ok());
/// let err = check_imm(Op::Addi, 2048).unwrap_err();
/// assert_eq!(err.to_string(), "immediate 2048 of addi is out of range (-2048..=2047)");
/// assert!(check_imm(Op::Beq, 7).is_err());
/// ```
pub fn check_imm(op: Op, imm: i64) -> Result<(), ImmError> {
    let range = imm_range(op);
    if !(range.min..=range.max).contains(&imm) {
        return Err(ImmError::OutOfRange {
            op,
            value: imm,
            range,
        });
    }
    if range.even && imm & 1 != 0 {
        return Err(ImmError::Odd { op, value: imm });
    }
    Ok(())
}
