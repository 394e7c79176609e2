//! Constant expressions: parsing operand tokens into a tree and evaluating it.
//!
//! Operands are numbers, character literals, symbols (labels and `.equ`
//! names), numeric local label references (`1b`, `1f`), `.` (the address of
//! the current statement), `%hi(e)` and `%lo(e)`. Operators, loosest first,
//! as in C: `|`, `^`, `&`, `<< >>` (`>>` is arithmetic), `+ -`, `* / %`,
//! unary `- ~ + !`. Arithmetic wraps at 64 bits.
//!
//! A value is either a plain number or an address: a section plus an offset
//! into it. In the layout pass section bases are not known yet, so only
//! address + number, address - number and the difference of two addresses in
//! the same section are computed; anything else involving an address (or a
//! symbol not yet defined) is "not known yet". In the resolution pass every
//! address is absolute and everything is computed.

use super::error::Diag;
use super::layout::Sec;
use super::lexer::{TokKind, Token};

/// A binary operator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum BinOp {
    Or,
    Xor,
    And,
    Shl,
    Shr,
    Add,
    Sub,
    Mul,
    Div,
    Rem,
}

/// A unary operator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum UnOp {
    Neg,
    Not,
    LogicalNot,
}

/// A parsed expression.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum Expr {
    /// A literal.
    Num(i64),
    /// A label or `.equ` symbol.
    Sym { name: String, col: usize },
    /// A numeric local label reference, already tied to one definition: the
    /// `index`-th definition of label `num` in source order.
    Local {
        num: u32,
        forward: bool,
        index: usize,
        col: usize,
    },
    /// `.`, the address of the current statement.
    Dot,
    /// A unary operation.
    Unary(UnOp, Box<Expr>),
    /// A binary operation; `col` is the operator's column.
    Binary {
        op: BinOp,
        lhs: Box<Expr>,
        rhs: Box<Expr>,
        col: usize,
    },
    /// `%hi(e)`: the upper 20 bits for `lui`, rounded so that `%lo` can be
    /// added with a sign-extended 12-bit immediate.
    Hi(Box<Expr>, usize),
    /// `%lo(e)`: the sign-extended low 12 bits.
    Lo(Box<Expr>, usize),
}

/// The value of an expression: a number, or an offset into a section.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Value {
    /// `Some` for an address: the section it lies in.
    pub sec: Option<Sec>,
    /// The number, or the offset from the section's start.
    pub v: i64,
}

impl Value {
    /// A plain number.
    pub fn num(v: i64) -> Value {
        Value { sec: None, v }
    }

    /// The absolute value given the section bases.
    pub fn absolute(self, bases: &[u64; Sec::COUNT]) -> i64 {
        match self.sec {
            Some(sec) => (bases[sec as usize] as i64).wrapping_add(self.v),
            None => self.v,
        }
    }
}

/// The result of looking a symbol up.
pub(crate) enum Lookup {
    /// Its value.
    Known(Value),
    /// Not defined (yet).
    Unknown,
    /// Defined, but its definition cannot be evaluated (a cycle).
    Error(String),
}

/// Where an expression is evaluated: the symbols, the local labels, the
/// current location and, in the resolution pass, the section bases.
pub(crate) trait Scope {
    /// Looks a named symbol up.
    fn symbol(&self, name: &str) -> Lookup;
    /// The `index`-th definition of numeric local label `num`, if it exists yet.
    fn local(&self, num: u32, index: usize) -> Option<Value>;
    /// The address of the current statement.
    fn dot(&self) -> Value;
    /// The section bases; `None` during layout.
    fn bases(&self) -> Option<&[u64; Sec::COUNT]>;
}

