//! Resolving a PROGRAM argument: a built-in workload name, an assembly file
//! (`.s`/`.S`), or an RV64 ELF executable. [`load`] is the single place where
//! a PROGRAM is turned into a program image; every command goes through it.

use anyhow::{Context, Result, bail};
use overlap_isa::Program;
use std::collections::BTreeMap;
use std::path::Path;

/// The built-in program used when a command is given no PROGRAM: every load
/// that misses the L1D (it visits a 64 KiB region, which the L2 holds) is
/// followed by 8 loads that hit, and the misses are independent of each
/// other. Serving hits under a miss helps (hit-under-miss), overlapping the
/// misses helps more (miss-under-miss), so the three presets come out clearly
/// apart, and the kernel (65,536 misses) outweighs the set-up phase.
pub const DEFAULT_PROGRAM: &str = "hitmiss";

/// Parameters of [`DEFAULT_PROGRAM`] when it is used as the default.
pub const DEFAULT_PARAMS: &[(&str, &str)] =
    &[("footprint", "64K"), ("hits", "8"), ("misses", "65536")];

/// Symbol that marks the first instruction of a workload's measured kernel.
pub const KERNEL_SYMBOL: &str = "measure_start";

/// A program ready to run, with what reports need to name it.
#[derive(Clone, Debug)]
pub struct Loaded {
    /// What to call it in reports: the workload name or the file name.
    pub label: String,
    /// The workload name for a built-in, `None` for a file.
    pub workload: Option<String>,
    /// Every workload parameter with the value used (defaults included), as
    /// text; empty for files.
    pub params: BTreeMap<String, String>,
    /// The program image.
    pub program: Program,
}

impl Loaded {
    /// Address of the first kernel instruction, when the program marks it.
    pub fn kernel_start(&self) -> Option<u64> {
        self.program.symbols.get(KERNEL_SYMBOL).copied()
    }

    /// `name (k=v k=v)` for titles.
    pub fn title(&self) -> String {
        if self.params.is_empty() {
            return self.label.clone();
        }
        format!("{} ({})", self.label, self.params_text())
    }

    /// `k=v k=v`, or `file` for a program read from a file.
    pub fn params_text(&self) -> String {
        if self.workload.is_none() {
            return "program read from a file".to_string();
        }
        self.params
            .iter()
            .map(|(k, v)| format!("{k}={v}"))
            .collect::<Vec<_>>()
            .join(" ")
    }
}

/// Parse `name=value` pairs from `--param`.
pub fn parse_params(raw: &[String]) -> Result<Vec<(String, String)>> {
    raw.iter()
        .map(|p| match p.split_once('=') {
            Some((k, v)) if !k.trim().is_empty() => {
                Ok((k.trim().to_string(), v.trim().to_string()))
            }
            _ => bail!("--param expects name=value, got '{p}'"),
        })
        .collect()
}

/// Resolve an optional PROGRAM: `None` means [`DEFAULT_PROGRAM`] with
/// [`DEFAULT_PARAMS`] (explicit `--param`s override those).
pub fn load_or_default(spec: Option<&str>, params: &[(String, String)]) -> Result<Loaded> {
    match spec {
        Some(s) => load(s, params),
        None => {
            let mut merged: Vec<(String, String)> = DEFAULT_PARAMS
                .iter()
                .filter(|(k, _)| !params.iter().any(|(pk, _)| pk == k))
                .map(|(k, v)| (k.to_string(), v.to_string()))
                .collect();
            merged.extend(params.iter().cloned());
            load(DEFAULT_PROGRAM, &merged)
        }
    }
}

/// The assembler's errors under one line that says what failed:
/// `cannot assemble 'k.s' (2 errors):`, then each error as the assembler
/// writes it (`k.s:5:3: error: ...`, the source line, a caret).
pub fn assembly_errors(spec: &str, errors: &overlap_isa::AsmErrors) -> String {
    let n = errors.len();
    let mut s = format!(
        "cannot assemble '{spec}' ({n} error{}):",
        if n == 1 { "" } else { "s" }
    );
    for e in errors {
        s.push('\n');
        s.push_str(&e.to_string());
    }
    s
}

/// Load PROGRAM: an existing file is assembled (or, for ELF, loaded);
/// anything else must name a built-in workload.
pub fn load(spec: &str, params: &[(String, String)]) -> Result<Loaded> {
    let path = Path::new(spec);
    if path.is_file() {
        if !params.is_empty() {
            bail!("--param applies to built-in workloads only, and '{spec}' is a file");
        }
        let bytes = std::fs::read(path).with_context(|| format!("cannot read '{spec}'"))?;
        let label = path
            .file_name()
            .map_or(spec.to_string(), |n| n.to_string_lossy().into_owned());
        if bytes.starts_with(&overlap_isa::elf::ELF_MAGIC) {
            let program = overlap_isa::load_elf(&bytes)
                .map_err(|e| anyhow::anyhow!("cannot load '{spec}': {e}"))?;
            return Ok(Loaded {
                label,
                workload: None,
                params: BTreeMap::new(),
                program,
            });
        }
        let text = String::from_utf8(bytes)
            .with_context(|| format!("'{spec}' is neither an ELF file nor UTF-8 assembly text"))?;
        let program = overlap_isa::asm::assemble(&text, spec)
            .map_err(|e| anyhow::anyhow!("{}", assembly_errors(spec, &e)))?;
        return Ok(Loaded {
            label,
            workload: None,
            params: BTreeMap::new(),
            program,
        });
    }
    let names_a_path = spec.contains('/') || spec.ends_with(".s") || spec.ends_with(".S");
    if path.is_dir() && (names_a_path || overlap_workloads::find(spec).is_none()) {
        bail!(
            "cannot run '{spec}': it is a directory; PROGRAM is a built-in workload name, an assembly file (.s) or an RV64 ELF file"
        );
    }
    if names_a_path {
        bail!("cannot read '{spec}': no such file");
    }
    let built = overlap_workloads::build(spec, params)?;
    let params = built
        .params
        .iter()
        .map(|(k, v)| (k.clone(), v.to_string()))
        .collect();
    Ok(Loaded {
        label: spec.to_string(),
        workload: Some(built.name.clone()),
        params,
        program: built.program,
    })
}
