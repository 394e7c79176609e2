//! Instructions: the operand shapes of every real RV64IM mnemonic, the
//! instruction templates both passes share, and the resolution of a
//! template's immediate once every address is known.
//!
//! In the layout pass a statement becomes a fixed number of [`Template`]s (so
//! its size is known); in the resolution pass each template's immediate is
//! evaluated, range-checked and the instruction encoded.

use super::error::Diag;
use super::expr::{self, Expr, LocalCounts, Scope};
use super::parser::Operand;
use crate::encode::imm_range;
use crate::inst::{Format, Inst, Op, Reg};

/// Where a template's immediate comes from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum Imm {
    /// Already known (expansions of `li`, `nop`, `ret`, ...).
    Fixed(i32),
    /// An operand expression, resolved in the second pass.
    Expr {
        /// The expression.
        expr: Expr,
        /// Column of the operand, for errors.
        col: usize,
        /// How to turn its value into the immediate.
        kind: ImmKind,
    },
}

/// How an operand's value becomes the immediate field.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum ImmKind {
    /// The value is the field as written in assembly (12-bit immediate,
    /// shift amount, or the 20-bit upper immediate of `lui`/`auipc`).
    Field,
    /// A branch or jump target: an address (label) or a plain byte offset.
    Target,
    /// `auipc` half of a pc-relative address: the upper part of
    /// `value - pc`, rounded for the following `%lo` part.
    PcrelHi,
    /// The low 12 bits of `value - (pc - 4)`, for the instruction right
    /// after the `auipc` that holds the upper part.
    PcrelLo,
}

/// One machine instruction whose immediate may still be unresolved.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Template {
    pub op: Op,
    pub rd: Reg,
    pub rs1: Reg,
    pub rs2: Reg,
    pub imm: Imm,
}

impl Template {
    /// A template with a known immediate.
    pub fn fixed(op: Op, rd: Reg, rs1: Reg, rs2: Reg, imm: i32) -> Template {
        Template {
            op,
            rd,
            rs1,
            rs2,
            imm: Imm::Fixed(imm),
        }
    }

    /// A template whose immediate is an operand expression.
    pub fn with_expr(
        op: Op,
        rd: Reg,
        rs1: Reg,
        rs2: Reg,
        expr: Expr,
        col: usize,
        kind: ImmKind,
    ) -> Template {
        Template {
            op,
            rd,
            rs1,
            rs2,
            imm: Imm::Expr { expr, col, kind },
        }
    }

    /// Resolves the immediate for an instruction at `pc` and builds the
    /// instruction. `scope` must have the section bases.
    pub fn resolve(&self, pc: u64, scope: &dyn Scope) -> Result<Inst, Diag> {
        let imm = match &self.imm {
            Imm::Fixed(v) => *v,
            Imm::Expr { expr, col, kind } => {
                let bases = scope
                    .bases()
                    .expect("templates are resolved only once the layout is known");
                let value = expr::eval(expr, scope)?
                    .expect("an expression always has a value in the resolution pass");
                let abs = value.absolute(bases);
                match kind {
                    ImmKind::Field => field(self.op, abs, *col)?,
                    ImmKind::Target => {
                        let offset = if value.sec.is_some() {
                            abs.wrapping_sub(pc as i64)
                        } else {
                            abs
                        };
                        target(self.op, offset, *col)?
                    }
                    ImmKind::PcrelHi => {
                        let offset = i128::from(abs) - i128::from(pc);
                        let hi = (offset + 0x800) >> 12;
                        if !(-(1 << 19)..(1 << 19)).contains(&hi) {
                            return Err(Diag::new(
                                *col,
                                format!(
                                    "address {abs:#x} is out of reach of pc {pc:#x}: \
                                     auipc reaches offsets -0x80000800..=0x7ffff7ff"
                                ),
                            ));
                        }
                        ((hi as i64) << 12) as i32
                    }
                    ImmKind::PcrelLo => {
                        let offset = abs.wrapping_sub(pc.wrapping_sub(4) as i64);
                        ((offset << 52) >> 52) as i32
                    }
                }
            }
        };
        Ok(Inst::new(self.op, self.rd, self.rs1, self.rs2, imm))
    }
}

