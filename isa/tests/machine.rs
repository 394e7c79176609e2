//! The functional model as a whole: programs, system calls, errors and the
//! dynamic-instruction records.

mod common;

use common::*;
use overlap_isa::decode::DecodeErrorKind;
use overlap_isa::encode::encode;
use overlap_isa::{
    ExecError, Inst, Machine, MachineConfig, MemError, Op, OpClass, Program, Segment,
};

/// `lui a1, DATA_BASE >> 12`: DATA_BASE fits an upper immediate.
fn la_data(rd: overlap_isa::Reg) -> Inst {
    ri(Op::Lui, rd, ZERO, DATA_BASE as i32)
}

fn counted_loop(n: i32) -> Vec<Inst> {
    let mut p = vec![
        ri(Op::Addi, T0, ZERO, n),
        ri(Op::Addi, A0, ZERO, 0),
        // loop:
        ri(Op::Addi, A0, A0, 3),
        ri(Op::Addi, T0, T0, -1),
        br(Op::Bne, T0, ZERO, -8),
    ];
    p.extend(exit_seq());
    p
}

#[test]
fn counted_loop_runs_to_exit() {
    let mut m = machine(&counted_loop(10));
    assert_eq!(m.run(), Ok(30));
    // 2 set-up + 3 per iteration x 10 + 2 to exit, counted by hand.
    assert_eq!(m.retired(), 34);
    assert_eq!(m.exit_code(), Some(30));
    assert_eq!(m.step(), Err(ExecError::Halted));
    assert_eq!(m.run(), Ok(30));
}

#[test]
fn dynamic_stream_is_consistent() {
    let mut m = machine(&counted_loop(10));
    let mut records = Vec::new();
    loop {
        match m.step() {
            Ok(d) => records.push(d),
            Err(ExecError::Halted) => break,
            Err(e) => panic!("{e}"),
        }
    }
    assert_eq!(records.len(), 34);
    for pair in records.windows(2) {
        assert_eq!(pair[0].next_pc, pair[1].pc);
    }
    let branches: Vec<_> = records
        .iter()
        .filter(|d| d.class == OpClass::Branch)
        .collect();
    assert_eq!(branches.len(), 10);
    assert_eq!(branches.iter().filter(|d| d.taken).count(), 9);
    let last = records.last().unwrap();
    assert_eq!(last.class, OpClass::System);
    assert_eq!(last.dst, None);
    assert!(records.iter().all(|d| d.inst.len == 4));
    let dec = records[3];
    assert_eq!(dec.inst.to_string(), "addi t0, t0, -1");
    assert_eq!(dec.dst, Some(T0));
    assert_eq!(dec.srcs, [T0, ZERO]);
    assert_eq!(dec.fall_through(), dec.next_pc);
}

#[test]
fn write_system_call_captures_output() {
    let mut code = vec![
        ri(Op::Addi, A0, ZERO, 1),
        la_data(A1),
        ri(Op::Addi, A2, ZERO, 6),
        ri(Op::Addi, A7, ZERO, 64),
        ecall(),
        ri(Op::Addi, A3, A0, 0), // a3 = bytes written
        ri(Op::Addi, A0, ZERO, 2),
        ri(Op::Addi, A1, A1, 6),
        ri(Op::Addi, A2, ZERO, 4),
        ecall(),
        ri(Op::Addi, A0, A3, 0),
    ];
    code.extend(exit_seq());
    let p = program_with_data(&code, b"hello\noops", 4096);
    let mut m = Machine::new(&p, MachineConfig::default()).unwrap();
    assert_eq!(m.run(), Ok(6));
    assert_eq!(m.stdout(), b"hello\n");
    assert_eq!(m.stderr(), b"oops");
}

#[test]
fn write_ecall_record_names_a0() {
    let code = [
        ri(Op::Addi, A0, ZERO, 1),
        la_data(A1),
        ri(Op::Addi, A7, ZERO, 64),
        ecall(),
    ];
    let mut m = machine(&code);
    for _ in 0..3 {
        m.step().unwrap();
    }
    let d = m.step().unwrap();
    assert_eq!(d.class, OpClass::System);
    assert_eq!(d.dst, Some(A0));
    assert_eq!(m.reg(A0), 0); // zero bytes written
}

