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
}

/// One `--set path=value`, split.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Override {
    /// Dotted path, e.g. `l1d.mshrs`.
    pub path: String,
    /// RON text of the value.
    pub value: String,
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
    Ok(NamedConfig { label, config })
}

/// Apply one override, with an error that helps fix it.
pub fn apply(config: &mut Config, o: &Override) -> Result<()> {
    config.set(&o.path, &o.value).map_err(|e| match e {
        ConfigError::UnknownPath { .. } => anyhow!("{}", unknown_path_message(&o.path)),
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
/// "unknown section 'x'; sections: ...".
pub fn unknown_path_message(path: &str) -> String {
    let all = sections();
    let (section, field) = match path.split_once('.') {
        Some((s, f)) => (s, Some(f)),
        None => (path, None),
    };
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
