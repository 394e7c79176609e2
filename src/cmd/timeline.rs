//! `overlap timeline`: per configuration, instructions retired per cycle
//! above outstanding misses per cycle over a window, as SVG, as a text strip,
//! and (with `--pipeline`) each instruction's pipeline events in the window.

use crate::cli::{RunArgs, SimArgs};
use crate::configs::NamedConfig;
use crate::observe::{Activity, PipeRow, Pipeline, WindowStart};
use crate::output;
use crate::programs::Loaded;
use crate::sim;
use crate::svg;
use crate::table::int;
use anyhow::{Result, anyhow, bail, ensure};
use clap::Args;
use overlap_core::config::PRESETS;
use rayon::prelude::*;
use std::fmt::Write;
use std::path::PathBuf;
use std::process::ExitCode;

/// Largest window, in cycles (the recorders hold a few words per cycle).
pub const MAX_WINDOW: u64 = 1_000_000;

/// Flags of `overlap timeline`.
#[derive(Args, Debug, Clone)]
pub struct TimelineArgs {
    /// A built-in workload name, an assembly file (.s) or an RV64 ELF
    /// executable (default: the hit/miss mix of `compare`).
    pub program: Option<String>,
    #[command(flatten)]
    pub sim: SimArgs,
    /// First cycle of the window; or `kernel` for the cycle at which the
    /// kernel's first instruction retires (the `measure_start` label), and
    /// `kernel+N` for N cycles after that.
    #[arg(long, default_value = "kernel", value_name = "CYCLE|kernel[+N]")]
    pub from: String,
    /// Length of the window in cycles.
    #[arg(long, default_value_t = 300, value_name = "N")]
    pub cycles: u64,
    /// Draw the timeline into this SVG file.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Print each instruction's fetch, dispatch, issue, complete and retire
    /// cycles over the window.
    #[arg(long)]
    pub pipeline: bool,
    /// With --pipeline: most instructions shown per configuration.
    #[arg(long, default_value_t = 48, value_name = "N")]
    pub max_rows: usize,
}

/// Resolve `--from` for a program.
pub fn window_start(from: &str, loaded: &Loaded) -> Result<WindowStart> {
    let number = |t: &str| -> Result<u64> {
        t.trim().replace('_', "").parse().map_err(|_| {
            anyhow!("--from expects a cycle number, `kernel` or `kernel+N`, got '{from}'")
        })
    };
    if let Some(rest) = from.strip_prefix("kernel") {
        let offset = match rest.strip_prefix('+') {
            Some(n) => number(n)?,
            None if rest.is_empty() => 0,
            None => number(rest)?,
        };
        return Ok(match loaded.kernel_start() {
            Some(pc) => WindowStart::AfterFirstCommitAt { pc, offset },
            None => WindowStart::Cycle(offset),
        });
    }
    Ok(WindowStart::Cycle(number(from)?))
}

/// Check a window length.
pub fn check_window(cycles: u64) -> Result<()> {
    ensure!(
        (1..=MAX_WINDOW).contains(&cycles),
        "--cycles must be 1..={MAX_WINDOW}, got {cycles}"
    );
    Ok(())
}

/// One configuration's recordings.
pub struct Recorded {
    /// Activity per cycle.
    pub activity: Activity,
    /// Pipeline events per instruction.
    pub pipeline: Pipeline,
    /// The run's report.
    pub report: overlap_core::Report,
}

/// Run every configuration with the recorders.
pub fn record(
    loaded: &Loaded,
    named: &[NamedConfig],
    run: &RunArgs,
    start: WindowStart,
    cycles: u64,
    max_rows: Option<usize>,
) -> Result<Vec<Recorded>> {
    let opts = sim::options(run, loaded);
    named
        .par_iter()
        .map(|c| {
            let recorders = (Activity::new(start, cycles), Pipeline::new(start, cycles, max_rows));
            let o = sim::run_with(loaded, c, &opts, recorders)?;
            let (activity, pipeline) = o.observer;
            if activity.from().is_none() {
                bail!(
                    "'{}' on '{}' never reached the window start (the kernel never retired an instruction)",
                    loaded.label,
                    c.label
                );
            }
            if activity.observed == 0 {
                bail!(
                    "the window starts after the run ends: '{}' on '{}' took {} cycles",
                    loaded.label,
                    c.label,
                    o.report.cycles
                );
            }
            Ok(Recorded { activity, pipeline, report: o.report })
        })
        .collect()
}

/// The timeline SVG of recorded runs.
pub fn timeline_svg(
    loaded: &Loaded,
    named: &[NamedConfig],
    rec: &[Recorded],
    cycles: u64,
) -> String {
    let panels: Vec<svg::TimelinePanel<'_>> = named
        .iter()
        .zip(rec)
        .map(|(c, r)| svg::TimelinePanel {
            label: &c.label,
            from: r.activity.from().unwrap_or(0),
            retired: &r.activity.retired,
            l1d: &r.activity.l1d_misses,
            dram: &r.activity.dram_reads,
            observed: r.activity.observed as usize,
        })
        .collect();
    let mut subtitle = loaded.params_text();
    if let Some(line) = super::compare::overrides_line(named) {
        subtitle = format!("{subtitle}; {}", line.trim_end());
    }
    svg::timeline(
        &format!("Activity timeline: {}", loaded.label),
        &subtitle,
        cycles as usize,
        &panels,
    )
}