#[test]
fn system_call_errors() {
    let mut m = machine(&[
        ri(Op::Addi, A0, ZERO, 3),
        ri(Op::Addi, A7, ZERO, 64),
        ecall(),
    ]);
    m.step().unwrap();
    m.step().unwrap();
    let e = m.step().unwrap_err();
    assert_eq!(
        e,
        ExecError::BadFileDescriptor {
            fd: 3,
            pc: TEXT_BASE + 8
        }
    );
    assert!(e.to_string().contains("file descriptor 3"), "{e}");
    assert_eq!(m.pc(), TEXT_BASE + 8, "a failed step leaves the pc");
    assert_eq!(m.retired(), 2);

    let mut m = machine(&[ri(Op::Addi, A7, ZERO, 1000), ecall()]);
    let e = m.run().unwrap_err();
    assert_eq!(
        e,
        ExecError::UnknownSyscall {
            number: 1000,
            pc: TEXT_BASE + 4
        }
    );
    assert!(e.to_string().contains("0x10004"), "{e}");

    // write() from an unmapped buffer.
    let mut m = machine(&[
        ri(Op::Addi, A0, ZERO, 1),
        ri(Op::Addi, A2, ZERO, 8),
        ri(Op::Addi, A7, ZERO, 64),
        ecall(),
    ]);
    assert!(matches!(
        m.run(),
        Err(ExecError::Memory {
            cause: MemError::Unmapped { addr: 0, .. },
            ..
        })
    ));
    assert!(m.stdout().is_empty());
}

#[test]
fn ebreak_and_illegal_instructions_name_the_pc() {
    let mut m = machine(&[Inst::NOP, Inst::new(Op::Ebreak, ZERO, ZERO, ZERO, 0)]);
    let e = m.run().unwrap_err();
    assert_eq!(e, ExecError::Breakpoint { pc: TEXT_BASE + 4 });
    assert_eq!(e.to_string(), "breakpoint (ebreak) at pc 0x10004");

    // A word of zeros after one nop: illegal (the spec defines all-zero as illegal).
    let mut p = program(&[Inst::NOP]);
    p.segments[0].runs[0].1.extend([0, 0, 0, 0]);
    p.segments[0].mem_size += 4;
    let mut m = Machine::new(&p, MachineConfig::default()).unwrap();
    match m.run().unwrap_err() {
        ExecError::IllegalInstruction { pc, cause } => {
            assert_eq!(pc, TEXT_BASE + 4);
            // The low halfword is an all-zero 16-bit parcel, reserved by the
            // C extension chapter.
            assert_eq!(cause.kind, DecodeErrorKind::Reserved);
        }
        e => panic!("unexpected {e}"),
    }
    // csrrw zero, mstatus, a0: a privileged CSR write (derived by hand).
    let mut p = program(&[]);
    p.segments[0].runs[0].1 = 0x3005_1073u32.to_le_bytes().to_vec();
    p.segments[0].mem_size = 4;
    let e = Machine::new(&p, MachineConfig::default())
        .unwrap()
        .run()
        .unwrap_err();
    assert!(e.to_string().contains("0x30051073"), "{e}");
    assert!(e.to_string().contains("pc 0x10000"), "{e}");
}

#[test]
fn fetch_errors() {
    // Jump to address 0, which nothing maps.
    let mut m = machine(&[ri(Op::Jalr, ZERO, ZERO, 0)]);
    m.step().unwrap();
    assert_eq!(m.step(), Err(ExecError::FetchUnmapped { pc: 0 }));
    // Jump into the data segment.
    let mut m = machine(&[la_data(T0), ri(Op::Jalr, ZERO, T0, 0)]);
    m.step().unwrap();
    m.step().unwrap();
    let e = m.step().unwrap_err();
    assert_eq!(
        e,
        ExecError::FetchNotExecutable {
            pc: DATA_BASE,
            region: ".data".into()
        }
    );
    assert!(e.to_string().contains(".data"));
    // Running off the end of the text.
    let mut m = machine(&[Inst::NOP]);
    m.step().unwrap();
    assert!(matches!(
        m.step(),
        Err(ExecError::FetchUnmapped { pc }) if pc == TEXT_BASE + 4
    ));
    // Odd pc via set_pc.
    let mut m = machine(&[Inst::NOP]);
    m.set_pc(TEXT_BASE + 1);
    assert_eq!(
        m.step(),
        Err(ExecError::FetchMisaligned { pc: TEXT_BASE + 1 })
    );
}

