//! Speed of the memory pipeline: demand accesses per host second through
//! `Hierarchy::access`, on a hit-dominated stream (a working set that fits in
//! the L1D) and on a miss-dominated one (fresh lines, every access a DRAM
//! miss, the driver jumping to `next_event()` whenever the registers are full).

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use overlap_mem::{
    AccessKind, CacheId, Completion, Hierarchy, HierarchyConfig, PrefetchKind, Refusal, Request,
};

const BATCH: u64 = 100_000;

fn load(id: u64, addr: u64) -> Request {
    Request {
        id,
        kind: if id % 4 == 0 {
            AccessKind::Store
        } else {
            AccessKind::Load
        },
        addr,
        size: 8,
        pc: 0x1000 + (id % 8) * 4,
    }
}

/// Offers `BATCH` accesses from `addr_of`, retrying refusals; returns the
/// number of completions seen (to keep the work observable).
fn run_batch(
    h: &mut Hierarchy,
    t: &mut u64,
    next_id: &mut u64,
    out: &mut Vec<Completion>,
    addr_of: impl Fn(u64) -> u64,
) -> usize {
    let mut completions = 0;
    for _ in 0..BATCH {
        let id = *next_id;
        *next_id += 1;
        let req = load(id, addr_of(id));
        loop {
            match h.access(*t, req) {
                Ok(a) => {
                    black_box(a);
                    break;
                }
                Err(Refusal::PortsBusy) => *t += 1,
                Err(_) => *t = h.next_event().unwrap_or(*t + 1),
            }
            h.advance(*t, out);
            completions += out.len();
            out.clear();
        }
    }
    completions
}

fn bench(c: &mut Criterion) {
    let mut group = c.benchmark_group("cache_accesses");
    group.throughput(Throughput::Elements(BATCH));

    // 16 KiB working set, 8-byte steps: all hits after warm-up.
    group.bench_function("hit_dominated", |b| {
        let mut h = Hierarchy::new(&HierarchyConfig::default()).expect("valid config");
        let (mut t, mut id, mut out) = (0, 0, Vec::with_capacity(64));
        run_batch(&mut h, &mut t, &mut id, &mut out, |i| (i * 8) % 16384);
        b.iter(|| run_batch(&mut h, &mut t, &mut id, &mut out, |i| (i * 8) % 16384));
        assert!(h.stats(t).l1d.hits > h.stats(t).l1d.misses * 100);
    });

    // One fresh line per access: every access misses to DRAM, 8 in flight.
    group.bench_function("miss_dominated", |b| {
        let mut h = Hierarchy::new(&HierarchyConfig::default()).expect("valid config");
        let (mut t, mut id, mut out) = (0, 0, Vec::with_capacity(64));
        b.iter(|| run_batch(&mut h, &mut t, &mut id, &mut out, |i| i * 64));
        let s = h.stats(t);
        assert_eq!(s.l1d.hits, 0);
        assert_eq!(
            h.free_mshrs(CacheId::L1d) + h.outstanding_misses(CacheId::L1d),
            8
        );
    });

    // The same miss stream with a stride prefetcher and an L3.
    group.bench_function("miss_dominated_l3_stride_prefetch", |b| {
        let mut cfg = HierarchyConfig {
            l3: Some(overlap_mem::CacheConfig::l3()),
            ..HierarchyConfig::default()
        };
        cfg.prefetch.kind = PrefetchKind::Stride;
        cfg.prefetch.degree = 2;
        let mut h = Hierarchy::new(&cfg).expect("valid config");
        let (mut t, mut id, mut out) = (0, 0, Vec::with_capacity(64));
        b.iter(|| run_batch(&mut h, &mut t, &mut id, &mut out, |i| i * 64));
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
