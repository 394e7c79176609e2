//! Parameter validation and the workload list.

use overlap_workloads::{ParamKind, ParamValue, WorkloadError, build, find, list};
use proptest::prelude::*;

use crate::util::ov;

#[test]
fn unknown_workload_lists_the_valid_names() {
    let err = build("chsae", &[]).unwrap_err();
    assert!(
        matches!(err, WorkloadError::UnknownWorkload { .. }),
        "{err:?}"
    );
    let msg = err.to_string();
    assert!(msg.contains("did you mean `chase`"), "{msg}");
    assert!(msg.contains("hashprobe") && msg.contains("stream"), "{msg}");
}

#[test]
fn unknown_parameter_lists_the_valid_names() {
    let err = build("chase", &ov(&[("hop", "10")])).unwrap_err();
    assert!(matches!(err, WorkloadError::UnknownParam { .. }), "{err:?}");
    let msg = err.to_string();
    assert!(
        msg.contains("`hop`") && msg.contains("did you mean `hops`"),
        "{msg}"
    );
    assert!(
        msg.contains("footprint, node, k, layout, work, hops, seed"),
        "{msg}"
    );
}

#[test]
fn out_of_range_names_parameter_and_range() {
    let err = build("chase", &ov(&[("k", "17")])).unwrap_err();
    match &err {
        WorkloadError::OutOfRange {
            param,
            value,
            min,
            max,
            ..
        } => {
            assert_eq!((param.as_str(), *value, *min, *max), ("k", 17, 1, 16));
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(
        err.to_string(),
        "chase: parameter `k` = 17 is out of range; allowed: 1..=16"
    );
    assert!(matches!(
        build("alu", &ov(&[("chains", "0")])).unwrap_err(),
        WorkloadError::OutOfRange { .. }
    ));
}

#[test]
fn wrong_type_is_reported() {
    let err = build("stream", &ov(&[("footprint", "lots")])).unwrap_err();
    assert!(matches!(err, WorkloadError::WrongType { .. }), "{err:?}");
    assert!(
        err.to_string()
            .contains("`footprint` expects an integer 128..="),
        "{err}"
    );
    let err = build("hitmiss", &ov(&[("dependent", "maybe")])).unwrap_err();
    assert!(matches!(err, WorkloadError::WrongType { .. }), "{err:?}");
    let err = build("matmul", &ov(&[("variant", "blocked")])).unwrap_err();
    assert!(
        matches!(err, WorkloadError::UnknownChoice { .. }),
        "{err:?}"
    );
    assert!(err.to_string().contains("naive|tiled"), "{err}");
}

#[test]
fn constraints_between_parameters() {
    let err = build("chase", &ov(&[("footprint", "1K"), ("k", "16")])).unwrap_err();
    assert!(matches!(err, WorkloadError::Constraint { .. }), "{err:?}");
    assert!(err.to_string().contains("at least 2048"), "{err}");
    let err = build("chase", &ov(&[("node", "12")])).unwrap_err();
    assert!(err.to_string().contains("multiple of 8"), "{err}");
    let err = build("matmul", &ov(&[("n", "8"), ("rows", "9")])).unwrap_err();
    assert!(matches!(err, WorkloadError::Constraint { .. }), "{err:?}");
    let err = build("stride", &ov(&[("footprint", "4K"), ("stride", "4096")])).unwrap_err();
    assert!(matches!(err, WorkloadError::Constraint { .. }), "{err:?}");
    let err = build("listwalk", &ov(&[("nodes", "16M"), ("payload", "248")])).unwrap_err();
    assert!(matches!(err, WorkloadError::Constraint { .. }), "{err:?}");
    let err = build(
        "hashprobe",
        &ov(&[("footprint", "256M"), ("record", "4096")]),
    )
    .unwrap_err();
    assert!(err.to_string().contains("`record`"), "{err}");
}

#[test]
fn values_accept_suffixes_and_record_every_parameter() {
    let built = build(
        "chase",
        &ov(&[("footprint", "32KiB"), ("layout", "stride")]),
    )
    .unwrap();
    assert_eq!(built.params["footprint"], ParamValue::Int(32 << 10));
    assert_eq!(built.params["layout"], ParamValue::Choice("stride".into()));
    assert_eq!(
        built.params["k"],
        ParamValue::Int(1),
        "defaults are recorded too"
    );
    assert_eq!(built.params.len(), find("chase").unwrap().params.len());
    assert!(
        built
            .source
            .contains("# parameters: footprint=32768 hops=20000 k=1 layout=stride")
    );
    assert!(built.measure_start().is_some());
}

#[test]
fn same_parameters_same_program() {
    let a = build("hashprobe", &ov(&[("seed", "5")])).unwrap();
    let b = build("hashprobe", &ov(&[("seed", "5")])).unwrap();
    let c = build("hashprobe", &ov(&[("seed", "6")])).unwrap();
    assert_eq!(a.source, b.source);
    assert_eq!(a.program, b.program);
    assert_ne!(a.source, c.source);
}

#[test]
fn list_is_sorted_and_complete() {
    let names: Vec<&str> = list().iter().map(|w| w.name).collect();
    let mut sorted = names.clone();
    sorted.sort_unstable();
    assert_eq!(names, sorted);
    for required in [
        "chase",
        "stream",
        "copy",
        "triad",
        "stride",
        "gather",
        "hashprobe",
        "listwalk",
        "matmul",
        "stencil",
        "branchy",
        "alu",
        "divchain",
        "hitmiss",
        "fill",
    ] {
        assert!(names.contains(&required), "missing {required}");
    }
    for w in list() {
        assert!(!w.description.is_empty());
        assert_eq!(w.params.last().map(|p| p.name), Some("seed"), "{}", w.name);
        for p in &w.params {
            match (&p.kind, &p.default) {
                (ParamKind::Int { min, max }, ParamValue::Int(d)) => assert!(min <= d && d <= max),
                (ParamKind::Choice(c), ParamValue::Choice(d)) => assert!(c.contains(&d.as_str())),
                (ParamKind::Bool, ParamValue::Bool(_)) => {}
                other => panic!(
                    "{}.{}: kind and default disagree: {other:?}",
                    w.name, p.name
                ),
            }
        }
    }
}

#[test]
fn info_serialises_to_json() {
    let json = serde_json::to_value(find("matmul").unwrap()).unwrap();
    assert_eq!(json["name"], "matmul");
    let variant = &json["params"][1];
    assert_eq!(variant["name"], "variant");
    assert_eq!(variant["default"], "naive");
    assert_eq!(variant["kind"]["choice"][1], "tiled");
    assert_eq!(json["params"][0]["kind"]["int"]["min"], 2);
    assert_eq!(json["params"][0]["default"], 24);
}

/// A value of `kind` from the random word `r`: half the time anywhere in
/// range, half the time near the minimum (where the edge cases are).
fn pick(kind: &ParamKind, r: u64) -> String {
    match kind {
        ParamKind::Int { min, max } => {
            let span = (max - min) as u64 + 1;
            let off = if r & 1 == 0 {
                (r >> 1) % span
            } else {
                (r >> 1) % span.min(70)
            };
            (min + off as i64).to_string()
        }
        ParamKind::Choice(c) => c[(r % c.len() as u64) as usize].to_string(),
        ParamKind::Bool => (r & 1 == 0).to_string(),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// Any in-range parameter values either build (the generated source
    /// assembles: every immediate and offset fits) or are refused with a
    /// constraint error; nothing else.
    #[test]
    fn any_in_range_values_build(w in 0usize..64, words in prop::collection::vec(any::<u64>(), 8)) {
        let infos = list();
        let info = &infos[w % infos.len()];
        let overrides: Vec<(String, String)> = info
            .params
            .iter()
            .zip(&words)
            .map(|(p, r)| (p.name.to_string(), pick(&p.kind, *r)))
            .collect();
        match build(info.name, &overrides) {
            Ok(built) => prop_assert!(built.measure_start().is_some()),
            Err(WorkloadError::Constraint { .. }) => {}
            Err(e) => prop_assert!(false, "{} {:?}: {}", info.name, overrides, e),
        }
    }
}
