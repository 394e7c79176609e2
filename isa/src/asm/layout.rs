//! The two passes.
//!
//! **Layout** reads the source line by line. Each statement gets a section
//! and an offset in it, and a size that is fixed from then on; labels are
//! bound to (section, offset); `.equ` values known at that point are kept for
//! later `li`, `.align`, `.space` operands. Errors are collected per line and
//! the pass carries on with the next line.
//!
//! Then the sections are placed ([`super::TEXT_BASE`] for `.text`, the others
//! after it in the order `.rodata`, `.data`, `.bss`, each on a fresh 4 KiB
//! page) and **resolution** walks the statements again: every expression is
//! evaluated with absolute addresses, immediates are range-checked and the
//! bytes are emitted. Only initialised bytes are stored; `.zero`, `.space`
//! and `.bss` just advance the offset.

use std::collections::BTreeMap;

use super::error::{AsmError, AsmErrors, Diag};
use super::expr::{self, Expr, LocalCounts, Lookup, Scope, Value};
use super::instructions::{Template, real};
use super::lexer::{TokKind, Token, lex};
use super::parser::{Label, LabelName, split_labels, split_operands};
use super::pseudo::pseudo;
use super::{MAX_SECTION_BYTES, SECTION_ALIGN, TEXT_BASE};
use crate::encode::encode;
use crate::inst::{Inst, Op};
use crate::program::{Program, Segment};

/// The sections a program can place bytes in.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub(crate) enum Sec {
    /// Code: executable, not writable.
    Text = 0,
    /// Read-only data.
    Rodata = 1,
    /// Initialised writable data.
    Data = 2,
    /// Zero-initialised writable data (no bytes stored).
    Bss = 3,
}

impl Sec {
    /// Number of sections.
    pub const COUNT: usize = 4;
    /// All sections, in placement order.
    pub const ALL: [Sec; Sec::COUNT] = [Sec::Text, Sec::Rodata, Sec::Data, Sec::Bss];

    /// The section's name, `.text` and so on.
    pub fn name(self) -> &'static str {
        match self {
            Sec::Text => ".text",
            Sec::Rodata => ".rodata",
            Sec::Data => ".data",
            Sec::Bss => ".bss",
        }
    }

    /// The section a `.section` name selects: `.text`, `.rodata`, `.data`,
    /// `.bss` (also `.sdata`, `.srodata`, `.sbss`), optionally followed by a
    /// `.suffix` such as `.text.startup`.
    pub fn from_name(name: &str) -> Option<Sec> {
        let table = [
            (".text", Sec::Text),
            (".rodata", Sec::Rodata),
            (".srodata", Sec::Rodata),
            (".data", Sec::Data),
            (".sdata", Sec::Data),
            (".bss", Sec::Bss),
            (".sbss", Sec::Bss),
        ];
        table.iter().find_map(|&(prefix, sec)| {
            let rest = name.strip_prefix(prefix)?;
            (rest.is_empty() || rest.starts_with('.')).then_some(sec)
        })
    }
}

/// A place in a section.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Loc {
    pub sec: Sec,
    pub off: u64,
}

impl Loc {
    /// As an expression value.
    pub fn value(self) -> Value {
        Value {
            sec: Some(self.sec),
            v: self.off as i64,
        }
    }
}

/// A named label.
#[derive(Clone, Copy, Debug)]
pub(crate) struct LabelDef {
    pub loc: Loc,
    /// 0-based line of the definition.
    pub line: usize,
}

/// The first definition of an `.equ`/`.set` symbol.
#[derive(Clone, Copy, Debug)]
pub(crate) struct SetDef {
    /// 0-based line.
    pub line: usize,
    /// Index of its [`Item`].
    pub item: usize,
}

/// What a laid-out statement emits.
#[derive(Clone, Debug)]
pub(crate) enum ItemKind {
    /// Instructions, 4 bytes each.
    Insts(Vec<Template>),
    /// `.byte`/`.half`/`.word`/`.dword` values (expression, column).
    Data {
        width: u8,
        values: Vec<(Expr, usize)>,
    },
    /// Literal bytes (strings).
    Bytes(Vec<u8>),
    /// `len` copies of `byte` (nothing is stored when `byte` is 0).
    Fill { len: u64, byte: u8 },
    /// Alignment padding: `nop`s in `.text` when they fit, else zeros.
    Pad { len: u64 },
    /// `.equ`/`.set`/`=`: gives `name` a value from here on.
    Set { name: String, expr: Expr },
}

