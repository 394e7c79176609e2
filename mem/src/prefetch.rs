//! Prefetchers on the L1D demand stream.
//!
//! Each accepted demand access trains the prefetcher, which may name lines to
//! fetch ahead. It does not issue anything itself: the hierarchy filters the
//! candidates (already present or in flight) and sends them only if a miss
//! register is free.
//!
//! - Next-line: on a primary demand miss, and on the first demand hit to a
//!   line brought by a prefetch (so a stream that the prefetcher keeps ahead
//!   of keeps triggering it), name lines `line + distance ..` for `degree`
//!   lines.
//! - Stride: a direct-mapped table indexed by the access's PC holds the last
//!   address, the last stride and a 2-bit confidence, trained on primary
//!   misses and on first hits to prefetched lines. A repeated stride
//!   raises the confidence; from 2 on, name the lines of
//!   `addr + stride * (distance + i)` for `i` in `0..degree`. A stride
//!   shorter than a line is stretched to one line in its direction, so a
//!   unit-stride walk still runs ahead.
//!
//! To add a prefetcher, add a [`crate::PrefetchKind`] variant and its arm in
//! [`Prefetcher::train`].

use crate::Addr;
use crate::config::{PrefetchConfig, PrefetchKind};

/// How the L1D handled the demand access that trains the prefetcher.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Trigger {
    /// Hit on a line that was not brought by an unused prefetch.
    Hit,
    /// First demand hit on a line brought by a prefetch.
    PrefetchedHit,
    /// Primary miss.
    Miss,
    /// Secondary miss (merged into an in-flight register).
    Merged,
}

#[derive(Debug, Clone, Copy, Default)]
struct StrideEntry {
    valid: bool,
    pc: Addr,
    last_addr: Addr,
    stride: i64,
    confidence: u8,
}

/// Prefetcher state.
#[derive(Debug, Clone)]
pub(crate) struct Prefetcher {
    kind: PrefetchKind,
    degree: u32,
    distance: u32,
    line_shift: u32,
    table: Vec<StrideEntry>,
}

impl Prefetcher {
    /// A cold prefetcher for a validated configuration.
    pub fn new(cfg: &PrefetchConfig, line_bytes: u32) -> Self {
        let entries = match cfg.kind {
            PrefetchKind::Stride => cfg.table_entries as usize,
            _ => 0,
        };
        Self {
            kind: cfg.kind,
            degree: cfg.degree,
            distance: cfg.distance,
            line_shift: line_bytes.trailing_zeros(),
            table: vec![StrideEntry::default(); entries],
        }
    }

    /// Whether any prefetcher is configured.
    pub fn enabled(&self) -> bool {
        self.kind != PrefetchKind::None
    }

    /// Most candidates one training can produce.
    pub fn max_candidates(&self) -> usize {
        self.degree as usize
    }

