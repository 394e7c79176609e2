//! The lexer: turns one source line into tokens, each with its 1-based column.
//!
//! Comments start at `#` or `//` and run to the end of the line; `;` separates
//! statements on one line. A run of digits directly followed by `b` or `f`
//! (`1b`, `2f`) is a reference to a numeric local label. Numbers are decimal,
//! `0x` hex, `0b` binary, `0o` or leading-zero octal (as in C). Character
//! literals (`'a'`, `'\n'`) are numbers; strings take the usual escapes
//! (`\n \t \r \0 \\ \" \' \xHH`, octal `\NNN`).

use super::error::Diag;

/// What a token is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum TokKind {
    /// A name: mnemonic, register, symbol or directive (`.word`). Names may
    /// contain letters, digits, `_`, `.` and `$`, and do not start with a digit.
    Ident(String),
    /// An integer literal or a character literal (64-bit two's complement).
    Num(i64),
    /// A numeric local label reference: `1b` (backward) or `1f` (forward).
    LocalRef {
        /// The label number.
        num: u32,
        /// True for `f`.
        forward: bool,
    },
    /// A string literal, escapes already applied.
    Str(Vec<u8>),
    /// `,`
    Comma,
    /// `:`
    Colon,
    /// `;`
    Semi,
    /// `(`
    LParen,
    /// `)`
    RParen,
    /// `=`
    Assign,
    /// An operator character or pair: `+ - * / % << >> & | ^ ~ !`.
    Op(&'static str),
}

/// A token and where it starts.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Token {
    /// What it is.
    pub kind: TokKind,
    /// 1-based column (in characters) of its first character.
    pub col: usize,
}

impl Token {
    /// The identifier, if this token is one.
    pub fn ident(&self) -> Option<&str> {
        match &self.kind {
            TokKind::Ident(s) => Some(s),
            _ => None,
        }
    }

    /// A short description for "found ..." messages.
    pub fn describe(&self) -> String {
        match &self.kind {
            TokKind::Ident(s) => format!("'{s}'"),
            TokKind::Num(n) => format!("number {n}"),
            TokKind::LocalRef { num, forward } => {
                format!("'{num}{}'", if *forward { 'f' } else { 'b' })
            }
            TokKind::Str(_) => "a string".to_string(),
            TokKind::Comma => "','".to_string(),
            TokKind::Colon => "':'".to_string(),
            TokKind::Semi => "';'".to_string(),
            TokKind::LParen => "'('".to_string(),
            TokKind::RParen => "')'".to_string(),
            TokKind::Assign => "'='".to_string(),
            TokKind::Op(s) => format!("'{s}'"),
        }
    }
}

fn is_ident_start(c: char) -> bool {
    // `@` only so that section types such as `@progbits` lex as names.
    c.is_ascii_alphabetic() || c == '_' || c == '.' || c == '$' || c == '@'
}

fn is_ident_char(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '_' || c == '.' || c == '$'
}

/// Splits `line` into tokens. On an error (unterminated string, bad number,
/// stray character) the tokens before the error are returned with it, so a
/// label at the start of the line can still be defined.
pub(crate) fn lex(line: &str) -> (Vec<Token>, Option<Diag>) {
    let chars: Vec<char> = line.chars().collect();
    let mut toks = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        let col = i + 1;
        if c.is_whitespace() {
            i += 1;
            continue;
        }
        if c == '#' || (c == '/' && chars.get(i + 1) == Some(&'/')) {
            break;
        }
        let single = match c {
            ',' => Some(TokKind::Comma),
            ':' => Some(TokKind::Colon),
            ';' => Some(TokKind::Semi),
            '(' => Some(TokKind::LParen),
            ')' => Some(TokKind::RParen),
            '=' => Some(TokKind::Assign),
            '+' => Some(TokKind::Op("+")),
            '-' => Some(TokKind::Op("-")),
            '*' => Some(TokKind::Op("*")),
            '/' => Some(TokKind::Op("/")),
            '%' => Some(TokKind::Op("%")),
            '&' => Some(TokKind::Op("&")),
            '|' => Some(TokKind::Op("|")),
            '^' => Some(TokKind::Op("^")),
            '~' => Some(TokKind::Op("~")),
            '!' => Some(TokKind::Op("!")),
            _ => None,
        };
        if let Some(kind) = single {
            toks.push(Token { kind, col });
            i += 1;
            continue;
        }
        if (c == '<' || c == '>') && chars.get(i + 1) == Some(&c) {
            let op = if c == '<' { "<<" } else { ">>" };
            toks.push(Token {
                kind: TokKind::Op(op),
                col,
            });
            i += 2;
            continue;
        }
        if is_ident_start(c) {
            let start = i;
            i += 1;
            while i < chars.len() && is_ident_char(chars[i]) {
                i += 1;
            }
            let name: String = chars[start..i].iter().collect();
            toks.push(Token {
                kind: TokKind::Ident(name),
                col,
            });
            continue;
        }
        if c.is_ascii_digit() {
            let start = i;
            while i < chars.len() && (chars[i].is_ascii_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            let word: String = chars[start..i].iter().collect();
            match number(&word) {
                Ok(kind) => toks.push(Token { kind, col }),
                Err(message) => return (toks, Some(Diag::new(col, message))),
            }
            continue;
        }
        if c == '"' {
            match string(&chars, i) {
                Ok((bytes, next)) => {
                    toks.push(Token {
                        kind: TokKind::Str(bytes),
                        col,
                    });
                    i = next;
                }
                Err(diag) => return (toks, Some(diag)),
            }
            continue;
        }
        if c == '\'' {
            match char_literal(&chars, i) {
                Ok((value, next)) => {
                    toks.push(Token {
                        kind: TokKind::Num(value),
                        col,
                    });
                    i = next;
                }
                Err(diag) => return (toks, Some(diag)),
            }
            continue;
        }
        return (
            toks,
            Some(Diag::new(col, format!("unexpected character '{c}'"))),
        );
    }
    (toks, None)
}

