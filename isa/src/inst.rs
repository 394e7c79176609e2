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

/// ABI names of `x0`..`x31`, in register order.
/// Source: RISC-V psABI (calling convention), integer register table.
const ABI_NAMES: [&str; 32] = [
    "zero", "ra", "sp", "gp", "tp", "t0", "t1", "t2", "s0", "s1", "a0", "a1", "a2", "a3", "a4",
    "a5", "a6", "a7", "s2", "s3", "s4", "s5", "s6", "s7", "s8", "s9", "s10", "s11", "t3", "t4",
    "t5", "t6",
];

impl Reg {
    /// The calling-convention name (`zero`, `ra`, `sp`, `a0`, ...).
    pub fn abi_name(self) -> &'static str {
        ABI_NAMES[self.index() & 31]
    }

    /// Parses `x0`..`x31`, any ABI name, or `fp` (an alias of `s0`).
    /// Returns `None` for anything else (case-sensitive, no whitespace).
    pub fn parse(name: &str) -> Option<Reg> {
        if let Some(digits) = name.strip_prefix('x') {
            // Reject "x", "x+1", "x01" and friends: plain decimal only.
            let canonical = !digits.is_empty()
                && digits.bytes().all(|b| b.is_ascii_digit())
                && (digits == "0" || !digits.starts_with('0'));
            if canonical {
                return digits.parse::<u8>().ok().filter(|&n| n < 32).map(Reg);
            }
            return None;
        }
        if name == "fp" {
            return Some(Reg(8));
        }
        ABI_NAMES
            .iter()
            .position(|&abi| abi == name)
            .map(|i| Reg(i as u8))
    }
}

impl std::fmt::Display for Reg {
    /// Writes the ABI name.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.abi_name())
    }
}

/// The 32-bit encoding format of an operation: which operand fields it has
/// and how its immediate is laid out.
/// Source: RISC-V unprivileged spec, chapter "RV32I Base Integer Instruction
/// Set", section "Base Instruction Formats", and the RV64I chapter for the
/// 6-bit shift amounts.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum Format {
    /// Register-register: `rd, rs1, rs2`.
    R,
    /// Register-immediate with a 12-bit signed immediate: `rd, rs1, imm`
    /// (OP-IMM, loads, JALR).
    I,
    /// Shift by a 6-bit immediate amount (SLLI, SRLI, SRAI): `rd, rs1, shamt`.
    Shift,
    /// Shift by a 5-bit immediate amount (SLLIW, SRLIW, SRAIW): `rd, rs1, shamt`.
    ShiftW,
    /// Store: `rs2, imm(rs1)` with a 12-bit signed immediate.
    S,
    /// Conditional branch: `rs1, rs2, offset`, a 13-bit signed even offset.
    B,
    /// Upper immediate: `rd, imm[31:12]`.
    U,
    /// Jump: `rd, offset`, a 21-bit signed even offset.
    J,
    /// FENCE: no registers; the immediate holds the `fm`, `pred` and `succ`
    /// fields (instruction bits 31..20).
    Fence,
    /// ECALL and EBREAK: no operands.
    System,
}

impl Format {
    /// True when the format has a destination register field.
    pub fn has_rd(self) -> bool {
        matches!(
            self,
            Format::R | Format::I | Format::Shift | Format::ShiftW | Format::U | Format::J
        )
    }

    /// True when the format has an `rs1` field.
    pub fn has_rs1(self) -> bool {
        matches!(
            self,
            Format::R | Format::I | Format::Shift | Format::ShiftW | Format::S | Format::B
        )
    }

    /// True when the format has an `rs2` field.
    pub fn has_rs2(self) -> bool {
        matches!(self, Format::R | Format::S | Format::B)
    }
}

