//! `overlap sweep` and `overlap merge`: the grid, the results file,
//! resuming after an interruption, shards and plots.

use crate::util::*;
use std::collections::BTreeMap;
use std::path::Path;
use std::process::Output;

/// Run `overlap sweep PROGRAM --vary l1d.mshrs=MSHRS EXTRA...` in `dir`.
fn sweep_mshrs(dir: &Path, program: &str, mshrs: &str, extra: &[&str]) -> Output {
    let vary = format!("l1d.mshrs={mshrs}");
    let mut args = vec!["sweep", program, "--vary", &vary];
    args.extend_from_slice(extra);
    run_in(Some(dir), &args)
}

/// Run a sweep of 2 x 3 points on the small test program in `dir`, written
/// to `out`, with `extra` arguments.
fn grid(dir: &Path, out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "--vary",
        "core.rob_entries=16,32,64",
        "--jobs",
        "2",
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    sweep_mshrs(dir, &scan(), "1,4", &args)
}

/// The indices of the points in a results file, in order.
fn indices(path: &Path) -> Vec<u64> {
    points(path).keys().copied().collect()
}

/// Lines of a results file as JSON, host figures removed, keyed by index.
fn points(path: &Path) -> BTreeMap<u64, serde_json::Value> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut out = BTreeMap::new();
    for line in text.lines() {
        let mut v = json(line);
        v["report"].as_object_mut().unwrap().remove("host");
        let i = v["index"].as_u64().unwrap();
        assert!(
            out.insert(i, v).is_none(),
            "point {i} written twice in {}",
            path.display()
        );
    }
    out
}

#[test]
fn grid_runs_every_combination_once() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    let o = grid(dir.path(), &out, &["--csv", "r.csv"]);
    let table = ok(&o);
    assert!(table.contains("6 of 6 points"), "{table}");
    let p = points(&out);
    assert_eq!(indices(&out), [0, 1, 2, 3, 4, 5]);
    // Row-major order: the last --vary changes fastest.
    assert_eq!(p[&1]["point"]["l1d.mshrs"], "1");
    assert_eq!(p[&1]["point"]["core.rob_entries"], "32");
    assert_eq!(p[&3]["point"]["l1d.mshrs"], "4");
    assert_eq!(p[&3]["point"]["core.rob_entries"], "16");
    for v in p.values() {
        assert_eq!(v["metrics"]["cycles"], v["report"]["cycles"]);
    }
    // Little's law (Little 1961): with one miss register the misses cannot
    // overlap, so four registers are faster on two independent streams.
    let cycles = |i: u64| p[&i]["metrics"]["cycles"].as_u64().unwrap();
    assert!(cycles(5) < cycles(2), "{} vs {}", cycles(5), cycles(2));
    let csv = std::fs::read_to_string(dir.path().join("r.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines.len(), 7);
    assert!(
        lines[0].starts_with("index,l1d.mshrs,core.rob_entries,program,config,cycles,"),
        "{}",
        lines[0]
    );
}

#[test]
fn an_interrupted_sweep_resumes_without_losing_or_repeating_points() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    // First session: stops after 2 points, as if it had been killed.
    let o = grid(dir.path(), &out, &["--max-points", "2"]);
    ok(&o);
    assert!(stderr(&o).contains("--resume"), "{}", stderr(&o));
    let before = std::fs::read_to_string(&out).unwrap();
    assert_eq!(before.lines().count(), 2);
    // The kill happened in the middle of writing a third line.
    let partial = &before.lines().next().unwrap()[..80];
    std::fs::write(&out, format!("{before}{partial}")).unwrap();
    // Without --resume the file is left alone.
    let o = grid(dir.path(), &out, &[]);
    fails_with(&o, &["already exists", "--resume"]);
    // Second session resumes.
    let o = grid(dir.path(), &out, &["--resume"]);
    ok(&o);
    assert!(
        stderr(&o).contains("incomplete last line"),
        "{}",
        stderr(&o)
    );
    let after = std::fs::read_to_string(&out).unwrap();
    assert!(
        after.starts_with(&before),
        "finished points are kept as written"
    );
    assert!(after.ends_with('\n'));
    assert_eq!(indices(&out), [0, 1, 2, 3, 4, 5]);
    // A complete file resumes to nothing new.
    let o = grid(dir.path(), &out, &["--resume"]);
    ok(&o);
    assert_eq!(std::fs::read_to_string(&out).unwrap(), after);
}