/// Parses a word that starts with a digit: a number or a local label reference.
fn number(word: &str) -> Result<TokKind, String> {
    let bytes = word.as_bytes();
    let last = bytes[bytes.len() - 1];
    let body = &word[..word.len() - 1];
    if (last == b'b' || last == b'f')
        && !body.is_empty()
        && body.bytes().all(|b| b.is_ascii_digit())
    {
        // `0b` alone is a local label too; `0b101` is binary (handled below).
        if let Ok(num) = body.parse::<u32>() {
            return Ok(TokKind::LocalRef {
                num,
                forward: last == b'f',
            });
        }
    }
    let (digits, radix) = if let Some(rest) = word.strip_prefix("0x").or(word.strip_prefix("0X")) {
        (rest, 16)
    } else if let Some(rest) = word.strip_prefix("0b").or(word.strip_prefix("0B")) {
        (rest, 2)
    } else if let Some(rest) = word.strip_prefix("0o").or(word.strip_prefix("0O")) {
        (rest, 8)
    } else if word.len() > 1 && word.starts_with('0') {
        (&word[1..], 8)
    } else {
        (word, 10)
    };
    if digits.is_empty() {
        return Err(format!(
            "invalid number '{word}': expected digits after the prefix"
        ));
    }
    match u64::from_str_radix(digits, radix) {
        Ok(v) => Ok(TokKind::Num(v as i64)),
        Err(e) if *e.kind() == std::num::IntErrorKind::PosOverflow => {
            Err(format!("number '{word}' does not fit in 64 bits"))
        }
        Err(_) => Err(format!(
            "invalid number '{word}': expected {} digits",
            match radix {
                16 => "hexadecimal",
                2 => "binary",
                8 => "octal (a leading 0 means octal)",
                _ => "decimal",
            }
        )),
    }
}

/// Reads one possibly escaped character of a string or character literal at
/// `chars[i]`; returns the byte(s) and the index after it.
fn escaped(chars: &[char], i: usize, out: &mut Vec<u8>) -> Result<usize, Diag> {
    let c = chars[i];
    if c != '\\' {
        let mut buf = [0u8; 4];
        out.extend_from_slice(c.encode_utf8(&mut buf).as_bytes());
        return Ok(i + 1);
    }
    let Some(&e) = chars.get(i + 1) else {
        return Err(Diag::new(i + 1, "expected a character after '\\'"));
    };
    let simple = match e {
        'n' => Some(b'\n'),
        't' => Some(b'\t'),
        'r' => Some(b'\r'),
        'a' => Some(7),
        'b' => Some(8),
        'f' => Some(12),
        'v' => Some(11),
        'e' => Some(27),
        '\\' => Some(b'\\'),
        '"' => Some(b'"'),
        '\'' => Some(b'\''),
        _ => None,
    };
    if let Some(b) = simple {
        out.push(b);
        return Ok(i + 2);
    }
    if e == 'x' {
        let mut j = i + 2;
        let mut v: u32 = 0;
        while j < chars.len() && j < i + 4 && chars[j].is_ascii_hexdigit() {
            v = v * 16 + chars[j].to_digit(16).unwrap_or(0);
            j += 1;
        }
        if j == i + 2 {
            return Err(Diag::new(i + 1, "expected hex digits after '\\x'"));
        }
        out.push(v as u8);
        return Ok(j);
    }
    if ('0'..='7').contains(&e) {
        let mut j = i + 1;
        let mut v: u32 = 0;
        while j < chars.len() && j < i + 4 && ('0'..='7').contains(&chars[j]) {
            v = v * 8 + chars[j].to_digit(8).unwrap_or(0);
            j += 1;
        }
        if v > 255 {
            return Err(Diag::new(
                i + 1,
                format!("octal escape \\{v:o} is above \\377"),
            ));
        }
        out.push(v as u8);
        return Ok(j);
    }
    Err(Diag::new(i + 1, format!("unknown escape sequence '\\{e}'")))
}

