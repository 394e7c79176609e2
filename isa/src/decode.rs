//! The 32-bit decoder: turns an instruction word into an [`Inst`], or says
//! why the word is not an instruction this model executes.
//!
//! Source for every field position and opcode: RISC-V unprivileged spec,
//! chapters "RV32I Base Integer Instruction Set", "RV64I Base Integer
//! Instruction Set" and "M Extension for Integer Multiplication and Division".
//! Reserved encodings (a shift amount of 32 or more in a W shift, a funct7 no
//! operation uses, ...) are rejected rather than guessed at. FENCE decodes to
//! [`Op::Fence`] with its `fm`/`pred`/`succ` field in `imm`; its reserved
//! `rd` and `rs1` fields are ignored, as the spec asks of implementations.
//! 16-bit parcels are decoded by [`crate::compressed::decode_compressed`].

use crate::encode::opcode;
use crate::inst::{Inst, Op, Reg};
use thiserror::Error;

/// Why a word does not decode.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DecodeErrorKind {
    /// The low two bits are not `11`: a 16-bit compressed encoding, which this
    /// 32-bit decoder does not handle (see
    /// [`crate::compressed::decode_compressed`]).
    Compressed,
    /// The low five bits are `11111`: an encoding longer than 32 bits.
    TooLong,
    /// A major opcode outside RV64IM (floating point, atomics, vectors, ...).
    UnsupportedOpcode,
    /// A known major opcode with a funct3/funct7 combination that RV64IM does
    /// not define, or reserved bits set.
    Reserved,
    /// A SYSTEM instruction other than ECALL and EBREAK (CSR access,
    /// privileged instructions).
    UnsupportedSystem,
    /// A 16-bit floating-point load or store (C.FLD, C.FSD, C.FLDSP,
    /// C.FSDSP): floating point is not executed.
    CompressedFloat,
    /// Given to the 16-bit decoder, a parcel whose low two bits are `11`:
    /// the start of a 32-bit instruction.
    NotCompressed,
}

impl std::fmt::Display for DecodeErrorKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            DecodeErrorKind::Compressed => "a 16-bit compressed encoding, not a 32-bit one",
            DecodeErrorKind::TooLong => "an encoding longer than 32 bits",
            DecodeErrorKind::UnsupportedOpcode => "its major opcode is not part of RV64IM",
            DecodeErrorKind::Reserved => "a reserved or undefined encoding",
            DecodeErrorKind::UnsupportedSystem => {
                "a system instruction other than ecall and ebreak"
            }
            DecodeErrorKind::CompressedFloat => {
                "a compressed floating-point load or store (c.fld, c.fsd, c.fldsp, c.fsdsp); \
                 floating point is not supported"
            }
            DecodeErrorKind::NotCompressed => {
                "the low two bits are 11, so it is a 32-bit encoding, not a 16-bit one"
            }
        })
    }
}

/// A word that is not an RV64IM(C) instruction.
///
/// The message shows a 32-bit word as eight hex digits and a 16-bit parcel
/// the compressed decoder rejected as four (`16-bit instruction 0x2000`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Error)]
#[error("cannot decode {}: {kind}", EncodingText(*.word, *.kind))]
pub struct DecodeError {
    /// The word (for a 16-bit parcel, in the low half).
    pub word: u32,
    /// Why it does not decode.
    pub kind: DecodeErrorKind,
}

/// How a [`DecodeError`] names the encoding it rejects.
struct EncodingText(u32, DecodeErrorKind);

impl std::fmt::Display for EncodingText {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let EncodingText(word, kind) = *self;
        let from_16_bit_decoder = word <= 0xffff
            && word & 3 != 3
            && !matches!(kind, DecodeErrorKind::Compressed | DecodeErrorKind::TooLong);
        if from_16_bit_decoder {
            write!(f, "16-bit instruction 0x{word:04x}")
        } else {
            write!(f, "instruction word 0x{word:08x}")
        }
    }
}

#[inline]
fn reg(word: u32, lsb: u32) -> Reg {
    Reg((word >> lsb & 31) as u8)
}

/// Sign-extended I-type immediate (bits 31..20).
#[inline]
fn imm_i(word: u32) -> i32 {
    word as i32 >> 20
}

/// Sign-extended S-type immediate.
#[inline]
fn imm_s(word: u32) -> i32 {
    ((word as i32 >> 25) << 5) | (word >> 7 & 0x1f) as i32
}

/// Sign-extended B-type immediate (byte offset, even).
#[inline]
fn imm_b(word: u32) -> i32 {
    ((word as i32 >> 31) << 12)
        | ((word >> 7 & 1) << 11) as i32
        | ((word >> 25 & 0x3f) << 5) as i32
        | ((word >> 8 & 0xf) << 1) as i32
}

/// Sign-extended J-type immediate (byte offset, even).
#[inline]
fn imm_j(word: u32) -> i32 {
    ((word as i32 >> 31) << 20)
        | (word & 0x000f_f000) as i32
        | ((word >> 20 & 1) << 11) as i32
        | ((word >> 21 & 0x3ff) << 1) as i32
}

