//! The functional model: architectural state (32 integer registers, the pc,
//! sparse memory) and an interpreter that executes one instruction per
//! [`Machine::step`], yielding its [`DynInst`] record.
//!
//! One step reads the pc, fetches the pre-decoded instruction, reads its
//! source registers and, for a load, memory; it writes the destination
//! register, memory for a store, and the pc. Executable segments are decoded
//! lazily into a flat table indexed by `(pc - base) / 2` (2-byte granularity:
//! 16-bit compressed instructions (RV64C) and 32-bit ones mix freely, and the
//! pc advances by each instruction's length); a store into an executable segment
//! drops the entries it overlaps so that self-modifying code stays exact.
//!
//! System calls (ECALL, number in `a7`): 93 `exit(a0)`, 94 `exit_group(a0)`
//! (the same as exit for a single thread) and 64
//! `write(fd = a0, buf = a1, len = a2)` to captured stdout (fd 1) or stderr
//! (fd 2). Source: the Linux RISC-V system call numbers
//! (`asm-generic/unistd.h`), recalled from memory.
//!
//! ```
//! use overlap_isa::{encode, Inst, Machine, MachineConfig, Op, OpClass, Program, Reg, Segment};
//!
//! // a0 = 40; a0 += 2; exit(a0)
//! let code = [
//!     Inst::new(Op::Addi, Reg::A0, Reg::ZERO, Reg::ZERO, 40),
//!     Inst::new(Op::Addi, Reg::A0, Reg::A0, Reg::ZERO, 2),
//!     Inst::new(Op::Addi, Reg::A7, Reg::ZERO, Reg::ZERO, 93),
//!     Inst::new(Op::Ecall, Reg::ZERO, Reg::ZERO, Reg::ZERO, 0),
//! ];
//! let bytes: Vec<u8> = code.iter().flat_map(|i| encode(i).to_le_bytes()).collect();
//! let program = Program {
//!     segments: vec![Segment {
//!         name: ".text".into(),
//!         addr: 0x1000,
//!         mem_size: bytes.len() as u64,
//!         runs: vec![(0, bytes)],
//!         executable: true,
//!         writable: false,
//!     }],
//!     entry: 0x1000,
//!     ..Program::default()
//! };
//! let mut machine = Machine::new(&program, MachineConfig::default())?;
//! let first = machine.step()?;
//! assert_eq!((first.pc, first.dst, first.next_pc), (0x1000, Some(Reg::A0), 0x1004));
//! assert_eq!(machine.run()?, 42);
//! assert_eq!(machine.retired(), 4);
//! # Ok::<(), overlap_isa::ExecError>(())
//! ```

use crate::compressed::decode_compressed;
use crate::decode::{DecodeError, decode};
use crate::dyninst::DynInst;
use crate::inst::{Inst, Op, OpClass, Reg};
use crate::memory::{MemError, Memory};
use crate::program::Program;
use thiserror::Error;

/// System call number of `exit`.
pub const SYS_EXIT: u64 = 93;
/// System call number of `exit_group`, which ends every thread; with one
/// thread it is the same as `exit`.
pub const SYS_EXIT_GROUP: u64 = 94;
/// System call number of `write`.
pub const SYS_WRITE: u64 = 64;

/// Name of the stack region in messages.
pub const STACK_REGION: &str = "stack";

/// Settings of the functional model.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MachineConfig {
    /// Stop with [`ExecError::InstLimit`] after this many instructions.
    pub max_insts: Option<u64>,
    /// Cap on memory the program may touch (materialised pages, captured
    /// output and the pre-decoded instruction tables). Default 1 GiB.
    pub mem_cap_bytes: u64,
    /// Size of the stack region. Default 8 MiB.
    pub stack_bytes: u64,
    /// One past the highest stack address. `sp` starts here, rounded down to
    /// 16 bytes. Default `0x7fff_f000_0000`, high in the lower half of a
    /// 48-bit address space, far from where programs are usually linked.
    pub stack_top: u64,
}

impl Default for MachineConfig {
    fn default() -> MachineConfig {
        MachineConfig {
            max_insts: None,
            mem_cap_bytes: 1 << 30,
            stack_bytes: 8 << 20,
            stack_top: 0x7fff_f000_0000,
        }
    }
}

