//! Files the ELF loader must refuse, each with a message that names the
//! problem. The bad executables are committed under `tests/data/elf`
//! (`bad_*.elf`, built by `workloads/c/build.sh --fixtures`); the rest are
//! made here from a good fixture.

mod elf_support;

use elf_support::fixture;
use overlap_isa::{ElfError, load_elf};

fn refuse(bytes: &[u8]) -> (ElfError, String) {
    let err = load_elf(bytes).expect_err("the loader accepted a bad file");
    let msg = err.to_string();
    (err, msg)
}

#[test]
fn text_file() {
    let (err, msg) = refuse(b"# route table for the lookup appliance\n10.0.0.0/8 via 3\n");
    assert!(matches!(err, ElfError::NotElf { .. }), "{err:?}");
    assert!(msg.starts_with("not an ELF file"), "{msg}");
    assert!(msg.contains("looks like text"), "{msg}");
    assert!(msg.contains("route table"), "{msg}");

    let (_, msg) = refuse(b"");
    assert!(msg.contains("empty"), "{msg}");
    let (_, msg) = refuse(&[0xca, 0xfe, 0xba, 0xbe, 0, 1]);
    assert!(msg.contains("ca fe ba be"), "{msg}");
}

#[test]
fn truncated_elf() {
    let good = fixture("size_histogram.rv64im.elf");
    // Inside the identification, inside the 64-byte header, and inside the
    // first segment's file bytes.
    for (len, what) in [
        (3, "ELF identification"),
        (10, "ELF identification"),
        (40, "64-bit ELF header"),
        (0x200, "[r-x] (file bytes 0x0.."),
    ] {
        let (err, msg) = refuse(&good[..len]);
        assert!(matches!(err, ElfError::Truncated { .. }), "{len}: {err:?}");
        assert!(msg.starts_with("truncated ELF file"), "{msg}");
        assert!(msg.contains(what), "{msg}");
        assert!(msg.contains(&format!("the file has {len}")), "{msg}");
    }
    // Cut inside the section header table at the end of the file (the
    // segments are complete, the symbol table's headers are not).
    let (err, msg) = refuse(&good[..good.len() - 10]);
    assert!(matches!(err, ElfError::Truncated { .. }), "{err:?}");
    assert!(msg.contains("section header table"), "{msg}");
}

#[test]
fn x86_64_elf() {
    // Built from workloads/c/bad/exit_x86_64.S with the host's GNU as and ld.
    let (err, msg) = refuse(&fixture("bad_x86_64.elf"));
    // Source: System V ABI, e_machine EM_X86_64 = 62.
    assert_eq!(
        err,
        ElfError::WrongMachine {
            machine: "x86-64".into(),
            e_machine: 62
        }
    );
    assert!(
        msg.contains("x86-64") && msg.contains("not RISC-V"),
        "{msg}"
    );
}

#[test]
fn rv32_elf() {
    // workloads/c/bad/exit.S, -march=rv32i -mabi=ilp32, ld -m elf32lriscv.
    let (err, msg) = refuse(&fixture("bad_rv32.elf"));
    assert_eq!(
        err,
        ElfError::Class32 {
            machine: "RISC-V".into()
        }
    );
    assert!(
        msg.contains("32-bit ELF file (ELFCLASS32) for RISC-V"),
        "{msg}"
    );
}

#[test]
fn dynamically_linked_elf() {
    // riscv64-linux-gnu-gcc's default output: a PIE against glibc.
    // Source for the interpreter: GNU readelf 2.40 -l on the same file.
    let (err, msg) = refuse(&fixture("bad_dynamic.elf"));
    assert!(matches!(err, ElfError::Dynamic { .. }), "{err:?}");
    assert!(msg.starts_with("dynamically linked executable"), "{msg}");
    assert!(msg.contains("/lib/ld-linux-riscv64-lp64d.so.1"), "{msg}");
    assert!(msg.contains("-static"), "{msg}");
}

#[test]
fn static_position_independent_elf() {
    // -static-pie -Wl,--no-dynamic-linker: ET_DYN with no interpreter.
    let (err, msg) = refuse(&fixture("bad_static_pie.elf"));
    assert_eq!(err, ElfError::PositionIndependent);
    assert!(msg.contains("ET_DYN") && msg.contains("-no-pie"), "{msg}");
}

#[test]
fn float_abi_elf() {
    // The kit built with -march=rv64imafd -mabi=lp64d.
    // Source: RISC-V ELF psABI, e_flags: EF_RISCV_FLOAT_ABI_DOUBLE = 0x4.
    let (err, msg) = refuse(&fixture("bad_float_abi.elf"));
    assert_eq!(
        err,
        ElfError::FloatAbi {
            abi: "lp64d double-float ABI",
            bits: 4
        }
    );
    assert!(msg.contains("lp64d double-float ABI"), "{msg}");
    assert!(msg.contains("-mabi=lp64"), "{msg}");
}

/// A good fixture with `patch` applied.
fn patched(patch: impl FnOnce(&mut Vec<u8>)) -> Vec<u8> {
    let mut bytes = fixture("route_chase.rv64im.elf");
    patch(&mut bytes);
    bytes
}

// Offsets in the ELF64 file header. Source: System V ABI, "ELF Header"
// (e_ident[EI_CLASS] = 4, e_ident[EI_DATA] = 5, e_type at 16, e_flags at 48).
const EI_DATA: usize = 5;
const E_TYPE: usize = 16;
const E_FLAGS: usize = 48;

#[test]
fn rve_and_single_float_flags() {
    // Source: RISC-V ELF psABI, e_flags: EF_RISCV_RVE = 0x8,
    // EF_RISCV_FLOAT_ABI_SINGLE = 0x2.
    let (err, msg) = refuse(&patched(|b| b[E_FLAGS] |= 0x8));
    assert_eq!(err, ElfError::Rve);
    assert!(msg.contains("RVE"), "{msg}");
    let (err, _) = refuse(&patched(|b| b[E_FLAGS] |= 0x2));
    assert_eq!(
        err,
        ElfError::FloatAbi {
            abi: "lp64f single-float ABI",
            bits: 2
        }
    );
}

#[test]
fn object_files_and_big_endian_files() {
    // Source: System V ABI, ET_REL = 1, ELFDATA2MSB = 2.
    let (err, msg) = refuse(&patched(|b| b[E_TYPE] = 1));
    assert!(matches!(err, ElfError::NotExecutable { .. }), "{err:?}");
    assert!(msg.contains("relocatable object file"), "{msg}");
    let (err, msg) = refuse(&patched(|b| b[EI_DATA] = 2));
    assert!(matches!(err, ElfError::BigEndian { .. }), "{err:?}");
    assert!(msg.contains("big-endian"), "{msg}");
}