/// Reads a string literal whose opening quote is at `chars[start]`.
fn string(chars: &[char], start: usize) -> Result<(Vec<u8>, usize), Diag> {
    let mut out = Vec::new();
    let mut i = start + 1;
    loop {
        match chars.get(i) {
            None => {
                return Err(Diag::new(
                    start + 1,
                    "unterminated string: expected a closing '\"' before the end of the line",
                ));
            }
            Some('"') => return Ok((out, i + 1)),
            Some('\\') if i + 1 >= chars.len() => {
                return Err(Diag::new(
                    start + 1,
                    "unterminated string: expected a closing '\"' before the end of the line",
                ));
            }
            Some(_) => i = escaped(chars, i, &mut out)?,
        }
    }
}

/// Reads a character literal whose opening quote is at `chars[start]`.
fn char_literal(chars: &[char], start: usize) -> Result<(i64, usize), Diag> {
    let unterminated = || {
        Diag::new(
            start + 1,
            "unterminated character literal: expected a closing \"'\"",
        )
    };
    let mut bytes = Vec::new();
    let i = start + 1;
    if i >= chars.len() || chars[i] == '\'' {
        return Err(if i >= chars.len() {
            unterminated()
        } else {
            Diag::new(start + 1, "empty character literal")
        });
    }
    let next = escaped(chars, i, &mut bytes)?;
    if chars.get(next) != Some(&'\'') {
        return Err(unterminated());
    }
    if bytes.len() != 1 {
        return Err(Diag::new(
            start + 1,
            "character literal is not a single byte (use a string for UTF-8 text)",
        ));
    }
    Ok((i64::from(bytes[0]), next + 1))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(line: &str) -> Vec<TokKind> {
        let (toks, err) = lex(line);
        assert!(err.is_none(), "{err:?}");
        toks.into_iter().map(|t| t.kind).collect()
    }

    #[test]
    fn numbers_and_local_refs() {
        assert_eq!(kinds("0x10"), vec![TokKind::Num(16)]);
        assert_eq!(kinds("0b101"), vec![TokKind::Num(5)]);
        assert_eq!(kinds("010"), vec![TokKind::Num(8)]);
        assert_eq!(kinds("0xffffffffffffffff"), vec![TokKind::Num(-1)]);
        assert_eq!(
            kinds("1b 2f 0b"),
            vec![
                TokKind::LocalRef {
                    num: 1,
                    forward: false
                },
                TokKind::LocalRef {
                    num: 2,
                    forward: true
                },
                TokKind::LocalRef {
                    num: 0,
                    forward: false
                },
            ]
        );
        assert_eq!(kinds("'a' '\\n'"), vec![TokKind::Num(97), TokKind::Num(10)]);
    }

    #[test]
    fn comments_and_columns() {
        let (toks, _) = lex("  addi a0, a0, 1 # bump");
        assert_eq!(toks.len(), 6);
        assert_eq!(toks[0].col, 3);
        assert_eq!(toks[1].col, 8);
        let (toks, _) = lex("ret // done");
        assert_eq!(toks.len(), 1);
        assert_eq!(
            kinds(".ascii \"a#b\""),
            vec![
                TokKind::Ident(".ascii".into()),
                TokKind::Str(b"a#b".to_vec())
            ]
        );
    }

    #[test]
    fn section_types_lex_as_names() {
        assert_eq!(kinds("@progbits"), vec![TokKind::Ident("@progbits".into())]);
        assert_eq!(kinds("@"), vec![TokKind::Ident("@".into())]);
    }

    #[test]
    fn unterminated_string_points_at_quote() {
        let (toks, err) = lex("msg: .asciz \"hello");
        assert_eq!(toks.len(), 3);
        let err = err.unwrap();
        assert_eq!(err.col, 13);
        assert!(err.message.contains("unterminated string"));
    }
}
