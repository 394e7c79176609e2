//! Text and CSV renderings of run reports shared by several commands: the
//! single-run table, the ledger breakdown with bars, the waiting matrix, the
//! cache and branch figures, and CSV rows of the shared metric set.

use crate::metrics;
use crate::output::csv_line;
use crate::table::{Align, Table, bar, fixed, int, percent};
use overlap_core::{Config, Report};
use std::fmt::Write;

/// Width in cells of the ledger bars.
const BAR_WIDTH: usize = 32;

/// How a run stopped at `--max-insts` relates to its kernel.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Truncation {
    /// The run ended by itself.
    None,
    /// Stopped at the limit after the kernel started (or the whole run is
    /// measured): the figures cover part of it.
    Partial,
    /// Stopped at the limit before the kernel's first instruction retired:
    /// every figure is of the set-up.
    SetUpOnly,
}

impl Truncation {
    /// What happened to a run that measures from a kernel marker when
    /// `kernel_measured` (the program marks a kernel and `--whole-run` is off).
    pub fn of(r: &Report, kernel_measured: bool) -> Truncation {
        match (r.truncated, kernel_measured && r.warmup.is_none()) {
            (false, _) => Truncation::None,
            (true, true) => Truncation::SetUpOnly,
            (true, false) => Truncation::Partial,
        }
    }

    /// A short cell for tables: empty, `truncated` or `set-up only`.
    pub fn cell(self) -> &'static str {
        match self {
            Truncation::None => "",
            Truncation::Partial => "truncated",
            Truncation::SetUpOnly => "set-up only",
        }
    }
}

/// The note under a table when runs stopped at `--max-insts`: `who` names
/// them (`the run`, `every run`, `blocking`, `3 of 10 points`...).
pub fn truncation_note(who: &str, kind: Truncation, max_insts: Option<u64>) -> Option<String> {
    let limit = max_insts.map_or("the instruction limit".to_string(), |n| {
        format!("--max-insts {n}")
    });
    let what = match kind {
        Truncation::None => return None,
        Truncation::Partial => ": the figures cover only part of the run",
        Truncation::SetUpOnly => {
            " before the kernel started: every figure is of the set-up, not the kernel"
        }
    };
    Some(format!(
        "note: {who} stopped at {limit}{what}\n      (the limit counts every instruction from the program's start, set-up included)\n"
    ))
}

/// The full single-run report as text. `config_label` names the machine
/// with its overrides; `truncation` adds a note when the run was cut short.
pub fn run_table(
    title: &str,
    config_label: &str,
    config: &Config,
    r: &Report,
    truncation: Option<String>,
) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{title} on {config_label}");
    let _ = writeln!(s);
    let mut head = Table::new(&[("figure", Align::Left), ("value", Align::Right)]);
    head.row(vec!["cycles".into(), int(r.cycles)]);
    head.row(vec!["instructions".into(), int(r.instructions)]);
    head.row(vec!["IPC".into(), fixed(r.ipc, 3)]);
    let exit = match (r.exit_code, r.truncated) {
        (_, true) => "stopped at the instruction limit".to_string(),
        (Some(c), _) => c.to_string(),
        (None, false) => "none".to_string(),
    };
    head.row(vec!["exit code".into(), exit]);
    if let Some(w) = &r.warmup {
        head.row(vec![
            "set-up left out".into(),
            format!(
                "{} cycles, {} instructions",
                int(w.cycles),
                int(w.instructions)
            ),
        ]);
    }
    head.row(vec!["host time".into(), format!("{:.3} s", r.host.seconds)]);
    head.row(vec!["simulated MIPS".into(), fixed(r.host.mips, 2)]);
    s.push_str(&head.render());
    if let Some(note) = truncation {
        s.push_str(&note);
    }
    s.push('\n');
    s.push_str(&ledger_section(r));
    s.push('\n');
    s.push_str(&waiting_section(r));
    s.push('\n');
    s.push_str(&memory_section(config, r));
    s.push('\n');
    s.push_str(&branch_section(r));
    s
}

/// The ledger sorted by cycles, with shares and bars.
pub fn ledger_section(r: &Report) -> String {
    let mut s = String::from("Cycle ledger (every cycle charged to one cause)\n");
    let mut rows: Vec<(&String, &u64)> = r.ledger.iter().collect();
    rows.sort_by(|a, b| b.1.cmp(a.1).then_with(|| a.0.cmp(b.0)));
    let mut t = Table::new(&[
        ("bucket", Align::Left),
        ("cycles", Align::Right),
        ("share", Align::Right),
        ("", Align::Left),
    ])
    .indent(2);
    let max = rows.first().map_or(0, |r| *r.1);
    for (name, &cycles) in rows {
        t.row(vec![
            name.clone(),
            int(cycles),
            percent(cycles as f64, r.cycles as f64),
            bar(
                if max == 0 {
                    0.0
                } else {
                    cycles as f64 / r.cycles as f64
                },
                BAR_WIDTH,
            ),
        ]);
    }
    t.rule();
    t.row(vec![
        "total".into(),
        int(r.ledger.values().sum()),
        percent(1.0, 1.0),
        String::new(),
    ]);
    s.push_str(&t.render());
    let e = &r.episodes;
    let _ = writeln!(
        s,
        "  stall episodes: {}, mean {:.1} cycles, longest {}",
        int(e.count),
        e.mean_cycles,
        int(e.max_cycles)
    );
    s
}

