//! Exact skipping: advancing every cycle and jumping straight to
//! `next_event()` must give bit-identical completions and statistics.
//!
//! Source: the project brief, DESIGN.md §8 ("exact skipping of idle
//! stretches ... results must be bit-identical to stepping every cycle").

use std::collections::VecDeque;

use overlap_mem::{
    Accepted, AccessKind, BankConfig, CacheConfig, CacheMode, Completion, Cycle, DramConfig,
    Hierarchy, HierarchyConfig, HierarchyStats, PrefetchConfig, PrefetchKind, Refusal, Replacement,
    Request,
};
use proptest::prelude::*;

use crate::util::build;

/// One offered access: cycles since the previous one, kind, line, offset, pc.
type Offer = (u8, u8, u16, u8, u8);

type Log = (
    Vec<(Cycle, u64, Result<Accepted, Refusal>)>,
    Vec<Completion>,
    HierarchyStats,
);

/// Run the offers; `step` advances every cycle, otherwise only to event and
/// offer cycles. A refused access is retried at `now + 1` for a port
/// refusal, else at `next_event()`: the same cycles in both runs.
fn drive(cfg: &HierarchyConfig, offers: &[Offer], step: bool) -> Log {
    let mut h = build(cfg);
    let mut log = Vec::new();
    let mut done = Vec::new();
    let mut queue: VecDeque<(Cycle, Request)> = VecDeque::new();
    let mut arrival = 0;
    for (i, &(gap, kind, line, off, pc)) in offers.iter().enumerate() {
        arrival += Cycle::from(gap % 8);
        let kind = match kind % 5 {
            0 if cfg.l1i.is_some() => AccessKind::Fetch,
            0 | 1 => AccessKind::Store,
            _ => AccessKind::Load,
        };
        let req = Request {
            id: i as u64,
            kind,
            addr: u64::from(line % 96) * 64 + u64::from(off % 64),
            size: 8,
            pc: 0x400 + 4 * u64::from(pc % 6),
        };
        queue.push_back((arrival, req));
    }

    let mut t: Cycle = 0;
    let go_to = |h: &mut Hierarchy, target: Cycle, done: &mut Vec<Completion>| {
        if step {
            for c in h.now() + 1..=target {
                h.advance(c, done);
            }
        } else {
            while let Some(e) = h.next_event().filter(|&e| e < target) {
                h.advance(e, done);
            }
        }
        h.advance(target, done);
    };
    while !queue.is_empty() {
        let mut retry = None;
        while let Some(&(ready, req)) = queue.front() {
            if ready > t {
                break;
            }
            let r = h.access(t, req);
            log.push((t, req.id, r));
            match r {
                Ok(_) => {
                    queue.pop_front();
                }
                Err(Refusal::PortsBusy) => {
                    retry = Some(t + 1);
                    break;
                }
                Err(_) => {
                    retry = Some(h.next_event().expect("a refused access waits for an event"));
                    break;
                }
            }
        }
        let next = match (retry, queue.front()) {
            (Some(r), _) => r,
            (None, Some(&(ready, _))) => ready.max(t + 1),
            (None, None) => break,
        };
        go_to(&mut h, next, &mut done);
        t = next;
    }
    // Let everything finish.
    while let Some(e) = h.next_event() {
        go_to(&mut h, e, &mut done);
    }
    let end = h.now();
    (log, done, h.stats(end))
}

fn cache(
    size: u64,
    ways: u32,
    hit: u32,
    mode: u8,
    mshrs: u8,
    targets: u8,
    repl: u8,
) -> CacheConfig {
    CacheConfig {
        size_bytes: size,
        ways,
        line_bytes: 64,
        hit_cycles: hit,
        ports: 1 + u32::from(mshrs % 2),
        replacement: [Replacement::Lru, Replacement::TreePlru, Replacement::Random]
            [usize::from(repl % 3)],
        seed: u64::from(mshrs),
        mode: [
            CacheMode::Blocking,
            CacheMode::HitUnderMiss,
            CacheMode::MissUnderMiss,
            CacheMode::MissUnderMiss,
        ][usize::from(mode % 4)],
        mshrs: 1 + u32::from(mshrs % 6),
        mshr_targets: 1 + u32::from(targets % 4),
    }
}

fn config() -> impl Strategy<Value = HierarchyConfig> {
    (
        any::<[u8; 4]>(),
        any::<[u8; 4]>(),
        any::<[u8; 2]>(),
        any::<bool>(),
        any::<bool>(),
        any::<bool>(),
        0u8..3,
        20u32..90,
    )
        .prop_map(
            |(l1, l2, l3, with_l1i, with_l3, banks, pf, dram_latency)| HierarchyConfig {
                l1i: with_l1i.then(|| cache(1024, 2, 1, 2, 1, 2, 0)),
                l1d: cache(
                    1024,
                    4,
                    1 + u32::from(l1[0] % 4),
                    l1[1],
                    l1[2],
                    l1[3],
                    l1[0],
                ),
                l2: cache(
                    4096,
                    4,
                    3 + u32::from(l2[0] % 8),
                    l2[1],
                    l2[2],
                    l2[3],
                    l2[0],
                ),
                l3: with_l3.then(|| cache(8192, 8, 10, l3[0], l3[1], 3, l3[1])),
                dram: DramConfig {
                    latency_cycles: dram_latency,
                    channels: 1 + u32::from(l2[3] % 2),
                    transfer_cycles: 1 + u32::from(l1[3] % 6),
                    banks: banks.then_some(BankConfig {
                        banks: 2,
                        row_bytes: 512,
                        row_hit_cycles: 5,
                        row_miss_cycles: 10,
                        row_conflict_cycles: 15,
                    }),
                },
                prefetch: PrefetchConfig {
                    kind: [
                        PrefetchKind::None,
                        PrefetchKind::NextLine,
                        PrefetchKind::Stride,
                    ][usize::from(pf)],
                    degree: 2,
                    distance: 1,
                    table_entries: 4,
                },
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn stepping_and_jumping_agree(cfg in config(), offers in prop::collection::vec(any::<Offer>(), 1..160)) {
        let stepped = drive(&cfg, &offers, true);
        let jumped = drive(&cfg, &offers, false);
        prop_assert_eq!(&stepped.0, &jumped.0, "accept/refuse answers differ");
        prop_assert_eq!(&stepped.1, &jumped.1, "completions differ");
        prop_assert_eq!(&stepped.2, &jumped.2, "statistics differ");
        // Every accepted miss completes exactly once.
        let misses = stepped.0.iter().filter(|(_, _, r)| matches!(r, Ok(a) if a.ready_at.is_none())).count();
        prop_assert_eq!(misses, stepped.1.len());
        let mut ids: Vec<u64> = stepped.1.iter().map(|c| c.id).collect();
        ids.sort_unstable();
        ids.dedup();
        prop_assert_eq!(ids.len(), stepped.1.len());
    }
}