/// Evaluates `e`. `Ok(None)` means "not known yet" and happens only during
/// layout (`scope.bases()` is `None`); in the resolution pass an undefined
/// symbol is an error.
pub(crate) fn eval(e: &Expr, scope: &dyn Scope) -> Result<Option<Value>, Diag> {
    let bases = scope.bases();
    Ok(Some(match e {
        Expr::Num(v) => Value::num(*v),
        Expr::Dot => scope.dot(),
        Expr::Sym { name, col } => match scope.symbol(name) {
            Lookup::Known(v) => v,
            Lookup::Unknown if bases.is_none() => return Ok(None),
            Lookup::Unknown => {
                return Err(Diag::new(*col, format!("undefined symbol '{name}'")));
            }
            Lookup::Error(message) => return Err(Diag::new(*col, message)),
        },
        Expr::Local {
            num,
            forward,
            index,
            col,
        } => match scope.local(*num, *index) {
            Some(v) => v,
            None if bases.is_none() => return Ok(None),
            None => {
                return Err(Diag::new(
                    *col,
                    if *forward {
                        format!("undefined local label '{num}f': no '{num}:' after this line")
                    } else {
                        format!("undefined local label '{num}b': no '{num}:' before this line")
                    },
                ));
            }
        },
        Expr::Unary(op, inner) => {
            let Some(x) = eval(inner, scope)? else {
                return Ok(None);
            };
            let Some(v) = plain(x, bases) else {
                return Ok(None);
            };
            Value::num(match op {
                UnOp::Neg => v.wrapping_neg(),
                UnOp::Not => !v,
                UnOp::LogicalNot => i64::from(v == 0),
            })
        }
        Expr::Hi(inner, col) | Expr::Lo(inner, col) => {
            let Some(x) = eval(inner, scope)? else {
                return Ok(None);
            };
            let Some(v) = plain(x, bases) else {
                return Ok(None);
            };
            let lo = (v << 52) >> 52;
            if matches!(e, Expr::Lo(..)) {
                Value::num(lo)
            } else {
                // lui + addi reach -2^31 - 2048 ..= 2^31 - 2049 once sign
                // extension of the 32-bit lui result is taken into account.
                let hi = v.wrapping_sub(lo) >> 12;
                if !(-(1 << 19)..(1 << 19)).contains(&hi) {
                    return Err(Diag::new(
                        *col,
                        format!(
                            "%hi of {v:#x} is out of range: lui and a 12-bit immediate reach \
                             only -0x80000800..=0x7ffff7ff"
                        ),
                    ));
                }
                Value::num(hi & 0xf_ffff)
            }
        }
        Expr::Binary { op, lhs, rhs, col } => {
            let (Some(a), Some(b)) = (eval(lhs, scope)?, eval(rhs, scope)?) else {
                return Ok(None);
            };
            match binary(*op, a, b, *col, bases)? {
                Some(v) => v,
                None => return Ok(None),
            }
        }
    }))
}

/// A value as a plain number: numbers as they are, addresses made absolute
/// when the bases are known.
fn plain(x: Value, bases: Option<&[u64; Sec::COUNT]>) -> Option<i64> {
    match (x.sec, bases) {
        (None, _) => Some(x.v),
        (Some(_), Some(b)) => Some(x.absolute(b)),
        (Some(_), None) => None,
    }
}

fn binary(
    op: BinOp,
    a: Value,
    b: Value,
    col: usize,
    bases: Option<&[u64; Sec::COUNT]>,
) -> Result<Option<Value>, Diag> {
    // Address arithmetic that is known without the section bases.
    match (op, a.sec, b.sec) {
        (BinOp::Add, Some(_), None) => {
            return Ok(Some(Value {
                sec: a.sec,
                v: a.v.wrapping_add(b.v),
            }));
        }
        (BinOp::Add, None, Some(_)) => {
            return Ok(Some(Value {
                sec: b.sec,
                v: a.v.wrapping_add(b.v),
            }));
        }
        (BinOp::Sub, Some(_), None) => {
            return Ok(Some(Value {
                sec: a.sec,
                v: a.v.wrapping_sub(b.v),
            }));
        }
        (BinOp::Sub, Some(x), Some(y)) if x == y => {
            return Ok(Some(Value::num(a.v.wrapping_sub(b.v))));
        }
        _ => {}
    }
    let (Some(x), Some(y)) = (plain(a, bases), plain(b, bases)) else {
        return Ok(None);
    };
    let v = match op {
        BinOp::Or => x | y,
        BinOp::Xor => x ^ y,
        BinOp::And => x & y,
        BinOp::Shl | BinOp::Shr => {
            if !(0..64).contains(&y) {
                return Err(Diag::new(
                    col,
                    format!("shift amount {y} out of range 0..=63"),
                ));
            }
            if op == BinOp::Shl { x << y } else { x >> y }
        }
        BinOp::Add => x.wrapping_add(y),
        BinOp::Sub => x.wrapping_sub(y),
        BinOp::Mul => x.wrapping_mul(y),
        BinOp::Div | BinOp::Rem => {
            if y == 0 {
                return Err(Diag::new(col, "division by zero in expression"));
            }
            if op == BinOp::Div {
                x.wrapping_div(y)
            } else {
                x.wrapping_rem(y)
            }
        }
    };
    Ok(Some(Value::num(v)))
}

