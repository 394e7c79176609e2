//! Whole programs assembled and run on the functional model: the example
//! programs under `examples/asm/`, `li` of awkward constants, pseudo-
//! instructions and directives checked by their effect.

use overlap_isa::asm::{TEXT_BASE, assemble};
use overlap_isa::{Machine, MachineConfig, Program};
use std::time::{Duration, Instant};

const HELLO: &str = include_str!("../../examples/asm/hello.s");
const CHECKSUM: &str = include_str!("../../examples/asm/checksum.s");
const SORT: &str = include_str!("../../examples/asm/sort.s");
const RECURSE: &str = include_str!("../../examples/asm/recurse.s");
const RESERVE: &str = include_str!("../../examples/asm/reserve.s");

fn build(src: &str, name: &str) -> Program {
    assemble(src, name).unwrap_or_else(|e| panic!("{name} did not assemble:\n{e}"))
}

/// Assembles and runs `src`; returns the exit code and the machine.
fn run(src: &str, name: &str) -> (i64, Machine) {
    let program = build(src, name);
    let cfg = MachineConfig {
        max_insts: Some(50_000_000),
        ..MachineConfig::default()
    };
    let mut m = Machine::new(&program, cfg).expect("program loads");
    let code = m.run().unwrap_or_else(|e| panic!("{name} failed: {e}"));
    (code, m)
}

/// The initialised bytes of the program at `addr..addr + len`.
fn initial_bytes(program: &Program, addr: u64, len: u64) -> Vec<u8> {
    let mut out = vec![0u8; len as usize];
    for seg in &program.segments {
        for (off, bytes) in &seg.runs {
            for (k, b) in bytes.iter().enumerate() {
                let a = seg.addr + off + k as u64;
                if (addr..addr + len).contains(&a) {
                    out[(a - addr) as usize] = *b;
                }
            }
        }
    }
    out
}

