//! The named suites: lists of workload runs with fixed parameters.
//!
//! * `quick`: every kernel once or twice at a small size (roughly 20k–200k
//!   dynamic instructions each), for smoke tests and fast comparisons.
//! * `standard`: working sets larger than a 1 MiB L2 where the kernel has a
//!   working set at all, roughly 1–5 million dynamic instructions each.
//!
//! Every size is written out here rather than taken from the defaults, so a
//! change of a default never changes a suite.

/// One run of a suite: a label, the workload and its parameter overrides.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SuiteEntry {
    /// Unique within the suite, e.g. `chase-k4`.
    pub label: String,
    /// The workload's name.
    pub workload: &'static str,
    /// Overrides as `(name, value)` text, as [`build`](crate::build) takes them.
    pub overrides: Vec<(String, String)>,
}

/// The suite names [`suite`] knows.
pub fn suite_names() -> &'static [&'static str] {
    &["quick", "standard"]
}

/// The entries of a named suite.
pub fn suite(name: &str) -> Option<Vec<SuiteEntry>> {
    let table = match name {
        "quick" => QUICK,
        "standard" => STANDARD,
        _ => return None,
    };
    Some(table.iter().map(|line| parse_entry(line)).collect())
}

/// `label workload name=value ...`, whitespace-separated.
fn parse_entry(line: &'static str) -> SuiteEntry {
    let mut words = line.split_whitespace();
    let label = words.next().expect("suite entry has a label");
    let workload = words.next().expect("suite entry has a workload");
    let overrides = words
        .map(|w| {
            let (k, v) = w.split_once('=').expect("suite override is name=value");
            (k.to_string(), v.to_string())
        })
        .collect();
    SuiteEntry {
        label: label.to_string(),
        workload,
        overrides,
    }
}

/// Entries as `label workload name=value ...`.
#[rustfmt::skip]
const QUICK: &[&str] = &[
    "alu-dep       alu       chains=1 op=add ops=32768",
    "alu-ilp8      alu       chains=8 op=add ops=32768",
    "branchy-50    branchy   taken=50 count=8000",
    "branchy-90    branchy   taken=90 count=8000",
    "chase-k1      chase     footprint=64K node=64 k=1 layout=random work=0 hops=24000",
    "chase-k4      chase     footprint=64K node=64 k=4 layout=random work=0 hops=24000",
    "copy          copy      footprint=32K unroll=4 passes=2",
    "divchain      divchain  chains=1 divs=10000",
    "fill          fill      footprint=64K elem=8 unroll=4 passes=2",
    "gather        gather    footprint=64K count=4096 unroll=4",
    "hashprobe     hashprobe footprint=64K load=50 hit=80 probes=2048 record=64",
    "hitmiss       hitmiss   footprint=256K spacing=64 misses=4096 hits=4 dependent=false",
    "listwalk      listwalk  nodes=2048 payload=24 layout=random passes=4",
    "matmul-naive  matmul    n=24 variant=naive rows=0",
    "matmul-tiled  matmul    n=24 variant=tiled tile=8 rows=0",
    "stencil       stencil   rows=32 cols=32 sweeps=4",
    "stream        stream    footprint=64K elem=8 unroll=4 passes=2",
    "stride        stride    footprint=64K stride=256 loads=8192",
    "triad         triad     footprint=16K unroll=2 passes=2",
];

/// Entries as `label workload name=value ...`.
#[rustfmt::skip]
const STANDARD: &[&str] = &[
    "alu-dep        alu       chains=1 op=add ops=2M",
    "alu-ilp8       alu       chains=8 op=add ops=2M",
    "alu-mul4       alu       chains=4 op=mul ops=2M",
    "branchy-50     branchy   taken=50 count=200K",
    "branchy-90     branchy   taken=90 count=200K",
    "chase-k1       chase     footprint=2M node=64 k=1 layout=random work=0 hops=200K",
    "chase-k4       chase     footprint=2M node=64 k=4 layout=random work=0 hops=200K",
    "chase-k8-work  chase     footprint=2M node=64 k=8 layout=random work=4 hops=200K",
    "chase-stride   chase     footprint=2M node=64 k=1 layout=stride work=0 hops=300K",
    "copy           copy      footprint=2M unroll=4 passes=1",
    "divchain       divchain  chains=2 divs=512K",
    "fill           fill      footprint=8M elem=8 unroll=8 passes=1",
    "gather         gather    footprint=2M count=128K unroll=4",
    "hashprobe      hashprobe footprint=1M load=50 hit=80 probes=48K record=64",
    "hitmiss        hitmiss   footprint=4M spacing=64 misses=64K hits=4 dependent=false",
    "listwalk       listwalk  nodes=32K payload=56 layout=random passes=2",
    "matmul-naive   matmul    n=384 variant=naive rows=3",
    "matmul-tiled   matmul    n=384 variant=tiled tile=32 rows=3",
    "stencil        stencil   rows=384 cols=384 sweeps=1",
    "stream         stream    footprint=2M elem=8 unroll=4 passes=2",
    "stride         stride    footprint=4M stride=4160 loads=256K",
    "triad          triad     footprint=1M unroll=2 passes=1",
];

#[cfg(test)]
mod tests {
    use super::{suite, suite_names};

    #[test]
    fn every_suite_entry_generates() {
        for name in suite_names() {
            let entries = suite(name).expect("listed suite exists");
            let mut labels: Vec<&str> = entries.iter().map(|e| e.label.as_str()).collect();
            labels.sort_unstable();
            labels.dedup();
            assert_eq!(labels.len(), entries.len(), "{name}: duplicate label");
            for e in &entries {
                crate::generate(e.workload, &e.overrides)
                    .unwrap_or_else(|err| panic!("{name}/{}: {err}", e.label));
            }
        }
        assert!(suite("nope").is_none());
    }

    #[test]
    fn quick_covers_every_workload() {
        let quick = suite("quick").expect("quick");
        for info in crate::list() {
            assert!(
                quick.iter().any(|e| e.workload == info.name),
                "quick suite lacks {}",
                info.name
            );
        }
    }
}
