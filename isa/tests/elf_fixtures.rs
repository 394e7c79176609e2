//! The committed ELF fixtures (`tests/data/elf`, built from `workloads/c` by
//! `workloads/c/build.sh --fixtures`) run on the functional model and print
//! and return exactly what the reference emulator printed and returned.

mod elf_support;

use elf_support::{KERNELS, MARCHES, fixture, fixture_dir, parse_expected, run_elf};
use overlap_isa::{Inst, Machine, MachineConfig, Op, Program, Reg, Segment, encode, load_elf};

#[test]
fn every_kernel_matches_the_reference_emulator() {
    for kernel in KERNELS {
        // Source: qemu-riscv64 7.2.22 (Debian) running the same files; its
        // stdout and exit status are recorded in NAME.expected.
        let path = fixture_dir().join(format!("{kernel}.expected"));
        let expected = parse_expected(&std::fs::read_to_string(&path).unwrap());
        for march in MARCHES {
            let (outcome, retired) = run_elf(&fixture(&format!("{kernel}.{march}.elf")));
            assert_eq!(outcome, expected, "{kernel}.{march}");
            // Each kernel is sized to run 0.2 to 3 million instructions.
            assert!(
                (200_000..=3_000_000).contains(&retired),
                "{kernel}.{march}: {retired} instructions"
            );
        }
    }
}

#[test]
fn compressed_builds_execute_compressed_instructions() {
    for kernel in KERNELS {
        let program = load_elf(&fixture(&format!("{kernel}.rv64imc.elf"))).unwrap();
        let mut m = Machine::new(&program, MachineConfig::default()).unwrap();
        let (mut total, mut short) = (0u64, 0u64);
        while m.exit_code().is_none() {
            let d = m.step().unwrap();
            total += 1;
            short += u64::from(d.inst.len == 2);
            assert_eq!(d.fall_through(), d.pc + u64::from(d.inst.len));
        }
        // gcc -march=rv64imc compresses most of a small kernel's hot code.
        assert!(short * 4 > total, "{kernel}: {short} of {total} compressed");

        // The rv64im build has none.
        let program = load_elf(&fixture(&format!("{kernel}.rv64im.elf"))).unwrap();
        let mut m = Machine::new(&program, MachineConfig::default()).unwrap();
        while m.exit_code().is_none() {
            assert_eq!(m.step().unwrap().inst.len, 4, "{kernel}.rv64im");
        }
    }
}

#[test]
fn segments_entry_and_symbols_come_from_the_file() {
    let program = load_elf(&fixture("route_chase.rv64im.elf")).unwrap();
    // Source: GNU readelf 2.40 (`readelf -lsW`) on the same file:
    //   LOAD 0x000000 0x10000 filesz 0xa78 memsz 0xa78     R E
    //   LOAD 0x000a78 0x11a78 filesz 0x000 memsz 0x110108  RW   (.bss only)
    //   _start = 0x103cc = entry, main = 0x10120, table = 0x21a78.
    assert_eq!(program.segments.len(), 2);
    let text = &program.segments[0];
    assert_eq!((text.addr, text.mem_size), (0x10000, 0xa78));
    assert!(text.executable && !text.writable);
    assert_eq!(text.runs.len(), 1);
    assert_eq!(text.runs[0].0, 0);
    assert_eq!(text.runs[0].1.len(), 0xa78);
    assert_eq!(&text.runs[0].1[..4], b"\x7fELF"); // the first segment maps the header
    let bss = &program.segments[1];
    assert_eq!((bss.addr, bss.mem_size), (0x11a78, 0x110108));
    assert!(bss.writable && !bss.executable);
    assert!(
        bss.runs.is_empty(),
        "no file bytes: nothing allocated for .bss"
    );

    assert_eq!(program.entry, 0x103cc);
    assert_eq!(program.symbols["_start"], program.entry);
    assert_eq!(program.symbols["main"], 0x10120);
    assert_eq!(program.symbols["table"], 0x21a78); // a static array (local)
    assert!(program.symbols.contains_key("print_flush"));
    // The region-of-interest marker that workloads/c/kit.h plants.
    assert!(program.symbols.contains_key("measure_start"));
    // Mapping symbols ($x...) and section or file symbols are left out.
    assert!(program.symbols.keys().all(|k| !k.starts_with('$')));
    assert!(!program.symbols.contains_key("route_chase.c"));
}

#[test]
fn the_first_unsupported_instruction_is_reported_with_pc_and_encoding() {
    // Overwrite the first instruction at the entry point with an instruction
    // outside RV64IMC and run.
    for (march, bytes, text) in [
        // fadd.d fa0, fa0, fa1: derived by hand from the RISC-V unprivileged
        // spec, D extension (OP-FP opcode 1010011, funct7 0000001).
        (
            "rv64im",
            0x02b5_7553u32.to_le_bytes().to_vec(),
            "0x02b57553",
        ),
        // c.fld fa0, 8(a1): GNU binutils 2.40 riscv64-linux-gnu-as.
        ("rv64imc", vec![0x88, 0x25], "16-bit instruction 0x2588"),
    ] {
        let mut file = fixture(&format!("flow_probe.{march}.elf"));
        let program = load_elf(&file).unwrap();
        let entry = program.entry;
        let seg = &program.segments[0];
        let offset = (entry - seg.addr) as usize; // the segment starts at file offset 0
        file[offset..offset + bytes.len()].copy_from_slice(&bytes);
        let program = load_elf(&file).unwrap();
        let err = Machine::new(&program, MachineConfig::default())
            .unwrap()
            .run()
            .unwrap_err();
        let msg = err.to_string();
        assert!(
            msg.contains(&format!("illegal instruction at pc {entry:#x}")),
            "{msg}"
        );
        assert!(msg.contains(text), "{msg}");
    }
}

#[test]
fn exit_group_ends_the_program() {
    // Source: Linux asm-generic/unistd.h, __NR_exit_group = 94 (recalled
    // from memory; glibc's _exit uses it).
    let code = [
        Inst::new(Op::Addi, Reg::A0, Reg::ZERO, Reg::ZERO, 7),
        Inst::new(Op::Addi, Reg::A7, Reg::ZERO, Reg::ZERO, 94),
        Inst::new(Op::Ecall, Reg::ZERO, Reg::ZERO, Reg::ZERO, 0),
    ];
    let bytes: Vec<u8> = code.iter().flat_map(|i| encode(i).to_le_bytes()).collect();
    let program = Program {
        segments: vec![Segment {
            name: ".text".into(),
            addr: 0x1000,
            mem_size: bytes.len() as u64,
            runs: vec![(0, bytes)],
            executable: true,
            writable: false,
        }],
        entry: 0x1000,
        ..Program::default()
    };
    let mut m = Machine::new(&program, MachineConfig::default()).unwrap();
    assert_eq!(m.run(), Ok(7));
    assert_eq!(m.retired(), 3);
}