fn dwords(bytes: &[u8]) -> Vec<i64> {
    bytes
        .chunks_exact(8)
        .map(|c| i64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

#[test]
fn hello_writes_its_banner() {
    let (code, m) = run(HELLO, "hello.s");
    assert_eq!(code, 0);
    assert_eq!(m.stdout(), b"lookup engine: 4 tables loaded, ready\n");
}

#[test]
fn checksum_matches_the_same_computation_in_rust() {
    let program = build(CHECKSUM, "checksum.s");
    let (start, end) = (program.symbols["keys"], program.symbols["keys_end"]);
    let keys = dwords(&initial_bytes(&program, start, end - start));
    assert_eq!(keys.len(), 18);
    // Spot-check the directive arithmetic in the table itself.
    assert_eq!(keys[15], -42);
    assert_eq!(
        keys[16] as u64,
        (b'k' as u64) << 56 | (b'e' as u64) << 48 | (b'y' as u64) << 40
    );
    assert_eq!(keys[17], 18 * 8);

    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for k in &keys {
        h = h.rotate_left(13) ^ (*k as u64);
        h = h.wrapping_mul(0x100_0000_01b3);
    }
    let (code, _) = run(CHECKSUM, "checksum.s");
    assert_eq!(code as u64, h);
}

#[test]
fn insertion_sort_agrees_with_rust_sort() {
    let program = build(SORT, "sort.s");
    let (start, end) = (program.symbols["table"], program.symbols["table_end"]);
    let mut expected = dwords(&initial_bytes(&program, start, end - start));
    assert_eq!(expected.len(), 40);
    expected.sort();
    let checksum = expected.iter().enumerate().fold(0i64, |acc, (i, v)| {
        acc.wrapping_add(v.wrapping_mul(i as i64 + 1))
    });

    let (code, m) = run(SORT, "sort.s");
    assert_eq!(code, checksum);
    let sorted: Vec<i64> = (0..expected.len() as u64)
        .map(|i| m.memory().read_u64(start + 8 * i).unwrap() as i64)
        .collect();
    assert_eq!(sorted, expected);
}

fn fib(n: u64) -> u64 {
    if n < 2 { n } else { fib(n - 1) + fib(n - 2) }
}

fn ackermann(m: u64, n: u64) -> u64 {
    match (m, n) {
        (0, n) => n + 1,
        (m, 0) => ackermann(m - 1, 1),
        (m, n) => ackermann(m - 1, ackermann(m, n - 1)),
    }
}

#[test]
fn recursion_through_call_and_ret() {
    let (code, m) = run(RECURSE, "recurse.s");
    // Known values: fib(20) = 6765, A(2, 3) = 2*3 + 3 = 9 (recalled from memory;
    // the Rust implementations above compute them independently).
    assert_eq!(fib(20), 6765);
    assert_eq!(ackermann(2, 3), 9);
    assert_eq!(code as u64, fib(20) << 16 | ackermann(2, 3));
    assert!(m.retired() > 20_000, "naive fib(20) makes ~22k calls");
}

#[test]
fn a_gigabyte_of_space_costs_nothing() {
    let t = Instant::now();
    let program = build(RESERVE, "reserve.s");
    let bss = program
        .segments
        .iter()
        .find(|s| s.name == ".bss")
        .expect("a .bss segment");
    assert_eq!(bss.mem_size, 1 << 30);
    assert!(bss.runs.is_empty());
    assert!(bss.writable && !bss.executable);
    let (code, _) = run(RESERVE, "reserve.s");
    assert_eq!(code, 42);
    assert!(
        t.elapsed() < Duration::from_secs(2),
        "took {:?}",
        t.elapsed()
    );
}

#[test]
fn space_in_data_is_not_stored() {
    let src = "
        .data
    a:  .dword 1
        .space 1 << 30
    b:  .dword 2
        .text
        la t0, b
        ld a0, 0(t0)
        li a7, 93
        ecall
    ";
    let program = build(src, "space.s");
    let data = program.segments.iter().find(|s| s.name == ".data").unwrap();
    let stored: usize = data.runs.iter().map(|(_, b)| b.len()).sum();
    assert_eq!(stored, 16);
    assert_eq!(data.runs.len(), 2);
    assert_eq!(data.mem_size, 16 + (1 << 30));
    assert_eq!(run(src, "space.s").0, 2);
}

/// `li` of each value, run on the functional model, with the number of
/// instructions it took.
fn li_run(value: i64) -> (i64, u64) {
    let src = format!("li a0, {value}\nli a7, 93\necall\n");
    let program = build(&src, "li.s");
    let text = &program.segments[0];
    let li_words = text.mem_size / 4 - 2;
    let (code, _) = run(&src, "li.s");
    (code, li_words)
}

#[test]
fn li_loads_any_64_bit_constant() {
    // Instruction counts: the shortest sequences under common practice for
    // RV64 (lui/addiw for 32-bit values; a shift for single runs of bits).
    let cases: [(i64, u64); 14] = [
        (0, 1),
        (-1, 1),
        (0x7ff, 1),
        (-2048, 1),
        (0x800, 2),
        (0x1234_5678, 2),
        (0x8000_0000, 2),
        (0xffff_ffff, 2),
        (-0x8000_0000, 1),
        (i64::MIN, 2),
        (i64::MAX, 2),
        (0x1_0000_0000, 2),
        (0xcbf2_9ce4_8422_2325_u64 as i64, 8),
        (0x1234_5678_9abc_def0, 8),
    ];
    for (value, max_len) in cases {
        let (got, len) = li_run(value);
        assert_eq!(got, value, "li {value:#x}");
        assert!(
            len <= max_len,
            "li {value:#x} took {len} instructions, expected <= {max_len}"
        );
    }
    // Hex spellings of the same bit patterns.
    let src = "li a0, 0xffffffffffffffff\nli a7, 93\necall\n";
    assert_eq!(run(src, "li.s").0, -1);
    let src = "li a0, 0x8000000000000000\nli a7, 93\necall\n";
    assert_eq!(run(src, "li.s").0, i64::MIN);
}

#[test]
fn li_random_constants_in_one_program() {
    // One program loading many constants, each checked in-program; the exit
    // code is the number of mismatches.
    let mut x: u64 = 0x0123_4567_89ab_cdef;
    let mut src = String::from("    li s0, 0\n");
    let mut values = Vec::new();
    for i in 0..300u32 {
        // xorshift64 (Marsaglia 2003)
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        let v = match i % 4 {
            0 => x,
            1 => x >> (x % 64),
            2 => (x as i64 >> (x % 64)) as u64,
            _ => x << (x % 64),
        };
        values.push(v);
        src += &format!(
            "    li t0, {}\n    .data\nv{i}: .dword {:#x}\n    .text\n    la t1, v{i}\n    ld t1, 0(t1)\n    beq t0, t1, 1f\n    addi s0, s0, 1\n1:\n",
            v as i64, v
        );
    }
    src += "    mv a0, s0\n    li a7, 93\n    ecall\n";
    assert_eq!(run(&src, "li_many.s").0, 0);
}

#[test]
fn pseudo_instructions_compute_what_they_stand_for() {
    // Each block sets a bit of s0 when its check passes; all 20 must pass.
    let src = r#"
        .equ  ALL, (1 << 20) - 1
        .equ  SIXTEEN, 4 * 4
_start:
        li    s0, 0
        li    t0, 5
        mv    t1, t0
        li    t2, 5
        bne   t1, t2, 1f
        li    t5, 1 << 0; or s0, s0, t5
1:      not   t1, t0              # ~5 = -6
        li    t2, -6
        bne   t1, t2, 1f
        li    t5, 1 << 1; or s0, s0, t5
1:      neg   t1, t0
        li    t2, -5
        bne   t1, t2, 1f
        li    t5, 1 << 2; or s0, s0, t5
1:      seqz  t1, zero
        snez  t2, t0
        and   t1, t1, t2
        beqz  t1, 1f
        li    t5, 1 << 3; or s0, s0, t5
1:      li    t1, -3
        bltz  t1, 2f
        j     1f
2:      bgez  t0, 2f
        j     1f
2:      blez  zero, 2f
        j     1f
2:      bgtz  t0, 2f
        j     1f
2:      li    t5, 1 << 4; or s0, s0, t5
1:      li    t1, 7
        bgt   t1, t0, 2f          # 7 > 5
        j     1f
2:      ble   t0, t1, 2f          # 5 <= 7
        j     1f
2:      li    t2, -1
        bgtu  t2, t1, 2f          # unsigned: 0xff..ff > 7
        j     1f
2:      bleu  t1, t2, 2f
        j     1f
2:      li    t5, 1 << 5; or s0, s0, t5
1:      li    a1, 21
        call  double              # a0 = 2 * 21
        li    t1, 42
        bne   a0, t1, 1f
        li    t5, 1 << 6; or s0, s0, t5
1:      la    t1, target
        jalr  ra, 0(t1)           # sets a1 = 7
        li    t2, 7
        bne   a1, t2, 1f
        li    t5, 1 << 7; or s0, s0, t5
1:      lla   t1, word
        lw    t2, (t1)
        li    t3, -2
        bne   t2, t3, 1f
        lwu   t2, 0(t1)
        li    t3, 0xfffffffe
        bne   t2, t3, 1f
        li    t5, 1 << 8; or s0, s0, t5
1:      lui   t1, %hi(word)
        addi  t1, t1, %lo(word)
        la    t2, word
        bne   t1, t2, 1f
        lui   t1, %hi(word)
        lw    t3, %lo(word)(t1)
        li    t4, -2
        bne   t3, t4, 1f
        li    t5, 1 << 9; or s0, s0, t5
1:      li    t1, 0x123456789
        sext.w t2, t1
        li    t3, 0x23456789
        bne   t2, t3, 1f
        li    t5, 1 << 10; or s0, s0, t5
1:      li    t1, -1
        negw  t2, t1
        li    t3, 1
        bne   t2, t3, 1f
        zext.b t2, t1
        li    t3, 255
        bne   t2, t3, 1f
        li    t5, 1 << 11; or s0, s0, t5
1:      sltz  t2, t1
        sgtz  t3, t1
        bne   t2, t3, 2f          # 1 vs 0: must differ
        j     1f
2:      li    t5, 1 << 12; or s0, s0, t5
1:      la    t1, tail_back
        tail  skip                # jumps, does not link
tail_back:
        li    t5, 1 << 13; or s0, s0, t5
        nop
        fence
        fence rw, w
        fence.tso
        li    t5, 1 << 14; or s0, s0, t5
        la    t1, bytes
        lbu   t2, 0(t1)
        lb    t3, 1(t1)
        lhu   t4, 2(t1)
        add   t2, t2, t3          # 0x41 + -1
        add   t2, t2, t4          # + 0x1234
        li    t3, 0x41 - 1 + 0x1234
        bne   t2, t3, 1f
        li    t5, 1 << 15; or s0, s0, t5
1:      la    t1, text
        lbu   t2, 5(t1)           # after "ab\tc\"" comes NUL of .asciz
        bnez  t2, 1f
        lbu   t2, 2(t1)
        li    t3, '\t'
        bne   t2, t3, 1f
        li    t5, 1 << 16; or s0, s0, t5
1:      la    t1, aligned
        andi  t2, t1, 63
        bnez  t2, 1f
        li    t5, 1 << 17; or s0, s0, t5
1:      li    t1, SIXTEEN
        li    t2, 16
        bne   t1, t2, 1f
        li    t5, 1 << 18; or s0, s0, t5
1:      la    t1, ptr
        ld    t2, 0(t1)
        la    t3, word
        addi  t3, t3, 4
        bne   t2, t3, 1f
        li    t5, 1 << 19; or s0, s0, t5
1:      li    t0, ALL
        xor   a0, s0, t0          # 0 when every check passed
        li    a7, 93
        ecall

double: add   a0, a1, a1
        ret
target: li    a1, 7
        ret
skip:   jr    t1

        .section .rodata
word:   .word -2
bytes:  .byte 'A', -1
        .half 0x1234
text:   .asciz "ab\tc\""
        .data
        .align 6
aligned: .dword 0
ptr:    .dword word + 4
"#;
    let (code, _) = run(src, "pseudo.s");
    assert_eq!(code, 0, "failed checks: {code:#b}");
}

#[test]
fn entry_is_start_or_text_base() {
    let p = build("nop\n_start: nop\n", "e.s");
    assert_eq!(p.entry, TEXT_BASE + 4);
    let p = build("nop\nmain: nop\n", "e.s");
    assert_eq!(p.entry, TEXT_BASE);
}
