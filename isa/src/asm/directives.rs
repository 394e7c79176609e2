//! Directives, handled in the layout pass: section switches, alignment, data,
//! strings, reserved space and symbol assignment.
//!
//! | directive                                   | effect                                   |
//! |---------------------------------------------|------------------------------------------|
//! | `.text` `.rodata` `.data` `.bss`            | switch section                           |
//! | `.section name[, flags...]`                 | switch section by name; flags ignored    |
//! | `.globl` `.global` `.local` sym             | accepted (one file: every label is seen) |
//! | `.type` `.size` `.file` `.ident` `.option` `.attribute` | ignored                      |
//! | `.align n`, `.p2align n[, fill]`            | align to 2^n bytes                       |
//! | `.balign n[, fill]`                         | align to n bytes (a power of two)        |
//! | `.byte` `.half`/`.2byte`/`.short` `.word`/`.4byte`/`.long` `.dword`/`.8byte`/`.quad` | little-endian values, no implicit alignment |
//! | `.ascii` `.asciz`/`.string` "s", ...        | bytes of the strings (`.asciz` adds a NUL) |
//! | `.zero n`, `.space`/`.skip n[, fill]`       | n bytes (zero: stored as nothing)        |
//! | `.equ`/`.set name, e`, `name = e`           | symbol value (may be redefined)          |
//! | `.end`                                      | ignore the rest of the file              |
//!
//! In `.text`, alignment padding is made of `nop`s; elsewhere of zeros.

use super::error::Diag;
use super::expr;
use super::instructions::count_error;
use super::layout::{Asm, ItemKind, Sec, align_up};
use super::lexer::{TokKind, Token};
use super::parser::{Operand, split_operands};
use super::{MAX_FILL_BYTES, MAX_SECTION_BYTES};

