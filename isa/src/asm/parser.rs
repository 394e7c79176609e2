//! Statement structure: leading labels, then a directive, an assignment
//! (`name = expr`) or an instruction, then comma-separated operands; and the
//! operand readers (register, expression, `offset(register)`).

use super::error::Diag;
use super::expr::{self, Expr, LocalCounts};
use super::lexer::{TokKind, Token};
use crate::inst::Reg;

/// What labels look like in a statement.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum LabelName {
    /// `name:`
    Named(String),
    /// `1:`, a numeric local label.
    Local(u32),
}

/// A label at the start of a statement.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Label {
    /// Its name.
    pub name: LabelName,
    /// Column of its first character.
    pub col: usize,
}

/// Splits the leading `name:` / `1:` labels off a statement; returns them and
/// the rest of the tokens.
pub(crate) fn split_labels(toks: &[Token]) -> (Vec<Label>, &[Token]) {
    let mut labels = Vec::new();
    let mut i = 0;
    while i + 1 < toks.len() && toks[i + 1].kind == TokKind::Colon {
        let name = match &toks[i].kind {
            TokKind::Ident(s) if s != "." => LabelName::Named(s.clone()),
            TokKind::Num(n) if (0..=i64::from(u32::MAX)).contains(n) => LabelName::Local(*n as u32),
            _ => break,
        };
        labels.push(Label {
            name,
            col: toks[i].col,
        });
        i += 2;
    }
    (labels, &toks[i..])
}

/// One operand: its tokens and where it starts and ends.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Operand<'t> {
    /// The tokens (never empty).
    pub toks: &'t [Token],
    /// Column of the first token.
    pub col: usize,
    /// Column just past the operand (the next comma, or the end of the line).
    pub end_col: usize,
}

/// Splits operand tokens at top-level commas. `after_col` is where the
/// operands would start if there are none; `end_col` is the end of the line.
pub(crate) fn split_operands(
    toks: &[Token],
    after_col: usize,
    end_col: usize,
) -> Result<Vec<Operand<'_>>, Diag> {
    let mut ops = Vec::new();
    if toks.is_empty() {
        return Ok(ops);
    }
    let mut depth = 0i32;
    let mut start = 0;
    let mut prev_end = after_col;
    for (i, t) in toks.iter().enumerate() {
        match t.kind {
            TokKind::LParen => depth += 1,
            TokKind::RParen => depth -= 1,
            TokKind::Comma if depth <= 0 => {
                if start == i {
                    return Err(Diag::new(t.col, "expected an operand before ','"));
                }
                ops.push(Operand {
                    toks: &toks[start..i],
                    col: toks[start].col,
                    end_col: t.col,
                });
                start = i + 1;
                prev_end = t.col + 1;
            }
            _ => {}
        }
    }
    if start == toks.len() {
        return Err(Diag::new(prev_end, "expected an operand after ','"));
    }
    ops.push(Operand {
        toks: &toks[start..],
        col: toks[start].col,
        end_col,
    });
    Ok(ops)
}

/// What registers look like, for error messages.
pub(crate) const REG_HELP: &str = "x0..x31 or an ABI name such as zero, ra, sp, a0, t1, s2";

/// Parses a register name (case-insensitive).
pub(crate) fn parse_reg(name: &str) -> Option<Reg> {
    Reg::parse(name).or_else(|| Reg::parse(&name.to_ascii_lowercase()))
}

impl Operand<'_> {
    /// The operand as a register.
    pub fn reg(&self) -> Result<Reg, Diag> {
        if let [t] = self.toks
            && let Some(name) = t.ident()
        {
            return parse_reg(name).ok_or_else(|| {
                Diag::new(
                    t.col,
                    format!("invalid register '{name}': expected {REG_HELP}"),
                )
            });
        }
        Err(Diag::new(
            self.col,
            format!(
                "expected a register ({REG_HELP}), found {}",
                self.toks[0].describe()
            ),
        ))
    }

    /// The operand as an expression. A lone register name is rejected with
    /// a clear message instead of becoming an undefined symbol.
    pub fn expr(&self, locals: &dyn LocalCounts) -> Result<Expr, Diag> {
        if let [t] = self.toks
            && let Some(name) = t.ident()
            && parse_reg(name).is_some()
        {
            return Err(Diag::new(
                t.col,
                format!("expected an immediate or a label, found register '{name}'"),
            ));
        }
        expr::parse(self.toks, self.end_col, locals)
    }

    /// The operand as `offset(register)`; the offset may be omitted (`(a0)`).
    pub fn mem(&self, locals: &dyn LocalCounts) -> Result<(Expr, Reg), Diag> {
        let n = self.toks.len();
        if n >= 3
            && self.toks[n - 1].kind == TokKind::RParen
            && self.toks[n - 3].kind == TokKind::LParen
            && let Some(name) = self.toks[n - 2].ident()
        {
            let base = parse_reg(name).ok_or_else(|| {
                Diag::new(
                    self.toks[n - 2].col,
                    format!("invalid base register '{name}': expected {REG_HELP}"),
                )
            })?;
            let offset = if n == 3 {
                Expr::Num(0)
            } else {
                expr::parse(&self.toks[..n - 3], self.toks[n - 3].col, locals)?
            };
            return Ok((offset, base));
        }
        if let [t] = self.toks
            && let Some(name) = t.ident()
            && parse_reg(name).is_some()
        {
            return Err(Diag::new(
                t.col,
                format!("expected 'offset(register)', found register '{name}'; write 0({name})"),
            ));
        }
        Err(Diag::new(
            self.col,
            "expected a memory operand 'offset(register)' such as 8(sp) or (a0)",
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::super::lexer::lex;
    use super::*;

    struct NoLocals;
    impl LocalCounts for NoLocals {
        fn seen(&self, _: u32) -> usize {
            0
        }
    }

    #[test]
    fn labels_then_operands() {
        let (toks, _) = lex("loop: 1: ld t0, -8(sp)");
        let (labels, rest) = split_labels(&toks);
        assert_eq!(labels.len(), 2);
        assert_eq!(labels[0].name, LabelName::Named("loop".into()));
        assert_eq!(labels[1].name, LabelName::Local(1));
        assert_eq!(rest[0].ident(), Some("ld"));
        let ops = split_operands(&rest[1..], 12, 24).unwrap();
        assert_eq!(ops.len(), 2);
        assert_eq!(ops[0].reg().unwrap(), Reg(5));
        let (off, base) = ops[1].mem(&NoLocals).unwrap();
        assert_eq!(off, Expr::Num(-8));
        assert_eq!(base, Reg::SP);
    }

    #[test]
    fn bad_register_is_explained() {
        let (toks, _) = lex("q7");
        let ops = split_operands(&toks, 1, 3).unwrap();
        let err = ops[0].reg().unwrap_err();
        assert_eq!(err.col, 1);
        assert!(err.message.contains("x0..x31"), "{}", err.message);
    }
}
