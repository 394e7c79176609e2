//! `overlap report`: one self-contained XHTML page (inline CSS and SVG,
//! nothing fetched) comparing configurations on one program: the
//! configurations, ledger stacks, waiting matrices, MLP histograms and the
//! activity timeline.

use super::timeline::{self, Recorded};
use crate::cli::SimArgs;
use crate::configs::NamedConfig;
use crate::metrics;
use crate::output;
use crate::programs::Loaded;
use crate::svg::{self, esc};
use crate::table::{fixed, int, percent};
use anyhow::Result;
use clap::Args;
use overlap_core::Report;
use overlap_core::config::PRESETS;
use std::fmt::Write;
use std::path::PathBuf;
use std::process::ExitCode;

/// Flags of `overlap report`.
#[derive(Args, Debug, Clone)]
pub struct ReportArgs {
    /// A built-in workload name, an assembly file (.s) or an RV64 ELF
    /// executable (default: the hit/miss mix of `compare`).
    pub program: Option<String>,
    #[command(flatten)]
    pub sim: SimArgs,
    /// The HTML file to write.
    #[arg(long, value_name = "FILE")]
    pub html: PathBuf,
    /// Timeline window start: a cycle, `kernel` or `kernel+N` (see `overlap timeline`).
    #[arg(long, default_value = "kernel", value_name = "CYCLE|kernel[+N]")]
    pub from: String,
    /// Timeline window length in cycles.
    #[arg(long, default_value_t = 300, value_name = "N")]
    pub cycles: u64,
}

