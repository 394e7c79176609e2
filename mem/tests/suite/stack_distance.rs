//! LRU misses against stack distances.
//!
//! Source: Mattson, Gecsei, Slutz and Traiger, "Evaluation techniques for
//! storage hierarchies", IBM Systems Journal 9(2), 1970. For LRU (a stack
//! algorithm), a fully associative cache of C lines misses exactly on the
//! accesses whose stack distance exceeds C, the stack distance being 1 + the
//! number of distinct lines touched since the previous access to the same
//! line (infinite on a first touch). The `lru` crate serves as a second,
//! independent reference.

use std::collections::BTreeSet;
use std::num::NonZeroUsize;

use overlap_mem::{HierarchyConfig, Replacement};

use crate::util::{Rng, build, fully_associative, load, run_serial};

/// Stack distance of every access (`None` on a first touch), computed
/// directly from the definition.
fn stack_distances(trace: &[u64]) -> Vec<Option<usize>> {
    (0..trace.len())
        .map(|i| {
            let prev = (0..i).rev().find(|&j| trace[j] == trace[i])?;
            let between: BTreeSet<u64> = trace[prev + 1..i].iter().copied().collect();
            Some(1 + between.len())
        })
        .collect()
}

fn mattson_misses(trace: &[u64], capacity: usize) -> u64 {
    stack_distances(trace)
        .iter()
        .filter(|d| d.is_none_or(|d| d > capacity))
        .count() as u64
}

fn lru_crate_misses(trace: &[u64], capacity: usize) -> u64 {
    let mut cache = lru::LruCache::new(NonZeroUsize::new(capacity).unwrap());
    let mut misses = 0;
    for &line in trace {
        if cache.get(&line).is_none() {
            misses += 1;
            cache.put(line, ());
        }
    }
    misses
}

/// L1D misses of the simulator on `trace` (line numbers), with a fully
/// associative LRU L1D of `capacity` lines.
fn simulated_misses(trace: &[u64], capacity: u32) -> u64 {
    let cfg = HierarchyConfig {
        l1d: fully_associative(capacity),
        ..HierarchyConfig::default()
    };
    let mut h = build(&cfg);
    let reqs = trace
        .iter()
        .enumerate()
        .map(|(i, &line)| load(i as u64, line * 64 + 8));
    let end = run_serial(&mut h, reqs);
    let s = h.stats(end);
    assert_eq!(s.l1d.accesses, trace.len() as u64);
    assert_eq!(s.l1d.merged, 0, "a serial trace never merges");
    s.l1d.misses
}

#[test]
fn worked_example_a_b_a_c_b_a() {
    // Source: Mattson et al. 1970, worked by hand: stack distances of
    // A B A C B A are inf, inf, 2, inf, 3, 3, so capacities 1, 2, 3 miss
    // 6, 5 and 3 times.
    let trace = [0u64, 1, 0, 2, 1, 0];
    assert_eq!(
        stack_distances(&trace),
        vec![None, None, Some(2), None, Some(3), Some(3)]
    );
    for (capacity, want) in [(1u32, 6u64), (2, 5), (3, 3)] {
        assert_eq!(mattson_misses(&trace, capacity as usize), want);
        assert_eq!(lru_crate_misses(&trace, capacity as usize), want);
        assert_eq!(
            simulated_misses(&trace, capacity),
            want,
            "capacity {capacity}"
        );
    }
}

fn check_trace(name: &str, trace: &[u64]) {
    for capacity in [1u32, 2, 3, 4, 7, 8, 16, 32] {
        let want = mattson_misses(trace, capacity as usize);
        assert_eq!(
            lru_crate_misses(trace, capacity as usize),
            want,
            "{name}: lru crate"
        );
        assert_eq!(
            simulated_misses(trace, capacity),
            want,
            "{name}, capacity {capacity}"
        );
    }
}

#[test]
fn random_trace() {
    let mut rng = Rng(42);
    let trace: Vec<u64> = (0..600).map(|_| rng.below(40)).collect();
    check_trace("random", &trace);
}

#[test]
fn skewed_random_trace() {
    // Mostly a hot set, sometimes a cold line: all stack distances occur.
    let mut rng = Rng(7);
    let trace: Vec<u64> = (0..600)
        .map(|_| {
            if rng.below(4) == 0 {
                100 + rng.below(60)
            } else {
                rng.below(6)
            }
        })
        .collect();
    check_trace("skewed", &trace);
}

#[test]
fn looping_trace() {
    // A loop over k lines hits on every pass after the first when k <= C and
    // misses on every access when k > C.
    for k in [3u64, 8, 9, 20] {
        let trace: Vec<u64> = (0..5).flat_map(|_| 0..k).collect();
        check_trace("loop", &trace);
    }
}

#[test]
fn strided_trace() {
    // Line strides 1, 3 and 7 over a modular range, visited twice.
    for stride in [1u64, 3, 7] {
        let trace: Vec<u64> = (0..200).map(|i| (i * stride) % 50).collect();
        check_trace("strided", &trace);
    }
}

#[test]
fn ways_plus_one_lines_in_one_set_always_miss_under_lru() {
    // common practice: W + 1 lines mapping to one set of a W-way LRU cache,
    // touched round-robin, miss every time.
    let cfg = HierarchyConfig::default();
    assert_eq!(cfg.l1d.replacement, Replacement::Lru);
    let ways = u64::from(cfg.l1d.ways);
    let set_stride = cfg.l1d.size_bytes / ways;
    let mut h = build(&cfg);
    let rounds = 10;
    let reqs = (0..rounds * (ways + 1)).map(|i| load(i, (i % (ways + 1)) * set_stride));
    let end = run_serial(&mut h, reqs);
    let s = h.stats(end);
    assert_eq!(s.l1d.misses, rounds * (ways + 1));
    assert_eq!(s.l1d.hits, 0);
    // With exactly W lines the set holds them all: only the first pass misses.
    let mut h = build(&cfg);
    let reqs = (0..rounds * ways).map(|i| load(i, (i % ways) * set_stride));
    let end = run_serial(&mut h, reqs);
    assert_eq!(h.stats(end).l1d.misses, ways);
}
