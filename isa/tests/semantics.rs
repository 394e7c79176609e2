//! Instruction semantics against the RISC-V unprivileged spec.

mod common;

use common::*;
use overlap_isa::{Op, Reg};

const MIN64: u64 = 1 << 63;

#[test]
fn division_by_zero_64() {
    // Source: RISC-V unprivileged spec, M extension, table "Semantics for
    // division by zero and division overflow": x/0 gives quotient all ones
    // (-1 signed, 2^64-1 unsigned) and remainder x.
    for x in EDGE_VALUES {
        assert_eq!(exec_rr(Op::Div, x, 0), u64::MAX, "div {x:#x}/0");
        assert_eq!(exec_rr(Op::Divu, x, 0), u64::MAX, "divu {x:#x}/0");
        assert_eq!(exec_rr(Op::Rem, x, 0), x, "rem {x:#x}/0");
        assert_eq!(exec_rr(Op::Remu, x, 0), x, "remu {x:#x}/0");
    }
}

#[test]
fn division_overflow_64() {
    // Source: RISC-V unprivileged spec, M extension, same table: signed
    // overflow -2^63 / -1 gives quotient -2^63 and remainder 0.
    assert_eq!(exec_rr(Op::Div, MIN64, u64::MAX), MIN64);
    assert_eq!(exec_rr(Op::Rem, MIN64, u64::MAX), 0);
    // Unsigned: no overflow case; 2^63 / (2^64-1) = 0 rem 2^63.
    assert_eq!(exec_rr(Op::Divu, MIN64, u64::MAX), 0);
    assert_eq!(exec_rr(Op::Remu, MIN64, u64::MAX), MIN64);
}

#[test]
fn division_by_zero_and_overflow_w() {
    // Source: RISC-V unprivileged spec, M extension: the W forms divide the
    // low 32 bits and sign-extend the 32-bit result; the same table applies
    // with XLEN = 32 (x/0: quotient all ones, remainder x; -2^31/-1: quotient
    // -2^31, remainder 0).
    let garbage = 0xdead_beef_0000_0000u64; // upper bits must be ignored
    for x in EDGE_VALUES {
        let x32 = x as u32;
        let sext = x32 as i32 as i64 as u64;
        assert_eq!(exec_rr(Op::Divw, x, garbage), u64::MAX, "divw {x:#x}/0");
        // 2^32-1 sign-extended is all ones.
        assert_eq!(exec_rr(Op::Divuw, x, garbage), u64::MAX, "divuw {x:#x}/0");
        assert_eq!(exec_rr(Op::Remw, x, garbage), sext, "remw {x:#x}/0");
        assert_eq!(exec_rr(Op::Remuw, x, garbage), sext, "remuw {x:#x}/0");
    }
    let min32 = 0x8000_0000u64;
    let minus1 = 0xffff_ffffu64;
    assert_eq!(exec_rr(Op::Divw, min32, minus1), 0xffff_ffff_8000_0000);
    assert_eq!(exec_rr(Op::Remw, min32, minus1), 0);
    assert_eq!(exec_rr(Op::Divuw, min32, minus1), 0);
    assert_eq!(exec_rr(Op::Remuw, min32, minus1), 0xffff_ffff_8000_0000);
}

#[test]
fn division_rounds_toward_zero() {
    // Source: RISC-V unprivileged spec, M extension: DIV rounds towards
    // zero; the remainder has the sign of the dividend.
    let m7 = (-7i64) as u64;
    assert_eq!(exec_rr(Op::Div, m7, 2) as i64, -3);
    assert_eq!(exec_rr(Op::Rem, m7, 2) as i64, -1);
    assert_eq!(exec_rr(Op::Div, 7, (-2i64) as u64) as i64, -3);
    assert_eq!(exec_rr(Op::Rem, 7, (-2i64) as u64) as i64, 1);
    assert_eq!(exec_rr(Op::Divw, m7, 2) as i64, -3);
    assert_eq!(exec_rr(Op::Remw, m7, 2) as i64, -1);
}

