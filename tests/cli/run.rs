//! `overlap run`: the table, JSON and CSV outputs, `--out`, `--set` order,
//! idle skipping and instruction limits.

use crate::util::*;

/// The top-level keys of a JSON report, in order.
// Source: the report schema documented in README.md ("JSON report schema").
const SCHEMA_KEYS: [&str; 16] = [
    "schema",
    "cycles",
    "instructions",
    "ipc",
    "ledger",
    "waiting",
    "episodes",
    "mlp",
    "caches",
    "dram",
    "branches",
    "retired_by_class",
    "exit_code",
    "truncated",
    "warmup",
    "host",
];

#[test]
fn table_shows_every_section() {
    let out = ok(&run(&[
        "run",
        "chase",
        "--param",
        "hops=2000",
        "--param",
        "footprint=16K",
    ]));
    for part in [
        "chase (",
        "on miss-under-miss",
        "cycles",
        "instructions",
        "IPC",
        "Cycle ledger",
        "total",
        "100.0%",
        "Waiting matrix",
        "Memory-level parallelism",
        "l1d",
        "avg miss latency",
        "Branches:",
        "host time",
        "simulated MIPS",
    ] {
        assert!(out.contains(part), "table lacks {part:?}:\n{out}");
    }
}

#[test]
fn json_report_has_the_documented_keys_and_an_exact_ledger() {
    let o = run(&["run", &scan(), "--format", "json"]);
    let text = ok(&o);
    let r = json(&text);
    let mut keys: Vec<&str> = r.as_object().unwrap().keys().map(|k| k.as_str()).collect();
    let mut documented = SCHEMA_KEYS.to_vec();
    keys.sort_unstable();
    documented.sort_unstable();
    assert_eq!(keys, documented);
    // In the documented order.
    let at: Vec<usize> = SCHEMA_KEYS
        .iter()
        .map(|k| text.find(&format!("\n  \"{k}\":")).unwrap())
        .collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{at:?}");
    // The kernel was measured after its set-up.
    assert!(r["warmup"]["instructions"].as_u64().unwrap() > 0);
    let whole = json(&ok(&run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--whole-run",
    ])));
    assert!(whole["warmup"].is_null());
    assert!(whole["cycles"].as_u64().unwrap() > r["cycles"].as_u64().unwrap());
    // Source: DESIGN.md §6: the buckets sum to the total cycle count exactly.
    let cycles = r["cycles"].as_u64().unwrap();
    let sum: u64 = r["ledger"]
        .as_object()
        .unwrap()
        .values()
        .map(|v| v.as_u64().unwrap())
        .sum();
    assert_eq!(sum, cycles);
    assert_eq!(r["exit_code"], 0);
    // The program's own output went to standard error, not into the JSON.
    assert!(stderr(&o).contains("scan done"), "{}", stderr(&o));
}

#[test]
fn csv_has_one_row_whose_ledger_columns_sum_to_cycles() {
    let out = ok(&run(&["run", &scan(), "--format", "csv"]));
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines.len(), 2, "{out}");
    let header: Vec<&str> = lines[0].split(',').collect();
    let row: Vec<&str> = lines[1].split(',').collect();
    assert_eq!(header.len(), row.len());
    assert_eq!(
        &header[..4],
        ["program", "config", "cycles", "instructions"]
    );
    assert_eq!(row[0], "scan.s");
    let cycles: u64 = row[2].parse().unwrap();
    let ledger: u64 = header
        .iter()
        .zip(&row)
        .filter(|(h, _)| h.starts_with("ledger."))
        .map(|(_, v)| v.parse::<u64>().unwrap())
        .sum();
    // Source: DESIGN.md §6 (the ledger adds up to the total exactly).
    assert_eq!(ledger, cycles);
}

#[test]
fn out_writes_the_file_and_nothing_else() {
    let dir = tmp();
    let path = dir.path().join("report.json");
    let o = run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--out",
        path.to_str().unwrap(),
    ]);
    assert_eq!(ok(&o), "", "nothing on stdout with --out");
    json(&std::fs::read_to_string(&path).unwrap());
    assert_eq!(
        files_in(dir.path()),
        ["report.json"],
        "no temporary file left behind"
    );
}

#[test]
fn stepping_every_cycle_changes_nothing() {
    // Source: DESIGN.md §8: results are bit-identical with and without idle skipping.
    let a = json(&ok(&run(&["run", &scan(), "--format", "json"])));
    let b = json(&ok(&run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--step-every-cycle",
    ])));
    assert_eq!(without_host(a), without_host(b));
}

#[test]
fn sets_apply_in_order() {
    let two_then_four = json(&ok(&run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--set",
        "l1d.mshrs=2",
        "--set",
        "l1d.mshrs=4",
    ])));
    let four = json(&ok(&run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--set",
        "l1d.mshrs=4",
    ])));
    let two = json(&ok(&run(&[
        "run",
        &scan(),
        "--format",
        "json",
        "--set",
        "l1d.mshrs=2",
    ])));
    assert_eq!(without_host(two_then_four.clone()), without_host(four));
    assert_ne!(without_host(two_then_four), without_host(two));
}

#[test]
fn instruction_limit_truncates_the_run() {
    let r = json(&ok(&run(&[
        "run",
        "chase",
        "--format",
        "json",
        "--max-insts",
        "500",
    ])));
    assert_eq!(r["truncated"], true);
    assert!(
        r["instructions"].as_u64().unwrap() <= 500,
        "{}",
        r["instructions"]
    );
    assert!(r["exit_code"].is_null());
}

#[test]
fn table_of_a_small_run_matches_its_golden_file() {
    let out = ok(&run(&["run", "tests/data/scan.s", "--config", "blocking"]));
    // Host figures vary between runs: leave them out.
    let stable: String = out
        .lines()
        .filter(|l| !l.starts_with("host time") && !l.starts_with("simulated MIPS"))
        .map(|l| format!("{l}\n"))
        .collect();
    golden("run-scan-blocking.txt", &stable);
}
