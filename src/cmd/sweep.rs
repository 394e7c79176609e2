//! `overlap sweep` and `overlap merge`: a grid of runs, in parallel, with
//! results appended one JSON line per finished point.
//!
//! The grid is every combination of the `--vary` lists; point `i` is the
//! `i`-th combination with the last `--vary` varying fastest. A point is
//! identified by its index and its assignment of varied values; every line
//! also carries the sweep's signature (a hash of the resolved program,
//! workload parameters, configuration after overrides, and grid, so that
//! equivalent command lines agree) and the grid's size, so `--resume` and
//! `merge` refuse files from another sweep and `merge` can name missing
//! points. A line is written with one `write` call and flushed at once; a
//! last line cut short by a kill is dropped on `--resume` and its point run
//! again.

use crate::cli::{ProgramArgs, RunArgs};
use crate::configs::{self, DEFAULT_CONFIG, NamedConfig, Override};
use crate::metrics::{self, Num};
use crate::output::{self, csv_line};
use crate::programs::{self, Loaded};
use crate::render::{self, Truncation};
use crate::sim;
use crate::svg;
use crate::table::{Align, Table, fixed, int};
use anyhow::{Context, Result, anyhow, bail, ensure};
use clap::Args;
use indexmap::IndexMap;
use overlap_core::Report;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};
use std::fs::{File, OpenOptions};
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Mutex;
use std::time::Instant;

/// Prefix of a `--vary` path that names a workload parameter instead of a
/// configuration field.
pub const PARAM_PREFIX: &str = "param.";

/// Flags of `overlap sweep`.
#[derive(Args, Debug, Clone)]
pub struct SweepArgs {
    /// A built-in workload name, an assembly file (.s) or an RV64 ELF executable.
    pub program: String,
    #[command(flatten)]
    pub program_args: ProgramArgs,
    /// The base configuration: a preset or a RON file.
    #[arg(long, value_name = "PRESET|FILE.ron", default_value = DEFAULT_CONFIG)]
    pub config: String,
    /// Override a field of the base configuration, PATH=VALUE (repeatable).
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub sets: Vec<String>,
    /// A dimension of the grid: PATH=V1,V2,... where PATH is a configuration
    /// field (l1d.mshrs) or param.NAME for a workload parameter (repeatable).
    #[arg(long, value_name = "PATH=V1,V2,...", required = true)]
    pub vary: Vec<String>,
    #[command(flatten)]
    pub run: RunArgs,
    /// Parallel runs (default: one per core).
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
    /// Append one JSON line per finished point to this file.
    #[arg(long, value_name = "FILE.jsonl")]
    pub out: Option<PathBuf>,
    /// Continue the sweep in --out: skip the points already there.
    #[arg(long, requires = "out")]
    pub resume: bool,
    /// Run only the points whose index modulo N is I (I/N, e.g. 0/4).
    #[arg(long, value_name = "I/N")]
    pub shard: Option<String>,
    /// Write every point's metrics as CSV.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    /// Plot --metric against --x, one line per value of the other varied paths.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// The metric to plot (e.g. ipc, cycles, l1d_mlp, ledger.mshr.l1d).
    #[arg(long, default_value = "ipc")]
    pub metric: String,
    /// The varied path on the x axis (default: the first --vary).
    #[arg(long, value_name = "PATH")]
    pub x: Option<String>,
    /// The varied path that tells the lines apart (default: every other varied path).
    #[arg(long, value_name = "PATH")]
    pub series: Option<String>,
    /// Stop after this many new points (for tests of --resume).
    #[arg(long, hide = true)]
    pub max_points: Option<usize>,
}

/// One dimension of the grid.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Dim {
    /// Configuration path or `param.NAME`.
    pub path: String,
    /// Values as typed.
    pub values: Vec<String>,
}

/// Split a `--vary` value list at commas outside brackets and quotes, so RON
/// values such as `Some((size_bytes: 1024))` or `[1, 2]` stay whole.
pub fn split_values(list: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut depth = 0i32;
    let mut quoted = false;
    let mut cur = String::new();
    for ch in list.chars() {
        match ch {
            '"' => quoted = !quoted,
            '(' | '[' | '{' if !quoted => depth += 1,
            ')' | ']' | '}' if !quoted => depth -= 1,
            ',' if !quoted && depth == 0 => {
                out.push(cur.trim().to_string());
                cur.clear();
                continue;
            }
            _ => {}
        }
        cur.push(ch);
    }
    out.push(cur.trim().to_string());
    out
}

