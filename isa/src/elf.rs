//! ELF loading: turns a static RV64 executable into a [`Program`].
//!
//! Accepted: 64-bit little-endian `ET_EXEC` files for RISC-V with the soft
//! float ABI (`lp64`) and no dynamic linking. Each `PT_LOAD` segment becomes
//! one [`Segment`]: its file bytes form a single initialised run and its
//! memory size is `p_memsz`, so `.bss` reads as zero without being
//! allocated; the read/write/execute flags give its permissions. The entry
//! point comes from the header and the symbol table (`.symtab`) fills
//! [`Program::symbols`].
//!
//! Everything else is refused with an [`ElfError`] that names the problem: a
//! file that is not ELF, one cut short, a 32-bit or big-endian file, another
//! machine (named), an object file or core dump, a dynamically linked or
//! position-independent executable, the hardware floating-point ABI (which
//! one), and the RV32E/RV64E base. Instructions outside RV64IMC are not
//! looked for here: the functional model reports the first one it reaches,
//! with its pc and encoding.
//!
//! Parsing is done by the `object` crate; this module only decides what is
//! acceptable. Source for every header field, constant and flag: the System V
//! ABI "ELF" chapters (file header, program header, symbol table) and the
//! RISC-V ELF psABI, section "File Header" (`e_flags`: `EF_RISCV_RVC` 0x1,
//! float ABI mask 0x6 with soft 0 / single 2 / double 4 / quad 6,
//! `EF_RISCV_RVE` 0x8), as spelled by `object::elf`.
//!
//! ```no_run
//! let bytes = std::fs::read("kernel.elf")?;
//! let program = overlap_isa::elf::load_elf(&bytes)?;
//! let mut machine = overlap_isa::Machine::new(&program, Default::default())?;
//! let exit_code = machine.run()?;
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use crate::program::{Program, Segment};
use object::elf;
use object::read::elf::{FileHeader, ProgramHeader, Sym};
use object::{Endianness, LittleEndian};
use std::collections::BTreeMap;
use thiserror::Error;

/// The first four bytes of every ELF file.
pub const ELF_MAGIC: [u8; 4] = *b"\x7fELF";

/// Size of the 64-bit ELF file header in bytes.
const EHDR64_BYTES: u64 = 64;

/// Why a file cannot be loaded.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum ElfError {
    /// The file does not start with the ELF magic bytes.
    #[error("not an ELF file: {what}; expected the bytes 7f 45 4c 46 (\"\\x7fELF\") at the start")]
    NotElf {
        /// What the file looks like instead.
        what: String,
    },
    /// The file ends before a structure it declares.
    #[error("truncated ELF file: {what} needs {needed_bytes} bytes, but the file has {len_bytes}")]
    Truncated {
        /// The structure cut short.
        what: String,
        /// The file size that structure needs.
        needed_bytes: u64,
        /// The actual file size.
        len_bytes: u64,
    },
    /// A 32-bit ELF file (`ELFCLASS32`).
    #[error(
        "32-bit ELF file (ELFCLASS32) for {machine}; only 64-bit RISC-V (RV64) \
         executables can be run: build with -march=rv64im -mabi=lp64"
    )]
    Class32 {
        /// The machine named in the header.
        machine: String,
    },
    /// A big-endian ELF file.
    #[error(
        "big-endian ELF file (ELFDATA2MSB) for {machine}; RISC-V executables are little-endian"
    )]
    BigEndian {
        /// The machine named in the header.
        machine: String,
    },
    /// An ELF file for another architecture.
    #[error(
        "ELF file for {machine} (e_machine {e_machine}), not RISC-V; \
         build with riscv64-linux-gnu-gcc"
    )]
    WrongMachine {
        /// The machine's name, or "machine number N".
        machine: String,
        /// The raw `e_machine` value.
        e_machine: u16,
    },
    /// Not an executable: an object file, a core dump or an unknown type.
    #[error("{what}, not an executable; link a static executable (ET_EXEC)")]
    NotExecutable {
        /// What the file is.
        what: String,
    },
    /// A dynamically linked executable (it has `PT_INTERP` or `PT_DYNAMIC`).
    #[error(
        "dynamically linked executable ({what}); only static executables can be \
         run: link with -static -no-pie -nostdlib (see workloads/c)"
    )]
    Dynamic {
        /// The program header that shows it, with the interpreter if named.
        what: String,
    },
    /// A position-independent executable (`ET_DYN` without an interpreter).
    #[error(
        "position-independent executable (ET_DYN), which needs relocating at \
         load time; link with -static -no-pie so that the file is ET_EXEC"
    )]
    PositionIndependent,
    /// The hardware floating-point calling convention.
    #[error(
        "the executable uses the {abi} (e_flags float-ABI bits = {bits:#x}); \
         floating point is not supported: build with -march=rv64im -mabi=lp64"
    )]
    FloatAbi {
        /// The ABI's name (`lp64f single-float ABI`, ...).
        abi: &'static str,
        /// The `e_flags` float-ABI bits (`e_flags & 0x6`).
        bits: u32,
    },
    /// The reduced RV64E base (16 integer registers).
    #[error(
        "the executable is built for the RVE base (e_flags EF_RISCV_RVE, 16 \
         registers); only the full RV64I base is supported"
    )]
    Rve,
    /// A structure that the `object` crate or a sanity check rejected.
    #[error("malformed ELF file: {0}")]
    Malformed(String),
}

