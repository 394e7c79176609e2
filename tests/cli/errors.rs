//! Bad inputs: each gets a clear message, exit status 2, and leaves no
//! output file behind.

use crate::util::*;

/// `overlap run` of the small test program with `--set SET` fails with every
/// piece of `parts`.
#[track_caller]
fn set_fails(set: &str, parts: &[&str]) {
    fails_with(&run(&["run", &scan(), "--set", set]), parts);
}

#[test]
fn unknown_workload_lists_the_valid_names() {
    fails_with(
        &run(&["run", "chsae"]),
        &["unknown workload `chsae`", "chase", "hitmiss"],
    );
    fails_with(
        &run(&["run", "chase", "--param", "kk=2"]),
        &["no parameter `kk`", "footprint"],
    );
    fails_with(
        &run(&["run", "missing/file.s"]),
        &["cannot read 'missing/file.s'"],
    );
}

#[test]
fn unknown_set_path_lists_fields_or_sections() {
    set_fails(
        "core.rob_entrys=64",
        &[
            "core.rob_entrys",
            "no field 'rob_entrys'",
            "rob_entries",
            "lq_entries",
        ],
    );
    set_fails(
        "cache.ways=4",
        &["no section 'cache'", "core", "l1d", "dram"],
    );
    set_fails("l1d.ways", &["--set expects path=value"]);
}

#[test]
fn a_value_of_the_wrong_type_names_the_path() {
    set_fails("core.rob_entries=\"many\"", &["'core.rob_entries'"]);
    set_fails("l1d.mode=Lockup", &["'l1d.mode'", "Blocking"]);
    set_fails("l1d.ways=6", &["l1d.ways", "6"]);
}

#[test]
fn malformed_ron_reports_file_line_and_column() {
    let dir = tmp();
    std::fs::write(
        dir.path().join("bad.ron"),
        "(\n  core: (\n    rob_entries: 64,\n    robb: 3,\n  ),\n)\n",
    )
    .unwrap();
    fails_with(
        &run_in(Some(dir.path()), &["run", &scan(), "--config", "bad.ron"]),
        &["bad.ron:4:", "robb"],
    );
    std::fs::write(dir.path().join("cut.ron"), "(\n  l1d: (mshrs: 4\n").unwrap();
    fails_with(
        &run_in(Some(dir.path()), &["run", &scan(), "--config", "cut.ron"]),
        &["cut.ron:2:"],
    );
    fails_with(
        &run_in(
            Some(dir.path()),
            &["run", &scan(), "--config", "absent.ron"],
        ),
        &["cannot read configuration file 'absent.ron'"],
    );
    fails_with(
        &run(&["run", &scan(), "--config", "speedy"]),
        &["unknown configuration 'speedy'", "blocking"],
    );
}

#[test]
fn unwritable_out_fails_before_running_and_leaves_nothing() {
    let dir = tmp();
    std::fs::write(dir.path().join("plain"), "a file, not a directory").unwrap();
    for target in ["plain/out.json", "nodir/out.json"] {
        let o = run_in(
            Some(dir.path()),
            &["run", &scan(), "--format", "json", "--out", target],
        );
        fails_with(&o, &["cannot write", target]);
    }
    let o = run_in(
        Some(dir.path()),
        &["compare", &scan(), "--svg", "nodir/x.svg"],
    );
    fails_with(&o, &["cannot write 'nodir/x.svg'"]);
    assert_eq!(files_in(dir.path()), ["plain"]);
}

#[test]
fn a_failing_run_leaves_no_output_file() {
    let dir = tmp();
    for args in [
        vec!["run", "chsae", "--out", "r.json"],
        vec![
            "run",
            "chase",
            "--set",
            "core.rob_entries=0",
            "--out",
            "r.json",
        ],
        vec![
            "compare",
            "chase",
            "--set",
            "l1d.nope=1",
            "--svg",
            "c.svg",
            "--out",
            "c.txt",
        ],
        vec!["report", "chsae", "--html", "r.html"],
        vec![
            "sweep",
            "chase",
            "--vary",
            "l1d.mshrs=1,0",
            "--out",
            "s.jsonl",
        ],
    ] {
        expect_code(&run_in(Some(dir.path()), &args), 2);
    }
    assert!(
        files_in(dir.path()).is_empty(),
        "{:?}",
        files_in(dir.path())
    );
}

#[test]
fn invalid_values_are_all_reported_at_once() {
    let o = run(&[
        "run",
        &scan(),
        "--set",
        "core.fetch_width=0",
        "--set",
        "core.commit_width=0",
    ]);
    fails_with(&o, &["2 problems", "core.fetch_width", "core.commit_width"]);
}

#[test]
fn assembly_errors_come_under_one_line_naming_the_file() {
    let dir = tmp();
    std::fs::write(
        dir.path().join("bad1.s"),
        "main:\n  addi a0, a0, 1\n  foo a1, a2\n  li a0\n",
    )
    .unwrap();
    let o = run_in(Some(dir.path()), &["run", "bad1.s"]);
    fails_with(&o, &[]);
    let err = stderr(&o);
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(
        lines[0], "error: cannot assemble 'bad1.s' (2 errors):",
        "{err}"
    );
    assert!(
        lines[1].starts_with("bad1.s:3:3: error: unknown mnemonic 'foo'"),
        "{err}"
    );
    assert!(
        err.lines().any(|l| l.starts_with("bad1.s:4:")),
        "every error is shown: {err}"
    );
    assert!(!err.contains("error: bad1.s"), "no doubled prefix: {err}");
    std::fs::write(dir.path().join("bad2.s"), "main:\n  foo\n").unwrap();
    let o = run_in(Some(dir.path()), &["run", "bad2.s"]);
    fails_with(&o, &["cannot assemble 'bad2.s' (1 error):"]);
}

#[test]
fn a_directory_is_not_a_program() {
    let dir = tmp();
    std::fs::create_dir(dir.path().join("kernels")).unwrap();
    for spec in ["kernels", "./kernels", "kernels/"] {
        let o = run_in(Some(dir.path()), &["run", spec]);
        fails_with(&o, &[&format!("'{spec}': it is a directory")]);
        assert!(!stderr(&o).contains("no such file"), "{}", stderr(&o));
    }
    // A directory named like a built-in workload does not hide the workload.
    std::fs::create_dir(dir.path().join("gather")).unwrap();
    ok(&run_in(Some(dir.path()), &["run", "gather"]));
}

#[test]
fn a_station_or_unit_path_out_of_range_lists_what_there_is() {
    // The default machine has two stations (int, mem): see `overlap preset`.
    set_fails(
        "core.stations.9.entries=3",
        &[
            "there is no core.stations.9",
            "2 stations",
            "0..=1",
            "entries",
        ],
    );
    set_fails(
        "core.units.0.latencyy=3",
        &[
            "core.units.0 has no field 'latencyy'",
            "latency",
            "pipelined",
        ],
    );
    let out = ok(&run(&[
        "run",
        &scan(),
        "--set",
        "core.stations.1.entries=4",
    ]));
    assert!(out.contains("+core.stations.1.entries=4"), "{out}");
}
