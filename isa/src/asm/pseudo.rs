//! Pseudo-instructions and their expansions into real instructions.
//!
//! Every expansion has a size fixed in the layout pass: `li` depends only on
//! its constant (which must be known when the `li` is reached), and the
//! address-forming ones have one fixed shape:
//!
//! | pseudo                  | expansion                                  |
//! |-------------------------|--------------------------------------------|
//! | `nop`                   | `addi x0, x0, 0`                           |
//! | `li rd, c`              | 1 to 8 of `lui`/`addi(w)`/`slli`/`srli`    |
//! | `la rd, s`, `lla rd, s` | `auipc rd, hi(s-pc)` + `addi rd, rd, lo`   |
//! | `mv rd, rs`             | `addi rd, rs, 0`                           |
//! | `not rd, rs`            | `xori rd, rs, -1`                          |
//! | `neg rd, rs`            | `sub rd, x0, rs` (`negw`: `subw`)          |
//! | `sext.w rd, rs`         | `addiw rd, rs, 0`                          |
//! | `zext.b rd, rs`         | `andi rd, rs, 255`                         |
//! | `seqz`/`snez`           | `sltiu rd, rs, 1` / `sltu rd, x0, rs`      |
//! | `sltz`/`sgtz`           | `slt rd, rs, x0` / `slt rd, x0, rs`        |
//! | `j t`                   | `jal x0, t`                                |
//! | `jr rs`                 | `jalr x0, 0(rs)`                           |
//! | `ret`                   | `jalr x0, 0(ra)`                           |
//! | `call t`, `call rd, t`  | `jal ra, t` (`jal rd, t`)                  |
//! | `tail t`                | `jal x0, t`                                |
//! | `beqz`/`bnez` ...       | `beq`/`bne`/`bge`/`blt` against `x0`       |
//! | `bgt`/`ble`/`bgtu`/`bleu` | `blt`/`bge`/`bltu`/`bgeu`, operands swapped |
//! | `fence.tso`             | `fence` with fm = TSO, rw, rw              |
//!
//! `call` and `tail` are a single `jal` (reach ±1 MiB), the form a linker's
//! relaxation leaves for a near target; a program's whole text fits in that
//! reach unless it exceeds a megabyte, which is reported as an out-of-range
//! jump at the call. This keeps a call one instruction, as the timing model
//! should see it.

use super::error::Diag;
use super::expr::{self, LocalCounts, Scope};
use super::instructions::{ImmKind, Template, count_error, expect_count};
use super::parser::Operand;
use crate::inst::{FENCE_TSO, Inst, Op, Reg};