impl Op {
    /// Every operation, in declaration order.
    pub const ALL: [Op; 65] = [
        Op::Lui,
        Op::Auipc,
        Op::Jal,
        Op::Jalr,
        Op::Beq,
        Op::Bne,
        Op::Blt,
        Op::Bge,
        Op::Bltu,
        Op::Bgeu,
        Op::Lb,
        Op::Lh,
        Op::Lw,
        Op::Ld,
        Op::Lbu,
        Op::Lhu,
        Op::Lwu,
        Op::Sb,
        Op::Sh,
        Op::Sw,
        Op::Sd,
        Op::Addi,
        Op::Slti,
        Op::Sltiu,
        Op::Xori,
        Op::Ori,
        Op::Andi,
        Op::Slli,
        Op::Srli,
        Op::Srai,
        Op::Add,
        Op::Sub,
        Op::Sll,
        Op::Slt,
        Op::Sltu,
        Op::Xor,
        Op::Srl,
        Op::Sra,
        Op::Or,
        Op::And,
        Op::Addiw,
        Op::Slliw,
        Op::Srliw,
        Op::Sraiw,
        Op::Addw,
        Op::Subw,
        Op::Sllw,
        Op::Srlw,
        Op::Sraw,
        Op::Fence,
        Op::Ecall,
        Op::Ebreak,
        Op::Mul,
        Op::Mulh,
        Op::Mulhsu,
        Op::Mulhu,
        Op::Div,
        Op::Divu,
        Op::Rem,
        Op::Remu,
        Op::Mulw,
        Op::Divw,
        Op::Divuw,
        Op::Remw,
        Op::Remuw,
    ];

    /// The execution resource class of this operation.
    pub fn class(self) -> OpClass {
        use Op::*;
        match self {
            Beq | Bne | Blt | Bge | Bltu | Bgeu => OpClass::Branch,
            Jal | Jalr => OpClass::Jump,
            Lb | Lh | Lw | Ld | Lbu | Lhu | Lwu => OpClass::Load,
            Sb | Sh | Sw | Sd => OpClass::Store,
            Mul | Mulh | Mulhsu | Mulhu | Mulw => OpClass::Mul,
            Div | Divu | Rem | Remu | Divw | Divuw | Remw | Remuw => OpClass::Div,
            Fence | Ecall | Ebreak => OpClass::System,
            Lui | Auipc | Addi | Slti | Sltiu | Xori | Ori | Andi | Slli | Srli | Srai | Add
            | Sub | Sll | Slt | Sltu | Xor | Srl | Sra | Or | And | Addiw | Slliw | Srliw
            | Sraiw | Addw | Subw | Sllw | Srlw | Sraw => OpClass::Alu,
        }
    }

    /// The 32-bit encoding format of this operation.
    pub fn format(self) -> Format {
        use Op::*;
        match self {
            Lui | Auipc => Format::U,
            Jal => Format::J,
            Jalr | Lb | Lh | Lw | Ld | Lbu | Lhu | Lwu | Addi | Slti | Sltiu | Xori | Ori
            | Andi | Addiw => Format::I,
            Beq | Bne | Blt | Bge | Bltu | Bgeu => Format::B,
            Sb | Sh | Sw | Sd => Format::S,
            Slli | Srli | Srai => Format::Shift,
            Slliw | Srliw | Sraiw => Format::ShiftW,
            Fence => Format::Fence,
            Ecall | Ebreak => Format::System,
            Add | Sub | Sll | Slt | Sltu | Xor | Srl | Sra | Or | And | Addw | Subw | Sllw
            | Srlw | Sraw | Mul | Mulh | Mulhsu | Mulhu | Div | Divu | Rem | Remu | Mulw | Divw
            | Divuw | Remw | Remuw => Format::R,
        }
    }