/// A human name for an `e_machine` value.
/// Source: System V ABI, "ELF Header", `e_machine` values (as named in
/// `object::elf`).
pub fn machine_name(e_machine: u16) -> String {
    let name = match e_machine {
        elf::EM_RISCV => "RISC-V",
        elf::EM_X86_64 => "x86-64",
        elf::EM_386 => "x86 (i386)",
        elf::EM_AARCH64 => "AArch64 (64-bit Arm)",
        elf::EM_ARM => "32-bit Arm",
        elf::EM_PPC64 => "64-bit PowerPC",
        elf::EM_PPC => "32-bit PowerPC",
        elf::EM_MIPS => "MIPS",
        elf::EM_S390 => "IBM S/390",
        elf::EM_SPARCV9 => "SPARC V9",
        elf::EM_LOONGARCH => "LoongArch",
        other => return format!("machine number {other}"),
    };
    name.to_owned()
}

/// Describes the start of a file that is not ELF, for [`ElfError::NotElf`].
fn describe_non_elf(bytes: &[u8]) -> String {
    if bytes.is_empty() {
        return "the file is empty".to_owned();
    }
    let head = &bytes[..bytes.len().min(64)];
    let texty = head
        .iter()
        .all(|&b| (b >= 0x20 && b != 0x7f) || matches!(b, b'\t' | b'\n' | b'\r'));
    if texty {
        let head = String::from_utf8_lossy(head);
        let first_line = head.lines().next().unwrap_or("").trim();
        let shown: String = first_line.chars().take(32).collect();
        return format!("it looks like text (starts with {shown:?})");
    }
    let hex: Vec<String> = bytes.iter().take(4).map(|b| format!("{b:02x}")).collect();
    format!("it starts with the bytes {}", hex.join(" "))
}

/// The `e_machine` field of a 32-bit or 64-bit header of either byte order,
/// read through `object`, if the file holds a whole header.
fn header_machine(bytes: &[u8], class: u8) -> Option<u16> {
    if class == elf::ELFCLASS32 {
        let header = elf::FileHeader32::<Endianness>::parse(bytes).ok()?;
        Some(header.e_machine(header.endian().ok()?))
    } else {
        let header = elf::FileHeader64::<Endianness>::parse(bytes).ok()?;
        Some(header.e_machine(header.endian().ok()?))
    }
}

fn truncated(what: impl Into<String>, needed_bytes: u64, bytes: &[u8]) -> ElfError {
    ElfError::Truncated {
        what: what.into(),
        needed_bytes,
        len_bytes: bytes.len() as u64,
    }
}

/// `r`, `w`, `x` letters of a segment's flags.
fn perm_letters(flags: u32) -> String {
    let letter = |mask, c| if flags & mask != 0 { c } else { '-' };
    [
        letter(elf::PF_R, 'r'),
        letter(elf::PF_W, 'w'),
        letter(elf::PF_X, 'x'),
    ]
    .iter()
    .collect()
}