/// Lowers `mnemonic` if it is a pseudo-instruction; `None` if it is not one.
/// `scope` is the layout-pass scope, used to evaluate `li` constants.
pub(crate) fn pseudo(
    mnemonic: &str,
    col: usize,
    ops: &[Operand<'_>],
    locals: &dyn LocalCounts,
    scope: &dyn Scope,
) -> Option<Result<Vec<Template>, Diag>> {
    let z = Reg::ZERO;
    let fixed = Template::fixed;
    // `op rd, rs1, rs2, target` with the target read from operand `t`.
    let to_target = |op: Op, rd: Reg, rs1: Reg, rs2: Reg, t: &Operand<'_>| {
        let e = t.expr(locals)?;
        Ok::<_, Diag>(vec![Template::with_expr(
            op,
            rd,
            rs1,
            rs2,
            e,
            t.col,
            ImmKind::Target,
        )])
    };
    // rd, rs -> one real instruction; `swap` makes it `op rd, x0, rs`.
    let unary = |op: Op, swap: bool, imm: i32| -> Result<Vec<Template>, Diag> {
        expect_count(mnemonic, col, ops, 2, "rd, rs")?;
        let (rd, rs) = (ops[0].reg()?, ops[1].reg()?);
        Ok(vec![if swap {
            fixed(op, rd, z, rs, imm)
        } else {
            fixed(op, rd, rs, z, imm)
        }])
    };
    // rs, target -> branch comparing with x0 (`zero_first` puts x0 in rs1).
    let branch_zero = |op: Op, zero_first: bool| -> Result<Vec<Template>, Diag> {
        expect_count(mnemonic, col, ops, 2, "rs, target")?;
        let rs = ops[0].reg()?;
        let (rs1, rs2) = if zero_first { (z, rs) } else { (rs, z) };
        to_target(op, z, rs1, rs2, &ops[1])
    };
    // rs, rt, target -> branch with the two registers swapped.
    let branch_swapped = |op: Op| -> Result<Vec<Template>, Diag> {
        expect_count(mnemonic, col, ops, 3, "rs1, rs2, target")?;
        let (a, b) = (ops[0].reg()?, ops[1].reg()?);
        to_target(op, z, b, a, &ops[2])
    };
    // target -> jal rd, target.
    let jump = |rd: Reg| -> Result<Vec<Template>, Diag> {
        expect_count(mnemonic, col, ops, 1, "target")?;
        to_target(Op::Jal, rd, z, z, &ops[0])
    };
    // rd, symbol -> auipc rd + addi rd.
    let la = || -> Result<Vec<Template>, Diag> {
        expect_count(mnemonic, col, ops, 2, "rd, symbol")?;
        let rd = ops[0].reg()?;
        let e = ops[1].expr(locals)?;
        let at = ops[1].col;
        Ok(vec![
            Template::with_expr(Op::Auipc, rd, z, z, e.clone(), at, ImmKind::PcrelHi),
            Template::with_expr(Op::Addi, rd, rd, z, e, at, ImmKind::PcrelLo),
        ])
    };
    let result = match mnemonic {
        "nop" => {
            expect_count(mnemonic, col, ops, 0, "").map(|()| vec![fixed(Op::Addi, z, z, z, 0)])
        }
        "li" => li(col, ops, locals, scope),
        "la" | "lla" => la(),
        "mv" => unary(Op::Addi, false, 0),
        "not" => unary(Op::Xori, false, -1),
        "neg" => unary(Op::Sub, true, 0),
        "negw" => unary(Op::Subw, true, 0),
        "sext.w" => unary(Op::Addiw, false, 0),
        "zext.b" => unary(Op::Andi, false, 255),
        "seqz" => unary(Op::Sltiu, false, 1),
        "snez" => unary(Op::Sltu, true, 0),
        "sltz" => unary(Op::Slt, false, 0),
        "sgtz" => unary(Op::Slt, true, 0),
        "beqz" => branch_zero(Op::Beq, false),
        "bnez" => branch_zero(Op::Bne, false),
        "blez" => branch_zero(Op::Bge, true),
        "bgez" => branch_zero(Op::Bge, false),
        "bltz" => branch_zero(Op::Blt, false),
        "bgtz" => branch_zero(Op::Blt, true),
        "bgt" => branch_swapped(Op::Blt),
        "ble" => branch_swapped(Op::Bge),
        "bgtu" => branch_swapped(Op::Bltu),
        "bleu" => branch_swapped(Op::Bgeu),
        "j" => jump(z),
        "tail" => jump(z),
        "call" => match ops.len() {
            1 => jump(Reg::RA),
            2 => ops[0]
                .reg()
                .and_then(|rd| to_target(Op::Jal, rd, z, z, &ops[1])),
            n => Err(count_error(
                mnemonic,
                col,
                n,
                "1 or 2",
                "target, or rd, target",
            )),
        },
        "jr" => expect_count(mnemonic, col, ops, 1, "rs")
            .and_then(|()| Ok(vec![fixed(Op::Jalr, z, ops[0].reg()?, z, 0)])),
        "ret" => expect_count(mnemonic, col, ops, 0, "")
            .map(|()| vec![fixed(Op::Jalr, z, Reg::RA, z, 0)]),
        "fence.tso" => expect_count(mnemonic, col, ops, 0, "")
            .map(|()| vec![fixed(Op::Fence, z, z, z, FENCE_TSO)]),
        _ => return None,
    };
    Some(result)
}