#[test]
fn a_killed_sweep_resumes_without_losing_or_repeating_points() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    let args = [
        "--param",
        "hops=60000",
        "--jobs",
        "1",
        "--out",
        out.to_str().unwrap(),
    ];
    let mut child = bin()
        .args(["sweep", "chase", "--vary", "l1d.mshrs=1,2,3,4,5,6,7,8"])
        .args(args)
        .current_dir(dir.path())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(60);
    loop {
        let lines = std::fs::read_to_string(&out)
            .map(|t| t.lines().count())
            .unwrap_or(0);
        if lines >= 1 || std::time::Instant::now() > deadline {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(5));
    }
    let _ = child.kill();
    let _ = child.wait();
    let kept = std::fs::read_to_string(&out).unwrap_or_default();
    let complete: String = kept
        .split_inclusive('\n')
        .filter(|l| l.ends_with('\n'))
        .collect();
    let again = [&args[..], &["--resume"]].concat();
    ok(&sweep_mshrs(dir.path(), "chase", "1,2,3,4,5,6,7,8", &again));
    let after = std::fs::read_to_string(&out).unwrap();
    assert!(
        after.starts_with(&complete),
        "points finished before the kill are kept"
    );
    assert_eq!(indices(&out), (0..8).collect::<Vec<u64>>());
}

#[test]
fn merged_shards_equal_the_whole_sweep() {
    let dir = tmp();
    let whole = dir.path().join("whole.jsonl");
    ok(&grid(dir.path(), &whole, &[]));
    for shard in ["0/2", "1/2"] {
        let path = dir.path().join(format!("shard{}.jsonl", &shard[..1]));
        ok(&grid(dir.path(), &path, &["--shard", shard]));
    }
    assert_eq!(indices(&dir.path().join("shard0.jsonl")), [0, 2, 4]);
    // Merge with a duplicate input: duplicates are dropped.
    let o = run_in(
        Some(dir.path()),
        &[
            "merge",
            "shard1.jsonl",
            "shard0.jsonl",
            "shard1.jsonl",
            "--out",
            "all.jsonl",
        ],
    );
    ok(&o);
    let merged = points(&dir.path().join("all.jsonl"));
    assert_eq!(merged, points(&whole));
    let text = std::fs::read_to_string(dir.path().join("all.jsonl")).unwrap();
    let order: Vec<u64> = text
        .lines()
        .map(|l| json(l)["index"].as_u64().unwrap())
        .collect();
    assert_eq!(order, [0, 1, 2, 3, 4, 5]);
}

#[test]
fn results_of_another_sweep_are_refused() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    ok(&grid(dir.path(), &out, &[]));
    let before = std::fs::read_to_string(&out).unwrap();
    let o = sweep_mshrs(
        dir.path(),
        &scan(),
        "1,2",
        &["--out", "r.jsonl", "--resume"],
    );
    fails_with(&o, &["different sweep"]);
    assert_eq!(std::fs::read_to_string(&out).unwrap(), before);
    // And merge refuses to mix them.
    ok(&sweep_mshrs(
        dir.path(),
        &scan(),
        "1,2",
        &["--out", "other.jsonl"],
    ));
    let o = run_in(
        Some(dir.path()),
        &["merge", "r.jsonl", "other.jsonl", "--out", "m.jsonl"],
    );
    fails_with(&o, &["different sweeps"]);
    assert!(!dir.path().join("m.jsonl").exists());
}

