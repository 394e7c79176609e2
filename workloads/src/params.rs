//! Typed workload parameters: what a parameter accepts ([`ParamKind`]), its
//! value ([`ParamValue`]), its description ([`ParamSpec`]), and the resolution
//! of command-line overrides (`name=value` text) against a workload's specs.

use std::collections::BTreeMap;
use std::fmt;

use serde::Serialize;

use crate::error::{WorkloadError, did_you_mean};

/// What values a parameter accepts.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ParamKind {
    /// An integer in `min..=max`. Text may be decimal, `0x` hex, may use `_`
    /// separators and may end in a binary size suffix: `K`/`KiB` (1024),
    /// `M`/`MiB` (1024²) or `G`/`GiB` (1024³).
    Int {
        /// Smallest allowed value.
        min: i64,
        /// Largest allowed value.
        max: i64,
    },
    /// One of a fixed set of words.
    Choice(&'static [&'static str]),
    /// `true` or `false` (also accepted: `1`/`0`, `yes`/`no`, `on`/`off`).
    Bool,
}

impl fmt::Display for ParamKind {
    /// `integer 1..=16`, `one of random|stride`, `bool`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ParamKind::Int { min, max } => write!(f, "integer {min}..={max}"),
            ParamKind::Choice(choices) => write!(f, "one of {}", choices.join("|")),
            ParamKind::Bool => write!(f, "bool"),
        }
    }
}

/// A parameter value. Serialises as a bare JSON number, string or boolean.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(untagged)]
pub enum ParamValue {
    /// An integer.
    Int(i64),
    /// One of the words of a [`ParamKind::Choice`].
    Choice(String),
    /// A boolean.
    Bool(bool),
}

impl fmt::Display for ParamValue {
    /// The value as it would be typed on a command line.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ParamValue::Int(v) => write!(f, "{v}"),
            ParamValue::Choice(s) => f.write_str(s),
            ParamValue::Bool(b) => write!(f, "{b}"),
        }
    }
}

/// The description of one parameter of a workload.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct ParamSpec {
    /// Name, as typed in `name=value`.
    pub name: &'static str,
    /// One line: what it controls, with its unit.
    pub description: &'static str,
    /// Accepted values.
    pub kind: ParamKind,
    /// Value used when not overridden.
    pub default: ParamValue,
}

impl ParamSpec {
    /// An integer parameter.
    pub(crate) fn int(
        name: &'static str,
        description: &'static str,
        min: i64,
        max: i64,
        default: i64,
    ) -> ParamSpec {
        debug_assert!(
            min <= default && default <= max,
            "{name}: default out of range"
        );
        ParamSpec {
            name,
            description,
            kind: ParamKind::Int { min, max },
            default: ParamValue::Int(default),
        }
    }

    /// A choice parameter.
    pub(crate) fn choice(
        name: &'static str,
        description: &'static str,
        choices: &'static [&'static str],
        default: &'static str,
    ) -> ParamSpec {
        debug_assert!(choices.contains(&default), "{name}: default not a choice");
        ParamSpec {
            name,
            description,
            kind: ParamKind::Choice(choices),
            default: ParamValue::Choice(default.to_string()),
        }
    }

    /// A boolean parameter.
    pub(crate) fn boolean(
        name: &'static str,
        description: &'static str,
        default: bool,
    ) -> ParamSpec {
        ParamSpec {
            name,
            description,
            kind: ParamKind::Bool,
            default: ParamValue::Bool(default),
        }
    }

    /// Parses `text` as a value of this parameter, checking its range.
    fn parse(&self, workload: &str, text: &str) -> Result<ParamValue, WorkloadError> {
        let text = text.trim();
        match self.kind {
            ParamKind::Int { min, max } => {
                let value = parse_int(text).ok_or_else(|| WorkloadError::WrongType {
                    workload: workload.to_string(),
                    param: self.name.to_string(),
                    expected: format!("an integer {min}..={max} (e.g. 4096, 64K, 0x100)"),
                    value: text.to_string(),
                })?;
                if value < min || value > max {
                    return Err(WorkloadError::OutOfRange {
                        workload: workload.to_string(),
                        param: self.name.to_string(),
                        value,
                        min,
                        max,
                    });
                }
                Ok(ParamValue::Int(value))
            }
            ParamKind::Choice(choices) => match choices.iter().find(|c| **c == text) {
                Some(c) => Ok(ParamValue::Choice((*c).to_string())),
                None => Err(WorkloadError::UnknownChoice {
                    workload: workload.to_string(),
                    param: self.name.to_string(),
                    value: text.to_string(),
                    choices: choices.join("|"),
                }),
            },
            ParamKind::Bool => match text.to_ascii_lowercase().as_str() {
                "true" | "1" | "yes" | "on" => Ok(ParamValue::Bool(true)),
                "false" | "0" | "no" | "off" => Ok(ParamValue::Bool(false)),
                _ => Err(WorkloadError::WrongType {
                    workload: workload.to_string(),
                    param: self.name.to_string(),
                    expected: "true or false".to_string(),
                    value: text.to_string(),
                }),
            },
        }
    }
}