/// `li rd, constant`.
fn li(
    col: usize,
    ops: &[Operand<'_>],
    locals: &dyn LocalCounts,
    scope: &dyn Scope,
) -> Result<Vec<Template>, Diag> {
    expect_count("li", col, ops, 2, "rd, constant")?;
    let rd = ops[0].reg()?;
    let e = ops[1].expr(locals)?;
    let value = match expr::eval(&e, scope)? {
        Some(v) if v.sec.is_none() => v.v,
        Some(_) => {
            return Err(Diag::new(
                ops[1].col,
                "li takes a constant, not an address; use la to load the address of a label",
            ));
        }
        None => {
            return Err(Diag::new(
                ops[1].col,
                "the value of li must be known where the li is: use a literal or a symbol \
                 set by .equ above it (for the address of a label use la)",
            ));
        }
    };
    Ok(li_sequence(rd, value)
        .into_iter()
        .map(|i| Template::fixed(i.op, i.rd, i.rs1, i.rs2, i.imm))
        .collect())
}

/// The instructions that load `value` into `rd`: the shortest of a few
/// standard constructions (common practice for RV64 constant materialisation):
///
/// - a 32-bit signed value: `lui` + `addiw`, or one of them alone;
/// - otherwise, recursively: materialise the value without its low 12 bits,
///   shifted right past its trailing zeros, then `slli` and `addi` the low 12 bits;
/// - for positive values with leading zeros, also: materialise the value
///   shifted left to the top (low bits filled with zeros or with ones) and
///   `srli` it back.
pub(crate) fn li_sequence(rd: Reg, value: i64) -> Vec<Inst> {
    let mut best = Vec::new();
    build(rd, value, &mut best);
    if value > 0 && i64::from(value as i32) != value {
        let lz = value.leading_zeros();
        let shifted = value << lz;
        for candidate in [shifted, shifted | ((1i64 << lz) - 1)] {
            let mut seq = Vec::new();
            build(rd, candidate, &mut seq);
            seq.push(Inst::new(Op::Srli, rd, rd, Reg::ZERO, lz as i32));
            if seq.len() < best.len() {
                best = seq;
            }
        }
    }
    best
}

/// The recursive `lui`/`addiw`/`slli`/`addi` construction.
fn build(rd: Reg, value: i64, out: &mut Vec<Inst>) {
    let z = Reg::ZERO;
    let lo = (value << 52) >> 52;
    if i64::from(value as i32) == value {
        // Source: RISC-V unprivileged spec, RV64I "Integer Computational
        // Instructions": LUI sign-extends its 32-bit result, and ADDIW
        // computes in 32 bits and sign-extends, so lui+addiw reach every
        // 32-bit signed value.
        let hi20 = ((value - lo) >> 12) & 0xf_ffff;
        if hi20 == 0 {
            out.push(Inst::new(Op::Addi, rd, z, z, lo as i32));
        } else {
            out.push(Inst::new(Op::Lui, rd, z, z, ((hi20 as u32) << 12) as i32));
            if lo != 0 {
                out.push(Inst::new(Op::Addiw, rd, rd, z, lo as i32));
            }
        }
        return;
    }
    // value - lo is a multiple of 4096: hi52 holds its upper 52 bits.
    let hi52 = (value as u64).wrapping_add(0x800) >> 12;
    let tz = hi52.trailing_zeros();
    let shamt = 12 + tz;
    let bits = 64 - shamt;
    let upper = (((hi52 >> tz) << (64 - bits)) as i64) >> (64 - bits);
    build(rd, upper, out);
    out.push(Inst::new(Op::Slli, rd, rd, z, shamt as i32));
    if lo != 0 {
        out.push(Inst::new(Op::Addi, rd, rd, z, lo as i32));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Runs a `li` sequence on a tiny model of the five operations it uses.
    /// Source: RISC-V unprivileged spec, RV64I (LUI, ADDI, ADDIW, SLLI, SRLI).
    fn run(seq: &[Inst]) -> i64 {
        let mut r: i64 = 0;
        for i in seq {
            let src = if i.rs1 == Reg::ZERO { 0 } else { r };
            r = match i.op {
                Op::Lui => i64::from(i.imm),
                Op::Addi => src.wrapping_add(i64::from(i.imm)),
                Op::Addiw => i64::from((src as i32).wrapping_add(i.imm)),
                Op::Slli => src << i.imm,
                Op::Srli => ((src as u64) >> i.imm) as i64,
                other => panic!("unexpected {other:?}"),
            };
        }
        r
    }

    #[test]
    fn li_sequences_compute_their_value() {
        let mut x: u64 = 0x9e37_79b9_7f4a_7c15;
        let mut values = vec![
            0,
            -1,
            0x7ff,
            0x800,
            -2048,
            -2049,
            0x7fff_f800,
            0x7fff_ffff,
            i64::MIN,
            i64::MAX,
        ];
        for _ in 0..2000 {
            // splitmix64 (Steele, Lea and Flood 2014), for varied bit patterns
            x = x.wrapping_add(0x9e37_79b9_7f4a_7c15);
            let mut z = x;
            z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
            z ^= z >> 31;
            values.push(z as i64);
            values.push((z >> (z % 64)) as i64);
            values.push(((z >> 40) << (z % 50)) as i64);
        }
        for v in values {
            let seq = li_sequence(Reg::A0, v);
            assert!(seq.len() <= 8, "{v:#x}: {} instructions", seq.len());
            assert_eq!(run(&seq), v, "{v:#x}: {seq:?}");
        }
    }
}
