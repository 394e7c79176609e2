//! The error type of this crate: unknown names, bad parameter values, and
//! generated programs that fail to assemble (a bug in a generator).

use thiserror::Error;

/// Why a workload could not be built.
#[derive(Debug, Error)]
pub enum WorkloadError {
    /// No workload has this name.
    #[error("unknown workload `{name}`{suggestion}; available: {available}")]
    UnknownWorkload {
        /// The name asked for.
        name: String,
        /// `" (did you mean `x`?)"` or empty.
        suggestion: String,
        /// Every workload name, comma-separated.
        available: String,
    },
    /// The workload has no parameter of this name.
    #[error(
        "workload `{workload}` has no parameter `{param}`{suggestion}; its parameters: {available}"
    )]
    UnknownParam {
        /// The workload.
        workload: String,
        /// The name given.
        param: String,
        /// `" (did you mean `x`?)"` or empty.
        suggestion: String,
        /// The workload's parameter names, comma-separated.
        available: String,
    },
    /// An integer parameter outside its range.
    #[error("{workload}: parameter `{param}` = {value} is out of range; allowed: {min}..={max}")]
    OutOfRange {
        /// The workload.
        workload: String,
        /// The parameter.
        param: String,
        /// The value given.
        value: i64,
        /// Smallest allowed value.
        min: i64,
        /// Largest allowed value.
        max: i64,
    },
    /// Text that does not parse as the parameter's type.
    #[error("{workload}: parameter `{param}` expects {expected}, got `{value}`")]
    WrongType {
        /// The workload.
        workload: String,
        /// The parameter.
        param: String,
        /// What was expected, e.g. `an integer 1..=16`.
        expected: String,
        /// The text given.
        value: String,
    },
    /// A choice parameter given a word that is not one of its choices.
    #[error("{workload}: parameter `{param}` = `{value}` is not one of: {choices}")]
    UnknownChoice {
        /// The workload.
        workload: String,
        /// The parameter.
        param: String,
        /// The text given.
        value: String,
        /// The allowed words, `|`-separated.
        choices: String,
    },
    /// Values that are each in range but do not fit together (e.g. a
    /// footprint too small for the requested number of chains).
    #[error("{workload}: parameter `{param}`: {message}")]
    Constraint {
        /// The workload.
        workload: String,
        /// The parameter the message is about.
        param: String,
        /// What is wrong and what would be allowed.
        message: String,
    },
    /// The generated source did not assemble. This is a bug in the generator.
    #[error(
        "workload `{workload}`: generated source failed to assemble (a bug in overlap-workloads):\n{source}"
    )]
    Assemble {
        /// The workload.
        workload: String,
        /// The assembler's errors.
        source: overlap_isa::AsmErrors,
    },
}

/// `" (did you mean `x`?)"` for the candidate closest to `name` by edit
/// distance, when it is close enough to be a plausible typo; else empty.
pub(crate) fn did_you_mean(name: &str, candidates: &[&str]) -> String {
    let best = candidates
        .iter()
        .map(|c| (edit_distance(name, c), *c))
        .min_by_key(|(d, c)| (*d, *c));
    match best {
        Some((d, c)) if d <= 2.max(name.len() / 3) && d < name.len().max(1) => {
            format!(" (did you mean `{c}`?)")
        }
        _ => String::new(),
    }
}

/// Levenshtein distance over characters (insert, delete, substitute cost 1).
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::{did_you_mean, edit_distance};

    #[test]
    fn distance() {
        // Source: the textbook example of Levenshtein distance (common practice).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("same", "same"), 0);
    }

    #[test]
    fn suggestions() {
        assert_eq!(
            did_you_mean("chsae", &["chase", "copy"]),
            " (did you mean `chase`?)"
        );
        assert_eq!(did_you_mean("zzzzzz", &["chase", "copy"]), "");
    }
}
