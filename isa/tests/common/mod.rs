//! Shared helpers: build a `Program` straight from `Inst`s (no assembler
//! needed) and run single instructions.
#![allow(dead_code)]

use overlap_isa::encode::encode;
use overlap_isa::{Inst, Machine, MachineConfig, Op, Program, Reg, Segment};

pub const ZERO: Reg = Reg(0);
pub const RA: Reg = Reg(1);
pub const SP: Reg = Reg(2);
pub const T0: Reg = Reg(5);
pub const T1: Reg = Reg(6);
pub const T2: Reg = Reg(7);
pub const A0: Reg = Reg(10);
pub const A1: Reg = Reg(11);
pub const A2: Reg = Reg(12);
pub const A3: Reg = Reg(13);
pub const A7: Reg = Reg(17);

/// Where test code is placed.
pub const TEXT_BASE: u64 = 0x1_0000;
/// Where test data is placed.
pub const DATA_BASE: u64 = 0x10_0000;

pub fn rr(op: Op, rd: Reg, rs1: Reg, rs2: Reg) -> Inst {
    Inst::new(op, rd, rs1, rs2, 0)
}

pub fn ri(op: Op, rd: Reg, rs1: Reg, imm: i32) -> Inst {
    Inst::new(op, rd, rs1, ZERO, imm)
}

/// Store: `op rs2, imm(rs1)`.
pub fn st(op: Op, rs2: Reg, imm: i32, rs1: Reg) -> Inst {
    Inst::new(op, ZERO, rs1, rs2, imm)
}

pub fn br(op: Op, rs1: Reg, rs2: Reg, offset: i32) -> Inst {
    Inst::new(op, ZERO, rs1, rs2, offset)
}

pub fn ecall() -> Inst {
    Inst::new(Op::Ecall, ZERO, ZERO, ZERO, 0)
}

/// `addi a7, zero, 93; ecall`: exit with the code in a0.
pub fn exit_seq() -> [Inst; 2] {
    [ri(Op::Addi, A7, ZERO, 93), ecall()]
}

pub fn code_bytes(insts: &[Inst]) -> Vec<u8> {
    insts.iter().flat_map(|i| encode(i).to_le_bytes()).collect()
}

/// A program: read-only executable text at `TEXT_BASE`, and if `data_size`
/// is non-zero a writable data segment at `DATA_BASE` starting with `data`.
pub fn program_with_data(insts: &[Inst], data: &[u8], data_size: u64) -> Program {
    let code = code_bytes(insts);
    let mut segments = vec![Segment {
        name: ".text".into(),
        addr: TEXT_BASE,
        mem_size: code.len() as u64,
        runs: vec![(0, code)],
        executable: true,
        writable: false,
    }];
    if data_size > 0 {
        segments.push(Segment {
            name: ".data".into(),
            addr: DATA_BASE,
            mem_size: data_size,
            runs: if data.is_empty() {
                vec![]
            } else {
                vec![(0, data.to_vec())]
            },
            executable: false,
            writable: true,
        });
    }
    Program {
        segments,
        entry: TEXT_BASE,
        symbols: Default::default(),
    }
}

pub fn program(insts: &[Inst]) -> Program {
    program_with_data(insts, &[], 4096)
}

pub fn machine(insts: &[Inst]) -> Machine {
    Machine::new(&program(insts), MachineConfig::default()).expect("program loads")
}

/// Runs `op a0, a1, a2` with a1 = a, a2 = b and returns a0.
pub fn exec_rr(op: Op, a: u64, b: u64) -> u64 {
    let mut m = machine(&[rr(op, A0, A1, A2)]);
    m.set_reg(A1, a);
    m.set_reg(A2, b);
    m.step().expect("executes");
    m.reg(A0)
}

/// Runs `op a0, a1, imm` with a1 = a and returns a0.
pub fn exec_ri(op: Op, a: u64, imm: i32) -> u64 {
    let mut m = machine(&[ri(op, A0, A1, imm)]);
    m.set_reg(A1, a);
    m.step().expect("executes");
    m.reg(A0)
}

/// splitmix64, for seeded test inputs.
/// Source: Steele, Lea and Flood, "Fast splittable pseudorandom number
/// generators" (OOPSLA 2014); constants recalled from memory.
pub struct SplitMix64(pub u64);

impl SplitMix64 {
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// Interesting 64-bit operands: edges of the signed and unsigned ranges.
pub const EDGE_VALUES: [u64; 12] = [
    0,
    1,
    2,
    3,
    0x7fff_ffff,
    0x8000_0000,
    0xffff_ffff,
    0x7fff_ffff_ffff_ffff,
    0x8000_0000_0000_0000,
    0xffff_ffff_ffff_fffe,
    0xffff_ffff_ffff_ffff,
    0x1234_5678_9abc_def0,
];