/// Loads a static RV64 executable. See the module documentation for what is
/// accepted and what each refusal means.
pub fn load_elf(bytes: &[u8]) -> Result<Program, ElfError> {
    // The magic, class and byte order first (bytes 0..6 of the
    // identification), so that each refusal can say precisely what the file
    // is; everything after that is read through `object`.
    if bytes.len() < 4 || bytes[..4] != ELF_MAGIC {
        if !bytes.is_empty() && ELF_MAGIC.starts_with(bytes) {
            return Err(truncated("the ELF identification", 16, bytes));
        }
        return Err(ElfError::NotElf {
            what: describe_non_elf(bytes),
        });
    }
    if bytes.len() < 16 {
        return Err(truncated("the ELF identification", 16, bytes));
    }
    // EI_CLASS is byte 4 of the identification, EI_DATA byte 5.
    let (class, data) = (bytes[4], bytes[5]);
    if data != elf::ELFDATA2LSB && data != elf::ELFDATA2MSB {
        return Err(ElfError::Malformed(format!(
            "unknown data encoding {data} in byte 5 of the identification"
        )));
    }
    let machine = || {
        header_machine(bytes, class).map_or_else(
            || "an unknown machine (the header is cut short)".to_owned(),
            machine_name,
        )
    };
    match class {
        elf::ELFCLASS64 => {}
        elf::ELFCLASS32 => return Err(ElfError::Class32 { machine: machine() }),
        other => {
            return Err(ElfError::Malformed(format!(
                "unknown class {other} in byte 4 of the identification"
            )));
        }
    }
    if data == elf::ELFDATA2MSB {
        return Err(ElfError::BigEndian { machine: machine() });
    }
    if (bytes.len() as u64) < EHDR64_BYTES {
        return Err(truncated("the 64-bit ELF header", EHDR64_BYTES, bytes));
    }
    let header = elf::FileHeader64::<LittleEndian>::parse(bytes)
        .map_err(|e| ElfError::Malformed(e.to_string()))?;
    let endian = LittleEndian;

    let e_machine = header.e_machine(endian);
    if e_machine != elf::EM_RISCV {
        return Err(ElfError::WrongMachine {
            machine: machine_name(e_machine),
            e_machine,
        });
    }
    let e_type = header.e_type(endian);
    match e_type {
        elf::ET_EXEC | elf::ET_DYN => {}
        elf::ET_REL => {
            return Err(ElfError::NotExecutable {
                what: "a relocatable object file (ET_REL)".to_owned(),
            });
        }
        elf::ET_CORE => {
            return Err(ElfError::NotExecutable {
                what: "a core dump (ET_CORE)".to_owned(),
            });
        }
        other => {
            return Err(ElfError::NotExecutable {
                what: format!("an ELF file of type {other}"),
            });
        }
    }

    // Program headers.
    let phoff = header.e_phoff(endian);
    let phnum = u64::from(header.e_phnum(endian));
    let phentsize = u64::from(header.e_phentsize(endian));
    let ph_end = phoff.saturating_add(phnum.saturating_mul(phentsize));
    if ph_end > bytes.len() as u64 {
        return Err(truncated(
            format!("the program header table ({phnum} entries at offset {phoff:#x})"),
            ph_end,
            bytes,
        ));
    }
    let phdrs = header
        .program_headers(endian, bytes)
        .map_err(|e| ElfError::Malformed(e.to_string()))?;
    // An interpreter means dynamic linking; without one, ET_DYN is a
    // (static) position-independent executable, which would still need
    // relocating; ET_EXEC with PT_DYNAMIC needs shared libraries.
    for ph in phdrs {
        if ph.p_type(endian) == elf::PT_INTERP {
            let interpreter = ph
                .interpreter(endian, bytes)
                .ok()
                .flatten()
                .map(|name| String::from_utf8_lossy(name).into_owned());
            return Err(ElfError::Dynamic {
                what: match interpreter {
                    Some(name) => format!("PT_INTERP asks for the interpreter {name}"),
                    None => "it has a PT_INTERP program header".to_owned(),
                },
            });
        }
    }
    if e_type == elf::ET_DYN {
        return Err(ElfError::PositionIndependent);
    }
    if phdrs.iter().any(|ph| ph.p_type(endian) == elf::PT_DYNAMIC) {
        return Err(ElfError::Dynamic {
            what: "it has a PT_DYNAMIC program header".to_owned(),
        });
    }

    let e_flags = header.e_flags(endian);
    let float_bits = e_flags & elf::EF_RISCV_FLOAT_ABI;
    let float_abi = match float_bits {
        elf::EF_RISCV_FLOAT_ABI_SOFT => None,
        elf::EF_RISCV_FLOAT_ABI_SINGLE => Some("lp64f single-float ABI"),
        elf::EF_RISCV_FLOAT_ABI_DOUBLE => Some("lp64d double-float ABI"),
        _ => Some("lp64q quad-float ABI"),
    };
    if let Some(abi) = float_abi {
        return Err(ElfError::FloatAbi {
            abi,
            bits: float_bits,
        });
    }
    if e_flags & elf::EF_RISCV_RVE != 0 {
        return Err(ElfError::Rve);
    }

    // Loadable segments.
    let mut segments = Vec::new();
    for (index, ph) in phdrs.iter().enumerate() {
        if ph.p_type(endian) != elf::PT_LOAD {
            continue;
        }
        let (vaddr, offset) = (ph.p_vaddr(endian), ph.p_offset(endian));
        let (filesz, memsz) = (ph.p_filesz(endian), ph.p_memsz(endian));
        let flags = ph.p_flags(endian);
        let name = format!("ELF segment {index} [{}]", perm_letters(flags));
        if filesz > memsz {
            return Err(ElfError::Malformed(format!(
                "{name} has more file bytes ({filesz:#x}) than memory bytes ({memsz:#x})"
            )));
        }
        if vaddr.checked_add(memsz).is_none() {
            return Err(ElfError::Malformed(format!(
                "{name} at {vaddr:#x} with {memsz:#x} bytes runs past the end of the address space"
            )));
        }
        let file_end = offset.saturating_add(filesz);
        if file_end > bytes.len() as u64 {
            return Err(truncated(
                format!("{name} (file bytes {offset:#x}..{file_end:#x})"),
                file_end,
                bytes,
            ));
        }
        if memsz == 0 {
            continue;
        }
        let file_bytes = &bytes[offset as usize..file_end as usize];
        segments.push(Segment {
            name,
            addr: vaddr,
            mem_size: memsz,
            runs: if file_bytes.is_empty() {
                Vec::new()
            } else {
                vec![(0, file_bytes.to_vec())]
            },
            executable: flags & elf::PF_X != 0,
            writable: flags & elf::PF_W != 0,
        });
    }
    if segments.is_empty() {
        return Err(ElfError::Malformed(
            "no loadable (PT_LOAD) segment with a nonzero size".to_owned(),
        ));
    }
    let entry = header.e_entry(endian);
    let entry_ok = segments
        .iter()
        .any(|s| s.executable && entry.wrapping_sub(s.addr) < s.mem_size);
    if !entry_ok {
        return Err(ElfError::Malformed(format!(
            "the entry point {entry:#x} is outside every executable segment"
        )));
    }

    Ok(Program {
        segments,
        entry,
        symbols: symbols(header, bytes)?,
    })
}

