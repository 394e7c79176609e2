//! `overlap baseline` and `overlap check`: record every entry of a suite on
//! every configuration, then re-run the same runs and show what moved.
//!
//! A baseline file records, besides the metrics, each configuration's full
//! RON and each entry's workload with every parameter value, so `check`
//! re-runs exactly what was recorded even if presets, suites or parameter
//! defaults change later: only a change of the model (or an explicit
//! `--config`/`--set`) moves a metric.

use crate::cli::{ConfigArgs, RunArgs};
use crate::configs::{self, NamedConfig};
use crate::metrics::{self, Num};
use crate::output;
use crate::programs::{self, Loaded};
use crate::sim;
use crate::table::{Align, Table};
use anyhow::{Context, Result, anyhow, bail, ensure};
use indexmap::IndexMap;
use overlap_core::config::PRESETS;
use overlap_core::{Config, SCHEMA_VERSION};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::process::ExitCode;

/// The `kind` of a baseline file.
pub const KIND: &str = "overlap-baseline";
/// Version of the baseline file layout.
pub const FORMAT: u32 = 1;

/// A baseline file.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Baseline {
    /// Always [`KIND`].
    pub kind: String,
    /// [`FORMAT`].
    pub format: u32,
    /// Version of overlap that recorded it.
    pub tool_version: String,
    /// Report schema version of that tool.
    pub report_schema: u32,
    /// The suite.
    pub suite: String,
    /// Every configuration, with its full RON.
    pub configs: Vec<RecordedConfig>,
    /// Every run: suite entries times configurations, entry-major.
    pub runs: Vec<RecordedRun>,
}

/// A configuration as recorded.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct RecordedConfig {
    /// Its label.
    pub label: String,
    /// The whole configuration as RON.
    pub ron: String,
}

/// One run as recorded.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct RecordedRun {
    /// Suite entry label.
    pub entry: String,
    /// Workload name.
    pub workload: String,
    /// Every workload parameter, defaults included.
    pub params: BTreeMap<String, String>,
    /// Configuration label.
    pub config: String,
    /// The metrics.
    pub metrics: IndexMap<String, Num>,
}

/// The runs to do: (program, configuration index) pairs.
fn run_all(
    programs: &[(String, Loaded)],
    named: &[NamedConfig],
    jobs: Option<usize>,
) -> Result<Vec<RecordedRun>> {
    let pairs: Vec<(usize, usize)> = (0..programs.len())
        .flat_map(|p| (0..named.len()).map(move |c| (p, c)))
        .collect();
    let configs: Vec<&Config> = named.iter().map(|c| &c.config).collect();
    let pool = super::pool(jobs)?;
    pool.install(|| {
        pairs
            .par_iter()
            .map(|&(p, c)| {
                let (entry, loaded) = &programs[p];
                let opts = sim::options(&RunArgs::default(), loaded);
                let outcome = sim::run(loaded, &named[c], &opts)
                    .with_context(|| format!("suite entry '{entry}'"))?;
                let buckets = metrics::bucket_order(configs.iter().copied(), [&outcome.report]);
                Ok(RecordedRun {
                    entry: entry.clone(),
                    workload: loaded
                        .workload
                        .clone()
                        .unwrap_or_else(|| loaded.label.clone()),
                    params: loaded.params.clone(),
                    config: named[c].label.clone(),
                    metrics: metrics::of(&outcome.report, &buckets),
                })
            })
            .collect()
    })
}

/// `overlap baseline`.
pub fn record(
    suite: &str,
    config: &ConfigArgs,
    out: &Path,
    jobs: Option<usize>,
) -> Result<ExitCode> {
    let Some(entries) = overlap_workloads::suite(suite) else {
        bail!(
            "unknown suite '{suite}'; suites: {}",
            overlap_workloads::suite_names().join(", ")
        );
    };
    output::check_writable_dir(out)?;
    let overrides = configs::parse_overrides(&config.sets)?;
    let named = configs::resolve(&config.configs, &overrides, &PRESETS)?;
    let programs = entries
        .iter()
        .map(|e| {
            programs::load(e.workload, &e.overrides)
                .map(|l| (e.label.clone(), l))
                .with_context(|| format!("suite '{suite}', entry '{}'", e.label))
        })
        .collect::<Result<Vec<_>>>()?;
    let started = std::time::Instant::now();
    let runs = run_all(&programs, &named, jobs)?;
    let baseline = Baseline {
        kind: KIND.to_string(),
        format: FORMAT,
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
        report_schema: SCHEMA_VERSION,
        suite: suite.to_string(),
        configs: named
            .iter()
            .map(|c| RecordedConfig {
                label: c.label.clone(),
                ron: c.config.to_ron(),
            })
            .collect(),
        runs,
    };
    let text = serde_json::to_string_pretty(&baseline)? + "\n";
    output::write_atomic(out, text.as_bytes())?;
    eprintln!(
        "recorded {} runs ({} entries x {} configurations) in {:.1} s into '{}'",
        baseline.runs.len(),
        programs.len(),
        named.len(),
        started.elapsed().as_secs_f64(),
        out.display()
    );
    Ok(ExitCode::SUCCESS)
}

