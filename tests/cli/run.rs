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
    let doc = json(&text);
    // Source: README.md ("JSON report schema"): the report's keys at the top
    // level in the documented order, then what names the run.
    let mut order = SCHEMA_KEYS.to_vec();
    order.extend(["program", "params", "config", "set"]);
    let at: Vec<usize> = order
        .iter()
        .map(|k| text.find(&format!("\n  \"{k}\":")).unwrap())
        .collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "{at:?}");
    assert_eq!(doc.as_object().unwrap().len(), order.len());
    assert_eq!(doc["program"], "scan.s");
    assert_eq!(doc["config"], "miss-under-miss");
    assert_eq!(doc["set"], serde_json::json!([]));
    let r = report_of(doc);
    // The kernel was measured after its set-up.
    assert!(r["warmup"]["instructions"].as_u64().unwrap() > 0);
    let whole = report_of(scan_json(&["--whole-run"]));
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
    let a = scan_json(&[]);
    let b = scan_json(&["--step-every-cycle"]);
    assert_eq!(without_host(a), without_host(b));
}

#[test]
fn sets_apply_in_order() {
    let two_then_four = scan_json(&["--set", "l1d.mshrs=2", "--set", "l1d.mshrs=4"]);
    let four = scan_json(&["--set", "l1d.mshrs=4"]);
    let two = scan_json(&["--set", "l1d.mshrs=2"]);
    assert_eq!(without_host(two_then_four.clone()), without_host(four));
    assert_ne!(without_host(two_then_four), without_host(two));
}

#[test]
fn instruction_limit_truncates_the_run() {
    let r = report_of(json(&ok(&run(&[
        "run",
        "chase",
        "--format",
        "json",
        "--max-insts",
        "500",
    ]))));
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

#[test]
fn overrides_are_in_the_title_and_the_json() {
    let out = ok(&run(&[
        "run",
        &scan(),
        "--set",
        "l1d.mode=Blocking",
        "--set",
        "l1d.mshrs=1",
    ]));
    let first = out.lines().next().unwrap();
    assert!(
        first.ends_with(" on miss-under-miss +l1d.mode=Blocking +l1d.mshrs=1"),
        "{first}"
    );
    assert!(out.contains("Caches (L1D mode Blocking"), "{out}");
    let doc = scan_json(&["--config", "blocking", "--set", "core.rob_entries=32"]);
    assert_eq!(doc["config"], "blocking");
    assert_eq!(doc["set"], serde_json::json!(["core.rob_entries=32"]));
}

#[test]
fn a_run_cut_short_says_what_its_figures_cover() {
    // gather's set-up runs about 72,000 instructions (`overlap run gather`
    // leaves 71,730 out, measured), so a limit of 2,000 stops it before the
    // kernel.
    let out = ok(&run(&["run", "gather", "--max-insts", "2000"]));
    assert!(
        out.contains("note: the run stopped at --max-insts 2000 before the kernel started: every figure is of the set-up"),
        "{out}"
    );
    assert!(
        out.contains(
            "(the limit counts every instruction from the program's start, set-up included)"
        ),
        "{out}"
    );
    let whole = ok(&run(&[
        "run",
        "gather",
        "--max-insts",
        "2000",
        "--whole-run",
    ]));
    assert!(
        whole.contains(
            "note: the run stopped at --max-insts 2000: the figures cover only part of the run"
        ),
        "{whole}"
    );
    let full = ok(&run(&["run", &scan()]));
    assert!(!full.contains("note:"), "{full}");
}

#[test]
fn a_log_written_to_a_file_has_no_colour_codes() {
    // Standard error is a pipe here, not a terminal.
    let o = run(&["-v", "run", &scan()]);
    ok(&o);
    let log = stderr(&o);
    assert!(log.contains("simulating"), "{log}");
    assert!(!log.contains('\u{1b}'), "ANSI escape in {log:?}");
}