#[test]
fn x0_is_hardwired_to_zero() {
    // Source: RISC-V unprivileged spec, "Programmers' Model for Base Integer
    // ISA": x0 is hardwired with all bits equal to 0.
    let mut m = machine(&[
        ri(Op::Addi, ZERO, ZERO, 5),
        ri(Op::Lui, ZERO, ZERO, 0x1000),
        ri(Op::Jal, ZERO, ZERO, 4),
        rr(Op::Add, A0, ZERO, ZERO),
        ri(Op::Ld, ZERO, SP, -8),
    ]);
    m.set_reg(ZERO, 99);
    m.set_reg(A0, 7);
    let first = m.step().unwrap();
    assert_eq!(first.dst, None);
    assert_eq!(m.reg(ZERO), 0);
    m.step().unwrap();
    assert_eq!(m.reg(ZERO), 0);
    m.step().unwrap();
    assert_eq!(m.reg(ZERO), 0);
    let add = m.step().unwrap();
    assert_eq!(m.reg(A0), 0);
    assert_eq!(add.sources().count(), 0);
    let load = m.step().unwrap();
    assert_eq!(load.dst, None);
    assert_eq!(load.mem_size, 8);
    assert_eq!(m.reg(ZERO), 0);
}

/// Sign extension of a 32-bit value to 64 bits.
fn sext32(v: u32) -> u64 {
    v as i32 as i64 as u64
}

#[test]
fn every_w_result_is_sign_extended() {
    // Source: RISC-V unprivileged spec, RV64I "Integer Computational
    // Instructions" and M extension: every *W instruction ignores the upper
    // 32 bits of its inputs and sign-extends its 32-bit result.
    let hi = 0x5555_5555_0000_0000u64; // garbage in the upper half
    let cases_rr: [(Op, u64, u64, u32); 16] = [
        (Op::Addw, hi | 0x7fff_ffff, hi | 1, 0x8000_0000),
        (Op::Addw, hi | 1, hi | 1, 2),
        (Op::Subw, hi, hi | 1, 0xffff_ffff),
        (Op::Subw, hi | 5, 3, 2),
        (Op::Sllw, hi | 1, 31, 0x8000_0000),
        (Op::Srlw, hi | 0x8000_0000, 0, 0x8000_0000),
        (Op::Srlw, hi | 0xffff_ffff, 1, 0x7fff_ffff),
        (Op::Sraw, hi | 0x8000_0000, 4, 0xf800_0000),
        (Op::Mulw, hi | 0x1_0000, 0x8000, 0x8000_0000),
        (Op::Mulw, hi | 3, 5, 15),
        (Op::Divw, hi | 0x8000_0000, 1, 0x8000_0000),
        (Op::Divuw, hi | 0xffff_fffe, 1, 0xffff_fffe),
        (Op::Divuw, hi | 0xffff_fffe, 2, 0x7fff_ffff),
        (Op::Remw, hi | 0x8000_0001, 0x10, 0xffff_fff1), // -2147483647 rem 16 = -15
        (Op::Remuw, hi | 0xffff_ffff, 0x8000_0000, 0x7fff_ffff),
        (Op::Remuw, hi | 0x8000_0001, 0xffff_ffff, 0x8000_0001),
    ];
    for (op, a, b, want) in cases_rr {
        assert_eq!(exec_rr(op, a, b), sext32(want), "{op} {a:#x}, {b:#x}");
    }
    let cases_ri: [(Op, u64, i32, u32); 6] = [
        (Op::Addiw, hi | 0x7fff_ffff, 1, 0x8000_0000),
        (Op::Addiw, hi | 0xffff_ffff, 0, 0xffff_ffff),
        (Op::Slliw, hi | 1, 31, 0x8000_0000),
        (Op::Srliw, hi | 0x8000_0000, 0, 0x8000_0000),
        (Op::Srliw, hi | 0x8000_0000, 1, 0x4000_0000),
        (Op::Sraiw, hi | 0x8000_0000, 31, 0xffff_ffff),
    ];
    for (op, a, imm, want) in cases_ri {
        assert_eq!(exec_ri(op, a, imm), sext32(want), "{op} {a:#x}, {imm}");
    }
}

#[test]
fn register_shift_amounts_are_masked() {
    // Source: RISC-V unprivileged spec, RV64I: SLL/SRL/SRA use the low 6 bits
    // of rs2; SLLW/SRLW/SRAW use the low 5 bits.
    let v = 0x8000_0000_0000_0001u64;
    assert_eq!(exec_rr(Op::Sll, v, 64 + 3), v << 3);
    assert_eq!(exec_rr(Op::Srl, v, 0xffff_ffff_ffff_ffc1), v >> 1);
    assert_eq!(exec_rr(Op::Sra, v, 128 + 63), u64::MAX);
    assert_eq!(exec_rr(Op::Sll, v, 64), v);
    assert_eq!(exec_rr(Op::Sllw, 1, 32 + 3), 8);
    assert_eq!(exec_rr(Op::Srlw, 0x80, 32 + 3), 0x10);
    assert_eq!(exec_rr(Op::Sraw, 0x8000_0000, 32 + 31), u64::MAX);
    assert_eq!(exec_rr(Op::Sllw, 1, 32), 1);
    // Immediate shifts up to 63 (RV64I) and 31 (W forms).
    assert_eq!(exec_ri(Op::Slli, 1, 63), MIN64);
    assert_eq!(exec_ri(Op::Srai, MIN64, 63), u64::MAX);
    assert_eq!(exec_ri(Op::Srli, MIN64, 63), 1);
}

