//! Decoded instructions: the operation, its operands and what the timing core
//! needs to know about it (op class, sources, destination).
//!
//! An [`Inst`] is eight bytes plus a length byte, small enough to pre-decode a
//! whole text segment into a flat table.

use serde::{Deserialize, Serialize};

/// An integer register number, `x0`..`x31`. `x0` reads as zero and ignores writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct Reg(pub u8);

impl Reg {
    /// `x0`, hardwired to zero.
    pub const ZERO: Reg = Reg(0);
    /// `x1`, the return address by the standard calling convention.
    pub const RA: Reg = Reg(1);
    /// `x2`, the stack pointer.
    pub const SP: Reg = Reg(2);
    /// `x5`, the alternate link register.
    pub const T0: Reg = Reg(5);
    /// `x10`, first argument and return value.
    pub const A0: Reg = Reg(10);
    /// `x17`, the system call number.
    pub const A7: Reg = Reg(17);

    /// The register's index, `0..32`.
    pub fn index(self) -> usize {
        self.0 as usize
    }

    /// True when this is a link register (`ra` or `t0`) in the sense of the
    /// RISC-V unprivileged spec's return-address-stack hints.
    pub fn is_link(self) -> bool {
        self.0 == 1 || self.0 == 5
    }
}

/// What kind of execution resource an instruction needs. The timing core maps
/// classes to reservation stations and functional units.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum OpClass {
    /// Integer arithmetic, logic, shifts, compares, LUI, AUIPC.
    Alu,
    /// Conditional branches.
    Branch,
    /// JAL and JALR.
    Jump,
    /// MUL, MULH, MULHSU, MULHU, MULW.
    Mul,
    /// DIV, DIVU, REM, REMU and their W forms.
    Div,
    /// Loads.
    Load,
    /// Stores.
    Store,
    /// FENCE, ECALL, EBREAK.
    System,
}

impl OpClass {
    /// Every class, in declaration order.
    pub const ALL: [OpClass; 8] = [
        OpClass::Alu,
        OpClass::Branch,
        OpClass::Jump,
        OpClass::Mul,
        OpClass::Div,
        OpClass::Load,
        OpClass::Store,
        OpClass::System,
    ];

    /// True for loads and stores.
    pub fn is_mem(self) -> bool {
        matches!(self, OpClass::Load | OpClass::Store)
    }
}

/// Every operation the functional model executes: RV64I and the M extension.
/// Compressed (16-bit) instructions decode into these same operations.
#[allow(missing_docs)] // the names are the RISC-V mnemonics
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum Op {
    Lui,
    Auipc,
    Jal,
    Jalr,
    Beq,
    Bne,
    Blt,
    Bge,
    Bltu,
    Bgeu,
    Lb,
    Lh,
    Lw,
    Ld,
    Lbu,
    Lhu,
    Lwu,
    Sb,
    Sh,
    Sw,
    Sd,
    Addi,
    Slti,
    Sltiu,
    Xori,
    Ori,
    Andi,
    Slli,
    Srli,
    Srai,
    Add,
    Sub,
    Sll,
    Slt,
    Sltu,
    Xor,
    Srl,
    Sra,
    Or,
    And,
    Addiw,
    Slliw,
    Srliw,
    Sraiw,
    Addw,
    Subw,
    Sllw,
    Srlw,
    Sraw,
    Fence,
    Ecall,
    Ebreak,
    Mul,
    Mulh,
    Mulhsu,
    Mulhu,
    Div,
    Divu,
    Rem,
    Remu,
    Mulw,
    Divw,
    Divuw,
    Remw,
    Remuw,
}

/// A decoded instruction. Fields that an operation does not use are zero.
///
/// `imm` holds the sign-extended immediate as the spec defines it for the
/// format (for LUI and AUIPC, already shifted left by 12; for branches and
/// jumps, the byte offset from the instruction's pc; for shifts, the shift
/// amount).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct Inst {
    /// The operation.
    pub op: Op,
    /// Destination register (`x0` when the operation writes none).
    pub rd: Reg,
    /// First source register (`x0` when unused).
    pub rs1: Reg,
    /// Second source register (`x0` when unused).
    pub rs2: Reg,
    /// Immediate, sign-extended.
    pub imm: i32,
    /// Encoded length in bytes: 4, or 2 for a compressed instruction.
    pub len: u8,
}
