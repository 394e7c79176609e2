//! `overlap compare`: one program on several configurations, run in
//! parallel, side by side.

use crate::cli::{ConfigArgs, Format, ProgramArgs, RunArgs};
use crate::configs::{self, NamedConfig};
use crate::metrics;
use crate::output;
use crate::programs::Loaded;
use crate::render::{self, Row};
use crate::sim;
use crate::svg;
use crate::table::{Align, Table, fixed, int, percent};
use anyhow::Result;
use overlap_core::Report;
use overlap_core::config::PRESETS;
use rayon::prelude::*;
use serde::Serialize;
use std::path::Path;
use std::process::ExitCode;

/// Run the command.
pub fn compare(
    program: Option<&str>,
    program_args: &ProgramArgs,
    config: &ConfigArgs,
    run: &RunArgs,
    format: Format,
    out: Option<&Path>,
    svg_out: Option<&Path>,
) -> Result<ExitCode> {
    let overrides = configs::parse_overrides(&config.sets)?;
    let named = configs::resolve(&config.configs, &overrides, &PRESETS)?;
    let loaded = super::load_program(program, program_args)?;
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
    let text = match format {
        Format::Table => table(&loaded, &named, &reports),
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

/// The side-by-side table.
pub fn table(loaded: &Loaded, named: &[NamedConfig], reports: &[Report]) -> String {
    let buckets: Vec<String> = metrics::bucket_order(named.iter().map(|c| &c.config), reports)
        .into_iter()
        .filter(|b| {
            reports
                .iter()
                .any(|r| r.ledger.get(b).is_some_and(|&c| c > 0))
        })
        .collect();
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
        "{} on {} configurations (ledger columns: percent of each run's cycles)\n\n",
        loaded.title(),
        named.len()
    );
    s.push_str(&t.render());
    s
}

#[derive(Serialize)]
struct JsonRun<'a> {
    config: &'a str,
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
    svg::ledger_bars(
        &format!("Cycle ledger: {}", loaded.label),
        &loaded.params_text(),
        &bars,
        &order,
    )
}