/// Why the functional model stopped.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum ExecError {
    /// The program image or the stack could not be mapped.
    #[error("cannot load the program: {0}")]
    Load(MemError),
    /// `step` after the program exited.
    #[error("the program has already exited")]
    Halted,
    /// [`MachineConfig::max_insts`] instructions have run.
    #[error("instruction limit of {limit} reached at pc {pc:#x}")]
    InstLimit {
        /// The limit.
        limit: u64,
        /// The pc of the next instruction, which did not run.
        pc: u64,
    },
    /// ECALL with a number in `a7` other than write, exit and exit_group.
    #[error(
        "unknown system call {number} in a7 at pc {pc:#x} \
         (supported: 64 write, 93 exit, 94 exit_group)"
    )]
    UnknownSyscall {
        /// The number in `a7`.
        number: u64,
        /// The pc of the ECALL.
        pc: u64,
    },
    /// `write` to a file descriptor other than 1 and 2.
    #[error(
        "write system call at pc {pc:#x} to file descriptor {fd}; \
         only 1 (stdout) and 2 (stderr) are supported"
    )]
    BadFileDescriptor {
        /// The descriptor in `a0`.
        fd: u64,
        /// The pc of the ECALL.
        pc: u64,
    },
    /// EBREAK.
    #[error("breakpoint (ebreak) at pc {pc:#x}")]
    Breakpoint {
        /// The pc of the EBREAK.
        pc: u64,
    },
    /// The instruction at the pc is not an RV64IMC instruction this model
    /// executes. The message names the pc and the encoding in hex.
    #[error("illegal instruction at pc {pc:#x}: {cause}")]
    IllegalInstruction {
        /// The pc.
        pc: u64,
        /// What the decoder said (part of the message, not a separate source).
        cause: DecodeError,
    },
    /// The pc is outside every mapped region.
    #[error("instruction fetch from unmapped address {pc:#x}")]
    FetchUnmapped {
        /// The pc.
        pc: u64,
    },
    /// The pc is in a region that is not executable, or the instruction runs
    /// past the end of its executable region.
    #[error("instruction fetch at {pc:#x} from non-executable region {region}")]
    FetchNotExecutable {
        /// The pc.
        pc: u64,
        /// The region's name.
        region: String,
    },
    /// The pc is odd.
    #[error("misaligned instruction fetch at pc {pc:#x}")]
    FetchMisaligned {
        /// The pc.
        pc: u64,
    },
    /// A load, store or system call touched memory it may not.
    #[error("{what} at pc {pc:#x}: {cause}")]
    Memory {
        /// `load`, `store` or `write system call`.
        what: &'static str,
        /// The pc of the instruction.
        pc: u64,
        /// What the memory said (part of this error's message, so not a
        /// separate source in the error chain).
        cause: MemError,
    },
}

/// A pre-decoded instruction with what every step needs about it, kept
/// small (20 bytes) so that a fetch copies little.
#[derive(Clone, Copy, Debug)]
struct Slot {
    inst: Inst,
    class: OpClass,
    srcs: [Reg; 2],
    dst: Option<Reg>,
    /// Index of the register written, 0 (x0) when none is.
    dst_index: u8,
    mem_size: u8,
}

fn new_slot(inst: Inst) -> Slot {
    Slot {
        inst,
        class: inst.class(),
        srcs: inst.sources(),
        dst: inst.dest(),
        dst_index: inst.dest().map_or(0, |r| r.0 & 31),
        mem_size: inst.op.mem_size(),
    }
}

/// What [`Machine::execute`] returns per instruction: the full record for
/// [`Machine::step`], nothing for [`Machine::run`] (so that the record is
/// never built).
trait Record {
    fn from_record(d: DynInst) -> Self;
}

impl Record for DynInst {
    #[inline(always)]
    fn from_record(d: DynInst) -> DynInst {
        d
    }
}

impl Record for () {
    #[inline(always)]
    fn from_record(_: DynInst) {}
}

/// The decoded-instruction table of one executable region.
#[derive(Clone, Debug)]
struct TextTable {
    base: u64,
    size_bytes: u64,
    /// Entry `i` holds the instruction at `base + 2 * i`, once decoded.
    slots: Vec<Option<Slot>>,
}