/// How many definitions of each numeric local label have been seen so far;
/// the parser uses it to tie `1b`/`1f` to one definition.
pub(crate) trait LocalCounts {
    /// Definitions of label `num` before the current statement.
    fn seen(&self, num: u32) -> usize;
}

/// Parses all of `toks` as one expression. `end_col` is the column just past
/// the operand, used when the expression is missing.
pub(crate) fn parse(
    toks: &[Token],
    end_col: usize,
    locals: &dyn LocalCounts,
) -> Result<Expr, Diag> {
    let mut p = Parser {
        toks,
        pos: 0,
        end_col,
        locals,
        nodes: 0,
    };
    let e = p.expr(0)?;
    if let Some(t) = p.toks.get(p.pos) {
        return Err(Diag::new(
            t.col,
            format!(
                "expected an operator or the end of the operand, found {}",
                t.describe()
            ),
        ));
    }
    Ok(e)
}

struct Parser<'t> {
    toks: &'t [Token],
    pos: usize,
    end_col: usize,
    locals: &'t dyn LocalCounts,
    /// Operands and operators read so far, to bound the recursion of
    /// parsing and evaluation.
    nodes: usize,
}

/// Most operands plus operators in one expression. Real operands have a
/// handful; the bound keeps parsing and evaluation recursion shallow.
const MAX_NODES: usize = 256;

/// Binary operators by precedence level, loosest first.
const LEVELS: [&[(&str, BinOp)]; 6] = [
    &[("|", BinOp::Or)],
    &[("^", BinOp::Xor)],
    &[("&", BinOp::And)],
    &[("<<", BinOp::Shl), (">>", BinOp::Shr)],
    &[("+", BinOp::Add), ("-", BinOp::Sub)],
    &[("*", BinOp::Mul), ("/", BinOp::Div), ("%", BinOp::Rem)],
];