/// `2%`, `2` or `0.5%`: a percentage.
fn parse_tolerance(raw: &str) -> Result<f64> {
    let t = raw.trim().trim_end_matches('%').trim();
    let v: f64 = t
        .parse()
        .map_err(|_| anyhow!("--tolerance expects a percentage such as 2% , got '{raw}'"))?;
    ensure!(
        v >= 0.0 && v.is_finite(),
        "--tolerance must be a percentage of at least 0, got '{raw}'"
    );
    Ok(v)
}

/// Read and vet a baseline file.
pub fn read(path: &Path) -> Result<Baseline> {
    let text = std::fs::read_to_string(path)
        .with_context(|| format!("cannot read baseline '{}'", path.display()))?;
    let value: serde_json::Value = serde_json::from_str(&text).map_err(|e| {
        anyhow!(
            "'{}' is not a baseline file: invalid JSON: {e}",
            path.display()
        )
    })?;
    ensure!(
        value.get("kind").and_then(|k| k.as_str()) == Some(KIND),
        "'{}' is not a baseline file (no \"kind\": \"{KIND}\")",
        path.display()
    );
    let format = value.get("format").and_then(|f| f.as_u64());
    ensure!(
        format == Some(u64::from(FORMAT)),
        "'{}' has baseline format {:?}; this overlap reads format {FORMAT}: record it again",
        path.display(),
        format
    );
    let b: Baseline = serde_json::from_value(value)
        .map_err(|e| anyhow!("'{}' is a damaged baseline file: {e}", path.display()))?;
    ensure!(
        b.report_schema == SCHEMA_VERSION,
        "'{}' was recorded with report schema {} by overlap {}; this overlap writes schema {SCHEMA_VERSION}: record it again",
        path.display(),
        b.report_schema,
        b.tool_version
    );
    vet(path, &b)?;
    Ok(b)
}

/// Check that a baseline is consistent with itself: configuration labels
/// unique, every run naming a recorded configuration, no run recorded
/// twice, and every run of an entry built from the same workload and
/// parameters. A file edited by hand (or cut and pasted from two files) is
/// reported here, naming the run, rather than halfway through a check.
fn vet(path: &Path, b: &Baseline) -> Result<()> {
    let damaged = |what: String| {
        anyhow!(
            "'{}' is an inconsistent baseline file: {what}; record it again",
            path.display()
        )
    };
    let mut labels: Vec<&str> = Vec::new();
    for c in &b.configs {
        if labels.contains(&c.label.as_str()) {
            return Err(damaged(format!(
                "configuration '{}' is recorded twice",
                c.label
            )));
        }
        labels.push(&c.label);
    }
    let mut seen: BTreeSet<(&str, &str)> = BTreeSet::new();
    let mut entries: BTreeMap<&str, &RecordedRun> = BTreeMap::new();
    for run in &b.runs {
        if !labels.contains(&run.config.as_str()) {
            return Err(damaged(format!(
                "run '{}' on '{}' names a configuration that is not recorded (recorded: {})",
                run.entry,
                run.config,
                labels.join(", ")
            )));
        }
        if !seen.insert((run.entry.as_str(), run.config.as_str())) {
            return Err(damaged(format!(
                "run '{}' on '{}' is recorded twice",
                run.entry, run.config
            )));
        }
        match entries.get(run.entry.as_str()) {
            Some(first) if first.workload != run.workload || first.params != run.params => {
                return Err(damaged(format!(
                    "entry '{}' is recorded with different workloads or parameters on '{}' and '{}'",
                    run.entry, first.config, run.config
                )));
            }
            Some(_) => {}
            None => {
                entries.insert(&run.entry, run);
            }
        }
    }
    Ok(())
}

/// Recompute a metric the way it would read back from a file, so an
/// unchanged value compares equal to the recorded one bit for bit.
fn as_recorded(v: Num) -> Result<Num> {
    Ok(serde_json::from_str(&serde_json::to_string(&v)?)?)
}

/// One metric that moved.
struct Moved {
    entry: String,
    config: String,
    metric: String,
    old: Num,
    new: Num,
    /// Relative change in percent; infinite when the old value was 0.
    change: f64,
    beyond: bool,
}