/// The functional model. See the module documentation.
#[derive(Clone)]
pub struct Machine {
    regs: [u64; 32],
    pc: u64,
    mem: Memory,
    /// The active text table (the one the last fetch hit), held here rather
    /// than behind `text` so that a fetch is a compare and an index.
    /// `text[active].slots` is empty while its slots live in `active_slots`.
    active_base: u64,
    active_size_bytes: u64,
    active_slots: Vec<Option<Slot>>,
    active: usize,
    /// Every executable region's table.
    text: Vec<TextTable>,
    /// Whether any executable region is writable (stores must then
    /// invalidate decoded entries).
    text_writable: bool,
    retired: u64,
    /// `step` stops when `retired` reaches this: the instruction limit, or 0
    /// once the program has exited.
    stop_at: u64,
    max_insts: Option<u64>,
    exit_code: Option<i64>,
    stdout: Vec<u8>,
    stderr: Vec<u8>,
}

impl std::fmt::Debug for Machine {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Machine")
            .field("pc", &format_args!("{:#x}", self.pc))
            .field("retired", &self.retired)
            .field("exit_code", &self.exit_code)
            .field("mem", &self.mem)
            .finish_non_exhaustive()
    }
}

impl Machine {
    /// Maps the program's segments and the stack, copies the initialised
    /// bytes in, points `sp` at the stack top (16-byte aligned) and the pc at
    /// `program.entry`. Every other register is zero.
    pub fn new(program: &Program, cfg: MachineConfig) -> Result<Machine, ExecError> {
        let mut mem = Memory::new(cfg.mem_cap_bytes);
        let mut text = Vec::new();
        let mut table_bytes = 0u64;
        for seg in &program.segments {
            let init_end = seg
                .runs
                .last()
                .map_or(0, |(off, bytes)| off + bytes.len() as u64);
            if seg.mem_size == 0 && init_end == 0 {
                continue;
            }
            mem.map(
                &seg.name,
                seg.addr,
                seg.mem_size.max(init_end),
                seg.writable,
                seg.executable,
            )
            .map_err(ExecError::Load)?;
            for (off, bytes) in &seg.runs {
                mem.load_bytes(seg.addr.wrapping_add(*off), bytes)
                    .map_err(ExecError::Load)?;
            }
            if seg.executable {
                let size_bytes = seg.mem_size.max(init_end);
                let n_slots = size_bytes.div_ceil(2);
                table_bytes += n_slots * std::mem::size_of::<Option<Slot>>() as u64;
                if mem.touched_bytes() + table_bytes > cfg.mem_cap_bytes {
                    return Err(ExecError::Load(MemError::CapExceeded {
                        cap_bytes: cfg.mem_cap_bytes,
                    }));
                }
                text.push(TextTable {
                    base: seg.addr,
                    size_bytes,
                    slots: vec![None; n_slots as usize],
                });
            }
        }
        if cfg.stack_bytes > 0 {
            let base = cfg.stack_top.checked_sub(cfg.stack_bytes).ok_or_else(|| {
                ExecError::Load(MemError::BadRegion {
                    name: STACK_REGION.to_owned(),
                    start: 0,
                    size_bytes: cfg.stack_bytes,
                })
            })?;
            mem.map(STACK_REGION, base, cfg.stack_bytes, true, false)
                .map_err(ExecError::Load)?;
        }
        let text_writable = mem.regions().iter().any(|r| r.executable && r.writable);
        let mut regs = [0; 32];
        regs[Reg::SP.index()] = cfg.stack_top & !15;
        Ok(Machine {
            regs,
            pc: program.entry,
            mem,
            active_base: 0,
            active_size_bytes: 0,
            active_slots: Vec::new(),
            active: 0,
            text,
            text_writable,
            retired: 0,
            stop_at: cfg.max_insts.unwrap_or(u64::MAX),
            max_insts: cfg.max_insts,
            exit_code: None,
            stdout: Vec::new(),
            stderr: Vec::new(),
        })
    }

    /// The address of the next instruction.
    pub fn pc(&self) -> u64 {
        self.pc
    }

    /// Sets the address of the next instruction.
    pub fn set_pc(&mut self, pc: u64) {
        self.pc = pc;
    }