impl Parser<'_> {
    fn peek(&self) -> Option<&Token> {
        self.toks.get(self.pos)
    }

    fn here(&self) -> usize {
        self.peek().map_or(self.end_col, |t| t.col)
    }

    fn expr(&mut self, level: usize) -> Result<Expr, Diag> {
        if level == LEVELS.len() {
            return self.unary();
        }
        let mut lhs = self.expr(level + 1)?;
        while let Some(t) = self.peek() {
            let TokKind::Op(sym) = t.kind else { break };
            let Some(&(_, op)) = LEVELS[level].iter().find(|(s, _)| *s == sym) else {
                break;
            };
            let col = t.col;
            self.pos += 1;
            let rhs = self.expr(level + 1)?;
            lhs = Expr::Binary {
                op,
                lhs: Box::new(lhs),
                rhs: Box::new(rhs),
                col,
            };
        }
        Ok(lhs)
    }

    fn unary(&mut self) -> Result<Expr, Diag> {
        let Some(t) = self.peek() else {
            return Err(Diag::new(self.end_col, "expected an expression"));
        };
        let col = t.col;
        self.nodes += 1;
        if self.nodes > MAX_NODES {
            return Err(Diag::new(
                col,
                format!("expression too long: more than {MAX_NODES} terms"),
            ));
        }
        let op = match self.toks[self.pos].kind {
            TokKind::Op("-") => Some(UnOp::Neg),
            TokKind::Op("~") => Some(UnOp::Not),
            TokKind::Op("!") => Some(UnOp::LogicalNot),
            TokKind::Op("+") => {
                self.pos += 1;
                return self.unary();
            }
            _ => None,
        };
        if let Some(op) = op {
            self.pos += 1;
            let inner = self.unary()?;
            // Fold literals so that `-5` stays a literal.
            if let (UnOp::Neg, Expr::Num(v)) = (op, &inner) {
                return Ok(Expr::Num(v.wrapping_neg()));
            }
            return Ok(Expr::Unary(op, Box::new(inner)));
        }
        self.primary()
    }

    fn primary(&mut self) -> Result<Expr, Diag> {
        let t = self
            .peek()
            .cloned()
            .ok_or_else(|| Diag::new(self.end_col, "expected an expression"))?;
        self.pos += 1;
        match t.kind {
            TokKind::Num(v) => Ok(Expr::Num(v)),
            TokKind::Ident(name) if name == "." => Ok(Expr::Dot),
            TokKind::Ident(name) => Ok(Expr::Sym { name, col: t.col }),
            TokKind::LocalRef { num, forward } => {
                let seen = self.locals.seen(num);
                let index = if forward {
                    seen
                } else if seen == 0 {
                    return Err(Diag::new(
                        t.col,
                        format!("undefined local label '{num}b': no '{num}:' before this line"),
                    ));
                } else {
                    seen - 1
                };
                Ok(Expr::Local {
                    num,
                    forward,
                    index,
                    col: t.col,
                })
            }
            TokKind::LParen => {
                let inner = self.expr(0)?;
                self.expect_rparen(t.col)?;
                Ok(inner)
            }
            TokKind::Op("%") => {
                let name = self.peek().and_then(|n| n.ident().map(str::to_string));
                let is_hi = match name.as_deref() {
                    Some("hi") => true,
                    Some("lo") => false,
                    _ => {
                        return Err(Diag::new(
                            self.here(),
                            "expected 'hi' or 'lo' after '%' (as in %hi(symbol))",
                        ));
                    }
                };
                self.pos += 1;
                match self.peek() {
                    Some(Token {
                        kind: TokKind::LParen,
                        col,
                    }) => {
                        let open = *col;
                        self.pos += 1;
                        let inner = self.expr(0)?;
                        self.expect_rparen(open)?;
                        Ok(if is_hi {
                            Expr::Hi(Box::new(inner), t.col)
                        } else {
                            Expr::Lo(Box::new(inner), t.col)
                        })
                    }
                    _ => Err(Diag::new(self.here(), "expected '(' after %hi or %lo")),
                }
            }
            TokKind::Str(_) => Err(Diag::new(
                t.col,
                "expected a number or symbol, found a string",
            )),
            _ => Err(Diag::new(
                t.col,
                format!("expected an expression, found {}", t.describe()),
            )),
        }
    }

    fn expect_rparen(&mut self, open_col: usize) -> Result<(), Diag> {
        match self.peek() {
            Some(Token {
                kind: TokKind::RParen,
                ..
            }) => {
                self.pos += 1;
                Ok(())
            }
            Some(t) => Err(Diag::new(
                t.col,
                format!(
                    "expected ')' to close the '(' at column {open_col}, found {}",
                    t.describe()
                ),
            )),
            None => Err(Diag::new(
                self.end_col,
                format!("expected ')' to close the '(' at column {open_col}"),
            )),
        }
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

    struct Consts;
    impl Scope for Consts {
        fn symbol(&self, name: &str) -> Lookup {
            match name {
                "four" => Lookup::Known(Value::num(4)),
                _ => Lookup::Unknown,
            }
        }
        fn local(&self, _: u32, _: usize) -> Option<Value> {
            None
        }
        fn dot(&self) -> Value {
            Value {
                sec: Some(Sec::Text),
                v: 8,
            }
        }
        fn bases(&self) -> Option<&[u64; Sec::COUNT]> {
            None
        }
    }

    fn value(src: &str) -> Option<i64> {
        let (toks, err) = lex(src);
        assert!(err.is_none());
        let e = parse(&toks, src.len() + 1, &NoLocals).unwrap();
        eval(&e, &Consts).unwrap().map(|v| {
            assert!(v.sec.is_none());
            v.v
        })
    }

    #[test]
    fn precedence_is_c_like() {
        assert_eq!(value("1 + 2 * 3"), Some(7));
        assert_eq!(value("(1 + 2) * 3"), Some(9));
        assert_eq!(value("1 << 4 + 1"), Some(32));
        assert_eq!(value("0xf0 | 0x0f & 0x3"), Some(0xf3));
        assert_eq!(value("-four * 2"), Some(-8));
        assert_eq!(value("~0"), Some(-1));
        assert_eq!(value("1<<30"), Some(1 << 30));
        assert_eq!(value("-8 >> 1"), Some(-4));
        assert_eq!(value("%hi(0x12345fff)"), Some(0x12346));
        assert_eq!(value("%lo(0x12345fff)"), Some(-1));
    }

    #[test]
    fn unknown_symbols_and_addresses_wait_for_resolution() {
        assert_eq!(value("later + 1"), None);
        assert_eq!(value(". * 2"), None);
        assert_eq!(value(". - ."), Some(0));
    }
}
