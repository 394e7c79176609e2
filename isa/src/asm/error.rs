//! Assembly errors: where (file, line, column), the offending source line and
//! what is wrong, shown compiler-style with a caret under the column.

use std::fmt;
use thiserror::Error;

/// One problem in an assembly source file.
///
/// Displays as
///
/// ```text
/// kernel.s:12:9: error: unknown mnemonic 'addx'
///     addx a0, a0, 1
///     ^
/// ```
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub struct AsmError {
    /// The file name given to [`assemble`](super::assemble).
    pub file: String,
    /// 1-based line number.
    pub line: usize,
    /// 1-based column (in characters) the problem points at.
    pub column: usize,
    /// The offending source line, without its line terminator.
    pub text: String,
    /// What is wrong, without the `error:` prefix.
    pub message: String,
}

impl fmt::Display for AsmError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "{}:{}:{}: error: {}",
            self.file, self.line, self.column, self.message
        )?;
        writeln!(f, "    {}", self.text)?;
        // Copy tabs from the source so the caret lines up however tabs render.
        let pad: String = self
            .text
            .chars()
            .take(self.column.saturating_sub(1))
            .map(|c| if c == '\t' { '\t' } else { ' ' })
            .collect();
        write!(f, "    {pad}^")
    }
}

/// Every error found in one source file, in line and column order.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub struct AsmErrors(pub Vec<AsmError>);

impl AsmErrors {
    /// Number of errors.
    pub fn len(&self) -> usize {
        self.0.len()
    }

    /// True when there are none (never the case for a returned `Err`).
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// The errors, in line and column order.
    pub fn iter(&self) -> std::slice::Iter<'_, AsmError> {
        self.0.iter()
    }
}

impl fmt::Display for AsmErrors {
    /// Every error, one after the other, then a count when there are several.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, e) in self.0.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{e}")?;
        }
        if self.0.len() > 1 {
            write!(f, "\n{} errors", self.0.len())?;
        }
        Ok(())
    }
}

impl<'a> IntoIterator for &'a AsmErrors {
    type Item = &'a AsmError;
    type IntoIter = std::slice::Iter<'a, AsmError>;
    fn into_iter(self) -> Self::IntoIter {
        self.0.iter()
    }
}

/// An error inside one line, before the file and line are attached.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Diag {
    /// 1-based column.
    pub col: usize,
    /// The message.
    pub message: String,
}

impl Diag {
    /// An error at `col`.
    pub fn new(col: usize, message: impl Into<String>) -> Diag {
        Diag {
            col,
            message: message.into(),
        }
    }
}