    /// The value of a register (`x0` reads as zero).
    pub fn reg(&self, r: Reg) -> u64 {
        self.regs[r.index() & 31]
    }

    /// Sets a register; writes to `x0` are ignored.
    pub fn set_reg(&mut self, r: Reg, value: u64) {
        if r.0 != 0 {
            self.regs[r.index() & 31] = value;
        }
    }

    /// Instructions executed so far.
    pub fn retired(&self) -> u64 {
        self.retired
    }

    /// The exit code, once the program has called `exit`.
    pub fn exit_code(&self) -> Option<i64> {
        self.exit_code
    }

    /// Bytes the program wrote to file descriptor 1.
    pub fn stdout(&self) -> &[u8] {
        &self.stdout
    }

    /// Bytes the program wrote to file descriptor 2.
    pub fn stderr(&self) -> &[u8] {
        &self.stderr
    }

    /// The memory, for inspection.
    pub fn memory(&self) -> &Memory {
        &self.mem
    }

    /// The memory, for changes. Drops every pre-decoded instruction (they are
    /// decoded again on their next fetch), since the caller may rewrite code.
    pub fn memory_mut(&mut self) -> &mut Memory {
        self.active_slots.fill(None);
        for table in &mut self.text {
            table.slots.fill(None);
        }
        &mut self.mem
    }

    /// Runs until the program exits and returns its exit code (`a0` of the
    /// exit call), or the first error.
    pub fn run(&mut self) -> Result<i64, ExecError> {
        loop {
            match self.execute::<()>() {
                Ok(()) => {}
                Err(ExecError::Halted) => {
                    return Ok(self.exit_code.expect("halted implies an exit code"));
                }
                Err(e) => return Err(e),
            }
        }
    }

    /// Executes one instruction and returns its record. On an error the
    /// architectural state is unchanged (the pc still names the instruction
    /// that failed), except for `write` output already captured.
    #[inline]
    pub fn step(&mut self) -> Result<DynInst, ExecError> {
        self.execute::<DynInst>()
    }