/// One laid-out statement.
#[derive(Clone, Debug)]
pub(crate) struct Item {
    /// 0-based source line.
    pub line: usize,
    /// Where it starts.
    pub loc: Loc,
    pub kind: ItemKind,
}

/// The assembler's state across both passes.
pub(crate) struct Asm<'a> {
    /// The source lines.
    lines: Vec<&'a str>,
    /// (0-based line, problem).
    diags: Vec<(usize, Diag)>,
    pub items: Vec<Item>,
    pub labels: BTreeMap<String, LabelDef>,
    /// Numeric local label definitions, in source order.
    pub locals: BTreeMap<u32, Vec<Loc>>,
    /// `.equ` values as far as the layout pass has read (and could compute).
    pub sets_now: BTreeMap<String, Value>,
    pub set_defs: BTreeMap<String, SetDef>,
    /// Current size of each section.
    pub size: [u64; Sec::COUNT],
    /// Largest alignment requested in each section.
    pub align: [u64; Sec::COUNT],
    /// The section statements go to.
    pub cur: Sec,
    /// 0-based line being read.
    pub line: usize,
    /// Set by `.end`: ignore the rest of the file.
    pub ended: bool,
}

impl LocalCounts for Asm<'_> {
    fn seen(&self, num: u32) -> usize {
        self.locals.get(&num).map_or(0, Vec::len)
    }
}

/// Expression scope of the layout pass: symbols seen so far, no bases.
pub(crate) struct LayoutScope<'b, 'a> {
    pub asm: &'b Asm<'a>,
    pub dot: Loc,
}

impl Scope for LayoutScope<'_, '_> {
    fn symbol(&self, name: &str) -> Lookup {
        if let Some(l) = self.asm.labels.get(name) {
            return Lookup::Known(l.loc.value());
        }
        match self.asm.sets_now.get(name) {
            Some(v) => Lookup::Known(*v),
            None => Lookup::Unknown,
        }
    }
    fn local(&self, num: u32, index: usize) -> Option<Value> {
        self.asm.locals.get(&num)?.get(index).map(|l| l.value())
    }
    fn dot(&self) -> Value {
        self.dot.value()
    }
    fn bases(&self) -> Option<&[u64; Sec::COUNT]> {
        None
    }
}

/// Expression scope of the resolution pass: every label, `.equ` values in
/// source order (a symbol used before its first definition takes that
/// definition's value), absolute section bases.
struct FinalScope<'b, 'a> {
    asm: &'b Asm<'a>,
    sets: &'b BTreeMap<String, Value>,
    bases: &'b [u64; Sec::COUNT],
    dot: Loc,
    depth: u32,
}

impl Scope for FinalScope<'_, '_> {
    fn symbol(&self, name: &str) -> Lookup {
        if let Some(l) = self.asm.labels.get(name) {
            return Lookup::Known(l.loc.value());
        }
        if let Some(v) = self.sets.get(name) {
            return Lookup::Known(*v);
        }
        let Some(def) = self.asm.set_defs.get(name) else {
            return Lookup::Unknown;
        };
        if self.depth >= 32 {
            return Lookup::Error(format!("the definition of '{name}' refers to itself"));
        }
        let item = &self.asm.items[def.item];
        let ItemKind::Set { expr, .. } = &item.kind else {
            unreachable!("set_defs points at Set items");
        };
        let inner = FinalScope {
            dot: item.loc,
            depth: self.depth + 1,
            ..*self
        };
        match expr::eval(expr, &inner) {
            Ok(Some(v)) => Lookup::Known(v),
            Ok(None) => Lookup::Unknown,
            Err(d) => Lookup::Error(d.message),
        }
    }
    fn local(&self, num: u32, index: usize) -> Option<Value> {
        self.asm.locals.get(&num)?.get(index).map(|l| l.value())
    }
    fn dot(&self) -> Value {
        self.dot.value()
    }
    fn bases(&self) -> Option<&[u64; Sec::COUNT]> {
        Some(self.bases)
    }
}

