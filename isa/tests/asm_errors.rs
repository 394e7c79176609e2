//! Assembler errors: each kind with its line, column and wording, several
//! errors in one file all reported, and the compiler-style display.

use overlap_isa::asm::{AsmError, assemble};
use proptest::prelude::*;

/// Assembles `src`, which must fail, and returns its errors.
fn errors(src: &str) -> Vec<AsmError> {
    match assemble(src, "t.s") {
        Ok(_) => panic!("expected errors for:\n{src}"),
        Err(e) => e.0,
    }
}

/// The single error of `src`, checked for line, column and a message part.
fn one(src: &str, line: usize, column: usize, message_part: &str) -> AsmError {
    let errs = errors(src);
    assert_eq!(errs.len(), 1, "expected one error, got: {errs:#?}");
    let e = errs.into_iter().next().unwrap();
    assert_eq!((e.line, e.column), (line, column), "{e}");
    assert!(
        e.message.contains(message_part),
        "message {:?} lacks {message_part:?}",
        e.message
    );
    assert_eq!(e.file, "t.s");
    assert_eq!(e.text, src.lines().nth(line - 1).unwrap());
    e
}

#[test]
fn unknown_mnemonic() {
    let e = one("nop\n    addx a0, a0, 1\n", 2, 5, "unknown mnemonic 'addx'");
    assert_eq!(e.message, "unknown mnemonic 'addx'");
}

#[test]
fn bad_register_says_what_registers_look_like() {
    let e = one("addi q7, a0, 1\n", 1, 6, "invalid register 'q7'");
    assert!(e.message.contains("x0..x31"), "{}", e.message);
    assert!(e.message.contains("a0"), "{}", e.message);
    one("ld t0, 8(x32)\n", 1, 10, "invalid base register 'x32'");
    one("add a0, a1, 5\n", 1, 13, "expected a register");
}

#[test]
fn immediate_out_of_range_gives_the_range() {
    let e = one("addi a0, a0, 5000\n", 1, 14, "out of range");
    assert_eq!(e.message, "immediate 5000 out of range -2048..=2047");
    one(
        "  sd t0, -2049(sp)\n",
        1,
        10,
        "immediate -2049 out of range -2048..=2047",
    );
    one(
        "slli a0, a0, 64\n",
        1,
        14,
        "shift amount 64 out of range 0..=63",
    );
    one(
        "slliw a0, a0, 32\n",
        1,
        15,
        "shift amount 32 out of range 0..=31",
    );
    one(
        "lui a0, 0x100000\n",
        1,
        9,
        "immediate 1048576 out of range 0..=1048575",
    );
}

#[test]
fn branch_and_jump_offsets_out_of_range() {
    // 4 bytes of beq + 8188 bytes of space + the target: offset 8192.
    let src = "beq a0, a1, far\n.space 8188\nfar: nop\n";
    let e = one(src, 1, 13, "branch offset 8192 out of range -4096..=4094");
    assert!(e.message.starts_with("branch offset"));
    one(
        "bne a0, a1, -4100\n",
        1,
        13,
        "branch offset -4100 out of range -4096..=4094",
    );
    one(
        "jal ra, 0x100000\n",
        1,
        9,
        "jump offset 1048576 out of range -1048576..=1048574",
    );
    // `call` is a single jal: a target beyond 1 MiB is reported at the call.
    let src = "call far\n.space 0x100000\nfar: ret\n";
    one(src, 1, 6, "jump offset 1048580 out of range");
}

#[test]
fn misaligned_branch_target() {
    let e = one("beq a0, a1, 6\n", 1, 13, "misaligned branch target");
    assert!(e.message.contains("offset 6"), "{}", e.message);
    // A label at an odd address in .data.
    let src = "j odd\n.data\n.byte 1\nodd: .byte 2\n";
    one(src, 1, 3, "misaligned branch target");
}

#[test]
fn undefined_label() {
    one("nop\nj nowhere\n", 2, 3, "undefined symbol 'nowhere'");
    one("la a0, missing + 4\n", 1, 8, "undefined symbol 'missing'");
    one(
        ".data\n.dword table_end\n",
        2,
        8,
        "undefined symbol 'table_end'",
    );
    one("beqz a0, 1f\n", 1, 10, "undefined local label '1f'");
    one("bnez a0, 2b\n2: nop\n", 1, 10, "undefined local label '2b'");
}

#[test]
fn duplicate_label_points_at_the_second_and_names_the_first() {
    let src = "loop:\n  nop\n  loop: nop\n";
    let e = one(src, 3, 3, "duplicate label 'loop'");
    assert!(e.message.contains("line 1"), "{}", e.message);
}

#[test]
fn unknown_directive() {
    let e = one(".data\n   .wrod 5\n", 2, 4, "unknown directive '.wrod'");
    assert_eq!(e.message, "unknown directive '.wrod'");
}

#[test]
fn unterminated_string() {
    let e = one("msg: .asciz \"ready\n", 1, 13, "unterminated string");
    assert!(e.message.contains("expected"), "{}", e.message);
    // The label before it is still defined: no cascade of undefined-label errors.
    let errs = errors("msg: .asciz \"ready\nla a0, msg\n");
    assert_eq!(errs.len(), 1, "{errs:#?}");
}

#[test]
fn wrong_operand_count() {
    let e = one("  add a0, a1\n", 1, 3, "expects 3 operands");
    assert_eq!(
        e.message,
        "'add' expects 3 operands (rd, rs1, rs2), found 2"
    );
    one("ret a0\n", 1, 1, "'ret' expects 0 operands, found 1");
    one(
        "ld a0\n",
        1,
        1,
        "'ld' expects 2 operands (rd, offset(rs1)), found 1",
    );
    one("li a0, 1, 2\n", 1, 1, "'li' expects 2 operands");
    one(".data\n.equ X\n", 2, 1, "'.equ' expects 2 operands");
}