#[test]
fn multiply_high_matches_wide_arithmetic() {
    // Source: RISC-V unprivileged spec, M extension: MULH, MULHSU and MULHU
    // return the upper 64 bits of the 128-bit product of signed x signed,
    // signed x unsigned and unsigned x unsigned operands. The reference is
    // i128/u128 arithmetic computed here.
    let mut rng = SplitMix64(0x5eed_0001);
    let mut pairs: Vec<(u64, u64)> = EDGE_VALUES
        .iter()
        .flat_map(|&a| EDGE_VALUES.iter().map(move |&b| (a, b)))
        .collect();
    pairs.extend((0..300).map(|_| (rng.next_u64(), rng.next_u64())));
    for (a, b) in pairs {
        let sa = i128::from(a as i64);
        let sb = i128::from(b as i64);
        let mulh = ((sa * sb) >> 64) as u64;
        let mulhsu = ((sa * i128::from(b)) >> 64) as u64;
        let mulhu = ((u128::from(a) * u128::from(b)) >> 64) as u64;
        assert_eq!(exec_rr(Op::Mulh, a, b), mulh, "mulh {a:#x} {b:#x}");
        assert_eq!(exec_rr(Op::Mulhsu, a, b), mulhsu, "mulhsu {a:#x} {b:#x}");
        assert_eq!(exec_rr(Op::Mulhu, a, b), mulhu, "mulhu {a:#x} {b:#x}");
        assert_eq!(
            exec_rr(Op::Mul, a, b),
            a.wrapping_mul(b),
            "mul {a:#x} {b:#x}"
        );
    }
}

#[test]
fn compares_signed_and_unsigned() {
    // Source: RISC-V unprivileged spec, RV32I "Integer Register-Immediate
    // Instructions": SLTIU sign-extends the immediate, then compares unsigned,
    // so `sltiu rd, rs1, 1` is "rs1 == 0".
    assert_eq!(exec_rr(Op::Slt, u64::MAX, 0), 1);
    assert_eq!(exec_rr(Op::Sltu, u64::MAX, 0), 0);
    assert_eq!(exec_ri(Op::Slti, u64::MAX, 0), 1);
    assert_eq!(exec_ri(Op::Sltiu, 0, 1), 1);
    assert_eq!(exec_ri(Op::Sltiu, 5, 1), 0);
    assert_eq!(exec_ri(Op::Sltiu, u64::MAX - 1, -1), 1);
    assert_eq!(exec_ri(Op::Sltiu, u64::MAX, -1), 0);
    assert_eq!(exec_ri(Op::Xori, 0x0f, -1), !0x0f);
    assert_eq!(exec_ri(Op::Andi, u64::MAX, -16), !15);
    assert_eq!(exec_ri(Op::Ori, 0, -2048), (-2048i64) as u64);
}

#[test]
fn upper_immediates_and_jumps() {
    // Source: RISC-V unprivileged spec, RV32I/RV64I: LUI places the 20-bit
    // immediate in bits 31..12 and sign-extends on RV64; AUIPC adds it to the
    // pc; JAL/JALR write pc + 4; JALR clears bit 0 of the target.
    let mut m = machine(&[
        ri(Op::Lui, A0, ZERO, 0xfffff000u32 as i32), // lui a0, 0xfffff
        ri(Op::Auipc, A1, ZERO, 0x1000),             // auipc a1, 1
        ri(Op::Jalr, A2, A2, 1),                     // jalr a2, 1(a2): rd == rs1
    ]);
    m.step().unwrap();
    assert_eq!(m.reg(A0), 0xffff_ffff_ffff_f000);
    m.step().unwrap();
    assert_eq!(m.reg(A1), TEXT_BASE + 4 + 0x1000);
    m.set_reg(A2, TEXT_BASE + 0x100);
    let j = m.step().unwrap();
    assert_eq!(m.reg(A2), TEXT_BASE + 12);
    assert_eq!(j.next_pc, TEXT_BASE + 0x100); // (0x100 + 1) & !1
    assert_eq!(m.pc(), TEXT_BASE + 0x100);
    assert!(j.taken);
}