/// Rounds `x` up to a multiple of `align` (a power of two).
pub(crate) fn align_up(x: u64, align: u64) -> u64 {
    x.div_ceil(align) * align
}

impl<'a> Asm<'a> {
    /// Runs both passes over `source`.
    pub fn run(source: &'a str, file: &str) -> Result<Program, AsmErrors> {
        let mut asm = Asm {
            lines: source.lines().collect(),
            diags: Vec::new(),
            items: Vec::new(),
            labels: BTreeMap::new(),
            locals: BTreeMap::new(),
            sets_now: BTreeMap::new(),
            set_defs: BTreeMap::new(),
            size: [0; Sec::COUNT],
            align: [1; Sec::COUNT],
            cur: Sec::Text,
            line: 0,
            ended: false,
        };
        asm.layout();
        let program = asm.resolve();
        if asm.diags.is_empty() {
            return Ok(program);
        }
        let mut errors: Vec<AsmError> = asm
            .diags
            .iter()
            .map(|(line, d)| AsmError {
                file: file.to_string(),
                line: line + 1,
                column: d.col,
                text: asm.lines.get(*line).copied().unwrap_or("").to_string(),
                message: d.message.clone(),
            })
            .collect();
        errors.sort_by_key(|e| (e.line, e.column));
        errors.dedup();
        Err(AsmErrors(errors))
    }

    /// Records an error on the current line.
    pub fn error(&mut self, diag: Diag) {
        self.diags.push((self.line, diag));
    }

    /// Where the next byte of the current section goes.
    pub fn here(&self) -> Loc {
        Loc {
            sec: self.cur,
            off: self.size[self.cur as usize],
        }
    }

    /// A layout-pass scope at the current location.
    pub fn scope(&self) -> LayoutScope<'_, 'a> {
        LayoutScope {
            asm: self,
            dot: self.here(),
        }
    }

    /// Grows the current section by `len` bytes.
    pub fn advance(&mut self, len: u64, col: usize) {
        let i = self.cur as usize;
        match self.size[i].checked_add(len) {
            Some(n) if n <= MAX_SECTION_BYTES => self.size[i] = n,
            _ => self.error(Diag::new(
                col,
                format!(
                    "section {} would grow past {MAX_SECTION_BYTES:#x} bytes",
                    self.cur.name()
                ),
            )),
        }
    }

    /// Adds an item at the current location and grows the section by `len`.
    pub fn push(&mut self, kind: ItemKind, len: u64, col: usize) {
        self.items.push(Item {
            line: self.line,
            loc: self.here(),
            kind,
        });
        self.advance(len, col);
    }

    fn layout(&mut self) {
        let lines = self.lines.clone();
        for (index, text) in lines.iter().enumerate() {
            if self.ended {
                break;
            }
            self.line = index;
            let end_col = text.chars().count() + 1;
            let (toks, lex_error) = lex(text);
            // Statements are separated by ';'. After a lex error the last one
            // is cut short: only its labels are kept.
            let mut start = 0;
            for i in 0..=toks.len() {
                let at_end = i == toks.len();
                if at_end || toks[i].kind == TokKind::Semi {
                    let part_end = if at_end { end_col } else { toks[i].col };
                    let complete = !at_end || lex_error.is_none();
                    self.statement(&toks[start..i], part_end, complete);
                    start = i + 1;
                }
            }
            if let Some(d) = lex_error {
                self.error(d);
            }
        }
    }

    fn statement(&mut self, toks: &[Token], end_col: usize, complete: bool) {
        let (labels, rest) = split_labels(toks);
        for label in labels {
            self.define_label(label);
        }
        if !complete || rest.is_empty() {
            return;
        }
        let first = &rest[0];
        let after = first.col + first.ident().map_or(1, |s| s.chars().count());
        match &first.kind {
            TokKind::Ident(name) if rest.get(1).is_some_and(|t| t.kind == TokKind::Assign) => {
                match expr::parse(&rest[2..], end_col, self) {
                    Ok(e) => self.define_set(name, first.col, e),
                    Err(d) => self.error(d),
                }
            }
            TokKind::Ident(name) if name.starts_with('.') && name.len() > 1 => {
                let lower = name.to_ascii_lowercase();
                self.directive(&lower, first.col, &rest[1..], after, end_col);
            }
            TokKind::Ident(name) => {
                let lower = name.to_ascii_lowercase();
                self.instruction(&lower, first.col, &rest[1..], after, end_col);
            }
            _ => self.error(Diag::new(
                first.col,
                format!(
                    "expected a label, directive or instruction, found {}",
                    first.describe()
                ),
            )),
        }
    }