/// `overlap check`.
pub fn check(
    path: &Path,
    tolerance: &str,
    metric_filter: &[String],
    config_specs: &[String],
    sets: &[String],
    jobs: Option<usize>,
) -> Result<ExitCode> {
    let tol = parse_tolerance(tolerance)?;
    let base = read(path)?;
    let overrides = configs::parse_overrides(sets)?;
    let mut named: Vec<NamedConfig> = Vec::new();
    for c in &base.configs {
        let config = Config::from_ron(&c.ron).map_err(|e| {
            anyhow!(
                "'{}': recorded configuration '{}' does not load in this overlap: {e}",
                path.display(),
                c.label
            )
        })?;
        named.push(NamedConfig {
            label: c.label.clone(),
            config,
            sets: Vec::new(),
        });
    }
    for spec in config_specs {
        let fresh = configs::load(spec)?;
        let Some(slot) = named.iter_mut().find(|n| n.label == fresh.label) else {
            bail!(
                "--config {spec}: no recorded configuration is labelled '{}'; recorded: {}",
                fresh.label,
                base.configs
                    .iter()
                    .map(|c| c.label.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            );
        };
        slot.config = fresh.config;
    }
    let named = named
        .into_iter()
        .map(|n| configs::finish(n, &overrides))
        .collect::<Result<Vec<_>>>()?;
    let wanted = select_metrics(&base, metric_filter)?;

    // Rebuild every recorded program, in recorded order.
    let mut programs: Vec<(String, Loaded)> = Vec::new();
    for run in &base.runs {
        if programs.iter().any(|(e, _)| *e == run.entry) {
            continue;
        }
        let params: Vec<(String, String)> = run
            .params
            .iter()
            .map(|(k, v)| (k.clone(), v.clone()))
            .collect();
        let loaded = programs::load(&run.workload, &params).with_context(|| {
            format!(
                "'{}': recorded entry '{}' cannot be rebuilt",
                path.display(),
                run.entry
            )
        })?;
        programs.push((run.entry.clone(), loaded));
    }
    let started = std::time::Instant::now();
    let fresh = run_all(&programs, &named, jobs)?;
    let by_key: BTreeMap<(&str, &str), &RecordedRun> = fresh
        .iter()
        .map(|r| ((r.entry.as_str(), r.config.as_str()), r))
        .collect();

    let mut moved = Vec::new();
    let mut compared = 0usize;
    for old in &base.runs {
        let Some(new) = by_key.get(&(old.entry.as_str(), old.config.as_str())) else {
            bail!(
                "internal: run {} on {} was not re-run",
                old.entry,
                old.config
            );
        };
        let mut keys: Vec<&String> = old.metrics.keys().collect();
        keys.extend(new.metrics.keys().filter(|k| !old.metrics.contains_key(*k)));
        for key in keys {
            if !wanted(key) {
                continue;
            }
            compared += 1;
            let o = old.metrics.get(key).copied().unwrap_or(Num::Int(0));
            let n = as_recorded(new.metrics.get(key).copied().unwrap_or(Num::Int(0)))?;
            let (ov, nv) = (o.get(), n.get());
            if ov == nv {
                continue;
            }
            let change = if ov == 0.0 {
                f64::INFINITY
            } else {
                100.0 * (nv - ov) / ov.abs()
            };
            moved.push(Moved {
                entry: old.entry.clone(),
                config: old.config.clone(),
                metric: key.clone(),
                old: o,
                new: n,
                change,
                beyond: change.abs() > tol,
            });
        }
    }
    let beyond = moved.iter().filter(|m| m.beyond).count();
    let mut s = String::new();
    if moved.is_empty() {
        s.push_str(&format!(
            "no metric moved: {} runs, {compared} values identical to '{}'\n",
            base.runs.len(),
            path.display()
        ));
    } else {
        let mut t = Table::new(&[
            ("entry", Align::Left),
            ("config", Align::Left),
            ("metric", Align::Left),
            ("old", Align::Right),
            ("new", Align::Right),
            ("change", Align::Right),
            ("status", Align::Left),
        ]);
        for m in &moved {
            t.row(vec![
                m.entry.clone(),
                m.config.clone(),
                m.metric.clone(),
                show(m.old),
                show(m.new),
                if m.change.is_finite() {
                    format!("{:+.2}%", m.change)
                } else {
                    "was 0".into()
                },
                if m.beyond {
                    "beyond tolerance".into()
                } else {
                    "within".into()
                },
            ]);
        }
        s.push_str(&t.render());
        s.push_str(&format!(
            "{} of {compared} values moved, {beyond} beyond the {tol}% tolerance ({} runs, {:.1} s)\n",
            moved.len(),
            base.runs.len(),
            started.elapsed().as_secs_f64()
        ));
    }
    output::emit(None, &s)?;
    Ok(if beyond > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    })
}

fn show(v: Num) -> String {
    match v {
        Num::Int(i) => crate::table::int(i),
        Num::Real(r) => format!("{r:.6}"),
    }
}

/// A predicate for the metrics to compare.
fn select_metrics(base: &Baseline, filter: &[String]) -> Result<impl Fn(&str) -> bool + use<>> {
    let known: Vec<String> = base
        .runs
        .iter()
        .flat_map(|r| r.metrics.keys().cloned())
        .fold(Vec::new(), |mut acc, k| {
            if !acc.contains(&k) {
                acc.push(k);
            }
            acc
        });
    let filter: Vec<String> = filter
        .iter()
        .map(|f| f.trim().to_string())
        .filter(|f| !f.is_empty())
        .collect();
    for f in &filter {
        ensure!(
            f == "ledger" || known.contains(f),
            "--metrics {f}: not a recorded metric; recorded: {} (or `ledger` for every bucket)",
            known.join(", ")
        );
    }
    Ok(move |key: &str| {
        filter.is_empty()
            || filter
                .iter()
                .any(|f| f == key || (f == "ledger" && key.starts_with("ledger.")))
    })
}