    /// Learn from one demand access at `addr` by the instruction at `pc`, and
    /// push the candidate lines (never the accessed line, no repeats in a
    /// row) to `out`, nearest first.
    pub fn train(&mut self, pc: Addr, addr: Addr, trigger: Trigger, out: &mut Vec<u64>) {
        let line = addr >> self.line_shift;
        match self.kind {
            PrefetchKind::None => {}
            PrefetchKind::NextLine => {
                if matches!(trigger, Trigger::Miss | Trigger::PrefetchedHit) {
                    for i in 0..u64::from(self.degree) {
                        if let Some(l) = line.checked_add(u64::from(self.distance) + i) {
                            out.push(l);
                        }
                    }
                }
            }
            PrefetchKind::Stride => {
                // Train on the accesses that reach for a new line (primary misses, and
                // first hits on prefetched lines, so a stream it keeps ahead of keeps
                // training it). Plain hits and merged misses are left out: an
                // out-of-order core delivers them out of program order, and a
                // shuffled stride would never gain confidence.
                if !matches!(trigger, Trigger::Miss | Trigger::PrefetchedHit) {
                    return;
                }
                let idx = ((pc >> 2) % self.table.len() as u64) as usize;
                let e = &mut self.table[idx];
                if !e.valid || e.pc != pc {
                    *e = StrideEntry {
                        valid: true,
                        pc,
                        last_addr: addr,
                        stride: 0,
                        confidence: 0,
                    };
                    return;
                }
                let stride = addr.wrapping_sub(e.last_addr) as i64;
                e.last_addr = addr;
                if stride == e.stride {
                    e.confidence = (e.confidence + 1).min(3);
                } else if e.confidence <= 1 {
                    e.stride = stride;
                    e.confidence = 0;
                } else {
                    e.confidence -= 1;
                }
                if e.confidence < 2 || e.stride == 0 {
                    return;
                }
                let line_bytes = 1i64 << self.line_shift;
                let step = if e.stride.abs() < line_bytes {
                    line_bytes * e.stride.signum()
                } else {
                    e.stride
                };
                let mut last = line;
                for i in 0..i64::from(self.degree) {
                    let k = i64::from(self.distance) + i;
                    let Some(off) = step.checked_mul(k) else {
                        break;
                    };
                    let target = (addr as i64).wrapping_add(off) as u64;
                    let l = target >> self.line_shift;
                    if l != line && l != last {
                        out.push(l);
                        last = l;
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pf(kind: PrefetchKind, degree: u32, distance: u32) -> Prefetcher {
        Prefetcher::new(
            &PrefetchConfig {
                kind,
                degree,
                distance,
                table_entries: 16,
            },
            64,
        )
    }

    #[test]
    fn next_line_on_miss_only() {
        let mut p = pf(PrefetchKind::NextLine, 2, 1);
        let mut out = Vec::new();
        p.train(0, 64 * 10, Trigger::Hit, &mut out);
        assert!(out.is_empty());
        p.train(0, 64 * 10 + 8, Trigger::Miss, &mut out);
        assert_eq!(out, vec![11, 12]);
    }

    #[test]
    fn stride_needs_confirmation() {
        let mut p = pf(PrefetchKind::Stride, 1, 2);
        let mut out = Vec::new();
        let pc = 0x400;
        for (i, want) in [(0u64, None), (1, None), (2, None), (3, Some(5u64))] {
            out.clear();
            p.train(pc, i * 256, Trigger::Miss, &mut out);
            // Stride 256 bytes = 4 lines; distance 2 strides ahead.
            assert_eq!(out.first().copied(), want.map(|k| k * 4));
        }
        // A different PC in another slot does not disturb it.
        out.clear();
        p.train(pc + 4, 99, Trigger::Miss, &mut out);
        out.clear();
        p.train(pc, 4 * 256, Trigger::Miss, &mut out);
        assert_eq!(out, vec![6 * 4]);
    }

    #[test]
    fn short_stride_runs_ahead_by_lines() {
        let mut p = pf(PrefetchKind::Stride, 2, 1);
        let mut out = Vec::new();
        for i in 0..4u64 {
            out.clear();
            p.train(0x80, 1000 - 8 * i, Trigger::Miss, &mut out);
        }
        // Walking down by 8 bytes from line 15 (byte 976): lines 14, 13.
        assert_eq!(out, vec![14, 13]);
    }

    #[test]
    fn stride_ignores_plain_hits_and_merges() {
        // An out-of-order core presents hits and merged misses out of program
        // order; only accesses that reach for a new line train the table.
        let mut p = pf(PrefetchKind::Stride, 1, 1);
        let mut out = Vec::new();
        for i in 0..8u64 {
            p.train(0x80, i * 256, Trigger::Hit, &mut out);
            p.train(0x80, i * 256 + 8, Trigger::Merged, &mut out);
        }
        assert!(out.is_empty());
        for i in 0..4u64 {
            p.train(0x80, i * 256, Trigger::PrefetchedHit, &mut out);
        }
        assert_eq!(out, vec![16]);
    }
}