/// Run the command.
pub fn timeline(a: &TimelineArgs) -> Result<ExitCode> {
    check_window(a.cycles)?;
    let (named, loaded) = super::resolve(a.program.as_deref(), &a.sim, &PRESETS)?;
    if let Some(p) = &a.svg {
        output::check_writable_dir(p)?;
    }
    let start = window_start(&a.from, &loaded)?;
    let max_rows = a.pipeline.then_some(a.max_rows);
    let rec = record(&loaded, &named, &a.sim.run, start, a.cycles, max_rows)?;
    if let Some(p) = &a.svg {
        output::write_atomic(p, timeline_svg(&loaded, &named, &rec, a.cycles).as_bytes())?;
    }
    let mut s = String::new();
    if let Some(line) = super::compare::overrides_line(&named) {
        s.push_str(&line);
        s.push('\n');
    }
    for (c, r) in named.iter().zip(&rec) {
        s.push_str(&text_strip(&c.label, &r.activity));
        if a.pipeline {
            s.push_str(&pipeline_view(
                &r.pipeline,
                r.activity.from().unwrap_or(0),
                a.cycles,
            ));
        }
        s.push('\n');
    }
    output::emit(None, &s)?;
    Ok(ExitCode::SUCCESS)
}

/// Width of the text strips in characters.
const STRIP: usize = 100;

/// A terminal picture of a window: retired instructions and outstanding L1D
/// misses per column (each column the maximum over its cycles).
fn text_strip(label: &str, a: &Activity) -> String {
    const LEVELS: [char; 9] = [' ', '▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];
    let n = a.observed as usize;
    let from = a.from().unwrap_or(0);
    let per = n.div_ceil(STRIP).max(1);
    let cols = n.div_ceil(per);
    let strip = |v: &[u32]| -> (String, u32) {
        let max = v[..n].iter().copied().max().unwrap_or(0);
        let s = (0..cols)
            .map(|c| {
                let m = v[c * per..((c + 1) * per).min(n)]
                    .iter()
                    .copied()
                    .max()
                    .unwrap_or(0);
                if m == 0 {
                    '·'
                } else {
                    LEVELS[(1 + (m as usize * 7) / max.max(1) as usize).min(8)]
                }
            })
            .collect();
        (s, max)
    };
    let (ret, ret_max) = strip(&a.retired);
    let (l1d, l1d_max) = strip(&a.l1d_misses);
    let (dram, dram_max) = strip(&a.dram_reads);
    let retired: u64 = a.retired[..n].iter().map(|&v| u64::from(v)).sum();
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{label}: cycles {}..{} ({} cycles, {} per column), {} instructions retired",
        int(from),
        int(from + n as u64),
        int(n as u64),
        per,
        int(retired)
    );
    let _ = writeln!(s, "  retired  |{ret}| peak {ret_max}/cycle");
    let _ = writeln!(s, "  l1d miss |{l1d}| peak {l1d_max} outstanding");
    let _ = writeln!(s, "  dram     |{dram}| peak {dram_max} outstanding");
    s
}

/// The per-instruction view: event cycles relative to the window start and
/// a lane drawing (f fetch, d dispatch, i issue, c complete, r retire;
/// `.` front end, `-` waiting in the window, `=` executing, `_` done, waiting to retire).
fn pipeline_view(p: &Pipeline, from: u64, cycles: u64) -> String {
    let mut s = String::new();
    let per = (cycles as usize).div_ceil(STRIP).max(1) as u64;
    let _ = writeln!(
        s,
        "  {} instructions in flight in the window{}; cycles relative to {}; lane: one column per {} cycle{}",
        p.in_window(),
        if p.dropped > 0 {
            format!(" ({} not shown, see --max-rows)", p.dropped)
        } else {
            String::new()
        },
        int(from),
        per,
        if per == 1 { "" } else { "s" }
    );
    if p.rows.is_empty() {
        return s;
    }
    let _ = writeln!(
        s,
        "  {:>10}  {:>10}  {:<26} {:>6} {:>6} {:>6} {:>6} {:>6}  lane (f d i c r; . front end, - waiting, = executing, _ done)",
        "seq", "pc", "instruction", "fetch", "disp", "issue", "done", "retire"
    );
    let rel =
        |c: Option<u64>| c.map_or("-".to_string(), |c| format!("{:+}", c as i64 - from as i64));
    for r in &p.rows {
        let _ = writeln!(
            s,
            "  {:>10}  {:>#10x}  {:<26} {:>6} {:>6} {:>6} {:>6} {:>6}  {}",
            r.seq,
            r.pc,
            truncate(&r.text, 26),
            rel(Some(r.fetch)),
            rel(r.dispatch),
            rel(r.issue),
            rel(r.complete),
            rel(Some(r.commit)),
            lane(r, from, cycles, per)
        );
    }
    s
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        s.chars().take(n - 1).collect::<String>() + "…"
    }
}

fn lane(r: &PipeRow, from: u64, cycles: u64, per: u64) -> String {
    let cols = cycles.div_ceil(per);
    let mut out = String::with_capacity(cols as usize);
    for col in 0..cols {
        let (lo, hi) = (from + col * per, from + (col + 1) * per);
        let within = |c: Option<u64>| c.is_some_and(|c| c >= lo && c < hi);
        let ch = if within(Some(r.commit)) {
            'r'
        } else if within(r.complete) {
            'c'
        } else if within(r.issue) {
            'i'
        } else if within(r.dispatch) {
            'd'
        } else if within(Some(r.fetch)) {
            'f'
        } else if hi <= r.fetch || lo > r.commit {
            ' '
        } else if r.dispatch.is_none_or(|d| lo < d) {
            '.'
        } else if r.issue.is_none_or(|i| lo < i) {
            '-'
        } else if r.complete.is_none_or(|c| lo < c) {
            '='
        } else {
            '_'
        };
        out.push(ch);
    }
    out.trim_end().to_string()
}
