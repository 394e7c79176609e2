//! `overlap timeline`: the SVG strips, the text strips and the pipeline view.

use crate::util::*;

#[test]
fn svg_has_retired_and_miss_strips_per_configuration() {
    let dir = tmp();
    let path = dir.path().join("t.svg");
    ok(&run(&[
        "timeline",
        &scan(),
        "--from",
        "kernel",
        "--cycles",
        "300",
        "--svg",
        path.to_str().unwrap(),
    ]));
    let text = std::fs::read_to_string(&path).unwrap();
    let doc = xml(&text);
    let panels = with_attr(&doc, "class", "panel");
    let labels = attr_of_class(&doc, "panel", "data-config");
    assert_eq!(labels, ["blocking", "hit-under-miss", "miss-under-miss"]);
    let peak = |panel: &roxmltree::Node<'_, '_>, series: &str| -> u64 {
        let strip = panel
            .descendants()
            .find(|n| n.attribute("data-series") == Some(series))
            .unwrap_or_else(|| panic!("no {series} strip"));
        strip
            .attribute("data-peak")
            .map_or(0, |p| p.parse().unwrap())
    };
    for p in &panels {
        for series in ["retired", "l1d", "dram"] {
            assert!(
                p.descendants()
                    .any(|n| n.attribute("data-series") == Some(series))
            );
        }
    }
    // Source: DESIGN.md §5: a blocking cache has one miss outstanding at most;
    // miss-under-miss overlaps the two independent streams' misses.
    assert_eq!(peak(&panels[0], "l1d"), 1);
    assert!(peak(&panels[2], "l1d") >= 2, "{}", peak(&panels[2], "l1d"));
}

#[test]
fn a_whole_run_window_counts_every_retired_instruction() {
    // The recorder sees skipped stretches of identical cycles as one call; the
    // window must still account for every cycle: the retired strip sums to the
    // instruction count whether or not idle cycles are skipped.
    let r = report_of(scan_json(&["--whole-run"]));
    let cycles = r["cycles"].as_u64().unwrap();
    let insts = r["instructions"].as_u64().unwrap();
    let dir = tmp();
    let program = scan();
    let n = cycles.to_string();
    for (name, extra) in [("skip.svg", None), ("step.svg", Some("--step-every-cycle"))] {
        let p = dir.path().join(name).to_str().unwrap().to_string();
        let mut args = vec![
            "timeline",
            &program,
            "--config",
            "miss-under-miss",
            "--from",
            "0",
            "--cycles",
            &n,
        ];
        args.extend(["--svg", &p, "--whole-run"]);
        args.extend(extra);
        ok(&run(&args));
    }
    let skip = std::fs::read_to_string(dir.path().join("skip.svg")).unwrap();
    let step = std::fs::read_to_string(dir.path().join("step.svg")).unwrap();
    assert_eq!(skip, step, "idle skipping does not change the picture");
    let doc = xml(&skip);
    let total: u64 = with_attr(&doc, "data-series", "retired")[0]
        .attribute("data-total")
        .unwrap()
        .parse()
        .unwrap();
    assert_eq!(total, insts);
}

#[test]
fn pipeline_view_lists_instructions_with_their_events() {
    let o = run(&[
        "timeline",
        &scan(),
        "--config",
        "blocking",
        "--cycles",
        "200",
        "--pipeline",
        "--max-rows",
        "10",
    ]);
    let out = ok(&o);
    assert!(out.contains("blocking: cycles"), "{out}");
    assert!(out.contains("retired  |"), "{out}");
    assert!(
        out.contains("fetch") && out.contains("retire") && out.contains("lane"),
        "{out}"
    );
    let rows: Vec<&str> = out
        .lines()
        .filter(|l| l.contains("0x") && l.contains('('))
        .collect();
    assert!(!rows.is_empty() && rows.len() <= 10, "{out}");
    assert!(
        rows.iter().any(|l| l.contains("ld ")),
        "loads appear:\n{out}"
    );
    assert!(out.contains("not shown, see --max-rows"), "{out}");
}

#[test]
fn a_window_after_the_end_is_an_error() {
    fails_with(
        &run(&["timeline", &scan(), "--from", "999999999", "--cycles", "10"]),
        &["after the run ends"],
    );
    fails_with(&run(&["timeline", &scan(), "--cycles", "0"]), &["--cycles"]);
    fails_with(
        &run(&["timeline", &scan(), "--from", "soon"]),
        &["--from", "kernel"],
    );
}

#[test]
fn the_count_in_flight_does_not_depend_on_the_row_limit() {
    let count = |rows: &str| -> Vec<String> {
        let out = ok(&run(&[
            "timeline",
            "gather",
            "--config",
            "miss-under-miss",
            "--cycles",
            "200",
            "--pipeline",
            "--max-rows",
            rows,
        ]));
        out.lines()
            .filter(|l| l.contains("in flight in the window"))
            .map(|l| l.split_whitespace().next().unwrap().to_string())
            .collect()
    };
    let none = count("0");
    assert_eq!(none.len(), 1);
    assert_ne!(none[0], "0", "instructions retire in the window");
    assert_eq!(none, count("1"));
    assert_eq!(none, count("100000"));
}

#[test]
fn overrides_are_named_above_the_strips() {
    let out = ok(&run(&[
        "timeline",
        &scan(),
        "--config",
        "blocking",
        "--set",
        "core.rob_entries=32",
        "--cycles",
        "50",
    ]));
    assert!(
        out.starts_with("overrides: --set core.rob_entries=32\n"),
        "{out}"
    );
}