    /// The lower-case RISC-V mnemonic (`addi`, `ld`, `mulhsu`, ...).
    pub fn mnemonic(self) -> &'static str {
        use Op::*;
        match self {
            Lui => "lui",
            Auipc => "auipc",
            Jal => "jal",
            Jalr => "jalr",
            Beq => "beq",
            Bne => "bne",
            Blt => "blt",
            Bge => "bge",
            Bltu => "bltu",
            Bgeu => "bgeu",
            Lb => "lb",
            Lh => "lh",
            Lw => "lw",
            Ld => "ld",
            Lbu => "lbu",
            Lhu => "lhu",
            Lwu => "lwu",
            Sb => "sb",
            Sh => "sh",
            Sw => "sw",
            Sd => "sd",
            Addi => "addi",
            Slti => "slti",
            Sltiu => "sltiu",
            Xori => "xori",
            Ori => "ori",
            Andi => "andi",
            Slli => "slli",
            Srli => "srli",
            Srai => "srai",
            Add => "add",
            Sub => "sub",
            Sll => "sll",
            Slt => "slt",
            Sltu => "sltu",
            Xor => "xor",
            Srl => "srl",
            Sra => "sra",
            Or => "or",
            And => "and",
            Addiw => "addiw",
            Slliw => "slliw",
            Srliw => "srliw",
            Sraiw => "sraiw",
            Addw => "addw",
            Subw => "subw",
            Sllw => "sllw",
            Srlw => "srlw",
            Sraw => "sraw",
            Fence => "fence",
            Ecall => "ecall",
            Ebreak => "ebreak",
            Mul => "mul",
            Mulh => "mulh",
            Mulhsu => "mulhsu",
            Mulhu => "mulhu",
            Div => "div",
            Divu => "divu",
            Rem => "rem",
            Remu => "remu",
            Mulw => "mulw",
            Divw => "divw",
            Divuw => "divuw",
            Remw => "remw",
            Remuw => "remuw",
        }
    }

    /// The operation whose mnemonic is `name` (lower case, exact), if any.
    /// Pseudo-instructions (`li`, `mv`, `ret`, ...) are not operations.
    pub fn from_mnemonic(name: &str) -> Option<Op> {
        Op::ALL.iter().copied().find(|op| op.mnemonic() == name)
    }

    /// Access size in bytes of a load or store, 0 for every other operation.
    pub fn mem_size(self) -> u8 {
        use Op::*;
        match self {
            Lb | Lbu | Sb => 1,
            Lh | Lhu | Sh => 2,
            Lw | Lwu | Sw => 4,
            Ld | Sd => 8,
            _ => 0,
        }
    }
}

impl std::fmt::Display for Op {
    /// Writes the mnemonic.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.mnemonic())
    }
}

/// The `fm`/`pred`/`succ` field of a plain `fence` (`fence iorw, iorw`).
/// Source: RISC-V unprivileged spec, "Memory Ordering Instructions" (FENCE
/// with all of PI, PO, PR, PW, SI, SO, SR, SW set, fm = 0).
pub const FENCE_IORW_IORW: i32 = 0x0ff;

/// The `fm`/`pred`/`succ` field of `fence.tso` (fm = 1000, pred = succ = rw),
/// sign-extended from 12 bits as every I-type immediate is.
/// Source: RISC-V unprivileged spec, "Memory Ordering Instructions".
pub const FENCE_TSO: i32 = 0x833 - 0x1000;

impl Inst {
    /// `addi x0, x0, 0`, the canonical no-op.
    pub const NOP: Inst = Inst {
        op: Op::Addi,
        rd: Reg::ZERO,
        rs1: Reg::ZERO,
        rs2: Reg::ZERO,
        imm: 0,
        len: 4,
    };

    /// A 32-bit instruction from its fields. Pass `Reg::ZERO` (and 0) for the
    /// fields the operation's [`Format`] does not have; see [`Inst`] for the
    /// meaning of `imm`.
    pub fn new(op: Op, rd: Reg, rs1: Reg, rs2: Reg, imm: i32) -> Inst {
        Inst {
            op,
            rd,
            rs1,
            rs2,
            imm,
            len: 4,
        }
    }

    /// The execution resource class.
    pub fn class(&self) -> OpClass {
        self.op.class()
    }

    /// The register written, `None` if the operation writes none or `rd` is `x0`.
    pub fn dest(&self) -> Option<Reg> {
        if self.op.format().has_rd() && self.rd.0 != 0 {
            Some(self.rd)
        } else {
            None
        }
    }

