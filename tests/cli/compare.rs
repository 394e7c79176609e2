//! `overlap compare`: the default program, the side-by-side outputs and the
//! ledger SVG.

use crate::util::*;

#[test]
fn default_compare_orders_the_three_presets() {
    let out = ok(&run(&["compare", "--format", "json"]));
    let doc = json(&out);
    assert_eq!(doc["program"], "hitmiss");
    let runs = doc["runs"].as_array().unwrap();
    let labels: Vec<&str> = runs.iter().map(|r| r["config"].as_str().unwrap()).collect();
    assert_eq!(labels, ["blocking", "hit-under-miss", "miss-under-miss"]);
    let cycles: Vec<u64> = runs
        .iter()
        .map(|r| r["report"]["cycles"].as_u64().unwrap())
        .collect();
    // Common practice (DESIGN.md §9, facts of the trade): serving hits under a
    // miss beats locking up, and overlapping independent misses beats both.
    assert!(cycles[1] < cycles[0] && cycles[2] < cycles[1], "{cycles:?}");
    // "Clearly different": at least 5% apart.
    assert!((cycles[0] as f64) / (cycles[1] as f64) > 1.05, "{cycles:?}");
    assert!((cycles[1] as f64) / (cycles[2] as f64) > 1.05, "{cycles:?}");
    assert_eq!(runs[0]["speedup"], 1.0);
    // Same instruction stream on every configuration.
    let insts: Vec<u64> = runs
        .iter()
        .map(|r| r["report"]["instructions"].as_u64().unwrap())
        .collect();
    assert!(insts.windows(2).all(|w| w[0] == w[1]), "{insts:?}");
}

#[test]
fn table_has_one_row_per_configuration_and_ledger_columns() {
    let out = ok(&run(&["compare", &scan()]));
    for part in [
        "config",
        "cycles",
        "IPC",
        "speedup",
        "L1D miss rate",
        "avg miss lat",
        "MLP l1d",
        "commit",
    ] {
        assert!(out.contains(part), "lacks {part:?}:\n{out}");
    }
    for preset in ["blocking ", "hit-under-miss ", "miss-under-miss "] {
        assert_eq!(
            out.lines().filter(|l| l.starts_with(preset)).count(),
            1,
            "{out}"
        );
    }
    assert!(
        out.lines()
            .any(|l| l.starts_with("blocking") && l.contains("1.00x")),
        "{out}"
    );
}

#[test]
fn csv_has_a_row_per_configuration() {
    let out = ok(&run(&["compare", &scan(), "--format", "csv"]));
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines.len(), 4, "{out}");
    let width = lines[0].split(',').count();
    assert!(lines.iter().all(|l| l.split(',').count() == width));
    assert!(lines[1].starts_with("scan.s,blocking,"));
}

#[test]
fn svg_has_a_bar_per_configuration_and_a_legend() {
    let dir = tmp();
    let svg_path = dir.path().join("ledger.svg");
    let o = run(&[
        "compare",
        &scan(),
        "--svg",
        svg_path.to_str().unwrap(),
        "--format",
        "json",
    ]);
    let doc_json = json(&ok(&o));
    let text = std::fs::read_to_string(&svg_path).unwrap();
    let doc = xml(&text);
    let bars = with_attr(&doc, "class", "bar");
    let labels = attr_of_class(&doc, "bar", "data-config");
    assert_eq!(labels, ["blocking", "hit-under-miss", "miss-under-miss"]);
    let legend = attr_of_class(&doc, "legend-entry", "data-bucket");
    for (bar, run) in bars.iter().zip(doc_json["runs"].as_array().unwrap()) {
        // Every non-empty bucket of the run is a segment with its cycles, and
        // the segments add up to the run's cycles.
        let segs = within(*bar, "class", "seg");
        let ledger = run["report"]["ledger"].as_object().unwrap();
        let nonzero = ledger.values().filter(|v| v.as_u64().unwrap() > 0).count();
        assert_eq!(segs.len(), nonzero);
        let total: u64 = segs
            .iter()
            .map(|s| s.attribute("data-cycles").unwrap().parse::<u64>().unwrap())
            .sum();
        assert_eq!(total, run["report"]["cycles"].as_u64().unwrap());
        for s in segs {
            let bucket = s.attribute("data-bucket").unwrap();
            assert!(legend.contains(&bucket), "{bucket} missing from the legend");
        }
    }
    // One colour per bucket across all bars.
    let mut colours = std::collections::BTreeMap::new();
    for s in with_attr(&doc, "class", "seg") {
        let prev = colours.insert(
            s.attribute("data-bucket").unwrap(),
            s.attribute("fill").unwrap(),
        );
        if let Some(p) = prev {
            assert_eq!(Some(p), s.attribute("fill"));
        }
    }
    assert!(
        colours.contains_key("lockup.l1d"),
        "the blocking run stalls on its lock-up"
    );
}

