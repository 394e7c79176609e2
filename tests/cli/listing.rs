//! `overlap workloads`, `presets`, `preset` and logging.

use crate::util::*;

#[test]
fn workloads_json_lists_names_descriptions_and_parameters() {
    let v = json(&ok(&run(&["workloads", "--format", "json"])));
    let list = v.as_array().unwrap();
    assert!(list.len() >= 10);
    for w in list {
        assert!(w["name"].is_string() && w["description"].is_string(), "{w}");
        let params = w["params"].as_array().unwrap();
        assert!(params.iter().any(|p| p["name"] == "seed"), "{w}");
        assert!(params.iter().all(|p| p.get("default").is_some()), "{w}");
    }
    assert!(list.iter().any(|w| w["name"] == "chase"));
    let table = ok(&run(&["workloads"]));
    for w in list {
        assert!(table.contains(w["name"].as_str().unwrap()));
    }
}

#[test]
fn presets_and_a_preset_round_trip_through_a_file() {
    let list = ok(&run(&["presets"]));
    for p in ["blocking", "hit-under-miss", "miss-under-miss"] {
        assert!(list.contains(p), "{list}");
    }
    let ron = ok(&run(&["preset", "hit-under-miss"]));
    assert!(ron.contains("HitUnderMiss"), "{ron}");
    let dir = tmp();
    let file = dir.path().join("hum.ron");
    std::fs::write(&file, &ron).unwrap();
    let from_file = json(&ok(&run(&[
        "run",
        &scan(),
        "--config",
        file.to_str().unwrap(),
        "--format",
        "json",
    ])));
    let from_preset = json(&ok(&run(&[
        "run",
        &scan(),
        "--config",
        "hit-under-miss",
        "--format",
        "json",
    ])));
    assert_eq!(without_host(from_file), without_host(from_preset));
    fails_with(
        &run(&["preset", "fast"]),
        &["unknown preset 'fast'", "miss-under-miss"],
    );
}

#[test]
fn logging_goes_to_stderr_and_keeps_json_clean() {
    let o = run(&["-v", "run", &scan(), "--format", "json"]);
    json(&ok(&o));
    assert!(stderr(&o).contains("simulating"), "{}", stderr(&o));
    let o = bin()
        .args(["run", &scan(), "--format", "json"])
        .env("RUST_LOG", "trace")
        .output()
        .unwrap();
    json(&ok(&o));
    assert!(stderr(&o).contains("commit"), "trace events are logged");
}

#[test]
fn exec_runs_the_functional_model_alone() {
    let o = run(&["exec", &scan()]);
    assert_eq!(ok(&o), "scan done\n");
    assert!(stderr(&o).contains("exit code 0"), "{}", stderr(&o));
    fails_with(&run(&["exec", "chsae"]), &["unknown workload"]);
}

#[test]
fn every_program_argument_says_what_it_accepts() {
    for cmd in ["run", "compare", "sweep", "timeline", "report", "exec"] {
        let help = ok(&run(&[cmd, "--help"]));
        assert!(
            help.contains("A built-in workload name, an assembly file (.s) or an RV64 ELF"),
            "{cmd} --help:\n{help}"
        );
    }
    let help = ok(&run(&["run", "--help"]));
    assert!(
        help.contains("counted from the program's start"),
        "--max-insts says where it counts from:\n{help}"
    );
    let help = ok(&run(&["merge", "--help"]));
    assert!(help.contains("--force"), "{help}");
}

#[test]
fn exec_writes_the_programs_output_to_standard_output() {
    // README, "Commands": `exec` prints the program's standard output on
    // standard output; the running commands echo it on standard error.
    let o = run(&["exec", &scan()]);
    assert_eq!(ok(&o), "scan done\n");
    let o = run(&["run", &scan(), "--format", "csv"]);
    assert!(!ok(&o).contains("scan done"));
    assert!(stderr(&o).contains("scan done"), "{}", stderr(&o));
}
