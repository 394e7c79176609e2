//! Throughput of independent misses against Little's law.
//!
//! Source: J. D. C. Little, "A proof for the queuing formula L = lambda W",
//! Operations Research 9(3), 1961. With N miss registers always busy and a
//! miss latency of W cycles, misses complete at N / W per cycle; no stream
//! can beat that, nor the DRAM bandwidth (channels / transfer_cycles lines
//! per cycle). Exactly: the time-integral of register occupancy equals the
//! sum of the registers' holding times.

use overlap_mem::{CacheId, CacheMode, HierarchyConfig, PrefetchKind, Refusal};

use crate::util::{Rng, build, drain, load, occupancy_integral, store, with_dram};

/// Offer loads of fresh lines as fast as the L1D accepts them; returns the
/// number of lines and the cycle the last one completed.
fn stream(cfg: &HierarchyConfig, lines: u64) -> (u64, u64, overlap_mem::HierarchyStats) {
    let mut h = build(cfg);
    let mut next = 0;
    let mut t = 0;
    let mut done = Vec::new();
    while done.len() < lines as usize {
        while next < lines {
            match h.access(t, load(next, 0x100_0000 + next * 64)) {
                Ok(_) => next += 1,
                Err(Refusal::PortsBusy) => break,
                Err(_) => break,
            }
        }
        t = match h.next_event() {
            Some(e) if next == lines || h.free_mshrs(CacheId::L1d) == 0 => e,
            _ => t + 1,
        };
        h.advance(t, &mut done);
    }
    let last = done.iter().map(|c| c.cycle).max().unwrap();
    let s = h.stats(last);
    (lines, last, s)
}

#[test]
fn ample_bandwidth_completes_n_lines_per_latency() {
    for n in [1u32, 2, 4, 8, 16] {
        let mut cfg = with_dram(200, 8, 1);
        cfg.l1d.mode = CacheMode::MissUnderMiss;
        cfg.l1d.mshrs = n;
        cfg.l2.mshrs = 32;
        let latency = f64::from(cfg.l1d.hit_cycles + cfg.l2.hit_cycles + 200 + 1);
        let (lines, cycles, s) = stream(&cfg, 3000);
        let rate = lines as f64 / cycles as f64;
        let little = f64::from(n) / latency;
        assert!(
            (rate / little - 1.0).abs() < 0.05,
            "N={n}: {rate:.5} lines/cycle, Little's law {little:.5}"
        );
        // The registers were (almost) always all busy: MLP close to N.
        assert!(s.l1d.mlp > f64::from(n) * 0.95, "N={n}: MLP {}", s.l1d.mlp);
    }
}

#[test]
fn scarce_bandwidth_caps_the_rate() {
    // 8 registers would allow 8 / 258 lines per cycle, but one channel moving
    // a line every 40 cycles allows only 1 / 40.
    let mut cfg = with_dram(200, 1, 40);
    cfg.l1d.mshrs = 8;
    let (lines, cycles, s) = stream(&cfg, 1000);
    let rate = lines as f64 / cycles as f64;
    let bandwidth = 1.0 / 40.0;
    assert!(
        (rate / bandwidth - 1.0).abs() < 0.05,
        "{rate:.5} lines/cycle, bandwidth {bandwidth:.5}"
    );
    // Bus busy nearly all the time.
    assert!(s.dram.busy_cycles as f64 > 0.95 * cycles as f64);
    assert!((s.dram.bandwidth_bytes_per_cycle - 64.0 / 40.0).abs() < 0.05 * 64.0 / 40.0);
}

#[test]
fn occupancy_integral_equals_sum_of_miss_latencies() {
    // Little's law in its exact, finite form: sum over cycles of registers in
    // use == sum over registers of (fill - allocation), once all have filled.
    // Checked on a random mix with stores, merges and a prefetcher, at every
    // level and for DRAM demand reads.
    for (seed, prefetch) in [
        (1u64, PrefetchKind::None),
        (2, PrefetchKind::NextLine),
        (3, PrefetchKind::Stride),
    ] {
        let mut cfg = with_dram(120, 2, 6);
        cfg.l1d.mshrs = 6;
        cfg.l1d.size_bytes = 4096;
        cfg.l2.size_bytes = 16384;
        cfg.prefetch.kind = prefetch;
        cfg.prefetch.degree = 2;
        let mut h = build(&cfg);
        let mut rng = Rng(seed);
        let mut t = 0;
        // Half the accesses walk per-PC strides, half are scattered.
        let mut cursor = [0u64; 4];
        for id in 0..3000u64 {
            let k = rng.below(4) as usize;
            let addr = if rng.below(2) == 0 {
                cursor[k] += 40 * (k as u64 + 1);
                (k as u64 * 8192 + cursor[k]) % 49152
            } else {
                rng.below(2048) * 24
            };
            let req = if rng.below(3) == 0 {
                store(id, addr)
            } else {
                load(id, addr)
            };
            let req = overlap_mem::Request {
                pc: 0x100 + 4 * k as u64,
                ..req
            };
            while h.access(t, req).is_err() {
                t += 1;
                h.advance(t, &mut Vec::new());
            }
            if rng.below(2) == 0 {
                t += 1;
                h.advance(t, &mut Vec::new());
            }
        }
        let (_, end) = drain(&mut h);
        let s = h.stats(end);
        for (name, c) in [("l1d", &s.l1d), ("l2", &s.l2)] {
            assert!(c.fills > 0);
            assert_eq!(
                c.mshr_occupancy_cycles, c.miss_latency_total,
                "{name}, seed {seed}"
            );
            assert_eq!(
                c.outstanding_hist.iter().sum::<u64>(),
                end,
                "{name}: histogram covers the run"
            );
        }
        if prefetch == PrefetchKind::None {
            // Every DRAM read is a demand read here.
            let integral = occupancy_integral(&s.dram.outstanding_hist);
            assert_eq!(integral, s.dram.read_latency_total);
        } else {
            assert!(s.l1d.prefetch_issued > 0);
        }
        assert!(s.dram.writes > 0, "stores make dirty victims");
    }
}