    /// The registers read: `[rs1, rs2]`, with `x0` in place of an operand the
    /// operation does not have. (`x0` never creates a dependence.)
    pub fn sources(&self) -> [Reg; 2] {
        let format = self.op.format();
        [
            if format.has_rs1() {
                self.rs1
            } else {
                Reg::ZERO
            },
            if format.has_rs2() {
                self.rs2
            } else {
                Reg::ZERO
            },
        ]
    }

    /// True for a call: JAL or JALR whose `rd` is a link register (`ra` or
    /// `t0`), which pushes the return-address stack.
    /// Source: RISC-V unprivileged spec, JALR section, table "Return-address
    /// stack prediction hints encoded in the register operands of a JALR".
    pub fn is_call(&self) -> bool {
        matches!(self.op, Op::Jal | Op::Jalr) && self.rd.is_link()
    }

    /// True for a return: JALR whose `rs1` is a link register and whose `rd`
    /// is not the same link register, which pops the return-address stack.
    /// The usual case is `jalr x0, 0(ra)` (`ret`). A JALR with two different
    /// link registers (a co-routine swap) is both a return and a call: pop,
    /// then push.
    /// Source: RISC-V unprivileged spec, JALR section, table "Return-address
    /// stack prediction hints encoded in the register operands of a JALR"
    /// (rd not link, rs1 link: pop; rd link, rs1 link, rd != rs1: pop then push).
    pub fn is_return(&self) -> bool {
        self.op == Op::Jalr && self.rs1.is_link() && self.rd != self.rs1
    }

    /// The mnemonic (`fence.tso` for that special FENCE, else the operation's).
    pub fn mnemonic(&self) -> &'static str {
        if self.op == Op::Fence && self.imm == FENCE_TSO {
            "fence.tso"
        } else {
            self.op.mnemonic()
        }
    }
}

/// Writes a FENCE predecessor or successor set as the letters `iorw`.
fn write_fence_set(f: &mut std::fmt::Formatter<'_>, bits: i32) -> std::fmt::Result {
    if bits & 0xf == 0 {
        return f.write_str("0");
    }
    for (bit, letter) in [(8, 'i'), (4, 'o'), (2, 'r'), (1, 'w')] {
        if bits & bit != 0 {
            write!(f, "{letter}")?;
        }
    }
    Ok(())
}

impl std::fmt::Display for Inst {
    /// Standard assembly syntax with ABI register names: `addi a0, a0, 1`,
    /// `ld t0, 8(a1)`, `sd t0, 16(sp)`, `lui a0, 0x12345`. Branch and jump
    /// targets are printed as signed byte offsets from the instruction
    /// (`beq a0, a1, +8`, `jal ra, -16`) since an `Inst` does not know its pc.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mn = self.mnemonic();
        let (rd, rs1, rs2, imm) = (self.rd, self.rs1, self.rs2, self.imm);
        match self.op.format() {
            Format::R => write!(f, "{mn} {rd}, {rs1}, {rs2}"),
            Format::I if matches!(self.op.class(), OpClass::Load | OpClass::Jump) => {
                write!(f, "{mn} {rd}, {imm}({rs1})")
            }
            Format::I | Format::Shift | Format::ShiftW => write!(f, "{mn} {rd}, {rs1}, {imm}"),
            Format::S => write!(f, "{mn} {rs2}, {imm}({rs1})"),
            Format::B => write!(f, "{mn} {rs1}, {rs2}, {imm:+}"),
            Format::U => write!(f, "{mn} {rd}, 0x{:x}", (imm as u32) >> 12),
            Format::J => write!(f, "{mn} {rd}, {imm:+}"),
            Format::Fence => {
                if imm == FENCE_IORW_IORW || imm == FENCE_TSO {
                    f.write_str(mn)
                } else {
                    f.write_str("fence ")?;
                    write_fence_set(f, imm >> 4)?;
                    f.write_str(", ")?;
                    write_fence_set(f, imm)
                }
            }
            Format::System => f.write_str(mn),
        }
    }
}