#[test]
fn a_damaged_line_in_the_middle_is_an_error() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    ok(&grid(dir.path(), &out, &[]));
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines: Vec<&str> = text.lines().collect();
    lines[2] = "{not json";
    std::fs::write(&out, lines.join("\n") + "\n").unwrap();
    fails_with(
        &grid(dir.path(), &out, &["--resume"]),
        &["r.jsonl:3:", "not a sweep result line"],
    );
}

#[test]
fn svg_plots_one_line_per_series_value() {
    let dir = tmp();
    let o = sweep_mshrs(
        dir.path(),
        &scan(),
        "1,2,4",
        &["--vary", "param.missing=1", "--svg", "p.svg"],
    );
    // A file program takes no workload parameters.
    fails_with(&o, &["--param applies to built-in workloads only"]);
    assert!(!dir.path().join("p.svg").exists());
    let o = run_in(
        Some(dir.path()),
        &[
            "sweep",
            "chase",
            "--param",
            "hops=4000",
            "--vary",
            "param.k=1,4",
            "--vary",
            "l1d.mshrs=1,2,4",
            "--svg",
            "p.svg",
            "--metric",
            "l1d_mlp",
            "--x",
            "l1d.mshrs",
            "--series",
            "param.k",
        ],
    );
    ok(&o);
    let text = std::fs::read_to_string(dir.path().join("p.svg")).unwrap();
    let doc = xml(&text);
    let series = attr_of_class(&doc, "series", "data-series");
    assert_eq!(series, ["param.k=1", "param.k=4"]);
    for s in with_attr(&doc, "class", "series") {
        let values: Vec<f64> = within(s, "class", "point")
            .iter()
            .map(|n| n.attribute("data-value").unwrap().parse().unwrap())
            .collect();
        assert_eq!(values.len(), 3);
        // Source: DESIGN.md §5: with one miss register at most one miss is outstanding.
        assert!((values[0] - 1.0).abs() < 1e-9, "{values:?}");
        assert!(values.iter().all(|&v| v <= 4.0 + 1e-9), "{values:?}");
    }
    let o = sweep_mshrs(
        dir.path(),
        "chase",
        "1,2",
        &["--svg", "q.svg", "--x", "core.rob_entries"],
    );
    fails_with(&o, &["--x core.rob_entries", "not a varied path"]);
}

/// A two-point sweep of `hashprobe` sharded in two, with `extra` arguments.
fn probe_shard(dir: &Path, out: &str, shard: &str, extra: &[&str]) -> Output {
    let args = [&["--out", out, "--shard", shard], extra].concat();
    sweep_mshrs(dir, "hashprobe", "1,2", &args)
}

#[test]
fn equivalent_command_lines_make_the_same_sweep() {
    // The signature is of what the points run, not of how it was typed:
    // parameter order, a size suffix, a default given explicitly, and a
    // configuration file reached by another path all make the same sweep.
    let dir = tmp();
    std::fs::create_dir(dir.path().join("sub")).unwrap();
    let ron = ok(&run(&["preset", "miss-under-miss"]));
    std::fs::write(dir.path().join("p.ron"), &ron).unwrap();
    let first = [
        "--param",
        "footprint=64K",
        "--param",
        "probes=512",
        "--config",
        "p.ron",
    ];
    ok(&probe_shard(dir.path(), "a.jsonl", "0/2", &first));
    let sig = |name: &str| {
        let text = std::fs::read_to_string(dir.path().join(name)).unwrap();
        json(text.lines().next().unwrap())["sweep"].clone()
    };
    let list = json(&ok(&run(&["workloads", "--format", "json"])));
    let probe = list
        .as_array()
        .unwrap()
        .iter()
        .find(|w| w["name"] == "hashprobe")
        .unwrap();
    let seed = probe["params"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == "seed")
        .unwrap()["default"]
        .to_string();
    let seed_arg = format!("seed={seed}");
    let same = [
        "--param",
        "probes=512",
        "--param",
        "footprint=65536",
        "--param",
        &seed_arg,
        "--config",
        "./sub/../p.ron",
    ];
    ok(&probe_shard(dir.path(), "b.jsonl", "1/2", &same));
    assert_eq!(sig("a.jsonl"), sig("b.jsonl"));
    // So the shards merge, and either resumes the other.
    ok(&run_in(
        Some(dir.path()),
        &["merge", "a.jsonl", "b.jsonl", "--out", "all.jsonl"],
    ));
    assert_eq!(points(&dir.path().join("all.jsonl")).len(), 2);
    let resume = [&["--out", "a.jsonl", "--resume"], &same[..]].concat();
    let o = sweep_mshrs(dir.path(), "hashprobe", "1,2", &resume);
    assert!(ok(&o).contains("2 of 2 points"), "{}", stdout(&o));
    // A parameter that changes the points makes another sweep, and the
    // refusal says which flags must match.
    let other = [&resume[..], &["--param", "hit=100"]].concat();
    fails_with(
        &sweep_mshrs(dir.path(), "hashprobe", "1,2", &other),
        &["different sweep", "--param", "--set", "--vary"],
    );
}