#[test]
fn branches_taken_and_not_taken() {
    // Source: RISC-V unprivileged spec, RV32I "Conditional Branches".
    let cases: [(Op, u64, u64, bool); 12] = [
        (Op::Beq, 5, 5, true),
        (Op::Beq, 5, 6, false),
        (Op::Bne, 5, 6, true),
        (Op::Bne, 5, 5, false),
        (Op::Blt, u64::MAX, 0, true),
        (Op::Blt, 0, u64::MAX, false),
        (Op::Bge, 0, u64::MAX, true),
        (Op::Bge, 3, 3, true),
        (Op::Bltu, 0, u64::MAX, true),
        (Op::Bltu, u64::MAX, 0, false),
        (Op::Bgeu, u64::MAX, 0, true),
        (Op::Bgeu, 0, 1, false),
    ];
    for (op, a, b, want) in cases {
        let mut m = machine(&[br(op, A1, A2, -16)]);
        m.set_reg(A1, a);
        m.set_reg(A2, b);
        let d = m.step().unwrap();
        assert_eq!(d.taken, want, "{op} {a:#x} {b:#x}");
        let next = if want { TEXT_BASE - 16 } else { TEXT_BASE + 4 };
        assert_eq!(d.next_pc, next);
        assert_eq!(m.pc(), next);
        assert_eq!(d.dst, None);
        assert_eq!(d.srcs, [A1, A2]);
    }
}

#[test]
fn loads_extend_and_stores_truncate() {
    // Source: RISC-V unprivileged spec, RV32I/RV64I "Load and Store
    // Instructions": LB/LH/LW sign-extend, LBU/LHU/LWU zero-extend; memory is
    // little-endian.
    let data = [0x80, 0x81, 0x82, 0x83, 0x84, 0x85, 0x86, 0x87];
    let loads = [
        (Op::Lb, 0xffff_ffff_ffff_ff80u64),
        (Op::Lbu, 0x80),
        (Op::Lh, 0xffff_ffff_ffff_8180),
        (Op::Lhu, 0x8180),
        (Op::Lw, 0xffff_ffff_8382_8180),
        (Op::Lwu, 0x8382_8180),
        (Op::Ld, 0x8786_8584_8382_8180),
    ];
    for (op, want) in loads {
        let p = common::program_with_data(&[ri(op, A0, A1, 8)], &data, 64);
        let mut m = overlap_isa::Machine::new(&p, Default::default()).unwrap();
        m.set_reg(A1, DATA_BASE - 8);
        let d = m.step().unwrap();
        assert_eq!(m.reg(A0), want, "{op}");
        assert_eq!(d.mem_addr, DATA_BASE);
        assert_eq!(d.mem_size, op.mem_size());
    }
    let mut m = machine(&[
        st(Op::Sd, A0, 0, A1),
        st(Op::Sb, A2, 0, A1),
        st(Op::Sh, A2, 2, A1),
        st(Op::Sw, A2, 4, A1),
    ]);
    m.set_reg(A0, u64::MAX);
    m.set_reg(A1, DATA_BASE);
    m.set_reg(A2, 0x1122_3344_5566_7788);
    for _ in 0..4 {
        let d = m.step().unwrap();
        assert_eq!(d.dst, None);
        assert_eq!(d.srcs[0], A1);
    }
    assert_eq!(
        m.memory().read_u64(DATA_BASE).unwrap(),
        0x5566_7788_7788_ff88
    );
}

#[test]
fn fence_is_a_no_op() {
    let mut m = machine(&[Inst::new(
        Op::Fence,
        ZERO,
        ZERO,
        ZERO,
        overlap_isa::inst::FENCE_IORW_IORW,
    )]);
    let before: Vec<u64> = (0..32).map(|i| m.reg(Reg(i))).collect();
    let d = m.step().unwrap();
    assert_eq!(d.class, overlap_isa::OpClass::System);
    let after: Vec<u64> = (0..32).map(|i| m.reg(Reg(i))).collect();
    assert_eq!(before, after);
    assert_eq!(m.pc(), TEXT_BASE + 4);
}

use overlap_isa::Inst;