#[test]
fn li_needs_a_value_known_in_the_first_pass() {
    one("li a0, LATER\n.equ LATER, 5\n", 1, 8, "must be known");
    one("li a0, msg\n.data\nmsg: .byte 0\n", 1, 8, "must be known");
    one("msg: nop\nli a0, msg\n", 2, 8, "use la");
}

#[test]
fn other_operand_errors() {
    one("ld a0, a1\n", 1, 8, "expected 'offset(register)'");
    one("addi a0, a0, a1\n", 1, 14, "found register 'a1'");
    one("addi a0, a0, 1 +\n", 1, 17, "expected an expression");
    one("addi a0, a0, (1\n", 1, 16, "expected ')'");
    one("addi a0, , 1\n", 1, 10, "expected an operand");
    one("addi a0, a0, 1/0\n", 1, 15, "division by zero");
    one(".byte 256\n", 1, 7, "value 256 does not fit in 1 byte");
    one(".section .weird\n", 1, 10, "unknown section '.weird'");
    one(".bss\n.word 1\n", 2, 1, "cannot go in .bss");
    one(".byte 1\nnop\n", 2, 1, "not 4-byte aligned");
    one("fence rw, x\n", 1, 11, "fence set");
    one(".align 40\n", 1, 8, "alignment exponent 40 out of range");
    one("x = 1\nx: nop\n", 2, 1, "already defined by .equ");
    one("addi a0, a0, 0x1g\n", 1, 14, "invalid number '0x1g'");
    one("(\n", 1, 1, "expected a label, directive or instruction");
    one("nop ~\n", 1, 1, "'nop' expects 0 operands");
    let errs = errors(".equ A, B\n.equ B, A\n.dword A\n");
    let at: Vec<(usize, usize)> = errs.iter().map(|e| (e.line, e.column)).collect();
    assert_eq!(at, vec![(1, 9), (2, 9), (3, 8)], "{errs:#?}");
    assert!(
        errs.iter().all(|e| e.message.contains("refers to itself")),
        "{errs:#?}"
    );
}

#[test]
fn every_error_of_a_file_is_reported_in_order() {
    let src = "\
_start:
    addx a0, a0, 1
    addi q7, a0, 1
    addi a0, a0, 5000
    beq  a0, a1, 6
    j    nowhere
_start:
    .wrod 5
    add  a0, a1
    li   a0, 0x10
    msg: .asciz \"oops
    addi a0, a0, 1
";
    let errs = errors(src);
    let got: Vec<(usize, usize)> = errs.iter().map(|e| (e.line, e.column)).collect();
    assert_eq!(
        got,
        vec![
            (2, 5),
            (3, 10),
            (4, 18),
            (5, 18),
            (6, 10),
            (7, 1),
            (8, 5),
            (9, 5),
            (11, 17)
        ],
        "{errs:#?}"
    );
    let all = assemble(src, "t.s").unwrap_err();
    assert_eq!(all.len(), 9);
    let shown = all.to_string();
    assert!(shown.ends_with("9 errors"), "{shown}");
    assert_eq!(shown.matches(": error: ").count(), 9);
}

#[test]
fn display_is_compiler_style_with_a_caret() {
    let err = assemble("nop\n    addx a0, a0, 1\n", "kernel.s").unwrap_err();
    assert_eq!(
        err.to_string(),
        "kernel.s:2:5: error: unknown mnemonic 'addx'\n\
         \x20       addx a0, a0, 1\n\
         \x20       ^"
    );
    // Tabs in the source are copied into the caret line so it lines up.
    let err = assemble("\taddx a0, a0, 1\n", "k.s").unwrap_err();
    assert_eq!(
        err.0[0].to_string(),
        "k.s:1:2: error: unknown mnemonic 'addx'\n    \taddx a0, a0, 1\n    \t^"
    );
}

#[test]
fn pathological_expressions_are_refused_not_overflowed() {
    let long = format!("addi a0, a0, {}\n", vec!["1"; 5000].join("+"));
    one(&long, 1, 526, "expression too long");
    let deep = format!("addi a0, a0, {}1{}\n", "(".repeat(5000), ")".repeat(5000));
    one(&deep, 1, 270, "expression too long");
}

/// Pieces of assembly, shuffled into lines.
const PIECES: [&str; 40] = [
    "addi", "ld", "sd", "beq", "li", "la", "call", "ret", "j", ".data", ".text", ".bss", ".word",
    ".byte", ".asciz", ".equ", ".align", ".space", "a0", "sp", "x31", "q7", "lbl", "lbl:", "1:",
    "1b", "1f", "0x7ff", "-2049", "1<<40", "\"s\"", "\"", "'a'", "(", ")", ",", "#", ";", "%hi(",
    "@",
];

proptest! {
    /// Whatever the input, the assembler returns (a program or errors) and
    /// every error points inside the file.
    #[test]
    fn never_panics_or_hangs(lines in prop::collection::vec(
        prop::collection::vec(prop::sample::select(&PIECES[..]), 0..7), 0..12)
    ) {
        let src: String = lines.iter().map(|l| l.join(" ") + "\n").collect();
        if let Err(errs) = assemble(&src, "fuzz.s") {
            let n_lines = src.lines().count();
            for e in errs.iter() {
                prop_assert!(e.line >= 1 && e.line <= n_lines, "{e}");
                prop_assert!(e.column >= 1 && e.column <= e.text.chars().count() + 1, "{e}");
            }
        }
    }
}