#[test]
fn configuration_files_get_unique_labels() {
    let dir = tmp();
    std::fs::create_dir(dir.path().join("a")).unwrap();
    let preset = ok(&run(&["preset", "miss-under-miss"]));
    assert!(preset.contains("mshrs: 8"), "{preset}");
    std::fs::write(
        dir.path().join("mine.ron"),
        preset.replace("mshrs: 8", "mshrs: 2"),
    )
    .unwrap();
    std::fs::write(
        dir.path().join("a/mine.ron"),
        preset.replace("mshrs: 8", "mshrs: 4"),
    )
    .unwrap();
    let out = ok(&run_in(
        Some(dir.path()),
        &[
            "compare",
            &scan(),
            "--config",
            "mine.ron",
            "--config",
            "a/mine.ron",
            "--format",
            "csv",
        ],
    ));
    let configs: Vec<&str> = out
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(configs, ["mine", "mine#2"]);
}

#[test]
fn overrides_show_in_the_table_and_the_json() {
    let out = ok(&run(&["compare", &scan(), "--set", "l1d.mode=Blocking"]));
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(
        lines[1], "overrides: --set l1d.mode=Blocking (every configuration)",
        "{out}"
    );
    // Forcing the mode makes the three presets one machine: the table says
    // so instead of showing three labels with identical figures.
    assert!(
        out.contains(
            "note: blocking, hit-under-miss, miss-under-miss are the same machine after the overrides"
        ),
        "{out}"
    );
    let doc = json(&ok(&run(&[
        "compare",
        &scan(),
        "--set",
        "l1d.mshrs=2",
        "--set",
        "core.rob_entries=64",
        "--format",
        "json",
    ])));
    for r in doc["runs"].as_array().unwrap() {
        assert_eq!(
            r["set"],
            serde_json::json!(["l1d.mshrs=2", "core.rob_entries=64"])
        );
    }
    let plain = json(&ok(&run(&["compare", &scan(), "--format", "json"])));
    assert_eq!(plain["runs"][0]["set"], serde_json::json!([]));
    let text = ok(&run(&["compare", &scan()]));
    assert!(!text.contains("overrides"), "{text}");
    assert!(!text.contains("same machine"), "{text}");
}

#[test]
fn runs_cut_short_by_the_instruction_limit_are_noted() {
    let out = ok(&run(&["compare", "gather", "--max-insts", "2000"]));
    assert!(
        out.contains("note: every run stopped at --max-insts 2000 before the kernel started"),
        "{out}"
    );
    // Past the set-up, the figures are of part of the run.
    let out = ok(&run(&[
        "compare",
        &scan(),
        "--whole-run",
        "--max-insts",
        "100",
    ]));
    assert!(
        out.contains(
            "note: every run stopped at --max-insts 100: the figures cover only part of the run"
        ),
        "{out}"
    );
}
