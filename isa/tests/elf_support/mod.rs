//! Shared by the ELF tests: where the committed fixtures live, the kernels,
//! the `.expected` format, and running an ELF file on the functional model.
#![allow(dead_code)]

use overlap_isa::{Machine, MachineConfig, load_elf};
use std::path::PathBuf;

/// The C kernels of `workloads/c`, each committed as
/// `tests/data/elf/NAME.{rv64im,rv64imc}.elf` with `NAME.expected`.
pub const KERNELS: [&str; 4] = [
    "route_chase",
    "flow_probe",
    "classify_matmul",
    "size_histogram",
];

/// The two builds of every kernel.
pub const MARCHES: [&str; 2] = ["rv64im", "rv64imc"];

/// `tests/data/elf` at the workspace root.
pub fn fixture_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../tests/data/elf")
}

/// The bytes of a committed fixture.
pub fn fixture(name: &str) -> Vec<u8> {
    let path = fixture_dir().join(name);
    std::fs::read(&path).unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()))
}

/// What a run printed and returned.
#[derive(Debug, PartialEq, Eq)]
pub struct Outcome {
    /// Exit status as a process sees it (`a0 & 0xff`).
    pub exit_status: u8,
    /// Everything written to stdout.
    pub stdout: String,
}

/// Parses an `.expected` file: `#` comment lines, `exit CODE`, then stdout.
pub fn parse_expected(text: &str) -> Outcome {
    let mut rest = text;
    while rest.starts_with('#') {
        rest = rest.split_once('\n').map_or("", |(_, tail)| tail);
    }
    let (first, stdout) = rest.split_once('\n').unwrap_or((rest, ""));
    let code = first
        .strip_prefix("exit ")
        .unwrap_or_else(|| panic!("expected 'exit CODE', got {first:?}"));
    Outcome {
        exit_status: code.trim().parse().expect("exit code"),
        stdout: stdout.to_owned(),
    }
}

/// Loads and runs an ELF file on the functional model, returning its outcome
/// and the number of instructions it retired.
pub fn run_elf(bytes: &[u8]) -> (Outcome, u64) {
    let program = load_elf(bytes).unwrap_or_else(|e| panic!("load: {e}"));
    let cfg = MachineConfig {
        max_insts: Some(50_000_000),
        ..MachineConfig::default()
    };
    let mut machine = Machine::new(&program, cfg).unwrap_or_else(|e| panic!("map: {e}"));
    let code = machine.run().unwrap_or_else(|e| panic!("run: {e}"));
    let outcome = Outcome {
        // A process's exit status is the low 8 bits of the exit argument.
        exit_status: code as u8,
        stdout: String::from_utf8(machine.stdout().to_vec()).expect("UTF-8 stdout"),
    };
    (outcome, machine.retired())
}
