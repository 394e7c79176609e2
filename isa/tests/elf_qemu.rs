//! The C kernels rebuilt from source (`workloads/c/build.sh` into a temporary
//! directory, both `-march=rv64im` and `-march=rv64imc`) must print and
//! return on the functional model exactly what they print and return on the
//! reference emulator, qemu-riscv64, run on the same fresh files.
//!
//! Needs `riscv64-linux-gnu-gcc` and `qemu-riscv64` (Debian packages
//! `gcc-riscv64-linux-gnu` and `qemu-user`, installed by `.ci/run`). Without
//! them the test prints a loud `SKIPPED` line, except under CI (`CI=true`),
//! where it fails.

mod elf_support;

use elf_support::{KERNELS, MARCHES, Outcome, fixture_dir, parse_expected, run_elf};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;

fn tool_present(name: &str) -> bool {
    Command::new(name)
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

/// A directory under the system temp dir, removed on drop.
struct TempDir(PathBuf);

impl TempDir {
    fn new() -> TempDir {
        let dir = std::env::temp_dir().join(format!("overlap-elf-qemu-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        TempDir(dir)
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        std::fs::remove_dir_all(&self.0).ok();
    }
}

fn run_qemu(elf: &Path) -> Outcome {
    // Source: the reference emulator, qemu-riscv64 (user-mode QEMU).
    let out = Command::new("qemu-riscv64")
        .arg(elf)
        .output()
        .unwrap_or_else(|e| panic!("cannot run qemu-riscv64: {e}"));
    let exit_status = out
        .status
        .code()
        .unwrap_or_else(|| panic!("qemu-riscv64 {} died: {:?}", elf.display(), out.status));
    Outcome {
        exit_status: exit_status as u8,
        stdout: String::from_utf8(out.stdout).expect("UTF-8 stdout"),
    }
}

#[test]
fn fresh_builds_match_qemu() {
    let missing: Vec<&str> = ["riscv64-linux-gnu-gcc", "qemu-riscv64"]
        .into_iter()
        .filter(|tool| !tool_present(tool))
        .collect();
    if !missing.is_empty() {
        let msg = format!(
            "SKIPPED: {} not installed (apt-get install gcc-riscv64-linux-gnu qemu-user); \
             the C kernels were not rebuilt and checked against qemu-riscv64",
            missing.join(" and ")
        );
        assert!(std::env::var("CI").as_deref() != Ok("true"), "{msg}");
        // Straight to the stderr handle: the test harness captures eprintln!.
        writeln!(std::io::stderr(), "\n*** {msg} ***\n").ok();
        return;
    }

    let dir = TempDir::new();
    let script = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../workloads/c/build.sh");
    let build = Command::new("bash")
        .arg(&script)
        .arg(&dir.0)
        .output()
        .unwrap();
    assert!(
        build.status.success(),
        "{} failed:\n{}{}",
        script.display(),
        String::from_utf8_lossy(&build.stdout),
        String::from_utf8_lossy(&build.stderr)
    );

    for kernel in KERNELS {
        let committed = fixture_dir().join(format!("{kernel}.expected"));
        let committed = parse_expected(&std::fs::read_to_string(committed).unwrap());
        for march in MARCHES {
            let elf = dir.0.join(format!("{kernel}.{march}.elf"));
            let reference = run_qemu(&elf);
            let (ours, _) = run_elf(&std::fs::read(&elf).unwrap());
            assert_eq!(ours, reference, "{kernel}.{march}: model vs qemu-riscv64");
            assert_eq!(
                reference, committed,
                "{kernel}.{march}: the committed fixtures are stale; \
                 run workloads/c/build.sh --fixtures"
            );
        }
    }
}