    /// Executes one instruction; `R` is [`DynInst`] to build the record, or
    /// `()` to skip it (for [`Machine::run`]).
    #[inline(always)]
    fn execute<R: Record>(&mut self) -> Result<R, ExecError> {
        if self.retired >= self.stop_at {
            return Err(self.stop_error());
        }
        let pc = self.pc;
        let slot = loop {
            if let Some(slot) = self.lookup(pc) {
                break slot;
            }
            self.fill(pc)?;
        };
        let inst = slot.inst;
        let rs1 = self.regs[inst.rs1.index() & 31];
        let rs2 = self.regs[inst.rs2.index() & 31];
        let imm = inst.imm as i64 as u64;
        let fall = pc.wrapping_add(u64::from(inst.len));
        let addr = rs1.wrapping_add(imm);
        let mut next_pc = fall;
        let mut mem_addr = 0;
        let mut taken = false;

        // Result of a W-form operation: the low 32 bits, sign-extended.
        let w = |v: u32| v as i32 as i64 as u64;
        let branch = |cond: bool, next_pc: &mut u64, taken: &mut bool| {
            if cond {
                *next_pc = pc.wrapping_add(imm);
                *taken = true;
            }
        };
        let load_err = |cause| ExecError::Memory {
            what: "load",
            pc,
            cause,
        };
        let store_err = |cause| ExecError::Memory {
            what: "store",
            pc,
            cause,
        };

        // Source: RISC-V unprivileged spec, RV32I, RV64I and M chapters, for
        // every operation below.
        let value: u64 = match inst.op {
            Op::Lui => imm,
            Op::Auipc => pc.wrapping_add(imm),
            Op::Jal => {
                next_pc = pc.wrapping_add(imm);
                taken = true;
                fall
            }
            Op::Jalr => {
                next_pc = addr & !1;
                taken = true;
                fall
            }
            Op::Beq => {
                branch(rs1 == rs2, &mut next_pc, &mut taken);
                0
            }
            Op::Bne => {
                branch(rs1 != rs2, &mut next_pc, &mut taken);
                0
            }
            Op::Blt => {
                branch((rs1 as i64) < (rs2 as i64), &mut next_pc, &mut taken);
                0
            }
            Op::Bge => {
                branch((rs1 as i64) >= (rs2 as i64), &mut next_pc, &mut taken);
                0
            }
            Op::Bltu => {
                branch(rs1 < rs2, &mut next_pc, &mut taken);
                0
            }
            Op::Bgeu => {
                branch(rs1 >= rs2, &mut next_pc, &mut taken);
                0
            }
            Op::Lb => {
                mem_addr = addr;
                self.mem.read_u8(addr).map_err(load_err)? as i8 as i64 as u64
            }
            Op::Lh => {
                mem_addr = addr;
                self.mem.read_u16(addr).map_err(load_err)? as i16 as i64 as u64
            }
            Op::Lw => {
                mem_addr = addr;
                self.mem.read_u32(addr).map_err(load_err)? as i32 as i64 as u64
            }
            Op::Ld => {
                mem_addr = addr;
                self.mem.read_u64(addr).map_err(load_err)?
            }
            Op::Lbu => {
                mem_addr = addr;
                u64::from(self.mem.read_u8(addr).map_err(load_err)?)
            }
            Op::Lhu => {
                mem_addr = addr;
                u64::from(self.mem.read_u16(addr).map_err(load_err)?)
            }
            Op::Lwu => {
                mem_addr = addr;
                u64::from(self.mem.read_u32(addr).map_err(load_err)?)
            }
            Op::Sb | Op::Sh | Op::Sw | Op::Sd => {
                let store_addr = rs1.wrapping_add(imm);
                mem_addr = store_addr;
                match inst.op {
                    Op::Sb => self.mem.write_u8(store_addr, rs2 as u8),
                    Op::Sh => self.mem.write_u16(store_addr, rs2 as u16),
                    Op::Sw => self.mem.write_u32(store_addr, rs2 as u32),
                    _ => self.mem.write_u64(store_addr, rs2),
                }
                .map_err(store_err)?;
                if self.text_writable {
                    self.invalidate_text(store_addr, slot.mem_size);
                }
                0
            }
            Op::Addi => rs1.wrapping_add(imm),
            Op::Slti => u64::from((rs1 as i64) < (imm as i64)),
            Op::Sltiu => u64::from(rs1 < imm),
            Op::Xori => rs1 ^ imm,
            Op::Ori => rs1 | imm,
            Op::Andi => rs1 & imm,
            Op::Slli => rs1 << (imm & 63),
            Op::Srli => rs1 >> (imm & 63),
            Op::Srai => ((rs1 as i64) >> (imm & 63)) as u64,
            Op::Add => rs1.wrapping_add(rs2),
            Op::Sub => rs1.wrapping_sub(rs2),
            // Register shifts use the low 6 bits of rs2 (5 for the W forms).
            Op::Sll => rs1 << (rs2 & 63),
            Op::Slt => u64::from((rs1 as i64) < (rs2 as i64)),
            Op::Sltu => u64::from(rs1 < rs2),
            Op::Xor => rs1 ^ rs2,
            Op::Srl => rs1 >> (rs2 & 63),
            Op::Sra => ((rs1 as i64) >> (rs2 & 63)) as u64,
            Op::Or => rs1 | rs2,
            Op::And => rs1 & rs2,
            Op::Addiw => w((rs1 as u32).wrapping_add(imm as u32)),
            Op::Slliw => w((rs1 as u32) << (imm & 31)),
            Op::Srliw => w((rs1 as u32) >> (imm & 31)),
            Op::Sraiw => w(((rs1 as i32) >> (imm & 31)) as u32),
            Op::Addw => w((rs1 as u32).wrapping_add(rs2 as u32)),
            Op::Subw => w((rs1 as u32).wrapping_sub(rs2 as u32)),
            Op::Sllw => w((rs1 as u32) << (rs2 & 31)),
            Op::Srlw => w((rs1 as u32) >> (rs2 & 31)),
            Op::Sraw => w(((rs1 as i32) >> (rs2 & 31)) as u32),
            Op::Fence => 0,
            Op::Ecall => return self.ecall(pc, slot).map(R::from_record),
            Op::Ebreak => return Err(ExecError::Breakpoint { pc }),
            Op::Mul => rs1.wrapping_mul(rs2),
            Op::Mulh => ((i128::from(rs1 as i64) * i128::from(rs2 as i64)) >> 64) as u64,
            Op::Mulhsu => ((i128::from(rs1 as i64) * i128::from(rs2)) >> 64) as u64,
            Op::Mulhu => ((u128::from(rs1) * u128::from(rs2)) >> 64) as u64,
            // Division by zero and signed overflow never trap. Source: RISC-V
            // unprivileged spec, M extension, table "Semantics for division
            // by zero and division overflow".
            Op::Div => {
                if rs2 == 0 {
                    u64::MAX
                } else {
                    (rs1 as i64).wrapping_div(rs2 as i64) as u64
                }
            }
            Op::Divu => rs1.checked_div(rs2).unwrap_or(u64::MAX),
            Op::Rem => {
                if rs2 == 0 {
                    rs1
                } else {
                    (rs1 as i64).wrapping_rem(rs2 as i64) as u64
                }
            }
            Op::Remu => rs1.checked_rem(rs2).unwrap_or(rs1),
            Op::Mulw => w((rs1 as u32).wrapping_mul(rs2 as u32)),
            Op::Divw => {
                let (a, b) = (rs1 as i32, rs2 as i32);
                if b == 0 {
                    u64::MAX
                } else {
                    w(a.wrapping_div(b) as u32)
                }
            }
            Op::Divuw => match (rs1 as u32).checked_div(rs2 as u32) {
                Some(q) => w(q),
                None => u64::MAX,
            },
            Op::Remw => {
                let (a, b) = (rs1 as i32, rs2 as i32);
                if b == 0 {
                    w(a as u32)
                } else {
                    w(a.wrapping_rem(b) as u32)
                }
            }
            Op::Remuw => w((rs1 as u32).checked_rem(rs2 as u32).unwrap_or(rs1 as u32)),
        };
        // Operations that write no register (and writes to x0) land in x0,
        // which is then cleared: cheaper than a branch.
        self.regs[usize::from(slot.dst_index & 31)] = value;
        self.regs[0] = 0;
        self.pc = next_pc;
        self.retired += 1;
        Ok(R::from_record(DynInst {
            pc,
            inst,
            class: slot.class,
            srcs: slot.srcs,
            dst: slot.dst,
            mem_addr,
            mem_size: slot.mem_size,
            taken,
            next_pc,
        }))
    }