#[test]
fn instruction_limit() {
    let cfg = MachineConfig {
        max_insts: Some(1000),
        ..MachineConfig::default()
    };
    let mut m = Machine::new(&program(&[ri(Op::Jal, ZERO, ZERO, 0)]), cfg).unwrap();
    let e = m.run().unwrap_err();
    assert_eq!(
        e,
        ExecError::InstLimit {
            limit: 1000,
            pc: TEXT_BASE
        }
    );
    assert_eq!(m.retired(), 1000);
    assert!(e.to_string().contains("1000"));
    // Exactly enough instructions: exits normally.
    let cfg = MachineConfig {
        max_insts: Some(34),
        ..MachineConfig::default()
    };
    let mut m = Machine::new(&program(&counted_loop(10)), cfg).unwrap();
    assert_eq!(m.run(), Ok(30));
}

#[test]
fn stack_pointer_and_stack_region() {
    let cfg = MachineConfig {
        stack_top: 0x4000_0009,
        stack_bytes: 0x1_0000,
        ..MachineConfig::default()
    };
    let mut m = Machine::new(
        &program(&[
            st(Op::Sd, RA, -8, SP),
            ri(Op::Ld, A0, SP, -8),
            ri(Op::Ld, A1, SP, -0x800),
        ]),
        cfg,
    )
    .unwrap();
    assert_eq!(m.reg(SP), 0x4000_0000, "rounded down to 16 bytes");
    m.set_reg(RA, 0xabcd);
    m.step().unwrap();
    m.step().unwrap();
    assert_eq!(m.reg(A0), 0xabcd);
    // sp - 0x800 is inside the 64 KiB stack.
    m.step().unwrap();
    let mut m = machine(&[ri(Op::Ld, A0, SP, 8)]);
    // Above the stack top nothing is mapped.
    assert!(matches!(
        m.step(),
        Err(ExecError::Memory {
            what: "load",
            cause: MemError::Unmapped { .. },
            ..
        })
    ));
}

#[test]
fn load_and_store_faults_leave_state_unchanged() {
    let mut m = machine(&[ri(Op::Addi, A0, ZERO, 1), ri(Op::Ld, A0, ZERO, 16)]);
    m.step().unwrap();
    let e = m.step().unwrap_err();
    assert!(e.to_string().contains("load at pc 0x10004"), "{e}");
    assert_eq!(m.pc(), TEXT_BASE + 4);
    assert_eq!(m.reg(A0), 1);
    assert_eq!(m.retired(), 1);
    // A store into read-only text.
    let mut m = machine(&[ri(Op::Auipc, T0, ZERO, 0), st(Op::Sw, ZERO, 0, T0)]);
    m.step().unwrap();
    let e = m.step().unwrap_err();
    assert!(
        matches!(&e, ExecError::Memory { what: "store", cause: MemError::ReadOnly { region, .. }, .. } if region == ".text"),
        "{e}"
    );
}

#[test]
fn stores_into_writable_text_are_seen_by_fetch() {
    // 0: addi a0, zero, 1   (overwritten by the store below)
    // 4: sw   t1, 0(t2)
    // 8: jal  zero, -8
    let mut p = program(&[
        ri(Op::Addi, A0, ZERO, 1),
        st(Op::Sw, T1, 0, T2),
        ri(Op::Jal, ZERO, ZERO, -8),
    ]);
    p.segments[0].writable = true;
    let mut m = Machine::new(&p, MachineConfig::default()).unwrap();
    m.set_reg(T1, u64::from(encode(&ri(Op::Addi, A0, ZERO, 42))));
    m.set_reg(T2, TEXT_BASE);
    for _ in 0..4 {
        m.step().unwrap();
    }
    assert_eq!(m.reg(A0), 42);
}

#[test]
fn loading_rejects_overlaps_and_accepts_huge_bss() {
    let mut p = program(&[Inst::NOP]);
    p.segments.push(Segment {
        name: ".clash".into(),
        addr: TEXT_BASE + 2,
        mem_size: 8,
        ..Segment::default()
    });
    let e = Machine::new(&p, MachineConfig::default()).unwrap_err();
    assert!(
        matches!(e, ExecError::Load(MemError::Overlap { .. })),
        "{e}"
    );

    // A stack that collides with a segment.
    let cfg = MachineConfig {
        stack_top: TEXT_BASE + 0x1000,
        ..MachineConfig::default()
    };
    assert!(Machine::new(&program(&[Inst::NOP]), cfg).is_err());

    // 1 TiB of .bss: mapping it costs nothing; touching it costs one page.
    let mut p = program(&[st(Op::Sd, A0, 0, A1), ri(Op::Ld, A2, A1, 8)]);
    p.segments.push(Segment {
        name: ".bss".into(),
        addr: 1 << 44,
        mem_size: 1 << 40,
        writable: true,
        ..Segment::default()
    });
    let mut m = Machine::new(&p, MachineConfig::default()).unwrap();
    let before = m.memory().touched_bytes();
    m.set_reg(A0, 5);
    m.set_reg(A1, (1 << 44) + (1 << 39));
    m.step().unwrap();
    m.step().unwrap();
    assert_eq!(m.reg(A2), 0);
    assert_eq!(m.memory().touched_bytes() - before, 4096);
}