    fn define_label(&mut self, label: Label) {
        let loc = self.here();
        match label.name {
            LabelName::Named(name) => {
                if let Some(prev) = self.labels.get(&name) {
                    let first = prev.line + 1;
                    self.error(Diag::new(
                        label.col,
                        format!("duplicate label '{name}' (first defined at line {first})"),
                    ));
                } else if let Some(def) = self.set_defs.get(&name) {
                    let first = def.line + 1;
                    self.error(Diag::new(
                        label.col,
                        format!("'{name}' is already defined by .equ/.set at line {first}"),
                    ));
                } else {
                    self.labels.insert(
                        name,
                        LabelDef {
                            loc,
                            line: self.line,
                        },
                    );
                }
            }
            LabelName::Local(num) => self.locals.entry(num).or_default().push(loc),
        }
    }

    /// `.equ name, e`, `.set name, e` and `name = e`.
    pub fn define_set(&mut self, name: &str, name_col: usize, e: Expr) {
        if let Some(l) = self.labels.get(name) {
            let first = l.line + 1;
            self.error(Diag::new(
                name_col,
                format!("'{name}' is already a label (line {first}) and cannot be set"),
            ));
            return;
        }
        match expr::eval(&e, &self.scope()) {
            Ok(Some(v)) => {
                self.sets_now.insert(name.to_string(), v);
            }
            Ok(None) => {
                self.sets_now.remove(name);
            }
            Err(d) => {
                self.error(d);
                return;
            }
        }
        let item = self.items.len();
        self.set_defs.entry(name.to_string()).or_insert(SetDef {
            line: self.line,
            item,
        });
        self.push(
            ItemKind::Set {
                name: name.to_string(),
                expr: e,
            },
            0,
            name_col,
        );
    }

    fn instruction(
        &mut self,
        mnemonic: &str,
        col: usize,
        rest: &[Token],
        after: usize,
        end_col: usize,
    ) {
        let ops = match split_operands(rest, after, end_col) {
            Ok(ops) => ops,
            Err(d) => {
                self.error(d);
                self.advance(4, col);
                return;
            }
        };
        if self.cur == Sec::Bss {
            self.error(Diag::new(
                col,
                "instructions cannot go in .bss, which holds only zeros; switch to .text",
            ));
            return;
        }
        let off = self.size[self.cur as usize];
        if off % 4 != 0 {
            self.error(Diag::new(
                col,
                format!(
                    "instruction at offset {off:#x} of {} is not 4-byte aligned; put .align 2 before it",
                    self.cur.name()
                ),
            ));
        }
        let lowered = match Op::from_mnemonic(mnemonic) {
            Some(op) => real(op, col, &ops, self),
            None => match pseudo(mnemonic, col, &ops, self, &self.scope()) {
                Some(r) => r,
                None => Err(Diag::new(col, format!("unknown mnemonic '{mnemonic}'"))),
            },
        };
        match lowered {
            Ok(templates) => {
                let len = 4 * templates.len() as u64;
                self.push(ItemKind::Insts(templates), len, col);
            }
            Err(d) => {
                self.error(d);
                self.advance(4, col);
            }
        }
    }