    #[cold]
    fn stop_error(&self) -> ExecError {
        match (self.exit_code, self.max_insts) {
            (Some(_), _) => ExecError::Halted,
            (None, Some(limit)) => ExecError::InstLimit { limit, pc: self.pc },
            (None, None) => unreachable!("stop_at is u64::MAX without a limit"),
        }
    }

    /// The pre-decoded instruction at `pc`, if the active table has it.
    #[inline(always)]
    fn lookup(&self, pc: u64) -> Option<Slot> {
        let offset = pc.wrapping_sub(self.active_base);
        if offset < self.active_size_bytes {
            self.active_slots
                .get((offset >> 1) as usize)
                .copied()
                .flatten()
        } else {
            None
        }
    }

    /// Makes text table `t` the active one.
    fn activate(&mut self, t: usize) {
        if t == self.active && !self.active_slots.is_empty() {
            return;
        }
        if !self.active_slots.is_empty() {
            std::mem::swap(&mut self.active_slots, &mut self.text[self.active].slots);
        }
        std::mem::swap(&mut self.active_slots, &mut self.text[t].slots);
        self.active = t;
        self.active_base = self.text[t].base;
        self.active_size_bytes = self.text[t].size_bytes;
    }

    /// Makes the table holding `pc` active and decodes the instruction into
    /// it, or says why it cannot be fetched.
    #[cold]
    #[inline(never)]
    fn fill(&mut self, pc: u64) -> Result<(), ExecError> {
        if pc & 1 != 0 {
            return Err(ExecError::FetchMisaligned { pc });
        }
        let Some(t) = self
            .text
            .iter()
            .position(|t| pc.wrapping_sub(t.base) < t.size_bytes)
        else {
            return Err(match self.mem.region_at(pc) {
                Some(region) => ExecError::FetchNotExecutable {
                    pc,
                    region: region.name.clone(),
                },
                None => ExecError::FetchUnmapped { pc },
            });
        };
        self.activate(t);
        let index = ((pc - self.active_base) >> 1) as usize;
        if self.active_slots[index].is_none() {
            let inst = self.decode_at(pc)?;
            self.active_slots[index] = Some(new_slot(inst));
        }
        Ok(())
    }

