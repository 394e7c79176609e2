//! `overlap compare`: one program on several configurations, run in
//! parallel, side by side.

use crate::cli::{Format, OutputArgs, SimArgs};
use crate::configs::{self, NamedConfig};
use crate::metrics;
use crate::output;
use crate::programs::Loaded;
use crate::render::{self, Row, Truncation};
use crate::sim;
use crate::svg;
use crate::table::{Align, Table, fixed, int, percent};
use anyhow::Result;
use overlap_core::Report;
use overlap_core::config::PRESETS;
use rayon::prelude::*;
use serde::Serialize;
use std::fmt::Write;
use std::path::Path;
use std::process::ExitCode;

/// Run the command.
pub fn compare(
    program: Option<&str>,
    sim: &SimArgs,
    output: &OutputArgs,
    svg_out: Option<&Path>,
) -> Result<ExitCode> {
    let (named, loaded) = super::resolve(program, sim, &PRESETS)?;
    let (run, out) = (&sim.run, output.out.as_deref());
    for p in [out, svg_out].into_iter().flatten() {
        output::check_writable_dir(p)?;
    }
    let opts = sim::options(run, &loaded);
    let outcomes = named
        .par_iter()
        .map(|c| sim::run(&loaded, c, &opts))
        .collect::<Result<Vec<_>>>()?;
    if let Some(first) = outcomes.first() {
        sim::echo_program_output(&loaded.label, &first.summary);
    }
    let reports: Vec<Report> = outcomes.into_iter().map(|o| o.report).collect();
    if let Some(p) = svg_out {
        output::write_atomic(p, ledger_svg(&loaded, &named, &reports).as_bytes())?;
    }
    let text = match output.format {
        Format::Table => {
            let measured = loaded.kernel_start().is_some() && !run.whole_run;
            let mut t = table(&loaded, &named, &reports);
            t.push_str(&notes(&named, &reports, measured, run.max_insts));
            t
        }
        Format::Json => json(&loaded, &named, &reports)?,
        Format::Csv => {
            let rows: Vec<Row<'_>> = named
                .iter()
                .zip(&reports)
                .map(|(c, r)| Row {
                    program: &loaded.label,
                    config: &c.label,
                    machine: &c.config,
                    report: r,
                })
                .collect();
            render::csv(&rows)
        }
    };
    output::emit(out, &text)?;
    Ok(ExitCode::SUCCESS)
}

/// Cycles of the first run over cycles of this one.
fn speedup(first: &Report, r: &Report) -> f64 {
    if r.cycles == 0 {
        0.0
    } else {
        first.cycles as f64 / r.cycles as f64
    }
}

/// Lines under the table: runs cut short by `--max-insts`, and
/// configurations that the overrides made identical.
fn notes(
    named: &[NamedConfig],
    reports: &[Report],
    kernel_measured: bool,
    max_insts: Option<u64>,
) -> String {
    let mut s = String::new();
    let kinds: Vec<Truncation> = reports
        .iter()
        .map(|r| Truncation::of(r, kernel_measured))
        .collect();
    for kind in [Truncation::SetUpOnly, Truncation::Partial] {
        let who: Vec<&str> = named
            .iter()
            .zip(&kinds)
            .filter(|(_, k)| **k == kind)
            .map(|(c, _)| c.label.as_str())
            .collect();
        let who = match who.len() {
            0 => continue,
            n if n == named.len() && n > 1 => "every run".to_string(),
            _ => who.join(", "),
        };
        if let Some(note) = render::truncation_note(&who, kind, max_insts) {
            s.push_str(&note);
        }
    }
    // Overrides can make configurations the same machine (every preset
    // with `--set l1d.mode=Blocking`): say so rather than let the rows
    // look like a finding.
    let rons: Vec<String> = named.iter().map(|c| c.config.to_ron()).collect();
    let mut seen = vec![false; named.len()];
    for i in 0..named.len() {
        if seen[i] {
            continue;
        }
        let same: Vec<usize> = (i..named.len()).filter(|&j| rons[j] == rons[i]).collect();
        if same.len() > 1 {
            for &j in &same {
                seen[j] = true;
            }
            let _ = writeln!(
                s,
                "note: {} are the same machine{}",
                same.iter()
                    .map(|&j| named[j].label.as_str())
                    .collect::<Vec<_>>()
                    .join(", "),
                if named[i].sets.is_empty() {
                    String::new()
                } else {
                    " after the overrides".to_string()
                }
            );
        }
    }
    s
}

