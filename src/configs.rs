//! Resolving `--config` and `--set`: a built-in preset or a RON file, then
//! dotted-path overrides applied in order, then validation. Every error names
//! what the user typed: a malformed file as `file:line:column: message`, an
//! unknown path with the fields of its section (or the sections that exist),
//! a bad value with its path.

use anyhow::{Context, Result, anyhow, bail};
use overlap_core::config::PRESETS;
use overlap_core::{Config, ConfigError};
use std::path::Path;

/// The configuration a command uses when given no `--config`.
pub const DEFAULT_CONFIG: &str = "miss-under-miss";

/// A configuration with the name reports show for it.
#[derive(Clone, Debug)]
pub struct NamedConfig {
    /// Short name: the preset name or the file's stem.
    pub label: String,
    /// The machine.
    pub config: Config,
    /// The `--set` overrides applied to it, in order, as `path=value`.
    pub sets: Vec<String>,
}

impl NamedConfig {
    /// The label followed by every override, for titles:
    /// `miss-under-miss +l1d.mode=Blocking`.
    pub fn described(&self) -> String {
        let mut s = self.label.clone();
        for o in &self.sets {
            s.push_str(" +");
            s.push_str(o);
        }
        s
    }
}

/// The overrides as one phrase for a note line: `--set a=1 --set b=2`.
pub fn sets_phrase(sets: &[String]) -> String {
    sets.iter()
        .map(|s| format!("--set {s}"))
        .collect::<Vec<_>>()
        .join(" ")
}

/// One `--set path=value`, split.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Override {
    /// Dotted path, e.g. `l1d.mshrs`.
    pub path: String,
    /// RON text of the value.
    pub value: String,
}

impl Override {
    /// `path=value`.
    pub fn text(&self) -> String {
        format!("{}={}", self.path, self.value)
    }
}

/// Split `path=value` (the value may itself contain `=`).
pub fn parse_override(raw: &str) -> Result<Override> {
    match raw.split_once('=') {
        Some((p, v)) if !p.trim().is_empty() && !v.trim().is_empty() => Ok(Override {
            path: p.trim().to_string(),
            value: v.trim().to_string(),
        }),
        _ => bail!("--set expects path=value (for example l1d.mshrs=4), got '{raw}'"),
    }
}

/// Split every `--set`.
pub fn parse_overrides(raw: &[String]) -> Result<Vec<Override>> {
    raw.iter().map(|r| parse_override(r)).collect()
}

/// Load one `--config` argument: a preset name or a RON file.
pub fn load(spec: &str) -> Result<NamedConfig> {
    if let Some(config) = Config::preset(spec) {
        return Ok(NamedConfig {
            label: spec.to_string(),
            config,
            sets: Vec::new(),
        });
    }
    let path = Path::new(spec);
    let looks_like_file = spec.ends_with(".ron") || spec.contains('/') || path.exists();
    if !looks_like_file {
        bail!(
            "unknown configuration '{spec}': not a preset ({}) and not a .ron file",
            PRESETS.join(", ")
        );
    }
    let text = std::fs::read_to_string(path)
        .with_context(|| format!("cannot read configuration file '{spec}'"))?;
    let config = Config::from_ron(&text).map_err(|e| match e {
        ConfigError::Parse {
            line,
            column,
            message,
        } => anyhow!("{spec}:{line}:{column}: {message}"),
        other => anyhow!("{spec}: {other}"),
    })?;
    let label = path
        .file_stem()
        .map_or(spec.to_string(), |s| s.to_string_lossy().into_owned());
    Ok(NamedConfig {
        label,
        config,
        sets: Vec::new(),
    })
}

/// Apply one override, with an error that helps fix it.
pub fn apply(config: &mut Config, o: &Override) -> Result<()> {
    config.set(&o.path, &o.value).map_err(|e| match e {
        ConfigError::UnknownPath { .. } => anyhow!("{}", unknown_path_message(config, &o.path)),
        ConfigError::Value {
            path,
            value,
            message,
        } => {
            anyhow!("--set {path}={value}: the value does not fit '{path}': {message}")
        }
        other => anyhow!("--set {}={}: {other}", o.path, o.value),
    })
}