    /// Decodes the instruction at `pc`, which lies in the active text table.
    fn decode_at(&self, pc: u64) -> Result<Inst, ExecError> {
        let fetch_err = |cause| ExecError::Memory {
            what: "instruction fetch",
            pc,
            cause,
        };
        let low = self.mem.read_u16(pc).map_err(fetch_err)?;
        // Low bits other than 11: a 16-bit compressed instruction.
        if low & 3 != 3 {
            return decode_compressed(low)
                .map_err(|cause| ExecError::IllegalInstruction { pc, cause });
        }
        if pc + 4 > self.active_base + self.active_size_bytes {
            let region = self.mem.region_at(pc + 2).map(|r| r.name.clone());
            return Err(match region {
                Some(region) => ExecError::FetchNotExecutable { pc, region },
                None => ExecError::FetchUnmapped { pc },
            });
        }
        let word = u32::from(low) | u32::from(self.mem.read_u16(pc + 2).map_err(fetch_err)?) << 16;
        decode(word).map_err(|cause| ExecError::IllegalInstruction { pc, cause })
    }

    /// Drops decoded entries that a store to `[addr, addr + size)` overlaps.
    fn invalidate_text(&mut self, addr: u64, size: u8) {
        let end = addr.saturating_add(u64::from(size));
        for (t, table) in self.text.iter_mut().enumerate() {
            let slots = if t == self.active && !self.active_slots.is_empty() {
                &mut self.active_slots
            } else {
                &mut table.slots
            };
            let table_end = table.base + table.size_bytes;
            // An instruction starting up to 3 bytes before `addr` may overlap it.
            let lo = addr.saturating_sub(3).max(table.base);
            let hi = end.min(table_end);
            if lo < hi {
                let first = ((lo - table.base) >> 1) as usize;
                let last = ((hi - 1 - table.base) >> 1) as usize;
                slots[first..=last].fill(None);
            }
        }
    }

    /// Executes ECALL at `pc`.
    #[cold]
    #[inline(never)]
    fn ecall(&mut self, pc: u64, slot: Slot) -> Result<DynInst, ExecError> {
        let number = self.regs[Reg::A7.index()];
        let a0 = self.regs[Reg::A0.index()];
        let dst = match number {
            SYS_EXIT | SYS_EXIT_GROUP => {
                self.exit_code = Some(a0 as i64);
                None
            }
            SYS_WRITE => {
                let (buf, len) = (self.regs[11], self.regs[12]);
                let mem_err = |cause| ExecError::Memory {
                    what: "write system call",
                    pc,
                    cause,
                };
                let captured = (self.stdout.len() + self.stderr.len()) as u64;
                let cap = self.mem.cap_bytes();
                if captured.saturating_add(len) > cap.saturating_sub(self.mem.touched_bytes()) {
                    return Err(mem_err(MemError::CapExceeded { cap_bytes: cap }));
                }
                let out = match a0 {
                    1 => &mut self.stdout,
                    2 => &mut self.stderr,
                    fd => return Err(ExecError::BadFileDescriptor { fd, pc }),
                };
                let start = out.len();
                out.resize(start + len as usize, 0);
                if let Err(e) = self.mem.read_bytes(buf, &mut out[start..]) {
                    out.truncate(start);
                    return Err(mem_err(e));
                }
                self.regs[Reg::A0.index()] = len;
                Some(Reg::A0)
            }
            _ => return Err(ExecError::UnknownSyscall { number, pc }),
        };
        let next_pc = pc.wrapping_add(u64::from(slot.inst.len));
        self.pc = next_pc;
        self.retired += 1;
        if self.exit_code.is_some() {
            self.stop_at = 0;
        }
        Ok(DynInst {
            pc,
            inst: slot.inst,
            class: OpClass::System,
            // The call reads its number and first argument; `write` also
            // returns a value in a0.
            srcs: [Reg::A7, Reg::A0],
            dst,
            mem_addr: 0,
            mem_size: 0,
            taken: false,
            next_pc,
        })
    }
}