/// Checks an immediate written as an operand and returns the `Inst::imm`.
fn field(op: Op, v: i64, col: usize) -> Result<i32, Diag> {
    let range = imm_range(op);
    if !(range.min..=range.max).contains(&v) {
        let what = match op.format() {
            Format::Shift | Format::ShiftW => "shift amount",
            _ => "immediate",
        };
        return Err(Diag::new(
            col,
            format!("{what} {v} out of range {}..={}", range.min, range.max),
        ));
    }
    Ok(if op.format() == Format::U {
        ((v as u32) << 12) as i32
    } else {
        v as i32
    })
}

/// Checks a branch or jump offset.
fn target(op: Op, offset: i64, col: usize) -> Result<i32, Diag> {
    // Source: RISC-V unprivileged spec, "Control Transfer Instructions": a
    // taken branch or jump to an address that is not IALIGN-aligned raises
    // instruction-address-misaligned; IALIGN is 32 without the C extension,
    // and this assembler emits only 32-bit instructions.
    if offset % 4 != 0 {
        return Err(Diag::new(
            col,
            format!(
                "misaligned branch target: offset {offset} is not a multiple of 4 \
                 (instructions are 4 bytes)"
            ),
        ));
    }
    let range = imm_range(op);
    if !(range.min..=range.max).contains(&offset) {
        let what = if op == Op::Jal { "jump" } else { "branch" };
        return Err(Diag::new(
            col,
            format!(
                "{what} offset {offset} out of range {}..={}",
                range.min, range.max
            ),
        ));
    }
    Ok(offset as i32)
}

