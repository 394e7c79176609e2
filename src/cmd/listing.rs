//! `overlap workloads`, `presets`, `preset` and `exec`: listings and the
//! functional model alone.

use crate::cli::{Format, ProgramArgs};
use crate::output;
use crate::table::{Align, Table};
use anyhow::{Result, bail};
use overlap_core::Config;
use overlap_core::config::PRESETS;
use std::io::Write;
use std::process::ExitCode;

/// `overlap workloads`.
pub fn workloads(format: Format) -> Result<ExitCode> {
    let list = overlap_workloads::list();
    let text = match format {
        Format::Json => serde_json::to_string_pretty(&list)? + "\n",
        Format::Csv => bail!("workloads can be listed as a table or as json"),
        Format::Table => {
            let mut s = String::new();
            for w in &list {
                s.push_str(&format!("{}\n  {}\n", w.name, w.description));
                let mut t = Table::new(&[
                    ("parameter", Align::Left),
                    ("default", Align::Right),
                    ("accepts", Align::Left),
                    ("meaning", Align::Left),
                ])
                .indent(4);
                for p in &w.params {
                    t.row(vec![
                        p.name.to_string(),
                        p.default.to_string(),
                        p.kind.to_string(),
                        p.description.to_string(),
                    ]);
                }
                s.push_str(&t.render());
                s.push('\n');
            }
            s
        }
    };
    output::emit(None, &text)?;
    Ok(ExitCode::SUCCESS)
}

/// `overlap presets`.
pub fn presets() -> Result<ExitCode> {
    let mut t = Table::new(&[
        ("preset", Align::Left),
        ("L1D mode", Align::Left),
        ("miss registers", Align::Right),
        ("what it models", Align::Left),
    ]);
    for name in PRESETS {
        let c = Config::preset(name).expect("listed preset exists");
        let what = match name {
            "blocking" => "the L1D locks up while a miss is outstanding: nothing else is served",
            "hit-under-miss" => {
                "one miss outstanding; hits are served under it, the next miss waits"
            }
            _ => "several misses outstanding, up to the miss registers; hits are served",
        };
        t.row(vec![
            name.to_string(),
            format!("{:?}", c.l1d.mode),
            c.l1d.mshrs.to_string(),
            what.to_string(),
        ]);
    }
    let mut s = t.render();
    s.push_str(
        "\nThe presets differ only in the L1D mode. Print one with `overlap preset NAME`.\n",
    );
    output::emit(None, &s)?;
    Ok(ExitCode::SUCCESS)
}

/// `overlap preset NAME`.
pub fn preset(name: &str) -> Result<ExitCode> {
    let Some(c) = Config::preset(name) else {
        bail!("unknown preset '{name}'; presets: {}", PRESETS.join(", "));
    };
    let mut text = c.to_ron();
    text.push('\n');
    output::emit(None, &text)?;
    Ok(ExitCode::SUCCESS)
}

/// `overlap exec`: the functional model alone.
pub fn exec(spec: &str, args: &ProgramArgs, max_insts: Option<u64>) -> Result<ExitCode> {
    let loaded = super::load_program(Some(spec), args)?;
    let cfg = overlap_isa::MachineConfig {
        max_insts,
        ..Default::default()
    };
    let mut m = overlap_isa::Machine::new(&loaded.program, cfg)?;
    let result = m.run();
    let mut out = std::io::stdout().lock();
    out.write_all(m.stdout())?;
    out.flush()?;
    std::io::stderr().write_all(m.stderr())?;
    let code = result?;
    eprintln!(
        "{}: exit code {code}, {} instructions",
        loaded.label,
        m.retired()
    );
    Ok(ExitCode::from((code & 0xff) as u8))
}