    /// Places the sections and emits every item.
    fn resolve(&mut self) -> Program {
        let mut bases = [0u64; Sec::COUNT];
        let mut next = TEXT_BASE;
        for sec in Sec::ALL {
            let i = sec as usize;
            let page = if sec == Sec::Text { 1 } else { SECTION_ALIGN };
            bases[i] = align_up(next, self.align[i].max(page));
            if self.size[i] > 0 {
                next = bases[i] + self.size[i];
            }
        }

        let mut runs: [Vec<(u64, Vec<u8>)>; Sec::COUNT] = Default::default();
        let mut sets: BTreeMap<String, Value> = BTreeMap::new();
        let mut diags = Vec::new();
        for item in &self.items {
            let scope = FinalScope {
                asm: self,
                sets: &sets,
                bases: &bases,
                dot: item.loc,
                depth: 0,
            };
            let sec = item.loc.sec as usize;
            let out = &mut runs[sec];
            let addr = bases[sec] + item.loc.off;
            match &item.kind {
                ItemKind::Insts(templates) => {
                    for (k, t) in templates.iter().enumerate() {
                        let pc = addr + 4 * k as u64;
                        match t.resolve(pc, &scope) {
                            Ok(inst) => {
                                emit(
                                    out,
                                    item.loc.off + 4 * k as u64,
                                    &encode(&inst).to_le_bytes(),
                                );
                            }
                            Err(d) => {
                                diags.push((item.line, d));
                                break;
                            }
                        }
                    }
                }
                ItemKind::Data { width, values } => {
                    let mut off = item.loc.off;
                    for (e, col) in values {
                        match data_value(e, *col, *width, &scope) {
                            Ok(v) => emit(out, off, &v.to_le_bytes()[..usize::from(*width)]),
                            Err(d) => diags.push((item.line, d)),
                        }
                        off += u64::from(*width);
                    }
                }
                ItemKind::Bytes(bytes) => emit(out, item.loc.off, bytes),
                ItemKind::Fill { len, byte } => {
                    if *byte != 0 {
                        emit(out, item.loc.off, &vec![*byte; *len as usize]);
                    }
                }
                ItemKind::Pad { len } => {
                    if item.loc.sec == Sec::Text && len % 4 == 0 && item.loc.off % 4 == 0 {
                        let nop = encode(&Inst::NOP).to_le_bytes();
                        let bytes: Vec<u8> =
                            nop.iter().copied().cycle().take(*len as usize).collect();
                        emit(out, item.loc.off, &bytes);
                    }
                }
                ItemKind::Set { name, expr } => match expr::eval(expr, &scope) {
                    Ok(Some(v)) => {
                        sets.insert(name.clone(), v);
                    }
                    Ok(None) => {}
                    Err(d) => diags.push((item.line, d)),
                },
            }
        }
        self.diags.extend(diags);

        let abs = |loc: Loc| bases[loc.sec as usize].wrapping_add(loc.off);
        let segments = Sec::ALL
            .iter()
            .zip(runs)
            .filter(|(sec, _)| self.size[**sec as usize] > 0)
            .map(|(&sec, runs)| Segment {
                name: sec.name().to_string(),
                addr: bases[sec as usize],
                mem_size: self.size[sec as usize],
                runs,
                executable: sec == Sec::Text,
                writable: matches!(sec, Sec::Data | Sec::Bss),
            })
            .collect();
        Program {
            segments,
            entry: self
                .labels
                .get("_start")
                .map_or(bases[Sec::Text as usize], |l| abs(l.loc)),
            symbols: self
                .labels
                .iter()
                .map(|(name, l)| (name.clone(), abs(l.loc)))
                .collect(),
        }
    }
}

/// Evaluates one `.byte`/`.half`/`.word`/`.dword` value and checks it fits.
fn data_value(e: &Expr, col: usize, width: u8, scope: &FinalScope<'_, '_>) -> Result<u64, Diag> {
    let value = expr::eval(e, scope)?.expect("known in the resolution pass");
    let v = value.absolute(scope.bases);
    if width < 8 {
        let bits = 8 * u32::from(width);
        let (min, max) = (-(1i64 << (bits - 1)), (1i64 << bits) - 1);
        if !(min..=max).contains(&v) {
            let unit = if width == 1 { "byte" } else { "bytes" };
            return Err(Diag::new(
                col,
                format!("value {v} does not fit in {width} {unit} (range {min}..={max})"),
            ));
        }
    }
    Ok(v as u64)
}

/// Appends `bytes` at offset `off`, extending the last run when contiguous.
fn emit(runs: &mut Vec<(u64, Vec<u8>)>, off: u64, bytes: &[u8]) {
    if let Some((start, data)) = runs.last_mut()
        && *start + data.len() as u64 == off
    {
        data.extend_from_slice(bytes);
        return;
    }
    runs.push((off, bytes.to_vec()));
}