const STYLE: &str = "
body { font-family: Helvetica, Arial, sans-serif; margin: 2em auto; max-width: 1100px; color: #222; }
h1 { font-size: 1.5em; } h2 { font-size: 1.2em; margin-top: 2em; border-bottom: 1px solid #ccc; }
table { border-collapse: collapse; margin: 0.5em 0 1em; font-size: 0.9em; }
th, td { padding: 3px 9px; border-bottom: 1px solid #e4e4e4; }
th { text-align: left; background: #f4f4f4; } td.n { text-align: right; font-variant-numeric: tabular-nums; }
td.zero { color: #bbb; text-align: right; } .note { color: #555; font-size: 0.9em; }
.swatch { display: inline-block; width: 10px; height: 10px; margin-right: 5px; }
pre { background: #f7f7f7; padding: 0.6em; font-size: 0.8em; overflow-x: auto; }
.hists { display: flex; flex-wrap: wrap; gap: 1em; }
";

/// Run the command.
pub fn report(a: &ReportArgs) -> Result<ExitCode> {
    timeline::check_window(a.cycles)?;
    let (named, loaded) = super::resolve(a.program.as_deref(), &a.sim, &PRESETS)?;
    output::check_writable_dir(&a.html)?;
    let start = timeline::window_start(&a.from, &loaded)?;
    let rec = timeline::record(&loaded, &named, &a.sim.run, start, a.cycles, None)?;
    let page = page(&loaded, &named, &rec, a.cycles);
    output::write_atomic(&a.html, page.as_bytes())?;
    eprintln!("wrote '{}'", a.html.display());
    Ok(ExitCode::SUCCESS)
}

fn page(loaded: &Loaded, named: &[NamedConfig], rec: &[Recorded], cycles: u64) -> String {
    let reports: Vec<Report> = rec.iter().map(|r| r.report.clone()).collect();
    let title = format!("overlap report: {}", loaded.title());
    let mut s = String::new();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n<title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<h1>{}</h1>\n",
        esc(&title),
        esc(&title)
    );
    let _ = writeln!(
        s,
        "<p class=\"note\">Written by overlap {}. Every cycle of a run is charged to one cause; the causes add up to the cycle count.</p>",
        env!("CARGO_PKG_VERSION")
    );
    if let Some(line) = super::compare::overrides_line(named) {
        let _ = writeln!(s, "<p class=\"note\">{}</p>", esc(line.trim_end()));
    }
    configurations(&mut s, named, &reports);
    ledger(&mut s, loaded, named, &reports);
    waiting(&mut s, named, &reports);
    mlp(&mut s, named, &reports);
    let _ = writeln!(s, "<h2 id=\"timeline\">Timeline</h2>");
    let _ = writeln!(
        s,
        "<p class=\"note\">Instructions retired per cycle above outstanding misses per cycle, {} cycles from the window start of each configuration.</p>",
        int(cycles)
    );
    s.push_str(&timeline::timeline_svg(loaded, named, rec, cycles));
    s.push_str("</body>\n</html>\n");
    s
}

fn configurations(s: &mut String, named: &[NamedConfig], reports: &[Report]) {
    let _ = writeln!(s, "<h2 id=\"configurations\">Configurations</h2>\n<table>");
    let _ = writeln!(
        s,
        "<tr><th>configuration</th><th>L1D mode</th><th>miss registers</th><th>ROB</th><th>cycles</th><th>IPC</th><th>speedup</th><th>L1D miss rate</th><th>avg miss latency</th><th>MLP l1d</th><th>MLP dram</th></tr>"
    );
    for (c, r) in named.iter().zip(reports) {
        let speedup = if r.cycles == 0 {
            0.0
        } else {
            reports[0].cycles as f64 / r.cycles as f64
        };
        let _ = writeln!(
            s,
            "<tr><td>{}</td><td>{:?}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{speedup:.2}x</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td></tr>",
            esc(&c.label),
            c.config.l1d.mode,
            c.config.l1d.mshrs,
            c.config.core.rob_entries,
            int(r.cycles),
            fixed(r.ipc, 3),
            percent(metrics::l1d_miss_rate(r), 1.0),
            fixed(metrics::l1d_miss_latency(r), 1),
            fixed(r.mlp.l1d, 2),
            fixed(r.mlp.dram, 2)
        );
    }
    s.push_str("</table>\n");
    for c in named {
        let _ = writeln!(
            s,
            "<details><summary>{} as RON</summary><pre>{}</pre></details>",
            esc(&c.label),
            esc(&c.config.to_ron())
        );
    }
}

fn ledger(s: &mut String, loaded: &Loaded, named: &[NamedConfig], reports: &[Report]) {
    let _ = writeln!(s, "<h2 id=\"ledger\">Cycle ledger</h2>");
    s.push_str(&super::compare::ledger_svg(loaded, named, reports));
    let order = metrics::buckets_in_use(named.iter().map(|c| &c.config), reports);
    s.push_str("<table>\n<tr><th>bucket</th>");
    for c in named {
        let _ = write!(s, "<th>{}</th>", esc(&c.label));
    }
    s.push_str("</tr>\n");
    for b in &order {
        let _ = write!(
            s,
            "<tr><td><span class=\"swatch\" style=\"background:{}\"></span>{}</td>",
            svg::bucket_colour(b),
            esc(b)
        );
        for r in reports {
            let c = r.ledger.get(b).copied().unwrap_or(0);
            let _ = write!(
                s,
                "<td class=\"{}\">{} ({})</td>",
                if c == 0 { "zero" } else { "n" },
                int(c),
                percent(c as f64, r.cycles as f64)
            );
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</table>\n");
}

fn waiting(s: &mut String, named: &[NamedConfig], reports: &[Report]) {
    let _ = writeln!(
        s,
        "<h2 id=\"waiting\">Waiting matrix</h2>\n<p class=\"note\">Rows: the bucket a stall cycle was charged to (what stopped the machine). Columns: what the oldest instruction was waiting for. Cells: cycles.</p>"
    );
    for (c, r) in named.iter().zip(reports) {
        let cols = metrics::waiting_order([r]);
        let _ = writeln!(s, "<h3>{}</h3>", esc(&c.label));
        if cols.is_empty() {
            s.push_str("<p class=\"note\">No stall cycles.</p>\n");
            continue;
        }
        let _ = write!(
            s,
            "<table class=\"waiting\" data-config=\"{}\">\n<tr><th>bucket</th>",
            esc(&c.label)
        );
        for k in &cols {
            let _ = write!(s, "<th>{}</th>", esc(k));
        }
        s.push_str("</tr>\n");
        for (bucket, row) in &r.waiting {
            let _ = write!(s, "<tr><td>{}</td>", esc(bucket));
            for k in &cols {
                match row.get(k) {
                    Some(&v) if v > 0 => {
                        let _ = write!(s, "<td class=\"n\">{}</td>", int(v));
                    }
                    _ => s.push_str("<td class=\"zero\">·</td>"),
                }
            }
            s.push_str("</tr>\n");
        }
        s.push_str("</table>\n");
    }
}

fn mlp(s: &mut String, named: &[NamedConfig], reports: &[Report]) {
    let _ = writeln!(
        s,
        "<h2 id=\"mlp\">Memory-level parallelism</h2>\n<p class=\"note\">How many L1D demand misses were outstanding, over the cycles with at least one. The mean is the MLP.</p>\n<div class=\"hists\">"
    );
    for (c, r) in named.iter().zip(reports) {
        let title = format!("{}: L1D MLP {:.2}", c.label, r.mlp.l1d);
        s.push_str(&svg::occupancy_histogram(
            &title,
            &c.label,
            &r.mlp.l1d_histogram,
        ));
    }
    s.push_str("</div>\n");
}