impl Asm<'_> {
    /// Handles the directive `name` (lower case) with operand tokens `rest`.
    pub(crate) fn directive(
        &mut self,
        name: &str,
        col: usize,
        rest: &[Token],
        after: usize,
        end_col: usize,
    ) {
        if let Err(d) = self.directive_inner(name, col, rest, after, end_col) {
            self.error(d);
        }
    }

    fn directive_inner(
        &mut self,
        name: &str,
        col: usize,
        rest: &[Token],
        after: usize,
        end_col: usize,
    ) -> Result<(), Diag> {
        if matches!(
            name,
            ".type" | ".size" | ".file" | ".ident" | ".option" | ".attribute"
        ) {
            return Ok(());
        }
        let ops = split_operands(rest, after, end_col)?;
        let count = |lo: usize, hi: usize, help: &str| -> Result<(), Diag> {
            if (lo..=hi).contains(&ops.len()) {
                return Ok(());
            }
            let n = if lo == hi {
                lo.to_string()
            } else if hi == usize::MAX {
                format!("at least {lo}")
            } else {
                format!("{lo} or {hi}")
            };
            Err(count_error(name, col, ops.len(), &n, help))
        };
        match name {
            ".text" | ".rodata" | ".data" | ".bss" => {
                count(0, 0, "")?;
                self.cur = Sec::from_name(name).expect("a section name");
            }
            ".section" => {
                count(1, usize::MAX, "name[, flags]")?;
                let section = match ops[0].toks {
                    [t] => match &t.kind {
                        TokKind::Ident(s) => Some(s.clone()),
                        TokKind::Str(b) => Some(String::from_utf8_lossy(b).into_owned()),
                        _ => None,
                    },
                    _ => None,
                };
                let Some(section) = section else {
                    return Err(Diag::new(
                        ops[0].col,
                        "expected a section name such as .data",
                    ));
                };
                self.cur = Sec::from_name(&section).ok_or_else(|| {
                    Diag::new(
                        ops[0].col,
                        format!(
                            "unknown section '{section}': expected .text, .rodata, .data or .bss"
                        ),
                    )
                })?;
            }
            ".globl" | ".global" | ".local" => {
                count(1, usize::MAX, "symbol")?;
                for op in &ops {
                    if !matches!(op.toks, [t] if t.ident().is_some()) {
                        return Err(Diag::new(op.col, "expected a symbol name"));
                    }
                }
            }
            ".align" | ".p2align" => {
                count(1, 2, "exponent[, fill]")?;
                let exp = self.constant(&ops[0], "the alignment exponent")?;
                if !(0..=30).contains(&exp) {
                    return Err(Diag::new(
                        ops[0].col,
                        format!(
                            "alignment exponent {exp} out of range 0..=30 ({name} n aligns to 2^n bytes)"
                        ),
                    ));
                }
                let fill = self.fill_operand(ops.get(1))?;
                self.align_to(1 << exp, fill, col);
            }
            ".balign" => {
                count(1, 2, "bytes[, fill]")?;
                let n = self.constant(&ops[0], "the alignment")?;
                if n <= 0 || n > 1 << 30 || n & (n - 1) != 0 {
                    return Err(Diag::new(
                        ops[0].col,
                        format!("alignment {n} is not a power of two between 1 and 2^30"),
                    ));
                }
                let fill = self.fill_operand(ops.get(1))?;
                self.align_to(n as u64, fill, col);
            }
            ".byte" => self.data(1, col, &ops)?,
            ".half" | ".2byte" | ".short" => self.data(2, col, &ops)?,
            ".word" | ".4byte" | ".long" => self.data(4, col, &ops)?,
            ".dword" | ".8byte" | ".quad" => self.data(8, col, &ops)?,
            ".ascii" | ".asciz" | ".string" => {
                count(1, usize::MAX, "\"text\", ...")?;
                self.no_bss(name, col)?;
                let mut bytes = Vec::new();
                for op in &ops {
                    match op.toks {
                        [
                            Token {
                                kind: TokKind::Str(s),
                                ..
                            },
                        ] => {
                            bytes.extend_from_slice(s);
                            if name != ".ascii" {
                                bytes.push(0);
                            }
                        }
                        _ => return Err(Diag::new(op.col, "expected a string in double quotes")),
                    }
                }
                let len = bytes.len() as u64;
                self.push(ItemKind::Bytes(bytes), len, col);
            }
            ".zero" | ".space" | ".skip" => {
                if name == ".zero" {
                    count(1, 1, "size")?;
                } else {
                    count(1, 2, "size[, fill]")?;
                }
                let len = self.constant(&ops[0], "the size")?;
                if !(0..=MAX_SECTION_BYTES as i64).contains(&len) {
                    return Err(Diag::new(
                        ops[0].col,
                        format!("size {len} out of range 0..={MAX_SECTION_BYTES}"),
                    ));
                }
                let byte = self.fill_operand(ops.get(1))?.unwrap_or(0);
                if byte != 0 {
                    self.no_bss(name, col)?;
                    if len as u64 > MAX_FILL_BYTES {
                        return Err(Diag::new(
                            ops[0].col,
                            format!(
                                "a fill of {len} bytes with a nonzero value is too large \
                                 (at most {MAX_FILL_BYTES}); zero-filled space has no limit"
                            ),
                        ));
                    }
                }
                self.push(
                    ItemKind::Fill {
                        len: len as u64,
                        byte,
                    },
                    len as u64,
                    col,
                );
            }
            ".equ" | ".set" => {
                count(2, 2, "name, value")?;
                let sym = match ops[0].toks {
                    [t] => t.ident().filter(|s| *s != "."),
                    _ => None,
                };
                let Some(sym) = sym else {
                    return Err(Diag::new(ops[0].col, "expected a symbol name"));
                };
                let e = expr::parse(ops[1].toks, ops[1].end_col, self)?;
                self.define_set(sym, ops[0].col, e);
            }
            ".end" => {
                count(0, 0, "")?;
                self.ended = true;
            }
            _ => return Err(Diag::new(col, format!("unknown directive '{name}'"))),
        }
        Ok(())
    }

    /// A layout-time constant operand (`what` names it in messages).
    fn constant(&self, op: &Operand<'_>, what: &str) -> Result<i64, Diag> {
        let e = op.expr(self)?;
        match expr::eval(&e, &self.scope())? {
            Some(v) if v.sec.is_none() => Ok(v.v),
            Some(_) => Err(Diag::new(
                op.col,
                format!("{what} must be a number, not an address"),
            )),
            None => Err(Diag::new(
                op.col,
                format!("{what} must be known here: use a literal or a symbol set by .equ above"),
            )),
        }
    }

    /// The optional fill byte of `.space` and the alignment directives.
    fn fill_operand(&self, op: Option<&Operand<'_>>) -> Result<Option<u8>, Diag> {
        let Some(op) = op else { return Ok(None) };
        let v = self.constant(op, "the fill value")?;
        if !(-128..=255).contains(&v) {
            return Err(Diag::new(
                op.col,
                format!("fill value {v} out of range -128..=255"),
            ));
        }
        Ok(Some(v as u8))
    }

    fn no_bss(&self, name: &str, col: usize) -> Result<(), Diag> {
        if self.cur == Sec::Bss {
            return Err(Diag::new(
                col,
                format!(
                    "{name} cannot go in .bss, which holds only zeros; use .zero or .space, \
                     or switch to .data"
                ),
            ));
        }
        Ok(())
    }

    fn align_to(&mut self, align: u64, fill: Option<u8>, col: usize) {
        let i = self.cur as usize;
        self.align[i] = self.align[i].max(align);
        let off = self.size[i];
        let pad = align_up(off, align) - off;
        if pad == 0 {
            return;
        }
        let kind = match fill {
            Some(byte) => ItemKind::Fill { len: pad, byte },
            None => ItemKind::Pad { len: pad },
        };
        if let ItemKind::Fill { byte, .. } = kind
            && byte != 0
            && let Err(d) = self.no_bss(".align with a fill", col)
        {
            self.error(d);
            return;
        }
        self.push(kind, pad, col);
    }

    /// `.byte`, `.half`, `.word`, `.dword`: values resolved in the second pass.
    fn data(&mut self, width: u8, col: usize, ops: &[Operand<'_>]) -> Result<(), Diag> {
        if ops.is_empty() {
            return Err(Diag::new(col, "expected at least one value"));
        }
        let name = match width {
            1 => ".byte",
            2 => ".half",
            4 => ".word",
            _ => ".dword",
        };
        self.no_bss(name, col)?;
        let mut values = Vec::with_capacity(ops.len());
        for op in ops {
            values.push((op.expr(self)?, op.col));
        }
        let len = u64::from(width) * values.len() as u64;
        self.push(ItemKind::Data { width, values }, len, col);
        Ok(())
    }
}