/// Decodes one 32-bit instruction word.
///
/// ```
/// use overlap_isa::{decode::decode, Op};
/// let inst = decode(0x00150513).unwrap(); // addi a0, a0, 1
/// assert_eq!(inst.op, Op::Addi);
/// assert_eq!(inst.to_string(), "addi a0, a0, 1");
/// ```
pub fn decode(word: u32) -> Result<Inst, DecodeError> {
    let err = |kind| DecodeError { word, kind };
    if word & 3 != 3 {
        return Err(err(DecodeErrorKind::Compressed));
    }
    if word & 0x1f == 0x1f {
        return Err(err(DecodeErrorKind::TooLong));
    }
    let opc = word & 0x7f;
    let funct3 = word >> 12 & 7;
    let funct7 = word >> 25;
    let (rd, rs1, rs2) = (reg(word, 7), reg(word, 15), reg(word, 20));
    let z = Reg::ZERO;
    let reserved = Err(err(DecodeErrorKind::Reserved));

    let inst = |op, rd, rs1, rs2, imm| Ok(Inst::new(op, rd, rs1, rs2, imm));
    match opc {
        opcode::LUI => inst(Op::Lui, rd, z, z, (word & 0xffff_f000) as i32),
        opcode::AUIPC => inst(Op::Auipc, rd, z, z, (word & 0xffff_f000) as i32),
        opcode::JAL => inst(Op::Jal, rd, z, z, imm_j(word)),
        opcode::JALR => match funct3 {
            0 => inst(Op::Jalr, rd, rs1, z, imm_i(word)),
            _ => reserved,
        },
        opcode::BRANCH => {
            let op = match funct3 {
                0 => Op::Beq,
                1 => Op::Bne,
                4 => Op::Blt,
                5 => Op::Bge,
                6 => Op::Bltu,
                7 => Op::Bgeu,
                _ => return reserved,
            };
            inst(op, z, rs1, rs2, imm_b(word))
        }
        opcode::LOAD => {
            let op = match funct3 {
                0 => Op::Lb,
                1 => Op::Lh,
                2 => Op::Lw,
                3 => Op::Ld,
                4 => Op::Lbu,
                5 => Op::Lhu,
                6 => Op::Lwu,
                _ => return reserved,
            };
            inst(op, rd, rs1, z, imm_i(word))
        }
        opcode::STORE => {
            let op = match funct3 {
                0 => Op::Sb,
                1 => Op::Sh,
                2 => Op::Sw,
                3 => Op::Sd,
                _ => return reserved,
            };
            inst(op, z, rs1, rs2, imm_s(word))
        }
        opcode::OP_IMM => {
            // RV64I: the shift amount is 6 bits, so bits 31..26 select the shift.
            let funct6 = word >> 26;
            let shamt = (word >> 20 & 0x3f) as i32;
            let (op, imm) = match funct3 {
                0 => (Op::Addi, imm_i(word)),
                2 => (Op::Slti, imm_i(word)),
                3 => (Op::Sltiu, imm_i(word)),
                4 => (Op::Xori, imm_i(word)),
                6 => (Op::Ori, imm_i(word)),
                7 => (Op::Andi, imm_i(word)),
                1 if funct6 == 0 => (Op::Slli, shamt),
                5 if funct6 == 0 => (Op::Srli, shamt),
                5 if funct6 == 0x10 => (Op::Srai, shamt),
                _ => return reserved,
            };
            inst(op, rd, rs1, z, imm)
        }
        opcode::OP_IMM_32 => {
            let shamt = (word >> 20 & 0x1f) as i32;
            let (op, imm) = match (funct3, funct7) {
                (0, _) => (Op::Addiw, imm_i(word)),
                (1, 0) => (Op::Slliw, shamt),
                (5, 0) => (Op::Srliw, shamt),
                (5, 0x20) => (Op::Sraiw, shamt),
                _ => return reserved,
            };
            inst(op, rd, rs1, z, imm)
        }
        opcode::OP => {
            let op = match (funct7, funct3) {
                (0, 0) => Op::Add,
                (0x20, 0) => Op::Sub,
                (0, 1) => Op::Sll,
                (0, 2) => Op::Slt,
                (0, 3) => Op::Sltu,
                (0, 4) => Op::Xor,
                (0, 5) => Op::Srl,
                (0x20, 5) => Op::Sra,
                (0, 6) => Op::Or,
                (0, 7) => Op::And,
                (1, 0) => Op::Mul,
                (1, 1) => Op::Mulh,
                (1, 2) => Op::Mulhsu,
                (1, 3) => Op::Mulhu,
                (1, 4) => Op::Div,
                (1, 5) => Op::Divu,
                (1, 6) => Op::Rem,
                (1, 7) => Op::Remu,
                _ => return reserved,
            };
            inst(op, rd, rs1, rs2, 0)
        }
        opcode::OP_32 => {
            let op = match (funct7, funct3) {
                (0, 0) => Op::Addw,
                (0x20, 0) => Op::Subw,
                (0, 1) => Op::Sllw,
                (0, 5) => Op::Srlw,
                (0x20, 5) => Op::Sraw,
                (1, 0) => Op::Mulw,
                (1, 4) => Op::Divw,
                (1, 5) => Op::Divuw,
                (1, 6) => Op::Remw,
                (1, 7) => Op::Remuw,
                _ => return reserved,
            };
            inst(op, rd, rs1, rs2, 0)
        }
        opcode::MISC_MEM => match funct3 {
            0 => inst(Op::Fence, z, z, z, imm_i(word)),
            // FENCE.I (Zifencei) and anything else: not RV64IM.
            _ => Err(err(DecodeErrorKind::UnsupportedOpcode)),
        },
        opcode::SYSTEM => match word {
            0x0000_0073 => inst(Op::Ecall, z, z, z, 0),
            0x0010_0073 => inst(Op::Ebreak, z, z, z, 0),
            _ => Err(err(DecodeErrorKind::UnsupportedSystem)),
        },
        _ => Err(err(DecodeErrorKind::UnsupportedOpcode)),
    }
}