/// Parses an integer: optional sign, decimal or `0x` hex digits with optional
/// `_` separators, then an optional binary size suffix (`K`, `KiB`, `M`,
/// `MiB`, `G`, `GiB`, any case). `None` when malformed or out of `i64`.
pub(crate) fn parse_int(text: &str) -> Option<i64> {
    let (negative, rest) = match text.strip_prefix('-') {
        Some(r) => (true, r),
        None => (false, text.strip_prefix('+').unwrap_or(text)),
    };
    let (radix, digits_and_suffix) =
        match rest.strip_prefix("0x").or_else(|| rest.strip_prefix("0X")) {
            Some(r) => (16, r),
            None => (10, rest),
        };
    let split = digits_and_suffix
        .find(|c: char| !(c.is_digit(radix) || c == '_'))
        .unwrap_or(digits_and_suffix.len());
    let (digits, suffix) = digits_and_suffix.split_at(split);
    let digits: String = digits.chars().filter(|c| *c != '_').collect();
    if digits.is_empty() {
        return None;
    }
    let scale: i64 = match suffix.to_ascii_lowercase().as_str() {
        "" => 1,
        "k" | "kib" => 1 << 10,
        "m" | "mib" => 1 << 20,
        "g" | "gib" => 1 << 30,
        _ => return None,
    };
    let magnitude = i64::from_str_radix(&digits, radix)
        .ok()?
        .checked_mul(scale)?;
    Some(if negative { -magnitude } else { magnitude })
}

/// A workload's parameters after defaults and overrides, all validated.
#[derive(Clone, Debug)]
pub(crate) struct Params {
    workload: &'static str,
    values: BTreeMap<String, ParamValue>,
}

impl Params {
    /// Starts from the defaults of `specs` and applies `overrides` in order
    /// (a later override of the same name wins).
    pub(crate) fn resolve(
        workload: &'static str,
        specs: &[ParamSpec],
        overrides: &[(String, String)],
    ) -> Result<Params, WorkloadError> {
        let mut values: BTreeMap<String, ParamValue> = specs
            .iter()
            .map(|s| (s.name.to_string(), s.default.clone()))
            .collect();
        for (name, text) in overrides {
            let name = name.trim();
            let spec = specs.iter().find(|s| s.name == name).ok_or_else(|| {
                let names: Vec<&str> = specs.iter().map(|s| s.name).collect();
                WorkloadError::UnknownParam {
                    workload: workload.to_string(),
                    param: name.to_string(),
                    suggestion: did_you_mean(name, &names),
                    available: names.join(", "),
                }
            })?;
            let value = spec.parse(workload, text)?;
            values.insert(name.to_string(), value);
        }
        Ok(Params { workload, values })
    }

    /// The workload these parameters belong to.
    pub(crate) fn workload(&self) -> &'static str {
        self.workload
    }

    /// The value of an integer parameter. Panics if the workload does not
    /// declare it as an integer (a bug in the kernel, not a user error).
    pub(crate) fn int(&self, name: &str) -> i64 {
        match self.values.get(name) {
            Some(ParamValue::Int(v)) => *v,
            other => panic!(
                "{}: no integer parameter `{name}` ({other:?})",
                self.workload
            ),
        }
    }

    /// An integer parameter as a `u64` (every integer parameter we declare
    /// with `min >= 0`).
    pub(crate) fn uint(&self, name: &str) -> u64 {
        let v = self.int(name);
        u64::try_from(v).unwrap_or_else(|_| panic!("{}: `{name}` is negative", self.workload))
    }

    /// The word chosen for a choice parameter.
    pub(crate) fn choice(&self, name: &str) -> &str {
        match self.values.get(name) {
            Some(ParamValue::Choice(s)) => s,
            other => panic!(
                "{}: no choice parameter `{name}` ({other:?})",
                self.workload
            ),
        }
    }

    /// The value of a boolean parameter.
    pub(crate) fn flag(&self, name: &str) -> bool {
        match self.values.get(name) {
            Some(ParamValue::Bool(b)) => *b,
            other => panic!("{}: no bool parameter `{name}` ({other:?})", self.workload),
        }
    }

    /// Every parameter and its value.
    pub(crate) fn values(&self) -> &BTreeMap<String, ParamValue> {
        &self.values
    }

    /// `name=value` pairs separated by spaces, in name order.
    pub(crate) fn summary(&self) -> String {
        summary(&self.values)
    }

    /// A constraint error for this workload.
    pub(crate) fn constraint(&self, param: &str, message: impl Into<String>) -> WorkloadError {
        WorkloadError::Constraint {
            workload: self.workload.to_string(),
            param: param.to_string(),
            message: message.into(),
        }
    }
}

/// `name=value` pairs of `values` separated by spaces, in name order.
pub(crate) fn summary(values: &BTreeMap<String, ParamValue>) -> String {
    let parts: Vec<String> = values.iter().map(|(k, v)| format!("{k}={v}")).collect();
    parts.join(" ")
}

#[cfg(test)]
mod tests {
    use super::parse_int;

    #[test]
    fn integers_with_suffixes() {
        assert_eq!(parse_int("4096"), Some(4096));
        assert_eq!(parse_int("64K"), Some(65536));
        assert_eq!(parse_int("64KiB"), Some(65536));
        assert_eq!(parse_int("2m"), Some(2 << 20));
        assert_eq!(parse_int("1_000"), Some(1000));
        assert_eq!(parse_int("0x40"), Some(64));
        assert_eq!(parse_int("-3"), Some(-3));
        assert_eq!(parse_int("1.5"), None);
        assert_eq!(parse_int("K"), None);
        assert_eq!(parse_int("12KB"), None);
        assert_eq!(parse_int("99999999999G"), None);
    }
}
