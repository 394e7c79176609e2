//! Helpers shared by the command-line tests: running the built binary,
//! checking exit codes, temporary directories, golden files, and XML parsing.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The binary under test.
pub fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_overlap"));
    c.env_remove("RUST_LOG");
    c
}

/// Run `overlap ARGS` in `dir` (or the crate root) and return its output.
pub fn run_in(dir: Option<&Path>, args: &[&str]) -> Output {
    let mut c = bin();
    c.args(args);
    c.current_dir(dir.unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR"))));
    c.output().expect("the overlap binary runs")
}

/// Run `overlap ARGS` from the crate root.
pub fn run(args: &[&str]) -> Output {
    run_in(None, args)
}

/// Standard output as text.
pub fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// Standard error as text.
pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Assert the exit code, showing both streams when it is wrong.
#[track_caller]
pub fn expect_code(o: &Output, code: i32) {
    assert_eq!(
        o.status.code(),
        Some(code),
        "exit status {:?}, expected {code}\n--- stdout\n{}\n--- stderr\n{}",
        o.status.code(),
        stdout(o),
        stderr(o)
    );
}

/// Assert success and return standard output.
#[track_caller]
pub fn ok(o: &Output) -> String {
    expect_code(o, 0);
    stdout(o)
}

/// Assert exit code 2 with an `error:` message containing every piece of `parts`.
#[track_caller]
pub fn fails_with(o: &Output, parts: &[&str]) {
    expect_code(o, 2);
    let err = stderr(o);
    assert!(
        err.starts_with("error: ") || err.contains("\nerror: "),
        "no error line: {err}"
    );
    for p in parts {
        assert!(err.contains(p), "message lacks {p:?}: {err}");
    }
}

/// A fresh temporary directory.
pub fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().expect("a temporary directory")
}

/// A file of the test data directory.
pub fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("data")
        .join(name)
}

/// The small test program (two independent streams of cold misses).
pub fn scan() -> String {
    data("scan.s").to_string_lossy().into_owned()
}

/// Names of the files in a directory, sorted.
pub fn files_in(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("readable directory")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

/// Parse JSON or fail with the text.
#[track_caller]
pub fn json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("not JSON ({e}):\n{text}"))
}

/// A report without its host figures (which vary from run to run); given a
/// `run --format json` document, its report.
pub fn without_host(doc: serde_json::Value) -> serde_json::Value {
    let mut report = report_of(doc);
    report
        .as_object_mut()
        .expect("a report object")
        .remove("host");
    report
}

/// The report of a `run --format json` document: the report's keys without
/// the ones that name the run (`program`, `params`, `config`, `set`); a
/// compare entry's `report` is taken as it is.
pub fn report_of(mut doc: serde_json::Value) -> serde_json::Value {
    if let Some(r) = doc.get_mut("report") {
        return r.take();
    }
    if let Some(o) = doc.as_object_mut() {
        for k in ["program", "params", "config", "set"] {
            o.remove(k);
        }
    }
    doc
}

/// Compare `actual` with the golden file `tests/data/golden/NAME`; with
/// `OVERLAP_BLESS=1` in the environment, write it instead.
#[track_caller]
pub fn golden(name: &str, actual: &str) {
    let path = data("golden").join(name);
    if std::env::var_os("OVERLAP_BLESS").is_some() {
        std::fs::write(&path, actual).expect("golden file written");
        return;
    }
    let expected = std::fs::read_to_string(&path).unwrap_or_else(|_| {
        panic!(
            "missing golden file {}; run with OVERLAP_BLESS=1 to create it",
            path.display()
        )
    });
    assert!(
        expected == actual,
        "output differs from {}; if the change is intended, refresh with OVERLAP_BLESS=1\n--- expected\n{expected}\n--- actual\n{actual}",
        path.display()
    );
}

/// Parse SVG or XHTML text as XML, failing with the parser's message.
#[track_caller]
pub fn xml(text: &str) -> roxmltree::Document<'_> {
    roxmltree::Document::parse_with_options(
        text,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..Default::default()
        },
    )
    .unwrap_or_else(|e| panic!("not well-formed XML: {e}"))
}

/// Elements with attribute `name` equal to `value`.
pub fn with_attr<'a, 'i>(
    doc: &'a roxmltree::Document<'i>,
    name: &str,
    value: &str,
) -> Vec<roxmltree::Node<'a, 'i>> {
    within(doc.root(), name, value)
}

/// `node` and the elements below it with attribute `name` equal to `value`.
pub fn within<'a, 'i>(
    node: roxmltree::Node<'a, 'i>,
    name: &str,
    value: &str,
) -> Vec<roxmltree::Node<'a, 'i>> {
    node.descendants()
        .filter(|n| n.attribute(name) == Some(value))
        .collect()
}

/// The attribute `attr` of every element of class `class`, in document order.
#[track_caller]
pub fn attr_of_class<'a>(
    doc: &'a roxmltree::Document<'_>,
    class: &str,
    attr: &str,
) -> Vec<&'a str> {
    with_attr(doc, "class", class)
        .iter()
        .map(|n| {
            n.attribute(attr)
                .unwrap_or_else(|| panic!("a {class} element without {attr}"))
        })
        .collect()
}

/// `overlap run` of the small test program as a JSON document, with `extra`
/// arguments.
#[track_caller]
pub fn scan_json(extra: &[&str]) -> serde_json::Value {
    let program = scan();
    let mut args = vec!["run", &program, "--format", "json"];
    args.extend_from_slice(extra);
    json(&ok(&run(&args)))
}