/// The waiting matrix: rows are ledger buckets (non-commit), columns what
/// the oldest instruction waited for.
pub fn waiting_section(r: &Report) -> String {
    let mut s = String::from(
        "Waiting matrix (cycles; row: what stopped the machine, column: what the oldest instruction waited for)\n",
    );
    let cols = metrics::waiting_order([r]);
    if cols.is_empty() {
        s.push_str("  no stall cycles\n");
        return s;
    }
    let mut header = vec![("bucket".to_string(), Align::Left)];
    header.extend(cols.iter().map(|c| (c.clone(), Align::Right)));
    let mut t = Table::with_columns(header).indent(2);
    let mut rows: Vec<(&String, &indexmap::IndexMap<String, u64>)> = r.waiting.iter().collect();
    rows.sort_by_key(|(k, _)| std::cmp::Reverse(r.ledger.get(*k).copied().unwrap_or(0)));
    for (bucket, row) in rows {
        let mut cells = vec![bucket.clone()];
        cells.extend(cols.iter().map(|c| match row.get(c) {
            Some(&v) if v > 0 => int(v),
            _ => "·".to_string(),
        }));
        t.row(cells);
    }
    s.push_str(&t.render());
    s
}

/// Memory-level parallelism, caches and DRAM.
pub fn memory_section(config: &Config, r: &Report) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Memory-level parallelism (mean outstanding demand misses over the cycles with at least one)"
    );
    let l1d_busy: u64 = r.mlp.l1d_histogram.iter().skip(1).sum();
    let dram_busy: u64 = r.mlp.dram_histogram.iter().skip(1).sum();
    let _ = writeln!(s, "  l1d   {:.2}  over {} cycles", r.mlp.l1d, int(l1d_busy));
    let _ = writeln!(
        s,
        "  dram  {:.2}  over {} cycles",
        r.mlp.dram,
        int(dram_busy)
    );
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Caches (L1D mode {:?}, {} miss registers)",
        config.l1d.mode, config.l1d.mshrs
    );
    let mut t = Table::new(&[
        ("cache", Align::Left),
        ("accesses", Align::Right),
        ("hits", Align::Right),
        ("misses", Align::Right),
        ("merged", Align::Right),
        ("miss rate", Align::Right),
        ("avg miss latency", Align::Right),
        ("hits under miss", Align::Right),
    ])
    .indent(2);
    for (name, c) in &r.caches {
        t.row(vec![
            name.clone(),
            int(c.accesses),
            int(c.hits),
            int(c.misses),
            int(c.merged),
            percent(c.misses as f64, c.accesses as f64),
            format!("{:.1}", c.avg_miss_latency),
            int(c.hits_under_miss),
        ]);
    }
    s.push_str(&t.render());
    let d = &r.dram;
    let avg_read = metrics::ratio(d.read_latency_total, d.reads);
    let _ = writeln!(
        s,
        "  dram: {} reads, {} writes, average read {avg_read:.1} cycles, {:.2} bytes/cycle",
        int(d.reads),
        int(d.writes),
        d.bandwidth_bytes_per_cycle
    );
    s
}

/// Branch prediction figures.
pub fn branch_section(r: &Report) -> String {
    let b = &r.branches;
    format!(
        "Branches: {} conditional ({} mispredicted), {} jumps ({} mispredicted), {:.2} mispredicts per 1000 instructions\n",
        int(b.conditional),
        int(b.conditional_mispredicts),
        int(b.jumps),
        int(b.jump_mispredicts),
        b.mpki
    )
}

/// One labelled run, for CSV and JSON outputs of several runs.
pub struct Row<'a> {
    /// Program label.
    pub program: &'a str,
    /// Configuration label.
    pub config: &'a str,
    /// The machine.
    pub machine: &'a Config,
    /// The report.
    pub report: &'a Report,
}

/// CSV of runs: `program,config`, then every metric of [`metrics::of`].
pub fn csv(rows: &[Row<'_>]) -> String {
    let buckets = metrics::bucket_order(
        rows.iter().map(|r| r.machine),
        rows.iter().map(|r| r.report),
    );
    let mut out = String::new();
    let mut header = vec!["program".to_string(), "config".to_string()];
    header.extend(metrics::SCALARS.iter().map(|s| s.to_string()));
    header.extend(buckets.iter().map(|b| format!("ledger.{b}")));
    out.push_str(&csv_line(&header));
    for r in rows {
        let m = metrics::of(r.report, &buckets);
        let mut fields = vec![r.program.to_string(), r.config.to_string()];
        fields.extend(m.values().map(|v| v.text()));
        out.push_str(&csv_line(&fields));
    }
    out
}