/// Checks the operand count; the message names the expected operands.
pub(crate) fn expect_count(
    mnemonic: &str,
    col: usize,
    ops: &[Operand<'_>],
    n: usize,
    help: &str,
) -> Result<(), Diag> {
    if ops.len() == n {
        return Ok(());
    }
    Err(count_error(mnemonic, col, ops.len(), &n.to_string(), help))
}

/// "'addi' expects 3 operands (rd, rs1, imm), found 2".
pub(crate) fn count_error(mnemonic: &str, col: usize, found: usize, n: &str, help: &str) -> Diag {
    let plural = if n == "1" { "operand" } else { "operands" };
    let help = if help.is_empty() {
        String::new()
    } else {
        format!(" ({help})")
    };
    Diag::new(
        col,
        format!("'{mnemonic}' expects {n} {plural}{help}, found {found}"),
    )
}

/// Lowers a real RV64IM mnemonic.
pub(crate) fn real(
    op: Op,
    col: usize,
    ops: &[Operand<'_>],
    locals: &dyn LocalCounts,
) -> Result<Vec<Template>, Diag> {
    let mn = op.mnemonic();
    let z = Reg::ZERO;
    let one = |t: Template| Ok(vec![t]);
    match op.format() {
        Format::R => {
            expect_count(mn, col, ops, 3, "rd, rs1, rs2")?;
            one(Template::fixed(
                op,
                ops[0].reg()?,
                ops[1].reg()?,
                ops[2].reg()?,
                0,
            ))
        }
        Format::I if op.class().is_mem() => {
            expect_count(mn, col, ops, 2, "rd, offset(rs1)")?;
            let rd = ops[0].reg()?;
            let (off, base) = ops[1].mem(locals)?;
            one(Template::with_expr(
                op,
                rd,
                base,
                z,
                off,
                ops[1].col,
                ImmKind::Field,
            ))
        }
        Format::I if op == Op::Jalr => jalr(col, ops, locals),
        Format::I | Format::Shift | Format::ShiftW => {
            let help = if op.format() == Format::I {
                "rd, rs1, imm"
            } else {
                "rd, rs1, shamt"
            };
            expect_count(mn, col, ops, 3, help)?;
            let (rd, rs1) = (ops[0].reg()?, ops[1].reg()?);
            let e = ops[2].expr(locals)?;
            one(Template::with_expr(
                op,
                rd,
                rs1,
                z,
                e,
                ops[2].col,
                ImmKind::Field,
            ))
        }
        Format::S => {
            expect_count(mn, col, ops, 2, "rs2, offset(rs1)")?;
            let rs2 = ops[0].reg()?;
            let (off, base) = ops[1].mem(locals)?;
            one(Template::with_expr(
                op,
                z,
                base,
                rs2,
                off,
                ops[1].col,
                ImmKind::Field,
            ))
        }
        Format::B => {
            expect_count(mn, col, ops, 3, "rs1, rs2, target")?;
            let (rs1, rs2) = (ops[0].reg()?, ops[1].reg()?);
            let e = ops[2].expr(locals)?;
            one(Template::with_expr(
                op,
                z,
                rs1,
                rs2,
                e,
                ops[2].col,
                ImmKind::Target,
            ))
        }
        Format::U => {
            expect_count(mn, col, ops, 2, "rd, imm20")?;
            let rd = ops[0].reg()?;
            let e = ops[1].expr(locals)?;
            one(Template::with_expr(
                op,
                rd,
                z,
                z,
                e,
                ops[1].col,
                ImmKind::Field,
            ))
        }
        Format::J => {
            let (rd, t) = match ops.len() {
                1 => (Reg::RA, &ops[0]),
                2 => (ops[0].reg()?, &ops[1]),
                n => return Err(count_error(mn, col, n, "1 or 2", "target, or rd, target")),
            };
            let e = t.expr(locals)?;
            one(Template::with_expr(op, rd, z, z, e, t.col, ImmKind::Target))
        }
        Format::Fence => match ops.len() {
            0 => one(Template::fixed(op, z, z, z, crate::inst::FENCE_IORW_IORW)),
            2 => {
                let pred = fence_set(&ops[0])?;
                let succ = fence_set(&ops[1])?;
                one(Template::fixed(op, z, z, z, (pred << 4) | succ))
            }
            n => Err(count_error(
                mn,
                col,
                n,
                "0 or 2",
                "pred, succ such as rw, w",
            )),
        },
        Format::System => {
            expect_count(mn, col, ops, 0, "")?;
            one(Template::fixed(op, z, z, z, 0))
        }
    }
}

/// `jalr rs1`, `jalr rd, rs1`, `jalr rd, offset(rs1)`, `jalr rd, rs1, offset`.
fn jalr(col: usize, ops: &[Operand<'_>], locals: &dyn LocalCounts) -> Result<Vec<Template>, Diag> {
    let z = Reg::ZERO;
    let t = match ops.len() {
        1 => Template::fixed(Op::Jalr, Reg::RA, ops[0].reg()?, z, 0),
        2 => {
            let rd = ops[0].reg()?;
            if let [tok] = ops[1].toks
                && tok.ident().is_some()
            {
                Template::fixed(Op::Jalr, rd, ops[1].reg()?, z, 0)
            } else {
                let (off, base) = ops[1].mem(locals)?;
                Template::with_expr(Op::Jalr, rd, base, z, off, ops[1].col, ImmKind::Field)
            }
        }
        3 => {
            let (rd, rs1) = (ops[0].reg()?, ops[1].reg()?);
            let e = ops[2].expr(locals)?;
            Template::with_expr(Op::Jalr, rd, rs1, z, e, ops[2].col, ImmKind::Field)
        }
        n => {
            return Err(count_error(
                "jalr",
                col,
                n,
                "1 to 3",
                "rs1, or rd, offset(rs1), or rd, rs1, offset",
            ));
        }
    };
    Ok(vec![t])
}

/// A FENCE predecessor or successor set: letters from `iorw`, or `0`.
/// Source: RISC-V unprivileged spec, "Memory Ordering Instructions"
/// (PI/PO/PR/PW are bits 27..24, SI/SO/SR/SW bits 23..20).
fn fence_set(op: &Operand<'_>) -> Result<i32, Diag> {
    let bad = || {
        Diag::new(
            op.col,
            "expected a fence set: some of the letters i, o, r, w (in that order), such as rw",
        )
    };
    match op.toks {
        [t] => match &t.kind {
            super::lexer::TokKind::Ident(s) => {
                let mut bits = 0;
                let mut last = 0;
                for c in s.chars() {
                    let (bit, order) = match c {
                        'i' => (8, 1),
                        'o' => (4, 2),
                        'r' => (2, 3),
                        'w' => (1, 4),
                        _ => return Err(bad()),
                    };
                    if order <= last {
                        return Err(bad());
                    }
                    last = order;
                    bits |= bit;
                }
                Ok(bits)
            }
            super::lexer::TokKind::Num(0) => Ok(0),
            _ => Err(bad()),
        },
        _ => Err(bad()),
    }
}