/// The side-by-side table.
pub fn table(loaded: &Loaded, named: &[NamedConfig], reports: &[Report]) -> String {
    let buckets = metrics::buckets_in_use(named.iter().map(|c| &c.config), reports);
    let mut header: Vec<(String, Align)> = [
        ("config", Align::Left),
        ("cycles", Align::Right),
        ("IPC", Align::Right),
        ("speedup", Align::Right),
        ("L1D miss rate", Align::Right),
        ("avg miss lat", Align::Right),
        ("MLP l1d", Align::Right),
        ("MLP dram", Align::Right),
    ]
    .iter()
    .map(|(h, a)| (h.to_string(), *a))
    .collect();
    header.extend(buckets.iter().map(|b| (b.clone(), Align::Right)));
    let mut t = Table::with_columns(header);
    let first = &reports[0];
    for (c, r) in named.iter().zip(reports) {
        let mut row = vec![
            c.label.clone(),
            int(r.cycles),
            fixed(r.ipc, 3),
            format!("{:.2}x", speedup(first, r)),
            percent(metrics::l1d_miss_rate(r), 1.0),
            fixed(metrics::l1d_miss_latency(r), 1),
            fixed(r.mlp.l1d, 2),
            fixed(r.mlp.dram, 2),
        ];
        row.extend(buckets.iter().map(|b| {
            percent(
                r.ledger.get(b).copied().unwrap_or(0) as f64,
                r.cycles as f64,
            )
        }));
        t.row(row);
    }
    let mut s = format!(
        "{} on {} configurations (ledger columns: percent of each run's cycles)\n",
        loaded.title(),
        named.len()
    );
    if let Some(line) = overrides_line(named) {
        s.push_str(&line);
    }
    s.push('\n');
    s.push_str(&t.render());
    s
}

/// `overrides: --set a=1 (every configuration)` when the configurations
/// were changed by `--set`, else `None`.
pub fn overrides_line(named: &[NamedConfig]) -> Option<String> {
    let first = named.first()?;
    if named.iter().all(|c| c.sets.is_empty()) {
        return None;
    }
    if named.iter().all(|c| c.sets == first.sets) {
        let every = if named.len() > 1 {
            " (every configuration)"
        } else {
            ""
        };
        return Some(format!(
            "overrides: {}{every}\n",
            configs::sets_phrase(&first.sets)
        ));
    }
    Some(
        named
            .iter()
            .map(|c| {
                format!(
                    "overrides of {}: {}\n",
                    c.label,
                    configs::sets_phrase(&c.sets)
                )
            })
            .collect(),
    )
}

#[derive(Serialize)]
struct JsonRun<'a> {
    config: &'a str,
    set: &'a [String],
    speedup: f64,
    report: &'a Report,
}

#[derive(Serialize)]
struct JsonCompare<'a> {
    program: &'a str,
    params: &'a std::collections::BTreeMap<String, String>,
    runs: Vec<JsonRun<'a>>,
}

fn json(loaded: &Loaded, named: &[NamedConfig], reports: &[Report]) -> Result<String> {
    let runs = named
        .iter()
        .zip(reports)
        .map(|(c, r)| JsonRun {
            config: &c.label,
            set: &c.sets,
            speedup: speedup(&reports[0], r),
            report: r,
        })
        .collect();
    let doc = JsonCompare {
        program: &loaded.label,
        params: &loaded.params,
        runs,
    };
    Ok(serde_json::to_string_pretty(&doc)? + "\n")
}

/// The stacked ledger bars of the runs.
pub fn ledger_svg(loaded: &Loaded, named: &[NamedConfig], reports: &[Report]) -> String {
    let order = metrics::bucket_order(named.iter().map(|c| &c.config), reports);
    let bars: Vec<svg::LedgerBar<'_>> = named
        .iter()
        .zip(reports)
        .map(|(c, r)| svg::LedgerBar {
            label: &c.label,
            cycles: r.cycles,
            ledger: &r.ledger,
        })
        .collect();
    let mut subtitle = loaded.params_text();
    if let Some(line) = overrides_line(named) {
        subtitle = format!("{subtitle}; {}", line.trim_end());
    }
    svg::ledger_bars(
        &format!("Cycle ledger: {}", loaded.label),
        &subtitle,
        &bars,
        &order,
    )
}
