//! The 16-bit decoder for the C extension (RV64C): turns a compressed
//! instruction into the same [`Inst`] its 32-bit expansion decodes to, with
//! `len = 2`, so that the functional model and the timing core never need to
//! know that an instruction was compressed (except for its length).
//!
//! Every form whose expansion lies in RV64I is decoded. The floating-point
//! loads and stores (C.FLD, C.FSD, C.FLDSP, C.FSDSP) are reported as
//! [`DecodeErrorKind::CompressedFloat`]; reserved encodings (the all-zero
//! parcel, a zero immediate where the spec asks for a nonzero one, `rd = x0`
//! where that is reserved, the unused slots of the opcode map) as
//! [`DecodeErrorKind::Reserved`]. HINT encodings (for example C.LI with
//! `rd = x0`, or a zero shift amount) are legal and decode to their expansion,
//! which has no architectural effect beyond what the expansion does.
//!
//! Source for every field position, immediate scrambling, expansion and
//! reserved case: RISC-V unprivileged spec, chapter "C Standard Extension for
//! Compressed Instructions" (sections "Compressed Instruction Formats",
//! "Load and Store Instructions", "Control Transfer Instructions", "Integer
//! Computational Instructions" and table "RVC opcode map"), read for RV64.

use crate::decode::{DecodeError, DecodeErrorKind};
use crate::inst::{Inst, Op, Reg};

/// Bit `lsb` of `half`, placed at bit `at` of the result.
#[inline(always)]
fn bit(half: u32, lsb: u32, at: u32) -> u32 {
    (half >> lsb & 1) << at
}

/// Bits `lsb..lsb + n` of `half`, placed at bits `at..at + n` of the result.
#[inline(always)]
fn bits(half: u32, lsb: u32, n: u32, at: u32) -> u32 {
    (half >> lsb & ((1 << n) - 1)) << at
}

/// Sign-extends the low `n` bits of `value`.
#[inline(always)]
fn sext(value: u32, n: u32) -> i32 {
    let shift = 32 - n;
    ((value << shift) as i32) >> shift
}

/// A full register field (bits 11..7 or 6..2).
#[inline(always)]
fn reg5(half: u32, lsb: u32) -> Reg {
    Reg((half >> lsb & 31) as u8)
}

/// A three-bit "popular register" field: `x8`..`x15` (bits `lsb + 2..lsb`).
#[inline(always)]
fn reg3(half: u32, lsb: u32) -> Reg {
    Reg(8 + (half >> lsb & 7) as u8)
}

/// The 6-bit immediate of CI-format arithmetic (bit 12 and bits 6..2),
/// sign-extended: C.ADDI, C.ADDIW, C.LI, C.ANDI.
#[inline(always)]
fn imm_ci(half: u32) -> i32 {
    sext(bit(half, 12, 5) | bits(half, 2, 5, 0), 6)
}

/// The 6-bit shift amount of C.SLLI, C.SRLI, C.SRAI (bit 12 and bits 6..2).
#[inline(always)]
fn shamt(half: u32) -> i32 {
    (bit(half, 12, 5) | bits(half, 2, 5, 0)) as i32
}

/// Word offset of C.LW and C.SW: uimm[5:3] = bits 12..10, uimm[2] = bit 6,
/// uimm[6] = bit 5.
#[inline(always)]
fn uimm_w(half: u32) -> i32 {
    (bits(half, 10, 3, 3) | bit(half, 6, 2) | bit(half, 5, 6)) as i32
}

/// Doubleword offset of C.LD and C.SD: uimm[5:3] = bits 12..10,
/// uimm[7:6] = bits 6..5.
#[inline(always)]
fn uimm_d(half: u32) -> i32 {
    (bits(half, 10, 3, 3) | bits(half, 5, 2, 6)) as i32
}

/// Branch offset of C.BEQZ and C.BNEZ: offset[8|4:3] = bits 12|11..10,
/// offset[7:6|2:1|5] = bits 6..5|4..3|2.
#[inline(always)]
fn offset_b(half: u32) -> i32 {
    sext(
        bit(half, 12, 8)
            | bits(half, 10, 2, 3)
            | bits(half, 5, 2, 6)
            | bits(half, 3, 2, 1)
            | bit(half, 2, 5),
        9,
    )
}