/// Parse one `--vary`.
pub fn parse_dim(raw: &str) -> Result<Dim> {
    let Some((path, list)) = raw.split_once('=') else {
        bail!("--vary expects PATH=V1,V2,... (for example l1d.mshrs=1,2,4,8), got '{raw}'");
    };
    let path = path.trim().to_string();
    let values = split_values(list);
    ensure!(!path.is_empty(), "--vary '{raw}': the path is empty");
    ensure!(
        values.iter().all(|v| !v.is_empty()),
        "--vary '{raw}': an empty value in the list"
    );
    let unique: BTreeSet<&String> = values.iter().collect();
    ensure!(
        unique.len() == values.len(),
        "--vary '{raw}': a value is listed twice"
    );
    Ok(Dim { path, values })
}

/// The grid of a sweep.
#[derive(Clone, Debug)]
pub struct Grid {
    /// The dimensions, first varying slowest.
    pub dims: Vec<Dim>,
}

impl Grid {
    /// Number of points.
    pub fn len(&self) -> u64 {
        self.dims.iter().map(|d| d.values.len() as u64).product()
    }

    /// Value index per dimension of point `index`.
    pub fn coords(&self, mut index: u64) -> Vec<usize> {
        let mut c = vec![0; self.dims.len()];
        for (i, d) in self.dims.iter().enumerate().rev() {
            let n = d.values.len() as u64;
            c[i] = (index % n) as usize;
            index /= n;
        }
        c
    }

    /// The assignment of point `index`: path to value.
    pub fn point(&self, index: u64) -> IndexMap<String, String> {
        self.coords(index)
            .into_iter()
            .zip(&self.dims)
            .map(|(c, d)| (d.path.clone(), d.values[c].clone()))
            .collect()
    }
}

/// One line of a results file.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Record {
    /// Signature of the sweep that wrote it.
    pub sweep: String,
    /// Point index in the grid.
    pub index: u64,
    /// Number of points in the whole grid, so `merge` can tell which are
    /// missing (absent from files written before it was recorded).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid_size: Option<u64>,
    /// The varied values.
    pub point: IndexMap<String, String>,
    /// Program label.
    pub program: String,
    /// Base configuration label.
    pub config: String,
    /// The shared metric set.
    pub metrics: IndexMap<String, Num>,
    /// The full run report.
    pub report: Report,
}

/// 64-bit FNV-1a of text, for signatures.
fn fnv(text: &str) -> u64 {
    fnv_bytes(text.as_bytes())
}

