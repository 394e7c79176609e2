//! Speed of the functional model alone (no timing core): instructions
//! executed per host second on tight loops built straight from `Inst`s.
//!
//! Throughput is reported in elements, one element per instruction, so
//! criterion's "elem/s" figure is the functional model's instruction rate.

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use overlap_isa::encode::encode;
use overlap_isa::{Inst, Machine, MachineConfig, Op, Program, Reg, Segment};
use std::hint::black_box;

const TEXT_BASE: u64 = 0x1_0000;
const DATA_BASE: u64 = 0x10_0000;
const ITERATIONS: i32 = 1_000_000;

const ZERO: Reg = Reg(0);
const T0: Reg = Reg(5);
const T1: Reg = Reg(6);
const A0: Reg = Reg(10);
const A1: Reg = Reg(11);
const A2: Reg = Reg(12);
const A7: Reg = Reg(17);

fn ri(op: Op, rd: Reg, rs1: Reg, imm: i32) -> Inst {
    Inst::new(op, rd, rs1, ZERO, imm)
}

fn rr(op: Op, rd: Reg, rs1: Reg, rs2: Reg) -> Inst {
    Inst::new(op, rd, rs1, rs2, 0)
}

/// Text and a 64 KiB data segment; the loop count is loaded with LUI+ADDIW.
fn program(body: &[Inst]) -> (Program, u64) {
    let hi = (ITERATIONS + 0x800) & !0xfff;
    let mut code = vec![
        ri(Op::Lui, T0, ZERO, hi),
        ri(Op::Addiw, T0, T0, ITERATIONS - hi),
        ri(Op::Lui, A1, ZERO, DATA_BASE as i32),
    ];
    code.extend_from_slice(body);
    let back = -4 * body.len() as i32;
    code.push(ri(Op::Addi, T0, T0, -1));
    code.push(Inst::new(Op::Bne, ZERO, T0, ZERO, back - 4));
    code.push(ri(Op::Addi, A7, ZERO, 93));
    code.push(Inst::new(Op::Ecall, ZERO, ZERO, ZERO, 0));
    let bytes: Vec<u8> = code.iter().flat_map(|i| encode(i).to_le_bytes()).collect();
    let insts = 3 + (body.len() as u64 + 2) * ITERATIONS as u64 + 2;
    let program = Program {
        segments: vec![
            Segment {
                name: ".text".into(),
                addr: TEXT_BASE,
                mem_size: bytes.len() as u64,
                runs: vec![(0, bytes)],
                executable: true,
                writable: false,
            },
            Segment {
                name: ".data".into(),
                addr: DATA_BASE,
                mem_size: 64 << 10,
                runs: vec![],
                executable: false,
                writable: true,
            },
        ],
        entry: TEXT_BASE,
        symbols: Default::default(),
    };
    (program, insts)
}

fn bench_loop(c: &mut Criterion, name: &str, body: &[Inst]) {
    let (program, insts) = program(body);
    let mut group = c.benchmark_group(name);
    group.throughput(Throughput::Elements(insts));
    group.sample_size(10);
    group.bench_function("run", |b| {
        b.iter(|| {
            let mut m = Machine::new(&program, MachineConfig::default()).unwrap();
            black_box(m.run().unwrap());
            assert_eq!(m.retired(), insts);
        })
    });
    group.bench_function("step", |b| {
        b.iter(|| {
            let mut m = Machine::new(&program, MachineConfig::default()).unwrap();
            let mut sum = 0u64;
            while let Ok(d) = m.step() {
                sum = sum.wrapping_add(d.next_pc ^ d.mem_addr);
            }
            assert_eq!(m.retired(), insts);
            black_box(sum)
        })
    });
    group.finish();
}

fn functional(c: &mut Criterion) {
    // Adds and a branch: add a0, a0, t0; addi a2, a2, 3; xor t1, t1, a0.
    bench_loop(
        c,
        "alu_loop",
        &[
            rr(Op::Add, A0, A0, T0),
            ri(Op::Addi, A2, A2, 3),
            rr(Op::Xor, T1, T1, A0),
        ],
    );
    // Loads and stores over 4 KiB: andi a2, t0, 0x1ff; slli a2, a2, 3;
    // add a2, a2, a1; ld a0, 0(a2); addi a0, a0, 1; sd a0, 0(a2).
    bench_loop(
        c,
        "load_store_loop",
        &[
            ri(Op::Andi, A2, T0, 0x1ff),
            ri(Op::Slli, A2, A2, 3),
            rr(Op::Add, A2, A2, A1),
            ri(Op::Ld, A0, A2, 0),
            ri(Op::Addi, A0, A0, 1),
            Inst::new(Op::Sd, ZERO, A2, A0, 0),
        ],
    );
}

criterion_group!(benches, functional);
criterion_main!(benches);