/// The named code and data symbols of `.symtab` (an empty map for a stripped
/// file). When two symbols share a name (static functions of two files), a
/// global or weak one wins over a local one, else the first in the table.
fn symbols(
    header: &elf::FileHeader64<LittleEndian>,
    bytes: &[u8],
) -> Result<BTreeMap<String, u64>, ElfError> {
    let endian = LittleEndian;
    let mut out = BTreeMap::new();
    let shoff = header.e_shoff(endian);
    if shoff == 0 {
        return Ok(out);
    }
    let shnum = u64::from(header.e_shnum(endian));
    let sh_end = shoff.saturating_add(shnum.saturating_mul(u64::from(header.e_shentsize(endian))));
    if sh_end > bytes.len() as u64 {
        return Err(truncated(
            format!("the section header table ({shnum} entries at offset {shoff:#x})"),
            sh_end,
            bytes,
        ));
    }
    let malformed = |e: object::read::Error| ElfError::Malformed(e.to_string());
    let sections = header.sections(endian, bytes).map_err(malformed)?;
    let table = sections
        .symbols(endian, bytes, elf::SHT_SYMTAB)
        .map_err(malformed)?;
    let mut global = std::collections::BTreeSet::new();
    for sym in table.iter() {
        let kind = sym.st_type();
        let wanted = matches!(kind, elf::STT_NOTYPE | elf::STT_FUNC | elf::STT_OBJECT)
            && sym.st_shndx(endian) != elf::SHN_UNDEF;
        if !wanted {
            continue;
        }
        let Ok(name) = table.symbol_name(endian, sym) else {
            continue;
        };
        // Skip unnamed symbols, assembler-local labels and mapping symbols.
        if name.is_empty() || name.starts_with(b".L") || name.starts_with(b"$") {
            continue;
        }
        let name = String::from_utf8_lossy(name).into_owned();
        let is_global = sym.st_bind() != elf::STB_LOCAL;
        let value = sym.st_value(endian);
        if is_global && global.insert(name.clone()) {
            out.insert(name, value);
        } else {
            out.entry(name).or_insert(value);
        }
    }
    Ok(out)
}