/// 64-bit FNV-1a.
// Source: the FNV-1a definition (Fowler, Noll, Vo): offset basis
// 0xcbf29ce484222325, prime 0x100000001b3, xor then multiply.
fn fnv_bytes(bytes: &[u8]) -> u64 {
    bytes.iter().fold(0xcbf2_9ce4_8422_2325, |h, &b| {
        (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
    })
}

/// What identifies a sweep: everything that decides its points' results,
/// resolved, so that equivalent command lines agree: the program (a
/// built-in workload's name, or a file's contents, wherever it lives), every
/// workload parameter not varied with its resolved value (`64K` and `65536`,
/// a default given or left out, in any order), the base configuration after
/// `--set` as RON (a preset, or a file by its contents, not its path), the
/// grid, `--max-insts` and `--whole-run`.
fn signature(a: &SweepArgs, grid: &Grid) -> Result<String> {
    let varied: BTreeSet<&str> = grid.dims.iter().map(|d| d.path.as_str()).collect();
    let mut s = String::new();
    let path = Path::new(&a.program);
    if path.is_file() {
        let bytes = std::fs::read(path).with_context(|| format!("cannot read '{}'", a.program))?;
        s.push_str(&format!("file={:016x}\n", fnv_bytes(&bytes)));
    } else {
        let params: Vec<(String, String)> = programs::parse_params(&a.program_args.params)?
            .into_iter()
            .filter(|(k, _)| !varied.contains(format!("{PARAM_PREFIX}{k}").as_str()))
            .collect();
        // An unknown workload or a bad parameter is reported by `load` with
        // its usual message; here only the resolved values matter.
        match overlap_workloads::generate(&a.program, &params) {
            Ok(g) => {
                s.push_str(&format!("workload={}\n", g.name));
                for (k, v) in &g.params {
                    if !varied.contains(format!("{PARAM_PREFIX}{k}").as_str()) {
                        s.push_str(&format!("param={k}={v}\n"));
                    }
                }
            }
            Err(_) => {
                programs::load(&a.program, &params)?;
                bail!("cannot build workload '{}'", a.program);
            }
        }
    }
    let mut base = configs::load(&a.config)?;
    for o in configs::parse_overrides(&a.sets)? {
        if !varied.contains(o.path.as_str()) {
            configs::apply(&mut base.config, &o)?;
        }
    }
    s.push_str(&format!("config={}\n", base.config.to_ron()));
    for d in &grid.dims {
        s.push_str(&format!("vary={}={}\n", d.path, d.values.join("\u{1f}")));
    }
    s.push_str(&format!(
        "max_insts={:?}\nwhole_run={}\n",
        a.run.max_insts, a.run.whole_run
    ));
    Ok(format!("{:016x}", fnv(&s)))
}

/// `I/N`.
fn parse_shard(raw: &str) -> Result<(u64, u64)> {
    let (i, n) = raw
        .split_once('/')
        .ok_or_else(|| anyhow!("--shard expects I/N (e.g. 0/4), got '{raw}'"))?;
    let i: u64 = i
        .trim()
        .parse()
        .with_context(|| format!("--shard '{raw}': I is not a number"))?;
    let n: u64 = n
        .trim()
        .parse()
        .with_context(|| format!("--shard '{raw}': N is not a number"))?;
    ensure!(n >= 1 && i < n, "--shard '{raw}': need 0 <= I < N");
    Ok((i, n))
}

/// Lines of a results file, and where the last complete line ends.
struct ReadBack {
    /// Each record with its line as written (without the newline).
    records: Vec<(Record, String)>,
    /// Byte length of the complete lines (what to keep).
    good_len: u64,
    /// A last line without its newline was dropped.
    dropped_tail: bool,
}

/// Read a results file. Every complete line must be a record; a last line
/// without a newline is a write cut short and is dropped.
fn read_results(path: &Path) -> Result<ReadBack> {
    let bytes = std::fs::read(path).with_context(|| format!("cannot read '{}'", path.display()))?;
    let mut records = Vec::new();
    let mut pos = 0usize;
    let mut line_no = 0;
    while pos < bytes.len() {
        line_no += 1;
        let Some(nl) = bytes[pos..].iter().position(|&b| b == b'\n') else {
            return Ok(ReadBack {
                records,
                good_len: pos as u64,
                dropped_tail: true,
            });
        };
        let line = &bytes[pos..pos + nl];
        if !line.iter().all(u8::is_ascii_whitespace) {
            let rec: Record = serde_json::from_slice(line).map_err(|e| {
                anyhow!(
                    "{}:{line_no}: not a sweep result line ({e})",
                    path.display()
                )
            })?;
            records.push((rec, String::from_utf8_lossy(line).into_owned()));
        }
        pos += nl + 1;
    }
    Ok(ReadBack {
        records,
        good_len: pos as u64,
        dropped_tail: false,
    })
}

/// A configuration and a program for every point.
struct Prepared {
    configs: Vec<NamedConfig>,
    programs: Vec<Loaded>,
    /// Index into `programs` per point.
    program_of: Vec<usize>,
}

fn prepare(a: &SweepArgs, grid: &Grid, indices: &[u64]) -> Result<Prepared> {
    let base_overrides = configs::parse_overrides(&a.sets)?;
    let base = configs::load(&a.config)?;
    let base_params = programs::parse_params(&a.program_args.params)?;
    let mut configs = Vec::with_capacity(indices.len());
    let mut programs: Vec<Loaded> = Vec::new();
    let mut program_keys: BTreeMap<Vec<(String, String)>, usize> = BTreeMap::new();
    let mut program_of = Vec::with_capacity(indices.len());
    for &i in indices {
        let point = grid.point(i);
        let mut overrides: Vec<Override> = base_overrides.clone();
        let mut params = base_params.clone();
        for (path, value) in &point {
            match path.strip_prefix(PARAM_PREFIX) {
                Some(name) => {
                    params.retain(|(k, _)| k != name);
                    params.push((name.to_string(), value.clone()));
                }
                None => overrides.push(Override {
                    path: path.clone(),
                    value: value.clone(),
                }),
            }
        }
        let label = point
            .iter()
            .map(|(k, v)| format!("{k}={v}"))
            .collect::<Vec<_>>()
            .join(" ");
        let named = configs::finish(base.clone(), &overrides)
            .with_context(|| format!("sweep point {i} ({label})"))?;
        configs.push(named);
        let slot = match program_keys.get(&params) {
            Some(&s) => s,
            None => {
                let loaded = programs::load(&a.program, &params)
                    .with_context(|| format!("sweep point {i} ({label})"))?;
                programs.push(loaded);
                program_keys.insert(params, programs.len() - 1);
                programs.len() - 1
            }
        };
        program_of.push(slot);
    }
    Ok(Prepared {
        configs,
        programs,
        program_of,
    })
}

/// `--metric` must name a metric the points will have: a scalar, or
/// `ledger.BUCKET` for a bucket one of the machines can produce. Checked
/// before anything runs, so a typo costs no sweep.
fn check_metric(a: &SweepArgs, prepared: &Prepared, previous: &[Record]) -> Result<()> {
    let base = configs::load(&a.config)?;
    let configs = std::iter::once(&base.config).chain(prepared.configs.iter().map(|c| &c.config));
    let mut known: Vec<String> = metrics::SCALARS.iter().map(|s| s.to_string()).collect();
    known.extend(
        metrics::bucket_order(configs, [])
            .into_iter()
            .map(|b| format!("ledger.{b}")),
    );
    for k in previous.iter().flat_map(|r| r.metrics.keys()) {
        if !known.contains(k) {
            known.push(k.clone());
        }
    }
    ensure!(
        known.contains(&a.metric),
        "--metric {}: no such metric; metrics: {}",
        a.metric,
        known.join(", ")
    );
    Ok(())
}

/// Run the command.
pub fn sweep(a: &SweepArgs) -> Result<ExitCode> {
    let dims = a
        .vary
        .iter()
        .map(|v| parse_dim(v))
        .collect::<Result<Vec<_>>>()?;
    for (i, d) in dims.iter().enumerate() {
        ensure!(
            !dims[..i].iter().any(|o| o.path == d.path),
            "--vary {} is given twice",
            d.path
        );
    }
    let grid = Grid { dims };
    let total = grid.len();
    let (shard_i, shard_n) = a
        .shard
        .as_deref()
        .map(parse_shard)
        .transpose()?
        .unwrap_or((0, 1));
    let sig = signature(a, &grid)?;
    for p in [a.csv.as_deref(), a.svg.as_deref(), a.out.as_deref()]
        .into_iter()
        .flatten()
    {
        output::check_writable_dir(p)?;
    }
    if a.svg.is_some() {
        plot_axes(a, &grid)?;
    }

    // What is done already.
    let mut previous: Vec<Record> = Vec::new();
    let mut cut_tail: Option<(PathBuf, u64)> = None;
    if let Some(out) = &a.out
        && out.exists()
    {
        if !a.resume {
            bail!(
                "'{}' already exists; pass --resume to continue that sweep, or choose another --out",
                out.display()
            );
        }
        let back = read_results(out)?;
        for (r, _) in &back.records {
            ensure!(
                r.sweep == sig,
                "'{}' holds results of a different sweep (signature {}, this sweep is {sig}): to resume, the program, its --param values, --config, --set, --vary, --max-insts and --whole-run must match",
                out.display(),
                r.sweep
            );
            ensure!(
                r.index < total && grid.point(r.index) == r.point,
                "'{}': point {} does not match this grid",
                out.display(),
                r.index
            );
        }
        if back.dropped_tail {
            cut_tail = Some((out.clone(), back.good_len));
        }
        previous = back.records.into_iter().map(|(r, _)| r).collect();
    }
    let done: BTreeSet<u64> = previous.iter().map(|r| r.index).collect();
    let mut todo: Vec<u64> = (0..total)
        .filter(|i| i % shard_n == shard_i && !done.contains(i))
        .collect();
    let remaining_after = todo
        .len()
        .saturating_sub(a.max_points.unwrap_or(usize::MAX));
    if let Some(m) = a.max_points {
        todo.truncate(m);
    }
    let prepared = prepare(a, &grid, &todo)?;
    check_metric(a, &prepared, &previous)?;
    if let Some((out, good_len)) = cut_tail {
        eprintln!(
            "{}: dropping an incomplete last line (its point runs again)",
            out.display()
        );
        let f = OpenOptions::new()
            .write(true)
            .open(&out)
            .with_context(|| format!("cannot open '{}'", out.display()))?;
        f.set_len(good_len)
            .with_context(|| format!("cannot truncate '{}'", out.display()))?;
    }
    let writer = match &a.out {
        Some(p) => Some(Mutex::new(
            OpenOptions::new()
                .create(true)
                .append(true)
                .open(p)
                .with_context(|| format!("cannot open '{}' for appending", p.display()))?,
        )),
        None => None,
    };
    tracing::info!(
        points = total,
        todo = todo.len(),
        done = done.len(),
        "sweep"
    );
    let progress = Progress::new(todo.len() as u64);
    let pool = super::pool(a.jobs)?;
    let results: Mutex<Vec<Record>> = Mutex::new(Vec::new());
    pool.install(|| {
        todo.par_iter()
            .enumerate()
            .try_for_each(|(slot, &index)| -> Result<()> {
                let started = Instant::now();
                let named = &prepared.configs[slot];
                let loaded = &prepared.programs[prepared.program_of[slot]];
                let point = grid.point(index);
                let opts = sim::options(&a.run, loaded);
                let outcome = sim::run(loaded, named, &opts)
                    .with_context(|| format!("sweep point {index} ({})", describe(&point)))?;
                let buckets = metrics::bucket_order([&named.config], [&outcome.report]);
                let record = Record {
                    sweep: sig.clone(),
                    index,
                    grid_size: Some(total),
                    point,
                    program: loaded.label.clone(),
                    config: named.label.clone(),
                    metrics: metrics::of(&outcome.report, &buckets),
                    report: outcome.report,
                };
                if let Some(w) = &writer {
                    let mut line = serde_json::to_string(&record)?;
                    line.push('\n');
                    let mut f = w
                        .lock()
                        .map_err(|_| anyhow!("results file lock poisoned"))?;
                    write_line(&mut f, &line, a.out.as_deref().unwrap_or(Path::new("?")))?;
                }
                progress.done(&record, started.elapsed().as_secs_f64());
                results
                    .lock()
                    .map_err(|_| anyhow!("results lock poisoned"))?
                    .push(record);
                Ok(())
            })
    })?;
    progress.finish();
    let mut all = previous;
    all.extend(
        results
            .into_inner()
            .map_err(|_| anyhow!("results lock poisoned"))?,
    );
    all.sort_by_key(|r| r.index);
    if remaining_after > 0 {
        eprintln!(
            "stopped after {} new points (--max-points); {remaining_after} remain: continue with --resume",
            todo.len()
        );
    }
    finish_outputs(a, &grid, &all)?;
    let kernel_measured = !a.run.whole_run
        && match prepared.programs.first() {
            Some(p) => p.kernel_start().is_some(),
            None => programs::load(&a.program, &[]).map_or(true, |p| p.kernel_start().is_some()),
        };
    let mut text = summary_table(&grid, &all, &a.metric, kernel_measured);
    text.push_str(&truncation_notes(&all, kernel_measured, a.run.max_insts));
    output::emit(None, &text)?;
    Ok(ExitCode::SUCCESS)
}

fn write_line(f: &mut File, line: &str, path: &Path) -> Result<()> {
    f.write_all(line.as_bytes())
        .and_then(|()| f.flush())
        .with_context(|| format!("cannot append to '{}'", path.display()))
}

fn describe(point: &IndexMap<String, String>) -> String {
    point
        .iter()
        .map(|(k, v)| format!("{k}={v}"))
        .collect::<Vec<_>>()
        .join(" ")
}

/// The progress bar's layout: no colours named, so the bar is drawn in the
/// terminal's own foreground colour on any background.
const PROGRESS_TEMPLATE: &str =
    "[{bar:40}] {pos}/{len} points  {elapsed_precise} elapsed, about {eta} left  {msg}";

/// Progress on standard error: a bar with an ETA on a terminal, one plain
/// line per finished point otherwise.
struct Progress {
    bar: Option<indicatif::ProgressBar>,
    total: u64,
    count: std::sync::atomic::AtomicU64,
}

impl Progress {
    fn new(total: u64) -> Progress {
        let bar = std::io::stderr().is_terminal().then(|| {
            let b = indicatif::ProgressBar::new(total);
            b.set_style(
                indicatif::ProgressStyle::with_template(PROGRESS_TEMPLATE)
                    .expect("valid template")
                    .progress_chars("█▉▊▋▌▍▎▏ "),
            );
            b
        });
        Progress {
            bar,
            total,
            count: std::sync::atomic::AtomicU64::new(0),
        }
    }

    fn done(&self, r: &Record, seconds: f64) {
        let n = self
            .count
            .fetch_add(1, std::sync::atomic::Ordering::Relaxed)
            + 1;
        let ipc = r.metrics.get("ipc").map_or(0.0, |v| v.get());
        match &self.bar {
            Some(b) => {
                b.set_message(format!("{} ipc {ipc:.3}", describe(&r.point)));
                b.inc(1);
            }
            None => eprintln!(
                "[{n}/{}] point {}: {}: ipc {ipc:.3}, {} cycles ({seconds:.2} s)",
                self.total,
                r.index,
                describe(&r.point),
                int(r.report.cycles)
            ),
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}

/// The x path and the paths that tell the lines apart.
fn plot_axes(a: &SweepArgs, grid: &Grid) -> Result<(usize, Vec<usize>)> {
    let names: Vec<&str> = grid.dims.iter().map(|d| d.path.as_str()).collect();
    let find = |p: &str, flag: &str| {
        names.iter().position(|n| *n == p).ok_or_else(|| {
            anyhow!(
                "{flag} {p}: not a varied path; varied: {}",
                names.join(", ")
            )
        })
    };
    let x = match &a.x {
        Some(p) => find(p, "--x")?,
        None => 0,
    };
    let mut others: Vec<usize> = (0..grid.dims.len()).filter(|&i| i != x).collect();
    if let Some(s) = &a.series {
        let si = find(s, "--series")?;
        ensure!(si != x, "--series {s} is also the --x path");
        others.retain(|&i| i != si);
        others.insert(0, si);
    }
    Ok((x, others))
}

fn finish_outputs(a: &SweepArgs, grid: &Grid, all: &[Record]) -> Result<()> {
    if let Some(p) = &a.csv {
        output::write_atomic(p, csv(grid, all).as_bytes())?;
    }
    if let Some(p) = &a.svg {
        let (x, others) = plot_axes(a, grid)?;
        let xs = &grid.dims[x].values;
        let mut lines: IndexMap<Vec<usize>, svg::Line> = IndexMap::new();
        // Every combination of the other paths gets a line, in grid order
        // of those paths (the --series path first).
        let mut combos: Vec<Vec<usize>> = vec![Vec::new()];
        for &o in &others {
            combos = combos
                .into_iter()
                .flat_map(|c| {
                    (0..grid.dims[o].values.len()).map(move |v| [c.clone(), vec![v]].concat())
                })
                .collect();
        }
        for combo in combos {
            let label = if others.is_empty() {
                a.metric.clone()
            } else {
                others
                    .iter()
                    .zip(&combo)
                    .map(|(&o, &v)| format!("{}={}", grid.dims[o].path, grid.dims[o].values[v]))
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            lines.insert(
                combo,
                svg::Line {
                    label,
                    values: vec![None; xs.len()],
                },
            );
        }
        for r in all {
            let c = grid.coords(r.index);
            let key: Vec<usize> = others.iter().map(|&o| c[o]).collect();
            if let (Some(line), Some(v)) = (lines.get_mut(&key), r.metrics.get(&a.metric)) {
                line.values[c[x]] = Some(v.get());
            }
        }
        let lines: Vec<svg::Line> = lines.into_values().collect();
        let title = format!("{} vs {}: {}", a.metric, grid.dims[x].path, a.program);
        let text = svg::line_plot(&title, &grid.dims[x].path, &a.metric, xs, &lines);
        output::write_atomic(p, text.as_bytes())?;
    }
    Ok(())
}

/// CSV: `index`, one column per varied path, `program`, `config`, then the metrics.
fn csv(grid: &Grid, all: &[Record]) -> String {
    let mut keys: Vec<&String> = Vec::new();
    for r in all {
        for k in r.metrics.keys() {
            if !keys.contains(&k) {
                keys.push(k);
            }
        }
    }
    let mut header: Vec<String> = vec!["index".into()];
    header.extend(grid.dims.iter().map(|d| d.path.clone()));
    header.extend(["program".to_string(), "config".to_string()]);
    header.extend(keys.iter().map(|k| k.to_string()));
    let mut out = csv_line(&header);
    for r in all {
        let mut f = vec![r.index.to_string()];
        f.extend(
            grid.dims
                .iter()
                .map(|d| r.point.get(&d.path).cloned().unwrap_or_default()),
        );
        f.push(r.program.clone());
        f.push(r.config.clone());
        f.extend(
            keys.iter()
                .map(|k| r.metrics.get(*k).map(|v| v.text()).unwrap_or_default()),
        );
        out.push_str(&csv_line(&f));
    }
    out
}

/// Notes under the summary table for points cut short by `--max-insts`.
fn truncation_notes(all: &[Record], kernel_measured: bool, max_insts: Option<u64>) -> String {
    let mut s = String::new();
    for kind in [Truncation::SetUpOnly, Truncation::Partial] {
        let n = all
            .iter()
            .filter(|r| Truncation::of(&r.report, kernel_measured) == kind)
            .count();
        let who = match n {
            0 => continue,
            n if n == all.len() => format!("every point ({n})"),
            n => format!("{n} of {} points", all.len()),
        };
        if let Some(note) = render::truncation_note(&who, kind, max_insts) {
            s.push_str(&note);
        }
    }
    s
}

fn summary_table(grid: &Grid, all: &[Record], metric: &str, kernel_measured: bool) -> String {
    let mut header: Vec<(String, Align)> = vec![("point".into(), Align::Right)];
    header.extend(grid.dims.iter().map(|d| (d.path.clone(), Align::Right)));
    for h in ["cycles", "IPC", "L1D miss rate", "MLP l1d"] {
        header.push((h.into(), Align::Right));
    }
    let extra = !["cycles", "ipc", "l1d_miss_rate", "l1d_mlp"].contains(&metric);
    if extra {
        header.push((metric.to_string(), Align::Right));
    }
    let cut = |r: &Record| Truncation::of(&r.report, kernel_measured);
    let any_cut = all.iter().any(|r| cut(r) != Truncation::None);
    if any_cut {
        header.push(("note".into(), Align::Left));
    }
    let mut t = Table::with_columns(header);
    for r in all {
        let mut row = vec![r.index.to_string()];
        row.extend(
            grid.dims
                .iter()
                .map(|d| r.point.get(&d.path).cloned().unwrap_or_default()),
        );
        let m = |k: &str| r.metrics.get(k).map_or(0.0, |v| v.get());
        row.push(int(r.report.cycles));
        row.push(fixed(m("ipc"), 3));
        row.push(format!("{:.1}%", 100.0 * m("l1d_miss_rate")));
        row.push(fixed(m("l1d_mlp"), 2));
        if extra {
            row.push(r.metrics.get(metric).map(|v| v.text()).unwrap_or_default());
        }
        if any_cut {
            row.push(cut(r).cell().to_string());
        }
        t.row(row);
    }
    format!("{} of {} points\n{}", all.len(), grid.len(), t.render())
}

/// `overlap merge`: join result files, dedupe by point index, order by
/// index. An existing `out` is replaced only with `force` (it may be one of
/// the inputs: every input is read before anything is written). Points of
/// the grid that no file holds are listed on standard error.
pub fn merge(inputs: &[PathBuf], out: &Path, force: bool) -> Result<ExitCode> {
    output::check_writable_dir(out)?;
    ensure!(
        force || !out.exists(),
        "'{}' already exists; pass --force to replace it, or choose another --out",
        out.display()
    );
    let mut grid_sizes: BTreeSet<u64> = BTreeSet::new();
    let mut unsized_lines = false;
    let mut sig: Option<(String, &Path)> = None;
    let mut by_index: BTreeMap<u64, (Record, String)> = BTreeMap::new();
    let mut duplicates = 0;
    for path in inputs {
        let back = read_results(path)?;
        if back.dropped_tail {
            eprintln!("{}: ignoring an incomplete last line", path.display());
        }
        for (r, line) in back.records {
            match r.grid_size {
                Some(n) => {
                    grid_sizes.insert(n);
                }
                None => unsized_lines = true,
            }
            match &sig {
                None => sig = Some((r.sweep.clone(), path)),
                Some((s, first)) => ensure!(
                    *s == r.sweep,
                    "'{}' and '{}' hold results of different sweeps (signatures {s} and {})",
                    first.display(),
                    path.display(),
                    r.sweep
                ),
            }
            if let Some((prev, _)) = by_index.get(&r.index) {
                ensure!(
                    prev.point == r.point,
                    "'{}': point {} has another assignment than in an earlier file",
                    path.display(),
                    r.index
                );
                duplicates += 1;
                continue;
            }
            by_index.insert(r.index, (r, line));
        }
    }
    let mut text = String::new();
    // Lines are copied as written, byte for byte.
    for (_, line) in by_index.values() {
        text.push_str(line);
        text.push('\n');
    }
    output::write_atomic(out, text.as_bytes())?;
    eprintln!(
        "merged {} from {} into '{}' ({} dropped)",
        counted(by_index.len(), "point", "points"),
        counted(inputs.len(), "file", "files"),
        out.display(),
        counted(duplicates, "duplicate", "duplicates")
    );
    if let (false, Some(&n)) = (unsized_lines, grid_sizes.iter().next())
        && grid_sizes.len() == 1
    {
        let missing: Vec<u64> = (0..n).filter(|i| !by_index.contains_key(i)).collect();
        if !missing.is_empty() {
            eprintln!(
                "warning: {} of the grid's {n} points are missing: {}",
                missing.len(),
                index_ranges(&missing)
            );
            eprintln!(
                "         (run the shards that hold them, or `overlap sweep ... --resume --out {}`)",
                out.display()
            );
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// `1 point`, `3 points`.
fn counted(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// `0-3, 7, 9-10` for sorted indices, cut after 20 runs.
fn index_ranges(sorted: &[u64]) -> String {
    let mut runs: Vec<(u64, u64)> = Vec::new();
    for &i in sorted {
        match runs.last_mut() {
            Some((_, hi)) if *hi + 1 == i => *hi = i,
            _ => runs.push((i, i)),
        }
    }
    let mut parts: Vec<String> = runs
        .iter()
        .take(20)
        .map(|&(lo, hi)| {
            if lo == hi {
                lo.to_string()
            } else {
                format!("{lo}-{hi}")
            }
        })
        .collect();
    if runs.len() > 20 {
        parts.push("...".into());
    }
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_split_outside_brackets() {
        assert_eq!(split_values("1,2, 4"), ["1", "2", "4"]);
        assert_eq!(
            split_values("Some((a: 1, b: 2)),None"),
            ["Some((a: 1, b: 2))", "None"]
        );
        assert_eq!(split_values("\"a,b\",c"), ["\"a,b\"", "c"]);
    }

    #[test]
    fn missing_indices_read_as_ranges() {
        assert_eq!(index_ranges(&[0, 1, 2, 3, 7, 9, 10]), "0-3, 7, 9-10");
        assert_eq!(index_ranges(&[5]), "5");
        let many: Vec<u64> = (0..100).step_by(2).collect();
        assert!(index_ranges(&many).ends_with(", ..."));
    }

    #[test]
    fn progress_bar_names_no_colour() {
        // A fixed colour (black) vanishes on a dark terminal: the bar uses
        // the terminal's own colours.
        assert!(!PROGRESS_TEMPLATE.contains('.'), "{PROGRESS_TEMPLATE}");
        indicatif::ProgressStyle::with_template(PROGRESS_TEMPLATE).expect("valid template");
    }

    #[test]
    fn grid_order_is_row_major() {
        let g = Grid {
            dims: vec![
                Dim {
                    path: "a".into(),
                    values: vec!["1".into(), "2".into()],
                },
                Dim {
                    path: "b".into(),
                    values: vec!["x".into(), "y".into(), "z".into()],
                },
            ],
        };
        assert_eq!(g.len(), 6);
        assert_eq!(g.coords(0), [0, 0]);
        assert_eq!(g.coords(1), [0, 1]);
        assert_eq!(g.coords(3), [1, 0]);
        assert_eq!(g.point(5)["b"], "z");
    }
}