/// Jump offset of C.J: offset[11|4|9:8|10|6|7|3:1|5] = bits
/// 12|11|10..9|8|7|6|5..3|2.
#[inline(always)]
fn offset_j(half: u32) -> i32 {
    sext(
        bit(half, 12, 11)
            | bit(half, 11, 4)
            | bits(half, 9, 2, 8)
            | bit(half, 8, 10)
            | bit(half, 7, 6)
            | bit(half, 6, 7)
            | bits(half, 3, 3, 1)
            | bit(half, 2, 5),
        12,
    )
}

/// Decodes one 16-bit compressed instruction (a parcel whose low two bits
/// are not `11`).
///
/// ```
/// use overlap_isa::{compressed::decode_compressed, Op, Reg};
/// // c.addi a0, 1 (GNU as -march=rv64imc: 0x0505)
/// let inst = decode_compressed(0x0505).unwrap();
/// assert_eq!((inst.op, inst.rd, inst.rs1, inst.imm, inst.len), (Op::Addi, Reg::A0, Reg::A0, 1, 2));
/// assert_eq!(inst.to_string(), "addi a0, a0, 1");
/// ```
pub fn decode_compressed(half: u16) -> Result<Inst, DecodeError> {
    let word = u32::from(half);
    let err = |kind| DecodeError { word, kind };
    let reserved = || Err(err(DecodeErrorKind::Reserved));
    let float = || Err(err(DecodeErrorKind::CompressedFloat));
    let z = Reg::ZERO;
    let inst = |op, rd, rs1, rs2, imm| {
        Ok(Inst {
            op,
            rd,
            rs1,
            rs2,
            imm,
            len: 2,
        })
    };
    let funct3 = word >> 13;
    // Full register fields (CR, CI, CSS formats) and the popular-register
    // fields (CIW, CL, CS, CA, CB formats).
    let (rd, rs2) = (reg5(word, 7), reg5(word, 2));
    let (rs1p, rdp) = (reg3(word, 7), reg3(word, 2));

    match (word & 3, funct3) {
        // Quadrant 0.
        (0, 0) => {
            // C.ADDI4SPN: nzuimm[5:4|9:6|2|3] = bits 12..11|10..7|6|5.
            let nzuimm =
                bits(word, 11, 2, 4) | bits(word, 7, 4, 6) | bit(word, 6, 2) | bit(word, 5, 3);
            if nzuimm == 0 {
                // Includes the all-zero parcel, defined illegal.
                return reserved();
            }
            inst(Op::Addi, rdp, Reg::SP, z, nzuimm as i32)
        }
        (0, 1) | (0, 5) => float(), // C.FLD, C.FSD
        (0, 2) => inst(Op::Lw, rdp, rs1p, z, uimm_w(word)),
        (0, 3) => inst(Op::Ld, rdp, rs1p, z, uimm_d(word)),
        (0, 6) => inst(Op::Sw, z, rs1p, rdp, uimm_w(word)),
        (0, 7) => inst(Op::Sd, z, rs1p, rdp, uimm_d(word)),
        (0, _) => reserved(), // funct3 = 100

        // Quadrant 1.
        // C.NOP (rd = x0) and C.ADDI; a zero immediate with rd != x0 and a
        // nonzero one with rd = x0 are HINTs.
        (1, 0) => inst(Op::Addi, rd, rd, z, imm_ci(word)),
        (1, 1) => {
            if rd == z {
                return reserved(); // C.ADDIW with rd = x0
            }
            inst(Op::Addiw, rd, rd, z, imm_ci(word))
        }
        (1, 2) => inst(Op::Addi, rd, z, z, imm_ci(word)), // C.LI (rd = x0: HINT)
        (1, 3) if rd == Reg::SP => {
            // C.ADDI16SP: nzimm[9|4|6|8:7|5] = bits 12|6|5|4..3|2.
            let raw = bit(word, 12, 9)
                | bit(word, 6, 4)
                | bit(word, 5, 6)
                | bits(word, 3, 2, 7)
                | bit(word, 2, 5);
            if raw == 0 {
                return reserved();
            }
            inst(Op::Addi, Reg::SP, Reg::SP, z, sext(raw, 10))
        }
        (1, 3) => {
            // C.LUI: nzimm[17|16:12] = bits 12|6..2 (rd = x0: HINT).
            let raw = bit(word, 12, 17) | bits(word, 2, 5, 12);
            if raw == 0 {
                return reserved();
            }
            inst(Op::Lui, rd, z, z, sext(raw, 18))
        }
        (1, 4) => match word >> 10 & 3 {
            // A zero shift amount is a HINT in RV64C.
            0 => inst(Op::Srli, rs1p, rs1p, z, shamt(word)),
            1 => inst(Op::Srai, rs1p, rs1p, z, shamt(word)),
            2 => inst(Op::Andi, rs1p, rs1p, z, imm_ci(word)),
            _ => {
                let op = match (word >> 12 & 1, word >> 5 & 3) {
                    (0, 0) => Op::Sub,
                    (0, 1) => Op::Xor,
                    (0, 2) => Op::Or,
                    (0, 3) => Op::And,
                    (1, 0) => Op::Subw,
                    (1, 1) => Op::Addw,
                    _ => return reserved(),
                };
                inst(op, rs1p, rs1p, rdp, 0)
            }
        },
        (1, 5) => inst(Op::Jal, z, z, z, offset_j(word)), // C.J
        (1, 6) => inst(Op::Beq, z, rs1p, z, offset_b(word)), // C.BEQZ
        (1, 7) => inst(Op::Bne, z, rs1p, z, offset_b(word)), // C.BNEZ

        // Quadrant 2.
        (2, 0) => inst(Op::Slli, rd, rd, z, shamt(word)), // C.SLLI (rd = x0 or shamt 0: HINT)
        (2, 1) | (2, 5) => float(),                       // C.FLDSP, C.FSDSP
        (2, 2) => {
            // C.LWSP: uimm[5] = bit 12, uimm[4:2|7:6] = bits 6..4|3..2.
            if rd == z {
                return reserved();
            }
            let uimm = bit(word, 12, 5) | bits(word, 4, 3, 2) | bits(word, 2, 2, 6);
            inst(Op::Lw, rd, Reg::SP, z, uimm as i32)
        }
        (2, 3) => {
            // C.LDSP: uimm[5] = bit 12, uimm[4:3|8:6] = bits 6..5|4..2.
            if rd == z {
                return reserved();
            }
            let uimm = bit(word, 12, 5) | bits(word, 5, 2, 3) | bits(word, 2, 3, 6);
            inst(Op::Ld, rd, Reg::SP, z, uimm as i32)
        }
        (2, 4) => {
            let rs1 = rd;
            match (word >> 12 & 1, rs1 == z, rs2 == z) {
                (0, true, true) => reserved(),                    // C.JR with rs1 = x0
                (0, false, true) => inst(Op::Jalr, z, rs1, z, 0), // C.JR
                (0, _, false) => inst(Op::Add, rd, z, rs2, 0),    // C.MV (rd = x0: HINT)
                (_, true, true) => inst(Op::Ebreak, z, z, z, 0),  // C.EBREAK
                (_, false, true) => inst(Op::Jalr, Reg::RA, rs1, z, 0), // C.JALR
                (_, _, false) => inst(Op::Add, rd, rd, rs2, 0),   // C.ADD (rd = x0: HINT)
            }
        }
        (2, 6) => {
            // C.SWSP: uimm[5:2|7:6] = bits 12..9|8..7.
            let uimm = bits(word, 9, 4, 2) | bits(word, 7, 2, 6);
            inst(Op::Sw, z, Reg::SP, rs2, uimm as i32)
        }
        (2, 7) => {
            // C.SDSP: uimm[5:3|8:6] = bits 12..10|9..7.
            let uimm = bits(word, 10, 3, 3) | bits(word, 7, 3, 6);
            inst(Op::Sd, z, Reg::SP, rs2, uimm as i32)
        }
        // Low bits 11: not a compressed instruction at all.
        _ => Err(err(DecodeErrorKind::NotCompressed)),
    }
}