/// Apply overrides in order and validate the result.
pub fn finish(mut named: NamedConfig, overrides: &[Override]) -> Result<NamedConfig> {
    for o in overrides {
        apply(&mut named.config, o)?;
        named.sets.push(o.text());
    }
    named
        .config
        .validate()
        .with_context(|| format!("configuration '{}' is not usable", named.label))?;
    Ok(named)
}

/// Resolve every `--config` (or [`DEFAULT_CONFIG`] when none), apply the
/// overrides to each, validate, and make the labels unique.
pub fn resolve(
    specs: &[String],
    overrides: &[Override],
    defaults: &[&str],
) -> Result<Vec<NamedConfig>> {
    let specs: Vec<String> = if specs.is_empty() {
        defaults.iter().map(|s| s.to_string()).collect()
    } else {
        specs.to_vec()
    };
    let mut out: Vec<NamedConfig> = Vec::with_capacity(specs.len());
    for spec in &specs {
        let mut named = finish(load(spec)?, overrides)?;
        let base = named.label.clone();
        let mut n = 2;
        while out.iter().any(|c| c.label == named.label) {
            named.label = format!("{base}#{n}");
            n += 1;
        }
        out.push(named);
    }
    Ok(out)
}

/// Sections and their fields, read from the serialised default
/// configuration (optional caches enabled so their fields show).
pub fn sections() -> Vec<(String, Vec<String>)> {
    let c = Config {
        l1i: Some(overlap_mem::CacheConfig::l1i()),
        l3: Some(overlap_mem::CacheConfig::l3()),
        ..Config::default()
    };
    let value = serde_json::to_value(&c).expect("a config serialises");
    let serde_json::Value::Object(map) = value else {
        return Vec::new();
    };
    map.into_iter()
        .map(|(section, body)| {
            let fields = match body {
                serde_json::Value::Object(f) => f.keys().cloned().collect(),
                _ => Vec::new(),
            };
            (section, fields)
        })
        .collect()
}

/// "unknown field 'x' in section 'core'; its fields: ..." or
/// "unknown section 'x'; sections: ...", or for a station or unit of `config`
/// by index (`core.stations.1.entries`), how many there are and their fields.
pub fn unknown_path_message(config: &Config, path: &str) -> String {
    let all = sections();
    let (section, field) = match path.split_once('.') {
        Some((s, f)) => (s, Some(f)),
        None => (path, None),
    };
    if section == "core"
        && let Some(f) = field
        && let Some(msg) = list_path_message(config, path, f)
    {
        return msg;
    }
    match all.iter().find(|(s, _)| s == section) {
        Some((s, fields)) => match field {
            Some(f) => format!(
                "unknown configuration path '{path}': section '{s}' has no field '{f}'; its fields: {}",
                fields.join(", ")
            ),
            None => format!("unknown configuration path '{path}'"),
        },
        None => format!(
            "unknown configuration path '{path}': no section '{section}'; sections: {}",
            all.iter()
                .map(|(s, _)| s.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    }
}

/// For `core.stations.I.FIELD` and `core.units.I.FIELD`: the number of
/// entries of the list in `config` and the fields of one entry.
fn list_path_message(config: &Config, path: &str, field: &str) -> Option<String> {
    let (list, rest) = field.split_once('.')?;
    if list != "stations" && list != "units" {
        return None;
    }
    let value = serde_json::to_value(&config.core).ok()?;
    let items = value.get(list)?.as_array()?;
    let fields: Vec<String> = match items.first() {
        Some(serde_json::Value::Object(m)) => m.keys().cloned().collect(),
        _ => Vec::new(),
    };
    let (index, name) = rest.split_once('.').unwrap_or((rest, ""));
    let range = match items.len() {
        0 => "none".to_string(),
        n => format!("indices 0..={}", n - 1),
    };
    let what = match index.parse::<usize>() {
        Ok(i) if i < items.len() => format!("core.{list}.{i} has no field '{name}'"),
        Ok(i) => format!("there is no core.{list}.{i}"),
        Err(_) => format!("'{index}' is not an index"),
    };
    Some(format!(
        "unknown configuration path '{path}': {what}; this configuration has {} {list} ({range}), each with the fields {}",
        items.len(),
        fields.join(", ")
    ))
}