#[test]
fn a_bad_metric_fails_before_anything_runs() {
    let dir = tmp();
    let o = sweep_mshrs(
        dir.path(),
        &scan(),
        "1,2",
        &["--out", "r.jsonl", "--metric", "l1d_mlpp"],
    );
    fails_with(&o, &["--metric l1d_mlpp", "no such metric", "l1d_mlp"]);
    assert!(
        !stderr(&o).contains("point 0"),
        "no point ran: {}",
        stderr(&o)
    );
    assert!(
        files_in(dir.path()).is_empty(),
        "{:?}",
        files_in(dir.path())
    );
    // A ledger bucket of the machine is a metric, even one that stays zero.
    ok(&sweep_mshrs(
        dir.path(),
        &scan(),
        "1,2",
        &["--metric", "ledger.rob"],
    ));
}

#[test]
fn merge_keeps_an_existing_file_and_names_missing_points() {
    let dir = tmp();
    let out = dir.path().join("r.jsonl");
    ok(&grid(dir.path(), &out, &["--shard", "0/2"]));
    std::fs::write(dir.path().join("all.jsonl"), "keep me\n").unwrap();
    let o = run_in(
        Some(dir.path()),
        &["merge", "r.jsonl", "--out", "all.jsonl"],
    );
    fails_with(&o, &["'all.jsonl' already exists", "--force"]);
    assert_eq!(
        std::fs::read_to_string(dir.path().join("all.jsonl")).unwrap(),
        "keep me\n"
    );
    let o = run_in(
        Some(dir.path()),
        &["merge", "r.jsonl", "--out", "all.jsonl", "--force"],
    );
    ok(&o);
    // Shard 0 of 2 over 6 points holds 0, 2 and 4.
    assert!(
        stderr(&o).contains("warning: 3 of the grid's 6 points are missing: 1, 3, 5"),
        "{}",
        stderr(&o)
    );
    assert_eq!(indices(&dir.path().join("all.jsonl")), [0, 2, 4]);
}

#[test]
fn points_cut_short_by_the_instruction_limit_are_marked() {
    // gather's set-up runs about 72,000 instructions (`overlap run gather`
    // leaves 71,730 out, measured), so a limit of 2,000 stops every point
    // before the kernel.
    let o = run(&[
        "sweep",
        "gather",
        "--vary",
        "l1d.mshrs=1,2",
        "--max-insts",
        "2000",
    ]);
    let out = ok(&o);
    assert!(out.contains("set-up only"), "{out}");
    assert!(
        out.contains("note: every point (2) stopped at --max-insts 2000 before the kernel started"),
        "{out}"
    );
    assert!(out.contains("set-up included"), "{out}");
    let plain = ok(&run(&["sweep", "gather", "--vary", "l1d.mshrs=1,2"]));
    assert!(!plain.contains("note"), "{plain}");
}
