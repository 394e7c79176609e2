//! `overlap baseline` and `overlap check`: the committed quick baseline, a
//! deliberate change, and damaged or incompatible files.
//!
//! The committed baseline is `tests/data/quick-baseline.json`, recorded with
//! the three presets. When a model change is intended, refresh it with
//! `cargo run --release -- baseline --suite quick --out tests/data/quick-baseline.json`.

use crate::util::*;

const BASELINE: &str = "tests/data/quick-baseline.json";

#[test]
fn committed_quick_baseline_passes_with_zero_tolerance() {
    let o = run(&["check", BASELINE, "--tolerance", "0%"]);
    let out = stdout(&o);
    expect_code(&o, 0);
    assert!(out.contains("no metric moved"), "{out}");
}

#[test]
fn a_smaller_rob_is_caught() {
    let o = run(&["check", BASELINE, "--set", "core.rob_entries=32"]);
    expect_code(&o, 1);
    let out = stdout(&o);
    assert!(out.contains("beyond tolerance"), "{out}");
    assert!(
        out.lines().any(|l| l.contains(" cycles ")),
        "cycles moved:\n{out}"
    );
}

#[test]
fn tolerance_and_metric_selection() {
    // A small ROB moves cycles by less than a factor of 100 on every entry...
    let o = run(&[
        "check",
        BASELINE,
        "--set",
        "core.rob_entries=64",
        "--metrics",
        "cycles,ipc",
        "--tolerance",
        "10000%",
    ]);
    expect_code(&o, 0);
    assert!(stdout(&o).contains("within"), "{}", stdout(&o));
    // ...and an unknown metric is an error.
    fails_with(
        &run(&["check", BASELINE, "--metrics", "cycels"]),
        &["cycels", "recorded:", "ipc"],
    );
}

#[test]
fn record_then_check_round_trips() {
    let dir = tmp();
    let file = dir.path().join("b.json");
    let f = file.to_str().unwrap();
    let o = run(&[
        "baseline", "--suite", "quick", "--config", "blocking", "--out", f,
    ]);
    ok(&o);
    let b = json(&std::fs::read_to_string(&file).unwrap());
    assert_eq!(b["kind"], "overlap-baseline");
    assert_eq!(b["tool_version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(b["configs"][0]["label"], "blocking");
    assert!(
        b["configs"][0]["ron"]
            .as_str()
            .unwrap()
            .contains("Blocking")
    );
    let run0 = &b["runs"][0];
    for key in [
        "cycles",
        "instructions",
        "ipc",
        "l1d_miss_rate",
        "l1d_mlp",
        "mispredicts",
        "ledger.commit",
    ] {
        assert!(run0["metrics"].get(key).is_some(), "baseline lacks {key}");
    }
    ok(&run(&["check", f]));
    // --config swaps in the current definition of a recorded label.
    let o = run(&["check", f, "--config", "miss-under-miss"]);
    fails_with(
        &o,
        &[
            "no recorded configuration is labelled 'miss-under-miss'",
            "blocking",
        ],
    );
    ok(&run(&["check", f, "--config", "blocking"]));
}

#[test]
fn damaged_and_incompatible_baselines_exit_2() {
    let dir = tmp();
    let good = std::fs::read_to_string(BASELINE).unwrap();
    let cut = dir.path().join("cut.json");
    std::fs::write(&cut, &good[..good.len() / 2]).unwrap();
    fails_with(
        &run(&["check", cut.to_str().unwrap()]),
        &["not a baseline file", "invalid JSON"],
    );
    let other = dir.path().join("other.json");
    std::fs::write(&other, "{\"cycles\": 3}").unwrap();
    fails_with(
        &run(&["check", other.to_str().unwrap()]),
        &["not a baseline file"],
    );
    let future = dir.path().join("future.json");
    std::fs::write(&future, good.replacen("\"format\": 1", "\"format\": 99", 1)).unwrap();
    fails_with(
        &run(&["check", future.to_str().unwrap()]),
        &["format", "record it again"],
    );
    let schema = dir.path().join("schema.json");
    let mut v = json(&good);
    v["report_schema"] = 999.into();
    std::fs::write(&schema, v.to_string()).unwrap();
    fails_with(
        &run(&["check", schema.to_str().unwrap()]),
        &["report schema 999"],
    );
    // A run whose configuration label was never recorded (an edited or
    // spliced file) is named when the file is read, before anything runs.
    let spliced = dir.path().join("spliced.json");
    let mut v = json(&good);
    let entry = v["runs"][0]["entry"].as_str().unwrap().to_string();
    v["runs"][0]["config"] = "zzz".into();
    std::fs::write(&spliced, v.to_string()).unwrap();
    let o = run(&["check", spliced.to_str().unwrap()]);
    fails_with(
        &o,
        &[
            "inconsistent baseline file",
            &format!("run '{entry}' on 'zzz'"),
            "not recorded",
        ],
    );
    assert!(!stderr(&o).contains("internal"), "{}", stderr(&o));
    let twice = dir.path().join("twice.json");
    let mut v = json(&good);
    let first = v["runs"][0].clone();
    v["runs"].as_array_mut().unwrap().push(first);
    std::fs::write(&twice, v.to_string()).unwrap();
    fails_with(
        &run(&["check", twice.to_str().unwrap()]),
        &["inconsistent baseline file", "recorded twice"],
    );
    let missing = dir.path().join("missing.json");
    fails_with(
        &run(&["check", missing.to_str().unwrap()]),
        &["cannot read baseline"],
    );
    fails_with(
        &run(&["check", BASELINE, "--set", "core.nope=1"]),
        &["core.nope", "rob_entries"],
    );
    fails_with(
        &run(&["baseline", "--suite", "huge", "--out", "x.json"]),
        &["unknown suite", "quick"],
    );
}