#[test]
fn memory_cap_stops_a_runaway_program() {
    // Store to a new page every iteration until the cap bites:
    // loop: sd a0, 0(a1); add a1, a1, a2; jal zero, -8
    let mut p = program(&[
        st(Op::Sd, A0, 0, A1),
        rr(Op::Add, A1, A1, A2),
        ri(Op::Jal, ZERO, ZERO, -8),
    ]);
    p.segments.push(Segment {
        name: ".bss".into(),
        addr: 1 << 32,
        mem_size: 1 << 32,
        writable: true,
        ..Segment::default()
    });
    let cfg = MachineConfig {
        mem_cap_bytes: 256 << 10,
        stack_bytes: 4096,
        ..MachineConfig::default()
    };
    let mut m = Machine::new(&p, cfg).unwrap();
    m.set_reg(A1, 1 << 32);
    m.set_reg(A2, 4096);
    let e = m.run().unwrap_err();
    assert!(
        matches!(
            e,
            ExecError::Memory {
                what: "store",
                cause: MemError::CapExceeded { cap_bytes: 262_144 },
                ..
            }
        ),
        "{e}"
    );
    assert!(e.to_string().contains("262144"), "{e}");
    assert!(m.memory().touched_bytes() <= 256 << 10);
}

#[test]
fn empty_program_fails_on_first_fetch() {
    let mut m = Machine::new(&Program::default(), MachineConfig::default()).unwrap();
    assert_eq!(m.step(), Err(ExecError::FetchUnmapped { pc: 0 }));
}

#[test]
fn two_executable_segments() {
    // .text at TEXT_BASE jumps to .text2, which stores a new instruction
    // into .text (inactive table at that moment) and jumps back to it.
    // .text:  0: jalr ra, 0(t2)        (t2 = start of .text2)
    //         4: addi a0, zero, 1      (overwritten with addi a0, zero, 42)
    //         8: addi a7, zero, 93
    //        12: ecall
    // .text2: 0: sw t1, 0(t0)          (t0 = TEXT_BASE + 4)
    //         4: jalr zero, 0(ra)
    let text2_base = 0x4_0000u64;
    let text1 = code_bytes(&[
        ri(Op::Jalr, RA, T2, 0),
        ri(Op::Addi, A0, ZERO, 1),
        ri(Op::Addi, A7, ZERO, 93),
        ecall(),
    ]);
    let text2 = code_bytes(&[st(Op::Sw, T1, 0, T0), ri(Op::Jalr, ZERO, RA, 0)]);
    let seg = |name: &str, addr: u64, code: Vec<u8>| Segment {
        name: name.into(),
        addr,
        mem_size: code.len() as u64,
        runs: vec![(0, code)],
        executable: true,
        writable: true,
    };
    let p = Program {
        segments: vec![
            seg(".text", TEXT_BASE, text1),
            seg(".text2", text2_base, text2),
        ],
        entry: TEXT_BASE,
        symbols: Default::default(),
    };
    let mut m = Machine::new(&p, MachineConfig::default()).unwrap();
    m.set_reg(T2, text2_base);
    m.set_reg(T0, TEXT_BASE + 4);
    m.set_reg(T1, u64::from(encode(&ri(Op::Addi, A0, ZERO, 42))));
    // Decode the original instruction at TEXT_BASE + 4 first, so that the
    // store must drop a stale entry of a table that is not active.
    let saved_pc = m.pc();
    m.set_pc(TEXT_BASE + 4);
    m.step().unwrap();
    assert_eq!(m.reg(A0), 1);
    m.set_pc(saved_pc);
    assert_eq!(m.run(), Ok(42));
    // The pre-step, then jalr, sw, jalr, addi, addi, ecall.
    assert_eq!(m.retired(), 1 + 6);
}
